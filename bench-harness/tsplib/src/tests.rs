//! Tests of the TSPLIB reader and writer: the published library files, exact layouts, round
//! trips, and malformed input that must be refused with the right line.

// Matrices in these tests are indexed by node pairs; index loops say that most plainly.
#![allow(clippy::needless_range_loop)]

use std::path::{Path, PathBuf};

use proptest::prelude::*;
use wend::{Cost, Metric};

use super::*;

/// The shared TSPLIB folder next to the project, when present.
fn shared(sub: &str) -> Option<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../../shared/tsplib")
        .join(sub);
    if dir.is_dir() {
        Some(dir)
    } else {
        eprintln!("note: {} is absent; skipping", dir.display());
        None
    }
}

fn shared_file(sub: &str, name: &str) -> Option<PathBuf> {
    let p = shared(sub)?.join(name);
    if p.is_file() {
        Some(p)
    } else {
        eprintln!("note: {} is absent; skipping", p.display());
        None
    }
}

fn tour_length(c: &dyn Cost, nodes: &[usize]) -> i64 {
    let n = nodes.len();
    (0..n).map(|k| c.cost(nodes[k], nodes[(k + 1) % n])).sum()
}

fn canonical_length(inst: &Instance) -> i64 {
    let nodes: Vec<usize> = (0..inst.dimension).collect();
    tour_length(inst.cost(), &nodes)
}

fn err(text: &str) -> TsplibError {
    match parse_instance(text, "t.tsp") {
        Ok(i) => panic!("expected an error, parsed {} nodes", i.dimension),
        Err(e) => e,
    }
}

fn tour_err(text: &str) -> TsplibError {
    match parse_tour(text, "t.tour") {
        Ok(t) => panic!("expected an error, parsed {} nodes", t.nodes.len()),
        Err(e) => e,
    }
}

/// Asserts the error is at `line` and its message contains `needle`.
#[track_caller]
fn assert_err(e: &TsplibError, line: usize, needle: &str) {
    assert_eq!(e.line, line, "wrong line in: {e}");
    assert!(e.message.contains(needle), "{needle:?} not in: {e}");
}

fn same_costs(a: &dyn Cost, b: &dyn Cost) {
    assert_eq!(a.len(), b.len());
    for i in 0..a.len() {
        for j in 0..a.len() {
            assert_eq!(a.cost(i, j), b.cost(i, j), "cost({i}, {j})");
        }
    }
}

/// Tiny deterministic generator, so the tests need no extra dependency.
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}

const BERLIN_HEAD: &str = "NAME: tiny\nTYPE: TSP\nCOMMENT: five points\nDIMENSION: 5\n\
                           EDGE_WEIGHT_TYPE: EUC_2D\nNODE_COORD_SECTION\n";
const TINY: &str = "NAME: tiny\nTYPE: TSP\nCOMMENT: five points\nDIMENSION: 5\n\
                    EDGE_WEIGHT_TYPE: EUC_2D\nNODE_COORD_SECTION\n\
                    1 0 0\n2 3 4\n3 6 0\n4 3.5 -4\n5 1.2e+01 0\nEOF\n";

// ---------------------------------------------------------------------------------------------
// The published library.

/// The `KEY` value of a file, found by a deliberately naive scan independent of the parser.
fn naive_value(text: &str, key: &str) -> Option<String> {
    text.lines().find_map(|l| {
        let l = l.trim();
        let rest = l.strip_prefix(key)?;
        let rest = rest.trim_start().strip_prefix(':')?;
        Some(rest.trim().to_string())
    })
}

#[test]
fn every_shared_instance_parses() {
    let mut parsed = 0;
    for (sub, kind) in [("tsp", ProblemKind::Tsp), ("atsp", ProblemKind::Atsp)] {
        let Some(dir) = shared(sub) else { continue };
        let mut paths: Vec<_> = std::fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        paths.sort();
        for path in paths {
            let text = std::fs::read_to_string(&path).unwrap();
            let name = path.file_stem().unwrap().to_string_lossy().to_string();
            let result = read_instance(&path);
            let inst = result.unwrap_or_else(|e| panic!("{e}"));
            if name == "linhp318" {
                // The one library file with a non-empty FIXED_EDGES_SECTION: "1 214".
                assert_eq!(inst.fixed_edges, vec![(0, 213)], "{name}");
            } else {
                assert!(inst.fixed_edges.is_empty(), "{name}");
            }
            let dim: usize = naive_value(&text, "DIMENSION").unwrap().parse().unwrap();
            assert_eq!(inst.dimension, dim, "{name}");
            assert_eq!(inst.cost().len(), dim, "{name}");
            assert_eq!(inst.kind, kind, "{name}");
            assert_eq!(inst.name, naive_value(&text, "NAME").unwrap(), "{name}");
            let ewt = naive_value(&text, "EDGE_WEIGHT_TYPE").unwrap();
            assert_eq!(inst.edge_weight_type, ewt, "{name}");
            match &inst.weights {
                Weights::Matrix(_) => assert_eq!(ewt, "EXPLICIT", "{name}"),
                Weights::Coords(c) => assert_eq!(c.metric().keyword(), ewt, "{name}"),
            }
            if kind == ProblemKind::Tsp {
                assert!(inst.cost().is_symmetric(), "{name}");
            }
            parsed += 1;
        }
    }
    eprintln!("parsed {parsed} shared instances");
}

#[test]
fn canonical_tour_lengths_from_the_documentation() {
    // Canonical tour 1, 2, ..., n: TSPLIB 95 documentation (Reinelt), section 2, lengths given
    // there for checking the distance functions.
    // pcb442 (221440 there) is not among the shared instances, so it is not checked here.
    for (name, expected) in [("gr666", 423710), ("att532", 309636)] {
        let Some(path) = shared_file("tsp", &format!("{name}.tsp")) else {
            continue;
        };
        let inst = read_instance(&path).unwrap();
        assert_eq!(canonical_length(&inst), expected, "{name}");
    }
}

#[test]
fn optimal_tours_have_the_published_lengths() {
    // Published optimal tour lengths, TSPLIB 95 (Reinelt), list of optimal solutions.
    for (name, expected) in [("att48", 10628), ("pr76", 108159), ("a280", 2579)] {
        let (Some(p), Some(t)) = (
            shared_file("tsp", &format!("{name}.tsp")),
            shared_file("tours", &format!("{name}.opt.tour")),
        ) else {
            continue;
        };
        let inst = read_instance(&p).unwrap();
        let tour = read_tour(&t).unwrap();
        assert_eq!(tour.dimension, Some(inst.dimension));
        assert_eq!(tour.nodes.len(), inst.dimension);
        assert_eq!(tour.nodes.first(), Some(&0));
        assert!(tour.comments[0].contains(&expected.to_string()));
        assert_eq!(tour_length(inst.cost(), &tour.nodes), expected, "{name}");
    }
}

#[test]
fn shared_optima_list_reads() {
    let Some(path) = shared_file("", "optima.txt") else {
        return;
    };
    let optima = read_optima(&path).unwrap();
    // TSPLIB 95 list of optimal solutions.
    assert_eq!(optima.get("att48"), Some(&10628));
    assert_eq!(optima.get("a280"), Some(&2579));
    assert_eq!(optima.get("br17"), Some(&39));
    assert!(optima.len() > 80);
}

#[test]
fn shared_time_window_optima_read() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../../shared/tsptw");
    let path = dir.join("optima.txt");
    if !path.is_file() {
        eprintln!("note: {} is absent; skipping", path.display());
        return;
    }
    let optima = read_optima(&path).unwrap();
    // Dumas et al. (1995), as quoted in the set's README (from memory there).
    assert_eq!(optima.get("dumas/n20w20.001"), Some(&378));
    assert_eq!(optima.get("dumas/n100w20.001"), Some(&738));
    // Every name is the path of an instance file without ".txt".
    for name in optima.keys() {
        assert!(dir.join(format!("{name}.txt")).is_file(), "{name}");
    }
    assert!(optima.len() >= 100, "{}", optima.len());
}

