//! Pictures of a sky plan: the sky map and the momentum trace.
//!
//! - [`write_sky_map`]: the whole sky on an equal-area map (J2000 axes), shaded where the
//!   telescope may not point during the plan, with the targets, the observing sequence and the
//!   Sun's path.
//! - [`write_momentum_chart`]: the stored reaction-wheel momentum over the plan, with the wheel
//!   limit, the planning threshold and the momentum dumps.
//!
//! Both are SVG files. Both carry the caller's caution sentence at the bottom: the pictures
//! illustrate a planning proposal and are no command to a spacecraft.
//!
//! Input is checked before anything is drawn: values that are not finite, lengths that do not
//! match and indices out of range give a [`DrawError`] rather than a panic or a wrong picture.
//! An empty plan (no targets, no sequence, no momentum samples) still gives a picture.

use crate::geometry::{
    cross, normalize, ra_dec_deg, separation, separation_deg, unit_vector, Vec3,
};
use crate::place::{around, nearest_in, square, Placer, Rect};
use crate::utc_axis::utc_chart;
use crate::{Epoch, Target};
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::f64::consts::{PI, SQRT_2};
use std::path::Path;
use wend_charts::frame::Framed;
use wend_charts::legend::{Key, LegendEntry, LegendKey, LegendLayout};
use wend_charts::style::{
    AXIS_TITLE_PX, BLUE, FONT, GREEN, GRID, INK, LEGEND_PX, ORANGE, OUTLINE, PURPLE, SKY_BLUE,
    SOFT_TEXT, VERMILLION,
};
use wend_charts::text::{boxed_text, em, text_width};
use wend_charts::{number_label, write_checked, Area, DrawResult};

pub use wend_charts::DrawError;

/// What the sky map shows.
///
/// The map is the Hammer equal-area projection of the whole sky on J2000 (ICRS) axes: right
/// ascension 180° at the centre, increasing to the left (longitude on the map
/// `λ = 180° − RA`, in (−180°, 180°]), so RA 0° is the right edge and RA 360° the left edge;
/// declination up. Equal areas on the sky are equal areas on the map.
pub struct SkyMap<'a> {
    /// Title drawn at the top (wrapped when it is longer than the picture is wide).
    pub title: &'a str,
    /// The targets of the pool (right ascension and declination in degrees are drawn; the
    /// declination must lie in [−90, 90]).
    pub targets: &'a [Target],
    /// Per target (same length as `targets`): true when the plan schedules it. Every target in
    /// `sequence` must be marked true.
    pub scheduled: &'a [bool],
    /// The sequence, as indices into `targets`, in observing order. May be empty.
    pub sequence: &'a [usize],
    /// The Sun's (right ascension, declination) in degrees on J2000 axes, sampled over the
    /// plan in time order (first = plan start, last = plan end). At least one point.
    pub sun_path_deg: &'a [(f64, f64)],
    /// The elongation band [min, max] in degrees, 0 ≤ min ≤ max ≤ 180: the telescope may only
    /// point with the angle to the Sun inside it.
    pub band_deg: (f64, f64),
    /// A caution sentence that appears at the bottom of the picture (wrapped to its width).
    /// Must not be blank.
    pub caution: &'a str,
}

/// What the momentum chart shows.
pub struct MomentumTrace<'a> {
    /// Title drawn at the top (wrapped when it is longer than the picture is wide).
    pub title: &'a str,
    /// The plan's start: the time axis is in UTC from here.
    pub start: Epoch,
    /// (seconds since `start`, |H| in N·m·s) samples in time order (times never decrease,
    /// both values finite and at least 0); |H| jumps to 0 at a dump (two points at the same
    /// time). May be empty (an empty plan).
    pub points_s: &'a [(f64, f64)],
    /// Optional: the three components of H (N·m·s, any sign, finite) at each of `points_s`,
    /// drawn as thin lines; empty to leave them out, else exactly one per point.
    pub components_nms: &'a [[f64; 3]],
    /// Wheel momentum limit, N·m·s, finite and above 0 (a solid horizontal line, labelled
    /// with its value).
    pub limit_nms: f64,
    /// Planning threshold (limit times the margin), N·m·s, finite and at least 0 (a dashed
    /// horizontal line, labelled with its value).
    pub threshold_nms: f64,
    /// Seconds since `start` (finite, at least 0) at which momentum dumps happen: markers in a
    /// strip above the lines, and their count in the legend.
    pub dumps_s: &'a [f64],
    /// A caution sentence that appears at the bottom of the picture (wrapped to its width).
    /// Must not be blank.
    pub caution: &'a str,
}

/// Draws `map` as an SVG file at `path` (about 1000×560 px; taller when the title or the
/// caution needs more lines).
///
/// The sky is shaded on a 3°×3° grid of right ascension and declination, each cell judged at
/// its centre: dark where the angle to the Sun is outside `band_deg` at every sampled Sun
/// position, light where it is outside at some of them. Sun positions closer than 0.5° to the
/// previous one kept are skipped, which moves a zone's edge by at most that much.
///
/// # Errors
/// [`DrawError::Input`] when the map cannot be drawn faithfully (see [`SkyMap`] for what each
/// field must hold); [`DrawError::Write`] when the file cannot be written.
pub fn write_sky_map(path: &Path, map: &SkyMap) -> Result<(), DrawError> {
    write_checked(path, || check_sky_map(map), |()| render_sky_map(map))
}

/// Draws `trace` as an SVG file at `path` (about 900×500 px; taller when the title or the
/// caution needs more lines). The x axis is UTC from `start` to the last sample or dump (one
/// hour when that is the start). The y axis runs from 0 (or below, for negative components)
/// to a strip above the largest of the limit, the threshold and the samples; the dumps are
/// marked in that strip, so that no marker crosses a line.
///
/// # Errors
/// [`DrawError::Input`] when the trace cannot be drawn faithfully (see [`MomentumTrace`] for
/// what each field must hold); [`DrawError::Write`] when the file cannot be written.
pub fn write_momentum_chart(path: &Path, trace: &MomentumTrace) -> Result<(), DrawError> {
    write_checked(
        path,
        || check_momentum(trace),
        |ranges| render_momentum(trace, ranges),
    )
}

// ---------------------------------------------------------------------------------------------
// Look of both pictures; the rest (fonts, colours, text, legends, the caution) is the shared
// chart kit, the same as in the front picture and the sweep report.

const GRID_LABEL_PX: u32 = 15;
const SUN_LABEL_PX: u32 = 17;
/// Numbers of the observing order beside the targets.
const NUMBER_PX: u32 = 15;
/// Names of the targets.
const NAME_PX: u32 = 14;
/// Above this many targets no names are tried (the map is too crowded for them anyway).
const MAX_NAMED_TARGETS: usize = 3000;
const ZONE_ALWAYS: RGBColor = RGBColor(150, 150, 150);
const ZONE_SOMETIMES: RGBColor = RGBColor(222, 222, 222);

/// How a legend entry of the sky map shows what it explains: a key of the kit, or one of the
/// map's own markers.
#[derive(Clone, Copy)]
enum SkyKey {
    /// A key of the kit.
    Kit(Key),
    /// A filled, outlined triangle.
    Triangle(RGBColor),
    /// A filled, outlined square.
    Square(RGBColor),
    /// The Sun's path line.
    SunPath,
    /// The Sun marker, hollow (start) or filled (end).
    Sun { filled: bool },
    /// A number of the observing order, on its pale box.
    Number,
}

impl LegendKey for SkyKey {
    fn text_only(&self) -> Option<bool> {
        match self {
            SkyKey::Kit(k) => k.text_only(),
            _ => None,
        }
    }

    fn draw(&self, area: &Area, c: (i32, i32)) -> DrawResult<()> {
        let (x, y) = c;
        let half = wend_charts::legend::KEY_W / 2;
        match *self {
            SkyKey::Kit(k) => k.draw(area, c),
            SkyKey::Triangle(colour) => draw_triangle(area, c, colour),
            SkyKey::Square(colour) => draw_square(area, c, colour),
            SkyKey::SunPath => {
                area.draw(&PathElement::new(
                    vec![(x - half, y), (x + half, y)],
                    INK.stroke_width(5),
                ))?;
                area.draw(&PathElement::new(
                    vec![(x - half, y), (x + half, y)],
                    ORANGE.stroke_width(3),
                ))
            }
            SkyKey::Sun { filled } => draw_sun_marker(area, c, filled),
            SkyKey::Number => {
                let style = TextStyle::from((FONT, NUMBER_PX).into_font().style(FontStyle::Bold))
                    .color(&INK)
                    .pos(Pos::new(HPos::Center, VPos::Center));
                area.draw(&Rectangle::new(
                    [(x - 10, y - 8), (x + 10, y + 8)],
                    GRID.stroke_width(1),
                ))?;
                area.draw(&Text::new("12", (x, y), style))
            }
        }
    }
}

/// A filled, outlined triangle pointing up, centred at `at` (first observation).
fn draw_triangle<CT>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    at: CT::From,
    colour: RGBColor,
) -> DrawResult<()>
where
    CT: CoordTranslate,
{
    let pts = vec![(0, -9), (8, 6), (-8, 6)];
    let mut closed = pts.clone();
    closed.push(pts[0]);
    area.draw(
        &(EmptyElement::at(at)
            + Polygon::new(pts, colour.filled())
            + PathElement::new(closed, INK.stroke_width(1))),
    )
}

/// A filled, outlined square centred at `at` (last observation).
fn draw_square<CT>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    at: CT::From,
    colour: RGBColor,
) -> DrawResult<()>
where
    CT: CoordTranslate,
{
    let r = [(-6, -6), (6, 6)];
    area.draw(
        &(EmptyElement::at(at)
            + Rectangle::new(r, colour.filled())
            + Rectangle::new(r, INK.stroke_width(1))),
    )
}

/// The Sun marker centred at `at`: an orange disc outlined in black, hollow (white inside)
/// for the plan's start and filled for its end.
fn draw_sun_marker<CT>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    at: CT::From,
    filled: bool,
) -> DrawResult<()>
where
    CT: CoordTranslate,
{
    let inside = if filled { ORANGE } else { WHITE };
    area.draw(
        &(EmptyElement::at(at)
            + Circle::new((0, 0), 8, INK.filled())
            + Circle::new((0, 0), 7, ORANGE.filled())
            + Circle::new((0, 0), 4, inside.filled())),
    )
}

// ---------------------------------------------------------------------------------------------
// The sky map.

