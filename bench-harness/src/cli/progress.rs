//! Progress on stderr for runs longer than a second: a bar on a terminal, a line a second
//! otherwise. The solver reports new best tours, branch and cut its tree (bound, best tour,
//! nodes settled and open); a ticker thread redraws.

use indicatif::{ProgressBar, ProgressStyle};
use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, AtomicI64, AtomicU64, Ordering};
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

/// Best length so far; `i64::MIN` until the first tour. The tree's bound, nodes settled and
/// open; bound `i64::MIN` until branch and cut reports.
#[derive(Clone)]
struct Shared {
    best: Arc<AtomicI64>,
    bound: Arc<AtomicI64>,
    nodes: Arc<AtomicU64>,
    open: Arc<AtomicU64>,
    done: Arc<AtomicBool>,
}

impl Shared {
    /// The message after the bar.
    fn message(&self) -> String {
        let best = match self.best.load(Ordering::Relaxed) {
            i64::MIN => "-".to_string(),
            b => b.to_string(),
        };
        match self.bound.load(Ordering::Relaxed) {
            i64::MIN => best,
            bound => format!(
                "{best}, bound {bound}, {} node(s) settled, {} open",
                self.nodes.load(Ordering::Relaxed),
                self.open.load(Ordering::Relaxed)
            ),
        }
    }
}

pub struct Progress {
    shared: Shared,
    ticker: Option<JoinHandle<()>>,
}

impl Progress {
    /// Starts the ticker (it shows nothing during the first second). `enabled` false: silent.
    pub fn start(limit: Option<Duration>, enabled: bool) -> Progress {
        let shared = Shared {
            best: Arc::new(AtomicI64::new(i64::MIN)),
            bound: Arc::new(AtomicI64::new(i64::MIN)),
            nodes: Arc::new(AtomicU64::new(0)),
            open: Arc::new(AtomicU64::new(0)),
            done: Arc::new(AtomicBool::new(false)),
        };
        let ticker = enabled.then(|| {
            let s = shared.clone();
            std::thread::spawn(move || tick(s, limit))
        });
        Progress { shared, ticker }
    }

    /// A callback for the solver's improvements.
    pub fn observer(&self) -> impl Fn(wend::Improvement) + Send + Sync + 'static {
        let best = self.shared.best.clone();
        move |imp| best.store(imp.length, Ordering::Relaxed)
    }

    /// A callback for branch and cut's tree.
    pub fn tree_observer(&self) -> impl Fn(&wend_cuts::TreeProgress) + Send + Sync + 'static {
        let s = self.shared.clone();
        move |t| {
            s.best.store(t.best, Ordering::Relaxed);
            s.bound.store(t.lower_bound, Ordering::Relaxed);
            s.nodes.store(t.nodes, Ordering::Relaxed);
            s.open.store(t.open as u64, Ordering::Relaxed);
        }
    }

    /// Stops the ticker and clears the bar.
    pub fn finish(self) {
        self.shared.done.store(true, Ordering::Relaxed);
        if let Some(t) = self.ticker {
            let _ = t.join();
        }
    }
}

fn tick(s: Shared, limit: Option<Duration>) {
    let began = Instant::now();
    let wait = |d: Duration| {
        let end = Instant::now() + d;
        while Instant::now() < end {
            if s.done.load(Ordering::Relaxed) {
                return false;
            }
            std::thread::sleep(Duration::from_millis(20));
        }
        true
    };
    if !wait(Duration::from_secs(1)) {
        return;
    }
    if std::io::stderr().is_terminal() {
        let bar = match limit {
            Some(l) => {
                let b = ProgressBar::new(l.as_millis().max(1) as u64);
                b.set_style(
                    ProgressStyle::with_template("{elapsed:>4} [{bar:30}] best {msg}")
                        .unwrap_or_else(|_| ProgressStyle::default_bar())
                        .progress_chars("=> "),
                );
                b
            }
            None => {
                let b = ProgressBar::new_spinner();
                b.set_style(
                    ProgressStyle::with_template("{elapsed:>4} {spinner} best {msg}")
                        .unwrap_or_else(|_| ProgressStyle::default_spinner()),
                );
                b
            }
        };
        while !s.done.load(Ordering::Relaxed) {
            bar.set_position(began.elapsed().as_millis() as u64);
            bar.set_message(s.message());
            bar.tick();
            std::thread::sleep(Duration::from_millis(100));
        }
        bar.finish_and_clear();
    } else {
        loop {
            eprintln!(
                "[{:>6.1} s] best {}",
                began.elapsed().as_secs_f64(),
                s.message()
            );
            if !wait(Duration::from_secs(1)) {
                return;
            }
        }
    }
}
