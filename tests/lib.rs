//! Shared helpers for the workspace's integration tests.

use std::path::PathBuf;

/// The project's `instances/` folder.
pub fn instances_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../instances")
}

/// A file in `instances/`.
pub fn instance(name: &str) -> PathBuf {
    instances_dir().join(name)
}

/// Every TSPLIB problem file in `instances/`, sorted by name.
pub fn all_instances() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(instances_dir())
        .expect("instances/ is part of the repository")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| matches!(p.extension().and_then(|e| e.to_str()), Some("tsp" | "atsp")))
        .collect();
    v.sort();
    v
}
