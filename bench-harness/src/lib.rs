//! Benchmark harness for `wend`: sweeps over TSPLIB instances, run records and reports.

// User files reach almost every path here: failures are errors, never `unwrap`/`expect` panics.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

pub mod generate;
pub mod record;
pub mod report;
pub mod runner;
pub mod shards;