#[test]
fn explicit_library_layouts() {
    let get =
        |name: &str| shared_file("tsp", &format!("{name}.tsp")).map(|p| read_instance(&p).unwrap());
    let matrix = |inst: &Instance, format: &str| {
        assert!(matches!(inst.weights, Weights::Matrix(_)), "{}", inst.name);
        assert_eq!(inst.edge_weight_format.as_deref(), Some(format));
        assert!(inst.cost().is_symmetric(), "{}", inst.name);
    };
    if let Some(g) = get("gr17") {
        matrix(&g, "LOWER_DIAG_ROW");
        let c = g.cost();
        // Entries read off gr17.tsp's first EDGE_WEIGHT_SECTION line: 0 / 633 0 / 257 390 0 /
        // 91 661 228 0.
        assert_eq!((c.cost(1, 0), c.cost(0, 1)), (633, 633));
        assert_eq!((c.cost(2, 0), c.cost(2, 1), c.cost(3, 2)), (257, 390, 228));
        assert_eq!(c.cost(3, 3), 0);
        assert_eq!(g.display, None);
    }
    let bayg = get("bayg29");
    let bays = get("bays29");
    if let Some(g) = &bayg {
        matrix(g, "UPPER_ROW");
        // bayg29.tsp: the first row starts 97 205, the second 129; the last entry is 162.
        let c = g.cost();
        assert_eq!((c.cost(0, 1), c.cost(0, 2), c.cost(1, 2)), (97, 205, 129));
        assert_eq!((c.cost(27, 28), c.cost(28, 27)), (162, 162));
        assert_eq!(c.cost(5, 5), 0);
    }
    if let Some(s) = &bays {
        matrix(s, "FULL_MATRIX");
        // bays29.tsp: rows start "0 107 241 190" and "107 0 148 137"; row 3 has 374 at column 4.
        let c = s.cost();
        assert_eq!((c.cost(0, 1), c.cost(1, 0), c.cost(0, 2)), (107, 107, 241));
        assert_eq!(c.cost(2, 3), 374);
    }
    if let (Some(g), Some(s)) = (&bayg, &bays) {
        // Same 29 cities (one display section), different distances.
        assert_eq!(g.display.as_ref().map(Vec::len), Some(29));
        assert_eq!(g.display, s.display);
        assert_ne!(g.cost().cost(0, 1), s.cost().cost(0, 1));
    }
    if let Some(s) = get("si175") {
        matrix(&s, "UPPER_DIAG_ROW");
        // si175.tsp first section line: "0 113 189 299".
        let c = s.cost();
        assert_eq!(
            (c.cost(0, 0), c.cost(0, 1), c.cost(2, 0), c.cost(0, 3)),
            (0, 113, 189, 299)
        );
        assert_eq!(s.display, None); // NO_DISPLAY
    }
}

#[test]
fn atsp_library_files_are_full_matrices() {
    let Some(p) = shared_file("atsp", "ftv33.atsp") else {
        return;
    };
    // ftv33.atsp has DIMENSION 34 and no EOF line.
    let inst = read_instance(&p).unwrap();
    assert_eq!(inst.kind, ProblemKind::Atsp);
    assert_eq!(inst.dimension, 34);
    assert!(!inst.cost().is_symmetric());
    assert_eq!(inst.edge_weight_format.as_deref(), Some("FULL_MATRIX"));
}

// ---------------------------------------------------------------------------------------------
// Explicit layouts.

/// `m` in `format`, written literally from the TSPLIB 95 definitions (section 1.1), with line
/// breaks at random places.
fn emit(m: &[Vec<i64>], format: &str, rng: &mut Rng) -> String {
    let n = m.len();
    let mut entries = Vec::new();
    for a in 0..n {
        for b in 0..n {
            let take = match format {
                "FULL_MATRIX" => true,
                "UPPER_ROW" | "LOWER_COL" => b > a,
                "LOWER_ROW" | "UPPER_COL" => b < a,
                "UPPER_DIAG_ROW" | "LOWER_DIAG_COL" => b >= a,
                "LOWER_DIAG_ROW" | "UPPER_DIAG_COL" => b <= a,
                _ => unreachable!(),
            };
            if take {
                // Row formats walk row a; column formats walk column a, i.e. entry (b, a).
                let v = if format.ends_with("_COL") {
                    m[b][a]
                } else {
                    m[a][b]
                };
                entries.push(v);
            }
        }
    }
    let mut text = format!(
        "NAME: r\nTYPE: TSP\nDIMENSION: {n}\nEDGE_WEIGHT_TYPE: EXPLICIT\n\
         EDGE_WEIGHT_FORMAT: {format}\nEDGE_WEIGHT_SECTION\n"
    );
    for v in entries {
        text.push_str(&v.to_string());
        text.push(if rng.below(4) == 0 { '\n' } else { ' ' });
    }
    text.push_str("\nEOF\n");
    text
}

fn random_symmetric(n: usize, rng: &mut Rng, diagonal: bool) -> Vec<Vec<i64>> {
    let mut m = vec![vec![0i64; n]; n];
    for i in 0..n {
        for j in i..n {
            let v = if i == j && !diagonal {
                0
            } else {
                rng.below(1000) as i64 - 100
            };
            m[i][j] = v;
            m[j][i] = v;
        }
    }
    m
}

const FORMATS: [&str; 9] = [
    "FULL_MATRIX",
    "UPPER_ROW",
    "LOWER_ROW",
    "UPPER_DIAG_ROW",
    "LOWER_DIAG_ROW",
    "UPPER_COL",
    "LOWER_COL",
    "UPPER_DIAG_COL",
    "LOWER_DIAG_COL",
];

#[test]
fn nine_formats_give_identical_costs() {
    let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
    for n in [1, 2, 3, 4, 5, 8, 13] {
        let m = random_symmetric(n, &mut rng, false);
        for format in FORMATS {
            let text = emit(&m, format, &mut rng);
            let inst = parse_instance(&text, "r.tsp").unwrap_or_else(|e| panic!("{format}: {e}"));
            assert_eq!(inst.edge_weight_format.as_deref(), Some(format));
            let c = inst.cost();
            for i in 0..n {
                for j in 0..n {
                    assert_eq!(c.cost(i, j), m[i][j], "{format} n={n} ({i},{j})");
                }
            }
        }
    }
}

#[test]
fn diagonal_formats_keep_the_diagonal() {
    let mut rng = Rng(12345);
    let m = random_symmetric(6, &mut rng, true);
    for format in [
        "FULL_MATRIX",
        "UPPER_DIAG_ROW",
        "LOWER_DIAG_ROW",
        "UPPER_DIAG_COL",
        "LOWER_DIAG_COL",
    ] {
        let inst = parse_instance(&emit(&m, format, &mut rng), "d.tsp").unwrap();
        for i in 0..6 {
            assert_eq!(inst.cost().cost(i, i), m[i][i], "{format}");
        }
    }
}

#[test]
fn column_formats_differ_from_row_formats() {
    // 4 nodes, upper triangle 1..=6 in file order. UPPER_ROW puts 3 at (0,3); UPPER_COL puts 3
    // at (1,2), since column 2 holds rows 0 and 1 (TSPLIB 95 documentation, section 1.1).
    let text = |f: &str| {
        format!(
            "TYPE: TSP\nDIMENSION: 4\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: {f}\n\
             EDGE_WEIGHT_SECTION\n1 2 3 4 5 6\n"
        )
    };
    let row = parse_instance(&text("UPPER_ROW"), "r").unwrap();
    let col = parse_instance(&text("UPPER_COL"), "c").unwrap();
    assert_eq!(row.cost().cost(0, 3), 3);
    assert_eq!(col.cost().cost(1, 2), 3);
    assert_eq!(col.cost().cost(0, 3), 4);
    // Missing NAME falls back to the source name.
    assert_eq!(row.name, "r");
}

#[test]
fn integral_floats_are_accepted_as_weights() {
    let t = "TYPE: TSP\nDIMENSION: 2\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: UPPER_ROW\n\
             EDGE_WEIGHT_SECTION\n12.0\n";
    assert_eq!(parse_instance(t, "f").unwrap().cost().cost(0, 1), 12);
    let bad = t.replace("12.0", "12.5");
    assert_err(&err(&bad), 6, "expected an integer weight, found \"12.5\"");
}

#[test]
fn large_full_matrix_reads_in_linear_time() {
    // A quadratic pass over 4 million tokens would take hours; a linear one well under a second
    // or two even unoptimised.
    let n = 2000;
    let mut text = format!(
        "NAME: big\nTYPE: ATSP\nDIMENSION: {n}\nEDGE_WEIGHT_TYPE: EXPLICIT\n\
         EDGE_WEIGHT_FORMAT: FULL_MATRIX\nEDGE_WEIGHT_SECTION\n"
    );
    for i in 0..n {
        for j in 0..n {
            text.push_str(&((i * 7 + j * 3) % 1000).to_string());
            text.push(' ');
        }
        text.push('\n');
    }
    let start = std::time::Instant::now();
    let inst = parse_instance(&text, "big.atsp").unwrap();
    let took = start.elapsed();
    eprintln!("{n} x {n} FULL_MATRIX read in {took:?}");
    assert_eq!(inst.cost().cost(1999, 3), (1999 * 7 + 9) % 1000);
    assert!(took.as_secs() < 20, "took {took:?}");
}

