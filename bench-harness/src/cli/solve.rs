//! `wend solve`.

use super::{sequence, write_file, CliError};
use clap::Args;
use serde_json::json;
use std::path::PathBuf;
use wend::SettingsError;
use wend::{solve_with, CandidateSource, Ends, ExactMethod, Layout, Method, Outcome, Settings};

#[derive(Args, Debug)]
#[command(after_help = sequence::EXIT_CODES)]
pub struct SolveArgs {
    /// TSPLIB instance file (TYPE TSP or ATSP), or a time-window file in the plain layout
    /// (node count, travel-time matrix, one window per node).
    #[arg(required = true)]
    path: Option<PathBuf>,
    /// Stop after this many seconds and report the best tour so far.
    #[arg(long, short = 't', value_name = "SECONDS")]
    time_limit: Option<f64>,
    /// Seed of all random choices; the same seed, run count and iteration budget give the same
    /// tour.
    #[arg(long, short = 's', default_value_t = 0)]
    seed: u64,
    /// Worker threads (default: one per core).
    #[arg(long, short = 'j', value_name = "N")]
    threads: Option<usize>,
    /// Independent runs, each from a start tour of its own (every method; a run of acs or mmas
    /// is one colony). Default without a time limit: 2 runs (1 for acs and mmas, 8 for 2opt);
    /// with one, as many as fit.
    #[arg(long, alias = "restarts", value_name = "N")]
    runs: Option<usize>,
    /// Iterations per run. One iteration is a kick and its repair (lk), a generation of ants
    /// (acs, mmas), or a batch of moves at one temperature (anneal); 2opt counts none. With
    /// such a budget the same seed gives the same tour on any number of threads (default
    /// without a time limit: lk the number of nodes within 1,000-10,000; acs and mmas 100;
    /// anneal 500).
    #[arg(long, alias = "kicks", value_name = "N")]
    iterations: Option<u64>,
    /// End a run after this many iterations in a row without a shorter tour (a new run starts
    /// while time remains).
    #[arg(long, value_name = "N")]
    stall_limit: Option<u64>,
    /// A parameter of the method, KEY=VALUE; repeat for several. `--list-methods` lists each
    /// method's keys.
    #[arg(long, alias = "set", value_name = "KEY=VALUE")]
    params: Vec<String>,
    /// Stop as soon as a tour of at most this length is found.
    #[arg(long, value_name = "LENGTH")]
    target: Option<i64>,
    /// Method to run; see --list-methods.
    #[arg(long, default_value = "lk")]
    method: String,
    /// How many neighbours each node's list holds: the moves look at these.
    #[arg(long, alias = "neighbours", value_name = "K", default_value_t = wend::DEFAULT_NEIGHBOURS)]
    neighbour_count: usize,
    /// Where the neighbour lists come from: quadrant (the nearest few in each quadrant around a
    /// node, topped up with the nearest; helps on clustered instances), nearest, or alpha
    /// (alpha-nearness from a short Held–Karp ascent; symmetric, up to 20,000 nodes, O(n²)).
    #[arg(
        long,
        alias = "candidates",
        default_value = "quadrant",
        value_name = "SOURCE"
    )]
    neighbour_lists: String,
    /// Tour representation lk edits: auto (array below 10,000 nodes, two-level list from
    /// there), array or two-level. The tour is the same; only the speed differs.
    #[arg(long, default_value = "auto", value_name = "LAYOUT")]
    layout: String,
    /// Also compute a lower bound and report the gap it proves: Held–Karp for symmetric costs,
    /// the assignment bound for asymmetric ones.
    #[arg(long)]
    bound: bool,
    /// Prove the tour optimal: the dynamic programme up to 16 nodes (24 for asymmetric costs),
    /// else a short lk search and branch and cut on the linear programme (symmetric and
    /// asymmetric costs). With --time-limit, the best tour and bound when time runs out; JSON
    /// `proven_optimal`, `lower_bound`, `exact_method`, `subproblems` (nodes of the tree).
    #[arg(long, conflicts_with_all = ["bound", "method", "runs", "iterations", "params", "stall_limit", "target", "neighbour_lists", "layout", "neighbour_count"])]
    exact: bool,
    /// With --exact: dynamic-programme (up to 24 nodes, either kind of costs), branch-and-cut
    /// (on the linear programme with subtour cuts, blossoms and combs, either kind of costs;
    /// the default above the dynamic programme's range) or branch-and-bound (on the 1-tree
    /// bound, symmetric costs, kept for comparison).
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
    #[arg(long, short = 'o', value_name = "FILE")]
    tour_out: Option<PathBuf>,
    /// Print exactly one JSON object on stdout instead of a summary.
    #[arg(long)]
    json: bool,
    /// List the methods and their parameters, and exit (no instance file needed).
    #[arg(long, exclusive = true)]
    list_methods: bool,
    #[command(flatten)]
    sequence: sequence::SequenceArgs,
}

