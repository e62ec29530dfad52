//! From a pool of targets to a checked observing plan: the minimum-overhead order through the
//! core's asymmetric open-path search, played out in real time with repairs
//! ([`Context::simulate`]), beside a nearest-neighbour order played out the same way, so that
//! every plan says how much the search saved.
//!
//! The order is searched on the cost matrix of the Sun at the plan start (the costs change
//! slowly with the Sun, about a degree of solar elongation a day); the simulation then uses the
//! Sun of each moment.
//!
//! **Caution.** A planning aid: plans are proposals to be confirmed by the operations team's
//! validated tools.

use std::time::{Duration, Instant};

use super::geometry::{norm, Vec3};
use super::momentum::solar_torque_nm;
use super::schedule::{Context, PlanError, Runner, Schedule};
use super::slew::{cost_matrix_ms, Pointing};
use super::sun::sun_j2000;
use super::{Epoch, Profile, Target};
use std::cell::Cell;
use wend::{Ends, Method, SolveError, Solver, StopHandle, StopReason};

/// How to plan.
#[derive(Clone, Debug)]
pub struct PlanOptions {
    /// Plan start.
    pub start: Epoch,
    /// Length of the horizon, days.
    pub horizon_days: f64,
    /// Time for the order search; `None` for [`default_time_limit`].
    pub time_limit: Option<Duration>,
    /// Seed of the search.
    pub seed: u64,
    /// Threads of the search; `None` for one per core.
    pub threads: Option<usize>,
    /// The core method that searches the order.
    pub method: Method,
    /// Stops the search early; the plan is then made from the best order so far.
    pub stop: StopHandle,
    /// Weight of the momentum surrogate in the searched costs, seconds per N·m·s (0: time
    /// only). See [`weighted_matrix`].
    pub momentum_weight_s_per_nms: f64,
}

impl PlanOptions {
    /// Defaults: a 14-day horizon from `start`, the default time limit, seed 0, `lk`.
    pub fn new(start: Epoch) -> PlanOptions {
        PlanOptions {
            start,
            horizon_days: DEFAULT_HORIZON_DAYS,
            time_limit: None,
            seed: 0,
            threads: None,
            method: Method::Lk,
            stop: StopHandle::new(),
            momentum_weight_s_per_nms: 0.0,
        }
    }
}

/// Planning horizon by default, days.
pub const DEFAULT_HORIZON_DAYS: f64 = 14.0;

/// Search time by default for `n` targets: 2 s, plus a second per hundred targets past two
/// hundred (5 s at 500 targets, 50 s at 5,000), so that large pools get time in proportion.
pub fn default_time_limit(n: usize) -> Duration {
    Duration::from_secs_f64(2.0 + n.saturating_sub(200) as f64 / 100.0)
}

/// Independent runs of the order search.
pub const SEARCH_RUNS: usize = 2;

/// Kicks per run of the order search for `n` targets: `max(1000, 2n)`. Small pools end long
/// before the time limit (the order of the 72 demo targets stops changing after a few hundred
/// kicks); large ones use the time limit.
pub fn search_iterations(n: usize) -> u64 {
    (2 * n as u64).max(1000)
}

/// The whole-horizon path runs only for pools of at most this many targets that fit …
pub const WHOLE_MAX_TARGETS: usize = 3_000;
/// … and whose dwells add up to at most this share of the horizon: a path through a pool
/// much larger than the horizon holds is mostly never played, and only the rolling search
/// chooses what to leave out.
pub const WHOLE_MAX_DWELL_SHARE: f64 = 1.5;