/// Width of the sky map, pixels.
const SKY_W: u32 = 1000;
/// Width of the legend panel right of the map, pixels.
const SKY_LEGEND_W: u32 = 240;
/// Height of the band holding the map and its legend, pixels (more if the legend needs it).
const SKY_MIDDLE_H: u32 = 400;
/// Side of a sky cell for the zone shading, degrees of RA and Dec (divides 180).
const CELL_DEG: f64 = 3.0;
/// Cells along RA (0 to 360°) and along Dec (−90 to 90°).
const CELLS_RA: usize = 120;
const CELLS_DEC: usize = 60;
/// Zone shapes reach this far past their cells (degrees) so that neighbours overlap and no
/// hairline of white shows between them.
const CELL_OVERLAP_DEG: f64 = 0.3;
/// Sun positions closer than this to the previous one kept add nothing at the cell size,
/// degrees.
const SUN_STEP_DEG: f64 = 0.5;

/// The Hammer equal-area projection of longitude `lambda` in [−π, π] and latitude `phi` in
/// [−π/2, π/2] (radians) to the plane (dimensionless), inside the ellipse
/// x²/8 + y²/2 ≤ 1:
/// `z = √(1 + cos φ cos(λ/2))`, `x = 2√2 cos φ sin(λ/2) / z`, `y = √2 sin φ / z`.
/// `z ≥ 1` on that domain, so the division is safe.
fn hammer(lambda: f64, phi: f64) -> (f64, f64) {
    let (sl, cl) = (lambda / 2.0).sin_cos();
    let (sp, cp) = phi.sin_cos();
    let z = (1.0 + cp * cl).sqrt();
    (2.0 * SQRT_2 * cp * sl / z, SQRT_2 * sp / z)
}

/// Map longitude of right ascension `ra_deg` (any finite value, taken modulo 360):
/// `λ = 180° − RA`, radians in (−π, π], so RA grows to the left.
fn lambda_of(ra_deg: f64) -> f64 {
    let ra = ra_deg.rem_euclid(360.0);
    // rem_euclid gives 360 itself for tiny negative angles.
    let ra = if ra >= 360.0 { 0.0 } else { ra };
    (180.0 - ra).to_radians()
}

/// The map point of (right ascension, declination) in degrees.
fn project(ra_deg: f64, dec_deg: f64) -> (f64, f64) {
    hammer(lambda_of(ra_deg), dec_deg.to_radians())
}

/// The map point of a grid corner at `ra_deg` in [0, 360] without wrapping, so that RA 360
/// is the left edge and RA 0 the right edge.
fn grid_point(ra_deg: f64, dec_deg: f64) -> (f64, f64) {
    hammer((180.0 - ra_deg).to_radians(), dec_deg.to_radians())
}

/// Where the telescope may point, for one sky cell over the whole plan.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Zone {
    /// The angle to the Sun is inside the band at every sampled Sun position.
    Allowed,
    /// Outside the band at some sampled Sun positions, inside at others.
    Sometimes,
    /// Outside the band at every sampled Sun position.
    Always,
}

/// The zone of direction `u` (unit vector) with the Sun at each of `suns` (unit vectors) and
/// the elongation band `band` (degrees): forbidden where the angle to the Sun is below
/// `band.0` or above `band.1`.
fn zone_of(u: &Vec3, suns: &[Vec3], band: (f64, f64)) -> Zone {
    let (mut any, mut all) = (false, true);
    for s in suns {
        let e = separation_deg(u, s);
        let forbidden = e < band.0 || e > band.1;
        any |= forbidden;
        all &= forbidden;
        if any && !all {
            return Zone::Sometimes;
        }
    }
    match (any, all) {
        (false, _) => Zone::Allowed,
        (true, true) => Zone::Always,
        (true, false) => Zone::Sometimes,
    }
}

/// The zone of every cell, judged at its centre: `grid[row][col]`, row 0 the cells from
/// Dec −90° up, column 0 the cells from RA 0° up.
fn zone_grid(suns: &[Vec3], band: (f64, f64)) -> Vec<Vec<Zone>> {
    (0..CELLS_DEC)
        .map(|row| {
            let dec = -90.0 + (row as f64 + 0.5) * CELL_DEG;
            (0..CELLS_RA)
                .map(|col| {
                    let ra = (col as f64 + 0.5) * CELL_DEG;
                    zone_of(&unit_vector(ra, dec), suns, band)
                })
                .collect()
        })
        .collect()
}

/// One shaded shape: a run of neighbouring cells of one zone along a row, as the projected
/// outline of its top and bottom edges.
struct ZoneShape {
    zone: Zone,
    outline: Vec<(f64, f64)>,
}

/// The shaded shapes of `grid`: each row's runs of cells of one forbidden zone merged into
/// one polygon (a run never crosses the map's edge at RA 0/360, as the grid starts there).
fn zone_shapes(grid: &[Vec<Zone>]) -> Vec<ZoneShape> {
    let mut shapes = Vec::new();
    for (row, cells) in grid.iter().enumerate() {
        let dec0 = (-90.0 + row as f64 * CELL_DEG - CELL_OVERLAP_DEG).max(-90.0);
        let dec1 = (-90.0 + (row + 1) as f64 * CELL_DEG + CELL_OVERLAP_DEG).min(90.0);
        let mut col = 0;
        while col < cells.len() {
            let zone = cells[col];
            let start = col;
            while col < cells.len() && cells[col] == zone {
                col += 1;
            }
            if zone == Zone::Allowed {
                continue;
            }
            // Dark runs are drawn over light ones, so only they reach past their ends.
            let pad = if zone == Zone::Always {
                CELL_OVERLAP_DEG
            } else {
                0.0
            };
            let ra0 = (start as f64 * CELL_DEG - pad).max(0.0);
            let ra1 = (col as f64 * CELL_DEG + pad).min(360.0);
            let steps = col - start;
            let ra_at = |k: usize| ra0 + (ra1 - ra0) * k as f64 / steps as f64;
            let mut outline: Vec<(f64, f64)> =
                (0..=steps).map(|k| grid_point(ra_at(k), dec1)).collect();
            outline.extend((0..=steps).rev().map(|k| grid_point(ra_at(k), dec0)));
            shapes.push(ZoneShape { zone, outline });
        }
    }
    shapes
}

/// `path` (degrees) without the points closer than `step_deg` to the last one kept; the first
/// and the last point are always kept.
fn thin_path(path: &[(f64, f64)], step_deg: f64) -> Vec<(f64, f64)> {
    let mut kept: Vec<(f64, f64)> = Vec::new();
    for (i, &p) in path.iter().enumerate() {
        let far = match kept.last() {
            None => true,
            Some(&q) => separation_deg(&unit_vector(p.0, p.1), &unit_vector(q.0, q.1)) >= step_deg,
        };
        if far || i + 1 == path.len() {
            kept.push(p);
        }
    }
    kept
}

/// The map polylines of a path of (RA, Dec) in degrees: a new piece starts wherever two
/// neighbours lie more than 180° apart in map longitude, that is where the path crosses the
/// map's edge (RA 0°). There the piece that ends and the piece that starts both reach the
/// edge, at the declination interpolated linearly in RA between the two neighbours.
fn map_pieces(path: impl IntoIterator<Item = (f64, f64)>) -> Vec<Vec<(f64, f64)>> {
    let mut pieces: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut last: Option<(f64, f64, f64)> = None; // (λ, ra, dec) of the previous point
    for (ra, dec) in path {
        let lambda = lambda_of(ra);
        let p = hammer(lambda, dec.to_radians());
        match (last, pieces.last_mut()) {
            (Some((l, _, _)), Some(piece)) if (lambda - l).abs() <= PI => piece.push(p),
            (Some((l, ra0, dec0)), Some(piece)) => {
                // RA distance from the previous point to the edge and on to this one.
                let (to_edge, beyond) = if l > 0.0 {
                    // From a small RA (right edge) down through RA 0 to an RA near 360.
                    (ra0.rem_euclid(360.0), 360.0 - ra.rem_euclid(360.0))
                } else {
                    (360.0 - ra0.rem_euclid(360.0), ra.rem_euclid(360.0))
                };
                let f = if to_edge + beyond > 0.0 {
                    to_edge / (to_edge + beyond)
                } else {
                    0.5
                };
                let dec_edge = (dec0 + f * (dec - dec0)).to_radians();
                piece.push(hammer(PI.copysign(l), dec_edge));
                pieces.push(vec![hammer(PI.copysign(lambda), dec_edge), p]);
            }
            _ => pieces.push(vec![p]),
        }
        last = Some((lambda, ra, dec));
    }
    pieces
}

/// Largest step between samples of a great-circle arc, degrees.
const ARC_STEP_DEG: f64 = 2.0;

/// The great-circle arc from `a` to `b` (RA, Dec in degrees) sampled at most
/// [`ARC_STEP_DEG`] apart, both ends included. Opposite points have no single shortest arc:
/// the arc then runs through a point a quarter turn from both.
fn great_circle(a: (f64, f64), b: (f64, f64)) -> Vec<(f64, f64)> {
    let (ua, ub) = (unit_vector(a.0, a.1), unit_vector(b.0, b.1));
    let theta = separation(&ua, &ub);
    if theta < 1e-9 {
        return vec![a, b];
    }
    if PI - theta < 1e-6 {
        // Any direction square to `a` will do; the one toward the pole keeps arcs tidy.
        let side = normalize(&cross(&ua, &[0.0, 0.0, 1.0]))
            .or_else(|| normalize(&cross(&ua, &[1.0, 0.0, 0.0])))
            .unwrap_or([0.0, 1.0, 0.0]);
        let mid = normalize(&cross(&side, &ua)).unwrap_or(side);
        let m = ra_dec_deg(&mid);
        let mut first = great_circle(a, m);
        first.pop();
        first.extend(great_circle(m, b));
        return first;
    }
    // A hair below each whole step, so that rounding does not add a step.
    let n = ((theta.to_degrees() / ARC_STEP_DEG - 1e-9).ceil() as usize).clamp(1, 180);
    let sin_t = theta.sin();
    let mut out = Vec::with_capacity(n + 1);
    out.push(a);
    for k in 1..n {
        let t = k as f64 / n as f64;
        let (wa, wb) = (((1.0 - t) * theta).sin() / sin_t, (t * theta).sin() / sin_t);
        let v = [
            wa * ua[0] + wb * ub[0],
            wa * ua[1] + wb * ub[1],
            wa * ua[2] + wb * ub[2],
        ];
        out.push(ra_dec_deg(&v));
    }
    out.push(b);
    out
}

