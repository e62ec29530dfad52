//! Benchmark harness for `wend`: TSPLIB 95 files in and out, sweeps and reports.

// User files reach almost every path here: failures are errors, never `unwrap`/`expect` panics.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

pub mod generate;
pub mod record;
pub mod report;
pub mod runner;
pub mod sky;
pub mod tsplib;
