//! The TSPLIB problem reader on arbitrary bytes, read the way `wend solve` reads a file; when
//! the file parses, every cost of a small instance is evaluated and a tiny one is solved, so
//! that values the reader lets through are exercised downstream too.
#![no_main]

use libfuzzer_sys::fuzz_target;
use wend::{Method, Solver};

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let Ok(inst) = wend_tsplib::parse_instance(&text, "fuzz.tsp") else {
        return;
    };
    let cost = inst.cost();
    let n = cost.len();
    assert_eq!(n, inst.dimension, "the oracle's size is the DIMENSION");
    if n <= 64 {
        for i in 0..n {
            for j in 0..n {
                let _ = cost.cost(i, j);
            }
        }
    }
    if (1..=9).contains(&n) {
        let solved = Solver::new(cost)
            .method(Method::TwoOpt)
            .threads(1)
            .runs(1)
            .solve();
        if let Ok(sol) = solved {
            let mut seen = sol.tour.order().to_vec();
            seen.sort_unstable();
            assert!(seen.iter().copied().eq(0..n), "the tour is a permutation");
        }
    }
});
