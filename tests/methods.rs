//! Every method behind the one interface: valid tours whose reported length is their real
//! length, never below a published optimum, repeatable from a seed on any number of threads;
//! and the nature-inspired methods against published TSPLIB optima.

use wend::{Cost, Ends, Method, Solver};
use wend_tests::instance;
use wend_tsplib::read_instance;

/// Published optimal tour lengths from the TSPLIB list of optimal solutions (also in
/// `instances/optima.txt`; the ATSP ones from memory of the same list).
const OPTIMA: [(&str, i64); 4] = [
    ("berlin52.tsp", 7542),
    ("kroA100.tsp", 21282),
    ("ftv33.atsp", 1286),
    ("gr24.tsp", 1272),
];

/// The length of `order` summed here, step by step, from the instance's own costs.
fn walk<C: Cost + ?Sized>(cost: &C, order: &[usize], closed: bool) -> i64 {
    let mut total: i64 = order.windows(2).map(|w| cost.cost(w[0], w[1])).sum();
    if closed && order.len() > 1 {
        total += cost.cost(order[order.len() - 1], order[0]);
    }
    total
}

fn is_permutation(order: &[usize], n: usize) -> bool {
    let mut seen = vec![false; n];
    order.len() == n
        && order
            .iter()
            .all(|&v| v < n && !std::mem::replace(&mut seen[v], true))
}

#[test]
fn every_method_gives_a_valid_tour_of_its_reported_length_never_below_the_optimum() {
    for (name, optimum) in OPTIMA {
        let inst = read_instance(&instance(name)).unwrap();
        for method in Method::ALL {
            let s = Solver::new(inst.cost())
                .method(method)
                .seed(3)
                .iterations(20)
                .threads(2)
                .solve()
                .unwrap();
            let order = s.tour.order();
            assert!(is_permutation(order, inst.dimension), "{name} {method:?}");
            assert_eq!(
                s.length,
                walk(inst.cost(), order, true),
                "{name} {method:?}"
            );
            assert!(
                s.length >= optimum,
                "{name} {method:?}: {} < {optimum}",
                s.length
            );
        }
    }
}

#[test]
fn the_same_seed_gives_the_same_tour_on_one_and_two_threads() {
    let inst = read_instance(&instance("kroA100.tsp")).unwrap();
    let atsp = read_instance(&instance("ftv33.atsp")).unwrap();
    for method in [Method::Acs, Method::MaxMin, Method::Anneal, Method::Lk] {
        for (cost, what) in [(inst.cost(), "kroA100"), (atsp.cost(), "ftv33")] {
            let run = |threads: usize| {
                Solver::new(cost)
                    .method(method)
                    .seed(11)
                    .iterations(15)
                    .threads(threads)
                    .solve()
                    .unwrap()
            };
            let (a, b, c) = (run(1), run(2), run(2));
            assert_eq!(a.tour.order(), b.tour.order(), "{what} {method:?}");
            assert_eq!(b.tour.order(), c.tour.order(), "{what} {method:?}");
            assert_eq!(a.length, b.length);
        }
    }
}

#[test]
fn paths_from_every_iterative_method_keep_their_ends() {
    let inst = read_instance(&instance("berlin52.tsp")).unwrap();
    let n = inst.dimension;
    for method in [Method::Acs, Method::MaxMin, Method::Anneal] {
        for ends in [Ends::Open, Ends::Start(4), Ends::StartEnd(4, 9)] {
            let s = Solver::new(inst.cost())
                .method(method)
                .ends(ends)
                .seed(1)
                .iterations(10)
                .solve()
                .unwrap();
            let order = s.tour.order();
            assert!(is_permutation(order, n), "{method:?} {ends:?}");
            assert!(ends.respected_by(order), "{method:?} {ends:?}");
            assert_eq!(
                s.length,
                walk(inst.cost(), order, false),
                "{method:?} {ends:?}"
            );
        }
    }
}

#[test]
fn nature_inspired_methods_reach_published_optima_within_fixed_budgets() {
    // berlin52: 7542 and kroA100: 21282, TSPLIB list of optimal solutions. Budgets are
    // iteration counts, so the check does not depend on the machine's speed.
    for (name, optimum) in [("berlin52.tsp", 7542), ("kroA100.tsp", 21282)] {
        let inst = read_instance(&instance(name)).unwrap();
        let colony = Solver::new(inst.cost())
            .method(Method::MaxMin)
            .seed(0)
            .iterations(30)
            .target(optimum)
            .solve()
            .unwrap();
        assert_eq!(colony.length, optimum, "{name}: MAX-MIN ant system with LK");
        let annealing = Solver::new(inst.cost())
            .method(Method::Anneal)
            .seed(0)
            .iterations(600)
            .solve()
            .unwrap();
        // Simulated annealing without a local search as strong as LK: within 1 %.
        assert!(
            annealing.length * 100 <= optimum * 101,
            "{name}: annealing {} against {optimum}",
            annealing.length
        );
    }
}

#[test]
fn parameters_are_set_by_name_and_bad_ones_refused() {
    let inst = read_instance(&instance("berlin52.tsp")).unwrap();
    let s = Solver::new(inst.cost())
        .method(Method::MaxMin)
        .set("local-search", "2opt")
        .and_then(|s| s.set("colony-size", "5"))
        .unwrap()
        .seed(2)
        .iterations(5)
        .solve()
        .unwrap();
    assert!(s.length >= 7542);
    for (method, key, value) in [
        (Method::MaxMin, "evaporation", "1.5"),
        (Method::Acs, "no-such-key", "1"),
        (Method::Anneal, "schedule", "fast"),
        (Method::Lk, "depth", "3"),
    ] {
        let e = Solver::new(inst.cost())
            .method(method)
            .set(key, value)
            .err()
            .unwrap_or_else(|| panic!("{method:?} {key}={value} accepted"));
        assert!(e.to_string().contains(method.name()), "{e}");
    }
}
