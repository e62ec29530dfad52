//! One settings type and one result type for every front end.
//!
//! [`Settings`] holds everything a solve is asked for (method, limits, seed, neighbour lists,
//! ends, the optional bound or exact proof, the methods' parameters) and (de)serialises with
//! serde, so a command line, a sweep file or a Python call can build it the same way.
//! [`solve_with`] takes costs, the settings and the [`Hooks`] that cannot be serialised (stop
//! handle, improvement observer), and returns an [`Outcome`]: the tour, its length and what the
//! search or the proof found, serialisable as it is printed.
//!
//! ```
//! use wend::{solve_with, Hooks, Method, Settings};
//!
//! let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
//! let costs = wend::MatrixCost::from_rows(&rows).unwrap();
//! let settings = Settings { method: Method::TwoOpt, seed: 3, bound: true, ..Settings::default() };
//! let outcome = solve_with(&costs, &settings, Hooks::default()).unwrap();
//! assert_eq!(outcome.length, 17);
//! assert_eq!(outcome.lower_bound, Some(17)); // three nodes: one tour each way
//! ```
//!
//! Method parameters are typed structs ([`AntParams`], [`AnnealParams`]) under the keys that
//! [`Method::keys`] lists; text values are read like numbers, so `KEY=VALUE` pairs from a command
//! line deserialise into them as well. Ranges are checked in one place,
//! [`AntParams::check`] and [`AnnealParams::check`] (called by [`Settings::check`]).

use super::prove::{Certificate, ProveOptions};
use super::prove::{ExactMethod, LowerBoundError, ProveError, lower_bound_fixed, prove_optimal};
use super::solver::{
    AsymmetricMode, DEFAULT_NEIGHBOURS, Method, Solution, SolveError, Solver, default_threads,
    set_param,
};
use crate::control::{Improvement, StopHandle, StopReason};
use crate::cost::Cost;
use crate::methods::{AnnealParams, AntLocalSearch, AntParams, MAX_COLONY};
use crate::neighbours::CandidateSource;
use crate::params::{Params, Rule, check_rules, shown_or, within};
use crate::tour::{Layout, Tour};
use crate::transform::Ends;
use serde::{Deserialize, Serialize, Serializer};
use std::time::Duration;

/// Everything a solve is asked for. Every field has a default ([`Settings::default`]: `lk`, no
/// time limit, seed 0, one thread per core, closed tour), so a file or a dictionary gives only
/// what differs; unknown fields are refused.
///
/// ```
/// let s: wend::Settings =
///     serde_json::from_str(r#"{"method": "mmas", "seed": 4, "ants": {"greed": 0.8}}"#).unwrap();
/// assert_eq!(s.method, wend::Method::MaxMin);
/// assert_eq!(s.ants.greed, 0.8);
/// assert!(serde_json::from_str::<wend::Settings>(r#"{"speed": 1}"#).is_err());
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Settings {
    /// The method, by its name (`lk`, `2opt`, `mmas`, ...; see [`Method::name`]).
    pub method: Method,
    /// Wall-clock limit in seconds (non-negative); `None`: the method's own budget.
    pub time_limit: Option<f64>,
    /// Seed of all random choices.
    pub seed: u64,
    /// Worker threads (at least 1); `None`: one per core.
    pub threads: Option<usize>,
    /// Independent runs (every method; for `2opt` each a start and its descent); `None`: the method's default
    /// ([`super::solver::default_runs`]), or as many as the time limit allows.
    #[serde(alias = "restarts")]
    pub runs: Option<usize>,
    /// Steps per run of an iterative method (a kick of `lk`, a generation of `acs` and `mmas`, a
    /// batch of moves of `anneal`).
    #[serde(alias = "kicks")]
    pub iterations: Option<u64>,
    /// End a run after this many steps in a row without a shorter tour.
    pub stall_limit: Option<u64>,
    /// Stop as soon as a tour of at most this length is found.
    #[serde(alias = "target_length")]
    pub target: Option<i64>,
    /// Width of the neighbour lists: how many neighbours each node's list holds.
    #[serde(alias = "neighbours")]
    pub neighbour_count: usize,
    /// Where the neighbour lists come from (`quadrant`, `nearest`, `alpha`).
    #[serde(alias = "candidates")]
    pub neighbour_lists: CandidateSource,
    /// Tour representation `lk` edits (`auto`, `array`, `two-level`).
    pub layout: Layout,
    /// A closed tour or a path ([`Ends`]), with 0-based node ids.
    pub ends: Ends,
    /// Edges every tour must use, as pairs of 0-based node ids: for symmetric costs the
    /// undirected edge `a`–`b`, for asymmetric costs the arc `a -> b` (see
    /// [`Solver::fixed_edges`]). Every method, the bound and the exact methods honour them;
    /// closed tours only. Empty by default (and then left out when serialised).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub fixed_edges: Vec<(usize, usize)>,
    /// How `lk` searches asymmetric costs (`transformed`, `direct`).
    pub asymmetric_mode: AsymmetricMode,
    /// Also compute a lower bound after the solve, and the gap it proves.
    pub bound: bool,
    /// Seconds for the lower bound's ascent (with `bound`; non-negative).
    pub bound_time: f64,
    /// Prove the tour optimal instead of a heuristic solve ([`prove_optimal`]); `method`,
    /// `runs`, `iterations`, the neighbour lists and `bound` are not used then.
    pub exact: bool,
    /// With `exact`: the exact method (`dynamic-programme`, `branch-and-bound`); `None` picks.
    pub exact_method: Option<ExactMethod>,
    /// Refuse work whose large tables pass this many bytes; `None`: the process-wide ceiling
    /// of [`crate::memory`].
    pub memory_limit: Option<usize>,
    /// Parameters of `acs` and `mmas`, under the keys of [`AntParams::KEYS`].
    pub ants: AntParams,
    /// Parameters of `anneal`, under the keys of [`AnnealParams::KEYS`].
    pub annealing: AnnealParams,
}

