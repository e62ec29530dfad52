//! The front's picture and the decision report.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. Spacecraft operations can damage hardware; nothing made here is a command
//! to a spacecraft.
//!
//! `wend sky plan --front` searches the plans that trade elapsed time against
//! momentum-dump propellant. Two files present its result to the people who choose a plan:
//!
//! - [`write_front_svg`]: `front.svg`, propellant (g) against elapsed time (h): the other plans
//!   evaluated as faint grey dots, the front as numbered dots joined by its staircase, the
//!   knee ringed, the reference point crossed and the area the hypervolume measures shaded.
//! - [`write_report_html`]: `report.html`, a self-contained page (inline style and script, no
//!   external address) with the caution, a plain explanation, the trade-off table, the front
//!   as points to choose from, and the chosen plan's pictures and table. It refers to files
//!   beside it: `front.svg` and the files each [`PlanPage`] names.
//!
//! Units: the input is in seconds and kilograms; the pictures and the page show hours and
//! grams (hypervolume in s·kg is shown in h·g: divided by 3600, times 1000).
//!
//! Input is checked before anything is written (see [`FrontReport`]): a bad report gives a
//! [`DrawError::Input`] and leaves no file behind. An empty front still gives both files,
//! saying that no plan is on the front.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use serde::Serialize;
use std::collections::HashSet;
use std::path::Path;
use wend_charts::legend::{Key, LegendEntry, LegendKey, KEY_W};
use wend_charts::style::{AXIS_TITLE_PX, BLUE, FONT, INK, LEGEND_PX, SOFT_TEXT, VERMILLION};
use wend_charts::text::{boxed_text, em, text_width};
use wend_charts::{linear_chart, write_checked, Area, DrawResult};

use super::draw::{framed, DrawError};
use crate::place::{around, nearest_in, Placer, Rect};

/// One plan of the front.
#[derive(Clone, Debug, PartialEq)]
pub struct FrontRow {
    /// 1-based plan number K (files plan-K.csv, plan-K-sky-map.svg, plan-K-momentum.svg).
    pub plan: usize,
    /// Time objective: elapsed time from the plan start until the last observation ends,
    /// waiting and dumps included, seconds.
    pub elapsed_s: f64,
    /// Busy overhead (slews, settles, thermal, setups, dumps; no waiting), seconds (reported,
    /// not an objective).
    pub busy_overhead_s: f64,
    /// Waiting, seconds (reported, not an objective).
    pub wait_s: f64,
    /// Propellant objective, kilograms.
    pub propellant_kg: f64,
    /// Momentum dumps of the plan.
    pub dumps: usize,
    /// Targets the plan schedules.
    pub scheduled: usize,
}

/// One plan's material for the page: its table of observations and the file names of its
/// pictures, which the page shows when the plan is chosen on the front.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PlanPage {
    /// The plan number K of a row of [`FrontReport::front`].
    pub plan: usize,
    /// The table's column names (plain text).
    pub columns: Vec<String>,
    /// The table's rows, each with one cell per column (plain text).
    pub rows: Vec<Vec<String>>,
    /// File name of the plan's sky map, beside the page (no directory, no address).
    pub sky_map: String,
    /// File name of the plan's timeline picture, beside the page.
    pub timeline: String,
    /// File name of the plan's momentum chart, beside the page.
    pub momentum: String,
    /// File name of the plan's table as CSV, beside the page.
    pub csv: String,
}

/// What the picture and the page show.
///
/// Checked before anything is written: every number finite and at least 0 (the reference
/// only finite); plan numbers at least 1 and unique; the front sorted by elapsed time ascending
/// with propellant never rising along it (a row with more elapsed time and more propellant than
/// the row before it is dominated, not on the front); `knee` inside the front; the caution
/// not blank.
pub struct FrontReport<'a> {
    /// Title, e.g. "Lantern Deep-Sky Observatory: 63 targets from 2027-03-01T00:00:00Z".
    pub title: &'a str,
    /// The caution sentence, at the top and the bottom of the page and under the picture.
    pub caution: &'a str,
    /// The front, sorted by elapsed time ascending (so propellant descending). Non-empty for a
    /// real report; an empty front still produces a page that says so.
    pub front: &'a [FrontRow],
    /// Index into `front` of the knee plan, if any.
    pub knee: Option<usize>,
    /// Objective values (busy_overhead_s, propellant_kg) of evaluated plans that are not on the
    /// front: drawn faint.
    pub dominated: &'a [(f64, f64)],
    /// Hypervolume of the front against `reference`, s·kg (shown in h·g too).
    pub hypervolume: f64,
    /// The reference point (busy_overhead_s, propellant_kg).
    pub reference: (f64, f64),
    /// Free lines shown under the title (settings, timing, the single-objective comparison),
    /// plain text: they are escaped here.
    pub notes: &'a [String],
    /// Per plan of the front, at most one each (plans without one are shown by their
    /// figures only): the table and pictures the page shows when the plan is chosen. The
    /// picture `front.svg` does not use them.
    pub plans: &'a [PlanPage],
}

/// Draws `front.svg` at `path` (900 px wide, about 560 tall; taller when the title or the
/// caution needs more lines): propellant (g) against elapsed time (h), the other plans evaluated
/// as small faint grey dots, the front as larger dots joined by its staircase, each labelled
/// with its plan number K, the knee ringed and labelled "K (knee)", the reference point
/// crossed, the region the hypervolume measures shaded, a legend, the title and the caution.
///
/// # Errors
/// [`DrawError::Input`] when the report is inconsistent (see [`FrontReport`]; nothing is
/// written); [`DrawError::Write`] when the file cannot be written.
pub fn write_front_svg(path: &Path, report: &FrontReport) -> Result<(), DrawError> {
    write_checked(
        path,
        || check(report),
        |ranges| render_front(report, ranges),
    )
}

/// Writes `report.html` at `path`: a self-contained page (inline style and script, no
/// external address, works opened from a file) for the people who choose a plan. It shows
/// the caution at the top and the bottom, the notes under the title, a plain explanation of
/// the front and the hypervolume, the trade-off table (one row per plan, with what it costs
/// and saves against the fastest), the front drawn in the page with a point per plan that can
/// be chosen by mouse or keyboard, and the chosen plan's summary, pictures (relative links to
/// the files [`PlanPage`] names) and table, taken from data embedded in the page. The knee is
/// chosen at first (the fastest when there is no knee). Every text is escaped.
///
/// # Errors
/// As [`write_front_svg`].
pub fn write_report_html(path: &Path, report: &FrontReport) -> Result<(), DrawError> {
    write_checked(path, || check(report), |ranges| render_html(report, ranges))
}

// ---------------------------------------------------------------------------------------------
// Units and numbers.

/// Seconds to hours.
fn hours(s: f64) -> f64 {
    s / 3600.0
}

/// Kilograms to grams.
fn grams(kg: f64) -> f64 {
    kg * 1000.0
}

/// Hypervolume in s·kg to h·g.
fn hv_hour_grams(s_kg: f64) -> f64 {
    s_kg / 3600.0 * 1000.0
}

/// `v` with `decimals` decimals, never "-0.00".
fn fixed(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// Hours with 2 decimals.
fn fmt_h(s: f64) -> String {
    fixed(hours(s), 2)
}

/// Grams with 1 decimal.
fn fmt_g(kg: f64) -> String {
    fixed(grams(kg), 1)
}

/// The axes' ends: elapsed time in hours, propellant in grams.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Ranges {
    x: (f64, f64),
    y: (f64, f64),
}

/// `lo..hi` widened by 8 % on each side (a span for a single value), not below 0 when the
/// values are not.
fn padded(lo: f64, hi: f64) -> (f64, f64) {
    let span = hi - lo;
    let pad = if span > 0.0 {
        0.08 * span
    } else {
        (0.1 * hi.abs()).max(0.1)
    };
    let low = lo - pad;
    let low = if lo >= 0.0 { low.max(0.0) } else { low };
    (low, hi + pad)
}

