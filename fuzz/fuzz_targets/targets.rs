//! The sky targets CSV reader on arbitrary UTF-8 text, against the built-in demo profile;
//! every target that parses must have finite, in-range values, a priority from 1 to 9, a
//! window that ends after it starts and an ordered roll range within a half turn.
#![no_main]

use libfuzzer_sys::fuzz_target;
use std::sync::OnceLock;
use wend_sky::Profile;

fn profile() -> &'static Profile {
    static PROFILE: OnceLock<Profile> = OnceLock::new();
    PROFILE.get_or_init(wend_sky::demo_profile)
}

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(targets) = wend_sky::parse_targets(text, "fuzz.csv", profile()) else {
        return;
    };
    for t in &targets {
        assert!(t.ra_deg.is_finite() && (0.0..360.0).contains(&t.ra_deg));
        assert!(t.dec_deg.is_finite() && (-90.0..=90.0).contains(&t.dec_deg));
        assert!(t.duration_s.is_finite() && t.duration_s >= 0.0);
        assert!(t.instrument < profile().instruments.len());
        assert!((1..=wend_sky::LOWEST_PRIORITY).contains(&t.priority));
        if let Some((start, end)) = t.window {
            assert!(start.jd.is_finite() && end.jd.is_finite() && start.jd < end.jd);
        }
        if let Some((lo, hi)) = t.roll_range_deg {
            assert!(-180.0 <= lo && lo <= hi && hi <= 180.0);
        }
    }
});
