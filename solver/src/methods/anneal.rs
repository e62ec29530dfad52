//! Simulated annealing over 2-opt, Or-opt and segment-exchange moves (Kirkpatrick, Gelatt and
//! Vecchi 1983, "Optimization by simulated annealing", Science 220(4598), 671–680).
//!
//! # Moves
//!
//! Every proposal starts at a random node and a random entry of a candidate list, so the
//! neighbourhood is linear in `n` rather than quadratic, and its change in length is computed
//! in O(1) from the node positions of an [`ArrayTour`]:
//!
//! - **2-opt** (Croes 1958; symmetric costs only): add the edge from a node `a` to a candidate
//!   `c`, remove the tour edges after (or before) both, and reverse the path between; the
//!   shorter side of the cycle is the one turned round.
//! - **Or-opt** (Or 1976): move a segment of 1 to [`MAX_SEGMENT`] nodes to between two adjacent
//!   nodes elsewhere, one of them a candidate of a segment end; reversed insertion only for
//!   symmetric costs.
//! - **Segment exchange** (the pure sequential 3-opt move that reverses nothing): in
//!   `a B D x`, with `B` and `D` adjacent paths, exchange them to `a D B x`, adding `a -> d`
//!   with `d` a candidate of `a` and `e -> b` with `e` a candidate into `b`. It keeps every
//!   direction, so it serves asymmetric costs; it is applied by swapping the two shortest of the
//!   three paths of the cycle.
//!
//! Asymmetric costs get only the direction-keeping moves: Or-opt without reversal and the
//! segment exchange, since a reversal changes a path's cost. The mix of proposals is fixed:
//! for symmetric costs half 2-opt, 40 % Or-opt and 10 % exchange; for asymmetric costs 60 %
//! Or-opt and 40 % exchange.
//!
//! # Acceptance and temperature
//!
//! A proposal that changes the length by `delta` is accepted when `delta <= 0`, and otherwise
//! with probability `exp(-delta / T)` (the Metropolis criterion: Metropolis, Rosenbluth,
//! Rosenbluth, Teller and Teller 1953, J. Chem. Phys. 21, 1087). Costs and deltas are exact
//! integers; `T` is in cost units.
//!
//! **Start temperature.** [`AnnealParams::samples`] proposals are drawn from the starting tour
//! without applying them; `T0` is the temperature at which the mean of `exp(-delta / T0)` over
//! the worsening ones equals [`AnnealParams::start_acceptance`], found by bisection (the mean
//! grows with `T`). This is the usual way of fixing `T0` by a target initial acceptance ratio
//! (Kirkpatrick et al. 1983; Johnson, Aragon, McGeoch and Schevon 1989, Oper. Res. 37(6)),
//! computed from one sample instead of trial runs.
//!
//! **Batches.** One [`Iterative::step`] is one batch of [`AnnealParams::batch`] × `n`
//! proposals at a fixed temperature, then the cooling update. A batch of 100 × 200 proposals
//! takes one to two milliseconds; the `should_stop` callback is polled every few thousand
//! proposals, so large instances stop promptly too.
//!
//! **Schedules** ([`CoolingSchedule`]):
//! - `geometric`: `T <- cooling * T` after each batch (Kirkpatrick et al. 1983).
//! - `adaptive` (our own rule): the step in `ln T` after a batch is
//!   `rate_step / s`, kept within a quarter and four times the geometric step `-ln(cooling)`,
//!   where `s` is the measured fall of the acceptance rate per unit of `ln T` over the last
//!   batches (the change of rate between two batches divided by the step taken between them,
//!   averaged with weight one half on the newest; four times the geometric step while there is
//!   no estimate yet or the rate does not fall). So the schedule cools slowly where the rate
//!   drops fast (where the tour's structure freezes) and quickly where it is flat (very hot or
//!   already frozen), aiming at an acceptance rate that falls by about `rate_step` per batch.
//!   It is akin to schedules that steer the acceptance ratio (Lam and Delosme 1988, Proc. 25th
//!   Design Automation Conference, 306–311) and to those that key the step to the spread of
//!   costs (Aarts and van Laarhoven 1985, Philips J. Res. 40, 193–226), but the rule as written
//!   is ours.
//!
//! Either schedule stops cooling at the floor `min_temperature * T0`.
//!
//! **Reheating.** Once at the floor, a run counts batches without a new best tour; after
//! [`AnnealParams::reheat_after`] of them the cycle ends: when [`AnnealParams::descent`] is on,
//! the current tour is first taken to a local optimum of 2-opt and Or-opt
//! ([`two_opt_or_opt`]) and recorded if it is a new best; then the run goes back to the best
//! tour found and to the temperature `reheat * T0`, and cools again. With the defaults a
//! 200-node instance cools from `T0` to the floor in about half a second on one core, and later
//! cycles take less, so a run of seconds is a series of short anneals from the best tour,
//! rather than one slow anneal that may still be hot when time runs out.
//!
//! The best tour is kept exactly: the current length is updated by the integer deltas, and the
//! best order is copied (and checked against [`closed_length`] in debug builds) when the tour
//! is about to leave a new best, or at the end of the batch.

use super::drive::Iterative;
use crate::cost::Cost;
use crate::moves::two_opt_or_opt;
use crate::neighbours::Neighbours;
use crate::tour::{ArrayTour, MAX_SEGMENT, Tour, closed_length};
use rand::Rng;
use rand_pcg::Pcg64;