#[test]
#[ignore = "needs about 2 GB of memory; run by hand to time a 10,000-node FULL_MATRIX"]
fn ten_thousand_node_full_matrix() {
    let n = 10_000;
    let mut text = String::with_capacity(n * n * 4 + 200);
    text.push_str(&format!(
        "TYPE: ATSP\nDIMENSION: {n}\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: FULL_MATRIX\n\
         EDGE_WEIGHT_SECTION\n"
    ));
    for i in 0..n {
        for j in 0..n {
            text.push_str(&((i + j) % 997).to_string());
            text.push(' ');
        }
        text.push('\n');
    }
    let start = std::time::Instant::now();
    let inst = parse_instance(&text, "huge.atsp").unwrap();
    eprintln!("10,000 x 10,000 FULL_MATRIX read in {:?}", start.elapsed());
    assert_eq!(inst.cost().cost(9999, 9999), (19998 % 997) as i64);
}

// ---------------------------------------------------------------------------------------------
// Coordinates, display, header syntax.

#[test]
fn tiny_instance_and_header_spellings() {
    let inst = parse_instance(TINY, "tiny.tsp").unwrap();
    assert_eq!(inst.name, "tiny");
    assert_eq!(inst.comments, ["five points"]);
    assert_eq!(inst.cost().cost(0, 1), 5);
    assert_eq!(inst.cost().cost(2, 4), 6); // 1.2e+01 = 12
    assert_eq!(inst.display.as_ref().unwrap()[3], [3.5, -4.0]); // COORD_DISPLAY by default
    assert_eq!(inst.edge_weight_format, None);
    let spaced = TINY
        .replace("NAME: tiny", "NAME : tiny   ")
        .replace("TYPE: TSP", "TYPE:TSP")
        .replace("DIMENSION: 5", "DIMENSION :5")
        .replace("EDGE_WEIGHT_TYPE: EUC_2D", "EDGE_WEIGHT_TYPE\t:  EUC_2D \t")
        .replace("2 3 4\n", "\n\n  2\t3   4   \n\n")
        .replace("EOF\n", "");
    let again = parse_instance(&spaced, "tiny.tsp").unwrap();
    assert_eq!(again.name, "tiny");
    same_costs(inst.cost(), again.cost());
}

#[test]
fn crlf_and_byte_order_mark() {
    let crlf = format!("\u{feff}{}", TINY.replace('\n', "\r\n"));
    let inst = parse_instance(&crlf, "crlf.tsp").unwrap();
    same_costs(inst.cost(), parse_instance(TINY, "t").unwrap().cost());
    assert_eq!(inst.name, "tiny");
    let e = err(&crlf.replace("3 6 0", "3 6 x"));
    assert_err(
        &e,
        9,
        "expected a number for the y coordinate of node 3, found \"x\"",
    );
}

#[test]
fn small_dimensions_and_duplicate_points() {
    for n in 1..=3 {
        let mut t =
            format!("TYPE: TSP\nDIMENSION: {n}\nEDGE_WEIGHT_TYPE: EUC_2D\nNODE_COORD_SECTION\n");
        for i in 1..=n {
            t.push_str(&format!("{i} 1 1\n")); // all at one point
        }
        let inst = parse_instance(&t, "s").unwrap();
        assert_eq!(inst.dimension, n);
        assert_eq!(canonical_length(&inst), 0);
        let mut e = format!(
            "TYPE: TSP\nDIMENSION: {n}\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: \
             LOWER_DIAG_ROW\nEDGE_WEIGHT_SECTION\n"
        );
        for i in 0..n {
            for j in 0..=i {
                e.push_str(if i == j { "0 " } else { "7 " });
            }
        }
        let inst = parse_instance(&e, "s").unwrap();
        assert_eq!(inst.dimension, n);
        assert_eq!(
            canonical_length(&inst),
            if n == 1 { 0 } else { 7 * n as i64 }
        );
    }
}

#[test]
fn three_d_and_other_metrics() {
    let t = "TYPE: TSP\nDIMENSION: 2\nEDGE_WEIGHT_TYPE: EUC_3D\nNODE_COORD_TYPE: THREED_COORDS\n\
             NODE_COORD_SECTION\n1 0 0 0\n2 2 3 6\n";
    let inst = parse_instance(t, "3d").unwrap();
    assert_eq!(inst.cost().cost(0, 1), 7);
    assert_eq!(inst.display.as_ref().unwrap()[1], [2.0, 3.0]);
    let e = err(&t.replace("2 2 3 6", "2 2 3"));
    assert_err(&e, 7, "expected 3 coordinates for node 2, found 2");
    let e = err(&t.replace("THREED_COORDS", "TWOD_COORDS"));
    assert_err(
        &e,
        4,
        "NODE_COORD_TYPE does not fit EDGE_WEIGHT_TYPE EUC_3D",
    );
    for m in ["MAN_2D", "MAX_2D", "CEIL_2D", "ATT", "GEO"] {
        let inst = parse_instance(&TINY.replace("EUC_2D", m), "m").unwrap();
        match &inst.weights {
            Weights::Coords(c) => assert_eq!(Some(c.metric()), Metric::from_keyword(m)),
            Weights::Matrix(_) => panic!("{m}"),
        }
    }
}

#[test]
fn display_data_rules() {
    let explicit =
        "TYPE: TSP\nDIMENSION: 2\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: UPPER_ROW\n\
                    EDGE_WEIGHT_SECTION\n5\n";
    assert_eq!(parse_instance(explicit, "e").unwrap().display, None);
    let with = format!("{explicit}DISPLAY_DATA_SECTION\n1 0.5 0\n2 1 1\nEOF\n");
    let inst = parse_instance(&with, "e").unwrap();
    assert_eq!(inst.display, Some(vec![[0.5, 0.0], [1.0, 1.0]]));
    let twod = explicit.replace(
        "EDGE_WEIGHT_SECTION",
        "DISPLAY_DATA_TYPE: TWOD_DISPLAY\nEDGE_WEIGHT_SECTION",
    );
    assert_err(&err(&twod), 7, "without a DISPLAY_DATA_SECTION");
    let coord = explicit.replace(
        "EDGE_WEIGHT_SECTION",
        "DISPLAY_DATA_TYPE: COORD_DISPLAY\nEDGE_WEIGHT_SECTION",
    );
    assert_err(&err(&coord), 5, "COORD_DISPLAY needs a NODE_COORD_SECTION");
    let none = TINY.replace(
        "NODE_COORD_SECTION",
        "DISPLAY_DATA_TYPE: NO_DISPLAY\nNODE_COORD_SECTION",
    );
    assert_eq!(parse_instance(&none, "n").unwrap().display, None);
    let dup = with.replace("2 1 1", "1 1 1");
    assert_err(
        &err(&dup),
        9,
        "node 1 appears twice in DISPLAY_DATA_SECTION (lines 8 and 9)",
    );
}

#[test]
fn error_display_names_file_and_line() {
    // Nine lines: the x coordinate of node 3 is on line 9.
    let t = format!("{BERLIN_HEAD}1 0 0\n2 1 1\n3 abc 2\n4 0 1\n5 1 0\n");
    let e = parse_instance(&t, "burma14.tsp").unwrap_err();
    assert_eq!(
        e.to_string(),
        "burma14.tsp:9: expected a number for the x coordinate of node 3, found \"abc\""
    );
    let e = parse_instance("", "x.tsp").unwrap_err();
    assert_eq!(
        e.to_string(),
        "x.tsp: the file is empty: expected a TSPLIB 95 header"
    );
}

// ---------------------------------------------------------------------------------------------
// Malformed input: an error, never a panic, at the right line.

#[test]
fn empty_and_header_only_files() {
    assert_err(&err(""), 0, "empty");
    assert_err(&err("\u{feff}\r\n  \n\n"), 0, "empty");
    let header_only = "NAME: x\nTYPE: TSP\nDIMENSION: 3\nEDGE_WEIGHT_TYPE: EUC_2D\nEOF\n";
    assert_err(&err(header_only), 5, "without a NODE_COORD_SECTION");
    let no_eof = "NAME: x\nTYPE: TSP\nDIMENSION: 3\nEDGE_WEIGHT_TYPE: EXPLICIT\n\
                  EDGE_WEIGHT_FORMAT: FULL_MATRIX\n";
    assert_err(&err(no_eof), 5, "without an EDGE_WEIGHT_SECTION");
    assert_err(&err("NAME: x\n"), 0, "no TYPE");
    assert_err(
        &err("TYPE: TSP\nEDGE_WEIGHT_TYPE: EUC_2D\n"),
        0,
        "no DIMENSION",
    );
    assert_err(&err("TYPE: TSP\nDIMENSION: 3\n"), 0, "no EDGE_WEIGHT_TYPE");
}