/// Why planning failed.
#[derive(Debug, thiserror::Error)]
pub enum PlanFailure {
    /// Inputs the model refuses.
    #[error(transparent)]
    Input(#[from] PlanError),
    /// The core search failed.
    #[error(transparent)]
    Solve(#[from] SolveError),
    /// The cost matrix could not be built.
    #[error(transparent)]
    Cost(#[from] super::slew::SlewCostError),
}

/// A plan and what it is measured against.
#[derive(Clone, Debug)]
pub struct Plan {
    /// The searched order played out with repairs.
    pub schedule: Schedule,
    /// The nearest neighbour in time from the same first target: each time the cheapest
    /// target (on the costs of the plan start) among those that fit now.
    pub baseline: Schedule,
    /// The whole-horizon order (pool indices), before repairs; empty when that strategy did
    /// not run (see [`WHOLE_MAX_DWELL_SHARE`]).
    pub order: Vec<usize>,
    /// Which strategy made the plan's first order.
    pub strategy: Strategy,
    /// True when re-searching that order stage by stage improved it (see [`Plan::schedule`]).
    pub polished: bool,
    /// Every schedule the strategies made (whole, rolling, rolling-near, nearest, polished),
    /// unscheduled lists not completed: the plans a front search starts from.
    pub alternatives: Vec<Schedule>,
    /// Its cost on the matrix of the Sun at the plan start, seconds (0 when it did not run).
    pub order_cost_s: f64,
    /// The cost of a nearest-neighbour path through the same targets on the same matrix,
    /// seconds.
    pub baseline_cost_s: f64,
    /// Seconds spent on cost matrices, searches and simulations of both strategies.
    pub search_seconds: f64,
    /// Wall-clock seconds of the whole planning.
    pub seconds: f64,
    /// Why the planning ended when it did.
    pub stop_reason: PlanStop,
}

/// Why a planning ended when it did: the order searches (the whole-horizon path, the stages
/// of the rolling searches and of the polish) each have a share of the time limit.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PlanStop {
    /// Every order search ended before its share of the time: each of its runs used up its
    /// kicks ([`search_iterations`]) or found no improvement left; more time would not
    /// change the plan.
    SearchesDone,
    /// At least one order search was cut by its share of the time limit; more time might
    /// give a better plan.
    TimeLimit,
    /// The stop handle asked for it (Ctrl-C): the plan is made from the best orders so far.
    Cancelled,
}

impl PlanStop {
    /// The name in the JSON summary: `searches_done`, `time_limit` or `cancelled`.
    pub fn name(self) -> &'static str {
        match self {
            PlanStop::SearchesDone => "searches_done",
            PlanStop::TimeLimit => "time_limit",
            PlanStop::Cancelled => "cancelled",
        }
    }

    /// A sentence for people.
    pub fn explain(self) -> &'static str {
        match self {
            PlanStop::SearchesDone => {
                "every order search ended before its share of the time limit (all runs used \
                 up their iterations or found no improvement left), so more time would not change \
                 the plan"
            }
            PlanStop::TimeLimit => {
                "at least one order search used up its share of the time limit (the limit is \
                 shared among the whole-horizon path and the searches of each day); more time \
                 might find a better plan"
            }
            PlanStop::Cancelled => "stopped on request; the plan uses the best orders so far",
        }
    }
}

/// Length of a stage of the rolling planner, days: after this much plan time the remaining
/// targets are searched again from where the telescope is.
pub const STAGE_DAYS: f64 = 1.0;
/// A stage's search takes the targets whose windows close first, up to this many days of
/// dwell (twice a stage, so that the search has a choice of what to leave for later).
pub const STAGE_FILL_DAYS: f64 = 2.0;

/// How the plan's order was made.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Strategy {
    /// One open path through every target on the costs of the plan start, played out with
    /// repairs.
    Whole,
    /// Stage by stage: from where the telescope is, an open path through the targets that
    /// fit now, those whose windows close first taken first; re-searched every stage.
    Rolling,
    /// Stage by stage like [`Strategy::Rolling`], a stage taking the targets cheapest to
    /// reach from where the telescope is.
    RollingNear,
    /// The nearest neighbour in time (the baseline), when it was the best start.
    Nearest,
}