/// How the temperature falls between reheats.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum CoolingSchedule {
    /// `T <- cooling * T` after every batch.
    #[default]
    Geometric,
    /// The step adapts to how fast the acceptance rate falls (see the module documentation).
    Adaptive,
}

impl CoolingSchedule {
    /// Every schedule, for option parsing.
    pub const ALL: [CoolingSchedule; 2] = [CoolingSchedule::Geometric, CoolingSchedule::Adaptive];

    /// The name as [`AnnealParams::set`] takes it.
    pub fn name(self) -> &'static str {
        match self {
            CoolingSchedule::Geometric => "geometric",
            CoolingSchedule::Adaptive => "adaptive",
        }
    }

    /// The schedule of this name.
    pub fn from_name(name: &str) -> Option<CoolingSchedule> {
        Self::ALL.into_iter().find(|s| s.name() == name)
    }
}

/// Tuning of simulated annealing. Temperatures are given as shares of the start temperature
/// `T0`, which each run measures on its own starting tour, so the defaults carry over between
/// instances of any cost scale.
///
/// Serialised under the keys of [`AnnealParams::KEYS`]; text values (`"0.5"`, `off`) are read
/// like numbers and switches, so `--params KEY=VALUE` pairs deserialise too.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(default, deny_unknown_fields, rename_all = "kebab-case")]
pub struct AnnealParams {
    /// How the temperature falls between reheats.
    pub schedule: CoolingSchedule,
    /// Geometric cooling factor per batch, in (0, 1): the temperature after a batch is this
    /// times the one before. The adaptive schedule takes `-ln(cooling)` as its reference step.
    #[serde(deserialize_with = "crate::params::text")]
    pub cooling: f64,
    /// Proposals per batch, per node (a batch is `batch * n` proposals at one temperature).
    #[serde(deserialize_with = "crate::params::text")]
    pub batch: u64,
    /// Share of worsening proposals accepted at the start temperature `T0`, in (0, 1): `T0` is
    /// set so that the mean Metropolis probability `exp(-delta / T0)` over sampled worsening
    /// proposals from the starting tour equals this.
    #[serde(deserialize_with = "crate::params::text")]
    pub start_acceptance: f64,
    /// Proposals sampled from the starting tour to set `T0`.
    #[serde(deserialize_with = "crate::params::text")]
    pub samples: usize,
    /// Floor of the temperature, as a share of `T0`, in (0, 1): cooling stops there.
    #[serde(deserialize_with = "crate::params::text")]
    pub min_temperature: f64,
    /// Batches at the floor without a new best tour before reheating; 0 never reheats.
    #[serde(deserialize_with = "crate::params::text")]
    pub reheat_after: u64,
    /// Temperature after a reheat, as a share of `T0`, in (0, 1].
    #[serde(deserialize_with = "crate::params::text")]
    pub reheat: f64,
    /// Adaptive schedule: planned fall of the acceptance rate (a share of proposals) per batch,
    /// in (0, 1).
    #[serde(deserialize_with = "crate::params::text")]
    pub rate_step: f64,
    /// Take the tour to a 2-opt/Or-opt local optimum before each reheat.
    #[serde(deserialize_with = "crate::params::switch")]
    pub descent: bool,
}

impl Default for AnnealParams {
    /// Chosen by measurement, one run on one thread from a greedy tour with 10 quadrant
    /// candidates (2-core AMD EPYC, shared): with 10^7 proposals (about 1 s) the mean gap to
    /// the optimum over 14 TSPLIB instances of 100 to 200 nodes and 2 seeds was 0.13 to 0.22 %
    /// between repeats; `cooling` 0.95 or 0.99, `batch` 50 or 200, `reheat-after` 5 to 40,
    /// `reheat` 0.05 to 0.3, `min-temperature` 0.001 or 0.005 and `start-acceptance` 0.3 or
    /// 0.7 were no better beyond that noise (`reheat` 0.05 and `reheat-after` 40 were worse).
    /// The adaptive schedule's `rate-step` 0.004 beat 0.002 and 0.001 there. With 10 s runs
    /// on u159, pr136, rat195 and kroB200 the mean gap was below 0.1 % with either schedule,
    /// and 1.1 % on pr1002, whose first cooling takes about 3.5 s (cooling time grows with n).
    fn default() -> Self {
        AnnealParams {
            schedule: CoolingSchedule::Geometric,
            cooling: 0.98,
            batch: 100,
            start_acceptance: 0.5,
            samples: 5_000,
            min_temperature: 0.002,
            reheat_after: 20,
            reheat: 0.1,
            rate_step: 0.004,
            descent: true,
        }
    }
}

