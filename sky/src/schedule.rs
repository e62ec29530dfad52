//! An observing sequence played out in real time: the Sun moves while the plan runs, every
//! observation is checked against the elongation band at its start and its end, the reaction
//! wheels store the solar-pressure momentum and are unloaded when they would pass their
//! planning threshold (sky model, sections 3 to 8).
//!
//! [`Context::simulate`] takes an order of targets as a *preference* and repairs it with a
//! local move: a target that is outside the band when its turn comes is moved later, to the
//! first moment it fits (checked again before every following observation). When nothing of
//! the order fits at the current time the plan waits for the next window of a target still
//! waiting; what never fits before the horizon ends is reported with its reason and its
//! elongation range, never dropped silently.
//!
//! Modelling choices of this module (beside those of the sky model):
//! - The plan starts with the telescope on its first target; the first observation's overhead
//!   is the waiting before it (if any) and its instrument's settling.
//! - During a transition the torque is the mean of the torques at its two end attitudes (the
//!   model's approximation for slews, applied to the whole transition); while waiting, the
//!   telescope stays at the previous target.
//! - A dump happens right before the transition to the observation that would carry `|H|` past
//!   the threshold `wheel_limit_nms × wheel_margin`, at the previous target; it resets `H` to
//!   zero and takes [`Profile::dump_s`]. The momentum left at the end of the plan is charged
//!   as propellant as if dumped (it takes no time and is not counted as a dump).
//! - Times are TT Julian dates; a second is 1/86400 day.
//! - Observations keep [`BAND_MARGIN_DEG`] inside the band (windows and checks both), for the
//!   accuracy of the solar coordinates; reported elongation ranges are the plain ones.
//!
//! **Caution.** A planning aid: plans are proposals to be confirmed by the operations team's
//! validated tools.

use std::fmt;

use serde::Serialize;

use super::geometry::{dot, eigen_axis_angle_deg, elongation_deg, norm, unit_vector, Vec3};
use super::momentum::{dump_propellant_kg, solar_torque_nm};
use super::slew::{check_profile, cost_checked_s, slew_time_s, Pointing, SlewCostError};
use super::sun::sun_j2000;
use super::visibility::{visibility, Visibility};
use super::{Epoch, Profile, Target};

const SECONDS_PER_DAY: f64 = 86_400.0;
/// Plans keep this far inside the elongation band, degrees: the low-precision Sun agrees with
/// astropy's to better than 0.01° (the fixture tests), times are written to the second
/// (0.00001°), so an observation planned inside the narrowed band is inside the real one.
pub const BAND_MARGIN_DEG: f64 = 0.02;
/// Most dumps one wait may need before the model calls the torque too large to wait under.
pub const MAX_WAIT_DUMPS: usize = 10_000;
/// How far ahead of a window's start a target is worth a full check, days (an hour covers
/// the longest transitions of any plausible profile; a target farther off is skipped cheaply).
const LOOKAHEAD_DAYS: f64 = 1.0 / 24.0;
/// Waiting for a window ends this long after the window opens, days (one second), so that
/// the target is inside the band and not on its edge.
const AFTER_EDGE_DAYS: f64 = 1.0 / SECONDS_PER_DAY;

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
    /// A target's coordinates or dwell are not usable.
    #[error("target {id} (index {index}): {problem}")]
    Target {
        /// Index of the target.
        index: usize,
        /// Its identifier.
        id: String,
        /// What is wrong.
        problem: &'static str,
    },
    /// The plan start or horizon is not usable.
    #[error("the horizon must be a positive finite number of days from a finite start, got {horizon_days} days from JD {start_jd}")]
    Horizon {
        /// Start given, Julian date.
        start_jd: f64,
        /// Horizon given, days.
        horizon_days: f64,
    },
    /// The order handed to the simulation names a target twice or one that does not exist.
    #[error("the order names target index {index} twice or out of range")]
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
    /// Its windows closed while the plan was observing other targets.
    WindowsPassed,
    /// It still had window time, but the plan reached the end of the horizon first.
    HorizonFull,
    /// Its transition and dwell alone would carry more momentum than the planning threshold.
    MomentumTooLarge {
        /// Momentum its transition and dwell add, N·m·s.
        momentum_nms: f64,
    },
}

impl Reason {
    /// A short code for tables: `never_in_band`, `windows_too_short`, `windows_passed`,
    /// `horizon_full`, `momentum_too_large`.
    pub fn code(&self) -> &'static str {
        match self {
            Reason::NeverInBand => "never_in_band",
            Reason::WindowsTooShort { .. } => "windows_too_short",
            Reason::WindowsPassed => "windows_passed",
            Reason::HorizonFull => "horizon_full",
            Reason::MomentumTooLarge { .. } => "momentum_too_large",
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
            Reason::WindowsPassed => {
                f.write_str("its windows closed while the plan observed other targets")
            }
            Reason::HorizonFull => f.write_str("the plan reached the end of the horizon first"),
            Reason::MomentumTooLarge { momentum_nms } => write!(
                f,
                "its transition and dwell alone add {momentum_nms:.2} N·m·s, over the planning threshold"
            ),
        }
    }
}

