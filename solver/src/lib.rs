//! # wend: routing and sequencing over any integer cost
//!
//! Hand over costs (coordinates under a TSPLIB metric, a matrix, or a closure) and get back a
//! short visiting order, reproducibly, within a time budget.
//!
//! ```
//! use std::time::Duration;
//! use wend::{CoordCost, Metric, Solver};
//!
//! // Eight drill holes on a 2 x 4 grid, 10 units apart.
//! let holes: Vec<[f64; 2]> = (0..8).map(|i| [(i % 4) as f64 * 10.0, (i / 4) as f64 * 10.0]).collect();
//! let costs = CoordCost::plane(Metric::Euc2d, &holes).unwrap();
//! let solution = Solver::new(costs)
//!     .time_limit(Duration::from_secs(1))
//!     .seed(42)
//!     .threads(2)
//!     .solve()
//!     .unwrap();
//! assert_eq!(solution.length, 80); // around the rim of the grid
//! assert_eq!(solution.tour.len(), 8);
//! ```
//!
//! A matrix or a closure works the same way:
//!
//! ```
//! let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
//! let s = wend::Solver::from_matrix(&rows).unwrap().solve().unwrap();
//! // 0 -> 2 -> 1 -> 0 costs 9 + 7 + 1 = 17; the other direction costs 2 + 6 + 15 = 23.
//! assert_eq!(s.length, 17);
//! ```
//!
//! Any other iterative search can run under the loop owner of the crate's own methods,
//! [`run_steps`]: a state does one unit of work per [`Step::step`]; the loop owner keeps the
//! deadline, the [`StopHandle`] and a step budget, seeds the generator from (seed, run) and
//! reports progress at most once per interval.
//!
//! ```
//! use rand::Rng;
//! use wend::{run_steps, Step, StepLimits, StopReason};
//!
//! /// Random probes for the smallest value of x² − 6x over 0..100.
//! struct Probe {
//!     best: i64,
//! }
//!
//! impl Step for Probe {
//!     fn step(&mut self, rng: &mut rand_pcg::Pcg64, _should_stop: &mut dyn FnMut() -> bool) {
//!         let x: i64 = rng.gen_range(0..100);
//!         self.best = self.best.min(x * x - 6 * x);
//!     }
//!     fn finished(&self) -> bool {
//!         self.best == -9 // x = 3 is the best there is
//!     }
//! }
//!
//! let limits = StepLimits {
//!     steps: Some(20),
//!     ..StepLimits::new(7)
//! };
//! let mut probe = Probe { best: i64::MAX };
//! let out = run_steps(&limits, &mut probe, &mut |p| println!("best so far {}", p.best));
//! // Twenty probes unless one hit x = 3 first; the same seed gives the same probes.
//! assert!(out.steps == 20 && out.stop_reason == Some(StopReason::IterationBudget)
//!     || probe.best == -9 && out.stop_reason.is_none());
//! let mut again = Probe { best: i64::MAX };
//! assert_eq!(run_steps(&limits, &mut again, &mut |_| {}), out);
//! assert_eq!(again.best, probe.best);
//! ```
//!
//! The crate is built in families of modules, each using only those below it: `control` (stop
//! handle, deadlines, seeds, threads) and `cost` at the bottom; `tour`; `neighbours` (candidate
//! lists); `construct` (starting tours); `moves` (2-opt, Or-opt); `methods` (the iterated
//! searches and the loop that runs them); `bounds` and `exact` (lower bounds and proofs);
//! `transform` (path ends, asymmetric costs); `solve` (the builder [`Solver`]) on top. What an
//! embedding program needs is re-exported here. The crate knows nothing of files or terminals:
//! reading TSPLIB files and the command line live in the `wend-bench` crate.

#![warn(missing_docs)]
// Input reaches almost every path here: failures are errors, never `unwrap`/`expect` panics.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]
// Nested `if let` blocks stay: collapsing them needs let chains, newer than the minimum Rust.
#![allow(clippy::collapsible_if)]

mod bounds;
pub mod constraints;
mod construct;
mod control;
mod cost;
mod exact;
pub mod memory;
mod methods;
mod moves;
mod neighbours;
mod params;
mod solve;
#[cfg(test)]
mod testing;
mod tour;
mod transform;

pub use bounds::{
    Ascent, AscentOptions, AssignmentBound, AssignmentError, BoundError, BranchOptions, Proof,
    assignment_bound, branch_and_bound, held_karp_bound,
};
pub use control::{Improvement, StopHandle, StopReason};
pub use cost::{
    AsDynCost, CoordCost, Cost, CostError, FnCost, Geometry, KnownCost, MatrixCost, Metric,
};
pub use exact::{DEFAULT_DP_MEMORY, DP_LIMIT, DpError, DpTour, dynamic_programme, optimal_path};
pub use memory::MemoryError;
pub use methods::{
    AnnealParams, AntLocalSearch, AntParams, CoolingSchedule, Step, StepLimits, Stepped, run_steps,
};
pub use neighbours::{CandidateSource, ListError, Neighbours, candidates};
pub use solve::{
    AsymmetricMode, Certificate, DEFAULT_NEIGHBOURS, ExactMethod, LowerBoundError, Method,
    ProveError, ProveOptions, Prover, ProverAnswer, Solution, SolveError, Solver, lower_bound,
    prove_optimal,
};
pub use solve::{Hooks, Outcome, Settings, SettingsError, SolveWithError, solve_with};
pub use tour::{Layout, Overflow, Tour, TourError, closed_length};
pub use transform::{Ends, EndsError, FixedEdge, FixedEdgesError, path_length};

/// Building blocks for the crate's own benchmarks and reference tests, outside the stable
/// surface: only with the non-default feature `internals`.
#[cfg(feature = "internals")]
pub mod internals {
    pub use crate::construct::greedy_edge;
    pub use crate::moves::two_opt_or_opt;
    pub use crate::neighbours::alpha::from_ascent;
    pub use crate::neighbours::k_nearest;
    pub use crate::tour::{ArrayTour, TourRepr};
}
