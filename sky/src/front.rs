//! Time against propellant: the Pareto front of observing plans.
//!
//! The fastest plan and the most fuel-sparing plan are different plans, and no rule can say
//! which of the plans between them is best; people choose. This module finds the set of plans
//! where neither objective can improve without the other getting worse:
//!
//! - **objectives** (both minimised, both measured by the full simulation with real times and
//!   dumps, [`Context::simulate`]): busy overhead (no waiting), seconds (slews, settling,
//!   thermal, setups, dumps; waiting is set by when targets enter the band and is time the
//!   plan leaves free, so it is reported but not traded), and propellant, kilograms;
//! - **scalarised runs**: the planner of [`super::plan`] over a spread of weights of a pairwise
//!   momentum surrogate ([`super::plan::weighted_matrix`]), every schedule it tries
//!   re-measured by the simulation;
//! - **Pareto local search**: from each plan of the archive not yet explored, random segment
//!   moves (move a run of one to three targets elsewhere, swap two targets, reverse a run),
//!   each neighbour played out from the last [`super::schedule::Snapshot`] before the move;
//! - an **archive** that keeps only non-dominated plans that schedule at least as many
//!   observations as the single-objective plan, duplicates removed.
//!
//! Reported with the exact two-dimensional hypervolume against a stated reference point (1.1
//! times the largest value of each objective on the front of the weighted runs, fixed when they
//! end and used by every later report; the local search keeps only plans inside it), the
//! two extreme plans and a knee plan (largest distance to the line joining the extremes, in
//! objectives normalised by the extremes).
//!
//! **Caution.** A planning aid: plans are proposals to be confirmed by the operations team's
//! validated tools.

use std::time::{Duration, Instant};

use rand::Rng;
use rand_pcg::Pcg64;
use wend::{run_steps, Step, StepLimits};

use super::plan::{impulses_nms, plan, Plan, PlanFailure, PlanOptions};
use super::schedule::{Context, PlanError, Schedule};
use super::slew::cost_matrix_ms;
use super::{Profile, Target};

/// Objective values `(busy overhead without waiting in seconds, propellant in kilograms)`.
pub type Point = (f64, f64);

/// True when `a` dominates `b`: no worse in both objectives and better in one (minimising).
pub fn dominates(a: Point, b: Point) -> bool {
    a.0 <= b.0 && a.1 <= b.1 && (a.0 < b.0 || a.1 < b.1)
}

/// Exact hypervolume of `points` against `reference` in two dimensions (minimising): the area
/// of the region dominated by some point and bounded by the reference. Points not strictly
/// better than the reference in both objectives add nothing; dominated points are ignored.
pub fn hypervolume(points: &[Point], reference: Point) -> f64 {
    let mut pts: Vec<Point> = points
        .iter()
        .copied()
        .filter(|p| p.0 < reference.0 && p.1 < reference.1)
        .collect();
    pts.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    // The non-dominated staircase: second objective strictly falling.
    let mut stairs: Vec<Point> = Vec::with_capacity(pts.len());
    for p in pts {
        if stairs.last().is_none_or(|q| p.1 < q.1) {
            stairs.push(p);
        }
    }
    // Slabs between consecutive first-objective values, each as high as its point's gap to
    // the reference.
    stairs
        .iter()
        .enumerate()
        .map(|(k, p)| {
            let next_x = stairs.get(k + 1).map_or(reference.0, |q| q.0);
            (next_x - p.0) * (reference.1 - p.1)
        })
        .sum()
}

/// The knee of a front sorted by the first objective: the point farthest from the line
/// through the two extremes, in objectives scaled to [0, 1] between the extremes. `None`
/// with fewer than three points (no point lies between the extremes).
pub fn knee(front: &[Point]) -> Option<usize> {
    if front.len() < 3 {
        return None;
    }
    let (x0, x1) = (front[0].0, front[front.len() - 1].0);
    let (y1, y0) = (front[0].1, front[front.len() - 1].1);
    let sx = (x1 - x0).max(f64::MIN_POSITIVE);
    let sy = (y1 - y0).max(f64::MIN_POSITIVE);
    // Normalised, the extremes are (0, 1) and (1, 0): the distance to x + y = 1 is
    // (1 − x − y) / √2, largest where x + y is smallest.
    (1..front.len() - 1)
        .map(|k| (k, (front[k].0 - x0) / sx + (front[k].1 - y0) / sy))
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .filter(|&(_, s)| s < 1.0)
        .map(|(k, _)| k)
}

