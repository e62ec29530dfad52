//! Time against propellant: the Pareto front of observing plans.
//!
//! The fastest plan and the most fuel-sparing plan are different plans, and no rule can say
//! which of the plans between them is best; people choose. This module finds the set of plans
//! where neither objective can improve without the other getting worse:
//!
//! - **objectives** (both minimised, both measured by the planner's own rules with real times,
//!   parking and dumps, [`Context::play`]): the elapsed time until the last observation ends,
//!   waiting and dump time included, seconds, and the propellant of the dumps with the
//!   momentum left charged as if dumped, kilograms;
//! - **one set of targets**: every plan of a front schedules the targets of the fastest plan
//!   ([`super::plan::plan`]), so that the plans differ in order and roll only;
//! - **scalarised runs**: iterated local search ([`super::search::improve`]) on
//!   `elapsed / T + w · propellant / P` over a spread of weights `w`, each from the fastest
//!   plan;
//! - **Pareto local search**: from each plan of the archive not yet explored, every plan one
//!   move away (small plans) or chains of one to three random moves (large ones), then, when
//!   every plan is explored, restarts from kicked plans of the archive;
//! - an **archive** that keeps every non-dominated plan seen, duplicates removed.
//!
//! Reported with the exact two-dimensional hypervolume against a stated reference point (1.1
//! times the largest value of each objective over the front), the two extreme plans and a knee
//! plan (largest distance to the line joining the extremes, in objectives normalised by the
//! extremes). No lower bound on propellant is reported: none is provably valid in the model
//! (transitions, waits and the Sun's motion all add impulse).
//!
//! **Caution.** A planning aid: plans are proposals to be confirmed by the operations team's
//! validated tools.

use std::time::{Duration, Instant};

use rand::Rng;
use rand_pcg::Pcg64;
use wend::{run_steps, Step, StepLimits};

use super::plan::{plan, Plan, PlanFailure, PlanOptions};
use super::schedule::{Context, Schedule, Visit};
use super::search::{improve, neighbourhood, random_chain, Descent, Replayer, Scalar};
use super::{Link, Profile, Target};

pub use super::search::Point;

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

/// A plan of the front.
#[derive(Clone, Debug)]
pub struct FrontPlan {
    /// The visits in observing order.
    pub visits: Vec<Visit>,
    /// The plan played out.
    pub schedule: Schedule,
    /// Elapsed time to the end of the last observation, seconds (time objective).
    pub elapsed_s: f64,
    /// Propellant, kilograms (propellant objective).
    pub propellant_kg: f64,
}

impl FrontPlan {
    /// The plan of `schedule`.
    pub fn new(schedule: Schedule) -> FrontPlan {
        FrontPlan {
            visits: schedule.visits(),
            elapsed_s: schedule.elapsed_s(),
            propellant_kg: schedule.propellant_kg,
            schedule,
        }
    }

    /// The plan's objective values.
    pub fn point(&self) -> Point {
        (self.elapsed_s, self.propellant_kg)
    }

    /// Pool indices in observing order.
    pub fn order(&self) -> Vec<usize> {
        self.visits.iter().map(|v| v.target).collect()
    }
}

/// Relative difference under which two objective values count as the same.
const SAME: f64 = 1e-9;

fn same(a: Point, b: Point) -> bool {
    let close = |x: f64, y: f64| (x - y).abs() <= SAME * x.abs().max(y.abs()).max(1e-12);
    close(a.0, b.0) && close(a.1, b.1)
}

/// Sequences none of which dominates another, with no two of the same objective values.
#[derive(Clone, Debug, Default)]
pub struct Archive {
    items: Vec<(Vec<Visit>, Point, bool)>,
}

impl Archive {
    /// An empty archive.
    pub fn new() -> Archive {
        Archive::default()
    }

