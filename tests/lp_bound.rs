//! The subtour bound of the cutting-plane crate against outside references.
//!
//! - `tests/fixtures/subtour_lp.jsonl`: the subtour LP optimum of each instance, computed
//!   offline by `bench-harness/scripts/subtour_lp.py`, an independent programme (scipy's HiGHS
//!   through `scipy.optimize.linprog`, cuts found by networkx and scipy max flows). The first
//!   line of the file says how it was made.
//! - `instances/optima.txt`: TSPLIB 95's published optimal tour lengths.
//! - `instances/tours/*.opt.tour`: TSPLIB's optimal tours (att48, pr76, a280).
//! - The subtour LP equals the Held–Karp bound (Held and Karp 1970), so the 1-tree ascent's
//!   bound never lies above it.

use std::collections::BTreeMap;
use std::time::Duration;
use wend::{held_karp_bound, AscentOptions, Cost, FnCost, MatrixCost, StopHandle, Tour};
use wend_cuts::{
    branch_and_cut, subtour_bound, BranchCutOptions, BranchCutResult, CutsError, SubtourOptions,
};
use wend_tests::{instance, instances_dir, shortest_tour_by_enumeration};
use wend_tsplib::{parse_optima, read_instance, read_tour};

/// Branch and cut with the default options from `start`, with no stop and no progress.
fn prove<C: Cost + ?Sized>(cost: &C, start: &[usize]) -> BranchCutResult {
    branch_and_cut(
        cost,
        start,
        &BranchCutOptions::default(),
        &StopHandle::new(),
        |_| {},
    )
    .unwrap()
}

fn optima() -> BTreeMap<String, i64> {
    let path = instances_dir().join("optima.txt");
    parse_optima(&std::fs::read_to_string(&path).unwrap(), "optima.txt").unwrap()
}

/// (instance, subtour LP optimum, its ceiling) from the offline reference.
fn reference() -> Vec<(String, f64, i64)> {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join("subtour_lp.jsonl");
    std::fs::read_to_string(&path)
        .unwrap()
        .lines()
        .filter(|l| l.starts_with('{'))
        .map(|l| {
            let v: serde_json::Value = serde_json::from_str(l).unwrap();
            (
                v["instance"].as_str().unwrap().to_string(),
                v["subtour_lp"].as_f64().unwrap(),
                v["subtour_lp_ceil"].as_i64().unwrap(),
            )
        })
        .collect()
}

#[test]
fn the_subtour_bound_matches_an_independent_lp_and_stays_below_the_optima() {
    let optima = optima();
    let refs = reference();
    assert!(
        refs.len() >= 15,
        "the fixture should cover the small instances"
    );
    for (name, want, want_ceil) in refs {
        let inst = read_instance(&instance(&format!("{name}.tsp"))).unwrap();
        let b = subtour_bound(inst.cost(), &SubtourOptions::default(), &StopHandle::new()).unwrap();
        assert!(b.complete, "{name}: ended early ({:?})", b.stopped);
        // Both are LP optima to about 1e-6 relative.
        let tol = 1e-6 * want.abs().max(1.0);
        let subtour = b.subtour_only.unwrap();
        assert!(
            (subtour - want).abs() <= tol,
            "{name}: subtour bound {subtour} against the reference {want}"
        );
        // Blossoms can only raise it.
        assert!(b.lagrangian >= subtour - tol, "{name}: {}", b.lagrangian);
        assert!(b.lower_bound >= want_ceil, "{name}");
        // TSPLIB 95's published optimum.
        let opt = optima[&name];
        assert!(
            b.lower_bound <= opt,
            "{name}: {} above {opt}",
            b.lower_bound
        );
    }
}

#[test]
fn the_one_tree_ascent_never_passes_the_subtour_bound() {
    // The ascent's best bound converges to the Held–Karp value from below (Held and Karp 1970).
    for name in ["eil51", "st70", "kroA100", "gr120"] {
        let inst = read_instance(&instance(&format!("{name}.tsp"))).unwrap();
        let lp =
            subtour_bound(inst.cost(), &SubtourOptions::default(), &StopHandle::new()).unwrap();
        let opts = AscentOptions {
            time_limit: Some(Duration::from_secs(2)),
            max_iterations: Some(3000),
            upper_bound: None,
        };
        let a = held_karp_bound(inst.cost(), &opts, &StopHandle::new()).unwrap();
        assert!(
            a.lower_bound <= lp.lower_bound,
            "{name}: ascent {} above the LP {}",
            a.lower_bound,
            lp.lower_bound
        );
    }
}