impl AnnealParams {
    /// Every key [`AnnealParams::set`] takes, with one line on its meaning.
    pub const KEYS: &'static [(&'static str, &'static str)] = &[
        (
            "schedule",
            "how the temperature falls: geometric or adaptive",
        ),
        (
            "cooling",
            "temperature factor per batch (geometric), reference step (adaptive); in (0, 1)",
        ),
        ("batch", "proposals per batch, per node; 1 to 1000000"),
        (
            "start-acceptance",
            "share of sampled worsening moves accepted at the start temperature; in (0, 1)",
        ),
        (
            "samples",
            "moves sampled from the starting tour to set the start temperature; 1 to 10000000",
        ),
        (
            "min-temperature",
            "floor of the temperature, as a share of the start temperature; in (0, 1)",
        ),
        (
            "reheat-after",
            "batches at the floor without a new best before reheating; 0 never reheats",
        ),
        (
            "reheat",
            "temperature after a reheat, as a share of the start temperature; in (0, 1]",
        ),
        (
            "rate-step",
            "adaptive: planned fall of the acceptance rate per batch; in (0, 1)",
        ),
        (
            "descent",
            "2-opt/Or-opt descent before each reheat: on or off",
        ),
    ];

    /// Sets the parameter named `key` (one of [`AnnealParams::KEYS`]) from text. The error
    /// names the key and what it accepts.
    ///
    /// ```
    /// let mut params = wend::AnnealParams::default();
    /// params.set("schedule", "adaptive").unwrap();
    /// assert_eq!(params.schedule, wend::CoolingSchedule::Adaptive);
    /// assert!(params.set("schedule", "fast").is_err());
    /// ```
    pub fn set(&mut self, key: &str, value: &str) -> Result<(), String> {
        crate::params::set_by_key(self, key, value)
    }

    /// The same parameters with every out-of-range value (possible when fields are set
    /// directly) replaced by the default, so that a run never divides by zero or loops on NaN.
    fn sanitized(&self) -> AnnealParams {
        let d = AnnealParams::default();
        let unit = |x: f64, dflt: f64| if x > 0.0 && x < 1.0 { x } else { dflt };
        AnnealParams {
            schedule: self.schedule,
            cooling: unit(self.cooling, d.cooling),
            batch: self.batch.clamp(1, 1_000_000),
            start_acceptance: unit(self.start_acceptance, d.start_acceptance),
            samples: self.samples.clamp(1, 10_000_000),
            min_temperature: unit(self.min_temperature, d.min_temperature),
            reheat_after: self.reheat_after,
            reheat: if self.reheat > 0.0 && self.reheat <= 1.0 {
                self.reheat
            } else {
                d.reheat
            },
            rate_step: unit(self.rate_step, d.rate_step),
            descent: self.descent,
        }
    }
}

/// Proposals between two polls of `should_stop` inside a batch.
const POLL: u64 = 4096;

/// Beyond `delta / T` this large, `exp(-delta / T)` is below 1e-17: rejected without a draw.
const CUTOFF: f64 = 40.0;

/// Smallest instance the moves run on; smaller ones are solved by trying every order.
const MIN_MOVE_NODES: usize = 5;

/// Share of 2-opt, then Or-opt, proposals for symmetric costs (the rest: segment exchange).
const SYMMETRIC_MIX: (f64, f64) = (0.5, 0.4);

/// Share of Or-opt proposals for asymmetric costs (the rest: segment exchange).
const ASYMMETRIC_OR_OPT: f64 = 0.6;

/// The kinds of move a proposal can be.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Kind {
    TwoOpt,
    OrOpt,
    Exchange,
}

/// A proposed move, enough to apply it.
#[derive(Clone, Copy, Debug)]
enum Move {
    /// Reverse the path `from ..= to` (walking forward); either side of the cycle may turn.
    Reverse { from: usize, to: usize },
    /// Move the `len` nodes `s1 ..= s2` to right after `after`, reversed or not.
    Segment {
        s1: usize,
        s2: usize,
        len: usize,
        after: usize,
        reversed: bool,
    },
    /// In `a b .. c d .. e f`, exchange the paths `b ..= c` and `d ..= e`.
    Exchange {
        a: usize,
        b: usize,
        c: usize,
        d: usize,
        e: usize,
        f: usize,
    },
}

/// One run of simulated annealing: a tour, its temperature and the best tour seen.
pub(crate) struct Annealer<'a, C: Cost + ?Sized> {
    cost: &'a C,
    nb: &'a Neighbours,
    params: AnnealParams,
    symmetric: bool,
    n: usize,
    tour: ArrayTour,
    length: i64,
    best: Vec<usize>,
    best_length: i64,
    /// The current tour is strictly shorter than `best` holds and is not copied yet.
    pending: bool,
    t0: f64,
    temperature: f64,
    floor: f64,
    last_rate: f64,
    /// Adaptive schedule: the rate of the batch before, the smoothed fall of the rate per unit
    /// of `ln T`, and the step in `ln T` taken after the last batch.
    prev_rate: Option<f64>,
    slope: Option<f64>,
    last_step: f64,
    stall: u64,
    batches: u64,
    reheats: u64,
    done: bool,
}