#[test]
fn node_counts_must_match_dimension() {
    // Truncated: four of five nodes, then the file ends (line 10 is the last node).
    let truncated = format!("{BERLIN_HEAD}1 0 0\n2 1 1\n3 0 2\n4 0 1\n");
    assert_err(
        &err(&truncated),
        10,
        "NODE_COORD_SECTION ended after 4 of 5 nodes",
    );
    assert!(err(&truncated).message.contains("node 5 is missing"));
    // Fewer than stated, then EOF.
    let fewer = format!("{BERLIN_HEAD}1 0 0\n2 1 1\n4 0 2\n5 0 1\nEOF\n");
    let e = err(&fewer);
    assert_err(&e, 10, "ended after 4 of 5 nodes");
    assert!(e.message.contains("node 3 is missing"), "{e}");
    // More than stated.
    let more = format!("{BERLIN_HEAD}1 0 0\n2 1 1\n3 0 2\n4 0 1\n5 1 0\n6 2 2\nEOF\n");
    assert_err(&err(&more), 12, "node id 6 is outside 1..=5");
    // Wrong field counts.
    assert_err(
        &err(&format!("{BERLIN_HEAD}1 0\n")),
        7,
        "expected 2 coordinates for node 1, found 1",
    );
    assert_err(
        &err(&format!("{BERLIN_HEAD}1 0 0 0\n")),
        7,
        "expected 3 fields",
    );
    assert_err(
        &err(&format!("{BERLIN_HEAD}x 0 0\n")),
        7,
        "expected a node id",
    );
    assert_err(
        &err(&format!("{BERLIN_HEAD}0 0 0\n")),
        7,
        "node id 0 is outside",
    );
}

#[test]
fn bad_coordinates() {
    let e = err(&format!("{BERLIN_HEAD}1 0 0\n2 nan 1\n"));
    assert_err(
        &e,
        8,
        "expected a finite number for the x coordinate of node 2, found \"nan\"",
    );
    let e = err(&format!("{BERLIN_HEAD}1 0 0\n2 1 -inf\n"));
    assert_err(&e, 8, "finite number for the y coordinate");
    let e = err(&format!("{BERLIN_HEAD}1 0 0\n2 1 1e999\n"));
    assert_err(&e, 8, "finite number");
    // Too large for integer distances: refused by the cost oracle, mapped back to its line.
    let t = format!("{BERLIN_HEAD}1 0 0\n2 1 1\n3 1e13 0\n4 0 1\n5 1 0\n");
    assert_err(
        &err(&t),
        9,
        "node 3: coordinate 10000000000000 is too large",
    );
    let geo =
        format!("{BERLIN_HEAD}1 0 0\n2 1 1\n3 0 2\n4 2000.5 1\n5 1 0\n").replace("EUC_2D", "GEO");
    assert_err(&err(&geo), 10, "node 4: GEO coordinate");
    // Huge but finite: the message shows the number short, not as 300 digits.
    let t = format!("{BERLIN_HEAD}1 0 0\n2 1e300 1\n3 0 2\n4 0 1\n5 1 0\n");
    let e = err(&t);
    assert_err(&e, 8, "node 2: coordinate 1e300 is too large");
    assert!(e.to_string().len() < 120, "{e}");
}

#[test]
fn duplicate_node_id_names_both_lines() {
    let t = format!("{BERLIN_HEAD}1 0 0\n2 1 1\n3 0 2\n2 0 1\n5 1 0\n");
    assert_err(
        &err(&t),
        10,
        "node 2 appears twice in NODE_COORD_SECTION (lines 8 and 10)",
    );
}

#[test]
fn bad_dimensions() {
    let with = |d: &str| TINY.replace("DIMENSION: 5", &format!("DIMENSION: {d}"));
    assert_err(&err(&with("0")), 4, "DIMENSION must be at least 1, found 0");
    assert_err(
        &err(&with("abc")),
        4,
        "expected a whole number for DIMENSION, found \"abc\"",
    );
    assert_err(&err(&with("-3")), 4, "expected a whole number");
    assert_err(&err(&with("")), 4, "expected a value after \"DIMENSION :\"");
    assert_err(&err(&with("1000000000000")), 4, "more nodes than this file");
    assert_err(&err(&with("99999999999999999999999")), 4, "too large");
    // Within the byte count but beyond the lines that follow: refused before allocating.
    let long_comment = format!("COMMENT: {}\n", "x".repeat(5000));
    let t = TINY.replace("DIMENSION: 5", &format!("{long_comment}DIMENSION: 4000"));
    assert_err(
        &err(&t),
        12,
        "NODE_COORD_SECTION ended after 5 of 4000 nodes",
    );
    // The same for a matrix: 4000 x 4000 weights cannot fit in 5 kB.
    let m = format!(
        "TYPE: ATSP\n{long_comment}DIMENSION: 4000\nEDGE_WEIGHT_TYPE: EXPLICIT\n\
         EDGE_WEIGHT_FORMAT: FULL_MATRIX\nEDGE_WEIGHT_SECTION\n1 2 3\n"
    );
    assert_err(
        &err(&m),
        7,
        "EDGE_WEIGHT_SECTION ended after 3 of 16000000 weights",
    );
    // Bad tokens are still reported where they are.
    assert_err(&err(&m.replace("1 2 3", "1 2 x")), 7, "found \"x\"");
    assert_err(
        &err(&with("5\nDIMENSION: 5")),
        5,
        "DIMENSION given twice (lines 4 and 5)",
    );
}

#[test]
fn unknown_and_unsupported_keywords() {
    let t = TINY.replace("COMMENT: five points", "FOO : 1");
    assert_err(&err(&t), 3, "unknown keyword FOO");
    let t = TINY.replace("COMMENT: five points", "comment: lower case");
    assert_err(&err(&t), 3, "expected a keyword line");
    assert_err(
        &err(&TINY.replace("TYPE: TSP", "TYPE: CVRP")),
        2,
        "TYPE CVRP is not supported",
    );
    assert_err(
        &err(&TINY.replace("TYPE: TSP", "TYPE: TOUR")),
        2,
        "tour file",
    );
    assert_err(
        &err(&TINY.replace("TYPE: TSP", "TYPE: XYZ")),
        2,
        "unknown TYPE \"XYZ\"",
    );
    // A remark after the type, as in si175.tsp ("TSP (M.~Hofmeister)"), is fine.
    parse_instance(&TINY.replace("TYPE: TSP", "TYPE: TSP (someone)"), "t").unwrap();
    let t = TINY.replace("COMMENT: five points", "CAPACITY: 100");
    assert_err(&err(&t), 3, "CVRP");
    for bad in ["GEOM", "XRAY1", "XRAY2", "SPECIAL"] {
        let e = err(&TINY.replace("EUC_2D", bad));
        assert_err(&e, 5, &format!("EDGE_WEIGHT_TYPE {bad} is not supported"));
    }
    assert_err(
        &err(&TINY.replace("EUC_2D", "EUC_4D")),
        5,
        "unknown EDGE_WEIGHT_TYPE",
    );
    assert_err(
        &err(&TINY.replace("NAME: tiny", "NAME tiny")),
        1,
        "expected ':' after NAME",
    );
    for section in [
        "DEPOT_SECTION",
        "DEMAND_SECTION",
        "EDGE_DATA_SECTION",
        "TOUR_SECTION",
    ] {
        let t = TINY.replace("EOF", &format!("{section}\n1\n-1\nEOF"));
        assert_err(
            &err(&t),
            12,
            &format!("{section} is not supported (line 12)"),
        );
    }
}

