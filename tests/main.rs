//! The workspace-level tests against outside references, one module per subject, built as one
//! test binary (the solver's generic code is built once, not once per file).

mod asymmetric;
mod bad_input;
mod bounds;
mod determinism;
mod exact;
mod fixed_edges;
mod lk;
mod lp_bound;
mod methods;
mod properties;
mod references;
