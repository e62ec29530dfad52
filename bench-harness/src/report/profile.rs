//! Performance profiles of the methods over the problems they all ran.

use super::style;
use super::ReportError;
use crate::record::RunRecord;
use plotters::prelude::*;
use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use wend_charts::legend::{Key, LegendEntry};
use wend_charts::style::{AXIS_TITLE_PX, FONT, TICK_PX, TITLE_PX};
use wend_charts::{number_label, Area, Colours, DrawResult};

/// File name of the figure.
pub const FILE: &str = "performance-profile.svg";

/// One method's profile as its step points.
#[derive(Clone, Debug, PartialEq)]
pub struct ProfileCurve {
    /// Method.
    pub method: String,
    /// `(τ, ρ(τ))` at τ = 1 and at each larger ratio the method reaches, τ increasing; ρ keeps
    /// its value up to the next point (the profile is right-continuous).
    pub steps: Vec<(f64, f64)>,
}

impl ProfileCurve {
    /// ρ(τ): 0 below τ = 1, otherwise the value of the last step at or before τ.
    pub fn rho(&self, tau: f64) -> f64 {
        self.steps
            .iter()
            .take_while(|(t, _)| *t <= tau)
            .last()
            .map_or(0.0, |s| s.1)
    }
}

/// The performance profile of every method.
#[derive(Clone, Debug, PartialEq)]
pub struct PerformanceProfile {
    /// Problems compared: those every method ran.
    pub problems: usize,
    /// One curve per method, by method name.
    pub curves: Vec<ProfileCurve>,
    /// The largest finite ratio of any method; 1 when all methods tie everywhere.
    pub tau_max: f64,
}

/// The performance profile of Dolan and Moré, "Benchmarking optimization software with
/// performance profiles", Mathematical Programming 91 (2002) 201–213, with tour length as the
/// measure.
///
/// A problem `p` is an (instance, seed, time limit) triple that every method in `runs` has a
/// run for; a method with several runs on one problem is taken at its shortest. With `l(p, m)`
/// the length of method `m` on `p`, the ratio is `r(p, m) = l(p, m) / min over methods of
/// l(p, ·)`, and the profile of `m` is `ρ_m(τ) = |{p : r(p, m) ≤ τ}| / |P|`: the share of problems
/// on which `m` is within a factor τ of the best. `ρ_m(1)` is the share `m` wins (ties count for
/// every method tied); `ρ_m` reaches 1 at the method's worst ratio.
///
/// A ratio needs a positive best length: where the best is 0 or below, the methods that match it
/// get ratio 1 and the others never reach any τ (they count as failures on that problem). A
/// method whose runs on a problem found no feasible order (under constraints) fails there too.
pub fn performance_profile(runs: &[RunRecord]) -> PerformanceProfile {
    let methods: BTreeSet<&str> = runs.iter().map(|r| r.method.as_str()).collect();
    // A method's best length on a problem; None when none of its runs there found a feasible
    // order (a failure on that problem).
    let mut problems: BTreeMap<(String, u64, u64), BTreeMap<&str, Option<i64>>> = BTreeMap::new();
    for r in runs {
        let k = r.key();
        let best = problems
            .entry((r.problem(), r.seed, k.time_limit_ms))
            .or_default()
            .entry(&r.method)
            .or_insert(r.length);
        *best = match (*best, r.length) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        };
    }
    problems.retain(|_, by_method| by_method.len() == methods.len());

    let mut ratios: BTreeMap<&str, Vec<f64>> = methods.iter().map(|m| (*m, Vec::new())).collect();
    for by_method in problems.values() {
        let best = by_method.values().flatten().copied().min().unwrap_or(0);
        for (m, &l) in by_method {
            let Some(l) = l else {
                ratios.entry(m).or_default().push(f64::INFINITY);
                continue;
            };
            let r = if l == best {
                1.0
            } else if best > 0 {
                l as f64 / best as f64
            } else {
                f64::INFINITY
            };
            ratios.entry(m).or_default().push(r);
        }
    }

    let n = problems.len();
    let mut tau_max: f64 = 1.0;
    let curves = ratios
        .into_iter()
        .map(|(m, mut rs)| {
            rs.sort_by(f64::total_cmp);
            let mut steps = Vec::new();
            if n > 0 {
                let at_one = rs.iter().filter(|r| **r <= 1.0).count();
                steps.push((1.0, at_one as f64 / n as f64));
                let mut i = at_one;
                while i < rs.len() && rs[i].is_finite() {
                    let tau = rs[i];
                    while i < rs.len() && rs[i] == tau {
                        i += 1;
                    }
                    tau_max = tau_max.max(tau);
                    steps.push((tau, i as f64 / n as f64));
                }
            }
            ProfileCurve {
                method: m.to_string(),
                steps,
            }
        })
        .collect();
    PerformanceProfile {
        problems: n,
        curves,
        tau_max,
    }
}