impl Strategy {
    /// `whole`, `rolling` or `nearest`.
    pub fn name(self) -> &'static str {
        match self {
            Strategy::Whole => "whole",
            Strategy::Rolling => "rolling",
            Strategy::RollingNear => "rolling-near",
            Strategy::Nearest => "nearest",
        }
    }

    /// How the strategy makes an order, in plain words for the text summary.
    pub fn describe(self) -> &'static str {
        match self {
            Strategy::Whole => "one path through every target on the costs of the plan start",
            Strategy::Rolling => {
                "a day at a time from where the telescope is, the targets leaving the band \
                 soonest first"
            }
            Strategy::RollingNear => {
                "a day at a time from where the telescope is, the targets cheapest to reach first"
            }
            Strategy::Nearest => "each time the cheapest target that fits now",
        }
    }
}

/// The solar-pressure momentum impulse of each target's dwell at `at` (its torque at its
/// nominal attitude times its dwell), N·m·s; zero where the attitude is undefined.
pub fn impulses_nms(profile: &Profile, targets: &[Target], at: Epoch) -> Vec<Vec3> {
    let sun = sun_j2000(at);
    targets
        .iter()
        .map(|t| match Pointing::new(t, &sun.direction) {
            Some(p) => {
                let tau = solar_torque_nm(profile, &p.attitude, &sun.direction, sun.distance_au);
                [
                    tau[0] * t.duration_s,
                    tau[1] * t.duration_s,
                    tau[2] * t.duration_s,
                ]
            }
            None => [0.0; 3],
        })
        .collect()
}

/// The cost matrix the searches use, milliseconds: [`cost_matrix_ms`] plus, with a positive
/// `weight_s_per_nms`, the pairwise momentum surrogate `weight · |I_i + I_j|` on each step
/// `i → j` (`I` from [`impulses_nms`]): neighbours whose impulses cancel are cheap together,
/// so the searched order keeps the stored momentum small and dumps rare. The surrogate only
/// steers the search; plans are always measured by the simulation.
pub fn weighted_matrix(
    profile: &Profile,
    targets: &[Target],
    at: Epoch,
    weight_s_per_nms: f64,
) -> Result<Vec<Vec<i64>>, super::slew::SlewCostError> {
    let mut m = cost_matrix_ms(profile, targets, at)?;
    if weight_s_per_nms > 0.0 && weight_s_per_nms.is_finite() {
        let imp = impulses_nms(profile, targets, at);
        for (i, row) in m.iter_mut().enumerate() {
            for (j, cell) in row.iter_mut().enumerate() {
                if i != j {
                    let sum = [
                        imp[i][0] + imp[j][0],
                        imp[i][1] + imp[j][1],
                        imp[i][2] + imp[j][2],
                    ];
                    let extra = (weight_s_per_nms * norm(&sum) * 1000.0).round();
                    *cell = cell.saturating_add(extra.min(1e15) as i64);
                }
            }
        }
    }
    Ok(m)
}

/// An open path over the matrix `m` (`m[i][j]`: cost from node `i` to node `j`), starting at
/// node 0 when `fixed_first`, with `limit` of search: node indices in path order.
fn search_matrix(
    m: &[Vec<i64>],
    fixed_first: bool,
    limit: Duration,
    options: &PlanOptions,
    cut: &Cell<bool>,
) -> Result<Vec<usize>, PlanFailure> {
    Ok(match m.len() {
        0 => Vec::new(),
        1 => vec![0],
        2 if fixed_first || m[0][1] <= m[1][0] => vec![0, 1],
        2 => vec![1, 0],
        n => {
            let ends = if fixed_first {
                Ends::Start(0)
            } else {
                Ends::Open
            };
            let mut solver = Solver::from_matrix(m)?
                .ends(ends)
                .runs(SEARCH_RUNS)
                .iterations(search_iterations(n))
                .method(options.method)
                .seed(options.seed)
                .time_limit(limit)
                .stop_handle(options.stop.clone());
            if let Some(t) = options.threads {
                solver = solver.threads(t);
            }
            let found = solver.solve()?;
            if found.stop_reason == StopReason::TimeLimit {
                cut.set(true);
            }
            found.tour.order().to_vec()
        }
    })
}

