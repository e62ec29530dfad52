//! Slew times and the directed cost of going from one target to the next.
//!
//! The slew is rest-to-rest about the eigen-axis with a rate limit ω and an acceleration limit
//! `a` (bang–coast–bang). The directed cost adds the destination instrument's settling, a
//! thermal term that depends on the direction of the change in solar elongation (the Sun angle
//! on the shield), and the
//! instrument-change time (sky model, sections 5 and 6). Costs are asymmetric because of the
//! last two. Angles are degrees, times seconds.

use rayon::prelude::*;
use thiserror::Error;

use super::geometry::{eigen_axis_angle_deg, elongation_deg, unit_vector, Attitude, Vec3};
use super::sun::sun_j2000;
use super::{Epoch, Profile, Target};

/// Why a cost could not be computed.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum SlewCostError {
    /// The matrix would pass the memory ceiling ([`crate::memory`]).
    #[error(transparent)]
    Memory(#[from] wend::memory::MemoryError),
    /// The slew limits are not positive and finite.
    #[error("slew limits must be positive and finite: rate {rate_deg_s} deg/s, acceleration {accel_deg_s2} deg/s^2")]
    SlewLimits {
        /// Rate limit given, degrees per second.
        rate_deg_s: f64,
        /// Acceleration limit given, degrees per second squared.
        accel_deg_s2: f64,
    },
    /// A time constant of the profile is negative or not finite.
    #[error("{what} must be finite and at least 0, got {value}")]
    BadValue {
        /// Which value.
        what: &'static str,
        /// The value given (seconds, or seconds per degree).
        value: f64,
    },
    /// The setup table is not square over the instruments, or holds a negative or
    /// non-finite time.
    #[error(
        "the setup table must be {instruments} x {instruments} with finite times of at least 0 s"
    )]
    SetupTable {
        /// Number of instruments in the profile.
        instruments: usize,
    },
    /// The Sun direction is zero or not finite.
    #[error("the Sun direction is not a finite non-zero vector")]
    SunDirection,
    /// A target names an instrument the profile does not have.
    #[error("target {id} (index {index}) uses instrument {instrument}, but the profile has {instruments}")]
    UnknownInstrument {
        /// Index of the target in the list.
        index: usize,
        /// The target's identifier.
        id: String,
        /// The instrument index it names.
        instrument: usize,
        /// Number of instruments in the profile.
        instruments: usize,
    },
    /// A target's attitude is undefined: its coordinates are not finite, or the Sun lies on
    /// its boresight or opposite it.
    #[error("target {id} (index {index}): attitude undefined (coordinates not finite, or the Sun on or opposite the boresight)")]
    UndefinedAttitude {
        /// Index of the target in the list.
        index: usize,
        /// The target's identifier.
        id: String,
    },
    /// A cost does not fit in `i64` milliseconds.
    #[error(
        "the cost from target {from} to target {to} ({cost_s:e} s) does not fit in i64 milliseconds"
    )]
    TooLarge {
        /// Index of the origin target.
        from: usize,
        /// Index of the destination target.
        to: usize,
        /// The cost, seconds.
        cost_s: f64,
    },
}

/// Rest-to-rest bang–coast–bang slew time through `angle_deg` (degrees, ≥ 0) with the rate
/// limit `rate_deg_s` (ω, degrees per second) and acceleration limit `accel_deg_s2` (a, degrees
/// per second squared), seconds: `2 √(φ/a)` when `φ ≤ ω²/a` (the rate never reaches ω),
/// otherwise `φ/ω + ω/a`. The branches meet at `φ = ω²/a` with `t = 2ω/a`. `None` when the
/// angle is negative or not finite, or a limit is not positive and finite.
pub fn slew_time_s(angle_deg: f64, rate_deg_s: f64, accel_deg_s2: f64) -> Option<f64> {
    let valid_limit = |v: f64| v.is_finite() && v > 0.0;
    let valid_angle = angle_deg.is_finite() && angle_deg >= 0.0;
    if !(valid_angle && valid_limit(rate_deg_s) && valid_limit(accel_deg_s2)) {
        return None;
    }
    if angle_deg <= rate_deg_s * rate_deg_s / accel_deg_s2 {
        Some(2.0 * (angle_deg / accel_deg_s2).sqrt())
    } else {
        Some(angle_deg / rate_deg_s + rate_deg_s / accel_deg_s2)
    }
}