/// One observation of a plan.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Observation {
    /// Index of the target in the pool.
    pub target: usize,
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
    /// Eigen-axis slew angle from the previous target, degrees (0 for the first).
    pub slew_deg: f64,
    /// Slew time, seconds.
    pub slew_s: f64,
    /// Time from the end of the previous observation (or the plan start) to this start:
    /// waiting, dump, slew, settle, thermal and setup, seconds.
    pub overhead_s: f64,
    /// The waiting part of [`Observation::overhead_s`], seconds.
    pub wait_s: f64,
    /// `|H|` after the observation, N·m·s.
    pub momentum_nms: f64,
    /// True when a momentum dump precedes the observation.
    pub dump: bool,
    /// True when the repair moved the target later than its place in the order.
    pub moved: bool,
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

/// A sequence played out in time.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Schedule {
    /// The observations in time order.
    pub observations: Vec<Observation>,
    /// The targets left out, in pool order.
    pub unscheduled: Vec<Unscheduled>,
    /// Sum of the observations' overheads, seconds (the time objective).
    pub overhead_s: f64,
    /// The waiting part of [`Schedule::overhead_s`], seconds.
    pub wait_s: f64,
    /// Sum of the slew angles, degrees.
    pub slew_deg: f64,
    /// Momentum dumps made.
    pub dumps: usize,
    /// Momentum removed by the dumps, N·m·s.
    pub dumped_nms: f64,
    /// `|H|` left at the end, N·m·s (charged as propellant).
    pub final_momentum_nms: f64,
    /// Propellant of the dumps and of the momentum left at the end, kilograms (the
    /// propellant objective).
    pub propellant_kg: f64,
    /// Targets moved later than their place in the order by the repair.
    pub repairs: usize,
    /// End of the last observation (the plan start when nothing is scheduled).
    #[serde(skip)]
    pub end: Epoch,
    /// `(seconds since the plan start, |H| in N·m·s)` at every change of trend: the start, each
    /// dump (twice: before and after), each observation's start and end.
    #[serde(skip)]
    pub momentum_trace: Vec<(f64, f64)>,
    /// When each dump starts, seconds since the plan start.
    #[serde(skip)]
    pub dump_times_s: Vec<f64>,
}

/// What blocks a target at a moment.
enum Block {
    /// Outside the band at the start or the end of the dwell, or attitude undefined.
    Band,
    /// The dwell would end after the horizon.
    Horizon,
    /// Its own transition and dwell exceed the momentum threshold.
    Momentum(f64),
}

/// A feasible next observation, before it is committed ([`Runner::try_target`]).
pub struct Step {
    observation: Observation,
    /// Momentum dumped before it (zero vector when no dump), N·m·s.
    dumped: Vec3,
    /// True when a dump comes right before the transition.
    dump_before: bool,
    /// Dumps while waiting: (seconds after the previous observation's end, momentum dumped).
    wait_dumps: Vec<(f64, Vec3)>,
    /// `H` at the dump time, before the dump (or at the transition start), N·m·s.
    before_transition: Vec3,
    /// `H` after the transition, N·m·s.
    after_transition: Vec3,
    /// `H` after the dwell, N·m·s.
    after: Vec3,
    /// When the transition starts (after waiting, before any dump).
    transition_from: Epoch,
}

/// Where the plan stands between observations.
#[derive(Clone)]
struct State {
    prev: Option<usize>,
    prev_end: Epoch,
    h: Vec3,
}

/// The fixed inputs of a simulation: profile, targets, horizon and each target's visibility.
pub struct Context<'a> {
    profile: &'a Profile,
    targets: &'a [Target],
    units: Vec<Vec3>,
    visibility: Vec<Visibility>,
    start: Epoch,
    end: Epoch,
    band: (f64, f64),
    threshold_nms: f64,
}

fn add(a: &Vec3, b: &Vec3, k: f64) -> Vec3 {
    [a[0] + k * b[0], a[1] + k * b[1], a[2] + k * b[2]]
}

fn later(e: Epoch, seconds: f64) -> Epoch {
    Epoch {
        jd: e.jd + seconds / SECONDS_PER_DAY,
    }
}

fn seconds_between(a: Epoch, b: Epoch) -> f64 {
    (b.jd - a.jd) * SECONDS_PER_DAY
}

