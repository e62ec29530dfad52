//! Legends: entries with a key and a label, stacked down a panel beside the chart (so a
//! legend never covers a curve, wherever the curves go).

use crate::style::{FONT, INK, OUTLINE, SOFT_TEXT};
use crate::svg::{Area, DrawResult};
use crate::text::{line_step, wrap, PAD};
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Width of a legend key, pixels.
pub const KEY_W: i32 = 30;

/// What a legend needs of a key: whether it is text only (and in the softer colour), and how
/// to draw its mark.
pub trait LegendKey {
    /// `None` for a key with a mark; `Some(soft)` for text only from the left edge, in the
    /// softer colour when `soft`.
    fn text_only(&self) -> Option<bool>;
    /// Draws the mark centred at `c` (pixels), [`KEY_W`] wide.
    fn draw(&self, area: &Area, c: (i32, i32)) -> DrawResult<()>;
}

/// The keys most legends need.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Key {
    /// A filled rectangle of this colour, outlined.
    Swatch(RGBAColor),
    /// A filled dot of this colour and radius.
    Dot(RGBColor, i32),
    /// A hollow ring of this colour, radius 4.
    Ring(RGBColor),
    /// A solid line of this colour and width.
    Line(RGBColor, u32),
    /// A dashed line.
    Dashed {
        /// Its colour.
        colour: RGBColor,
        /// Its width, pixels.
        width: u32,
        /// Length of a dash, pixels.
        dash: u32,
        /// Length of a gap, pixels.
        gap: u32,
    },
    /// A short vertical line.
    Tick(RGBColor),
    /// No mark: text only, from the left edge.
    Heading,
    /// No mark: text only, from the left edge, in a softer colour.
    Note,
}

impl LegendKey for Key {
    fn text_only(&self) -> Option<bool> {
        match self {
            Key::Heading => Some(false),
            Key::Note => Some(true),
            _ => None,
        }
    }

    fn draw(&self, area: &Area, c: (i32, i32)) -> DrawResult<()> {
        let (x, y) = c;
        let half = KEY_W / 2;
        match *self {
            Key::Swatch(colour) => {
                let r = [(x - half, y - 8), (x + half, y + 8)];
                area.draw(&Rectangle::new(r, colour.filled()))?;
                area.draw(&Rectangle::new(r, OUTLINE.stroke_width(1)))
            }
            Key::Dot(colour, radius) => area.draw(&Circle::new(c, radius, colour.filled())),
            Key::Ring(colour) => area.draw(&Circle::new(c, 4, colour.stroke_width(1))),
            Key::Line(colour, width) => area.draw(&PathElement::new(
                vec![(x - half, y), (x + half, y)],
                colour.stroke_width(width),
            )),
            Key::Dashed {
                colour,
                width,
                dash,
                gap,
            } => area.draw(&DashedPathElement::new(
                vec![(x - half, y), (x + half, y)],
                dash,
                gap,
                colour.stroke_width(width),
            )),
            Key::Tick(colour) => area.draw(&PathElement::new(
                vec![(x, y - 9), (x, y + 9)],
                colour.stroke_width(2),
            )),
            Key::Heading | Key::Note => Ok(()),
        }
    }
}

/// One entry of a legend: a key and its label. A newline in the label starts a new line.
pub struct LegendEntry<K> {
    /// The key.
    pub key: K,
    /// The label.
    pub label: String,
}

/// How a legend is laid out down its panel.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LegendLayout {
    /// Font size as the drawing library takes it.
    pub px: u32,
    /// Pixels from one line of a label to the next.
    pub step: i32,
    /// Extra pixels between two entries.
    pub gap: i32,
    /// Pixels from the top given to [`draw_legend`] to the middle of the first line.
    pub lead: i32,
    /// Whether labels are wrapped to the panel's width (otherwise only at their newlines).
    pub wrap: bool,
}

impl LegendLayout {
    /// Labels wrapped to the panel, lines [`line_step`] apart, half a line between entries.
    pub fn wrapped(px: u32) -> Self {
        let step = line_step(px);
        LegendLayout {
            px,
            step,
            gap: step / 2,
            lead: step / 2,
            wrap: true,
        }
    }

    /// Labels broken only at their newlines, lines 1.25 sizes apart, a third of a line
    /// between entries; the panel is as wide as the labels need ([`legend_width`]).
    pub fn spaced(px: u32) -> Self {
        let step = (f64::from(px) * 1.25) as i32;
        LegendLayout {
            px,
            step,
            gap: step / 3,
            lead: 0,
            wrap: false,
        }
    }
}

/// Lines of each entry's label when the legend is `width` pixels wide.
pub fn legend_lines<K: LegendKey>(
    entries: &[LegendEntry<K>],
    width: u32,
    layout: LegendLayout,
) -> Vec<Vec<String>> {
    let text_w = (width as i32 - 3 * PAD - KEY_W).max(40) as u32;
    entries
        .iter()
        .map(|e| {
            if !layout.wrap {
                return e.label.lines().map(str::to_string).collect();
            }
            let w = if e.key.text_only().is_some() {
                width.saturating_sub(2 * PAD as u32)
            } else {
                text_w
            };
            wrap(&e.label, layout.px, w)
        })
        .collect()
}