/// The observing sequence's path on the sky: the great-circle arcs between consecutive
/// observations, joined, as (RA, Dec) in degrees.
fn sequence_path(points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut path: Vec<(f64, f64)> = Vec::new();
    for pair in points.windows(2) {
        let arc = great_circle(pair[0], pair[1]);
        let skip = usize::from(!path.is_empty());
        path.extend(arc.into_iter().skip(skip));
    }
    if path.is_empty() {
        path.extend(points.first());
    }
    path
}

/// Why `map` cannot be drawn, or Ok.
fn check_sky_map(map: &SkyMap) -> Result<(), String> {
    let n = map.targets.len();
    for (i, t) in map.targets.iter().enumerate() {
        if !t.ra_deg.is_finite() {
            return Err(format!(
                "target {i} ({:?}) has right ascension {}, not a finite number of degrees",
                t.id, t.ra_deg
            ));
        }
        if !(t.dec_deg.is_finite() && (-90.0..=90.0).contains(&t.dec_deg)) {
            return Err(format!(
                "target {i} ({:?}) has declination {}, not in [-90, 90] degrees",
                t.id, t.dec_deg
            ));
        }
    }
    if map.scheduled.len() != n {
        return Err(format!(
            "{} scheduled flags for {n} targets (one per target is needed)",
            map.scheduled.len()
        ));
    }
    for (k, &i) in map.sequence.iter().enumerate() {
        if i >= n {
            return Err(format!(
                "sequence entry {k} is target index {i}, but there are only {n} targets"
            ));
        }
        if !map.scheduled[i] {
            return Err(format!(
                "sequence entry {k} is target {i} ({:?}), which is not marked scheduled",
                map.targets[i].id
            ));
        }
    }
    if map.sun_path_deg.is_empty() {
        return Err("the Sun's path has no points (at least one is needed)".into());
    }
    for (k, &(ra, dec)) in map.sun_path_deg.iter().enumerate() {
        if !(ra.is_finite() && dec.is_finite() && (-90.0..=90.0).contains(&dec)) {
            return Err(format!(
                "Sun path point {k} is ({ra}, {dec}): right ascension must be finite and \
                 declination in [-90, 90] degrees"
            ));
        }
    }
    let (lo, hi) = map.band_deg;
    if !(lo.is_finite() && hi.is_finite() && 0.0 <= lo && lo <= hi && hi <= 180.0) {
        return Err(format!(
            "the elongation band [{lo}, {hi}] degrees is not a range inside [0, 180]"
        ));
    }
    if map.caution.trim().is_empty() {
        return Err("the caution text is blank; the picture must carry it".into());
    }
    Ok(())
}

/// The legend of the sky map.
fn sky_legend(map: &SkyMap) -> Vec<LegendEntry<SkyKey>> {
    let (lo, hi) = map.band_deg;
    let n_sched = map.scheduled.iter().filter(|&&s| s).count();
    let n_other = map.targets.len() - n_sched;
    let e = |key: SkyKey, label: String| LegendEntry { key, label };
    let kit = |key: Key, label: String| LegendEntry {
        key: SkyKey::Kit(key),
        label,
    };
    let band = format!("{}°–{}°", number_label(lo, 100.0), number_label(hi, 100.0));
    let mut entries = vec![
        kit(
            Key::Heading,
            format!("Pointing forbidden (Sun angle outside {band}):"),
        ),
        kit(
            Key::Swatch(ZONE_ALWAYS.to_rgba()),
            "for the whole plan".into(),
        ),
        kit(
            Key::Swatch(ZONE_SOMETIMES.to_rgba()),
            "for part of the plan".into(),
        ),
        kit(Key::Swatch(WHITE.to_rgba()), "never (allowed)".into()),
        kit(Key::Dot(BLUE, 4), format!("scheduled target ({n_sched})")),
        kit(Key::Ring(INK), format!("not scheduled ({n_other})")),
        kit(
            Key::Line(BLUE, 2),
            "observing sequence (slews as great-circle arcs)".into(),
        ),
        e(
            SkyKey::Number,
            "place in the observing order (left out where crowded)".into(),
        ),
        e(SkyKey::Triangle(GREEN), "first observation".into()),
        e(SkyKey::Square(VERMILLION), "last observation".into()),
        kit(
            Key::Note,
            "Equal-area map, J2000 axes: RA 180° at the centre, growing to the left; \
             grid every 30°."
                .into(),
        ),
    ];
    // Ahead of the closing note: how the Sun is drawn.
    let note = entries.pop();
    if map.sun_path_deg.len() > 1 {
        entries.push(e(SkyKey::SunPath, "Sun's path".into()));
        entries.push(e(SkyKey::Sun { filled: false }, "Sun at plan start".into()));
        entries.push(e(SkyKey::Sun { filled: true }, "Sun at plan end".into()));
    } else {
        entries.push(e(SkyKey::Sun { filled: true }, "Sun (one position)".into()));
    }
    entries.extend(note);
    entries
}

/// The sky map as SVG text.
fn render_sky_map(map: &SkyMap) -> DrawResult<String> {
    let legend = sky_legend(map);
    let suns: Vec<(f64, f64)> = thin_path(map.sun_path_deg, SUN_STEP_DEG);
    let sun_units: Vec<Vec3> = suns.iter().map(|&(a, d)| unit_vector(a, d)).collect();
    let shapes = zone_shapes(&zone_grid(&sun_units, map.band_deg));
    framed(
        SKY_W,
        SKY_LEGEND_W,
        SKY_MIDDLE_H,
        map.title,
        map.caution,
        &legend,
    )
    .render(|root, area| draw_sky(root, area, map, &suns, &shapes))
}

/// The frame of both pictures: title, the body beside its legend, the caution.
pub(super) fn framed<'a, K: LegendKey>(
    width: u32,
    legend_width: u32,
    middle_height: u32,
    title: &'a str,
    caution: &'a str,
    legend: &'a [LegendEntry<K>],
) -> Framed<'a, K> {
    Framed {
        width,
        legend_width,
        middle_height,
        title,
        caution,
        legend,
        layout: LegendLayout::wrapped(LEGEND_PX),
    }
}

