//! What the searches share: the stop handle, improvement reports and stop reasons, starting
//! tours, seeds and threads.
//!
//! Restart `r` draws its random numbers from a generator seeded by (seed, r) alone, and the
//! answer is the best result by (length, restart index). So the answer does not depend on which
//! thread ran which restart or finished first: with a restart budget and no time limit, the same
//! seed gives the same tour for any number of threads. Only a deadline, which cuts the number of
//! restarts, can make two runs differ.

use crate::candidates::Neighbours;
use crate::construct;
use crate::cost::Cost;
use rand::Rng;
use rand_pcg::Pcg64;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

/// A shared flag that asks a running solve to stop and return its best tour so far.
///
/// Clone it, hand one copy to [`crate::Solver::stop_handle`], and call [`StopHandle::stop`] from
/// anywhere (another thread, a signal handler).
#[derive(Clone, Debug, Default)]
pub struct StopHandle(Arc<AtomicBool>);

impl StopHandle {
    /// A handle that has not been triggered.
    pub fn new() -> Self {
        Self::default()
    }
    /// Asks the solve to stop.
    pub fn stop(&self) {
        self.0.store(true, Ordering::Relaxed);
    }
    /// True once [`StopHandle::stop`] was called.
    pub fn is_stopped(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }
}

/// How the starting tour of each restart is built.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Start {
    /// Nearest neighbour from a random node.
    NearestNeighbour,
    /// Greedy edge (the first restart without noise, later ones with random noise).
    GreedyEdge,
    /// Hilbert curve (a random shift of the curve for later restarts); nearest neighbour when
    /// the costs have no geometry.
    SpaceFillingCurve,
    /// Greedy first, then the curve, then alternating noisy greedy and nearest neighbour.
    Mixed,
}

/// One new best tour, as reported to observers.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Improvement {
    /// Seconds since the solve began.
    pub seconds: f64,
    /// Length of the new best tour.
    pub length: i64,
    /// Index of the restart that found it.
    pub restart: usize,
}

/// Why a search stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum StopReason {
    /// All requested restarts ran to a local optimum.
    RestartBudget,
    /// The time limit was reached.
    TimeLimit,
    /// A [`StopHandle`] asked for it.
    Cancelled,
    /// The instance is small enough to try every tour: the answer is optimal.
    Exhaustive,
    /// The method is a single construction, done.
    Constructed,
    /// A tour no longer than the target length was found.
    TargetReached,
    /// Every run of an iterative method used up its iteration budget (kicks for `lk`).
    IterationBudget,
    /// Runs of an iterated search ended after too many kicks in a row without improvement.
    StallLimit,
}

/// Runs `worker` once on each of `threads` threads (on this thread alone when `threads <= 1` or
/// no pool can be built); workers share their work through atomics, so how many run only
/// changes the speed.
pub(crate) fn on_threads(threads: usize, worker: &(dyn Fn() + Sync)) {
    if threads <= 1 {
        worker();
        return;
    }
    match rayon::ThreadPoolBuilder::new().num_threads(threads).build() {
        Ok(pool) => {
            pool.broadcast(|_| worker());
        }
        Err(_) => worker(),
    }
}

/// Seed of restart `r`: a SplitMix64 step over (seed, r), so nearby seeds and indices give
/// unrelated streams.
pub(crate) fn mix(seed: u64, r: u64) -> u64 {
    let mut z = seed ^ r.wrapping_mul(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

pub(crate) fn start_tour<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    start: Start,
    r: usize,
    rng: &mut Pcg64,
    should_stop: &mut dyn FnMut() -> bool,
) -> Vec<usize> {
    let n = cost.len();
    let nn = |rng: &mut Pcg64| {
        let s = if r == 0 {
            0
        } else {
            rng.gen_range(0..n.max(1))
        };
        construct::nearest_neighbour(cost, nb, s)
    };
    let curve = |rng: &mut Pcg64| {
        let shift = if r == 0 {
            [0.0, 0.0]
        } else {
            [rng.gen::<f64>(), rng.gen::<f64>()]
        };
        construct::space_filling_curve(cost, shift)
    };
    let noise = if r == 0 { 0.0 } else { 0.3 };
    // A greedy start given up at a stop request or the deadline: the curve, which takes a
    // fraction of the time (or the nodes in order, without geometry), so a tour is at hand.
    let mut greedy = |noise: f64, rng: &mut Pcg64| {
        construct::greedy_edge_until(cost, nb, noise, rng, should_stop)
            .or_else(|| construct::space_filling_curve(cost, [0.0, 0.0]))
            .unwrap_or_else(|| (0..n).collect())
    };
    match start {
        Start::NearestNeighbour => nn(rng),
        Start::GreedyEdge => greedy(noise, rng),
        Start::SpaceFillingCurve => curve(rng).unwrap_or_else(|| nn(rng)),
        Start::Mixed => match r {
            0 => greedy(0.0, rng),
            1 => curve(rng).unwrap_or_else(|| nn(rng)),
            r if r % 2 == 0 => greedy(0.3, rng),
            _ => nn(rng),
        },
    }
}

/// A deadline `limit` after `began`, or none.
pub(crate) fn deadline(began: Instant, limit: Option<Duration>) -> Option<Instant> {
    limit.and_then(|l| began.checked_add(l))
}
