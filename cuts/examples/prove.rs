//! Branch and cut on a TSPLIB file, from a short Lin–Kernighan-style search's tour.
//!
//! ```sh
//! cargo run --release -p wend-cuts --example prove -- instances/kroA100.tsp [SECONDS [STRONG]]
//! ```

use std::time::Duration;
use wend::{Method, Solver, StopHandle};
use wend_cuts::{branch_and_cut, BranchCutOptions};

fn main() {
    let mut args = std::env::args().skip(1);
    let Some(path) = args.next() else {
        eprintln!("usage: prove FILE.tsp [SECONDS [STRONG]]");
        std::process::exit(2);
    };
    let seconds: f64 = args.next().and_then(|s| s.parse().ok()).unwrap_or(60.0);
    let defaults = BranchCutOptions::default();
    // Candidates of strong branching (0: the edge nearest 1/2).
    let strong: usize = args
        .next()
        .and_then(|s| s.parse().ok())
        .unwrap_or(defaults.strong_candidates);
    let inst = match wend_tsplib::read_instance(std::path::Path::new(&path)) {
        Ok(i) => i,
        Err(e) => {
            eprintln!("{e}");
            std::process::exit(2);
        }
    };
    let n = inst.dimension;
    let first = Solver::new(inst.cost())
        .method(Method::Lk)
        .time_limit(Duration::from_secs_f64((0.05 * seconds).clamp(0.5, 10.0)))
        .seed(1)
        .threads(1)
        .solve()
        .expect("a first tour");
    let opts = BranchCutOptions {
        time_limit: Some(Duration::from_secs_f64(seconds)),
        strong_candidates: strong,
        ..defaults
    };
    let r = branch_and_cut(
        inst.cost(),
        first.tour.order(),
        &opts,
        &StopHandle::new(),
        |_| {},
    );
    match r {
        Ok(r) => println!(
            "{} n={n} first={} best={} bound={} proven={} root={:.2} nodes={} cuts={} fixed_out={} seconds={:.2}",
            inst.name,
            first.length,
            r.length,
            r.lower_bound,
            r.proven_optimal,
            r.root_bound,
            r.nodes,
            r.cuts_added,
            r.edges_fixed_out,
            r.seconds + first.seconds
        ),
        Err(e) => {
            eprintln!("{}: {e}", inst.name);
            std::process::exit(1);
        }
    }
}
