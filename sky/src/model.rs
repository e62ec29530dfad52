//! The data the adapter works on: targets, instruments, the observatory profile, epochs.

/// A moment in time as a Julian date in Terrestrial Time (TT). The difference between TT and
/// UTC (about 69 s) moves the Sun by under 0.001°, below this model's accuracy; callers that
/// start from UTC may add it or not, and say which.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
pub struct Epoch {
    /// Julian date (days).
    pub jd: f64,
}

/// One approved target of the pool.
#[derive(Clone, Debug, PartialEq)]
pub struct Target {
    /// The target's identifier, as in the input (unique in a pool).
    pub id: String,
    /// Right ascension, ICRS, degrees in [0, 360).
    pub ra_deg: f64,
    /// Declination, ICRS, degrees in [-90, 90].
    pub dec_deg: f64,
    /// Dwell time of the observation, seconds (at least 0).
    pub duration_s: f64,
    /// Index into [`Profile::instruments`] of the instrument the observation uses.
    pub instrument: usize,
    /// Priority grade, 1 (highest) to [`LOWEST_PRIORITY`]; targets that do not fit are left
    /// out lowest priority first. [`DEFAULT_PRIORITY`] when the input gives none.
    pub priority: u8,
    /// The proposal's window, when it asks for one: the observation starts and ends inside
    /// `[start, end]` (on top of the visibility windows of the band).
    pub window: Option<(Epoch, Epoch)>,
    /// The allowed roll offsets about the boresight, degrees `(min, max)`, overriding the
    /// profile's [`Profile::roll_range_deg`].
    pub roll_range_deg: Option<(f64, f64)>,
}

/// The lowest priority grade (the highest is 1).
pub const LOWEST_PRIORITY: u8 = 9;
/// The priority of a target whose input gives none.
pub const DEFAULT_PRIORITY: u8 = 5;

impl Target {
    /// A target of default priority, without proposal window or roll override.
    pub fn new(id: impl Into<String>, ra_deg: f64, dec_deg: f64, duration_s: f64) -> Target {
        Target {
            id: id.into(),
            ra_deg,
            dec_deg,
            duration_s,
            instrument: 0,
            priority: DEFAULT_PRIORITY,
            window: None,
            roll_range_deg: None,
        }
    }
}

/// What a link between two targets asks ([`Link`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LinkKind {
    /// `second` starts after `first` starts, between the least and greatest lag after it.
    After,
    /// `first` and `second` are observed back to back: `second` directly follows `first`,
    /// with no waiting and no other observation between them.
    Group,
}

/// A timing link between two targets of a proposal (indices into the pool). A `before` link
/// of the links file is read as `After` with the targets swapped.
#[derive(Clone, Debug, PartialEq)]
pub struct Link {
    /// What the link asks.
    pub kind: LinkKind,
    /// The target observed first.
    pub first: usize,
    /// The target observed second.
    pub second: usize,
    /// Least time from the start of `first` to the start of `second`, seconds.
    pub min_lag_s: Option<f64>,
    /// Greatest time from the start of `first` to the start of `second`, seconds.
    pub max_lag_s: Option<f64>,
}

/// Where the telescope points when the plan starts.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StartPointing {
    /// Right ascension of the boresight, ICRS, degrees.
    pub ra_deg: f64,
    /// Declination of the boresight, ICRS, degrees.
    pub dec_deg: f64,
    /// Roll offset from the nominal roll, degrees.
    pub roll_deg: f64,
}

/// An instrument (or mode) of the observatory.
#[derive(Clone, Debug, PartialEq)]
pub struct Instrument {
    /// Name, as targets refer to it.
    pub name: String,
    /// Guide-star acquisition and settling at the destination of a slew that ends with
    /// this instrument, seconds.
    pub settle_s: f64,
}

/// Everything the model needs to know about the observatory. The built-in demo profile
/// describes an invented observatory; every value of a real one comes from its operations team.
#[derive(Clone, Debug, PartialEq)]
pub struct Profile {
    /// Name of the observatory (for reports).
    pub name: String,
    /// Slew rate limit about the eigen-axis, degrees per second (ω).
    pub slew_rate_deg_s: f64,
    /// Slew acceleration limit about the eigen-axis, degrees per second squared (a).
    pub slew_accel_deg_s2: f64,
    /// Thermal settling per degree of solar elongation lost (boresight turning toward the Sun,
    /// the warm direction), seconds per degree (`k_warm`).
    pub thermal_warm_s_per_deg: f64,
    /// Thermal settling per degree of solar elongation gained (boresight turning away from the
    /// Sun, the cool direction), seconds per degree (`k_cool`).
    pub thermal_cool_s_per_deg: f64,
    /// The instruments; targets name one of them.
    pub instruments: Vec<Instrument>,
    /// `setup_s[i][j]`: time to change from instrument `i` to instrument `j`, seconds (0 on
    /// the diagonal; not symmetric in general).
    pub setup_s: Vec<Vec<f64>>,
    /// Smallest solar elongation the telescope may point at, degrees.
    pub elongation_min_deg: f64,
    /// Largest solar elongation the telescope may point at, degrees.
    pub elongation_max_deg: f64,
    /// Area of the sunshield, square metres (S).
    pub shield_area_m2: f64,
    /// Unit normal of the sunshield toward the Sun side, body frame (`n`; the body frame has
    /// the boresight on +z and the Sun in the x–z plane on the +x side).
    pub shield_normal: [f64; 3],
    /// Specular reflectivity of the shield's Sun side (ρs, 0 to 1).
    pub specular_reflectivity: f64,
    /// Diffuse reflectivity of the shield's Sun side (ρd, 0 to 1, with ρs + ρd ≤ 1).
    pub diffuse_reflectivity: f64,
    /// Centre of pressure relative to the centre of mass, body frame, metres (`r_cp`).
    pub pressure_offset_m: [f64; 3],
    /// Momentum the reaction wheels may hold, newton metre seconds (`H_max`).
    pub wheel_limit_nms: f64,
    /// Share of [`Profile::wheel_limit_nms`] that planning may use before a dump (0 to 1).
    pub wheel_margin: f64,
    /// Moment arm of the thruster couple that dumps momentum, metres (L).
    pub thruster_arm_m: f64,
    /// Specific impulse of the thrusters, seconds (Isp).
    pub thruster_isp_s: f64,
    /// Time one momentum dump takes, seconds.
    pub dump_s: f64,
    /// Allowed roll offsets about the boresight from the nominal roll, degrees `(min, max)`,
    /// for targets without an override (`(0, 0)`: nominal roll only).
    pub roll_range_deg: (f64, f64),
    /// How many evenly spaced candidate rolls the planner tries in a range wider than zero
    /// (the ends included; at least 2).
    pub roll_steps: usize,
    /// Where the telescope points at the plan start; `None`: already on the first target.
    pub start_pointing: Option<StartPointing>,
    /// Momentum stored in the wheels at the plan start, inertial frame, N·m·s.
    pub start_momentum_nms: [f64; 3],
}
