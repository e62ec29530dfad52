//! The command, the sweep runner and a library call hand the same settings to the core and get
//! the same tour length: a run with an iteration budget is repeatable to the bit, so any option
//! one front end dropped or read differently shows as a different length.

use std::path::PathBuf;
use std::process::{Command, Output};

fn wend(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(args)
        .output()
        .expect("the wend binary runs")
}

fn instance(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../instances")
        .join(name)
        .display()
        .to_string()
}

/// `(method spec for the sweep, method, --params pairs, settings as JSON)`.
fn variants() -> Vec<(&'static str, &'static str, Vec<&'static str>, &'static str)> {
    vec![
        (
            "mmas+colony-size=4+local-search=2opt",
            "mmas",
            vec!["colony-size=4", "local-search=2opt"],
            r#"{"method": "mmas", "ants": {"colony-size": 4, "local-search": "2opt"}}"#,
        ),
        (
            "anneal+cooling=0.9+batch=20",
            "anneal",
            vec!["cooling=0.9", "batch=20"],
            r#"{"method": "anneal", "annealing": {"cooling": 0.9, "batch": 20}}"#,
        ),
        (
            "lk:nearest:6",
            "lk",
            vec![],
            r#"{"method": "lk", "neighbour_lists": "nearest", "neighbour_count": 6}"#,
        ),
    ]
}

#[test]
fn command_sweep_and_library_give_the_same_length() {
    let file = instance("eil51.tsp");
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().display().to_string();
    let specs: Vec<&str> = variants().iter().map(|v| v.0).collect();
    let mut args = vec!["bench", "--instances", &file, "--methods"];
    args.extend_from_slice(&specs);
    args.extend_from_slice(&[
        "--seeds",
        "2",
        "--runs",
        "1",
        "--iterations",
        "6",
        "--time-limit",
        "120",
        "--out",
        &out,
    ]);
    let o = wend(&args);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let records: Vec<serde_json::Value> = std::fs::read_to_string(dir.path().join("runs.jsonl"))
        .unwrap()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(records.len(), 2 * variants().len());
    let inst = wend_tsplib::read_instance(std::path::Path::new(&file)).unwrap();
    let mut lengths = Vec::new();
    for (spec, method, pairs, json) in variants() {
        for seed in 0..2u64 {
            let record = records
                .iter()
                .find(|r| r["method"] == spec && r["seed"] == seed)
                .unwrap_or_else(|| panic!("no record of {spec}, seed {seed}"));
            let swept = record["length"].as_i64().unwrap();

            let seed_text = seed.to_string();
            let mut args = vec![
                "solve",
                &file,
                "--method",
                method,
                "--seed",
                &seed_text,
                "--threads",
                "1",
                "--runs",
                "1",
                "--iterations",
                "6",
                "--time-limit",
                "120",
                "--json",
            ];
            if spec.contains(":nearest:6") {
                args.extend_from_slice(&["--neighbour-lists", "nearest", "--neighbour-count", "6"]);
            }
            for p in &pairs {
                args.extend_from_slice(&["--params", p]);
            }
            let o = wend(&args);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
            let commanded = v["length"].as_i64().unwrap();

            let mut settings: wend::Settings = serde_json::from_str(json).unwrap();
            settings.seed = seed;
            settings.threads = Some(1);
            settings.runs = Some(1);
            settings.iterations = Some(6);
            settings.time_limit = Some(120.0);
            let called = wend::solve_with(inst.cost(), &settings, wend::Hooks::default())
                .unwrap()
                .length;

            assert_eq!(
                (swept, commanded, called),
                (swept, swept, swept),
                "{spec}, seed {seed}: sweep, command, library"
            );
            // eil51's optimum is 426 (TSPLIB 95 list of optimal tour lengths).
            assert!(swept >= 426, "{spec}: {swept}");
            lengths.push(swept);
        }
    }
    // The parameters reach the search: not every variant and seed ends on one length.
    lengths.dedup();
    assert!(lengths.len() > 1, "{lengths:?}");
}

#[test]
fn the_json_keys_of_solve_stay_the_same() {
    let file = instance("burma14.tsp");
    let o = wend(&["solve", &file, "--iterations", "5", "--bound", "--json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let keys: Vec<&str> = v.as_object().unwrap().keys().map(|k| k.as_str()).collect();
    assert_eq!(
        keys,
        [
            "end",
            "ends",
            "file",
            "gap_note",
            "instance",
            "iterations",
            "length",
            "lower_bound",
            "method",
            "nodes",
            "proven_gap_percent",
            "runs",
            "seconds",
            "seed",
            "start",
            "stop_reason",
            "threads",
            "time_limit",
            "tour_out",
            "type",
        ]
    );
    let o = wend(&["solve", &file, "--exact", "--json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let keys: Vec<&str> = v.as_object().unwrap().keys().map(|k| k.as_str()).collect();
    assert_eq!(
        keys,
        [
            "ends",
            "exact_method",
            "file",
            "first_tour_length",
            "gap_note",
            "instance",
            "length",
            "lower_bound",
            "method",
            "nodes",
            "proven_gap_percent",
            "proven_optimal",
            "seconds",
            "seed",
            "subproblems",
            "threads",
            "time_limit",
            "tour_out",
            "type",
        ]
    );
    // burma14's optimum is 3323 (TSPLIB 95 list of optimal tour lengths).
    assert_eq!(
        (v["method"].as_str(), v["length"].as_i64()),
        (Some("exact"), Some(3323))
    );
}
