//! Benchmark harness for `wend`: TSPLIB 95 files in and out, sweeps and reports.

pub mod generate;
pub mod record;
pub mod report;
pub mod runner;
pub mod sky;
pub mod tsplib;
