//! Ant colony methods: ant colony system and MAX–MIN ant system, with optional local search on
//! every ant's tour.
//!
//! # The colony
//!
//! Each generation, a colony of ants builds tours step by step. An ant at node `i` looks at the
//! unvisited nodes of its candidate list `nb.out(i)` and weighs the step to `j` by
//! `tau(i, j)^alpha * eta(i, j)^beta`, where `tau` is the pheromone trail on the edge and
//! `eta = 1 / (cost + ETA_EPSILON)` (negative costs count as zero) the heuristic value. Only when
//! every candidate is visited does it scan all unvisited nodes and take the one of greatest
//! weight. The tours may then be improved by a local search ([`AntLocalSearch`]), and the
//! trails are updated.
//!
//! - **Ant colony system** (Dorigo and Gambardella 1997, "Ant colony system: a cooperative
//!   learning approach to the traveling salesman problem", IEEE Transactions on Evolutionary
//!   Computation 1(1)): with probability `q0` ([`AntParams::greed`]) an ant takes the step of
//!   greatest weight, otherwise it draws one in proportion to the weights (`alpha` = 1). Every
//!   step pulls its edge's trail towards the start value `tau0 = 1 / (n L_nn)` (local update,
//!   [`AntParams::local_evaporation`]); after each generation only the edges of the best tour so
//!   far evaporate and receive `rho / L_best` (global update). As in the paper, the ants move in
//!   lockstep (every ant takes its first step, the local updates are applied in ant order, then
//!   every ant takes its second step, and so on), which keeps the answer independent of threads.
//! - **MAX–MIN ant system** (Stützle and Hoos 2000, "MAX–MIN ant system", Future Generation
//!   Computer Systems 16(8)): ants draw every step in proportion to the weights; after each
//!   generation every trail evaporates by `rho` and one tour deposits `1 / L` on its edges: the
//!   generation's best, or the best since the last reinitialisation with a frequency that grows
//!   over the run (every 5th generation from the 26th, every 3rd from the 76th, every 2nd from
//!   the 126th, every one from the 251st), as recommended for runs with local search (also in
//!   Dorigo and Stützle 2004, "Ant Colony Optimization", MIT Press). Every trail is then kept
//!   within `[tau_min, tau_max]`, with `tau_max = 1 / (rho L_best)` and
//!   `tau_min = tau_max (1 - p_dec) / ((n/2 - 1) p_dec)`, `p_dec = p_best^(1/n)`. Trails start
//!   at `tau_max` and are set back to it when they have converged or the search has stalled:
//!   when the average lambda-branching factor (lambda = 0.05) falls below
//!   [`AntParams::restart_branching`], or after [`AntParams::restart_stall`] generations without
//!   a shorter tour since the last reinitialisation. The branching factor counts, per node, the
//!   candidate edges whose trail is at least `tau_min + lambda (tau_max - tau_min)`: measured
//!   against the limits rather than the node's own extreme trails, it does not mistake the
//!   first deposit (one edge per node at `tau_max`, the rest just below) for convergence.
//!
//! # Pheromone storage
//!
//! Up to [`DENSE_TRAILS_UP_TO`] nodes every directed edge has its trail (an `n x n` table of
//! `f64`, 32 MB at the limit). Beyond it only candidate edges have one (`n x k` values), and
//! every other edge shares one background value, which evaporates (and is limited) like the
//! rest but never receives a deposit: a deposit or local update on an edge outside the
//! candidate lists is dropped. Symmetric costs keep symmetric trails: an update of `(i, j)` is
//! written to `(j, i)` as well (beyond the limit: to each list that holds the edge).
//!
//! # Parallelism and reproducibility
//!
//! Each generation draws one `u64` from the run's generator; ant `a` draws from its own
//! generator seeded from that value and `a` (the same mixing as the restarts' seeds). Ants of MAX–MIN ant system
//! are built and improved in parallel, those of ant colony system are built in lockstep and
//! improved in parallel; the generation's best is the shortest tour by (length, ant index). So
//! the same seed gives the same tour on any number of threads.
//!
//! The `should_stop` callback is polled between batches of as many ants as there are threads
//! (and every 64 lockstep steps); a generation cut short keeps the tours it finished for the
//! best so far and leaves the trails alone.

use super::drive::Iterative;
use super::lk::{LinKernighan, LkParams};
use crate::construct::nearest_neighbour;
use crate::control::mix;
use crate::cost::Cost;
use crate::moves::two_opt_or_opt;
use crate::neighbours::Neighbours;
use crate::tour::{ArrayTour, closed_length};
use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;
use rayon::prelude::*;

/// Nodes up to which every edge has a trail of its own; beyond, only candidate edges do (see the
/// module documentation).
pub(crate) const DENSE_TRAILS_UP_TO: usize = 2_000;

/// Added to every cost in the heuristic value `eta = 1 / (cost + ETA_EPSILON)`, so that an edge
/// of cost zero is very attractive but not infinitely so.
pub(crate) const ETA_EPSILON: f64 = 0.1;

/// The lambda of the lambda-branching factor: a candidate edge counts as a branch when its trail
/// is at least `tau_min + LAMBDA (tau_max - tau_min)`.
const LAMBDA: f64 = 0.05;

/// Which ant colony method runs.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum AntVariant {
    /// Ant colony system (Dorigo and Gambardella 1997).
    Acs,
    /// MAX–MIN ant system (Stützle and Hoos 2000).
    MaxMin,
}

/// The local search applied to every ant's tour.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum AntLocalSearch {
    /// Tours stay as the ants built them.
    None,
    /// 2-opt and Or-opt moves (`crate::moves::two_opt_or_opt`); Or-opt only on asymmetric
    /// costs.
    #[serde(rename = "2opt")]
    TwoOpt,
    /// Lin–Kernighan-style moves (`crate::methods::LinKernighan`) on symmetric costs; on asymmetric
    /// costs the same as [`AntLocalSearch::TwoOpt`] (Or-opt only).
    Lk,
}

impl std::str::FromStr for AntLocalSearch {
    type Err = String;

    fn from_str(s: &str) -> Result<Self, String> {
        AntLocalSearch::from_name(s).ok_or_else(|| format!("unknown local search `{s}`"))
    }
}

impl AntLocalSearch {
    /// Every choice, for option parsing.
    pub const ALL: [AntLocalSearch; 3] = [
        AntLocalSearch::None,
        AntLocalSearch::TwoOpt,
        AntLocalSearch::Lk,
    ];

    /// Name as [`AntParams::set`] takes it.
    pub fn name(self) -> &'static str {
        match self {
            AntLocalSearch::None => "none",
            AntLocalSearch::TwoOpt => "2opt",
            AntLocalSearch::Lk => "lk",
        }
    }

    /// The choice of this name.
    pub fn from_name(name: &str) -> Option<AntLocalSearch> {
        Self::ALL.into_iter().find(|s| s.name() == name)
    }
}

