//! An observing sequence played out in real time: the planner's own rules, which every plan,
//! every front and `wend sky check` go through (sky model, sections 3 to 8).
//!
//! A sequence is a list of [`Visit`]s: a target and one of its candidate rolls. Played from the
//! plan start ([`Context::play`]), each visit:
//!
//! 1. **Transition** from where the telescope points (the previous target at its roll, a parking
//!    attitude, the start pointing, or nowhere before the first observation when no start
//!    pointing is given) to the target at its roll: the eigen-axis slew (roll change included),
//!    the destination instrument's settling, the thermal settling and the instrument setup.
//!    During it the torque is the mean of the torques at its two end attitudes.
//! 2. **Start**: the earliest moment after the arrival when the target is inside the band for
//!    its whole dwell (a visibility window, with [`BAND_MARGIN_DEG`]), inside its proposal
//!    window, at least the least lag after the targets it is linked after, and no later than
//!    the greatest lag; a target grouped after the previous one starts on arrival.
//! 3. **Idle time**: when the start is later than the arrival, the telescope waits. It
//!    waits where the momentum comes out smallest among: staying where it is (when that stays
//!    in the band), going to the target first and waiting there (when the target is in the
//!    band from the arrival on), or parking at an attitude fixed to the Sun's direction inside
//!    the band (six azimuths about the Sun at the band's middle elongation; the slews there and
//!    on count like any other). The torque keeps acting; dumps while waiting take their time.
//! 4. **Dumps**, checked at every step: before a transition or a dwell whose end would carry
//!    `|H|` past the threshold `wheel_limit_nms × wheel_margin` (checked at the end of every
//!    piece of at most [`PIECE_S`]: the torque is constant over a piece, so `|H|` is largest at
//!    a piece's ends), and while waiting at the moment `|H|` reaches the threshold. A dump
//!    empties the wheels, takes [`Profile::dump_s`] with the torque still acting, and costs
//!    `|H| / (L · Isp · g0)` of propellant. A dump needed before the final transition is made at
//!    the end of the waiting when the waiting holds it; otherwise it delays the observation.
//!    The momentum left at the end of a plan is charged as if dumped (no time, not counted as a
//!    dump).
//!
//! [`Context::play`] is strict (the first visit that cannot be made ends the play with its
//! reason); [`Context::play_lenient`] leaves such a visit out, lists it with its reason and
//! goes on. Times are TT Julian dates; a second is 1/86400 day.
//!
//! **Caution.** A planning aid: plans are proposals to be confirmed by the operations team's
//! validated tools.

use std::fmt;

use serde::Serialize;

use super::geometry::{
    cross, dot, eigen_axis_angle_deg, elongation_deg, norm, normalize, unit_vector, Attitude, Vec3,
};
use super::momentum::{dump_propellant_kg, solar_torque_nm};
use super::slew::{check_profile, slew_time_s, thermal_s, SlewCostError};
use super::sun::sun_j2000;
use super::visibility::{visibility, Visibility, Window};
use super::{Epoch, Link, LinkKind, Profile, Target};

const SECONDS_PER_DAY: f64 = 86_400.0;
/// Plans keep this far inside the elongation band, degrees: the low-precision Sun agrees with
/// astropy's to better than 0.01° (the fixture tests), times are written to the second
/// (0.00001°), so an observation planned inside the narrowed band is inside the real one.
pub const BAND_MARGIN_DEG: f64 = 0.02;
/// Longest stretch of waiting or observing over which the torque is held constant, seconds
/// (six hours; the Sun moves a quarter of a degree in that time).
pub const PIECE_S: f64 = 21_600.0;
/// Most dumps one wait may need before the model calls the torque too large to wait under.
pub const MAX_WAIT_DUMPS: usize = 10_000;
/// Azimuths about the Sun's direction of the parking attitudes.
pub const PARK_AZIMUTHS: usize = 6;
/// Most candidate rolls a target may have.
pub const MAX_ROLLS: usize = 9;
/// The cost the core sees for a transition that is undefined or leads back to the start,
/// milliseconds: four times the longest step any profile allows (10⁹ s), so that the core never
/// takes one while another exists.
const UNUSABLE_MS: i64 = 4_000_000_000_000;
/// Tolerance of time comparisons, days (a millisecond).
const EPS_DAYS: f64 = 1.0e-3 / SECONDS_PER_DAY;

/// Why a plan cannot be made at all.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum PlanError {
    /// The profile's slew, thermal or setup values, or a target's instrument, are invalid.
    #[error(transparent)]
    Cost(#[from] SlewCostError),
    /// A value of the profile the simulation needs is out of range.
    #[error("profile value {what} = {value} is out of range ({expected})")]
    Profile {
        /// The profile field.
        what: &'static str,
        /// Its value.
        value: f64,
        /// What it must be.
        expected: &'static str,
    },
    /// A target's coordinates, dwell, priority, window or roll range are not usable.
    #[error("target {id} (index {index}): {problem}")]
    Target {
        /// Index of the target.
        index: usize,
        /// Its identifier.
        id: String,
        /// What is wrong.
        problem: &'static str,
    },
    /// A link names a target that does not exist, or is not usable.
    #[error("link {index}: {problem}")]
    Link {
        /// Index of the link.
        index: usize,
        /// What is wrong.
        problem: String,
    },
    /// The plan start or horizon is not usable.
    #[error("the horizon must be a positive finite number of days from a finite start, got {horizon_days} days from JD {start_jd}")]
    Horizon {
        /// Start given, Julian date.
        start_jd: f64,
        /// Horizon given, days.
        horizon_days: f64,
    },
    /// The sequence names a target twice, one that does not exist, or a roll it does not have.
    #[error("the sequence names target index {index} twice, out of range, or with a roll it does not have")]
    Order {
        /// The offending index.
        index: usize,
    },
}

/// Why a target is not in the plan.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Reason {
    /// Its solar elongation stays outside the band over the whole horizon.
    NeverInBand,
    /// It enters the band, but no window is as long as its dwell.
    WindowsTooShort {
        /// Its longest window, seconds.
        longest_window_s: f64,
    },
    /// Its proposal window holds no stretch in the band as long as its dwell.
    OutsideProposalWindow,
    /// Its windows closed while the plan observed other targets.
    WindowsPassed,
    /// It still had window time, but the plan reached the end of the horizon first.
    HorizonFull,
    /// Its transition and dwell alone would carry more momentum than the planning threshold.
    MomentumTooLarge {
        /// Momentum its transition and dwell add, N·m·s.
        momentum_nms: f64,
    },
    /// A link with another target cannot be kept (that target is left out, comes in the
    /// wrong order, or the lags cannot be met).
    Link {
        /// The other target of the link.
        other: usize,
    },
    /// It fits alone, but not beside the targets of higher or equal priority kept in the plan.
    Priority,
}

impl Reason {
    /// A short code for tables: `never_in_band`, `windows_too_short`,
    /// `outside_proposal_window`, `windows_passed`, `horizon_full`, `momentum_too_large`,
    /// `link`, `priority`.
    pub fn code(&self) -> &'static str {
        match self {
            Reason::NeverInBand => "never_in_band",
            Reason::WindowsTooShort { .. } => "windows_too_short",
            Reason::OutsideProposalWindow => "outside_proposal_window",
            Reason::WindowsPassed => "windows_passed",
            Reason::HorizonFull => "horizon_full",
            Reason::MomentumTooLarge { .. } => "momentum_too_large",
            Reason::Link { .. } => "link",
            Reason::Priority => "priority",
        }
    }
}

impl fmt::Display for Reason {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Reason::NeverInBand => f.write_str("outside the elongation band over the whole horizon"),
            Reason::WindowsTooShort { longest_window_s } => write!(
                f,
                "its longest window in the band ({:.0} s) is shorter than its dwell",
                longest_window_s
            ),
            Reason::OutsideProposalWindow => f.write_str(
                "its proposal window holds no stretch in the band as long as its dwell",
            ),
            Reason::WindowsPassed => {
                f.write_str("its windows closed while the plan observed other targets")
            }
            Reason::HorizonFull => f.write_str("the plan reached the end of the horizon first"),
            Reason::MomentumTooLarge { momentum_nms } => write!(
                f,
                "its transition and dwell alone add {momentum_nms:.2} N·m·s, over the planning threshold"
            ),
            Reason::Link { .. } => f.write_str("a timing link with another target cannot be kept"),
            Reason::Priority => f.write_str(
                "it does not fit beside the targets of higher or equal priority kept in the plan",
            ),
        }
    }
}

/// One step of the plan: a target observed at one of its candidate rolls.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Visit {
    /// Index of the target in the pool.
    pub target: usize,
    /// Index into the target's candidate rolls ([`Context::rolls`]).
    pub roll: u8,
}

/// Where the telescope waited before an observation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Idle {
    /// No waiting.
    None,
    /// At the previous attitude.
    Stay,
    /// At the next target, reached early.
    Early,
    /// At a parking attitude fixed to the Sun's direction.
    Park,
}

impl Idle {
    /// `none`, `stay`, `early`, `park`.
    pub fn code(self) -> &'static str {
        match self {
            Idle::None => "none",
            Idle::Stay => "stay",
            Idle::Early => "early",
            Idle::Park => "park",
        }
    }
}

