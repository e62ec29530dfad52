//! `wend bound`.

use super::{load, CliError};
use clap::Args;
use serde_json::json;
use std::path::PathBuf;
use std::time::Duration;
use wend::assignment_bound;
use wend::{held_karp_bound, AscentOptions};
use wend_cuts::{subtour_bound, SubtourOptions};

#[derive(Args, Debug)]
pub struct BoundArgs {
    /// TSPLIB instance file. Symmetric costs get the Held–Karp bound, asymmetric ones the
    /// assignment bound (the cheapest cover of the nodes by cycles).
    path: PathBuf,
    /// Stop the ascent (or the cutting-plane loop with --lp) after this many seconds and
    /// report the best bound so far (the assignment bound of asymmetric costs is computed in
    /// one go).
    #[arg(long, short = 't', value_name = "SECONDS", default_value_t = 10.0)]
    time_limit: f64,
    /// Length of a known tour: sets the ascent's step size and ends it once reached.
    #[arg(long, value_name = "LENGTH")]
    upper_bound: Option<i64>,
    /// The bound of the linear programme with cutting planes instead of the 1-tree ascent (or
    /// the assignment bound): degree equations over a sparse edge set (assignment rows over
    /// arcs for asymmetric costs), subtour cuts found exactly by minimum cuts, then blossoms
    /// and combs, edges priced in from the complete graph.
    #[arg(long)]
    lp: bool,
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
    if a.lp {
        return lp(&a, &inst);
    }
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

/// The LP bound with cutting planes.
fn lp(a: &BoundArgs, inst: &wend_tsplib::Instance) -> Result<(), CliError> {
    let opts = SubtourOptions {
        time_limit: Some(Duration::from_secs_f64(a.time_limit.min(1.0e9))),
        fixed_edges: inst.fixed_edges.clone(),
        ..SubtourOptions::default()
    };
    let b = subtour_bound(inst.cost(), &opts, &super::interrupt::handle())
        .map_err(|e| CliError::Input(format!("{}: {e}", a.path.display())))?;
    let gap = a
        .upper_bound
        .filter(|&u| b.lower_bound > 0 && u >= b.lower_bound)
        .map(|u| 100.0 * (u - b.lower_bound) as f64 / b.lower_bound as f64);
    if a.json {
        println!(
            "{}",
            json!({
                "instance": inst.name,
                "file": a.path.display().to_string(),
                "nodes": inst.dimension,
                "bound_method": "lp",
                "lower_bound": b.lower_bound,
                "lp_value": b.lp_value,
                "lagrangian_value": b.lagrangian,
                "complete": b.complete,
                "stop_reason": b.stopped,
                "families": [
                    {"family": "subtour",
                     "cuts_added": b.cuts_added - b.blossoms_added - b.combs_added,
                     "bound_after": b.subtour_only},
                    {"family": "blossom", "cuts_added": b.blossoms_added,
                     "bound_after": b.with_blossoms},
                    {"family": "comb", "cuts_added": b.combs_added,
                     "bound_after": b.complete.then_some(b.lagrangian)}
                ],
                "over": if inst.cost().is_symmetric() { "edges" } else { "arcs" },
                "fixed_edges": inst.fixed_edges.len(),
                "lp_solves": b.solves,
                "cuts_in_lp": b.cuts_in_lp,
                "edges_in_lp": b.edges_in_lp,
                "edges_priced_in": b.edges_priced_in,
                "gap_percent": gap,
                "seconds": b.seconds,
            })
        );
    } else {
        println!("instance     {} ({} nodes)", inst.name, inst.dimension);
        if !inst.fixed_edges.is_empty() {
            println!(
                "fixed        {} edge(s) held at 1: the bound is over the tours that use them",
                inst.fixed_edges.len()
            );
        }
        println!("lower bound  {}", b.lower_bound);
        if let Some(st) = b.subtour_only {
            println!("subtour      {st:.3} (subtour cuts alone)");
        }
        if let Some(bl) = b.with_blossoms {
            println!("blossoms     {bl:.3} (subtour cuts and blossoms)");
        }
        let columns = if inst.cost().is_symmetric() {
            "edges"
        } else {
            "arcs"
        };
        println!(
            "LP           {:.3} after {} solve(s): {} cut(s) added ({} blossoms, {} combs), {} \
             in the last LP, {} {columns} ({} priced in)",
            b.lagrangian,
            b.solves,
            b.cuts_added,
            b.blossoms_added,
            b.combs_added,
            b.cuts_in_lp,
            b.edges_in_lp,
            b.edges_priced_in
        );
        match b.stopped {
            None => println!(
                "status       no cut found violated and every edge prices out, in {:.3} s",
                b.seconds
            ),
            Some(why) => println!(
                "status       stopped ({why}) after {:.3} s; the bound of the last duals over \
                 every edge is still a lower bound",
                b.seconds
            ),
        }
        if let Some(g) = gap {
            println!("gap          {g:.3}% to the upper bound given");
        }
    }
    Ok(())
}
