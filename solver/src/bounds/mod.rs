//! Lower bounds and proofs: the 1-tree bound and its Held–Karp ascent ([`ascent`]), the
//! assignment bound ([`assignment`]), and branch and bound on the 1-tree bound ([`branch`]).

pub(crate) mod ascent;
pub(crate) mod assignment;
pub(crate) mod branch;

pub use ascent::{held_karp_bound, Ascent, AscentOptions, BoundError};
pub(crate) use assignment::patch_cover;
pub use assignment::{assignment_bound, AssignmentBound, AssignmentError};
pub use branch::{branch_and_bound, BranchOptions, Proof};
