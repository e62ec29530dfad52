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
        assert_eq!(p.pressure_offset_m, [0.0, 0.035, 0.3]);
        assert_eq!((p.roll_range_deg, p.roll_steps), ((-20.0, 20.0), 3));
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
        // The targets file is plain CSV (pandas reads it with no options).
        assert!(DEMO_TARGETS_CSV.starts_with("id,ra_deg,dec_deg,duration_s,instrument,priority"));
    }

    #[test]
    fn the_demo_targets_are_60_invented_targets_with_priorities_windows_and_links() {
        let p = demo_profile();
        let t = demo_targets(&p);
        assert_eq!(t.len(), 60);
        for (k, target) in t.iter().enumerate() {
            assert_eq!(target.id, format!("LDS-{:03}", k + 1));
            // Dwells of 4 to 14 hours in whole 10 minutes (make_demo_targets.py).
            assert!(
                (14_400.0..=50_400.0).contains(&target.duration_s),
                "{target:?}"
            );
            assert_eq!(target.duration_s % 600.0, 0.0, "{target:?}");
            assert!((1..=3).contains(&target.priority));
        }
        // Counts as in the file (seed 20270301 of the script).
        let mut uses = [0; 3];
        let mut priorities = [0; 4];
        for target in &t {
            uses[target.instrument] += 1;
            priorities[target.priority as usize] += 1;
        }
        assert_eq!(uses, [27, 23, 10]);
        assert_eq!(priorities, [0, 13, 29, 18]);
        assert_eq!(t.iter().filter(|x| x.window.is_some()).count(), 7);
        // The first row as written in the file.
        let at = |s: &str| crate::output::parse_utc(s).unwrap();
        assert_eq!(
            t[0],
            Target {
                id: "LDS-001".to_string(),
                ra_deg: 128.0457,
                dec_deg: -5.7805,
                duration_s: 27_000.0,
                instrument: 2,
                priority: 1,
                window: Some((at("2027-03-10T00:00:00Z"), at("2027-03-17T00:00:00Z"))),
                roll_range_deg: None,
            }
        );
        // The links: a monitoring pair two to four days apart and a back-to-back group.
        let links = demo_links(&t);
        assert_eq!(links.len(), 2);
        assert_eq!((links[0].first, links[0].second), (3, 16));
        assert_eq!(
            (links[0].min_lag_s, links[0].max_lag_s),
            (Some(172_800.0), Some(345_600.0))
        );
        assert_eq!(links[1].kind, crate::LinkKind::Group);
        assert_eq!((links[1].first, links[1].second), (20, 21));
    }
}
