//! Fonts, font sizes and colours.
//!
//! Font sizes are given as the drawing library takes them; it writes them at 1/1.24 of these
//! (see [`crate::text::em`]).

use plotters::style::{HSLColor, RGBColor};

/// Generic family name only: SVG viewers pick an installed face, so nothing needs font files.
pub const FONT: &str = "sans-serif";
/// Titles.
pub const TITLE_PX: u32 = 26;
/// Axis titles, and messages in an empty chart.
pub const AXIS_TITLE_PX: u32 = 21;
/// Tick labels.
pub const TICK_PX: u32 = 18;
/// Legends whose labels are wrapped to the panel (the sky pictures and the front).
pub const LEGEND_PX: u32 = 16;
/// Legends of the sweep report's charts, one line per label line.
pub const REPORT_LEGEND_PX: u32 = 19;
/// The caution sentence.
pub const CAUTION_PX: u32 = 19;

// Okabe and Ito's colour-blind-safe hues (less the yellow that vanishes on white), and greys.
/// Blue.
pub const BLUE: RGBColor = RGBColor(0, 114, 178);
/// Vermillion.
pub const VERMILLION: RGBColor = RGBColor(213, 94, 0);
/// Bluish green.
pub const GREEN: RGBColor = RGBColor(0, 158, 115);
/// Reddish purple.
pub const PURPLE: RGBColor = RGBColor(204, 121, 167);
/// Orange.
pub const ORANGE: RGBColor = RGBColor(230, 159, 0);
/// Sky blue.
pub const SKY_BLUE: RGBColor = RGBColor(86, 180, 233);
/// Black, for text and outlines.
pub const INK: RGBColor = RGBColor(0, 0, 0);
/// Grid lines and the rule above the caution.
pub const GRID: RGBColor = RGBColor(185, 185, 185);
/// Outlines of swatches and of the sky.
pub const OUTLINE: RGBColor = RGBColor(70, 70, 70);
/// Secondary text: notes, grid labels, messages.
pub const SOFT_TEXT: RGBColor = RGBColor(90, 90, 90);

/// The hues in the order series get them.
pub const PALETTE: [RGBColor; 7] = [BLUE, VERMILLION, GREEN, PURPLE, ORANGE, SKY_BLUE, INK];

/// The colour of the `i`-th series: the palette, then golden-ratio steps of hue, which keep
/// neighbours apart however many series there are.
pub fn series_colour(i: usize) -> RGBColor {
    match PALETTE.get(i) {
        Some(c) => *c,
        None => {
            let hue = (i as f64 * 0.618_034).fract();
            let (r, g, b) = plotters::style::Color::rgb(&HSLColor(hue, 0.75, 0.4));
            RGBColor(r, g, b)
        }
    }
}

/// A colour per name, the same in every figure: fixed by the sorted names, so two figures (or
/// two reports) on the same names agree too.
pub struct Colours {
    names: Vec<String>,
}

impl Colours {
    /// Colours for `names` (in any order, repeats allowed).
    pub fn new<S: Into<String>>(names: impl IntoIterator<Item = S>) -> Self {
        let mut names: Vec<String> = names.into_iter().map(Into::into).collect();
        names.sort();
        names.dedup();
        Colours { names }
    }

    /// The colour of `name` (a name not given to [`Colours::new`] gets its sorted place's).
    pub fn of(&self, name: &str) -> RGBColor {
        let i = self
            .names
            .binary_search_by(|m| m.as_str().cmp(name))
            .unwrap_or_else(|i| i);
        series_colour(i)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_name_gets_its_own_colour() {
        let names: Vec<String> = (0..12).map(|i| format!("m{i:02}")).collect();
        // Given in reverse and twice: the colours follow the sorted names.
        let c = Colours::new(names.iter().rev().chain(&names).cloned());
        let mut seen: Vec<(u8, u8, u8)> = names
            .iter()
            .map(|n| {
                let RGBColor(r, g, b) = c.of(n);
                (r, g, b)
            })
            .collect();
        assert_eq!(seen[0], (0, 114, 178));
        assert_eq!(seen[1], (213, 94, 0));
        seen.sort();
        seen.dedup();
        assert_eq!(seen.len(), 12);
    }
}