/// Draws the map itself into `area`: zones, grid, outline, Sun, targets and sequence.
fn draw_sky(
    root: &Area,
    area: &Area,
    map: &SkyMap,
    suns: &[(f64, f64)],
    shapes: &[ZoneShape],
) -> DrawResult<()> {
    const MARGIN: u32 = 6;
    // Room left of the outline for the declination labels, right of it, above and below.
    const LEFT_PX: f64 = 44.0;
    const RIGHT_PX: f64 = 8.0;
    const END_PX: f64 = 10.0;
    let (w, h) = area.dim_in_pixel();
    let (w, h) = (
        f64::from(w.saturating_sub(2 * MARGIN)).max(1.0),
        f64::from(h.saturating_sub(2 * MARGIN)).max(1.0),
    );
    // One scale on both axes (pixels per map unit): the outline is 4√2 wide and 2√2 tall.
    let scale = ((w - LEFT_PX - RIGHT_PX) / (4.0 * SQRT_2))
        .min((h - 2.0 * END_PX) / (2.0 * SQRT_2))
        .max(1.0);
    // The outline sits `RIGHT_PX` from the right edge, centred up and down.
    let x1 = 2.0 * SQRT_2 + RIGHT_PX / scale;
    let x0 = x1 - w / scale;
    let hy = h / (2.0 * scale);
    let chart = ChartBuilder::on(area)
        .margin(MARGIN)
        .build_cartesian_2d(x0..x1, -hy..hy)?;
    let plot = chart.plotting_area();
    let px = 1.0 / scale; // one pixel in map units

    // Zones: light ones first, dark ones over them.
    for (zone, colour) in [
        (Zone::Sometimes, ZONE_SOMETIMES),
        (Zone::Always, ZONE_ALWAYS),
    ] {
        for s in shapes.iter().filter(|s| s.zone == zone) {
            plot.draw(&Polygon::new(s.outline.clone(), colour.filled()))?;
        }
    }

    // Graticule every 30°, then the outline.
    for k in 1..12 {
        let ra = f64::from(k) * 30.0;
        let line: Vec<(f64, f64)> = (0..=90)
            .map(|j| grid_point(ra, -90.0 + f64::from(j) * 2.0))
            .collect();
        plot.draw(&PathElement::new(line, GRID.stroke_width(1)))?;
    }
    for k in -2..=2 {
        let dec = f64::from(k) * 30.0;
        let line: Vec<(f64, f64)> = (0..=180)
            .map(|j| grid_point(f64::from(j) * 2.0, dec))
            .collect();
        plot.draw(&PathElement::new(line, GRID.stroke_width(1)))?;
    }
    let outline: Vec<(f64, f64)> = (0..=360)
        .map(|j| {
            let t = f64::from(j).to_radians();
            (2.0 * SQRT_2 * t.cos(), SQRT_2 * t.sin())
        })
        .collect();
    plot.draw(&PathElement::new(outline, OUTLINE.stroke_width(1)))?;
    // Grid labels: (text, map point, anchor); drawn after the Sun's labels, where clear.
    let mut grid_labels: Vec<(String, (f64, f64), HPos, VPos)> = Vec::new();
    for k in 1..12 {
        let ra = k * 30;
        let (x, y) = grid_point(f64::from(ra), 0.0);
        grid_labels.push((format!("{ra}°"), (x, y - 3.0 * px), HPos::Center, VPos::Top));
    }
    for k in -2..=2 {
        let dec = k * 30;
        let (x, y) = grid_point(360.0, f64::from(dec));
        let text = if dec > 0 {
            format!("+{dec}°")
        } else {
            format!("{dec}°").replace('-', "−")
        };
        grid_labels.push((text, (x - 6.0 * px, y), HPos::Right, VPos::Center));
    }

    // The sequence as great-circle arcs, then the targets, then its first and last
    // observations.
    let n = map.targets.len();
    let line_w = if map.sequence.len() > 1000 { 1 } else { 2 };
    let seq: Vec<(f64, f64)> = map
        .sequence
        .iter()
        .map(|&i| (map.targets[i].ra_deg, map.targets[i].dec_deg))
        .collect();
    for piece in map_pieces(sequence_path(&seq)) {
        if piece.len() > 1 {
            plot.draw(&PathElement::new(piece, BLUE.mix(0.8).stroke_width(line_w)))?;
        }
    }
    let r = if n <= 300 {
        4
    } else if n <= 2000 {
        3
    } else {
        2
    };
    for (t, _) in map.targets.iter().zip(map.scheduled).filter(|(_, &s)| !s) {
        plot.draw(&Circle::new(
            project(t.ra_deg, t.dec_deg),
            r,
            INK.stroke_width(1),
        ))?;
    }
    for (t, _) in map.targets.iter().zip(map.scheduled).filter(|(_, &s)| s) {
        plot.draw(&Circle::new(project(t.ra_deg, t.dec_deg), r, BLUE.filled()))?;
    }
    // The Sun's path over them (where no target can be observed), outlined so that it shows
    // on every shade.
    for piece in map_pieces(suns.iter().copied()) {
        plot.draw(&PathElement::new(piece.clone(), INK.stroke_width(5)))?;
        plot.draw(&PathElement::new(piece, ORANGE.stroke_width(3)))?;
    }
    let at = |i: usize| project(map.targets[i].ra_deg, map.targets[i].dec_deg);
    if let (Some(&first), Some(&last)) = (map.sequence.first(), map.sequence.last()) {
        draw_square(plot, at(last), VERMILLION)?;
        draw_triangle(plot, at(first), GREEN)?;
    }
    let (start, end) = (suns[0], suns[suns.len() - 1]);
    let (p_start, p_end) = (project(start.0, start.1), project(end.0, end.1));
    if suns.len() == 1 {
        draw_sun_marker(plot, p_start, true)?;
    } else {
        draw_sun_marker(plot, p_start, false)?;
        draw_sun_marker(plot, p_end, true)?;
    }

    // Labels, each placed clear of the markers and of every label placed before it, or left
    // out: the Sun's first, then the grid's, then the observing order's numbers, then the
    // targets' names.
    let pixel = |p: (f64, f64)| {
        let (x, y) = plot.map_coordinate(&p);
        (f64::from(x), f64::from(y))
    };
    let (xr, yr) = plot.get_pixel_range();
    let mut placer = Placer::new((
        f64::from(xr.start),
        f64::from(yr.start),
        f64::from(xr.end),
        f64::from(yr.end),
    ));
    let rf = f64::from(r) + 1.0;
    for t in map.targets {
        placer.block(square(pixel(project(t.ra_deg, t.dec_deg)), rf));
    }
    if let (Some(&first), Some(&last)) = (map.sequence.first(), map.sequence.last()) {
        placer.block(square(pixel(at(first)), 10.0));
        placer.block(square(pixel(at(last)), 8.0));
    }
    let sun_points: Vec<(f64, f64)> = if suns.len() == 1 {
        vec![p_start]
    } else {
        vec![p_start, p_end]
    };
    for &p in &sun_points {
        placer.block(square(pixel(p), 9.0));
    }
    // A text on a pale box filling `rect`.
    let boxed = |rect: Rect, text: &str, style: &TextStyle| -> DrawResult<()> {
        boxed_text(
            root,
            [
                (rect.0.round() as i32, rect.1.round() as i32),
                (rect.2.round() as i32, rect.3.round() as i32),
            ],
            text.to_string(),
            (
                ((rect.0 + rect.2) / 2.0).round() as i32,
                ((rect.1 + rect.3) / 2.0).round() as i32,
            ),
            style,
        )
    };
    // A thin line from a marker of radius `marker` at `p` to its label at `rect`, when the
    // label does not touch the marker.
    let leader = |p: (f64, f64), marker: f64, rect: &Rect| -> DrawResult<()> {
        let near = nearest_in(rect, p);
        let (dx, dy) = (near.0 - p.0, near.1 - p.1);
        let dist = dx.hypot(dy);
        if dist > marker + 6.0 {
            let from = (p.0 + dx * marker / dist, p.1 + dy * marker / dist);
            root.draw(&PathElement::new(
                vec![
                    (from.0.round() as i32, from.1.round() as i32),
                    (near.0.round() as i32, near.1.round() as i32),
                ],
                SOFT_TEXT.stroke_width(1),
            ))?;
        }
        Ok(())
    };

    // The Sun at the plan's start and end: the start's label above it, the end's below
    // (so that they stay apart when the Sun barely moves), else wherever there is room.
    let sun_text = TextStyle::from((FONT, SUN_LABEL_PX).into_font().style(FontStyle::Bold))
        .pos(Pos::new(HPos::Center, VPos::Center));
    let sun_names: Vec<(&str, (f64, f64), bool)> = if suns.len() == 1 {
        vec![("Sun", p_start, true)]
    } else {
        vec![("Sun, start", p_start, true), ("Sun, end", p_end, false)]
    };
    for (text, at_map, above) in sun_names {
        let p = pixel(at_map);
        let w = text_width(text, SUN_LABEL_PX, 0.66) + 8.0;
        let h = em(SUN_LABEL_PX) * 1.3;
        let up = (p.0 - w / 2.0, p.1 - 11.0 - h, p.0 + w / 2.0, p.1 - 11.0);
        let down = (p.0 - w / 2.0, p.1 + 11.0, p.0 + w / 2.0, p.1 + 11.0 + h);
        let first = if above { [up, down] } else { [down, up] };
        // Near the map's side edges: the same heights, moved inside.
        let inside = |rect: Rect| {
            let dx =
                (f64::from(xr.start) - rect.0).max(0.0) - (rect.2 - f64::from(xr.end)).max(0.0);
            (rect.0 + dx, rect.1, rect.2 + dx, rect.3)
        };
        let candidates = first
            .into_iter()
            .chain(first.into_iter().map(inside))
            .chain(around(p, 9.0, w, h, 3));
        if let Some(rect) = placer.place(candidates) {
            leader(p, 9.0, &rect)?;
            boxed(rect, text, &sun_text)?;
        }
    }

    // The grid's labels where they are clear.
    for (text, at_map, h_pos, v_pos) in grid_labels {
        let (x, y) = pixel(at_map);
        let w = text_width(&text, GRID_LABEL_PX, 0.62);
        let h = em(GRID_LABEL_PX) * 1.2;
        let x0 = match h_pos {
            HPos::Right => x - w,
            HPos::Center => x - w / 2.0,
            HPos::Left => x,
        };
        let y0 = match v_pos {
            VPos::Top => y,
            VPos::Center => y - h / 2.0,
            VPos::Bottom => y - h,
        };
        if placer.place([(x0, y0, x0 + w, y0 + h)]).is_some() {
            let style = TextStyle::from((FONT, GRID_LABEL_PX).into_font())
                .color(&SOFT_TEXT)
                .pos(Pos::new(h_pos, v_pos));
            root.draw(&Text::new(
                text,
                (x.round() as i32, y.round() as i32),
                style,
            ))?;
        }
    }

    // The observing order's numbers beside their targets: the first and the last, then
    // every tenth, every fifth, and the others, each where it fits.
    let m = map.sequence.len();
    let mut order: Vec<usize> = Vec::with_capacity(m);
    if m > 0 {
        order.push(0);
        if m > 1 {
            order.push(m - 1);
        }
    }
    // Every tenth first, then every fifth, then the others (a stable sort keeps the order).
    let rank = |k: &usize| match k + 1 {
        x if x % 10 == 0 => 0,
        x if x % 5 == 0 => 1,
        _ => 2,
    };
    let mut middle: Vec<usize> = (1..m.saturating_sub(1)).collect();
    middle.sort_by_key(rank);
    order.extend(middle);
    let number_style = TextStyle::from((FONT, NUMBER_PX).into_font().style(FontStyle::Bold))
        .color(&INK)
        .pos(Pos::new(HPos::Center, VPos::Center));
    let marker_of = |k: usize| {
        if k == 0 {
            10.0
        } else if k + 1 == m {
            8.0
        } else {
            rf
        }
    };
    for k in order {
        let text = (k + 1).to_string();
        let (w, h) = label_size(&text, NUMBER_PX);
        let p = pixel(at(map.sequence[k]));
        if let Some(rect) = placer.place(around(p, marker_of(k), w, h, 0)) {
            boxed(rect, &text, &number_style)?;
        }
    }

    // The targets' names where room is left: scheduled ones in the observing order first.
    if n <= MAX_NAMED_TARGETS {
        let name_style = TextStyle::from((FONT, NAME_PX).into_font())
            .color(&SOFT_TEXT)
            .pos(Pos::new(HPos::Center, VPos::Center));
        let mut seen = vec![false; n];
        let named = map
            .sequence
            .iter()
            .copied()
            .chain(0..n)
            .filter(|&i| !std::mem::replace(&mut seen[i], true));
        for i in named {
            let t = &map.targets[i];
            let (w, h) = label_size(&t.id, NAME_PX);
            let p = pixel(project(t.ra_deg, t.dec_deg));
            if let Some(rect) = placer.place(around(p, rf, w, h, 0)) {
                boxed(rect, &t.id, &name_style)?;
            }
        }
    }
    Ok(())
}

/// Width and height in pixels of a boxed label of `text` at library size `px`.
fn label_size(text: &str, px: u32) -> (f64, f64) {
    (text_width(text, px, 0.62) + 6.0, em(px) * 1.25)
}

// ---------------------------------------------------------------------------------------------
// The momentum chart.

/// Width of the momentum chart, pixels.
const MOMENTUM_W: u32 = 900;
/// Width of its legend panel, pixels.
const MOMENTUM_LEGEND_W: u32 = 250;
/// Height of the band holding the chart and its legend, pixels.
const MOMENTUM_MIDDLE_H: u32 = 390;

/// The axes' ends: x in seconds from the start, y in N·m·s.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Ranges {
    x_max: f64,
    y_min: f64,
    /// The largest value drawn (line or sample); the strip of dump markers lies above it.
    top: f64,
    y_max: f64,
}

/// Share of the y axis kept free above the largest value, for the dump markers.
const DUMP_STRIP: f64 = 0.12;