/// Height in pixels a legend `width` pixels wide needs, with [`PAD`] above and below.
pub fn legend_height<K: LegendKey>(
    entries: &[LegendEntry<K>],
    width: u32,
    layout: LegendLayout,
) -> u32 {
    let rows: i32 = legend_lines(entries, width, layout)
        .iter()
        .map(|l| l.len().max(1) as i32 * layout.step + layout.gap)
        .sum();
    (rows + 2 * PAD) as u32
}

/// Width of a legend panel that holds the longest line of `entries` beside its key: about
/// 0.62 em a character, between 140 and 480 pixels.
pub fn legend_width<K>(entries: &[LegendEntry<K>], layout: LegendLayout) -> u32 {
    let longest = entries
        .iter()
        .flat_map(|e| e.label.lines())
        .map(|l| l.chars().count())
        .max()
        .unwrap_or(0);
    let text = longest as f64 * 0.62 * f64::from(layout.px) / 1.24;
    (text as u32 + (KEY_W + 4 * PAD) as u32).clamp(140, 480)
}

/// Draws `entries` down `area`, from `top` pixels.
pub fn draw_legend<K: LegendKey>(
    area: &Area,
    top: i32,
    entries: &[LegendEntry<K>],
    layout: LegendLayout,
) -> DrawResult<()> {
    let (w, _) = area.dim_in_pixel();
    let plain = TextStyle::from((FONT, layout.px).into_font())
        .color(&INK)
        .pos(Pos::new(HPos::Left, VPos::Center));
    let soft = plain.color(&SOFT_TEXT);
    let mut y = top + layout.lead;
    for (e, lines) in entries.iter().zip(legend_lines(entries, w, layout)) {
        let (x_text, style) = match e.key.text_only() {
            Some(true) => (PAD, &soft),
            Some(false) => (PAD, &plain),
            None => {
                e.key.draw(area, (PAD + KEY_W / 2, y))?;
                (2 * PAD + KEY_W, &plain)
            }
        };
        for line in &lines {
            area.draw(&Text::new(line.clone(), (x_text, y), style.clone()))?;
            y += layout.step;
        }
        y += layout.gap;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::style::BLUE;

    fn entry(key: Key, label: &str) -> LegendEntry<Key> {
        LegendEntry {
            key,
            label: label.into(),
        }
    }

    #[test]
    fn legend_width_follows_the_longest_line() {
        let layout = LegendLayout::spaced(31); // 25 px, 0.62 em = 15.5 px a character
                                               // 21 characters: 325.5 px of text, plus the key and four paddings (86).
        let e = [entry(Key::Line(BLUE, 3), "short\nabcdefghijklmnopqrstu")];
        assert_eq!(legend_width(&e, layout), 325 + 86);
        // Never narrower than 140 nor wider than 480.
        assert_eq!(legend_width(&[entry(Key::Note, "a")], layout), 140);
        assert_eq!(legend_width::<Key>(&[], layout), 140);
        let long = "x".repeat(100);
        assert_eq!(legend_width(&[entry(Key::Note, &long)], layout), 480);
    }

    #[test]
    fn legend_lines_wrap_beside_the_key_and_notes_across() {
        let layout = LegendLayout::wrapped(31); // 15 px a character when wrapping
                                                // 250 px wide: 250 − 3·14 − 30 = 178 px beside a key (11 characters), 222 px for a
                                                // note (14 characters).
        let e = [
            entry(Key::Ring(BLUE), "aaaa bbbb cccc"),
            entry(Key::Note, "aaaa bbbb cccc"),
        ];
        let lines = legend_lines(&e, 250, layout);
        assert_eq!(lines[0], vec!["aaaa bbbb", "cccc"]);
        assert_eq!(lines[1], vec!["aaaa bbbb cccc"]);
        // Three lines, each step apart, and half a step after each entry, plus padding.
        let step = line_step(31);
        assert_eq!(
            legend_height(&e, 250, layout),
            (3 * step + 2 * (step / 2) + 28) as u32
        );
        // Without wrapping, only newlines break.
        let spaced = LegendLayout::spaced(31);
        let lines = legend_lines(
            &[entry(Key::Line(BLUE, 1), "a b c d e f g h i j\nk")],
            50,
            spaced,
        );
        assert_eq!(lines[0], vec!["a b c d e f g h i j", "k"]);
    }

    #[test]
    fn layouts_by_hand() {
        let s = LegendLayout::spaced(19);
        assert_eq!((s.step, s.gap, s.lead), (23, 7, 0));
        let w = LegendLayout::wrapped(16);
        assert_eq!((w.step, w.gap, w.lead), (17, 8, 8));
    }
}