/// [`search_matrix`] through `nodes` (pool indices) on the costs of the Sun at `at`: pool
/// indices in path order.
fn search_path(
    ctx: &Context,
    nodes: &[usize],
    at: Epoch,
    fixed_first: bool,
    limit: Duration,
    options: &PlanOptions,
    cut: &Cell<bool>,
) -> Result<Vec<usize>, PlanFailure> {
    let subset: Vec<Target> = nodes.iter().map(|&i| ctx.targets()[i].clone()).collect();
    let m = weighted_matrix(
        ctx.profile(),
        &subset,
        at,
        options.momentum_weight_s_per_nms,
    )?;
    let local = search_matrix(&m, fixed_first, limit, options, cut)?;
    Ok(local.iter().map(|&k| nodes[k]).collect())
}

/// Nearest neighbour on a full matrix from `first`: the cheapest next target each time.
fn nearest_order(m: &[Vec<i64>], first: usize) -> Vec<usize> {
    let n = m.len();
    let mut used = vec![false; n];
    let mut order = Vec::with_capacity(n);
    let mut at = first;
    used[at] = true;
    order.push(at);
    while order.len() < n {
        let row = &m[at];
        let next = (0..n)
            .filter(|&j| !used[j])
            .min_by_key(|&j| (row[j], j))
            .unwrap_or(at);
        used[next] = true;
        order.push(next);
        at = next;
    }
    order
}

fn path_cost_s(m: &[Vec<i64>], order: &[usize]) -> f64 {
    order
        .windows(2)
        .map(|w| m[w[0]][w[1]] as f64 / 1000.0)
        .sum()
}

/// Which targets a stage of the rolling planner takes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Selection {
    /// Those whose windows close first.
    Closing,
    /// Those cheapest to reach from where the telescope is.
    Near,
}

/// The rolling planner (see [`Strategy::Rolling`]); `limit` is the search time of the whole
/// horizon, shared out by stage.
fn rolling(
    ctx: &Context,
    candidates: &[usize],
    options: &PlanOptions,
    limit: Duration,
    selection: Selection,
    cut: &Cell<bool>,
) -> Result<Schedule, PlanFailure> {
    let targets = ctx.targets();
    let stages = (options.horizon_days / STAGE_DAYS).ceil().max(1.0);
    let stage_limit = Duration::from_secs_f64((limit.as_secs_f64() / stages).max(0.05));
    let mut run = Runner::new(ctx);
    let mut left: Vec<usize> = candidates.to_vec();
    loop {
        left.retain(|&j| !run.dropped(j));
        if left.is_empty() || options.stop.is_stopped() {
            break;
        }
        let now = run.now();
        let key = |j: usize| match selection {
            Selection::Closing => run.window_closes(j).map_or(f64::INFINITY, |e| e.jd),
            Selection::Near => run.transition_s(j),
        };
        let mut fit: Vec<(f64, usize)> = left
            .iter()
            .filter(|&&j| run.may_fit_soon(j))
            .map(|&j| (key(j), j))
            .collect();
        if fit.is_empty() {
            if !run.wait_for_opening(&left) {
                break;
            }
            continue;
        }
        fit.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let mut nodes: Vec<usize> = run.last().into_iter().collect();
        let mut dwell_days = 0.0;
        for &(_, j) in &fit {
            if dwell_days >= STAGE_FILL_DAYS {
                break;
            }
            nodes.push(j);
            dwell_days += targets[j].duration_s / 86_400.0;
        }
        let fixed = run.last().is_some();
        let path = search_path(ctx, &nodes, now, fixed, stage_limit, options, cut)?;
        let queue: Vec<usize> = if fixed { path[1..].to_vec() } else { path };
        let until = now.jd + STAGE_DAYS;
        let before = run.scheduled();
        let mut skipped: Vec<usize> = Vec::new();
        let mut queue = queue.into_iter();
        while run.now().jd < until {
            let mut step = run.first_fitting(&mut skipped, true);
            while step.is_none() {
                let Some(j) = queue.next() else { break };
                step = run.try_target(j);
                if step.is_none() && !run.dropped(j) {
                    skipped.push(j);
                }
            }
            match step {
                Some(s) => run.commit(s),
                None => break,
            }
        }
        if run.scheduled() == before && !run.wait_for_opening(&left) {
            break;
        }
    }
    Ok(run.finish(&left))
}