impl<'a, C: Cost + ?Sized> Annealer<'a, C> {
    /// A run from `order` (a permutation of the nodes; anything else is replaced by `0..n`),
    /// with its start temperature measured on that tour with draws from `rng`.
    ///
    /// Instances of fewer than five nodes are solved at once by trying every order; the run
    /// is then [`Iterative::finished`], as it is when the candidate lists are empty or the
    /// starting tour's length overflows.
    pub(crate) fn start(
        cost: &'a C,
        nb: &'a Neighbours,
        params: &AnnealParams,
        order: Vec<usize>,
        rng: &mut Pcg64,
    ) -> Self {
        let n = cost.len();
        let order = match Tour::new(order, n) {
            Ok(t) => t.into_order(),
            Err(_) => (0..n).collect(),
        };
        let params = params.sanitized();
        let (order, tiny) = if n < MIN_MOVE_NODES {
            (shortest_by_trying_all(cost, order), true)
        } else {
            (order, false)
        };
        let length = closed_length(cost, &order).unwrap_or(i64::MAX);
        let mut run = Annealer {
            cost,
            nb,
            symmetric: cost.is_symmetric(),
            n,
            tour: ArrayTour::new(order.clone()),
            length,
            best: order,
            best_length: length,
            pending: false,
            t0: 1.0,
            temperature: 1.0,
            floor: params.min_temperature,
            last_rate: 0.0,
            prev_rate: None,
            slope: None,
            last_step: 0.0,
            stall: 0,
            batches: 0,
            reheats: 0,
            done: tiny || nb.k() == 0 || length == i64::MAX,
            params,
        };
        if !run.done {
            let mut worse = Vec::with_capacity(run.params.samples);
            for _ in 0..run.params.samples {
                if let Some((_, delta)) = run.propose(rng) {
                    if delta > 0 {
                        worse.push(delta);
                    }
                }
            }
            run.t0 = start_temperature(&worse, run.params.start_acceptance);
            run.temperature = run.t0;
            run.floor = run.t0 * run.params.min_temperature;
        }
        run
    }

    /// The temperature the next batch runs at (cost units).
    #[cfg(test)]
    pub fn temperature(&self) -> f64 {
        self.temperature
    }

    /// Share of the valid proposals of the last batch that were accepted (0 before the first).
    #[cfg(test)]
    pub fn last_acceptance_rate(&self) -> f64 {
        self.last_rate
    }

    /// Length of the current tour (exact, kept by the integer deltas).
    #[cfg(test)]
    pub fn current_length(&self) -> i64 {
        self.length
    }

    /// The current tour, in the array's order.
    #[cfg(test)]
    pub fn current_order(&self) -> &[usize] {
        self.tour.order()
    }

    /// Reheats so far.
    #[cfg(test)]
    pub fn reheats(&self) -> u64 {
        self.reheats
    }

    /// A random entry of `v`'s outgoing candidate list.
    #[inline]
    fn out_candidate(&self, v: usize, rng: &mut Pcg64) -> usize {
        let list = self.nb.out(v);
        list[rng.gen_range(0..list.len())] as usize
    }

    /// A random entry of `v`'s incoming candidate list.
    #[inline]
    fn in_candidate(&self, v: usize, rng: &mut Pcg64) -> usize {
        let list = self.nb.incoming(v);
        list[rng.gen_range(0..list.len())] as usize
    }

    /// A random proposal of a random kind and its change in length, or `None` when the draw
    /// does not make a valid move.
    #[inline]
    fn propose(&self, rng: &mut Pcg64) -> Option<(Move, i64)> {
        let u: f64 = rng.r#gen();
        let kind = if self.symmetric {
            if u < SYMMETRIC_MIX.0 {
                Kind::TwoOpt
            } else if u < SYMMETRIC_MIX.0 + SYMMETRIC_MIX.1 {
                Kind::OrOpt
            } else {
                Kind::Exchange
            }
        } else if u < ASYMMETRIC_OR_OPT {
            Kind::OrOpt
        } else {
            Kind::Exchange
        };
        self.propose_kind(kind, rng)
    }