#[test]
fn fixed_edges() {
    let with = |section: &str| {
        TINY.replace(
            "NODE_COORD_SECTION",
            &format!("FIXED_EDGES_SECTION\n{section}NODE_COORD_SECTION"),
        )
    };
    let inst = parse_instance(&with("1 2\n5 3\n-1\n"), "t").unwrap();
    assert_eq!(inst.fixed_edges, vec![(0, 1), (4, 2)]);
    // Ended by the next keyword instead of -1, and blank lines between edges.
    let inst = parse_instance(&with("2 4\n\n"), "t").unwrap();
    assert_eq!(inst.fixed_edges, vec![(1, 3)]);
    let empty = parse_instance(&with("-1\n"), "t").unwrap();
    assert_eq!(empty.dimension, 5);
    assert!(empty.fixed_edges.is_empty());
    // The section is on line 6, its first edge on line 7.
    for (section, line, needle) in [
        (
            "1 x\n-1\n",
            7,
            "expected a node number (1 to 5) in a fixed edge, found \"x\"",
        ),
        ("1\n-1\n", 7, "expected a fixed edge \"a b\""),
        (
            "1 2 3\n-1\n",
            7,
            "one fixed edge \"a b\" per line, found more: \"3\"",
        ),
        (
            "1 2\n0 3\n-1\n",
            8,
            "node 0 of a fixed edge is outside 1..=5",
        ),
        ("1 6\n-1\n", 7, "node 6 of a fixed edge is outside 1..=5"),
        ("3 3\n-1\n", 7, "joins a node to itself"),
        (
            "1 2\n2 1\n-1\n",
            8,
            "fixed edge 2 1 given twice (lines 7 and 8)",
        ),
        ("1 2\n-1 4\n", 8, "expected nothing after the -1"),
        (
            "-2 4\n-1\n",
            7,
            "expected a node number (1 to 5) in a fixed edge, found \"-2\"",
        ),
    ] {
        assert_err(&err(&with(section)), line, needle);
    }
    let twice = TINY.replace(
        "NODE_COORD_SECTION",
        "FIXED_EDGES_SECTION\n1 2\n-1\nFIXED_EDGES_SECTION\n3 4\n-1\nNODE_COORD_SECTION",
    );
    assert_err(
        &err(&twice),
        9,
        "FIXED_EDGES_SECTION given twice (lines 6 and 9)",
    );
    let early = "NAME: x\nTYPE: TSP\nFIXED_EDGES_SECTION\n1 2\n-1\nDIMENSION: 2\n";
    assert_err(&err(early), 3, "FIXED_EDGES_SECTION comes before DIMENSION");
    // Written back, the edges read the same.
    let inst = parse_instance(&with("1 2\n5 3\n-1\n"), "t").unwrap();
    assert_eq!(round_trip(&inst).fixed_edges, vec![(0, 1), (4, 2)]);
}

#[test]
fn weight_section_errors() {
    let head =
        "TYPE: TSP\nDIMENSION: 3\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: UPPER_ROW\n\
                EDGE_WEIGHT_SECTION\n";
    parse_instance(&format!("{head}1 2\n3\n"), "w").unwrap();
    let e = err(&format!("{head}1\n2\nEOF\n"));
    assert_err(&e, 7, "EDGE_WEIGHT_SECTION ended after 2 of 3 weights");
    let e = err(&format!("{head}1 2\n3\n\n4 5\n"));
    assert_err(&e, 9, "more than the 3 weights");
    let e = err(&format!("{head}1 99999999999999999999 3\n"));
    assert_err(
        &e,
        6,
        "weight \"99999999999999999999\" does not fit a 64-bit integer",
    );
    let e = err(&format!("{head}1 2 x\n"));
    assert_err(&e, 6, "expected an integer weight, found \"x\"");
    // ATSP needs the full matrix.
    let e = err(&format!("{head}1 2 3\n").replace("TSP", "ATSP"));
    assert_err(&e, 4, "TYPE ATSP needs EDGE_WEIGHT_FORMAT FULL_MATRIX");
    // A TSP's full matrix must be symmetric.
    let full =
        "TYPE: TSP\nDIMENSION: 2\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: FULL_MATRIX\n\
                EDGE_WEIGHT_SECTION\n0 1\n2 0\n";
    assert_err(&err(full), 5, "weight(1, 2) = 1 but weight(2, 1) = 2");
    let atsp = parse_instance(&full.replace("TSP", "ATSP"), "a").unwrap();
    assert_eq!((atsp.cost().cost(0, 1), atsp.cost().cost(1, 0)), (1, 2));
    // The section needs its format first, and coordinates are not weights.
    let e = err(&head.replace("EDGE_WEIGHT_FORMAT: UPPER_ROW\n", ""));
    assert_err(&e, 4, "before EDGE_WEIGHT_FORMAT");
    let e = err(&TINY.replace("NODE_COORD_SECTION", "EDGE_WEIGHT_SECTION"));
    assert_err(&e, 6, "EDGE_WEIGHT_TYPE (line 5) is EUC_2D");
    let e = err(&TINY.replace(
        "NODE_COORD_SECTION",
        "EDGE_WEIGHT_FORMAT: LOWER_ROW\nNODE_COORD_SECTION",
    ));
    assert_err(
        &e,
        6,
        "EDGE_WEIGHT_FORMAT LOWER_ROW needs EDGE_WEIGHT_TYPE EXPLICIT",
    );
}

// ---------------------------------------------------------------------------------------------
// Round trips.

fn round_trip(inst: &Instance) -> Instance {
    let mut buf = Vec::new();
    write_instance(inst, &mut buf).unwrap();
    let text = String::from_utf8(buf).unwrap();
    parse_instance(&text, "again").unwrap_or_else(|e| panic!("{e}\n{text}"))
}

fn check_round_trip(inst: &Instance) {
    let back = round_trip(inst);
    assert_eq!(back.name, inst.name);
    assert_eq!(back.comments, inst.comments);
    assert_eq!(back.kind, inst.kind);
    assert_eq!(back.dimension, inst.dimension);
    assert_eq!(back.display, inst.display);
    same_costs(inst.cost(), back.cost());
    if let (Weights::Coords(a), Weights::Coords(b)) = (&inst.weights, &back.weights) {
        assert_eq!(a.points(), b.points());
    }
}

#[test]
fn written_instances_read_back_identically() {
    let mut rng = Rng(777);
    // Awkward coordinates: many digits, negatives, tiny and large magnitudes.
    let mut t = String::from(
        "NAME: awkward\nTYPE: TSP\nCOMMENT: one\nCOMMENT: two\nDIMENSION: 40\nEDGE_WEIGHT_TYPE: EUC_2D\n\
         NODE_COORD_SECTION\n",
    );
    for i in 1..=40 {
        let x = (rng.next() as f64 / u64::MAX as f64 - 0.5) * 10f64.powi(i % 12);
        let y = (rng.next() % 100_000) as f64 / 7.0;
        t.push_str(&format!("{i} {x:e} {y}\n"));
    }
    check_round_trip(&parse_instance(&t, "a").unwrap());
    check_round_trip(&parse_instance(&t.replace("EUC_2D", "ATT"), "a").unwrap());
    let three = "TYPE: ATSP\nDIMENSION: 3\nEDGE_WEIGHT_TYPE: MAX_3D\nNODE_COORD_SECTION\n\
                 1 0.1 0.2 0.3\n2 -5 7 1e3\n3 0 0 -0\n";
    check_round_trip(&parse_instance(three, "three").unwrap());
    // Explicit, asymmetric, with display data.
    let n = 9;
    let mut m = format!(
        "NAME: asym\nTYPE: ATSP\nDIMENSION: {n}\nEDGE_WEIGHT_TYPE: EXPLICIT\n\
         EDGE_WEIGHT_FORMAT: FULL_MATRIX\nEDGE_WEIGHT_SECTION\n"
    );
    for _ in 0..n * n {
        m.push_str(&format!(
            "{} ",
            rng.below(2_000_000_000_000) as i64 - 1_000_000_000_000
        ));
    }
    m.push_str("\nDISPLAY_DATA_SECTION\n");
    for i in 1..=n {
        m.push_str(&format!("{i} {} 0.25\n", i * 3));
    }
    let mut asym = parse_instance(&m, "m").unwrap();
    assert!(!asym.cost().is_symmetric());
    check_round_trip(&asym);
    asym.kind = ProblemKind::Tsp;
    let mut buf = Vec::new();
    assert!(write_instance(&asym, &mut buf).is_err());
    assert!(buf.is_empty());
    // A symmetric triangle comes back as a full matrix with the same costs.
    let mut r = Rng(5);
    let sym = parse_instance(
        &emit(&random_symmetric(7, &mut r, false), "LOWER_COL", &mut r),
        "s",
    )
    .unwrap();
    let back = round_trip(&sym);
    assert_eq!(back.edge_weight_format.as_deref(), Some("FULL_MATRIX"));
    same_costs(sym.cost(), back.cost());
    // Coordinates whose display is not the coordinates keep their own display section.
    let mut odd = parse_instance(TINY, "t").unwrap();
    odd.display = Some(vec![[1.0, 2.0]; 5]);
    check_round_trip(&odd);
    odd.display = None;
    check_round_trip(&odd);
}