/// One observation of a plan.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Observation {
    /// Index of the target in the pool.
    pub target: usize,
    /// Index of the roll among the target's candidates.
    pub roll: u8,
    /// Roll offset from the nominal roll, degrees.
    pub roll_deg: f64,
    /// Index of the instrument into [`Profile::instruments`].
    pub instrument: usize,
    /// Start of the dwell.
    #[serde(skip)]
    pub start: Epoch,
    /// End of the dwell.
    #[serde(skip)]
    pub end: Epoch,
    /// Solar elongation at the start, degrees.
    pub elongation_start_deg: f64,
    /// Solar elongation at the end, degrees.
    pub elongation_end_deg: f64,
    /// Eigen-axis angle of the transition into the observation, degrees (0 for a first
    /// observation without a start pointing).
    pub slew_deg: f64,
    /// Slew time of every transition since the previous observation, seconds.
    pub slew_s: f64,
    /// Time from the end of the previous observation (or the plan start) to this start,
    /// seconds: waiting plus busy time.
    pub overhead_s: f64,
    /// The idle part of [`Observation::overhead_s`], seconds.
    pub wait_s: f64,
    /// The busy part: transitions (slew, settle, thermal, setup) and dumps, seconds.
    pub busy_s: f64,
    /// Where the telescope waited.
    pub idle: Idle,
    /// Dumps since the previous observation.
    pub dumps_before: usize,
    /// Propellant of those dumps, kilograms.
    pub dump_kg_before: f64,
    /// Stored momentum after the observation, inertial frame, N·m·s.
    pub h_after_nms: Vec3,
    /// `|H|` after the observation, N·m·s.
    pub momentum_nms: f64,
}

/// A target left out of a plan, and why.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Unscheduled {
    /// Index of the target in the pool.
    pub target: usize,
    /// Why.
    pub reason: Reason,
    /// Smallest solar elongation over the horizon, degrees.
    pub min_elongation_deg: f64,
    /// Largest solar elongation over the horizon, degrees.
    pub max_elongation_deg: f64,
}

/// What the telescope does during a stretch of the plan.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Activity {
    /// Slewing with settling, thermal settling and setup.
    Slew,
    /// Waiting.
    Wait,
    /// Dumping momentum.
    Dump,
    /// Observing.
    Observe,
}

impl Activity {
    /// `slew`, `wait`, `dump`, `observe`.
    pub fn code(self) -> &'static str {
        match self {
            Activity::Slew => "slew",
            Activity::Wait => "wait",
            Activity::Dump => "dump",
            Activity::Observe => "observe",
        }
    }
}

/// A stretch of the plan's timeline.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Event {
    /// What happens.
    pub activity: Activity,
    /// Start.
    pub start: Epoch,
    /// End.
    pub end: Epoch,
    /// The target observed or slewed to (none for parking slews, waits and dumps).
    pub target: Option<usize>,
    /// Stored momentum at the end, inertial frame, N·m·s.
    pub h_end_nms: Vec3,
    /// Stored momentum at the start (for a dump: what it removes), N·m·s.
    pub h_start_nms: Vec3,
}

/// A sequence played out in time.
#[derive(Clone, Debug, PartialEq)]
pub struct Schedule {
    /// The observations in time order.
    pub observations: Vec<Observation>,
    /// The targets left out, in pool order.
    pub unscheduled: Vec<Unscheduled>,
    /// Every stretch of the plan in time order (slews, waits, dumps, observations).
    pub events: Vec<Event>,
    /// Plan start.
    pub start: Epoch,
    /// End of the last observation (the plan start when nothing is scheduled).
    pub end: Epoch,
    /// Sum of the observations' overheads, seconds.
    pub overhead_s: f64,
    /// The idle part of [`Schedule::overhead_s`], seconds.
    pub wait_s: f64,
    /// The busy part (transitions and dumps), seconds.
    pub busy_s: f64,
    /// Sum of the slew angles, degrees.
    pub slew_deg: f64,
    /// Momentum dumps made.
    pub dumps: usize,
    /// Momentum removed by the dumps, N·m·s.
    pub dumped_nms: f64,
    /// Stored momentum at the start, N·m·s.
    pub start_momentum_nms: Vec3,
    /// `H` left at the end, N·m·s (charged as propellant).
    pub final_h_nms: Vec3,
    /// `|H|` left at the end, N·m·s.
    pub final_momentum_nms: f64,
    /// Propellant of the dumps and of the momentum left at the end, kilograms (the
    /// propellant objective).
    pub propellant_kg: f64,
    /// The largest `|H|` at any checked moment, N·m·s (never above the threshold).
    pub peak_momentum_nms: f64,
}

impl Schedule {
    /// Seconds from the plan start to the end of the last observation, waiting included (the
    /// time objective).
    pub fn elapsed_s(&self) -> f64 {
        seconds_between(self.start, self.end)
    }

    /// The visits of the plan, in order.
    pub fn visits(&self) -> Vec<Visit> {
        self.observations
            .iter()
            .map(|o| Visit {
                target: o.target,
                roll: o.roll,
            })
            .collect()
    }

    /// `(seconds since the plan start, |H| in N·m·s)` at every event boundary.
    pub fn momentum_trace(&self) -> Vec<(f64, f64)> {
        let mut out = vec![(0.0, norm(&self.start_momentum_nms))];
        for e in &self.events {
            if e.activity == Activity::Dump {
                out.push((seconds_between(self.start, e.start), norm(&e.h_start_nms)));
            }
            out.push((seconds_between(self.start, e.end), norm(&e.h_end_nms)));
        }
        out
    }

    /// When each dump starts, seconds since the plan start.
    pub fn dump_times_s(&self) -> Vec<f64> {
        self.events
            .iter()
            .filter(|e| e.activity == Activity::Dump)
            .map(|e| seconds_between(self.start, e.start))
            .collect()
    }
}

fn later(e: Epoch, seconds: f64) -> Epoch {
    Epoch {
        jd: e.jd + seconds / SECONDS_PER_DAY,
    }
}

fn seconds_between(a: Epoch, b: Epoch) -> f64 {
    (b.jd - a.jd) * SECONDS_PER_DAY
}

fn axpy(h: &Vec3, k: f64, t: &Vec3) -> Vec3 {
    [h[0] + k * t[0], h[1] + k * t[1], h[2] + k * t[2]]
}

/// Where the telescope points.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Pose {
    /// Nowhere yet: the first transition is the destination's settling only.
    Nowhere,
    /// A fixed direction (the start pointing) at a roll offset, degrees.
    Fixed { u: Vec3, roll_deg: f64 },
    /// A target at a roll offset, degrees.
    Target { j: usize, roll_deg: f64 },
    /// A parking attitude fixed to the Sun: elongation and azimuth about the Sun, degrees.
    Park { azimuth_deg: f64 },
}

/// The attitude of boresight `u` at roll offset `roll_deg` from the nominal roll:
/// `x' = cos ψ x + sin ψ y`, `y' = z × x'`.
fn rolled(u: &Vec3, sun: &Vec3, roll_deg: f64) -> Option<Attitude> {
    let a = Attitude::nominal(u, sun)?;
    if roll_deg == 0.0 {
        return Some(a);
    }
    let (s, c) = roll_deg.to_radians().sin_cos();
    let x = [
        c * a.x[0] + s * a.y[0],
        c * a.x[1] + s * a.y[1],
        c * a.x[2] + s * a.y[2],
    ];
    let y = cross(&a.z, &x);
    Some(Attitude { x, y, z: a.z })
}

/// A transition from one pose to another.
#[derive(Clone, Copy, Debug)]
struct Transition {
    angle_deg: f64,
    slew_s: f64,
    total_s: f64,
    torque: Vec3,
}

/// The state of a play between observations.
#[derive(Clone, Debug)]
struct State {
    now: Epoch,
    pose: Pose,
    instrument: Option<usize>,
    h: Vec3,
    last: Option<usize>,
}

/// A stretch of a step before it is committed.
#[derive(Clone, Copy, Debug)]
enum Piece {
    /// A transition (to a target when `target` is set).
    Move {
        tr: Transition,
        to: Pose,
        target: Option<usize>,
    },
    /// Waiting at a pose.
    Wait { pose: Pose, seconds: f64 },
}

impl Piece {
    fn seconds(&self) -> f64 {
        match self {
            Piece::Move { tr, .. } => tr.total_s,
            Piece::Wait { seconds, .. } => *seconds,
        }
    }
}

/// The outcome of one way of spending a step.
#[derive(Clone, Debug)]
struct Outcome {
    events: Vec<Event>,
    /// How much later than planned the dwell starts (dumps the waiting could not hold), s.
    delay_s: f64,
    h_start: Vec3,
    kg: f64,
    dumps: usize,
    dumped_nms: f64,
    peak: f64,
    busy_s: f64,
    slew_s: f64,
    slew_deg: f64,
    final_angle_deg: f64,
    idle: Idle,
}

/// Why a visit cannot be made at its turn.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Block {
    Reason(Reason),
}

/// The fixed inputs of a simulation: profile, targets, links, horizon, each target's
/// visibility and allowed windows, and its candidate rolls.
pub struct Context<'a> {
    profile: &'a Profile,
    targets: &'a [Target],
    links: Vec<Link>,
    units: Vec<Vec3>,
    visibility: Vec<Visibility>,
    allowed: Vec<Vec<Window>>,
    rolls: Vec<Vec<f64>>,
    /// Per target: the `After` links where it is second (link indices).
    after: Vec<Vec<usize>>,
    /// Per target: the `After` links where it is first.
    before: Vec<Vec<usize>>,
    group_prev: Vec<Option<usize>>,
    group_next: Vec<Option<usize>>,
    start: Epoch,
    end: Epoch,
    band: (f64, f64),
    threshold_nms: f64,
    start_pose: Pose,
}