impl<'a> Context<'a> {
    /// Checks the inputs and computes every target's visibility from `start` over
    /// `horizon_days` days.
    pub fn new(
        profile: &'a Profile,
        targets: &'a [Target],
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
        let instruments = profile.instruments.len();
        let mut units = Vec::with_capacity(targets.len());
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
            units.push(unit_vector(t.ra_deg, t.dec_deg));
        }
        // Plans keep a margin inside the band for the model's accuracy.
        let band = (band.0 + BAND_MARGIN_DEG, band.1 - BAND_MARGIN_DEG);
        let visibility = units
            .iter()
            .map(|u| visibility(u, start, horizon_days, band))
            .collect();
        Ok(Context {
            profile,
            targets,
            units,
            visibility,
            start,
            end: later(start, horizon_days * SECONDS_PER_DAY),
            band,
            threshold_nms: profile.wheel_limit_nms * profile.wheel_margin,
        })
    }

    /// The targets.
    pub fn targets(&self) -> &[Target] {
        self.targets
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

    /// Target `i`'s visibility over the horizon.
    pub fn visibility(&self, i: usize) -> &Visibility {
        &self.visibility[i]
    }

    /// Splits the pool into the targets some window could hold (in pool order) and those no
    /// window can: never in the band, or every window shorter than the dwell.
    pub fn screen(&self) -> (Vec<usize>, Vec<Unscheduled>) {
        let mut candidates = Vec::new();
        let mut out = Vec::new();
        for (i, t) in self.targets.iter().enumerate() {
            let vis = &self.visibility[i];
            let longest = vis
                .windows
                .iter()
                .map(|w| w.seconds())
                .fold(0.0f64, f64::max);
            let reason = if vis.windows.is_empty() {
                Some(Reason::NeverInBand)
            } else if longest < t.duration_s {
                Some(Reason::WindowsTooShort {
                    longest_window_s: longest,
                })
            } else {
                None
            };
            match reason {
                Some(reason) => out.push(self.unscheduled(i, reason)),
                None => candidates.push(i),
            }
        }
        (candidates, out)
    }

    fn unscheduled(&self, target: usize, reason: Reason) -> Unscheduled {
        let vis = &self.visibility[target];
        Unscheduled {
            target,
            reason,
            min_elongation_deg: vis.min_elongation_deg,
            max_elongation_deg: vis.max_elongation_deg,
        }
    }

    fn inside(&self, e: f64) -> bool {
        e >= self.band.0 && e <= self.band.1
    }

    fn elongation(&self, target: usize, at: Epoch) -> f64 {
        elongation_deg(&self.units[target], &sun_j2000(at).direction)
    }

    /// True when target `j` has a window open at `now` or opening within the lookahead.
    fn may_fit_soon(&self, j: usize, now: Epoch) -> bool {
        self.visibility[j]
            .windows
            .iter()
            .any(|w| w.end.jd >= now.jd && w.start.jd <= now.jd + LOOKAHEAD_DAYS)
    }

    /// Why target `j`, a candidate left out of a plan that ends at `end`, is not in it:
    /// its windows closed by then, or it still had window time when the plan reached the
    /// horizon's end.
    pub fn left_out(&self, j: usize, end: Epoch) -> Unscheduled {
        let reason = if self.windows_over(j, end) {
            Reason::WindowsPassed
        } else {
            Reason::HorizonFull
        };
        self.unscheduled(j, reason)
    }

    /// True when every window of target `j` closed before `now`.
    fn windows_over(&self, j: usize, now: Epoch) -> bool {
        self.visibility[j].windows.iter().all(|w| w.end.jd < now.jd)
    }

    /// Next window opening of target `j` strictly after `now`.
    fn next_opening(&self, j: usize, now: Epoch) -> Option<Epoch> {
        self.visibility[j]
            .windows
            .iter()
            .map(|w| w.start)
            .find(|s| s.jd > now.jd)
    }

    /// Momentum after waiting `wait_s` seconds under the torque `torque` from `h`, dumping
    /// whenever `|H|` reaches the threshold (the dumps are taken to fit in the waiting), with
    /// the dumps as (seconds into the wait, momentum dumped). `None` when that would take more
    /// than [`MAX_WAIT_DUMPS`] dumps.
    fn wait_momentum(
        &self,
        h: Vec3,
        torque: &Vec3,
        wait_s: f64,
    ) -> Option<(Vec3, Vec<(f64, Vec3)>)> {
        let limit = self.threshold_nms;
        let end = add(&h, torque, wait_s);
        if norm(&end) <= limit {
            return Some((end, Vec::new()));
        }
        // First crossing of |h + τ t| = limit: a t² + b t + c = 0 with c ≤ 0 (|h| ≤ limit).
        let a = dot(torque, torque);
        let b = 2.0 * dot(&h, torque);
        let c = dot(&h, &h) - limit * limit;
        let first = (-b + (b * b - 4.0 * a * c).max(0.0).sqrt()) / (2.0 * a);
        // From zero, |τ| t reaches the limit every `period` seconds.
        let period = limit / a.sqrt();
        let more = ((wait_s - first) / period).floor().max(0.0);
        if !(first.is_finite() && period.is_finite()) || more >= MAX_WAIT_DUMPS as f64 {
            return None;
        }
        let mut dumps = vec![(first, add(&h, torque, first))];
        for k in 1..=more as usize {
            dumps.push((first + k as f64 * period, add(&[0.0; 3], torque, period)));
        }
        let last = first + more * period;
        Some((add(&[0.0; 3], torque, wait_s - last), dumps))
    }

    /// Target `j` as the next observation, its transition starting at `now`.
    fn try_next(&self, state: &State, j: usize, now: Epoch) -> Result<Step, Block> {
        let p = self.profile;
        let target = &self.targets[j];
        let sun = sun_j2000(now);
        let to = Pointing::new(target, &sun.direction).ok_or(Block::Band)?;
        let torque_to = solar_torque_nm(p, &to.attitude, &sun.direction, sun.distance_au);
        let wait_s = seconds_between(state.prev_end, now).max(0.0);
        let (slew_deg, slew_s, transition_s, torque_from) = match state.prev {
            None => (0.0, 0.0, p.instruments[to.instrument].settle_s, torque_to),
            Some(i) => {
                let from = Pointing::new(&self.targets[i], &sun.direction).ok_or(Block::Band)?;
                let angle = eigen_axis_angle_deg(&from.attitude, &to.attitude);
                let slew = slew_time_s(angle, p.slew_rate_deg_s, p.slew_accel_deg_s2)
                    .ok_or(Block::Band)?;
                let torque = solar_torque_nm(p, &from.attitude, &sun.direction, sun.distance_au);
                (angle, slew, cost_checked_s(p, &from, &to), torque)
            }
        };
        let mean_torque = [
            0.5 * (torque_from[0] + torque_to[0]),
            0.5 * (torque_from[1] + torque_to[1]),
            0.5 * (torque_from[2] + torque_to[2]),
        ];
        // While waiting the telescope stays at the previous target.
        let (before_transition, wait_dumps) = self
            .wait_momentum(state.h, &torque_from, wait_s)
            .ok_or(Block::Momentum(f64::INFINITY))?;
        // What this target's transition and dwell add, whatever came before.
        let own = add(
            &add(&[0.0; 3], &mean_torque, transition_s),
            &torque_to,
            target.duration_s,
        );
        if norm(&own) > self.threshold_nms {
            return Err(Block::Momentum(norm(&own)));
        }
        let carried = add(&before_transition, &own, 1.0);
        let dump = norm(&carried) > self.threshold_nms;
        let wait_dumps_empty = wait_dumps.is_empty();
        let (start_h, dump_s) = if dump {
            ([0.0; 3], p.dump_s)
        } else {
            (before_transition, 0.0)
        };
        let after_transition = add(&start_h, &mean_torque, transition_s);
        let after = add(&after_transition, &torque_to, target.duration_s);
        let start = later(now, dump_s + transition_s);
        let end = later(start, target.duration_s);
        if end.jd > self.end.jd {
            return Err(Block::Horizon);
        }
        let e0 = self.elongation(j, start);
        if !self.inside(e0) {
            return Err(Block::Band);
        }
        let e1 = self.elongation(j, end);
        if !self.inside(e1) {
            return Err(Block::Band);
        }
        Ok(Step {
            observation: Observation {
                target: j,
                start,
                end,
                elongation_start_deg: e0,
                elongation_end_deg: e1,
                slew_deg,
                slew_s,
                overhead_s: seconds_between(state.prev_end, start),
                wait_s,
                momentum_nms: norm(&after),
                dump: dump || !wait_dumps_empty,
                moved: false,
            },
            dumped: if dump { before_transition } else { [0.0; 3] },
            dump_before: dump,
            wait_dumps,
            before_transition,
            after_transition,
            after,
            transition_from: now,
        })
    }

    /// Plays `order` (target indices, each at most once) out from the plan start, repairing
    /// it where a target is outside the band at its turn (see the module notes). Targets of
    /// the pool not in `order` are not scheduled and not listed.
    pub fn simulate(&self, order: &[usize]) -> Result<Schedule, PlanError> {
        self.check_order(order)?;
        Ok(self.play(order, Runner::new(self), Vec::new(), 0, None))
    }

    fn check_order(&self, order: &[usize]) -> Result<(), PlanError> {
        let mut seen = vec![false; self.targets.len()];
        for &j in order {
            match seen.get_mut(j) {
                Some(s) if !*s => *s = true,
                _ => return Err(PlanError::Order { index: j }),
            }
        }
        Ok(())
    }

    /// [`Context::simulate`], keeping a [`Snapshot`] of the play every `every` positions of
    /// the order (at least 1), so that orders sharing a prefix with this one can be played
    /// from the last snapshot inside the prefix ([`Context::resume`]).
    pub fn simulate_recording(
        &self,
        order: &[usize],
        every: usize,
    ) -> Result<(Schedule, Vec<Snapshot<'_, 'a>>), PlanError> {
        self.check_order(order)?;
        let mut snaps = Vec::new();
        let s = self.play(
            order,
            Runner::new(self),
            Vec::new(),
            0,
            Some((every.max(1), &mut snaps)),
        );
        Ok((s, snaps))
    }

    /// Plays `order` from `snapshot`, which must come from [`Context::simulate_recording`] of
    /// an order with the same first `snapshot.position()` targets: the result is the same as
    /// [`Context::simulate`] of `order`, without replaying the common prefix.
    pub fn resume(
        &self,
        snapshot: &Snapshot<'_, 'a>,
        order: &[usize],
    ) -> Result<Schedule, PlanError> {
        self.check_order(order)?;
        Ok(self.play(
            order,
            snapshot.runner.clone(),
            snapshot.deferred.clone(),
            snapshot.position,
            None,
        ))
    }

    fn play<'c>(
        &'c self,
        order: &[usize],
        mut run: Runner<'c, 'a>,
        mut deferred: Vec<usize>,
        mut pos: usize,
        mut record: Option<(usize, &mut Vec<Snapshot<'c, 'a>>)>,
    ) -> Schedule {
        loop {
            let mut chosen = run.first_fitting(&mut deferred, true);
            while chosen.is_none() && pos < order.len() {
                if let Some((every, snaps)) = record.as_mut() {
                    let due =
                        pos.is_multiple_of(*every) && snaps.last().is_none_or(|s| s.position < pos);
                    if due || (pos == 0 && snaps.is_empty()) {
                        snaps.push(Snapshot {
                            position: pos,
                            runner: run.clone(),
                            deferred: deferred.clone(),
                        });
                    }
                }
                let j = order[pos];
                pos += 1;
                match run.try_target(j) {
                    Some(step) => chosen = Some(step),
                    None if !run.dropped(j) => deferred.push(j),
                    None => {}
                }
            }
            if let Some(step) = chosen {
                run.commit(step);
                continue;
            }
            // Nothing fits now: wait for the next window of a target still waiting.
            if !run.wait_for_opening(&deferred) {
                break;
            }
        }
        run.finish(&deferred)
    }
}

