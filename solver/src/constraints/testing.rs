//! Random instances shared by the tests of the constraint layer.

use super::{Constraints, Objective, Precedence, Route, Window};
use rand::Rng;
use rand_pcg::Pcg64;

/// A random instance of `n` stops: costs, windows (some too tight to meet), service,
/// optional stops, precedence and fixed edges.
pub(crate) fn random_instance(rng: &mut Pcg64, n: usize) -> (Vec<Vec<i64>>, Constraints) {
    let symmetric = rng.gen_bool(0.5);
    let draws: Vec<i64> = (0..n * n).map(|_| rng.gen_range(0..=20)).collect();
    let rows: Vec<Vec<i64>> = (0..n)
        .map(|i| {
            (0..n)
                .map(|j| match (i == j, symmetric) {
                    (true, _) => 0,
                    (false, true) => draws[i.min(j) * n + i.max(j)],
                    (false, false) => draws[i * n + j],
                })
                .collect()
        })
        .collect();
    let mut c = Constraints::new(n);
    c.depot = rng.gen_range(0..n);
    c.start_time = rng.gen_range(0..=10);
    c.route = if rng.gen_bool(0.5) {
        Route::Closed
    } else {
        Route::Path
    };
    c.objective = if rng.gen_bool(0.5) {
        Objective::Travel
    } else {
        Objective::Completion
    };
    for s in 0..n {
        let kind = rng.gen_range(0..20);
        if kind >= 8 {
            let earliest = rng.gen_range(0..=100);
            let latest = earliest + rng.gen_range(0..=50);
            c.windows[s].push(Window { earliest, latest });
            if kind >= 17 {
                let earliest = latest + rng.gen_range(1..=30);
                let latest = earliest + rng.gen_range(0..=30);
                c.windows[s].push(Window { earliest, latest });
            }
        }
        c.service[s] = rng.gen_range(0..=4);
        if s != c.depot && rng.gen_bool(0.3) {
            c.penalty[s] = Some(rng.gen_range(0..=60));
        }
    }
    let others: Vec<usize> = (0..n).filter(|&s| s != c.depot).collect();
    if others.len() >= 2 {
        for _ in 0..rng.gen_range(0..=2) {
            let before = others[rng.gen_range(0..others.len())];
            let after = others[rng.gen_range(0..others.len())];
            if before != after {
                c.precedence.push(Precedence {
                    before,
                    after,
                    min_lag: None,
                    max_lag: None,
                });
            }
        }
    }
    for _ in 0..rng.gen_range(0..=2) {
        let a = rng.gen_range(0..n);
        let b = rng.gen_range(0..n);
        if a != b {
            c.fixed_edges.push((a, b));
        }
    }
    (rows, c)
}