/// The candidate rolls of a range: `steps` evenly spaced values with both ends (one value for
/// an empty range), the one nearest the nominal roll first.
pub fn candidate_rolls(range_deg: (f64, f64), steps: usize) -> Vec<f64> {
    let (lo, hi) = range_deg;
    let mut rolls: Vec<f64> = if hi - lo <= 1e-9 {
        vec![lo]
    } else {
        let k = steps.clamp(2, MAX_ROLLS);
        (0..k)
            .map(|i| lo + (hi - lo) * i as f64 / (k - 1) as f64)
            .collect()
    };
    rolls.sort_by(|a, b| a.abs().total_cmp(&b.abs()).then(a.total_cmp(b)));
    rolls
}

impl<'a> Context<'a> {
    /// Checks the inputs and computes every target's visibility from `start` over
    /// `horizon_days` days, without links.
    pub fn new(
        profile: &'a Profile,
        targets: &'a [Target],
        start: Epoch,
        horizon_days: f64,
    ) -> Result<Context<'a>, PlanError> {
        Context::with_links(profile, targets, &[], start, horizon_days)
    }

    /// [`Context::new`] with timing links between targets.
    pub fn with_links(
        profile: &'a Profile,
        targets: &'a [Target],
        links: &[Link],
        start: Epoch,
        horizon_days: f64,
    ) -> Result<Context<'a>, PlanError> {
        check_profile(profile)?;
        if !(start.jd.is_finite() && horizon_days.is_finite() && horizon_days > 0.0) {
            return Err(PlanError::Horizon {
                start_jd: start.jd,
                horizon_days,
            });
        }
        let positive = |what, value: f64| {
            if value.is_finite() && value > 0.0 {
                Ok(())
            } else {
                Err(PlanError::Profile {
                    what,
                    value,
                    expected: "finite and > 0",
                })
            }
        };
        positive("wheel_limit_nms", profile.wheel_limit_nms)?;
        positive("wheel_margin", profile.wheel_margin)?;
        positive("thruster_arm_m", profile.thruster_arm_m)?;
        positive("thruster_isp_s", profile.thruster_isp_s)?;
        positive("shield_area_m2", profile.shield_area_m2)?;
        if profile.wheel_margin > 1.0 {
            return Err(PlanError::Profile {
                what: "wheel_margin",
                value: profile.wheel_margin,
                expected: "at most 1",
            });
        }
        if !(profile.dump_s.is_finite() && profile.dump_s >= 0.0) {
            return Err(PlanError::Profile {
                what: "dump_s",
                value: profile.dump_s,
                expected: "finite and >= 0",
            });
        }
        let band = (profile.elongation_min_deg, profile.elongation_max_deg);
        if !(band.0.is_finite()
            && band.1.is_finite()
            && 0.0 <= band.0
            && band.0 + 2.0 * BAND_MARGIN_DEG < band.1)
        {
            return Err(PlanError::Profile {
                what: "elongation_min_deg",
                value: band.0,
                expected:
                    "finite, >= 0 and more than twice the planning margin below elongation_max_deg",
            });
        }
        let roll_ok = |r: (f64, f64)| {
            r.0.is_finite() && r.1.is_finite() && -180.0 <= r.0 && r.0 <= r.1 && r.1 <= 180.0
        };
        if !roll_ok(profile.roll_range_deg) {
            return Err(PlanError::Profile {
                what: "roll_min_deg",
                value: profile.roll_range_deg.0,
                expected: "finite, -180 <= roll_min_deg <= roll_max_deg <= 180",
            });
        }
        let threshold_nms = profile.wheel_limit_nms * profile.wheel_margin;
        let h0 = profile.start_momentum_nms;
        if !(h0.iter().all(|v| v.is_finite()) && norm(&h0) < threshold_nms) {
            return Err(PlanError::Profile {
                what: "start_momentum_nms",
                value: norm(&h0),
                expected: "finite and below the dump threshold wheel_limit_nms × wheel_margin",
            });
        }
        let start_pose = match profile.start_pointing {
            None => Pose::Nowhere,
            Some(sp) => {
                let fine = sp.ra_deg.is_finite()
                    && sp.dec_deg.is_finite()
                    && (-90.0..=90.0).contains(&sp.dec_deg)
                    && sp.roll_deg.is_finite();
                if !fine {
                    return Err(PlanError::Profile {
                        what: "start_dec_deg",
                        value: sp.dec_deg,
                        expected: "finite coordinates, declination in [-90, 90]",
                    });
                }
                Pose::Fixed {
                    u: unit_vector(sp.ra_deg, sp.dec_deg),
                    roll_deg: sp.roll_deg,
                }
            }
        };
        let instruments = profile.instruments.len();
        let end = later(start, horizon_days * SECONDS_PER_DAY);
        // Plans keep a margin inside the band for the model's accuracy.
        let band = (band.0 + BAND_MARGIN_DEG, band.1 - BAND_MARGIN_DEG);
        let mut units = Vec::with_capacity(targets.len());
        let mut rolls = Vec::with_capacity(targets.len());
        for (index, t) in targets.iter().enumerate() {
            let bad = |problem| PlanError::Target {
                index,
                id: t.id.clone(),
                problem,
            };
            if !(t.ra_deg.is_finite() && t.dec_deg.is_finite()) {
                return Err(bad("coordinates are not finite"));
            }
            if !(t.duration_s.is_finite() && t.duration_s >= 0.0) {
                return Err(bad("the dwell must be finite and at least 0 s"));
            }
            if t.instrument >= instruments {
                return Err(bad("its instrument is not in the profile"));
            }
            if !(1..=super::LOWEST_PRIORITY).contains(&t.priority) {
                return Err(bad("its priority must be from 1 (highest) to 9"));
            }
            if let Some((a, b)) = t.window {
                if !(a.jd.is_finite() && b.jd.is_finite() && a.jd < b.jd) {
                    return Err(bad("its proposal window must end after it starts"));
                }
            }
            let range = t.roll_range_deg.unwrap_or(profile.roll_range_deg);
            if !roll_ok(range) {
                return Err(bad(
                    "its roll range must be finite, min <= max, within ±180°",
                ));
            }
            units.push(unit_vector(t.ra_deg, t.dec_deg));
            rolls.push(candidate_rolls(range, profile.roll_steps));
        }
        let n = targets.len();
        let mut after = vec![Vec::new(); n];
        let mut before = vec![Vec::new(); n];
        let mut group_prev = vec![None; n];
        let mut group_next = vec![None; n];
        for (index, l) in links.iter().enumerate() {
            let bad = |problem: String| PlanError::Link { index, problem };
            if l.first >= n || l.second >= n || l.first == l.second {
                return Err(bad(format!(
                    "targets {} and {} must be two different targets of the pool",
                    l.first, l.second
                )));
            }
            let lag_ok = |v: Option<f64>| v.is_none_or(|x| x.is_finite() && x >= 0.0);
            if !(lag_ok(l.min_lag_s) && lag_ok(l.max_lag_s)) {
                return Err(bad("lags must be finite and >= 0".into()));
            }
            if let (Some(a), Some(b)) = (l.min_lag_s, l.max_lag_s) {
                if a > b {
                    return Err(bad("the least lag is larger than the greatest".into()));
                }
            }
            match l.kind {
                LinkKind::After => {
                    after[l.second].push(index);
                    before[l.first].push(index);
                }
                LinkKind::Group => {
                    if group_next[l.first].is_some() || group_prev[l.second].is_some() {
                        return Err(bad(format!(
                            "{} or {} is grouped twice",
                            targets[l.first].id, targets[l.second].id
                        )));
                    }
                    group_next[l.first] = Some(l.second);
                    group_prev[l.second] = Some(l.first);
                }
            }
        }
        let visibility: Vec<Visibility> = units
            .iter()
            .map(|u| visibility(u, start, horizon_days, band))
            .collect();
        let allowed = targets
            .iter()
            .zip(&visibility)
            .map(|(t, v)| allowed_windows(t, v))
            .collect();
        Ok(Context {
            profile,
            targets,
            links: links.to_vec(),
            units,
            visibility,
            allowed,
            rolls,
            after,
            before,
            group_prev,
            group_next,
            start,
            end,
            band,
            threshold_nms,
            start_pose,
        })
    }

    /// The targets.
    pub fn targets(&self) -> &[Target] {
        self.targets
    }

    /// The links.
    pub fn links(&self) -> &[Link] {
        &self.links
    }

    /// The profile.
    pub fn profile(&self) -> &Profile {
        self.profile
    }

    /// Plan start.
    pub fn start(&self) -> Epoch {
        self.start
    }

    /// End of the horizon.
    pub fn end(&self) -> Epoch {
        self.end
    }

    /// Momentum that triggers a dump: `wheel_limit_nms × wheel_margin`, N·m·s.
    pub fn threshold_nms(&self) -> f64 {
        self.threshold_nms
    }

    /// Target `i`'s visibility over the horizon (the band narrowed by [`BAND_MARGIN_DEG`]).
    pub fn visibility(&self, i: usize) -> &Visibility {
        &self.visibility[i]
    }

    /// Target `i`'s windows the plan may use: its visibility windows inside its proposal
    /// window, each as long as its dwell at least.
    pub fn allowed(&self, i: usize) -> &[Window] {
        &self.allowed[i]
    }

    /// Target `i`'s candidate rolls, degrees (the one nearest the nominal roll first).
    pub fn rolls(&self, i: usize) -> &[f64] {
        &self.rolls[i]
    }

    /// The target grouped right before `i`, if any.
    pub fn group_prev(&self, i: usize) -> Option<usize> {
        self.group_prev[i]
    }

    /// The target grouped right after `i`, if any.
    pub fn group_next(&self, i: usize) -> Option<usize> {
        self.group_next[i]
    }

    /// Splits the pool into targets that may be planned and those that never can, with the
    /// reason (never in the band, windows too short, outside the proposal window, momentum
    /// too large, or linked to one of those).
    pub fn screen(&self) -> (Vec<usize>, Vec<Unscheduled>) {
        let n = self.targets.len();
        let mut reason: Vec<Option<Reason>> = vec![None; n];
        for (j, r) in reason.iter_mut().enumerate() {
            let v = &self.visibility[j];
            *r = if v.windows.is_empty() {
                Some(Reason::NeverInBand)
            } else if self.allowed[j].is_empty() {
                let longest = v.windows.iter().map(Window::seconds).fold(0.0, f64::max);
                if longest < self.targets[j].duration_s {
                    Some(Reason::WindowsTooShort {
                        longest_window_s: longest,
                    })
                } else {
                    Some(Reason::OutsideProposalWindow)
                }
            } else {
                self.own_momentum(j)
                    .filter(|&m| m > self.threshold_nms)
                    .map(|m| Reason::MomentumTooLarge { momentum_nms: m })
            };
        }
        // A target linked to one that can never be planned cannot be planned either (an
        // `after` link needs its first target; a group needs both).
        loop {
            let mut changed = false;
            for l in &self.links {
                let pairs: &[(usize, usize)] = match l.kind {
                    LinkKind::After => &[(l.first, l.second)],
                    LinkKind::Group => &[(l.first, l.second), (l.second, l.first)],
                };
                for &(a, b) in pairs {
                    if reason[a].is_some() && reason[b].is_none() {
                        reason[b] = Some(Reason::Link { other: a });
                        changed = true;
                    }
                }
            }
            if !changed {
                break;
            }
        }
        let mut keep = Vec::new();
        let mut out = Vec::new();
        for (j, r) in reason.into_iter().enumerate() {
            match r {
                None => keep.push(j),
                Some(r) => out.push(self.unscheduled(j, r)),
            }
        }
        (keep, out)
    }

    /// The smallest `|H|` a dwell of target `j` adds from empty wheels over its candidate rolls,
    /// at the start of its first allowed window (`None` when the attitude is undefined).
    fn own_momentum(&self, j: usize) -> Option<f64> {
        let w = self.allowed[j].first()?;
        self.rolls[j]
            .iter()
            .filter_map(|&roll| {
                let pose = Pose::Target { j, roll_deg: roll };
                let mut h = [0.0; 3];
                let mut t = w.start;
                let mut left = self.targets[j].duration_s;
                while left > 0.0 {
                    let d = left.min(PIECE_S);
                    let tau = self.torque(&pose, later(t, 0.5 * d))?;
                    h = axpy(&h, d, &tau);
                    t = later(t, d);
                    left -= d;
                }
                Some(norm(&h))
            })
            .min_by(f64::total_cmp)
    }

    /// An unscheduled entry for target `j`.
    pub fn unscheduled(&self, target: usize, reason: Reason) -> Unscheduled {
        Unscheduled {
            target,
            reason,
            min_elongation_deg: self.visibility[target].min_elongation_deg,
            max_elongation_deg: self.visibility[target].max_elongation_deg,
        }
    }

    fn attitude(&self, pose: &Pose, sun: &Vec3) -> Option<Attitude> {
        match *pose {
            Pose::Nowhere => None,
            Pose::Fixed { u, roll_deg } => rolled(&u, sun, roll_deg),
            Pose::Target { j, roll_deg } => rolled(&self.units[j], sun, roll_deg),
            Pose::Park { azimuth_deg } => rolled(&self.park_direction(sun, azimuth_deg)?, sun, 0.0),
        }
    }

    /// The parking direction at the band's middle elongation and `azimuth_deg` about the Sun.
    fn park_direction(&self, sun: &Vec3, azimuth_deg: f64) -> Option<Vec3> {
        let p = normalize(&cross(sun, &[0.0, 0.0, 1.0]))?;
        let q = cross(sun, &p);
        let theta = (0.5 * (self.band.0 + self.band.1)).to_radians();
        let (sa, ca) = azimuth_deg.to_radians().sin_cos();
        let (st, ct) = theta.sin_cos();
        Some([
            ct * sun[0] + st * (ca * p[0] + sa * q[0]),
            ct * sun[1] + st * (ca * p[1] + sa * q[1]),
            ct * sun[2] + st * (ca * p[2] + sa * q[2]),
        ])
    }

    fn direction(&self, pose: &Pose, sun: &Vec3) -> Option<Vec3> {
        match *pose {
            Pose::Nowhere => None,
            Pose::Fixed { u, .. } => Some(u),
            Pose::Target { j, .. } => Some(self.units[j]),
            Pose::Park { azimuth_deg } => self.park_direction(sun, azimuth_deg),
        }
    }

    /// Solar torque at `pose` at `at`, inertial, N·m.
    fn torque(&self, pose: &Pose, at: Epoch) -> Option<Vec3> {
        let sun = sun_j2000(at);
        let a = self.attitude(pose, &sun.direction)?;
        Some(solar_torque_nm(
            self.profile,
            &a,
            &sun.direction,
            sun.distance_au,
        ))
    }

    fn in_band(&self, pose: &Pose, at: Epoch) -> bool {
        let sun = sun_j2000(at).direction;
        match self.direction(pose, &sun) {
            Some(u) => {
                let e = elongation_deg(&u, &sun);
                e >= self.band.0 && e <= self.band.1
            }
            None => false,
        }
    }

    /// The transition from `from` (instrument `from_inst`) to `to` (instrument `to_inst`)
    /// starting at `at`.
    fn transition(
        &self,
        from: &Pose,
        from_inst: Option<usize>,
        to: &Pose,
        to_inst: Option<usize>,
        at: Epoch,
    ) -> Option<Transition> {
        let p = self.profile;
        let sun = sun_j2000(at);
        let s = sun.direction;
        let to_att = self.attitude(to, &s)?;
        let settle = to_inst.map_or(0.0, |i| p.instruments[i].settle_s);
        let tau_to = solar_torque_nm(p, &to_att, &s, sun.distance_au);
        if *from == Pose::Nowhere {
            return Some(Transition {
                angle_deg: 0.0,
                slew_s: 0.0,
                total_s: settle,
                torque: tau_to,
            });
        }
        let from_att = self.attitude(from, &s)?;
        let angle = eigen_axis_angle_deg(&from_att, &to_att);
        let slew = slew_time_s(angle, p.slew_rate_deg_s, p.slew_accel_deg_s2)?;
        let e_from = elongation_deg(&self.direction(from, &s)?, &s);
        let e_to = elongation_deg(&self.direction(to, &s)?, &s);
        let thermal = thermal_s(
            e_from,
            e_to,
            p.thermal_warm_s_per_deg,
            p.thermal_cool_s_per_deg,
        );
        let setup = match (from_inst, to_inst) {
            (Some(a), Some(b)) => p.setup_s[a][b],
            _ => 0.0,
        };
        let tau_from = solar_torque_nm(p, &from_att, &s, sun.distance_au);
        Some(Transition {
            angle_deg: angle,
            slew_s: slew,
            total_s: slew + settle + thermal + setup,
            torque: [
                0.5 * (tau_from[0] + tau_to[0]),
                0.5 * (tau_from[1] + tau_to[1]),
                0.5 * (tau_from[2] + tau_to[2]),
            ],
        })
    }

    /// The earliest start of target `j`'s dwell at or after `ready`, given the starts of the
    /// targets already observed (`started`, JD, NaN when not observed).
    fn earliest_start(&self, j: usize, ready: Epoch, started: &[f64]) -> Result<Epoch, Reason> {
        let dwell_days = self.targets[j].duration_s / SECONDS_PER_DAY;
        let mut t = ready.jd;
        for &li in &self.after[j] {
            let l = &self.links[li];
            let a = started[l.first];
            if a.is_nan() {
                return Err(Reason::Link { other: l.first });
            }
            if let Some(min) = l.min_lag_s {
                t = t.max(a + min / SECONDS_PER_DAY);
            }
        }
        // A target that should come before one already observed comes too late.
        for &li in &self.before[j] {
            let l = &self.links[li];
            if !started[l.second].is_nan() {
                return Err(Reason::Link { other: l.second });
            }
        }
        let w = self.allowed[j]
            .iter()
            .find(|w| w.end.jd - dwell_days >= t.max(w.start.jd) - EPS_DAYS);
        let Some(w) = w else {
            return Err(if t + dwell_days > self.end.jd {
                Reason::HorizonFull
            } else {
                Reason::WindowsPassed
            });
        };
        let s = t.max(w.start.jd);
        for &li in &self.after[j] {
            let l = &self.links[li];
            if let Some(max) = l.max_lag_s {
                if s > started[l.first] + max / SECONDS_PER_DAY + EPS_DAYS {
                    return Err(Reason::Link { other: l.first });
                }
            }
        }
        Ok(Epoch { jd: s })
    }

    /// Plays `visits` strictly: the schedule of every visit, or the first visit that cannot
    /// be made (its index in `visits`) with the reason.
    pub fn play(&self, visits: &[Visit]) -> Result<Result<Schedule, (usize, Reason)>, PlanError> {
        self.check_visits(visits)?;
        let mut play = Play::new(self);
        for (k, v) in visits.iter().enumerate() {
            if let Err(Block::Reason(r)) = play.step(*v, None) {
                return Ok(Err((k, r)));
            }
        }
        Ok(Ok(play.finish(&[])))
    }

    /// Plays `visits`, leaving out (with the reason) every visit that cannot be made at its
    /// turn, and listing `also_out` (targets not in the sequence) as left out for the reasons
    /// given.
    pub fn play_lenient(
        &self,
        visits: &[Visit],
        also_out: &[Unscheduled],
    ) -> Result<Schedule, PlanError> {
        self.check_visits(visits)?;
        let mut play = Play::new(self);
        let mut out = also_out.to_vec();
        for v in visits {
            if let Err(Block::Reason(r)) = play.step(*v, None) {
                out.push(self.unscheduled(v.target, r));
            }
        }
        Ok(play.finish(&out))
    }

    /// Visits of `order` at each target's first candidate roll (the one nearest the nominal).
    pub fn nominal(order: &[usize]) -> Vec<Visit> {
        order
            .iter()
            .map(|&target| Visit { target, roll: 0 })
            .collect()
    }

    fn check_visits(&self, visits: &[Visit]) -> Result<(), PlanError> {
        let mut seen = vec![false; self.targets.len()];
        for v in visits {
            let fine = v.target < self.targets.len()
                && (v.roll as usize) < self.rolls[v.target].len()
                && !seen[v.target];
            if !fine {
                return Err(PlanError::Order { index: v.target });
            }
            seen[v.target] = true;
        }
        Ok(())
    }

    /// Momentum through `pieces` from `h` at `t0` (the telescope at `from`), then the dwell
    /// (`dwell`: pose and seconds), with dumps by the module's rules.
    #[allow(clippy::too_many_arguments)]
    fn run_pieces(
        &self,
        t0: Epoch,
        h: Vec3,
        from: Pose,
        pieces: &[Piece],
        dwell: (Pose, f64),
        idle: Idle,
    ) -> Option<Outcome> {
        let thr = self.threshold_nms;
        let mut o = Outcome {
            events: Vec::new(),
            delay_s: 0.0,
            h_start: h,
            kg: 0.0,
            dumps: 0,
            dumped_nms: 0.0,
            peak: norm(&h),
            busy_s: 0.0,
            slew_s: 0.0,
            slew_deg: 0.0,
            final_angle_deg: 0.0,
            idle,
        };
        let mut t = t0;
        let mut h = h;
        let planned: f64 = pieces.iter().map(Piece::seconds).sum();
        let dwell_steps = self.dwell_steps(&dwell.0, dwell.1, later(t0, planned))?;
        let over = |h0: &Vec3, steps: &[(f64, Vec3)]| -> bool {
            let mut hh = *h0;
            steps.iter().any(|(d, tau)| {
                hh = axpy(&hh, *d, tau);
                norm(&hh) > thr
            })
        };
        let too_large = |o: Outcome| Outcome {
            delay_s: f64::INFINITY,
            ..o
        };
        for (k, pc) in pieces.iter().enumerate() {
            match *pc {
                Piece::Wait { pose, seconds } => {
                    self.wait(&mut o, &mut t, &mut h, pose, seconds)?
                }
                Piece::Move { tr, target, .. } => {
                    let mut ahead = vec![(tr.total_s, tr.torque)];
                    let waits_after = pieces[k + 1..]
                        .iter()
                        .any(|q| matches!(q, Piece::Wait { .. }));
                    if !waits_after {
                        ahead.extend(dwell_steps.iter().copied());
                    }
                    if over(&h, &ahead) {
                        let held = self.pose_before(from, pieces, k);
                        self.dump_now(&mut o, &mut t, &mut h, held);
                        if over(&h, &ahead[..1]) {
                            return Some(too_large(o));
                        }
                    }
                    let start = t;
                    h = axpy(&h, tr.total_s, &tr.torque);
                    t = later(t, tr.total_s);
                    o.busy_s += tr.total_s;
                    o.slew_s += tr.slew_s;
                    o.slew_deg += tr.angle_deg;
                    if target.is_some() {
                        o.final_angle_deg = tr.angle_deg;
                    }
                    o.events.push(Event {
                        activity: Activity::Slew,
                        start,
                        end: t,
                        target,
                        h_start_nms: [f64::NAN; 3],
                        h_end_nms: h,
                    });
                }
            }
            o.peak = o.peak.max(norm(&h));
        }
        // Before the dwell: a dump when the dwell needs it.
        if over(&h, &dwell_steps) {
            let held = self.pose_before(from, pieces, pieces.len());
            self.dump_now(&mut o, &mut t, &mut h, held);
            if over(&h, &dwell_steps) {
                return Some(too_large(o));
            }
        }
        o.h_start = h;
        Some(o)
    }

    /// The dwell of `pose` for `seconds` from `start` as (piece seconds, torque) pieces.
    fn dwell_steps(&self, pose: &Pose, seconds: f64, start: Epoch) -> Option<Vec<(f64, Vec3)>> {
        let mut v = Vec::new();
        let mut left = seconds;
        let mut at = start;
        while left > 0.0 {
            let d = left.min(PIECE_S);
            v.push((d, self.torque(pose, later(at, 0.5 * d))?));
            at = later(at, d);
            left -= d;
        }
        Some(v)
    }

    /// The pose the telescope holds before piece `k`.
    fn pose_before(&self, from: Pose, pieces: &[Piece], k: usize) -> Pose {
        match k.checked_sub(1).and_then(|i| pieces.get(i)) {
            Some(Piece::Wait { pose, .. }) => *pose,
            Some(Piece::Move { to, .. }) => *to,
            None => from,
        }
    }

    /// A dump now, at `pose`: moved into the waiting just before when there is one (at its end
    /// when it holds the whole dump, nothing delayed; else from its start, what follows
    /// delayed by the part it does not hold), else made now (what follows delayed by the dump).
    fn dump_now(&self, o: &mut Outcome, t: &mut Epoch, h: &mut Vec3, pose: Pose) {
        let dump_s = self.profile.dump_s;
        // Before the first observation without a start pointing the attitude is unknown.
        let tau = self.torque(&pose, *t).unwrap_or([0.0; 3]);
        let waiting =
            o.delay_s == 0.0 && matches!(o.events.last(), Some(e) if e.activity == Activity::Wait);
        match o.events.pop() {
            Some(e) if waiting => {
                let w = seconds_between(e.start, e.end);
                let back = w.min(dump_s);
                let cut = later(e.end, -back);
                let h_cut = axpy(h, -back, &tau);
                if seconds_between(e.start, cut) > 1e-6 {
                    o.events.push(Event {
                        end: cut,
                        h_end_nms: h_cut,
                        ..e
                    });
                }
                *t = cut;
                *h = h_cut;
                self.dump(o, t, h, &tau);
                o.delay_s += dump_s - back;
            }
            other => {
                o.events.extend(other);
                self.dump(o, t, h, &tau);
                o.delay_s += dump_s;
            }
        }
        o.peak = o.peak.max(norm(h));
    }

    /// A dump at `t` under the torque `tau`: the wheels emptied, the torque acting meanwhile.
    fn dump(&self, o: &mut Outcome, t: &mut Epoch, h: &mut Vec3, tau: &Vec3) {
        let p = self.profile;
        let kg = dump_propellant_kg(h, p.thruster_arm_m, p.thruster_isp_s).unwrap_or(0.0);
        let before = *h;
        let end = later(*t, p.dump_s);
        *h = axpy(&[0.0; 3], p.dump_s, tau);
        o.events.push(Event {
            activity: Activity::Dump,
            start: *t,
            end,
            target: None,
            h_start_nms: before,
            h_end_nms: *h,
        });
        o.kg += kg;
        o.dumps += 1;
        o.dumped_nms += norm(&before);
        o.busy_s += p.dump_s;
        *t = end;
    }

    /// Waiting `seconds` at `pose` from `t`, dumping whenever `|H|` reaches the threshold.
    /// Delay left from earlier dumps comes out of the waiting first.
    fn wait(
        &self,
        o: &mut Outcome,
        t: &mut Epoch,
        h: &mut Vec3,
        pose: Pose,
        seconds: f64,
    ) -> Option<()> {
        let thr = self.threshold_nms;
        let dump_s = self.profile.dump_s;
        let absorbed = o.delay_s.min(seconds);
        o.delay_s -= absorbed;
        let mut left = seconds - absorbed;
        let mut waited = 0.0;
        let mut dumps = 0;
        let push = |o: &mut Outcome, t: Epoch, h: Vec3, waited: f64| {
            if waited > 1e-6 {
                o.events.push(Event {
                    activity: Activity::Wait,
                    start: later(t, -waited),
                    end: t,
                    target: None,
                    h_start_nms: [f64::NAN; 3],
                    h_end_nms: h,
                });
            }
        };
        while left > 1e-9 {
            let d = left.min(PIECE_S);
            // Before the first observation without a start pointing: no torque known.
            let tau = self.torque(&pose, later(*t, 0.5 * d)).unwrap_or([0.0; 3]);
            let end_h = axpy(h, d, &tau);
            if norm(&end_h) <= thr {
                *h = end_h;
                *t = later(*t, d);
                left -= d;
                waited += d;
                continue;
            }
            // First crossing of |h + τ x| = thr: a x² + b x + c = 0 with c ≤ 0.
            let a = dot(&tau, &tau);
            let b = 2.0 * dot(h, &tau);
            let c = dot(h, h) - thr * thr;
            let x = ((-b + (b * b - 4.0 * a * c).max(0.0).sqrt()) / (2.0 * a)).clamp(0.0, d);
            if !x.is_finite() {
                return None;
            }
            *h = axpy(h, x, &tau);
            *t = later(*t, x);
            waited += x;
            left -= x;
            push(o, *t, *h, waited);
            waited = 0.0;
            self.dump(o, t, h, &tau);
            dumps += 1;
            if dumps > MAX_WAIT_DUMPS {
                return None;
            }
            let used = dump_s.min(left);
            left -= used;
            o.delay_s += dump_s - used;
            o.peak = o.peak.max(thr);
        }
        push(o, *t, *h, waited);
        Some(())
    }
}