/// The state of a play just before it takes the target at [`Snapshot::position`] of its order.
#[derive(Clone)]
pub struct Snapshot<'c, 'a> {
    position: usize,
    runner: Runner<'c, 'a>,
    deferred: Vec<usize>,
}

impl Snapshot<'_, '_> {
    /// How many targets of the order were taken before it.
    pub fn position(&self) -> usize {
        self.position
    }
}

/// A plan being played out in time, observation by observation: the building block of
/// [`Context::simulate`] and of planners that choose the next targets as time goes on.
#[derive(Clone)]
pub struct Runner<'c, 'a> {
    ctx: &'c Context<'a>,
    state: State,
    sched: Schedule,
    now: Epoch,
    /// Targets already scheduled or dropped (listed as unscheduled).
    done: Vec<bool>,
}

impl<'c, 'a> Runner<'c, 'a> {
    /// A plan with nothing in it, at the plan start.
    pub fn new(ctx: &'c Context<'a>) -> Runner<'c, 'a> {
        Runner {
            ctx,
            state: State {
                prev: None,
                prev_end: ctx.start,
                h: [0.0; 3],
            },
            sched: Schedule {
                observations: Vec::new(),
                unscheduled: Vec::new(),
                overhead_s: 0.0,
                wait_s: 0.0,
                slew_deg: 0.0,
                dumps: 0,
                dumped_nms: 0.0,
                final_momentum_nms: 0.0,
                propellant_kg: 0.0,
                repairs: 0,
                end: ctx.start,
                momentum_trace: vec![(0.0, 0.0)],
                dump_times_s: Vec::new(),
            },
            now: ctx.start,
            done: vec![false; ctx.targets.len()],
        }
    }