/// Tuning of the ant colony methods. Fields that apply to one method only say so; `None` means
/// the method's own default.
///
/// Serialised under the keys of [`AntParams::KEYS`]; `None` fields as `auto` (or `never`). Text
/// values (`"0.5"`) are read like numbers, so `--params KEY=VALUE` pairs deserialise too.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(default, deny_unknown_fields, rename_all = "kebab-case")]
pub struct AntParams {
    /// Ants per generation, `m` in the papers. `None`: 10 for ant colony system; for MAX–MIN
    /// ant system `n`, but at most `MAX_MIN_COLONY` with local search and twice that without.
    #[serde(with = "crate::params::auto")]
    pub colony_size: Option<usize>,
    /// Exponent `alpha` of the trail in the choice rule (dimensionless). MAX–MIN ant system only;
    /// ant colony system uses 1. Default 1.
    #[serde(deserialize_with = "crate::params::text")]
    pub trail_weight: f64,
    /// Exponent `beta` of the heuristic value `1 / cost` in the choice rule (dimensionless).
    /// Default 2.
    #[serde(deserialize_with = "crate::params::text")]
    pub cost_weight: f64,
    /// Evaporation rate `rho` (fraction of the trail lost per update, in (0, 1]). `None`: 0.1
    /// for ant colony system, 0.2 for MAX–MIN ant system with local search and 0.02 without.
    #[serde(with = "crate::params::auto")]
    pub evaporation: Option<f64>,
    /// Probability `q0` that an ant takes the step of greatest weight rather than drawing one
    /// (in [0, 1]). Ant colony system only. Default 0.9.
    #[serde(deserialize_with = "crate::params::text")]
    pub greed: f64,
    /// Local evaporation rate `xi` (in [0, 1]): each step sets its edge's trail to
    /// `(1 - xi) tau + xi tau0`. Ant colony system only. Default 0.1.
    #[serde(deserialize_with = "crate::params::text")]
    pub local_evaporation: f64,
    /// Probability `p_best` (in (0, 1)) that a converged colony builds the best tour again, from
    /// which the lower trail limit follows. MAX–MIN ant system only. Default 0.05.
    #[serde(deserialize_with = "crate::params::text")]
    pub best_probability: f64,
    /// Trails count as converged when the average lambda-branching factor per node, divided by
    /// 2 for symmetric costs, falls below this (at most 1 in a fully converged colony, where only
    /// the edges of one tour keep trails well above `tau_min`); they are then reinitialised.
    /// 0 turns the test off. MAX–MIN ant system only. Default 1.00001.
    #[serde(deserialize_with = "crate::params::text")]
    pub restart_branching: f64,
    /// Trails are reinitialised after this many generations in a row without a shorter tour
    /// since the last reinitialisation (`None`: never). MAX–MIN ant system only. Default 250.
    #[serde(with = "crate::params::never")]
    pub restart_stall: Option<u64>,
    /// Local search on every ant's tour. `None`: Lin–Kernighan-style moves for symmetric costs,
    /// Or-opt for asymmetric ones, for both methods.
    #[serde(with = "crate::params::auto")]
    pub local_search: Option<AntLocalSearch>,
}

/// Largest automatic colony of MAX–MIN ant system with local search (twice this without).
pub(crate) const MAX_MIN_COLONY: usize = 25;

/// Largest colony [`AntParams::set`] accepts.
pub(crate) const MAX_COLONY: usize = 10_000;

impl Default for AntParams {
    fn default() -> Self {
        AntParams {
            colony_size: None,
            trail_weight: 1.0,
            cost_weight: 2.0,
            evaporation: None,
            greed: 0.9,
            local_evaporation: 0.1,
            best_probability: 0.05,
            restart_branching: 1.00001,
            restart_stall: Some(250),
            local_search: None,
        }
    }
}

impl AntParams {
    /// Every key [`AntParams::set`] takes, with a one-line meaning, for help text.
    pub const KEYS: &'static [(&'static str, &'static str)] = &[
        (
            "colony-size",
            "ants per generation (m), 1 to 10000, or `auto` (10; MAX-MIN: n, at most 25, 50 without local search)",
        ),
        (
            "trail-weight",
            "exponent alpha of the pheromone in the choice rule, 0 to 10 (MAX-MIN only)",
        ),
        (
            "cost-weight",
            "exponent beta of the heuristic 1/cost in the choice rule, 0 to 10",
        ),
        (
            "evaporation",
            "fraction rho of a trail lost per update, (0, 1], or `auto` (0.1; MAX-MIN: 0.2, 0.02 without local search)",
        ),
        (
            "greed",
            "probability q0 of taking the best-looking step, 0 to 1 (colony system only)",
        ),
        (
            "local-evaporation",
            "pull xi of each step's trail towards its start value, 0 to 1 (colony system only)",
        ),
        (
            "best-probability",
            "p_best, which sets the lower trail limit, (0, 1) (MAX-MIN only)",
        ),
        (
            "restart-branching",
            "reset trails when the branching factor per tour edge falls below this, 0 = off (MAX-MIN only)",
        ),
        (
            "restart-stall",
            "reset trails after this many generations without a shorter tour, or `never` (MAX-MIN only)",
        ),
        (
            "local-search",
            "improvement of every ant's tour: none, 2opt, lk or `auto` (lk; Or-opt for asymmetric costs)",
        ),
    ];

    /// Sets the parameter named `key` (one of [`AntParams::KEYS`]) from its text `value`. The
    /// error names the key and the allowed range or choices; the parameters are unchanged then.
    ///
    /// ```
    /// let mut params = wend::AntParams::default();
    /// params.set("colony-size", "20").unwrap();
    /// assert_eq!(params.colony_size, Some(20));
    /// assert!(params.set("colony-size", "0").is_err());
    /// ```
    pub fn set(&mut self, key: &str, value: &str) -> Result<(), String> {
        crate::params::set_by_key(self, key, value)
    }

    /// The values a run of `variant` on `n` nodes uses: defaults filled in, out-of-range
    /// fields (set directly rather than through [`AntParams::set`]) pulled into range.
    fn resolve(&self, variant: AntVariant, n: usize, symmetric: bool) -> ColonyPlan {
        let acs = variant == AntVariant::Acs;
        let mut ls = self.local_search.unwrap_or(AntLocalSearch::Lk);
        if ls == AntLocalSearch::Lk && !symmetric {
            ls = AntLocalSearch::TwoOpt;
        }
        let auto = match (acs, ls) {
            (true, _) => 10,
            (false, AntLocalSearch::None) => n.min(2 * MAX_MIN_COLONY),
            (false, _) => n.min(MAX_MIN_COLONY),
        };
        let ants = self.colony_size.unwrap_or(auto).clamp(1, MAX_COLONY);
        let rho = self.evaporation.unwrap_or(match (acs, ls) {
            (true, _) => 0.1,
            (false, AntLocalSearch::None) => 0.02,
            (false, _) => 0.2,
        });
        let unit = |x: f64, lo: f64, hi: f64| if x.is_nan() { lo } else { x.clamp(lo, hi) };
        ColonyPlan {
            ants,
            alpha: if acs {
                1.0
            } else {
                unit(self.trail_weight, 0.0, 10.0)
            },
            beta: unit(self.cost_weight, 0.0, 10.0),
            rho: unit(rho, 1e-6, 1.0),
            q0: if acs { unit(self.greed, 0.0, 1.0) } else { 0.0 },
            xi: unit(self.local_evaporation, 0.0, 1.0),
            p_best: unit(self.best_probability, 1e-9, 1.0 - 1e-9),
            branching: unit(self.restart_branching, 0.0, 100.0),
            stall: self.restart_stall.unwrap_or(u64::MAX).max(1),
            ls,
        }
    }
}

/// [`AntParams`] with every default filled in.
#[derive(Clone, Copy, Debug)]
struct ColonyPlan {
    ants: usize,
    alpha: f64,
    beta: f64,
    rho: f64,
    q0: f64,
    xi: f64,
    p_best: f64,
    branching: f64,
    stall: u64,
    ls: AntLocalSearch,
}

/// `x^e`, without a call to `powf` for the common exponents.
#[inline]
fn pow(x: f64, e: f64) -> f64 {
    if e == 1.0 {
        x
    } else if e == 2.0 {
        x * x
    } else if e == 0.0 {
        1.0
    } else {
        x.powf(e)
    }
}