/// Seconds of the lower bound's ascent by default.
pub const DEFAULT_BOUND_TIME: f64 = 10.0;

impl Default for Settings {
    fn default() -> Self {
        Settings {
            method: Method::Lk,
            time_limit: None,
            seed: 0,
            threads: None,
            runs: None,
            iterations: None,
            stall_limit: None,
            target: None,
            neighbour_count: DEFAULT_NEIGHBOURS,
            neighbour_lists: CandidateSource::default(),
            layout: Layout::default(),
            ends: Ends::Closed,
            fixed_edges: Vec::new(),
            asymmetric_mode: AsymmetricMode::default(),
            bound: false,
            bound_time: DEFAULT_BOUND_TIME,
            exact: false,
            exact_method: None,
            memory_limit: None,
            ants: AntParams::default(),
            annealing: AnnealParams::default(),
        }
    }
}

/// Settings that cannot run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SettingsError {
    /// A field out of range: `field` is its name in [`Settings`], `requirement` what it must be
    /// and what it was (front ends put their own spelling of the field before it).
    #[error("{field} {requirement}")]
    Field {
        /// The field's name, e.g. `time_limit`.
        field: &'static str,
        /// E.g. `must be at least 1`.
        requirement: String,
    },
    /// A method parameter out of range.
    #[error("{group}: {message}")]
    Parameter {
        /// `ants` or `annealing`.
        group: &'static str,
        /// What was wrong, naming the key.
        message: String,
    },
}

impl Settings {
    /// Sets one parameter of the chosen method by its key and text value (see [`Method::keys`]),
    /// as the command line's `--params KEY=VALUE` does; set the method first. The value is read as
    /// the typed field reads it from a file and range-checked; on error nothing changes.
    ///
    /// ```
    /// let mut s = wend::Settings { method: wend::Method::Anneal, ..Default::default() };
    /// s.set("cooling", "0.9").unwrap();
    /// assert_eq!(s.annealing.cooling, 0.9);
    /// let e = s.set("colour", "red").unwrap_err().to_string();
    /// assert!(e.contains("known: schedule, cooling"), "{e}");
    /// ```
    pub fn set(&mut self, key: &str, value: &str) -> Result<(), SolveError> {
        set_param(self.method, &mut self.ants, &mut self.annealing, key, value)
    }

    /// Checks every range: the time limits, the thread count and the method parameters.
    ///
    /// ```
    /// let s = wend::Settings { threads: Some(0), ..Default::default() };
    /// assert_eq!(s.check().unwrap_err().to_string(), "threads must be at least 1");
    /// ```
    pub fn check(&self) -> Result<(), SettingsError> {
        let seconds = |field, t: f64| {
            if t.is_finite() && t >= 0.0 {
                Ok(())
            } else {
                Err(SettingsError::Field {
                    field,
                    requirement: format!("must be a non-negative number of seconds, got {t}"),
                })
            }
        };
        if let Some(t) = self.time_limit {
            seconds("time_limit", t)?;
        }
        if self.threads == Some(0) {
            return Err(SettingsError::Field {
                field: "threads",
                requirement: "must be at least 1".into(),
            });
        }
        if self.bound {
            seconds("bound_time", self.bound_time)?;
        }
        let group = |group| move |message| SettingsError::Parameter { group, message };
        self.ants.check().map_err(group("ants"))?;
        self.annealing.check().map_err(group("annealing"))
    }

    /// A [`Solver`] over `cost` configured with these settings (their solve part: no bound, no
    /// proof, no hooks).
    ///
    /// ```
    /// let s = wend::Settings { method: wend::Method::Greedy, ..Default::default() };
    /// let sol = s.solver(wend::MatrixCost::from_rows(&[vec![0, 1], vec![1, 0]]).unwrap())
    ///     .solve()
    ///     .unwrap();
    /// assert_eq!(sol.length, 2);
    /// ```
    pub fn solver<C: Cost>(&self, cost: C) -> Solver<C> {
        let mut s = Solver::new(cost)
            .method(self.method)
            .seed(self.seed)
            .neighbour_count(self.neighbour_count)
            .neighbour_lists(self.neighbour_lists)
            .layout(self.layout)
            .ends(self.ends)
            .fixed_edges(self.fixed_edges.iter().copied())
            .asymmetric_mode(self.asymmetric_mode)
            .ant_params(self.ants.clone())
            .anneal_params(self.annealing.clone());
        if let Some(l) = self.limit() {
            s = s.time_limit(l);
        }
        if let Some(t) = self.threads {
            s = s.threads(t);
        }
        if let Some(r) = self.runs {
            s = s.runs(r);
        }
        if let Some(k) = self.iterations {
            s = s.iterations(k);
        }
        if let Some(k) = self.stall_limit {
            s = s.stall_limit(k);
        }
        if let Some(t) = self.target {
            s = s.target(t);
        }
        if let Some(m) = self.memory_limit {
            s = s.memory_limit(m);
        }
        s
    }