/// Why `trace` cannot be drawn, or the ranges of its axes.
fn check_momentum(trace: &MomentumTrace) -> Result<Ranges, String> {
    let mut last_s = f64::NEG_INFINITY;
    let (mut x_max, mut h_max) = (0.0_f64, 0.0_f64);
    if !trace.start.to_unix_seconds().is_finite() {
        return Err("the plan's start is not a finite time".into());
    }
    for (k, &(t, h)) in trace.points_s.iter().enumerate() {
        if !(t.is_finite() && t >= 0.0) {
            return Err(format!(
                "momentum sample {k} is at {t} s, not a finite time at or after the plan's \
                 start"
            ));
        }
        if !(h.is_finite() && h >= 0.0) {
            return Err(format!(
                "momentum sample {k} has |H| = {h} N·m·s, not a finite value at least 0"
            ));
        }
        if t < last_s {
            return Err(format!(
                "momentum sample {k} ({t} s) comes before the sample preceding it ({last_s} \
                 s); samples must be in time order"
            ));
        }
        last_s = t;
        x_max = x_max.max(t);
        h_max = h_max.max(h);
    }
    let comps = trace.components_nms;
    if !comps.is_empty() && comps.len() != trace.points_s.len() {
        return Err(format!(
            "{} momentum components for {} samples (give none or one per sample)",
            comps.len(),
            trace.points_s.len()
        ));
    }
    let mut c_min = 0.0_f64;
    for (k, c) in comps.iter().enumerate() {
        if !c.iter().all(|v| v.is_finite()) {
            return Err(format!(
                "momentum components of sample {k} are {c:?}, not finite values"
            ));
        }
        for &v in c {
            c_min = c_min.min(v);
            h_max = h_max.max(v);
        }
    }
    if !(trace.limit_nms.is_finite() && trace.limit_nms > 0.0) {
        return Err(format!(
            "the wheel limit {} N·m·s is not a finite value above 0",
            trace.limit_nms
        ));
    }
    if !(trace.threshold_nms.is_finite() && trace.threshold_nms >= 0.0) {
        return Err(format!(
            "the planning threshold {} N·m·s is not a finite value at least 0",
            trace.threshold_nms
        ));
    }
    for (k, &t) in trace.dumps_s.iter().enumerate() {
        if !(t.is_finite() && t >= 0.0) {
            return Err(format!(
                "momentum dump {k} is at {t} s, not a finite time at or after the plan's start"
            ));
        }
        x_max = x_max.max(t);
    }
    if trace.caution.trim().is_empty() {
        return Err("the caution text is blank; the picture must carry it".into());
    }
    let top = h_max.max(trace.limit_nms).max(trace.threshold_nms);
    let y_min = if c_min < 0.0 { c_min * 1.1 } else { 0.0 };
    let y_max = top + (top - y_min) * DUMP_STRIP / (1.0 - DUMP_STRIP);
    if !(y_max.is_finite() && y_min.is_finite() && (y_max - y_min).is_finite()) {
        return Err(format!(
            "momentum values up to {h_max} N·m·s are too large to draw"
        ));
    }
    if x_max <= 0.0 {
        x_max = 3600.0;
    }
    Ok(Ranges {
        x_max,
        y_min,
        top,
        y_max,
    })
}

/// How a legend entry of the momentum chart shows what it explains.
#[derive(Clone, Copy)]
enum MomentumKey {
    Kit(Key),
    /// The dump marker: a triangle pointing down.
    Dump,
}

impl LegendKey for MomentumKey {
    fn text_only(&self) -> Option<bool> {
        match self {
            MomentumKey::Kit(k) => k.text_only(),
            MomentumKey::Dump => None,
        }
    }

    fn draw(&self, area: &Area, c: (i32, i32)) -> DrawResult<()> {
        match *self {
            MomentumKey::Kit(k) => k.draw(area, c),
            MomentumKey::Dump => draw_dump_marker(area, c),
        }
    }
}

/// Height of a dump marker, pixels.
const DUMP_MARK_H: i32 = 12;

/// A dump marker: a purple triangle pointing down, its tip `DUMP_MARK_H / 2` below `at`.
fn draw_dump_marker<CT: CoordTranslate>(
    area: &DrawingArea<SVGBackend<'_>, CT>,
    at: CT::From,
) -> DrawResult<()> {
    let h = DUMP_MARK_H / 2;
    let pts = vec![(-6, -h), (6, -h), (0, h)];
    let mut closed = pts.clone();
    closed.push(pts[0]);
    area.draw(
        &(EmptyElement::at(at)
            + Polygon::new(pts, PURPLE.filled())
            + PathElement::new(closed, INK.stroke_width(1))),
    )
}

/// Colours of the three components.
const COMPONENT_COLOURS: [RGBColor; 3] = [GREEN, ORANGE, SKY_BLUE];

/// The legend of the momentum chart.
fn momentum_legend(trace: &MomentumTrace) -> Vec<LegendEntry<MomentumKey>> {
    let dumps = match trace.dumps_s.len() {
        0 => "no momentum dumps".to_string(),
        1 => "1 momentum dump (marked above the lines)".to_string(),
        n => format!("{n} momentum dumps (marked above the lines)"),
    };
    let kit = |key: Key, label: &str| LegendEntry {
        key: MomentumKey::Kit(key),
        label: label.to_string(),
    };
    let mut entries = vec![kit(Key::Line(BLUE, 2), "stored momentum |H|")];
    if !trace.components_nms.is_empty() {
        for (axis, colour) in ["x", "y", "z"].iter().zip(COMPONENT_COLOURS) {
            entries.push(kit(Key::Line(colour, 1), &format!("component H{axis}")));
        }
    }
    entries.push(kit(Key::Line(VERMILLION, 2), "wheel limit"));
    entries.push(kit(
        Key::Dashed {
            colour: INK,
            width: 2,
            dash: 7,
            gap: 4,
        },
        "planning threshold",
    ));
    entries.push(LegendEntry {
        key: MomentumKey::Dump,
        label: dumps,
    });
    entries
}

/// The momentum chart as SVG text.
fn render_momentum(trace: &MomentumTrace, ranges: Ranges) -> DrawResult<String> {
    let Ranges {
        x_max,
        y_min,
        top,
        y_max,
    } = ranges;
    let legend = momentum_legend(trace);
    let frame = framed(
        MOMENTUM_W,
        MOMENTUM_LEGEND_W,
        MOMENTUM_MIDDLE_H,
        trace.title,
        trace.caution,
        &legend,
    );
    frame.render(|root, chart_area| {
        let chart = utc_chart(
            chart_area,
            trace.start,
            x_max,
            (y_min, y_max),
            "stored momentum |H| (N·m·s)",
            true,
            84,
        )?;
        let plot = chart.plotting_area();
        let pixel = |p: (f64, f64)| {
            let (x, y) = plot.map_coordinate(&p);
            (f64::from(x), f64::from(y))
        };
        let (limit, threshold) = (trace.limit_nms, trace.threshold_nms);
        if y_min < 0.0 {
            plot.draw(&PathElement::new(
                vec![(0.0, 0.0), (x_max, 0.0)],
                GRID.stroke_width(1),
            ))?;
        }
        plot.draw(&PathElement::new(
            vec![(0.0, limit), (x_max, limit)],
            VERMILLION.stroke_width(2),
        ))?;
        plot.draw(&DashedPathElement::new(
            vec![(0.0, threshold), (x_max, threshold)],
            7,
            4,
            INK.stroke_width(2),
        ))?;
        for (axis, colour) in COMPONENT_COLOURS.iter().enumerate() {
            if trace.components_nms.len() > 1 {
                let line: Vec<(f64, f64)> = trace
                    .points_s
                    .iter()
                    .zip(trace.components_nms)
                    .map(|(&(t, _), c)| (t, c[axis]))
                    .collect();
                plot.draw(&PathElement::new(line, colour.stroke_width(1)))?;
            }
        }
        if trace.points_s.len() > 1 {
            plot.draw(&PathElement::new(
                trace.points_s.to_vec(),
                BLUE.stroke_width(2),
            ))?;
        } else if let Some(&p) = trace.points_s.first() {
            plot.draw(&Circle::new(p, 3, BLUE.filled()))?;
        }

        // Dump markers in the strip above every line: half-way between the highest value
        // and the top of the chart.
        let (xr, yr) = plot.get_pixel_range();
        let bounds = (
            f64::from(xr.start),
            f64::from(yr.start),
            f64::from(xr.end),
            f64::from(yr.end),
        );
        let mut placer = Placer::new(bounds);
        let strip_y = (pixel((0.0, top)).1 + bounds.1) / 2.0;
        let mut marked = std::collections::HashSet::new();
        for &t in trace.dumps_s {
            let (x, _) = pixel((t, top));
            let at = (x.round() as i32, strip_y.round() as i32);
            placer.block(square((x, strip_y), f64::from(DUMP_MARK_H) / 2.0 + 1.0));
            if marked.insert(at.0) {
                draw_dump_marker(root, at)?;
            }
        }

        // Each line's name and value on a pale box beside it, clear of the other line, the
        // dump markers and the other label: at the right end above it, below it, then at
        // the left end, then in the middle.
        let value = |v: f64| number_label(v, v.abs());
        let labels = [
            (limit, format!("wheel limit, {} N·m·s", value(limit))),
            (
                threshold,
                format!("planning threshold, {} N·m·s", value(threshold)),
            ),
        ];
        for &(v, _) in &labels {
            let y = pixel((0.0, v)).1;
            placer.block((bounds.0, y - 1.5, bounds.2, y + 1.5));
        }
        let text = TextStyle::from((FONT, LEGEND_PX).into_font())
            .pos(Pos::new(HPos::Center, VPos::Center));
        for (v, label) in labels {
            let y = pixel((0.0, v)).1;
            let (w, h) = label_size(&label, LEGEND_PX);
            let mut candidates = Vec::new();
            for x0 in [
                bounds.2 - 4.0 - w,
                bounds.0 + 4.0,
                (bounds.0 + bounds.2 - w) / 2.0,
                bounds.0 + (bounds.2 - bounds.0) * 0.25 - w / 2.0,
                bounds.0 + (bounds.2 - bounds.0) * 0.75 - w / 2.0,
            ] {
                candidates.push((x0, y - 3.0 - h, x0 + w, y - 3.0));
                candidates.push((x0, y + 3.0, x0 + w, y + 3.0 + h));
            }
            if let Some(rect) = placer.place(candidates) {
                boxed_text(
                    root,
                    [
                        (rect.0.round() as i32, rect.1.round() as i32),
                        (rect.2.round() as i32, rect.3.round() as i32),
                    ],
                    label,
                    (
                        ((rect.0 + rect.2) / 2.0).round() as i32,
                        ((rect.1 + rect.3) / 2.0).round() as i32,
                    ),
                    &text,
                )?;
            }
        }
        if trace.points_s.is_empty() {
            let style = TextStyle::from((FONT, AXIS_TITLE_PX).into_font())
                .color(&SOFT_TEXT)
                .pos(Pos::new(HPos::Center, VPos::Center));
            plot.draw(&Text::new(
                "no momentum samples (empty plan)",
                (x_max / 2.0, (y_min + top) / 2.0),
                style,
            ))?;
        }
        Ok(())
    })
}

/// Test check: every text's baseline lies inside the picture's height, with room for
/// descenders.
#[cfg(test)]
pub(super) fn text_fits(svg: &str) {
    assert_eq!(wend_charts::text_fits(svg), Ok(()));
}

#[cfg(test)]
mod tests {
    use super::*;
    use wend_charts::style::CAUTION_PX;
    use wend_charts::text::{wrap, PAD};

    const TOL: f64 = 1e-12;

