//! The loop owner of every iterative method: time limit, iteration and stall limits, target
//! length, cancellation, seeded random numbers, improvement reports and the stop reason, written
//! once.
//!
//! A method supplies two things: how a run starts (`start`, which builds its first tour and may
//! already improve it) and one unit of work on a started run ([`Iterative::step`]: one kick and
//! its repair, one generation of ants, one batch of annealing moves). [`drive`] does the rest:
//!
//! - runs are independent; run `r` draws from its own generator, seeded from (seed, r) alone,
//!   and the answer is the best by (length, run index), so with an iteration budget the answer
//!   does not depend on thread timing or on the number of threads;
//! - `threads` runs go at once; without a run count, runs follow one another until the
//!   deadline (a run ends at its iteration budget or after `stall` iterations in a row without a
//!   shorter tour);
//! - the deadline, the [`StopHandle`] and the target length are checked between steps, and a
//!   step may poll the `should_stop` callback it is given to end early;
//! - every new best tour over all runs goes to the observer, at most one report per
//!   [`REPORT_INTERVAL`] (the last withheld one is sent at the end).

use crate::control::{self, Improvement, StopHandle, StopReason};
use rand::SeedableRng;
use rand_pcg::Pcg64;
use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// A started run of an iterative method.
pub(crate) trait Iterative {
    /// One unit of work. `should_stop` turns true at the deadline or on a stop request; a long
    /// step may poll it and return early, keeping its best tour so far.
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool);
    /// Length of the best tour this run has found (`i64::MAX` if it overflowed).
    fn best_length(&self) -> i64;
    /// The best tour this run has found, from any node.
    fn best_order(&self) -> Vec<usize>;
    /// True when further steps cannot change anything (the run then ends at once).
    fn finished(&self) -> bool {
        false
    }
}

/// Limits and identity of a driven search.
#[derive(Clone, Debug)]
pub(crate) struct LoopPlan {
    /// Seed of every run's generator (with the run index).
    pub seed: u64,
    /// Runs at the same time.
    pub threads: usize,
    /// Independent runs; `None`: one after another until the deadline.
    pub runs: Option<usize>,
    /// Steps per run.
    pub iterations: Option<u64>,
    /// A run ends after this many steps in a row without a shorter tour.
    pub stall: Option<u64>,
    /// Stop everything once a tour this short is found.
    pub target: Option<i64>,
    /// Stop everything at this instant.
    pub deadline: Option<Instant>,
    /// Stop everything when triggered.
    pub stop: StopHandle,
}

/// What a driven search found.
#[derive(Clone, Debug)]
pub(crate) struct LoopOutcome {
    /// The best tour by (length, run index).
    pub order: Vec<usize>,
    /// Its length.
    pub length: i64,
    /// Runs started.
    pub runs: usize,
    /// Steps done over all runs.
    pub iterations: u64,
    /// Why the search ended.
    pub stop_reason: StopReason,
}

/// Minimum time between two reports to the observer, so that a long run gives a readable
/// anytime curve rather than one entry per step.
pub(crate) const REPORT_INTERVAL: Duration = Duration::from_millis(10);

/// Anytime reports, throttled to [`REPORT_INTERVAL`]; the last withheld one is sent at the end.
struct Reporter<'o> {
    began: Instant,
    observer: &'o (dyn Fn(Improvement) + Sync),
    state: Mutex<(i64, Option<Instant>, Option<Improvement>)>,
}

impl Reporter<'_> {
    fn offer(&self, length: i64, run: usize) {
        let mut s = self.state.lock().unwrap_or_else(|e| e.into_inner());
        if length >= s.0 {
            return;
        }
        s.0 = length;
        let now = Instant::now();
        let imp = Improvement {
            seconds: now.duration_since(self.began).as_secs_f64(),
            length,
            restart: run,
        };
        if s.1.is_none_or(|t| now.duration_since(t) >= REPORT_INTERVAL) {
            s.1 = Some(now);
            s.2 = None;
            (self.observer)(imp);
        } else {
            s.2 = Some(imp);
        }
    }

    fn flush(&self) {
        let mut s = self.state.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(imp) = s.2.take() {
            (self.observer)(imp);
        }
    }
}