/// A plan of the archive.
#[derive(Clone, Debug)]
pub struct FrontPlan {
    /// Pool indices in observing order (the schedule's observations).
    pub order: Vec<usize>,
    /// The plan played out.
    pub schedule: Schedule,
    /// Overhead without waiting, seconds (time objective).
    pub busy_overhead_s: f64,
    /// Propellant, kilograms (propellant objective).
    pub propellant_kg: f64,
}

impl FrontPlan {
    fn new(schedule: Schedule) -> FrontPlan {
        FrontPlan {
            order: schedule.observations.iter().map(|o| o.target).collect(),
            busy_overhead_s: schedule.overhead_s - schedule.wait_s,
            propellant_kg: schedule.propellant_kg,
            schedule,
        }
    }

    /// The plan's objective values.
    pub fn point(&self) -> Point {
        (self.busy_overhead_s, self.propellant_kg)
    }
}

/// Plans none of which dominates another, with no two alike.
#[derive(Clone, Debug, Default)]
pub struct Archive {
    plans: Vec<FrontPlan>,
    explored: Vec<bool>,
}

/// Relative difference under which two objective values count as the same.
const SAME: f64 = 1e-9;

fn same(a: Point, b: Point) -> bool {
    let close = |x: f64, y: f64| (x - y).abs() <= SAME * x.abs().max(y.abs()).max(1e-12);
    close(a.0, b.0) && close(a.1, b.1)
}

impl Archive {
    /// An empty archive.
    pub fn new() -> Archive {
        Archive::default()
    }

    /// Adds `plan` unless a plan of the archive dominates it or has the same objective
    /// values; removes the plans it dominates. True when it was added.
    pub fn insert(&mut self, plan: FrontPlan) -> bool {
        let p = plan.point();
        if !(p.0.is_finite() && p.1.is_finite()) {
            return false;
        }
        if self
            .plans
            .iter()
            .any(|q| dominates(q.point(), p) || same(q.point(), p))
        {
            return false;
        }
        let mut k = 0;
        while k < self.plans.len() {
            if dominates(p, self.plans[k].point()) {
                self.plans.swap_remove(k);
                self.explored.swap_remove(k);
            } else {
                k += 1;
            }
        }
        self.plans.push(plan);
        self.explored.push(false);
        true
    }

    /// The plans, in no particular order.
    pub fn plans(&self) -> &[FrontPlan] {
        &self.plans
    }

    /// Objective values of the plans.
    pub fn points(&self) -> Vec<Point> {
        self.plans.iter().map(FrontPlan::point).collect()
    }

    /// The plans sorted by the time objective (so by propellant, descending).
    pub fn sorted(&self) -> Vec<FrontPlan> {
        let mut v = self.plans.clone();
        v.sort_by(|a, b| a.busy_overhead_s.total_cmp(&b.busy_overhead_s));
        v
    }
}

/// How to search the front.
#[derive(Clone, Debug)]
pub struct FrontOptions {
    /// The planner's options (start, horizon, seed, threads, stop); its time limit is
    /// ignored here.
    pub plan: PlanOptions,
    /// Time for the whole search (scalarised runs and local search).
    pub time_limit: Duration,
    /// Weights of the momentum surrogate tried by the scalarised runs (the first is 0).
    pub weights: usize,
}

impl FrontOptions {
    /// Defaults: [`DEFAULT_FRONT_SECONDS`] of search, [`DEFAULT_WEIGHTS`] weights.
    pub fn new(plan: PlanOptions) -> FrontOptions {
        FrontOptions {
            plan,
            time_limit: Duration::from_secs(DEFAULT_FRONT_SECONDS),
            weights: DEFAULT_WEIGHTS,
        }
    }
}

