//! The `wend` command's contract: exit codes, one-line errors, JSON on stdout, TOUR files.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn wend(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(args)
        .output()
        .expect("the wend binary runs")
}

fn instances() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../instances")
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

#[test]
fn json_is_one_object_with_the_contract_fields() {
    let dir = tempfile::tempdir().unwrap();
    let tour = dir.path().join("berlin52.tour");
    let inst = instances().join("berlin52.tsp");
    let o = wend(&[
        "solve",
        inst.to_str().unwrap(),
        "--time-limit",
        "0.5",
        "--seed",
        "3",
        "--threads",
        "2",
        "--json",
        "--tour-out",
        tour.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = String::from_utf8(o.stdout).unwrap();
    assert_eq!(out.trim().lines().count(), 1, "exactly one line: {out}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert_eq!(v["instance"], "berlin52");
    assert_eq!(v["nodes"], 52);
    assert!(v["seconds"].as_f64().unwrap() >= 0.0);
    let length = v["length"].as_i64().unwrap();
    assert!(length >= 7542, "berlin52 optimum is 7542 (TSPLIB 95 list)");
    // The TOUR file written measures to the same length.
    let m = wend(&["measure", inst.to_str().unwrap(), tour.to_str().unwrap()]);
    assert!(m.status.success(), "{}", stderr(&m));
    let measured: i64 = String::from_utf8(m.stdout).unwrap().trim().parse().unwrap();
    assert_eq!(measured, length);
}

#[test]
fn measure_gives_the_published_length_of_an_optimal_tour() {
    let inst = instances().join("pr76.tsp");
    let tour = instances().join("tours/pr76.opt.tour");
    let o = wend(&["measure", inst.to_str().unwrap(), tour.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    // pr76 optimum 108159: TSPLIB 95 list of optimal solutions.
    assert_eq!(String::from_utf8(o.stdout).unwrap().trim(), "108159");
}

#[test]
fn same_seed_and_restarts_give_the_same_tour_file() {
    let dir = tempfile::tempdir().unwrap();
    let inst = instances().join("a280.tsp");
    let run = |name: &str, threads: &str| {
        let p = dir.path().join(name);
        let o = wend(&[
            "solve",
            inst.to_str().unwrap(),
            "--seed",
            "9",
            "--runs",
            "5",
            "--threads",
            threads,
            "--tour-out",
            p.to_str().unwrap(),
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
        std::fs::read_to_string(p).unwrap()
    };
    assert_eq!(run("a.tour", "1"), run("b.tour", "2"));
}

#[test]
fn bad_input_exits_2_with_one_line_naming_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let cases = [
        ("empty.tsp", ""),
        ("truncated.tsp", "NAME : t\nTYPE : TSP\nDIMENSION : 3\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 0\n2 1 1\n"),
        ("wrongdim.tsp", "NAME : t\nTYPE : TSP\nDIMENSION : 2\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 0\n2 1 1\n3 4 4\nEOF\n"),
        ("nonnumeric.tsp", "NAME : t\nTYPE : TSP\nDIMENSION : 2\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 zero\n2 1 1\nEOF\n"),
        ("unknown.tsp", "NAME : t\nTYPE : TSP\nFLAVOUR : sweet\nDIMENSION : 2\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 0\n2 1 1\nEOF\n"),
        ("zero.tsp", "NAME : t\nTYPE : TSP\nDIMENSION : 0\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\nEOF\n"),
        ("nan.tsp", "NAME : t\nTYPE : TSP\nDIMENSION : 2\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 NaN\n2 1 1\nEOF\n"),
        ("binary.tsp", "\u{0}\u{1}\u{2}\u{fffd}\u{7f}"),
    ];
    for (name, text) in cases {
        let p = write(d, name, text);
        let o = wend(&["solve", &p, "--json"]);
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{name}: {err}");
        assert_eq!(err.trim().lines().count(), 1, "{name}: one line: {err}");
        assert!(
            err.contains(name),
            "{name}: the message names the file: {err}"
        );
        assert!(!err.contains("panicked"), "{name}: {err}");
        assert!(o.stdout.is_empty(), "{name}: nothing on stdout");
    }
    let o = wend(&["solve", "/no/such/file.tsp"]);
    assert_eq!(o.status.code(), Some(2));
    let o = wend(&[
        "solve",
        instances().join("berlin52.tsp").to_str().unwrap(),
        "--method",
        "magic",
    ]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn tiny_and_degenerate_instances_give_correct_tours() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // n = 1, 2, 3 and duplicate points: every order is optimal for n <= 3 symmetric, so the
    // length is the perimeter; checked by hand.
    let cases = [
        ("one.tsp", "NAME : one\nTYPE : TSP\nDIMENSION : 1\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 5 5\nEOF\n", 0),
        ("two.tsp", "NAME : two\nTYPE : TSP\nDIMENSION : 2\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 0\n2 3 4\nEOF\n", 10),
        ("three.tsp", "NAME : three\nTYPE : TSP\nDIMENSION : 3\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 0\n2 3 0\n3 3 4\nEOF\n", 12),
        ("dups.tsp", "NAME : dups\nTYPE : TSP\nDIMENSION : 12\nEDGE_WEIGHT_TYPE : EUC_2D\nNODE_COORD_SECTION\n1 0 0\n2 0 0\n3 0 0\n4 10 0\n5 10 0\n6 10 0\n7 10 0\n8 0 0\n9 0 0\n10 10 0\n11 0 0\n12 10 0\nEOF\n", 20),
    ];
    for (name, text, expected) in cases {
        let p = write(d, name, text);
        let o = wend(&["solve", &p, "--json"]);
        assert!(o.status.success(), "{name}: {}", stderr(&o));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        assert_eq!(v["length"], expected, "{name}");
    }
}

#[test]
fn list_methods_names_the_default() {
    let o = wend(&["solve", "--list-methods"]);
    assert!(o.status.success());
    let out = String::from_utf8(o.stdout).unwrap();
    for name in ["2opt", "greedy", "nearest", "curve"] {
        assert!(out.lines().any(|l| l.starts_with(name)), "{out}");
    }
}

#[test]
fn every_candidate_source_reaches_the_published_optimum_of_berlin52() {
    // Optimum 7542 from TSPLIB 95's list of optimal tour lengths.
    let file = instances().join("berlin52.tsp").display().to_string();
    for source in ["nearest", "quadrant", "alpha"] {
        let o = wend(&[
            "solve",
            &file,
            "--neighbour-lists",
            source,
            "--json",
            "--iterations",
            "2000",
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        assert_eq!(v["length"], 7542, "{source}");
    }
    let o = wend(&["solve", &file, "--neighbour-lists", "closest"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).contains("unknown source of neighbour lists"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn bound_is_below_the_optimum_and_solve_reports_the_gap_it_proves() {
    // berlin52's optimum is 7542 (TSPLIB 95 list of optimal tour lengths). The Held–Karp bound
    // of Euclidean instances is typically within 1-2 % of the optimum (common practice).
    let file = instances().join("berlin52.tsp").display().to_string();
    let o = wend(&["bound", &file, "--time-limit", "5", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let b = v["lower_bound"].as_i64().unwrap();
    assert!(b <= 7542 && b as f64 >= 0.98 * 7542.0, "{v}");

    let o = wend(&[
        "solve",
        &file,
        "--iterations",
        "2000",
        "--bound",
        "--bound-time",
        "5",
        "--json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["length"], 7542);
    let b = v["lower_bound"].as_i64().unwrap();
    assert!(b <= 7542);
    let gap = v["proven_gap_percent"].as_f64().unwrap();
    assert!((gap - 100.0 * (7542 - b) as f64 / b as f64).abs() < 1e-9);
}

// Asymmetric costs get the assignment bound, never above the TSPLIB optima (br17 39, ftv33
// 1286, ftv38 1530, ft53 6905: from memory of the TSPLIB list, as in instances/optima.txt);
// `solve --bound` reports the same bound.
#[test]
fn asymmetric_instances_get_the_assignment_bound() {
    for (name, optimum) in [
        ("br17", 39),
        ("ftv33", 1286),
        ("ftv38", 1530),
        ("ft53", 6905),
    ] {
        let file = instances()
            .join(format!("{name}.atsp"))
            .display()
            .to_string();
        let o = wend(&["bound", &file, "--json"]);
        assert!(o.status.success(), "{}", stderr(&o));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        assert_eq!(v["bound_method"], "assignment", "{v}");
        let b = v["lower_bound"].as_i64().unwrap();
        assert!(b <= optimum, "{name}: {v}");
        let o = wend(&["solve", &file, "--iterations", "200", "--bound", "--json"]);
        assert!(o.status.success(), "{}", stderr(&o));
        let s: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        assert_eq!(s["lower_bound"], b, "{name}: {s}");
        assert!(s["length"].as_i64().unwrap() >= optimum, "{name}: {s}");
    }
    // A generated asymmetric instance: the same seed writes the same file, the reader takes it,
    // and the bound lies below the tour found.
    let dir = tempfile::tempdir().unwrap();
    let (a, b) = (dir.path().join("a.atsp"), dir.path().join("b.atsp"));
    for p in [&a, &b] {
        let o = wend(&[
            "generate",
            "--asymmetric",
            "--nodes",
            "60",
            "--seed",
            "4",
            "--name",
            "g60",
            "--out",
            &p.display().to_string(),
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
    }
    assert_eq!(std::fs::read(&a).unwrap(), std::fs::read(&b).unwrap());
    let o = wend(&[
        "solve",
        &a.display().to_string(),
        "--iterations",
        "500",
        "--bound",
        "--json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["type"], "ATSP");
    assert!(
        v["lower_bound"].as_i64().unwrap() <= v["length"].as_i64().unwrap(),
        "{v}"
    );
}

// Optima from the TSPLIB 95 list of optimal tour lengths: burma14 3323, br17 39, ftv33 1286 and
// ft53 6905 (asymmetric), st70 675, eil51 426.
#[test]
fn exact_proves_published_optima_and_says_when_it_cannot() {
    for (name, optimum, method, by_name) in [
        ("burma14.tsp", 3323, "dynamic-programme", false),
        ("br17.atsp", 39, "dynamic-programme", false),
        ("eil51.tsp", 426, "branch-and-cut", false),
        ("st70.tsp", 675, "branch-and-cut", false),
        ("ftv33.atsp", 1286, "branch-and-cut", false),
        ("ft53.atsp", 6905, "branch-and-cut", false),
        // The 1-tree branch and bound, asked for by name.
        ("eil51.tsp", 426, "branch-and-bound", true),
        ("st70.tsp", 675, "branch-and-bound", true),
    ] {
        let file = instances().join(name).display().to_string();
        let dir = tempfile::tempdir().unwrap();
        let tour = dir.path().join("t.tour").display().to_string();
        let mut args = vec!["solve", &file, "--exact", "--json", "--tour-out", &tour];
        if by_name {
            args.extend(["--exact-method", method]);
        }
        let o = wend(&args);
        assert!(o.status.success(), "{name}: {}", stderr(&o));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        assert_eq!(v["proven_optimal"], true, "{v}");
        assert_eq!(v["length"], optimum, "{v}");
        assert_eq!(v["lower_bound"], optimum, "{v}");
        assert_eq!(v["exact_method"], method, "{v}");
        // The tour written has the published length, measured independently of the solve.
        let m = wend(&["measure", &file, &tour, "--json"]);
        assert!(m.status.success(), "{}", stderr(&m));
        let mv: serde_json::Value = serde_json::from_slice(&m.stdout).unwrap();
        assert_eq!(mv["length"], optimum, "{mv}");
    }

    // Out of time: a valid tour and bound, not proven. pr76's optimum is 108159 (TSPLIB 95).
    let file = instances().join("pr76.tsp").display().to_string();
    let o = wend(&["solve", &file, "--exact", "--time-limit", "0.5", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let (len, lb) = (
        v["length"].as_i64().unwrap(),
        v["lower_bound"].as_i64().unwrap(),
    );
    assert!(lb <= 108159 && 108159 <= len, "{v}");
    assert_eq!(v["proven_optimal"], lb == len, "{v}");

    // The 1-tree branch and bound is for symmetric costs: asked for on asymmetric ones, a
    // one-line refusal naming the file.
    let file = instances().join("ftv33.atsp").display().to_string();
    let o = wend(&[
        "solve",
        &file,
        "--exact",
        "--exact-method",
        "branch-and-bound",
    ]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("ftv33.atsp") && e.contains("symmetric"), "{e}");
    assert_eq!(e.trim().lines().count(), 1, "{e}");
}

/// `wend solve INST --json --tour-out FILE EXTRA..`: the JSON object and the TOUR file's nodes
/// (zero-based), after checking that the JSON length is the path length of the file's order.
fn solve_path(inst: &Path, extra: &[&str], dir: &Path) -> (serde_json::Value, Vec<usize>) {
    let tour = dir.join("path.tour");
    let mut args = vec![
        "solve",
        inst.to_str().unwrap(),
        "--iterations",
        "200",
        "--json",
        "--tour-out",
        tour.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    let o = wend(&args);
    assert!(o.status.success(), "{extra:?}: {}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let file = wend_tsplib::read_tour(&tour).unwrap();
    assert!(
        file.comments.iter().any(|c| c.contains("open path")),
        "{:?}",
        file.comments
    );
    let instance = wend_tsplib::read_instance(inst).unwrap();
    let mut sorted = file.nodes.clone();
    sorted.sort_unstable();
    assert_eq!(sorted, (0..instance.dimension).collect::<Vec<_>>());
    let length = wend::path_length(instance.cost(), &file.nodes).unwrap();
    assert_eq!(v["length"].as_i64(), Some(length), "{extra:?}");
    (v, file.nodes)
}

#[test]
fn open_start_and_end_give_paths_with_those_ends() {
    let dir = tempfile::tempdir().unwrap();
    for name in ["burma14.tsp", "br17.atsp"] {
        let inst = instances().join(name);
        let (v, _) = solve_path(&inst, &["--open"], dir.path());
        assert_eq!(v["ends"], "open", "{name}");
        let (v, nodes) = solve_path(&inst, &["--start", "3"], dir.path());
        assert_eq!(
            (v["ends"].as_str(), v["start"].as_u64()),
            (Some("start"), Some(3))
        );
        assert_eq!(nodes[0], 2, "{name}: TOUR files number nodes from 1");
        let (v, nodes) = solve_path(&inst, &["--end", "5"], dir.path());
        assert_eq!(
            (v["ends"].as_str(), v["end"].as_u64()),
            (Some("end"), Some(5))
        );
        assert_eq!(nodes.last(), Some(&4), "{name}");
        let (v, nodes) = solve_path(&inst, &["--start", "2", "--end", "7"], dir.path());
        assert_eq!(v["ends"], "start-end", "{name}");
        assert_eq!((nodes[0], nodes[nodes.len() - 1]), (1, 6), "{name}");
    }
}

#[test]
fn bad_path_ends_exit_2_with_one_line_naming_the_problem() {
    let inst = instances().join("burma14.tsp");
    let inst = inst.to_str().unwrap();
    for (args, needle) in [
        (vec!["--start", "0"], "--start 0"),
        (vec!["--end", "15"], "--end 15"),
        (vec!["--start", "1", "--end", "99"], "--end 99"),
        (
            vec!["--open", "--exact", "--exact-method", "branch-and-bound"],
            "branch and bound was asked for",
        ),
    ] {
        let mut all = vec!["solve", inst];
        all.extend_from_slice(&args);
        let o = wend(&all);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        let e = stderr(&o);
        assert_eq!(e.trim().lines().count(), 1, "{args:?}: {e}");
        assert!(e.contains(needle), "{args:?}: {e}");
    }
}

#[test]
fn exact_paths_and_their_bounds_bracket_the_heuristic_path() {
    // Reference: the dynamic programme proves each path optimal; the bound of the same path
    // variant must not exceed it, and the heuristic path must not beat it.
    let dir = tempfile::tempdir().unwrap();
    for name in ["burma14.tsp", "br17.atsp"] {
        let inst = instances().join(name);
        let inst_s = inst.to_str().unwrap();
        for ends in [
            vec!["--open"],
            vec!["--start", "3"],
            vec!["--end", "5"],
            vec!["--start", "2", "--end", "7"],
        ] {
            let mut args = vec!["solve", inst_s, "--exact", "--json"];
            args.extend_from_slice(&ends);
            let o = wend(&args);
            assert!(o.status.success(), "{name} {ends:?}: {}", stderr(&o));
            let exact: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
            assert_eq!(exact["proven_optimal"], true, "{name} {ends:?}");
            let optimum = exact["length"].as_i64().unwrap();
            let mut with_bound = ends.clone();
            with_bound.push("--bound");
            let (heuristic, _) = solve_path(&inst, &with_bound, dir.path());
            let length = heuristic["length"].as_i64().unwrap();
            let bound = heuristic["lower_bound"].as_i64().unwrap();
            assert!(
                bound <= optimum && optimum <= length,
                "{name} {ends:?}: bound {bound}, optimum {optimum}, heuristic {length}"
            );
        }
    }
    let o = wend(&[
        "solve",
        instances().join("berlin52.tsp").to_str().unwrap(),
        "--exact",
        "--open",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).contains("dynamic programme only"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn methods_take_parameters_by_name_and_refuse_bad_ones_with_exit_2() {
    let inst = instances().join("berlin52.tsp");
    let inst = inst.to_str().unwrap();
    let o = wend(&[
        "solve",
        inst,
        "--method",
        "mmas",
        "--params",
        "local-search=2opt",
        "--params",
        "colony-size=4",
        "--iterations",
        "3",
        "--json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(
        (v["method"].as_str(), v["iterations"].as_u64()),
        (Some("mmas"), Some(3))
    );
    // berlin52: 7542, TSPLIB list of optimal solutions.
    assert!(v["length"].as_i64().unwrap() >= 7542);
    for (args, needle) in [
        (
            vec!["--method", "anneal", "--params", "cooling=2"],
            "cooling",
        ),
        (vec!["--method", "acs", "--params", "greed"], "KEY=VALUE"),
        (
            vec!["--method", "2opt", "--params", "cooling=0.5"],
            "takes no parameters",
        ),
    ] {
        let mut all = vec!["solve", inst];
        all.extend_from_slice(&args);
        let o = wend(&all);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        let e = stderr(&o);
        assert_eq!(e.trim().lines().count(), 1, "{args:?}: {e}");
        assert!(e.contains(needle), "{args:?}: {e}");
    }
    let o = wend(&["solve", "--list-methods"]);
    let listed = String::from_utf8_lossy(&o.stdout);
    for needle in [
        "mmas",
        "acs",
        "anneal",
        "--params evaporation=",
        "--params schedule=",
    ] {
        assert!(listed.contains(needle), "{needle} not in\n{listed}");
    }
}

#[test]
fn solve_needs_a_path_but_lists_methods_without_one() {
    let o = wend(&["solve"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("<PATH>"), "{}", stderr(&o));
    let help = String::from_utf8(wend(&["solve", "--help"]).stdout).unwrap();
    assert!(help.contains("wend solve [OPTIONS] <PATH>"), "{help}");
    let o = wend(&["solve", "--list-methods"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let list = String::from_utf8(o.stdout).unwrap();
    assert!(list.lines().any(|l| l.starts_with("lk ")), "{list}");
    assert!(list.contains("--params cooling="), "{list}");
}

#[test]
fn a_bound_of_zero_gets_a_line_saying_it_proves_no_gap() {
    // br17's costs have zero-cost cycles: its assignment bound is 0 (its optimum is 39, TSPLIB
    // 95 list), so no gap in percent can be proven.
    let inst = instances().join("br17.atsp");
    let file = inst.to_str().unwrap();
    let args = [
        "solve",
        file,
        "--bound",
        "--iterations",
        "20",
        "--runs",
        "1",
    ];
    let o = wend(&args);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = String::from_utf8(o.stdout).unwrap();
    let line = text
        .lines()
        .find(|l| l.starts_with("bound "))
        .unwrap_or_default();
    assert!(
        line.contains("lower bound is 0") && line.contains("no gap"),
        "{text}"
    );
    let mut json = args.to_vec();
    json.push("--json");
    let v: serde_json::Value = serde_json::from_slice(&wend(&json).stdout).unwrap();
    assert_eq!(v["lower_bound"], 0, "{v}");
    assert!(v["proven_gap_percent"].is_null(), "{v}");
    assert!(v["gap_note"].as_str().unwrap().contains("no gap"), "{v}");
    // A positive bound proves a gap and needs no note.
    let inst = instances().join("berlin52.tsp");
    let v: serde_json::Value = serde_json::from_slice(
        &wend(&[
            "solve",
            inst.to_str().unwrap(),
            "--bound",
            "--iterations",
            "20",
            "--json",
        ])
        .stdout,
    )
    .unwrap();
    assert!(
        v["proven_gap_percent"].is_f64() && v["gap_note"].is_null(),
        "{v}"
    );
}

#[test]
fn threads_are_reported_as_used() {
    let inst = instances().join("berlin52.tsp");
    let file = inst.to_str().unwrap();
    let json = |extra: &[&str]| -> serde_json::Value {
        let mut args = vec!["solve", file, "--iterations", "10", "--json"];
        args.extend_from_slice(extra);
        serde_json::from_slice(&wend(&args).stdout).unwrap()
    };
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    assert_eq!(json(&[])["threads"], cores);
    assert_eq!(json(&["--threads", "3"])["threads"], 3);
    let exact = wend(&["solve", file, "--exact", "--threads", "1", "--json"]);
    let exact: serde_json::Value = serde_json::from_slice(&exact.stdout).unwrap();
    assert_eq!(exact["threads"], 1, "{exact}");
}

#[test]
fn short_options_mean_the_same_long_options_everywhere() {
    let dir = tempfile::tempdir().unwrap();
    let inst = instances().join("berlin52.tsp");
    let file = inst.to_str().unwrap();
    let tour = dir.path().join("t.tour");
    let long = wend(&[
        "solve",
        file,
        "--time-limit",
        "30",
        "--seed",
        "4",
        "--threads",
        "1",
        "--iterations",
        "30",
        "--json",
    ]);
    let short = wend(&[
        "solve",
        file,
        "-t",
        "30",
        "-s",
        "4",
        "-j",
        "1",
        "--iterations",
        "30",
        "--json",
        "-o",
        tour.to_str().unwrap(),
    ]);
    let (a, b): (serde_json::Value, serde_json::Value) = (
        serde_json::from_slice(&long.stdout).unwrap(),
        serde_json::from_slice(&short.stdout).unwrap(),
    );
    for key in [
        "length",
        "seed",
        "threads",
        "time_limit",
        "runs",
        "iterations",
    ] {
        assert_eq!(a[key], b[key], "{key}: {a} {b}");
    }
    assert_eq!(b["tour_out"], tour.to_str().unwrap());
    assert!(tour.is_file());
    let generated = dir.path().join("g.tsp");
    let o = wend(&[
        "generate",
        "--nodes",
        "12",
        "-s",
        "3",
        "-o",
        generated.to_str().unwrap(),
    ]);
    assert!(o.status.success() && generated.is_file(), "{}", stderr(&o));
    let o = wend(&["bound", file, "-t", "1", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = dir.path().join("bench");
    let o = wend(&[
        "bench",
        "--instances",
        file,
        "--methods",
        "greedy",
        "-t",
        "5",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(out.join("runs.jsonl").is_file());
}

#[test]
fn bench_without_methods_runs_lk() {
    let dir = tempfile::tempdir().unwrap();
    let inst = instances().join("burma14.tsp");
    let out = dir.path().display().to_string();
    let o = wend(&[
        "bench",
        "--instances",
        inst.to_str().unwrap(),
        "--time-limit",
        "5",
        "--iterations",
        "10",
        "--runs",
        "1",
        "--out",
        &out,
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = std::fs::read_to_string(dir.path().join("runs.jsonl")).unwrap();
    let r: serde_json::Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    assert_eq!(r["method"], "lk", "{r}");
}

#[test]
fn bound_help_names_both_bounds() {
    let help = String::from_utf8(wend(&["--help"]).stdout).unwrap();
    let line = help
        .lines()
        .find(|l| l.trim_start().starts_with("bound"))
        .unwrap();
    assert!(
        line.contains("asymmetric") || line.contains("assignment"),
        "{line}"
    );
    let help = String::from_utf8(wend(&["bound", "--help"]).stdout).unwrap();
    assert!(help.contains("assignment bound"), "{help}");
}

#[test]
fn tour_files_say_version_method_seed_and_length() {
    let dir = tempfile::tempdir().unwrap();
    let inst = instances().join("burma14.tsp");
    let file = inst.to_str().unwrap();
    let tour = dir.path().join("t.tour");
    let t = tour.to_str().unwrap();
    let comment = |args: &[&str]| -> String {
        let o = wend(args);
        assert!(o.status.success(), "{}", stderr(&o));
        let text = std::fs::read_to_string(&tour).unwrap();
        text.lines()
            .find_map(|l| l.strip_prefix("COMMENT : "))
            .unwrap()
            .to_string()
    };
    let v = env!("CARGO_PKG_VERSION");
    // burma14's optimum is 3323 (TSPLIB 95 list of optimal tour lengths).
    assert_eq!(
        comment(&["solve", file, "--seed", "2", "--iterations", "50", "-o", t]),
        format!("wend {v} lk seed 2 length 3323")
    );
    assert_eq!(
        comment(&["solve", file, "--exact", "-o", t]),
        format!("wend {v} exact dynamic-programme length 3323 proven optimal")
    );
    let open = comment(&[
        "solve",
        file,
        "--start",
        "3",
        "--end",
        "7",
        "--iterations",
        "50",
        "-o",
        t,
    ]);
    assert!(
        open.starts_with(&format!("wend {v} lk seed 0 length "))
            && open.ends_with(" open path 3 to 7"),
        "{open}"
    );
}

#[test]
fn an_instance_with_fixed_edges_is_solved_keeping_its_edge_by_solve_and_bench() {
    // TSPLIB 95 defines FIXED_EDGES_SECTION as edges every tour must use. The square's
    // diagonal 1-3 is fixed: the best tour with it is 1 3 2 4 (or 1 3 4 2) and costs
    // 14 + 10 + 10 + 14 = 48 (EUC_2D rounds 10 sqrt 2 to 14), where the free optimum is 40
    // (worked by hand).
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("fixed.tsp");
    std::fs::write(
        &file,
        "NAME : fixed\nTYPE : TSP\nDIMENSION : 4\nEDGE_WEIGHT_TYPE : EUC_2D\n\
         NODE_COORD_SECTION\n1 0 0\n2 10 0\n3 10 10\n4 0 10\nFIXED_EDGES_SECTION\n1 3\n-1\nEOF\n",
    )
    .unwrap();
    let tour = dir.path().join("fixed.tour");
    let o = wend(&[
        "solve",
        file.to_str().unwrap(),
        "--json",
        "-o",
        tour.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["length"], 48, "{v}");
    let nodes = wend_tsplib::read_tour(&tour).unwrap().nodes;
    let (p1, p3) = (
        nodes.iter().position(|&v| v == 0).unwrap(),
        nodes.iter().position(|&v| v == 2).unwrap(),
    );
    assert!(p1.abs_diff(p3) == 1 || p1.abs_diff(p3) == 3, "{nodes:?}");
    // With a path the fixed edge is refused, naming why.
    let o = wend(&["solve", file.to_str().unwrap(), "--open"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("closed tours only"), "{}", stderr(&o));
    let out = dir.path().join("sweep");
    let o = wend(&[
        "bench",
        "--instances",
        file.to_str().unwrap(),
        "--iterations",
        "10",
        "--runs",
        "1",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(!stderr(&o).contains("skipped"), "{}", stderr(&o));
    let text = std::fs::read_to_string(out.join("runs.jsonl")).unwrap();
    let r: serde_json::Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    assert_eq!(r["length"], 48, "{r}");
}
