//! Solving a sequencing problem under [`Constraints`]: the heuristic search of
//! [`search`](super::search) on the crate's loop owner, or the exact programme, and the answer
//! as the front ends print it.

use super::search::{Problem, Run};
use super::{
    Constraints, ConstraintsError, Evaluation, ExactError, NoRule, Objective, Route, StepRule,
    Violation, evaluate_with, solve_exact,
};
use crate::control::{self, Improvement, StopReason};
use crate::methods::drive::{LoopPlan, drive};
use crate::solve::settings::trace_pairs;
use crate::{Cost, Ends, Hooks, Method, Settings, SettingsError, assignment_bound};
use serde::Serialize;
use std::sync::Mutex;
use std::time::Instant;

/// Independent runs of the constrained search when none are asked for.
pub const SEQUENCE_RUNS: usize = 4;

/// Kicks in a row without a better order after which a run of the constrained search ends,
/// when no stall limit is asked for: `200 + 20 n`.
pub fn default_stall(n: usize) -> u64 {
    200 + 20 * n as u64
}

/// What [`solve_sequence`] found, serialisable as the front ends print it.
#[derive(Clone, Debug, Serialize)]
pub struct SequenceOutcome {
    /// The order found, the depot first (the return of a closed tour not repeated); optional
    /// stops left out are not in it. Serialised as `tour`.
    #[serde(rename = "tour")]
    pub order: Vec<usize>,
    /// True when the order breaks nothing. When false, `violations` says what it breaks, and
    /// the order is only the least-breaking one seen: not a solution.
    pub feasible: bool,
    /// The order's schedule and measures.
    #[serde(flatten)]
    pub evaluation: Evaluation,
    /// The travel cost again, under the name the tour outputs use.
    pub length: i64,
    /// What was minimised.
    pub minimised: Objective,
    /// A closed tour from the depot or a path from it.
    pub route: Route,
    /// `constrained-search` or `exact`.
    pub method: &'static str,
    /// A lower bound on the objective of every feasible order, when one is known: the proven
    /// optimum, or the assignment bound of the costs (travel minimised, closed tour, every
    /// stop required).
    pub lower_bound: Option<i64>,
    /// True when the exact programme proved the order optimal.
    pub proven_optimal: bool,
    /// True when the exact programme proved that no order meets every constraint.
    pub proven_infeasible: bool,
    /// Independent runs of the search (zero for the exact programme).
    pub runs: usize,
    /// Kicks over all runs (labels for the exact programme).
    pub iterations: u64,
    /// Why the search ended.
    pub stop_reason: StopReason,
    /// Every new best feasible objective and its time, as `[seconds, objective]`.
    #[serde(serialize_with = "trace_pairs")]
    pub trace: Vec<Improvement>,
    /// Wall-clock seconds.
    pub seconds: f64,
    /// Worker threads used.
    pub threads: usize,
}

