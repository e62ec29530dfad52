//! Other problems as closed tours: fixed path ends through a dummy node ([`ends`]), and
//! asymmetric costs as symmetric ones over twice the nodes ([`twin`]).

pub(crate) mod ends;
pub(crate) mod twin;

pub(crate) use ends::EndedCost;
pub use ends::{path_length, Ends, EndsError};
pub(crate) use twin::{TwinCost, TwinTooLarge};
