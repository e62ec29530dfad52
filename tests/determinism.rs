//! Determinism across processes: the same command with the same seed, thread count and budgets,
//! run twice as separate `wend` processes, writes the same files bit for bit, and the same
//! JSON once fields that measure time (or name the machine) are taken out.
//!
//! Budgets (`--runs`, `--iterations`) and not time limits end every search here, since a
//! search cut by the clock stops wherever the clock finds it (common practice for reproducible
//! benchmarks: fix the work, not the time).

use std::path::{Path, PathBuf};

use serde_json::Value;
use wend_tests::{instance, wend_command};

/// A fresh folder for one run of one case.
fn run_dir(case: &str, run: usize) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join(format!("determinism-{}", std::process::id()))
        .join(format!("{case}-{run}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create the run folder");
    dir
}

/// Runs `wend args` in `dir` (so that relative output paths are the same in both runs) and
/// returns its stdout; fails the test unless it exits with 0.
fn run_in(dir: &Path, args: &[String]) -> String {
    let out = wend_command()
        .current_dir(dir)
        .args(args)
        .output()
        .expect("wend starts");
    assert!(
        out.status.success(),
        "wend {args:?} failed ({:?}): {}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("stdout is UTF-8")
}

fn strings(args: &[&str]) -> Vec<String> {
    args.iter().map(|s| s.to_string()).collect()
}

/// One JSON object with the named fields removed.
fn json_without(text: &str, fields: &[&str]) -> Value {
    let mut v: Value = serde_json::from_str(text.trim())
        .unwrap_or_else(|e| panic!("not one JSON object ({e}): {text}"));
    let obj = v.as_object_mut().expect("a JSON object");
    for f in fields {
        obj.remove(*f);
    }
    v
}

fn read(path: &Path) -> Vec<u8> {
    std::fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Asserts that `name` is the same file, byte for byte, in both folders.
fn same_file(a: &Path, b: &Path, name: &str) {
    let (x, y) = (read(&a.join(name)), read(&b.join(name)));
    assert!(!x.is_empty(), "{name} is empty");
    assert!(
        x == y,
        "{name} differs between two runs:\n--- {}\n{}\n--- {}\n{}",
        a.display(),
        String::from_utf8_lossy(&x),
        b.display(),
        String::from_utf8_lossy(&y)
    );
}

/// `wend solve instances/kroA100.tsp` with each method, on two threads with a restart and
/// iteration budget: the TOUR file and the JSON (less `seconds`) are the same in two processes.
#[test]
fn solve_repeats_across_processes() {
    let kroa = instance("kroA100.tsp").display().to_string();
    // Iterations per method: enough to search for a while, few enough to stay quick (a
    // generation of a colony costs far more than a kick of lk).
    for (method, iterations) in [
        ("lk", "200"),
        ("acs", "20"),
        ("mmas", "10"),
        ("anneal", "100"),
    ] {
        let args = strings(&[
            "solve",
            &kroa,
            "--method",
            method,
            "--seed",
            "3",
            "--threads",
            "2",
            "--iterations",
            iterations,
            "--runs",
            "2",
            "--tour-out",
            "A.tour",
            "--json",
        ]);
        let dirs = [run_dir(method, 1), run_dir(method, 2)];
        let outs: Vec<String> = dirs.iter().map(|d| run_in(d, &args)).collect();
        let [a, b] = [0, 1].map(|k| json_without(&outs[k], &["seconds"]));
        assert_eq!(a, b, "{method}: the JSON differs between two runs");
        assert_eq!(
            a["stop_reason"], "iteration_budget",
            "{method}: the budget, not something else, must end the run: {a}"
        );
        same_file(&dirs[0], &dirs[1], "A.tour");
    }
}

/// `wend sky plan` on the demo targets: plan.csv, unscheduled.csv and the JSON (less its
/// times) are the same in two processes. The order search has a kick budget
/// (`max(1000, 2n)` per run); the time limit is set far above what 72 targets need, so that
/// the budget and not the clock ends it.
#[test]
fn sky_plan_repeats_across_processes() {
    let targets = instance("sky/demo-targets.csv").display().to_string();
    let args = strings(&[
        "sky",
        "plan",
        &targets,
        "--start",
        "2027-03-01T00:00:00Z",
        "--seed",
        "5",
        "--threads",
        "2",
        "--time-limit",
        "120",
        "--out",
        "out",
        "--json",
    ]);
    let dirs = [run_dir("sky", 1), run_dir("sky", 2)];
    let outs: Vec<String> = dirs.iter().map(|d| run_in(d, &args)).collect();
    let timing = ["seconds", "search_seconds"];
    let [a, b] = [0, 1].map(|k| json_without(&outs[k], &timing));
    assert_eq!(a, b, "the sky plan JSON differs between two runs");
    let seconds = json_without(&outs[0], &[])["seconds"]
        .as_f64()
        .expect("seconds");
    assert!(
        seconds < 60.0,
        "planning took {seconds} s: the time limit, not the budget, may have ended it"
    );
    let [out_a, out_b] = [0, 1].map(|k| dirs[k].join("out"));
    same_file(&out_a, &out_b, "plan.csv");
    same_file(&out_a, &out_b, "unscheduled.csv");
    let summary = |d: &Path| {
        json_without(
            &String::from_utf8(read(&d.join("summary.json"))).expect("UTF-8"),
            &timing,
        )
    };
    assert_eq!(summary(&out_a), summary(&out_b), "summary.json differs");
}

/// `wend bench` with restart and iteration budgets, two runs at a time on two threads each:
/// the records of runs.jsonl (less times, the machine and the commit), runs.csv (less the same
/// columns) and every tour file are the same in two processes.
///
/// Left out as timing: `seconds`, `time_to_best` and `trace` (the times, and with several
/// threads per run also the intermediate lengths, which are whichever thread reported first;
/// only the final tour is fixed by the seed). Records are matched by run, not by line: lines
/// are appended as runs finish, so with `--jobs 2` their order follows the clock.
#[test]
fn bench_repeats_across_processes() {
    let files = ["berlin52.tsp", "eil51.tsp"].map(|f| instance(f).display().to_string());
    let args = strings(&[
        "bench",
        "--instances",
        &files[0],
        &files[1],
        "--methods",
        "lk",
        "2opt",
        "anneal",
        "--seeds",
        "2",
        "--runs",
        "2",
        "--iterations",
        "50",
        "--threads-per-run",
        "2",
        "--jobs",
        "2",
        "--time-limit",
        "120",
        "--out",
        "out",
    ]);
    let dirs = [run_dir("bench", 1), run_dir("bench", 2)];
    for d in &dirs {
        run_in(d, &args);
    }
    let records = |d: &Path| {
        let text = String::from_utf8(read(&d.join("out/runs.jsonl"))).expect("UTF-8");
        let mut v: Vec<Value> = text
            .lines()
            .map(|l| {
                json_without(
                    l,
                    &["seconds", "time_to_best", "trace", "machine", "commit"],
                )
            })
            .collect();
        v.sort_by_key(|r| ["instance", "method", "seed", "ends"].map(|k| r[k].to_string()));
        v
    };
    let (a, b) = (records(&dirs[0]), records(&dirs[1]));
    assert_eq!(
        a.len(),
        2 * 3 * 2,
        "one record per instance, method and seed"
    );
    for (x, y) in a.iter().zip(&b) {
        assert_eq!(x, y, "a run's record differs between two runs");
    }
    assert!(a
        .iter()
        .all(|r| r["stop_reason"] == "iteration_budget" || r["stop_reason"] == "run_budget"));
    for r in &a {
        let tour = r["tour_file"].as_str().expect("tour_file");
        same_file(&dirs[0].join("out"), &dirs[1].join("out"), tour);
    }
    // runs.csv is the table in run order: the same lines, timing and machine columns aside.
    let table = |d: &Path| {
        let text = String::from_utf8(read(&d.join("out/runs.csv"))).expect("UTF-8");
        let mut lines = text.lines().map(csv_fields);
        let header = lines.next().expect("a header");
        let skip = [
            "seconds",
            "time_to_best",
            "trace_points",
            "machine",
            "commit",
        ];
        let keep: Vec<usize> = (0..header.len())
            .filter(|&k| !skip.contains(&header[k].as_str()))
            .collect();
        assert!(
            keep.len() + skip.len() == header.len(),
            "columns: {header:?}"
        );
        lines
            .map(|f| keep.iter().map(|&k| f[k].clone()).collect::<Vec<_>>())
            .collect::<Vec<_>>()
    };
    let (a, b) = (table(&dirs[0]), table(&dirs[1]));
    assert_eq!(a.len(), 2 * 3 * 2);
    assert_eq!(a, b, "runs.csv differs between two runs");
}

/// The fields of one CSV line (RFC 4180 quoting; no line breaks inside fields here).
fn csv_fields(line: &str) -> Vec<String> {
    let mut fields = vec![String::new()];
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if quoted && chars.peek() == Some(&'"') => {
                chars.next();
                fields.last_mut().expect("a field").push('"');
            }
            '"' => quoted = !quoted,
            ',' if !quoted => fields.push(String::new()),
            c => fields.last_mut().expect("a field").push(c),
        }
    }
    fields
}
