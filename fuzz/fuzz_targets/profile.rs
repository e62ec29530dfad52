//! The observatory profile reader (TOML) on arbitrary UTF-8 text; a profile that parses is
//! then used to play a three-target plan over one day, so that values the reader lets
//! through (tiny rates, extreme torques) are exercised by the model too.
#![no_main]

use libfuzzer_sys::fuzz_target;
use wend_sky::schedule::Context;
use wend_sky::{Epoch, Target};

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(profile) = wend_sky::parse_profile(text, "fuzz.toml") else {
        return;
    };
    if profile.instruments.is_empty() {
        return;
    }
    let target = |id: &str, ra_deg: f64, dec_deg: f64| Target {
        id: id.to_string(),
        ra_deg,
        dec_deg,
        duration_s: 600.0,
        instrument: 0,
        priority: wend_sky::DEFAULT_PRIORITY,
        window: None,
        roll_range_deg: None,
    };
    // Spread around the sky near the ecliptic so that some are inside any sensible band.
    let targets = [
        target("a", 100.0, 20.0),
        target("b", 160.0, -10.0),
        target("c", 250.0, 5.0),
    ];
    let start = Epoch { jd: 2_461_000.5 };
    if let Ok(ctx) = Context::new(&profile, &targets, start, 1.0) {
        let _ = ctx.simulate(&[0, 1, 2]);
    }
});
