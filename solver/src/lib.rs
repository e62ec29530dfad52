pub mod candidates;
pub mod construct;
pub mod cost;
pub mod improve;
pub mod tour;
pub use cost::{Cost, CoordCost, FnCost, Geometry, MatrixCost, Metric};
pub use tour::Tour;