/// Nearest neighbour in time: from `first`, each time the target of lowest cost (on the
/// costs of the plan start, row of the last target) among those that fit now, waiting for the
/// next window when none does.
fn nearest_in_time(ctx: &Context, candidates: &[usize], m: &[Vec<i64>], first: usize) -> Schedule {
    let mut run = Runner::new(ctx);
    // Position of each pool index in `candidates` (the rows and columns of `m`).
    let mut at = vec![usize::MAX; ctx.targets().len()];
    for (k, &j) in candidates.iter().enumerate() {
        at[j] = k;
    }
    let mut next: Option<usize> = Some(first);
    loop {
        let chosen = match next.take() {
            Some(j) => run.try_target(j),
            None => {
                let mut by_cost: Vec<usize> = candidates
                    .iter()
                    .copied()
                    .filter(|&j| run.may_fit_soon(j))
                    .collect();
                if let Some(last) = run.last() {
                    let row = &m[at[last]];
                    by_cost.sort_by_key(|&j| (row[at[j]], j));
                }
                by_cost.into_iter().find_map(|j| run.try_target(j))
            }
        };
        match chosen {
            Some(step) => run.commit(step),
            None => {
                if !run.wait_for_opening(candidates) {
                    break;
                }
            }
        }
    }
    let left: Vec<usize> = candidates
        .iter()
        .copied()
        .filter(|&j| !run.dropped(j))
        .collect();
    run.finish(&left)
}

/// Re-searches the order of `schedule`'s observations stage by stage (the observations that
/// start within each [`STAGE_DAYS`], from the last target of the stage before, on the costs of
/// the Sun at the stage's first start) and plays the new order out with repairs.
fn polish(
    ctx: &Context,
    schedule: &Schedule,
    options: &PlanOptions,
    limit: Duration,
    cut: &Cell<bool>,
) -> Result<Schedule, PlanFailure> {
    let obs = &schedule.observations;
    let stages = (options.horizon_days / STAGE_DAYS).ceil().max(1.0);
    let stage_limit = Duration::from_secs_f64((limit.as_secs_f64() / stages).max(0.05));
    let mut order: Vec<usize> = Vec::with_capacity(obs.len());
    let mut k = 0;
    while k < obs.len() {
        let stage_end = obs[k].start.jd + STAGE_DAYS;
        let mut nodes: Vec<usize> = order.last().copied().into_iter().collect();
        let fixed = !nodes.is_empty();
        let at = obs[k].start;
        while k < obs.len() && obs[k].start.jd < stage_end {
            nodes.push(obs[k].target);
            k += 1;
        }
        let path = search_path(ctx, &nodes, at, fixed, stage_limit, options, cut)?;
        order.extend(if fixed { &path[1..] } else { &path[..] });
    }
    Ok(ctx.simulate(&order)?)
}

/// Lists every candidate that `schedule` neither observes nor lists, with its reason.
fn complete(ctx: &Context, schedule: &mut Schedule, candidates: &[usize]) {
    let mut listed = vec![false; ctx.targets().len()];
    for o in &schedule.observations {
        listed[o.target] = true;
    }
    for u in &schedule.unscheduled {
        listed[u.target] = true;
    }
    for &j in candidates {
        if !listed[j] {
            schedule.unscheduled.push(ctx.left_out(j, schedule.end));
        }
    }
    schedule.unscheduled.sort_by_key(|u| u.target);
}

