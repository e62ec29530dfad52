//! Old spellings of options and suite keys still work for one release, each with one line on
//! stderr naming the new spelling; and sweeps written with the old record keys resume and report.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn wend(args: &[&str]) -> Output {
    let o = Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(args)
        .output()
        .expect("the wend binary runs");
    assert!(
        o.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    o
}

fn instance(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../instances")
        .join(name)
        .display()
        .to_string()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// `wend solve --json` on berlin52 with a fixed budget, plus `extra`.
fn solve(extra: &[&str]) -> (serde_json::Value, String) {
    let file = instance("berlin52.tsp");
    let mut args = vec!["solve", file.as_str(), "--threads", "1", "--json"];
    args.extend_from_slice(extra);
    let o = wend(&args);
    let mut v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v.as_object_mut().unwrap().remove("seconds");
    (v, stderr(&o))
}

/// The old spelling gives the same answer as the new one and says it is deprecated; the new
/// one says nothing.
fn same_as_new(old: &[&str], new: &[&str], line: &str) -> serde_json::Value {
    let (a, warned) = solve(old);
    let (b, quiet) = solve(new);
    assert_eq!(a, b, "{old:?} and {new:?} answer differently");
    assert_eq!(warned.matches(line).count(), 1, "{warned}");
    assert!(!quiet.contains("deprecated"), "{quiet}");
    b
}

#[test]
fn restarts_is_runs() {
    let v = same_as_new(
        &["--restarts", "3", "--iterations", "10"],
        &["--runs", "3", "--iterations", "10"],
        "--restarts is deprecated; use --runs",
    );
    assert_eq!(v["runs"], 3, "{v}");
}

#[test]
fn kicks_is_iterations() {
    let v = same_as_new(
        &["--runs", "2", "--kicks", "15"],
        &["--runs", "2", "--iterations", "15"],
        "--kicks is deprecated; use --iterations",
    );
    assert_eq!(v["iterations"], 30, "{v}");
}

#[test]
fn set_is_params() {
    let base = ["--method", "anneal", "--iterations", "20", "--runs", "1"];
    let mut old = base.to_vec();
    old.extend_from_slice(&["--set", "cooling=0.9"]);
    let mut new = base.to_vec();
    new.extend_from_slice(&["--params", "cooling=0.9"]);
    same_as_new(&old, &new, "--set is deprecated; use --params");
    // The parameter is used: a value out of range is refused through the old spelling too.
    let file = instance("berlin52.tsp");
    let o = Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(["solve", &file, "--method", "anneal", "--set", "cooling=2"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("cooling"), "{}", stderr(&o));
}

#[test]
fn neighbours_is_neighbour_count() {
    same_as_new(
        &["--neighbours", "5", "--iterations", "10", "--runs", "1"],
        &[
            "--neighbour-count",
            "5",
            "--iterations",
            "10",
            "--runs",
            "1",
        ],
        "--neighbours is deprecated; use --neighbour-count",
    );
}

#[test]
fn candidates_is_neighbour_lists() {
    same_as_new(
        &[
            "--candidates",
            "nearest",
            "--iterations",
            "10",
            "--runs",
            "1",
        ],
        &[
            "--neighbour-lists",
            "nearest",
            "--iterations",
            "10",
            "--runs",
            "1",
        ],
        "--candidates is deprecated; use --neighbour-lists",
    );
    // An unknown source is refused through the old spelling as through the new one.
    let file = instance("berlin52.tsp");
    let o = Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(["solve", &file, "--candidates", "closest"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
}

/// A one-run sweep of berlin52 into `out` with `extra`; its records.
fn sweep(out: &Path, extra: &[&str]) -> (Vec<serde_json::Value>, String) {
    let file = instance("berlin52.tsp");
    let out_s = out.display().to_string();
    let mut args = vec![
        "bench",
        "--instances",
        &file,
        "--time-limit",
        "60",
        "--out",
        &out_s,
    ];
    args.extend_from_slice(extra);
    let o = wend(&args);
    let runs = std::fs::read_to_string(out.join("runs.jsonl"))
        .unwrap()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    (runs, stderr(&o))
}

#[test]
fn bench_restarts_and_kicks_are_runs_and_iterations() {
    let tmp = tempfile::tempdir().unwrap();
    let (runs, err) = sweep(
        tmp.path(),
        &["--methods", "lk", "--restarts", "2", "--kicks", "5"],
    );
    assert!(
        err.contains("--restarts is deprecated; use --runs"),
        "{err}"
    );
    assert!(
        err.contains("--kicks is deprecated; use --iterations"),
        "{err}"
    );
    assert_eq!(
        (&runs[0]["runs"], &runs[0]["iterations"]),
        (&2.into(), &10.into())
    );
}

#[test]
fn bench_optima_is_known_lengths() {
    let tmp = tempfile::tempdir().unwrap();
    let lengths = tmp.path().join("lengths.txt");
    // Not berlin52's optimum (7542): a length no tour reaches, so the gap shows it was read.
    std::fs::write(&lengths, "berlin52 : 100000\n").unwrap();
    let out = tmp.path().join("out");
    let l = lengths.display().to_string();
    let (runs, err) = sweep(&out, &["--methods", "greedy", "--optima", &l]);
    assert!(
        err.contains("--optima is deprecated; use --known-lengths"),
        "{err}"
    );
    assert_eq!(runs[0]["optimum"], 100000, "{:?}", runs[0]);
}

#[test]
fn bench_stop_at_optimum_is_until_known() {
    let tmp = tempfile::tempdir().unwrap();
    let (runs, err) = sweep(tmp.path(), &["--methods", "lk", "--stop-at-optimum"]);
    assert!(
        err.contains("--stop-at-optimum is deprecated; use --until-known"),
        "{err}"
    );
    // berlin52's optimum 7542 (TSPLIB 95 list, instances/optima.txt) is reached well within 60 s.
    assert_eq!(runs[0]["stop_reason"], "target_reached", "{:?}", runs[0]);
    assert_eq!(runs[0]["length"], 7542);
}

#[test]
fn bench_candidates_and_neighbours_are_neighbour_lists_and_count() {
    let tmp = tempfile::tempdir().unwrap();
    let (runs, err) = sweep(
        tmp.path(),
        &[
            "--methods",
            "greedy",
            "--candidates",
            "nearest",
            "--neighbours",
            "6",
        ],
    );
    assert!(
        err.contains("--candidates is deprecated; use --neighbour-lists"),
        "{err}"
    );
    assert!(
        err.contains("--neighbours is deprecated; use --neighbour-count"),
        "{err}"
    );
    assert_eq!(runs[0]["method"], "greedy:nearest:6");
}

#[test]
fn old_suite_keys_are_read_with_a_line_each() {
    let tmp = tempfile::tempdir().unwrap();
    let lengths = tmp.path().join("lengths.txt");
    std::fs::write(&lengths, "berlin52 : 7542\n").unwrap();
    let suite = tmp.path().join("suite.toml");
    std::fs::write(
        &suite,
        format!(
            "instances = [{:?}]\nmethods = [\"lk\"]\ntime_limit = 60\nrestarts = 2\nkicks = 4000\n\
             optima = \"lengths.txt\"\nstop_at_optimum = true\ncandidates = \"nearest\"\n\
             neighbours = 7\nout = \"out\"\n",
            instance("berlin52.tsp")
        ),
    )
    .unwrap();
    let o = wend(&["bench", "--suite", &suite.display().to_string()]);
    let err = stderr(&o);
    for (old, new) in [
        ("restarts", "runs"),
        ("kicks", "iterations"),
        ("optima", "known_lengths"),
        ("stop_at_optimum", "until_known"),
        ("candidates", "neighbour_lists"),
        ("neighbours", "neighbour_count"),
    ] {
        let line = format!("the key {old} is deprecated; use {new}");
        assert_eq!(err.matches(&line).count(), 1, "{line}: {err}");
    }
    let text = std::fs::read_to_string(tmp.path().join("out/runs.jsonl")).unwrap();
    let r: serde_json::Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    assert_eq!(r["method"], "lk:nearest:7", "{r}");
    assert_eq!(r["optimum"], 7542, "{r}");
    assert_eq!(r["stop_reason"], "target_reached", "{r}");
}

#[test]
fn a_sweep_written_with_the_old_keys_resumes_and_reports() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path();
    let file = instance("berlin52.tsp");
    // One run as an earlier version wrote it: restarts, kicks, git_commit, restart_budget.
    let old = serde_json::json!({
        "instance": "berlin52", "file": file, "type": "TSP", "ends": "closed", "nodes": 52,
        "method": "2opt", "seed": 0, "time_limit": 60.0, "threads": 1, "length": 7600,
        "optimum": 7542, "gap_percent": 0.769, "seconds": 0.5, "time_to_best": 0.25,
        "lower_bound": null, "stop_reason": "restart_budget", "restarts": 3, "kicks": 0,
        "trace": [[0.1, 8000], [0.25, 7600]], "tour_file": null, "version": "0.0.9",
        "git_commit": "0123abc", "machine": "an older machine"
    });
    std::fs::write(out.join("runs.jsonl"), format!("{old}\n")).unwrap();
    let out_s = out.display().to_string();
    let o = wend(&[
        "bench",
        "--instances",
        &file,
        "--methods",
        "2opt",
        "--runs",
        "3",
        "--time-limit",
        "60",
        "--out",
        &out_s,
    ]);
    let err = stderr(&o);
    assert!(err.contains("0 done now, 1 already recorded"), "{err}");
    let runs = std::fs::read_to_string(out.join("runs.jsonl")).unwrap();
    assert_eq!(
        runs.lines().count(),
        1,
        "the old run was done again: {runs}"
    );
    let csv = std::fs::read_to_string(out.join("runs.csv")).unwrap();
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    let cell = |name: &str| row[header.iter().position(|h| *h == name).unwrap()];
    assert_eq!(cell("runs"), "3");
    assert_eq!(cell("iterations"), "0");
    assert_eq!(cell("commit"), "0123abc");
    assert_eq!(cell("stop_reason"), "run_budget");
    assert_eq!(cell("length"), "7600");
    let summary = std::fs::read_to_string(out.join("summary.md")).unwrap();
    assert!(summary.contains("0123abc"), "{summary}");
}
