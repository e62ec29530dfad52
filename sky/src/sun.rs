//! The Sun's direction and distance, from the low-precision solar coordinates of the
//! Astronomical Almanac (section C, "Sun, low precision"; stated accuracy about 0.01° from
//! 1950 to 2050).
//!
//! The Almanac's formula gives coordinates referred to the equator and equinox of date. The
//! targets are ICRS (J2000 axes), so [`sun_j2000`] refers the Sun's ecliptic longitude to the
//! J2000 equinox by the general precession in longitude (`λ_J2000 = λ − 1.396971° T`,
//! `T` in Julian centuries from J2000.0) and uses the J2000 obliquity 23.4392911°.
//!
//! The observatory is taken to sit at the Sun–Earth L2 point, on the Sun–Earth line: the Sun's
//! direction seen from it is the geocentric one, and its distance is the geocentric distance
//! plus [`L2_OFFSET_AU`]. The observatory's orbit about L2 (which shifts the direction by a
//! fraction of a degree) is ignored.

use super::geometry::{unit_vector, Vec3};
use super::Epoch;

/// Julian date of J2000.0 (2000 January 1.5 TT), days.
pub const J2000_JD: f64 = 2_451_545.0;

/// Julian date of the Unix epoch (1970 January 1.0 UTC), days.
pub const UNIX_EPOCH_JD: f64 = 2_440_587.5;

/// TT − UTC, seconds: 32.184 s (TT − TAI) plus 37 leap seconds (TAI − UTC since 2017
/// January 1). Valid from 2017 on until the next leap second; earlier dates are off by up to
/// a few tens of seconds, which moves the Sun by well under 0.001°.
pub const TT_MINUS_UTC_S: f64 = 69.184;

/// Distance of the Sun–Earth L2 point beyond the Earth, astronomical units (about 1.5 million
/// km).
pub const L2_OFFSET_AU: f64 = 0.01;

/// Precession in ecliptic longitude from the equinox of J2000 to the equinox of date, degrees
/// per Julian century.
pub const PRECESSION_DEG_PER_CENTURY: f64 = 1.396971;

/// Obliquity of the ecliptic at J2000.0, degrees.
pub const OBLIQUITY_J2000_DEG: f64 = 23.4392911;

const SECONDS_PER_DAY: f64 = 86_400.0;
const DAYS_PER_CENTURY: f64 = 36_525.0;

impl Epoch {
    /// The epoch of a Unix time `unix_s` (seconds since 1970-01-01T00:00:00 UTC, leap seconds
    /// not counted): `JD(UTC) = unix_s / 86400 + 2440587.5`, plus [`TT_MINUS_UTC_S`] to reach
    /// TT. `None` when `unix_s` is not finite.
    pub fn from_unix_seconds(unix_s: f64) -> Option<Epoch> {
        if !unix_s.is_finite() {
            return None;
        }
        Some(Epoch {
            jd: (unix_s + TT_MINUS_UTC_S) / SECONDS_PER_DAY + UNIX_EPOCH_JD,
        })
    }

    /// The Unix time (seconds since 1970-01-01T00:00:00 UTC, leap seconds not counted) of
    /// this epoch: the inverse of [`Epoch::from_unix_seconds`].
    pub fn to_unix_seconds(self) -> f64 {
        (self.jd - UNIX_EPOCH_JD) * SECONDS_PER_DAY - TT_MINUS_UTC_S
    }

    /// Days since J2000.0 (`n = JD(TT) − 2451545.0`).
    pub fn days_since_j2000(self) -> f64 {
        self.jd - J2000_JD
    }
}

/// The Sun's ecliptic longitude and distance from the Almanac's series.
struct Ecliptic {
    /// Ecliptic longitude, equinox of date, degrees.
    lambda_deg: f64,
    /// Obliquity of date, degrees.
    obliquity_deg: f64,
    /// Geocentric distance, astronomical units.
    distance_au: f64,
}