/// The allowed windows of a target: visibility windows cut to its proposal window, each at
/// least as long as its dwell.
fn allowed_windows(t: &Target, v: &Visibility) -> Vec<Window> {
    v.windows
        .iter()
        .filter_map(|w| {
            let (a, b) = match t.window {
                None => (w.start, w.end),
                Some((ps, pe)) => (
                    if ps.jd > w.start.jd { ps } else { w.start },
                    if pe.jd < w.end.jd { pe } else { w.end },
                ),
            };
            (b.jd - a.jd >= t.duration_s / SECONDS_PER_DAY - EPS_DAYS)
                .then_some(Window { start: a, end: b })
        })
        .collect()
}

/// A sequence being played out, visit by visit.
#[derive(Clone)]
pub struct Play<'c, 'a> {
    ctx: &'c Context<'a>,
    state: State,
    started: Vec<f64>,
    sched: Schedule,
}

impl<'c, 'a> Play<'c, 'a> {
    /// Nothing played yet: at the plan start, at the start pointing with the start momentum.
    pub fn new(ctx: &'c Context<'a>) -> Play<'c, 'a> {
        let h0 = ctx.profile.start_momentum_nms;
        Play {
            ctx,
            state: State {
                now: ctx.start,
                pose: ctx.start_pose,
                instrument: None,
                h: h0,
                last: None,
            },
            started: vec![f64::NAN; ctx.targets.len()],
            sched: Schedule {
                observations: Vec::new(),
                unscheduled: Vec::new(),
                events: Vec::new(),
                start: ctx.start,
                end: ctx.start,
                overhead_s: 0.0,
                wait_s: 0.0,
                busy_s: 0.0,
                slew_deg: 0.0,
                dumps: 0,
                dumped_nms: 0.0,
                start_momentum_nms: h0,
                final_h_nms: h0,
                final_momentum_nms: norm(&h0),
                propellant_kg: 0.0,
                peak_momentum_nms: norm(&h0),
            },
        }
    }

