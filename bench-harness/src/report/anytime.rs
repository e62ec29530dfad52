//! The anytime curve: how close to the optimum each method is after a given time.
//!
//! A run's trace lists every new best tour with the time it was found, so its best gap so far is
//! a step function of time. Each method's curve is the mean of its runs' step functions, sampled
//! at log-spaced times. A run enters the mean at its first tour (before that it has no gap to
//! average, and counting it as anything would invent one) and leaves after its own end, the later
//! of its time limit and its wall-clock time, so runs under a shorter limit do not stand still in
//! the mean of longer ones. The mean can therefore rise where a run that was slow to find its
//! first tour joins. Runs without a known optimum or without a trace are left out.

use super::style;
use super::{gap_percent, ReportError};
use crate::record::RunRecord;
use plotters::prelude::*;
use std::collections::BTreeMap;
use std::path::Path;
use wend_charts::legend::{Key, LegendEntry};
use wend_charts::style::{AXIS_TITLE_PX, FONT, TICK_PX, TITLE_PX};
use wend_charts::{log_ticks, number_label, seconds_label, Area, Colours, DrawResult};

/// File name of the figure.
pub const FILE: &str = "gap-vs-time.svg";
/// Sample times per curve.
pub const SAMPLES: usize = 60;

/// The smallest value among the steps at or before `t`, or None when there is none yet.
///
/// `steps` are `(time, value)` in any order; the minimum rather than the latest value is taken
/// because the step function is *best* so far, whatever order a trace was written in.
pub fn best_so_far(steps: &[(f64, f64)], t: f64) -> Option<f64> {
    steps
        .iter()
        .filter(|(s, v)| *s <= t && v.is_finite())
        .map(|(_, v)| *v)
        .min_by(f64::total_cmp)
}

/// `count` times from `from` to `to`, both included, evenly spaced on a log scale.
pub fn log_times(from: f64, to: f64, count: usize) -> Vec<f64> {
    match count {
        0 => Vec::new(),
        1 => vec![from],
        n => (0..n)
            .map(|i| {
                if i == n - 1 {
                    // Exact, so the last sample is not a rounding error short of the limit.
                    to
                } else {
                    from * (to / from).powf(i as f64 / (n - 1) as f64)
                }
            })
            .collect(),
    }
}

/// A run's trace as `(seconds, gap %)` steps, its end time, or None when it has no known
/// optimum or no usable trace.
fn gap_steps(run: &RunRecord) -> Option<(Vec<(f64, f64)>, f64)> {
    gap_percent(run)?;
    let o = run.optimum? as f64;
    let steps: Vec<(f64, f64)> = run
        .trace
        .iter()
        .filter(|(t, _)| t.is_finite())
        .map(|&(t, l)| (t.max(0.0), 100.0 * (l as f64 - o) / o))
        .filter(|(_, g)| g.is_finite())
        .collect();
    if steps.is_empty() {
        return None;
    }
    let end = [run.time_limit, run.seconds]
        .into_iter()
        .filter(|v| v.is_finite())
        .fold(f64::NEG_INFINITY, f64::max);
    let end = if end.is_finite() { end } else { f64::INFINITY };
    Some((steps, end))
}

/// Mean best-so-far gap at time `t` of the runs that have a tour by then and have not ended, with
/// how many runs that is; None when there are none.
pub fn mean_gap_at(runs: &[&RunRecord], t: f64) -> Option<(f64, usize)> {
    let mut sum = 0.0;
    let mut n = 0;
    for r in runs {
        let Some((steps, end)) = gap_steps(r) else {
            continue;
        };
        if t > end * (1.0 + 1e-9) {
            continue;
        }
        if let Some(g) = best_so_far(&steps, t) {
            sum += g;
            n += 1;
        }
    }
    (n > 0).then(|| (sum / n as f64, n))
}

/// One method's curve.
#[derive(Clone, Debug, PartialEq)]
pub struct AnytimeCurve {
    /// Method.
    pub method: String,
    /// Runs the curve is made of (those with an optimum and a trace).
    pub runs: usize,
    /// The samples, time increasing.
    pub points: Vec<CurvePoint>,
}