    /// Adds `visits` at `p` unless a sequence of the archive dominates it or has the same
    /// objective values; removes those it dominates. True when it was added.
    pub fn insert(&mut self, visits: &[Visit], p: Point) -> bool {
        if !(p.0.is_finite() && p.1.is_finite()) {
            return false;
        }
        if self.items.iter().any(|q| dominates(q.1, p) || same(q.1, p)) {
            return false;
        }
        self.items.retain(|q| !dominates(p, q.1));
        self.items.push((visits.to_vec(), p, false));
        true
    }

    /// Objective values of the archive.
    pub fn points(&self) -> Vec<Point> {
        self.items.iter().map(|q| q.1).collect()
    }

    /// Sequences in the archive.
    pub fn len(&self) -> usize {
        self.items.len()
    }

    /// True when empty.
    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }

    /// The sequences sorted by time.
    pub fn sorted(&self) -> Vec<(Vec<Visit>, Point)> {
        let mut v: Vec<(Vec<Visit>, Point)> =
            self.items.iter().map(|q| (q.0.clone(), q.1)).collect();
        v.sort_by(|a, b| a.1 .0.total_cmp(&b.1 .0).then(a.1 .1.total_cmp(&b.1 .1)));
        v
    }

    fn unexplored(&mut self) -> Option<Vec<Visit>> {
        let q = self.items.iter_mut().find(|q| !q.2)?;
        q.2 = true;
        Some(q.0.clone())
    }
}

/// How to search the front.
#[derive(Clone, Debug)]
pub struct FrontOptions {
    /// The planner's options (start, horizon, seed, threads, stop); its time limit is the
    /// fastest plan's.
    pub plan: PlanOptions,
    /// Time for the whole search.
    pub time_limit: Duration,
    /// Weights of the scalarised runs (the first is 0: time only).
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
/// Weights of the scalarised runs by default.
pub const DEFAULT_WEIGHTS: usize = 8;
/// Share of the time for the fastest plan.
pub const PLAN_SHARE: f64 = 0.2;
/// Share of the time for the scalarised runs; the Pareto local search has the rest.
pub const SCALARISED_SHARE: f64 = 0.3;
/// Plans at most for which the Pareto local search explores every plan one move away.
pub const FULL_NEIGHBOURHOOD_MAX: usize = 40;
/// Random chains tried around each archive plan of a larger front when it is explored.
pub const CHAINS_PER_PLAN: usize = 40;
/// Restarts without a new plan after which a search of small plans ends early.
pub const QUIET_RESTARTS: usize = 200;

/// Progress of a front search.
#[derive(Clone, Copy, Debug)]
pub struct FrontProgress {
    /// Plans on the front.
    pub plans: usize,
    /// Its hypervolume against [`FrontProgress::reference`], s·kg.
    pub hypervolume: f64,
    /// The reference point: 1.1 times the largest value of each objective over the front
    /// found so far.
    pub reference: Point,
    /// Plans played out so far.
    pub evaluations: u64,
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
    /// Objective values of every non-dominated plan found, sorted by time.
    pub archive_points: Vec<Point>,
    /// Hypervolume of every non-dominated plan found, against [`Front::reference`], s·kg.
    pub archive_hypervolume: f64,
    /// Hypervolume of the reported plans against [`Front::reference`], s·kg.
    pub hypervolume: f64,
    /// Hypervolume of the front of the scalarised runs alone, same reference, s·kg.
    pub scalarised_hypervolume: f64,
    /// The reference point: 1.1 times the largest value of each objective over the archive.
    pub reference: Point,
    /// Objective values of feasible plans seen that are not on the front (at most
    /// [`MAX_DOMINATED_KEPT`], evenly thinned), for pictures.
    pub dominated: Vec<Point>,
    /// The fastest plan ([`super::plan::plan`]); every front plan schedules its targets.
    pub single: Plan,
    /// Plans played out.
    pub evaluations: u64,
    /// Wall-clock seconds.
    pub seconds: f64,
    /// True when the search ended before its time because nothing new was being found.
    pub settled: bool,
}

/// Most dominated points kept for pictures.
pub const MAX_DOMINATED_KEPT: usize = 2_000;

/// What the searches have seen: the archive, and dominated points for pictures.
struct Found {
    archive: Archive,
    dominated: Vec<Point>,
    evaluations: u64,
}

impl Found {
    fn note(&mut self, v: &[Visit], p: Point) {
        self.evaluations += 1;
        if !self.archive.insert(v, p) && self.dominated.len() < 4 * MAX_DOMINATED_KEPT {
            self.dominated.push(p);
        }
    }
}

/// The Pareto local search: each step explores one archive plan not yet explored (every plan
/// one move away when the plans are small, and chains of up to three random moves), or, when
/// every plan is explored, restarts from a kicked plan of the archive with a short descent on
/// a random weight. Finished when small plans have seen [`QUIET_RESTARTS`] restarts in a row
/// without a change of the archive.
struct ParetoLocal<'c, 'a> {
    ctx: &'c Context<'a>,
    found: Found,
    time_scale: f64,
    kg_scale: f64,
    quiet: usize,
    small: bool,
}

impl Step for ParetoLocal<'_, '_> {
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        let ctx = self.ctx;
        if let Some(v) = self.found.archive.unexplored() {
            let mut rep = Replayer::new(ctx, &v);
            if self.small {
                for (cand, at) in neighbourhood(ctx, &v) {
                    if let Some(p) = rep.score(&cand, at) {
                        self.found.note(&cand, p);
                    }
                    if should_stop() {
                        return;
                    }
                }
            }
            for _ in 0..CHAINS_PER_PLAN {
                if let Some((cand, at)) = random_chain(ctx, &v, 3, rng) {
                    if let Some(p) = rep.score(&cand, at) {
                        self.found.note(&cand, p);
                    }
                }
            }
            return;
        }
        let before = self.found.archive.points();
        let all = self.found.archive.sorted();
        if all.is_empty() {
            self.quiet = QUIET_RESTARTS;
            return;
        }
        let pick = &all[rng.gen_range(0..all.len())].0;
        if let Some((kicked, _)) = random_chain(ctx, pick, 5, rng) {
            let objective = Scalar {
                time_scale: self.time_scale,
                kg_scale: self.kg_scale,
                weight: rng.gen_range(0.0..10.0),
            };
            let found = &mut self.found;
            let mut seen = |v: &[Visit], p: Point| found.note(v, p);
            if let Some(mut d) = Descent::new(ctx, &kicked, objective, &mut seen) {
                let budget = 20 * kicked.len() as u64 + 50;
                for _ in 0..budget {
                    if should_stop() {
                        break;
                    }
                    d.step(rng, should_stop);
                }
            }
        }
        let changed = self.found.archive.points() != before;
        self.quiet = if changed { 0 } else { self.quiet + 1 };
    }

