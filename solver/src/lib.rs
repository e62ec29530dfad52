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
//! Data flows one way: [`cost`] oracles give integer costs; [`candidates`] picks the few edges
//! worth trying; [`construct`] builds starting tours; [`improve`] shortens them with local
//! moves; [`search`] runs restarts in parallel under a deadline; [`Solver`] ties it together.
//! The crate knows nothing of files or terminals: reading TSPLIB files and the command line
//! live in the `wend-bench` crate.

#![warn(missing_docs)]
// Input reaches almost every path here: failures are errors, never `unwrap`/`expect` panics.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

pub mod alpha;
pub mod anneal;
pub mod ants;
pub mod assignment;
pub mod bound;
pub mod branch;
pub mod candidates;
pub mod construct;
pub mod cost;
pub mod drive;
pub mod ends;
pub mod exact;
pub mod improve;
pub mod lk;
pub mod memory;
pub mod prove;
pub mod search;
pub mod settings;
pub mod solver;
#[cfg(test)]
mod testing;
pub mod tour;
pub mod twin;

pub use candidates::CandidateSource;
pub use cost::{CoordCost, Cost, CostError, FnCost, Geometry, MatrixCost, Metric};
pub use ends::Ends;
pub use search::{Improvement, StopHandle, StopReason};
pub use settings::{solve_with, Hooks, Outcome, Settings, SettingsError, SolveWithError};
pub use solver::{AsymmetricMode, Method, Solution, SolveError, Solver};
pub use tour::{Layout, Overflow, Tour, TourError};