/// One sample of a curve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CurvePoint {
    /// Seconds since the start of the runs.
    pub seconds: f64,
    /// Mean best-so-far gap, percent; None where no run had a tour yet.
    pub mean_gap: Option<f64>,
    /// Runs in the mean.
    pub runs: usize,
}

/// The curves of every method that has a run with an optimum and a trace, sampled at `samples`
/// log-spaced times from the earliest positive trace time to the largest time limit.
pub fn anytime_curves(runs: &[RunRecord], samples: usize) -> Vec<AnytimeCurve> {
    let mut by_method: BTreeMap<&str, Vec<&RunRecord>> = BTreeMap::new();
    for r in runs.iter().filter(|r| gap_steps(r).is_some()) {
        by_method.entry(&r.method).or_default().push(r);
    }
    let Some((from, to)) = time_span(by_method.values().flatten().copied()) else {
        return Vec::new();
    };
    let times = log_times(from, to, samples);
    by_method
        .into_iter()
        .map(|(m, rs)| AnytimeCurve {
            method: m.to_string(),
            runs: rs.len(),
            points: times
                .iter()
                .map(|&t| {
                    let mean = mean_gap_at(&rs, t);
                    CurvePoint {
                        seconds: t,
                        mean_gap: mean.map(|m| m.0),
                        runs: mean.map_or(0, |m| m.1),
                    }
                })
                .collect(),
        })
        .collect()
}

/// From the earliest positive trace time to the largest time limit; a decade wide when those
/// do not make a range, since a log axis needs one.
fn time_span<'a>(runs: impl Iterator<Item = &'a RunRecord>) -> Option<(f64, f64)> {
    let mut from = f64::INFINITY;
    let mut to = f64::NEG_INFINITY;
    let mut any = false;
    for r in runs {
        any = true;
        for &(t, _) in &r.trace {
            if t.is_finite() && t > 0.0 {
                from = from.min(t);
            }
        }
        if r.time_limit.is_finite() && r.time_limit > 0.0 {
            to = to.max(r.time_limit);
        }
    }
    if !any {
        return None;
    }
    if !from.is_finite() {
        // Every tour was found at time 0: start a decade below the end.
        from = if to.is_finite() { to / 10.0 } else { 1e-3 };
    }
    if !to.is_finite() || to <= from {
        to = from * 10.0;
    }
    Some((from, to))
}

/// Draws the curves into `path`.
pub(crate) fn write_plot(
    runs: &[RunRecord],
    path: &Path,
    colours: &Colours,
) -> Result<(), ReportError> {
    let curves = anytime_curves(runs, SAMPLES);
    let drawn: Vec<(&AnytimeCurve, Vec<Piece>)> = curves.iter().map(|c| (c, pieces(c))).collect();
    let any_partial = drawn.iter().flat_map(|d| &d.1).any(|p| match p {
        Piece::Full(_) => false,
        Piece::Partial(_) => true,
        Piece::Lone(_, all) => !all,
    });
    let mut legend: Vec<LegendEntry<Key>> = curves
        .iter()
        .map(|c| LegendEntry {
            label: format!(
                "{} ({} run{})",
                c.method,
                c.runs,
                if c.runs == 1 { "" } else { "s" }
            ),
            key: Key::Line(colours.of(&c.method), 3),
        })
        .collect();
    if any_partial {
        legend.push(LegendEntry {
            label: "dashed: mean over\nonly some of the runs".into(),
            key: Key::Dashed {
                colour: RGBColor(90, 90, 90),
                width: 1,
                dash: 6,
                gap: 4,
            },
        });
    }
    let values: Vec<f64> = curves
        .iter()
        .flat_map(|c| c.points.iter().filter_map(|p| p.mean_gap))
        .collect();
    let title = "Mean gap to the optimum over time";
    let missing = values.is_empty().then_some((
        title,
        "No run has both a known optimum and a trace of its tours.",
    ));
    style::write_chart(path, &legend, missing, |plot| {
        draw(plot, title, &drawn, &values, colours)
    })
}