/// Runs `start` and then steps of the runs it returns, under `plan`'s limits, and returns the
/// best tour by (length, run index). `start(r, rng, should_stop)` builds run `r` with that run's
/// generator; run 0 is always built, even when the deadline has passed, so there is always a
/// tour. `began` is the instant improvement times count from.
pub(crate) fn drive<M, S>(
    plan: &LoopPlan,
    began: Instant,
    observer: &(dyn Fn(Improvement) + Sync),
    start: S,
) -> LoopOutcome
where
    M: Iterative,
    S: Fn(usize, &mut Pcg64, &mut dyn FnMut() -> bool) -> M + Sync,
{
    let next = AtomicUsize::new(0);
    let started = AtomicUsize::new(0);
    let total = AtomicU64::new(0);
    let timed_out = AtomicBool::new(false);
    let target_hit = AtomicBool::new(false);
    let stalled = AtomicBool::new(false);
    let best: Mutex<Option<(i64, usize, Vec<usize>)>> = Mutex::new(None);
    let reporter = Reporter {
        began,
        observer,
        state: Mutex::new((i64::MAX, None, None)),
    };
    let over = || {
        if plan.stop.is_stopped() || target_hit.load(Ordering::Relaxed) {
            return true;
        }
        if plan.deadline.is_some_and(|d| Instant::now() >= d) {
            timed_out.store(true, Ordering::Relaxed);
            return true;
        }
        false
    };
    let reached = |length: i64| {
        if plan.target.is_some_and(|t| length <= t) {
            target_hit.store(true, Ordering::Relaxed);
        }
    };
    let worker = || loop {
        let r = next.fetch_add(1, Ordering::Relaxed);
        if plan.runs.is_some_and(|m| r >= m) || (r > 0 && over()) {
            break;
        }
        started.fetch_add(1, Ordering::Relaxed);
        let mut rng = Pcg64::seed_from_u64(control::mix(plan.seed, r as u64));
        let mut run = start(r, &mut rng, &mut || over());
        let mut length = run.best_length();
        reporter.offer(length, r);
        reached(length);
        let mut steps = 0u64;
        let mut since_better = 0u64;
        loop {
            if plan.iterations.is_some_and(|k| steps >= k) {
                break;
            }
            if plan.stall.is_some_and(|s| since_better >= s) {
                stalled.store(true, Ordering::Relaxed);
                break;
            }
            if run.finished() || over() {
                break;
            }
            run.step(&mut rng, &mut || over());
            steps += 1;
            let now = run.best_length();
            if now < length {
                length = now;
                since_better = 0;
                reporter.offer(length, r);
                reached(length);
            } else {
                since_better += 1;
            }
        }
        total.fetch_add(steps, Ordering::Relaxed);
        let mut guard = best.lock().unwrap_or_else(|e| e.into_inner());
        if guard
            .as_ref()
            .is_none_or(|(l, i, _)| (length, r) < (*l, *i))
        {
            *guard = Some((length, r, run.best_order()));
        }
    };
    control::on_threads(plan.threads, &worker);
    reporter.flush();
    let (length, _, order) = best
        .into_inner()
        .unwrap_or_else(|e| e.into_inner())
        .unwrap_or((0, 0, Vec::new()));
    let stop_reason = if plan.stop.is_stopped() {
        StopReason::Cancelled
    } else if target_hit.load(Ordering::Relaxed) {
        StopReason::TargetReached
    } else if timed_out.load(Ordering::Relaxed) {
        StopReason::TimeLimit
    } else if stalled.load(Ordering::Relaxed) {
        StopReason::StallLimit
    } else {
        StopReason::IterationBudget
    };
    LoopOutcome {
        order,
        length,
        runs: started.load(Ordering::Relaxed),
        iterations: total.load(Ordering::Relaxed),
        stop_reason,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::Rng;

    /// A run whose best length falls by one on each step where its generator draws an even
    /// number, down to zero: enough to check budgets, stalls, targets and determinism.
    struct Countdown {
        length: i64,
    }

    impl Iterative for Countdown {
        fn step(&mut self, rng: &mut Pcg64, _: &mut dyn FnMut() -> bool) {
            if rng.gen::<u32>() % 2 == 0 && self.length > 0 {
                self.length -= 1;
            }
        }
        fn best_length(&self) -> i64 {
            self.length
        }
        fn best_order(&self) -> Vec<usize> {
            vec![self.length as usize]
        }
    }

    fn plan(threads: usize) -> LoopPlan {
        LoopPlan {
            seed: 3,
            threads,
            runs: Some(4),
            iterations: Some(50),
            stall: None,
            target: None,
            deadline: None,
            stop: StopHandle::new(),
        }
    }

    fn run(plan: &LoopPlan) -> LoopOutcome {
        drive(plan, Instant::now(), &|_| {}, |r, _, _| Countdown {
            length: 100 + r as i64,
        })
    }

    #[test]
    fn budgets_and_the_best_run_do_not_depend_on_threads() {
        let a = run(&plan(1));
        let b = run(&plan(3));
        assert_eq!(a.stop_reason, StopReason::IterationBudget);
        assert_eq!(
            (a.length, a.order.clone(), a.runs),
            (b.length, b.order, b.runs)
        );
        assert_eq!(a.iterations, 4 * 50);
        // Fifty fair coin flips take at least one off and never more than fifty.
        assert!(a.length < 100 && a.length >= 50);
    }

    #[test]
    fn stall_target_stop_and_deadline_end_the_search() {
        let mut p = plan(2);
        p.iterations = None;
        p.stall = Some(3);
        let s = run(&p);
        assert_eq!(s.stop_reason, StopReason::StallLimit);

        let mut p = plan(1);
        p.iterations = None;
        p.runs = None;
        p.target = Some(90);
        let s = run(&p);
        assert_eq!(s.stop_reason, StopReason::TargetReached);
        assert!(s.length <= 90);

        let mut p = plan(1);
        p.iterations = None;
        p.stop.stop();
        let s = run(&p);
        assert_eq!(s.stop_reason, StopReason::Cancelled);
        assert_eq!(s.runs, 1, "run 0 is always built");

        let mut p = plan(2);
        p.iterations = None;
        p.runs = None;
        p.deadline = Some(Instant::now() + Duration::from_millis(30));
        let s = run(&p);
        assert_eq!(s.stop_reason, StopReason::TimeLimit);
    }

    #[test]
    fn improvements_are_reported_in_falling_order() {
        let seen = Mutex::new(Vec::new());
        let p = plan(2);
        let s = drive(
            &p,
            Instant::now(),
            &|imp| seen.lock().unwrap().push(imp.length),
            |r, _, _| Countdown {
                length: 100 + r as i64,
            },
        );
        let seen = seen.into_inner().unwrap();
        assert!(seen.windows(2).all(|w| w[1] < w[0]));
        assert_eq!(seen.last(), Some(&s.length));
    }
}