    fn limit(&self) -> Option<Duration> {
        self.time_limit
            .map(|t| Duration::from_secs_f64(t.clamp(0.0, 1.0e9)))
    }
}

/// What a solve needs besides its [`Settings`] and cannot serialise.
#[derive(Default)]
pub struct Hooks {
    /// Ends the solve (and the bound) early, with the best tour so far.
    pub stop: StopHandle,
    /// Called with every new best tour of the search (from worker threads; keep it short).
    pub observer: Option<Box<dyn Fn(Improvement) + Sync + Send>>,
    /// Called once when the search or proof is over, before the bound (to end a progress
    /// display, say), whether it succeeded or not.
    pub after_search: Option<Box<dyn FnOnce() + Send>>,
    /// Branch and cut from outside the core, for [`Settings::exact`] (see
    /// [`ProveOptions::prover`]).
    pub prover: Option<std::sync::Arc<dyn crate::solve::prove::Prover>>,
}

/// What the search found, besides the tour ([`Outcome::search`]).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SearchFacts {
    /// Independent runs completed (every method; for `2opt` a start and its descent).
    pub runs: usize,
    /// Steps of an iterative method over all runs (kicks of `lk`, generations of `acs` and
    /// `mmas`, batches of moves of `anneal`); zero for the other methods.
    pub iterations: u64,
    /// Why the search ended.
    pub stop_reason: StopReason,
    /// Every new best tour's length and time, in order, as `[seconds, length]`.
    #[serde(serialize_with = "trace_pairs")]
    pub trace: Vec<Improvement>,
}

/// What the exact methods established ([`Outcome::proof`]).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProofFacts {
    /// The exact method that answered.
    pub exact_method: ExactMethod,
    /// True when the tour is proven optimal.
    pub proven_optimal: bool,
    /// Branch-and-bound subproblems evaluated (zero for the dynamic programme).
    pub subproblems: u64,
    /// Length of the first tour of the branch and bound, from the heuristic search.
    pub first_tour_length: Option<i64>,
}

/// What [`solve_with`] returns, serialisable as the front ends print it.
///
/// ```
/// let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
/// let costs = wend::MatrixCost::from_rows(&rows).unwrap();
/// let settings = wend::Settings { exact: true, ..Default::default() };
/// let outcome = wend::solve_with(&costs, &settings, Default::default()).unwrap();
/// let json = serde_json::to_value(&outcome).unwrap();
/// assert_eq!(json["method"], "exact");
/// assert_eq!(json["proven_optimal"], true);
/// assert_eq!(json["tour"], serde_json::json!([0, 2, 1]));
/// ```
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Outcome {
    /// The best tour found: from node 0 (or the fixed start) for a closed tour, from its first
    /// node to its last for a path. Serialised as the list of node ids.
    #[serde(serialize_with = "tour_order")]
    pub tour: Tour,
    /// Its exact length (without a return step for a path).
    pub length: i64,
    /// The ends asked for; serialised by name (`closed`, `open`, `start`, `end`, `start-end`).
    #[serde(serialize_with = "ends_name")]
    pub ends: Ends,
    /// Wall-clock seconds of the search or proof (without the bound).
    pub seconds: f64,
    /// The method that ran; `None` when the exact methods answered (serialised as `exact`).
    #[serde(serialize_with = "method_name")]
    pub method: Option<Method>,
    /// A lower bound on every tour (or path with these ends): from the proof, or from the
    /// bound when [`Settings::bound`] asked for one (none when the solve was stopped first).
    pub lower_bound: Option<i64>,
    /// `100 (length - lower_bound) / lower_bound`, for a positive bound.
    pub proven_gap_percent: Option<f64>,
    /// Why a bound was asked for (or the proof ran) and yet no gap is proven: a bound of 0 or
    /// less, or no bound at all; `None` when a gap is proven or no bound was asked for.
    pub gap_note: Option<String>,
    /// Worker threads the solve used: the count asked for, or one per core by default.
    pub threads: usize,
    /// The heuristic search's facts (none for an exact proof).
    #[serde(flatten)]
    pub search: Option<SearchFacts>,
    /// The exact proof's facts (none for a heuristic search).
    #[serde(flatten)]
    pub proof: Option<ProofFacts>,
}

