//! From a pool of targets to a checked observing plan: the fastest plan that keeps every
//! window and link, leaving out lowest priority first.
//!
//! 1. **Screening** ([`Context::screen`]): targets never in the band, whose windows are too
//!    short, outside their proposal window, with too much momentum of their own, or linked to
//!    one of those are left out with their reason.
//! 2. **The core's constrained search** ([`wend::constraints::solve_sequence_with`]): the
//!    remaining targets as stops of an open path from the start, each with its allowed
//!    windows (visibility inside the proposal window) as time windows on the start of its
//!    dwell, its dwell as service time, every target optional with a penalty by priority (one
//!    target of a priority outweighs all targets of lower priorities when the numbers allow,
//!    see [`priority_penalties`]), `after` links as precedence with least and greatest lags,
//!    groups as fixed edges, the elapsed time (completion) as the objective; the costs are
//!    the transition times with the Sun of the plan start. A rule of the caller's
//!    ([`MomentumRule`]) carries the momentum along each order and breaks when a dump does
//!    not fit in the waiting and slack before an observation.
//! 3. **Replay and polish**: the order is played out by the planner's own rules
//!    ([`Context::play_lenient`]: real Sun, rolls, parking, dumps); then iterated local search
//!    on the replay ([`super::search::improve`]: moves, swaps, reversals and roll changes,
//!    elapsed time first, propellant to break ties), and the targets left out are tried again,
//!    highest priority first.
//! 4. **Baseline**: the targets in the order their allowed windows close, played out the same
//!    way, so that every plan says what the search gained.
//!
//! **Caution.** A planning aid: plans are proposals to be confirmed by the operations team's
//! validated tools.

use std::time::{Duration, Instant};

use rand_pcg::Pcg64;
use wend::constraints::{
    solve_sequence_with, Constraints, Objective, Precedence, Route, Row, SequenceError, StepRule,
    Window as CoreWindow,
};
use wend::{run_steps, Hooks, MatrixCost, Settings, Step, StepLimits, StopHandle, StopReason};

use super::geometry::{norm, Vec3};
use super::schedule::{Context, PlanError, Reason, Schedule, Unscheduled, Visit};
use super::search::{improve, random_chain, Point, Scalar};
use super::{Epoch, Link, LinkKind, Profile, Target, LOWEST_PRIORITY};

/// How to plan.
#[derive(Clone, Debug)]
pub struct PlanOptions {
    /// Plan start.
    pub start: Epoch,
    /// Length of the horizon, days.
    pub horizon_days: f64,
    /// Time for the whole planning; `None` for [`default_time_limit`].
    pub time_limit: Option<Duration>,
    /// Seed of the searches.
    pub seed: u64,
    /// Threads of the core search; `None` for one per core.
    pub threads: Option<usize>,
    /// Stops the search early; the plan is then made from the best order so far.
    pub stop: StopHandle,
}

impl PlanOptions {
    /// Defaults: a [`DEFAULT_HORIZON_DAYS`] horizon from `start`, the default time limit,
    /// seed 0.
    pub fn new(start: Epoch) -> PlanOptions {
        PlanOptions {
            start,
            horizon_days: DEFAULT_HORIZON_DAYS,
            time_limit: None,
            seed: 0,
            threads: None,
            stop: StopHandle::new(),
        }
    }
}

/// Planning horizon by default, days.
pub const DEFAULT_HORIZON_DAYS: f64 = 30.0;

/// Planning time by default for `n` targets: 15 s, plus a second per hundred targets past two
/// hundred (18 s at 500 targets, 33 s at 2,000). Pools of a hundred targets or so end on their
/// budgets well before it (the demo in about 5 s), so that the plan is reproducible.
pub fn default_time_limit(n: usize) -> Duration {
    Duration::from_secs_f64(15.0 + n.saturating_sub(200) as f64 / 100.0)
}

/// Share of the time for the core's search.
pub const CORE_SHARE: f64 = 0.5;
/// Share of the time left after the core for fitting in the targets its order leaves out (only
/// while some are left out); the polish has the rest.
pub const FIT_SHARE: f64 = 0.5;

/// Most targets the core's constrained search takes: each of its moves schedules the whole
/// order (links and the momentum rule need it), so that a descent over more targets takes
/// longer than a planning budget; larger pools start from the closing order.
pub const CORE_MAX_TARGETS: usize = 200;

