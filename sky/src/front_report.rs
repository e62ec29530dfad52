//! The front's picture and the decision report.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. Spacecraft operations can damage hardware; nothing made here is a command
//! to a spacecraft.
//!
//! `wend sky plan --front` searches the plans that trade overhead time against
//! momentum-dump propellant. Two files present its result to the people who choose a plan:
//!
//! - [`write_front_svg`]: `front.svg`, propellant (g) against overhead (h): the other plans
//!   evaluated as faint grey dots, the front as numbered dots joined by its staircase, the
//!   knee ringed, the reference point crossed and the area the hypervolume measures shaded.
//! - [`write_report_html`]: `report.html`, a self-contained page (inline style, no script, no
//!   external address) with the caution, a plain explanation, the trade-off table, the front
//!   and each plan's sky map and momentum chart. It refers to files beside it: `front.svg`,
//!   `plan-K.csv`, `plan-K-sky-map.svg` and `plan-K-momentum.svg` for each plan number K.
//!
//! Units: the input is in seconds and kilograms; the pictures and the page show hours and
//! grams (hypervolume in s·kg is shown in h·g: divided by 3600, times 1000).
//!
//! Input is checked before anything is written (see [`FrontReport`]): a bad report gives a
//! [`DrawError::Input`] and leaves no file behind. An empty front still gives both files,
//! saying that no plan is on the front.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::collections::HashSet;
use std::fmt::Write as _;
use std::path::Path;

use super::draw::{
    block_height, draw_legend, em, legend_height, line_step, number_label, wrap, write_checked,
    Area, DrawError, DrawResult, LegendEntry, LegendKey, AXIS_TITLE_PX, BLUE, CAUTION_PX, FONT,
    GRID, INK, KEY_W, LEGEND_PX, OUTLINE, PAD, SOFT_TEXT, TICK_PX, TITLE_PX, VERMILLION,
};

/// One plan of the front.
#[derive(Clone, Debug, PartialEq)]
pub struct FrontRow {
    /// 1-based plan number K (files plan-K.csv, plan-K-sky-map.svg, plan-K-momentum.svg).
    pub plan: usize,
    /// Time objective: overhead without waiting, seconds.
    pub overhead_s: f64,
    /// Waiting, seconds (reported, not an objective).
    pub wait_s: f64,
    /// Propellant objective, kilograms.
    pub propellant_kg: f64,
    /// Momentum dumps of the plan.
    pub dumps: usize,
    /// Targets the plan schedules.
    pub scheduled: usize,
}

/// What the picture and the page show.
///
/// Checked before anything is written: every number finite and at least 0 (the reference
/// only finite); plan numbers at least 1 and unique; the front sorted by overhead ascending
/// with propellant never rising along it (a row with more overhead and more propellant than
/// the row before it is dominated, not on the front); `knee` inside the front; the caution
/// not blank.
pub struct FrontReport<'a> {
    /// Title, e.g. "Lantern Deep-Sky Observatory: 63 targets from 2027-03-01T00:00:00Z".
    pub title: &'a str,
    /// The caution sentence, at the top and the bottom of the page and under the picture.
    pub caution: &'a str,
    /// The front, sorted by overhead ascending (so propellant descending). Non-empty for a
    /// real report; an empty front still produces a page that says so.
    pub front: &'a [FrontRow],
    /// Index into `front` of the knee plan, if any.
    pub knee: Option<usize>,
    /// Objective values (overhead_s, propellant_kg) of evaluated plans that are not on the
    /// front: drawn faint.
    pub dominated: &'a [(f64, f64)],
    /// Hypervolume of the front against `reference`, s·kg (shown in h·g too).
    pub hypervolume: f64,
    /// The reference point (overhead_s, propellant_kg).
    pub reference: (f64, f64),
    /// Free lines shown under the title (settings, timing, the single-objective comparison),
    /// plain text: they are escaped here.
    pub notes: &'a [String],
}

/// Draws `front.svg` at `path` (900 px wide, about 560 tall; taller when the title or the
/// caution needs more lines): propellant (g) against overhead (h), the other plans evaluated
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

