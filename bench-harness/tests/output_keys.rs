//! The keys the command writes are the keys docs/output-keys.md lists: every key of a table
//! whose "present" column starts with "always" is there, and no key outside the table appears.

use std::collections::BTreeSet;
use std::path::PathBuf;
use std::process::Command;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn instance(name: &str) -> String {
    root().join("instances").join(name).display().to_string()
}

fn wend(args: &[&str]) -> String {
    let o = Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(args)
        .output()
        .expect("the wend binary runs");
    assert!(
        o.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout).unwrap()
}

/// The table under `## {section}` of the page: `(key, always present)` for each row.
fn table(section: &str) -> Vec<(String, bool)> {
    let page = std::fs::read_to_string(root().join("docs/output-keys.md")).unwrap();
    let heading = format!("## {section}");
    let mut lines = page.lines().skip_while(|l| l.trim() != heading);
    assert!(lines.next().is_some(), "no section {heading:?} in the page");
    let mut rows = Vec::new();
    for line in lines.take_while(|l| !l.starts_with("## ")) {
        let cells: Vec<&str> = line.trim().split('|').map(str::trim).collect();
        // `| key | present | unit | meaning |` splits into six cells, the outer two empty.
        if cells.len() != 6 {
            continue;
        }
        let Some(key) = cells[1].strip_prefix('`').and_then(|k| k.strip_suffix('`')) else {
            continue;
        };
        rows.push((key.to_string(), cells[2].starts_with("always")));
    }
    assert!(!rows.is_empty(), "the table of {heading:?} is empty");
    rows
}

/// Compares the keys an output has with the table of `section`.
fn check(section: &str, keys: &BTreeSet<String>, what: &str) {
    let rows = table(section);
    let listed: BTreeSet<String> = rows.iter().map(|(k, _)| k.clone()).collect();
    let unlisted: Vec<&String> = keys.difference(&listed).collect();
    assert!(
        unlisted.is_empty(),
        "{what}: keys not in the table {section:?}: {unlisted:?}"
    );
    let missing: Vec<&String> = rows
        .iter()
        .filter(|(k, always)| *always && !keys.contains(k))
        .map(|(k, _)| k)
        .collect();
    assert!(
        missing.is_empty(),
        "{what}: keys the table {section:?} says are always there are missing: {missing:?}"
    );
}

fn json_keys(text: &str) -> BTreeSet<String> {
    let v: serde_json::Value = serde_json::from_str(text.trim()).unwrap();
    v.as_object().unwrap().keys().cloned().collect()
}

#[test]
fn the_page_reads_as_tables() {
    // The parser itself: a section that exists gives its rows, with the present column read.
    let rows = table("bound");
    assert!(
        rows.contains(&("bound_method".to_string(), true)),
        "{rows:?}"
    );
    assert!(rows.contains(&("cycles".to_string(), false)), "{rows:?}");
}

#[test]
fn solve_json_keys_are_the_listed_keys() {
    let file = instance("berlin52.tsp");
    let common = [
        "--iterations",
        "20",
        "--runs",
        "1",
        "--threads",
        "1",
        "--json",
    ];
    let mut plain = vec!["solve", file.as_str()];
    plain.extend_from_slice(&common);
    check("solve", &json_keys(&wend(&plain)), "wend solve --json");
    let mut bound = plain.clone();
    bound.extend_from_slice(&["--bound", "--bound-time", "1"]);
    check(
        "solve",
        &json_keys(&wend(&bound)),
        "wend solve --bound --json",
    );
}

#[test]
fn solve_exact_json_keys_are_the_listed_keys() {
    let file = instance("burma14.tsp");
    let keys = json_keys(&wend(&["solve", &file, "--exact", "--json"]));
    check("solve --exact", &keys, "wend solve --exact --json");
    // A proof that runs out of time has the same keys (no bound yet, nothing proven).
    let file = instance("kroA100.tsp");
    let args = ["solve", &file, "--exact", "--time-limit", "0.2", "--json"];
    check(
        "solve --exact",
        &json_keys(&wend(&args)),
        "--exact, out of time",
    );
}

#[test]
fn bound_json_keys_are_the_listed_keys() {
    for name in ["berlin52.tsp", "ftv38.atsp"] {
        let file = instance(name);
        let keys = json_keys(&wend(&["bound", &file, "--time-limit", "1", "--json"]));
        check("bound", &keys, &format!("wend bound {name} --json"));
    }
}

/// A one-run sweep of berlin52 under 2opt into `out`, with `extra` options.
fn bench_berlin52(out: &std::path::Path, extra: &[&str]) {
    let out = out.display().to_string();
    let file = instance("berlin52.tsp");
    let mut args = vec![
        "bench",
        "--instances",
        &file,
        "--methods",
        "2opt",
        "--runs",
        "1",
        "--out",
        &out,
    ];
    args.extend_from_slice(extra);
    wend(&args);
}

