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

mod bounds;
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
    assignment_bound, branch_and_bound, held_karp_bound, Ascent, AscentOptions, AssignmentBound,
    AssignmentError, BoundError, BranchOptions, Proof,
};
pub use control::{Improvement, StopHandle, StopReason};
pub use cost::{CoordCost, Cost, CostError, FnCost, Geometry, MatrixCost, Metric};
pub use exact::{dynamic_programme, optimal_path, DpError, DpTour, DEFAULT_DP_MEMORY, DP_LIMIT};
pub use memory::MemoryError;
pub use methods::{AnnealParams, AntLocalSearch, AntParams, CoolingSchedule};
pub use neighbours::{candidates, CandidateSource, ListError, Neighbours};
pub use solve::{
    lower_bound, prove_optimal, AsymmetricMode, Certificate, ExactMethod, LowerBoundError, Method,
    ProveError, ProveOptions, Solution, SolveError, Solver, DEFAULT_NEIGHBOURS,
};
pub use solve::{solve_with, Hooks, Outcome, Settings, SettingsError, SolveWithError};
pub use tour::{closed_length, Layout, Overflow, Tour, TourError};
pub use transform::{path_length, Ends, EndsError};

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