pub fn run(a: SolveArgs) -> Result<(), CliError> {
    if a.list_methods {
        for m in Method::ALL {
            println!("{:<10} {}", m.name(), m.describe());
            for (key, meaning) in m.keys() {
                println!("{:<10}   --params {key}=...  {meaning}", "");
            }
        }
        return Ok(());
    }
    let mut settings = settings_of(&a)?;
    let path = a.path.clone().unwrap_or_default();
    let problem = wend_tsplib::read_problem(&path)?;
    if let Some(c) = sequence::constraints_of(&problem, &a.sequence, &path)? {
        refuse_under_constraints(&a, &settings)?;
        let run = sequence::SolveRun {
            path: &path,
            settings: &settings,
            tour_out: a.tour_out.as_deref(),
            json: a.json,
        };
        return sequence::solve(&a.sequence, &run, &problem.instance, &c);
    }
    let inst = problem.instance;
    settings.fixed_edges.clone_from(&inst.fixed_edges);
    settings.ends = path_ends(&a, inst.dimension)
        .map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?;
    let hooks = super::shared::hooks(&settings, a.json);
    let out = solve_with(inst.cost(), &settings, hooks)
        .map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?;
    if let Some(file) = &a.tour_out {
        write_tour_file(
            file,
            &inst,
            &tour_comment(&out, &settings),
            out.tour.order(),
        )?;
    }
    if a.json {
        println!("{}", json_object(&a, &inst, &path, &settings, &out)?);
    } else {
        print_summary(&inst, &settings, &out);
        if let Some(file) = &a.tour_out {
            println!("tour       written to {}", file.display());
        }
    }
    Ok(())
}

/// Refuses the options that have no meaning for an order under constraints.
fn refuse_under_constraints(a: &SolveArgs, settings: &Settings) -> Result<(), CliError> {
    let why = if a.open || a.start.is_some() || a.end.is_some() {
        "--open, --start and --end do not apply under constraints: the sequence starts at the \
         depot (node 1 unless the constraints CSV has a depot row) and ends back there, or \
         anywhere with a path row in the constraints CSV"
            .to_string()
    } else if settings.method != Method::Lk {
        format!(
            "--method {} does not apply under constraints: the constrained search runs by \
             default, and --exact runs the exact programme",
            settings.method.name()
        )
    } else if !a.params.is_empty() {
        "--params sets parameters of the methods for plain tours; under constraints the \
         constrained search runs by default, and --exact runs the exact programme"
            .to_string()
    } else if a.exact_method.is_some() {
        "--exact-method does not apply under constraints: --exact runs the exact programme for \
         constraints (up to 64 stops)"
            .to_string()
    } else if a.neighbour_count != wend::DEFAULT_NEIGHBOURS
        || a.neighbour_lists != "quadrant"
        || a.layout != "auto"
    {
        "--neighbour-count, --neighbour-lists and --layout tune the methods for plain tours; \
         they do not apply under constraints"
            .to_string()
    } else if a.bound_time != 10.0 {
        "--bound-time limits the 1-tree ascent of plain tours; under constraints --bound gives \
         the assignment bound of the travel costs as lower_bound, which needs no time limit"
            .to_string()
    } else {
        return Ok(());
    };
    Err(CliError::Input(why))
}