    /// The current time: the end of the last observation, or later after waiting.
    pub fn now(&self) -> Epoch {
        self.now
    }

    /// The last target observed.
    pub fn last(&self) -> Option<usize> {
        self.state.prev
    }

    /// True when target `j` is scheduled or was dropped with a reason.
    pub fn dropped(&self, j: usize) -> bool {
        self.done[j]
    }

    /// Observations so far.
    pub fn scheduled(&self) -> usize {
        self.sched.observations.len()
    }

    /// True when target `j`, not yet scheduled, has a window open now or opening within the
    /// next hour that could hold its dwell.
    pub fn may_fit_soon(&self, j: usize) -> bool {
        let dur = self.ctx.targets[j].duration_s / SECONDS_PER_DAY;
        !self.done[j]
            && self.ctx.visibility[j].windows.iter().any(|w| {
                w.end.jd >= self.now.jd + dur && w.start.jd <= self.now.jd + LOOKAHEAD_DAYS
            })
    }

    /// The directed cost from the last target to target `j` with the Sun of now, seconds
    /// (`j`'s settling when nothing is observed yet; infinite when an attitude is undefined).
    pub fn transition_s(&self, j: usize) -> f64 {
        let sun = sun_j2000(self.now).direction;
        let p = self.ctx.profile;
        let Some(to) = Pointing::new(&self.ctx.targets[j], &sun) else {
            return f64::INFINITY;
        };
        match self.state.prev {
            None => p.instruments[to.instrument].settle_s,
            Some(i) => match Pointing::new(&self.ctx.targets[i], &sun) {
                Some(from) => cost_checked_s(p, &from, &to),
                None => f64::INFINITY,
            },
        }
    }

    /// When the window of target `j` that is open now (or opens within the hour) closes.
    pub fn window_closes(&self, j: usize) -> Option<Epoch> {
        self.ctx.visibility[j]
            .windows
            .iter()
            .find(|w| w.end.jd >= self.now.jd && w.start.jd <= self.now.jd + LOOKAHEAD_DAYS)
            .map(|w| w.end)
    }

    /// Target `j` as the next observation now; `None` when it does not fit now. A target
    /// whose own transition and dwell exceed the momentum threshold is dropped (listed with
    /// its reason) and gives `None`.
    pub fn try_target(&mut self, j: usize) -> Option<Step> {
        if self.done[j] {
            return None;
        }
        match self.ctx.try_next(&self.state, j, self.now) {
            Ok(step) => Some(step),
            Err(Block::Momentum(m)) => {
                self.drop_target(j, Reason::MomentumTooLarge { momentum_nms: m });
                None
            }
            // Time only moves on: a dwell that would end after the horizon never fits again.
            Err(Block::Horizon) => {
                self.drop_target(j, Reason::HorizonFull);
                None
            }
            Err(Block::Band) => None,
        }
    }

