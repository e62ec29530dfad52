//! `wend bench` on problems with time windows: they run the constrained search, records say
//! whether each run is feasible, gaps are measured against known values listed as
//! `folder/name`, and the report gives the feasibility rate.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn wend(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(args)
        .output()
        .expect("the wend binary runs")
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn runs(out: &Path) -> Vec<serde_json::Value> {
    std::fs::read_to_string(out.join("runs.jsonl"))
        .unwrap()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect()
}

/// The rows of `runs.csv`, each as column name to cell.
fn csv_rows(out: &Path) -> Vec<std::collections::BTreeMap<String, String>> {
    let mut reader = csv::Reader::from_path(out.join("runs.csv")).unwrap();
    let header: Vec<String> = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_string)
        .collect();
    reader
        .records()
        .map(|rec| {
            let rec = rec.unwrap();
            header
                .iter()
                .cloned()
                .zip(rec.iter().map(str::to_string))
                .collect()
        })
        .collect()
}

/// The value of `key` in a `name value` list of the shared data, or None when the file is not
/// there.
fn shared_optimum(key: &str) -> Option<i64> {
    let path = root().join("../shared/tsptw/optima.txt");
    let text = std::fs::read_to_string(&path).ok()?;
    text.lines().find_map(|l| {
        let mut parts = l.split_whitespace();
        (parts.next() == Some(key)).then(|| parts.next()?.parse().ok())?
    })
}

/// Every run is repeatable to the bit: one run of 200 iterations, a time limit far above it.
const BUDGET: [&str; 6] = ["--iterations", "200", "--runs", "1", "--time-limit", "5"];

#[test]
fn time_window_files_run_next_to_tsplib_files_with_feasibility_and_gaps() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let out_s = out.display().to_string();
    // Dumas, Desrosiers, Gelinas, Solomon, Operations Research 43(2), 1995: n20w20.001 378
    // (../shared/tsptw/optima.txt agrees). The other instance's value comes from the shared
    // list, when it is there.
    let n20w120 = shared_optimum("gendreau/n20w120.001");
    if n20w120.is_none() {
        println!("../shared/tsptw/optima.txt not found: n20w120.001 is checked without a value");
    }
    let mut known = String::from("# travel costs\ntsptw/n20w20.001 378\n");
    if let Some(v) = n20w120 {
        known.push_str(&format!("tsptw/n20w120.001 {v}\n"));
    }
    // A plain name still matches a TSPLIB file (berlin52: 7542, the published optimum).
    known.push_str("berlin52 7542\n");
    let known_path = tmp.path().join("known.txt");
    std::fs::write(&known_path, known).unwrap();
    let folder = root().join("instances/tsptw").display().to_string();
    let berlin = root().join("instances/berlin52.tsp").display().to_string();
    let known_s = known_path.display().to_string();
    let mut args = vec![
        "bench",
        "--instances",
        &folder,
        &berlin,
        "--methods",
        "lk",
        "2opt",
        "--seeds",
        "2",
        "--known-lengths",
        &known_s,
        "--out",
        &out_s,
    ];
    args.extend_from_slice(&BUDGET);
    let o = wend(&args);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{stderr}");
    // The time-window files do not run under 2opt, and the sweep says so.
    for name in ["n20w20.001.txt", "n20w120.001.txt"] {
        assert!(
            stderr.lines().any(|l| l.starts_with("wend: skipped: ")
                && l.contains(name)
                && l.contains("2opt")),
            "{stderr}"
        );
    }
    let all = runs(&out);
    // 2 time-window files x lk x 2 seeds, berlin52 x 2 methods x 2 seeds.
    assert_eq!(all.len(), 8, "{all:?}");
    let of = |name: &str| -> Vec<&serde_json::Value> {
        all.iter().filter(|r| r["instance"] == name).collect()
    };
    for r in of("berlin52") {
        // TSPLIB names and records as before: the file stem, no objective, always feasible.
        assert!(r.get("objective").is_none(), "{r}");
        assert_eq!(r["feasible"], true);
        assert_eq!(r["optimum"], 7542);
    }
    let tw: Vec<&serde_json::Value> = all.iter().filter(|r| r["instance"] != "berlin52").collect();
    assert_eq!(tw.len(), 4);
    for r in &tw {
        assert_eq!(r["method"], "lk", "{r}");
        assert_eq!(r["feasible"], true, "{r}");
        assert_eq!(r["length"], r["objective"], "{r}");
        assert!(r["tour_file"].is_string(), "{r}");
    }
    for r in of("n20w20.001") {
        assert_eq!(r["optimum"], 378, "{r}");
        let length = r["length"].as_i64().unwrap();
        assert!(length >= 378, "{r}");
        let gap = 100.0 * (length - 378) as f64 / 378.0;
        assert!(
            (r["gap_percent"].as_f64().unwrap() - gap).abs() < 1e-9,
            "{r}"
        );
    }
    for r in of("n20w120.001") {
        match n20w120 {
            Some(v) => {
                assert_eq!(r["optimum"], v, "{r}");
                let length = r["length"].as_i64().unwrap();
                assert!(length >= v, "{r}");
                let gap = 100.0 * (length - v) as f64 / v as f64;
                assert!((r["gap_percent"].as_f64().unwrap() - gap).abs() < 1e-9);
            }
            None => assert!(r["optimum"].is_null() && r["gap_percent"].is_null()),
        }
    }
    let summary = std::fs::read_to_string(out.join("summary.md")).unwrap();
    assert!(
        summary.contains("## Problems with constraints"),
        "{summary}"
    );
    assert!(summary.contains("### TSP, constrained"), "{summary}");
    assert!(
        summary.contains("| constrained search | < 100 | 4 | 100% (4/4) |"),
        "{summary}"
    );
    // berlin52 stays in the table by method and size.
    assert!(summary.contains("### TSP\n"), "{summary}");
    let rows = csv_rows(&out);
    let tw_rows: Vec<_> = rows
        .iter()
        .filter(|r| r["instance"].starts_with("n20w"))
        .collect();
    assert_eq!(tw_rows.len(), 4);
    for r in tw_rows {
        assert_eq!(r["feasible"], "true", "{r:?}");
        assert_eq!(r["objective"], r["length"], "{r:?}");
    }
    // The report rebuilt from the records says the same.
    let again = tmp.path().join("again");
    let again_s = again.display().to_string();
    let o = wend(&["bench", "--report", &out_s, "--out", &again_s]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let rebuilt = std::fs::read_to_string(again.join("summary.md")).unwrap();
    assert!(
        rebuilt.contains("| constrained search | < 100 | 4 | 100% (4/4) |"),
        "{rebuilt}"
    );
}