#[test]
fn bench_record_and_csv_keys_are_the_listed_keys() {
    let tmp = tempfile::tempdir().unwrap();
    bench_berlin52(tmp.path(), &["--time-limit", "60"]);
    let runs = std::fs::read_to_string(tmp.path().join("runs.jsonl")).unwrap();
    let lines: Vec<&str> = runs.lines().collect();
    assert_eq!(lines.len(), 1, "{runs}");
    check("bench record", &json_keys(lines[0]), "runs.jsonl");
    let csv = std::fs::read_to_string(tmp.path().join("runs.csv")).unwrap();
    let header: BTreeSet<String> = csv
        .lines()
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    check("bench runs.csv", &header, "runs.csv");
}

#[test]
fn a_sharded_sweeps_plan_keys_are_the_listed_keys() {
    let tmp = tempfile::tempdir().unwrap();
    bench_berlin52(tmp.path(), &["--shard", "1/2"]);
    let plan = std::fs::read_to_string(tmp.path().join("plan.json")).unwrap();
    check("bench plan.json", &json_keys(&plan), "plan.json");
}

#[test]
fn bench_constrained_record_and_csv_keys_are_the_listed_keys() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().display().to_string();
    let file = instance("tsptw/n20w20.001.txt");
    wend(&[
        "bench",
        "--instances",
        &file,
        "--runs",
        "1",
        "--iterations",
        "50",
        "--time-limit",
        "60",
        "--out",
        &out,
    ]);
    let runs = std::fs::read_to_string(tmp.path().join("runs.jsonl")).unwrap();
    let lines: Vec<&str> = runs.lines().collect();
    assert_eq!(lines.len(), 1, "{runs}");
    let keys = json_keys(lines[0]);
    assert!(keys.contains("objective"), "{keys:?}");
    check("bench record", &keys, "runs.jsonl of a time-window run");
    let csv = std::fs::read_to_string(tmp.path().join("runs.csv")).unwrap();
    let header: BTreeSet<String> = csv
        .lines()
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    check("bench runs.csv", &header, "runs.csv of a time-window run");
}

/// The standard output of a run that may end with exit code 3 (an infeasible order).
fn wend_3(args: &[&str]) -> String {
    let o = Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(args)
        .output()
        .expect("the wend binary runs");
    assert!(
        matches!(o.status.code(), Some(0 | 3)),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout).unwrap()
}

/// Checks the violations and schedule rows of a constrained JSON object; returns how many
/// violations it had.
fn check_parts(v: &serde_json::Value, what: &str) -> usize {
    let violations = v["violations"].as_array().unwrap();
    for x in violations {
        let keys = x.as_object().unwrap().keys().cloned().collect();
        check("violations", &keys, &format!("{what}: a violation"));
    }
    let rows = v["schedule"].as_array().unwrap();
    assert!(!rows.is_empty(), "{what}: no schedule");
    for row in rows {
        let keys = row.as_object().unwrap().keys().cloned().collect();
        check(
            "solve --schedule",
            &keys,
            &format!("{what}: a schedule row"),
        );
    }
    violations.len()
}

#[test]
fn constrained_solve_schedule_and_measure_keys_are_the_listed_keys() {
    let tmp = tempfile::tempdir().unwrap();
    let file = instance("tsptw/n20w20.001.txt");
    let schedule = tmp.path().join("s.csv").display().to_string();
    let tour = tmp.path().join("t.tour").display().to_string();
    let args = [
        "solve",
        &file,
        "--seed",
        "1",
        "--runs",
        "1",
        "--json",
        "--schedule",
        &schedule,
        "--tour-out",
        &tour,
    ];
    let text = wend(&args);
    check(
        "solve under constraints",
        &json_keys(&text),
        "wend solve --json on a time-window file",
    );
    let v: serde_json::Value = serde_json::from_str(text.trim()).unwrap();
    check_parts(&v, "solve");
    let csv = std::fs::read_to_string(&schedule).unwrap();
    let header = csv.lines().next().unwrap().split(',').map(str::to_string);
    check("solve --schedule", &header.collect(), "the schedule CSV");
    let exact = wend(&["solve", &file, "--exact", "--json"]);
    check(
        "solve under constraints",
        &json_keys(&exact),
        "wend solve --exact --json on a time-window file",
    );

    // A closed tour in the wrong direction breaks windows: the violations have their keys.
    let measured = wend(&["measure", &file, &tour, "--json"]);
    check(
        "measure under constraints",
        &json_keys(&measured),
        "wend measure --json on a time-window file",
    );
    let body = std::fs::read_to_string(&tour).unwrap();
    let mut nodes: Vec<&str> = body
        .lines()
        .skip_while(|l| *l != "TOUR_SECTION")
        .skip(1)
        .take_while(|l| *l != "-1")
        .collect();
    nodes[1..].reverse();
    let reversed = tmp.path().join("r.tour");
    std::fs::write(
        &reversed,
        format!("TYPE : TOUR\nTOUR_SECTION\n{}\n-1\nEOF\n", nodes.join("\n")),
    )
    .unwrap();
    let text = wend_3(&["measure", &file, reversed.to_str().unwrap(), "--json"]);
    check(
        "measure under constraints",
        &json_keys(&text),
        "wend measure --json, a tour that breaks windows",
    );
    let v: serde_json::Value = serde_json::from_str(text.trim()).unwrap();
    assert!(check_parts(&v, "measure") > 0, "{text}");
}