fn ecliptic(epoch: Epoch) -> Ecliptic {
    let n = epoch.days_since_j2000();
    let l = 280.460 + 0.985_647_4 * n;
    let g = (357.528 + 0.985_600_3 * n).to_radians();
    Ecliptic {
        lambda_deg: l + 1.915 * g.sin() + 0.020 * (2.0 * g).sin(),
        obliquity_deg: 23.439 - 0.000_000_4 * n,
        distance_au: 1.000_14 - 0.016_71 * g.cos() - 0.000_14 * (2.0 * g).cos(),
    }
}

/// Equatorial direction of ecliptic longitude `lambda_deg` (latitude 0) for the obliquity
/// `obliquity_deg`.
fn equatorial(lambda_deg: f64, obliquity_deg: f64) -> (f64, f64) {
    let (sl, cl) = lambda_deg.to_radians().sin_cos();
    let (se, ce) = obliquity_deg.to_radians().sin_cos();
    let ra = (ce * sl).atan2(cl).to_degrees().rem_euclid(360.0);
    let ra = if ra >= 360.0 { 0.0 } else { ra };
    let dec = (se * sl).clamp(-1.0, 1.0).asin().to_degrees();
    (ra, dec)
}

/// The Sun's geocentric position referred to the equator and equinox of date.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SunOfDate {
    /// Right ascension, equinox of date, degrees in [0, 360).
    pub ra_deg: f64,
    /// Declination, equator of date, degrees.
    pub dec_deg: f64,
    /// Geocentric distance, astronomical units.
    pub distance_au: f64,
}

/// The Sun at `epoch`, equator and equinox of date (Astronomical Almanac, "Sun, low
/// precision"): with `n = JD(TT) − 2451545.0`, `L = 280.460° + 0.9856474° n`,
/// `g = 357.528° + 0.9856003° n`, `λ = L + 1.915° sin g + 0.020° sin 2g`,
/// `ε = 23.439° − 0.0000004° n`, `α = atan2(cos ε sin λ, cos λ)`, `δ = asin(sin ε sin λ)`,
/// `R = 1.00014 − 0.01671 cos g − 0.00014 cos 2g` AU. NaN if `epoch.jd` is not finite.
pub fn sun_of_date(epoch: Epoch) -> SunOfDate {
    let e = ecliptic(epoch);
    let (ra_deg, dec_deg) = equatorial(e.lambda_deg, e.obliquity_deg);
    SunOfDate {
        ra_deg,
        dec_deg,
        distance_au: e.distance_au,
    }
}

/// The Sun as the observatory sees it, on J2000 (ICRS) axes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sun {
    /// Unit vector from the observatory toward the Sun, J2000 axes, dimensionless (`s`).
    pub direction: Vec3,
    /// Right ascension of [`Sun::direction`], degrees in [0, 360).
    pub ra_deg: f64,
    /// Declination of [`Sun::direction`], degrees.
    pub dec_deg: f64,
    /// Distance from the Earth's centre, astronomical units.
    pub geocentric_distance_au: f64,
    /// Distance from the observatory at L2 (geocentric distance + [`L2_OFFSET_AU`]),
    /// astronomical units; the orbit about L2 is ignored.
    pub distance_au: f64,
}