    /// Observations so far.
    pub fn len(&self) -> usize {
        self.sched.observations.len()
    }

    /// True before the first observation.
    pub fn is_empty(&self) -> bool {
        self.sched.observations.is_empty()
    }

    /// The current time: the end of the last observation.
    pub fn now(&self) -> Epoch {
        self.state.now
    }

    /// The schedule so far (its propellant not yet charged with the momentum left).
    pub fn schedule(&self) -> &Schedule {
        &self.sched
    }

    /// Plays visit `v` next. When it cannot be made at its turn, nothing changes and the
    /// reason is returned. `v` must name a target of the pool and one of its candidate rolls.
    pub fn push(&mut self, v: Visit) -> Result<(), Reason> {
        self.step(v, None).map_err(|Block::Reason(r)| r)
    }

    /// [`Play::push`], the dwell starting no earlier than `not_before` (a start a planner
    /// chose, replayed by `wend sky check`).
    pub fn push_not_before(&mut self, v: Visit, not_before: Epoch) -> Result<(), Reason> {
        self.step(v, Some(not_before)).map_err(|Block::Reason(r)| r)
    }

    fn step(&mut self, v: Visit, not_before: Option<Epoch>) -> Result<(), Block> {
        let ctx = self.ctx;
        let j = v.target;
        let Some(&roll_deg) = ctx.rolls.get(j).and_then(|r| r.get(v.roll as usize)) else {
            return Err(Block::Reason(Reason::Link { other: j }));
        };
        // Groups: a grouped target follows its partner directly, and nothing comes between.
        if let Some(g) = ctx.group_prev[j] {
            if self.state.last != Some(g) {
                return Err(Block::Reason(Reason::Link { other: g }));
            }
        }
        if let Some(last) = self.state.last {
            if let Some(next) = ctx.group_next[last] {
                if next != j {
                    return Err(Block::Reason(Reason::Link { other: last }));
                }
            }
        }
        if !self.started[j].is_nan() {
            return Err(Block::Reason(Reason::Link { other: j }));
        }
        let target = &ctx.targets[j];
        let to = Pose::Target { j, roll_deg };
        let inst = Some(target.instrument);
        let t0 = self.state.now;
        let direct = ctx
            .transition(&self.state.pose, self.state.instrument, &to, inst, t0)
            .ok_or(Block::Reason(Reason::WindowsPassed))?;
        let mut ready = later(t0, direct.total_s);
        if let Some(nb) = not_before {
            if nb.jd > ready.jd {
                ready = nb;
            }
        }
        for _ in 0..8 {
            let s = ctx
                .earliest_start(j, ready, &self.started)
                .map_err(Block::Reason)?;
            if ctx.group_prev[j].is_some() && seconds_between(ready, s) > 1.0 {
                return Err(Block::Reason(Reason::Link {
                    other: ctx.group_prev[j].unwrap_or(j),
                }));
            }
            let best = self.best_outcome(j, &to, direct, t0, s)?;
            if best.delay_s.is_infinite() {
                let momentum_nms = ctx.own_momentum(j).unwrap_or(f64::INFINITY);
                return Err(Block::Reason(Reason::MomentumTooLarge { momentum_nms }));
            }
            let start = later(s, best.delay_s);
            if best.delay_s > 0.0 {
                // Dumps the waiting could not hold push the dwell: still in its window?
                let again = ctx
                    .earliest_start(j, start, &self.started)
                    .map_err(Block::Reason)?;
                if seconds_between(start, again) > 1e-3 {
                    ready = again;
                    continue;
                }
            }
            self.commit(v, roll_deg, start, best);
            return Ok(());
        }
        Err(Block::Reason(Reason::WindowsPassed))
    }

