//! Embedding the solver: costs from a closure, a matrix and coordinates.
//!
//! Run with `cargo run --release -p wend --example embed`.

use std::time::Duration;
use wend::{CoordCost, Metric, Solver};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    // 1. Costs from a closure: a drill head that moves along a rail, where going right is cheap
    //    and going left is slow (asymmetric), over 12 stations at positions 0, 5, 10, ...
    let pos: Vec<i64> = (0..12).map(|i| (i * 37 % 12) * 5).collect();
    let rail = Solver::from_fn(pos.len(), false, |i, j| {
        let d = pos[j] - pos[i];
        if d >= 0 { d } else { -3 * d }
    })
    .time_limit(Duration::from_millis(300))
    .seed(1)
    .solve()?;
    println!(
        "rail:   length {:>6}  order {:?}",
        rail.length,
        rail.tour.order()
    );

    // 2. A matrix of travel times between four depots.
    let rows = vec![
        vec![0, 12, 10, 19],
        vec![12, 0, 3, 7],
        vec![10, 3, 0, 2],
        vec![19, 7, 2, 0],
    ];
    let depots = Solver::from_matrix(&rows)?.solve()?;
    println!(
        "depots: length {:>6}  order {:?}",
        depots.length,
        depots.tour.order()
    );

    // 3. Coordinates: 2,000 pick locations in a warehouse, Euclidean distances rounded as TSPLIB
    //    does, solved for one second on all cores.
    let mut state = 12345u64;
    let mut rnd = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 33) as f64 / (1u64 << 31) as f64 * 10_000.0
    };
    let picks: Vec<[f64; 2]> = (0..2000).map(|_| [rnd(), rnd()]).collect();
    let costs = CoordCost::plane(Metric::Euc2d, &picks)?;
    let warehouse = Solver::new(costs)
        .time_limit(Duration::from_secs(1))
        .seed(7)
        .on_improvement(|imp| eprintln!("  {:>6.3} s  {}", imp.seconds, imp.length))
        .solve()?;
    println!(
        "picks:  length {:>6}  {} runs in {:.2} s, stopped by {:?}",
        warehouse.length, warehouse.runs, warehouse.seconds, warehouse.stop_reason
    );
    Ok(())
}