    /// A random proposal of the given kind (2-opt only for symmetric costs) and its change in
    /// length.
    fn propose_kind(&self, kind: Kind, rng: &mut Pcg64) -> Option<(Move, i64)> {
        let c = self.cost;
        let t = &self.tour;
        let n = self.n;
        match kind {
            Kind::TwoOpt => {
                let a = rng.gen_range(0..n);
                let x = self.out_candidate(a, rng);
                if rng.r#gen::<bool>() {
                    // a b .. x y  ->  a x .. b y
                    let (b, y) = (t.next(a), t.next(x));
                    if x == b || y == a {
                        return None;
                    }
                    let delta = c.cost(a, x) + c.cost(b, y) - c.cost(a, b) - c.cost(x, y);
                    Some((Move::Reverse { from: b, to: x }, delta))
                } else {
                    // y x .. b a  ->  y b .. x a
                    let (b, y) = (t.prev(a), t.prev(x));
                    if x == b || y == a {
                        return None;
                    }
                    let delta = c.cost(x, a) + c.cost(y, b) - c.cost(b, a) - c.cost(y, x);
                    Some((Move::Reverse { from: x, to: b }, delta))
                }
            }
            Kind::OrOpt => {
                let len = rng.gen_range(1..=MAX_SEGMENT.min(n - 2));
                let s1 = rng.gen_range(0..n);
                let mut s2 = s1;
                for _ in 1..len {
                    s2 = t.next(s2);
                }
                let (p, nx) = (t.prev(s1), t.next(s2));
                let variant = if self.symmetric {
                    rng.gen_range(0..4u8)
                } else {
                    rng.gen_range(0..2u8)
                };
                // The segment goes between x and y = next(x); reversed: x s2 .. s1 y.
                let (x, y, reversed) = match variant {
                    0 => {
                        let x = self.in_candidate(s1, rng);
                        (x, t.next(x), false)
                    }
                    1 => {
                        let y = self.out_candidate(s2, rng);
                        (t.prev(y), y, false)
                    }
                    2 => {
                        let x = self.out_candidate(s2, rng);
                        (x, t.next(x), true)
                    }
                    _ => {
                        let y = self.out_candidate(s1, rng);
                        (t.prev(y), y, true)
                    }
                };
                if t.steps(s1, x) < len || t.steps(s1, y) < len {
                    return None; // x or y inside the segment
                }
                let (first, last) = if reversed { (s2, s1) } else { (s1, s2) };
                let delta = c.cost(p, nx) + c.cost(x, first) + c.cost(last, y)
                    - c.cost(p, s1)
                    - c.cost(s2, nx)
                    - c.cost(x, y);
                Some((
                    Move::Segment {
                        s1,
                        s2,
                        len,
                        after: x,
                        reversed,
                    },
                    delta,
                ))
            }
            Kind::Exchange => {
                // a b .. c d .. e f  ->  a d .. e b .. c f
                let a = rng.gen_range(0..n);
                let b = t.next(a);
                let d = self.out_candidate(a, rng);
                let e = self.in_candidate(b, rng);
                let (i, j) = (t.steps(b, d), t.steps(b, e));
                if i == 0 || j < i || j >= n - 1 {
                    return None; // the order along the tour must be b .. d .. e, then a
                }
                let (cc, f) = (t.prev(d), t.next(e));
                let delta = c.cost(a, d) + c.cost(e, b) + c.cost(cc, f)
                    - c.cost(a, b)
                    - c.cost(cc, d)
                    - c.cost(e, f);
                Some((
                    Move::Exchange {
                        a,
                        b,
                        c: cc,
                        d,
                        e,
                        f,
                    },
                    delta,
                ))
            }
        }
    }

    /// Applies a move whose change in length is `delta`.
    fn apply(&mut self, mv: Move, delta: i64) {
        if delta >= 0 && self.pending {
            self.record_best();
        }
        let t = &mut self.tour;
        match mv {
            Move::Reverse { from, to } => t.reverse(from, to, false),
            Move::Segment {
                s1,
                s2,
                len,
                after,
                reversed,
            } => {
                t.move_segment(s1, len, after);
                if reversed {
                    t.reverse(s1, s2, true);
                }
            }
            Move::Exchange { a, b, c, d, e, f } => {
                // Three paths round the cycle: B = b..c, D = d..e, X = f..a. Exchanging any
                // two adjacent ones gives the same cycle; leave the longest in place.
                let n = self.n;
                let lb = t.steps(b, c) + 1;
                let ld = t.steps(d, e) + 1;
                let lx = n - lb - ld;
                if lx >= lb && lx >= ld {
                    swap_adjacent(t, (b, c), (d, e));
                } else if lb >= ld {
                    swap_adjacent(t, (d, e), (f, a));
                } else {
                    swap_adjacent(t, (f, a), (b, c));
                }
            }
        }
        self.length += delta;
        if self.length < self.best_length {
            self.best_length = self.length;
            self.pending = true;
        }
    }

    /// Copies the current tour as the best one.
    fn record_best(&mut self) {
        self.best.clear();
        self.best.extend_from_slice(self.tour.order());
        self.best_length = self.length;
        self.pending = false;
        debug_assert_eq!(
            closed_length(self.cost, &self.best),
            Ok(self.best_length),
            "incremental length drifted"
        );
    }

    /// Metropolis criterion at the current temperature.
    #[inline]
    fn accept(&self, delta: i64, rng: &mut Pcg64) -> bool {
        if delta <= 0 {
            return true;
        }
        let x = delta as f64 / self.temperature;
        x < CUTOFF && rng.r#gen::<f64>() < (-x).exp()
    }

    /// Ends a cycle: the optional descent, then back to the best tour at the reheat
    /// temperature.
    fn reheat(&mut self, should_stop: &mut dyn FnMut() -> bool) {
        if self.params.descent {
            let stats = two_opt_or_opt(self.cost, self.nb, &mut self.tour, should_stop);
            self.length -= stats.gain;
            if self.length < self.best_length {
                self.record_best();
            }
        }
        if self.pending {
            self.record_best();
        }
        self.tour = ArrayTour::new(self.best.clone());
        self.length = self.best_length;
        self.temperature = (self.t0 * self.params.reheat).max(self.floor);
        self.prev_rate = None;
        self.slope = None;
        self.last_step = 0.0;
        self.stall = 0;
        self.reheats += 1;
    }

    /// The temperature after the batch just run.
    fn cooled(&mut self) -> f64 {
        let h_geo = -self.params.cooling.ln();
        let h = match self.params.schedule {
            CoolingSchedule::Geometric => h_geo,
            CoolingSchedule::Adaptive => {
                let r = self.last_rate;
                if let Some(pr) = self.prev_rate {
                    if self.last_step > 0.0 {
                        let obs = ((pr - r) / self.last_step).max(0.0);
                        self.slope = Some(match self.slope {
                            Some(s) => 0.5 * s + 0.5 * obs,
                            None => obs,
                        });
                    }
                }
                self.prev_rate = Some(r);
                match self.slope {
                    Some(s) if s > 0.0 => {
                        (self.params.rate_step / s).clamp(h_geo / 4.0, 4.0 * h_geo)
                    }
                    _ => 4.0 * h_geo,
                }
            }
        };
        let next = (self.temperature * (-h).exp()).max(self.floor);
        self.last_step = (self.temperature / next).ln();
        next
    }
}

