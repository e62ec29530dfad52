//! `wend solve` and `wend measure` under constraints: time-window files, constraints CSVs,
//! start orders, the schedule CSV, exit code 3 and the errors of bad constraint files.

use std::path::{Path, PathBuf};
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

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn json(o: &Output) -> serde_json::Value {
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(out.trim().lines().count(), 1, "one JSON line: {out}");
    serde_json::from_str(out.trim()).unwrap()
}

fn numbers(v: &serde_json::Value) -> Vec<i64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_i64().unwrap())
        .collect()
}

/// The travel-time matrix and the windows of a file in the plain time-window layout, read here
/// independently of the program.
fn read_layout(path: &str) -> (Vec<Vec<i64>>, Vec<(i64, i64)>) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines().filter(|l| !l.trim().is_empty());
    let n: usize = lines.next().unwrap().trim().parse().unwrap();
    let row = |l: &str| -> Vec<i64> { l.split_whitespace().map(|t| t.parse().unwrap()).collect() };
    let matrix: Vec<Vec<i64>> = (0..n).map(|_| row(lines.next().unwrap())).collect();
    let windows = (0..n)
        .map(|_| {
            let w = row(lines.next().unwrap());
            (w[0], w[1])
        })
        .collect();
    (matrix, windows)
}

/// Three points on a line, 10 apart: node 1 at 0, node 2 at 10, node 3 at -10.
const LINE3: &str = "NAME : line3\nTYPE : TSP\nDIMENSION : 3\nEDGE_WEIGHT_TYPE : EUC_2D\n\
    NODE_COORD_SECTION\n1 0 0\n2 10 0\n3 -10 0\nEOF\n";

#[test]
fn time_window_benchmark_reaches_the_published_optimum() {
    // n20w20.001: optimal travel cost 378 (Dumas, Desrosiers, Gelinas and Solomon, Operations
    // Research 43(2), 1995; the shared optima list agrees).
    let file = instance("tsptw/n20w20.001.txt");
    let o = wend(&["solve", &file, "--seed", "1", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], true);
    assert_eq!(v["travel_cost"], 378);
    assert_eq!(v["length"], 378);
    assert_eq!(v["violations"].as_array().unwrap().len(), 0);
    assert_eq!(v["method"], "constrained-search");
    assert_eq!(v["instance"], "n20w20.001");
    assert_eq!(v["nodes"], 21);
    let tour = numbers(&v["tour"]);
    assert_eq!(tour[0], 1, "the depot first");
    let mut sorted = tour.clone();
    sorted.sort_unstable();
    assert_eq!(sorted, (1..=21).collect::<Vec<_>>());

    let o = wend(&["solve", &file, "--exact", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["proven_optimal"], true);
    assert_eq!(v["proven_infeasible"], false);
    assert_eq!(v["travel_cost"], 378);
    assert_eq!(v["lower_bound"], 378);
    assert_eq!(v["method"], "exact");
}

#[test]
fn schedule_csv_follows_the_windows_and_travel_times_of_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let file = instance("tsptw/n20w20.001.txt");
    let schedule = dir.path().join("s.csv").display().to_string();
    let tour = dir.path().join("t.tour").display().to_string();
    let o = wend(&[
        "solve",
        &file,
        "--seed",
        "1",
        "--schedule",
        &schedule,
        "--tour-out",
        &tour,
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let (matrix, windows) = read_layout(&file);
    let text = std::fs::read_to_string(&schedule).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        "position,stop,arrival,start,wait,departure,slack"
    );
    let mut previous: Option<(usize, i64)> = None;
    let mut travel = 0;
    let mut rows = 0;
    for (k, line) in lines.enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells.len(), 7, "{line}");
        let int = |i: usize| cells[i].parse::<i64>().unwrap();
        assert_eq!(int(0), k as i64 + 1, "positions count from 1");
        let stop = int(1) as usize - 1;
        let (arrival, start, wait, departure) = (int(2), int(3), int(4), int(5));
        let (open, close) = windows[stop];
        match previous {
            None => assert_eq!((stop, arrival), (0, 0), "leaves the depot at 0"),
            Some((from, left)) => {
                travel += matrix[from][stop];
                assert_eq!(arrival, left + matrix[from][stop], "{line}");
            }
        }
        assert_eq!(start, arrival.max(open), "{line}");
        assert!(start <= close, "start within the window: {line}");
        assert_eq!(wait, start - arrival);
        assert_eq!(departure, start, "no service in this layout");
        assert_eq!(int(6), close - start, "slack: {line}");
        previous = Some((stop, departure));
        rows += 1;
    }
    assert_eq!(rows, 21);
    let (last, left) = previous.unwrap();
    travel += matrix[last][0];
    assert!(
        left + matrix[last][0] <= windows[0].1,
        "back within the depot's window"
    );
    assert_eq!(travel, 378);
    // The tour file lists the same order, the depot first.
    let t = std::fs::read_to_string(&tour).unwrap();
    assert!(t.contains("COMMENT : wend "), "{t}");
    assert!(t.contains("constrained-search seed 1 travel 378"), "{t}");
}