/// Why `r` cannot be presented faithfully, or the ranges of the picture's axes.
fn check(r: &FrontReport) -> Result<Ranges, String> {
    if r.caution.trim().is_empty() {
        return Err("the caution text is blank; the report must carry it".into());
    }
    let mut seen = HashSet::new();
    for (i, row) in r.front.iter().enumerate() {
        if row.plan == 0 {
            return Err(format!(
                "front row {i} has plan number 0; plan numbers start at 1"
            ));
        }
        if !seen.insert(row.plan) {
            return Err(format!(
                "front row {i} has plan number {}, which an earlier row has too; plan \
                 numbers must be unique",
                row.plan
            ));
        }
        for (what, v, unit) in [
            ("elapsed time", row.elapsed_s, "s"),
            ("overhead", row.busy_overhead_s, "s"),
            ("waiting", row.wait_s, "s"),
            ("propellant", row.propellant_kg, "kg"),
        ] {
            if !(v.is_finite() && v >= 0.0) {
                return Err(format!(
                    "front row {i} (plan {}) has {what} {v} {unit}, not a finite value at \
                     least 0",
                    row.plan
                ));
            }
        }
        if i > 0 {
            let prev = &r.front[i - 1];
            if row.elapsed_s < prev.elapsed_s {
                return Err(format!(
                    "the front is not sorted by elapsed time: row {i} (plan {}, {} s) comes \
                     after row {} (plan {}, {} s)",
                    row.plan,
                    row.elapsed_s,
                    i - 1,
                    prev.plan,
                    prev.elapsed_s
                ));
            }
            if row.propellant_kg > prev.propellant_kg {
                return Err(format!(
                    "row {i} (plan {}) takes longer and uses more propellant ({} kg) than row \
                     {} (plan {}, {} kg): it is dominated, not on the front",
                    row.plan,
                    row.propellant_kg,
                    i - 1,
                    prev.plan,
                    prev.propellant_kg
                ));
            }
        }
    }
    if let Some(k) = r.knee {
        if k >= r.front.len() {
            return Err(format!(
                "the knee is front row {k}, but the front has {} rows",
                r.front.len()
            ));
        }
    }
    for (j, &(o, p)) in r.dominated.iter().enumerate() {
        if !(o.is_finite() && o >= 0.0 && p.is_finite() && p >= 0.0) {
            return Err(format!(
                "dominated plan {j} has elapsed time {o} s and propellant {p} kg; both must be \
                 finite and at least 0"
            ));
        }
    }
    if !(r.hypervolume.is_finite() && r.hypervolume >= 0.0) {
        return Err(format!(
            "the hypervolume {} s·kg is not a finite value at least 0",
            r.hypervolume
        ));
    }
    let (ro, rp) = r.reference;
    if !(ro.is_finite() && rp.is_finite()) {
        return Err(format!(
            "the reference point ({ro} s, {rp} kg) is not finite"
        ));
    }

    let mut pages = HashSet::new();
    for (j, page) in r.plans.iter().enumerate() {
        if !r.front.iter().any(|row| row.plan == page.plan) {
            return Err(format!(
                "plan page {j} is for plan {}, which is not on the front",
                page.plan
            ));
        }
        if !pages.insert(page.plan) {
            return Err(format!(
                "plan page {j} is for plan {}, which an earlier page is for too",
                page.plan
            ));
        }
        for (k, row) in page.rows.iter().enumerate() {
            if row.len() != page.columns.len() {
                return Err(format!(
                    "row {k} of plan {}'s table has {} cells for {} columns",
                    page.plan,
                    row.len(),
                    page.columns.len()
                ));
            }
        }
        for name in [&page.sky_map, &page.timeline, &page.momentum, &page.csv] {
            let plain = !name.is_empty()
                && name != "."
                && name != ".."
                && !name.contains(['/', '\\', ':', '"', '<', '>', '?', '#']);
            if !plain {
                return Err(format!(
                    "plan {}'s file name {name:?} is not a plain file name beside the page",
                    page.plan
                ));
            }
        }
    }

    let points = r
        .front
        .iter()
        .map(|row| (row.elapsed_s, row.propellant_kg))
        .chain(r.dominated.iter().copied())
        .chain(std::iter::once(r.reference))
        .map(|(o, p)| (hours(o), grams(p)));
    let (mut x0, mut x1, mut y0, mut y1) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
    for (x, y) in points {
        x0 = x0.min(x);
        x1 = x1.max(x);
        y0 = y0.min(y);
        y1 = y1.max(y);
    }
    let ranges = Ranges {
        x: padded(x0, x1),
        y: padded(y0, y1),
    };
    let finite = |(a, b): (f64, f64)| a.is_finite() && b.is_finite() && (b - a).is_finite();
    if !(finite(ranges.x) && finite(ranges.y) && hv_hour_grams(r.hypervolume).is_finite()) {
        return Err("the values are too large to draw".into());
    }
    Ok(ranges)
}

// ---------------------------------------------------------------------------------------------
// The picture. Same look as the sky map and the momentum chart (the shared chart kit: fonts,
// colours, padding, wrapped title and caution, legend panel on the right).

// Font sizes as the drawing library takes them; it writes them at 1/1.24 of these.
const POINT_LABEL_PX: u32 = 18;

/// The other plans evaluated.
const FAINT: RGBColor = RGBColor(165, 165, 165);
/// Opacity of the blue shading of the region the hypervolume measures.
const SHADE_OPACITY: f64 = 0.13;

/// Width of the picture, of its legend panel, and height of the band holding the chart and
/// the legend (more if the legend needs it), pixels.
const FRONT_W: u32 = 900;
const FRONT_LEGEND_W: u32 = 250;
const FRONT_MIDDLE_H: u32 = 400;
/// Radii of the markers, pixels.
const FRONT_R: i32 = 5;
const DOMINATED_R: i32 = 2;
const KNEE_RING_R: i32 = 10;
const CROSS_R: i32 = 6;

/// How a legend entry of the picture shows what it explains: a key of the kit, or one of the
/// picture's own markers.
#[derive(Clone, Copy)]
enum FrontKey {
    /// A key of the kit.
    Kit(Key),
    /// A plan on the front.
    Front,
    /// The front's staircase.
    Staircase,
    /// The knee: a front dot in a ring.
    Knee,
    /// The reference point's cross.
    Reference,
}

impl LegendKey for FrontKey {
    fn text_only(&self) -> Option<bool> {
        match self {
            FrontKey::Kit(k) => k.text_only(),
            _ => None,
        }
    }

    fn draw(&self, area: &Area, c: (i32, i32)) -> DrawResult<()> {
        let (x, y) = c;
        let half = KEY_W / 2;
        match *self {
            FrontKey::Kit(k) => k.draw(area, c),
            FrontKey::Front => draw_front_dot(area, c),
            FrontKey::Staircase => area.draw(&PathElement::new(
                vec![(x - half, y + 6), (x, y + 6), (x, y - 6), (x + half, y - 6)],
                BLUE.stroke_width(2),
            )),
            FrontKey::Knee => {
                draw_front_dot(area, c)?;
                draw_knee_ring(area, c)
            }
            FrontKey::Reference => draw_cross(area, c),
        }
    }
}

/// A plan of the front: a blue dot outlined in black, centred at `at`.
fn draw_front_dot<CT: CoordTranslate>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    at: CT::From,
) -> DrawResult<()> {
    area.draw(
        &(EmptyElement::at(at)
            + Circle::new((0, 0), FRONT_R, BLUE.filled())
            + Circle::new((0, 0), FRONT_R, INK.stroke_width(1))),
    )
}

/// The knee's ring around `at`.
fn draw_knee_ring<CT: CoordTranslate>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    at: CT::From,
) -> DrawResult<()> {
    area.draw(&Circle::new(at, KNEE_RING_R, VERMILLION.stroke_width(3)))
}

/// The reference point: a black cross centred at `at`.
fn draw_cross<CT: CoordTranslate>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    at: CT::From,
) -> DrawResult<()> {
    let r = CROSS_R;
    area.draw(
        &(EmptyElement::at(at)
            + PathElement::new(vec![(-r, -r), (r, r)], INK.stroke_width(2))
            + PathElement::new(vec![(-r, r), (r, -r)], INK.stroke_width(2))),
    )
}

