//! The linear programme of the tour problem, with cutting planes.
//!
//! - [`lp`]: the LP solver, held between solves;
//! - [`support`]: violated subtour cuts from an LP point, found exactly by minimum cuts;
//! - [`blossom`]: violated blossom inequalities, by the odd-component heuristic;
//! - [`comb`]: violated comb inequalities, by heuristics on the LP's support graph;
//! - [`subtour`]: the subtour bound by cutting planes and column generation;
//! - [`branch`]: branch and cut on that programme, with the best tour known as the upper bound.
//!
//! The core crate (`wend`) knows nothing of this one; the command line and the benchmark
//! harness bring them together.

pub mod blossom;
pub mod branch;
pub mod comb;
pub mod lp;
pub mod subtour;
pub mod support;

pub use branch::{
    branch_and_cut, BranchCutOptions, BranchCutProver, BranchCutResult, TreeObserver, TreeProgress,
};
pub use subtour::{subtour_bound, Cut, CutsError, SubtourBound, SubtourOptions};
