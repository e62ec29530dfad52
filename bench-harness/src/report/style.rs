//! The look shared by every figure: sizes, fonts, one colour per method, tick labels, and the
//! page drawn when there is nothing to plot.

use super::ReportError;
use crate::record::RunRecord;
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::path::Path;

/// Canvas of the two charts without their legend panel, in pixels.
pub(crate) const CHART_SIZE: (u32, u32) = (900, 600);
/// Generic family names only: SVG viewers pick an installed font, so nothing here needs fonts.
pub(crate) const FONT: &str = "sans-serif";
// The library writes font sizes at 1/1.24 of these.
pub(crate) const TITLE_PX: u32 = 26;
pub(crate) const AXIS_TITLE_PX: u32 = 21;
pub(crate) const TICK_PX: u32 = 18;
pub(crate) const LEGEND_PX: u32 = 19;

/// Okabe and Ito's colour-blind-safe hues, less the yellow that vanishes on white.
const PALETTE: [RGBColor; 7] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
    RGBColor(0, 0, 0),
];

/// A colour per method, the same in every figure: fixed by the sorted method names, so two
/// reports on the same methods agree too.
pub(crate) struct Colours {
    methods: Vec<String>,
}

impl Colours {
    pub(crate) fn new(runs: &[RunRecord]) -> Self {
        let mut methods: Vec<String> = runs.iter().map(|r| r.method.clone()).collect();
        methods.sort();
        methods.dedup();
        Colours { methods }
    }

    pub(crate) fn of(&self, method: &str) -> RGBColor {
        let i = self
            .methods
            .binary_search_by(|m| m.as_str().cmp(method))
            .unwrap_or_else(|i| i);
        match PALETTE.get(i) {
            Some(c) => *c,
            None => {
                // Past the palette, golden-ratio steps of hue keep neighbours apart.
                let hue = (i as f64 * 0.618_034).fract();
                let (r, g, b) = HSLColor(hue, 0.75, 0.4).rgb();
                RGBColor(r, g, b)
            }
        }
    }
}

/// A tick label for `v` on an axis spanning `span`: enough decimals to tell ticks apart,
/// without trailing zeros.
pub(crate) fn number_label(v: f64, span: f64) -> String {
    let decimals = if span.is_finite() && span > 0.0 {
        (2.0 - span.log10().floor()).clamp(0.0, 8.0) as usize
    } else {
        2
    };
    trim_zeros(format!("{v:.decimals$}"))
}

/// A label for a time in seconds on a log axis, to two significant digits.
pub(crate) fn seconds_label(v: f64) -> String {
    if !(v.is_finite() && v > 0.0) {
        return "0".into();
    }
    let decimals = (1.0 - v.log10().floor()).clamp(0.0, 9.0) as usize;
    trim_zeros(format!("{v:.decimals$}"))
}

fn trim_zeros(s: String) -> String {
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// Ticks for a log axis over `[lo, hi]`: 1, 2 and 5 times powers of ten, or only the powers when
/// that would crowd the axis; the two ends when the range holds fewer than two such values.
/// The library's own log ticks are powers of ten only, and a range inside one decade gets none.
pub(crate) fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && hi > lo) {
        return vec![lo];
    }
    let mut ticks = Vec::new();
    let (k0, k1) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    for k in k0..=k1 {
        for m in [1.0, 2.0, 5.0] {
            let v = m * 10f64.powi(k);
            if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                ticks.push(v);
            }
        }
    }
    if ticks.len() > 12 {
        ticks.retain(|v| {
            let l = v.log10();
            (l - l.round()).abs() < 1e-9
        });
    }
    if ticks.len() < 2 {
        return vec![lo, hi];
    }
    ticks
}

/// How a legend entry shows its series.
pub(crate) enum Mark {
    /// A solid line of this colour.
    Solid(RGBColor),
    /// A thin dashed line of this colour.
    Dashed(RGBColor),
}

/// One legend entry; `\n` in the label breaks it into lines.
pub(crate) struct Entry {
    pub(crate) label: String,
    pub(crate) mark: Mark,
}

const LEGEND_SAMPLE_W: i32 = 30;
const LEGEND_PAD: i32 = 14;

