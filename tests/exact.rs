//! The dynamic programme over subsets (Held and Karp 1962) against published optima.

use wend::Tour;
use wend::{dynamic_programme, DpError, DEFAULT_DP_MEMORY};
use wend_tests::instance;
use wend_tsplib::read_instance;

/// Runs the dynamic programme on `name` from `instances/` and checks that the order is a tour
/// of the instance whose length is the one reported.
fn dp_length(name: &str) -> i64 {
    let inst = read_instance(&instance(name)).unwrap();
    let t = dynamic_programme(inst.cost(), DEFAULT_DP_MEMORY, &mut || false).unwrap();
    assert_eq!(t.order.first(), Some(&0), "{name}");
    let tour = Tour::new(t.order, inst.dimension).unwrap();
    assert_eq!(tour.length(inst.cost()), Ok(t.length), "{name}");
    t.length
}

// Optimal lengths: TSPLIB 95 list of optimal tour lengths (Reinelt).
#[test]
fn symmetric_optima() {
    assert_eq!(dp_length("burma14.tsp"), 3323); // TSPLIB 95 list of optimal tour lengths
    assert_eq!(dp_length("ulysses16.tsp"), 6859); // TSPLIB 95 list of optimal tour lengths
    assert_eq!(dp_length("gr17.tsp"), 2085); // TSPLIB 95 list of optimal tour lengths
    assert_eq!(dp_length("gr21.tsp"), 2707); // TSPLIB 95 list of optimal tour lengths
}

#[test]
fn asymmetric_optimum() {
    assert_eq!(dp_length("br17.atsp"), 39); // TSPLIB 95 list of optimal tour lengths (ATSP)
}

// 24 nodes, the largest size accepted: 23 * 2^22 table entries (386 MB). Several seconds, so
// left out of the default run: `cargo test --release -p wend-tests --test exact -- --ignored`.
#[test]
#[ignore]
fn largest_size_gr24() {
    assert_eq!(dp_length("gr24.tsp"), 1272); // TSPLIB 95 list of optimal tour lengths
}

#[test]
fn larger_instances_are_refused() {
    let inst = read_instance(&instance("fri26.tsp")).unwrap();
    let e = dynamic_programme(inst.cost(), DEFAULT_DP_MEMORY, &mut || false).unwrap_err();
    assert_eq!(e, DpError::TooManyNodes { n: 26, limit: 24 });
}