#[test]
fn an_impossible_pair_of_windows_exits_3_and_writes_no_files() {
    let dir = tempfile::tempdir().unwrap();
    let inst = write(dir.path(), "line3.tsp", LINE3);
    // Both stops must be served at time 10 exactly; they are 20 apart, so the second is
    // reached at 30 at the earliest: 20 late (hand count).
    let csv = write(
        dir.path(),
        "c.csv",
        "kind,stop,other,earliest,latest,value\nwindow,2,,10,10,\nwindow,3,,10,10,\n",
    );
    let tour = dir.path().join("t.tour");
    let schedule = dir.path().join("s.csv");
    let o = wend(&[
        "solve",
        &inst,
        "--constraints",
        &csv,
        "--seed",
        "1",
        "--json",
        "--tour-out",
        tour.to_str().unwrap(),
        "--schedule",
        schedule.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], false);
    assert_eq!(v["proven_infeasible"], false);
    let violations = v["violations"].as_array().unwrap();
    assert_eq!(violations.len(), 1, "{violations:?}");
    let late = &violations[0];
    assert_eq!(late["kind"], "late");
    assert_eq!(late["by"], 20);
    let second = numbers(&v["tour"])[2];
    assert_eq!(late["stop"], second);
    assert!(
        late["message"].as_str().unwrap().contains("20 late"),
        "{late}"
    );
    assert!(!tour.exists() && !schedule.exists());
    assert!(stderr(&o).contains("not written"), "{}", stderr(&o));

    let o = wend(&["solve", &inst, "--constraints", &csv, "--exact", "--json"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], false);
    assert_eq!(v["proven_infeasible"], true);
    assert_eq!(v["proven_optimal"], false);
}

