//! `wend bound`.

use super::{load, CliError};
use clap::Args;
use serde_json::json;
use std::path::PathBuf;
use std::time::Duration;
use wend::assignment_bound;
use wend::{held_karp_bound, AscentOptions};

#[derive(Args, Debug)]
pub struct BoundArgs {
    /// TSPLIB instance file. Symmetric costs get the Held–Karp bound, asymmetric ones the
    /// assignment bound (the cheapest cover of the nodes by cycles).
    path: PathBuf,
    /// Stop the ascent after this many seconds and report the best bound so far (the
    /// assignment bound of asymmetric costs is computed in one go).
    #[arg(long, short = 't', value_name = "SECONDS", default_value_t = 10.0)]
    time_limit: f64,
    /// Length of a known tour: sets the ascent's step size and ends it once reached.
    #[arg(long, value_name = "LENGTH")]
    upper_bound: Option<i64>,
    /// Print exactly one JSON object on stdout instead of a summary.
    #[arg(long)]
    json: bool,
}

pub fn run(a: BoundArgs) -> Result<(), CliError> {
    if !(a.time_limit.is_finite() && a.time_limit >= 0.0) {
        return Err(CliError::Input(format!(
            "--time-limit must be a non-negative number of seconds, got {}",
            a.time_limit
        )));
    }
    let inst = load(&a.path)?;
    if !inst.cost().is_symmetric() {
        return assignment(&a, &inst);
    }
    let opts = AscentOptions {
        time_limit: Some(Duration::from_secs_f64(a.time_limit.min(1.0e9))),
        max_iterations: None,
        upper_bound: a.upper_bound,
    };
    let asc = held_karp_bound(inst.cost(), &opts, &super::interrupt::handle())
        .map_err(|e| CliError::Input(format!("{}: {e}", a.path.display())))?;
    if a.json {
        println!(
            "{}",
            json!({
                "instance": inst.name,
                "file": a.path.display().to_string(),
                "nodes": inst.dimension,
                "bound_method": "held-karp",
                "lower_bound": asc.lower_bound,
                "optimal_tour_found": asc.tree_is_tour,
                "iterations": asc.iterations,
                "seconds": asc.seconds,
            })
        );
    } else {
        println!("instance     {} ({} nodes)", inst.name, inst.dimension);
        println!("lower bound  {}", asc.lower_bound);
        println!(
            "ascent       {} one-trees in {:.3} s{}",
            asc.iterations,
            asc.seconds,
            if asc.tree_is_tour {
                "; the cheapest one-tree is a tour, so the bound is the optimum"
            } else {
                ""
            }
        );
    }
    Ok(())
}

/// The assignment bound of asymmetric costs.
fn assignment(a: &BoundArgs, inst: &wend_tsplib::Instance) -> Result<(), CliError> {
    let began = std::time::Instant::now();
    let b = assignment_bound(inst.cost())
        .map_err(|e| CliError::Input(format!("{}: {e}", a.path.display())))?;
    let seconds = began.elapsed().as_secs_f64();
    if a.json {
        println!(
            "{}",
            json!({
                "instance": inst.name,
                "file": a.path.display().to_string(),
                "nodes": inst.dimension,
                "bound_method": "assignment",
                "lower_bound": b.lower_bound,
                "optimal_tour_found": b.cycles == 1,
                "cycles": b.cycles,
                "seconds": seconds,
            })
        );
    } else {
        println!(
            "instance     {} ({} nodes, asymmetric)",
            inst.name, inst.dimension
        );
        println!("lower bound  {} (assignment bound)", b.lower_bound);
        println!(
            "cover        {} cycle(s) in {:.3} s{}",
            b.cycles,
            seconds,
            if b.cycles == 1 {
                "; the cheapest cover is a tour, so the bound is the optimum"
            } else {
                ""
            }
        );
    }
    Ok(())
}