/// Kicks of the core's search for `n` targets: `20 + n / 10` (a kick costs a full schedule
/// of every move tried, as links and the momentum rule need; the polish after it is cheaper
/// per move).
pub fn core_kicks(n: usize) -> u64 {
    20 + n as u64 / 10
}

/// Plays of the polish for `n` targets: `2000 + 30 n`. The searches after the core end on
/// budgets of plays, so that the same seed gives the same plan whatever the machine's speed,
/// when the time limit does not cut them first (the summary says which).
pub fn polish_plays(n: usize) -> u64 {
    2000 + 30 * n as u64
}

/// Plays of the search that fits in left-out targets, for `n` targets: `500 + 20 n`.
pub fn fit_plays(n: usize) -> u64 {
    500 + 20 * n as u64
}

/// Why planning failed.
#[derive(Debug, thiserror::Error)]
pub enum PlanFailure {
    /// Inputs the model refuses.
    #[error(transparent)]
    Input(#[from] PlanError),
    /// The core search failed.
    #[error(transparent)]
    Solve(#[from] SequenceError),
    /// The cost matrix could not be built.
    #[error("transition costs: {0}")]
    Cost(String),
}

/// A plan and what it is measured against.
#[derive(Clone, Debug)]
pub struct Plan {
    /// The plan.
    pub schedule: Schedule,
    /// The targets in the order their allowed windows close, played out the same way.
    pub baseline: Schedule,
    /// The core search's order (pool indices), before the replay and the polish.
    pub core_order: Vec<usize>,
    /// True when the core found an order that keeps every window and link on its costs (false
    /// also when the pool is larger than [`CORE_MAX_TARGETS`] and the core did not run).
    pub core_feasible: bool,
    /// Objective values (elapsed seconds, propellant kilograms) of the core's order played
    /// out, before the polish.
    pub core_point: Point,
    /// Plays made by the polish.
    pub polish_plays: u64,
    /// Seconds spent in the searches.
    pub search_seconds: f64,
    /// Wall-clock seconds of the whole planning.
    pub seconds: f64,
    /// Why the planning ended when it did.
    pub stop_reason: PlanStop,
}

/// Why a planning ended when it did.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PlanStop {
    /// Every search ended before its share of the time (no improvement left to find by its
    /// moves); more time would not change the plan.
    SearchesDone,
    /// A search used up its share of the time limit; more time might give a better plan.
    TimeLimit,
    /// The stop handle asked for it (Ctrl-C): the plan is made from the best order so far.
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
                "every search ended before its share of the time limit with no improvement \
                 left to find, so more time would not change the plan"
            }
            PlanStop::TimeLimit => {
                "a search used up its share of the time limit; more time might find a better plan"
            }
            PlanStop::Cancelled => "stopped on request; the plan uses the best order so far",
        }
    }
}

/// Penalties of leaving out a target of each priority (index 1 to 9), for the core's
/// objective of elapsed milliseconds plus penalties: each at least `base` (more than any
/// elapsed time, so that leaving a target out never saves time), and each priority's at least
/// the sum over every target of lower priority plus one, when that fits in `i64` with room
/// for every penalty at once; otherwise the ratio between neighbouring priorities is the
/// largest that fits (the README says so).
pub fn priority_penalties(counts: &[usize; 10], base: i64) -> [i64; 10] {
    let total: usize = counts.iter().sum();
    let room = i64::MAX / 4 / (total as i64 + 1).max(1);
    let mut w = [0i64; 10];
    // Strictly lexicographic where it fits.
    let mut strict = true;
    let mut below: i64 = 0;
    for p in (1..=LOWEST_PRIORITY as usize).rev() {
        let wp = base.checked_add(below);
        match wp {
            Some(v) if v <= room => {
                w[p] = v;
                match (counts[p] as i64)
                    .checked_mul(v)
                    .and_then(|x| x.checked_add(below))
                {
                    Some(b) => below = b,
                    None => strict = false,
                }
            }
            _ => strict = false,
        }
        if !strict {
            break;
        }
    }
    if strict {
        return w;
    }
    // Geometric: the largest ratio r with base · r^8 within the room.
    let levels = LOWEST_PRIORITY as i32 - 1;
    let r = ((room as f64 / base.max(1) as f64).powf(1.0 / levels as f64)).max(1.0);
    for (p, wp) in w.iter_mut().enumerate().skip(1) {
        let k = (LOWEST_PRIORITY as usize - p) as i32;
        *wp = ((base as f64) * r.powi(k)).min(room as f64) as i64;
    }
    w
}