    /// The best way to spend the time from `t0` to the dwell start `s`: waiting where the
    /// momentum comes out smallest (least delay first, then least propellant: the dumps made
    /// and the momentum left, charged as if dumped).
    fn best_outcome(
        &self,
        j: usize,
        to: &Pose,
        direct: Transition,
        t0: Epoch,
        s: Epoch,
    ) -> Result<Outcome, Block> {
        let ctx = self.ctx;
        let target = &ctx.targets[j];
        let inst = Some(target.instrument);
        let dwell = (*to, target.duration_s);
        let wait = seconds_between(t0, s) - direct.total_s;
        let h = self.state.h;
        let from = self.state.pose;
        let mut options: Vec<Outcome> = Vec::new();
        let mv = |tr: Transition, to: Pose, target| Piece::Move { tr, to, target };
        let mut try_pieces = |t: Epoch, pieces: &[Piece], idle: Idle| {
            if let Some(o) = ctx.run_pieces(t, h, from, pieces, dwell, idle) {
                options.push(o);
            }
        };
        if wait <= 1e-6 {
            try_pieces(t0, &[mv(direct, *to, Some(j))], Idle::None);
        } else {
            // Stay where the telescope is, then go.
            let stay_ok = match from {
                Pose::Nowhere => false,
                Pose::Park { .. } => true,
                _ => ctx.in_band(&from, t0) && ctx.in_band(&from, later(t0, wait)),
            };
            if stay_ok {
                if let Some(late) =
                    ctx.transition(&from, self.state.instrument, to, inst, later(t0, wait))
                {
                    let idle = wait + direct.total_s - late.total_s;
                    if idle >= 0.0 {
                        let pieces = [
                            Piece::Wait {
                                pose: from,
                                seconds: idle,
                            },
                            mv(late, *to, Some(j)),
                        ];
                        try_pieces(t0, &pieces, Idle::Stay);
                    }
                }
            }
            // Go to the target and wait there.
            if ctx.in_band(to, later(t0, direct.total_s)) && ctx.in_band(to, s) {
                let pieces = [
                    mv(direct, *to, Some(j)),
                    Piece::Wait {
                        pose: *to,
                        seconds: wait,
                    },
                ];
                try_pieces(t0, &pieces, Idle::Early);
            }
            // Park at an attitude fixed to the Sun.
            for k in 0..PARK_AZIMUTHS {
                let park = Pose::Park {
                    azimuth_deg: 360.0 * k as f64 / PARK_AZIMUTHS as f64,
                };
                let Some(a) = ctx.transition(&from, self.state.instrument, &park, None, t0) else {
                    continue;
                };
                let Some(b) = ctx.transition(&park, None, to, inst, later(t0, a.total_s)) else {
                    continue;
                };
                let idle = wait + direct.total_s - a.total_s - b.total_s;
                if idle <= 0.0 {
                    continue;
                }
                let pieces = [
                    mv(a, park, None),
                    Piece::Wait {
                        pose: park,
                        seconds: idle,
                    },
                    mv(b, *to, Some(j)),
                ];
                try_pieces(t0, &pieces, Idle::Park);
            }
        }
        let p = ctx.profile;
        let score = |o: &Outcome| {
            o.kg + dump_propellant_kg(&o.h_start, p.thruster_arm_m, p.thruster_isp_s)
                .unwrap_or(f64::INFINITY)
        };
        options
            .into_iter()
            .min_by(|a, b| {
                a.delay_s
                    .total_cmp(&b.delay_s)
                    .then(score(a).total_cmp(&score(b)))
            })
            .ok_or(Block::Reason(Reason::WindowsPassed))
    }