/// True when `a` is a better plan than `b`: more observations, then less overhead without
/// waiting (slews, settling, thermal, setups, dumps), then less waiting. Waiting comes last
/// because it is set by when the targets enter the band more than by the order: two plans
/// that end with the same late target have the same total overhead.
fn better(a: &Schedule, b: &Schedule) -> bool {
    let busy = |s: &Schedule| s.overhead_s - s.wait_s;
    match a.observations.len().cmp(&b.observations.len()) {
        std::cmp::Ordering::Greater => true,
        std::cmp::Ordering::Less => false,
        std::cmp::Ordering::Equal => (busy(a), a.wait_s) < (busy(b), b.wait_s),
    }
}

/// Plans `targets` for the observatory `profile`: both strategies of [`Strategy`], the
/// better plan kept (more observations, then less overhead), beside the nearest neighbour in
/// time from the same first target.
pub fn plan(
    profile: &Profile,
    targets: &[Target],
    options: &PlanOptions,
) -> Result<Plan, PlanFailure> {
    let began = Instant::now();
    let ctx = Context::new(profile, targets, options.start, options.horizon_days)?;
    let (candidates, screened) = ctx.screen();
    let limit = options
        .time_limit
        .unwrap_or_else(|| default_time_limit(candidates.len()));
    let searched = Instant::now();
    let cut = Cell::new(false);
    // The costs of the plan start over every candidate: for the whole-horizon path, the
    // nearest neighbour in time and the comparison of their path costs.
    let pool: Vec<Target> = candidates.iter().map(|&i| targets[i].clone()).collect();
    let m = weighted_matrix(
        profile,
        &pool,
        options.start,
        options.momentum_weight_s_per_nms,
    )?;
    let dwell_s: f64 = pool.iter().map(|t| t.duration_s).sum();
    let whole_fits = candidates.len() <= WHOLE_MAX_TARGETS
        && dwell_s <= WHOLE_MAX_DWELL_SHARE * options.horizon_days * 86_400.0;
    // Time: two fifths for the whole-horizon path (when it runs), the rest of four fifths
    // shared by the two rolling searches, one fifth to polish.
    let share = limit / 5;
    let (whole, order) = if whole_fits {
        let local = search_matrix(&m, false, share * 2, options, &cut)?;
        let order: Vec<usize> = local.iter().map(|&k| candidates[k]).collect();
        (Some(ctx.simulate(&order)?), local)
    } else {
        (None, Vec::new())
    };
    let order_cost_s = path_cost_s(&m, &order);
    let order: Vec<usize> = order.iter().map(|&k| candidates[k]).collect();
    let rolling_limit = if whole_fits { share } else { share * 2 };
    let staged = rolling(
        &ctx,
        &candidates,
        options,
        rolling_limit,
        Selection::Closing,
        &cut,
    )?;
    let near = rolling(
        &ctx,
        &candidates,
        options,
        rolling_limit,
        Selection::Near,
        &cut,
    )?;
    let first = whole
        .iter()
        .chain(std::iter::once(&staged))
        .find_map(|s| s.observations.first().map(|o| o.target));
    let (baseline, baseline_cost_s) = match first {
        Some(f) => {
            let k = candidates.iter().position(|&j| j == f).unwrap_or(0);
            let local = nearest_order(&m, k);
            (
                nearest_in_time(&ctx, &candidates, &m, f),
                path_cost_s(&m, &local),
            )
        }
        None => (ctx.simulate(&[])?, 0.0),
    };
    let mut tried: Vec<(Schedule, Strategy)> =
        whole.into_iter().map(|s| (s, Strategy::Whole)).collect();
    tried.push((staged, Strategy::Rolling));
    tried.push((near, Strategy::RollingNear));
    tried.push((baseline.clone(), Strategy::Nearest));
    let mut best = 0;
    for k in 1..tried.len() {
        if better(&tried[k].0, &tried[best].0) {
            best = k;
        }
    }
    let (mut schedule, strategy) = tried[best].clone();
    let again = polish(&ctx, &schedule, options, share, &cut)?;
    let polished = better(&again, &schedule);
    tried.push((again.clone(), strategy));
    if polished {
        schedule = again;
    }
    let alternatives: Vec<Schedule> = tried.into_iter().map(|(s, _)| s).collect();
    let search_seconds = searched.elapsed().as_secs_f64();
    let mut baseline = baseline;
    complete(&ctx, &mut schedule, &candidates);
    complete(&ctx, &mut baseline, &candidates);
    for s in [&mut schedule, &mut baseline] {
        s.unscheduled.extend(screened.iter().cloned());
        s.unscheduled.sort_by_key(|u| u.target);
    }
    Ok(Plan {
        order_cost_s,
        baseline_cost_s,
        schedule,
        baseline,
        order,
        strategy,
        polished,
        alternatives,
        search_seconds,
        seconds: began.elapsed().as_secs_f64(),
        stop_reason: if options.stop.is_stopped() {
            PlanStop::Cancelled
        } else if cut.get() {
            PlanStop::TimeLimit
        } else {
            PlanStop::SearchesDone
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::{sky_profile, sky_targets};

    const START: Epoch = Epoch { jd: 2_461_465.5 };

    fn options() -> PlanOptions {
        let mut o = PlanOptions::new(START);
        o.horizon_days = 3.0;
        o.time_limit = Some(Duration::from_millis(500));
        o.threads = Some(1);
        o.seed = 3;
        o
    }

    #[test]
    fn a_plan_lists_every_target_once_and_is_no_worse_than_the_nearest_neighbour() {
        let p = sky_profile();
        let targets = sky_targets(150, 11);
        let made = plan(&p, &targets, &options()).unwrap();
        for s in [&made.schedule, &made.baseline] {
            let mut seen = vec![0; targets.len()];
            for o in &s.observations {
                seen[o.target] += 1;
            }
            for u in &s.unscheduled {
                seen[u.target] += 1;
            }
            assert!(seen.iter().all(|&c| c == 1));
        }
        assert!(!better(&made.baseline, &made.schedule));
        assert!(made.schedule.observations.len() > 20);
        // The whole-horizon order is a permutation of the candidates.
        let ctx = Context::new(&p, &targets, START, 3.0).unwrap();
        let (mut candidates, _) = ctx.screen();
        let mut order = made.order.clone();
        order.sort_unstable();
        candidates.sort_unstable();
        assert_eq!(order, candidates);
    }

    #[test]
    fn the_same_seed_on_one_thread_gives_the_same_plan() {
        let p = sky_profile();
        let targets = sky_targets(90, 2);
        let mut o = options();
        // A kick budget rather than the clock decides where the searches end.
        o.time_limit = Some(Duration::from_secs(60));
        let a = plan(&p, &targets, &o).unwrap();
        let b = plan(&p, &targets, &o).unwrap();
        assert_eq!(a.schedule, b.schedule);
        assert_eq!(a.order, b.order);
    }

    #[test]
    fn tiny_pools_are_planned_without_a_search() {
        let p = sky_profile();
        let pool = sky_targets(40, 5);
        let ctx = Context::new(&p, &pool, START, 3.0).unwrap();
        let (candidates, _) = ctx.screen();
        for n in 0..=3 {
            let targets: Vec<Target> = candidates
                .iter()
                .take(n)
                .map(|&i| pool[i].clone())
                .collect();
            let made = plan(&p, &targets, &options()).unwrap();
            assert_eq!(
                made.schedule.observations.len() + made.schedule.unscheduled.len(),
                n
            );
            assert_eq!(made.schedule.observations.len(), n, "n = {n}");
        }
    }
}