/// The momentum carried along an order of the core's search, with the torque of each target
/// (at its first candidate roll) over the whole step to it; a step that needs a dump breaks
/// the rule by the dump time that the waiting and the slack before the observation cannot
/// hold, in milliseconds.
pub struct MomentumRule<'c, 'a> {
    ctx: &'c Context<'a>,
    /// Torques of each core node (node 0, the start, has none) at the start of each day of the
    /// horizon and its end, inertial, N·m; read between samples by linear interpolation.
    torques: Vec<Vec<Vec3>>,
    dump_ms: i64,
}

impl<'c, 'a> MomentumRule<'c, 'a> {
    /// The rule over the core nodes `[start, cands…]`.
    pub fn new(ctx: &'c Context<'a>, cands: &[usize], horizon_days: f64) -> Self {
        let days = horizon_days.ceil().max(1.0) as usize;
        let torques = std::iter::once(Vec::new())
            .chain(cands.iter().map(|&j| {
                (0..=days)
                    .map(|d| {
                        ctx.nominal_torque(
                            j,
                            Epoch {
                                jd: ctx.start().jd + d as f64,
                            },
                        )
                    })
                    .collect()
            }))
            .collect();
        MomentumRule {
            ctx,
            torques,
            dump_ms: (ctx.profile().dump_s * 1000.0).ceil() as i64,
        }
    }

    fn torque(&self, node: usize, at_ms: i64) -> Option<Vec3> {
        let t = self.torques.get(node)?;
        let last = t.len().checked_sub(1)?;
        let day = (at_ms as f64 / 86_400_000.0).clamp(0.0, last as f64);
        let k = (day.floor() as usize).min(last.saturating_sub(1));
        let f = day - k as f64;
        let (a, b) = (t[k], t[(k + 1).min(last)]);
        Some([
            a[0] + f * (b[0] - a[0]),
            a[1] + f * (b[1] - a[1]),
            a[2] + f * (b[2] - a[2]),
        ])
    }
}

impl StepRule for MomentumRule<'_, '_> {
    type State = Vec3;

    fn begin(&self, _first: &Row) -> Vec3 {
        self.ctx.profile().start_momentum_nms
    }

    fn step(&self, h: &mut Vec3, from: &Row, to: &Row) -> i64 {
        let Some(tau) = self.torque(to.stop, to.start) else {
            return 0;
        };
        let dt = (to.departure - from.departure) as f64 / 1000.0;
        let next = [h[0] + tau[0] * dt, h[1] + tau[1] * dt, h[2] + tau[2] * dt];
        if norm(&next) <= self.ctx.threshold_nms() {
            *h = next;
            return 0;
        }
        let dwell = (to.departure - to.start) as f64 / 1000.0;
        *h = [tau[0] * dwell, tau[1] * dwell, tau[2] * dwell];
        let room = to.wait + to.slack.unwrap_or(0).max(0);
        (self.dump_ms - room).max(0)
    }
}

/// The search that fits in left-out targets: the whole sequence (kept and left out), each
/// candidate (a chain of up to three random moves) played leaving out what does not fit at
/// its turn, kept when it is no worse by priority, then time.
struct Fit<'c, 'a, 't> {
    ctx: &'c Context<'a>,
    screened: &'t [Unscheduled],
    cur: (Vec<Visit>, Schedule),
    wanted: usize,
    stall: u64,
    error: Option<PlanError>,
}

impl Step for Fit<'_, '_, '_> {
    fn step(&mut self, rng: &mut Pcg64, _should_stop: &mut dyn FnMut() -> bool) {
        let Some((cand, _)) = random_chain(self.ctx, &self.cur.0, 3, rng) else {
            self.stall += 1;
            return;
        };
        let s = match self.ctx.play_lenient(&cand, self.screened) {
            Ok(s) => s,
            Err(e) => {
                self.error = Some(e);
                return;
            }
        };
        let targets = self.ctx.targets();
        self.stall = if better(targets, &s, &self.cur.1) {
            0
        } else {
            self.stall + 1
        };
        if !better(targets, &self.cur.1, &s) {
            self.cur = (cand, s);
        }
    }

    fn finished(&self) -> bool {
        self.error.is_some()
            || self.cur.1.observations.len() >= self.wanted
            || self.stall >= 200 + 20 * self.wanted as u64
    }
}

