//! `wend bench`: shards, resuming, optima and the checks in the report.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn wend(args: &[&str]) -> Output {
    wend_in_task(args, &[])
}

/// Runs the command with these environment variables, as a job array's task would.
fn wend_in_task(args: &[&str], vars: &[(&str, String)]) -> Output {
    let mut c = Command::new(env!("CARGO_BIN_EXE_wend"));
    c.args(args);
    for (k, v) in vars {
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

/// A sweep whose runs are repeatable to the bit: a restart budget, a generous time limit.
fn sweep(out: &Path, seeds: &str, extra: &[&str]) -> Output {
    let o = try_sweep(out, seeds, extra, &[]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    o
}

/// The same sweep with environment variables, whatever its exit.
fn try_sweep(out: &Path, seeds: &str, extra: &[&str], vars: &[(&str, String)]) -> Output {
    let out = out.display().to_string();
    let (a, b, c) = (
        instance("berlin52.tsp"),
        instance("st70.tsp"),
        instance("eil51.tsp"),
    );
    let mut args = vec![
        "bench",
        "--instances",
        &a,
        &b,
        &c,
        "--methods",
        "2opt",
        "greedy",
        "--seeds",
        seeds,
        "--runs",
        "3",
        "--time-limit",
        "60",
        "--out",
        &out,
    ];
    args.extend_from_slice(extra);
    wend_in_task(&args, vars)
}

/// The records files of a folder: `runs.jsonl` and the shards' `runs.shard-K-of-N.jsonl`.
fn record_files(dir: &Path) -> Vec<PathBuf> {
    let mut files: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| {
            let name = p.file_name().unwrap().to_string_lossy();
            name.starts_with("runs") && name.ends_with(".jsonl")
        })
        .collect();
    files.sort();
    files
}

/// Every record of every records file of a folder.
fn runs(dir: &Path) -> Vec<serde_json::Value> {
    record_files(dir)
        .iter()
        .flat_map(|f| {
            std::fs::read_to_string(f)
                .unwrap()
                .lines()
                .map(|l| serde_json::from_str(l).unwrap())
                .collect::<Vec<_>>()
        })
        .collect()
}

fn identities(runs: &[serde_json::Value]) -> BTreeSet<(String, String, u64, i64)> {
    runs.iter()
        .map(|r| {
            (
                r["instance"].as_str().unwrap().to_string(),
                r["method"].as_str().unwrap().to_string(),
                r["seed"].as_u64().unwrap(),
                r["length"].as_i64().unwrap(),
            )
        })
        .collect()
}

#[test]
fn merged_shards_equal_the_whole_sweep() {
    let tmp = tempfile::tempdir().unwrap();
    let whole = tmp.path().join("whole");
    sweep(&whole, "2", &[]);
    let all = runs(&whole);
    assert_eq!(all.len(), 3 * 2 * 2);
    let mut merged = Vec::new();
    let mut dirs = Vec::new();
    for k in 1..=3 {
        let d = tmp.path().join(format!("shard{k}"));
        sweep(&d, "2", &["--shard", &format!("{k}/3")]);
        let part = runs(&d);
        assert!(!part.is_empty() && part.len() < all.len());
        merged.extend(part);
        dirs.push(d.display().to_string());
    }
    assert_eq!(merged.len(), all.len(), "no run twice, none missing");
    assert_eq!(identities(&merged), identities(&all));
    // The report rebuilds from the merged folders.
    let out = tmp.path().join("merged");
    let out_s = out.display().to_string();
    let mut args = vec!["bench", "--report"];
    args.extend(dirs.iter().map(String::as_str));
    args.extend(["--out", &out_s]);
    let o = wend(&args);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let csv = std::fs::read_to_string(out.join("runs.csv")).unwrap();
    assert_eq!(csv.lines().count(), all.len() + 1);
}

#[test]
fn resuming_adds_only_missing_runs() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path().join("s");
    sweep(&d, "1", &[]);
    let first = runs(&d);
    assert_eq!(first.len(), 3 * 2);
    sweep(&d, "2", &[]);
    let second = runs(&d);
    assert_eq!(second.len(), 3 * 2 * 2);
    // The first runs are untouched, and the new ones are exactly seed 1.
    assert_eq!(&second[..first.len()], &first[..]);
    assert!(second[first.len()..].iter().all(|r| r["seed"] == 1));
    sweep(&d, "2", &[]);
    assert_eq!(runs(&d).len(), 3 * 2 * 2, "a finished sweep adds nothing");
}

#[test]
fn gaps_come_from_the_optima_file_and_impossible_tours_are_flagged() {
    let tmp = tempfile::tempdir().unwrap();
    // berlin52 7542: TSPLIB 95 list of optimal solutions. st70 is given an optimum far above any
    // tour, as a distance bug would look; eil51 is left out (no optimum known).
    let optima = tmp.path().join("optima.txt");
    std::fs::write(&optima, "# test optima\nberlin52 : 7542\nst70 : 100000\n").unwrap();
    let d = tmp.path().join("s");
    let o = sweep(&d, "1", &["--known-lengths", optima.to_str().unwrap()]);
    for r in runs(&d) {
        let len = r["length"].as_i64().unwrap() as f64;
        match r["instance"].as_str().unwrap() {
            "berlin52" => {
                assert_eq!(r["optimum"], 7542);
                let gap = r["gap_percent"].as_f64().unwrap();
                assert!((gap - 100.0 * (len - 7542.0) / 7542.0).abs() < 1e-9);
            }
            "st70" => assert_eq!(r["optimum"], 100000),
            "eil51" => {
                assert!(r["optimum"].is_null());
                assert!(r["gap_percent"].is_null());
            }
            other => panic!("unexpected instance {other}"),
        }
    }
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("st70"),
        "the impossible st70 tours are reported: {err}"
    );
    let summary = std::fs::read_to_string(d.join("summary.md")).unwrap();
    assert!(summary.contains("st70"));
    assert!(summary.to_lowercase().contains("error"));
}