    fn commit(&mut self, v: Visit, roll_deg: f64, start: Epoch, o: Outcome) {
        let ctx = self.ctx;
        let j = v.target;
        let target = &ctx.targets[j];
        let pose = Pose::Target { j, roll_deg };
        // The dwell, piece by piece.
        let mut h = o.h_start;
        let mut t = start;
        let mut left = target.duration_s;
        let mut peak = o.peak.max(norm(&h));
        while left > 0.0 {
            let d = left.min(PIECE_S);
            let tau = ctx.torque(&pose, later(t, 0.5 * d)).unwrap_or([0.0; 3]);
            h = axpy(&h, d, &tau);
            peak = peak.max(norm(&h));
            t = later(t, d);
            left -= d;
        }
        let end = later(start, target.duration_s);
        let prev_end = self.state.now;
        let sched = &mut self.sched;
        // Waiting that ends after the last event and before the dwell (a delayed start).
        let mut events = o.events;
        if let Some(last) = events.last() {
            let gap = seconds_between(last.end, start);
            if gap > 1e-3 {
                events.push(Event {
                    activity: Activity::Wait,
                    start: last.end,
                    end: start,
                    target: None,
                    h_start_nms: [f64::NAN; 3],
                    h_end_nms: last.h_end_nms,
                });
            }
        }
        // Fill the start momentum of every event from the one before.
        let mut h_prev = self.state.h;
        for e in &mut events {
            if e.activity != Activity::Dump {
                e.h_start_nms = h_prev;
            }
            h_prev = e.h_end_nms;
        }
        events.push(Event {
            activity: Activity::Observe,
            start,
            end,
            target: Some(j),
            h_start_nms: o.h_start,
            h_end_nms: h,
        });
        let overhead = seconds_between(prev_end, start);
        let sun0 = sun_j2000(start).direction;
        let sun1 = sun_j2000(end).direction;
        let obs = Observation {
            target: j,
            roll: v.roll,
            roll_deg,
            instrument: target.instrument,
            start,
            end,
            elongation_start_deg: elongation_deg(&ctx.units[j], &sun0),
            elongation_end_deg: elongation_deg(&ctx.units[j], &sun1),
            slew_deg: o.final_angle_deg,
            slew_s: o.slew_s,
            overhead_s: overhead,
            wait_s: (overhead - o.busy_s).max(0.0),
            busy_s: o.busy_s.min(overhead),
            // A park is named even when its slews and a dump fill the whole gap (its two
            // slews are in slew_s); staying or going early with nothing left to wait is none.
            idle: if overhead - o.busy_s > 1e-3 || o.idle == Idle::Park {
                o.idle
            } else {
                Idle::None
            },
            dumps_before: o.dumps,
            dump_kg_before: o.kg,
            h_after_nms: h,
            momentum_nms: norm(&h),
        };
        sched.overhead_s += obs.overhead_s;
        sched.wait_s += obs.wait_s;
        sched.busy_s += obs.busy_s;
        sched.slew_deg += o.slew_deg;
        sched.dumps += o.dumps;
        sched.dumped_nms += o.dumped_nms;
        sched.propellant_kg += o.kg;
        sched.peak_momentum_nms = sched.peak_momentum_nms.max(peak);
        sched.events.extend(events);
        sched.end = end;
        sched.observations.push(obs);
        self.started[j] = start.jd;
        self.state = State {
            now: end,
            pose,
            instrument: Some(target.instrument),
            h,
            last: Some(j),
        };
    }

    /// The schedule, with `out` listed as left out and the momentum left charged as
    /// propellant.
    pub fn finish(self, out: &[Unscheduled]) -> Schedule {
        let p = self.ctx.profile;
        let mut sched = self.sched;
        sched.unscheduled = out.to_vec();
        sched.unscheduled.sort_by_key(|u| u.target);
        sched.final_h_nms = self.state.h;
        sched.final_momentum_nms = norm(&self.state.h);
        sched.propellant_kg +=
            dump_propellant_kg(&self.state.h, p.thruster_arm_m, p.thruster_isp_s).unwrap_or(0.0);
        sched
    }
}

