//! Local moves: 2-opt and Or-opt over neighbour lists ([`improve`]).

pub(crate) mod improve;

pub(crate) use improve::ImproveStats;
pub(crate) use improve::try_or_opt;
pub use improve::two_opt_or_opt;