/// Targets counted by priority, highest first: a lexicographic measure of what a plan keeps.
fn kept(targets: &[Target], s: &Schedule) -> [usize; 10] {
    let mut c = [0usize; 10];
    for o in &s.observations {
        c[targets[o.target].priority as usize] += 1;
    }
    c
}

/// True when `a` is a better plan than `b`: more targets of the highest priority where they
/// differ, then less elapsed time, then less propellant.
fn better(targets: &[Target], a: &Schedule, b: &Schedule) -> bool {
    let (ka, kb) = (kept(targets, a), kept(targets, b));
    if ka != kb {
        return ka[1..] > kb[1..];
    }
    (a.elapsed_s(), a.propellant_kg) < (b.elapsed_s(), b.propellant_kg)
}

/// The core's problem over `cands` and its solution: pool indices in order, feasible or not.
fn core_order(
    ctx: &Context,
    cands: &[usize],
    start_order: &[usize],
    limit: Duration,
    options: &PlanOptions,
) -> Result<(Vec<usize>, bool, bool), PlanFailure> {
    let targets = ctx.targets();
    let n = cands.len() + 1;
    let rows = ctx.cost_matrix_ms(cands, options.start);
    let cost = MatrixCost::from_rows(&rows).map_err(|e| PlanFailure::Cost(e.to_string()))?;
    let mut c = Constraints::new(n);
    let day_ms = 86_400_000.0;
    let horizon_ms = (options.horizon_days * day_ms).ceil() as i64;
    let mut counts = [0usize; 10];
    for &j in cands {
        counts[targets[j].priority as usize] += 1;
    }
    let penalty = priority_penalties(&counts, horizon_ms.saturating_mul(2).max(1));
    let mut node_of = vec![usize::MAX; targets.len()];
    for (k, &j) in cands.iter().enumerate() {
        let node = k + 1;
        node_of[j] = node;
        let dwell_ms = (targets[j].duration_s * 1000.0).ceil() as i64;
        c.service[node] = dwell_ms;
        c.penalty[node] = Some(penalty[targets[j].priority as usize]);
        c.windows[node] = ctx
            .allowed(j)
            .iter()
            .filter_map(|w| {
                let earliest = ((w.start.jd - options.start.jd) * day_ms).ceil() as i64;
                let latest = ((w.end.jd - options.start.jd) * day_ms).floor() as i64 - dwell_ms;
                (latest >= earliest).then_some(CoreWindow { earliest, latest })
            })
            .collect();
    }
    for l in ctx.links() {
        let (a, b) = (node_of[l.first], node_of[l.second]);
        if a == usize::MAX || b == usize::MAX {
            continue;
        }
        match l.kind {
            LinkKind::After => c.precedence.push(Precedence {
                before: a,
                after: b,
                min_lag: l.min_lag_s.map(|s| (s * 1000.0).ceil() as i64),
                max_lag: l.max_lag_s.map(|s| (s * 1000.0).floor() as i64),
            }),
            LinkKind::Group => c.fixed_edges.push((a, b)),
        }
    }
    c.depot = 0;
    c.route = Route::Path;
    c.objective = Objective::Completion;
    c.start_time = 0;
    let rule = MomentumRule::new(ctx, cands, options.horizon_days);
    // Budgets of their own, so that the core ends before its share of the time on pools of
    // a few hundred targets and the plan is reproducible; the time limit cuts larger ones.
    let settings = Settings {
        seed: options.seed,
        time_limit: Some(limit.as_secs_f64().max(0.05)),
        threads: options.threads,
        runs: Some(1),
        iterations: Some(core_kicks(n)),
        ..Default::default()
    };
    let hooks = Hooks {
        stop: options.stop.clone(),
        ..Default::default()
    };
    let start: Vec<usize> = std::iter::once(0)
        .chain(start_order.iter().map(|&j| node_of[j]))
        .filter(|&x| x != usize::MAX)
        .collect();
    let out = solve_sequence_with(&cost, &c, &settings, Some(&start), &rule, hooks)?;
    let cut = out.stop_reason == StopReason::TimeLimit;
    let order = out
        .order
        .iter()
        .filter(|&&x| x != 0)
        .map(|&x| cands[x - 1])
        .collect();
    Ok((order, out.feasible, cut))
}