impl Context<'_> {
    /// The transition costs between `nodes` (pool indices) at each one's first candidate
    /// roll, with the Sun of `at`, integer milliseconds, as a matrix over `[start, nodes…]`:
    /// row and column 0 are the start (the start pointing, or nowhere: a first transition is
    /// then the destination's settling only; nothing goes back to the start).
    pub fn cost_matrix_ms(&self, nodes: &[usize], at: Epoch) -> Vec<Vec<i64>> {
        use rayon::prelude::*;
        let poses: Vec<Pose> = std::iter::once(self.start_pose)
            .chain(nodes.iter().map(|&j| Pose::Target {
                j,
                roll_deg: self.rolls[j][0],
            }))
            .collect();
        let inst: Vec<Option<usize>> = std::iter::once(None)
            .chain(nodes.iter().map(|&j| Some(self.targets[j].instrument)))
            .collect();
        // A large finite cost where a transition is undefined or leads back to the start.
        let unusable = UNUSABLE_MS;
        (0..poses.len())
            .into_par_iter()
            .map(|a| {
                (0..poses.len())
                    .map(|b| {
                        if a == b {
                            0
                        } else if b == 0 {
                            unusable
                        } else {
                            self.transition(&poses[a], inst[a], &poses[b], inst[b], at)
                                .map_or(unusable, |t| (t.total_s * 1000.0).round() as i64)
                        }
                    })
                    .collect()
            })
            .collect()
    }

    /// The solar torque at target `j`'s first candidate roll at `at`, inertial, N·m.
    pub fn nominal_torque(&self, j: usize, at: Epoch) -> Vec3 {
        self.torque(
            &Pose::Target {
                j,
                roll_deg: self.rolls[j][0],
            },
            at,
        )
        .unwrap_or([0.0; 3])
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::separation_deg;
    use crate::momentum::STANDARD_GRAVITY_M_S2;
    use crate::testing::{shuffled, sky_profile, sky_targets};
    use crate::visibility::elongation_at;
    use rand::{Rng, SeedableRng};
    use rand_pcg::Pcg64;

    /// 2027-03-01 0h (JD 2461465.5).
    const START: Epoch = Epoch { jd: 2_461_465.5 };

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    /// Every check a played schedule must pass, whatever the order: each target once, inside
    /// the band at the start and end of its dwell (elongation from the Sun's formula, not the
    /// windows), inside its proposal window and the horizon, the timeline contiguous and its
    /// parts adding up, `|H|` never above the threshold at any event boundary, and the
    /// propellant equal to the model page's `m = |H| / (L Isp g0)` over everything dumped plus
    /// what is left.
    fn check(ctx: &Context, s: &Schedule) {
        let p = ctx.profile();
        let targets = ctx.targets();
        let thr = p.wheel_limit_nms * p.wheel_margin;
        let mut seen = vec![0; targets.len()];
        for o in &s.observations {
            seen[o.target] += 1;
        }
        for u in &s.unscheduled {
            seen[u.target] += 1;
        }
        assert!(seen.iter().all(|&c| c <= 1), "{seen:?}");
        let mut prev_end = ctx.start();
        for o in &s.observations {
            let t = &targets[o.target];
            let u = unit_vector(t.ra_deg, t.dec_deg);
            for at in [o.start, o.end] {
                let e = elongation_at(&u, at);
                assert!(
                    (p.elongation_min_deg..=p.elongation_max_deg).contains(&e),
                    "{} at {}: {e}",
                    t.id,
                    at.jd
                );
            }
            if let Some((a, b)) = t.window {
                assert!(o.start.jd >= a.jd - 1e-9 && o.end.jd <= b.jd + 1e-9);
            }
            assert!(o.start.jd >= prev_end.jd - 1e-9 && o.end.jd <= ctx.end().jd + 1e-9);
            assert!(close(
                seconds_between(prev_end, o.start),
                o.overhead_s,
                1e-3
            ));
            assert!(close(o.wait_s + o.busy_s, o.overhead_s, 1e-3));
            assert!(close(seconds_between(o.start, o.end), t.duration_s, 1e-3));
            prev_end = o.end;
        }
        // The timeline: contiguous events from the first to the last observation's end.
        for w in s.events.windows(2) {
            assert!(
                close(seconds_between(w[0].end, w[1].start), 0.0, 1e-3),
                "{:?} then {:?}",
                w[0],
                w[1]
            );
        }
        let mut dumped = 0.0;
        let mut dumps = 0;
        for e in &s.events {
            assert!(norm(&e.h_end_nms) <= thr + 1e-9, "{e:?}");
            if e.activity == Activity::Dump {
                assert!(norm(&e.h_start_nms) <= thr + 1e-9);
                dumped += norm(&e.h_start_nms);
                dumps += 1;
            }
        }
        assert!(s.peak_momentum_nms <= thr + 1e-9);
        assert_eq!(dumps, s.dumps);
        let kg = (dumped + s.final_momentum_nms)
            / (p.thruster_arm_m * p.thruster_isp_s * STANDARD_GRAVITY_M_S2);
        assert!(
            close(s.propellant_kg, kg, 1e-12),
            "{} {kg}",
            s.propellant_kg
        );
        let dwell: f64 = s
            .observations
            .iter()
            .map(|o| targets[o.target].duration_s)
            .sum();
        if !s.observations.is_empty() {
            assert!(close(s.elapsed_s(), dwell + s.overhead_s, 1e-2));
        }
    }

    /// Long dwells (half an hour to six hours) so that waits, dumps and parking all occur.
    fn long_pool(n: usize, seed: u64) -> Vec<Target> {
        let mut rng = Pcg64::seed_from_u64(seed);
        let mut t = sky_targets(n, seed);
        for x in &mut t {
            x.duration_s = rng.gen_range(1800.0..21_600.0);
        }
        t
    }

    #[test]
    fn random_pools_keep_every_rule_and_never_pass_the_dump_threshold() {
        let mut p = sky_profile();
        p.roll_range_deg = (-20.0, 20.0);
        let (mut dumps, mut waits, mut parked) = (0, 0, 0);
        for seed in 0..6 {
            let targets = long_pool(40, seed);
            let ctx = Context::new(&p, &targets, START, 6.0).unwrap();
            let (cands, screened) = ctx.screen();
            let mut rng = Pcg64::seed_from_u64(seed);
            let visits: Vec<Visit> = shuffled(cands.len(), seed)
                .into_iter()
                .map(|k| Visit {
                    target: cands[k],
                    roll: rng.gen_range(0..ctx.rolls(cands[k]).len()) as u8,
                })
                .collect();
            let s = ctx.play_lenient(&visits, &screened).unwrap();
            assert!(s.observations.len() >= 5, "{}", s.observations.len());
            check(&ctx, &s);
            dumps += s.dumps;
            waits += s.observations.iter().filter(|o| o.wait_s > 0.0).count();
            parked += s
                .observations
                .iter()
                .filter(|o| o.idle == Idle::Park)
                .count();
            // The same order played strictly up to its first failure agrees.
            if let Ok(Ok(strict)) = ctx.play(&s.visits()) {
                assert!(close(strict.elapsed_s(), s.elapsed_s(), 1e-6));
                assert!(close(strict.propellant_kg, s.propellant_kg, 1e-12));
            }
        }
        // The pools exercise what the checks are about.
        assert!(
            dumps > 0 && waits > 0 && parked > 0,
            "{dumps} {waits} {parked}"
        );
    }

    #[test]
    fn a_dump_that_no_waiting_can_hold_delays_the_observation_by_its_time() {
        // The wheels start just under the threshold along the first target's torque: the
        // first transition and dwell need a dump, which comes first and takes dump_s.
        let mut p = sky_profile();
        let targets = long_pool(30, 7);
        let ctx = Context::new(&p, &targets, START, 4.0).unwrap();
        let (cands, _) = ctx.screen();
        let j = *cands
            .iter()
            .find(|&&j| ctx.allowed(j)[0].start.jd <= START.jd)
            .unwrap();
        let calm = ctx.play(&[Visit { target: j, roll: 0 }]).unwrap().unwrap();
        let tau = ctx.nominal_torque(j, START);
        let k = 0.999 * p.wheel_limit_nms * p.wheel_margin / norm(&tau);
        p.start_momentum_nms = [tau[0] * k, tau[1] * k, tau[2] * k];
        let ctx = Context::new(&p, &targets, START, 4.0).unwrap();
        let full = ctx.play(&[Visit { target: j, roll: 0 }]).unwrap().unwrap();
        assert_eq!((calm.dumps, full.dumps), (0, 1));
        assert!(close(
            seconds_between(calm.observations[0].start, full.observations[0].start),
            p.dump_s,
            1e-3
        ));
        check(&ctx, &full);
    }

    #[test]
    fn a_start_pointing_costs_its_slew_and_a_pure_roll_turns_by_its_angle() {
        let mut p = sky_profile();
        let targets = sky_targets(30, 3);
        let ctx = Context::new(&p, &targets, START, 3.0).unwrap();
        let (cands, _) = ctx.screen();
        let j = cands[0];
        let t = &targets[j];
        // 40° away in declination (or the other way near the pole).
        let dec = if t.dec_deg > 40.0 {
            t.dec_deg - 40.0
        } else {
            t.dec_deg + 40.0
        };
        p.start_pointing = Some(crate::StartPointing {
            ra_deg: t.ra_deg,
            dec_deg: dec,
            roll_deg: 0.0,
        });
        let ctx = Context::new(&p, &targets, START, 3.0).unwrap();
        let s = ctx.play(&[Visit { target: j, roll: 0 }]).unwrap().unwrap();
        // The eigen-axis angle is at least the boresight separation (sky model, section 4).
        let sep = separation_deg(
            &unit_vector(t.ra_deg, dec),
            &unit_vector(t.ra_deg, t.dec_deg),
        );
        assert!(close(sep, 40.0, 1e-6));
        assert!(
            s.observations[0].slew_deg >= sep - 1e-6,
            "{}",
            s.observations[0].slew_deg
        );
        assert!(s.observations[0].slew_s > 0.0);
        // A pure roll about the boresight by ψ is a rotation by ψ (geometry).
        let sun = sun_j2000(START).direction;
        let u = unit_vector(t.ra_deg, t.dec_deg);
        let a = rolled(&u, &sun, 0.0).unwrap();
        let b = rolled(&u, &sun, 25.0).unwrap();
        assert!(close(eigen_axis_angle_deg(&a, &b), 25.0, 1e-9));
    }

    #[test]
    fn links_are_kept_or_the_visit_is_refused() {
        let p = sky_profile();
        let targets = long_pool(30, 11);
        let ctx0 = Context::new(&p, &targets, START, 8.0).unwrap();
        let (cands, _) = ctx0.screen();
        let (a, b, c) = (cands[0], cands[1], cands[2]);
        let links = vec![
            Link {
                kind: LinkKind::After,
                first: a,
                second: b,
                min_lag_s: Some(86_400.0),
                max_lag_s: Some(3.0 * 86_400.0),
            },
            Link {
                kind: LinkKind::Group,
                first: b,
                second: c,
                min_lag_s: None,
                max_lag_s: None,
            },
        ];
        let ctx = Context::with_links(&p, &targets, &links, START, 8.0).unwrap();
        let v = |t: usize| Visit { target: t, roll: 0 };
        // In order: b waits until a day after a starts; c follows b directly.
        if let Ok(Ok(s)) = ctx.play(&[v(a), v(b), v(c)]) {
            let (oa, ob, oc) = (&s.observations[0], &s.observations[1], &s.observations[2]);
            let lag = seconds_between(oa.start, ob.start);
            assert!(
                (86_400.0 - 1e-3..=3.0 * 86_400.0 + 1e-3).contains(&lag),
                "{lag}"
            );
            assert!(oc.wait_s < 1e-3, "{}", oc.wait_s);
            check(&ctx, &s);
        }
        // Out of order, or the group broken: refused with a link reason.
        let r = ctx.play(&[v(b), v(a)]).unwrap();
        assert!(matches!(r, Err((0, Reason::Link { .. }))), "{r:?}");
        let r = ctx.play(&[v(a), v(b), v(cands[3]), v(c)]).unwrap();
        assert!(matches!(r, Err((2, Reason::Link { .. }))), "{r:?}");
    }

    #[test]
    fn bad_inputs_are_refused_not_planned() {
        let p = sky_profile();
        let mut targets = sky_targets(3, 1);
        targets[1].priority = 0;
        assert!(matches!(
            Context::new(&p, &targets, START, 1.0),
            Err(PlanError::Target { index: 1, .. })
        ));
        let mut targets = sky_targets(3, 1);
        targets[2].roll_range_deg = Some((10.0, -10.0));
        assert!(matches!(
            Context::new(&p, &targets, START, 1.0),
            Err(PlanError::Target { index: 2, .. })
        ));
        let targets = sky_targets(3, 1);
        let self_link = [Link {
            kind: LinkKind::After,
            first: 1,
            second: 1,
            min_lag_s: None,
            max_lag_s: None,
        }];
        assert!(matches!(
            Context::with_links(&p, &targets, &self_link, START, 1.0),
            Err(PlanError::Link { index: 0, .. })
        ));
        let mut q = p.clone();
        q.start_momentum_nms = [100.0, 0.0, 0.0];
        assert!(matches!(
            Context::new(&q, &targets, START, 1.0),
            Err(PlanError::Profile {
                what: "start_momentum_nms",
                ..
            })
        ));
        assert!(Context::new(&p, &targets, START, f64::NAN).is_err());
        let ctx = Context::new(&p, &targets, START, 1.0).unwrap();
        let twice = [Visit { target: 0, roll: 0 }, Visit { target: 0, roll: 0 }];
        assert!(ctx.play(&twice).is_err());
        assert!(ctx.play(&[Visit { target: 9, roll: 0 }]).is_err());
        assert!(ctx.play(&[Visit { target: 0, roll: 3 }]).is_err());
    }

    #[test]
    fn candidate_rolls_split_the_range_nominal_first() {
        assert_eq!(candidate_rolls((0.0, 0.0), 3), vec![0.0]);
        assert_eq!(candidate_rolls((-20.0, 20.0), 3), vec![0.0, -20.0, 20.0]);
        assert_eq!(candidate_rolls((10.0, 30.0), 2), vec![10.0, 30.0]);
    }
}
