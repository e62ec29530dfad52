//! The loop owner of everything iterative: time limit, stop requests, step budget, seeded
//! random numbers, throttled progress reports and the stop reason, written once.
//!
//! The loop itself is [`run_steps`]'s, public for any search over any state (a Pareto front,
//! say): a state supplies one unit of work ([`Step::step`]) and says when it has nothing left
//! to do ([`Step::finished`]); the loop owner does the rest.
//!
//! [`drive`] runs the crate's tour methods on the same loop. A method supplies how a run starts
//! (`start`, which builds its first tour and may already improve it) and one unit of work on a
//! started run ([`Iterative::step`]: one kick and its repair, one generation of ants, one batch
//! of annealing moves); on top of the loop, [`drive`] adds:
//!
//! - runs are independent; run `r` draws from its own generator, seeded from (seed, r) alone,
//!   and the answer is the best by (length, run index), so with an iteration budget the answer
//!   does not depend on thread timing or on the number of threads;
//! - `threads` runs go at once, or, for a method whose steps are parallel inside
//!   ([`Iterative::PARALLEL_STEPS`]), one run at a time whose steps use the `threads` threads;
//!   without a run count, runs follow one another until the deadline (a run ends at its
//!   iteration budget or after `stall` iterations in a row without a shorter tour);
//! - the deadline, the [`StopHandle`] and the target length are checked between steps, and a
//!   step may poll the `should_stop` callback it is given to end early;
//! - every new best tour over all runs goes to the observer, at most one report per
//!   [`REPORT_INTERVAL`] (the last withheld one is sent at the end).

use crate::control::{self, Improvement, StopHandle, StopReason};
use rand::SeedableRng;
use rand_pcg::Pcg64;
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// One unit of work on a search state, as run by [`run_steps`].
pub trait Step {
    /// One unit of work. `should_stop` turns true at the deadline or on a stop request; a long
    /// step may poll it and return early, leaving the state usable.
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool);
    /// True when further steps cannot change anything (the loop then ends at once).
    fn finished(&self) -> bool {
        false
    }
}

/// Limits and identity of a loop run by [`run_steps`].
#[derive(Clone, Debug)]
pub struct StepLimits {
    /// Seed of the loop's generator (with [`StepLimits::run`]).
    pub seed: u64,
    /// Index of this loop among the searches of one seed: the generator is seeded from
    /// (seed, run) alone, as run `run` of the crate's own methods is.
    pub run: u64,
    /// Most steps; `None`: no step budget.
    pub steps: Option<u64>,
    /// Stop at this instant (a step in progress is asked to stop through `should_stop`).
    pub deadline: Option<Instant>,
    /// Stop when triggered.
    pub stop: StopHandle,
    /// Least time between two progress reports (and from the start to the first).
    pub report_every: Duration,
}

impl StepLimits {
    /// Run 0 of `seed`, no step budget, no deadline, a fresh stop handle, a progress report at
    /// most once a second.
    pub fn new(seed: u64) -> StepLimits {
        StepLimits {
            seed,
            run: 0,
            steps: None,
            deadline: None,
            stop: StopHandle::new(),
            report_every: Duration::from_secs(1),
        }
    }
}

/// How a loop run by [`run_steps`] ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Stepped {
    /// Steps done.
    pub steps: u64,
    /// Why the loop ended: [`StopReason::Cancelled`], [`StopReason::TimeLimit`] or
    /// [`StopReason::IterationBudget`] (the step budget); `None` when the state was
    /// [`Step::finished`].
    pub stop_reason: Option<StopReason>,
}