/// Why [`solve_sequence`] gave no outcome.
#[derive(Debug, thiserror::Error)]
pub enum SequenceError {
    /// The settings are out of range.
    #[error(transparent)]
    Settings(#[from] SettingsError),
    /// The constraints contradict themselves or the costs.
    #[error(transparent)]
    Constraints(#[from] ConstraintsError),
    /// The exact programme refused.
    #[error(transparent)]
    Exact(#[from] ExactError),
    /// The start order cannot be used.
    #[error("start order: {0}")]
    Start(String),
    /// A setting that has no meaning under constraints.
    #[error("{0}")]
    Unsupported(String),
}

/// [`solve_sequence_with`] without a rule of the caller's.
///
/// ```
/// use wend::constraints::{solve_sequence, Constraints, Precedence, Window};
/// // Four stops on a line; stop 3 must be served by time 4, stop 2 before stop 1.
/// let cost = wend::FnCost::new(4, true, |i, j| (i as i64 - j as i64).abs());
/// let mut c = Constraints::new(4);
/// c.windows[3] = vec![Window { earliest: 0, latest: 4 }];
/// c.precedence.push(Precedence { before: 2, after: 1, min_lag: None, max_lag: None });
/// let settings = wend::Settings { seed: 1, threads: Some(1), ..Default::default() };
/// let out = solve_sequence(&cost, &c, &settings, None, Default::default()).unwrap();
/// assert!(out.feasible);
/// // 0 3 2 1 and 0 2 3 1 both cost 6 (hand count); 2 comes before 1 in either.
/// assert_eq!(out.evaluation.travel_cost, 6);
/// let at = |s| out.order.iter().position(|&x| x == s);
/// assert!(at(2) < at(1));
/// ```
pub fn solve_sequence<C: Cost + ?Sized>(
    cost: &C,
    c: &Constraints,
    settings: &Settings,
    start: Option<&[usize]>,
    hooks: Hooks,
) -> Result<SequenceOutcome, SequenceError> {
    solve_sequence_dyn(cost.as_dyn_cost(), c, settings, start, hooks)
}

/// [`solve_sequence`], compiled here once, on any cost.
fn solve_sequence_dyn(
    cost: &dyn Cost,
    c: &Constraints,
    settings: &Settings,
    start: Option<&[usize]>,
    hooks: Hooks,
) -> Result<SequenceOutcome, SequenceError> {
    solve_sequence_inner(cost, c, settings, start, &NoRule, false, hooks)
}

/// Solves the sequencing problem of `cost` under `c` and `rule`: the constrained search on
/// [`Settings`]' seed, threads, runs, iterations (kicks per run), stall limit, target and time
/// limit, or, with [`Settings::exact`], the exact programme ([`solve_exact`], up to its stop
/// limit; without lags or a rule). `start` is an order to improve (checked, rotated to the
/// depot for a closed tour, and rebuilt by insertion in its own order when it breaks a
/// precedence pair, a fixed edge or leaves out a required stop). Only the default method runs
/// under constraints: another [`Settings::method`] is refused, and so are [`Settings::ends`]
/// other than closed (the constraints' route and depot say where a sequence starts).
/// [`Settings::fixed_edges`] are added to the constraints' own.
pub fn solve_sequence_with<C: Cost + ?Sized, R: StepRule + ?Sized>(
    cost: &C,
    c: &Constraints,
    settings: &Settings,
    start: Option<&[usize]>,
    rule: &R,
    hooks: Hooks,
) -> Result<SequenceOutcome, SequenceError> {
    // The caller's rule type is compiled in the caller's crate; the costs go as `dyn Cost`,
    // so that it is compiled once per rule.
    solve_sequence_inner(cost.as_dyn_cost(), c, settings, start, rule, true, hooks)
}

fn solve_sequence_inner<C: Cost + ?Sized, R: StepRule + ?Sized>(
    cost: &C,
    c: &Constraints,
    settings: &Settings,
    start: Option<&[usize]>,
    rule: &R,
    has_rule: bool,
    hooks: Hooks,
) -> Result<SequenceOutcome, SequenceError> {
    settings.check()?;
    let n = cost.len();
    let merged;
    let c = if settings.fixed_edges.is_empty() {
        c
    } else {
        let mut all = c.clone();
        for &edge in &settings.fixed_edges {
            if !all.fixed_edges.contains(&edge) {
                all.fixed_edges.push(edge);
            }
        }
        merged = all;
        &merged
    };
    c.check(n)?;
    if settings.method != Method::Lk {
        return Err(SequenceError::Unsupported(format!(
            "method {} does not handle time windows, precedence, optional stops or fixed edges; \
             leave the method at its default for the constrained search, or ask for the exact \
             programme",
            settings.method.name()
        )));
    }
    if settings.ends != Ends::Closed {
        return Err(SequenceError::Unsupported(
            "fixed ends are given by the constraints' depot and route (closed or path)".into(),
        ));
    }
    let start = start.map(|s| start_order(c, n, s)).transpose()?;
    let began = Instant::now();
    let threads = settings
        .threads
        .unwrap_or_else(crate::solve::solver::default_threads);
    let deadline = control::deadline(
        began,
        settings
            .time_limit
            .map(|t| std::time::Duration::from_secs_f64(t.clamp(0.0, 1.0e9))),
    );
    let Hooks {
        stop,
        observer,
        after_search,
        ..
    } = hooks;
    let trace = Mutex::new(Vec::new());
    let record = |imp: Improvement| {
        if let Some(f) = &observer {
            f(imp);
        }
        trace.lock().unwrap_or_else(|e| e.into_inner()).push(imp);
    };
    let (order, runs, iterations, stop_reason, proven_optimal, proven_infeasible, method) =
        if settings.exact {
            if has_rule {
                return Err(SequenceError::Unsupported(
                    "the exact programme does not check a caller's step rule".into(),
                ));
            }
            let out = solve_exact(cost, c, &stop, deadline)?;
            let reason = if out.proven_optimal || out.proven_infeasible {
                StopReason::Exhaustive
            } else if stop.is_stopped() {
                StopReason::Cancelled
            } else {
                StopReason::TimeLimit
            };
            if let (Some(v), true) = (out.objective, out.order.is_some()) {
                record(Improvement {
                    seconds: began.elapsed().as_secs_f64(),
                    length: v,
                    restart: 0,
                });
            }
            let order = out.order.unwrap_or_else(|| vec![c.depot]);
            (
                order,
                0,
                out.labels,
                reason,
                out.proven_optimal,
                out.proven_infeasible,
                "exact",
            )
        } else {
            let problem = Problem::new(cost, c, rule, has_rule);
            let plan = LoopPlan {
                seed: settings.seed,
                threads,
                runs: Some(settings.runs.unwrap_or(SEQUENCE_RUNS)),
                iterations: settings.iterations,
                stall: Some(settings.stall_limit.unwrap_or_else(|| default_stall(n))),
                target: settings.target,
                deadline,
                stop: stop.clone(),
            };
            let out = drive(
                &plan,
                began,
                &|imp| record(imp),
                |r, rng, should_stop| match &start {
                    Some(s) if keeps_links(cost, c, s) => {
                        Run::start_from(&problem, s.clone(), should_stop)
                    }
                    Some(s) => Run::start(&problem, r, Some(s), rng, should_stop),
                    None => Run::start(&problem, r, None, rng, should_stop),
                },
            );
            (
                out.order,
                out.runs,
                out.iterations,
                out.stop_reason,
                false,
                false,
                "constrained-search",
            )
        };
    if let Some(f) = after_search {
        f();
    }
    let seconds = began.elapsed().as_secs_f64();
    let evaluation = evaluate_with(cost, c, &order, rule);
    let feasible = evaluation.feasible();
    let lower_bound = if proven_optimal {
        Some(evaluation.objective)
    } else if settings.bound
        && c.objective == Objective::Travel
        && c.route == Route::Closed
        && c.penalty.iter().all(Option::is_none)
        && !proven_infeasible
    {
        assignment_bound(cost).ok().map(|b| b.lower_bound)
    } else {
        None
    };
    let mut trace = trace.into_inner().unwrap_or_else(|e| e.into_inner());
    trace.retain(|imp| imp.length != i64::MAX);
    Ok(SequenceOutcome {
        length: evaluation.travel_cost,
        order,
        feasible,
        evaluation,
        minimised: c.objective,
        route: c.route,
        method,
        lower_bound,
        proven_optimal,
        proven_infeasible,
        runs,
        iterations,
        stop_reason,
        trace,
        seconds,
        threads,
    })
}

/// Checks a start order's stops and puts the depot first.
fn start_order(c: &Constraints, n: usize, order: &[usize]) -> Result<Vec<usize>, SequenceError> {
    let mut seen = vec![false; n];
    for &s in order {
        match seen.get_mut(s) {
            None => {
                return Err(SequenceError::Start(format!(
                    "stop {s} is not one of the {n} stops"
                )));
            }
            Some(true) => {
                return Err(SequenceError::Start(format!("stop {s} appears twice")));
            }
            Some(v) => *v = true,
        }
    }
    let mut order = order.to_vec();
    match order.iter().position(|&s| s == c.depot) {
        Some(0) => {}
        Some(at) if c.route == Route::Closed => order.rotate_left(at),
        Some(_) => {
            return Err(SequenceError::Start(format!(
                "a path starts at the depot, stop {}; the start order has it elsewhere",
                c.depot
            )));
        }
        None => order.insert(0, c.depot),
    }
    Ok(order)
}

/// True when `order` keeps every precedence pair and fixed edge and visits every required stop
/// (windows may be broken: the search repairs those).
fn keeps_links<C: Cost + ?Sized>(cost: &C, c: &Constraints, order: &[usize]) -> bool {
    evaluate_with(cost, c, order, &NoRule)
        .violations
        .iter()
        .all(|v| {
            matches!(
                v,
                Violation::Late { .. } | Violation::MinLag { .. } | Violation::MaxLag { .. }
            )
        })
}