/// Thermal settling for a change of solar elongation from `from_elongation_deg` (θ_i) to
/// `to_elongation_deg` (θ_j), degrees, in seconds: `k_warm · max(0, θ_i − θ_j) + k_cool ·
/// max(0, θ_j − θ_i)` with `warm_s_per_deg` (`k_warm`) and `cool_s_per_deg` (`k_cool`) in
/// seconds per degree. Turning toward the Sun (elongation falling) is the warm direction.
pub fn thermal_s(
    from_elongation_deg: f64,
    to_elongation_deg: f64,
    warm_s_per_deg: f64,
    cool_s_per_deg: f64,
) -> f64 {
    let toward_sun = from_elongation_deg - to_elongation_deg;
    warm_s_per_deg * toward_sun.max(0.0) + cool_s_per_deg * (-toward_sun).max(0.0)
}

/// A target's pointing at one Sun position: what the directed cost needs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Pointing {
    /// Nominal-roll attitude (boresight on the target, Sun in the body x–z plane, +x side).
    pub attitude: Attitude,
    /// Solar elongation `θ` of the boresight, degrees.
    pub elongation_deg: f64,
    /// Index of the instrument into [`Profile::instruments`].
    pub instrument: usize,
}

impl Pointing {
    /// The pointing of `target` with the Sun at `sun` (direction from the spacecraft toward
    /// the Sun, J2000 axes, any non-zero length). `None` when the attitude is undefined (see
    /// [`Attitude::nominal`]).
    pub fn new(target: &Target, sun: &Vec3) -> Option<Pointing> {
        let u = unit_vector(target.ra_deg, target.dec_deg);
        let attitude = Attitude::nominal(&u, sun)?;
        Some(Pointing {
            attitude,
            elongation_deg: elongation_deg(&u, sun),
            instrument: target.instrument,
        })
    }
}

/// Checks the profile's slew limits, time constants and setup table.
pub(crate) fn check_profile(profile: &Profile) -> Result<(), SlewCostError> {
    if slew_time_s(0.0, profile.slew_rate_deg_s, profile.slew_accel_deg_s2).is_none() {
        return Err(SlewCostError::SlewLimits {
            rate_deg_s: profile.slew_rate_deg_s,
            accel_deg_s2: profile.slew_accel_deg_s2,
        });
    }
    let check = |what: &'static str, value: f64| {
        if value.is_finite() && value >= 0.0 {
            Ok(())
        } else {
            Err(SlewCostError::BadValue { what, value })
        }
    };
    check("thermal_warm_s_per_deg", profile.thermal_warm_s_per_deg)?;
    check("thermal_cool_s_per_deg", profile.thermal_cool_s_per_deg)?;
    for inst in &profile.instruments {
        check("settle_s", inst.settle_s)?;
    }
    let n = profile.instruments.len();
    let square = profile.setup_s.len() == n
        && profile
            .setup_s
            .iter()
            .all(|row| row.len() == n && row.iter().all(|v| v.is_finite() && *v >= 0.0));
    if !square {
        return Err(SlewCostError::SetupTable { instruments: n });
    }
    Ok(())
}

/// The directed cost `c(i→j)` with a profile already checked and instruments in range.
pub(crate) fn cost_checked_s(profile: &Profile, from: &Pointing, to: &Pointing) -> f64 {
    let angle = eigen_axis_angle_deg(&from.attitude, &to.attitude);
    let slew =
        slew_time_s(angle, profile.slew_rate_deg_s, profile.slew_accel_deg_s2).unwrap_or(f64::NAN);
    let settle = profile.instruments[to.instrument].settle_s;
    let thermal = thermal_s(
        from.elongation_deg,
        to.elongation_deg,
        profile.thermal_warm_s_per_deg,
        profile.thermal_cool_s_per_deg,
    );
    let setup = profile.setup_s[from.instrument][to.instrument];
    slew + settle + thermal + setup
}

/// The directed cost of going from pointing `from` (i) to pointing `to` (j), seconds:
/// `c(i→j) = t_slew(φ_ij) + settle(inst_j) + k_warm · max(0, θ_i − θ_j) +
/// k_cool · max(0, θ_j − θ_i) + setup[inst_i][inst_j]`, with `φ_ij` the eigen-axis angle and
/// `θ` the solar elongation.
/// Errors when the profile is invalid or an instrument index is out of range (reported with
/// index 0 and an empty identifier, as pointings carry none).
pub fn transition_cost_s(
    profile: &Profile,
    from: &Pointing,
    to: &Pointing,
) -> Result<f64, SlewCostError> {
    check_profile(profile)?;
    let instruments = profile.instruments.len();
    for p in [from, to] {
        if p.instrument >= instruments {
            return Err(SlewCostError::UnknownInstrument {
                index: 0,
                id: String::new(),
                instrument: p.instrument,
                instruments,
            });
        }
    }
    Ok(cost_checked_s(profile, from, to))
}