/// The Sun at `epoch` on J2000 axes: the Almanac's longitude referred to the J2000 equinox
/// (`λ_J2000 = λ − 1.396971° T`, `T = n / 36525`) and the J2000 obliquity 23.4392911°. The
/// direction is the geocentric one, also valid at L2 (see the module notes). NaN if
/// `epoch.jd` is not finite.
pub fn sun_j2000(epoch: Epoch) -> Sun {
    let e = ecliptic(epoch);
    let t = epoch.days_since_j2000() / DAYS_PER_CENTURY;
    let lambda = e.lambda_deg - PRECESSION_DEG_PER_CENTURY * t;
    let (ra_deg, dec_deg) = equatorial(lambda, OBLIQUITY_J2000_DEG);
    Sun {
        direction: unit_vector(ra_deg, dec_deg),
        ra_deg,
        dec_deg,
        geocentric_distance_au: e.distance_au,
        distance_au: e.distance_au + L2_OFFSET_AU,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::separation_deg;

    /// Rows of `fixtures/sun_astropy.csv`: (JD TT, RA°, Dec°, distance AU).
    fn astropy_sun() -> Vec<[f64; 4]> {
        let text = include_str!("fixtures/sun_astropy.csv");
        let mut rows = Vec::new();
        for line in text.lines().filter(|l| !l.starts_with('#')).skip(1) {
            let v: Vec<f64> = line.split(',').map(|f| f.trim().parse().unwrap()).collect();
            assert_eq!(v.len(), 4, "bad fixture line {line}");
            rows.push([v[0], v[1], v[2], v[3]]);
        }
        rows
    }

    #[test]
    fn meeus_example_25a() {
        // J. Meeus, Astronomical Algorithms, 2nd ed., Example 25.a: 1992 October 13.0 TD
        // (JD 2448908.5), apparent α = 13h13m31.4s = 198.38083°, δ = −7°47′06″ = −7.78500°,
        // R = 0.99766 AU. The Almanac's low-precision formula claims 0.01°.
        let sun = sun_of_date(Epoch { jd: 2_448_908.5 });
        let d_ra = (sun.ra_deg - 198.38083) * (-7.78500f64).to_radians().cos();
        assert!(d_ra.abs() < 0.01, "ra {}", sun.ra_deg);
        assert!((sun.dec_deg - -7.78500).abs() < 0.01, "dec {}", sun.dec_deg);
        assert!(
            (sun.distance_au - 0.99766).abs() < 0.0001,
            "R {}",
            sun.distance_au
        );
    }

    #[test]
    fn j2000_direction_matches_astropy_get_sun() {
        // astropy get_sun (GCRS, J2000 axes), fixture made by sky/scripts/sky_fixtures.py;
        // the Almanac states about 0.01° for its formula.
        let rows = astropy_sun();
        assert!(rows.len() >= 10);
        for [jd, ra, dec, r] in rows {
            let sun = sun_j2000(Epoch { jd });
            let off = separation_deg(&sun.direction, &unit_vector(ra, dec));
            assert!(off < 0.01, "JD {jd}: {off}° from astropy");
            assert!(
                (sun.geocentric_distance_au - r).abs() < 0.0001,
                "JD {jd}: R {} against {r}",
                sun.geocentric_distance_au
            );
            assert!((sun.distance_au - sun.geocentric_distance_au - 0.01).abs() < 1e-12);
        }
    }

    #[test]
    fn of_date_differs_from_j2000_by_precession() {
        // Precession in longitude, about 50.3″ a year (sky model, section 2): by 2027 the
        // equinox of date is about 0.37° from J2000's, so the two directions must differ by
        // about that much (the Sun's motion along the ecliptic is nearly all longitude).
        let epoch = Epoch { jd: 2_461_533.0 }; // 2027 May 7.5 TT
        let of_date = sun_of_date(epoch);
        let j2000 = sun_j2000(epoch);
        let sep = separation_deg(
            &unit_vector(of_date.ra_deg, of_date.dec_deg),
            &j2000.direction,
        );
        let years = (epoch.jd - J2000_JD) / 365.25;
        let expected = 50.29 / 3600.0 * years;
        assert!((sep - expected).abs() < 0.01, "{sep} against {expected}");
    }

    #[test]
    fn unix_time_to_julian_date() {
        // The Unix epoch 1970-01-01T00:00:00 UTC is JD 2440587.5 (UTC); 2000-01-01T12:00:00
        // UTC is Unix 946728000 and JD 2451545.0 (UTC), so TT is 69.184 s later (by our
        // documented constant, whatever the leap seconds of 2000 were).
        let e = Epoch::from_unix_seconds(0.0).map(|e| e.jd);
        assert_eq!(e, Some(2_440_587.5 + 69.184 / 86_400.0));
        let e = Epoch::from_unix_seconds(946_728_000.0).map(|e| e.jd);
        let jd = e.unwrap_or(f64::NAN);
        assert!((jd - (2_451_545.0 + 69.184 / 86_400.0)).abs() < 1e-9);
        assert_eq!(Epoch::from_unix_seconds(f64::NAN), None);
        assert_eq!(Epoch::from_unix_seconds(f64::INFINITY), None);
    }

    #[test]
    fn not_finite_epoch_gives_nan_not_panic() {
        let sun = sun_j2000(Epoch { jd: f64::NAN });
        assert!(sun.direction.iter().all(|c| c.is_nan()));
    }
}