/// Seconds of front search by default.
pub const DEFAULT_FRONT_SECONDS: u64 = 30;
/// Surrogate weights of the scalarised runs by default.
pub const DEFAULT_WEIGHTS: usize = 8;
/// Share of the time for the scalarised runs; the local search has the rest.
pub const SCALARISED_SHARE: f64 = 0.4;
/// Moves tried around each archive plan when it is explored.
pub const MOVES_PER_PLAN: usize = 60;
/// Positions between snapshots of an explored plan's play.
pub const SNAPSHOT_EVERY: usize = 8;

/// Progress of a front search.
#[derive(Clone, Copy, Debug)]
pub struct FrontProgress {
    /// Plans on the front.
    pub plans: usize,
    /// Its hypervolume against [`FrontProgress::reference`], s·kg; `None` while the
    /// scalarised runs, which fix the reference, are still going.
    pub hypervolume: Option<f64>,
    /// The reference point of the hypervolume, the same as [`Front::reference`] (`None`
    /// before it is fixed).
    pub reference: Option<Point>,
    /// Plans played out so far.
    pub evaluations: usize,
    /// Seconds since the start.
    pub seconds: f64,
}

/// A front and how it was found.
#[derive(Clone, Debug)]
pub struct Front {
    /// The front, sorted by the time objective.
    pub plans: Vec<FrontPlan>,
    /// Index into [`Front::plans`] of the knee.
    pub knee: Option<usize>,
    /// Non-dominated plans the search found; [`Front::plans`] reports at most
    /// [`MAX_FRONT_PLANS`] of them, spread along the front.
    pub archive_plans: usize,
    /// Hypervolume of every non-dominated plan found, against [`Front::reference`], s·kg.
    pub archive_hypervolume: f64,
    /// Hypervolume of the reported plans against [`Front::reference`], s·kg.
    pub hypervolume: f64,
    /// Hypervolume of the front of the scalarised runs alone, same reference, s·kg.
    pub scalarised_hypervolume: f64,
    /// Plans on the front of the scalarised runs alone.
    pub scalarised_plans: usize,
    /// The reference point: 1.1 times the largest value of each objective over the front of
    /// the scalarised runs, fixed when they end, so that the progress reports of the Pareto
    /// local search and the final figures are measured against the same point. The local
    /// search keeps only plans strictly better than it in both objectives.
    pub reference: Point,
    /// Objective values of every feasible plan evaluated that is not on the front (capped
    /// at [`MAX_DOMINATED_KEPT`], evenly thinned), for pictures.
    pub dominated: Vec<Point>,
    /// The single-objective plan of the same inputs ([`super::plan::plan`] without surrogate).
    pub single: Plan,
    /// Observations every front plan has at least (those of the single-objective plan).
    pub min_scheduled: usize,
    /// Plans played out.
    pub evaluations: usize,
    /// Wall-clock seconds.
    pub seconds: f64,
}

/// Most plans a front reports: the two extremes, the knee and plans spread evenly between
/// them (a committee reads a table of them; the archive may hold hundreds a few seconds apart).
pub const MAX_FRONT_PLANS: usize = 25;