/// Steps `state` until its step budget, the deadline or a stop request, or until it is
/// [`Step::finished`], with a generator seeded from (`limits.seed`, `limits.run`); `progress`
/// sees the state after a step at most once per `limits.report_every`. The steps run on the
/// calling thread. With a step budget and no deadline, the same limits give the same steps.
///
/// See the crate documentation for an example.
pub fn run_steps<S: Step + ?Sized>(
    limits: &StepLimits,
    state: &mut S,
    progress: &mut dyn FnMut(&S),
) -> Stepped {
    let began = Instant::now();
    let clock = Clock::new(&limits.stop, limits.deadline);
    let mut rng = Pcg64::seed_from_u64(control::mix(limits.seed, limits.run));
    let mut last_report = began;
    let (steps, ended) = step_loop(state, &mut rng, limits.steps, &|| clock.over(), |s, k| {
        let now = Instant::now();
        if k > 0 && now.duration_since(last_report) >= limits.report_every {
            last_report = now;
            progress(s);
        }
        true
    });
    let stop_reason = clock.reason().or(match ended {
        Ended::Budget => Some(StopReason::IterationBudget),
        Ended::Watch | Ended::Finished | Ended::Over => None,
    });
    Stepped { steps, stop_reason }
}

/// The stop handle and the deadline, checked between steps and by `should_stop`.
struct Clock<'a> {
    stop: &'a StopHandle,
    deadline: Option<Instant>,
    timed_out: AtomicBool,
}

impl<'a> Clock<'a> {
    fn new(stop: &'a StopHandle, deadline: Option<Instant>) -> Self {
        Clock {
            stop,
            deadline,
            timed_out: AtomicBool::new(false),
        }
    }

    /// True on a stop request or at the deadline (then remembered).
    fn over(&self) -> bool {
        if self.stop.is_stopped() {
            return true;
        }
        if self.deadline.is_some_and(|d| Instant::now() >= d) {
            self.timed_out.store(true, Ordering::Relaxed);
            return true;
        }
        false
    }

    /// [`StopReason::Cancelled`] after a stop request, else [`StopReason::TimeLimit`] once the
    /// deadline was seen.
    fn reason(&self) -> Option<StopReason> {
        if self.stop.is_stopped() {
            Some(StopReason::Cancelled)
        } else if self.timed_out.load(Ordering::Relaxed) {
            Some(StopReason::TimeLimit)
        } else {
            None
        }
    }
}

/// What ended a [`step_loop`].
enum Ended {
    /// The step budget.
    Budget,
    /// The watch said so.
    Watch,
    /// The state was finished.
    Finished,
    /// `over` said so.
    Over,
}

/// The loop of every iterative search. `watch` sees the state before the first step (with 0)
/// and after every step (with the steps done so far) and ends the loop by returning false;
/// before each step the budget, the watch's answer, [`Step::finished`] and `over` are checked,
/// in that order. Returns the steps done and what ended the loop.
fn step_loop<S, O, W>(
    state: &mut S,
    rng: &mut Pcg64,
    budget: Option<u64>,
    over: &O,
    mut watch: W,
) -> (u64, Ended)
where
    S: Step + ?Sized,
    O: Fn() -> bool,
    W: FnMut(&S, u64) -> bool,
{
    let mut steps = 0u64;
    let mut go_on = watch(state, 0);
    loop {
        if budget.is_some_and(|k| steps >= k) {
            return (steps, Ended::Budget);
        }
        if !go_on {
            return (steps, Ended::Watch);
        }
        if state.finished() {
            return (steps, Ended::Finished);
        }
        if over() {
            return (steps, Ended::Over);
        }
        state.step(rng, &mut || over());
        steps += 1;
        go_on = watch(state, steps);
    }
}

/// A started run of an iterative tour method: a [`Step`] with a best tour.
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
    /// True when one step spreads its own work over the threads it runs on (rayon's parallel
    /// iterators): [`drive`] then runs one run at a time on its threads rather than runs side
    /// by side.
    const PARALLEL_STEPS: bool = false;
}

/// A run of a tour method seen as a [`Step`], for the loop.
struct AsStep<M>(M);

impl<M: Iterative> Step for AsStep<M> {
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        self.0.step(rng, should_stop);
    }
    fn finished(&self) -> bool {
        self.0.finished()
    }
}

