//! Invariants of the solver on random instances.

use proptest::prelude::*;
use wend::{CoordCost, Cost, MatrixCost, Method, Metric, Solver, Tour};

fn points(n: usize, seed: u64) -> Vec<[f64; 2]> {
    let mut s = seed | 1;
    (0..n)
        .map(|_| {
            let mut r = || {
                s ^= s << 13;
                s ^= s >> 7;
                s ^= s << 17;
                (s % 10_000) as f64
            };
            [r(), r()]
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    // The result is a permutation of all nodes and its reported length is the recomputed one.
    #[test]
    fn result_is_a_permutation_with_its_true_length(n in 0usize..120, seed in any::<u64>(), asym in any::<bool>()) {
        let pts = points(n, seed);
        let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
        let rows: Vec<Vec<i64>> = (0..n).map(|i| (0..n).map(|j| {
            c.cost(i, j) + if asym && i != j { ((i * 31 + j * 7) % 50) as i64 } else { 0 }
        }).collect()).collect();
        let m = MatrixCost::from_rows(&rows).unwrap();
        let sol = Solver::new(&m).seed(seed).runs(2).threads(2).solve().unwrap();
        let tour = Tour::new(sol.tour.order().to_vec(), n);
        prop_assert!(tour.is_ok());
        prop_assert_eq!(tour.unwrap().length(&m).unwrap(), sol.length);
    }

    // Improvement never makes a tour longer: the local search starts its first restart from the
    // greedy tour, so its answer is never longer than greedy's.
    #[test]
    fn local_search_never_loses_to_its_start(n in 10usize..200, seed in any::<u64>()) {
        let pts = points(n, seed);
        let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
        let greedy = Solver::new(&c).method(Method::Greedy).solve().unwrap();
        let improved = Solver::new(&c).runs(1).solve().unwrap();
        prop_assert!(improved.length <= greedy.length);
    }
}