/// At most `keep` plans of a front sorted by time: both extremes, the knee, then each time the
/// plan farthest (in objectives scaled by the extremes) from those already taken; sorted by
/// time.
pub fn spread(front: Vec<FrontPlan>, keep: usize) -> Vec<FrontPlan> {
    if front.len() <= keep.max(2) {
        return front;
    }
    let pts: Vec<Point> = front.iter().map(FrontPlan::point).collect();
    let (x0, x1) = (pts[0].0, pts[pts.len() - 1].0);
    let (y0, y1) = (pts[pts.len() - 1].1, pts[0].1);
    let sx = (x1 - x0).max(f64::MIN_POSITIVE);
    let sy = (y1 - y0).max(f64::MIN_POSITIVE);
    let scaled: Vec<Point> = pts
        .iter()
        .map(|p| ((p.0 - x0) / sx, (p.1 - y0) / sy))
        .collect();
    let mut taken = vec![0, pts.len() - 1];
    if let Some(k) = knee(&pts) {
        taken.push(k);
    }
    let dist = |a: Point, b: Point| ((a.0 - b.0).powi(2) + (a.1 - b.1).powi(2)).sqrt();
    while taken.len() < keep.max(2) {
        let next = (0..pts.len())
            .filter(|k| !taken.contains(k))
            .map(|k| {
                let d = taken
                    .iter()
                    .map(|&t| dist(scaled[k], scaled[t]))
                    .fold(f64::INFINITY, f64::min);
                (k, d)
            })
            .max_by(|a, b| a.1.total_cmp(&b.1).then(b.0.cmp(&a.0)));
        match next {
            Some((k, _)) => taken.push(k),
            None => break,
        }
    }
    taken.sort_unstable();
    taken.dedup();
    let mut front = front;
    let mut k = 0;
    front.retain(|_| {
        let keep_it = taken.binary_search(&k).is_ok();
        k += 1;
        keep_it
    });
    front
}

/// Most dominated points kept for pictures.
pub const MAX_DOMINATED_KEPT: usize = 2_000;

/// A random segment move on `order`: the new order and the first position it changes.
fn random_move(order: &[usize], rng: &mut Pcg64) -> Option<(Vec<usize>, usize)> {
    let n = order.len();
    if n < 2 {
        return None;
    }
    let mut v = order.to_vec();
    match rng.gen_range(0..3) {
        0 => {
            // Move a run of 1–3 targets to another place.
            let len = rng.gen_range(1..=3.min(n - 1));
            let i = rng.gen_range(0..=n - len);
            let seg: Vec<usize> = v.drain(i..i + len).collect();
            let k = rng.gen_range(0..=v.len());
            if k == i {
                return None;
            }
            for (d, x) in seg.into_iter().enumerate() {
                v.insert(k + d, x);
            }
            Some((v, i.min(k)))
        }
        1 => {
            let i = rng.gen_range(0..n);
            let j = rng.gen_range(0..n);
            if i == j {
                return None;
            }
            v.swap(i, j);
            Some((v, i.min(j)))
        }
        _ => {
            let i = rng.gen_range(0..n - 1);
            let j = rng.gen_range(i + 2..=n.min(i + 12));
            v[i..j].reverse();
            Some((v, i))
        }
    }
}

/// Index of the local search's generator among the runs of the planner's seed (the planner's
/// own restarts count up from 0).
const LOCAL_SEARCH_RUN: u64 = 0x5EED_F00D;

/// Every plan played out so far: the archive, the feasible plans off it, and their count.
struct Found {
    archive: Archive,
    dominated: Vec<Point>,
    evaluations: usize,
    /// Plans that schedule fewer observations are left out.
    min_scheduled: usize,
    /// Once set (the reference point), plans not strictly better than it in both objectives
    /// are left out: they would add nothing to the hypervolume.
    bounds: Option<Point>,
}

impl Found {
    /// Counts a played-out plan and keeps it on the archive or among the dominated plans.
    fn evaluated(&mut self, s: Schedule) {
        self.evaluations += 1;
        if s.observations.len() < self.min_scheduled {
            return;
        }
        let fp = FrontPlan::new(s);
        let p = fp.point();
        if self.bounds.is_some_and(|r| !(p.0 < r.0 && p.1 < r.1)) {
            return;
        }
        if !self.archive.insert(fp) {
            self.dominated.push(p);
        }
    }
}

/// The Pareto local search, one step per archive plan explored: the first plan not yet
/// explored (else a random one) and [`MOVES_PER_PLAN`] random moves around it.
struct LocalSearch<'c, 'a> {
    ctx: &'c Context<'a>,
    found: Found,
    /// The error that ended the search.
    failure: Option<PlanError>,
}

