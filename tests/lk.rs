//! Method `lk` on the TSPLIB instances in `instances/`, against published optima.
//!
//! Optimal lengths: TSPLIB 95 list of optimal solutions (Reinelt), as copied into
//! `instances/optima.txt`; berlin52 7542, kroA100 21282 and ch150 6528 are from that list.

use std::collections::BTreeMap;
use wend::{Method, Solver, StopReason, Tour};
use wend_tests::{all_instances, instance, instances_dir};
use wend_tsplib::{parse_optima, read_instance};

fn optima() -> BTreeMap<String, i64> {
    let path = instances_dir().join("optima.txt");
    let text = std::fs::read_to_string(&path).unwrap();
    parse_optima(&text, "optima.txt").unwrap()
}

// With a kick budget (no time limit, so the run is the same on any machine) `lk` finds the
// published optimum of these three instances.
#[test]
fn reaches_the_published_optimum() {
    for (name, opt) in [
        ("berlin52.tsp", 7542),
        ("kroA100.tsp", 21282),
        ("ch150.tsp", 6528),
    ] {
        let inst = read_instance(&instance(name)).unwrap();
        let sol = Solver::new(inst.cost())
            .method(Method::Lk)
            .seed(1)
            .runs(2)
            .kicks(2_000)
            .threads(2)
            .solve()
            .unwrap();
        assert_eq!(sol.stop_reason, StopReason::IterationBudget);
        assert_eq!(sol.length, opt, "{name}");
    }
}

// Never shorter than the optimum (that would be a cost or bookkeeping bug), and the reported
// length is the recomputed length of a real permutation.
#[test]
fn never_below_the_optimum_on_any_instance() {
    let optima = optima();
    let files = all_instances();
    assert!(files.len() >= 20, "instances/ should hold the test set");
    for path in files {
        let inst = read_instance(&path).unwrap();
        let sol = Solver::new(inst.cost())
            .method(Method::Lk)
            .seed(7)
            .runs(2)
            .kicks(300)
            .threads(2)
            .solve()
            .unwrap();
        let stem = path.file_stem().unwrap().to_str().unwrap();
        let opt = optima[stem];
        let tour = Tour::new(sol.tour.order().to_vec(), inst.dimension).expect("a permutation");
        assert_eq!(tour.length(inst.cost()).unwrap(), sol.length, "{stem}");
        assert!(
            sol.length >= opt,
            "{stem}: {} below the optimum {opt}",
            sol.length
        );
    }
}

// Same seed and kick budget: the same tour with one thread or two.
#[test]
fn same_tour_for_one_and_two_threads() {
    let inst = read_instance(&instance("a280.tsp")).unwrap();
    let run = |threads| {
        Solver::new(inst.cost())
            .method(Method::Lk)
            .seed(5)
            .runs(3)
            .kicks(500)
            .threads(threads)
            .solve()
            .unwrap()
    };
    let (a, b) = (run(1), run(2));
    assert_eq!(a.tour, b.tour);
    assert!(a.length >= 2579); // a280 optimum, TSPLIB 95 list
}

// From 30,000 nodes on coordinates `lk` renumbers the points along a space-filling curve,
// builds its first tour in blocks and searches in parts. The tour comes back in the caller's
// numbering, from node 0, measured on the caller's costs, the same for one and two threads with
// an iteration budget, and near the length expected of Lin–Kernighan.
#[test]
fn a_large_instance_is_solved_in_parts_in_the_callers_numbering() {
    use rand::{Rng, SeedableRng};
    let n = 40_000;
    let side = 1_000_000.0;
    let mut rng = rand_pcg::Pcg64::seed_from_u64(11);
    let points: Vec<[f64; 2]> = (0..n)
        .map(|_| [rng.r#gen::<f64>() * side, rng.r#gen::<f64>() * side])
        .collect();
    let cost = wend::CoordCost::plane(wend::Metric::Euc2d, &points).unwrap();
    let solve = |threads| {
        let seen = std::sync::Arc::new(std::sync::Mutex::new(Vec::new()));
        let log = std::sync::Arc::clone(&seen);
        let solution = Solver::new(&cost)
            .method(Method::Lk)
            .seed(4)
            .runs(1)
            .kicks(1)
            .threads(threads)
            .on_improvement(move |step| log.lock().unwrap().push((step.length, step.seconds)))
            .solve()
            .unwrap();
        // What the observer saw is the trace, times included: both count the renumbering.
        let trace: Vec<(i64, f64)> = solution
            .trace
            .iter()
            .map(|s| (s.length, s.seconds))
            .collect();
        assert_eq!(*seen.lock().unwrap(), trace);
        solution
    };
    let one = solve(1);
    let two = solve(2);
    assert_eq!(one.tour.order(), two.tour.order());
    assert_eq!(one.tour.order()[0], 0);
    assert!(Tour::new(one.tour.order().to_vec(), n).is_ok());
    assert_eq!(
        wend::closed_length(&cost, one.tour.order()).unwrap(),
        one.length
    );
    // 0.7124 * sqrt(n * A): the asymptotic optimal length of uniform random points
    // (Beardwood–Halton–Hammersley constant, estimate of Applegate, Bixby, Chvátal, Cook and
    // others; from memory). Lin–Kernighan lies about 2% above the Held–Karp bound on such
    // instances (Johnson and McGeoch; from memory), the bound below the optimum.
    let yardstick = 0.7124 * (n as f64 * side * side).sqrt();
    let excess = one.length as f64 / yardstick - 1.0;
    assert!(
        excess > -0.01 && excess < 0.04,
        "{:.2}% above the yardstick",
        100.0 * excess
    );
}
