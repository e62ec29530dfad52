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

/// Solar pitch of the boresight `u` with the Sun at `s`: `p = θ − 90°` with `θ` the solar
/// elongation, degrees in [−90, 90] (positive when the boresight is more than 90° from the Sun).
pub fn solar_pitch_deg(u: &Vec3, s: &Vec3) -> f64 {
    elongation_deg(u, s) - 90.0
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
        if !(norm(&zs) >= DEGENERATE_SINE) {
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