/// The candidates in the order their first allowed window closes (ties by opening).
fn closing_order(ctx: &Context, cands: &[usize]) -> Vec<usize> {
    let mut v = cands.to_vec();
    let key = |j: usize| {
        ctx.allowed(j)
            .first()
            .map_or((f64::INFINITY, f64::INFINITY), |w| (w.end.jd, w.start.jd))
    };
    v.sort_by(|&a, &b| {
        let (ka, kb) = (key(a), key(b));
        ka.0.total_cmp(&kb.0).then(ka.1.total_cmp(&kb.1))
    });
    // Grouped targets right after their partner.
    let mut out: Vec<usize> = Vec::with_capacity(v.len());
    let mut placed = vec![false; ctx.targets().len()];
    for &j in &v {
        if placed[j] || ctx.group_prev(j).is_some_and(|g| cands.contains(&g)) {
            continue;
        }
        let mut k = Some(j);
        while let Some(x) = k {
            if placed[x] || !cands.contains(&x) {
                break;
            }
            placed[x] = true;
            out.push(x);
            k = ctx.group_next(x);
        }
    }
    for &j in &v {
        if !placed[j] {
            out.push(j);
        }
    }
    out
}

/// Targets not in `schedule` and not in `screened`, left out for `reason`.
fn rest(ctx: &Context, cands: &[usize], visits: &[Visit], reason: Reason) -> Vec<Unscheduled> {
    let mut in_plan = vec![false; ctx.targets().len()];
    for v in visits {
        in_plan[v.target] = true;
    }
    cands
        .iter()
        .filter(|&&j| !in_plan[j])
        .map(|&j| ctx.unscheduled(j, reason))
        .collect()
}