#[test]
fn every_cut_holds_for_the_published_optimal_tours() {
    // An optimal tour crosses every proper node set at least twice and meets every blossom;
    // a cut it broke would be a wrong cut (TSPLIB's optimal tours: att48 10628, pr76 108159,
    // a280 2579).
    for (inst, tour) in [
        ("att48.tsp", "att48.opt.tour"),
        ("pr76.tsp", "pr76.opt.tour"),
        ("a280.tsp", "a280.opt.tour"),
    ] {
        let i = read_instance(&instance(inst)).unwrap();
        let t = read_tour(&instances_dir().join("tours").join(tour)).unwrap();
        let t = Tour::new(t.nodes, i.dimension).unwrap();
        let order = t.order().to_vec();
        let b = subtour_bound(i.cost(), &SubtourOptions::default(), &StopHandle::new()).unwrap();
        assert!(!b.cuts.is_empty(), "{inst}: no cuts were needed?");
        let n = i.dimension;
        for cut in &b.cuts {
            let s = &cut.set;
            assert!(!s.is_empty() && s.len() < n, "{inst}: improper set");
            // The tour's side of the cut: how often it crosses the handle and each tooth.
            let mut lhs = 0i64;
            for set in std::iter::once(s).chain(&cut.teeth) {
                let mut inside = vec![false; n];
                for &v in set {
                    inside[v] = true;
                }
                lhs += (0..n)
                    .filter(|&k| inside[order[k]] != inside[order[(k + 1) % n]])
                    .count() as i64;
            }
            // Subtour cut: 2; comb of k teeth: 3k + 1.
            let k = cut.teeth.len() as i64;
            let rhs = if k == 0 { 2 } else { 3 * k + 1 };
            assert!(
                lhs >= rhs,
                "{inst}: the optimal tour breaks {cut:?}: {lhs} < {rhs}"
            );
        }
        // The bound is below the optimal tour's length.
        assert!(b.lower_bound <= t.length(i.cost()).unwrap(), "{inst}");
    }
}

#[test]
fn a_bound_cut_short_is_still_a_bound() {
    // With no time the loop stops after its first solve; the bound of those duals over every
    // edge is still below the complete subtour bound.
    let inst = read_instance(&instance("kroA100.tsp")).unwrap();
    let full = subtour_bound(inst.cost(), &SubtourOptions::default(), &StopHandle::new()).unwrap();
    let short = SubtourOptions {
        time_limit: Some(Duration::ZERO),
        ..SubtourOptions::default()
    };
    let b = subtour_bound(inst.cost(), &short, &StopHandle::new()).unwrap();
    assert!(!b.complete);
    assert_eq!(b.stopped, Some("time_limit"));
    assert!(
        b.lower_bound <= full.lower_bound,
        "{} > {}",
        b.lower_bound,
        full.lower_bound
    );
    let stop = StopHandle::new();
    stop.stop();
    let b = subtour_bound(inst.cost(), &SubtourOptions::default(), &stop).unwrap();
    assert_eq!(b.stopped, Some("stopped"));
    assert!(b.lower_bound <= full.lower_bound);
}

