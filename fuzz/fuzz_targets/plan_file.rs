//! The sky plan file reader on arbitrary UTF-8 text, against six fixed targets; every plan
//! that parses must be non-empty, name each target at most once, carry finite rolls within a
//! half turn and start times that increase down the file, on lines that never go back (a lone
//! carriage return ends a row but not a line, so two rows may share one).
#![no_main]

use libfuzzer_sys::fuzz_target;
use std::sync::OnceLock;
use wend_sky::Target;

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
    let Ok(plan) = wend_sky::parse_plan_file(text, "fuzz.csv", targets()) else {
        return;
    };
    assert!(!plan.is_empty());
    let mut seen = vec![false; targets().len()];
    let mut last_start: Option<f64> = None;
    let mut last_line = 0;
    for o in &plan {
        assert!(o.target < seen.len() && !seen[o.target]);
        seen[o.target] = true;
        assert!(o.roll_deg.is_finite() && (-180.0..=180.0).contains(&o.roll_deg));
        assert!(o.line >= last_line);
        last_line = o.line;
        if let Some(s) = o.start {
            assert!(s.jd.is_finite());
            assert!(last_start.is_none_or(|l| s.jd > l));
            last_start = Some(s.jd);
        }
    }
});
