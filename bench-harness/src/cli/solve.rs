//! `wend solve`.

use super::{load, progress::Progress, write_file, CliError};
use clap::Args;
use serde_json::json;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::time::Duration;
use wend::{lower_bound, prove_optimal, ExactMethod, ProveOptions};
use wend::{CandidateSource, Ends, Layout, Method, Solver};

#[derive(Args, Debug)]
pub struct SolveArgs {
    /// TSPLIB instance file (TYPE TSP or ATSP).
    #[arg(required_unless_present = "list_methods")]
    path: Option<PathBuf>,
    /// Stop after this many seconds and report the best tour so far.
    #[arg(long, value_name = "SECONDS")]
    time_limit: Option<f64>,
    /// Seed of all random choices; the same seed and restart count give the same tour.
    #[arg(long, default_value_t = 0)]
    seed: u64,
    /// Worker threads (default: one per core).
    #[arg(long)]
    threads: Option<usize>,
    /// Independent runs (lk, anneal, colonies of acs and mmas) or restarts (2opt). Default
    /// without a time limit: 2 runs (1 colony) or 8 restarts; with one, as many as fit.
    #[arg(long)]
    restarts: Option<usize>,
    /// Steps per run: kicks (lk), generations (acs, mmas), batches of moves at one temperature
    /// (anneal). With such a budget the same seed gives the same tour on any number of threads
    /// (default without a time limit: lk the number of nodes within 1,000-10,000; acs and mmas
    /// 100; anneal 500).
    #[arg(long, visible_alias = "kicks", value_name = "N")]
    iterations: Option<u64>,
    /// End a run after this many steps in a row without a shorter tour (a new run starts while
    /// time remains).
    #[arg(long, value_name = "N")]
    stall_limit: Option<u64>,
    /// Set a parameter of the method, KEY=VALUE; repeat for several. `--list-methods` lists
    /// each method's keys.
    #[arg(long = "set", value_name = "KEY=VALUE")]
    settings: Vec<String>,
    /// Stop as soon as a tour of at most this length is found.
    #[arg(long, value_name = "LENGTH")]
    target: Option<i64>,
    /// Method to run; see --list-methods.
    #[arg(long, default_value = "lk")]
    method: String,
    /// Width of the neighbour lists the moves look at.
    #[arg(long, default_value_t = wend::DEFAULT_NEIGHBOURS)]
    neighbours: usize,
    /// Where the neighbour lists come from: quadrant (the nearest few in each quadrant around a
    /// node, topped up with the nearest; helps on clustered instances), nearest, or alpha
    /// (alpha-nearness from a short Held–Karp ascent; symmetric, up to 20,000 nodes, O(n²)).
    #[arg(long, default_value = "quadrant", value_name = "SOURCE")]
    candidates: String,
    /// Tour representation lk edits: auto (array below 10,000 nodes, two-level list from
    /// there), array or two-level. The tour is the same; only the speed differs.
    #[arg(long, default_value = "auto", value_name = "LAYOUT")]
    layout: String,
    /// Also compute a lower bound and report the gap it proves: Held–Karp for symmetric costs,
    /// the assignment bound for asymmetric ones.
    #[arg(long)]
    bound: bool,
    /// Prove the tour optimal: the dynamic programme up to 16 nodes (24 for asymmetric costs),
    /// else a short lk search and branch and bound on the 1-tree bound (symmetric costs only).
    /// With --time-limit, the best tour and bound when time runs out; JSON `proven_optimal`.
    #[arg(long, conflicts_with_all = ["bound", "method", "restarts", "iterations", "settings", "stall_limit", "target", "candidates", "layout", "neighbours"])]
    exact: bool,
    /// With --exact: dynamic-programme (up to 24 nodes, either kind of costs) or
    /// branch-and-bound (symmetric costs); default: chosen by size and symmetry.
    #[arg(long, value_name = "METHOD", requires = "exact")]
    exact_method: Option<String>,
    /// Seconds for the lower bound's ascent (with --bound).
    #[arg(long, value_name = "SECONDS", default_value_t = 10.0)]
    bound_time: f64,
    /// Find an open path (no return to the first node) instead of a closed tour; with --start
    /// or --end one end is fixed and the other free.
    #[arg(long)]
    open: bool,
    /// Find a path starting at this node (a node number of the file, from 1).
    #[arg(long, value_name = "ID")]
    start: Option<usize>,
    /// Find a path ending at this node (a node number of the file, from 1). With --start and
    /// the same ID: a closed tour starting there.
    #[arg(long, value_name = "ID")]
    end: Option<usize>,
    /// Write the tour to this file in TSPLIB TOUR format.
    #[arg(long, value_name = "FILE")]
    tour_out: Option<PathBuf>,
    /// Print exactly one JSON object on stdout instead of a summary.
    #[arg(long)]
    json: bool,
    /// List the methods and exit.
    #[arg(long)]
    list_methods: bool,
}