/// The heuristic value of a step of cost `c`.
#[inline]
fn eta(c: i64) -> f64 {
    1.0 / (c.max(0) as f64 + ETA_EPSILON)
}

/// A tour length as a positive divisor (at least 1, so that zero or negative lengths cannot
/// make trails infinite).
fn positive(length: i64) -> f64 {
    (length as f64).max(1.0)
}

/// The MAX–MIN trail limits `(tau_min, tau_max)` for the best length so far.
fn max_min_limits(rho: f64, p_best: f64, n: usize, best: i64) -> (f64, f64) {
    let hi = 1.0 / (rho * positive(best));
    let p_dec = p_best.powf(1.0 / n.max(1) as f64);
    let avg = n as f64 / 2.0;
    let lo = hi * (1.0 - p_dec) / ((avg - 1.0) * p_dec);
    // Tiny instances (avg <= 1) make the formula meaningless: the limits then meet.
    let lo = if lo.is_finite() && lo > 0.0 {
        lo.min(hi)
    } else if lo == 0.0 {
        hi * 1e-12
    } else {
        hi
    };
    (lo, hi)
}

/// Whether generation `t` since the last (re)initialisation deposits on the best tour since
/// then rather than on the generation's best.
fn best_so_far_turn(t: u64) -> bool {
    let every = match t {
        0..=25 => return false,
        26..=75 => 5,
        76..=125 => 3,
        126..=250 => 2,
        _ => 1,
    };
    t.is_multiple_of(every)
}

/// Where trails live (see the module documentation).
#[derive(Clone, Debug)]
enum Store {
    /// `tau[i * n + j]` for every directed edge.
    Dense(Vec<f64>),
    /// `slots[i * k + x]` for the edge to `nb.out(i)[x]`; `background` for every other edge.
    Candidates { slots: Vec<f64>, background: f64 },
}

/// Pheromone trails.
#[derive(Clone, Debug)]
struct Trails {
    n: usize,
    k: usize,
    symmetric: bool,
    store: Store,
}

fn slot_of(list: &[u32], j: usize) -> Option<usize> {
    list.iter().position(|&x| x as usize == j)
}

impl Trails {
    fn new(n: usize, k: usize, symmetric: bool, dense: bool, value: f64) -> Self {
        let store = if dense {
            Store::Dense(vec![value; n * n])
        } else {
            Store::Candidates {
                slots: vec![value; n * k],
                background: value,
            }
        };
        Trails {
            n,
            k,
            symmetric,
            store,
        }
    }

    /// Trail of the edge from `i` to its candidate `x`.
    #[inline]
    fn at_slot(&self, nb: &Neighbours, i: usize, x: usize) -> f64 {
        match &self.store {
            Store::Dense(t) => t[i * self.n + nb.out(i)[x] as usize],
            Store::Candidates { slots, .. } => slots[i * self.k + x],
        }
    }

    /// Trail of the edge from `i` to `j`.
    fn get(&self, nb: &Neighbours, i: usize, j: usize) -> f64 {
        match &self.store {
            Store::Dense(t) => t[i * self.n + j],
            Store::Candidates { slots, background } => {
                if let Some(x) = slot_of(nb.out(i), j) {
                    slots[i * self.k + x]
                } else if let Some(x) = slot_of(nb.out(j), i).filter(|_| self.symmetric) {
                    slots[j * self.k + x]
                } else {
                    *background
                }
            }
        }
    }

    /// Sets the trail of `(i, j)` (and of `(j, i)` for symmetric costs) to `f` of its value;
    /// dropped beyond the dense limit when neither list holds the edge.
    fn update(&mut self, nb: &Neighbours, i: usize, j: usize, f: impl Fn(f64) -> f64) {
        let v = f(self.get(nb, i, j));
        let (n, k, symmetric) = (self.n, self.k, self.symmetric);
        match &mut self.store {
            Store::Dense(t) => {
                t[i * n + j] = v;
                if symmetric {
                    t[j * n + i] = v;
                }
            }
            Store::Candidates { slots, .. } => {
                if let Some(x) = slot_of(nb.out(i), j) {
                    slots[i * k + x] = v;
                }
                if symmetric {
                    if let Some(x) = slot_of(nb.out(j), i) {
                        slots[j * k + x] = v;
                    }
                }
            }
        }
    }

    /// Every trail times `factor`, then limited to `[lo, hi]`.
    fn scale_clamp(&mut self, factor: f64, lo: f64, hi: f64) {
        let f = |t: &mut f64| *t = (*t * factor).clamp(lo, hi);
        match &mut self.store {
            Store::Dense(t) => t.iter_mut().for_each(f),
            Store::Candidates { slots, background } => {
                slots.iter_mut().for_each(f);
                f(background);
            }
        }
    }

    fn fill(&mut self, value: f64) {
        match &mut self.store {
            Store::Dense(t) => t.fill(value),
            Store::Candidates { slots, background } => {
                slots.fill(value);
                *background = value;
            }
        }
    }

    /// Smallest and largest trail held (`(inf, -inf)` when none is).
    #[cfg(test)]
    fn range(&self) -> (f64, f64) {
        let fold = |(lo, hi): (f64, f64), &t: &f64| (lo.min(t), hi.max(t));
        let start = (f64::INFINITY, f64::NEG_INFINITY);
        match &self.store {
            Store::Dense(t) => t.iter().fold(start, fold),
            Store::Candidates { slots, background } => {
                slots.iter().chain([background]).fold(start, fold)
            }
        }
    }
}

/// One ant's partial tour: the order so far and the unvisited nodes (swap-removed, so taking a
/// node is O(1) and the fallback scan sees only unvisited nodes).
struct Walk {
    order: Vec<usize>,
    unvisited: Vec<usize>,
    slot: Vec<usize>,
    buf: Vec<(usize, f64)>,
}

impl Walk {
    fn new(n: usize, start: usize) -> Self {
        let mut w = Walk {
            order: Vec::with_capacity(n),
            unvisited: (0..n).collect(),
            slot: (0..n).collect(),
            buf: Vec::new(),
        };
        w.take(start);
        w
    }

    fn take(&mut self, v: usize) {
        let s = self.slot[v];
        let last = self.unvisited.len() - 1;
        self.unvisited.swap(s, last);
        self.slot[self.unvisited[s]] = s;
        self.unvisited.pop();
        self.slot[v] = usize::MAX;
        self.order.push(v);
    }

    #[inline]
    fn is_free(&self, v: usize) -> bool {
        self.slot[v] != usize::MAX
    }

    fn current(&self) -> usize {
        self.order[self.order.len() - 1]
    }
}

/// Draws an entry of `buf` with probability proportional to its weight (uniformly when the
/// weights do not sum to a positive finite number). `buf` is not empty.
fn roulette(buf: &[(usize, f64)], total: f64, rng: &mut Pcg64) -> usize {
    if !(total > 0.0 && total.is_finite()) {
        return buf[rng.gen_range(0..buf.len())].0;
    }
    let r = rng.r#gen::<f64>() * total;
    let mut acc = 0.0;
    for &(j, w) in buf {
        acc += w;
        if acc > r {
            return j;
        }
    }
    buf[buf.len() - 1].0
}