impl Outcome {
    /// The outcome of a tour of `length`; `bound` is `None` when no bound was asked for, and
    /// `Some(None)` when one was but none came.
    fn new(
        tour: Tour,
        length: i64,
        ends: Ends,
        seconds: f64,
        bound: Option<Option<i64>>,
        threads: usize,
    ) -> Outcome {
        let lower_bound = bound.flatten();
        Outcome {
            tour,
            length,
            ends,
            seconds,
            method: None,
            lower_bound,
            proven_gap_percent: lower_bound
                .filter(|&b| b > 0)
                .map(|b| 100.0 * (length - b) as f64 / b as f64),
            gap_note: bound.and_then(|b| gap_note(length, b)),
            threads,
            search: None,
            proof: None,
        }
    }

    fn searched(sol: Solution, bound: Option<Option<i64>>, threads: usize) -> Outcome {
        Outcome {
            method: Some(sol.method),
            search: Some(SearchFacts {
                runs: sol.runs,
                iterations: sol.iterations,
                stop_reason: sol.stop_reason,
                trace: sol.trace,
            }),
            ..Outcome::new(sol.tour, sol.length, sol.ends, sol.seconds, bound, threads)
        }
    }

    fn proven(c: Certificate, ends: Ends, threads: usize) -> Outcome {
        Outcome {
            proof: Some(ProofFacts {
                exact_method: c.method,
                proven_optimal: c.proven_optimal,
                subproblems: c.subproblems,
                first_tour_length: c.first_tour_length,
            }),
            ..Outcome::new(
                c.tour,
                c.length,
                ends,
                c.seconds,
                Some(c.lower_bound),
                threads,
            )
        }
    }
}

/// Why a bound asked for proves no gap in percent, or `None` when it proves one.
fn gap_note(length: i64, bound: Option<i64>) -> Option<String> {
    match bound {
        None => Some("no lower bound: the solve was stopped before one was computed".into()),
        Some(b) if b > 0 => None,
        Some(b) if b == length => Some(format!(
            "the lower bound is {b}, equal to the length: the tour is optimal, but a gap in \
             percent of a bound of {b} is not defined"
        )),
        Some(b) => Some(format!(
            "the lower bound is {b}, which proves no gap (a gap in percent needs a positive bound)"
        )),
    }
}