/// Draws the profile into `path`.
pub(crate) fn write_plot(
    runs: &[RunRecord],
    path: &Path,
    colours: &Colours,
) -> Result<(), ReportError> {
    let profile = performance_profile(runs);
    let legend: Vec<LegendEntry<Key>> = profile
        .curves
        .iter()
        .map(|c| LegendEntry {
            label: format!(
                "{}\nbest or tied on {:.0}%",
                c.method,
                100.0 * c.steps.first().map_or(0.0, |s| s.1)
            ),
            key: Key::Line(colours.of(&c.method), 3),
        })
        .collect();
    let missing = (profile.problems == 0).then_some((
        "Performance profile of tour length",
        "No (instance, seed, time limit) was run by every method.",
    ));
    let title = format!(
        "Performance profile of tour length over {} problem{}",
        profile.problems,
        if profile.problems == 1 { "" } else { "s" }
    );
    style::write_chart(path, &legend, missing, |plot| {
        draw(plot, &title, &profile, colours)
    })
}

fn draw(
    root: &Area,
    title: &str,
    profile: &PerformanceProfile,
    colours: &Colours,
) -> DrawResult<()> {
    // With every method tied everywhere there is no ratio range: show a little past 1 anyway.
    let reach = if profile.tau_max > 1.0 {
        profile.tau_max - 1.0
    } else {
        0.01
    };
    // A margin past the largest ratio, so the last jump is not hidden in the frame.
    let x1 = 1.0 + reach * 1.04;
    let mut chart = ChartBuilder::on(root)
        .caption(title, (FONT, TITLE_PX))
        .margin(18)
        .x_label_area_size(56)
        .y_label_area_size(76)
        // Below 0 a little too, so a method at ρ = 0 is not hidden in the x axis.
        .build_cartesian_2d(1.0..x1, -0.03..1.04)?;
    chart
        .configure_mesh()
        .x_desc("τ: tour length / shortest length of any method")
        .y_desc("share of problems, ρ(τ)")
        .axis_desc_style((FONT, AXIS_TITLE_PX))
        .label_style((FONT, TICK_PX))
        .x_label_formatter(&|v| number_label(*v, reach))
        .y_label_formatter(&|v| number_label(*v, 1.0))
        .bold_line_style(RGBColor(225, 225, 225))
        .light_line_style(RGBColor(248, 248, 248))
        .draw()?;

    let n = profile.curves.len();
    for (i, c) in profile.curves.iter().enumerate() {
        // Methods that tie lie on top of each other; a thinner line for each later method
        // keeps the ones below visible at its edges.
        let width = 2 + (n - 1 - i).min(2) as u32;
        let mut line = Vec::with_capacity(2 * c.steps.len() + 1);
        for &(tau, rho) in &c.steps {
            if let Some(&(_, before)) = line.last() {
                line.push((tau, before));
            }
            line.push((tau, rho));
        }
        if let Some(&(_, last)) = line.last() {
            line.push((x1, last));
        }
        chart.draw_series(LineSeries::new(
            line,
            colours.of(&c.method).stroke_width(width),
        ))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::sample;

    fn run(instance: &str, method: &str, seed: u64, length: i64) -> RunRecord {
        sample(instance, method, seed, length)
    }

    /// Two problems, two methods; B found no feasible order on p1, and of two runs of A on p2
    /// one found none (the method is taken at its best run):
    /// p1: A 100, B none → r_A 1, B fails; p2: A none and 150, B 100 → r_A 1.5, r_B 1.
    /// So ρ_A = 1/2 on [1, 1.5), 1 from 1.5; ρ_B = 1/2 from 1 on, never more.
    #[test]
    fn a_method_without_a_feasible_order_fails_the_problem() {
        let none = |instance: &str, method: &str, seed: u64| {
            let mut r = run(instance, method, seed, 0);
            r.length = None;
            r.feasible = false;
            r
        };
        let runs = vec![
            run("p1", "A", 1, 100),
            none("p1", "B", 1),
            none("p2", "A", 1),
            run("p2", "A", 1, 150),
            run("p2", "B", 1, 100),
        ];
        let p = performance_profile(&runs);
        assert_eq!(p.problems, 2);
        let (a, b) = (&p.curves[0], &p.curves[1]);
        assert_eq!(a.rho(1.0), 0.5);
        assert_eq!(a.rho(1.49), 0.5);
        assert_eq!(a.rho(1.5), 1.0);
        assert_eq!(b.rho(1.0), 0.5);
        assert_eq!(b.rho(100.0), 0.5);
    }

    /// Three problems, two methods:
    /// p1 (a, seed 1): A 100, B 110 → r_A 1, r_B 1.1;
    /// p2 (a, seed 2): A 120, B 100 → r_A 1.2, r_B 1;
    /// p3 (b, seed 1): A 200, B 200 → both 1.
    /// So ρ_A = 2/3 on [1, 1.2), 1 from 1.2; ρ_B = 2/3 on [1, 1.1), 1 from 1.1.
    /// A fourth problem that only A ran is not a problem at all.
    #[test]
    fn two_methods_three_problems_by_hand() {
        let runs = vec![
            run("a", "A", 1, 100),
            run("a", "B", 1, 110),
            run("a", "A", 2, 120),
            run("a", "B", 2, 100),
            run("b", "A", 1, 200),
            run("b", "B", 1, 200),
            run("c", "A", 1, 50),
        ];
        let p = performance_profile(&runs);
        assert_eq!(p.problems, 3);
        assert!((p.tau_max - 1.2).abs() < 1e-12);
        let (a, b) = (&p.curves[0], &p.curves[1]);
        assert_eq!((a.method.as_str(), b.method.as_str()), ("A", "B"));
        let third = |k: f64| k / 3.0;
        assert_eq!(a.rho(0.99), 0.0);
        assert_eq!(a.rho(1.0), third(2.0));
        assert_eq!(a.rho(1.15), third(2.0));
        assert_eq!(a.rho(1.2), 1.0);
        assert_eq!(a.rho(5.0), 1.0);
        assert_eq!(b.rho(1.0), third(2.0));
        assert_eq!(b.rho(1.05), third(2.0));
        assert_eq!(b.rho(1.1), 1.0);
        assert_eq!(a.steps.len(), 2);
        assert!((a.steps[1].0 - 1.2).abs() < 1e-12);
    }

    #[test]
    fn a_method_is_taken_at_its_best_on_duplicates_and_time_limits_split_problems() {
        let mut long = run("a", "A", 1, 150);
        long.time_limit = 10.0;
        let mut long_b = run("a", "B", 1, 100);
        long_b.time_limit = 10.0;
        let runs = vec![
            run("a", "A", 1, 100),
            run("a", "A", 1, 300),
            run("a", "B", 1, 125),
            long,
            long_b,
        ];
        let p = performance_profile(&runs);
        assert_eq!(p.problems, 2);
        // 1 s: A 100 (best), B 1.25. 10 s: A 1.5, B 100 (best).
        assert_eq!(p.curves[0].rho(1.0), 0.5);
        assert_eq!(p.curves[0].rho(1.49), 0.5);
        assert_eq!(p.curves[0].rho(1.5), 1.0);
        assert_eq!(p.curves[1].rho(1.25), 1.0);
        assert!((p.tau_max - 1.5).abs() < 1e-12);
    }

    #[test]
    fn zero_best_length_counts_others_as_failures() {
        let runs = vec![run("a", "A", 1, 0), run("a", "B", 1, 5)];
        let p = performance_profile(&runs);
        assert_eq!(p.curves[0].rho(1.0), 1.0);
        assert_eq!(p.curves[1].rho(1e9), 0.0);
        assert_eq!(p.tau_max, 1.0);
    }
}
