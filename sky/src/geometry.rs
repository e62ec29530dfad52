//! Directions on the sky, angular separations and the observatory's attitude.
//!
//! Directions are unit vectors on ICRS (J2000) axes, dimensionless. Angles are radians unless
//! a name ends in `_deg`. The formulas are those of the sky model (section 1, "Directions", and
//! section 4, "Attitude"); the attitude keeps the Sun in the body x–z plane on the +x side
//! ("nominal roll").

/// A 3-vector (a direction: dimensionless; otherwise in the unit its user states).
pub type Vec3 = [f64; 3];

/// Below this value of `|z × s|` (the sine of the solar elongation, dimensionless) the Sun is
/// taken to lie along the boresight (or opposite it) and the nominal roll is undefined.
pub const DEGENERATE_SINE: f64 = 1e-9;

/// Dot product `a · b` (product of the operands' units).
pub fn dot(a: &Vec3, b: &Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Cross product `a × b` (product of the operands' units).
pub fn cross(a: &Vec3, b: &Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Euclidean length `|a|` (the operand's unit).
pub fn norm(a: &Vec3) -> f64 {
    dot(a, a).sqrt()
}

/// `a / |a|`, dimensionless; `None` when `a` is zero or not finite.
pub fn normalize(a: &Vec3) -> Option<Vec3> {
    let n = norm(a);
    if !(n.is_finite() && n > 0.0) {
        return None;
    }
    Some([a[0] / n, a[1] / n, a[2] / n])
}

/// Unit vector of right ascension `ra_deg` and declination `dec_deg` (degrees):
/// `u = (cos δ cos α, cos δ sin α, sin δ)`, dimensionless. Not finite if an input is not.
pub fn unit_vector(ra_deg: f64, dec_deg: f64) -> Vec3 {
    let (sa, ca) = ra_deg.to_radians().sin_cos();
    let (sd, cd) = dec_deg.to_radians().sin_cos();
    [cd * ca, cd * sa, sd]
}

/// Right ascension in [0, 360) and declination in [-90, 90], degrees, of the direction `v`
/// (any non-zero length). NaN if `v` is zero or not finite.
pub fn ra_dec_deg(v: &Vec3) -> (f64, f64) {
    let Some(u) = normalize(v) else {
        return (f64::NAN, f64::NAN);
    };
    let ra = u[1].atan2(u[0]).to_degrees().rem_euclid(360.0);
    // rem_euclid can return 360.0 itself for tiny negative angles.
    let ra = if ra >= 360.0 { 0.0 } else { ra };
    let dec = u[2].atan2(u[0].hypot(u[1])).to_degrees();
    (ra, dec)
}

/// Angular separation of the directions `a` and `b` (any non-zero lengths), radians in
/// [0, π]: `atan2(|a × b|, a · b)`, stable at 0 and π where `acos(a · b)` is not.
pub fn separation(a: &Vec3, b: &Vec3) -> f64 {
    norm(&cross(a, b)).atan2(dot(a, b))
}

/// [`separation`] in degrees, [0, 180].
pub fn separation_deg(a: &Vec3, b: &Vec3) -> f64 {
    separation(a, b).to_degrees()
}

/// Solar elongation of the boresight `u`: its separation from the Sun direction `s`
/// (unit vector from the spacecraft toward the Sun), degrees in [0, 180].
pub fn elongation_deg(u: &Vec3, s: &Vec3) -> f64 {
    separation_deg(u, s)
}

/// An attitude: the body axes as unit vectors on inertial (ICRS) axes, dimensionless. The
/// attitude matrix `A = [x y z]` has these as columns and turns body vectors into inertial
/// ones (`v_inertial = A v_body`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Attitude {
    /// Body +x axis (toward the Sun's side under nominal roll).
    pub x: Vec3,
    /// Body +y axis (`z × x`).
    pub y: Vec3,
    /// Body +z axis: the boresight.
    pub z: Vec3,
}

impl Attitude {
    /// Nominal-roll attitude for the boresight `u` and the Sun direction `s` (unit vector from
    /// the spacecraft toward the Sun; both any non-zero length): `z = u`,
    /// `x = normalize(s − (s·z) z)`, `y = z × x`. `None` when an input is zero or not finite,
    /// or when the Sun lies along the boresight or opposite it (`|z × s| <` [`DEGENERATE_SINE`]),
    /// where the roll is undefined.
    ///
    /// Computed as `y = normalize(z × s)` (re-orthogonalised against `z`), `x = y × z`, which is
    /// the same frame and stays orthonormal to rounding near the degenerate case.
    pub fn nominal(u: &Vec3, s: &Vec3) -> Option<Attitude> {
        let z = normalize(u)?;
        let s = normalize(s)?;
        let zs = cross(&z, &s);
        if norm(&zs) < DEGENERATE_SINE {
            return None;
        }
        let y = normalize(&zs)?;
        let k = dot(&y, &z);
        let y = normalize(&[y[0] - k * z[0], y[1] - k * z[1], y[2] - k * z[2]])?;
        let x = cross(&y, &z);
        Some(Attitude { x, y, z })
    }

    /// The attitude matrix `A = [x y z]` as rows of a row-major array (`m[r][c]`),
    /// dimensionless.
    pub fn matrix(&self) -> [[f64; 3]; 3] {
        let (x, y, z) = (self.x, self.y, self.z);
        [[x[0], y[0], z[0]], [x[1], y[1], z[1]], [x[2], y[2], z[2]]]
    }

    /// `A v`: a body-frame vector on inertial axes (same unit as `v`).
    pub fn to_inertial(&self, v: &Vec3) -> Vec3 {
        let (x, y, z) = (self.x, self.y, self.z);
        [
            x[0] * v[0] + y[0] * v[1] + z[0] * v[2],
            x[1] * v[0] + y[1] * v[1] + z[1] * v[2],
            x[2] * v[0] + y[2] * v[1] + z[2] * v[2],
        ]
    }

    /// `Aᵀ v`: an inertial vector on body axes (same unit as `v`).
    pub fn to_body(&self, v: &Vec3) -> Vec3 {
        [dot(&self.x, v), dot(&self.y, v), dot(&self.z, v)]
    }
}

/// Eigen-axis angle of the rotation from attitude `from` (`A_i`) to attitude `to` (`A_j`),
/// radians in [0, π]: the angle of `R = A_j A_iᵀ`, `φ = acos((trace R − 1) / 2)` clamped.
///
/// Evaluated as `atan2(sin φ, cos φ)` with `cos φ = (trace R − 1)/2` and `2 sin φ` the length of
/// the axial vector of `R − Rᵀ` (`Σ` over the three axes of `from_k × to_k`): equal to the
/// clamped `acos` for orthonormal attitudes, and accurate near 0 where `acos` loses half the
/// digits.
pub fn eigen_axis_angle(from: &Attitude, to: &Attitude) -> f64 {
    let trace = dot(&from.x, &to.x) + dot(&from.y, &to.y) + dot(&from.z, &to.z);
    let cx = cross(&from.x, &to.x);
    let cy = cross(&from.y, &to.y);
    let cz = cross(&from.z, &to.z);
    let axial = [
        cx[0] + cy[0] + cz[0],
        cx[1] + cy[1] + cz[1],
        cx[2] + cy[2] + cz[2],
    ];
    let c = ((trace - 1.0) / 2.0).clamp(-1.0, 1.0);
    (norm(&axial) / 2.0).atan2(c)
}

/// [`eigen_axis_angle`] in degrees, [0, 180].
pub fn eigen_axis_angle_deg(from: &Attitude, to: &Attitude) -> f64 {
    eigen_axis_angle(from, to).to_degrees()
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Rows of `fixtures/separation_astropy.csv`: (ra1, dec1, ra2, dec2, separation), degrees.
    fn astropy_separations() -> Vec<[f64; 5]> {
        let text = include_str!("fixtures/separation_astropy.csv");
        let mut rows = Vec::new();
        for line in text.lines().filter(|l| !l.starts_with('#')).skip(1) {
            let v: Vec<f64> = line.split(',').map(|f| f.trim().parse().unwrap()).collect();
            assert_eq!(v.len(), 5, "bad fixture line {line}");
            rows.push([v[0], v[1], v[2], v[3], v[4]]);
        }
        rows
    }

    #[test]
    fn separations_match_astropy() {
        // astropy SkyCoord.separation, fixture made by sky/scripts/sky_fixtures.py; it holds
        // exact 0° and 180° pairs, near-antipodal ones and pairs across the poles and RA = 0.
        let rows = astropy_separations();
        assert!(rows.iter().any(|r| r[4] == 0.0) && rows.iter().any(|r| r[4] == 180.0));
        for [ra1, dec1, ra2, dec2, sep] in rows {
            let ours = separation_deg(&unit_vector(ra1, dec1), &unit_vector(ra2, dec2));
            assert!(
                (ours - sep).abs() < 1e-9,
                "({ra1}, {dec1}) to ({ra2}, {dec2}): {ours} against {sep}"
            );
        }
    }

    #[test]
    fn separation_is_exact_at_0_and_180() {
        // a × a and a × (−a) vanish exactly in floating point: atan2 gives exactly 0 and π.
        let a = unit_vector(123.4, -56.7);
        let b = [-a[0], -a[1], -a[2]];
        assert_eq!(separation_deg(&a, &a), 0.0);
        assert_eq!(separation(&a, &b), std::f64::consts::PI);
    }

    #[test]
    fn ra_dec_round_trip() {
        let (ra, dec) = ra_dec_deg(&unit_vector(359.5, -12.25));
        assert!((ra - 359.5).abs() < 1e-12 && (dec + 12.25).abs() < 1e-12);
        let (ra, dec) = ra_dec_deg(&[0.0, 0.0, 0.0]);
        assert!(ra.is_nan() && dec.is_nan());
    }

    #[test]
    fn degenerate_attitudes_are_none() {
        let u = unit_vector(40.0, 10.0);
        let anti = [-u[0], -u[1], -u[2]];
        assert_eq!(Attitude::nominal(&u, &u), None);
        assert_eq!(Attitude::nominal(&u, &anti), None);
        assert_eq!(Attitude::nominal(&[0.0; 3], &u), None);
        assert_eq!(Attitude::nominal(&u, &[f64::NAN, 0.0, 1.0]), None);
        assert_eq!(Attitude::nominal(&[f64::INFINITY, 0.0, 0.0], &u), None);
    }

    #[test]
    fn nominal_attitude_by_hand() {
        // Boresight +z, Sun along +x (90° elongation): the body axes are the inertial ones.
        let a = Attitude::nominal(&[0.0, 0.0, 1.0], &[1.0, 0.0, 0.0]);
        let Some(a) = a else { panic!("defined") };
        for (got, want) in [
            (a.x, [1.0, 0.0, 0.0]),
            (a.y, [0.0, 1.0, 0.0]),
            (a.z, [0.0, 0.0, 1.0]),
        ] {
            for k in 0..3 {
                assert!((got[k] - want[k]).abs() < 1e-15);
            }
        }
        // Sun 30° from the boresight in the x–z plane: solar elongation 30°.
        let s = [0.5, 0.0, 3f64.sqrt() / 2.0];
        assert!((elongation_deg(&[0.0, 0.0, 1.0], &s) - 30.0).abs() < 1e-12);
    }

    #[test]
    fn pure_roll_has_eigen_angle_of_the_roll() {
        // Same boresight +z, Sun moved from +x to +y: a 90° roll about the boresight, although
        // the boresight does not move.
        let z = [0.0, 0.0, 1.0];
        let (Some(a), Some(b)) = (
            Attitude::nominal(&z, &[1.0, 0.0, 0.0]),
            Attitude::nominal(&z, &[0.0, 1.0, 0.0]),
        ) else {
            panic!("defined")
        };
        assert!((eigen_axis_angle_deg(&a, &b) - 90.0).abs() < 1e-12);
        assert_eq!(eigen_axis_angle(&a, &a), 0.0);
    }

    fn matmul_t(aj: &[[f64; 3]; 3], ai: &[[f64; 3]; 3]) -> [[f64; 3]; 3] {
        let mut r = [[0.0; 3]; 3];
        for (row, r_row) in r.iter_mut().enumerate() {
            for (col, cell) in r_row.iter_mut().enumerate() {
                *cell = (0..3).map(|k| aj[row][k] * ai[col][k]).sum();
            }
        }
        r
    }

    fn direction() -> impl Strategy<Value = Vec3> {
        (0.0f64..360.0, -1.0f64..1.0)
            .prop_map(|(ra, sin_dec)| unit_vector(ra, sin_dec.asin().to_degrees()))
    }

    proptest! {
        #[test]
        fn attitude_is_orthonormal_with_sun_on_plus_x(u in direction(), s in direction()) {
            if let Some(a) = Attitude::nominal(&u, &s) {
                let m = a.matrix();
                let det = m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
                    - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
                    + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
                prop_assert!((det - 1.0).abs() < 1e-12);
                for (p, q) in [(a.x, a.y), (a.y, a.z), (a.z, a.x)] {
                    prop_assert!(dot(&p, &q).abs() < 1e-12);
                }
                for p in [a.x, a.y, a.z] {
                    prop_assert!((norm(&p) - 1.0).abs() < 1e-12);
                }
                for (zk, uk) in a.z.iter().zip(u.iter()) {
                    prop_assert!((zk - uk).abs() < 1e-12);
                }
                prop_assert!(dot(&s, &a.y).abs() < 1e-9);
                prop_assert!(dot(&s, &a.x) >= 0.0);
            }
        }

        #[test]
        fn eigen_angle_at_least_boresight_separation(
            u1 in direction(), u2 in direction(), s1 in direction(), s2 in direction()
        ) {
            if let (Some(a), Some(b)) = (Attitude::nominal(&u1, &s1), Attitude::nominal(&u2, &s2)) {
                let phi = eigen_axis_angle(&a, &b);
                prop_assert!(phi + 1e-9 >= separation(&a.z, &b.z));
                // The model's formula on the explicit product A_j A_iᵀ, away from 0 and π
                // where acos is well conditioned.
                let r = matmul_t(&b.matrix(), &a.matrix());
                let c = ((r[0][0] + r[1][1] + r[2][2] - 1.0) / 2.0).clamp(-1.0, 1.0);
                if c.abs() < 0.99 {
                    prop_assert!((phi - c.acos()).abs() < 1e-12);
                }
                prop_assert!((phi - eigen_axis_angle(&b, &a)).abs() < 1e-15);
            }
        }
    }
}