    fn close(a: (f64, f64), b: (f64, f64), tol: f64) -> bool {
        (a.0 - b.0).abs() <= tol && (a.1 - b.1).abs() <= tol
    }

    /// Text as the SVG writer escapes it.
    fn escaped(s: &str) -> String {
        s.replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('>', "&gt;")
            .replace('"', "&quot;")
            .replace('\'', "&apos;")
    }

    fn target(id: &str, ra_deg: f64, dec_deg: f64) -> Target {
        Target {
            id: id.into(),
            ra_deg,
            dec_deg,
            duration_s: 600.0,
            instrument: 0,
            priority: crate::DEFAULT_PRIORITY,
            window: None,
            roll_range_deg: None,
        }
    }

    /// The Sun on the ecliptic at longitude `l_deg` (obliquity 23.44°), as (RA, Dec) degrees.
    fn ecliptic_sun(l_deg: f64) -> (f64, f64) {
        let (sl, cl) = l_deg.to_radians().sin_cos();
        let (se, ce) = 23.44_f64.to_radians().sin_cos();
        let ra = (ce * sl).atan2(cl).to_degrees().rem_euclid(360.0);
        let dec = (se * sl).asin().to_degrees();
        (ra, dec)
    }

    /// A deterministic spread of `n` targets over the sphere (uniform in sin Dec), with every
    /// third one unscheduled; the sequence visits the scheduled ones in RA order.
    fn plan(n: usize) -> (Vec<Target>, Vec<bool>, Vec<usize>) {
        let mut state: u64 = 0x2545_f491_4f6c_dd1d;
        let mut next = || {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        let targets: Vec<Target> = (0..n)
            .map(|i| {
                let ra = 360.0 * next();
                let dec = (2.0 * next() - 1.0).asin().to_degrees();
                target(&format!("T{i:04}"), ra, dec)
            })
            .collect();
        let scheduled: Vec<bool> = (0..n).map(|i| i % 3 != 2).collect();
        let mut sequence: Vec<usize> = (0..n).filter(|&i| scheduled[i]).collect();
        sequence.sort_by(|&a, &b| targets[a].ra_deg.total_cmp(&targets[b].ra_deg));
        (targets, scheduled, sequence)
    }

    const CAUTION: &str = "Planning aid only: confirm with the operations team's tools.";

    // Hand values. At (λ, φ) = (0, 0): z = √(1 + 1) = √2, x = 0, y = 0.
    // At the poles φ = ±π/2: cos φ = 0, z = 1, x = 0, y = ±√2.
    // On the equator at λ = ±π: cos(λ/2) = 0, z = 1, x = ±2√2 · sin(±π/2) = ±2√2, y = 0.
    // At λ = π/2, φ = 0: z = √(1 + cos 45°) = √(1 + √2/2), x = 2√2 sin 45° / z = 2 / z
    // = 1.530733729..., y = 0.
    #[test]
    fn hammer_matches_hand_values() {
        assert!(close(hammer(0.0, 0.0), (0.0, 0.0), TOL));
        assert!(close(hammer(0.7, PI / 2.0), (0.0, SQRT_2), TOL));
        assert!(close(hammer(-2.1, -PI / 2.0), (0.0, -SQRT_2), TOL));
        assert!(close(hammer(PI, 0.0), (2.0 * SQRT_2, 0.0), TOL));
        assert!(close(hammer(-PI, 0.0), (-2.0 * SQRT_2, 0.0), TOL));
        let z = (1.0 + SQRT_2 / 2.0).sqrt();
        assert!(close(hammer(PI / 2.0, 0.0), (2.0 / z, 0.0), TOL));
        assert!((2.0 / z - 1.530_733_729).abs() < 1e-9);
    }

    // At λ = ±π: z = 1, x = ±2√2 cos φ, y = √2 sin φ, so x²/8 + y²/2 = cos²φ + sin²φ = 1:
    // the map's edge is the ellipse.
    #[test]
    fn the_edge_of_the_sky_is_the_outline_ellipse() {
        for k in -9..=9 {
            let phi = f64::from(k) * 10.0_f64.to_radians();
            for lambda in [PI, -PI] {
                let (x, y) = hammer(lambda, phi);
                assert!((x * x / 8.0 + y * y / 2.0 - 1.0).abs() < 1e-12, "φ = {phi}");
            }
        }
    }

    // The convention: RA 180° at the centre, RA 0° at the right edge, RA grows to the left.
    #[test]
    fn right_ascension_grows_to_the_left() {
        assert!(close(project(180.0, 0.0), (0.0, 0.0), TOL));
        assert!(close(project(0.0, 0.0), (2.0 * SQRT_2, 0.0), TOL));
        assert!(project(90.0, 0.0).0 > 0.0);
        assert!(project(270.0, 0.0).0 < 0.0);
        assert!(project(100.0, 10.0).0 < project(90.0, 10.0).0);
        // Angles outside [0, 360) wrap.
        assert!(close(project(-90.0, 20.0), project(270.0, 20.0), TOL));
        assert!(close(project(450.0, 20.0), project(90.0, 20.0), TOL));
        assert!(lambda_of(-1e-20) <= PI && lambda_of(-1e-20) > -PI);
    }

    // Equal area: the whole sky (4π on the unit sphere) fills the ellipse of semi-axes 2√2
    // and √2, area π · 2√2 · √2 = 4π, so the constant ratio of map area to sky area is 1.
    // The sky area of a small cell is cos φ dλ dφ; its map area is |det J| dλ dφ, J the
    // Jacobian of (x, y) over (λ, φ). So |det J| / cos φ must be 1 everywhere.
    #[test]
    fn the_projection_is_equal_area() {
        let h = 1e-6;
        for phi_deg in [-80.0, -55.0, -20.0, 0.0, 10.0, 35.0, 60.0, 85.0] {
            for lambda_deg in [-170.0, -90.0, -5.0, 0.0, 45.0, 120.0, 175.0] {
                let (l, p) = (f64::to_radians(lambda_deg), f64::to_radians(phi_deg));
                let d = |a: (f64, f64), b: (f64, f64)| {
                    ((a.0 - b.0) / (2.0 * h), (a.1 - b.1) / (2.0 * h))
                };
                let (xl, yl) = d(hammer(l + h, p), hammer(l - h, p));
                let (xp, yp) = d(hammer(l, p + h), hammer(l, p - h));
                let ratio = (xl * yp - xp * yl).abs() / p.cos();
                assert!(
                    (ratio - 1.0).abs() < 1e-6,
                    "λ {lambda_deg}, φ {phi_deg}: {ratio}"
                );
            }
        }
        // The same by the shoelace formula on a small cell's projected corners, against the
        // cell's sky area dλ (sin φ1 − sin φ0).
        let cell = 0.01_f64;
        for phi_deg in [-70.0, -30.0, 0.0, 25.0, 50.0, 75.0] {
            let (l0, p0) = (0.4, f64::to_radians(phi_deg));
            let (l1, p1) = (l0 + cell, p0 + cell);
            let corners = [
                hammer(l0, p0),
                hammer(l1, p0),
                hammer(l1, p1),
                hammer(l0, p1),
            ];
            let twice: f64 = (0..4)
                .map(|i| {
                    let (a, b) = (corners[i], corners[(i + 1) % 4]);
                    a.0 * b.1 - b.0 * a.1
                })
                .sum();
            let sky = cell * (p1.sin() - p0.sin());
            let ratio = twice.abs() / 2.0 / sky;
            assert!((ratio - 1.0).abs() < 1e-4, "φ {phi_deg}: {ratio}");
        }
    }

    /// The zone of the cell holding (ra, dec) in a grid.
    fn zone_at(grid: &[Vec<Zone>], ra: f64, dec: f64) -> Zone {
        let row = ((dec + 90.0) / CELL_DEG) as usize;
        let col = (ra / CELL_DEG) as usize;
        grid[row][col]
    }

    #[test]
    fn cells_are_forbidden_outside_the_band() {
        let band = (97.0, 153.0);
        let grid = zone_grid(&[unit_vector(0.0, 0.0)], band);
        // Beside the Sun: elongation about 2° < 97.
        assert_eq!(zone_at(&grid, 1.0, 1.0), Zone::Always);
        // A third of a turn away: about 120°, inside the band.
        assert_eq!(zone_at(&grid, 120.5, 0.5), Zone::Allowed);
        assert_eq!(zone_at(&grid, 240.5, 0.5), Zone::Allowed);
        // A quarter turn away: about 91.5° < 97.
        assert_eq!(zone_at(&grid, 90.5, 0.5), Zone::Always);
        // Opposite the Sun: about 178.5° > 153.
        assert_eq!(zone_at(&grid, 178.5, 0.5), Zone::Always);
        // Near the pole: about 88.5° from the Sun, below the band.
        assert_eq!(zone_at(&grid, 200.0, 89.0), Zone::Always);

        // The Sun moves from RA 0° to RA 90° on the equator.
        let suns = [unit_vector(0.0, 0.0), unit_vector(90.0, 0.0)];
        let grid = zone_grid(&suns, band);
        // 45° from both Suns: forbidden throughout.
        assert_eq!(zone_at(&grid, 45.5, 0.5), Zone::Always);
        // 159.5° from the first (beyond the band), 110.5° from the second (inside).
        assert_eq!(zone_at(&grid, 200.5, 0.5), Zone::Sometimes);
        // 120.5° from the first (inside), 30.5° from the second.
        assert_eq!(zone_at(&grid, 120.5, 0.5), Zone::Sometimes);
        // 178.5° from the first, 88.5° from the second: outside both times.
        assert_eq!(zone_at(&grid, 178.5, 0.5), Zone::Always);
        // About 135° from both: inside throughout.
        assert_eq!(zone_at(&grid, 225.5, 0.5), Zone::Allowed);
    }

    #[test]
    fn zone_shapes_cover_their_runs_and_skip_allowed_cells() {
        let mut grid = vec![vec![Zone::Allowed; CELLS_RA]; CELLS_DEC];
        for cell in &mut grid[30][10..20] {
            *cell = Zone::Sometimes;
        }
        grid[30][20] = Zone::Always;
        let shapes = zone_shapes(&grid);
        assert_eq!(shapes.len(), 2);
        assert_eq!(shapes[0].zone, Zone::Sometimes);
        // 10 cells: 11 corners along the top edge and 11 along the bottom.
        assert_eq!(shapes[0].outline.len(), 22);
        // Its first corner is RA 30°, just above Dec 3°.
        assert!(close(
            shapes[0].outline[0],
            grid_point(30.0, 3.0 + CELL_OVERLAP_DEG),
            1e-12
        ));
        assert_eq!(shapes[1].zone, Zone::Always);
    }

    #[test]
    fn paths_break_where_they_cross_the_edge() {
        // RA 350° → 10° crosses the edge at RA 0°, half-way: Dec 1.5°; 10° → 40° does not.
        let pieces = map_pieces([(340.0, 0.0), (350.0, 1.0), (10.0, 2.0), (40.0, 3.0)]);
        assert_eq!(pieces.len(), 2);
        assert_eq!(pieces[0].len(), 3);
        assert_eq!(pieces[1].len(), 3);
        // The first piece ends on the left edge (RA 360°), the second starts on the right
        // edge (RA 0°), both at Dec 1.5°.
        assert!(close(pieces[0][2], grid_point(360.0, 1.5), 1e-12));
        assert!(close(pieces[1][0], grid_point(0.0, 1.5), 1e-12));
        // The other way round: 5° → 345°, a quarter of the way: Dec 10 + (−10) / 4 = 7.5.
        let pieces = map_pieces([(5.0, 10.0), (345.0, 0.0)]);
        assert!(close(pieces[0][1], grid_point(0.0, 7.5), 1e-12));
        assert!(close(pieces[1][0], grid_point(360.0, 7.5), 1e-12));
        // 170° → 190° crosses the centre, not the edge.
        assert_eq!(map_pieces([(170.0, 0.0), (190.0, 0.0)]).len(), 1);
    }

    #[test]
    fn slews_follow_great_circles() {
        // Along the equator from RA 0° to 90°: 45 steps of 2°, Dec 0 throughout.
        let arc = great_circle((0.0, 0.0), (90.0, 0.0));
        assert_eq!(arc.len(), 46);
        for (k, &(ra, dec)) in arc.iter().enumerate() {
            assert!(
                (ra - 2.0 * k as f64).abs() < 1e-9 && dec.abs() < 1e-9,
                "{k}: {ra}, {dec}"
            );
        }
        // From (10°, +60°) to (190°, +60°): 60° apart, the shortest way runs over the pole
        // (a straight line in RA and Dec would stay at +60°).
        let arc = great_circle((10.0, 60.0), (190.0, 60.0));
        let top = arc.iter().map(|p| p.1).fold(f64::MIN, f64::max);
        assert!(top > 89.99, "{top}");
        assert_eq!(arc.len(), 31);
        // Neighbouring samples at most 2° apart.
        for pair in arc.windows(2) {
            let d = separation_deg(
                &unit_vector(pair[0].0, pair[0].1),
                &unit_vector(pair[1].0, pair[1].1),
            );
            assert!(d <= 2.0 + 1e-9, "{d}");
        }
        // Opposite points: through the north pole (a quarter turn from both).
        let arc = great_circle((0.0, 0.0), (180.0, 0.0));
        let top = arc.iter().map(|p| p.1).fold(f64::MIN, f64::max);
        assert!((top - 90.0).abs() < 1e-6, "{top}");
        // The same point twice: both ends, nothing else.
        assert_eq!(great_circle((5.0, 5.0), (5.0, 5.0)).len(), 2);
        // A sequence's path joins its arcs without repeating the shared ends.
        let path = sequence_path(&[(0.0, 0.0), (10.0, 0.0), (20.0, 0.0)]);
        assert_eq!(path.len(), 11);
        assert_eq!(sequence_path(&[(3.0, 4.0)]), vec![(3.0, 4.0)]);
        assert!(sequence_path(&[]).is_empty());
    }

    #[test]
    fn thinning_keeps_the_ends_and_drops_near_repeats() {
        let path: Vec<(f64, f64)> = (0..=100).map(|k| (f64::from(k) * 0.1, 0.0)).collect();
        let thin = thin_path(&path, 0.5);
        assert_eq!(thin.first(), Some(&(0.0, 0.0)));
        assert_eq!(thin.last(), Some(&(10.0, 0.0)));
        // Kept points are 0.5° or 0.6° apart (0.1° steps, rounding), but the last.
        for pair in thin[..thin.len() - 1].windows(2) {
            let d = pair[1].0 - pair[0].0;
            assert!(d > 0.45 && d < 0.65, "{pair:?}");
        }
        assert!(thin.len() >= 17 && thin.len() <= 22, "{}", thin.len());
        assert_eq!(thin_path(&[(5.0, 5.0)], 0.5), vec![(5.0, 5.0)]);
    }

    fn sky_map<'a>(
        title: &'a str,
        targets: &'a [Target],
        scheduled: &'a [bool],
        sequence: &'a [usize],
        sun: &'a [(f64, f64)],
        caution: &'a str,
    ) -> SkyMap<'a> {
        SkyMap {
            title,
            targets,
            scheduled,
            sequence,
            sun_path_deg: sun,
            band_deg: (102.0, 148.0),
            caution,
        }
    }

    #[test]
    fn sky_map_is_written_with_title_caution_and_sun() {
        let dir = tempfile::tempdir().unwrap();
        let (targets, scheduled, sequence) = plan(80);
        let sun: Vec<(f64, f64)> = (0..30)
            .map(|d| ecliptic_sun(100.0 + f64::from(d)))
            .collect();
        let title = "Sky plan <test> & check";
        let map = sky_map(title, &targets, &scheduled, &sequence, &sun, CAUTION);
        let path = dir.path().join("sky.svg");
        write_sky_map(&path, &map).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        assert!(svg.starts_with("<svg"));
        assert!(svg.contains(&escaped(title)));
        assert!(svg.contains(&escaped(CAUTION)));
        assert!(svg.contains("Sun, start") && svg.contains("Sun, end"));
        // Both zone tones and the start and end markers are there.
        assert!(svg.contains("#969696") && svg.contains("#DEDEDE"));
        assert!(svg.contains("#009E73") && svg.contains("#D55E00"));
        // Labels never overlap; the first and the last place of the order are numbered.
        assert!(no_label_overlaps(&svg) > 10);
        let bold = bold_texts(&svg);
        assert!(bold.contains(&"1".to_string()), "{bold:?}");
        assert!(bold.contains(&sequence.len().to_string()), "{bold:?}");
        text_fits(&svg);
    }

    #[test]
    fn a_long_caution_wraps_and_stays_inside() {
        let dir = tempfile::tempdir().unwrap();
        let caution = "Caution: plans are planning proposals to be confirmed by the \
                       operations team's validated flight-dynamics and constraint-checking \
                       tools. Spacecraft operations can damage hardware; nothing here is a \
                       command to a spacecraft.";
        let sun = [(10.0, 4.0)];
        let map = sky_map("t", &[], &[], &[], &sun, caution);
        let path = dir.path().join("sky.svg");
        write_sky_map(&path, &map).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        let lines = wrap(caution, CAUTION_PX, SKY_W - 2 * PAD as u32);
        assert!(lines.len() >= 2);
        for line in &lines {
            assert!(svg.contains(&escaped(line)), "missing {line}");
        }
        // One Sun position: one marker, labelled "Sun".
        assert!(svg.contains(">\nSun\n<"), "no plain Sun label");
        text_fits(&svg);

        let trace = MomentumTrace {
            title: "t",
            start: march_first(),
            points_s: &[],
            components_nms: &[],
            limit_nms: 10.0,
            threshold_nms: 9.0,
            dumps_s: &[],
            caution,
        };
        let path = dir.path().join("h.svg");
        write_momentum_chart(&path, &trace).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        let lines = wrap(caution, CAUTION_PX, MOMENTUM_W - 2 * PAD as u32);
        for line in &lines {
            assert!(svg.contains(&escaped(line)), "missing {line}");
        }
        assert!(svg.contains("no momentum samples"));
        text_fits(&svg);
    }

    #[test]
    fn a_large_plan_stays_small() {
        let dir = tempfile::tempdir().unwrap();
        let (targets, scheduled, sequence) = plan(5000);
        let sun: Vec<(f64, f64)> = (0..=3650)
            .map(|k| ecliptic_sun(f64::from(k) * 0.1))
            .collect();
        let map = sky_map("A year", &targets, &scheduled, &sequence, &sun, CAUTION);
        let path = dir.path().join("sky.svg");
        write_sky_map(&path, &map).unwrap();
        let bytes = std::fs::metadata(&path).unwrap().len();
        assert!(bytes < 1_500_000, "{bytes} bytes");
        let svg = std::fs::read_to_string(&path).unwrap();
        no_label_overlaps(&svg);
    }

    /// 2027-03-01T00:00:00Z.
    fn march_first() -> Epoch {
        Epoch::from_unix_seconds(1_803_859_200.0).unwrap()
    }

    /// The points of every SVG element of `tag` whose attributes hold `needle`.
    fn element_points(svg: &str, tag: &str, needle: &str) -> Vec<Vec<(f64, f64)>> {
        svg.split(&format!("<{tag}"))
            .skip(1)
            .map(|e| e.split('>').next().unwrap_or(""))
            .filter(|e| e.contains(needle))
            .map(|e| {
                let pts = e.split("points=\"").nth(1).unwrap_or("");
                let pts = pts.split('"').next().unwrap_or("");
                pts.split_whitespace()
                    .filter_map(|p| {
                        let (x, y) = p.split_once(',')?;
                        Some((x.parse().ok()?, y.parse().ok()?))
                    })
                    .collect()
            })
            .collect()
    }

    /// The contents of the SVG's bold texts, in order.
    fn bold_texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter(|t| {
                t.split('>')
                    .next()
                    .unwrap_or("")
                    .contains("font-weight=\"bold\"")
            })
            .filter_map(|t| {
                t.split_once('>').map(|(_, rest)| {
                    rest.split("</text>")
                        .next()
                        .unwrap_or("")
                        .trim()
                        .to_string()
                })
            })
            .collect()
    }

    /// The pale label boxes of an SVG: (x0, y0, x1, y1).
    fn label_boxes(svg: &str) -> Vec<(f64, f64, f64, f64)> {
        let attr = |e: &str, name: &str| -> f64 {
            e.split(&format!(" {name}=\""))
                .nth(1)
                .and_then(|v| v.split('"').next())
                .and_then(|v| v.parse().ok())
                .unwrap_or(f64::NAN)
        };
        svg.split("<rect")
            .skip(1)
            .map(|e| e.split('>').next().unwrap_or(""))
            .filter(|e| e.contains("opacity=\"0.8\"") && e.contains("fill=\"#FFFFFF\""))
            .map(|e| {
                let (x, y) = (attr(e, "x"), attr(e, "y"));
                (x, y, x + attr(e, "width"), y + attr(e, "height"))
            })
            .collect()
    }

    /// No two label boxes of `svg` share area.
    pub(crate) fn no_label_overlaps(svg: &str) -> usize {
        let boxes = label_boxes(svg);
        for (i, a) in boxes.iter().enumerate() {
            for b in &boxes[i + 1..] {
                assert!(
                    !crate::place::overlaps(a, b),
                    "labels overlap: {a:?} and {b:?}"
                );
            }
        }
        boxes.len()
    }

    #[test]
    fn momentum_chart_is_written_with_its_lines_and_dumps() {
        let dir = tempfile::tempdir().unwrap();
        let h = 3600.0;
        let points = [
            (0.0, 0.0),
            (10.0 * h, 150.0),
            (20.0 * h, 240.0),
            (20.0 * h, 0.0),
            (35.0 * h, 200.0),
            (48.0 * h, 240.0),
            (48.0 * h, 0.0),
            (60.0 * h, 90.0),
        ];
        let title = "Momentum over the plan";
        let trace = MomentumTrace {
            title,
            start: march_first(),
            points_s: &points,
            components_nms: &[],
            limit_nms: 300.0,
            threshold_nms: 240.0,
            dumps_s: &[20.0 * h, 48.0 * h],
            caution: CAUTION,
        };
        let path = dir.path().join("h.svg");
        write_momentum_chart(&path, &trace).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        assert!(svg.contains(title));
        assert!(svg.contains(&escaped(CAUTION)));
        // 60 hours from 1 March 00:00: 2 and 3 March at midnight on the axis.
        assert!(svg.contains("time, UTC (2027-03-01 00:00 to 2027-03-03 12:00)"));
        assert!(svg.contains(">\n2 Mar\n<") && svg.contains(">\n3 Mar\n<"));
        assert!(svg.contains("stored momentum |H| (N·m·s)"));
        assert!(svg.contains("wheel limit, 300 N·m·s"));
        assert!(svg.contains("planning threshold, 240 N·m·s"));
        let legend: Vec<String> = momentum_legend(&trace)
            .into_iter()
            .map(|e| e.label)
            .collect();
        assert!(legend.contains(&"2 momentum dumps (marked above the lines)".to_string()));
        // The dump markers (purple triangles left of the legend) lie wholly above the limit
        // line (the long vermillion line): smaller y in the picture.
        let chart_right = f64::from(MOMENTUM_W - MOMENTUM_LEGEND_W);
        let marks: Vec<Vec<(f64, f64)>> = element_points(&svg, "polygon", "#CC79A7")
            .into_iter()
            .filter(|m| m.iter().all(|p| p.0 < chart_right))
            .collect();
        assert_eq!(marks.len(), 2);
        let limit_y = element_points(&svg, "polyline", "#D55E00")
            .into_iter()
            .filter(|l| l.len() == 2 && (l[1].0 - l[0].0).abs() > 200.0)
            .map(|l| l[0].1)
            .next()
            .unwrap();
        for m in &marks {
            assert!(m.iter().all(|p| p.1 < limit_y - 2.0), "{m:?} vs {limit_y}");
        }
        no_label_overlaps(&svg);
        text_fits(&svg);

        // With the three components, some negative, the axis goes below 0.
        let comps: Vec<[f64; 3]> = points
            .iter()
            .map(|&(_, h)| [0.6 * h, -0.8 * h, 0.0])
            .collect();
        let with = MomentumTrace {
            components_nms: &comps,
            ..trace
        };
        let r = check_momentum(&with).unwrap();
        // Lowest component −0.8 × 240 = −192, with a tenth more room: −211.2.
        assert!((r.y_min + 211.2).abs() < 1e-9, "{r:?}");
        write_momentum_chart(&path, &with).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        assert!(svg.contains("component Hy"));
        no_label_overlaps(&svg);
    }

    #[test]
    fn momentum_ranges_cover_limit_samples_and_dumps() {
        let trace = |points: &'static [(f64, f64)], dumps: &'static [f64]| MomentumTrace {
            title: "",
            start: march_first(),
            points_s: points,
            components_nms: &[],
            limit_nms: 100.0,
            threshold_nms: 80.0,
            dumps_s: dumps,
            caution: CAUTION,
        };
        // Top 100 (the limit); the strip adds 0.12 / 0.88 of it: 113.6363...
        let r = check_momentum(&trace(&[(0.0, 10.0), (5.0, 50.0)], &[])).unwrap();
        assert!((r.x_max - 5.0).abs() < TOL && (r.top - 100.0).abs() < 1e-9);
        assert!((r.y_max - 113.636_363_636_363_6).abs() < 1e-9, "{r:?}");
        assert_eq!(r.y_min, 0.0);
        let r = check_momentum(&trace(&[(0.0, 10.0), (5.0, 150.0)], &[7.0])).unwrap();
        // Top 150: 150 + 150 × 0.12 / 0.88 = 170.4545...
        assert!((r.x_max - 7.0).abs() < TOL && (r.y_max - 170.454_545_454_545_4).abs() < 1e-9);
        // A single sample at the start still gets an hour.
        let r = check_momentum(&trace(&[(0.0, 10.0)], &[])).unwrap();
        assert_eq!(r.x_max, 3600.0);
        let r = check_momentum(&trace(&[], &[])).unwrap();
        assert!(r.x_max > 0.0 && r.y_max > 0.0);
    }

    /// `result` is an input error, and nothing was written at `path`.
    fn refused(result: Result<(), DrawError>, path: &Path, needle: &str) {
        match result {
            Err(DrawError::Input { message, .. }) => {
                assert!(message.contains(needle), "{message:?} lacks {needle:?}")
            }
            other => panic!("expected an input error, got {other:?}"),
        }
        assert!(!path.exists());
    }

    #[test]
    fn bad_sky_input_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("sky.svg");
        let good = vec![target("a", 10.0, 20.0), target("b", 200.0, -40.0)];
        let sun = [(0.0, 0.0)];
        let sched = [true, false];
        let go = |m: &SkyMap| write_sky_map(&path, m);

        let mut bad = good.clone();
        bad[1].ra_deg = f64::NAN;
        refused(
            go(&sky_map("", &bad, &sched, &[0], &sun, CAUTION)),
            &path,
            "\"b\"",
        );
        bad[1].ra_deg = 3.0;
        bad[1].dec_deg = 91.0;
        refused(
            go(&sky_map("", &bad, &sched, &[0], &sun, CAUTION)),
            &path,
            "declination",
        );
        bad[1].dec_deg = f64::INFINITY;
        refused(
            go(&sky_map("", &bad, &sched, &[0], &sun, CAUTION)),
            &path,
            "declination",
        );

        refused(
            go(&sky_map("", &good, &[true], &[0], &sun, CAUTION)),
            &path,
            "flags",
        );
        refused(
            go(&sky_map("", &good, &sched, &[0, 2], &sun, CAUTION)),
            &path,
            "index 2",
        );
        refused(
            go(&sky_map("", &good, &sched, &[0, 1], &sun, CAUTION)),
            &path,
            "scheduled",
        );
        refused(
            go(&sky_map("", &good, &sched, &[0], &[], CAUTION)),
            &path,
            "Sun",
        );
        refused(
            go(&sky_map(
                "",
                &good,
                &sched,
                &[0],
                &[(f64::NAN, 0.0)],
                CAUTION,
            )),
            &path,
            "Sun path point 0",
        );
        refused(
            go(&sky_map("", &good, &sched, &[0], &sun, "  ")),
            &path,
            "caution",
        );
        for band in [(153.0, 97.0), (-1.0, 90.0), (97.0, 181.0), (f64::NAN, 90.0)] {
            let mut m = sky_map("", &good, &sched, &[0], &sun, CAUTION);
            m.band_deg = band;
            refused(go(&m), &path, "band");
        }

        // An empty plan is drawn.
        write_sky_map(&path, &sky_map("empty", &[], &[], &[], &sun, CAUTION)).unwrap();
        assert!(path.exists());
        // A file that cannot be written is a write error.
        let nowhere = dir.path().join("missing").join("sky.svg");
        let m = sky_map("", &good, &sched, &[0], &sun, CAUTION);
        assert!(matches!(
            write_sky_map(&nowhere, &m),
            Err(DrawError::Write { .. })
        ));
    }

    #[test]
    fn bad_momentum_input_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("h.svg");
        let ok = MomentumTrace {
            title: "",
            start: march_first(),
            points_s: &[(0.0, 1.0), (2.0, 3.0)],
            components_nms: &[],
            limit_nms: 10.0,
            threshold_nms: 9.0,
            dumps_s: &[1.0],
            caution: CAUTION,
        };
        let go = |t: &MomentumTrace| write_momentum_chart(&path, t);
        let with_points = |points_s| MomentumTrace { points_s, ..ok };
        refused(go(&with_points(&[(f64::NAN, 1.0)])), &path, "sample 0");
        refused(
            go(&with_points(&[(0.0, 1.0), (1.0, f64::INFINITY)])),
            &path,
            "sample 1",
        );
        refused(go(&with_points(&[(0.0, -1.0)])), &path, "sample 0");
        refused(go(&with_points(&[(-1.0, 1.0)])), &path, "sample 0");
        refused(
            go(&with_points(&[(2.0, 1.0), (1.0, 1.0)])),
            &path,
            "time order",
        );
        refused(
            go(&MomentumTrace {
                limit_nms: 0.0,
                ..ok
            }),
            &path,
            "limit",
        );
        refused(
            go(&MomentumTrace {
                limit_nms: f64::NAN,
                ..ok
            }),
            &path,
            "limit",
        );
        refused(
            go(&MomentumTrace {
                threshold_nms: -1.0,
                ..ok
            }),
            &path,
            "threshold",
        );
        refused(
            go(&MomentumTrace {
                dumps_s: &[f64::NAN],
                ..ok
            }),
            &path,
            "dump 0",
        );
        refused(
            go(&MomentumTrace {
                components_nms: &[[1.0, 0.0, 0.0]],
                ..ok
            }),
            &path,
            "1 momentum components for 2 samples",
        );
        refused(
            go(&MomentumTrace {
                components_nms: &[[1.0, 0.0, 0.0], [f64::NAN, 0.0, 0.0]],
                ..ok
            }),
            &path,
            "components of sample 1",
        );
        refused(go(&MomentumTrace { caution: "", ..ok }), &path, "caution");
        refused(go(&with_points(&[(0.0, f64::MAX)])), &path, "too large");

        go(&ok).unwrap();
        let nowhere = dir.path().join("missing").join("h.svg");
        assert!(matches!(
            write_momentum_chart(&nowhere, &ok),
            Err(DrawError::Write { .. })
        ));
    }
}