/// The legend of the picture.
fn front_legend(r: &FrontReport) -> Vec<LegendEntry<FrontKey>> {
    let e = |key: FrontKey, label: String| LegendEntry { key, label };
    let n = r.front.len();
    let (ro, rp) = r.reference;
    let mut entries = vec![e(
        FrontKey::Front,
        if n == 0 {
            "plan on the front: none".to_string()
        } else {
            format!("plan on the front ({n}), labelled with its number")
        },
    )];
    if n > 1 {
        entries.push(e(FrontKey::Staircase, "the front's staircase".into()));
    }
    if let Some(k) = r.knee {
        entries.push(e(
            FrontKey::Knee,
            format!("knee, plan {}: the most balanced trade", r.front[k].plan),
        ));
    }
    entries.push(e(
        FrontKey::Kit(Key::Dot(FAINT, DOMINATED_R + 1)),
        format!(
            "other plan evaluated, beaten in both ({})",
            r.dominated.len()
        ),
    ));
    entries.push(e(
        FrontKey::Reference,
        format!("reference point ({} h elapsed, {} g)", fmt_h(ro), fmt_g(rp)),
    ));
    if n > 0 {
        entries.push(e(
            FrontKey::Kit(Key::Swatch(BLUE.mix(SHADE_OPACITY))),
            format!(
                "hypervolume {} h·g: the area the front beats, up to the reference",
                fixed(hv_hour_grams(r.hypervolume), 1)
            ),
        ));
        entries.push(e(
            FrontKey::Kit(Key::Note),
            "Lower is less propellant, left is less elapsed time: no plan of the front is \
             better than another in both."
                .into(),
        ));
    } else {
        entries.push(e(FrontKey::Kit(Key::Note), "No plan on the front.".into()));
    }
    entries
}

/// Candidate places for a label of `w`×`h` pixels for a point at pixel `p` drawn with a
/// marker of radius `radius`: below and left first (the front leaves that side empty), then
/// the other sides, then the same sides farther out (with a leader line, for a crowded
/// front), then a wide ring around the point.
fn label_candidates(p: (f64, f64), radius: f64, w: f64, h: f64) -> Vec<Rect> {
    let (x, y) = p;
    let g = radius + 3.0;
    let mut corners = vec![
        (x - g - w, y + 2.0),
        (x - g - w, y - h / 2.0),
        (x - w / 2.0, y + g),
        (x + 2.0, y + g),
        (x - g - w, y - h - 2.0),
        (x + g, y + 2.0),
    ];
    for k in 1..=4 {
        let k = f64::from(k);
        corners.push((x - g - w - 0.5 * k * w, y + 2.0 + k * h));
        corners.push((x - w / 2.0, y + g + k * h));
        corners.push((x - g - w - k * w, y - h / 2.0));
        corners.push((x + 2.0 + 0.5 * k * w, y + g + k * h));
    }
    let mut rects: Vec<Rect> = corners
        .iter()
        .map(|&(x0, y0)| (x0, y0, x0 + w, y0 + h))
        .collect();
    rects.extend(around(p, radius, w, h, 6));
    rects
}

/// Width and height in pixels of a label of `text` at library size `px`, with a margin.
fn label_size(text: &str, px: u32) -> (f64, f64) {
    (text_width(text, px, 0.62) + 6.0, em(px) * 1.25)
}

/// The picture as SVG text.
fn render_front(r: &FrontReport, ranges: Ranges) -> DrawResult<String> {
    let Ranges {
        x: (x_lo, x_hi),
        y: (y_lo, y_hi),
    } = ranges;
    let legend = front_legend(r);
    let pts: Vec<(f64, f64)> = r
        .front
        .iter()
        .map(|row| (hours(row.elapsed_s), grams(row.propellant_kg)))
        .collect();
    let reference = (hours(r.reference.0), grams(r.reference.1));

    let frame = framed(
        FRONT_W,
        FRONT_LEGEND_W,
        FRONT_MIDDLE_H,
        r.title,
        r.caution,
        &legend,
    );
    frame.render(|root, chart_area| {
        let chart = linear_chart(
            chart_area,
            (x_lo, x_hi),
            (y_lo, y_hi),
            "elapsed time, waiting and dumps included (h)",
            "momentum-dump propellant (g)",
        )?;
        let plot = chart.plotting_area();
        let pixel = |p: (f64, f64)| {
            let (x, y) = plot.map_coordinate(&p);
            (f64::from(x), f64::from(y))
        };

        // The region the hypervolume measures: every point at least as bad as a plan of the
        // front and no worse than the reference, a staircase down to the reference's corner.
        let inside: Vec<(f64, f64)> = pts
            .iter()
            .copied()
            .filter(|&(x, y)| x < reference.0 && y < reference.1)
            .collect();
        if let (Some(first), Some(last)) = (inside.first(), inside.last()) {
            let mut shape = vec![(first.0, reference.1), *first];
            for pair in inside.windows(2) {
                shape.push((pair[1].0, pair[0].1));
                shape.push(pair[1]);
            }
            shape.push((reference.0, last.1));
            shape.push(reference);
            plot.draw(&Polygon::new(shape, BLUE.mix(SHADE_OPACITY).filled()))?;
        }

        // The other plans, one dot per pixel at most.
        let mut drawn = HashSet::new();
        for &(o, p) in r.dominated {
            let at = (hours(o), grams(p));
            if drawn.insert(plot.map_coordinate(&at)) {
                plot.draw(&Circle::new(at, DOMINATED_R, FAINT.filled()))?;
            }
        }

        // The staircase: across at a plan's propellant to the next plan's time, then down.
        let mut stairs = Vec::new();
        for (i, &p) in pts.iter().enumerate() {
            if i > 0 {
                stairs.push((p.0, pts[i - 1].1));
            }
            stairs.push(p);
        }
        if stairs.len() > 1 {
            plot.draw(&PathElement::new(stairs.clone(), BLUE.stroke_width(2)))?;
        }
        draw_cross(plot, reference)?;
        for &p in &pts {
            draw_front_dot(plot, p)?;
        }
        if let Some(k) = r.knee {
            draw_knee_ring(plot, pts[k])?;
        }

        // Labels, placed clear of each other, the markers and the staircase.
        let (xr, yr) = plot.get_pixel_range();
        let bounds = (
            f64::from(xr.start),
            f64::from(yr.start),
            f64::from(xr.end),
            f64::from(yr.end),
        );
        let mut placer = Placer::new(bounds);
        for pair in stairs.windows(2) {
            let (a, b) = (pixel(pair[0]), pixel(pair[1]));
            placer.block((
                a.0.min(b.0) - 1.5,
                a.1.min(b.1) - 1.5,
                a.0.max(b.0) + 1.5,
                a.1.max(b.1) + 1.5,
            ));
        }
        for (i, &p) in pts.iter().enumerate() {
            let (x, y) = pixel(p);
            let rad = f64::from(if r.knee == Some(i) {
                KNEE_RING_R + 2
            } else {
                FRONT_R + 1
            });
            placer.block((x - rad, y - rad, x + rad, y + rad));
        }
        // A label on a pale box filling `rect`, centred in it.
        let label_box = |rect: Rect, text: String, style: &TextStyle| -> DrawResult<()> {
            let (x0, y0, x1, y1) = rect;
            boxed_text(
                root,
                [(x0 as i32, y0 as i32), (x1 as i32, y1 as i32)],
                text,
                (((x0 + x1) / 2.0) as i32, ((y0 + y1) / 2.0) as i32),
                style,
            )
        };
        let soft_centred = |px: u32| {
            TextStyle::from((FONT, px).into_font())
                .color(&SOFT_TEXT)
                .pos(Pos::new(HPos::Center, VPos::Center))
        };
        // The reference's label first: up and left of its cross, else below it.
        {
            let (x, y) = pixel(reference);
            let text = "reference";
            let (w, h) = label_size(text, LEGEND_PX);
            let c = f64::from(CROSS_R) + 2.0;
            placer.block((x - c, y - c, x + c, y + c));
            let candidates = [
                (x - c - w, y - c - h, x - c, y - c),
                (x - c - w, y + c, x - c, y + c + h),
            ]
            .into_iter()
            .chain(around((x, y), c, w, h, 2));
            if let Some(rect) = placer.place(candidates) {
                label_box(rect, text.to_string(), &soft_centred(LEGEND_PX))?;
            }
        }
        // The knee's first, then the others from the fastest; a label with no clear place
        // is left out, and a note under the chart names those plans.
        let order = r
            .knee
            .into_iter()
            .chain((0..pts.len()).filter(|&i| Some(i) != r.knee));
        let mut left_out = Vec::new();
        for i in order {
            let (text, colour) = if r.knee == Some(i) {
                (format!("{} (knee)", r.front[i].plan), VERMILLION)
            } else {
                (r.front[i].plan.to_string(), INK)
            };
            let (w, h) = label_size(&text, POINT_LABEL_PX);
            let marker = if r.knee == Some(i) {
                KNEE_RING_R
            } else {
                FRONT_R
            };
            let at = pixel(pts[i]);
            let Some(rect) = placer.place(label_candidates(at, f64::from(marker), w, h)) else {
                left_out.push(r.front[i].plan);
                continue;
            };
            // A thin leader line to a label pushed away from its point.
            let near = nearest_in(&rect, at);
            let (dx, dy) = (near.0 - at.0, near.1 - at.1);
            let dist = dx.hypot(dy);
            let start = f64::from(marker) + 1.0;
            if dist > start + 6.0 {
                let from = (at.0 + dx * start / dist, at.1 + dy * start / dist);
                root.draw(&PathElement::new(
                    vec![
                        (from.0 as i32, from.1 as i32),
                        (near.0 as i32, near.1 as i32),
                    ],
                    SOFT_TEXT.stroke_width(1),
                ))?;
            }
            let style = TextStyle::from((FONT, POINT_LABEL_PX).into_font().style(FontStyle::Bold))
                .color(&colour)
                .pos(Pos::new(HPos::Center, VPos::Center));
            label_box(rect, text, &style)?;
        }
        if !left_out.is_empty() {
            left_out.sort_unstable();
            let list: Vec<String> = left_out.iter().map(ToString::to_string).collect();
            let text = match list.len() {
                1 => format!("no room to label plan {}", list[0]),
                2..=6 => format!("no room to label plans {}", list.join(", ")),
                n => format!("no room to label {n} plans"),
            };
            let (w, h) = label_size(&text, LEGEND_PX);
            let candidates = [
                (
                    bounds.2 - 4.0 - w,
                    bounds.1 + 4.0,
                    bounds.2 - 4.0,
                    bounds.1 + 4.0 + h,
                ),
                (
                    bounds.2 - 4.0 - w,
                    bounds.3 - 4.0 - h,
                    bounds.2 - 4.0,
                    bounds.3 - 4.0,
                ),
                (
                    bounds.0 + 4.0,
                    bounds.3 - 4.0 - h,
                    bounds.0 + 4.0 + w,
                    bounds.3 - 4.0,
                ),
                (
                    bounds.0 + 4.0,
                    bounds.1 + 4.0,
                    bounds.0 + 4.0 + w,
                    bounds.1 + 4.0 + h,
                ),
            ];
            if let Some(rect) = placer.place(candidates) {
                label_box(rect, text, &soft_centred(LEGEND_PX))?;
            }
        }

        // An empty front says so, on a pale box in the lower part of the chart (the
        // reference point sits at its centre).
        if r.front.is_empty() {
            let text = "no plan on the front";
            let (w, h) = label_size(text, AXIS_TITLE_PX);
            let cx = (bounds.0 + bounds.2) / 2.0;
            let cy = bounds.1 + 0.75 * (bounds.3 - bounds.1);
            boxed_text(
                root,
                [
                    ((cx - w / 2.0) as i32, (cy - h / 2.0) as i32),
                    ((cx + w / 2.0) as i32, (cy + h / 2.0) as i32),
                ],
                text.to_string(),
                (cx as i32, cy as i32),
                &soft_centred(AXIS_TITLE_PX),
            )?;
        }
        Ok(())
    })
}

