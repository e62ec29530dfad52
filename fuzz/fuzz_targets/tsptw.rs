//! The problem reader that tells the time-window layout from TSPLIB by content, on arbitrary
//! bytes read the way `wend solve` reads a file: whichever layout parses, the constraints are
//! for as many stops as the costs have, every window opens before it closes, every cost of a
//! small instance can be evaluated, and no sum of times along a tour of a time-window file can
//! overflow.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let Ok(p) = wend_tsplib::parse_problem(&text, "fuzz.txt") else {
        return;
    };
    let cost = p.instance.cost();
    let n = cost.len();
    assert_eq!(
        n, p.instance.dimension,
        "the oracle's size is the node count"
    );
    assert_eq!(p.constraints.nodes(), n, "constraints for every node");
    assert!(p.constraints.depot < n, "the depot is a node");
    for w in p.constraints.windows.iter().flatten() {
        assert!(w.earliest <= w.latest, "a window opens before it closes");
    }
    for &(a, b) in &p.constraints.fixed_edges {
        assert!(a < n && b < n && a != b, "a fixed edge joins two nodes");
    }
    if n <= 64 {
        for i in 0..n {
            for j in 0..n {
                let _ = cost.cost(i, j);
            }
        }
    }
    if !p.constraints.windows.iter().all(Vec::is_empty) {
        // The tour 0, 1, ..., n-1, 0 and the latest window bound: their sum must not overflow.
        let mut total: i64 = 0;
        for i in 0..n {
            total = total
                .checked_add(cost.cost(i, (i + 1) % n))
                .expect("travel times along a tour fit i64");
        }
        let latest = p
            .constraints
            .windows
            .iter()
            .flatten()
            .map(|w| w.latest)
            .max();
        total
            .checked_add(latest.unwrap_or(0))
            .expect("a tour's travel plus a window bound fits i64");
    }
});
