//! Solar radiation pressure on the sunshield, the torque it exerts, the momentum the reaction
//! wheels store, and the propellant a momentum dump costs (sky model, section 7).
//!
//! Sign convention: the Sun direction `s` is the unit vector from the spacecraft toward the
//! Sun; the shield normal `n` points out of the shield's Sun side; the force pushes away from
//! the Sun. SI units throughout except distances to the Sun, in astronomical units.

use super::geometry::{cross, dot, normalize, Attitude, Vec3};
use super::Profile;

/// Nominal total solar irradiance at 1 AU, watts per square metre (IAU 2015 Resolution B3).
pub const SOLAR_IRRADIANCE_W_M2: f64 = 1361.0;

/// Speed of light in vacuum, metres per second (exact by the SI definition of the metre).
pub const SPEED_OF_LIGHT_M_S: f64 = 299_792_458.0;

/// Standard acceleration of gravity `g0`, metres per second squared (exact by definition).
pub const STANDARD_GRAVITY_M_S2: f64 = 9.80665;

/// Solar radiation pressure at `distance_au` astronomical units from the Sun, newtons per
/// square metre: `P = Φ / (c R²)` with Φ = [`SOLAR_IRRADIANCE_W_M2`] at 1 AU and
/// c = [`SPEED_OF_LIGHT_M_S`]. Not finite for a zero or non-finite distance.
pub fn solar_pressure_n_m2(distance_au: f64) -> f64 {
    SOLAR_IRRADIANCE_W_M2 / (SPEED_OF_LIGHT_M_S * distance_au * distance_au)
}

/// Force on a flat plate, newtons, in the frame of `normal` and `sun` (O. Montenbruck and
/// E. Gill, *Satellite Orbits*, section 3.4, flat-plate model):
/// `F = −P S cos γ [(1 − ρs) s + 2 (ρs cos γ + ρd/3) n]` with `cos γ = s · n`, for
/// `pressure_n_m2` P (N/m²), `area_m2` S (m²), unit normal `normal` n of the Sun side, Sun
/// direction `sun` s (both normalised here), specular and diffuse reflectivities `specular`
/// ρs and `diffuse` ρd (dimensionless, 0 to 1). Zero when the Sun side is not lit
/// (`cos γ ≤ 0`) or a direction is zero or not finite.
pub fn flat_plate_force_n(
    pressure_n_m2: f64,
    area_m2: f64,
    normal: &Vec3,
    sun: &Vec3,
    specular: f64,
    diffuse: f64,
) -> Vec3 {
    let (Some(n), Some(s)) = (normalize(normal), normalize(sun)) else {
        return [0.0; 3];
    };
    let cos_g = dot(&s, &n);
    if cos_g <= 0.0 {
        return [0.0; 3];
    }
    let k = -pressure_n_m2 * area_m2 * cos_g;
    let a = 1.0 - specular;
    let b = 2.0 * (specular * cos_g + diffuse / 3.0);
    [
        k * (a * s[0] + b * n[0]),
        k * (a * s[1] + b * n[1]),
        k * (a * s[2] + b * n[2]),
    ]
}

/// Solar-pressure force on the profile's shield, body frame, newtons, for the attitude
/// `attitude`, the Sun direction `sun` (inertial, from the spacecraft toward the Sun) and the
/// Sun's distance `distance_au` (AU).
pub fn shield_force_body_n(
    profile: &Profile,
    attitude: &Attitude,
    sun: &Vec3,
    distance_au: f64,
) -> Vec3 {
    flat_plate_force_n(
        solar_pressure_n_m2(distance_au),
        profile.shield_area_m2,
        &profile.shield_normal,
        &attitude.to_body(sun),
        profile.specular_reflectivity,
        profile.diffuse_reflectivity,
    )
}

/// Solar-pressure torque about the centre of mass, body frame, newton metres:
/// `τ = r_cp × F` with `r_cp` = [`Profile::pressure_offset_m`] and `F` from
/// [`shield_force_body_n`].
pub fn solar_torque_body_nm(
    profile: &Profile,
    attitude: &Attitude,
    sun: &Vec3,
    distance_au: f64,
) -> Vec3 {
    cross(
        &profile.pressure_offset_m,
        &shield_force_body_n(profile, attitude, sun, distance_au),
    )
}