/// Writes `report.html` at `path`: a self-contained page (inline style, no script, no
/// external address) for the people who choose a plan. It shows the caution at the top and
/// the bottom, a plain explanation of the front and the hypervolume, the trade-off table
/// (one row per plan, with what it costs and saves against the fastest), `front.svg`, and for
/// each plan its `plan-K-sky-map.svg` and `plan-K-momentum.svg` (open for the fastest plan and
/// the knee, folded for the others), and the notes under the title. Every text is escaped.
///
/// # Errors
/// As [`write_front_svg`].
pub fn write_report_html(path: &Path, report: &FrontReport) -> Result<(), DrawError> {
    write_checked(
        path,
        || check(report),
        |_| Ok::<_, std::convert::Infallible>(render_html(report)),
    )
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

/// The axes' ends: overhead in hours, propellant in grams.
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
            ("overhead", row.overhead_s, "s"),
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
            if row.overhead_s < prev.overhead_s {
                return Err(format!(
                    "the front is not sorted by overhead: row {i} (plan {}, {} s) comes after \
                     row {} (plan {}, {} s)",
                    row.plan,
                    row.overhead_s,
                    i - 1,
                    prev.plan,
                    prev.overhead_s
                ));
            }
            if row.propellant_kg > prev.propellant_kg {
                return Err(format!(
                    "row {i} (plan {}) has more overhead and more propellant ({} kg) than row \
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
                "dominated plan {j} has overhead {o} s and propellant {p} kg; both must be \
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

    let points = r
        .front
        .iter()
        .map(|row| (row.overhead_s, row.propellant_kg))
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
// The picture. Same look as the sky map and the momentum chart (draw.rs): fonts, colours,
// padding, wrapped title and caution, legend panel on the right.

// Font sizes as the drawing library takes them; it writes them at 1/1.24 of these.
const POINT_LABEL_PX: u32 = 18;

// Okabe and Ito's colour-blind-safe hues, and greys.
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

/// Draws `lines` centred across `area`, the first line's top `PAD` pixels below its top.
fn draw_centred(area: &Area, lines: &[String], px: u32, colour: RGBColor) -> DrawResult<()> {
    let (w, _) = area.dim_in_pixel();
    let style = TextStyle::from((FONT, px).into_font())
        .color(&colour)
        .pos(Pos::new(HPos::Center, VPos::Top));
    for (i, line) in lines.iter().enumerate() {
        let y = PAD + i as i32 * line_step(px);
        area.draw(&Text::new(line.clone(), (w as i32 / 2, y), style.clone()))?;
    }
    Ok(())
}

/// The caution block: a thin rule, then the wrapped sentence.
fn draw_caution(area: &Area, lines: &[String]) -> DrawResult<()> {
    let (w, _) = area.dim_in_pixel();
    area.draw(&PathElement::new(
        vec![(PAD, 4), (w as i32 - PAD, 4)],
        GRID.stroke_width(1),
    ))?;
    draw_centred(area, lines, CAUTION_PX, INK)
}

/// How a legend entry shows what it explains.
#[derive(Clone, Copy)]
enum Key {
    /// A plan on the front.
    Front,
    /// The front's staircase.
    Staircase,
    /// The knee: a front dot in a ring.
    Knee,
    /// Another plan evaluated.
    Dominated,
    /// The reference point's cross.
    Reference,
    /// The shaded region the hypervolume measures.
    Shade,
    /// No mark: text only, from the left edge, in a softer colour.
    Note,
}

impl LegendKey for Key {
    fn text_only(&self) -> Option<bool> {
        matches!(self, Key::Note).then_some(true)
    }

    fn draw(&self, area: &Area, c: (i32, i32)) -> DrawResult<()> {
        draw_key(area, *self, c)
    }
}

/// Draws one legend key centred at `c` (pixels).
fn draw_key(area: &Area, key: Key, c: (i32, i32)) -> DrawResult<()> {
    let (x, y) = c;
    let half = KEY_W / 2;
    match key {
        Key::Front => draw_front_dot(area, c),
        Key::Staircase => area.draw(&PathElement::new(
            vec![(x - half, y + 6), (x, y + 6), (x, y - 6), (x + half, y - 6)],
            BLUE.stroke_width(2),
        )),
        Key::Knee => {
            draw_front_dot(area, c)?;
            draw_knee_ring(area, c)
        }
        Key::Dominated => area.draw(&Circle::new(c, DOMINATED_R + 1, FAINT.filled())),
        Key::Reference => draw_cross(area, c),
        Key::Shade => {
            let r = [(x - half, y - 8), (x + half, y + 8)];
            area.draw(&Rectangle::new(r, BLUE.mix(SHADE_OPACITY).filled()))?;
            area.draw(&Rectangle::new(r, OUTLINE.stroke_width(1)))
        }
        Key::Note => Ok(()),
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
fn front_legend(r: &FrontReport) -> Vec<LegendEntry<Key>> {
    let e = |key: Key, label: String| LegendEntry { key, label };
    let n = r.front.len();
    let (ro, rp) = r.reference;
    let mut entries = vec![e(
        Key::Front,
        if n == 0 {
            "plan on the front: none".to_string()
        } else {
            format!("plan on the front ({n}), labelled with its number")
        },
    )];
    if n > 1 {
        entries.push(e(Key::Staircase, "the front's staircase".into()));
    }
    if let Some(k) = r.knee {
        entries.push(e(
            Key::Knee,
            format!("knee, plan {}: the most balanced trade", r.front[k].plan),
        ));
    }
    entries.push(e(
        Key::Dominated,
        format!(
            "other plan evaluated, beaten in both ({})",
            r.dominated.len()
        ),
    ));
    entries.push(e(
        Key::Reference,
        format!("reference point ({} h, {} g)", fmt_h(ro), fmt_g(rp)),
    ));
    if n > 0 {
        entries.push(e(
            Key::Shade,
            format!(
                "hypervolume {} h·g: the area the front beats, up to the reference",
                fixed(hv_hour_grams(r.hypervolume), 1)
            ),
        ));
        entries.push(e(
            Key::Note,
            "Lower is less propellant, left is less overhead: no plan of the front is \
             better than another in both."
                .into(),
        ));
    } else {
        entries.push(e(Key::Note, "No plan on the front.".into()));
    }
    entries
}

/// A rectangle in pixels: (x0, y0, x1, y1), y downwards.
type Rect = (f64, f64, f64, f64);

fn overlaps(a: &Rect, b: &Rect) -> bool {
    a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3
}

/// Where to put a label of `w`×`h` pixels for a point at pixel `p` drawn with a marker of
/// radius `radius`: the first of the places around it that stays inside `bounds` and clear
/// of `taken`. Places below and left come first (the front leaves that side empty), then the
/// other sides, then the same sides farther out (for a crowded front). When none is clear,
/// the place inside the bounds that overlaps `taken` least.
fn place_label(p: (f64, f64), radius: f64, w: f64, h: f64, bounds: &Rect, taken: &[Rect]) -> Rect {
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
    let rects: Vec<Rect> = corners
        .iter()
        .map(|&(x0, y0)| (x0, y0, x0 + w, y0 + h))
        .collect();
    let inside =
        |r: &Rect| r.0 >= bounds.0 && r.1 >= bounds.1 && r.2 <= bounds.2 && r.3 <= bounds.3;
    let clash = |r: &Rect| -> f64 {
        taken
            .iter()
            .filter(|t| overlaps(r, t))
            .map(|t| (r.2.min(t.2) - r.0.max(t.0)) * (r.3.min(t.3) - r.1.max(t.1)))
            .sum()
    };
    if let Some(r) = rects.iter().find(|r| inside(r) && clash(r) == 0.0) {
        return *r;
    }
    rects
        .iter()
        .filter(|r| inside(r))
        .min_by(|a, b| clash(a).total_cmp(&clash(b)))
        .copied()
        .unwrap_or(rects[0])
}

/// The point of `r` nearest to `p`.
fn nearest_in(r: &Rect, p: (f64, f64)) -> (f64, f64) {
    (p.0.clamp(r.0, r.2), p.1.clamp(r.1, r.3))
}

/// Width and height in pixels of a label of `text` at library size `px`, with a margin.
fn label_size(text: &str, px: u32) -> (f64, f64) {
    (
        text.chars().count() as f64 * 0.62 * em(px) + 6.0,
        em(px) * 1.25,
    )
}

/// The picture as SVG text.
fn render_front(r: &FrontReport, ranges: Ranges) -> DrawResult<String> {
    let Ranges {
        x: (x_lo, x_hi),
        y: (y_lo, y_hi),
    } = ranges;
    let title_lines = wrap(r.title, TITLE_PX, FRONT_W - 2 * PAD as u32);
    let caution_lines = wrap(r.caution, CAUTION_PX, FRONT_W - 2 * PAD as u32);
    let legend = front_legend(r);
    let header_h = block_height(title_lines.len(), TITLE_PX);
    let footer_h = block_height(caution_lines.len(), CAUTION_PX);
    let middle_h = FRONT_MIDDLE_H.max(legend_height(&legend, FRONT_LEGEND_W));
    let size = (FRONT_W, header_h + middle_h + footer_h);
    let pts: Vec<(f64, f64)> = r
        .front
        .iter()
        .map(|row| (hours(row.overhead_s), grams(row.propellant_kg)))
        .collect();
    let reference = (hours(r.reference.0), grams(r.reference.1));

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        root.fill(&WHITE)?;
        let (header, rest) = root.split_vertically(header_h);
        let (middle, footer) = rest.split_vertically(middle_h);
        let (chart_area, legend_area) = middle.split_horizontally(FRONT_W - FRONT_LEGEND_W);
        draw_centred(&header, &title_lines, TITLE_PX, INK)?;

        let mut chart = ChartBuilder::on(&chart_area)
            .margin_left(PAD as u32)
            .margin_right(PAD as u32)
            .margin_top(8)
            .margin_bottom(4)
            .x_label_area_size(56)
            .y_label_area_size(84)
            .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)?;
        chart
            .configure_mesh()
            .x_desc("overhead without waiting (h)")
            .y_desc("momentum-dump propellant (g)")
            .axis_desc_style((FONT, AXIS_TITLE_PX))
            .label_style((FONT, TICK_PX))
            .x_label_formatter(&|v| number_label(*v, x_hi - x_lo))
            .y_label_formatter(&|v| number_label(*v, y_hi - y_lo))
            .bold_line_style(RGBColor(235, 235, 235))
            .max_light_lines(0)
            .draw()?;
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

        // The staircase: across at a plan's propellant to the next plan's overhead, then down.
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
        let mut taken: Vec<Rect> = Vec::new();
        for pair in stairs.windows(2) {
            let (a, b) = (pixel(pair[0]), pixel(pair[1]));
            taken.push((
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
            taken.push((x - rad, y - rad, x + rad, y + rad));
        }
        let label_box = |rect: Rect, text: String, colour: RGBColor| -> DrawResult<()> {
            let (x0, y0, x1, y1) = rect;
            root.draw(&Rectangle::new(
                [(x0 as i32, y0 as i32), (x1 as i32, y1 as i32)],
                WHITE.mix(0.8).filled(),
            ))?;
            let style = TextStyle::from((FONT, POINT_LABEL_PX).into_font().style(FontStyle::Bold))
                .color(&colour)
                .pos(Pos::new(HPos::Center, VPos::Center));
            root.draw(&Text::new(
                text,
                (((x0 + x1) / 2.0) as i32, ((y0 + y1) / 2.0) as i32),
                style,
            ))
        };
        // The reference's label first: up and left of its cross.
        {
            let (x, y) = pixel(reference);
            let text = "reference";
            let (w, h) = label_size(text, LEGEND_PX);
            let c = f64::from(CROSS_R) + 2.0;
            let mut rect = (x - c - w, y - c - h, x - c, y - c);
            if rect.1 < bounds.1 {
                rect = (rect.0, y + c, rect.2, y + c + h);
            }
            taken.push((x - c, y - c, x + c, y + c));
            taken.push(rect);
            let (x0, y0, x1, y1) = rect;
            root.draw(&Rectangle::new(
                [(x0 as i32, y0 as i32), (x1 as i32, y1 as i32)],
                WHITE.mix(0.8).filled(),
            ))?;
            root.draw(&Text::new(
                text,
                (((x0 + x1) / 2.0) as i32, ((y0 + y1) / 2.0) as i32),
                TextStyle::from((FONT, LEGEND_PX).into_font())
                    .color(&SOFT_TEXT)
                    .pos(Pos::new(HPos::Center, VPos::Center)),
            ))?;
        }
        // The knee's first, then the others from the fastest.
        let order = r
            .knee
            .into_iter()
            .chain((0..pts.len()).filter(|&i| Some(i) != r.knee));
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
            let rect = place_label(at, f64::from(marker), w, h, &bounds, &taken);
            taken.push(rect);
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
            label_box(rect, text, colour)?;
        }

        // An empty front says so, on a pale box in the lower part of the chart (the
        // reference point sits at its centre).
        if r.front.is_empty() {
            let text = "no plan on the front";
            let (w, h) = label_size(text, AXIS_TITLE_PX);
            let cx = (bounds.0 + bounds.2) / 2.0;
            let cy = bounds.1 + 0.75 * (bounds.3 - bounds.1);
            root.draw(&Rectangle::new(
                [
                    ((cx - w / 2.0) as i32, (cy - h / 2.0) as i32),
                    ((cx + w / 2.0) as i32, (cy + h / 2.0) as i32),
                ],
                WHITE.mix(0.8).filled(),
            ))?;
            root.draw(&Text::new(
                text,
                (cx as i32, cy as i32),
                TextStyle::from((FONT, AXIS_TITLE_PX).into_font())
                    .color(&SOFT_TEXT)
                    .pos(Pos::new(HPos::Center, VPos::Center)),
            ))?;
        }

        draw_legend(&legend_area, PAD, &legend)?;
        draw_caution(&footer, &caution_lines)?;
        root.present()?;
    }
    Ok(svg)
}

// ---------------------------------------------------------------------------------------------
// The page.

/// `text` safe inside HTML text and quoted attribute values.
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

const STYLE: &str = "
:root { color-scheme: light; }
body { margin: 0; background: #fff; color: #111;
  font-family: system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', Arial, sans-serif;
  line-height: 1.45; }
main { max-width: 1040px; margin: 0 auto; padding: 1rem 1.25rem 2rem; }
h1 { font-size: 1.55rem; margin: 1rem 0 0.4rem; }
h2 { font-size: 1.25rem; margin: 1.8rem 0 0.5rem; border-bottom: 1px solid #ccc; }
h3 { font-size: 1.05rem; margin: 0.2rem 0 0.4rem; }
.caution { border: 2px solid #d55e00; background: #fff3e6; padding: 0.7rem 1rem;
  border-radius: 4px; font-weight: 600; }
.notes { color: #444; margin: 0.3rem 0 0; padding-left: 1.2rem; }
.empty { font-size: 1.15rem; font-weight: 600; }
table { border-collapse: collapse; width: 100%; font-variant-numeric: tabular-nums; }
caption { text-align: left; color: #444; padding-bottom: 0.4rem; }
th, td { border-bottom: 1px solid #ddd; padding: 0.4rem 0.5rem; text-align: left;
  vertical-align: top; }
thead th { border-bottom: 2px solid #555; }
.num { text-align: right; white-space: nowrap; }
tr.fastest { background: #e8f2f9; }
tr.knee { background: #fcebdd; }
.tag { font-weight: 700; }
tr.knee .tag { color: #a94700; }
figure { margin: 0.8rem 0; }
figcaption { color: #444; font-size: 0.95rem; }
img { display: block; max-width: 100%; height: auto; border: 1px solid #e2e2e2; margin: 0.5rem 0; }
.plan { border: 1px solid #ccc; border-radius: 4px; padding: 0.5rem 1rem; margin: 0.8rem 0; }
.plan.featured { border-color: #0072b2; }
summary { cursor: pointer; font-weight: 600; }
";

/// The table's words for row `i` against the fastest plan (row 0).
fn trade_sentence(r: &FrontReport, i: usize) -> String {
    let row = &r.front[i];
    let fastest = &r.front[0];
    let mut parts = Vec::new();
    if i == 0 {
        parts.push("<span class=\"tag\">fastest</span>".to_string());
    }
    if r.knee == Some(i) {
        parts.push("<span class=\"tag\">knee: the most balanced trade</span>".to_string());
    }
    if i > 0 && i + 1 == r.front.len() {
        parts.push("<span class=\"tag\">least propellant</span>".to_string());
    }
    if i > 0 {
        parts.push(format!(
            "plan {} costs {} h more than the fastest (plan {}) and saves {} g of propellant",
            row.plan,
            fixed(hours(row.overhead_s - fastest.overhead_s), 2),
            fastest.plan,
            fixed(grams(fastest.propellant_kg - row.propellant_kg), 1),
        ));
    }
    parts.join("; ")
}

/// A plan's headline: "Plan K (fastest)" and the like.
fn plan_heading(r: &FrontReport, i: usize) -> String {
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
    let k = r.front[i].plan;
    if tags.is_empty() {
        format!("Plan {k}")
    } else {
        format!("Plan {k} ({})", tags.join(", "))
    }
}

/// The page as HTML text.
fn render_html(r: &FrontReport) -> String {
    let mut h = String::new();
    let title = escape(r.title);
    let caution = escape(r.caution);
    let n = r.front.len();
    let (ro, rp) = r.reference;
    let hv = fixed(hv_hour_grams(r.hypervolume), 1);
    // Writing to a String cannot fail.
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>Plans to choose from: {title}</title>\n<style>{STYLE}</style>\n</head>\n\
         <body>\n<main>\n\
         <p class=\"caution\" role=\"note\"><strong>Caution.</strong> {caution}</p>\n\
         <h1>{title}</h1>\n"
    );
    if !r.notes.is_empty() {
        h.push_str("<ul class=\"notes\">\n");
        for note in r.notes {
            let _ = writeln!(h, "<li>{}</li>", escape(note));
        }
        h.push_str("</ul>\n");
    }

    h.push_str("<section id=\"reading\">\n<h2>How to read this</h2>\n");
    if n == 0 {
        h.push_str(
            "<p class=\"empty\">No plan on the front: the search found no plan to compare, so \
             there is nothing to choose from.</p>\n",
        );
    } else {
        let fastest = &r.front[0];
        let thrifty = &r.front[n - 1];
        let _ = writeln!(
            h,
            "<p>Each plan below is a different order of the same targets. Two costs are \
             weighed: the overhead time between observations (slewing, settling, momentum \
             dumps; waiting is shown but not counted) and the propellant the momentum dumps \
             use. The {n} plan{s} on the front {are} the best trades found: none is better \
             than another in both costs.</p>",
            s = if n == 1 { "" } else { "s" },
            are = if n == 1 { "is" } else { "are" },
        );
        if n > 1 {
            let _ = writeln!(
                h,
                "<p>The fastest plan costs more propellant: plan {} takes {} h of overhead \
                 and {} g of propellant; plan {} takes the least propellant, {} g, for {} h of \
                 overhead. Every plan in between gives up some time to save some \
                 propellant.</p>",
                fastest.plan,
                fmt_h(fastest.overhead_s),
                fmt_g(fastest.propellant_kg),
                thrifty.plan,
                fmt_g(thrifty.propellant_kg),
                fmt_h(thrifty.overhead_s),
            );
        }
        if let Some(k) = r.knee {
            let _ = writeln!(
                h,
                "<p>Plan {} is the knee: the most balanced trade, where saving more \
                 propellant starts to cost much more time.</p>",
                r.front[k].plan
            );
        }
    }
    let _ = writeln!(
        h,
        "<p>The hypervolume, {hv} h·g against the reference point ({} h of overhead, {} g of \
         propellant), measures how much of the space of the two costs the front covers: the \
         area of all the outcomes at least as bad as some plan of the front and no worse than \
         the reference. Larger is better; it compares fronts for the same targets and \
         reference, not single plans.</p>\n</section>",
        fmt_h(ro),
        fmt_g(rp),
    );

    h.push_str(
        "<section id=\"trade-off\">\n<h2>The trade-off</h2>\n<table>\n<caption>Plans on the \
         front, fastest first. Each plan number links to its table of observations.</caption>\n\
         <thead>\n<tr><th scope=\"col\">Plan</th><th scope=\"col\" class=\"num\">Overhead \
         (h)</th><th scope=\"col\" class=\"num\">Waiting (h)</th><th scope=\"col\" \
         class=\"num\">Propellant (g)</th><th scope=\"col\" class=\"num\">Dumps</th><th \
         scope=\"col\" class=\"num\">Scheduled</th><th scope=\"col\">Trade</th></tr>\n</thead>\n\
         <tbody>\n",
    );
    if n == 0 {
        h.push_str("<tr><td colspan=\"7\">no plan on the front</td></tr>\n");
    }
    for (i, row) in r.front.iter().enumerate() {
        let mut classes = Vec::new();
        if i == 0 {
            classes.push("fastest");
        }
        if r.knee == Some(i) {
            classes.push("knee");
        }
        let class = if classes.is_empty() {
            String::new()
        } else {
            format!(" class=\"{}\"", classes.join(" "))
        };
        let k = row.plan;
        let _ = writeln!(
            h,
            "<tr{class}><th scope=\"row\"><a href=\"plan-{k}.csv\">{k}</a></th>\
             <td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>\
             <td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td></tr>",
            fmt_h(row.overhead_s),
            fmt_h(row.wait_s),
            fmt_g(row.propellant_kg),
            row.dumps,
            row.scheduled,
            trade_sentence(r, i),
        );
    }
    h.push_str("</tbody>\n</table>\n</section>\n");

    let alt = if n == 0 {
        "Chart of propellant against overhead: no plan on the front.".to_string()
    } else {
        format!(
            "Chart of propellant in grams against overhead in hours: the {n} plans of the \
             front as numbered blue dots joined by a staircase{}, {} other plans evaluated as \
             grey dots, and the reference point as a cross.",
            r.knee
                .map(|k| format!(", the knee (plan {}) ringed", r.front[k].plan))
                .unwrap_or_default(),
            r.dominated.len(),
        )
    };
    let _ = writeln!(
        h,
        "<section id=\"front\">\n<h2>The front</h2>\n<figure>\n<img src=\"front.svg\" \
         alt=\"{}\">\n<figcaption>Lower is less propellant, left is less overhead. The \
         shaded area is what the hypervolume measures ({hv} h·g).</figcaption>\n</figure>\n\
         </section>",
        escape(&alt)
    );

    h.push_str("<section id=\"plans\">\n<h2>Each plan</h2>\n");
    if n == 0 {
        h.push_str("<p>No plan on the front.</p>\n");
    } else {
        h.push_str(
            "<p>The fastest plan and the knee are shown open; click any other plan to see \
             its pictures.</p>\n",
        );
    }
    for (i, row) in r.front.iter().enumerate() {
        let k = row.plan;
        let heading = escape(&plan_heading(r, i));
        let facts = format!(
            "<p>{} h of overhead, {} h of waiting, {} g of propellant, {} momentum dump{}, {} \
             target{} scheduled. Observations: <a href=\"plan-{k}.csv\">plan-{k}.csv</a>.</p>\n\
             <a href=\"plan-{k}-sky-map.svg\"><img src=\"plan-{k}-sky-map.svg\" alt=\"Sky map \
             of plan {k}: the targets on the sky, the observing sequence and the zones where \
             the telescope may not point.\"></a>\n<a href=\"plan-{k}-momentum.svg\"><img \
             src=\"plan-{k}-momentum.svg\" alt=\"Stored momentum of plan {k} over time, with \
             its {} momentum dump{}.\"></a>\n",
            fmt_h(row.overhead_s),
            fmt_h(row.wait_s),
            fmt_g(row.propellant_kg),
            row.dumps,
            if row.dumps == 1 { "" } else { "s" },
            row.scheduled,
            if row.scheduled == 1 { "" } else { "s" },
            row.dumps,
            if row.dumps == 1 { "" } else { "s" },
        );
        if i == 0 || r.knee == Some(i) {
            let _ = write!(
                h,
                "<section class=\"plan featured\" id=\"plan-{k}\">\n<h3>{heading}</h3>\n\
                 {facts}</section>\n"
            );
        } else {
            let _ = write!(
                h,
                "<details class=\"plan\" id=\"plan-{k}\">\n<summary>{heading}: {} h, {} \
                 g</summary>\n{facts}</details>\n",
                fmt_h(row.overhead_s),
                fmt_g(row.propellant_kg),
            );
        }
    }
    let _ = write!(
        h,
        "</section>\n<p class=\"caution\" role=\"note\"><strong>Caution.</strong> \
         {caution}</p>\n</main>\n</body>\n</html>\n"
    );
    h
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::draw::{legend_lines, text_fits};

    const CAUTION: &str = "Plans are planning proposals to be confirmed by the operations \
                           team's validated tools. Spacecraft operations can damage hardware.";

    fn row(plan: usize, overhead_s: f64, wait_s: f64, propellant_kg: f64) -> FrontRow {
        FrontRow {
            plan,
            overhead_s,
            wait_s,
            propellant_kg,
            dumps: 3,
            scheduled: 60,
        }
    }

    /// Three plans, numbered out of order on purpose (numbers are names, not positions).
    /// - plan 5: 36000 s = 10.00 h overhead, 1800 s = 0.50 h waiting, 0.0500 kg = 50.0 g;
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
        }
    }

    /// Text as the SVG writer escapes it.
    fn svg_escaped(s: &str) -> String {
        escape(s).replace("&#39;", "&apos;")
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
        let legend = legend_lines(&front_legend(&r), FRONT_LEGEND_W);
        for line in legend.iter().flatten() {
            assert!(svg.contains(&svg_escaped(line)), "{line}");
        }
        let legend = legend.concat().join(" ");
        assert!(legend.contains("knee, plan 2: the most balanced trade"));
        assert!(legend.contains("reference point (15.00 h, 60.0 g)"));
        assert!(legend.contains("hypervolume 2000.0 h·g"));
        assert!(legend.contains("other plan evaluated, beaten in both (4)"));
        assert!(svg.contains("overhead without waiting (h)"));
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
        let caution = escape(CAUTION);
        assert_eq!(html.matches(&caution).count(), 2);
        assert!(html.find(&caution) < html.find("<h1>"));
        assert!(html.rfind(&caution) > html.find("id=\"plans\""));

        // The rows, by hand (numbers from `three`):
        // plan 5: fastest, 10.00 h, 0.50 h waiting, 50.0 g;
        // plan 2: 41400 − 36000 = 5400 s = 1.50 h more, 50.0 − 37.7 = 12.3 g saved; the knee;
        // plan 7: 50400 − 36000 = 14400 s = 4.00 h more, 50.0 − 21.0 = 29.0 g saved.
        let row5 = "<tr class=\"fastest\"><th scope=\"row\"><a href=\"plan-5.csv\">5</a></th>\
                    <td class=\"num\">10.00</td><td class=\"num\">0.50</td>\
                    <td class=\"num\">50.0</td><td class=\"num\">3</td><td class=\"num\">60</td>\
                    <td><span class=\"tag\">fastest</span></td></tr>";
        let row2 = "<tr class=\"knee\"><th scope=\"row\"><a href=\"plan-2.csv\">2</a></th>\
                    <td class=\"num\">11.50</td><td class=\"num\">0.00</td>\
                    <td class=\"num\">37.7</td><td class=\"num\">3</td><td class=\"num\">60</td>\
                    <td><span class=\"tag\">knee: the most balanced trade</span>; plan 2 costs \
                    1.50 h more than the fastest (plan 5) and saves 12.3 g of propellant</td></tr>";
        let row7 = "<tr><th scope=\"row\"><a href=\"plan-7.csv\">7</a></th>\
                    <td class=\"num\">14.00</td><td class=\"num\">0.25</td>\
                    <td class=\"num\">21.0</td><td class=\"num\">3</td><td class=\"num\">60</td>\
                    <td><span class=\"tag\">least propellant</span>; plan 7 costs 4.00 h more \
                    than the fastest (plan 5) and saves 29.0 g of propellant</td></tr>";
        for r in [row5, row2, row7] {
            assert!(html.contains(r), "missing row {r}");
        }
        // Fastest first, then by overhead.
        assert!(html.find(row5) < html.find(row2) && html.find(row2) < html.find(row7));
        // Hypervolume in h·g with its reference.
        assert!(
            html.contains("2000.0 h·g against the reference point (15.00 h of overhead, 60.0 g")
        );

        assert!(html.contains("<img src=\"front.svg\" alt=\"Chart of propellant"));
        for k in [5, 2, 7] {
            assert!(html.contains(&format!("<img src=\"plan-{k}-sky-map.svg\" alt=\"Sky map")));
            assert!(html.contains(&format!("<img src=\"plan-{k}-momentum.svg\" alt=\"Stored")));
        }
        // The fastest and the knee open, the third folded.
        assert!(html.contains("<section class=\"plan featured\" id=\"plan-5\">"));
        assert!(html.contains("<section class=\"plan featured\" id=\"plan-2\">"));
        assert!(html.contains("<details class=\"plan\" id=\"plan-7\">"));
        assert_eq!(html.matches("<details").count(), 1);
        // Self-contained: no address elsewhere, no script.
        assert!(!html.contains("http://") && !html.contains("https://") && !html.contains("//"));
        assert!(!html.contains("<script"));
    }

    #[test]
    fn escaping_covers_markup_and_quotes() {
        assert_eq!(
            escape("a<b>&\"c\" 'd'"),
            "a&lt;b&gt;&amp;&quot;c&quot; &#39;d&#39;"
        );
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
        bad[1].overhead_s = f64::NAN;
        check_both(&report("t", &bad, &[]), "row 1 (plan 2) has overhead NaN");
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
        check_both(&report("t", &bad, &[]), "not sorted by overhead");
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
        let legend = legend_lines(&front_legend(&r), FRONT_LEGEND_W);
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
        assert!(html.contains("<td colspan=\"7\">no plan on the front</td>"));
        assert!(html.contains("<img src=\"front.svg\""));
        assert!(!html.contains("plan-1"));
        assert_eq!(html.matches(&escape(CAUTION)).count(), 2);
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