#[test]
fn an_infeasible_problem_counts_against_the_feasibility_rate() {
    let tmp = tempfile::tempdir().unwrap();
    // Stops 1 and 2 both must be served at time 10, and each is 10 from the depot and 5 from
    // the other: whichever comes second is reached at 15. No order is feasible.
    let bad = tmp.path().join("bad.txt");
    std::fs::write(&bad, "3\n0 10 10\n10 0 5\n10 5 0\n0 100\n10 10\n10 10\n").unwrap();
    let bad_s = bad.display().to_string();
    let good = root()
        .join("instances/tsptw/n20w20.001.txt")
        .display()
        .to_string();
    let out = tmp.path().join("out");
    let out_s = out.display().to_string();
    let known = tmp.path().join("known.txt");
    std::fs::write(&known, "tsptw/n20w20.001 378\nbad 20\n").unwrap();
    let known_s = known.display().to_string();
    let mut args = vec![
        "bench",
        "--instances",
        &bad_s,
        &good,
        "--seeds",
        "2",
        "--known-lengths",
        &known_s,
        "--out",
        &out_s,
    ];
    args.extend_from_slice(&BUDGET);
    let o = wend(&args);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let all = runs(&out);
    assert_eq!(all.len(), 4);
    for r in all.iter().filter(|r| r["instance"] == "bad") {
        assert_eq!(r["feasible"], false, "{r}");
        // Its cost is no length and gives no gap, though a value is listed.
        assert!(r["length"].is_null() && r["gap_percent"].is_null(), "{r}");
        assert_eq!(r["optimum"], 20, "{r}");
        assert!(r["tour_file"].is_null(), "{r}");
        assert!(r["objective"].is_i64(), "{r}");
    }
    for r in all.iter().filter(|r| r["instance"] == "n20w20.001") {
        assert_eq!(r["feasible"], true, "{r}");
        assert_eq!(r["optimum"], 378, "{r}");
    }
    let summary = std::fs::read_to_string(out.join("summary.md")).unwrap();
    // 2 of 4 runs feasible; the gap columns are over the 2 feasible runs with a known value.
    assert!(
        summary.contains("| constrained search | < 100 | 4 | 50% (2/4) | 2 |"),
        "{summary}"
    );
    assert!(
        summary.contains("| bad | TSP, constrained | 3 | 20 |"),
        "{summary}"
    );
    assert!(summary.contains("infeasible | infeasible |"), "{summary}");
    let rows = csv_rows(&out);
    let bad_rows: Vec<_> = rows.iter().filter(|r| r["instance"] == "bad").collect();
    assert_eq!(bad_rows.len(), 2);
    for r in bad_rows {
        assert_eq!(r["feasible"], "false", "{r:?}");
        assert_eq!(r["length"], "", "{r:?}");
        assert_eq!(r["gap_percent"], "", "{r:?}");
    }
}