impl LocalSearch<'_, '_> {
    fn explore(
        &mut self,
        rng: &mut Pcg64,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Result<(), PlanError> {
        let archive = &mut self.found.archive;
        let pick = match archive.explored.iter().position(|e| !e) {
            Some(k) => k,
            None => rng.gen_range(0..archive.plans.len().max(1)),
        };
        let Some(base) = archive.plans.get(pick).cloned() else {
            return Ok(());
        };
        archive.explored[pick] = true;
        let (_, snaps) = self.ctx.simulate_recording(&base.order, SNAPSHOT_EVERY)?;
        for _ in 0..MOVES_PER_PLAN {
            if should_stop() {
                break;
            }
            let Some((order, first)) = random_move(&base.order, rng) else {
                continue;
            };
            let snap = snaps
                .iter()
                .rev()
                .find(|s| s.position() <= first)
                .or(snaps.first());
            let s = match snap {
                Some(snap) if snap.position() <= first => self.ctx.resume(snap, &order)?,
                _ => self.ctx.simulate(&order)?,
            };
            self.found.evaluated(s);
        }
        Ok(())
    }
}

impl Step for LocalSearch<'_, '_> {
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        if let Err(e) = self.explore(rng, should_stop) {
            self.failure = Some(e);
        }
    }

    /// After an error, or with nothing to explore.
    fn finished(&self) -> bool {
        self.failure.is_some() || self.found.archive.plans.is_empty()
    }
}

/// Searches the front of `targets` for `profile` (see the module notes); `progress` hears
/// about the front at most once a second. The local search runs under the core's loop owner
/// ([`wend::run_steps`]): the deadline, the stop handle of the planner's options, a generator
/// seeded from the planner's seed, and the progress reports come from it.
pub fn search_front(
    profile: &Profile,
    targets: &[Target],
    options: &FrontOptions,
    progress: &dyn Fn(FrontProgress),
) -> Result<Front, PlanFailure> {
    let began = Instant::now();
    let deadline = began + options.time_limit;
    let ctx = Context::new(
        profile,
        targets,
        options.plan.start,
        options.plan.horizon_days,
    )?;
    let (candidates, _) = ctx.screen();
    let weights = options.weights.max(1);
    let per_run = options
        .time_limit
        .mul_f64(SCALARISED_SHARE / weights as f64);
    let mut single_options = options.plan.clone();
    single_options.time_limit = Some(per_run);
    single_options.momentum_weight_s_per_nms = 0.0;
    let single = plan(profile, targets, &single_options)?;
    let min_scheduled = single.schedule.observations.len();
    let mut found = Found {
        archive: Archive::new(),
        dominated: Vec::new(),
        evaluations: 0,
        min_scheduled,
        bounds: None,
    };
    for s in single.alternatives.iter().cloned() {
        found.evaluated(s);
    }
    // The surrogate's scale: the mean step cost over the mean pair impulse, so that the
    // largest weight makes the surrogate several times the time term.
    let scale = surrogate_scale(&ctx, &candidates, options);
    let mut last_report = Instant::now();
    let report = |found: &Found, reference: Option<Point>| FrontProgress {
        plans: found.archive.plans().len(),
        hypervolume: reference.map(|r| hypervolume(&found.archive.points(), r)),
        reference,
        evaluations: found.evaluations,
        seconds: began.elapsed().as_secs_f64(),
    };
    for k in 1..weights {
        if Instant::now() >= deadline || options.plan.stop.is_stopped() {
            break;
        }
        let share = k as f64 / (weights - 1) as f64;
        let mut o = options.plan.clone();
        o.time_limit = Some(per_run);
        o.momentum_weight_s_per_nms = scale * 8.0 * share * share;
        let made = plan(profile, targets, &o)?;
        for s in made.alternatives {
            found.evaluated(s);
        }
        if last_report.elapsed() >= Duration::from_secs(1) {
            progress(report(&found, None));
            last_report = Instant::now();
        }
    }
    let scalarised = found.archive.points();
    let reference = nadir(&scalarised);
    found.bounds = Some(reference);
    let mut local = LocalSearch {
        ctx: &ctx,
        found,
        failure: None,
    };
    let limits = StepLimits {
        run: LOCAL_SEARCH_RUN,
        deadline: Some(deadline),
        stop: options.plan.stop.clone(),
        report_every: Duration::from_secs(1),
        ..StepLimits::new(options.plan.seed)
    };
    run_steps(&limits, &mut local, &mut |l| {
        progress(report(&l.found, Some(reference)));
    });
    if let Some(e) = local.failure {
        return Err(e.into());
    }
    let Found {
        archive,
        dominated,
        evaluations,
        ..
    } = local.found;
    let all = archive.sorted();
    let all_points: Vec<Point> = all.iter().map(FrontPlan::point).collect();
    let archive_plans = all.len();
    let plans = spread(all, MAX_FRONT_PLANS);
    let points: Vec<Point> = plans.iter().map(FrontPlan::point).collect();
    let on_front = |p: &Point| points.iter().any(|q| same(*q, *p));
    // Archive plans left out of the reported front are drawn with the dominated ones.
    let dominated: Vec<Point> = dominated
        .into_iter()
        .chain(all_points.iter().copied())
        .collect();
    let mut dominated: Vec<Point> = dominated.into_iter().filter(|p| !on_front(p)).collect();
    if dominated.len() > MAX_DOMINATED_KEPT {
        let step = dominated.len() as f64 / MAX_DOMINATED_KEPT as f64;
        dominated = (0..MAX_DOMINATED_KEPT)
            .map(|k| dominated[(k as f64 * step) as usize])
            .collect();
    }
    Ok(Front {
        knee: knee(&points),
        archive_hypervolume: hypervolume(&all_points, reference),
        archive_plans,
        hypervolume: hypervolume(&points, reference),
        scalarised_hypervolume: hypervolume(&scalarised, reference),
        scalarised_plans: scalarised.len(),
        reference,
        plans,
        dominated,
        single,
        min_scheduled,
        evaluations,
        seconds: began.elapsed().as_secs_f64(),
    })
}

