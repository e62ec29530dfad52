//! The sky links CSV reader on arbitrary UTF-8 text, against six fixed targets; every set of
//! links that parses must point inside the pool, link no target to itself, name no pair twice,
//! give each target at most one group successor and predecessor, carry ordered finite lags
//! (none on groups) and go round in no cycle.
#![no_main]

use libfuzzer_sys::fuzz_target;
use std::sync::OnceLock;
use wend_sky::{LinkKind, Target};

fn targets() -> &'static [Target] {
    static TARGETS: OnceLock<Vec<Target>> = OnceLock::new();
    TARGETS.get_or_init(|| {
        ["A", "B", "C", "D", "E", "F"]
            .iter()
            .enumerate()
            .map(|(k, id)| Target::new(*id, 30.0 * k as f64, 0.0, 600.0))
            .collect()
    })
}

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(links) = wend_sky::parse_links(text, "fuzz.csv", targets()) else {
        return;
    };
    let n = targets().len();
    assert!(!links.is_empty());
    let mut pairs = std::collections::HashSet::new();
    let (mut next, mut prev) = (vec![0; n], vec![0; n]);
    for l in &links {
        assert!(l.first < n && l.second < n && l.first != l.second);
        assert!(pairs.insert((l.first.min(l.second), l.first.max(l.second))));
        for lag in [l.min_lag_s, l.max_lag_s].into_iter().flatten() {
            assert!(lag.is_finite() && lag >= 0.0);
        }
        if let (Some(lo), Some(hi)) = (l.min_lag_s, l.max_lag_s) {
            assert!(lo <= hi);
        }
        if l.kind == LinkKind::Group {
            assert!(l.min_lag_s.is_none() && l.max_lag_s.is_none());
            next[l.first] += 1;
            prev[l.second] += 1;
        }
    }
    assert!(next.iter().chain(&prev).all(|&c| c <= 1));
    // No cycle: targets can be taken one by one, each with no link from one left.
    let mut left: Vec<usize> = (0..n).collect();
    while !left.is_empty() {
        let free = left.iter().position(|&v| {
            !links
                .iter()
                .any(|l| l.second == v && left.contains(&l.first))
        });
        let Some(free) = free else {
            panic!("a cycle was accepted: {links:?}");
        };
        left.remove(free);
    }
});
