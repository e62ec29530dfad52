//! The embedding API: a builder that takes costs and options and returns a [`Solution`].

use crate::bounds::{assignment_bound, patch_cover};
use crate::construct;
use crate::construct::{Start, start_tour};
use crate::control::{self, Improvement, StopHandle, StopReason};
use crate::cost::{CoordCost, Cost, CostError, FnCost, KnownCost, MatrixCost};
use crate::exact;
use crate::methods::parts;
use crate::methods::{AnnealParams, Annealer};
use crate::methods::{AntParams, AntVariant, Colony};
use crate::methods::{Iterative, LoopPlan, drive};
use crate::methods::{LkParams, LkPlan, default_kicks, iterated};
use crate::moves::two_opt_or_opt;
use crate::neighbours::{CandidateSource, Neighbours, candidates_until};
use crate::tour::{ArrayTour, Layout, Overflow, Tour, closed_length};
use crate::transform::{EndedCost, Ends, EndsError, path_length};
use crate::transform::{FixedCost, FixedEdgesError};
use crate::transform::{TwinCost, TwinTooLarge};
use rand_pcg::Pcg64;
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// A named solver configuration, as chosen on the command line with `--method`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Method {
    /// Nearest-neighbour construction only.
    Nearest,
    /// Greedy-edge construction only.
    Greedy,
    /// Space-filling-curve construction only (nearest neighbour without geometry).
    Curve,
    /// Restarts of a construction followed by 2-opt and Or-opt over neighbour lists.
    #[serde(rename = "2opt")]
    TwoOpt,
    /// Iterated Lin–Kernighan-style search: LK moves plus Or-opt, double-bridge kicks, parallel
    /// independent runs (see `crate::methods::lk`). The default.
    Lk,
    /// Ant colony system (see `crate::methods::ants`), ants built in parallel.
    Acs,
    /// MAX–MIN ant system (see `crate::methods::ants`), ants built in parallel.
    #[serde(rename = "mmas")]
    MaxMin,
    /// Simulated annealing over 2-opt, Or-opt and segment exchanges (see `crate::methods::anneal`),
    /// independent runs per thread.
    Anneal,
}

impl Method {
    /// Every method, in the order they are listed.
    pub const ALL: [Method; 8] = [
        Method::Lk,
        Method::MaxMin,
        Method::Acs,
        Method::Anneal,
        Method::TwoOpt,
        Method::Greedy,
        Method::Nearest,
        Method::Curve,
    ];

    /// The name used on the command line and in result files.
    pub fn name(self) -> &'static str {
        match self {
            Method::Nearest => "nearest",
            Method::Greedy => "greedy",
            Method::Curve => "curve",
            Method::TwoOpt => "2opt",
            Method::Lk => "lk",
            Method::Acs => "acs",
            Method::MaxMin => "mmas",
            Method::Anneal => "anneal",
        }
    }

    /// The method with this name.
    pub fn from_name(name: &str) -> Option<Method> {
        Method::ALL.into_iter().find(|m| m.name() == name)
    }

    /// One line on what the method does.
    pub fn describe(self) -> &'static str {
        match self {
            Method::Nearest => "nearest-neighbour construction, no improvement",
            Method::Greedy => "greedy-edge construction, no improvement",
            Method::Curve => "Hilbert space-filling-curve order, no improvement",
            Method::TwoOpt => {
                "parallel runs: greedy/curve/nearest starts, 2-opt + Or-opt over 10 nearest \
                 neighbours with don't-look bits (Or-opt only for asymmetric costs)"
            }
            Method::Lk => {
                "iterated Lin-Kernighan: greedy start, LK chains of 2-opt flips + Or-opt, local \
                 double-bridge kicks kept when no longer; independent runs per thread \
                 (asymmetric costs: on their symmetric 2n-node transformation)"
            }
            Method::Acs => {
                "ant colony system: ants on candidate lists, greedy or proportional steps, local \
                 and global trail updates, LK (symmetric) or Or-opt on every ant's tour"
            }
            Method::MaxMin => {
                "MAX-MIN ant system: trails kept within limits and reinitialised on convergence, \
                 LK (symmetric) or Or-opt on every ant's tour"
            }
            Method::Anneal => {
                "simulated annealing: 2-opt, Or-opt and segment exchanges on candidate lists, \
                 start temperature from sampled gains, reheats from the best tour; one run per \
                 thread"
            }
        }
    }

    /// Keys [`Solver::set`] takes for this method, each with a one-line meaning.
    pub fn keys(self) -> &'static [(&'static str, &'static str)] {
        match self {
            Method::Acs | Method::MaxMin => AntParams::KEYS,
            Method::Anneal => AnnealParams::KEYS,
            _ => &[],
        }
    }

    /// True for the methods that run under the loop owner and take an iteration budget.
    pub fn iterates(self) -> bool {
        matches!(
            self,
            Method::Lk | Method::Acs | Method::MaxMin | Method::Anneal
        )
    }
}