#[test]
fn a_start_order_is_used_and_an_unknown_node_in_it_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let file = instance("tsptw/n20w20.001.txt");
    // A feasible order of cost 378, written from its sixth stop (a closed tour may start
    // anywhere).
    let order = [
        19, 11, 6, 16, 2, 12, 13, 7, 14, 8, 3, 5, 9, 21, 4, 15, 1, 17, 10, 20, 18,
    ];
    let body: Vec<String> = order.iter().map(|n| n.to_string()).collect();
    let good = write(
        dir.path(),
        "start.tour",
        &format!("TYPE : TOUR\nTOUR_SECTION\n{}\n-1\nEOF\n", body.join("\n")),
    );
    let o = wend(&[
        "solve",
        &file,
        "--initial-order",
        &good,
        "--seed",
        "2",
        "--iterations",
        "5",
        "--runs",
        "1",
        "--json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], true);
    assert_eq!(v["travel_cost"], 378, "never worse than the start");

    let bad = write(
        dir.path(),
        "bad.tour",
        "TYPE : TOUR\nTOUR_SECTION\n1\n2\n99\n-1\nEOF\n",
    );
    let o = wend(&["solve", &file, "--initial-order", &bad]);
    assert_eq!(o.status.code(), Some(2));
    let err = stderr(&o);
    assert!(err.contains("bad.tour:5:") && err.contains("99"), "{err}");
}

#[test]
fn precedence_is_kept_and_a_cheap_optional_stop_is_left_out() {
    let dir = tempfile::tempdir().unwrap();
    // Four points on a line and a fifth far away.
    let inst = write(
        dir.path(),
        "five.tsp",
        "NAME : five\nTYPE : TSP\nDIMENSION : 5\nEDGE_WEIGHT_TYPE : EUC_2D\n\
         NODE_COORD_SECTION\n1 0 0\n2 10 0\n3 20 0\n4 30 0\n5 1000 1000\nEOF\n",
    );
    let csv = write(
        dir.path(),
        "c.csv",
        "kind,stop,other,earliest,latest,value\n# 4 must come before 2\nbefore,4,2,,,\n\
         optional,5,,,,1\n",
    );
    let tour = dir.path().join("t.tour");
    let o = wend(&[
        "solve",
        &inst,
        "--constraints",
        &csv,
        "--seed",
        "1",
        "--json",
        "--tour-out",
        tour.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], true);
    assert_eq!(numbers(&v["skipped"]), vec![5]);
    assert_eq!(v["penalty"], 1);
    let order = numbers(&v["tour"]);
    assert!(!order.contains(&5));
    let at = |s: i64| order.iter().position(|&x| x == s).unwrap();
    assert!(at(4) < at(2), "{order:?}");
    // 1 3 4 2 back to 1: 20 + 10 + 20 + 10 = 60, the cheapest with 4 before 2 (hand count).
    assert_eq!(v["travel_cost"], 60);
    assert_eq!(v["objective"], 61);
    let t = std::fs::read_to_string(&tour).unwrap();
    assert!(t.contains("DIMENSION : 4"), "{t}");
    // The tour written measures under the same constraints without a violation.
    let o = wend(&[
        "measure",
        &inst,
        tour.to_str().unwrap(),
        "--constraints",
        &csv,
        "--json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(json(&o)["violations"].as_array().unwrap().len(), 0);
}

#[test]
fn a_fixed_edge_of_the_file_runs_one_way_and_a_row_turns_it() {
    let dir = tempfile::tempdir().unwrap();
    // Four points on a line; the file fixes the edge 2-3.
    let inst = write(
        dir.path(),
        "four.tsp",
        "NAME : four\nTYPE : TSP\nDIMENSION : 4\nEDGE_WEIGHT_TYPE : EUC_2D\n\
         NODE_COORD_SECTION\n1 0 0\n2 10 0\n3 20 0\n4 30 0\nFIXED_EDGES_SECTION\n2 3\n-1\nEOF\n",
    );
    let next = |order: &[i64], a: i64| {
        order[(order.iter().position(|&x| x == a).unwrap() + 1) % order.len()]
    };
    // A constraint that does not touch the edge: 3 follows 2.
    let plain = write(
        dir.path(),
        "plain.csv",
        "kind,stop,other,earliest,latest,value\nservice,4,,,,1\n",
    );
    let o = wend(&["solve", &inst, "--constraints", &plain, "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(next(&numbers(&json(&o)["tour"]), 2), 3);
    // An edge row the other way round turns it: 2 follows 3.
    let turned = write(
        dir.path(),
        "turned.csv",
        "kind,stop,other,earliest,latest,value\nedge,3,2,,,\n",
    );
    let o = wend(&["solve", &inst, "--constraints", &turned, "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], true);
    assert_eq!(next(&numbers(&v["tour"]), 3), 2);
}

#[test]
fn measure_lists_the_windows_a_tour_breaks() {
    let dir = tempfile::tempdir().unwrap();
    let file = instance("tsptw/n20w20.001.txt");
    let tour = dir.path().join("t.tour");
    let o = wend(&["solve", &file, "--seed", "1", "-o", tour.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let o = wend(&["measure", &file, tour.to_str().unwrap(), "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], true);
    assert_eq!(v["travel_cost"], 378);
    assert_eq!(v["violations"].as_array().unwrap().len(), 0);

    // Three stops; node 2 and node 3 must be served by time 10.
    let layout = write(
        dir.path(),
        "three.txt",
        "3\n0 5 8\n5 0 4\n8 4 0\n0 100\n0 10\n0 10\n",
    );
    let good = write(
        dir.path(),
        "good.tour",
        "TYPE : TOUR\nTOUR_SECTION\n1 2 3\n-1\nEOF\n",
    );
    let o = wend(&["measure", &layout, &good]);
    assert!(o.status.success(), "{}", stderr(&o));
    // 1 -> 3 takes 8 (on time), 3 -> 2 takes 4: node 2 reached at 12, 2 late; back at 17.
    let late = write(
        dir.path(),
        "late.tour",
        "TYPE : TOUR\nTOUR_SECTION\n3 2 1\n-1\nEOF\n",
    );
    let o = wend(&["measure", &layout, &late, "--json"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let v = json(&o);
    assert_eq!(v["feasible"], false);
    assert_eq!(v["travel_cost"], 17);
    assert_eq!(v["completion_time"], 17);
    let violations = v["violations"].as_array().unwrap();
    assert_eq!(violations.len(), 1, "{violations:?}");
    assert_eq!(violations[0]["kind"], "late");
    assert_eq!(violations[0]["stop"], 2);
    assert_eq!(violations[0]["by"], 2);
    // The text names it too.
    let o = wend(&["measure", &layout, &late]);
    assert_eq!(o.status.code(), Some(3));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("stop 2 is served 2 late"), "{text}");
    // Unknown and repeated nodes are errors naming the file.
    for (name, body) in [("unknown.tour", "1 2 7"), ("twice.tour", "1 2 2 3")] {
        let t = write(
            dir.path(),
            name,
            &format!("TYPE : TOUR\nTOUR_SECTION\n{body}\n-1\nEOF\n"),
        );
        let o = wend(&["measure", &layout, &t]);
        assert_eq!(o.status.code(), Some(2), "{name}");
        assert!(stderr(&o).contains(name), "{name}: {}", stderr(&o));
    }
}

#[test]
fn bad_constraint_files_name_the_file_and_line() {
    let dir = tempfile::tempdir().unwrap();
    let inst = write(dir.path(), "line3.tsp", LINE3);
    let head = "kind,stop,other,earliest,latest,value\n";
    let cases = [
        ("reversed.csv", "window,2,,50,40,\n", 2),
        ("cycle.csv", "before,2,3,,,\nbefore,3,2,,,\n", 2),
        ("unknown.csv", "window,9,,0,10,\n", 2),
        ("twice.csv", "window,2,,0,10,\nwindow,2,,0,10,\n", 3),
    ];
    for (name, rows, line) in cases {
        let csv = write(dir.path(), name, &format!("{head}{rows}"));
        let o = wend(&["solve", &inst, "--constraints", &csv]);
        assert_eq!(o.status.code(), Some(2), "{name}");
        let err = stderr(&o);
        assert!(err.contains(&format!("{name}:{line}:")), "{name}: {err}");
        assert_eq!(err.trim().lines().count(), 1, "{name}: {err}");
    }
}

#[test]
fn options_without_meaning_under_constraints_are_refused() {
    let file = instance("tsptw/n20w20.001.txt");
    let o = wend(&["solve", &file, "--method", "2opt"]);
    assert_eq!(o.status.code(), Some(2));
    let err = stderr(&o);
    assert!(
        err.contains("constrained search runs by default") && err.contains("--exact"),
        "{err}"
    );
    let o = wend(&["solve", &file, "--open"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("constraints CSV"), "{}", stderr(&o));
    let o = wend(&["solve", &file, "--objective", "fastest"]);
    assert_eq!(o.status.code(), Some(2));
    let o = wend(&["solve", &file, "--bound-time", "3"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("lower_bound"), "{}", stderr(&o));
    // Exit code 3 is in the help.
    let o = wend(&["solve", "--help"]);
    assert!(String::from_utf8_lossy(&o.stdout).contains("3 no order"));
}
