//! The iterated search methods and the loop that runs them: [`drive`] owns the loop (threads,
//! deadline, stop requests, reports; the loop itself is public as [`run_steps`]); [`lk`]
//! (Lin–Kernighan-style moves with kicks), [`ants`] (ant colony system and MAX–MIN ant system)
//! and [`anneal`] (simulated annealing) are its steps.

pub(crate) mod anneal;
pub(crate) mod ants;
pub(crate) mod drive;
pub(crate) mod lk;
pub(crate) mod parts;

pub(crate) use anneal::Annealer;
pub use anneal::{AnnealParams, CoolingSchedule};
pub use ants::{AntLocalSearch, AntParams};
pub(crate) use ants::{AntVariant, Colony, DENSE_TRAILS_UP_TO, MAX_COLONY};
pub(crate) use drive::{Iterative, LoopPlan, drive};
pub use drive::{Step, StepLimits, Stepped, run_steps};
pub(crate) use lk::{LkParams, LkPlan, default_kicks, iterated};
