//! The command's tests, one module per subject, built as one test binary (one link instead of
//! one per file).

mod bench_constrained;
mod cli;
mod constrained;
mod front_ends;
mod interrupt;
mod limits;
mod old_spellings;
mod output_keys;
mod sky_plan;
mod sweep;