/// What the ants read while they build tours: costs, lists, trails and the weights of
/// candidate edges.
struct Field<'a, C: Cost + ?Sized> {
    cost: &'a C,
    nb: &'a Neighbours,
    variant: AntVariant,
    plan: ColonyPlan,
    trails: Trails,
    /// `eta^beta` of the edge from `i` to `nb.out(i)[x]`, at `i * k + x`.
    heur: Vec<f64>,
    /// MAX–MIN: `tau^alpha eta^beta` of the same edges, refreshed after each update.
    choice: Vec<f64>,
    /// Start value of ant colony system trails.
    tau0: f64,
}

impl<C: Cost + ?Sized> Field<'_, C> {
    /// Weight of the step from `i` to its candidate `x`.
    #[inline]
    fn cand_weight(&self, i: usize, x: usize) -> f64 {
        let at = i * self.nb.k() + x;
        match self.variant {
            AntVariant::Acs => self.trails.at_slot(self.nb, i, x) * self.heur[at],
            AntVariant::MaxMin => self.choice[at],
        }
    }

    /// Weight of any step.
    fn any_weight(&self, i: usize, j: usize) -> f64 {
        pow(self.trails.get(self.nb, i, j), self.plan.alpha)
            * pow(eta(self.cost.cost(i, j)), self.plan.beta)
    }

    fn refresh_choice(&mut self) {
        if self.variant != AntVariant::MaxMin {
            return;
        }
        let k = self.nb.k();
        let n = self.cost.len();
        self.choice.resize(n * k, 0.0);
        for i in 0..n {
            for x in 0..k {
                self.choice[i * k + x] =
                    pow(self.trails.at_slot(self.nb, i, x), self.plan.alpha) * self.heur[i * k + x];
            }
        }
    }

    /// The node `walk` steps to next (it has at least one unvisited node).
    fn next(&self, walk: &mut Walk, rng: &mut Pcg64) -> usize {
        let i = walk.current();
        let mut buf = std::mem::take(&mut walk.buf);
        buf.clear();
        let mut total = 0.0;
        for (x, &j) in self.nb.out(i).iter().enumerate() {
            let j = j as usize;
            if walk.is_free(j) {
                let w = self.cand_weight(i, x);
                buf.push((j, w));
                total += w;
            }
        }
        let pick = if buf.is_empty() {
            self.fallback(walk, i)
        } else if self.plan.q0 > 0.0 && rng.r#gen::<f64>() < self.plan.q0 {
            let mut best = buf[0];
            for &e in &buf[1..] {
                if e.1 > best.1 {
                    best = e;
                }
            }
            best.0
        } else {
            roulette(&buf, total, rng)
        };
        walk.buf = buf;
        pick
    }

    /// The unvisited node of greatest weight from `i` (the first in the scan on ties).
    fn fallback(&self, walk: &Walk, i: usize) -> usize {
        let mut best = walk.unvisited[0];
        let mut best_w = f64::NEG_INFINITY;
        for &j in &walk.unvisited {
            let w = self.any_weight(i, j);
            if w > best_w {
                best = j;
                best_w = w;
            }
        }
        best
    }

    /// One ant's tour from a random start (MAX–MIN ant system; `n >= 1`).
    fn build(&self, rng: &mut Pcg64) -> Vec<usize> {
        let n = self.cost.len();
        let mut walk = Walk::new(n, rng.gen_range(0..n));
        for _ in 1..n {
            let j = self.next(&mut walk, rng);
            walk.take(j);
        }
        walk.order
    }

    /// The local update of ant colony system on the edge `(i, j)`.
    fn local_update(&mut self, i: usize, j: usize) {
        let (xi, tau0) = (self.plan.xi, self.tau0);
        self.trails
            .update(self.nb, i, j, |t| (1.0 - xi) * t + xi * tau0);
    }

    /// Ant colony system: `m` tours built in lockstep with local updates after each step, or
    /// `None` when `should_stop` says so first.
    fn lockstep(
        &mut self,
        seed: u64,
        m: usize,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Option<Vec<Vec<usize>>> {
        let n = self.cost.len();
        let mut rngs: Vec<Pcg64> = (0..m)
            .map(|a| Pcg64::seed_from_u64(mix(seed, a as u64)))
            .collect();
        let mut walks: Vec<Walk> = rngs
            .iter_mut()
            .map(|r| Walk::new(n, r.gen_range(0..n)))
            .collect();
        for step in 1..n {
            if step.is_multiple_of(64) && should_stop() {
                return None;
            }
            for (walk, rng) in walks.iter_mut().zip(&mut rngs) {
                let j = self.next(walk, rng);
                walk.take(j);
            }
            for w in &walks {
                self.local_update(w.order[step - 1], w.order[step]);
            }
        }
        if n >= 2 {
            for w in &walks {
                self.local_update(w.order[n - 1], w.order[0]);
            }
        }
        Some(walks.into_iter().map(|w| w.order).collect())
    }
}

/// The local search of one ant slot (buffers kept between generations).
enum Improver<'a, C: Cost + ?Sized> {
    None,
    TwoOpt,
    Lk(Box<LinKernighan<'a, C>>),
}

impl<'a, C: Cost + ?Sized> Improver<'a, C> {
    fn new(ls: AntLocalSearch, cost: &'a C, nb: &'a Neighbours) -> Self {
        match ls {
            AntLocalSearch::None => Improver::None,
            AntLocalSearch::TwoOpt => Improver::TwoOpt,
            AntLocalSearch::Lk => {
                Improver::Lk(Box::new(LinKernighan::new(cost, nb, LkParams::default())))
            }
        }
    }

    fn improve(
        &mut self,
        cost: &C,
        nb: &Neighbours,
        order: Vec<usize>,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Vec<usize> {
        match self {
            Improver::None => order,
            Improver::TwoOpt => {
                let mut t = ArrayTour::new(order);
                two_opt_or_opt(cost, nb, &mut t, should_stop);
                t.into_order()
            }
            Improver::Lk(lk) => {
                let mut t = ArrayTour::new(order);
                lk.optimise(&mut t, should_stop);
                t.into_order()
            }
        }
    }
}

/// A started run of an ant colony method; one [`Iterative::step`] is one generation (every ant
/// built and improved, trails updated).
pub(crate) struct Colony<'a, C: Cost + ?Sized> {
    field: Field<'a, C>,
    improvers: Vec<Improver<'a, C>>,
    /// MAX–MIN trail limits `(tau_min, tau_max)`.
    limits: (f64, f64),
    best: Vec<usize>,
    best_length: i64,
    /// MAX–MIN: best tour since the last (re)initialisation (empty right after one).
    restart_best: Vec<usize>,
    restart_best_length: i64,
    since_restart: u64,
    since_better: u64,
    generations: u64,
    reinits: u64,
}