pub fn run(a: SolveArgs) -> Result<(), CliError> {
    if a.list_methods {
        for m in Method::ALL {
            println!("{:<10} {}", m.name(), m.describe());
            for (key, meaning) in m.keys() {
                println!("{:<10}   --set {key}=...  {meaning}", "");
            }
        }
        return Ok(());
    }
    let method = Method::from_name(&a.method).ok_or_else(|| {
        let names: Vec<&str> = Method::ALL.iter().map(|m| m.name()).collect();
        CliError::Input(format!(
            "unknown method {:?}; choose one of: {}",
            a.method,
            names.join(", ")
        ))
    })?;
    let limit = match a.time_limit {
        Some(t) if !(t.is_finite() && t >= 0.0) => {
            return Err(CliError::Input(format!(
                "--time-limit must be a non-negative number of seconds, got {t}"
            )))
        }
        Some(t) => Some(Duration::from_secs_f64(t.min(1.0e9))),
        None => None,
    };
    let candidates = CandidateSource::from_name(&a.candidates).ok_or_else(|| {
        let names: Vec<&str> = CandidateSource::ALL.iter().map(|s| s.name()).collect();
        CliError::Input(format!(
            "unknown candidate source {:?}; choose one of: {}",
            a.candidates,
            names.join(", ")
        ))
    })?;
    let layout = match a.layout.as_str() {
        "auto" => Layout::Auto,
        "array" => Layout::Array,
        "two-level" => Layout::TwoLevel,
        other => {
            return Err(CliError::Input(format!(
                "unknown layout {other:?}; choose one of: auto, array, two-level"
            )))
        }
    };
    if a.threads == Some(0) {
        return Err(CliError::Input("--threads must be at least 1".into()));
    }
    let path = a.path.clone().unwrap_or_default();
    let inst = load(&path)?;
    let ends = path_ends(&a, inst.dimension)
        .map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?;
    if a.exact {
        return run_exact(&a, &inst, &path, limit, ends);
    }
    let progress = Progress::start(limit, !a.json || std::io::stderr().is_terminal());
    let mut solver = Solver::new(inst.cost())
        .seed(a.seed)
        .method(method)
        .neighbours(a.neighbours)
        .candidates(candidates)
        .layout(layout)
        .ends(ends);
    if let Some(l) = limit {
        solver = solver.time_limit(l);
    }
    if let Some(t) = a.threads {
        solver = solver.threads(t);
    }
    if let Some(r) = a.restarts {
        solver = solver.restarts(r);
    }
    if let Some(k) = a.iterations {
        solver = solver.iterations(k);
    }
    for setting in &a.settings {
        let (key, value) = setting
            .split_once('=')
            .ok_or_else(|| CliError::Input(format!("--set takes KEY=VALUE, got {setting:?}")))?;
        solver = solver
            .set(key.trim(), value.trim())
            .map_err(|e| CliError::Input(e.to_string()))?;
    }
    if let Some(k) = a.stall_limit {
        solver = solver.stall_limit(k);
    }
    if let Some(t) = a.target {
        solver = solver.target_length(t);
    }
    let observer = progress.observer();
    let solver = solver
        .on_improvement(observer)
        .stop_handle(super::interrupt::handle());
    let result = solver.solve();
    progress.finish();
    let sol = result.map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?;
    let lower_bound = if a.bound {
        if !(a.bound_time.is_finite() && a.bound_time >= 0.0) {
            return Err(CliError::Input(format!(
                "--bound-time must be a non-negative number of seconds, got {}",
                a.bound_time
            )));
        }
        let time = Duration::from_secs_f64(a.bound_time.min(1.0e9));
        match lower_bound(
            inst.cost(),
            ends,
            sol.length,
            time,
            &super::interrupt::handle(),
        ) {
            Ok(b) => Some(b),
            // Ctrl-C during the solve or the bound: the tour is still written, without a bound.
            Err(_) if super::interrupt::interrupted() => None,
            Err(e) => return Err(CliError::Input(format!("{}: {e}", path.display()))),
        }
    } else {
        None
    };
    let proven_gap = lower_bound
        .filter(|&b| b > 0)
        .map(|b| 100.0 * (sol.length - b) as f64 / b as f64);

    if let Some(out) = &a.tour_out {
        let mut comment = format!(
            "length {} found by wend {} (method {}, seed {})",
            sol.length,
            env!("CARGO_PKG_VERSION"),
            method.name(),
            a.seed
        );
        if ends.is_path() {
            comment = format!(
                "open path (no return edge), {}; {comment}",
                ends_words(&sol)
            );
        }
        write_tour_file(out, &inst, &comment, sol.tour.order())?;
    }
    if a.json {
        let obj = json!({
            "instance": inst.name,
            "file": path.display().to_string(),
            "type": inst.kind.keyword(),
            "nodes": inst.dimension,
            "method": method.name(),
            "seed": a.seed,
            "threads": a.threads,
            "time_limit": a.time_limit,
            "ends": ends.name(),
            "start": ends.start().map(|s| s + 1),
            "end": match ends {
                Ends::StartEnd(_, e) | Ends::End(e) => Some(e + 1),
                _ => None,
            },
            "length": sol.length,
            "lower_bound": lower_bound,
            "proven_gap_percent": proven_gap,
            "seconds": sol.seconds,
            "restarts": sol.restarts,
            "iterations": sol.iterations,
            "stop_reason": sol.stop_reason,
            "tour_out": a.tour_out.as_ref().map(|p| p.display().to_string()),
        });
        println!("{obj}");
    } else {
        println!(
            "instance   {} ({} nodes, {})",
            inst.name,
            inst.dimension,
            inst.kind.keyword()
        );
        println!("method     {}", method.name());
        if ends != Ends::Closed {
            println!("ends       {}", ends_words(&sol));
        }
        println!("length     {}", sol.length);
        if let (Some(b), Some(g)) = (lower_bound, proven_gap) {
            println!("bound      {b}: the tour is at most {g:.3} % above the optimum");
        }
        println!(
            "time       {:.3} s, {} run(s), {} {}, stopped: {}",
            sol.seconds,
            sol.restarts,
            sol.iterations,
            match method {
                Method::Acs | Method::MaxMin => "generation(s)",
                Method::Anneal => "batch(es) of moves",
                _ => "kick(s)",
            },
            stop_words(sol.stop_reason)
        );
        if let Some(out) = &a.tour_out {
            println!("tour       written to {}", out.display());
        }
    }
    Ok(())
}