/// [`solar_torque_body_nm`] turned to inertial (J2000) axes with the attitude
/// (`τ_inertial = A τ_body`), newton metres.
pub fn solar_torque_nm(
    profile: &Profile,
    attitude: &Attitude,
    sun: &Vec3,
    distance_au: f64,
) -> Vec3 {
    attitude.to_inertial(&solar_torque_body_nm(profile, attitude, sun, distance_au))
}

/// Stored momentum after a dwell of `dt_s` seconds under the constant inertial torque
/// `torque_nm` (N·m), starting from `h_nms` (N·m·s, inertial): `H + τ Δt`, N·m·s.
pub fn accumulate_nms(h_nms: &Vec3, torque_nm: &Vec3, dt_s: f64) -> Vec3 {
    [
        h_nms[0] + torque_nm[0] * dt_s,
        h_nms[1] + torque_nm[1] * dt_s,
        h_nms[2] + torque_nm[2] * dt_s,
    ]
}

/// Propellant to dump the momentum `h_nms` (N·m·s) with a thruster couple of moment arm
/// `arm_m` (m) and specific impulse `isp_s` (s), kilograms: `m = |H| / (L · Isp · g0)` with
/// g0 = [`STANDARD_GRAVITY_M_S2`]. `None` when the arm or the specific impulse is not positive
/// and finite, or `h_nms` is not finite.
pub fn dump_propellant_kg(h_nms: &Vec3, arm_m: f64, isp_s: f64) -> Option<f64> {
    let valid = |v: f64| v.is_finite() && v > 0.0;
    if !valid(arm_m) || !valid(isp_s) || !h_nms.iter().all(|c| c.is_finite()) {
        return None;
    }
    Some(dot(h_nms, h_nms).sqrt() / (arm_m * isp_s * STANDARD_GRAVITY_M_S2))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::norm;
    use crate::Instrument;

    fn close(a: &Vec3, b: &Vec3, tol: f64) -> bool {
        (0..3).all(|k| (a[k] - b[k]).abs() <= tol)
    }

    #[test]
    fn pressure_at_one_au() {
        // 1361 W/m² (IAU 2015 Resolution B3) / c: 4.54 µN/m² to three significant figures.
        assert!((solar_pressure_n_m2(1.0) - 4.54e-6).abs() < 0.005e-6);
        // Inverse square: at 2 AU, a quarter.
        assert!((solar_pressure_n_m2(2.0) * 4.0 - solar_pressure_n_m2(1.0)).abs() < 1e-20);
    }

    #[test]
    fn flat_plate_limits() {
        // Radiation-pressure basics (Montenbruck & Gill, section 3.4): a black plate facing
        // the Sun takes the photons' momentum flux, P S, away from the Sun; a perfect mirror
        // twice that along −n; a mirror tilted by γ feels 2 P S cos²γ along −n.
        let s = [0.0, 0.0, 1.0];
        let f = flat_plate_force_n(2.0, 3.0, &s, &s, 0.0, 0.0);
        assert!(close(&f, &[0.0, 0.0, -6.0], 1e-12));
        let f = flat_plate_force_n(2.0, 3.0, &s, &s, 1.0, 0.0);
        assert!(close(&f, &[0.0, 0.0, -12.0], 1e-12));
        let n = [0.6, 0.0, 0.8]; // cos γ = 0.8
        let f = flat_plate_force_n(2.0, 3.0, &n, &s, 1.0, 0.0);
        let want = 2.0 * 2.0 * 3.0 * 0.64;
        assert!(close(&f, &[-want * 0.6, 0.0, -want * 0.8], 1e-12));
        // Lambertian plate facing the Sun: P S (1 + 2/3) along −s.
        let f = flat_plate_force_n(2.0, 3.0, &s, &s, 0.0, 1.0);
        assert!(close(&f, &[0.0, 0.0, -10.0], 1e-12));
        // Sun behind the shield or grazing: no force.
        assert_eq!(
            flat_plate_force_n(2.0, 3.0, &s, &[0.0, 0.0, -1.0], 0.5, 0.1),
            [0.0; 3]
        );
        assert_eq!(
            flat_plate_force_n(2.0, 3.0, &s, &[1.0, 0.0, 0.0], 0.5, 0.1),
            [0.0; 3]
        );
        assert_eq!(
            flat_plate_force_n(2.0, 3.0, &s, &[f64::NAN, 0.0, 1.0], 0.5, 0.1),
            [0.0; 3]
        );
    }

    #[test]
    fn force_pushes_away_from_the_sun() {
        for (n, s) in [
            ([0.6, 0.0, 0.8], [0.0, 0.0, 1.0]),
            ([1.0, 0.0, 0.0], [0.5, 0.5, 0.7]),
        ] {
            let f = flat_plate_force_n(4.54e-6, 64.0, &n, &s, 0.5, 0.1);
            assert!(dot(&f, &s) < 0.0 && dot(&f, &n) < 0.0);
        }
    }

    fn profile() -> Profile {
        Profile {
            name: "test".into(),
            slew_rate_deg_s: 0.5,
            slew_accel_deg_s2: 0.01,
            thermal_warm_s_per_deg: 0.0,
            thermal_cool_s_per_deg: 0.0,
            instruments: vec![Instrument {
                name: "a".into(),
                settle_s: 0.0,
            }],
            setup_s: vec![vec![0.0]],
            elongation_min_deg: 97.0,
            elongation_max_deg: 153.0,
            shield_area_m2: 1.0,
            shield_normal: [1.0, 0.0, 0.0],
            specular_reflectivity: 0.0,
            diffuse_reflectivity: 0.0,
            pressure_offset_m: [0.0, 0.0, 1.5],
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

    #[test]
    fn torque_by_hand() {
        // Boresight along inertial +x, Sun along +y: body x = +y, body y = z × x = +z. A black
        // 1 m² shield facing the Sun (normal body +x) takes F = −P ŝ = −P body x; with r_cp
        // 1.5 m along body z, τ_body = (0, 0, 1.5) × (−P, 0, 0) = (0, −1.5 P, 0), which is
        // −1.5 P along inertial +z.
        let p = profile();
        let Some(att) = Attitude::nominal(&[1.0, 0.0, 0.0], &[0.0, 1.0, 0.0]) else {
            panic!("defined")
        };
        let pr = solar_pressure_n_m2(1.0);
        let tb = solar_torque_body_nm(&p, &att, &[0.0, 1.0, 0.0], 1.0);
        assert!(close(&tb, &[0.0, -1.5 * pr, 0.0], 1e-18));
        let ti = solar_torque_nm(&p, &att, &[0.0, 1.0, 0.0], 1.0);
        assert!(close(&ti, &[0.0, 0.0, -1.5 * pr], 1e-18));
        // The same torque computed directly on inertial axes.
        let r = att.to_inertial(&p.pressure_offset_m);
        let f = att.to_inertial(&shield_force_body_n(&p, &att, &[0.0, 1.0, 0.0], 1.0));
        assert!(close(&cross(&r, &f), &ti, 1e-18));
        // A day of it: H = τ Δt.
        let h = accumulate_nms(&[1.0, 0.0, 0.0], &ti, 86_400.0);
        assert!(close(&h, &[1.0, 0.0, -1.5 * pr * 86_400.0], 1e-12));
    }

    #[test]
    fn dump_propellant_worked_example() {
        // Sky model, section 7: |H| = 100 N·m·s, L = 1 m, Isp = 220 s → 0.04635 kg
        // (100 / (220 · 9.80665)).
        let m = dump_propellant_kg(&[60.0, 0.0, -80.0], 1.0, 220.0).unwrap_or(f64::NAN);
        assert!((norm(&[60.0, 0.0, -80.0]) - 100.0).abs() < 1e-12);
        assert!((m - 0.04635).abs() < 0.000005, "{m}");
        assert_eq!(dump_propellant_kg(&[1.0, 0.0, 0.0], 0.0, 220.0), None);
        assert_eq!(dump_propellant_kg(&[1.0, 0.0, 0.0], 1.0, f64::NAN), None);
        assert_eq!(dump_propellant_kg(&[f64::NAN, 0.0, 0.0], 1.0, 220.0), None);
    }
}
