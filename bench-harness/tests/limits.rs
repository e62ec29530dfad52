//! Memory ceilings: large tables are estimated before they are allocated and refused beyond
//! `--memory-limit` (or `WEND_MEMORY_LIMIT`) with one line naming the file, what needed the
//! memory and how much, exit code 2. The byte counts checked here are worked out by hand from
//! the tables' sizes (n × n entries of 8 bytes), not taken from the program.

use std::path::PathBuf;
use std::process::{Command, Output};

fn wend(args: &[&str], env: Option<(&str, &str)>) -> Output {
    let mut c = Command::new(env!("CARGO_BIN_EXE_wend"));
    c.args(args).env_remove("WEND_MEMORY_LIMIT");
    if let Some((k, v)) = env {
        c.env(k, v);
    }
    c.output().expect("the wend binary runs")
}

fn instance(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../instances")
        .join(name)
        .display()
        .to_string()
}

fn refused(o: &Output) -> String {
    let err = String::from_utf8_lossy(&o.stderr).into_owned();
    assert_eq!(o.status.code(), Some(2), "stderr: {err}");
    assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
    assert!(!err.contains("panicked"), "{err}");
    err
}

#[test]
fn an_explicit_matrix_beyond_the_ceiling_is_refused_while_reading() {
    // br17: DIMENSION 17, so the full matrix is 17 * 17 * 8 = 2312 bytes.
    let path = instance("br17.atsp");
    let o = wend(&["solve", &path, "--memory-limit", "2K"], None);
    let err = refused(&o);
    assert!(err.contains(&path), "{err}");
    assert!(err.contains("full cost matrix of DIMENSION 17"), "{err}");
    assert!(err.contains("2.3 KiB") && err.contains("2.0 KiB"), "{err}");
    // The header line of the section is named: `EDGE_WEIGHT_SECTION` is line 7 of br17.
    assert!(err.contains(&format!("{path}:7:")), "{err}");

    // Room for the matrix and the search's own lists (about 16 KiB): it reads and solves
    // (br17's optimum is 39, TSPLIB).
    let o = wend(&["solve", &path, "--memory-limit", "64K", "--json"], None);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["length"], 39);
}

#[test]
fn the_environment_sets_the_ceiling_and_the_flag_wins() {
    let path = instance("br17.atsp");
    let o = wend(&["solve", &path], Some(("WEND_MEMORY_LIMIT", "1K")));
    refused(&o);
    let o = wend(
        &["solve", &path, "--memory-limit", "1G"],
        Some(("WEND_MEMORY_LIMIT", "1K")),
    );
    assert_eq!(o.status.code(), Some(0));
}

#[test]
fn a_search_beyond_the_ceiling_is_refused_before_it_starts() {
    // a280: coordinates, no matrix; the search's own lists and tours are what is counted
    // (at least 280 nodes x 10 neighbours x 4 bytes = 11,200 bytes).
    let path = instance("a280.tsp");
    let err = refused(&wend(&["solve", &path, "--memory-limit", "8K"], None));
    assert!(err.contains(&path), "{err}");
    assert!(err.contains("search over 280 nodes"), "{err}");
}

#[test]
fn exact_and_bound_tables_beyond_the_ceiling_are_refused() {
    // The dynamic programme over gr17 needs 16 * 2^15 entries of 4 bytes at least (2 MiB).
    let path = instance("gr17.tsp");
    let args = [
        "solve",
        &path,
        "--exact",
        "--exact-method",
        "dynamic-programme",
        "--memory-limit",
        "1M",
    ];
    let err = refused(&wend(&args, None));
    assert!(err.contains("dynamic programme"), "{err}");
    // The assignment bound of ftv33 (34 nodes) holds a 34 x 34 matrix of 8 bytes: 9,248
    // (the file's own matrix is as large, so either table may be the one refused).
    let path = instance("ftv33.atsp");
    let err = refused(&wend(&["bound", &path, "--memory-limit", "9000"], None));
    assert!(err.contains("memory ceiling"), "{err}");
}

#[test]
fn bad_sizes_are_refused() {
    for bad in ["lots", "-5G", "0", "12Q"] {
        let o = wend(
            &["solve", &instance("gr17.tsp"), "--memory-limit", bad],
            None,
        );
        let err = refused(&o);
        assert!(err.contains("--memory-limit"), "{err}");
    }
}