/// The ends `--open`, `--start` and `--end` ask for, with the file's 1-based node numbers
/// checked against `nodes` and turned into 0-based ids.
fn path_ends(a: &SolveArgs, nodes: usize) -> Result<Ends, String> {
    let id = |flag: &str, v: Option<usize>| -> Result<Option<usize>, String> {
        match v {
            None => Ok(None),
            Some(v) if (1..=nodes).contains(&v) => Ok(Some(v - 1)),
            Some(v) => Err(format!(
                "{flag} {v} is out of range: the instance has nodes 1 to {nodes}"
            )),
        }
    };
    let start = id("--start", a.start)?;
    let end = id("--end", a.end)?;
    Ok(match (start, end) {
        (Some(s), Some(e)) => Ends::StartEnd(s, e),
        (Some(s), None) => Ends::Start(s),
        (None, Some(e)) => Ends::End(e),
        (None, None) if a.open => Ends::Open,
        (None, None) => Ends::Closed,
    })
}

/// "from 3 to 7", in the file's node numbers, for the path of `sol`.
fn ends_words(sol: &wend::Solution) -> String {
    let order = sol.tour.order();
    let what = match sol.ends {
        Ends::Closed => "closed tour",
        Ends::StartEnd(s, e) if s == e => "closed tour from a fixed node",
        Ends::Open => "open path, free ends",
        Ends::Start(_) => "path from a fixed start",
        Ends::End(_) => "path to a fixed end",
        Ends::StartEnd(..) => "path between fixed ends",
    };
    match (order.first(), order.last()) {
        (Some(f), Some(l)) if sol.ends.is_path() => format!("{what}, {} to {}", f + 1, l + 1),
        (Some(f), _) => format!("{what}, from {}", f + 1),
        _ => what.to_string(),
    }
}