/// Integer asymmetric cost matrix for `targets` with the Sun direction `sun` held fixed
/// (from the spacecraft toward the Sun, J2000 axes): `m[i][j]` is [`transition_cost_s`] from
/// target `i` to target `j` in milliseconds, rounded to the nearest (halves away from zero);
/// the diagonal is 0.
pub fn cost_matrix_ms_with_sun(
    profile: &Profile,
    targets: &[Target],
    sun: &Vec3,
) -> Result<Vec<Vec<i64>>, SlewCostError> {
    check_profile(profile)?;
    if !(sun.iter().all(|c| c.is_finite()) && sun.iter().any(|c| *c != 0.0)) {
        return Err(SlewCostError::SunDirection);
    }
    let instruments = profile.instruments.len();
    let mut pointings = Vec::with_capacity(targets.len());
    for (index, t) in targets.iter().enumerate() {
        if t.instrument >= instruments {
            return Err(SlewCostError::UnknownInstrument {
                index,
                id: t.id.clone(),
                instrument: t.instrument,
                instruments,
            });
        }
        let p = Pointing::new(t, sun).ok_or_else(|| SlewCostError::UndefinedAttitude {
            index,
            id: t.id.clone(),
        })?;
        pointings.push(p);
    }
    let n = targets.len();
    wend::memory::check(wend::memory::square(n, 8), || {
        format!("the slew cost matrix of {n} targets")
    })?;
    let mut m = vec![vec![0i64; n]; n];
    // Rows are independent: built in parallel, the first bad cell (by row) reported.
    m.par_iter_mut()
        .enumerate()
        .try_for_each(|(i, row)| -> Result<(), SlewCostError> {
            for (j, cell) in row.iter_mut().enumerate() {
                if i == j {
                    continue;
                }
                let cost_s = cost_checked_s(profile, &pointings[i], &pointings[j]);
                let ms = (cost_s * 1000.0).round();
                // i64::MAX is about 9.22e18; stay clearly inside it.
                if !(ms.is_finite() && ms.abs() < 9.0e18) {
                    return Err(SlewCostError::TooLarge {
                        from: i,
                        to: j,
                        cost_s,
                    });
                }
                *cell = ms as i64;
            }
            Ok(())
        })?;
    Ok(m)
}

