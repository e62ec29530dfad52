//! The built-in demo: the invented "Lantern Deep-Sky Observatory" and 72 invented targets.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. Every value here is invented for the example; none describes a real
//! observatory.
//!
//! The files are embedded in the binary, so the demo works from any directory:
//! `instances/sky/demo-profile.toml` (every key commented with its unit) and
//! `instances/sky/demo-targets.csv`, written by `instances/sky/make_demo_targets.py` (fixed
//! seed): ids `LDS-001` to `LDS-072`, dwells of 13 min to 2 h, about three quarters of the
//! targets inside the 97°–153° elongation band on 2027-03-01 (the plan start the script
//! assumes) and the rest spread over the sky. The band and the shield area (64 m²) are
//! invented for the demo and match no flown or planned observatory: a sun-shaded telescope
//! must keep its shield between the Sun and the optics, so the band starts a little beyond a
//! quarter turn from the Sun and stops well short of the anti-Sun direction.

use crate::{Profile, Target};

/// The demo observatory profile as TOML text (the file `instances/sky/demo-profile.toml`).
pub const DEMO_PROFILE_TOML: &str = include_str!("../../instances/sky/demo-profile.toml");

/// The demo target list as CSV text (the file `instances/sky/demo-targets.csv`).
pub const DEMO_TARGETS_CSV: &str = include_str!("../../instances/sky/demo-targets.csv");

/// The demo's timing links as CSV text (the file `instances/sky/demo-links.csv`).
pub const DEMO_LINKS_CSV: &str = include_str!("../../instances/sky/demo-links.csv");

/// The name the demo files go by in error messages.
const PROFILE_NAME: &str = "demo-profile.toml (built in)";
const TARGETS_NAME: &str = "demo-targets.csv (built in)";
const LINKS_NAME: &str = "demo-links.csv (built in)";

/// The demo observatory profile, parsed from [`DEMO_PROFILE_TOML`].
///
/// # Panics
///
/// Never for the shipped file: it is part of the program, not user input, and a unit test
/// parses it. A broken edit of the file panics here with the reader's message.
pub fn demo_profile() -> Profile {
    match super::parse_profile(DEMO_PROFILE_TOML, PROFILE_NAME) {
        Ok(p) => p,
        Err(e) => panic!("the built-in demo profile is broken: {e}"),
    }
}

/// The demo targets, parsed from [`DEMO_TARGETS_CSV`] against `profile` (normally
/// [`demo_profile`]; another profile must define the instruments `wide_imager`,
/// `slit_spectrograph` and `fast_photometer`).
///
/// # Panics
///
/// When `profile` lacks one of those instruments, with the reader's message; never with the
/// demo profile (a unit test checks).
pub fn demo_targets(profile: &Profile) -> Vec<Target> {
    match super::parse_targets(DEMO_TARGETS_CSV, TARGETS_NAME, profile) {
        Ok(t) => t,
        Err(e) => panic!("the built-in demo targets do not fit this profile: {e}"),
    }
}

/// The demo's timing links over `targets` (normally [`demo_targets`]).
///
/// # Panics
///
/// When `targets` lack a target the links name, with the reader's message; never with the
/// demo targets (a unit test checks).
pub fn demo_links(targets: &[Target]) -> Vec<crate::Link> {
    match crate::links::parse_links(DEMO_LINKS_CSV, LINKS_NAME, targets) {
        Ok(l) => l,
        Err(e) => panic!("the built-in demo links do not fit these targets: {e}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const CAUTION: &str =
        "Plans are planning proposals to be confirmed by the operations team's validated tools.";

    #[test]
    fn the_demo_profile_has_the_model_pages_demo_values() {
        let p = demo_profile();
        assert_eq!(p.name, "Lantern Deep-Sky Observatory");
        assert_eq!((p.elongation_min_deg, p.elongation_max_deg), (97.0, 153.0));
        assert_eq!(p.shield_area_m2, 64.0);
        assert_eq!(p.pressure_offset_m, [0.0, 0.2, 1.5]);
        assert_eq!(p.shield_normal, [1.0, 0.0, 0.0]);
        assert_eq!(
            (p.specular_reflectivity, p.diffuse_reflectivity),
            (0.5, 0.1)
        );
        assert_eq!(p.wheel_limit_nms, 20.0);
        assert_eq!(p.wheel_margin, 0.8);
        assert_eq!(
            (p.thruster_arm_m, p.thruster_isp_s, p.dump_s),
            (1.0, 220.0, 600.0)
        );
        assert_eq!((p.slew_rate_deg_s, p.slew_accel_deg_s2), (0.1, 0.001));
        assert_eq!(
            (p.thermal_warm_s_per_deg, p.thermal_cool_s_per_deg),
            (12.0, 4.0)
        );
        let names: Vec<&str> = p.instruments.iter().map(|i| i.name.as_str()).collect();
        assert_eq!(
            names,
            ["wide_imager", "slit_spectrograph", "fast_photometer"]
        );
        let settles: Vec<f64> = p.instruments.iter().map(|i| i.settle_s).collect();
        assert_eq!(settles, [120.0, 300.0, 90.0]);
        assert_eq!(
            p.setup_s,
            vec![
                vec![0.0, 240.0, 120.0],
                vec![60.0, 0.0, 180.0],
                vec![45.0, 300.0, 0.0],
            ]
        );
    }

    #[test]
    fn the_demo_profile_file_starts_with_the_caution() {
        let first = DEMO_PROFILE_TOML.lines().next().unwrap_or("");
        assert!(first.starts_with("# CAUTION: "), "{first}");
        assert!(first.contains(CAUTION), "{first}");
        assert!(DEMO_TARGETS_CSV.contains(CAUTION));
    }

    #[test]
    fn the_demo_targets_are_72_invented_targets_with_a_mix_of_instruments() {
        let p = demo_profile();
        let t = demo_targets(&p);
        assert_eq!(t.len(), 72);
        for (k, target) in t.iter().enumerate() {
            assert_eq!(target.id, format!("LDS-{:03}", k + 1));
            assert!((600.0..=7200.0).contains(&target.duration_s), "{target:?}");
            assert_eq!(target.duration_s % 60.0, 0.0, "{target:?}");
        }
        let mut uses = [0; 3];
        for target in &t {
            uses[target.instrument] += 1;
        }
        assert_eq!(uses, [34, 18, 20]);
        // Spread over the sky: every quadrant of right ascension and both hemispheres.
        for q in 0..4 {
            let lo = 90.0 * q as f64;
            assert!(
                t.iter().any(|x| x.ra_deg >= lo && x.ra_deg < lo + 90.0),
                "quadrant {q}"
            );
        }
        assert!(t.iter().any(|x| x.dec_deg > 30.0));
        assert!(t.iter().any(|x| x.dec_deg < -30.0));
        // The first row as written in the file.
        assert_eq!(
            t[0],
            Target {
                id: "LDS-001".to_string(),
                ra_deg: 118.5657,
                dec_deg: -0.8963,
                duration_s: 3120.0,
                instrument: 2,
                priority: crate::DEFAULT_PRIORITY,
                window: None,
                roll_range_deg: None,
            }
        );
    }
}