#[test]
fn written_library_instances_read_back_identically() {
    for name in ["gr17", "bayg29", "burma14", "att48", "dantzig42"] {
        if let Some(p) = shared_file("tsp", &format!("{name}.tsp")) {
            check_round_trip(&read_instance(&p).unwrap());
        }
    }
}

#[test]
fn tours_round_trip() {
    let nodes = [3usize, 0, 4, 1, 2];
    let mut buf = Vec::new();
    write_tour("five.tour", "a test\nwith a break", &nodes, &mut buf).unwrap();
    let text = String::from_utf8(buf).unwrap();
    assert!(text.contains("TYPE : TOUR\n") && text.contains("\n4\n1\n5\n2\n3\n-1\nEOF\n"));
    let t = parse_tour(&text, "five.tour").unwrap();
    assert_eq!(t.name, "five.tour");
    assert_eq!(t.comments, ["a test with a break"]);
    assert_eq!(t.dimension, Some(5));
    assert_eq!(t.nodes, nodes);
}

// ---------------------------------------------------------------------------------------------
// Tour files.

#[test]
fn tour_section_layouts() {
    let t = parse_tour(
        "NAME: x\nTYPE: TOUR\nDIMENSION: 4\nTOUR_SECTION\n1 3\n2 4 -1\nEOF\n",
        "x",
    )
    .unwrap();
    assert_eq!(t.nodes, [0, 2, 1, 3]);
    // The DIMENSION line is kept, for errors against an instance of another size.
    assert_eq!((t.dimension, t.dimension_line), (Some(4), Some(3)));
    assert_eq!(t.node_lines, [5, 5, 6, 6]);
    let t = parse_tour("TOUR_SECTION\n2\n1\n-1\n", "dir/y.tour").unwrap();
    assert_eq!(
        (
            t.name.as_str(),
            t.dimension,
            t.dimension_line,
            t.nodes.clone()
        ),
        ("y", None, None, vec![1, 0])
    );
    // DIMENSION after the section still counts.
    let e = tour_err("TYPE: TOUR\nTOUR_SECTION\n1 2 3\n-1\nDIMENSION: 2\n");
    assert_err(&e, 3, "node id 3 is outside 1..=2");
}

#[test]
fn tour_errors() {
    let head = "NAME: t\nTYPE: TOUR\nDIMENSION: 4\nTOUR_SECTION\n";
    assert_err(
        &tour_err(&format!("{head}1\n2\n3\n2\n-1\n")),
        8,
        "node 2 appears twice in the tour (lines 6 and 8)",
    );
    assert_err(
        &tour_err(&format!("{head}1\n2\n3\n-1\n")),
        8,
        "the tour has 3 nodes but DIMENSION (line 3) is 4",
    );
    assert_err(
        &tour_err(&format!("{head}1\n2\n3\n5\n-1\n")),
        8,
        "node id 5 is outside 1..=4",
    );
    assert_err(
        &tour_err(&format!("{head}1\n2\n3\n4\nEOF\n")),
        8,
        "without the closing -1",
    );
    assert_err(
        &tour_err(&format!("{head}1 2 3 4 -1\n1 2 3 4 -1\n")),
        6,
        "only one tour per file",
    );
    assert_err(
        &tour_err(&format!("{head}1 2 0 4 -1\n")),
        5,
        "node ids start at 1",
    );
    assert_err(
        &tour_err(&format!("{head}1 2 -3 4 -1\n")),
        5,
        "found \"-3\"",
    );
    assert_err(&tour_err(&format!("{head}1 2 x 4 -1\n")), 5, "found \"x\"");
    assert_err(
        &tour_err(&head.replace("TOUR\n", "TSP\n")),
        2,
        "problem file, not a tour",
    );
    assert_err(
        &tour_err("NAME: t\nTYPE: TOUR\n"),
        2,
        "without a TOUR_SECTION",
    );
    assert_err(
        &tour_err("NAME: t\nEDGE_WEIGHT_TYPE: EUC_2D\n"),
        2,
        "unknown keyword EDGE_WEIGHT_TYPE",
    );
    assert_err(&tour_err(""), 0, "empty");
    assert_err(&tour_err(&head.replace("4", "0")), 3, "at least 1");
}

#[test]
fn optima_lists() {
    let o = parse_optima("# header\n\na : 1\nb: 20 # trailing\n  c :300\n", "o").unwrap();
    assert_eq!(
        o.into_iter().collect::<Vec<_>>(),
        [("a".into(), 1), ("b".into(), 20), ("c".into(), 300)]
    );
    let e = parse_optima("a : 1\na : 2\n", "o").unwrap_err();
    assert_err(&e, 2, "a given twice (lines 1 and 2)");
    // A name alone: "name length" without a colon is a valid line now, a name without a
    // length is not.
    assert_err(
        &parse_optima("a : 1\nb\n", "o").unwrap_err(),
        2,
        "expected \"name : length\" or \"name length\", found \"b\"",
    );
    assert_err(
        &parse_optima("a 1 2\n", "o").unwrap_err(),
        1,
        "the length \"1 2\" of a is not an integer",
    );
    // The time-window sets' list: "set/name value", comments, no colon.
    let o = parse_optima(
        "# optimal travel cost\ndumas/n20w20.001 378\ngendreau/n20w120.001\t267\n",
        "o",
    )
    .unwrap();
    assert_eq!(
        o.into_iter().collect::<Vec<_>>(),
        [
            ("dumas/n20w20.001".into(), 378),
            ("gendreau/n20w120.001".into(), 267)
        ]
    );
    assert_err(
        &parse_optima("dumas/a 1\ndumas/a : 1\n", "o").unwrap_err(),
        2,
        "dumas/a given twice (lines 1 and 2)",
    );
    assert_err(
        &parse_optima("a : x\n", "o").unwrap_err(),
        1,
        "not an integer",
    );
}

// ---------------------------------------------------------------------------------------------
// Robustness: nothing a user can feed in panics.

fn exercise(text: &str) {
    if let Ok(inst) = parse_instance(text, "fuzz") {
        let c = inst.cost();
        assert_eq!(c.len(), inst.dimension);
        for i in 0..c.len().min(8) {
            for j in 0..c.len().min(8) {
                let _ = c.cost(i, j);
            }
        }
        let mut buf = Vec::new();
        write_instance(&inst, &mut buf).unwrap();
    }
    let _ = parse_tour(text, "fuzz");
    let _ = parse_optima(text, "fuzz");
    if let Ok(p) = parse_problem(text, "fuzz") {
        assert_eq!(p.constraints.nodes(), p.instance.dimension);
        for w in p.constraints.windows.iter().flatten() {
            assert!(w.earliest <= w.latest);
        }
    }
    for nodes in [1, 5] {
        if let Ok(c) = parse_constraints(text, "fuzz", nodes) {
            assert_eq!(c.nodes(), nodes);
            assert!(c.depot < nodes);
            for &(a, b) in &c.fixed_edges {
                assert!(a < nodes && b < nodes && a != b);
            }
        }
    }
}

const SEEDS: [&str; 5] = [
    TINY,
    "NAME: m\nTYPE: TSP\nDIMENSION: 4\nEDGE_WEIGHT_TYPE: EXPLICIT\nEDGE_WEIGHT_FORMAT: UPPER_DIAG_COL\n\
     EDGE_WEIGHT_SECTION\n0 1 0\n2 3 0 4 5 6 0\nDISPLAY_DATA_SECTION\n1 0 0\n2 1 0\n3 1 1\n4 0 1\nEOF\n",
    "NAME: t\nTYPE: TOUR\nDIMENSION: 5\nTOUR_SECTION\n1\n3 2\n5\n4\n-1\nEOF\n",
    "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n5 10\n20 30\n",
    "kind,stop,other,earliest,latest,value\nwindow,2,,5,9,\nbefore,1,3,0,4,\nedge,4,5,,,\n\
     optional,3,,,,7\nstart,,,,,1\n",
];

/// Tokens likely to reach unusual paths when spliced into a valid file.
const SPLICE: [&str; 20] = [
    "-1",
    "0",
    "1",
    "4",
    "1000000000000",
    "99999999999999999999",
    "1e400",
    "nan",
    "-inf",
    "1.5",
    ":",
    "\n",
    "\r\n",
    "EOF",
    "DIMENSION: 3",
    "NODE_COORD_SECTION",
    "EDGE_WEIGHT_SECTION",
    "FULL_MATRIX",
    "\u{feff}",
    "é",
];

#[derive(Debug, Clone)]
enum Edit {
    Delete(usize, usize),
    Insert(usize, usize),
    Replace(usize, u8),
}