impl<C: Cost + ?Sized> Iterative for Annealer<'_, C> {
    /// One batch of `batch * n` proposals at the current temperature (cut short when
    /// `should_stop` turns true), then the cooling update, and a reheat when the run has
    /// stalled at the floor.
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        if self.done {
            return;
        }
        let before = self.best_length;
        let total = self.params.batch.saturating_mul(self.n as u64);
        let (mut valid, mut accepted) = (0u64, 0u64);
        let mut stopped = false;
        for i in 0..total {
            if i % POLL == POLL - 1 && should_stop() {
                stopped = true;
                break;
            }
            if let Some((mv, delta)) = self.propose(rng) {
                valid += 1;
                if self.accept(delta, rng) {
                    accepted += 1;
                    self.apply(mv, delta);
                }
            }
        }
        if self.pending {
            self.record_best();
        }
        self.batches += 1;
        if valid > 0 {
            self.last_rate = accepted as f64 / valid as f64;
        }
        if stopped {
            return;
        }
        let at_floor = self.temperature <= self.floor;
        if self.best_length < before {
            self.stall = 0;
        } else if at_floor {
            self.stall += 1;
        }
        if at_floor && self.params.reheat_after > 0 && self.stall >= self.params.reheat_after {
            self.reheat(should_stop);
        } else {
            self.temperature = self.cooled();
        }
    }

    fn best_length(&self) -> i64 {
        self.best_length
    }

    fn best_order(&self) -> Vec<usize> {
        self.best.clone()
    }

    /// Too small for the moves (then already optimal), no candidates, or an overflowing
    /// length.
    fn finished(&self) -> bool {
        self.done
    }
}

/// Turns `.. S1 S2 ..` into `.. S2 S1 ..`, each path given by its (first, last) node in
/// forward order and keeping its direction; costs twice their total length.
fn swap_adjacent(t: &mut ArrayTour, s1: (usize, usize), s2: (usize, usize)) {
    t.reverse(s1.0, s2.1, true); // S2' S1'
    t.reverse(s2.1, s2.0, true); // S2 S1'
    t.reverse(s1.1, s1.0, true); // S2 S1
}