    fn drop_target(&mut self, j: usize, reason: Reason) {
        if !self.done[j] {
            self.done[j] = true;
            self.sched.unscheduled.push(self.ctx.unscheduled(j, reason));
        }
    }

    /// The first target of `waiting` (in its order) that fits now, removed from it and
    /// marked as moved when `moved`; targets whose windows are over are dropped from it.
    pub fn first_fitting(&mut self, waiting: &mut Vec<usize>, moved: bool) -> Option<Step> {
        let mut k = 0;
        while k < waiting.len() {
            let j = waiting[k];
            if self.done[j] {
                waiting.remove(k);
                continue;
            }
            if self.ctx.windows_over(j, self.now) {
                self.drop_target(j, Reason::WindowsPassed);
                waiting.remove(k);
                continue;
            }
            if self.ctx.may_fit_soon(j, self.now) {
                if let Some(mut step) = self.try_target(j) {
                    step.observation.moved = moved;
                    waiting.remove(k);
                    return Some(step);
                }
                if self.done[j] {
                    waiting.remove(k);
                    continue;
                }
            }
            k += 1;
        }
        None
    }

    /// Adds the observation of `step` (from [`Runner::try_target`] at the current time).
    pub fn commit(&mut self, step: Step) {
        let ctx = self.ctx;
        let sched = &mut self.sched;
        let o = &step.observation;
        let p = ctx.profile;
        let waited_from = seconds_between(ctx.start, self.state.prev_end);
        for (at, dumped) in &step.wait_dumps {
            let t = waited_from + at;
            sched.momentum_trace.push((t, norm(dumped)));
            sched.momentum_trace.push((t, 0.0));
            sched.dump_times_s.push(t);
            sched.dumps += 1;
            sched.dumped_nms += norm(dumped);
            sched.propellant_kg +=
                dump_propellant_kg(dumped, p.thruster_arm_m, p.thruster_isp_s).unwrap_or(0.0);
        }
        let t0 = seconds_between(ctx.start, step.transition_from);
        sched
            .momentum_trace
            .push((t0, norm(&step.before_transition)));
        if step.dump_before {
            sched.dumps += 1;
            sched.dumped_nms += norm(&step.dumped);
            sched.propellant_kg +=
                dump_propellant_kg(&step.dumped, p.thruster_arm_m, p.thruster_isp_s).unwrap_or(0.0);
            sched.momentum_trace.push((t0, 0.0));
            sched.dump_times_s.push(t0);
        }
        sched.momentum_trace.push((
            seconds_between(ctx.start, o.start),
            norm(&step.after_transition),
        ));
        sched
            .momentum_trace
            .push((seconds_between(ctx.start, o.end), o.momentum_nms));
        sched.overhead_s += o.overhead_s;
        sched.wait_s += o.wait_s;
        sched.slew_deg += o.slew_deg;
        if o.moved {
            sched.repairs += 1;
        }
        self.state = State {
            prev: Some(o.target),
            prev_end: o.end,
            h: step.after,
        };
        self.done[o.target] = true;
        self.now = o.end;
        sched.end = o.end;
        sched.observations.push(step.observation);
    }

    /// Moves the clock to just after the next window opening of a target of `waiting` (not
    /// yet done) before the horizon ends. False when there is none.
    pub fn wait_for_opening(&mut self, waiting: &[usize]) -> bool {
        let next = waiting
            .iter()
            .filter(|&&j| !self.done[j])
            .filter_map(|&j| self.ctx.next_opening(j, self.now))
            .filter(|e| e.jd < self.ctx.end.jd)
            .min_by(|a, b| a.jd.total_cmp(&b.jd));
        match next {
            Some(e) => {
                self.now = later(e, AFTER_EDGE_DAYS * SECONDS_PER_DAY);
                true
            }
            None => false,
        }
    }