fn apply(text: &str, edits: &[Edit]) -> String {
    let mut bytes = text.as_bytes().to_vec();
    for e in edits {
        let len = bytes.len().max(1);
        match *e {
            Edit::Delete(at, n) => {
                let at = at % len;
                let end = (at + n).min(bytes.len());
                if at < end {
                    bytes.drain(at..end);
                }
            }
            Edit::Insert(at, k) => {
                let at = (at % len).min(bytes.len());
                let s = SPLICE[k % SPLICE.len()].as_bytes();
                bytes.splice(at..at, s.iter().copied());
            }
            Edit::Replace(at, b) => {
                if !bytes.is_empty() {
                    let at = at % bytes.len();
                    bytes[at] = b;
                }
            }
        }
    }
    String::from_utf8_lossy(&bytes).into_owned()
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        (any::<usize>(), 1usize..8).prop_map(|(a, n)| Edit::Delete(a, n)),
        (any::<usize>(), any::<usize>()).prop_map(|(a, k)| Edit::Insert(a, k)),
        (any::<usize>(), any::<u8>()).prop_map(|(a, b)| Edit::Replace(a, b)),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    #[test]
    fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        exercise(&String::from_utf8_lossy(&bytes));
    }

    #[test]
    fn mutated_files_never_panic(seed in 0usize..SEEDS.len(), edits in proptest::collection::vec(edit(), 1..6)) {
        exercise(&apply(SEEDS[seed], &edits));
    }

    #[test]
    fn random_keyword_soup_never_panics(parts in proptest::collection::vec(0usize..SPLICE.len(), 0..40)) {
        let mut text = String::from("TYPE: TSP\nEDGE_WEIGHT_TYPE: EXPLICIT\n");
        for p in parts {
            text.push_str(SPLICE[p]);
            text.push(' ');
        }
        exercise(&text);
    }
}

// ---------------------------------------------------------------------------------------------
// The plain time-window layout.

fn project_file(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../..")
        .join(rel)
}

const TW: &str = "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n5 10\n20 30\n";

fn tw_err(text: &str) -> TsplibError {
    match parse_problem(text, "t.txt") {
        Ok(p) => panic!("expected an error, parsed {} nodes", p.instance.dimension),
        Err(e) => e,
    }
}

#[test]
fn time_window_instance_from_the_dumas_set() {
    let p = read_problem(&project_file("instances/tsptw/n20w20.001.txt")).unwrap();
    let (inst, c) = (&p.instance, &p.constraints);
    assert_eq!(inst.name, "n20w20.001");
    assert_eq!(inst.dimension, 21);
    assert_eq!(c.nodes(), 21);
    assert!(matches!(inst.weights, Weights::Matrix(_)));
    let cost = inst.cost();
    // Read off the file: row 0 starts "0 19 17 34" and ends "13 12"; row 3 is
    // "34 41 47 0 ..."; row 20 starts "12 31".
    assert_eq!(cost.cost(0, 1), 19);
    assert_eq!(cost.cost(0, 3), 34);
    assert_eq!(cost.cost(0, 20), 12);
    assert_eq!(cost.cost(3, 2), 47);
    assert_eq!(cost.cost(20, 1), 31);
    assert_eq!(cost.cost(7, 7), 0);
    // Windows: lines "0 408", "62 68", ..., "275 300".
    let w = |earliest, latest| vec![wend::constraints::Window { earliest, latest }];
    assert_eq!(c.windows[0], w(0, 408));
    assert_eq!(c.windows[1], w(62, 68));
    assert_eq!(c.windows[9], w(3, 23));
    assert_eq!(c.windows[20], w(275, 300));
    assert!(c.windows.iter().all(|v| v.len() == 1));
    assert!(c.service.iter().all(|&s| s == 0));
    assert!(c.penalty.iter().all(Option::is_none));
    assert!(c.precedence.is_empty() && c.fixed_edges.is_empty());
    assert_eq!((c.depot, c.start_time), (0, 0));
    assert_eq!(c.route, wend::constraints::Route::Closed);
    assert_eq!(c.objective, wend::constraints::Objective::Travel);
}

#[test]
fn time_window_instance_from_the_gendreau_set() {
    let p = read_problem(&project_file("instances/tsptw/n20w120.001.txt")).unwrap();
    assert_eq!(p.instance.dimension, 21);
    let w = &p.constraints.windows;
    assert_eq!((w[0][0].earliest, w[0][0].latest), (0, 458));
    assert_eq!((w[1][0].earliest, w[1][0].latest), (12, 118));
}

#[test]
fn time_window_layout_is_told_by_its_content() {
    let p = parse_problem(TW, "t.txt").unwrap();
    assert_eq!(p.instance.dimension, 3);
    assert_eq!(p.instance.kind, ProblemKind::Tsp);
    assert_eq!(p.instance.cost().cost(1, 2), 3);
    assert_eq!(p.constraints.windows[2][0].latest, 30);
    // Blank lines, CRLF and trailing spaces are tolerated; an asymmetric matrix is an ATSP.
    let loose = "\r\n3 \r\n0 1 2\r\n\r\n5 0 3\r\n2 3 0\r\n0 100\r\n5 10\r\n20 30\r\n\r\n";
    let p = parse_problem(loose, "t.txt").unwrap();
    assert_eq!(p.instance.kind, ProblemKind::Atsp);
    assert_eq!(p.instance.cost().cost(1, 0), 5);
    // TSPLIB text still reads as TSPLIB, with no constraint but its fixed edges.
    let p = parse_problem(TINY, "t.tsp").unwrap();
    assert_eq!(p.instance.name, "tiny");
    assert!(p.constraints.is_unconstrained());
    let fixed = TINY.replace(
        "NODE_COORD_SECTION",
        "FIXED_EDGES_SECTION\n2 3\n-1\nNODE_COORD_SECTION",
    );
    let p = parse_problem(&fixed, "t.tsp").unwrap();
    assert_eq!(p.constraints.fixed_edges, vec![(1, 2)]);
    assert_eq!(p.constraints.nodes(), 5);
    // Neither a keyword nor a number first: a TSPLIB error.
    assert_err(&tw_err("x 3\n"), 1, "expected a keyword line");
}

#[test]
fn time_window_errors() {
    let e = tw_err("0\n");
    assert_eq!(
        e.to_string(),
        "t.txt:1: the number of nodes must be at least 1, found 0"
    );
    for (text, line, needle) in [
        ("3 4\n", 1, "alone on the first line, found also \"4\""),
        (
            "99999999999999999999999\n",
            1,
            "the number of nodes \"99999999999999999999999\" is too large",
        ),
        ("3\n0 1 2\n1 0 3\n", 1, "3 nodes need 6 more lines"),
        (
            "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n5 10\n\n",
            6,
            "the windows ended after 2 of 3",
        ),
        (
            "3\n0 1 2\n1 0\n2 3 0\n0 100\n5 10\n20 30\n",
            3,
            "matrix row 2 has 2 entries, expected 3",
        ),
        (
            "3\n0 1 2\n1 0 3 4\n2 3 0\n0 100\n5 10\n20 30\n",
            3,
            "matrix row 2 has more than 3 entries: \"4\" is one too many",
        ),
        (
            "3\n0 1 2\n1 0 3\n2 x 0\n0 100\n5 10\n20 30\n",
            4,
            "the travel time from node 2 to node 1 must be an integer, found \"x\"",
        ),
        (
            "3\n0 1 2.5\n1 0 3\n2 3 0\n0 100\n5 10\n20 30\n",
            2,
            "must be an integer, found \"2.5\"",
        ),
        (
            "3\n0 1 2\n1 0 -3\n2 3 0\n0 100\n5 10\n20 30\n",
            3,
            "the travel time from node 1 to node 2 must not be negative, found -3",
        ),
        (
            "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n-5 10\n20 30\n",
            6,
            "the earliest time of node 1 must not be negative",
        ),
        (
            "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n5 10\n30 20\n",
            7,
            "the window of node 2 closes at 20 before it opens at 30",
        ),
        (
            "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n5 10 15\n20 30\n",
            6,
            "expected \"earliest latest\" for node 1",
        ),
        (
            "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n5\n20 30\n",
            6,
            "expected \"earliest latest\" for node 1",
        ),
        (
            "3\n0 1 2\n1 0 3\n2 3 0\n0 99999999999999999999\n5 10\n20 30\n",
            5,
            "the latest time of node 0, \"99999999999999999999\", does not fit a 64-bit integer",
        ),
        (
            "3\n0 1 4611686018427387904\n1 0 3\n2 3 0\n0 100\n5 10\n20 30\n",
            2,
            "is too large: sums of times along a tour could overflow",
        ),
        (
            "3\n0 1 2\n1 0 3\n2 3 0\n0 100\n5 10\n20 30\n\n7 8\n",
            9,
            "expected the end of the file after the 3 windows, found \"7 8\"",
        ),
    ] {
        let e = tw_err(text);
        assert_eq!(e.source_name, "t.txt");
        assert_err(&e, line, needle);
    }
}