impl<'a, C: Cost + ?Sized> Colony<'a, C> {
    /// Starts a colony of `variant` over `cost` with candidate lists `nb` (built for `cost`):
    /// a nearest-neighbour tour from a random node gives `tau0` (ant colony system); improved by
    /// the local search (polling `should_stop`), it is the first best tour and gives `tau_max`
    /// (MAX–MIN ant system).
    pub(crate) fn start(
        cost: &'a C,
        nb: &'a Neighbours,
        variant: AntVariant,
        params: &AntParams,
        rng: &mut Pcg64,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Self {
        Self::start_with(
            cost,
            nb,
            variant,
            params,
            rng,
            should_stop,
            DENSE_TRAILS_UP_TO,
        )
    }

    /// [`Colony::start`] with trails on every edge up to `dense_up_to` nodes.
    fn start_with(
        cost: &'a C,
        nb: &'a Neighbours,
        variant: AntVariant,
        params: &AntParams,
        rng: &mut Pcg64,
        should_stop: &mut dyn FnMut() -> bool,
        dense_up_to: usize,
    ) -> Self {
        let n = cost.len();
        let k = nb.k();
        let symmetric = cost.is_symmetric();
        let plan = params.resolve(variant, n, symmetric);
        let from = if n > 0 { rng.gen_range(0..n) } else { 0 };
        let nn = nearest_neighbour(cost, nb, from);
        let nn_length = closed_length(cost, &nn).unwrap_or(i64::MAX);
        let mut improvers: Vec<Improver<'a, C>> = (0..plan.ants)
            .map(|_| Improver::new(plan.ls, cost, nb))
            .collect();
        let first = improvers[0].improve(cost, nb, nn.clone(), should_stop);
        let first_length = closed_length(cost, &first).unwrap_or(i64::MAX);
        let (best, best_length) = if first_length <= nn_length {
            (first, first_length)
        } else {
            (nn, nn_length)
        };
        let tau0 = 1.0 / (n.max(1) as f64 * positive(nn_length));
        let limits = max_min_limits(plan.rho, plan.p_best, n, best_length);
        let initial = match variant {
            AntVariant::Acs => tau0,
            AntVariant::MaxMin => limits.1,
        };
        let heur = (0..n)
            .flat_map(|i| {
                nb.out(i)
                    .iter()
                    .map(move |&j| pow(eta(cost.cost(i, j as usize)), plan.beta))
            })
            .collect();
        let mut field = Field {
            cost,
            nb,
            variant,
            plan,
            trails: Trails::new(n, k, symmetric, n <= dense_up_to, initial),
            heur,
            choice: Vec::new(),
            tau0,
        };
        field.refresh_choice();
        Colony {
            field,
            improvers,
            limits,
            restart_best: best.clone(),
            restart_best_length: best_length,
            best,
            best_length,
            since_restart: 0,
            since_better: 0,
            generations: 0,
            reinits: 0,
        }
    }

    /// The local search applied to each ant's tour (after the asymmetric fallback).
    #[cfg(test)]
    pub fn local_search(&self) -> AntLocalSearch {
        self.field.plan.ls
    }

    /// True when every edge has a trail of its own ([`DENSE_TRAILS_UP_TO`]).
    #[cfg(test)]
    pub fn dense_trails(&self) -> bool {
        matches!(self.field.trails.store, Store::Dense(_))
    }

    /// Smallest and largest trail held (including the background value beyond the dense
    /// limit); `(inf, -inf)` when there are no nodes.
    #[cfg(test)]
    pub fn pheromone_range(&self) -> (f64, f64) {
        self.field.trails.range()
    }

    /// MAX–MIN ant system: the current limits `(tau_min, tau_max)`, which every trail is within
    /// after each update. `None` for ant colony system.
    #[cfg(test)]
    pub fn trail_limits(&self) -> Option<(f64, f64)> {
        (self.field.variant == AntVariant::MaxMin).then_some(self.limits)
    }

    /// Ant colony system: the start value `tau0 = 1 / (n L_nn)` of every trail.
    #[cfg(test)]
    pub fn initial_trail(&self) -> f64 {
        self.field.tau0
    }

    /// Trail of the edge from `i` to `j` (both below `n`).
    #[cfg(test)]
    pub fn trail(&self, i: usize, j: usize) -> f64 {
        self.field.trails.get(self.field.nb, i, j)
    }

    /// MAX–MIN ant system: times the trails were reinitialised.
    #[cfg(test)]
    pub fn reinitialisations(&self) -> u64 {
        self.reinits
    }

    /// Builds and improves the colony's tours, as (length, ant index, order); the flag is false
    /// when `should_stop` cut the generation short (the tours finished by then come back).
    fn tours(
        &mut self,
        seed: u64,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> (bool, Vec<(i64, usize, Vec<usize>)>) {
        let m = self.field.plan.ants;
        let mut built: Vec<Vec<usize>> = match self.field.variant {
            AntVariant::Acs => match self.field.lockstep(seed, m, should_stop) {
                Some(b) => b,
                None => return (false, Vec::new()),
            },
            AntVariant::MaxMin => vec![Vec::new(); m],
        };
        let batch = rayon::current_num_threads().max(1);
        let mut out = Vec::with_capacity(m);
        let mut a0 = 0;
        while a0 < m {
            if should_stop() {
                return (false, out);
            }
            let a1 = (a0 + batch).min(m);
            let field = &self.field;
            let part: Vec<(i64, usize, Vec<usize>)> = self.improvers[a0..a1]
                .par_iter_mut()
                .zip(built[a0..a1].par_iter_mut())
                .enumerate()
                .map(|(off, (imp, pre))| {
                    let a = a0 + off;
                    let order = match field.variant {
                        AntVariant::Acs => std::mem::take(pre),
                        AntVariant::MaxMin => {
                            field.build(&mut Pcg64::seed_from_u64(mix(seed, a as u64)))
                        }
                    };
                    let order = imp.improve(field.cost, field.nb, order, &mut || false);
                    let length = closed_length(field.cost, &order).unwrap_or(i64::MAX);
                    (length, a, order)
                })
                .collect();
            out.extend(part);
            a0 = a1;
        }
        (true, out)
    }

    /// Sets the trail of every edge of the closed tour `order` to `f` of its value.
    fn along(&mut self, order: &[usize], f: impl Fn(f64) -> f64 + Copy) {
        let n = order.len();
        for p in 0..n {
            let (i, j) = (order[p], order[(p + 1) % n]);
            self.field.trails.update(self.field.nb, i, j, f);
        }
    }

    /// Ant colony system: the best tour so far evaporates and receives `rho / L_best`.
    fn global_update(&mut self) {
        let rho = self.field.plan.rho;
        let d = rho / positive(self.best_length);
        let best = std::mem::take(&mut self.best);
        self.along(&best, |t| (1.0 - rho) * t + d);
        self.best = best;
    }

    /// MAX–MIN ant system: limits, evaporation, one deposit, then a reinitialisation if the
    /// trails have converged or the search has stalled.
    fn max_min_update(&mut self, iteration_best: &[usize], iteration_length: i64) {
        let plan = self.field.plan;
        self.since_restart += 1;
        let (tour, length) =
            if best_so_far_turn(self.since_restart) && !self.restart_best.is_empty() {
                (self.restart_best.clone(), self.restart_best_length)
            } else {
                (iteration_best.to_vec(), iteration_length)
            };
        self.limits = max_min_limits(
            plan.rho,
            plan.p_best,
            self.field.cost.len(),
            self.best_length,
        );
        let (lo, hi) = self.limits;
        self.field.trails.scale_clamp(1.0 - plan.rho, lo, hi);
        let d = 1.0 / positive(length);
        self.along(&tour, |t| (t + d).min(hi));
        let converged = plan.branching > 0.0 && self.branching_factor() < plan.branching;
        if converged || self.since_better >= plan.stall {
            self.field.trails.fill(hi);
            self.restart_best.clear();
            self.restart_best_length = i64::MAX;
            self.since_restart = 0;
            self.since_better = 0;
            self.reinits += 1;
        }
        self.field.refresh_choice();
    }

    /// Average lambda-branching factor over the candidate lists, per tour edge at a node (2 for
    /// symmetric costs, 1 otherwise): candidate edges whose trail is at least
    /// `tau_min + LAMBDA (tau_max - tau_min)`. Infinite without lists.
    fn branching_factor(&self) -> f64 {
        let (nb, n) = (self.field.nb, self.field.cost.len());
        if nb.k() == 0 || n == 0 {
            return f64::INFINITY;
        }
        let (lo, hi) = self.limits;
        let cut = lo + LAMBDA * (hi - lo);
        let branches = (0..n)
            .map(|i| {
                (0..nb.k())
                    .filter(|&x| self.field.trails.at_slot(nb, i, x) >= cut)
                    .count()
            })
            .sum::<usize>();
        let per = if self.field.trails.symmetric { 2 } else { 1 };
        branches as f64 / (n * per) as f64
    }
}

impl<C: Cost + ?Sized> Iterative for Colony<'_, C> {
    /// A generation builds its ants in parallel.
    const PARALLEL_STEPS: bool = true;

    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        if self.finished() {
            return;
        }
        let seed = rng.r#gen::<u64>();
        self.generations += 1;
        let (complete, tours) = self.tours(seed, should_stop);
        let Some((length, _, order)) = tours.into_iter().min_by_key(|t| (t.0, t.1)) else {
            return;
        };
        if length < self.best_length {
            self.best = order.clone();
            self.best_length = length;
        }
        if length < self.restart_best_length {
            self.restart_best = order.clone();
            self.restart_best_length = length;
            self.since_better = 0;
        } else {
            self.since_better += 1;
        }
        if !complete {
            return;
        }
        match self.field.variant {
            AntVariant::Acs => self.global_update(),
            AntVariant::MaxMin => self.max_min_update(&order, length),
        }
    }