/// Limits and identity of a driven search.
#[derive(Clone, Debug)]
pub(crate) struct LoopPlan {
    /// Seed of every run's generator (with the run index).
    pub seed: u64,
    /// Threads: runs at the same time, or the threads of one run's parallel steps.
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
    let clock = Clock::new(&plan.stop, plan.deadline);
    let target_hit = AtomicBool::new(false);
    let stalled = AtomicBool::new(false);
    let best: Mutex<Option<(i64, usize, Vec<usize>)>> = Mutex::new(None);
    let reporter = Reporter {
        began,
        observer,
        state: Mutex::new((i64::MAX, None, None)),
    };
    let over = || target_hit.load(Ordering::Relaxed) || clock.over();
    let worker = || loop {
        let r = next.fetch_add(1, Ordering::Relaxed);
        if plan.runs.is_some_and(|m| r >= m) || (r > 0 && over()) {
            break;
        }
        started.fetch_add(1, Ordering::Relaxed);
        let mut rng = Pcg64::seed_from_u64(control::mix(plan.seed, r as u64));
        let mut run = AsStep(start(r, &mut rng, &mut || over()));
        let mut length = i64::MAX;
        let mut since_better = 0u64;
        let (steps, ended) = step_loop(&mut run, &mut rng, plan.iterations, &over, |run, steps| {
            let now = run.0.best_length();
            if steps == 0 || now < length {
                length = now;
                since_better = 0;
                reporter.offer(length, r);
                if plan.target.is_some_and(|t| length <= t) {
                    target_hit.store(true, Ordering::Relaxed);
                }
            } else {
                since_better += 1;
            }
            plan.stall.is_none_or(|s| since_better < s)
        });
        if matches!(ended, Ended::Watch) {
            stalled.store(true, Ordering::Relaxed);
        }
        total.fetch_add(steps, Ordering::Relaxed);
        let mut guard = best.lock().unwrap_or_else(|e| e.into_inner());
        if guard
            .as_ref()
            .is_none_or(|(l, i, _)| (length, r) < (*l, *i))
        {
            *guard = Some((length, r, run.0.best_order()));
        }
    };
    if M::PARALLEL_STEPS {
        control::within_threads(plan.threads, worker);
    } else {
        control::on_threads(plan.threads, &worker);
    }
    reporter.flush();
    let (length, _, order) = best
        .into_inner()
        .unwrap_or_else(|e| e.into_inner())
        .unwrap_or((0, 0, Vec::new()));
    let stop_reason = if plan.stop.is_stopped() {
        StopReason::Cancelled
    } else if target_hit.load(Ordering::Relaxed) {
        StopReason::TargetReached
    } else if let Some(reason) = clock.reason() {
        reason
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
            if rng.r#gen::<u32>() % 2 == 0 && self.length > 0 {
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

    /// A state that records its generator's draws; it stops `stop` at step `stop_at`, and is
    /// finished after `finish_at` steps.
    struct Walk {
        draws: Vec<u32>,
        stop: StopHandle,
        stop_at: Option<usize>,
        finish_at: Option<usize>,
        pause: Duration,
    }

    impl Walk {
        fn new() -> Walk {
            Walk {
                draws: Vec::new(),
                stop: StopHandle::new(),
                stop_at: None,
                finish_at: None,
                pause: Duration::ZERO,
            }
        }
    }

    impl Step for Walk {
        fn step(&mut self, rng: &mut Pcg64, _: &mut dyn FnMut() -> bool) {
            self.draws.push(rng.r#gen());
            if self.stop_at == Some(self.draws.len()) {
                self.stop.stop();
            }
            std::thread::sleep(self.pause);
        }
        fn finished(&self) -> bool {
            self.finish_at.is_some_and(|k| self.draws.len() >= k)
        }
    }

    #[test]
    fn the_step_loop_ends_at_its_budget_a_stop_request_the_deadline_or_when_finished() {
        let limits = StepLimits {
            steps: Some(25),
            ..StepLimits::new(5)
        };
        let mut w = Walk::new();
        let out = run_steps(&limits, &mut w, &mut |_| {});
        assert_eq!(out.steps, 25);
        assert_eq!(out.stop_reason, Some(StopReason::IterationBudget));
        assert_eq!(w.draws.len(), 25);

        let mut w = Walk::new();
        w.stop_at = Some(7);
        let limits = StepLimits {
            stop: w.stop.clone(),
            ..StepLimits::new(5)
        };
        let out = run_steps(&limits, &mut w, &mut |_| {});
        assert_eq!(
            (out.steps, out.stop_reason),
            (7, Some(StopReason::Cancelled))
        );

        let mut w = Walk::new();
        w.finish_at = Some(4);
        let out = run_steps(&StepLimits::new(5), &mut w, &mut |_| {});
        assert_eq!((out.steps, out.stop_reason), (4, None));

        let mut w = Walk::new();
        w.pause = Duration::from_millis(2);
        let began = Instant::now();
        let limits = StepLimits {
            deadline: Some(began + Duration::from_millis(40)),
            steps: Some(1_000_000),
            ..StepLimits::new(5)
        };
        let out = run_steps(&limits, &mut w, &mut |_| {});
        assert_eq!(out.stop_reason, Some(StopReason::TimeLimit));
        assert!(began.elapsed() >= Duration::from_millis(40));
        assert!(out.steps >= 1 && out.steps <= 20, "{} steps", out.steps);

        // A passed deadline: no step at all.
        let limits = StepLimits {
            deadline: Some(Instant::now()),
            ..StepLimits::new(5)
        };
        let out = run_steps(&limits, &mut Walk::new(), &mut |_| {});
        assert_eq!(
            (out.steps, out.stop_reason),
            (0, Some(StopReason::TimeLimit))
        );
    }

    /// A step that runs until `should_stop` says so.
    struct Spin;

    impl Step for Spin {
        fn step(&mut self, _: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
            while !should_stop() {
                std::hint::spin_loop();
            }
        }
    }

    #[test]
    fn a_long_step_hears_the_deadline_and_the_stop_request() {
        let began = Instant::now();
        let limits = StepLimits {
            deadline: Some(began + Duration::from_millis(20)),
            ..StepLimits::new(1)
        };
        let out = run_steps(&limits, &mut Spin, &mut |_| {});
        assert_eq!(
            (out.steps, out.stop_reason),
            (1, Some(StopReason::TimeLimit))
        );
        assert!(began.elapsed() >= Duration::from_millis(20));

        let limits = StepLimits::new(1);
        let stop = limits.stop.clone();
        let out = std::thread::scope(|s| {
            s.spawn(|| {
                std::thread::sleep(Duration::from_millis(20));
                stop.stop();
            });
            run_steps(&limits, &mut Spin, &mut |_| {})
        });
        assert_eq!(
            (out.steps, out.stop_reason),
            (1, Some(StopReason::Cancelled))
        );
    }

    #[test]
    fn progress_comes_no_more_often_than_the_interval() {
        let every = Duration::from_millis(15);
        let mut w = Walk::new();
        w.pause = Duration::from_millis(1);
        let limits = StepLimits {
            steps: Some(120),
            report_every: every,
            ..StepLimits::new(2)
        };
        let began = Instant::now();
        let mut seen: Vec<(Instant, usize)> = Vec::new();
        let out = run_steps(&limits, &mut w, &mut |w| {
            seen.push((Instant::now(), w.draws.len()))
        });
        let took = began.elapsed();
        assert_eq!(out.steps, 120);
        // At least 120 ms of steps: reports came, each after a step, at least `every` apart
        // and from the start.
        assert!(!seen.is_empty());
        assert!(seen.len() as u128 <= took.as_millis() / every.as_millis());
        assert!(seen[0].0.duration_since(began) >= every);
        assert!(
            seen.windows(2)
                .all(|p| p[1].0.duration_since(p[0].0) >= every)
        );
        assert!(seen.windows(2).all(|p| p[1].1 > p[0].1) && seen[0].1 >= 1);
    }

    #[test]
    fn the_same_seed_and_run_give_the_same_steps() {
        let go = |seed, run| {
            let limits = StepLimits {
                run,
                steps: Some(30),
                ..StepLimits::new(seed)
            };
            let mut w = Walk::new();
            run_steps(&limits, &mut w, &mut |_| {});
            w.draws
        };
        assert_eq!(go(9, 0), go(9, 0));
        assert_eq!(go(9, 4), go(9, 4));
        assert_ne!(go(9, 0), go(9, 4));
        assert_ne!(go(9, 0), go(10, 0));
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