// ---------------------------------------------------------------------------------------------
// The constraints CSV.

const HEAD: &str = "kind,stop,other,earliest,latest,value\n";

fn csv_err(text: &str, nodes: usize) -> TsplibError {
    match parse_constraints(text, "c.csv", nodes) {
        Ok(c) => panic!("expected an error, read {c:?}"),
        Err(e) => e,
    }
}

#[test]
fn constraints_csv_reads_every_kind() {
    let text = format!(
        "{HEAD}\
         # comment line\n\
         window,3,,100,200,\n\
         \n\
         window, 3 ,,10,20,\n\
         service,3,,,,5\n\
         optional,4,,,,70\n\
         before,1,4,,,\n\
         before,2,3,5,15,\n\
         edge,4,2,,,\n\
         depot,2,,,,\n\
         start,,,,,-30\n\
         path,,,,,\n"
    );
    let c = parse_constraints(&text, "c.csv", 4).unwrap();
    assert_eq!(c.nodes(), 4);
    let w = |earliest, latest| wend::constraints::Window { earliest, latest };
    // Sorted by opening time whatever the row order.
    assert_eq!(c.windows[2], vec![w(10, 20), w(100, 200)]);
    assert!(c.windows[0].is_empty());
    assert_eq!(c.service, vec![0, 0, 5, 0]);
    assert_eq!(c.penalty, vec![None, None, None, Some(70)]);
    let p = |before, after, min_lag, max_lag| wend::constraints::Precedence {
        before,
        after,
        min_lag,
        max_lag,
    };
    assert_eq!(
        c.precedence,
        vec![p(0, 3, None, None), p(1, 2, Some(5), Some(15))]
    );
    assert_eq!(c.fixed_edges, vec![(3, 1)]);
    assert_eq!(c.depot, 1);
    assert_eq!(c.start_time, -30);
    assert_eq!(c.route, wend::constraints::Route::Path);
    // Columns in another order, unused ones left out; defaults where nothing is said.
    let c = parse_constraints("stop,kind\n2,depot\n", "c.csv", 3).unwrap();
    assert_eq!(c.depot, 1);
    let c = parse_constraints(HEAD, "c.csv", 3).unwrap();
    assert_eq!(c, wend::constraints::Constraints::new(3));
    // A byte-order mark and CRLF endings.
    let c = parse_constraints("\u{feff}kind,stop\r\ndepot,3\r\n", "c.csv", 3).unwrap();
    assert_eq!(c.depot, 2);
}

#[test]
fn constraints_csv_errors() {
    let e = csv_err(&format!("{HEAD}window,2,,9,3,\n"), 3);
    assert_eq!(
        e.to_string(),
        "c.csv:2: the window of stop 2 closes at 3 before it opens at 9"
    );
    for (rows, line, needle) in [
        ("fence,1,,,,\n", 2, "unknown kind \"fence\""),
        (",1,,,,\n", 2, "unknown kind \"\""),
        (
            "depot,0,,,,\n",
            2,
            "stop 0 is not a stop of this instance (stops are 1 to 3)",
        ),
        ("depot,4,,,,\n", 2, "stop 4 is not a stop of this instance"),
        ("edge,1,9,,,\n", 2, "other 9 is not a stop of this instance"),
        (
            "depot,x,,,,\n",
            2,
            "stop \"x\" is not a stop number (1 to 3)",
        ),
        ("depot,-1,,,,\n", 2, "stop \"-1\" is not a stop number"),
        ("window,1,,a,5,\n", 2, "earliest \"a\" is not an integer"),
        ("service,1,,,,2.5\n", 2, "value \"2.5\" is not an integer"),
        (
            "start,,,,,99999999999999999999\n",
            2,
            "value \"99999999999999999999\" does not fit a 64-bit integer",
        ),
        (
            "service,1,,,,-2\n",
            2,
            "the value of a service row must not be negative",
        ),
        (
            "optional,1,,,,-2\n",
            2,
            "the value of a optional row must not be negative",
        ),
        (
            "window,1,,5,,\n",
            2,
            "a window row needs latest, which is empty",
        ),
        (
            "before,1,,,,\n",
            2,
            "a before row needs other, which is empty",
        ),
        ("service,1,,,,\n", 2, "a service row needs value"),
        (
            "window,1,2,5,6,\n",
            2,
            "a window row takes no other, found \"2\"",
        ),
        (
            "start,1,,,,5\n",
            2,
            "a start row takes no stop, found \"1\"",
        ),
        ("path,,,,,1\n", 2, "a path row takes no value"),
        ("edge,2,2,,,\n", 2, "a edge row pairs stop 2 with itself"),
        (
            "before,1,2,9,3,\n",
            2,
            "the most time between stops 1 and 2 (3) is less than the least (9)",
        ),
        (
            "depot,1\n",
            2,
            "expected 6 cells as in the header (line 1), found 2",
        ),
        // Duplicates: the second row is the one named.
        (
            "window,1,,5,6,\n\nwindow,1,,5,6,\n",
            4,
            "duplicate row: line 2 already gives this window",
        ),
        (
            "service,1,,,,3\nservice,1,,,,4\n",
            3,
            "line 2 already gives this service",
        ),
        (
            "optional,2,,,,3\noptional,2,,,,3\n",
            3,
            "line 2 already gives this optional",
        ),
        (
            "before,1,2,,,\n# note\nbefore,1,2,1,,\n",
            4,
            "line 2 already gives this before",
        ),
        (
            "edge,1,2,,,\nedge,1,2,,,\n",
            3,
            "line 2 already gives this edge",
        ),
        (
            "depot,1,,,,\ndepot,2,,,,\n",
            3,
            "line 2 already gives this depot",
        ),
        (
            "start,,,,,1\nstart,,,,,1\n",
            3,
            "line 2 already gives this start",
        ),
        (
            "path,,,,,\npath,,,,,\n",
            3,
            "line 2 already gives this path",
        ),
    ] {
        let e = csv_err(&format!("{HEAD}{rows}"), 3);
        assert_eq!(e.source_name, "c.csv");
        assert_err(&e, line, needle);
    }
    // Different windows of one stop, or both directions of a pair, are not duplicates.
    let ok = format!("{HEAD}window,1,,5,6,\nwindow,1,,5,7,\nedge,1,2,,,\nedge,2,1,,,\n");
    assert!(parse_constraints(&ok, "c.csv", 3).is_ok());
    // Header trouble.
    assert_err(&csv_err("", 3), 0, "the file is empty: expected a header");
    assert_err(&csv_err("\n\n", 3), 0, "the file is empty");
    assert_err(
        &csv_err("window,1,,5,6,\n", 3),
        1,
        "the first line must be the header",
    );
    assert_err(
        &csv_err("stop,earliest\n1,2\n", 3),
        1,
        "the header has no kind column",
    );
    assert_err(
        &csv_err("kind,stop,colour\n", 3),
        1,
        "unknown column \"colour\" in the header",
    );
    assert_err(
        &csv_err("kind,stop,stop\n", 3),
        1,
        "column stop named twice in the header",
    );
    assert_err(
        &csv_err("kind,stop\ndepot,1\nwindow,1\n", 3),
        3,
        "a window row needs earliest, which is not a column of the header",
    );
    // Blank CRLF lines between rows count too.
    assert_err(
        &csv_err("kind,stop\r\ndepot,1\r\n\r\n\r\ndepot,9\r\n", 3),
        5,
        "stop 9 is not a stop of this instance",
    );
    // A comment before the header: line numbers still count it.
    assert_err(
        &csv_err("# constraints\nkind,stop\ndepot,7\n", 3),
        3,
        "stop 7 is not a stop of this instance",
    );
}

#[test]
fn constraints_csv_read_from_a_file_name_the_file() {
    let dir = std::env::temp_dir().join(format!("wend-tsplib-csv-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("day.csv");
    std::fs::write(&path, "kind,stop\ndepot,2\ndepot,5\n").unwrap();
    let e = read_constraints(&path, 3).unwrap_err();
    std::fs::remove_dir_all(&dir).unwrap();
    assert_eq!(e.source_name, path.display().to_string());
    assert_err(&e, 3, "stop 5 is not a stop of this instance");
}