/// Plans `targets` for the observatory `profile` under `links` (see the module
/// documentation).
pub fn plan(
    profile: &Profile,
    targets: &[Target],
    links: &[Link],
    options: &PlanOptions,
) -> Result<Plan, PlanFailure> {
    let began = Instant::now();
    let ctx = Context::with_links(profile, targets, links, options.start, options.horizon_days)?;
    let (cands, screened) = ctx.screen();
    let limit = options
        .time_limit
        .unwrap_or_else(|| default_time_limit(cands.len()));
    let deadline = began + limit;
    let closing = closing_order(&ctx, &cands);
    let baseline = ctx.play_lenient(
        &Context::nominal(&closing),
        &[screened.clone(), Vec::new()].concat(),
    )?;
    let mut cut = false;
    let (core, core_feasible) = if cands.is_empty() {
        (Vec::new(), true)
    } else if cands.len() > CORE_MAX_TARGETS {
        // Too many for the core's full-schedule moves: the searches start from the closing
        // order.
        (closing.clone(), false)
    } else {
        let (order, feasible, c) =
            core_order(&ctx, &cands, &closing, limit.mul_f64(CORE_SHARE), options)?;
        cut |= c;
        (order, feasible)
    };
    // The core's order played out, the targets it left out after it (in the order their
    // windows close): a play that leaves out what does not fit at its turn.
    let mut full = core.clone();
    for &j in &closing {
        if !full.contains(&j) {
            full.push(j);
        }
    }
    let visits = Context::nominal(&full);
    let first = ctx.play_lenient(&visits, &screened)?;
    let core_point = (first.elapsed_s(), first.propellant_kg);
    let mut best = if better(targets, &baseline, &first) {
        baseline.clone()
    } else {
        first
    };
    let stop = options.stop.clone();
    let timeout = || Instant::now() >= deadline || stop.is_stopped();
    let mut plays = 0u64;
    // While targets are left out: search the whole sequence (kept and left out), each
    // candidate played leaving out what does not fit, for more targets by priority.
    if best.observations.len() < cands.len() && !timeout() {
        let share_end = Instant::now()
            + deadline
                .saturating_duration_since(Instant::now())
                .mul_f64(FIT_SHARE);
        let mut seq = best.visits();
        for &j in &closing {
            if !seq.iter().any(|v| v.target == j) {
                seq.push(Visit { target: j, roll: 0 });
            }
        }
        let mut fit = Fit {
            ctx: &ctx,
            screened: &screened,
            cur: (seq, best.clone()),
            wanted: cands.len(),
            stall: 0,
            error: None,
        };
        let limits = StepLimits {
            seed: options.seed,
            run: 1,
            steps: Some(fit_plays(cands.len())),
            deadline: Some(share_end),
            stop: options.stop.clone(),
            ..StepLimits::new(options.seed)
        };
        let out = run_steps(&limits, &mut fit, &mut |_| {});
        plays += out.steps;
        if let Some(e) = fit.error {
            return Err(e.into());
        }
        cut |= matches!(out.stop_reason, Some(StopReason::TimeLimit));
        if better(targets, &fit.cur.1, &best) {
            best = fit.cur.1;
        }
    }
    // Polish: elapsed time first, propellant to break ties, on the targets kept.
    let polish = |best: &mut Schedule, plays: &mut u64| {
        let v = best.visits();
        if v.is_empty() {
            return;
        }
        let objective = Scalar {
            time_scale: best.elapsed_s().max(1.0),
            kg_scale: best.propellant_kg.max(1e-9),
            weight: 1e-6,
        };
        let mut count = 0u64;
        let mut seen = |_: &[Visit], _: Point| count += 1;
        let limits = StepLimits {
            seed: options.seed,
            run: 2,
            steps: Some(polish_plays(v.len())),
            deadline: Some(deadline),
            stop: options.stop.clone(),
            ..StepLimits::new(options.seed)
        };
        if let Some(((v2, _), _)) = improve(&ctx, &v, objective, &limits, &mut seen) {
            if let Ok(Ok(s)) = ctx.play(&v2) {
                let keep_out = best.unscheduled.clone();
                let s = Schedule {
                    unscheduled: keep_out,
                    ..s
                };
                if better(targets, &s, best) {
                    *best = s;
                }
            }
        }
        *plays += count;
    };
    polish(&mut best, &mut plays);
    let polish_cut = timeout();
    // The targets left out, highest priority first: each tried at every position.
    let mut out: Vec<usize> = cands
        .iter()
        .copied()
        .filter(|j| !best.observations.iter().any(|o| o.target == *j))
        .collect();
    out.sort_by_key(|&j| targets[j].priority);
    for j in out {
        if timeout() {
            cut = true;
            break;
        }
        let v = best.visits();
        let mut found: Option<Schedule> = None;
        for pos in 0..=v.len() {
            for roll in 0..ctx.rolls(j).len() as u8 {
                let mut w = v.clone();
                w.insert(pos, Visit { target: j, roll });
                plays += 1;
                if let Ok(Ok(s)) = ctx.play(&w) {
                    if found.as_ref().is_none_or(|f| better(targets, &s, f)) {
                        found = Some(s);
                    }
                }
            }
        }
        if let Some(s) = found {
            best = s;
        }
    }
    if Instant::now() >= deadline {
        cut = true;
    }
    cut |= polish_cut;
    // What is still left out: the replay's reasons for what the core kept, priority for what
    // the core or the insertions could not fit.
    let kept_visits = best.visits();
    let mut unscheduled = screened.clone();
    let replayed = ctx.play_lenient(&Context::nominal(&core), &[])?;
    for u in rest(&ctx, &cands, &kept_visits, Reason::Priority) {
        let reason = replayed
            .unscheduled
            .iter()
            .find(|r| r.target == u.target)
            .map_or(Reason::Priority, |r| r.reason);
        unscheduled.push(ctx.unscheduled(u.target, reason));
    }
    unscheduled.sort_by_key(|u| u.target);
    best.unscheduled = unscheduled;
    let stop_reason = if options.stop.is_stopped() {
        PlanStop::Cancelled
    } else if cut {
        PlanStop::TimeLimit
    } else {
        PlanStop::SearchesDone
    };
    Ok(Plan {
        schedule: best,
        baseline,
        core_order: core,
        core_feasible,
        core_point,
        polish_plays: plays,
        search_seconds: began.elapsed().as_secs_f64(),
        seconds: began.elapsed().as_secs_f64(),
        stop_reason,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn penalties_are_lexicographic_where_they_fit() {
        let mut counts = [0usize; 10];
        counts[1] = 3;
        counts[2] = 5;
        counts[9] = 7;
        let w = priority_penalties(&counts, 1000);
        // A priority-2 target outweighs the seven of priority 9; a priority-1 target outweighs
        // everything below it.
        assert!(w[2] > 7 * w[9]);
        assert!(w[1] > 5 * w[2] + 7 * w[9]);
        assert!(w[9] >= 1000);
        // Many targets over many levels do not overflow: the ratio shrinks instead.
        let counts = [0, 300, 300, 300, 300, 300, 300, 300, 300, 300];
        let w = priority_penalties(&counts, 5_000_000_000);
        assert!((1..9).all(|p| w[p] > w[p + 1]), "{w:?}");
        let total: i128 = (1..10).map(|p| w[p] as i128 * 300).sum();
        assert!(total < i64::MAX as i128);
    }
}
