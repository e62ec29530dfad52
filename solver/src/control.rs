//! What every search shares, below everything else: the stop handle, improvement reports and
//! stop reasons, deadlines, seeds and threads. This module uses nothing else of the crate.
//!
//! Restart `r` draws its random numbers from a generator seeded by (seed, r) alone, and the
//! answer is the best result by (length, restart index). So the answer does not depend on which
//! thread ran which restart or finished first: with a restart budget and no time limit, the same
//! seed gives the same tour for any number of threads. Only a deadline, which cuts the number of
//! restarts, can make two runs differ.

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

/// A shared flag that asks a running solve to stop and return its best tour so far.
///
/// Clone it, hand one copy to [`crate::Solver::stop_handle`], and call [`StopHandle::stop`] from
/// anywhere (another thread, a signal handler).
#[derive(Clone, Debug, Default)]
pub struct StopHandle(Arc<AtomicBool>);

impl StopHandle {
    /// A handle that has not been triggered.
    ///
    /// ```
    /// let stop = wend::StopHandle::new();
    /// let copy = stop.clone(); // for another thread or a signal handler
    /// assert!(!stop.is_stopped());
    /// copy.stop();
    /// assert!(stop.is_stopped());
    /// ```
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
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum StopReason {
    /// All requested runs ran to their end (each `2opt` run to a local optimum). Records of
    /// earlier versions call it `restart_budget`, read as this.
    #[serde(alias = "restart_budget")]
    RunBudget,
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

/// A pool of `threads` worker threads, or none when it cannot be built.
fn pool(threads: usize) -> Option<rayon::ThreadPool> {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads.max(1))
        .build()
        .ok()
}

/// Runs `worker` once on each of `threads` threads (on this thread alone when `threads <= 1` or
/// no pool can be built); workers share their work through atomics, so how many run only
/// changes the speed.
pub(crate) fn on_threads(threads: usize, worker: &(dyn Fn() + Sync)) {
    if threads <= 1 {
        worker();
        return;
    }
    match pool(threads) {
        Some(pool) => {
            pool.broadcast(|_| worker());
        }
        None => worker(),
    }
}

/// Runs `work` once, with `threads` threads (at least one) for the parallel work inside it: its
/// parallel iterators run on a pool of that many threads (on the caller's pool when none can be
/// built).
pub(crate) fn within_threads<R: Send>(threads: usize, work: impl FnOnce() -> R + Send) -> R {
    match pool(threads) {
        Some(pool) => pool.install(work),
        None => work(),
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

/// A deadline `limit` after `began`, or none.
pub(crate) fn deadline(began: Instant, limit: Option<Duration>) -> Option<Instant> {
    limit.and_then(|l| began.checked_add(l))
}