#[test]
fn tiny_and_malformed_inputs_are_refused() {
    for n in 0..3 {
        let m = FnCost::new(n, true, |i: usize, j: usize| (i + j) as i64);
        assert!(matches!(
            subtour_bound(&m, &SubtourOptions::default(), &StopHandle::new()),
            Err(CutsError::TooSmall { .. })
        ));
    }
    // Three nodes, asymmetric: the programme over arcs has the two directed tours as its only
    // points, so its bound is the shorter one's length (found here by enumeration).
    let m = MatrixCost::from_row_major(3, vec![0, 1, 2, 3, 0, 4, 5, 6, 0]).unwrap();
    assert!(!m.is_symmetric());
    let shorter = [[0, 1, 2], [0, 2, 1]]
        .iter()
        .map(|t| (0..3).map(|k| m.cost(t[k], t[(k + 1) % 3])).sum::<i64>())
        .min()
        .unwrap();
    let b = subtour_bound(&m, &SubtourOptions::default(), &StopHandle::new()).unwrap();
    assert_eq!(b.lower_bound, shorter);
    let m = MatrixCost::from_row_major(4, vec![0, 1, 2, 3, 1, 0, 4, 5, 2, 4, 0, 6, 3, 5, 6, 0])
        .unwrap();
    for tour in [vec![0, 1, 2], vec![0, 1, 2, 2], vec![0, 1, 2, 7]] {
        let o = SubtourOptions {
            tour: Some(tour),
            ..SubtourOptions::default()
        };
        assert!(matches!(
            subtour_bound(&m, &o, &StopHandle::new()),
            Err(CutsError::BadTour { n: 4 })
        ));
    }
    // Three nodes have one tour, 0-1-2: 1 + 4 + 2 = 7 (by hand).
    let m = MatrixCost::from_row_major(3, vec![0, 1, 2, 1, 0, 4, 2, 4, 0]).unwrap();
    let b = subtour_bound(&m, &SubtourOptions::default(), &StopHandle::new()).unwrap();
    assert_eq!(b.lower_bound, 7);
    assert!(b.complete);
}

/// A tour of `cost` from the core's Lin–Kernighan-style search, as branch and cut's start.
fn first_tour(cost: &dyn Cost) -> Vec<usize> {
    wend::Solver::new(cost)
        .method(wend::Method::TwoOpt)
        .seed(1)
        .threads(1)
        .solve()
        .unwrap()
        .tour
        .order()
        .to_vec()
}

#[test]
fn branch_and_cut_proves_published_optima() {
    // TSPLIB 95's published optimal lengths (instances/optima.txt), from a 2-opt tour that is
    // usually above them, so the tree has to find better tours as well as the bound.
    let optima = optima();
    for name in [
        "gr17",
        "bays29",
        "dantzig42",
        "eil51",
        "berlin52",
        "st70",
        "eil101",
        "lin105",
    ] {
        let inst = read_instance(&instance(&format!("{name}.tsp"))).unwrap();
        let start = first_tour(inst.cost());
        let r = prove(inst.cost(), &start);
        assert!(r.proven_optimal, "{name}: not proven ({:?})", r.stopped);
        assert_eq!(r.length, optima[name], "{name}");
        assert_eq!(r.lower_bound, r.length);
        let t = Tour::new(r.tour.clone(), inst.dimension).unwrap();
        assert_eq!(
            t.length(inst.cost()).unwrap(),
            r.length,
            "{name}: the tour's own length"
        );
    }
}

#[test]
fn branch_and_cut_agrees_with_enumeration_on_small_random_instances() {
    // Every tour of 8 nodes enumerated ((8−1)!/2 = 2520 tours): the test oracle.
    for seed in 0..25 {
        let n = 8;
        let m = random_costs(n, 99 + seed, true);
        let best = shortest_tour_by_enumeration(&m);
        let start: Vec<usize> = (0..n).collect();
        let r = prove(&m, &start);
        assert!(r.proven_optimal);
        assert_eq!(r.length, best);
    }
}

/// Random integer costs on `n` nodes, 1..=100, symmetric or not, from `seed`.
fn random_costs(n: usize, seed: u64, symmetric: bool) -> MatrixCost {
    let mut state = seed;
    let mut next = move || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 40) as i64 % 100 + 1
    };
    let mut w = vec![0i64; n * n];
    for i in 0..n {
        for j in 0..n {
            if i != j && (!symmetric || j > i) {
                w[i * n + j] = next();
                if symmetric {
                    w[j * n + i] = w[i * n + j];
                }
            }
        }
    }
    MatrixCost::from_row_major(n, w).unwrap()
}

