//! Lower bounds and proofs: the 1-tree bound and its Held–Karp ascent ([`ascent`]), the
//! assignment bound ([`assignment`]), and branch and bound on the 1-tree bound ([`branch`]).

pub(crate) mod ascent;
pub(crate) mod assignment;
pub(crate) mod branch;

pub use ascent::{Ascent, AscentOptions, BoundError, held_karp_bound};
pub(crate) use assignment::patch_cover;
pub use assignment::{AssignmentBound, AssignmentError, assignment_bound};
pub use branch::{BranchOptions, Proof, branch_and_bound};