/// The settings the options ask for (the ends follow once the instance is read).
fn settings_of(a: &SolveArgs) -> Result<Settings, CliError> {
    let method = Method::from_name(&a.method).ok_or_else(|| {
        let names: Vec<&str> = Method::ALL.iter().map(|m| m.name()).collect();
        CliError::Input(format!(
            "unknown method {:?}; choose one of: {}",
            a.method,
            names.join(", ")
        ))
    })?;
    let neighbour_lists = CandidateSource::from_name(&a.neighbour_lists).ok_or_else(|| {
        let names: Vec<&str> = CandidateSource::ALL.iter().map(|s| s.name()).collect();
        CliError::Input(format!(
            "unknown source of neighbour lists {:?}; choose one of: {}",
            a.neighbour_lists,
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
    let exact_method = match &a.exact_method {
        None => None,
        Some(name) => Some(ExactMethod::from_name(name).ok_or_else(|| {
            CliError::Input(format!(
                "unknown exact method {name:?}; choose one of: dynamic-programme, branch-and-cut, \
                 branch-and-bound"
            ))
        })?),
    };
    let mut settings = Settings {
        method,
        time_limit: a.time_limit,
        seed: a.seed,
        threads: a.threads,
        runs: a.runs,
        iterations: a.iterations,
        stall_limit: a.stall_limit,
        target: a.target,
        neighbour_count: a.neighbour_count,
        neighbour_lists,
        layout,
        bound: a.bound,
        bound_time: a.bound_time,
        exact: a.exact,
        exact_method,
        ..Settings::default()
    };
    for pair in &a.params {
        let (key, value) = pair
            .split_once('=')
            .ok_or_else(|| CliError::Input(format!("--params takes KEY=VALUE, got {pair:?}")))?;
        settings
            .set(key.trim(), value.trim())
            .map_err(|e| CliError::Input(e.to_string()))?;
    }
    settings.check().map_err(|e| match e {
        SettingsError::Field { field, requirement } => {
            CliError::Input(format!("--{} {requirement}", field.replace('_', "-")))
        }
        other => CliError::Input(other.to_string()),
    })?;
    Ok(settings)
}

/// The comment line of the tour file.
fn tour_comment(out: &Outcome, settings: &Settings) -> String {
    let (head, tail) = match &out.proof {
        None => (
            format!("{} seed {}", settings.method.name(), settings.seed),
            "",
        ),
        Some(p) => (
            format!("exact {}", p.exact_method.name()),
            if p.proven_optimal {
                " proven optimal"
            } else {
                " not proven optimal"
            },
        ),
    };
    wend_bench::runner::tour_comment(&head, out.length, tail, out.ends, out.tour.order())
}

/// The `--json` object: the outcome without its tour and trace, and what only the command
/// knows (the file, the instance, the options as given, the tour file).
fn json_object(
    a: &SolveArgs,
    inst: &wend_tsplib::Instance,
    path: &std::path::Path,
    settings: &Settings,
    out: &Outcome,
) -> Result<serde_json::Value, CliError> {
    let mut v = serde_json::to_value(out).map_err(|e| CliError::Failure(e.to_string()))?;
    let Some(obj) = v.as_object_mut() else {
        return Err(CliError::Failure("the outcome is not an object".into()));
    };
    obj.remove("tour");
    obj.remove("trace");
    let ends = settings.ends;
    let mut own = json!({
        "instance": inst.name,
        "file": path.display().to_string(),
        "type": inst.kind.keyword(),
        "nodes": inst.dimension,
        "seed": settings.seed,
        "time_limit": settings.time_limit,
        "tour_out": a.tour_out.as_ref().map(|p| p.display().to_string()),
    });
    if out.proof.is_none() {
        own["start"] = json!(ends.start().map(|s| s + 1));
        own["end"] = json!(match ends {
            Ends::StartEnd(_, e) | Ends::End(e) => Some(e + 1),
            _ => None,
        });
    }
    if let Some(own) = own.as_object() {
        obj.extend(own.clone());
    }
    Ok(v)
}

/// The text summary.
fn print_summary(inst: &wend_tsplib::Instance, settings: &Settings, out: &Outcome) {
    println!(
        "instance   {} ({} nodes, {})",
        inst.name,
        inst.dimension,
        inst.kind.keyword()
    );
    let (Some(search), None) = (&out.search, &out.proof) else {
        return print_proof(out);
    };
    let method = settings.method;
    println!("method     {}", method.name());
    if out.ends != Ends::Closed {
        println!("ends       {}", ends_words(out));
    }
    println!("length     {}", out.length);
    match (out.lower_bound, out.proven_gap_percent, &out.gap_note) {
        (Some(b), Some(g), _) => {
            println!("bound      {b}: the tour is at most {g:.3} % above the optimum")
        }
        (_, _, Some(note)) => println!("bound      {note}"),
        _ => {}
    }
    println!(
        "time       {:.3} s, {} run(s), {} iteration(s), stopped: {}",
        out.seconds,
        search.runs,
        search.iterations,
        super::shared::stop_words(search.stop_reason)
    );
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
fn ends_words(sol: &Outcome) -> String {
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

/// The text summary of `--exact`, after the instance line.
fn print_proof(c: &Outcome) {
    let Some(p) = &c.proof else {
        return;
    };
    match p.exact_method {
        ExactMethod::DynamicProgramme => println!("method     exact: dynamic programme"),
        ExactMethod::BranchAndBound => println!(
            "method     exact: branch and bound on the 1-tree, {} subproblem(s), first tour {}",
            p.subproblems,
            p.first_tour_length.unwrap_or(c.length)
        ),
        ExactMethod::BranchAndCut => println!(
            "method     exact: branch and cut on the linear programme, {} subproblem(s), first \
             tour {}",
            p.subproblems,
            p.first_tour_length.unwrap_or(c.length)
        ),
    }
    if c.ends.is_path() {
        let order = c.tour.order();
        if let (Some(f), Some(l)) = (order.first(), order.last()) {
            println!("ends       {} path, {} to {}", c.ends.name(), f + 1, l + 1);
        }
    }
    println!("length     {}", c.length);
    match (p.proven_optimal, c.lower_bound, c.proven_gap_percent) {
        (true, _, _) => println!("proof      optimal"),
        (false, Some(b), Some(g)) => println!(
            "proof      not finished in time; bound {b}: the tour is at most {g:.3} % above the optimum"
        ),
        (false, _, Some(note)) => println!("proof      not finished in time; {note}"),
        _ => println!("proof      not finished in time; no bound"),
    }
    println!("time       {:.3} s", c.seconds);
}
