//! Text: sizes, wrapping and fitting, centred lines, the caution block and labels on pale
//! boxes.

use crate::style::{CAUTION_PX, FONT, GRID, INK};
use crate::svg::{Area, DrawResult};
use plotters::coord::CoordTranslate;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Pixels from the edge of a picture to its text.
pub const PAD: i32 = 14;

/// The size in pixels at which text of library size `px` is written.
pub fn em(px: u32) -> f64 {
    f64::from(px) / 1.24
}

/// Distance between the baselines of two lines of text of library size `px`, pixels.
pub fn line_step(px: u32) -> i32 {
    (em(px) * 1.3).ceil() as i32
}

/// About how wide `text` is at library size `px`, pixels, taking `em_per_char` em a character
/// (a common sans-serif face averages about 0.6).
pub fn text_width(text: &str, px: u32, em_per_char: f64) -> f64 {
    text.chars().count() as f64 * em_per_char * em(px)
}

/// Greedy word wrap of `text` into lines no wider than `width_px` at library size `px`,
/// taking about 0.6 em a character (a common sans-serif face averages less). Newlines in
/// `text` start new lines; blank lines are dropped; a word longer than a line is cut.
pub fn wrap(text: &str, px: u32, width_px: u32) -> Vec<String> {
    let per_char = 0.6 * em(px);
    let max = ((f64::from(width_px) / per_char).floor() as usize).max(8);
    let mut lines = Vec::new();
    for para in text.lines() {
        let mut line = String::new();
        let mut len = 0;
        for word in para.split_whitespace() {
            let chars: Vec<char> = word.chars().collect();
            for chunk in chars.chunks(max) {
                if len > 0 && len + 1 + chunk.len() > max {
                    lines.push(std::mem::take(&mut line));
                    len = 0;
                }
                if len > 0 {
                    line.push(' ');
                    len += 1;
                }
                line.extend(chunk);
                len += chunk.len();
            }
        }
        if len > 0 {
            lines.push(line);
        }
    }
    lines
}

/// Height in pixels of a block of `n` lines at library size `px`, with [`PAD`] above and below.
pub fn block_height(n: usize, px: u32) -> u32 {
    (n as i32 * line_step(px) + 2 * PAD) as u32
}

/// Draws `lines` centred across `area`, the first line's top [`PAD`] pixels below its top.
pub fn draw_centred(
    area: &Area,
    lines: &[String],
    px: u32,
    bold: bool,
    colour: RGBColor,
) -> DrawResult<()> {
    let (w, _) = area.dim_in_pixel();
    let font = (FONT, px).into_font();
    let font = if bold {
        font.style(FontStyle::Bold)
    } else {
        font
    };
    let style = TextStyle::from(font)
        .color(&colour)
        .pos(Pos::new(HPos::Center, VPos::Top));
    for (i, line) in lines.iter().enumerate() {
        let y = PAD + i as i32 * line_step(px);
        area.draw(&Text::new(line.clone(), (w as i32 / 2, y), style.clone()))?;
    }
    Ok(())
}

/// The caution block: a thin rule, then the sentence's `lines` centred below it.
pub fn draw_caution(area: &Area, lines: &[String]) -> DrawResult<()> {
    let (w, _) = area.dim_in_pixel();
    area.draw(&PathElement::new(
        vec![(PAD, 4), (w as i32 - PAD, 4)],
        GRID.stroke_width(1),
    ))?;
    draw_centred(area, lines, CAUTION_PX, false, INK)
}

/// `text` on a pale box (white at 80 %) spanning `corners`, anchored at `at` in `style`: a
/// label that stays legible on any shade.
pub fn boxed_text<CT: CoordTranslate>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    corners: [CT::From; 2],
    text: String,
    at: CT::From,
    style: &TextStyle,
) -> DrawResult<()> {
    area.draw(&Rectangle::new(corners, WHITE.mix(0.8).filled()))?;
    area.draw(&Text::new(text, at, style.clone()))
}

/// Whether every text of `svg` fits its picture: each baseline inside the picture's height,
/// with room for descenders. The error names the first text that does not.
pub fn text_fits(svg: &str) -> Result<(), String> {
    let number = |s: &str, name: &str| -> Option<f64> {
        s.split(&format!("{name}=\""))
            .nth(1)
            .and_then(|s| s.split('"').next())
            .and_then(|s| s.parse().ok())
    };
    let height = number(svg, "height").ok_or("the SVG has no height")?;
    for (i, part) in svg.split("<text").skip(1).enumerate() {
        let y = number(part, "y").ok_or_else(|| format!("text {i} has no y"))?;
        if !(y >= 0.0 && y + 22.0 <= height) {
            return Err(format!("text {i} at y {y} of {height}"));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrapping_keeps_every_word_and_the_width() {
        let text = "one two three four five six seven eight nine ten eleven twelve";
        let lines = wrap(text, 19, 120);
        assert!(lines.len() > 1);
        assert_eq!(lines.join(" "), text);
        let max = (120.0 / (0.6 * em(19))).floor() as usize;
        assert!(lines.iter().all(|l| l.chars().count() <= max));
        assert_eq!(wrap("a\n\nb", 19, 1000), vec!["a", "b"]);
        assert!(wrap("", 19, 1000).is_empty());
        // A word longer than a line is cut rather than overflowing.
        let long = "x".repeat(100);
        assert!(wrap(&long, 19, 120)
            .iter()
            .all(|l| l.chars().count() <= max));
    }

    #[test]
    fn wrapping_by_hand() {
        // Size 31 is 25 px; 0.6 em is 15 px a character, so 150 px hold 10 characters.
        assert_eq!(
            wrap("aaaa bbbb cc dddddd", 31, 150),
            vec!["aaaa bbbb", "cc dddddd"]
        );
        // Never fewer than 8 characters a line, however narrow.
        assert_eq!(wrap("abcdefghij", 31, 10), vec!["abcdefgh", "ij"]);
    }

    #[test]
    fn sizes_by_hand() {
        // 31 / 1.24 = 25 px; 1.3 lines of it = 32.5, rounded up.
        assert!((em(31) - 25.0).abs() < 1e-12);
        assert_eq!(line_step(31), 33);
        assert_eq!(block_height(2, 31), 2 * 33 + 28);
        assert!((text_width("abcd", 31, 0.6) - 60.0).abs() < 1e-9);
    }

    #[test]
    fn text_fits_finds_text_past_the_bottom() {
        let svg = |y: f64| {
            format!("<svg width=\"10\" height=\"100\"><text x=\"1\" y=\"{y}\">a</text></svg>")
        };
        assert_eq!(text_fits(&svg(50.0)), Ok(()));
        assert_eq!(text_fits(&svg(78.0)), Ok(()));
        assert!(text_fits(&svg(79.0)).is_err());
        assert!(text_fits(&svg(-1.0)).is_err());
        assert!(text_fits("<svg></svg>").is_err());
    }
}