/// Why a solve could not run.
#[derive(Debug, thiserror::Error)]
pub enum SolveError {
    /// Costs so large that a tour's length could overflow 64-bit arithmetic.
    #[error(
        "costs up to {max_cost} over {n} nodes could overflow a 64-bit tour length; scale them down"
    )]
    CostsTooLarge {
        /// The largest cost, as the oracle reported it.
        max_cost: i64,
        /// Nodes in the instance.
        n: usize,
    },
    /// The length of the tour found does not fit in `i64`.
    #[error(transparent)]
    Overflow(#[from] Overflow),
    /// The costs could not be built.
    #[error(transparent)]
    Cost(#[from] CostError),
    /// The requested ends are out of range, or their penalty could overflow.
    #[error(transparent)]
    Ends(#[from] EndsError),
    /// The symmetric transformation of asymmetric costs could overflow.
    #[error(transparent)]
    Twin(#[from] TwinTooLarge),
    /// The fixed edges cannot all be in one tour, are out of range, come with path ends, or
    /// their transformation could overflow; or a tour without one of them was refused.
    #[error(transparent)]
    FixedEdges(#[from] FixedEdgesError),
    /// The search's buffers would pass the memory ceiling ([`crate::memory`]).
    #[error(transparent)]
    Memory(#[from] crate::memory::MemoryError),
    /// A method parameter set by name was unknown or out of range.
    #[error("method {method}: {message}")]
    Parameter {
        /// The method's name.
        method: &'static str,
        /// What was wrong, naming the key.
        message: String,
    },
}

/// How `lk` searches asymmetric costs.
#[derive(
    Clone, Copy, Debug, Default, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize,
)]
#[serde(rename_all = "lowercase")]
pub enum AsymmetricMode {
    /// Lin–Kernighan moves on the symmetric transformation over `2n` nodes (Jonker and
    /// Volgenant 1983; see `crate::transform::twin`), the tour mapped back to the caller's nodes.
    #[default]
    Transformed,
    /// Direction-keeping Or-opt moves and kicks on the costs as given.
    Direct,
}

/// What a solve returns.
#[derive(Clone, Debug)]
pub struct Solution {
    /// The best tour found: for a closed tour, from node 0 (or the fixed start); for a path,
    /// from its first node to its last.
    pub tour: Tour,
    /// Its exact length on the caller's costs: with the return step for a closed tour, without
    /// it for a path.
    pub length: i64,
    /// The ends asked for, which `tour` has: a closed tour when [`Ends::is_path`] is false
    /// (`Closed`, or `StartEnd(s, s)`: a closed tour from `s`), otherwise a path.
    pub ends: Ends,
    /// Wall-clock seconds the solve took, including neighbour lists.
    pub seconds: f64,
    /// Independent runs completed (a restart of `2opt` is a run; for `lk`: runs started).
    pub runs: usize,
    /// Steps of an iterative method over all runs: kicks for `lk`, generations for the ant
    /// colonies, batches of moves for `anneal` (zero for the other methods).
    pub iterations: u64,
    /// Why the search ended.
    pub stop_reason: StopReason,
    /// Every new best tour's length and time, in order: the anytime curve of the run.
    pub trace: Vec<Improvement>,
    /// The method that ran.
    pub method: Method,
}

type Observer = std::sync::Arc<dyn Fn(Improvement) + Sync + Send>;

/// Builder for a solve over any [`Cost`].
///
/// ```
/// use std::time::Duration;
/// let s = wend::Solver::from_fn(5, true, |i, j| (i as i64 - j as i64).abs())
///     .time_limit(Duration::from_millis(200))
///     .seed(7)
///     .solve()
///     .unwrap();
/// assert_eq!(s.length, 8); // 0 1 2 3 4 and back: 4 + 4
/// ```
pub struct Solver<C> {
    cost: C,
    time_limit: Option<Duration>,
    seed: u64,
    threads: Option<usize>,
    runs: Option<usize>,
    iterations: Option<u64>,
    stall_limit: Option<u64>,
    target: Option<i64>,
    method: Method,
    neighbour_count: usize,
    neighbour_lists: CandidateSource,
    layout: Layout,
    ends: Ends,
    fixed_edges: Vec<(usize, usize)>,
    asymmetric_mode: AsymmetricMode,
    ants: AntParams,
    annealing: AnnealParams,
    stop: StopHandle,
    observer: Option<Observer>,
    memory_limit: Option<usize>,
}

/// Asymmetric instances from `PATCH_FROM` to `PATCH_LIMIT` nodes start their first `lk` run
/// from the patched assignment cover ([`crate::bounds::patch_cover`]). Above the limit the
/// Hungarian method (O(n³): about a second at 2,000 nodes, eight at 4,000, on one core) costs
/// too much of a run. Below `PATCH_FROM` the kicks cover the instance many times over, so the
/// start matters little (ten 10-second runs on each TSPLIB ATSP instance: optimal in 64 of 70
/// runs with the patched start, 63 with greedy starts), and greedy starts keep the runs apart
/// where the patched one puts every first run in one basin (ftv38: 0.13 % above the optimum in
/// 5 of 10 runs, against 1 of 10 with greedy starts).
pub(crate) const PATCH_LIMIT: usize = 3_000;
/// See [`PATCH_LIMIT`].
pub(crate) const PATCH_FROM: usize = 200;

/// Worker threads when none are asked for: one per core (one when the count is unknown).
pub(crate) fn default_threads() -> usize {
    std::thread::available_parallelism()
        .map(|t| t.get())
        .unwrap_or(1)
}

/// Independent runs of an iterative method when neither a time limit nor a run count is given,
/// or when an iteration budget is: one colony for the ant methods, [`DEFAULT_LK_RUNS`] otherwise.
pub(crate) fn default_runs(method: Method) -> usize {
    match method {
        Method::Acs | Method::MaxMin => 1,
        _ => DEFAULT_LK_RUNS,
    }
}

/// Steps per run of an iterative method without a time limit or stall limit: kicks for `lk`
/// ([`lk::default_kicks`]), 100 generations for the ant colonies, 500 batches of moves for
/// `anneal` (with the default batches, a cooling cycle takes a few dozen).
pub(crate) fn default_iterations(method: Method, n: usize) -> u64 {
    match method {
        Method::Acs | Method::MaxMin => 100,
        Method::Anneal => 500,
        _ => default_kicks(n),
    }
}

/// Runs of `2opt` when neither a time limit nor a run count is given.
pub(crate) const DEFAULT_RESTARTS: usize = 8;
/// Width of the neighbour lists by default.
pub const DEFAULT_NEIGHBOURS: usize = 10;
/// Independent `lk` runs when neither a time limit nor a run count is given, or when a kick
/// budget is (so that the answer does not depend on the number of threads).
pub(crate) const DEFAULT_LK_RUNS: usize = 2;

impl<C: Cost> Solver<C> {
    /// A solver over `cost` with default options: method `lk`, seed 0, one thread per core.
    /// Without a time limit, `lk` makes `DEFAULT_LK_RUNS` runs of `lk::default_kicks` kicks
    /// each (and `2opt` makes `DEFAULT_RESTARTS` runs).
    ///
    /// ```
    /// use wend::{CoordCost, Metric, Solver};
    ///
    /// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
    /// let solution = Solver::new(square).seed(1).solve().unwrap();
    /// assert_eq!(solution.length, 40);
    /// ```
    pub fn new(cost: C) -> Self {
        Solver {
            cost,
            time_limit: None,
            seed: 0,
            threads: None,
            runs: None,
            iterations: None,
            stall_limit: None,
            target: None,
            method: Method::Lk,
            neighbour_count: DEFAULT_NEIGHBOURS,
            neighbour_lists: CandidateSource::default(),
            layout: Layout::default(),
            ends: Ends::Closed,
            fixed_edges: Vec::new(),
            asymmetric_mode: AsymmetricMode::default(),
            ants: AntParams::default(),
            annealing: AnnealParams::default(),
            stop: StopHandle::new(),
            observer: None,
            memory_limit: None,
        }
    }

    /// Stop after this long and return the best tour so far. Without a run count, runs
    /// continue until the limit.
    pub fn time_limit(mut self, limit: Duration) -> Self {
        self.time_limit = Some(limit);
        self
    }

    /// Seed of all random choices. The same seed, run count and costs give the same tour.
    pub fn seed(mut self, seed: u64) -> Self {
        self.seed = seed;
        self
    }

    /// Worker threads for the runs (default: one per core).
    pub fn threads(mut self, threads: usize) -> Self {
        self.threads = Some(threads.max(1));
        self
    }

    /// Number of independent runs (for `2opt` each a construction plus local search). Without a time limit the default is `DEFAULT_RESTARTS`; with one, runs
    /// continue until it unless this is set.
    /// For `lk` this is the number of independent runs (default `DEFAULT_LK_RUNS` without a
    /// time limit or with a kick budget; otherwise runs follow one another until the limit).
    pub fn runs(mut self, runs: usize) -> Self {
        self.runs = Some(runs.max(1));
        self
    }

    /// Steps per run of an iterative method: kicks for `lk`, generations for the ant colonies,
    /// batches of moves at one temperature for `anneal`. With such a budget and no time limit
    /// (or one long enough), the same seed gives the same tour for any number of threads.
    /// Without a time limit the default is `default_iterations`.
    pub fn iterations(mut self, steps: u64) -> Self {
        self.iterations = Some(steps);
        self
    }

    /// Kicks per `lk` run: [`Solver::iterations`] under the name `lk` users know it by.
    pub fn kicks(self, kicks: u64) -> Self {
        self.iterations(kicks)
    }

    /// The ant colony methods' parameters (the defaults of [`AntParams`] otherwise).
    pub fn ant_params(mut self, params: AntParams) -> Self {
        self.ants = params;
        self
    }

    /// Simulated annealing's parameters (the defaults of [`AnnealParams`] otherwise).
    pub fn anneal_params(mut self, params: AnnealParams) -> Self {
        self.annealing = params;
        self
    }

    /// Sets one parameter of the chosen method by its key (see [`Method::keys`]), as the
    /// command line's `--params KEY=VALUE` does. Set the method first.
    ///
    /// ```
    /// use wend::{Method, Solver};
    ///
    /// let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
    /// let solver = Solver::from_matrix(&rows).unwrap().method(Method::Anneal);
    /// let solver = solver.set("cooling", "0.9").unwrap();
    /// assert!(solver.set("no-such-key", "1").is_err());
    /// ```
    pub fn set(mut self, key: &str, value: &str) -> Result<Self, SolveError> {
        let (ants, annealing) = (&mut self.ants, &mut self.annealing);
        set_param(self.method, ants, annealing, key, value)?;
        Ok(self)
    }

    /// Ends an `lk` run after this many kicks in a row that found no shorter tour; with a time
    /// limit and no run count, a new run then starts.
    pub fn stall_limit(mut self, kicks: u64) -> Self {
        self.stall_limit = Some(kicks.max(1));
        self
    }

    /// Stops `lk` and `2opt` as soon as a tour of at most this length is found (for example a known
    /// optimum). Which tour is returned then depends on thread timing.
    pub fn target(mut self, length: i64) -> Self {
        self.target = Some(length);
        self
    }

    /// The method to run.
    ///
    /// ```
    /// use wend::{CoordCost, Method, Metric, Solver};
    ///
    /// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
    /// let solution = Solver::new(square).method(Method::Greedy).solve().unwrap();
    /// assert_eq!(solution.length, 40);
    /// ```
    pub fn method(mut self, method: Method) -> Self {
        self.method = method;
        self
    }

    /// Width of the neighbour lists the moves look at.
    pub fn neighbour_count(mut self, k: usize) -> Self {
        self.neighbour_count = k.max(1);
        self
    }

    /// Where the neighbour lists come from (quadrant lists by default, which help on clustered
    /// instances; nearest lists are the plain alternative).
    pub fn neighbour_lists(mut self, source: CandidateSource) -> Self {
        self.neighbour_lists = source;
        self
    }

    /// Which tour representation `lk` edits (by default the array below
    /// `crate::tour::TWO_LEVEL_FROM` nodes, the two-level list from there on). The tour found
    /// is the same either way; only the speed differs.
    pub fn layout(mut self, layout: Layout) -> Self {
        self.layout = layout;
        self
    }

    /// Which ends the answer has: a closed tour (the default) or a path with free or fixed ends
    /// ([`Ends`]). Every method handles every variant through one dummy node (see
    /// `crate::transform::ends`); the [`Solution`] then holds the path from its first node and its length
    /// without a return step. Fixed ends must be below the number of nodes
    /// ([`SolveError::Ends`] otherwise).
    ///
    /// ```
    /// use wend::{CoordCost, Ends, Metric, Solver};
    ///
    /// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
    /// let path = Solver::new(square).ends(Ends::StartEnd(0, 1)).solve().unwrap();
    /// assert_eq!(path.length, 30);
    /// assert_eq!(path.tour.order().first(), Some(&0));
    /// assert_eq!(path.tour.order().last(), Some(&1));
    /// ```
    pub fn ends(mut self, ends: Ends) -> Self {
        self.ends = ends;
        self
    }

    /// Edges every tour must use, as pairs of 0-based node ids: for symmetric costs the
    /// undirected edge `a`–`b`, for asymmetric costs the arc `a -> b`. Every method honours them
    /// by solving on costs where each fixed edge is made cheaper than any tour could make up
    /// for (see `crate::transform::fixed`); the [`Solution`] has its length on the caller's
    /// costs, and a tour missing a fixed edge is never returned. Edges that no tour can use
    /// all at once (a node in three, a cycle short of the whole tour, ...), or fixed edges
    /// together with a path ([`Solver::ends`]), are refused with [`SolveError::FixedEdges`].
    /// None (the default): the search runs as it does without this option.
    ///
    /// ```
    /// use wend::{CoordCost, Metric, Solver};
    ///
    /// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
    /// // The diagonal 0-2 must be used: 0 2, then 2 1 0 or 2 3 0 around the sides.
    /// let s = Solver::new(square).fixed_edges([(0, 2)]).solve().unwrap();
    /// assert_eq!(s.length, 14 + 10 + 10 + 14);
    /// let order = s.tour.order();
    /// assert!(order[1] == 2 || order[3] == 2, "{order:?}");
    /// ```
    pub fn fixed_edges(mut self, edges: impl IntoIterator<Item = (usize, usize)>) -> Self {
        self.fixed_edges = edges.into_iter().collect();
        self
    }

    /// How `lk` searches asymmetric costs: on their symmetric transformation (the default) or
    /// with direction-keeping moves only. Other methods and symmetric costs ignore it.
    pub fn asymmetric_mode(mut self, mode: AsymmetricMode) -> Self {
        self.asymmetric_mode = mode;
        self
    }

    /// A handle whose [`StopHandle::stop`] ends the solve early with the best tour so far.
    ///
    /// ```
    /// use wend::{CoordCost, Metric, Solver, StopHandle, StopReason};
    ///
    /// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
    /// let stop = StopHandle::new();
    /// stop.stop(); // already asked to stop: the solve returns the first tour at hand
    /// let solution = Solver::new(square).stop_handle(stop).runs(100).solve().unwrap();
    /// assert_eq!(solution.tour.len(), 4);
    /// ```
    pub fn stop_handle(mut self, stop: StopHandle) -> Self {
        self.stop = stop;
        self
    }

    /// Called with every new best tour (from worker threads; keep it short).
    ///
    /// ```
    /// use std::sync::{Arc, Mutex};
    /// use wend::{CoordCost, Metric, Solver};
    ///
    /// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
    /// let seen = Arc::new(Mutex::new(Vec::new()));
    /// let log = Arc::clone(&seen);
    /// let solution = Solver::new(square)
    ///     .on_improvement(move |step| log.lock().unwrap().push(step.length))
    ///     .solve()
    ///     .unwrap();
    /// assert_eq!(seen.lock().unwrap().last(), Some(&solution.length));
    /// ```
    pub fn on_improvement(mut self, f: impl Fn(Improvement) + Sync + Send + 'static) -> Self {
        self.observer = Some(std::sync::Arc::new(f));
        self
    }

    /// The costs this solver works on.
    pub fn cost(&self) -> &C {
        &self.cost
    }

    /// Refuse to start when [`Solver::memory_estimate`] passes this many bytes (default: the
    /// process-wide ceiling of [`crate::memory`]).
    ///
    /// ```
    /// use wend::{CoordCost, Metric, Solver};
    ///
    /// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
    /// let solver = Solver::new(square).memory_limit(1);
    /// assert!(solver.memory_estimate() > 1);
    /// assert!(solver.solve().is_err()); // refused before allocating
    /// ```
    pub fn memory_limit(mut self, bytes: usize) -> Self {
        self.memory_limit = Some(bytes);
        self
    }

    /// Bytes the search's large buffers will take, estimated before anything is allocated:
    /// neighbour lists, the tours and work arrays of the runs going at once, the trails of the
    /// ant colonies (full tables up to `crate::methods::DENSE_TRAILS_UP_TO` nodes), and twice
    /// the nodes when `lk` transforms asymmetric costs. A lower estimate of the process's use.
    pub fn memory_estimate(&self) -> usize {
        let n = self.cost.len();
        let asymmetric = !self.cost.is_symmetric();
        let nodes = if asymmetric && self.method == Method::Lk {
            n.saturating_mul(2)
        } else {
            n
        };
        let k = self.neighbour_count.max(1);
        let lists = if asymmetric { 2 } else { 1 };
        // Lists of u32 plus their positions; a point and a tree slot for the k-d tree.
        let shared = nodes.saturating_mul(k.saturating_mul(8).saturating_mul(lists) + 48);
        let threads = self
            .threads
            .unwrap_or_else(rayon::current_num_threads)
            .max(1);
        // Order, positions, don't-look bits, queue and segment lists of one run.
        let per_run = nodes.saturating_mul(128);
        let trails = match self.method {
            Method::Acs | Method::MaxMin if n <= crate::methods::DENSE_TRAILS_UP_TO => {
                crate::memory::square(n, 8)
            }
            Method::Acs | Method::MaxMin => crate::memory::bytes_of(n, k * 8),
            _ => 0,
        };
        shared
            .saturating_add(per_run.saturating_mul(threads))
            .saturating_add(trails)
    }

    /// Runs the search.
    ///
    /// ```
    /// let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
    /// let solution = wend::Solver::from_matrix(&rows).unwrap().solve().unwrap();
    /// assert_eq!(solution.length, 17);
    /// assert_eq!(solution.tour.len(), 3);
    /// ```
    pub fn solve(&self) -> Result<Solution, SolveError> {
        // The search is compiled once, in this crate, for each kind of cost; this generic
        // function only picks the copy, and runs every parallel step (neighbour lists,
        // constructions, the search) on the threads asked for, no more.
        let threads = self.threads.unwrap_or_else(default_threads);
        control::within_threads(threads, || match self.cost.as_known() {
            KnownCost::Coord(c) => solve_coord(&self.with_cost(c)),
            KnownCost::Matrix(m) => solve_matrix(&self.with_cost(m)),
            KnownCost::Other => solve_other(&self.with_cost(self.cost.as_dyn_cost())),
        })
    }

    /// The same options over other costs.
    fn with_cost<D>(&self, cost: D) -> Solver<D> {
        Solver {
            cost,
            time_limit: self.time_limit,
            seed: self.seed,
            threads: self.threads,
            runs: self.runs,
            iterations: self.iterations,
            stall_limit: self.stall_limit,
            target: self.target,
            method: self.method,
            neighbour_count: self.neighbour_count,
            neighbour_lists: self.neighbour_lists,
            layout: self.layout,
            ends: self.ends,
            fixed_edges: self.fixed_edges.clone(),
            asymmetric_mode: self.asymmetric_mode,
            ants: self.ants.clone(),
            annealing: self.annealing.clone(),
            stop: self.stop.clone(),
            observer: self.observer.clone(),
            memory_limit: self.memory_limit,
        }
    }

    /// [`Solver::solve`] on this solver's own cost type.
    fn solve_here(&self) -> Result<Solution, SolveError> {
        if !self.fixed_edges.is_empty() {
            return self.solve_fixed();
        }
        let lists = |over: &(dyn Fn() -> bool + Sync)| {
            candidates_until(&self.cost, self.neighbour_count, self.neighbour_lists, over)
        };
        self.solve_over(&self.cost, &lists, self.target, &Some)
    }

    /// The solve with fixed edges: the search on their transformed costs, whose tour is read
    /// back, checked and measured on the caller's costs.
    fn solve_fixed(&self) -> Result<Solution, SolveError> {
        if self.ends.is_path() {
            return Err(FixedEdgesError::Path {
                ends: self.ends.name(),
            }
            .into());
        }
        let fixed = FixedCost::new(&self.cost, &self.fixed_edges)?;
        let lists = |over: &(dyn Fn() -> bool + Sync)| {
            candidates_until(&self.cost, self.neighbour_count, self.neighbour_lists, over)
                .map(|nb| fixed.neighbours(&nb))
        };
        let target = self.target.and_then(|t| fixed.transformed_length(t));
        let back = |length| fixed.original_length(length);
        let sol = self.solve_over(&fixed, &lists, target, &back)?;
        let mut order = fixed.tour_back(sol.tour.order().to_vec())?;
        let length = closed_length(&self.cost, &order)?;
        if let Some(p) = order
            .iter()
            .position(|&v| v == self.ends.start().unwrap_or(0))
        {
            order.rotate_left(p);
        }
        Ok(Solution {
            tour: Tour::trusted(order),
            length,
            ..sol
        })
    }

    /// The solve on `cost` (the caller's costs, or their fixed-edge transformation):
    /// `lists` builds its neighbour lists (giving up when its argument turns true), `target`
    /// is on `cost`, and `shown` maps a length on `cost` to the one observed and traced (or
    /// `None` to leave the improvement out).
    fn solve_over<D: Cost>(
        &self,
        cost: &D,
        lists: &dyn Fn(&(dyn Fn() -> bool + Sync)) -> Option<Neighbours>,
        target: Option<i64>,
        shown: &(dyn Fn(i64) -> Option<i64> + Sync),
    ) -> Result<Solution, SolveError> {
        let began = Instant::now();
        let n = cost.len();
        self.ends.check(n)?;
        let ceiling = self.memory_limit.unwrap_or_else(crate::memory::ceiling);
        crate::memory::check_against(self.memory_estimate(), ceiling, || {
            format!("a {} search over {n} nodes", self.method.name())
        })?;
        // Preparation (neighbour lists) gives up at a stop request or the deadline, so that
        // neither waits for seconds of list building on large instances.
        let deadline = control::deadline(began, self.time_limit);
        let over = || self.stop.is_stopped() || deadline.is_some_and(|d| Instant::now() >= d);
        if let Some(max_cost) = cost.max_cost_hint() {
            // Moves add and subtract a handful of costs on top of a tour length.
            if max_cost.checked_mul(n as i64 + 8).is_none() {
                return Err(SolveError::CostsTooLarge { max_cost, n });
            }
        }
        let trace = Mutex::new(Vec::new());
        let observe = |imp: Improvement| {
            let Some(length) = shown(imp.length) else {
                return;
            };
            let imp = Improvement { length, ..imp };
            if let Some(f) = &self.observer {
                f(imp);
            }
            trace.lock().unwrap_or_else(|e| e.into_inner()).push(imp);
        };
        let ends = self.ends;
        let finish = |mut order: Vec<usize>, raw: Raw, trace: &Mutex<Vec<Improvement>>| {
            let length = if ends.is_path() {
                path_length(cost, &order)?
            } else {
                let length = closed_length(cost, &order)?;
                if let Some(p) = order.iter().position(|&v| v == ends.start().unwrap_or(0)) {
                    order.rotate_left(p);
                }
                length
            };
            Ok(Solution {
                tour: Tour::trusted(order),
                length,
                ends,
                seconds: began.elapsed().as_secs_f64(),
                runs: raw.runs,
                iterations: raw.iterations,
                stop_reason: raw.stop_reason,
                trace: std::mem::take(&mut *trace.lock().unwrap_or_else(|e| e.into_inner())),
                method: self.method,
            })
        };
        let twin = !cost.is_symmetric()
            && self.method == Method::Lk
            && self.asymmetric_mode == AsymmetricMode::Transformed;
        if !ends.is_path() || n < 2 {
            let raw = if n < 2 {
                let order: Vec<usize> = (0..n).collect();
                observe(Improvement {
                    seconds: began.elapsed().as_secs_f64(),
                    length: 0,
                    restart: 0,
                });
                Raw {
                    order,
                    runs: 1,
                    iterations: 0,
                    stop_reason: StopReason::Exhaustive,
                }
            } else {
                let nb = || lists(&over);
                self.search_maybe_twinned(cost, nb, twin, target, began, &observe)?
            };
            return finish(raw.order.clone(), raw, &trace);
        }
        let ended = EndedCost::new(cost, ends)?;
        let observe_ended = |imp: Improvement| {
            if let Some(length) = ended.path_length_of(imp.length) {
                observe(Improvement { length, ..imp });
            }
        };
        let target = target.and_then(|t| ended.tour_length_of(t));
        let nb = || lists(&over).map(|lists| ended.neighbours(&lists, self.neighbour_lists));
        let raw = self.search_maybe_twinned(&ended, nb, twin, target, began, &observe_ended)?;
        finish(ended.path_from_tour(&raw.order), raw, &trace)
    }

    /// The search on `cost` directly, or (`twin`) on its symmetric transformation, whose tour
    /// is mapped back. `nb` gives neighbour lists of `cost`; `target` and the lengths passed to
    /// `observe` are on `cost`.
    fn search_maybe_twinned<D: Cost>(
        &self,
        cost: &D,
        nb: impl FnOnce() -> Option<Neighbours>,
        twin: bool,
        target: Option<i64>,
        began: Instant,
        observe: &(dyn Fn(Improvement) + Sync),
    ) -> Result<Raw, SolveError> {
        if !twin || cost.len() <= exact::ENUMERATION_LIMIT {
            return Ok(self.search(cost, nb, None, target, began, observe));
        }
        let twinned = TwinCost::new(cost)?;
        let Some(lists) = nb() else {
            return Ok(self.unprepared(cost, began, observe));
        };
        // Run 0 starts from the patched assignment cover, as a tour of the 2m nodes: each in
        // copy followed by its out copy.
        let start = (PATCH_FROM..=PATCH_LIMIT)
            .contains(&cost.len())
            .then(|| assignment_bound(cost).ok())
            .flatten()
            .map(|cover| {
                let m = cost.len();
                patch_cover(cost, &cover.successor)
                    .into_iter()
                    .flat_map(|v| [v, v + m])
                    .collect()
            });
        let observe_twinned = |imp: Improvement| {
            if let Some(length) = twinned.original_length(imp.length) {
                observe(Improvement { length, ..imp });
            }
        };
        let target = target.and_then(|t| twinned.transformed_length(t));
        let nb = || Some(twinned.neighbours(&lists, self.neighbour_lists));
        let raw = self.search(&twinned, nb, start, target, began, &observe_twinned);
        let (order, _repaired) = twinned.tour_back(&raw.order);
        Ok(Raw { order, ..raw })
    }

    /// The answer when a stop request or the deadline came before the neighbour lists were
    /// built: the space-filling curve through the points (a fraction of a second on a million
    /// points), or the nodes in order when the costs have no geometry.
    fn unprepared<D: Cost>(
        &self,
        cost: &D,
        began: Instant,
        observe: &(dyn Fn(Improvement) + Sync),
    ) -> Raw {
        let n = cost.len();
        let order =
            construct::space_filling_curve(cost, [0.0, 0.0]).unwrap_or_else(|| (0..n).collect());
        let length = closed_length(cost, &order).unwrap_or(i64::MAX);
        observe(Improvement {
            seconds: began.elapsed().as_secs_f64(),
            length,
            restart: 0,
        });
        Raw {
            order,
            runs: 0,
            iterations: 0,
            stop_reason: if self.stop.is_stopped() {
                StopReason::Cancelled
            } else {
                StopReason::TimeLimit
            },
        }
    }

    /// The configured method on `cost` (any number of nodes); the order found, from node 0.
    /// `start`: a tour every `lk` run starts from instead of its greedy one.
    fn search<D: Cost>(
        &self,
        cost: &D,
        nb: impl FnOnce() -> Option<Neighbours>,
        start: Option<Vec<usize>>,
        target: Option<i64>,
        began: Instant,
        observe: &(dyn Fn(Improvement) + Sync),
    ) -> Raw {
        let n = cost.len();
        let searches = self.method == Method::TwoOpt || self.method.iterates();
        // One tour made in one go (every order tried, or a construction): reported and done.
        let single = |order: Vec<usize>, stop_reason: StopReason| {
            let length = closed_length(cost, &order).unwrap_or(i64::MAX);
            observe(Improvement {
                seconds: began.elapsed().as_secs_f64(),
                length,
                restart: 0,
            });
            Raw {
                order,
                runs: 1,
                iterations: 0,
                stop_reason,
            }
        };
        if n <= exact::ENUMERATION_LIMIT && searches {
            let order = exact::enumerate(cost).unwrap_or_else(|| (0..n).collect());
            return single(order, StopReason::Exhaustive);
        }

        let Some(nb) = nb() else {
            return self.unprepared(cost, began, observe);
        };
        let threads = self.threads.unwrap_or_else(default_threads);
        let construction = |start| {
            let mut rng = <rand_pcg::Pcg64 as rand::SeedableRng>::seed_from_u64(self.seed);
            match start {
                Start::GreedyEdge => construct::greedy_edge(cost, &nb, 0.0, &mut rng),
                Start::SpaceFillingCurve => construct::space_filling_curve(cost, [0.0, 0.0])
                    .unwrap_or_else(|| construct::nearest_neighbour(cost, &nb, 0)),
                _ => construct::nearest_neighbour(cost, &nb, 0),
            }
        };
        let start_kind = match self.method {
            Method::Nearest => Start::NearestNeighbour,
            Method::Greedy => Start::GreedyEdge,
            Method::Curve => Start::SpaceFillingCurve,
            _ => Start::Mixed,
        };
        if !searches {
            return single(construction(start_kind), StopReason::Constructed);
        }
        if self.method.iterates() {
            let bounded = self.iterations.is_some() || self.time_limit.is_none();
            let limits = LoopPlan {
                seed: self.seed,
                threads,
                runs: match self.runs {
                    Some(r) => Some(r),
                    None if bounded => Some(default_runs(self.method)),
                    None => None,
                },
                iterations: self.iterations.or(
                    if self.time_limit.is_none() && self.stall_limit.is_none() {
                        Some(default_iterations(self.method, n))
                    } else {
                        None
                    },
                ),
                stall: self.stall_limit,
                target,
                deadline: control::deadline(began, self.time_limit),
                stop: self.stop.clone(),
            };
            let out = match self.method {
                Method::Acs | Method::MaxMin => {
                    let variant = if self.method == Method::Acs {
                        AntVariant::Acs
                    } else {
                        AntVariant::MaxMin
                    };
                    // One colony at a time; its ants are built on the loop's threads.
                    drive(&limits, began, observe, |_, rng, should_stop| {
                        Colony::start(cost, &nb, variant, &self.ants, rng, should_stop)
                    })
                }
                Method::Anneal => drive(&limits, began, observe, |r, rng, should_stop| {
                    let order = start_tour(cost, &nb, Start::NearestNeighbour, r, rng, should_stop);
                    Annealer::start(cost, &nb, &self.annealing, order, rng)
                }),
                _ => {
                    let plan = LkPlan {
                        limits,
                        params: LkParams::default(),
                        layout: self.layout,
                        start,
                    };
                    match cost.as_known() {
                        // A large instance on coordinates: every thread on one tour (its
                        // points renumbered first, by `solve_coord`, under the same rule).
                        KnownCost::Coord(c) if n >= parts::PARTS_FROM && plan.start.is_none() => {
                            let parts = parts::PartsPlan {
                                lk: &plan,
                                source: self.neighbour_lists,
                                part_nodes: parts::PART_NODES,
                            };
                            parts::in_parts(c, &nb, &parts, began, observe)
                        }
                        _ => iterated(cost, &nb, &plan, began, observe),
                    }
                }
            };
            debug_assert!(
                out.length == i64::MAX || closed_length(cost, &out.order) == Ok(out.length)
            );
            return Raw {
                order: out.order,
                runs: out.runs,
                iterations: out.iterations,
                stop_reason: out.stop_reason,
            };
        }
        let limits = LoopPlan {
            seed: self.seed,
            threads,
            runs: match (self.runs, self.time_limit) {
                (Some(r), _) => Some(r),
                (None, Some(_)) => None,
                (None, None) => Some(DEFAULT_RESTARTS),
            },
            iterations: None,
            stall: None,
            target,
            deadline: control::deadline(began, self.time_limit),
            stop: self.stop.clone(),
        };
        let out = drive(&limits, began, observe, |r, rng, should_stop| {
            Restart::start(cost, &nb, start_kind, r, rng, should_stop)
        });
        debug_assert!(out.length == i64::MAX || closed_length(cost, &out.order) == Ok(out.length));
        Raw {
            order: out.order,
            runs: out.runs,
            iterations: 0,
            stop_reason: match out.stop_reason {
                StopReason::IterationBudget => StopReason::RunBudget,
                other => other,
            },
        }
    }
}

/// One restart: a starting tour taken to a local optimum of 2-opt and Or-opt when it starts.
/// It has no steps: under [`crate::methods::drive`] each run is one restart, and the loop owner
/// runs them in parallel under the limits.
struct Restart {
    order: Vec<usize>,
    length: i64,
}

impl Restart {
    /// Restart `r`: the starting tour of `start` from `rng`, improved unless `should_stop`
    /// (restart 0 always yields a tour, even when the deadline comes first; it is then a
    /// partly improved one).
    fn start<C: Cost + ?Sized>(
        cost: &C,
        nb: &Neighbours,
        start: Start,
        r: usize,
        rng: &mut Pcg64,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Restart {
        let mut tour = ArrayTour::new(start_tour(cost, nb, start, r, rng, should_stop));
        two_opt_or_opt(cost, nb, &mut tour, should_stop);
        let order = tour.into_order();
        let length = closed_length(cost, &order).unwrap_or(i64::MAX);
        Restart { order, length }
    }
}

impl Iterative for Restart {
    fn step(&mut self, _: &mut Pcg64, _: &mut dyn FnMut() -> bool) {}

    fn best_length(&self) -> i64 {
        self.length
    }

    fn best_order(&self) -> Vec<usize> {
        self.order.clone()
    }

    fn finished(&self) -> bool {
        true
    }
}

/// The search on coordinates, compiled here once.
fn solve_coord(s: &Solver<&CoordCost>) -> Result<Solution, SolveError> {
    if s.method == Method::Lk
        && s.cost.len() >= parts::PARTS_FROM
        && s.fixed_edges.is_empty()
        && !s.ends.is_path()
    {
        s.ends.check(s.cost.len())?;
        let began = Instant::now();
        if let Some(order) = construct::space_filling_curve(s.cost, [0.0, 0.0]) {
            return solve_renumbered(s, &order, began);
        }
    }
    s.solve_here()
}

/// The search in parts on the points renumbered in `order` (a Hilbert curve's): nodes near in
/// the plane are then near in memory, so the neighbour lists, the greedy tour and the moves read
/// the points, lists and tour from a few cache lines instead of all over a large table. The tour
/// found is given back in the caller's numbering.
fn solve_renumbered(
    s: &Solver<&CoordCost>,
    order: &[usize],
    began: Instant,
) -> Result<Solution, SolveError> {
    let points = s.cost.points();
    let near = CoordCost::new(s.cost.metric(), order.iter().map(|&v| points[v]).collect())?;
    let mut inner = s.with_cost(&near);
    inner.ends = Ends::Closed;
    // The renumbering counts in the time limit, the reported seconds, the trace and what the
    // observer sees.
    let before = began.elapsed();
    let shift = before.as_secs_f64();
    inner.time_limit = s.time_limit.map(|t| t.saturating_sub(before));
    inner.observer = s.observer.clone().map(|f| -> Observer {
        std::sync::Arc::new(move |imp: Improvement| {
            f(Improvement {
                seconds: imp.seconds + shift,
                ..imp
            })
        })
    });
    let sol = inner.solve_here()?;
    let mut tour: Vec<usize> = sol.tour.order().iter().map(|&i| order[i]).collect();
    if let Some(p) = tour.iter().position(|&v| v == s.ends.start().unwrap_or(0)) {
        tour.rotate_left(p);
    }
    debug_assert_eq!(closed_length(s.cost, &tour).ok(), Some(sol.length));
    let trace = sol
        .trace
        .iter()
        .map(|imp| Improvement {
            seconds: imp.seconds + shift,
            ..*imp
        })
        .collect();
    Ok(Solution {
        tour: Tour::trusted(tour),
        ends: s.ends,
        seconds: sol.seconds + shift,
        trace,
        ..sol
    })
}

/// The search on a matrix, compiled here once.
fn solve_matrix(s: &Solver<&MatrixCost>) -> Result<Solution, SolveError> {
    s.solve_here()
}

/// The search on any other cost, through `dyn Cost`, compiled here once.
fn solve_other(s: &Solver<&dyn Cost>) -> Result<Solution, SolveError> {
    s.solve_here()
}

/// What a search on some costs (the caller's, or transformed ones) found.
struct Raw {
    order: Vec<usize>,
    runs: usize,
    iterations: u64,
    stop_reason: StopReason,
}

impl<F: Fn(usize, usize) -> i64 + Sync> Solver<FnCost<F>> {
    /// A solver over `n` nodes whose costs come from `f(from, to)`.
    ///
    /// ```
    /// // A rail where moving right costs the distance and moving left three times as much.
    /// let solution = wend::Solver::from_fn(3, false, |i, j| {
    ///     let d = j as i64 - i as i64;
    ///     if d >= 0 { d } else { -3 * d }
    /// })
    /// .solve()
    /// .unwrap();
    /// assert_eq!(solution.length, 8); // right 1, right 1, back 2 at triple cost
    /// ```
    pub fn from_fn(n: usize, symmetric: bool, f: F) -> Self {
        Solver::new(FnCost::new(n, symmetric, f))
    }
}

impl Solver<MatrixCost> {
    /// A solver over a square matrix given as rows (`rows[i][j]` is the cost from `i` to `j`).
    ///
    /// ```
    /// let solver = wend::Solver::from_matrix(&[vec![0, 4], vec![4, 0]]).unwrap();
    /// assert_eq!(solver.solve().unwrap().length, 8);
    /// assert!(wend::Solver::from_matrix(&[vec![0, 4]]).is_err()); // not square
    /// ```
    pub fn from_matrix(rows: &[Vec<i64>]) -> Result<Self, SolveError> {
        Ok(Solver::new(MatrixCost::from_rows(rows)?))
    }
}

/// Sets parameter `key` of `method` from text (the routing of [`Settings::set`] and
/// [`Solver::set`]).
pub(crate) fn set_param(
    method: Method,
    ants: &mut AntParams,
    annealing: &mut AnnealParams,
    key: &str,
    value: &str,
) -> Result<(), SolveError> {
    match method {
        Method::Acs | Method::MaxMin => ants.set(key, value),
        Method::Anneal => annealing.set(key, value),
        _ => Err(format!("takes no parameters (`{key}` was given)")),
    }
    .map_err(|message| SolveError::Parameter {
        method: method.name(),
        message,
    })
}
