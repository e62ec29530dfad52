//! Instances shared by the unit tests of several modules.

use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;

/// A random permutation of `0..n`.
pub(crate) fn shuffled(n: usize, seed: u64) -> Vec<usize> {
    let mut rng = Pcg64::seed_from_u64(seed ^ 0xABCD);
    let mut v: Vec<usize> = (0..n).collect();
    for i in (1..n).rev() {
        v.swap(i, rng.gen_range(0..=i));
    }
    v
}

/// An observatory with the sky model page's *demo* values (S = 64 m², r_cp = (0, 0.2, 1.5) m,
/// ρs = 0.5, ρd = 0.1, H_max = 20 N·m·s, band 97°–153°) and two instruments with asymmetric
/// setup times: the same numbers as `instances/sky/demo-profile.toml` where both have them.
pub(crate) fn sky_profile() -> crate::Profile {
    use crate::{Instrument, Profile};
    Profile {
        name: "test observatory".into(),
        slew_rate_deg_s: 0.1,
        slew_accel_deg_s2: 0.001,
        thermal_warm_s_per_deg: 12.0,
        thermal_cool_s_per_deg: 4.0,
        instruments: vec![
            Instrument {
                name: "imager".into(),
                settle_s: 120.0,
            },
            Instrument {
                name: "spectrograph".into(),
                settle_s: 300.0,
            },
        ],
        setup_s: vec![vec![0.0, 240.0], vec![60.0, 0.0]],
        elongation_min_deg: 97.0,
        elongation_max_deg: 153.0,
        shield_area_m2: 64.0,
        shield_normal: [1.0, 0.0, 0.0],
        specular_reflectivity: 0.5,
        diffuse_reflectivity: 0.1,
        pressure_offset_m: [0.0, 0.2, 1.5],
        wheel_limit_nms: 20.0,
        wheel_margin: 0.8,
        thruster_arm_m: 1.0,
        thruster_isp_s: 220.0,
        dump_s: 600.0,
        roll_range_deg: (0.0, 0.0),
        roll_steps: 3,
        start_pointing: None,
        start_momentum_nms: [0.0; 3],
    }
}

/// `n` targets uniform on the sphere with dwells of 10 to 60 minutes and random instruments
/// of [`sky_profile`], seeded.
pub(crate) fn sky_targets(n: usize, seed: u64) -> Vec<crate::Target> {
    let mut rng = Pcg64::seed_from_u64(seed);
    (0..n)
        .map(|i| {
            let z: f64 = rng.gen_range(-1.0..=1.0);
            crate::Target {
                id: format!("T{i}"),
                ra_deg: rng.gen_range(0.0..360.0),
                dec_deg: z.asin().to_degrees(),
                duration_s: rng.gen_range(600.0..3600.0),
                instrument: rng.gen_range(0..2),
                priority: crate::DEFAULT_PRIORITY,
                window: None,
                roll_range_deg: None,
            }
        })
        .collect()
}