/// Why [`solve_with`] gave no outcome.
#[derive(Debug, thiserror::Error)]
pub enum SolveWithError {
    /// The settings are out of range.
    #[error(transparent)]
    Settings(#[from] SettingsError),
    /// The search refused or failed.
    #[error(transparent)]
    Solve(#[from] SolveError),
    /// The exact methods refused or failed.
    #[error(transparent)]
    Prove(#[from] ProveError),
    /// The lower bound refused or failed.
    #[error(transparent)]
    Bound(#[from] LowerBoundError),
}

/// Everything one solve needs: checks `settings`, then runs the search and, when asked, the
/// lower bound and the gap it proves; or, with [`Settings::exact`], the exact methods of
/// [`prove_optimal`]. A bound that fails after a stop request is left out (the tour is kept).
///
/// ```
/// use wend::{solve_with, Hooks, Settings};
/// let costs = wend::FnCost::new(6, true, |i, j| (i as i64 - j as i64).abs());
/// let settings = Settings { seed: 7, iterations: Some(50), threads: Some(1), ..Default::default() };
/// let outcome = solve_with(&costs, &settings, Hooks::default()).unwrap();
/// assert_eq!(outcome.length, 10); // 0 1 2 3 4 5 and back
/// assert!(outcome.search.is_some() && outcome.proof.is_none());
/// ```
pub fn solve_with<C: Cost + ?Sized>(
    cost: &C,
    settings: &Settings,
    hooks: Hooks,
) -> Result<Outcome, SolveWithError> {
    solve_with_dyn(cost.as_dyn_cost(), settings, hooks)
}

/// [`solve_with`], compiled here once, on any cost.
fn solve_with_dyn(
    cost: &dyn Cost,
    settings: &Settings,
    hooks: Hooks,
) -> Result<Outcome, SolveWithError> {
    settings.check()?;
    let Hooks {
        stop,
        observer,
        after_search,
        prover,
    } = hooks;
    let done = || {
        if let Some(f) = after_search {
            f();
        }
    };
    let threads = settings.threads.unwrap_or_else(default_threads);
    if settings.exact {
        let opts = ProveOptions {
            time_limit: settings.limit(),
            seed: settings.seed,
            threads: Some(threads),
            method: settings.exact_method,
            ends: settings.ends,
            fixed_edges: settings.fixed_edges.clone(),
            prover,
            ..ProveOptions::default()
        };
        let opts = ProveOptions {
            dp_memory_bytes: settings
                .memory_limit
                .map_or(opts.dp_memory_bytes, |m| opts.dp_memory_bytes.min(m)),
            ..opts
        };
        let certificate = prove_optimal(cost, &opts, &stop);
        done();
        return Ok(Outcome::proven(certificate?, settings.ends, threads));
    }
    let mut solver = settings
        .solver(cost)
        .threads(threads)
        .stop_handle(stop.clone());
    if let Some(f) = observer {
        solver = solver.on_improvement(f);
    }
    let solved = solver.solve();
    done();
    let sol = solved?;
    let bound = if settings.bound {
        let time = Duration::from_secs_f64(settings.bound_time.clamp(0.0, 1.0e9));
        let edges = &settings.fixed_edges;
        match lower_bound_fixed(cost, edges, sol.ends, sol.length, time, &stop) {
            Ok(b) => Some(Some(b)),
            Err(_) if stop.is_stopped() => Some(None),
            Err(e) => return Err(e.into()),
        }
    } else {
        None
    };
    Ok(Outcome::searched(sol, bound, threads))
}

impl Params for AntParams {
    const WHAT: &'static str = "ant colony";
    const QUOTE: char = '`';

    fn keys() -> &'static [(&'static str, &'static str)] {
        AntParams::KEYS
    }

    fn rules(&self) -> Vec<Rule> {
        const CLOSED: (bool, bool) = (false, false);
        let rule = |key, ok, expected, shown: String| Rule {
            key,
            ok,
            expected,
            after: "",
            shown,
        };
        let weight = |key, x: f64| {
            rule(
                key,
                within(x, (0.0, 10.0), CLOSED),
                "a number in [0, 10]",
                x.to_string(),
            )
        };
        let unit = |key, x: f64| {
            rule(
                key,
                within(x, (0.0, 1.0), CLOSED),
                "a number in [0, 1]",
                x.to_string(),
            )
        };
        vec![
            rule(
                "colony-size",
                self.colony_size
                    .is_none_or(|m| (1..=MAX_COLONY).contains(&m)),
                "a whole number from 1 to 10000 or `auto`",
                shown_or(self.colony_size, "auto"),
            ),
            weight("trail-weight", self.trail_weight),
            weight("cost-weight", self.cost_weight),
            Rule {
                after: " (or `auto`)",
                ..rule(
                    "evaporation",
                    self.evaporation
                        .is_none_or(|x| within(x, (0.0, 1.0), (true, false))),
                    "a number in (0, 1]",
                    shown_or(self.evaporation, "auto"),
                )
            },
            unit("greed", self.greed),
            unit("local-evaporation", self.local_evaporation),
            rule(
                "best-probability",
                within(self.best_probability, (0.0, 1.0), (true, true)),
                "a number in (0, 1)",
                self.best_probability.to_string(),
            ),
            rule(
                "restart-branching",
                within(self.restart_branching, (0.0, 100.0), CLOSED),
                "a number in [0, 100]",
                self.restart_branching.to_string(),
            ),
            rule(
                "restart-stall",
                self.restart_stall.is_none_or(|s| s >= 1),
                "a whole number from 1 to 18446744073709551615 or `never`",
                shown_or(self.restart_stall, "never"),
            ),
            rule(
                "local-search",
                true,
                "none, 2opt, lk or auto",
                shown_or(self.local_search.map(AntLocalSearch::name), "auto"),
            ),
        ]
    }
}

impl Params for AnnealParams {
    const WHAT: &'static str = "annealing";
    const QUOTE: char = '\'';

    fn keys() -> &'static [(&'static str, &'static str)] {
        AnnealParams::KEYS
    }

    fn rules(&self) -> Vec<Rule> {
        let rule = |key, ok, expected, shown: String| Rule {
            key,
            ok,
            expected,
            after: "",
            shown,
        };
        let open = |key, x: f64| {
            let ok = within(x, (0.0, 1.0), (true, true));
            rule(key, ok, "a number in (0, 1)", x.to_string())
        };
        vec![
            rule(
                "schedule",
                true,
                "geometric or adaptive",
                self.schedule.name().to_string(),
            ),
            open("cooling", self.cooling),
            rule(
                "batch",
                (1..=1_000_000).contains(&self.batch),
                "a whole number from 1 to 1000000",
                self.batch.to_string(),
            ),
            open("start-acceptance", self.start_acceptance),
            rule(
                "samples",
                (1..=10_000_000).contains(&self.samples),
                "a whole number from 1 to 10000000",
                self.samples.to_string(),
            ),
            open("min-temperature", self.min_temperature),
            rule(
                "reheat-after",
                true,
                "a whole number >= 0",
                self.reheat_after.to_string(),
            ),
            rule(
                "reheat",
                within(self.reheat, (0.0, 1.0), (true, false)),
                "a number in (0, 1]",
                self.reheat.to_string(),
            ),
            open("rate-step", self.rate_step),
            rule(
                "descent",
                true,
                "on or off",
                if self.descent { "on" } else { "off" }.to_string(),
            ),
        ]
    }
}

impl AntParams {
    /// Checks every range; the error names the first key out of range and what it takes.
    ///
    /// ```
    /// let p = wend::AntParams { greed: 1.5, ..Default::default() };
    /// assert_eq!(p.check().unwrap_err(), "greed: expected a number in [0, 1], got `1.5`");
    /// ```
    pub fn check(&self) -> Result<(), String> {
        check_rules(self, None)
    }
}

impl AnnealParams {
    /// Checks every range; the error names the first key out of range and what it takes.
    ///
    /// ```
    /// let p = wend::AnnealParams { cooling: 1.0, ..Default::default() };
    /// assert_eq!(p.check().unwrap_err(), "cooling: expected a number in (0, 1), got '1'");
    /// ```
    pub fn check(&self) -> Result<(), String> {
        check_rules(self, None)
    }
}

fn tour_order<S: Serializer>(t: &Tour, s: S) -> Result<S::Ok, S::Error> {
    s.collect_seq(t.order())
}

fn ends_name<S: Serializer>(e: &Ends, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(e.name())
}

fn method_name<S: Serializer>(m: &Option<Method>, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(m.map_or("exact", Method::name))
}

pub(crate) fn trace_pairs<S: Serializer>(t: &[Improvement], s: S) -> Result<S::Ok, S::Error> {
    s.collect_seq(t.iter().map(|i| (i.seconds, i.length)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::MatrixCost;
    use crate::methods::CoolingSchedule as Schedule;

    fn unusual() -> Settings {
        let mut s = Settings {
            method: Method::MaxMin,
            time_limit: Some(2.5),
            seed: 11,
            threads: Some(3),
            runs: Some(4),
            iterations: Some(40),
            stall_limit: Some(9),
            target: Some(1234),
            neighbour_count: 7,
            neighbour_lists: CandidateSource::Nearest,
            layout: Layout::TwoLevel,
            ends: Ends::StartEnd(2, 5),
            asymmetric_mode: AsymmetricMode::Direct,
            bound: true,
            bound_time: 1.5,
            exact: true,
            exact_method: Some(ExactMethod::BranchAndBound),
            memory_limit: Some(1 << 30),
            ..Settings::default()
        };
        s.ants.colony_size = Some(12);
        s.ants.evaporation = None;
        s.ants.restart_stall = None;
        s.ants.local_search = Some(AntLocalSearch::TwoOpt);
        s.ants.greed = 0.75;
        s.annealing.schedule = Schedule::Adaptive;
        s.annealing.descent = false;
        s.annealing.cooling = 0.9;
        s
    }

    #[test]
    fn settings_round_trip_through_json_and_toml() {
        let s = unusual();
        assert_ne!(s, Settings::default());
        let json = serde_json::to_string(&s).unwrap();
        assert_eq!(
            serde_json::from_str::<Settings>(&json).unwrap(),
            s,
            "{json}"
        );
        let text = toml::to_string(&s).unwrap();
        assert_eq!(toml::from_str::<Settings>(&text).unwrap(), s, "{text}");
        // The defaults too (their `None` parameters are written as words).
        let d = Settings::default();
        let text = toml::to_string(&d).unwrap();
        assert_eq!(toml::from_str::<Settings>(&text).unwrap(), d, "{text}");
        assert_eq!(toml::from_str::<Settings>("").unwrap(), d);
    }

    #[test]
    fn a_suite_style_table_reads_names_words_and_numbers() {
        let text = r#"
            method = "anneal"
            restarts = 3
            kicks = 20
            ends = { start-end = [0, 4] }
            candidates = "alpha"
            layout = "array"
            exact_method = "dynamic-programme"
            [ants]
            colony-size = "auto"
            evaporation = 0.25
            restart-stall = "never"
            local-search = "lk"
            [annealing]
            schedule = "adaptive"
            batch = "50"
            descent = "off"
        "#;
        let s: Settings = toml::from_str(text).unwrap();
        assert_eq!(s.method, Method::Anneal);
        assert_eq!((s.runs, s.iterations), (Some(3), Some(20)));
        assert_eq!(s.ends, Ends::StartEnd(0, 4));
        assert_eq!(s.neighbour_lists, CandidateSource::Alpha);
        assert_eq!(s.layout, Layout::Array);
        assert_eq!(s.exact_method, Some(ExactMethod::DynamicProgramme));
        assert_eq!(s.ants.colony_size, None);
        assert_eq!(s.ants.evaporation, Some(0.25));
        assert_eq!(s.ants.restart_stall, None);
        assert_eq!(s.ants.local_search, Some(AntLocalSearch::Lk));
        assert_eq!(s.annealing.schedule, Schedule::Adaptive);
        assert_eq!(s.annealing.batch, 50);
        assert!(!s.annealing.descent);
        assert_eq!(
            s.annealing.cooling, 0.98,
            "untouched keys keep their defaults"
        );
    }

    #[test]
    fn unknown_parameter_keys_are_refused_with_the_known_ones() {
        // From a file: serde's message lists every field.
        let e = toml::from_str::<Settings>("[ants]\nspeed = 3\n")
            .unwrap_err()
            .to_string();
        for (key, _) in AntParams::KEYS {
            assert!(e.contains(key), "{key} not in {e}");
        }
        assert!(e.contains("speed"), "{e}");
        let e = serde_json::from_str::<Settings>(r#"{"annealing": {"colling": 0.9}}"#)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("colling") && e.contains("cooling") && e.contains("rate-step"),
            "{e}"
        );
        // From KEY=VALUE pairs.
        let mut s = Settings {
            method: Method::Acs,
            ..Settings::default()
        };
        let e = s.set("speed", "1").unwrap_err().to_string();
        assert_eq!(
            e,
            "method acs: unknown ant colony parameter `speed`; known: colony-size, trail-weight, \
             cost-weight, evaporation, greed, local-evaporation, best-probability, \
             restart-branching, restart-stall, local-search"
        );
        s.method = Method::Lk;
        let e = s.set("greed", "0.5").unwrap_err().to_string();
        assert_eq!(e, "method lk: takes no parameters (`greed` was given)");
        assert_eq!(
            s,
            Settings {
                method: Method::Lk,
                ..Settings::default()
            }
        );
    }

    #[test]
    fn the_serialised_keys_are_the_listed_keys() {
        for (value, keys) in [
            (
                serde_json::to_value(AntParams::default()).unwrap(),
                AntParams::KEYS,
            ),
            (
                serde_json::to_value(AnnealParams::default()).unwrap(),
                AnnealParams::KEYS,
            ),
        ] {
            let got: Vec<&str> = value
                .as_object()
                .unwrap()
                .keys()
                .map(|k| k.as_str())
                .collect();
            let mut want: Vec<&str> = keys.iter().map(|(k, _)| *k).collect();
            want.sort_unstable();
            assert_eq!(got, want);
        }
    }

    #[test]
    fn out_of_range_values_are_refused_from_files_and_pairs() {
        let e = toml::from_str::<Settings>("[ants]\ngreed = 1.5\n")
            .unwrap()
            .check();
        assert_eq!(
            e.unwrap_err().to_string(),
            "ants: greed: expected a number in [0, 1], got `1.5`"
        );
        let e = toml::from_str::<Settings>("[annealing]\nbatch = 0\n")
            .unwrap()
            .check();
        assert_eq!(
            e.unwrap_err().to_string(),
            "annealing: batch: expected a whole number from 1 to 1000000, got '0'"
        );
        let s = Settings {
            time_limit: Some(-1.0),
            ..Settings::default()
        };
        assert_eq!(
            s.check().unwrap_err(),
            SettingsError::Field {
                field: "time_limit",
                requirement: "must be a non-negative number of seconds, got -1".into()
            }
        );
        let s = Settings {
            bound: true,
            bound_time: f64::NAN,
            ..Settings::default()
        };
        assert!(
            s.check()
                .unwrap_err()
                .to_string()
                .starts_with("bound_time must be")
        );
        // The same through solve_with: nothing runs.
        let c = MatrixCost::from_rows(&[vec![0, 1], vec![1, 0]]).unwrap();
        assert!(matches!(
            solve_with(&c, &s, Hooks::default()),
            Err(SolveWithError::Settings(_))
        ));
        let mut s = Settings {
            method: Method::Anneal,
            ..Settings::default()
        };
        for (key, bad, message) in [
            (
                "cooling",
                "2",
                "cooling: expected a number in (0, 1), got '2'",
            ),
            (
                "batch",
                "0.5",
                "batch: expected a whole number from 1 to 1000000, got '0.5'",
            ),
            (
                "descent",
                "maybe",
                "descent: expected on or off, got 'maybe'",
            ),
            (
                "reheat",
                "0",
                "reheat: expected a number in (0, 1], got '0'",
            ),
        ] {
            let e = s.set(key, bad).unwrap_err().to_string();
            assert_eq!(e, format!("method anneal: {message}"));
        }
        assert_eq!(
            s.annealing,
            AnnealParams::default(),
            "failed sets change nothing"
        );
        s.method = Method::MaxMin;
        for (key, bad, message) in [
            (
                "evaporation",
                "0",
                "evaporation: expected a number in (0, 1], got `0` (or `auto`)",
            ),
            (
                "colony-size",
                "many",
                "colony-size: expected a whole number from 1 to 10000 or `auto`, got `many`",
            ),
            (
                "local-search",
                "3opt",
                "local-search: expected none, 2opt, lk or auto, got `3opt`",
            ),
        ] {
            let e = s.set(key, bad).unwrap_err().to_string();
            assert_eq!(e, format!("method mmas: {message}"));
        }
    }

    #[test]
    fn the_proof_and_the_bound_come_with_the_outcome() {
        // 0 -> 2 -> 1 -> 0 costs 9 + 7 + 1 = 17, the other direction 23 (worked by hand).
        let rows = vec![
            vec![0, 2, 9, 10],
            vec![1, 0, 6, 4],
            vec![15, 7, 0, 8],
            vec![6, 3, 12, 0],
        ];
        let c = MatrixCost::from_rows(&rows).unwrap();
        // Every tour from 0: 0123 2+6+8+6=22, 0132 2+4+12+15=33, 0213 9+7+4+6=26,
        // 0231 9+8+3+1=21, 0312 10+3+6+15=34, 0321 10+12+7+1=30: the optimum is 21.
        let exact = Settings {
            exact: true,
            ..Settings::default()
        };
        let o = solve_with(&c, &exact, Hooks::default()).unwrap();
        assert_eq!((o.length, o.lower_bound), (21, Some(21)));
        assert_eq!(o.tour.order(), &[0, 2, 3, 1]);
        let proof = o.proof.clone().unwrap();
        assert!(proof.proven_optimal);
        assert_eq!(proof.exact_method, ExactMethod::DynamicProgramme);
        assert_eq!(o.proven_gap_percent, Some(0.0));
        let v = serde_json::to_value(&o).unwrap();
        let mut keys: Vec<&str> = v.as_object().unwrap().keys().map(|k| k.as_str()).collect();
        keys.sort_unstable();
        assert_eq!(
            keys,
            [
                "ends",
                "exact_method",
                "first_tour_length",
                "gap_note",
                "length",
                "lower_bound",
                "method",
                "proven_gap_percent",
                "proven_optimal",
                "seconds",
                "subproblems",
                "threads",
                "tour"
            ]
        );
        let heuristic = Settings {
            bound: true,
            bound_time: 1.0,
            ..Settings::default()
        };
        let o = solve_with(&c, &heuristic, Hooks::default()).unwrap();
        assert_eq!(o.length, 21);
        let b = o.lower_bound.unwrap();
        assert!(b <= 21, "{b}");
        let v = serde_json::to_value(&o).unwrap();
        assert_eq!(v["method"], "lk");
        assert_eq!(v["ends"], "closed");
        assert!(v["stop_reason"].is_string() && v["runs"].is_u64(), "{v}");
        assert!(v.get("proven_optimal").is_none(), "{v}");
    }

    #[test]
    fn a_bound_of_zero_says_why_no_gap_is_proven() {
        // Three nodes, two tours: 0 1 2 costs 0 + 5 + 0 = 5, 0 2 1 costs 0 + 0 + 0 = 0, and
        // the cheapest cover by cycles (the same two cycles) costs 0.
        let zero = MatrixCost::from_rows(&[vec![0, 0, 0], vec![0, 0, 5], vec![0, 0, 0]]).unwrap();
        let asked = Settings {
            bound: true,
            bound_time: 1.0,
            ..Settings::default()
        };
        let o = solve_with(&zero, &asked, Hooks::default()).unwrap();
        assert_eq!((o.length, o.lower_bound), (0, Some(0)));
        assert_eq!(o.proven_gap_percent, None);
        let note = o.gap_note.clone().unwrap();
        assert!(note.contains("lower bound is 0"), "{note}");
        let v = serde_json::to_value(&o).unwrap();
        assert!(v["gap_note"].is_string(), "{v}");
        // 0 1 2 costs 3 + 5 + 0 = 8, 0 2 1 costs 3 + 0 + 0 = 3, and so does the cheapest cover:
        // a positive bound proves a gap; and no bound asked for means no note.
        let three = MatrixCost::from_rows(&[vec![0, 3, 3], vec![0, 0, 5], vec![0, 0, 0]]).unwrap();
        let o = solve_with(&three, &asked, Hooks::default()).unwrap();
        assert_eq!((o.length, o.lower_bound), (3, Some(3)));
        assert_eq!((o.proven_gap_percent, o.gap_note), (Some(0.0), None));
        let o = solve_with(&zero, &Settings::default(), Hooks::default()).unwrap();
        assert_eq!((o.lower_bound, o.gap_note.clone()), (None, None));
        let v = serde_json::to_value(&o).unwrap();
        assert!(v["gap_note"].is_null(), "{v}");
    }

    #[test]
    fn the_outcome_names_the_threads_used() {
        let c = MatrixCost::from_rows(&[vec![0, 1, 2], vec![1, 0, 1], vec![2, 1, 0]]).unwrap();
        let two = Settings {
            threads: Some(2),
            ..Settings::default()
        };
        assert_eq!(solve_with(&c, &two, Hooks::default()).unwrap().threads, 2);
        let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
        let o = solve_with(&c, &Settings::default(), Hooks::default()).unwrap();
        assert_eq!(o.threads, cores);
        let exact = Settings {
            exact: true,
            threads: Some(3),
            ..Settings::default()
        };
        assert_eq!(solve_with(&c, &exact, Hooks::default()).unwrap().threads, 3);
    }

    #[test]
    fn hooks_see_the_search() {
        use std::sync::Arc;
        use std::sync::atomic::{AtomicUsize, Ordering};
        let seen = Arc::new(AtomicUsize::new(0));
        let after = Arc::new(AtomicUsize::new(0));
        let (s2, a2) = (seen.clone(), after.clone());
        let hooks = Hooks {
            stop: StopHandle::new(),
            observer: Some(Box::new(move |_| {
                s2.fetch_add(1, Ordering::Relaxed);
            })),
            prover: None,
            after_search: Some(Box::new(move || {
                a2.fetch_add(1, Ordering::Relaxed);
            })),
        };
        let c = crate::cost::FnCost::new(12, true, |i, j| (i as i64 - j as i64).abs());
        let settings = Settings {
            method: Method::TwoOpt,
            runs: Some(2),
            threads: Some(1),
            ..Settings::default()
        };
        let o = solve_with(&c, &settings, hooks).unwrap();
        assert_eq!(o.length, 22);
        assert!(seen.load(Ordering::Relaxed) >= 1);
        assert_eq!(after.load(Ordering::Relaxed), 1);
    }
}