/// [`cost_matrix_ms_with_sun`] with the Sun of `epoch` ([`sun_j2000`]), held fixed for the
/// whole matrix.
pub fn cost_matrix_ms(
    profile: &Profile,
    targets: &[Target],
    epoch: Epoch,
) -> Result<Vec<Vec<i64>>, SlewCostError> {
    cost_matrix_ms_with_sun(profile, targets, &sun_j2000(epoch).direction)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Instrument;

    fn profile(warm: f64, cool: f64, setup: Vec<Vec<f64>>, settle: [f64; 2]) -> Profile {
        Profile {
            name: "test".into(),
            slew_rate_deg_s: 0.5,
            slew_accel_deg_s2: 0.01,
            thermal_warm_s_per_deg: warm,
            thermal_cool_s_per_deg: cool,
            instruments: vec![
                Instrument {
                    name: "a".into(),
                    settle_s: settle[0],
                },
                Instrument {
                    name: "b".into(),
                    settle_s: settle[1],
                },
            ],
            setup_s: setup,
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

    fn target(id: &str, ra: f64, dec: f64, instrument: usize) -> Target {
        Target {
            id: id.into(),
            ra_deg: ra,
            dec_deg: dec,
            duration_s: 600.0,
            instrument,
            priority: crate::DEFAULT_PRIORITY,
            window: None,
            roll_range_deg: None,
        }
    }

    #[test]
    fn slew_branches_by_hand() {
        // ω = 0.5°/s, a = 0.01°/s²: ω²/a = 25°.
        // 4°: triangular, 2 √(4 / 0.01) = 40 s.
        assert_eq!(slew_time_s(4.0, 0.5, 0.01), Some(40.0));
        // 100°: trapezoidal, 100 / 0.5 + 0.5 / 0.01 = 200 + 50 = 250 s.
        let t = slew_time_s(100.0, 0.5, 0.01).unwrap_or(f64::NAN);
        assert!((t - 250.0).abs() < 1e-9);
        assert_eq!(slew_time_s(0.0, 0.5, 0.01), Some(0.0));
    }

    #[test]
    fn slew_branches_meet_at_rate_squared_over_accel() {
        // Continuity at φ = ω²/a = 25°, where t = 2ω/a = 100 s, from both sides.
        let at = slew_time_s(25.0, 0.5, 0.01).unwrap_or(f64::NAN);
        assert!((at - 100.0).abs() < 1e-9);
        for phi in [25.0 - 1e-9, 25.0 + 1e-9] {
            let t = slew_time_s(phi, 0.5, 0.01).unwrap_or(f64::NAN);
            assert!((t - 100.0).abs() < 1e-6, "{phi}: {t}");
        }
        // Triangular below (time grows like the square root), linear above: slope 1/ω.
        let above = slew_time_s(35.0, 0.5, 0.01).unwrap_or(f64::NAN);
        assert!((above - 120.0).abs() < 1e-9);
    }

    #[test]
    fn slew_rejects_bad_input() {
        assert_eq!(slew_time_s(-1.0, 0.5, 0.01), None);
        assert_eq!(slew_time_s(f64::NAN, 0.5, 0.01), None);
        assert_eq!(slew_time_s(1.0, 0.0, 0.01), None);
        assert_eq!(slew_time_s(1.0, 0.5, f64::INFINITY), None);
        assert_eq!(slew_time_s(1.0, f64::NAN, 0.01), None);
    }

    #[test]
    fn thermal_depends_on_direction() {
        // k_warm = 3 s/°, k_cool = 1 s/°: from elongation 120° to 100° (toward the Sun, the
        // warm direction) costs 3 · 20 = 60 s; back, away from the Sun, 1 · 20 = 20 s.
        assert_eq!(thermal_s(120.0, 100.0, 3.0, 1.0), 60.0);
        assert_eq!(thermal_s(100.0, 120.0, 3.0, 1.0), 20.0);
        assert_eq!(thermal_s(95.0, 95.0, 3.0, 1.0), 0.0);
    }

    #[test]
    fn cost_by_hand() {
        // Sun along +x. Target 1 at the north pole (elongation 90°), target 2 on the equator
        // at RA 90° (elongation 90°). Nominal roll keeps x on the Sun for both,
        // so the rotation is 90° about x: slew 90 / 0.5 + 0.5 / 0.01 = 230 s. Settle of
        // instrument b 7 s, setup a→b 11 s, no thermal term (equal elongation): 248 s.
        let p = profile(3.0, 1.0, vec![vec![0.0, 11.0], vec![13.0, 0.0]], [5.0, 7.0]);
        let sun = [1.0, 0.0, 0.0];
        let (Some(a), Some(b)) = (
            Pointing::new(&target("p", 0.0, 90.0, 0), &sun),
            Pointing::new(&target("q", 90.0, 0.0, 1), &sun),
        ) else {
            panic!("defined")
        };
        let c = transition_cost_s(&p, &a, &b).unwrap_or(f64::NAN);
        assert!((c - 248.0).abs() < 1e-9, "{c}");
        // Back: settle a 5 s, setup b→a 13 s: 248 s as well.
        let c = transition_cost_s(&p, &b, &a).unwrap_or(f64::NAN);
        assert!((c - 248.0).abs() < 1e-9, "{c}");
    }

    #[test]
    fn matrix_asymmetric_by_thermal_term() {
        // Sun along +x; targets at elongation 60° and 120°, one instrument used. Turning
        // toward the Sun (120° → 60°) costs k_warm · 60 = 180 s of thermal settling, away
        // (60° → 120°) k_cool · 60 = 60 s: the two directions differ by exactly 120 s.
        let p = profile(3.0, 1.0, vec![vec![0.0, 0.0], vec![0.0, 0.0]], [5.0, 5.0]);
        let targets = [target("near", 60.0, 0.0, 0), target("far", 120.0, 0.0, 0)];
        let m = cost_matrix_ms_with_sun(&p, &targets, &[1.0, 0.0, 0.0]);
        let Ok(m) = m else { panic!("{m:?}") };
        assert_eq!(m[0][0], 0);
        assert_eq!(m[1][0] - m[0][1], 120_000);
    }

    #[test]
    fn turning_toward_the_sun_costs_the_warm_rate() {
        // Sun along +x; both targets on the equator, at elongation 120° (RA 120°) and 100°
        // (RA 100°). Nominal roll keeps x in the equatorial plane for both, so the slew is
        // 20° about the pole: triangular (20° < ω²/a = 25°), 2 √(20 / 0.01) = 89.4427191 s.
        // Settle 7 s (instrument b), no setup, and 120° → 100° turns toward the Sun:
        // k_warm · 20 = 3 · 20 = 60 s. Total 156.4427191 s. The way back costs k_cool · 20 =
        // 20 s of thermal settling instead.
        let p = profile(3.0, 1.0, vec![vec![0.0, 0.0], vec![0.0, 0.0]], [7.0, 7.0]);
        let sun = [1.0, 0.0, 0.0];
        let (Some(from), Some(to)) = (
            Pointing::new(&target("far", 120.0, 0.0, 1), &sun),
            Pointing::new(&target("near", 100.0, 0.0, 1), &sun),
        ) else {
            panic!("defined")
        };
        let slew = 2.0 * 2000f64.sqrt();
        let c = transition_cost_s(&p, &from, &to).unwrap_or(f64::NAN);
        assert!((c - (slew + 7.0 + 60.0)).abs() < 1e-9, "{c}");
        let back = transition_cost_s(&p, &to, &from).unwrap_or(f64::NAN);
        assert!((back - (slew + 7.0 + 20.0)).abs() < 1e-9, "{back}");
    }

    #[test]
    fn matrix_asymmetric_by_setup_term() {
        let p = profile(0.0, 0.0, vec![vec![0.0, 30.0], vec![2.0, 0.0]], [5.0, 5.0]);
        let targets = [target("x", 10.0, 20.0, 0), target("y", 200.0, -40.0, 1)];
        let m = cost_matrix_ms_with_sun(&p, &targets, &[0.3, 0.8, 0.1]);
        let Ok(m) = m else { panic!("{m:?}") };
        assert_eq!(m[0][1] - m[1][0], 28_000);
    }

    #[test]
    fn matrix_symmetric_without_thermal_and_instrument_terms() {
        let p = profile(0.0, 0.0, vec![vec![0.0, 0.0], vec![0.0, 0.0]], [9.0, 9.0]);
        let targets: Vec<Target> = (0..12)
            .map(|k| {
                target(
                    &format!("t{k}"),
                    29.0 * k as f64,
                    -70.0 + 12.5 * k as f64,
                    k % 2,
                )
            })
            .collect();
        let m = cost_matrix_ms(&p, &targets, Epoch { jd: 2_461_000.5 });
        let Ok(m) = m else { panic!("{m:?}") };
        for (i, row) in m.iter().enumerate() {
            for (j, &c) in row.iter().enumerate() {
                assert!((c - m[j][i]).abs() <= 1, "{i} {j}");
                if i != j {
                    assert!(c >= 9000);
                }
            }
        }
    }

    #[test]
    fn matrix_errors() {
        let p = profile(0.0, 0.0, vec![vec![0.0, 0.0], vec![0.0, 0.0]], [9.0, 9.0]);
        let sun = [1.0, 0.0, 0.0];
        // A target on the Sun itself: attitude undefined.
        let on_sun = [target("ok", 90.0, 0.0, 0), target("sun", 0.0, 0.0, 0)];
        assert_eq!(
            cost_matrix_ms_with_sun(&p, &on_sun, &sun),
            Err(SlewCostError::UndefinedAttitude {
                index: 1,
                id: "sun".into()
            })
        );
        let nan = [target("nan", f64::NAN, 0.0, 0)];
        assert!(matches!(
            cost_matrix_ms_with_sun(&p, &nan, &sun),
            Err(SlewCostError::UndefinedAttitude { index: 0, .. })
        ));
        let bad_inst = [target("i", 90.0, 0.0, 2)];
        assert!(matches!(
            cost_matrix_ms_with_sun(&p, &bad_inst, &sun),
            Err(SlewCostError::UnknownInstrument { instrument: 2, .. })
        ));
        assert_eq!(
            cost_matrix_ms_with_sun(&p, &bad_inst, &[0.0; 3]),
            Err(SlewCostError::SunDirection)
        );
        let mut q = p.clone();
        q.slew_rate_deg_s = f64::NAN;
        assert!(matches!(
            cost_matrix_ms_with_sun(&q, &on_sun, &sun),
            Err(SlewCostError::SlewLimits { .. })
        ));
        let mut q = p.clone();
        q.setup_s = vec![vec![0.0]];
        assert!(matches!(
            cost_matrix_ms_with_sun(&q, &on_sun, &sun),
            Err(SlewCostError::SetupTable { .. })
        ));
        assert_eq!(cost_matrix_ms_with_sun(&p, &[], &sun), Ok(vec![]));
    }
}