#[test]
fn bad_sweep_options_exit_2() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().display().to_string();
    let b = instance("berlin52.tsp");
    for args in [
        vec![
            "bench",
            "--instances",
            &b,
            "--methods",
            "nope",
            "--out",
            &out,
        ],
        vec![
            "bench",
            "--instances",
            "/no/such/*.tsp",
            "--methods",
            "2opt",
            "--out",
            &out,
        ],
        vec![
            "bench",
            "--instances",
            &b,
            "--methods",
            "2opt",
            "--shard",
            "4/3",
            "--out",
            &out,
        ],
        vec![
            "bench",
            "--instances",
            &b,
            "--methods",
            "2opt",
            "--seeds",
            "0",
            "--out",
            &out,
        ],
    ] {
        let o = wend(&args);
        assert_eq!(
            o.status.code(),
            Some(2),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
    }
}

#[test]
fn runs_of_one_job_never_overlap() {
    // With one job, a run that ends early must not wait for (or share the machine with) the
    // next: lk stops at a280's optimum (2579, TSPLIB 95) within a few hundredths of a second,
    // while the 2opt runs do not reach it and use their whole second.
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().display().to_string();
    let file = instance("a280.tsp");
    let o = wend(&[
        "bench",
        "--instances",
        &file,
        "--methods",
        "lk",
        "2opt",
        "--seeds",
        "3",
        "--time-limit",
        "1",
        "--threads-per-run",
        "2",
        "--jobs",
        "1",
        "--until-known",
        "--out",
        &out,
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let rs = runs(dir.path());
    assert_eq!(rs.len(), 6);
    for r in rs.iter().filter(|r| r["method"] == "lk") {
        assert_eq!(r["length"], 2579);
        assert_eq!(r["stop_reason"], "target_reached");
        assert!(r["seconds"].as_f64().unwrap() < 0.5, "{r}");
    }
}

// Variants of one method (`lk:SOURCE:WIDTH`) run with their own neighbour lists: each variant's
// run gives the same tour as `wend solve` with the same settings, and records keep them apart.
#[test]
fn method_variants_run_with_their_own_neighbour_lists() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("sweep");
    let file = instance("pr76.tsp");
    let o = wend(&[
        "bench",
        "--instances",
        &file,
        "--methods",
        "lk:nearest:5",
        "lk:alpha:5",
        "--runs",
        "1",
        "--iterations",
        "3",
        "--time-limit",
        "60",
        "--jobs",
        "1",
        "--out",
        &out.display().to_string(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let recs = runs(&out);
    let labels: BTreeSet<&str> = recs.iter().map(|r| r["method"].as_str().unwrap()).collect();
    assert_eq!(labels, BTreeSet::from(["lk:alpha:5", "lk:nearest:5"]));
    for source in ["nearest", "alpha"] {
        let o = wend(&[
            "solve",
            &file,
            "--neighbour-lists",
            source,
            "--neighbour-count",
            "5",
            "--runs",
            "1",
            "--iterations",
            "3",
            "--json",
        ]);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        let rec = recs
            .iter()
            .find(|r| r["method"] == format!("lk:{source}:5"))
            .unwrap();
        assert_eq!(rec["length"], v["length"], "{source}");
    }
    // Bad variants are refused, naming the part that is wrong.
    for (bad, part) in [
        ("lk:far", "far"),
        ("lk:alpha:0", "0"),
        ("lk:alpha:5:x", "too many"),
    ] {
        let o = wend(&[
            "bench",
            "--instances",
            &file,
            "--methods",
            bad,
            "--out",
            &out.display().to_string(),
        ]);
        assert_eq!(o.status.code(), Some(2), "{bad}");
        assert!(String::from_utf8_lossy(&o.stderr).contains(part), "{bad}");
    }
}

#[test]
fn paths_and_atsp_runs_are_kept_apart_from_closed_tours() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("ends");
    let out_s = out.display().to_string();
    let (tsp, atsp) = (instance("berlin52.tsp"), instance("br17.atsp"));
    let o = wend(&[
        "bench",
        "--instances",
        &tsp,
        &atsp,
        "--methods",
        "lk",
        "--ends",
        "closed",
        "open",
        "start-end",
        "--iterations",
        "200",
        "--runs",
        "1",
        "--time-limit",
        "60",
        "--out",
        &out_s,
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let all = runs(&out);
    assert_eq!(all.len(), 2 * 3);
    for r in &all {
        let ends = r["ends"].as_str().unwrap();
        let tour = out.join(r["tour_file"].as_str().unwrap());
        let text = std::fs::read_to_string(&tour).unwrap();
        let order: Vec<usize> = text
            .lines()
            .skip_while(|l| l.trim() != "TOUR_SECTION")
            .skip(1)
            .map_while(|l| l.trim().parse::<i64>().ok().filter(|&v| v > 0))
            .map(|v| v as usize)
            .collect();
        let n = r["nodes"].as_u64().unwrap() as usize;
        assert_eq!(order.len(), n, "{tour:?}");
        if ends == "closed" {
            // Published optima (TSPLIB list; ../shared/tsplib/optima.txt agrees): berlin52
            // 7542, br17 39. A closed tour is never shorter and is measured against them.
            assert!(r["gap_percent"].as_f64().is_some());
            assert!(r["length"].as_i64().unwrap() >= r["optimum"].as_i64().unwrap());
        } else {
            // Known optima are of tours: a path gets no gap, and its fixed ends hold.
            assert!(r["optimum"].is_null() && r["gap_percent"].is_null());
            if ends == "start-end" {
                assert_eq!((order[0], order[n - 1]), (1, n), "{tour:?}");
            }
        }
    }
    // Dropping the return step of a closed tour leaves an open path, so the open path found
    // is no longer than the closed tour (both instances are solved to optimality here).
    for inst in ["berlin52", "br17"] {
        let length = |ends: &str| {
            all.iter()
                .find(|r| r["instance"] == inst && r["ends"] == ends)
                .and_then(|r| r["length"].as_i64())
                .unwrap()
        };
        assert!(length("open") <= length("closed"), "{inst}");
    }
    let summary = std::fs::read_to_string(out.join("summary.md")).unwrap();
    for section in [
        "### TSP\n",
        "### ATSP\n",
        "### TSP, open paths",
        "### ATSP, start-end paths",
    ] {
        assert!(summary.contains(section), "no {section:?} in\n{summary}");
    }
    assert!(
        summary.contains(r"berlin52 \[open path\] | TSP, open paths"),
        "{summary}"
    );
}

/// The variables a job array's task `id` of `--array=first-last` sees.
fn array_task(id: usize, first: usize, last: usize) -> Vec<(&'static str, String)> {
    vec![
        ("SLURM_ARRAY_TASK_ID", id.to_string()),
        ("SLURM_ARRAY_TASK_MIN", first.to_string()),
        ("SLURM_ARRAY_TASK_MAX", last.to_string()),
        ("SLURM_ARRAY_TASK_COUNT", (last - first + 1).to_string()),
        ("SLURM_ARRAY_TASK_STEP", "1".to_string()),
    ]
}

#[test]
fn array_tasks_share_one_folder_and_their_merge_is_the_whole_sweep() {
    let tmp = tempfile::tempdir().unwrap();
    let whole = tmp.path().join("whole");
    sweep(&whole, "2", &[]);
    let all = runs(&whole);
    let shared = tmp.path().join("shared");
    // --array=0-2: tasks 0, 1, 2 are shards 1, 2, 3 of 3.
    for id in 0..3 {
        let o = try_sweep(&shared, "2", &[], &array_task(id, 0, 2));
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(o.status.success(), "{err}");
        assert!(err.contains(&format!("shard {}/3", id + 1)), "{err}");
    }
    let files = record_files(&shared);
    assert_eq!(files.len(), 3, "one records file per shard: {files:?}");
    assert!(shared.join("plan.json").is_file());
    let merged = runs(&shared);
    assert_eq!(merged.len(), all.len(), "no run twice, none missing");
    assert_eq!(identities(&merged), identities(&all));
    // No shard wrote a report (they may finish together); the merge does.
    assert!(!shared.join("runs.csv").exists());
    let s = shared.display().to_string();
    let o = wend(&["bench", "--report", &s]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(
        err.contains(&format!("all {} planned runs recorded", all.len())),
        "{err}"
    );
    let csv = std::fs::read_to_string(shared.join("runs.csv")).unwrap();
    assert_eq!(csv.lines().count(), all.len() + 1);
}

#[test]
fn a_record_torn_by_a_killed_task_is_left_out_then_done_again() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path().join("s");
    let task = array_task(1, 1, 2);
    assert!(try_sweep(&d, "2", &[], &task).status.success());
    let file = d.join("runs.shard-1-of-2.jsonl");
    let before = std::fs::read_to_string(&file).unwrap();
    let lines: Vec<&str> = before.lines().collect();
    let n = lines.len();
    assert!(n >= 2);
    // A node lost while writing the last record: half a line, no line break.
    let last = lines[n - 1];
    let torn = format!("{}\n{}", lines[..n - 1].join("\n"), &last[..last.len() / 2]);
    std::fs::write(&file, &torn).unwrap();
    // The report leaves the torn line out and says so, and counts the runs missing.
    let s = d.display().to_string();
    let o = wend(&["bench", "--report", &s]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(
        err.contains(&format!("runs.shard-1-of-2.jsonl:{n}: cut short")),
        "{err}"
    );
    assert!(
        err.contains(&format!("{} of the 12 planned runs", n - 1)),
        "{err}"
    );
    // The task, run again, removes the torn line and does that run again, once.
    let o = try_sweep(&d, "2", &[], &task);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(err.contains("removed, and the run is done again"), "{err}");
    let after = std::fs::read_to_string(&file).unwrap();
    assert_eq!(after.lines().count(), n, "{after}");
    let parse = |t: &str| -> Vec<serde_json::Value> {
        t.lines()
            .map(|l| serde_json::from_str(l).unwrap())
            .collect()
    };
    assert_eq!(identities(&parse(&after)), identities(&parse(&before)));
}

#[test]
fn a_shard_of_another_plan_is_refused_naming_what_differs() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path().join("s");
    sweep(&d, "2", &["--shard", "1/2"]);
    let o = try_sweep(&d, "3", &["--shard", "2/2"], &[]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("plan.json"), "{err}");
    assert!(
        err.contains("seeds: only in the folder's plan: none; only in this command: 2"),
        "{err}"
    );
    assert!(
        !d.join("runs.shard-2-of-2.jsonl").exists(),
        "nothing was run"
    );
    // A stepped array cannot be mapped onto shards without gaps.
    let mut stepped = array_task(2, 0, 6);
    stepped[3].1 = "4".into();
    stepped[4].1 = "2".into();
    let o = try_sweep(&tmp.path().join("t"), "1", &[], &stepped);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("step of 2"), "{err}");
}
