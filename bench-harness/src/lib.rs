//! Benchmark harness for `wend`: TSPLIB 95 files in and out, sweeps and reports.

pub mod tsplib;
