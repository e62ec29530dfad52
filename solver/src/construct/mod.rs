//! Starting tours: nearest neighbour, greedy edge and a space-filling curve ([`tours`]), and the
//! choice of each restart's start among them ([`start`]).

pub(crate) mod start;
pub(crate) mod tours;

pub(crate) use start::Start;
pub(crate) use start::start_tour;
pub use tours::greedy_edge;
pub(crate) use tours::{greedy_edge_until, nearest_neighbour, space_filling_curve};