// ---------------------------------------------------------------------------------------------
// The page.

/// The page's template: HTML with inline style; the template engine escapes every value.
const PAGE: &str = include_str!("../templates/report.html");

/// A row of the front as the page shows it.
#[derive(Serialize)]
struct PageRow {
    plan: usize,
    elapsed: String,
    overhead: String,
    wait: String,
    propellant: String,
    dumps: usize,
    scheduled: usize,
    /// The row's classes: "fastest", "knee", both or none.
    classes: String,
    /// Shown open (the fastest and the knee) rather than folded.
    featured: bool,
    /// What the row is: fastest, knee, least propellant.
    tags: Vec<&'static str>,
    /// What it costs and saves against the fastest; empty for the fastest.
    trade: String,
    heading: String,
}

/// What the page shows.
#[derive(Serialize)]
struct Page<'a> {
    title: &'a str,
    caution: &'a str,
    notes: &'a [String],
    rows: Vec<PageRow>,
    /// Plan number of the knee.
    knee: Option<usize>,
    hypervolume: String,
    reference_h: String,
    reference_g: String,
    alt: String,
    /// The front drawn in the page.
    chart: InlineChart,
    /// The plans' data as JSON, safe inside a script element.
    data: String,
}

/// A plan as the page's script gets it.
#[derive(Serialize)]
struct PlanData<'a> {
    plan: usize,
    heading: String,
    summary: String,
    page: Option<&'a PlanPage>,
}

/// The plans' data for the script.
#[derive(Serialize)]
struct ScriptData<'a> {
    plans: Vec<PlanData<'a>>,
    /// Plan number chosen at first.
    initial: Option<usize>,
}

/// A tick of the inline chart: position in pixels and label.
#[derive(Serialize)]
struct InlineTick {
    at: f64,
    label: String,
}

/// The click radius of point `i` on the inline chart: 13 px, or half the distance to its
/// nearest neighbour when that is closer (points closer than that are reached with the Tab
/// key as well).
fn hit_radius(pts: &[(f64, f64)], i: usize, pr: &impl Fn((f64, f64)) -> (f64, f64)) -> f64 {
    let at = pr(pts[i]);
    let nearest = pts
        .iter()
        .enumerate()
        .filter(|&(j, _)| j != i)
        .map(|(_, &q)| {
            let q = pr(q);
            (q.0 - at.0).hypot(q.1 - at.1)
        })
        .fold(f64::INFINITY, f64::min);
    ((nearest / 2.0).min(13.0) * 10.0).floor() / 10.0
}

/// A plan's point on the inline chart.
#[derive(Serialize)]
struct InlinePoint {
    plan: usize,
    x: f64,
    y: f64,
    knee: bool,
    /// Where its label goes (centre), if it has room.
    label: Option<(f64, f64)>,
    text: String,
    /// Leader line from the marker to the label, when the label is away from it.
    leader: Option<(f64, f64, f64, f64)>,
    /// Radius of the area that takes its click: at most half the way to the nearest other
    /// point, so a crowded point's centre is never under a neighbour's area.
    hit: f64,
    /// What a screen reader says.
    aria: String,
}

/// The front drawn in the page, in pixels of its view box.
#[derive(Serialize)]
struct InlineChart {
    width: f64,
    height: f64,
    /// The plotting area: left, top, right, bottom.
    plot: (f64, f64, f64, f64),
    x_ticks: Vec<InlineTick>,
    y_ticks: Vec<InlineTick>,
    /// The staircase as SVG points.
    stairs: String,
    /// The hypervolume's region as SVG points (empty when none).
    shade: String,
    dominated: Vec<(f64, f64)>,
    reference: (f64, f64),
    points: Vec<InlinePoint>,
    /// Plans whose label had no room.
    unlabelled: String,
}

/// Round ticks over `lo..hi`: steps of 1, 2 or 5 times a power of ten, at most about six.
fn nice_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let span = hi - lo;
    if !(span.is_finite() && span > 0.0) {
        return vec![lo];
    }
    let raw = span / 6.0;
    let pow = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * pow)
        .find(|&st| st >= raw)
        .unwrap_or(10.0 * pow);
    let mut out = Vec::new();
    let mut v = (lo / step).ceil() * step;
    while v <= hi + step * 1e-9 && out.len() < 20 {
        out.push(v);
        v += step;
    }
    out
}

