//! Progress on stderr for runs longer than a second: a bar on a terminal, a line a second
//! otherwise. The solver reports new best tours; a ticker thread redraws.

use indicatif::{ProgressBar, ProgressStyle};
use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, AtomicI64, Ordering};
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

/// Best length so far; `i64::MIN` until the first tour.
#[derive(Clone)]
struct Shared {
    best: Arc<AtomicI64>,
    done: Arc<AtomicBool>,
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
    let best = || match s.best.load(Ordering::Relaxed) {
        i64::MIN => "-".to_string(),
        b => b.to_string(),
    };
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
            bar.set_message(best());
            bar.tick();
            std::thread::sleep(Duration::from_millis(100));
        }
        bar.finish_and_clear();
    } else {
        loop {
            eprintln!("[{:>6.1} s] best {}", began.elapsed().as_secs_f64(), best());
            if !wait(Duration::from_secs(1)) {
                return;
            }
        }
    }
}