/// Width of the legend panel for `entries`. The legend sits beside the chart rather than inside
/// it, so it can never cover a curve, wherever the curves go.
pub(crate) fn legend_width(entries: &[Entry]) -> u32 {
    let longest = entries
        .iter()
        .flat_map(|e| e.label.lines())
        .map(|l| l.chars().count())
        .max()
        .unwrap_or(0);
    // About 0.6 em a character in a common sans-serif face, at the size the library writes.
    let text = longest as f64 * 0.62 * f64::from(LEGEND_PX) / 1.24;
    (text as u32 + (LEGEND_SAMPLE_W + 4 * LEGEND_PAD) as u32).clamp(140, 480)
}

/// Draws `entries` down `area`, from `top` pixels.
pub(crate) fn draw_legend(
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    top: i32,
    entries: &[Entry],
) -> Result<(), DrawingAreaErrorKind<std::io::Error>> {
    let row = (f64::from(LEGEND_PX) * 1.25) as i32;
    let text =
        TextStyle::from((FONT, LEGEND_PX).into_font()).pos(Pos::new(HPos::Left, VPos::Center));
    let x0 = LEGEND_PAD;
    let x1 = x0 + LEGEND_SAMPLE_W;
    let mut y = top;
    for e in entries {
        match e.mark {
            Mark::Solid(c) => {
                area.draw(&PathElement::new(vec![(x0, y), (x1, y)], c.stroke_width(3)))?
            }
            Mark::Dashed(c) => area.draw(&DashedPathElement::new(
                vec![(x0, y), (x1, y)],
                6,
                4,
                c.stroke_width(1),
            ))?,
        }
        for line in e.label.lines() {
            area.draw(&Text::new(
                line.to_string(),
                (x1 + LEGEND_PAD, y),
                text.clone(),
            ))?;
            y += row;
        }
        y += row / 3;
    }
    Ok(())
}

/// Maps any drawing failure to the report's error for `path`.
pub(crate) fn plot_error(
    path: &Path,
) -> impl Fn(DrawingAreaErrorKind<std::io::Error>) -> ReportError + '_ {
    move |e| ReportError::Plot {
        path: path.to_owned(),
        message: e.to_string(),
    }
}

/// Writes an SVG drawn into a string to `path`.
pub(crate) fn save(path: &Path, svg: String) -> Result<(), ReportError> {
    std::fs::write(path, svg).map_err(|source| ReportError::Io {
        path: path.to_owned(),
        source,
    })
}

/// A titled page saying why the chart is missing: a file that is there but empty-handed says more
/// than one that is absent.
pub(crate) fn placeholder(
    root: &DrawingArea<SVGBackend<'_>, Shift>,
    title: &str,
    message: &str,
) -> Result<(), DrawingAreaErrorKind<std::io::Error>> {
    let body = root.titled(title, (FONT, TITLE_PX).into_font())?;
    let (w, h) = body.dim_in_pixel();
    let style = TextStyle::from((FONT, AXIS_TITLE_PX).into_font())
        .color(&RGBColor(80, 80, 80))
        .pos(Pos::new(HPos::Center, VPos::Center));
    body.draw(&Text::new(
        message.to_string(),
        (w as i32 / 2, h as i32 / 2),
        style,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_ticks_use_one_two_five() {
        assert_eq!(log_ticks(0.01, 1.0).len(), 7); // .01 .02 .05 .1 .2 .5 1
        let t = log_ticks(0.3, 0.45);
        assert_eq!(t, vec![0.3, 0.45]);
        let t = log_ticks(1e-4, 1e3);
        assert_eq!(t.len(), 8); // powers only: 1e-4 ..= 1e3
    }

    #[test]
    fn every_method_gets_its_own_colour() {
        use crate::record::sample;
        let runs: Vec<RunRecord> = (0..12)
            .map(|i| sample("a", &format!("m{i:02}"), 0, 1000))
            .collect();
        let c = Colours::new(&runs);
        let mut seen: Vec<(u8, u8, u8)> = (0..12)
            .map(|i| {
                let RGBColor(r, g, b) = c.of(&format!("m{i:02}"));
                (r, g, b)
            })
            .collect();
        assert_eq!(seen[0], (0, 114, 178));
        seen.sort();
        seen.dedup();
        assert_eq!(seen.len(), 12);
    }

    #[test]
    fn labels_drop_trailing_zeros() {
        assert_eq!(seconds_label(0.020000000000000004), "0.02");
        assert_eq!(seconds_label(5.0), "5");
        assert_eq!(seconds_label(0.45), "0.45");
        assert_eq!(number_label(1.5, 10.0), "1.5");
        assert_eq!(number_label(1.002, 0.02), "1.002");
        assert_eq!(number_label(-0.0001, 1000.0), "0");
        assert_eq!(number_label(200.0, 1000.0), "200");
    }
}
