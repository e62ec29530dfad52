//! The framed picture: a title, a body with a legend panel beside it, and the caution.

use crate::legend::{draw_legend, legend_height, LegendEntry, LegendKey, LegendLayout};
use crate::style::{CAUTION_PX, INK, TITLE_PX};
use crate::svg::{render_svg, Area, DrawResult};
use crate::text::{block_height, draw_caution, draw_centred, wrap, PAD};

/// A picture in three bands: the wrapped title on top; the body with a legend panel on its
/// right in the middle; the caution, under a thin rule, at the bottom. The title and the
/// caution wrap to the width, and the middle band grows when the legend needs it.
pub struct Framed<'a, K> {
    /// Width of the picture, pixels.
    pub width: u32,
    /// Width of the legend panel, pixels.
    pub legend_width: u32,
    /// Height of the middle band, pixels, unless the legend needs more.
    pub middle_height: u32,
    /// The title.
    pub title: &'a str,
    /// The caution sentence.
    pub caution: &'a str,
    /// The legend.
    pub legend: &'a [LegendEntry<K>],
    /// How the legend is laid out.
    pub layout: LegendLayout,
}

impl<K: LegendKey> Framed<'_, K> {
    /// Draws the picture as SVG text: `body` gets the whole picture and the body's area (left
    /// of the legend panel), after the title and before the legend and the caution.
    pub fn render(&self, body: impl FnOnce(&Area, &Area) -> DrawResult<()>) -> DrawResult<String> {
        let text_w = self.width.saturating_sub(2 * PAD as u32);
        let title_lines = wrap(self.title, TITLE_PX, text_w);
        let caution_lines = wrap(self.caution, CAUTION_PX, text_w);
        let header_h = block_height(title_lines.len(), TITLE_PX);
        let footer_h = block_height(caution_lines.len(), CAUTION_PX);
        let middle_h =
            self.middle_height
                .max(legend_height(self.legend, self.legend_width, self.layout));
        let size = (self.width, header_h + middle_h + footer_h);
        render_svg(size, |root| {
            let (header, rest) = root.split_vertically(header_h);
            let (middle, footer) = rest.split_vertically(middle_h);
            let (body_area, legend_area) =
                middle.split_horizontally(self.width.saturating_sub(self.legend_width));
            draw_centred(&header, &title_lines, TITLE_PX, false, INK)?;
            body(root, &body_area)?;
            draw_legend(&legend_area, PAD, self.legend, self.layout)?;
            draw_caution(&footer, &caution_lines)
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::text::text_fits;

    #[test]
    fn a_framed_picture_holds_title_legend_and_caution() {
        use crate::legend::Key;
        let legend = [LegendEntry {
            key: Key::Line(crate::style::BLUE, 2),
            label: "series".into(),
        }];
        let framed = Framed {
            width: 400,
            legend_width: 150,
            middle_height: 100,
            title: "A <title>",
            caution: "Only a drawing: check it before use, as every word of this long \
                      caution asks, on two lines at least.",
            legend: &legend,
            layout: LegendLayout::wrapped(crate::style::LEGEND_PX),
        };
        let mut body_size = (0, 0);
        let svg = framed
            .render(|_, body| {
                body_size = body.dim_in_pixel();
                Ok(())
            })
            .unwrap();
        // The body is left of the legend panel, as tall as the middle band.
        assert_eq!(body_size, (250, 100));
        assert!(svg.contains("A &lt;title&gt;"));
        assert!(svg.contains(">\nseries\n<"));
        // Two caution lines (the text is wider than the picture) and the rule above them.
        let caution_lines = wrap(framed.caution, CAUTION_PX, 400 - 28);
        assert!(caution_lines.len() >= 2);
        let header = block_height(1, TITLE_PX);
        let footer = block_height(caution_lines.len(), CAUTION_PX);
        assert!(svg.contains(&format!("height=\"{}\"", header + 100 + footer)));
        assert_eq!(text_fits(&svg), Ok(()));
    }
}
