//! Drawings of tours over their instance's points.

use super::style;
use super::{gap_percent, ReportError};
use crate::record::RunRecord;
use plotters::prelude::*;
use std::collections::BTreeSet;
use std::path::Path;
use wend_charts::style::{FONT, TICK_PX, TITLE_PX};
use wend_charts::{number_label, Colours};

/// The larger side of the plotting area, pixels.
const PLOT_PX: f64 = 760.0;
/// The smaller side never goes below this, so a flat instance still has room for its title.
const MIN_PLOT_PX: f64 = 300.0;
const MARGIN: u32 = 18;
const X_LABELS: u32 = 44;
const Y_LABELS: u32 = 84;

/// Why a tour cannot be drawn over its points, or Ok when it can: it must visit every point
/// exactly once, and every point must be a finite position.
pub(crate) fn check_tour(points: &[[f64; 2]], order: &[usize]) -> Result<(), String> {
    if order.is_empty() {
        return Err("the tour is empty".into());
    }
    if let Some(i) = points
        .iter()
        .position(|p| !(p[0].is_finite() && p[1].is_finite()))
    {
        return Err(format!("point {i} is not a finite position"));
    }
    if order.len() != points.len() {
        return Err(format!(
            "the tour has {} nodes but there are {} points",
            order.len(),
            points.len()
        ));
    }
    let mut seen = vec![false; points.len()];
    for &v in order {
        match seen.get_mut(v) {
            None => {
                return Err(format!(
                    "node {v} is not one of the {} points",
                    points.len()
                ))
            }
            Some(true) => return Err(format!("node {v} is visited twice")),
            Some(s) => *s = true,
        }
    }
    Ok(())
}

/// File names for instances: unique and safe on every file system, whatever the name holds.
#[derive(Default)]
pub(crate) struct FileNames {
    used: BTreeSet<String>,
}

impl FileNames {
    pub(crate) fn file_for(&mut self, instance: &str) -> String {
        let mut stem: String = instance
            .chars()
            .map(|c| {
                if c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.') {
                    c
                } else {
                    '_'
                }
            })
            .collect();
        if stem.is_empty() || stem.starts_with('.') {
            stem.insert(0, '_');
        }
        let mut name = format!("{stem}.svg");
        let mut k = 2;
        while !self.used.insert(name.to_ascii_lowercase()) {
            name = format!("{stem}-{k}.svg");
            k += 1;
        }
        name
    }
}

/// Draws `run`'s tour (`order` over `points`, already checked) into `path`: the closed tour with
/// y pointing up and one unit the same length on both axes, so the drawing is not distorted.
pub(crate) fn write_tour(
    run: &RunRecord,
    points: &[[f64; 2]],
    order: &[usize],
    path: &Path,
    colours: &Colours,
) -> Result<(), ReportError> {
    let (mut x0, mut x1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for p in points {
        x0 = x0.min(p[0]);
        x1 = x1.max(p[0]);
        y0 = y0.min(p[1]);
        y1 = y1.max(p[1]);
    }
    // A single point or a line has no extent along one axis; give it the other's, or 1.
    let (mut dx, mut dy) = (x1 - x0, y1 - y0);
    let unit = dx.max(dy);
    let unit = if unit > 0.0 && unit.is_finite() {
        unit
    } else {
        1.0
    };
    if dx <= 0.0 {
        dx = unit;
    }
    if dy <= 0.0 {
        dy = unit;
    }
    let (pw, ph) = if dx >= dy {
        (PLOT_PX, (PLOT_PX * dy / dx).max(MIN_PLOT_PX))
    } else {
        ((PLOT_PX * dx / dy).max(MIN_PLOT_PX), PLOT_PX)
    };
    let title = title(run);
    let title_px = 2 * TITLE_PX + 10;
    // Wide enough for the title in an average sans-serif face (about 0.6 em a character).
    let title_w = (title.chars().count() as f64 * 0.6 * f64::from(TITLE_PX)) as u32 + 40;
    let size = (
        (pw as u32 + 2 * MARGIN + Y_LABELS).max(title_w),
        ph as u32 + 2 * MARGIN + X_LABELS + title_px,
    );

    style::write_svg(path, size, |root| {
        let body = root.titled(&title, (FONT, TITLE_PX))?;
        // The plotting area is what is left after the fixed margins and label areas; fit the
        // data into it at one scale for both axes, centred, with a little air around.
        let (w, h) = body.dim_in_pixel();
        let aw = f64::from(w.saturating_sub(2 * MARGIN + Y_LABELS).max(1));
        let ah = f64::from(h.saturating_sub(2 * MARGIN + X_LABELS).max(1));
        let scale = (dx / aw).max(dy / ah) * 1.04;
        let (cx, cy) = ((x0 + x1) / 2.0, (y0 + y1) / 2.0);
        let (hx, hy) = (scale * aw / 2.0, scale * ah / 2.0);
        let mut chart = ChartBuilder::on(&body)
            .margin(MARGIN)
            .x_label_area_size(X_LABELS)
            .y_label_area_size(Y_LABELS)
            .build_cartesian_2d(cx - hx..cx + hx, cy - hy..cy + hy)?;
        let span = 2.0 * hx.max(hy);
        chart
            .configure_mesh()
            .label_style((FONT, TICK_PX))
            .x_label_formatter(&|v| number_label(*v, span))
            .y_label_formatter(&|v| number_label(*v, span))
            .bold_line_style(RGBColor(235, 235, 235))
            .max_light_lines(0)
            .draw()?;

        let colour = colours.of(&run.method);
        let n = order.len();
        let line_width = if n > 5000 { 1 } else { 2 };
        let closed = order
            .iter()
            .chain(order.first())
            .map(|&v| (points[v][0], points[v][1]));
        chart.draw_series(LineSeries::new(closed, colour.stroke_width(line_width)))?;
        // Dots would only blacken a large drawing.
        if n <= 2000 {
            let r = if n <= 200 { 3 } else { 2 };
            chart.draw_series(
                points
                    .iter()
                    .map(|p| Circle::new((p[0], p[1]), r, BLACK.filled())),
            )?;
        }
        Ok(())
    })
}

fn title(run: &RunRecord) -> String {
    let gap = match gap_percent(run) {
        Some(g) => format!(", {g:.2}% above optimum"),
        None => String::new(),
    };
    format!(
        "{}: {}, seed {}, length {}{gap}",
        run.instance,
        run.method,
        run.seed,
        run.length.map_or("–".into(), |l| l.to_string())
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_permutations_are_drawn() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]];
        assert!(check_tour(&pts, &[2, 0, 1]).is_ok());
        assert!(check_tour(&pts, &[0, 1]).is_err());
        assert!(check_tour(&pts, &[0, 1, 1]).is_err());
        assert!(check_tour(&pts, &[0, 1, 3]).is_err());
        assert!(check_tour(&[], &[]).is_err());
        assert!(check_tour(&[[f64::NAN, 0.0]], &[0]).is_err());
    }

    #[test]
    fn file_names_are_safe_and_unique() {
        let mut f = FileNames::default();
        assert_eq!(f.file_for("kroA100"), "kroA100.svg");
        assert_eq!(f.file_for("a/b"), "a_b.svg");
        assert_eq!(f.file_for("a_b"), "a_b-2.svg");
        assert_eq!(f.file_for("KROA100"), "KROA100-2.svg");
        assert_eq!(f.file_for(".."), "_...svg");
    }
}