/// The front for the page: the same axes as the picture, its points with labels placed
/// clear of each other.
fn inline_chart(r: &FrontReport, ranges: Ranges) -> InlineChart {
    let (width, height) = (640.0, 400.0);
    let plot = (78.0, 14.0, 624.0, 330.0);
    let Ranges {
        x: (x_lo, x_hi),
        y: (y_lo, y_hi),
    } = ranges;
    let px = |(x, y): (f64, f64)| {
        (
            plot.0 + (x - x_lo) / (x_hi - x_lo) * (plot.2 - plot.0),
            plot.3 - (y - y_lo) / (y_hi - y_lo) * (plot.3 - plot.1),
        )
    };
    let round = |v: f64| (v * 10.0).round() / 10.0;
    let pr = |p: (f64, f64)| {
        let (x, y) = px(p);
        (round(x), round(y))
    };
    let pts: Vec<(f64, f64)> = r
        .front
        .iter()
        .map(|row| (hours(row.elapsed_s), grams(row.propellant_kg)))
        .collect();
    let reference = (hours(r.reference.0), grams(r.reference.1));
    let points_text = |v: &[(f64, f64)]| {
        v.iter()
            .map(|&p| {
                let (x, y) = pr(p);
                format!("{x},{y}")
            })
            .collect::<Vec<_>>()
            .join(" ")
    };
    let mut stairs = Vec::new();
    for (i, &p) in pts.iter().enumerate() {
        if i > 0 {
            stairs.push((p.0, pts[i - 1].1));
        }
        stairs.push(p);
    }
    let inside: Vec<(f64, f64)> = pts
        .iter()
        .copied()
        .filter(|&(x, y)| x < reference.0 && y < reference.1)
        .collect();
    let mut shade = Vec::new();
    if let (Some(first), Some(last)) = (inside.first(), inside.last()) {
        shade = vec![(first.0, reference.1), *first];
        for pair in inside.windows(2) {
            shade.push((pair[1].0, pair[0].1));
            shade.push(pair[1]);
        }
        shade.push((reference.0, last.1));
        shade.push(reference);
    }
    let x_ticks = nice_ticks(x_lo, x_hi)
        .into_iter()
        .map(|v| InlineTick {
            at: round(px((v, y_lo)).0),
            label: wend_charts::number_label(v, x_hi - x_lo),
        })
        .collect();
    let y_ticks = nice_ticks(y_lo, y_hi)
        .into_iter()
        .map(|v| InlineTick {
            at: round(px((x_lo, v)).1),
            label: wend_charts::number_label(v, y_hi - y_lo),
        })
        .collect();

    // Labels: 15 px bold text, about 0.62 em a character.
    let mut placer = Placer::new(plot);
    for pair in stairs.windows(2) {
        let (a, b) = (px(pair[0]), px(pair[1]));
        placer.block((
            a.0.min(b.0) - 1.5,
            a.1.min(b.1) - 1.5,
            a.0.max(b.0) + 1.5,
            a.1.max(b.1) + 1.5,
        ));
    }
    for &p in &pts {
        let (x, y) = px(p);
        placer.block((x - 9.0, y - 9.0, x + 9.0, y + 9.0));
    }
    let rp = px(reference);
    placer.block((rp.0 - 7.0, rp.1 - 7.0, rp.0 + 7.0, rp.1 + 7.0));
    let mut points: Vec<InlinePoint> = pts
        .iter()
        .enumerate()
        .map(|(i, &p)| {
            let row = &r.front[i];
            let (x, y) = pr(p);
            InlinePoint {
                plan: row.plan,
                x,
                y,
                knee: r.knee == Some(i),
                label: None,
                text: if r.knee == Some(i) {
                    format!("{} (knee)", row.plan)
                } else {
                    row.plan.to_string()
                },
                leader: None,
                hit: hit_radius(&pts, i, &pr),
                aria: format!(
                    "Plan {}: {} h elapsed, {} g propellant{}",
                    row.plan,
                    fmt_h(row.elapsed_s),
                    fmt_g(row.propellant_kg),
                    if r.knee == Some(i) { ", the knee" } else { "" }
                ),
            }
        })
        .collect();
    let order: Vec<usize> = r
        .knee
        .into_iter()
        .chain((0..points.len()).filter(|&i| Some(i) != r.knee))
        .collect();
    let mut unlabelled = Vec::new();
    for i in order {
        let point = &mut points[i];
        let w = point.text.chars().count() as f64 * 0.62 * 15.0 + 6.0;
        let h = 19.0;
        let at = (point.x, point.y);
        match placer.place(label_candidates(at, 8.0, w, h)) {
            Some(rect) => {
                point.label = Some((
                    round((rect.0 + rect.2) / 2.0),
                    round((rect.1 + rect.3) / 2.0),
                ));
                let near = nearest_in(&rect, at);
                let (dx, dy) = (near.0 - at.0, near.1 - at.1);
                let dist = dx.hypot(dy);
                if dist > 15.0 {
                    let from = (at.0 + dx * 9.0 / dist, at.1 + dy * 9.0 / dist);
                    point.leader =
                        Some((round(from.0), round(from.1), round(near.0), round(near.1)));
                }
            }
            None => unlabelled.push(point.plan),
        }
    }
    unlabelled.sort_unstable();
    InlineChart {
        width,
        height,
        plot,
        x_ticks,
        y_ticks,
        stairs: points_text(&stairs),
        shade: points_text(&shade),
        dominated: r
            .dominated
            .iter()
            .map(|&(o, p)| pr((hours(o), grams(p))))
            .collect(),
        reference: pr(reference),
        points,
        unlabelled: unlabelled
            .iter()
            .map(ToString::to_string)
            .collect::<Vec<_>>()
            .join(", "),
    }
}

/// `json` made safe inside an HTML script element: no `<`, `>` or `&` left as such (JSON
/// reads the escapes back as the same characters).
fn script_safe(json: &str) -> String {
    json.replace('<', "\\u003c")
        .replace('>', "\\u003e")
        .replace('&', "\\u0026")
}

/// What row `i` is: the fastest, the knee, the one with the least propellant.
fn tags(r: &FrontReport, i: usize) -> Vec<&'static str> {
    let mut tags = Vec::new();
    if i == 0 {
        tags.push("fastest");
    }
    if r.knee == Some(i) {
        tags.push("knee: the most balanced trade");
    }
    if i > 0 && i + 1 == r.front.len() {
        tags.push("least propellant");
    }
    tags
}

/// A plan's headline: "Plan K (fastest)" and the like.
fn plan_heading(r: &FrontReport, i: usize) -> String {
    let tags = tags(r, i);
    let k = r.front[i].plan;
    if tags.is_empty() {
        format!("Plan {k}")
    } else {
        format!("Plan {k} ({})", tags.join(", "))
    }
}

/// A plan's figures in a sentence.
fn plan_summary(row: &FrontRow) -> String {
    let plural = |n: usize| if n == 1 { "" } else { "s" };
    format!(
        "{} h elapsed ({} h of busy overhead), {} h of waiting, {} g of propellant, {} momentum \
         dump{}, {} target{} scheduled.",
        fmt_h(row.elapsed_s),
        fmt_h(row.busy_overhead_s),
        fmt_h(row.wait_s),
        fmt_g(row.propellant_kg),
        row.dumps,
        plural(row.dumps),
        row.scheduled,
        plural(row.scheduled)
    )
}

/// The page's rows.
fn page_rows(r: &FrontReport) -> Vec<PageRow> {
    r.front
        .iter()
        .enumerate()
        .map(|(i, row)| {
            let fastest = &r.front[0];
            let mut classes = Vec::new();
            if i == 0 {
                classes.push("fastest");
            }
            if r.knee == Some(i) {
                classes.push("knee");
            }
            let trade = if i > 0 {
                format!(
                    "plan {} ends {} h later than the fastest (plan {}) and saves {} g of \
                     propellant",
                    row.plan,
                    fixed(hours(row.elapsed_s - fastest.elapsed_s), 2),
                    fastest.plan,
                    fixed(grams(fastest.propellant_kg - row.propellant_kg), 1),
                )
            } else {
                String::new()
            };
            PageRow {
                plan: row.plan,
                elapsed: fmt_h(row.elapsed_s),
                overhead: fmt_h(row.busy_overhead_s),
                wait: fmt_h(row.wait_s),
                propellant: fmt_g(row.propellant_kg),
                dumps: row.dumps,
                scheduled: row.scheduled,
                classes: classes.join(" "),
                featured: i == 0 || r.knee == Some(i),
                tags: tags(r, i),
                trade,
                heading: plan_heading(r, i),
            }
        })
        .collect()
}