    /// The schedule, with every target of `left` not scheduled listed as unscheduled
    /// (windows passed, or the horizon full) and the momentum left charged as propellant.
    pub fn finish(mut self, left: &[usize]) -> Schedule {
        let end = self.sched.end;
        for &j in left {
            if !self.done[j] {
                self.done[j] = true;
                self.sched.unscheduled.push(self.ctx.left_out(j, end));
            }
        }
        let p = self.ctx.profile;
        let mut sched = self.sched;
        sched.unscheduled.sort_by_key(|u| u.target);
        sched.final_momentum_nms = norm(&self.state.h);
        sched.propellant_kg +=
            dump_propellant_kg(&self.state.h, p.thruster_arm_m, p.thruster_isp_s).unwrap_or(0.0);
        sched
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::momentum::STANDARD_GRAVITY_M_S2;
    use crate::testing::{sky_profile, sky_targets};
    use crate::visibility::elongation_at;

    /// 2027-03-01 0h (JD 2461465.5).
    const START: Epoch = Epoch { jd: 2_461_465.5 };

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn waiting_dumps_whenever_the_threshold_is_reached_by_hand() {
        // Threshold 20 × 0.8 = 16 N·m·s. A constant 1 mN·m torque from zero reaches it after
        // 16,000 s; in a 40,000 s wait that happens at 16,000 and 32,000 s, leaving
        // 8,000 s × 1 mN·m = 8 N·m·s. From 10 N·m·s along the torque, the first dump comes at
        // (16 − 10) / 0.001 = 6,000 s. Arithmetic.
        let p = sky_profile();
        let ctx = Context::new(&p, &[], START, 1.0).unwrap();
        let tau = [1e-3, 0.0, 0.0];
        let (h, dumps) = ctx.wait_momentum([0.0; 3], &tau, 40_000.0).unwrap();
        assert_eq!(dumps.len(), 2);
        assert!(close(dumps[0].0, 16_000.0, 1e-6) && close(dumps[1].0, 32_000.0, 1e-6));
        assert!(dumps.iter().all(|(_, d)| close(norm(d), 16.0, 1e-9)));
        assert!(close(h[0], 8.0, 1e-9) && h[1] == 0.0 && h[2] == 0.0);
        let (_, dumps) = ctx.wait_momentum([10.0, 0.0, 0.0], &tau, 7_000.0).unwrap();
        assert_eq!(dumps.len(), 1);
        assert!(close(dumps[0].0, 6_000.0, 1e-6));
        // Under the threshold nothing is dumped.
        let (h, dumps) = ctx.wait_momentum([1.0, 0.0, 0.0], &tau, 1_000.0).unwrap();
        assert!(dumps.is_empty() && close(h[0], 2.0, 1e-12));
    }

    /// A seeded pool's schedule for a shuffled order, with the checks every schedule must pass.
    fn check_schedule(p: &Profile, targets: &[Target], horizon_days: f64, seed: u64) {
        let ctx = Context::new(p, targets, START, horizon_days).unwrap();
        let (candidates, screened) = ctx.screen();
        let order: Vec<usize> = crate::testing::shuffled(candidates.len(), seed)
            .into_iter()
            .map(|k| candidates[k])
            .collect();
        let s = ctx.simulate(&order).unwrap();
        // Every target is scheduled or listed, once.
        let mut seen = vec![0; targets.len()];
        for o in &s.observations {
            seen[o.target] += 1;
        }
        for u in s.unscheduled.iter().chain(&screened) {
            seen[u.target] += 1;
        }
        assert!(seen.iter().all(|&c| c == 1), "{seen:?}");
        // Inside the band at start and end, within the horizon, in time order, and the
        // time adds up: the plan's span is its dwells plus its overheads.
        let mut prev_end = START;
        for o in &s.observations {
            let u = unit_vector(targets[o.target].ra_deg, targets[o.target].dec_deg);
            for at in [o.start, o.end] {
                let e = elongation_at(&u, at);
                assert!(
                    (97.0 + BAND_MARGIN_DEG..=153.0 - BAND_MARGIN_DEG).contains(&e),
                    "{e}"
                );
            }
            assert!(o.start.jd >= prev_end.jd && o.end.jd <= ctx.end().jd);
            assert!(close(
                seconds_between(prev_end, o.start),
                o.overhead_s,
                1e-3
            ));
            let dwell = seconds_between(o.start, o.end);
            assert!(close(dwell, targets[o.target].duration_s, 1e-3));
            prev_end = o.end;
        }
        let dwell: f64 = s
            .observations
            .iter()
            .map(|o| targets[o.target].duration_s)
            .sum();
        assert!(close(
            seconds_between(START, s.end),
            dwell + s.overhead_s,
            1e-2
        ));
        // The wheels never hold more than the threshold, and the propellant is the model
        // page's m = |H| / (L Isp g0) over everything dumped plus what is left.
        let threshold = p.wheel_limit_nms * p.wheel_margin;
        assert!(s.momentum_trace.iter().all(|&(_, h)| h <= threshold + 1e-9));
        assert_eq!(s.dump_times_s.len(), s.dumps);
        let kg = (s.dumped_nms + s.final_momentum_nms)
            / (p.thruster_arm_m * p.thruster_isp_s * STANDARD_GRAVITY_M_S2);
        assert!(
            close(s.propellant_kg, kg, 1e-12),
            "{} {kg}",
            s.propellant_kg
        );
    }

    #[test]
    fn schedules_stay_in_the_band_and_their_time_and_propellant_add_up() {
        let p = sky_profile();
        for seed in 0..4 {
            check_schedule(&p, &sky_targets(120, seed), 3.0, seed);
        }
        // A short horizon that fills up.
        check_schedule(&p, &sky_targets(60, 9), 0.5, 9);
    }

    #[test]
    fn a_target_that_enters_the_band_later_is_moved_later() {
        let p = sky_profile();
        // A target whose first window opens between half a day and three days in, found on
        // a grid, and two targets in the band all the time.
        let mut late = None;
        let mut steady = Vec::new();
        'grid: for ra in (0..360).step_by(5) {
            for dec in (-60..=60).step_by(10) {
                let t = Target {
                    id: format!("{ra}/{dec}"),
                    ra_deg: ra as f64,
                    dec_deg: dec as f64,
                    duration_s: 1800.0,
                    instrument: 0,
                    priority: crate::DEFAULT_PRIORITY,
                    window: None,
                    roll_range_deg: None,
                };
                let v = visibility(&unit_vector(t.ra_deg, t.dec_deg), START, 5.0, (97.0, 153.0));
                match v.windows.first() {
                    Some(w) if w.start.jd > START.jd + 0.5 && w.start.jd < START.jd + 3.0 => {
                        late.get_or_insert(t);
                    }
                    Some(w)
                        if w.start == START && w.end.jd >= START.jd + 5.0 && steady.len() < 2 =>
                    {
                        steady.push(t);
                    }
                    _ => {}
                }
                if late.is_some() && steady.len() == 2 {
                    break 'grid;
                }
            }
        }
        let late = late.expect("the grid has a target entering the band later");
        let targets = vec![late, steady[0].clone(), steady[1].clone()];
        let ctx = Context::new(&p, &targets, START, 5.0).unwrap();
        let s = ctx.simulate(&[0, 1, 2]).unwrap();
        let order: Vec<usize> = s.observations.iter().map(|o| o.target).collect();
        assert_eq!(order, vec![1, 2, 0], "{s:?}");
        assert!(s.observations[2].moved && s.repairs == 1);
        assert!(s.observations[2].wait_s > 0.0 && s.wait_s > 0.0);
        assert!(s.unscheduled.is_empty());
    }