#[test]
fn branch_and_cut_over_arcs_agrees_with_enumeration() {
    // Asymmetric costs, 8 nodes: every directed tour enumerated ((8−1)! = 5040) is the oracle.
    for seed in 0..25 {
        let m = random_costs(8, 1000 + seed, false);
        assert!(!m.is_symmetric());
        let best = shortest_tour_by_enumeration(&m);
        let b = subtour_bound(&m, &SubtourOptions::default(), &StopHandle::new()).unwrap();
        assert!(
            b.lower_bound <= best,
            "seed {seed}: {} > {best}",
            b.lower_bound
        );
        let start: Vec<usize> = (0..8).collect();
        let r = prove(&m, &start);
        assert!(r.proven_optimal, "seed {seed}");
        assert_eq!(r.length, best, "seed {seed}");
        // The tour returned has that length, measured here in its direction.
        let len: i64 = (0..8).map(|k| m.cost(r.tour[k], r.tour[(k + 1) % 8])).sum();
        assert_eq!(len, best, "seed {seed}");
    }
}

#[test]
fn fixed_edges_are_held_in_the_programme() {
    // The oracle for "shortest tour through edge {0, 1}": enumeration on costs where that edge
    // costs a million less (every tour through it is then shorter than every tour without),
    // plus the million back.
    const M: i64 = 1_000_000;
    let mut above_free_optimum = 0;
    for seed in 0..20 {
        let m = random_costs(8, 500 + seed, true);
        let through = FnCost::new(8, true, |i: usize, j: usize| {
            m.cost(i, j) - if (i.min(j), i.max(j)) == (0, 1) { M } else { 0 }
        });
        let fixed_best = shortest_tour_by_enumeration(&through) + M;
        let free = subtour_bound(&m, &SubtourOptions::default(), &StopHandle::new()).unwrap();
        let o = SubtourOptions {
            fixed_edges: vec![(1, 0)],
            ..SubtourOptions::default()
        };
        let b = subtour_bound(&m, &o, &StopHandle::new()).unwrap();
        assert!(b.complete, "seed {seed}");
        assert!(
            b.lower_bound <= fixed_best,
            "seed {seed}: {} > {fixed_best}",
            b.lower_bound
        );
        // More constraints, no lower bound: the programme with the edge held at 1 is a
        // restriction of the free one.
        assert!(b.lagrangian >= free.lagrangian - 1e-6, "seed {seed}");
        if b.lower_bound > shortest_tour_by_enumeration(&m) {
            above_free_optimum += 1;
        }
    }
    // Where the edge is a poor one, the bound proves it: above every free tour's length
    // (impossible if the edge were not held).
    assert!(above_free_optimum >= 5, "{above_free_optimum} of 20");
    // Three fixed edges at one node: no tour.
    let m = random_costs(8, 7, true);
    let o = SubtourOptions {
        fixed_edges: vec![(0, 1), (0, 2), (0, 3)],
        ..SubtourOptions::default()
    };
    assert!(matches!(
        subtour_bound(&m, &o, &StopHandle::new()),
        Err(CutsError::FixedEdgesInfeasible { count: 3 })
    ));
    let o = SubtourOptions {
        fixed_edges: vec![(0, 8)],
        ..SubtourOptions::default()
    };
    assert!(matches!(
        subtour_bound(&m, &o, &StopHandle::new()),
        Err(CutsError::BadFixedEdge { a: 0, b: 8, n: 8 })
    ));
}

#[test]
fn branch_and_cut_cut_short_keeps_a_true_bound() {
    // Two nodes only: no proof for pr76 (its root bound is about 1% under the optimum 108159,
    // TSPLIB 95), but the bound returned stays at or below the optimum and above the subtour
    // bound 105120.
    let inst = read_instance(&instance("pr76.tsp")).unwrap();
    let start = first_tour(inst.cost());
    let o = BranchCutOptions {
        node_limit: Some(2),
        ..BranchCutOptions::default()
    };
    let r = branch_and_cut(inst.cost(), &start, &o, &StopHandle::new(), |_| {}).unwrap();
    assert!(!r.proven_optimal);
    assert_eq!(r.stopped, Some("node_limit"));
    assert!(
        r.lower_bound <= 108159 && r.lower_bound >= 105120,
        "{}",
        r.lower_bound
    );
    assert!(r.length >= 108159);
}
