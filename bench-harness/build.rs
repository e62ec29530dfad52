//! Records the git commit the binary is built from, for the run records.
use std::process::Command;

fn main() {
    let commit = Command::new("git")
        .args(["rev-parse", "--short=12", "HEAD"])
        .output()
        .ok()
        .filter(|o| o.status.success())
        .and_then(|o| String::from_utf8(o.stdout).ok())
        .map(|s| s.trim().to_string())
        .unwrap_or_else(|| "unknown".into());
    // A build from a tree with uncommitted changes says so.
    let dirty = Command::new("git")
        .args(["status", "--porcelain", "--untracked-files=no"])
        .output()
        .ok()
        .filter(|o| o.status.success())
        .is_some_and(|o| !o.stdout.is_empty());
    let commit = if dirty && commit != "unknown" {
        format!("{commit}-dirty")
    } else {
        commit
    };
    println!("cargo:rustc-env=WEND_GIT_COMMIT={commit}");
    println!("cargo:rerun-if-changed=src");
    println!("cargo:rerun-if-changed=../solver/src");
    // Where git keeps these differs in a linked work tree (`.git` is then a file); a path
    // that does not exist would make cargo run this script, and rebuild, every time.
    for what in ["index", "HEAD", "refs/heads", "packed-refs"] {
        let path = Command::new("git")
            .args(["rev-parse", "--git-path", what])
            .output()
            .ok()
            .filter(|o| o.status.success())
            .and_then(|o| String::from_utf8(o.stdout).ok())
            .map(|s| std::path::PathBuf::from(s.trim()));
        if let Some(p) = path.filter(|p| p.exists()) {
            println!("cargo:rerun-if-changed={}", p.display());
        }
    }
}