    #[test]
    fn targets_that_cannot_fit_are_listed_with_their_reason_and_range() {
        let p = sky_profile();
        let sun = sun_j2000(START);
        let mut near_sun = sky_targets(1, 0).remove(0);
        near_sun.ra_deg = sun.ra_deg + 5.0;
        near_sun.dec_deg = sun.dec_deg;
        // 110° from the Sun along the ecliptic-ish direction, in the band for days.
        let mut long = near_sun.clone();
        long.ra_deg = (sun.ra_deg + 110.0) % 360.0;
        long.dec_deg = 0.0;
        long.duration_s = 3.0 * 86_400.0;
        let targets = vec![near_sun, long];
        let ctx = Context::new(&p, &targets, START, 2.0).unwrap();
        let (candidates, out) = ctx.screen();
        assert!(candidates.is_empty());
        assert_eq!(out[0].reason, Reason::NeverInBand);
        assert!(out[0].max_elongation_deg < 97.0, "{:?}", out[0]);
        assert!(
            matches!(out[1].reason, Reason::WindowsTooShort { longest_window_s }
            if longest_window_s <= 2.0 * 86_400.0 + 1.0)
        );
    }

    #[test]
    fn a_full_horizon_and_oversized_momentum_are_reasons_too() {
        let p = sky_profile();
        let targets = sky_targets(80, 4);
        // A three-hour horizon holds a few of the 10–60 minute dwells at most.
        let ctx = Context::new(&p, &targets, START, 0.125).unwrap();
        let (candidates, _) = ctx.screen();
        let s = ctx.simulate(&candidates).unwrap();
        assert!(!s.observations.is_empty() && s.observations.len() < 12);
        assert!(s
            .unscheduled
            .iter()
            .any(|u| u.reason == Reason::HorizonFull));
        // Wheels that hold next to nothing: no observation fits under the threshold.
        let mut small = p.clone();
        small.wheel_limit_nms = 1e-3;
        let ctx = Context::new(&small, &targets, START, 1.0).unwrap();
        let (candidates, _) = ctx.screen();
        let s = ctx.simulate(&candidates).unwrap();
        assert!(s.observations.is_empty());
        assert_eq!(s.unscheduled.len(), candidates.len());
        assert!(s.unscheduled.iter().all(
            |u| matches!(u.reason, Reason::MomentumTooLarge { momentum_nms } if momentum_nms > 8e-4)
        ));
    }

    #[test]
    fn bad_inputs_are_refused_not_planned() {
        let p = sky_profile();
        let mut t = sky_targets(3, 1);
        assert!(matches!(
            Context::new(&p, &t, START, 0.0),
            Err(PlanError::Horizon { .. })
        ));
        assert!(matches!(
            Context::new(&p, &t, Epoch { jd: f64::NAN }, 1.0),
            Err(PlanError::Horizon { .. })
        ));
        let ctx = Context::new(&p, &t, START, 1.0).unwrap();
        assert_eq!(ctx.simulate(&[0, 0]), Err(PlanError::Order { index: 0 }));
        assert_eq!(ctx.simulate(&[7]), Err(PlanError::Order { index: 7 }));
        t[1].dec_deg = f64::NAN;
        assert!(matches!(
            Context::new(&p, &t, START, 1.0),
            Err(PlanError::Target { index: 1, .. })
        ));
        t[1].dec_deg = 0.0;
        t[2].duration_s = -1.0;
        assert!(matches!(
            Context::new(&p, &t, START, 1.0),
            Err(PlanError::Target { index: 2, .. })
        ));
        t[2].duration_s = 1.0;
        t[0].instrument = 5;
        assert!(Context::new(&p, &t, START, 1.0).is_err());
        let mut bad = p.clone();
        bad.wheel_margin = 1.5;
        assert!(Context::new(&bad, &[], START, 1.0).is_err());
        bad.wheel_margin = 0.8;
        bad.dump_s = f64::NAN;
        assert!(Context::new(&bad, &[], START, 1.0).is_err());
    }
}
