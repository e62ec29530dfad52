//! Where and when a target may be observed: its solar elongation over a planning horizon and
//! the windows of dates in which it stays inside the observatory's elongation band (section 3
//! of the sky model). A target with no window is reported with its elongation range over the
//! horizon, so that a planner sees why it cannot be scheduled rather than losing it.
//!
//! The band moves with the Sun, about 0.9856° a day, so elongations are sampled every
//! [`SAMPLE_DAYS`] and each crossing of a band edge is refined by bisection to
//! [`EDGE_TOLERANCE_DAYS`]. Between samples the elongation changes by at most about 0.25°,
//! so a window shorter than a sample step can be missed only where the band's width is under
//! that; with a band tens of degrees wide this does not happen.

use super::geometry::{elongation_deg, Vec3};
use super::sun::sun_j2000;
use super::Epoch;

/// Spacing of the elongation samples, days (six hours).
pub const SAMPLE_DAYS: f64 = 0.25;
/// Precision of each window edge, days (about a second).
pub const EDGE_TOLERANCE_DAYS: f64 = 1.0e-5;

/// A stretch of time in which the target stays inside the elongation band.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Window {
    /// First instant inside the band.
    pub start: Epoch,
    /// Last instant inside the band.
    pub end: Epoch,
}

impl Window {
    /// Length of the window, seconds.
    pub fn seconds(&self) -> f64 {
        (self.end.jd - self.start.jd) * 86_400.0
    }
}

/// A target's visibility over a horizon.
#[derive(Clone, Debug, PartialEq)]
pub struct Visibility {
    /// The windows inside the band, in time order.
    pub windows: Vec<Window>,
    /// Smallest solar elongation over the horizon (at the samples and window edges), degrees.
    pub min_elongation_deg: f64,
    /// Largest solar elongation over the horizon (at the samples and window edges), degrees.
    pub max_elongation_deg: f64,
}

/// The solar elongation of direction `u` at `epoch`, degrees.
pub fn elongation_at(u: &Vec3, epoch: Epoch) -> f64 {
    elongation_deg(u, &sun_j2000(epoch).direction)
}

/// True when `u` is inside the band `[min_deg, max_deg]` at `epoch`.
fn inside(u: &Vec3, epoch: Epoch, (min_deg, max_deg): (f64, f64)) -> bool {
    let e = elongation_at(u, epoch);
    e >= min_deg && e <= max_deg
}

/// The windows in which direction `u` stays inside the band `[min_deg, max_deg]` from `start`
/// for `horizon_days` days, with its elongation range. A horizon that is not a positive
/// finite number of days, or a band that is not finite, gives no window and a NaN range.
pub fn visibility(u: &Vec3, start: Epoch, horizon_days: f64, band: (f64, f64)) -> Visibility {
    let mut vis = Visibility {
        windows: Vec::new(),
        min_elongation_deg: f64::NAN,
        max_elongation_deg: f64::NAN,
    };
    let usable = horizon_days.is_finite()
        && horizon_days > 0.0
        && start.jd.is_finite()
        && band.0.is_finite()
        && band.1.is_finite();
    if !usable {
        return vis;
    }
    let end_jd = start.jd + horizon_days;
    let mut note = |e: f64| {
        vis.min_elongation_deg = vis.min_elongation_deg.min(e);
        vis.max_elongation_deg = vis.max_elongation_deg.max(e);
    };
    let steps = (horizon_days / SAMPLE_DAYS).ceil().max(1.0) as usize;
    let at = |k: usize| Epoch {
        jd: (start.jd + k as f64 * SAMPLE_DAYS).min(end_jd),
    };
    // The edge between a sample at `a` (inside == was_in) and one at `b` (the other state).
    let edge = |mut a: Epoch, mut b: Epoch, was_in: bool| {
        while b.jd - a.jd > EDGE_TOLERANCE_DAYS {
            let mid = Epoch {
                jd: 0.5 * (a.jd + b.jd),
            };
            if inside(u, mid, band) == was_in {
                a = mid;
            } else {
                b = mid;
            }
        }
        // The last instant of the old state, or the first of the new one.
        if was_in {
            a
        } else {
            b
        }
    };
    let mut prev = at(0);
    note(elongation_at(u, prev));
    let mut open: Option<Epoch> = inside(u, prev, band).then_some(prev);
    for k in 1..=steps {
        let now = at(k);
        note(elongation_at(u, now));
        let now_in = inside(u, now, band);
        match (open, now_in) {
            (None, true) => open = Some(edge(prev, now, false)),
            (Some(s), false) => {
                vis.windows.push(Window {
                    start: s,
                    end: edge(prev, now, true),
                });
                open = None;
            }
            _ => {}
        }
        prev = now;
    }
    if let Some(s) = open {
        vis.windows.push(Window {
            start: s,
            end: Epoch { jd: end_jd },
        });
    }
    vis
}