    fn best_length(&self) -> i64 {
        self.best_length
    }

    fn best_order(&self) -> Vec<usize> {
        self.best.clone()
    }

    /// Fewer than three nodes: there is one tour only.
    fn finished(&self) -> bool {
        self.field.cost.len() < 3
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::control::{StopHandle, StopReason};
    use crate::cost::{CoordCost, MatrixCost, Metric};
    use crate::methods::{LoopPlan, drive};
    use crate::neighbours::k_nearest;
    use crate::testing::random_costs;
    use crate::tour::Tour;
    use proptest::prelude::*;
    use rand::Rng;
    use std::time::Instant;

    fn instance(n: usize, seed: u64, asym: bool) -> MatrixCost {
        random_costs(n, seed, if asym { 1 } else { 0 })
    }

    fn variant_of(i: u8) -> AntVariant {
        if i.is_multiple_of(2) {
            AntVariant::Acs
        } else {
            AntVariant::MaxMin
        }
    }

    fn params(ls: AntLocalSearch) -> AntParams {
        AntParams {
            local_search: Some(ls),
            ..AntParams::default()
        }
    }

    fn colony<'a, C: Cost + ?Sized>(
        c: &'a C,
        nb: &'a Neighbours,
        variant: AntVariant,
        p: &AntParams,
        seed: u64,
        dense_up_to: usize,
    ) -> (Colony<'a, C>, Pcg64) {
        let mut rng = Pcg64::seed_from_u64(seed);
        let col = Colony::start_with(c, nb, variant, p, &mut rng, &mut || false, dense_up_to);
        (col, rng)
    }