    fn finished(&self) -> bool {
        self.small && self.quiet >= QUIET_RESTARTS
    }
}

/// Searches the front of `targets` under `links` (see the module documentation), calling
/// `progress` about once a second.
pub fn search_front(
    profile: &Profile,
    targets: &[Target],
    links: &[Link],
    options: &FrontOptions,
    progress: &dyn Fn(FrontProgress),
) -> Result<Front, PlanFailure> {
    let began = Instant::now();
    let deadline = began + options.time_limit;
    let mut plan_options = options.plan.clone();
    plan_options.time_limit = Some(options.time_limit.mul_f64(PLAN_SHARE));
    let single = plan(profile, targets, links, &plan_options)?;
    let ctx = Context::with_links(
        profile,
        targets,
        links,
        options.plan.start,
        options.plan.horizon_days,
    )?;
    let base = single.schedule.visits();
    let stop = options.plan.stop.clone();
    let mut found = Found {
        archive: Archive::new(),
        dominated: Vec::new(),
        evaluations: 0,
    };
    let p0 = (single.schedule.elapsed_s(), single.schedule.propellant_kg);
    found.archive.insert(&base, p0);
    let time_scale = p0.0.max(1.0);
    let kg_scale = p0.1.max(1e-9);
    let mut last_report = Instant::now();
    let mut report = |found: &Found| {
        if last_report.elapsed() >= Duration::from_secs(1) {
            last_report = Instant::now();
            let pts = found.archive.points();
            let reference = nadir(&pts);
            progress(FrontProgress {
                plans: pts.len(),
                hypervolume: hypervolume(&pts, reference),
                reference,
                evaluations: found.evaluations,
                seconds: began.elapsed().as_secs_f64(),
            });
        }
    };
    // Scalarised runs from the fastest plan, each under the loop owner with a slice of time.
    let weights = options.weights.max(1);
    let scal_deadline =
        (Instant::now() + options.time_limit.mul_f64(SCALARISED_SHARE)).min(deadline);
    if !base.is_empty() {
        for k in 0..weights {
            let weight = if k == 0 {
                0.0
            } else {
                // 0.05 to 20, evenly on a log scale.
                0.05 * 400f64.powf((k - 1) as f64 / (weights - 1).max(1) as f64)
            };
            let slice_end = Instant::now()
                + scal_deadline
                    .saturating_duration_since(Instant::now())
                    .div_f64((weights - k) as f64);
            let limits = StepLimits {
                seed: options.plan.seed,
                run: 10 + k as u64,
                steps: None,
                deadline: Some(slice_end),
                stop: stop.clone(),
                ..StepLimits::new(options.plan.seed)
            };
            let objective = Scalar {
                time_scale,
                kg_scale,
                weight,
            };
            let mut seen = |v: &[Visit], p: Point| found.note(v, p);
            improve(&ctx, &base, objective, &limits, &mut seen);
            report(&found);
        }
    }
    let scalarised = found.archive.points();
    // Pareto local search under the loop owner, one archive plan explored (or one restart) a
    // step.
    let mut pls = ParetoLocal {
        ctx: &ctx,
        found,
        time_scale,
        kg_scale,
        quiet: 0,
        small: base.len() <= FULL_NEIGHBOURHOOD_MAX,
    };
    if !base.is_empty() {
        let limits = StepLimits {
            seed: options.plan.seed,
            run: 9,
            steps: None,
            deadline: Some(deadline),
            stop: stop.clone(),
            report_every: Duration::from_secs(1),
        };
        run_steps(&limits, &mut pls, &mut |p| report(&p.found));
    }
    let settled = pls.finished();
    let Found {
        archive,
        mut dominated,
        evaluations,
    } = pls.found;
    // The reported plans, played out again in full.
    let sorted = archive.sorted();
    let archive_points: Vec<Point> = sorted.iter().map(|s| s.1).collect();
    let reference = nadir(&archive_points);
    let mut plans: Vec<FrontPlan> = Vec::new();
    for (v, _) in &sorted {
        if let Ok(Ok(s)) = ctx.play(v) {
            plans.push(FrontPlan::new(s));
        }
    }
    let plans = spread(plans, MAX_FRONT_PLANS);
    let points: Vec<Point> = plans.iter().map(FrontPlan::point).collect();
    let knee_at = knee(&points);
    dominated.retain(|p| !archive_points.iter().any(|q| same(*p, *q)));
    let step = dominated.len().div_ceil(MAX_DOMINATED_KEPT).max(1);
    let dominated: Vec<Point> = dominated.into_iter().step_by(step).collect();
    Ok(Front {
        knee: knee_at,
        archive_plans: archive_points.len(),
        archive_hypervolume: hypervolume(&archive_points, reference),
        hypervolume: hypervolume(&points, reference),
        scalarised_hypervolume: hypervolume(&scalarised, reference),
        archive_points,
        reference,
        dominated,
        plans,
        single,
        evaluations,
        seconds: began.elapsed().as_secs_f64(),
        settled,
    })
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

/// 1.1 times the largest value of each objective (the reference point of the hypervolume).
pub fn nadir(points: &[Point]) -> Point {
    let mx = points.iter().map(|p| p.0).fold(0.0f64, f64::max);
    let my = points.iter().map(|p| p.1).fold(0.0f64, f64::max);
    (1.1 * mx, 1.1 * my)
}
