//! The sky adapter: from a pool of targets to asymmetric slew costs, momentum and observing
//! sequences for a sun-shaded observatory far from Earth (placed at the Sun–Earth L2 point).
//!
//! **Caution.** Spacecraft operations can damage hardware. Everything here is a planning aid:
//! a plan it makes is a proposal that the operations team's validated flight-dynamics and
//! constraint-checking tools must confirm.
//!
//! The crate holds the data the adapter works on ([`Target`], [`Profile`]), the model (one
//! module a topic, with the published formulas they rest on named in their documentation), the
//! planner and the front search, the readers of the targets CSV and the observatory profile
//! TOML, and the plan outputs. The pictures (sky map, momentum chart, front picture, report
//! page) sit behind the default feature `pictures`. It uses only the public API of the core
//! crate `wend`.
//!
//! Units are SI unless a field's name says otherwise (`_deg`, `_s`); directions are ICRS
//! (J2000 axes); times are Julian dates in TT ([`Epoch`]).

// Input reaches almost every path here: failures are errors, never `unwrap`/`expect` panics.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

mod input;
mod model;
mod utc;

pub mod front;
pub mod geometry;
pub mod momentum;
pub mod plan;
pub mod schedule;
pub mod search;
pub mod slew;
pub mod sun;
pub mod visibility;

pub mod demo;
pub mod links;
pub mod output;
pub mod plan_file;
pub mod profile;
pub mod targets;

#[cfg(feature = "pictures")]
pub mod draw;
#[cfg(feature = "pictures")]
pub mod front_report;
#[cfg(feature = "pictures")]
mod place;
#[cfg(feature = "pictures")]
pub mod timeline;
#[cfg(feature = "pictures")]
mod utc_axis;

#[cfg(test)]
mod testing;

pub use demo::{
    demo_links, demo_profile, demo_targets, DEMO_LINKS_CSV, DEMO_PROFILE_TOML, DEMO_TARGETS_CSV,
};
pub(crate) use input::{line_of, line_part, read_utf8};
pub use links::{parse_links, read_links, LinksError};
pub use model::{
    Epoch, Instrument, Link, LinkKind, Profile, StartPointing, Target, DEFAULT_PRIORITY,
    LOWEST_PRIORITY,
};
pub use plan_file::{parse_plan_file, read_plan_file, PlanFileError, PlannedObservation};
pub use profile::{parse_profile, read_profile, ProfileError};
pub use targets::{parse_targets, read_targets, TargetsError};
