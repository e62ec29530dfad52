//! A chart with two linear axes, as the momentum chart and the front picture draw it.

use crate::labels::number_label;
use crate::style::{AXIS_TITLE_PX, FONT, TICK_PX};
use crate::svg::{Area, DrawResult};
use crate::text::PAD;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

/// A chart on an SVG picture with linear axes in `f64`.
pub type LinearChart<'a, 'b> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Draws the axes of a chart over `x` and `y` (low, high) into `area` and gives the chart to
/// draw on: axis titles `x_desc` and `y_desc`, tick labels with just enough decimals
/// ([`number_label`]), pale grid lines at the labelled ticks only; [`PAD`] pixels left and
/// right of it, 8 above and 4 below.
pub fn linear_chart<'a, 'b>(
    area: &'a Area<'b>,
    x: (f64, f64),
    y: (f64, f64),
    x_desc: &str,
    y_desc: &str,
) -> DrawResult<LinearChart<'a, 'b>> {
    let mut chart = ChartBuilder::on(area)
        .margin_left(PAD as u32)
        .margin_right(PAD as u32)
        .margin_top(8)
        .margin_bottom(4)
        .x_label_area_size(56)
        .y_label_area_size(84)
        .build_cartesian_2d(x.0..x.1, y.0..y.1)?;
    let (x_span, y_span) = (x.1 - x.0, y.1 - y.0);
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .axis_desc_style((FONT, AXIS_TITLE_PX))
        .label_style((FONT, TICK_PX))
        .x_label_formatter(&|v| number_label(*v, x_span))
        .y_label_formatter(&|v| number_label(*v, y_span))
        .bold_line_style(RGBColor(235, 235, 235))
        .max_light_lines(0)
        .draw()?;
    Ok(chart)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::svg::render_svg;

    #[test]
    fn axes_carry_their_titles_and_trimmed_labels() {
        let svg = render_svg((500, 300), |root| {
            let chart = linear_chart(root, (0.0, 50.0), (0.0, 1.5), "hours", "grams")?;
            // The plotting area lies inside the padding.
            let (xs, _) = chart.plotting_area().get_pixel_range();
            assert!(xs.start >= PAD && xs.end <= 500 - PAD);
            Ok(())
        })
        .unwrap();
        assert!(svg.contains(">\nhours\n<") && svg.contains(">\ngrams\n<"));
        // Span 50: no decimals on x; span 1.5: two on y, less the trailing zeros.
        assert!(svg.contains(">\n20\n<"), "{svg}");
        assert!(svg.contains(">\n1.2\n<"), "{svg}");
        assert!(!svg.contains("1.20"));
    }
}