fn draw(
    root: &Area,
    title: &str,
    drawn: &[(&AnytimeCurve, Vec<Piece>)],
    values: &[f64],
    colours: &Colours,
) -> DrawResult<()> {
    let times: Vec<f64> = drawn
        .iter()
        .flat_map(|c| c.0.points.iter().map(|p| p.seconds))
        .collect();
    let t0 = times.iter().copied().fold(f64::INFINITY, f64::min);
    let t1 = times.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let lo = values.iter().copied().fold(0.0, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    // All gaps equal (typically all zero) would leave no range at all.
    let span = if hi - lo > 1e-9 { hi - lo } else { 1.0 };
    // A little room below the lowest value, so a curve at 0 is not hidden in the x axis.
    let (y0, y1) = (lo - span * 0.03, lo + span * 1.05);

    let mut chart = ChartBuilder::on(root)
        .caption(title, (FONT, TITLE_PX))
        .margin(18)
        .x_label_area_size(56)
        .y_label_area_size(76)
        .build_cartesian_2d(
            (t0..t1).log_scale().with_key_points(log_ticks(t0, t1)),
            y0..y1,
        )?;
    chart
        .configure_mesh()
        .x_desc("time (seconds, log scale)")
        .y_desc("mean gap to optimum (%)")
        .axis_desc_style((FONT, AXIS_TITLE_PX))
        .label_style((FONT, TICK_PX))
        .x_label_formatter(&|v| seconds_label(*v))
        .y_label_formatter(&|v| number_label(*v, span))
        .bold_line_style(RGBColor(225, 225, 225))
        .light_line_style(RGBColor(245, 245, 245))
        .draw()?;

    for (c, pieces) in drawn {
        let colour = colours.of(&c.method);
        let full = colour.stroke_width(3);
        let partial = colour.stroke_width(1);
        for piece in pieces {
            match piece {
                Piece::Full(line) => {
                    chart.draw_series(LineSeries::new(line.iter().copied(), full))?;
                }
                Piece::Partial(line) => {
                    chart.draw_series(DashedLineSeries::new(
                        line.iter().copied(),
                        6,
                        4,
                        partial,
                    ))?;
                }
                Piece::Lone(p, all) => {
                    let style = if *all { colour.filled() } else { partial };
                    chart.draw_series(std::iter::once(Circle::new(*p, 4, style)))?;
                }
            }
        }
    }
    Ok(())
}

/// A stretch of a curve as drawn.
#[derive(Debug, PartialEq)]
enum Piece {
    /// Every run of the method is in the mean along it.
    Full(Vec<(f64, f64)>),
    /// Somewhere along it some runs have no tour yet or have ended: the mean is over fewer runs.
    Partial(Vec<(f64, f64)>),
    /// A defined sample between undefined ones, and whether every run is in it.
    Lone((f64, f64), bool),
}

/// Splits a curve into the stretches drawn alike. A stretch between two samples is full when
/// both ends are over every run; consecutive stretches share their end points, so the line has
/// no breaks where it changes style.
fn pieces(c: &AnytimeCurve) -> Vec<Piece> {
    let mut out = Vec::new();
    let mut current: Option<(bool, Vec<(f64, f64)>)> = None;
    let p = &c.points;
    let xy = |q: &CurvePoint| q.mean_gap.map(|g| (q.seconds, g));
    for i in 0..p.len() {
        let Some(a) = xy(&p[i]) else {
            continue;
        };
        let next = p.get(i + 1).and_then(|q| xy(q).map(|b| (q, b)));
        match next {
            Some((q, b)) => {
                let full = p[i].runs == c.runs && q.runs == c.runs;
                match current.as_mut() {
                    Some((f, line)) if *f == full => line.push(b),
                    _ => {
                        if let Some(done) = current.take() {
                            out.push(piece(done));
                        }
                        current = Some((full, vec![a, b]));
                    }
                }
            }
            None => {
                if let Some(done) = current.take() {
                    out.push(piece(done));
                } else {
                    out.push(Piece::Lone(a, p[i].runs == c.runs));
                }
            }
        }
    }
    if let Some(done) = current.take() {
        out.push(piece(done));
    }
    out
}

fn piece((full, line): (bool, Vec<(f64, f64)>)) -> Piece {
    if full {
        Piece::Full(line)
    } else {
        Piece::Partial(line)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::sample;

    #[test]
    fn step_function_is_sampled_by_hand() {
        // Gaps 10 % from 0.1 s, 5 % from 0.5 s, 0 % from 2 s.
        let steps = [(0.1, 10.0), (0.5, 5.0), (2.0, 0.0)];
        let at = |t| best_so_far(&steps, t);
        assert_eq!(at(0.05), None);
        assert_eq!(at(0.1), Some(10.0));
        assert_eq!(at(0.3), Some(10.0));
        assert_eq!(at(0.5), Some(5.0));
        assert_eq!(at(1.99), Some(5.0));
        assert_eq!(at(2.0), Some(0.0));
        assert_eq!(at(100.0), Some(0.0));
        // Order of the trace does not matter.
        let shuffled = [(2.0, 0.0), (0.1, 10.0), (0.5, 5.0)];
        assert_eq!(best_so_far(&shuffled, 0.7), Some(5.0));
    }

    #[test]
    fn the_mean_leaves_out_runs_without_a_tour_yet() {
        // Optimum 1000. Run a: 1100 at 0.1 s, 1020 at 1 s. Run b: 1040 at 0.5 s.
        let mut a = sample("i", "m", 1, 1020);
        a.trace = vec![(0.1, 1100), (1.0, 1020)];
        let mut b = sample("i", "m", 2, 1040);
        b.trace = vec![(0.5, 1040)];
        let runs = [&a, &b];
        assert_eq!(mean_gap_at(&runs, 0.05), None);
        // Only a: 10 %.
        assert_eq!(mean_gap_at(&runs, 0.2), Some((10.0, 1)));
        // a 10 %, b 4 %: 7 %.
        let (g, n) = mean_gap_at(&runs, 0.5).unwrap();
        assert!((g - 7.0).abs() < 1e-9 && n == 2);
        // a 2 %, b 4 %: 3 %.
        let (g, n) = mean_gap_at(&runs, 1.0).unwrap();
        assert!((g - 3.0).abs() < 1e-9 && n == 2);
        // Both runs ended at their 1 s limit.
        assert_eq!(mean_gap_at(&runs, 1.5), None);
    }

    #[test]
    fn times_are_log_spaced_between_the_ends() {
        let t = log_times(0.01, 10.0, 4);
        let want = [0.01, 0.1, 1.0, 10.0];
        assert_eq!(t.len(), 4);
        for (a, b) in t.iter().zip(want) {
            assert!((a - b).abs() < 1e-12 * b.max(1.0), "{t:?}");
        }
    }

    #[test]
    fn curves_run_from_first_trace_to_largest_limit() {
        let mut a = sample("i", "m", 1, 1000);
        a.trace = vec![(0.01, 1100), (0.5, 1000)];
        a.time_limit = 2.0;
        let mut none = sample("i", "n", 1, 1000);
        none.trace.clear();
        let curves = anytime_curves(&[a, none], 5);
        assert_eq!(curves.len(), 1, "a run without a trace makes no curve");
        let p = &curves[0].points;
        assert!((p[0].seconds - 0.01).abs() < 1e-12 && p[4].seconds == 2.0);
        assert_eq!(p[0].mean_gap, Some(10.0));
        assert_eq!(p[4].mean_gap, Some(0.0));
        assert_eq!(p[4].runs, 1);
    }

    #[test]
    fn curves_are_dashed_where_runs_are_missing() {
        let pt = |seconds: f64, gap: Option<f64>, runs: usize| CurvePoint {
            seconds,
            mean_gap: gap,
            runs,
        };
        let c = AnytimeCurve {
            method: "m".into(),
            runs: 2,
            points: vec![
                pt(1.0, None, 0),
                pt(2.0, Some(9.0), 1),
                pt(3.0, Some(8.0), 2),
                pt(4.0, Some(7.0), 2),
                pt(5.0, None, 0),
                pt(6.0, Some(1.0), 2),
            ],
        };
        assert_eq!(
            pieces(&c),
            vec![
                Piece::Partial(vec![(2.0, 9.0), (3.0, 8.0)]),
                Piece::Full(vec![(3.0, 8.0), (4.0, 7.0)]),
                Piece::Lone((6.0, 1.0), true),
            ]
        );
    }
}