/// 1.1 times the largest value of each objective (the reference point of the hypervolume).
pub fn nadir(points: &[Point]) -> Point {
    let mx = points.iter().map(|p| p.0).fold(0.0f64, f64::max);
    let my = points.iter().map(|p| p.1).fold(0.0f64, f64::max);
    (1.1 * mx, 1.1 * my)
}

/// Mean step cost of the candidates (seconds) over their mean pair impulse `|I_i + I_j|`
/// (N·m·s), on a sample of at most 300 candidates: seconds per N·m·s that make the surrogate
/// as large as the time term.
fn surrogate_scale(ctx: &Context, candidates: &[usize], options: &FrontOptions) -> f64 {
    let step = (candidates.len() / 300).max(1);
    let sample: Vec<Target> = candidates
        .iter()
        .step_by(step)
        .map(|&i| ctx.targets()[i].clone())
        .collect();
    let n = sample.len();
    if n < 2 {
        return 0.0;
    }
    let Ok(m) = cost_matrix_ms(ctx.profile(), &sample, options.plan.start) else {
        return 0.0;
    };
    let imp = impulses_nms(ctx.profile(), &sample, options.plan.start);
    let (mut cost, mut pair) = (0.0, 0.0);
    for i in 0..n {
        for j in 0..n {
            if i != j {
                cost += m[i][j] as f64 / 1000.0;
                let s = [
                    imp[i][0] + imp[j][0],
                    imp[i][1] + imp[j][1],
                    imp[i][2] + imp[j][2],
                ];
                pair += (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]).sqrt();
            }
        }
    }
    if pair > 0.0 {
        cost / pair
    } else {
        0.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::{shuffled, sky_profile, sky_targets};
    use crate::Epoch;
    use proptest::prelude::*;
    use rand::SeedableRng;

    const START: Epoch = Epoch { jd: 2_461_465.5 };

    #[test]
    fn dominance_by_hand() {
        assert!(dominates((1.0, 2.0), (1.0, 3.0)));
        assert!(dominates((1.0, 2.0), (2.0, 3.0)));
        assert!(
            !dominates((1.0, 2.0), (1.0, 2.0)),
            "equal points do not dominate"
        );
        assert!(
            !dominates((1.0, 3.0), (2.0, 2.0)),
            "a trade is not dominance"
        );
        assert!(!dominates((2.0, 2.0), (1.0, 3.0)));
    }

    #[test]
    fn hypervolume_by_hand() {
        // One point (1, 3) against (4, 4): the rectangle 3 × 1 = 3.
        assert_eq!(hypervolume(&[(1.0, 3.0)], (4.0, 4.0)), 3.0);
        // (1, 3) and (2, 1) against (4, 4): rectangles [1,4]×[3,4] (3) and [2,4]×[1,4] (6)
        // overlap in [2,4]×[3,4] (2): 3 + 6 − 2 = 7.
        assert_eq!(hypervolume(&[(1.0, 3.0), (2.0, 1.0)], (4.0, 4.0)), 7.0);
        // A dominated point (3, 3.5) and one outside the reference (5, 0) add nothing; the
        // order of the points does not matter.
        assert_eq!(
            hypervolume(
                &[(3.0, 3.5), (2.0, 1.0), (5.0, 0.0), (1.0, 3.0)],
                (4.0, 4.0)
            ),
            7.0
        );
        // Three points of a staircase (0, 10), (2, 6), (5, 1) against (10, 12):
        // slabs (2−0)(12−10) = 4, (5−2)(12−6) = 18, (10−5)(12−1) = 55: 77.
        assert_eq!(
            hypervolume(&[(5.0, 1.0), (0.0, 10.0), (2.0, 6.0)], (10.0, 12.0)),
            77.0
        );
        assert_eq!(hypervolume(&[], (1.0, 1.0)), 0.0);
    }

    #[test]
    fn knee_by_hand() {
        // Extremes (0, 10) and (10, 0); normalised, (2, 2) sits at 0.2 + 0.2 = 0.4, the
        // farthest from the line x + y = 1; (5, 4) at 0.9.
        let front = [(0.0, 10.0), (2.0, 2.0), (5.0, 4.0), (10.0, 0.0)];
        assert_eq!(knee(&front), Some(1));
        // A straight front has no knee; two points have none either.
        assert_eq!(knee(&[(0.0, 2.0), (1.0, 1.0), (2.0, 0.0)]), None);
        assert_eq!(knee(&[(0.0, 2.0), (2.0, 0.0)]), None);
    }

    fn plan_at(point: Point, tag: usize) -> FrontPlan {
        FrontPlan {
            order: vec![tag],
            schedule: Schedule {
                observations: Vec::new(),
                unscheduled: Vec::new(),
                overhead_s: point.0,
                wait_s: 0.0,
                slew_deg: 0.0,
                dumps: 0,
                dumped_nms: 0.0,
                final_momentum_nms: 0.0,
                propellant_kg: point.1,
                repairs: 0,
                end: START,
                momentum_trace: Vec::new(),
                dump_times_s: Vec::new(),
            },
            busy_overhead_s: point.0,
            propellant_kg: point.1,
        }
    }

    proptest! {
        #[test]
        fn the_archive_never_holds_a_dominated_plan_or_a_duplicate(
            points in proptest::collection::vec((0u8..20, 0u8..20), 1..60)
        ) {
            let mut archive = Archive::new();
            for (k, &(x, y)) in points.iter().enumerate() {
                archive.insert(plan_at((x as f64, y as f64), k));
            }
            let held = archive.points();
            for (i, a) in held.iter().enumerate() {
                for (j, b) in held.iter().enumerate() {
                    if i != j {
                        prop_assert!(!dominates(*a, *b) && a != b, "{a:?} {b:?}");
                    }
                }
            }
            // Every offered point is held or dominated-or-equalled by a held one.
            for &(x, y) in &points {
                let p = (x as f64, y as f64);
                prop_assert!(held.iter().any(|h| *h == p || dominates(*h, p)));
            }
        }
    }

    #[test]
    fn spreading_keeps_the_extremes_the_knee_and_the_most_distant_plans() {
        // Eleven points on a convex front with a knee at (1, 1): keeping 4 takes both
        // extremes (0, 10) and (10, 0), the knee (1, 1), then the point farthest from those
        // three in scaled objectives (x/10, y/10): (5, 0.5), whose nearest taken point is the
        // knee at √(0.4² + 0.05²) ≈ 0.4031, just beyond (0.2, 6), 0.4005 from (0, 10).
        let pts = [
            (0.0, 10.0),
            (0.2, 6.0),
            (0.5, 3.0),
            (1.0, 1.0),
            (2.0, 0.9),
            (3.0, 0.8),
            (4.0, 0.7),
            (5.0, 0.5),
            (7.0, 0.3),
            (9.0, 0.1),
            (10.0, 0.0),
        ];
        let front: Vec<FrontPlan> = pts
            .iter()
            .enumerate()
            .map(|(k, &p)| plan_at(p, k))
            .collect();
        let kept: Vec<Point> = spread(front.clone(), 4)
            .iter()
            .map(FrontPlan::point)
            .collect();
        assert_eq!(kept, vec![(0.0, 10.0), (1.0, 1.0), (5.0, 0.5), (10.0, 0.0)]);
        assert_eq!(spread(front, 20).len(), 11);
    }

    #[test]
    fn resuming_from_a_snapshot_plays_exactly_like_a_full_play() {
        let p = sky_profile();
        let targets = sky_targets(90, 6);
        let ctx = Context::new(&p, &targets, START, 2.0).unwrap();
        let (candidates, _) = ctx.screen();
        let mut rng = Pcg64::seed_from_u64(1);
        for seed in 0..5 {
            let order: Vec<usize> = shuffled(candidates.len(), seed)
                .into_iter()
                .map(|k| candidates[k])
                .collect();
            let (full, snaps) = ctx.simulate_recording(&order, 4).unwrap();
            assert_eq!(full, ctx.simulate(&order).unwrap());
            assert!(snaps.len() > 3);
            for _ in 0..20 {
                let Some((moved, first)) = random_move(&order, &mut rng) else {
                    continue;
                };
                let snap = snaps.iter().rev().find(|s| s.position() <= first).unwrap();
                assert_eq!(
                    ctx.resume(snap, &moved).unwrap(),
                    ctx.simulate(&moved).unwrap()
                );
            }
        }
    }

    #[test]
    fn the_front_is_non_dominated_feasible_and_its_fastest_end_beats_the_single_plan() {
        let p = sky_profile();
        let targets = sky_targets(70, 8);
        let mut plan = PlanOptions::new(START);
        plan.horizon_days = 2.0;
        plan.threads = Some(1);
        let mut o = FrontOptions::new(plan);
        o.time_limit = Duration::from_secs(3);
        o.weights = 4;
        let front = search_front(&p, &targets, &o, &|_| {}).unwrap();
        assert!(front.plans.len() >= 2, "{} plans", front.plans.len());
        let pts: Vec<Point> = front.plans.iter().map(FrontPlan::point).collect();
        for a in &pts {
            assert!(!pts.iter().any(|b| dominates(*b, *a)));
        }
        // Sorted by time, so propellant falls.
        assert!(pts.windows(2).all(|w| w[0].0 < w[1].0 && w[0].1 > w[1].1));
        // The fastest end is no slower than the single-objective plan.
        let s = &front.single.schedule;
        assert!(pts[0].0 <= s.overhead_s - s.wait_s + 1e-6);
        // Every plan is what the simulation makes of its order, and keeps the count.
        let ctx = Context::new(&p, &targets, START, 2.0).unwrap();
        for fp in &front.plans {
            let again = ctx.simulate(&fp.order).unwrap();
            assert_eq!(again.observations, fp.schedule.observations);
            assert!(fp.schedule.observations.len() >= front.min_scheduled);
        }
        assert!(front.archive_hypervolume >= front.scalarised_hypervolume);
        assert!(front.archive_hypervolume >= front.hypervolume);
        assert!(front.plans.len() <= MAX_FRONT_PLANS && front.archive_plans >= front.plans.len());
        assert!(front.reference.0 > pts.last().unwrap().0 && front.reference.1 > pts[0].1);
    }
}
