//! Other problems as closed tours: fixed path ends through a dummy node ([`ends`]), asymmetric
//! costs as symmetric ones over twice the nodes ([`twin`]), and fixed edges as very cheap ones
//! ([`fixed`]).

pub(crate) mod ends;
pub(crate) mod fixed;
pub(crate) mod twin;

pub(crate) use ends::EndedCost;
pub use ends::{Ends, EndsError, path_length};
pub(crate) use fixed::FixedCost;
pub use fixed::{FixedEdge, FixedEdgesError};
pub(crate) use twin::{TwinCost, TwinTooLarge};
