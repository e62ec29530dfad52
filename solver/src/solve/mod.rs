//! The builder that ties the crate together ([`solver`]: [`Solver`], [`Method`], [`Solution`]),
//! and proofs of optimality and lower bounds that use it ([`prove`]).

pub(crate) mod prove;
pub(crate) mod settings;
pub(crate) mod solver;

pub use prove::{
    lower_bound, prove_optimal, Certificate, ExactMethod, LowerBoundError, ProveError,
    ProveOptions, Prover, ProverAnswer,
};
pub use settings::{solve_with, Hooks, Outcome, Settings, SettingsError, SolveWithError};
pub use solver::{AsymmetricMode, Method, Solution, SolveError, Solver, DEFAULT_NEIGHBOURS};