/// Writes `order` to `out` as a TSPLIB TOUR file named after the instance.
fn write_tour_file(
    out: &std::path::Path,
    inst: &wend_tsplib::Instance,
    comment: &str,
    order: &[usize],
) -> Result<(), CliError> {
    write_file(out, |w| {
        wend_tsplib::write_tour(&format!("{}.tour", inst.name), comment, order, w)
    })
}

/// `wend solve --exact`.
fn run_exact(
    a: &SolveArgs,
    inst: &wend_tsplib::Instance,
    path: &std::path::Path,
    limit: Option<Duration>,
    ends: Ends,
) -> Result<(), CliError> {
    let method = match &a.exact_method {
        None => None,
        Some(name) => Some(ExactMethod::from_name(name).ok_or_else(|| {
            CliError::Input(format!(
                "unknown exact method {name:?}; choose one of: dynamic-programme, branch-and-bound"
            ))
        })?),
    };
    let opts = ProveOptions {
        method,
        time_limit: limit,
        seed: a.seed,
        threads: a.threads,
        ends,
        ..Default::default()
    };
    let progress = Progress::start(limit, !a.json || std::io::stderr().is_terminal());
    let result = prove_optimal(inst.cost(), &opts, &super::interrupt::handle());
    progress.finish();
    let c = result.map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?;
    let proven_gap = c
        .lower_bound
        .filter(|&b| b > 0)
        .map(|b| 100.0 * (c.length - b) as f64 / b as f64);
    if let Some(out) = &a.tour_out {
        let comment = format!(
            "{}length {} found by wend {} ({}{})",
            if ends.is_path() {
                format!("{} path, no return step: ", ends.name())
            } else {
                String::new()
            },
            c.length,
            env!("CARGO_PKG_VERSION"),
            c.method.name(),
            if c.proven_optimal {
                ", proven optimal"
            } else {
                ", not proven optimal"
            }
        );
        write_tour_file(out, inst, &comment, c.tour.order())?;
    }
    if a.json {
        let obj = json!({
            "instance": inst.name,
            "file": path.display().to_string(),
            "type": inst.kind.keyword(),
            "nodes": inst.dimension,
            "method": "exact",
            "exact_method": c.method.name(),
            "ends": ends.name(),
            "seed": a.seed,
            "threads": a.threads,
            "time_limit": a.time_limit,
            "length": c.length,
            "lower_bound": c.lower_bound,
            "proven_optimal": c.proven_optimal,
            "proven_gap_percent": proven_gap,
            "first_tour_length": c.first_tour_length,
            "subproblems": c.subproblems,
            "seconds": c.seconds,
            "tour_out": a.tour_out.as_ref().map(|p| p.display().to_string()),
        });
        println!("{obj}");
    } else {
        println!(
            "instance   {} ({} nodes, {})",
            inst.name,
            inst.dimension,
            inst.kind.keyword()
        );
        match c.method {
            ExactMethod::DynamicProgramme => println!("method     exact: dynamic programme"),
            ExactMethod::BranchAndBound => println!(
                "method     exact: branch and bound, {} subproblem(s), first tour {}",
                c.subproblems,
                c.first_tour_length.unwrap_or(c.length)
            ),
        }
        if ends.is_path() {
            let order = c.tour.order();
            if let (Some(f), Some(l)) = (order.first(), order.last()) {
                println!("ends       {} path, {} to {}", ends.name(), f + 1, l + 1);
            }
        }
        println!("length     {}", c.length);
        match (c.proven_optimal, c.lower_bound, proven_gap) {
            (true, _, _) => println!("proof      optimal"),
            (false, Some(b), Some(g)) => println!(
                "proof      not finished in time; bound {b}: the tour is at most {g:.3} % above the optimum"
            ),
            _ => println!("proof      not finished in time; no bound"),
        }
        println!("time       {:.3} s", c.seconds);
        if let Some(out) = &a.tour_out {
            println!("tour       written to {}", out.display());
        }
    }
    Ok(())
}

fn stop_words(r: wend::StopReason) -> &'static str {
    use wend::StopReason::*;
    match r {
        RestartBudget => "all restarts done",
        TimeLimit => "time limit reached",
        Cancelled => "cancelled",
        Exhaustive => "every tour tried (optimal)",
        Constructed => "construction done",
        TargetReached => "target length reached",
        IterationBudget => "iteration budget used up",
        StallLimit => "stalled (no improvement within the stall limit)",
    }
}