    /// The best tour is a permutation whose reported length is its recomputed length.
    fn check_tour<C: Cost + ?Sized>(c: &C, col: &Colony<'_, C>) -> Result<(), TestCaseError> {
        let order = col.best_order();
        prop_assert!(Tour::new(order.clone(), c.len()).is_ok(), "{order:?}");
        prop_assert_eq!(closed_length(c, &order), Ok(col.best_length()));
        Ok(())
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(48))]

        // After every generation, and so after every reinitialisation, each trail held is
        // within the current MAX–MIN limits.
        #[test]
        fn max_min_trails_stay_within_the_limits(
            n in 4usize..30,
            seed in 0u64..10_000,
            asym in any::<bool>(),
            dense in any::<bool>(),
            ls in 0usize..3,
            rho in 0.01f64..1.0,
            p_best in 0.001f64..0.5,
            stall in 1u64..6,
        ) {
            let c = instance(n, seed, asym);
            let nb = k_nearest(&c, 6);
            let p = AntParams {
                evaporation: Some(rho),
                best_probability: p_best,
                restart_stall: Some(stall),
                colony_size: Some(6),
                ..params(AntLocalSearch::ALL[ls])
            };
            let (mut col, mut rng) =
                colony(&c, &nb, AntVariant::MaxMin, &p, seed, if dense { n } else { 0 });
            prop_assert_eq!(col.dense_trails(), dense);
            for _ in 0..15 {
                let before = col.reinitialisations();
                col.step(&mut rng, &mut || false);
                let (lo, hi) = col.trail_limits().unwrap();
                let (min, max) = col.pheromone_range();
                prop_assert!(0.0 < lo && lo <= hi && hi.is_finite(), "limits {lo} {hi}");
                prop_assert!(lo <= min && max <= hi, "trails {min}..{max} outside {lo}..{hi}");
                if col.reinitialisations() > before {
                    prop_assert_eq!((min, max), (hi, hi), "a reinitialisation sets tau_max");
                }
                check_tour(&c, &col)?;
            }
        }

        // Both methods, every local search, symmetric and asymmetric costs, tiny instances:
        // the best tour is a permutation, its length is exact and never grows.
        #[test]
        fn best_tours_are_permutations_with_exact_lengths(
            n in 1usize..40,
            seed in 0u64..10_000,
            asym in any::<bool>(),
            dense in any::<bool>(),
            v in 0u8..2,
            ls in 0usize..3,
        ) {
            let c = instance(n, seed, asym);
            let nb = k_nearest(&c, 5);
            let p = AntParams { colony_size: Some(4), ..params(AntLocalSearch::ALL[ls]) };
            let (mut col, mut rng) =
                colony(&c, &nb, variant_of(v), &p, seed, if dense { n } else { 0 });
            check_tour(&c, &col)?;
            let mut last = col.best_length();
            for _ in 0..5 {
                col.step(&mut rng, &mut || false);
                check_tour(&c, &col)?;
                prop_assert!(col.best_length() <= last);
                last = col.best_length();
            }
        }

        // Symmetric costs keep symmetric trails, with trails on every edge or on candidate
        // edges only.
        #[test]
        fn symmetric_costs_keep_symmetric_trails(
            n in 5usize..30,
            seed in 0u64..10_000,
            dense in any::<bool>(),
            v in 0u8..2,
        ) {
            let c = instance(n, seed, false);
            let nb = k_nearest(&c, 5);
            let p = AntParams { colony_size: Some(5), ..params(AntLocalSearch::None) };
            let (mut col, mut rng) =
                colony(&c, &nb, variant_of(v), &p, seed, if dense { n } else { 0 });
            for _ in 0..6 {
                col.step(&mut rng, &mut || false);
            }
            for i in 0..n {
                for j in 0..n {
                    prop_assert_eq!(col.trail(i, j).to_bits(), col.trail(j, i).to_bits());
                }
            }
        }
    }

    // Ant colony system keeps every trail between tau0 and 1 / L_best (Dorigo and Gambardella
    // 1997): both updates are convex combinations of values within those bounds.
    #[test]
    fn colony_system_trails_stay_between_tau0_and_one_over_best() {
        for (seed, asym, dense) in [(1, false, true), (2, true, true), (3, false, false)] {
            let c = instance(40, seed, asym);
            let nb = k_nearest(&c, 8);
            let (mut col, mut rng) = colony(
                &c,
                &nb,
                AntVariant::Acs,
                &params(AntLocalSearch::TwoOpt),
                seed,
                if dense { 40 } else { 0 },
            );
            let tau0 = col.initial_trail();
            for _ in 0..20 {
                col.step(&mut rng, &mut || false);
                let (min, max) = col.pheromone_range();
                let top = 1.0 / col.best_length() as f64;
                assert!(min >= tau0 * (1.0 - 1e-12), "{min} below tau0 {tau0}");
                assert!(max <= top * (1.0 + 1e-12), "{max} above 1/L_best {top}");
            }
            // The best tour's edges were reinforced above the start value.
            assert!(col.pheromone_range().1 > tau0 * 1.5);
        }
    }

    /// Order, length and trail range after `gens` generations on a pool of `threads`.
    fn run_on(
        threads: usize,
        c: &MatrixCost,
        variant: AntVariant,
        ls: AntLocalSearch,
        gens: usize,
    ) -> (Vec<usize>, i64, (u64, u64)) {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| {
            let nb = k_nearest(c, 8);
            let (mut col, mut rng) = colony(c, &nb, variant, &params(ls), 11, DENSE_TRAILS_UP_TO);
            for _ in 0..gens {
                col.step(&mut rng, &mut || false);
            }
            let (lo, hi) = col.pheromone_range();
            (
                col.best_order(),
                col.best_length(),
                (lo.to_bits(), hi.to_bits()),
            )
        })
    }

    #[test]
    fn same_seed_same_tour_on_one_and_two_threads() {
        for asym in [false, true] {
            let c = instance(70, 5, asym);
            for variant in [AntVariant::Acs, AntVariant::MaxMin] {
                for ls in [AntLocalSearch::None, AntLocalSearch::TwoOpt] {
                    let one = run_on(1, &c, variant, ls, 8);
                    let two = run_on(2, &c, variant, ls, 8);
                    let again = run_on(2, &c, variant, ls, 8);
                    assert_eq!(one, two, "{variant:?} {ls:?} asym {asym}");
                    assert_eq!(two, again, "{variant:?} {ls:?} asym {asym}");
                }
            }
        }
    }

    /// Points on a circle of radius 10^6 at random, distinct angles, in random index order, and
    /// the length of the tour in angular order.
    fn convex(n: usize, seed: u64) -> (CoordCost, i64) {
        let mut rng = Pcg64::seed_from_u64(seed);
        let mut angles: Vec<f64> = (0..n)
            .map(|_| rng.gen_range(0.0..std::f64::consts::TAU))
            .collect();
        let pts: Vec<[f64; 2]> = angles
            .iter()
            .map(|a| [1e6 * a.cos(), 1e6 * a.sin()])
            .collect();
        let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
        let mut hull: Vec<usize> = (0..n).collect();
        hull.sort_by(|&a, &b| angles[a].total_cmp(&angles[b]));
        angles.sort_by(f64::total_cmp);
        assert!(
            angles.windows(2).all(|w| w[1] - w[0] > 1e-3),
            "distinct angles"
        );
        let optimum = closed_length(&c, &hull).unwrap();
        (c, optimum)
    }

    /// Runs `col` until its best tour is `optimum` long or `budget` generations have passed,
    /// checking that it never gets shorter; returns the generations used.
    fn generations_to<C: Cost + ?Sized>(
        col: &mut Colony<'_, C>,
        rng: &mut Pcg64,
        optimum: i64,
        budget: usize,
    ) -> usize {
        assert!(col.best_length() >= optimum, "shorter than the optimum");
        let mut gens = 0;
        while col.best_length() > optimum && gens < budget {
            col.step(rng, &mut || false);
            assert!(col.best_length() >= optimum, "shorter than the optimum");
            gens += 1;
        }
        gens
    }

    /// A `w x h` grid of spacing 10 under rounded Euclidean costs.
    fn grid(w: usize, h: usize) -> CoordCost {
        let pts: Vec<[f64; 2]> = (0..w * h)
            .map(|i| [(i % w) as f64 * 10.0, (i / w) as f64 * 10.0])
            .collect();
        CoordCost::plane(Metric::Euc2d, &pts).unwrap()
    }

    // Outside reference: on a grid of spacing 10 under rounded Euclidean costs every edge costs
    // at least 10, so a tour of n edges costs at least 10 n; when one side of the grid is even a
    // serpentine tour uses grid edges only and costs exactly 10 n. The starting tours are not
    // optimal, so the ants (with local search) have to find it.
    #[test]
    fn local_search_colonies_reach_the_grid_optimum_in_a_few_generations() {
        for (w, h, variant, ls, budget) in [
            (20, 15, AntVariant::MaxMin, AntLocalSearch::Lk, 5),
            (20, 15, AntVariant::Acs, AntLocalSearch::Lk, 5),
            (10, 9, AntVariant::MaxMin, AntLocalSearch::TwoOpt, 5),
            (10, 9, AntVariant::Acs, AntLocalSearch::TwoOpt, 5),
            (6, 5, AntVariant::MaxMin, AntLocalSearch::None, 400),
            (6, 5, AntVariant::Acs, AntLocalSearch::None, 400),
        ] {
            let c = grid(w, h);
            let n = w * h;
            let optimum = 10 * n as i64;
            let nb = k_nearest(&c, 8);
            let (mut col, mut rng) = colony(&c, &nb, variant, &params(ls), 4, n);
            assert!(col.best_length() > optimum, "the start is already optimal");
            let gens = generations_to(&mut col, &mut rng, optimum, budget);
            assert_eq!(
                col.best_length(),
                optimum,
                "{w}x{h} {variant:?} {ls:?} ({gens})"
            );
        }
    }

    // Outside reference: for points in convex position the shortest tour visits them in the
    // order of the convex hull (a geometric fact: any other tour has two crossing edges, and
    // uncrossing them shortens it by the strict triangle inequality). Rounding changes each edge
    // by at most 1/2 while the gain of uncrossing is of the order of the radius times the
    // angle gaps (here far above n), so the hull order stays optimal after rounding. The
    // nearest-neighbour start is not optimal; the ants alone, without local search, find it.
    #[test]
    fn ants_alone_find_the_hull_tour() {
        for (n, seed) in [(45, 2), (60, 3)] {
            let (c, optimum) = convex(n, seed);
            let nb = k_nearest(&c, 8);
            for (variant, budget) in [(AntVariant::Acs, 20), (AntVariant::MaxMin, 300)] {
                let (mut col, mut rng) =
                    colony(&c, &nb, variant, &params(AntLocalSearch::None), 4, n);
                assert!(col.best_length() > optimum, "the start is already optimal");
                generations_to(&mut col, &mut rng, optimum, budget);
                assert_eq!(col.best_length(), optimum, "n {n}, {variant:?}");
            }
        }
    }

    #[test]
    fn runs_under_the_loop_owner() {
        let c = instance(50, 9, false);
        let nb = k_nearest(&c, 8);
        let p = AntParams::default();
        let go = |threads| {
            let plan = LoopPlan {
                seed: 21,
                threads,
                runs: Some(3),
                iterations: Some(4),
                stall: None,
                target: None,
                deadline: None,
                stop: StopHandle::new(),
            };
            drive(&plan, Instant::now(), &|_| {}, |_, rng, should_stop| {
                Colony::start(&c, &nb, AntVariant::MaxMin, &p, rng, should_stop)
            })
        };
        let out = go(2);
        assert_eq!(out.stop_reason, StopReason::IterationBudget);
        assert_eq!((out.runs, out.iterations), (3, 12));
        assert!(Tour::new(out.order.clone(), 50).is_ok());
        assert_eq!(closed_length(&c, &out.order), Ok(out.length));
        let single = go(1);
        assert_eq!((single.order, single.length), (out.order, out.length));
    }

    // Trails that were just set to tau_max cannot have converged a few generations later: an
    // edge without deposits keeps at least (1 - rho)^t of tau_max, far above the cut-off.
    #[test]
    fn trails_are_not_reset_before_they_can_have_converged() {
        let c = instance(60, 8, false);
        let nb = k_nearest(&c, 8);
        for ls in AntLocalSearch::ALL {
            let p = AntParams {
                evaporation: Some(0.2),
                restart_stall: None,
                ..params(ls)
            };
            let (mut col, mut rng) = colony(&c, &nb, AntVariant::MaxMin, &p, 1, 60);
            for _ in 0..8 {
                col.step(&mut rng, &mut || false);
            }
            assert_eq!(col.reinitialisations(), 0, "{ls:?}");
            // Without a stall limit or a branching test the trails converge and stay so.
            let p = AntParams {
                restart_branching: 0.0,
                ..p
            };
            let (mut col, mut rng) = colony(&c, &nb, AntVariant::MaxMin, &p, 1, 60);
            for _ in 0..120 {
                col.step(&mut rng, &mut || false);
            }
            assert_eq!(col.reinitialisations(), 0, "{ls:?}");
            assert!(col.branching_factor() <= 1.0, "{}", col.branching_factor());
        }
    }

    // A converged colony is reinitialised by the branching test alone.
    #[test]
    fn converged_trails_are_reinitialised() {
        let c = instance(40, 8, false);
        let nb = k_nearest(&c, 8);
        let p = AntParams {
            evaporation: Some(0.5),
            restart_stall: None,
            ..params(AntLocalSearch::TwoOpt)
        };
        let (mut col, mut rng) = colony(&c, &nb, AntVariant::MaxMin, &p, 1, 40);
        for _ in 0..200 {
            col.step(&mut rng, &mut || false);
        }
        assert!(col.reinitialisations() > 0);
    }

    #[test]
    fn tiny_instances_do_not_panic() {
        for n in 0..=4 {
            for asym in [false, true] {
                let rows: Vec<Vec<i64>> = (0..n)
                    .map(|i| {
                        (0..n)
                            .map(|j| {
                                if i == j {
                                    0
                                } else {
                                    1 + (i * 3 + j * (1 + asym as usize)) as i64 % 5
                                }
                            })
                            .collect()
                    })
                    .collect();
                let c = MatrixCost::from_rows(&rows).unwrap();
                let nb = k_nearest(&c, 10);
                for variant in [AntVariant::Acs, AntVariant::MaxMin] {
                    for ls in AntLocalSearch::ALL {
                        let (mut col, mut rng) =
                            colony(&c, &nb, variant, &params(ls), 3, DENSE_TRAILS_UP_TO);
                        for _ in 0..3 {
                            col.step(&mut rng, &mut || false);
                        }
                        let order = col.best_order();
                        assert!(Tour::new(order.clone(), n).is_ok());
                        assert_eq!(closed_length(&c, &order), Ok(col.best_length()));
                    }
                }
            }
        }
        // Two nodes, asymmetric: the only tour costs both directions.
        let c = MatrixCost::from_rows(&[vec![0, 1], vec![5, 0]]).unwrap();
        let nb = k_nearest(&c, 3);
        let (col, _) = colony(&c, &nb, AntVariant::MaxMin, &AntParams::default(), 1, 10);
        assert_eq!(col.best_length(), 6);
        assert!(col.finished());
    }

    #[test]
    fn lin_kernighan_is_never_used_on_asymmetric_costs() {
        let c = instance(20, 1, true);
        let nb = k_nearest(&c, 5);
        for ls in [None, Some(AntLocalSearch::Lk)] {
            let p = AntParams {
                local_search: ls,
                ..AntParams::default()
            };
            let (col, _) = colony(&c, &nb, AntVariant::MaxMin, &p, 1, 20);
            assert_eq!(col.local_search(), AntLocalSearch::TwoOpt);
        }
        let c = instance(20, 1, false);
        let (col, _) = colony(&c, &nb, AntVariant::Acs, &AntParams::default(), 1, 20);
        assert_eq!(col.local_search(), AntLocalSearch::Lk);
    }

    #[test]
    fn stopping_keeps_a_valid_best_tour_and_leaves_trails_alone() {
        let c = instance(60, 3, false);
        let nb = k_nearest(&c, 8);
        for variant in [AntVariant::Acs, AntVariant::MaxMin] {
            let (mut col, mut rng) =
                colony(&c, &nb, variant, &params(AntLocalSearch::TwoOpt), 2, 60);
            let before = col.pheromone_range();
            col.step(&mut rng, &mut || true);
            assert_eq!(col.pheromone_range(), before, "{variant:?}");
            assert_eq!(closed_length(&c, &col.best_order()), Ok(col.best_length()));
        }
    }

    #[test]
    fn parameters_are_set_by_name_with_clear_errors() {
        let valid = [
            ("colony-size", "12"),
            ("trail-weight", "1.5"),
            ("cost-weight", "3"),
            ("evaporation", "0.3"),
            ("greed", "0.95"),
            ("local-evaporation", "0.2"),
            ("best-probability", "0.1"),
            ("restart-branching", "1.1"),
            ("restart-stall", "100"),
            ("local-search", "2opt"),
        ];
        assert_eq!(valid.len(), AntParams::KEYS.len());
        let mut p = AntParams::default();
        for ((key, value), (listed, meaning)) in valid.iter().zip(AntParams::KEYS) {
            assert_eq!(key, listed);
            assert!(!meaning.is_empty());
            assert_eq!(p.set(key, value), Ok(()), "{key}");
            let e = p.set(key, "lots").unwrap_err();
            assert!(e.starts_with(key), "{e}");
        }
        assert_eq!(p.colony_size, Some(12));
        assert_eq!(p.evaporation, Some(0.3));
        assert_eq!(p.restart_stall, Some(100));
        assert_eq!(p.local_search, Some(AntLocalSearch::TwoOpt));
        for (key, bad) in [
            ("greed", "1.5"),
            ("evaporation", "0"),
            ("best-probability", "1"),
            ("colony-size", "0"),
            ("cost-weight", "NaN"),
            ("trail-weight", "-1"),
        ] {
            let e = p.set(key, bad).unwrap_err();
            assert!(e.contains(key) && e.contains(bad), "{e}");
        }
        assert!(
            p.set("local-search", "3opt")
                .unwrap_err()
                .contains("none, 2opt, lk")
        );
        assert!(p.set("speed", "1").unwrap_err().contains("colony-size"));
        for (key, word) in [
            ("colony-size", "auto"),
            ("evaporation", "auto"),
            ("restart-stall", "never"),
            ("local-search", "auto"),
        ] {
            assert_eq!(p.set(key, word), Ok(()));
        }
        assert_eq!(p.colony_size, None);
        assert_eq!(p.evaporation, None);
        assert_eq!(p.restart_stall, None);
        assert_eq!(p.local_search, None);
    }

    #[test]
    fn max_min_limits_follow_the_published_formula() {
        // n = 100, p_best = 0.05, rho = 0.02, L = 1000: tau_max = 1 / 20 = 0.05 and
        // tau_min = 0.05 (1 - 0.05^(1/100)) / (49 * 0.05^(1/100)) = 0.05 * 0.029513 / 47.5539
        // = 3.1031e-5 (worked by hand).
        let (lo, hi) = max_min_limits(0.02, 0.05, 100, 1000);
        assert!((hi - 0.05).abs() < 1e-15);
        assert!((lo - 3.1031e-5).abs() < 1e-9, "{lo}");
        // Too few nodes for the formula: the limits meet.
        assert_eq!(
            max_min_limits(0.02, 0.05, 2, 10).0,
            max_min_limits(0.02, 0.05, 2, 10).1
        );
    }
}