/// `T0`: the temperature at which the mean of `exp(-delta / T0)` over the worsening deltas
/// `worse` (all positive) equals `share`, by bisection on `ln T`; 1 when there are none.
fn start_temperature(worse: &[i64], share: f64) -> f64 {
    let (Some(&lo), Some(&hi)) = (worse.iter().min(), worse.iter().max()) else {
        return 1.0;
    };
    let mean =
        |t: f64| worse.iter().map(|&d| (-(d as f64) / t).exp()).sum::<f64>() / worse.len() as f64;
    // At lo / 1000 every probability is below e^-1000; at hi * 1000 above e^-0.001.
    let (mut lo, mut hi) = (lo as f64 / 1000.0, hi as f64 * 1000.0);
    for _ in 0..64 {
        let mid = (lo * hi).sqrt();
        if mean(mid) < share {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    hi
}

/// The shortest closed tour of at most four nodes, by trying every order that starts at
/// `order[0]` (at most six).
fn shortest_by_trying_all<C: Cost + ?Sized>(cost: &C, order: Vec<usize>) -> Vec<usize> {
    fn permute<C: Cost + ?Sized>(
        cost: &C,
        cur: &mut Vec<usize>,
        k: usize,
        best: &mut (i64, Vec<usize>),
    ) {
        if k == cur.len() {
            if let Ok(l) = closed_length(cost, cur) {
                if l < best.0 {
                    *best = (l, cur.clone());
                }
            }
            return;
        }
        for i in k..cur.len() {
            cur.swap(k, i);
            permute(cost, cur, k + 1, best);
            cur.swap(k, i);
        }
    }
    if order.len() < 3 {
        return order;
    }
    let start = closed_length(cost, &order).unwrap_or(i64::MAX);
    let mut best = (start, order.clone());
    let mut cur = order;
    permute(cost, &mut cur, 1, &mut best);
    best.1
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::control::{StopHandle, StopReason};
    use crate::cost::{CoordCost, MatrixCost, Metric};
    use crate::methods::{LoopPlan, drive};
    use crate::neighbours::k_nearest;
    use crate::testing::{random_costs, shuffled};
    use proptest::prelude::*;
    use rand::{Rng, SeedableRng};
    use std::time::Instant;

    fn instance(n: usize, seed: u64, asym: bool) -> MatrixCost {
        random_costs(n, seed, if asym { 5 } else { 0 })
    }

    fn points(n: usize, seed: u64) -> Vec<[f64; 2]> {
        let mut rng = Pcg64::seed_from_u64(seed);
        (0..n)
            .map(|_| [rng.gen_range(0.0..1000.0), rng.gen_range(0.0..1000.0)])
            .collect()
    }

    fn check_best<C: Cost + ?Sized>(run: &Annealer<'_, C>, n: usize) {
        let order = run.best_order();
        assert!(Tour::new(order.clone(), n).is_ok(), "not a permutation");
        assert_eq!(closed_length(run.cost, &order), Ok(run.best_length()));
        assert_eq!(
            closed_length(run.cost, run.current_order()),
            Ok(run.current_length())
        );
    }

    #[test]
    fn acceptance_rate_falls_as_the_temperature_falls() {
        let c = CoordCost::plane(Metric::Euc2d, &points(200, 7)).unwrap();
        let nb = k_nearest(&c, 10);
        let params = AnnealParams {
            schedule: CoolingSchedule::Geometric,
            cooling: 0.9,
            batch: 20,
            reheat_after: 0,
            min_temperature: 1e-4,
            ..AnnealParams::default()
        };
        let mut rng = Pcg64::seed_from_u64(1);
        let mut run = Annealer::start(&c, &nb, &params, shuffled(200, 1), &mut rng);
        let t0 = run.temperature();
        let mut early = Vec::new();
        let mut late = Vec::new();
        for _ in 0..120 {
            let t = run.temperature();
            run.step(&mut rng, &mut || false);
            assert!(run.temperature() <= t, "geometric cooling never warms");
            if early.len() < 5 {
                early.push(run.last_acceptance_rate());
            } else if t < t0 / 100.0 {
                late.push(run.last_acceptance_rate());
            }
        }
        assert!(late.len() >= 20, "the temperature fell by 100x");
        assert_eq!(run.reheats(), 0);
        let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
        let (e, l) = (mean(&early), mean(&late));
        assert!(e > 0.2, "hot batches accept much: {e}");
        assert!(l < e / 5.0, "early {e}, late {l}");
        check_best(&run, 200);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        // Each proposal's delta, once the move is applied, is the change of the recomputed
        // length, for every kind of move on symmetric and asymmetric costs; the tour stays a
        // permutation.
        #[test]
        fn each_gain_is_the_recomputed_length_change(n in 5usize..60, seed in 0u64..10_000, asym in any::<bool>(), k in 2usize..9) {
            let c = instance(n, seed, asym);
            prop_assert_eq!(c.is_symmetric(), !asym);
            let nb = k_nearest(&c, k);
            let mut rng = Pcg64::seed_from_u64(seed);
            let mut run = Annealer::start(&c, &nb, &AnnealParams { samples: 10, ..AnnealParams::default() }, shuffled(n, seed), &mut rng);
            let kinds: &[Kind] = if asym { &[Kind::OrOpt, Kind::Exchange] } else { &[Kind::TwoOpt, Kind::OrOpt, Kind::Exchange] };
            for round in 0..300 {
                let kind = kinds[round % kinds.len()];
                let Some((mv, delta)) = run.propose_kind(kind, &mut rng) else { continue };
                let before = closed_length(&c, run.current_order()).unwrap();
                run.apply(mv, delta);
                let after = closed_length(&c, run.current_order()).unwrap();
                prop_assert!(Tour::new(run.current_order().to_vec(), n).is_ok());
                prop_assert_eq!(after - before, delta, "{:?} {:?}", kind, mv);
                prop_assert_eq!(run.current_length(), after);
            }
            if run.pending { run.record_best(); }
            prop_assert_eq!(closed_length(&c, &run.best_order()), Ok(run.best_length()));
        }
    }

    #[test]
    fn returned_tours_are_permutations_of_their_reported_length() {
        for asym in [false, true] {
            for n in [1usize, 2, 3, 4, 5, 6, 7, 9, 40, 150] {
                let c = instance(n, n as u64, asym);
                for k in [0usize, 1, 5] {
                    let nb = k_nearest(&c, k);
                    let mut rng = Pcg64::seed_from_u64(n as u64);
                    let start = shuffled(n, 3);
                    let start_len = closed_length(&c, &start).unwrap();
                    let params = AnnealParams {
                        batch: 5,
                        reheat_after: 2,
                        ..AnnealParams::default()
                    };
                    let mut run = Annealer::start(&c, &nb, &params, start, &mut rng);
                    for _ in 0..300 {
                        run.step(&mut rng, &mut || false);
                        check_best(&run, n);
                    }
                    assert!(run.best_length() <= start_len);
                    if n < MIN_MOVE_NODES {
                        assert!(run.finished());
                    }
                }
            }
            // Not a permutation: replaced by the identity, no panic.
            let c = instance(6, 1, asym);
            let nb = k_nearest(&c, 3);
            let mut rng = Pcg64::seed_from_u64(0);
            let mut run =
                Annealer::start(&c, &nb, &AnnealParams::default(), vec![0, 0, 9], &mut rng);
            run.step(&mut rng, &mut || false);
            check_best(&run, 6);
        }
    }

    #[test]
    fn tiny_instances_get_their_optimum() {
        // Four nodes on a unit square (scaled): the rim (40) beats both tours with diagonals.
        let c = CoordCost::plane(
            Metric::Euc2d,
            &[[0.0, 0.0], [10.0, 10.0], [0.0, 10.0], [10.0, 0.0]],
        )
        .unwrap();
        let nb = k_nearest(&c, 3);
        let mut rng = Pcg64::seed_from_u64(0);
        let run = Annealer::start(
            &c,
            &nb,
            &AnnealParams::default(),
            vec![0, 1, 2, 3],
            &mut rng,
        );
        assert_eq!(run.best_length(), 40);
        // Three nodes, asymmetric: 0 -> 2 -> 1 -> 0 costs 9 + 7 + 1 = 17, the other way 23.
        let m = MatrixCost::from_rows(&[vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]]).unwrap();
        let nb = k_nearest(&m, 2);
        let run = Annealer::start(&m, &nb, &AnnealParams::default(), vec![0, 1, 2], &mut rng);
        assert_eq!(run.best_length(), 17);
    }

    #[test]
    fn same_seed_gives_the_same_tour() {
        for asym in [false, true] {
            let c = instance(120, 5, asym);
            let nb = k_nearest(&c, 8);
            let run = |seed: u64, schedule| {
                let params = AnnealParams {
                    schedule,
                    batch: 10,
                    ..AnnealParams::default()
                };
                let mut rng = Pcg64::seed_from_u64(seed);
                let mut a = Annealer::start(&c, &nb, &params, (0..120).collect(), &mut rng);
                for _ in 0..200 {
                    a.step(&mut rng, &mut || false);
                }
                (a.best_order(), a.best_length())
            };
            for schedule in CoolingSchedule::ALL {
                assert_eq!(run(3, schedule), run(3, schedule));
            }
            assert_ne!(
                run(3, CoolingSchedule::Geometric).0,
                run(4, CoolingSchedule::Geometric).0
            );
        }
    }

    // Points in convex position (here a regular polygon) have the hull order as their unique
    // optimal tour: any other tour has two crossing edges, and uncrossing them shortens it
    // (triangle inequality). The radius is large so that rounding to integers (at most n/2 per
    // tour) cannot change the order of tours, whose lengths differ by a large share of a side.
    #[test]
    fn a_regular_polygon_is_toured_in_hull_order() {
        let n = 60;
        let perm = shuffled(n, 11); // node perm[i] sits at angle i
        let mut pts = vec![[0.0; 2]; n];
        for (i, &v) in perm.iter().enumerate() {
            let a = 2.0 * std::f64::consts::PI * i as f64 / n as f64;
            pts[v] = [1e6 * a.cos(), 1e6 * a.sin()];
        }
        let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
        let hull = closed_length(&c, &perm).unwrap();
        let nb = k_nearest(&c, 8);
        for schedule in CoolingSchedule::ALL {
            let params = AnnealParams {
                schedule,
                batch: 50,
                ..AnnealParams::default()
            };
            let mut rng = Pcg64::seed_from_u64(2);
            let mut run = Annealer::start(&c, &nb, &params, (0..n).collect(), &mut rng);
            for _ in 0..2_000 {
                run.step(&mut rng, &mut || false);
                assert!(run.best_length() >= hull, "shorter than the optimum");
                if run.best_length() == hull {
                    break;
                }
            }
            assert_eq!(run.best_length(), hull, "{schedule:?}");
            // The same cycle as the hull, in one direction or the other.
            let order = run.best_order();
            let at = |v: usize| perm.iter().position(|&p| p == v).unwrap();
            let steps: Vec<usize> = (0..n)
                .map(|i| (at(order[(i + 1) % n]) + n - at(order[i])) % n)
                .collect();
            assert!(steps.iter().all(|&s| s == 1) || steps.iter().all(|&s| s == n - 1));
        }
    }

    #[test]
    fn runs_under_the_loop_owner() {
        let c = instance(100, 8, false);
        let nb = k_nearest(&c, 8);
        let params = AnnealParams {
            batch: 20,
            ..AnnealParams::default()
        };
        let plan = |threads| LoopPlan {
            seed: 9,
            threads,
            runs: Some(3),
            iterations: Some(150),
            stall: None,
            target: None,
            deadline: None,
            stop: StopHandle::new(),
        };
        let go = |threads| {
            drive(&plan(threads), Instant::now(), &|_| {}, |_, rng, _| {
                Annealer::start(&c, &nb, &params, (0..100).collect(), rng)
            })
        };
        let (a, b) = (go(1), go(2));
        assert_eq!(a.stop_reason, StopReason::IterationBudget);
        assert_eq!(a.iterations, 3 * 150);
        assert_eq!(a.runs, 3);
        assert!(Tour::new(a.order.clone(), 100).is_ok());
        assert_eq!(closed_length(&c, &a.order), Ok(a.length));
        assert_eq!((a.order, a.length), (b.order, b.length));
        // Better than a 2-opt/Or-opt local optimum from the same start.
        let mut t = ArrayTour::new((0..100).collect());
        two_opt_or_opt(&c, &nb, &mut t, &mut || false);
        assert!(a.length < closed_length(&c, t.order()).unwrap());
    }

    #[test]
    fn parameters_are_set_by_key_and_checked() {
        let mut p = AnnealParams::default();
        for (key, value) in [
            ("schedule", "adaptive"),
            ("cooling", "0.9"),
            ("batch", "7"),
            ("start-acceptance", "0.3"),
            ("samples", "100"),
            ("min-temperature", "0.01"),
            ("reheat-after", "0"),
            ("reheat", "1"),
            ("rate-step", "0.01"),
            ("descent", "off"),
        ] {
            assert_eq!(p.set(key, value), Ok(()), "{key}");
        }
        let expected = AnnealParams {
            schedule: CoolingSchedule::Adaptive,
            cooling: 0.9,
            batch: 7,
            start_acceptance: 0.3,
            samples: 100,
            min_temperature: 0.01,
            reheat_after: 0,
            reheat: 1.0,
            rate_step: 0.01,
            descent: false,
        };
        assert_eq!(p, expected);
        for (key, _) in AnnealParams::KEYS {
            for bad in ["", "-1", "nan", "inf", "x"] {
                if let Err(e) = p.set(key, bad) {
                    assert!(e.starts_with(key), "{e}");
                } else {
                    panic!("{key} took {bad:?}");
                }
            }
        }
        for (key, bad) in [
            ("cooling", "1"),
            ("cooling", "0"),
            ("batch", "0"),
            ("batch", "0.5"),
            ("reheat", "0"),
            ("schedule", "Geometric"),
        ] {
            assert!(p.set(key, bad).is_err(), "{key} took {bad:?}");
        }
        assert!(p.set("no-such-key", "1").is_err());
        assert_eq!(p, expected, "failed sets change nothing");
    }
}