/// The page as HTML text.
fn render_html(r: &FrontReport, ranges: Ranges) -> Result<String, minijinja::Error> {
    let n = r.front.len();
    let alt = if n == 0 {
        "Chart of propellant against elapsed time: no plan on the front.".to_string()
    } else {
        format!(
            "Chart of propellant in grams against elapsed time in hours: the {n} plans of the \
             front as numbered blue dots joined by a staircase{}, {} other plans evaluated as \
             grey dots, and the reference point as a cross.",
            r.knee
                .map(|k| format!(", the knee (plan {}) ringed", r.front[k].plan))
                .unwrap_or_default(),
            r.dominated.len(),
        )
    };
    let page = Page {
        title: r.title,
        caution: r.caution,
        notes: r.notes,
        rows: page_rows(r),
        knee: r.knee.map(|k| r.front[k].plan),
        hypervolume: fixed(hv_hour_grams(r.hypervolume), 1),
        reference_h: fmt_h(r.reference.0),
        reference_g: fmt_g(r.reference.1),
        alt,
        chart: inline_chart(r, ranges),
        data: script_safe(
            &serde_json::to_string(&ScriptData {
                plans: r
                    .front
                    .iter()
                    .enumerate()
                    .map(|(i, row)| PlanData {
                        plan: row.plan,
                        heading: plan_heading(r, i),
                        summary: plan_summary(row),
                        page: r.plans.iter().find(|p| p.plan == row.plan),
                    })
                    .collect(),
                initial: r
                    .knee
                    .or(if r.front.is_empty() { None } else { Some(0) })
                    .map(|i| r.front[i].plan),
            })
            .map_err(|e| {
                minijinja::Error::new(minijinja::ErrorKind::BadSerialization, e.to_string())
            })?,
        ),
    };
    let mut env = minijinja::Environment::new();
    env.set_auto_escape_callback(|_| minijinja::AutoEscape::Html);
    // Block tags on lines of their own leave no blank lines behind.
    env.set_syntax(
        minijinja::syntax::SyntaxConfig::builder()
            .trim_blocks(true)
            .lstrip_blocks(true)
            .keep_trailing_newline(true)
            .build()?,
    );
    env.template_from_named_str("report.html", PAGE)?
        .render(minijinja::value::Serde(&page))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::draw::text_fits;
    use crate::place::overlaps;
    use wend_charts::legend::{legend_lines, LegendLayout};
    use wend_charts::style::CAUTION_PX;
    use wend_charts::text::{wrap, PAD};

    /// The caution as the page escapes it.
    const CAUTION_HTML: &str = "Plans are planning proposals to be confirmed by the operations \
                                team&#x27;s validated tools. Spacecraft operations can damage \
                                hardware.";

    const CAUTION: &str = "Plans are planning proposals to be confirmed by the operations \
                           team's validated tools. Spacecraft operations can damage hardware.";

    /// A row whose busy overhead is a tenth of its elapsed time.
    fn row(plan: usize, elapsed_s: f64, wait_s: f64, propellant_kg: f64) -> FrontRow {
        FrontRow {
            plan,
            elapsed_s,
            busy_overhead_s: elapsed_s / 10.0,
            wait_s,
            propellant_kg,
            dumps: 3,
            scheduled: 60,
        }
    }

    /// Three plans, numbered out of order on purpose (numbers are names, not positions).
    /// - plan 5: 36000 s = 10.00 h elapsed, 1800 s = 0.50 h waiting, 0.0500 kg = 50.0 g;
    /// - plan 2: 41400 s = 11.50 h, no waiting, 0.0377 kg = 37.7 g;
    /// - plan 7: 50400 s = 14.00 h, 900 s = 0.25 h waiting, 0.0210 kg = 21.0 g.
    fn three() -> Vec<FrontRow> {
        vec![
            row(5, 36_000.0, 1_800.0, 0.0500),
            row(2, 41_400.0, 0.0, 0.0377),
            row(7, 50_400.0, 900.0, 0.0210),
        ]
    }

    const DOMINATED: [(f64, f64); 4] = [
        (39_000.0, 0.0520),
        (45_000.0, 0.0450),
        (52_000.0, 0.0300),
        (47_000.0, 0.0390),
    ];

    fn report<'a>(title: &'a str, front: &'a [FrontRow], notes: &'a [String]) -> FrontReport<'a> {
        FrontReport {
            title,
            caution: CAUTION,
            front,
            knee: if front.len() > 1 { Some(1) } else { None },
            dominated: &DOMINATED,
            // 7.2e3 s·kg = 7.2e3 / 3600 h · 1000 g = 2000.0 h·g.
            hypervolume: 7_200.0,
            // 54000 s = 15.00 h, 0.060 kg = 60.0 g.
            reference: (54_000.0, 0.060),
            notes,
            plans: &[],
        }
    }

    /// Page material for plans 5 and 7 (none for plan 2).
    fn pages() -> Vec<PlanPage> {
        [5, 7]
            .iter()
            .map(|&k| PlanPage {
                plan: k,
                columns: vec!["position".into(), "id".into()],
                rows: vec![
                    vec!["1".into(), format!("P{k}-first <&>")],
                    vec!["2".into(), format!("P{k}-second")],
                ],
                sky_map: format!("plan-{k}-sky-map.svg"),
                timeline: format!("plan-{k}-timeline.svg"),
                momentum: format!("plan-{k}-momentum.svg"),
                csv: format!("plan-{k}.csv"),
            })
            .collect()
    }

    /// Text as the SVG writer escapes it.
    fn svg_escaped(s: &str) -> String {
        s.replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('>', "&gt;")
            .replace('"', "&quot;")
            .replace('\'', "&apos;")
    }

    /// The legend's lines as wrapped into the picture.
    fn legend_text(r: &FrontReport) -> Vec<Vec<String>> {
        legend_lines(
            &front_legend(r),
            FRONT_LEGEND_W,
            LegendLayout::wrapped(wend_charts::style::LEGEND_PX),
        )
    }

    /// The contents of the SVG's bold texts (the point labels), in order.
    fn bold_texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter(|t| {
                t.split('>')
                    .next()
                    .unwrap_or("")
                    .contains("font-weight=\"bold\"")
            })
            .map(|t| {
                t.split_once('>')
                    .map(|(_, rest)| rest.split("</text>").next().unwrap_or(""))
                    .unwrap_or("")
                    .trim()
                    .to_string()
            })
            .collect()
    }

    #[test]
    fn a_three_plan_front_gives_picture_and_page() {
        let dir = tempfile::tempdir().unwrap();
        let front = three();
        let notes = vec![
            "search: 30 s, seed 0 & <default> settings".to_string(),
            "single-objective plan: 10.20 h, 48.1 g".to_string(),
        ];
        let title = "Lantern <&> Observatory: 63 targets";
        let r = report(title, &front, &notes);

        let svg_path = dir.path().join("front.svg");
        write_front_svg(&svg_path, &r).unwrap();
        let svg = std::fs::read_to_string(&svg_path).unwrap();
        assert!(svg.starts_with("<svg"));
        assert!(svg.contains("Lantern &lt;&amp;&gt; Observatory: 63 targets"));
        assert!(!svg.contains("<&>"));
        // One label per plan, the knee's saying so.
        let mut labels = bold_texts(&svg);
        labels.sort();
        assert_eq!(labels, vec!["2 (knee)", "5", "7"]);
        // The legend, as wrapped into the picture.
        let legend = legend_text(&r);
        for line in legend.iter().flatten() {
            assert!(svg.contains(&svg_escaped(line)), "{line}");
        }
        let legend = legend.concat().join(" ");
        assert!(legend.contains("knee, plan 2: the most balanced trade"));
        assert!(legend.contains("reference point (15.00 h elapsed, 60.0 g)"));
        assert!(legend.contains("hypervolume 2000.0 h·g"));
        assert!(legend.contains("other plan evaluated, beaten in both (4)"));
        assert!(svg.contains("elapsed time, waiting and dumps included (h)"));
        assert!(svg.contains("momentum-dump propellant (g)"));
        for line in wrap(CAUTION, CAUTION_PX, FRONT_W - 2 * PAD as u32) {
            assert!(svg.contains(&svg_escaped(&line)), "{line}");
        }
        text_fits(&svg);

        let html_path = dir.path().join("report.html");
        write_report_html(&html_path, &r).unwrap();
        let html = std::fs::read_to_string(&html_path).unwrap();
        assert!(html.starts_with("<!DOCTYPE html>\n<html lang=\"en\">"));
        assert!(html.contains("<meta charset=\"utf-8\">"));
        assert!(html.trim_end().ends_with("</html>"));
        // Escaped title, notes and caution; the caution at the top and the bottom.
        assert!(html.contains("<h1>Lantern &lt;&amp;&gt; Observatory: 63 targets</h1>"));
        assert!(!html.contains("<&>"));
        assert!(html.contains("<li>search: 30 s, seed 0 &amp; &lt;default&gt; settings</li>"));
        assert_eq!(html.matches(CAUTION_HTML).count(), 2);
        assert!(html.find(CAUTION_HTML) < html.find("<h1>"));
        assert!(html.rfind(CAUTION_HTML) > html.find("id=\"plans\""));

        // The rows, by hand (numbers from `three`):
        // plan 5: fastest, 10.00 h, 0.50 h waiting, 50.0 g;
        // plan 2: 41400 − 36000 = 5400 s = 1.50 h more, 50.0 − 37.7 = 12.3 g saved; the knee;
        // plan 7: 50400 − 36000 = 14400 s = 4.00 h more, 50.0 − 21.0 = 29.0 g saved.
        let row5 = "<tr class=\"fastest\"><th scope=\"row\"><a href=\"plan-5.csv\">5</a></th>\
                    <td class=\"num\">10.00</td><td class=\"num\">1.00</td><td class=\"num\">0.50</td>\
                    <td class=\"num\">50.0</td><td class=\"num\">3</td><td class=\"num\">60</td>\
                    <td><span class=\"tag\">fastest</span></td>\
                    <td><button type=\"button\" class=\"choose\" data-plan=\"5\">Show</button></td></tr>";
        let row2 = "<tr class=\"knee\"><th scope=\"row\"><a href=\"plan-2.csv\">2</a></th>\
                    <td class=\"num\">11.50</td><td class=\"num\">1.15</td><td class=\"num\">0.00</td>\
                    <td class=\"num\">37.7</td><td class=\"num\">3</td><td class=\"num\">60</td>\
                    <td><span class=\"tag\">knee: the most balanced trade</span>; plan 2 ends \
                    1.50 h later than the fastest (plan 5) and saves 12.3 g of propellant</td>\
                    <td><button type=\"button\" class=\"choose\" data-plan=\"2\">Show</button></td></tr>";
        let row7 = "<tr><th scope=\"row\"><a href=\"plan-7.csv\">7</a></th>\
                    <td class=\"num\">14.00</td><td class=\"num\">1.40</td><td class=\"num\">0.25</td>\
                    <td class=\"num\">21.0</td><td class=\"num\">3</td><td class=\"num\">60</td>\
                    <td><span class=\"tag\">least propellant</span>; plan 7 ends 4.00 h later \
                    than the fastest (plan 5) and saves 29.0 g of propellant</td>\
                    <td><button type=\"button\" class=\"choose\" data-plan=\"7\">Show</button></td></tr>";
        for r in [row5, row2, row7] {
            assert!(html.contains(r), "missing row {r}");
        }
        // Fastest first, then by elapsed time.
        assert!(html.find(row5) < html.find(row2) && html.find(row2) < html.find(row7));
        // Hypervolume in h·g with its reference.
        assert!(html.contains("2000.0 h·g against the reference point (15.00 h elapsed, 60.0 g"));

        // The front in the page: one point per plan, reachable by keyboard.
        for k in [5, 2, 7] {
            assert!(html.contains(&format!("data-plan=\"{k}\" role=\"button\" tabindex=\"0\"")));
        }
        assert!(html.contains("<a href=\"front.svg\">front.svg</a>"));
        // No pictures are linked until a plan has page material.
        assert!(!html.contains("plan-5-sky-map.svg"));
        // Self-contained: no address elsewhere, no script from a file.
        assert!(!html.contains("http://") && !html.contains("https://"));
        assert!(!html.contains("<script src"));
        assert!(!html.contains("<link"));
    }

    /// The JSON embedded in a page.
    fn page_data(html: &str) -> serde_json::Value {
        let start = "<script type=\"application/json\" id=\"plan-data\">";
        let text = html
            .split(start)
            .nth(1)
            .unwrap()
            .split("</script>")
            .next()
            .unwrap();
        serde_json::from_str(text).unwrap()
    }

    #[test]
    fn the_page_embeds_each_plans_table_and_pictures() {
        let dir = tempfile::tempdir().unwrap();
        let front = three();
        let pages = pages();
        let r = FrontReport {
            plans: &pages,
            ..report("t", &front, &[])
        };
        let path = dir.path().join("report.html");
        write_report_html(&path, &r).unwrap();
        let html = std::fs::read_to_string(&path).unwrap();
        // Markup in the data cannot end the script element.
        assert!(!html.contains("P5-first <&>"));
        assert!(html.contains("P5-first \\u003c\\u0026\\u003e"));
        let data = page_data(&html);
        // The knee (plan 2) is chosen first.
        assert_eq!(data["initial"], 2);
        let plans = data["plans"].as_array().unwrap();
        assert_eq!(plans.len(), 3);
        assert_eq!(plans[0]["plan"], 5);
        assert_eq!(plans[0]["heading"], "Plan 5 (fastest)");
        assert_eq!(
            plans[0]["summary"],
            "10.00 h elapsed (1.00 h of busy overhead), 0.50 h of waiting, 50.0 g of propellant, 3 momentum \
             dumps, 60 targets scheduled."
        );
        assert_eq!(plans[0]["page"]["rows"][0][1], "P5-first <&>");
        assert_eq!(plans[0]["page"]["timeline"], "plan-5-timeline.svg");
        assert!(plans[1]["page"].is_null());
        assert_eq!(plans[2]["page"]["columns"][1], "id");

        // Pages that do not match the front are refused.
        let bad = |page: PlanPage, needle: &str| {
            let one = [page];
            let r = FrontReport {
                plans: &one,
                ..report("t", &front, &[])
            };
            let path = dir.path().join("bad.html");
            refused(write_report_html(&path, &r), &path, needle);
        };
        let good = pages[0].clone();
        bad(
            PlanPage {
                plan: 4,
                ..good.clone()
            },
            "not on the front",
        );
        bad(
            PlanPage {
                rows: vec![vec!["1".into()]],
                ..good.clone()
            },
            "1 cells for 2 columns",
        );
        for name in ["../x.svg", "https://example.invalid/x.svg", "", "a\"b.svg"] {
            bad(
                PlanPage {
                    sky_map: name.into(),
                    ..good.clone()
                },
                "plain file name",
            );
        }
        let twice = [good.clone(), good];
        let r = FrontReport {
            plans: &twice,
            ..report("t", &front, &[])
        };
        let path = dir.path().join("bad.html");
        refused(write_report_html(&path, &r), &path, "earlier page");
    }

    #[test]
    fn escaping_covers_markup_and_quotes() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("report.html");
        let front = three();
        let notes = vec!["x<y>&\"z\"".to_string()];
        let r = report("a<b>&\"c\" 'd'", &front, &notes);
        write_report_html(&path, &r).unwrap();
        let html = std::fs::read_to_string(&path).unwrap();
        let title = "a&lt;b&gt;&amp;&quot;c&quot; &#x27;d&#x27;";
        assert!(html.contains(&format!("<title>Plans to choose from: {title}</title>")));
        assert!(html.contains(&format!("<h1>{title}</h1>")));
        assert!(html.contains("<li>x&lt;y&gt;&amp;&quot;z&quot;</li>"));
        assert!(!html.contains("a<b>") && !html.contains("x<y>"));
        assert_eq!(fixed(-0.0001, 2), "0.00");
        assert_eq!(fixed(-1.5, 1), "-1.5");
        assert_eq!(fmt_h(5_400.0), "1.50");
        assert_eq!(fmt_g(0.0123), "12.3");
        // 3600 s·kg = 1 h · 1000 g.
        assert!((hv_hour_grams(3_600.0) - 1000.0).abs() < 1e-9);
    }

    #[test]
    fn a_crowded_front_keeps_its_labels_apart() {
        // Twelve plans close together: every label drawn, no two label boxes overlapping.
        let front: Vec<FrontRow> = (0..12)
            .map(|i| {
                let t = f64::from(i);
                row(
                    i as usize + 1,
                    36_000.0 + 600.0 * t,
                    0.0,
                    0.05 - 0.0006 * t - 0.00002 * t * t,
                )
            })
            .collect();
        let r = FrontReport {
            knee: Some(5),
            ..report("Crowded", &front, &[])
        };
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("front.svg");
        write_front_svg(&path, &r).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        let labels = bold_texts(&svg);
        assert_eq!(labels.len(), 12);
        assert!(labels.contains(&"6 (knee)".to_string()));
        // The label boxes are the semi-opaque white rectangles.
        let boxes: Vec<Rect> = svg
            .split("<rect")
            .skip(1)
            .filter(|t| t.contains("fill=\"#FFFFFF\"") && t.contains("opacity=\"0.8\""))
            .map(|t| {
                let attr = |name: &str| -> f64 {
                    t.split(&format!(" {name}=\""))
                        .nth(1)
                        .and_then(|s| s.split('"').next())
                        .and_then(|s| s.parse().ok())
                        .unwrap()
                };
                let (x, y) = (attr("x"), attr("y"));
                (x, y, x + attr("width"), y + attr("height"))
            })
            .collect();
        // Twelve plan labels and the reference's.
        assert_eq!(boxes.len(), 13);
        for (i, a) in boxes.iter().enumerate() {
            for b in &boxes[i + 1..] {
                assert!(!overlaps(a, b), "{a:?} and {b:?} overlap");
            }
        }
        text_fits(&svg);
    }

    #[test]
    fn a_very_crowded_front_leaves_labels_out_rather_than_overlap() {
        // Forty plans within a few pixels of each other.
        let front: Vec<FrontRow> = (0..40)
            .map(|i| {
                let t = f64::from(i);
                row(i as usize + 1, 36_000.0 + 5.0 * t, 0.0, 0.05 - 0.00001 * t)
            })
            .collect();
        let r = FrontReport {
            knee: Some(20),
            ..report("Very crowded", &front, &[])
        };
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("front.svg");
        write_front_svg(&path, &r).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        let labels = bold_texts(&svg);
        // The knee's label goes first, so it is there; not all forty fit.
        assert!(labels.contains(&"21 (knee)".to_string()), "{labels:?}");
        assert!(labels.len() < 40, "{}", labels.len());
        assert!(
            svg.contains("no room to label"),
            "no note of the plans left out"
        );
        let boxes: Vec<Rect> = svg
            .split("<rect")
            .skip(1)
            .filter(|t| t.contains("fill=\"#FFFFFF\"") && t.contains("opacity=\"0.8\""))
            .map(|t| {
                let attr = |name: &str| -> f64 {
                    t.split(&format!(" {name}=\""))
                        .nth(1)
                        .and_then(|s| s.split('"').next())
                        .and_then(|s| s.parse().ok())
                        .unwrap()
                };
                let (x, y) = (attr("x"), attr("y"));
                (x, y, x + attr("width"), y + attr("height"))
            })
            .collect();
        for (i, a) in boxes.iter().enumerate() {
            for b in &boxes[i + 1..] {
                assert!(!overlaps(a, b), "{a:?} and {b:?} overlap");
            }
        }
        text_fits(&svg);
    }

    #[test]
    fn on_the_page_no_point_lies_under_another_points_click_area() {
        // Forty plans a few pixels apart: each point's centre is inside its
        // own click circle and outside every other one, so a click on a dot chooses that plan.
        let front: Vec<FrontRow> = (0..40)
            .map(|i| {
                let t = f64::from(i);
                row(i as usize + 1, 36_000.0 + 60.0 * t, 0.0, 0.05 - 0.00001 * t)
            })
            .collect();
        let r = report("Very crowded", &front, &[]);
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("report.html");
        write_report_html(&path, &r).unwrap();
        let html = std::fs::read_to_string(&path).unwrap();
        let circles: Vec<(f64, f64, f64)> = html
            .split("<circle class=\"hit\"")
            .skip(1)
            .map(|t| {
                let attr = |name: &str| -> f64 {
                    t.split(&format!(" {name}=\""))
                        .nth(1)
                        .and_then(|s| s.split('"').next())
                        .and_then(|s| s.parse().ok())
                        .unwrap()
                };
                (attr("cx"), attr("cy"), attr("r"))
            })
            .collect();
        assert_eq!(circles.len(), 40);
        for (i, a) in circles.iter().enumerate() {
            assert!(a.2 > 0.0, "point {i} has no click area");
            for (j, b) in circles.iter().enumerate() {
                if i != j {
                    let d = (a.0 - b.0).hypot(a.1 - b.1);
                    assert!(d > b.2, "point {i} lies under point {j}'s click area");
                }
            }
        }
    }

    /// `result` is an input error naming `needle`, and nothing was written at `path`.
    fn refused(result: Result<(), DrawError>, path: &Path, needle: &str) {
        match result {
            Err(DrawError::Input { message, .. }) => {
                assert!(message.contains(needle), "{message:?} lacks {needle:?}")
            }
            other => panic!("expected an input error, got {other:?}"),
        }
        assert!(!path.exists(), "{} was written", path.display());
    }

    #[test]
    fn bad_input_is_refused_without_writing() {
        let dir = tempfile::tempdir().unwrap();
        let svg = dir.path().join("front.svg");
        let html = dir.path().join("report.html");
        let good = three();
        let check_both = |r: &FrontReport, needle: &str| {
            refused(write_front_svg(&svg, r), &svg, needle);
            refused(write_report_html(&html, r), &html, needle);
        };

        let mut bad = good.clone();
        bad[1].elapsed_s = f64::NAN;
        check_both(
            &report("t", &bad, &[]),
            "row 1 (plan 2) has elapsed time NaN",
        );
        let mut bad = good.clone();
        bad[2].propellant_kg = f64::INFINITY;
        check_both(&report("t", &bad, &[]), "row 2 (plan 7) has propellant inf");
        let mut bad = good.clone();
        bad[0].wait_s = -1.0;
        check_both(&report("t", &bad, &[]), "waiting -1");
        let mut bad = good.clone();
        bad[2].plan = 5;
        check_both(&report("t", &bad, &[]), "unique");
        let mut bad = good.clone();
        bad[0].plan = 0;
        check_both(&report("t", &bad, &[]), "plan number 0");
        let mut bad = good.clone();
        bad.swap(0, 2);
        check_both(&report("t", &bad, &[]), "not sorted by elapsed time");
        let mut bad = good.clone();
        bad[2].propellant_kg = 0.040;
        check_both(&report("t", &bad, &[]), "dominated");

        let r = report("t", &good, &[]);
        check_both(&FrontReport { knee: Some(3), ..r }, "knee");
        let r = report("t", &good, &[]);
        check_both(
            &FrontReport {
                dominated: &[(1.0, 0.01), (f64::NAN, 0.01)],
                ..r
            },
            "dominated plan 1",
        );
        let r = report("t", &good, &[]);
        check_both(
            &FrontReport {
                hypervolume: f64::NAN,
                ..r
            },
            "hypervolume",
        );
        let r = report("t", &good, &[]);
        check_both(
            &FrontReport {
                reference: (f64::INFINITY, 0.1),
                ..r
            },
            "reference",
        );
        let r = report("t", &good, &[]);
        check_both(&FrontReport { caution: " ", ..r }, "caution");
        let r = report("t", &good, &[]);
        check_both(
            &FrontReport {
                reference: (0.1, f64::MAX),
                ..r
            },
            "too large",
        );
        // No knee on an empty front.
        let r = report("t", &[], &[]);
        check_both(&FrontReport { knee: Some(0), ..r }, "knee");

        // The good report is written; a missing directory is a write error.
        write_front_svg(&svg, &report("t", &good, &[])).unwrap();
        let nowhere = dir.path().join("missing").join("report.html");
        assert!(matches!(
            write_report_html(&nowhere, &report("t", &good, &[])),
            Err(DrawError::Write { .. })
        ));
    }

    #[test]
    fn an_empty_front_still_gives_both_files() {
        let dir = tempfile::tempdir().unwrap();
        let r = FrontReport {
            dominated: &[],
            hypervolume: 0.0,
            ..report("Nothing found", &[], &[])
        };
        let svg_path = dir.path().join("front.svg");
        let html_path = dir.path().join("report.html");
        write_front_svg(&svg_path, &r).unwrap();
        write_report_html(&html_path, &r).unwrap();
        let svg = std::fs::read_to_string(&svg_path).unwrap();
        assert!(svg.contains("no plan on the front"));
        let legend = legend_text(&r);
        for line in legend.iter().flatten() {
            assert!(svg.contains(&svg_escaped(line)), "{line}");
        }
        assert!(legend
            .concat()
            .join(" ")
            .contains("plan on the front: none"));
        assert!(!svg.contains("hypervolume"));
        assert!(bold_texts(&svg).is_empty());
        text_fits(&svg);
        let html = std::fs::read_to_string(&html_path).unwrap();
        assert!(html.contains("No plan on the front"));
        assert!(html.contains("<td colspan=\"8\">no plan on the front</td>"));
        assert!(html.contains("<a href=\"front.svg\">"));
        assert_eq!(page_data(&html)["initial"], serde_json::Value::Null);
        assert!(!html.contains("plan-1"));
        assert_eq!(html.matches(CAUTION_HTML).count(), 2);
    }

    #[test]
    fn a_single_plan_is_the_fastest_and_the_knee() {
        let front = vec![row(1, 3_600.0, 0.0, 0.001)];
        let r = FrontReport {
            knee: Some(0),
            ..report("One", &front, &[])
        };
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("report.html");
        write_report_html(&path, &r).unwrap();
        let html = std::fs::read_to_string(&path).unwrap();
        assert!(html.contains("<tr class=\"fastest knee\">"));
        assert!(html.contains(
            "<span class=\"tag\">fastest</span>; <span class=\"tag\">knee: the most balanced \
             trade</span></td>"
        ));
        assert!(!html.contains("least propellant"));
        assert!(!html.contains("<details"));
        let svg_path = dir.path().join("front.svg");
        write_front_svg(&svg_path, &r).unwrap();
        let svg = std::fs::read_to_string(&svg_path).unwrap();
        assert_eq!(bold_texts(&svg), vec!["1 (knee)"]);
    }
}