#[cfg(test)]
mod tests {
    use super::super::geometry::unit_vector;
    use super::super::sun::OBLIQUITY_J2000_DEG;
    use super::*;

    const START: Epoch = Epoch { jd: 2_461_465.5 }; // 2027-03-01 0h

    #[test]
    fn the_ecliptic_pole_stays_at_ninety_degrees_all_year() {
        // The Sun moves on the ecliptic, so the ecliptic pole (J2000: RA 270°, Dec 90° − ε)
        // is 90° from it at every date: a geometric fact. The low-precision formulas put the
        // Sun on the ecliptic of date, which precession turns by under 0.02° over the years
        // near J2000.
        // A narrow band around 90° (not the demo's) holds it all year.
        let pole = unit_vector(270.0, 90.0 - OBLIQUITY_J2000_DEG);
        let v = visibility(&pole, START, 365.25, (89.5, 90.5));
        assert_eq!(v.windows.len(), 1);
        assert!((v.windows[0].seconds() - 365.25 * 86_400.0).abs() < 1.0);
        assert!((v.min_elongation_deg - 90.0).abs() < 0.05, "{v:?}");
        assert!((v.max_elongation_deg - 90.0).abs() < 0.05, "{v:?}");
    }

    #[test]
    fn a_point_on_the_ecliptic_is_in_the_band_twice_a_year_for_about_fifty_seven_days() {
        // On the ecliptic, the elongation is the difference of ecliptic longitudes, which
        // grows by the Sun's mean motion, 0.9856°/day (360° in 365.25 days), varying by about
        // ±3.4 % over the year with the orbit's eccentricity (0.0167). A band 97°–153° wide
        // 56° is crossed once on each side of the Sun: two windows of about 56 / 0.9856 =
        // 56.8 days, each within 3.4 % of it. Geometric and orbital facts, rounded.
        let equinox = unit_vector(0.0, 0.0);
        let v = visibility(&equinox, START, 365.25, (97.0, 153.0));
        assert_eq!(v.windows.len(), 2, "{v:?}");
        for w in &v.windows {
            let days = w.seconds() / 86_400.0;
            assert!((days - 56.8).abs() < 56.8 * 0.035, "{days} days");
        }
        assert!(
            v.min_elongation_deg < 1.0 && v.max_elongation_deg > 179.0,
            "{v:?}"
        );
    }

    #[test]
    fn window_edges_are_on_the_band_edges() {
        let target = unit_vector(150.0, 20.0);
        let v = visibility(&target, START, 200.0, (97.0, 153.0));
        assert!(!v.windows.is_empty());
        for w in &v.windows {
            for edge in [w.start, w.end] {
                let interior = edge.jd > START.jd + 1e-9 && edge.jd < START.jd + 200.0 - 1e-9;
                if interior {
                    let e = elongation_at(&target, edge);
                    // 1e-5 day moves the Sun by 1e-5°: the edge is within that of the band.
                    assert!((e - 97.0).abs() < 1e-4 || (e - 153.0).abs() < 1e-4, "{e}");
                }
            }
            let mid = Epoch {
                jd: 0.5 * (w.start.jd + w.end.jd),
            };
            let e = elongation_at(&target, mid);
            assert!((97.0..=153.0).contains(&e), "{e}");
        }
    }

    #[test]
    fn a_target_near_the_sun_has_no_window_and_says_how_close_it_gets() {
        // Two days of horizon: a target 10° from the Sun stays far below a 97° band edge.
        let sun = sun_j2000(START).direction;
        let (ra, dec) = super::super::geometry::ra_dec_deg(&sun);
        let near = unit_vector((ra + 10.0) % 360.0, dec);
        let v = visibility(&near, START, 2.0, (97.0, 153.0));
        assert!(v.windows.is_empty());
        assert!(v.max_elongation_deg < 15.0, "{v:?}");
    }

    #[test]
    fn bad_horizons_give_no_window_and_no_panic() {
        let u = unit_vector(10.0, 10.0);
        for h in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            let v = visibility(&u, START, h, (97.0, 153.0));
            assert!(v.windows.is_empty() && v.min_elongation_deg.is_nan());
        }
        assert!(visibility(&u, START, 1.0, (f64::NAN, 153.0))
            .windows
            .is_empty());
    }
}
