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

/// A `Command` for the `wend` binary of this build.
///
/// Cargo sets `CARGO_BIN_EXE_wend` only for `wend-bench`'s own tests, so the binary is looked
/// up beside this test executable: `target/<profile>/deps/<test>` lives next to
/// `target/<profile>/wend`. `cargo test -p wend-tests` builds only the libraries of other
/// packages, so the binary may be missing, or older than the sources it is built from: then,
/// once per test process, it is built with `cargo build -p wend-bench --bin wend` (`$CARGO`,
/// else `cargo`) in the test's profile (release when `debug_assertions` are off) and target
/// folder. `cargo test --workspace` builds it anyway.
pub fn wend_command() -> std::process::Command {
    std::process::Command::new(wend_binary())
}

/// Path of the `wend` binary; see [`wend_command`].
pub fn wend_binary() -> PathBuf {
    static BINARY: std::sync::OnceLock<PathBuf> = std::sync::OnceLock::new();
    BINARY.get_or_init(find_or_build_wend).clone()
}

fn find_or_build_wend() -> PathBuf {
    let exe = std::env::current_exe().expect("the test executable has a path");
    // `target/<profile>/deps/<test>`: up from `deps/` to the profile folder.
    let mut profile_dir = exe
        .parent()
        .expect("the test executable is in a folder")
        .to_path_buf();
    if profile_dir.file_name().is_some_and(|n| n == "deps") {
        profile_dir.pop();
    }
    let binary = profile_dir.join(format!("wend{}", std::env::consts::EXE_SUFFIX));
    let built = std::fs::metadata(&binary).and_then(|m| m.modified()).ok();
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..");
    let sources = [
        "Cargo.toml",
        "Cargo.lock",
        "solver/Cargo.toml",
        "solver/src",
        "bench-harness/Cargo.toml",
        "bench-harness/build.rs",
        "bench-harness/src",
        // The sky adapter's readers and its embedded demo files are in the binary too.
        "sky/Cargo.toml",
        "sky/src",
        "instances/sky",
    ];
    let newest = sources
        .iter()
        .filter_map(|s| newest_change(&root.join(s)))
        .max();
    let fresh = match (built, newest) {
        (Some(b), Some(n)) => b >= n,
        (Some(_), None) => true,
        (None, _) => false,
    };
    if fresh {
        return binary;
    }
    let target_dir = profile_dir
        .parent()
        .expect("the profile folder is inside the target folder");
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    let mut build = std::process::Command::new(cargo);
    build
        .current_dir(&root)
        .args(["build", "--quiet", "-p", "wend-bench", "--bin", "wend"])
        .arg("--target-dir")
        .arg(target_dir);
    if !cfg!(debug_assertions) {
        build.arg("--release");
    }
    let status = build
        .status()
        .unwrap_or_else(|e| panic!("cannot run cargo to build wend: {e}"));
    assert!(
        status.success(),
        "cargo build -p wend-bench --bin wend failed"
    );
    assert!(
        binary.is_file(),
        "cargo built wend, but not at {}",
        binary.display()
    );
    binary
}

/// The latest modification time of a file, or of any file under a folder.
fn newest_change(path: &std::path::Path) -> Option<std::time::SystemTime> {
    let meta = std::fs::metadata(path).ok()?;
    if !meta.is_dir() {
        return meta.modified().ok();
    }
    std::fs::read_dir(path)
        .ok()?
        .filter_map(|e| e.ok())
        .filter_map(|e| newest_change(&e.path()))
        .max()
}

/// The shortest closed tour's length, by trying all (n − 1)! orders with node 0 first: the test
/// oracle for small instances (0 for fewer than 2 nodes).
pub fn shortest_tour_by_enumeration<C: wend::Cost + ?Sized>(c: &C) -> i64 {
    let n = c.len();
    if n < 2 {
        return 0;
    }
    let mut rest: Vec<usize> = (1..n).collect();
    let mut best = i64::MAX;
    permute(&mut rest, 0, &mut |p| {
        let mut len = c.cost(0, p[0]) + c.cost(p[p.len() - 1], 0);
        for w in p.windows(2) {
            len += c.cost(w[0], w[1]);
        }
        best = best.min(len);
    });
    best
}

fn permute(v: &mut Vec<usize>, k: usize, f: &mut impl FnMut(&[usize])) {
    if k == v.len() {
        f(v);
        return;
    }
    for i in k..v.len() {
        v.swap(k, i);
        permute(v, k + 1, f);
        v.swap(k, i);
    }
}
