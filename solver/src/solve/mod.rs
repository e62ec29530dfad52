//! The builder that ties the crate together ([`solver`]: [`Solver`], [`Method`], [`Solution`]),
//! and proofs of optimality and lower bounds that use it ([`prove`]).

pub(crate) mod prove;
pub(crate) mod settings;
pub(crate) mod solver;

pub use prove::{
    Certificate, ExactMethod, LowerBoundError, ProveError, ProveOptions, Prover, ProverAnswer,
    lower_bound, prove_optimal,
};
pub use settings::{Hooks, Outcome, Settings, SettingsError, SolveWithError, solve_with};
pub use solver::{AsymmetricMode, DEFAULT_NEIGHBOURS, Method, Solution, SolveError, Solver};
