//! The constraints CSV reader on arbitrary UTF-8 text, for instances of a few sizes: whatever
//! parses names only stops of the instance, keeps every window and lag range ordered and every
//! service time and penalty non-negative.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    for nodes in [1, 4, 100] {
        let Ok(c) = wend_tsplib::parse_constraints(text, "fuzz.csv", nodes) else {
            continue;
        };
        assert_eq!(c.nodes(), nodes, "constraints for every stop");
        assert!(c.depot < nodes, "the depot is a stop");
        for ws in &c.windows {
            for w in ws {
                assert!(w.earliest <= w.latest, "a window opens before it closes");
            }
            assert!(
                ws.windows(2).all(|p| p[0].earliest <= p[1].earliest),
                "windows sorted by opening"
            );
        }
        assert!(c.service.iter().all(|&s| s >= 0), "service is not negative");
        assert!(
            c.penalty.iter().flatten().all(|&p| p >= 0),
            "penalties are not negative"
        );
        for p in &c.precedence {
            assert!(p.before < nodes && p.after < nodes && p.before != p.after);
            if let (Some(lo), Some(hi)) = (p.min_lag, p.max_lag) {
                assert!(lo <= hi, "the lag range is ordered");
            }
        }
        for &(a, b) in &c.fixed_edges {
            assert!(
                a < nodes && b < nodes && a != b,
                "a fixed edge joins two stops"
            );
        }
    }
});
