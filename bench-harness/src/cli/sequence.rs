//! `wend solve` and `wend measure` under constraints: time windows, service durations,
//! precedence, optional stops, fixed edges, a depot and a start time, from the problem file
//! (the plain time-window layout, a TSPLIB `FIXED_EDGES_SECTION`) and a constraints CSV.
//!
//! Stops are printed as the file's node numbers (from 1) everywhere: the tour, the skipped
//! stops, the schedule and the stops a violation names.

use super::{write_file, CliError};
use clap::Args;
use serde_json::{json, Map, Value};
use std::path::{Path, PathBuf};
use wend::constraints::{
    evaluate, solve_sequence, Constraints, ConstraintsError, Evaluation, Objective, Route,
    SequenceOutcome, Violation,
};
use wend::Settings;
use wend_tsplib::{Instance, Problem};

/// The exit codes, for the help of the commands that can end with 3.
pub const EXIT_CODES: &str = "Exit codes: 0 done; 1 failure (writing a file, say); 2 bad input \
     (one line naming the file and line); 3 no order meeting every constraint was found (solve) \
     or the tour breaks a constraint (measure), the result still printed; 130 interrupted.";

/// The options that put a problem under constraints (`wend solve` and `wend measure`).
#[derive(Args, Debug)]
pub struct ConstraintArgs {
    /// Constraints CSV (columns kind,stop,other,earliest,latest,value; node numbers from 1):
    /// windows, service, optional stops, precedence, fixed edges, depot, start time, path. Laid
    /// over the problem file's own constraints: a stop's windows here replace the file's.
    #[arg(long, value_name = "FILE.csv")]
    pub constraints: Option<PathBuf>,
    /// What the constrained search minimises: travel (travel cost, waiting not counted) or
    /// completion (the time the sequence ends); plus the penalties of optional stops left out.
    /// Default: travel.
    #[arg(long, value_name = "OBJECTIVE")]
    pub objective: Option<String>,
}

/// The options of `wend solve` for constrained sequencing.
#[derive(Args, Debug)]
pub struct SequenceArgs {
    #[command(flatten)]
    pub constraints: ConstraintArgs,
    /// A start order to improve under constraints: a TSPLIB TOUR file (node numbers from 1; a
    /// closed tour may start anywhere; optional stops may be left out).
    #[arg(long, value_name = "FILE")]
    pub initial_order: Option<PathBuf>,
    /// Write the schedule of the order found as CSV: position, stop, arrival, start, wait,
    /// departure, slack (latest start minus start, empty for a stop without a window).
    #[arg(long, value_name = "FILE.csv")]
    pub schedule: Option<PathBuf>,
}

/// What `wend solve` hands over to the constrained path.
pub struct SolveRun<'a> {
    /// The problem file.
    pub path: &'a Path,
    /// The settings the options give.
    pub settings: &'a Settings,
    /// `--tour-out`.
    pub tour_out: Option<&'a Path>,
    /// `--json`.
    pub json: bool,
}

/// The constraints `wend solve` works under, or `None` for a plain tour (the existing path).
pub fn constraints_of(
    problem: &Problem,
    a: &SequenceArgs,
    path: &Path,
) -> Result<Option<Constraints>, CliError> {
    let forced = a.initial_order.is_some() || a.schedule.is_some();
    constraints_for(problem, &a.constraints, path, forced)
}

/// The constraints of `problem` with the constraints CSV laid over them and the objective set,
/// checked; `None` when nothing constrains the order and no option asks for constraints
/// (`forced` false), so that the command treats the file as it always has. A TSPLIB file's
/// fixed edges alone leave the problem to the plain path.
pub fn constraints_for(
    problem: &Problem,
    a: &ConstraintArgs,
    path: &Path,
    forced: bool,
) -> Result<Option<Constraints>, CliError> {
    let mut own = problem.constraints.clone();
    own.fixed_edges.clear();
    if !forced && a.constraints.is_none() && a.objective.is_none() && own.is_unconstrained() {
        return Ok(None);
    }
    let n = problem.instance.dimension;
    let mut c = problem.constraints.clone();
    if let Some(file) = &a.constraints {
        c = laid_over(c, wend_tsplib::read_constraints(file, n)?);
    }
    c.objective = match a.objective.as_deref() {
        None | Some("travel") => Objective::Travel,
        Some("completion") => Objective::Completion,
        Some(other) => {
            return Err(CliError::Input(format!(
                "unknown objective {other:?}; choose one of: travel, completion"
            )))
        }
    };
    if let Err(e) = c.check(n) {
        let (file, line) = match &a.constraints {
            Some(csv) => (csv.as_path(), line_of(csv, &e)),
            None => (path, None),
        };
        let at = line.map_or(String::new(), |l| format!(":{l}"));
        return Err(CliError::Input(format!(
            "{}{at}: {}",
            file.display(),
            numbered_error(e)
        )));
    }
    Ok(Some(c))
}

/// `extra` (a constraints CSV) laid over `own` (the problem file's): a stop's windows, service
/// and penalty from `extra` where it gives them, precedence pairs and fixed edges of both (an
/// edge of `extra` replaces the same edge of `own` the other way round), and the depot, start
/// time and route of `extra` where they differ from the defaults.
fn laid_over(own: Constraints, extra: Constraints) -> Constraints {
    let mut c = own;
    for (mine, theirs) in c.windows.iter_mut().zip(extra.windows) {
        if !theirs.is_empty() {
            *mine = theirs;
        }
    }
    for (mine, theirs) in c.service.iter_mut().zip(extra.service) {
        if theirs != 0 {
            *mine = theirs;
        }
    }
    for (mine, theirs) in c.penalty.iter_mut().zip(extra.penalty) {
        if theirs.is_some() {
            *mine = theirs;
        }
    }
    c.precedence.extend(extra.precedence);
    for e in extra.fixed_edges {
        // A row naming a file's edge the other way round turns it (a sequence has a direction).
        c.fixed_edges.retain(|&(a, b)| (b, a) != e);
        if !c.fixed_edges.contains(&e) {
            c.fixed_edges.push(e);
        }
    }
    if extra.depot != 0 {
        c.depot = extra.depot;
    }
    if extra.start_time != 0 {
        c.start_time = extra.start_time;
    }
    if extra.route == Route::Path {
        c.route = Route::Path;
    }
    c
}

/// The line of the constraints CSV a contradiction between rows is about: the first `before`
/// (or `edge`) row naming the stop a cycle or clash goes through. `None` when the CSV cannot be
/// read again or no row fits.
fn line_of(csv: &Path, e: &ConstraintsError) -> Option<u64> {
    use ConstraintsError as E;
    let (kinds, stop): (&[&str], usize) = match *e {
        E::PrecedenceCycle { stop } | E::BeforeDepot { before: stop, .. } => (&["before"], stop),
        E::TwoSuccessors { stop, .. }
        | E::TwoPredecessors { stop, .. }
        | E::FixedCycle { stop, .. }
        | E::FixedIntoPathStart { from: stop, .. } => (&["edge"], stop),
        E::FixedAgainstPrecedence { from: stop, .. } | E::MixedCycle { stop } => {
            (&["before", "edge"], stop)
        }
        _ => return None,
    };
    let mut reader = csv::ReaderBuilder::new()
        .flexible(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_path(csv)
        .ok()?;
    let header = reader.headers().ok()?.clone();
    let col = |name: &str| header.iter().position(|h| h.eq_ignore_ascii_case(name));
    let (kind, first, other) = (col("kind")?, col("stop")?, col("other")?);
    let number = (stop + 1).to_string();
    reader.records().flatten().find_map(|r| {
        let fits = kinds.contains(&r.get(kind)?)
            && (r.get(first) == Some(number.as_str()) || r.get(other) == Some(number.as_str()));
        fits.then(|| r.position().map(|p| p.line()))?
    })
}

/// A contradiction in the constraints, its stops as node numbers.
fn numbered_error(e: ConstraintsError) -> String {
    use ConstraintsError as E;
    let one = |s: usize| s + 1;
    let e = match e {
        E::DepotOptional { depot } => E::DepotOptional { depot: one(depot) },
        E::WindowReversed {
            stop,
            earliest,
            latest,
        } => E::WindowReversed {
            stop: one(stop),
            earliest,
            latest,
        },
        E::WindowsOverlap {
            stop,
            previous,
            index,
        } => E::WindowsOverlap {
            stop: one(stop),
            previous: one(previous),
            index: one(index),
        },
        E::NegativeService { stop, service } => E::NegativeService {
            stop: one(stop),
            service,
        },
        E::NegativePenalty { stop, penalty } => E::NegativePenalty {
            stop: one(stop),
            penalty,
        },
        E::SelfLink { what, stop } => E::SelfLink {
            what,
            stop: one(stop),
        },
        E::DuplicatePrecedence { before, after } => E::DuplicatePrecedence {
            before: one(before),
            after: one(after),
        },
        E::DuplicateFixedEdge { from, to } => E::DuplicateFixedEdge {
            from: one(from),
            to: one(to),
        },
        E::BeforeDepot { before, after } => E::BeforeDepot {
            before: one(before),
            after: one(after),
        },
        E::LagsReversed {
            before,
            after,
            min_lag,
            max_lag,
        } => E::LagsReversed {
            before: one(before),
            after: one(after),
            min_lag,
            max_lag,
        },
        E::PrecedenceCycle { stop } => E::PrecedenceCycle { stop: one(stop) },
        E::TwoSuccessors {
            stop,
            first,
            second,
        } => E::TwoSuccessors {
            stop: one(stop),
            first: one(first),
            second: one(second),
        },
        E::TwoPredecessors {
            stop,
            first,
            second,
        } => E::TwoPredecessors {
            stop: one(stop),
            first: one(first),
            second: one(second),
        },
        E::FixedCycle { stop, len, nodes } => E::FixedCycle {
            stop: one(stop),
            len,
            nodes,
        },
        E::FixedIntoPathStart { from, to } => E::FixedIntoPathStart {
            from: one(from),
            to: one(to),
        },
        E::FixedAgainstPrecedence { from, to } => E::FixedAgainstPrecedence {
            from: one(from),
            to: one(to),
        },
        E::MixedCycle { stop } => E::MixedCycle { stop: one(stop) },
        // Lengths and unknown ids: the readers already keep these in range.
        other => other,
    };
    e.to_string()
}

/// A violation with its stops as node numbers (and a position from 1).
fn numbered(v: Violation) -> Violation {
    use Violation as V;
    let one = |s: usize| s.saturating_add(1);
    match v {
        V::Late { stop, by } => V::Late {
            stop: one(stop),
            by,
        },
        V::MissingRequired { stop } => V::MissingRequired { stop: one(stop) },
        V::Precedence { before, after } => V::Precedence {
            before: one(before),
            after: one(after),
        },
        V::BeforeSkipped { before, after } => V::BeforeSkipped {
            before: one(before),
            after: one(after),
        },
        V::Rule { stop, by } => V::Rule {
            stop: one(stop),
            by,
        },
        V::MinLag { before, after, by } => V::MinLag {
            before: one(before),
            after: one(after),
            by,
        },
        V::MaxLag { before, after, by } => V::MaxLag {
            before: one(before),
            after: one(after),
            by,
        },
        V::FixedEdge { from, to } => V::FixedEdge {
            from: one(from),
            to: one(to),
        },
        V::Duplicate { stop } => V::Duplicate { stop: one(stop) },
        V::UnknownStop { stop } => V::UnknownStop { stop: one(stop) },
        V::WrongStart { depot, found } => V::WrongStart {
            depot: one(depot),
            found: found.map(one),
        },
        V::Overflow { position } => V::Overflow {
            position: one(position),
        },
    }
}

fn node_numbers(stops: &[usize]) -> Value {
    json!(stops.iter().map(|s| s + 1).collect::<Vec<_>>())
}

/// The keys an evaluation shares between `solve` and `measure`, stops as node numbers.
fn evaluation_json(e: &Evaluation, c: &Constraints) -> Result<Map<String, Value>, CliError> {
    let fail = |e: serde_json::Error| CliError::Failure(e.to_string());
    let violations = e
        .violations
        .iter()
        .map(|&v| {
            let v = numbered(v);
            let mut o = serde_json::to_value(v).map_err(fail)?;
            o["message"] = json!(v.to_string());
            Ok(o)
        })
        .collect::<Result<Vec<_>, CliError>>()?;
    let schedule: Vec<Value> = e
        .rows
        .iter()
        .enumerate()
        .map(|(k, r)| {
            json!({"position": k + 1, "stop": r.stop + 1, "arrival": r.arrival, "start": r.start,
                   "wait": r.wait, "departure": r.departure, "slack": r.slack})
        })
        .collect();
    let v = json!({
        "feasible": e.feasible(),
        "travel_cost": e.travel_cost,
        "length": e.travel_cost,
        "completion_time": e.completion_time,
        "wait": e.wait,
        "penalty": e.penalty,
        "objective": e.objective,
        "minimised": c.objective,
        "route": c.route,
        "depot": c.depot + 1,
        "skipped": node_numbers(&e.skipped),
        "violations": violations,
        "schedule": schedule,
    });
    match v {
        Value::Object(m) => Ok(m),
        _ => Err(CliError::Failure("the evaluation is not an object".into())),
    }
}

/// The lines of the text summary about an evaluation, in the house style.
fn print_evaluation(e: &Evaluation, c: &Constraints) {
    match e.violations.len() {
        0 => println!("feasible   yes"),
        k => println!("feasible   no: {k} constraint(s) broken"),
    }
    println!("travel     {}", e.travel_cost);
    println!("completion {}", e.completion_time);
    println!("wait       {}", e.wait);
    if c.penalty.iter().any(Option::is_some) {
        let left: Vec<String> = e.skipped.iter().map(|s| (s + 1).to_string()).collect();
        match left.len() {
            0 => println!("skipped    none"),
            _ => println!("skipped    {} (penalty {})", left.join(" "), e.penalty),
        }
    }
    if c.objective == Objective::Completion || e.penalty != 0 {
        println!(
            "objective  {} ({} plus penalties)",
            e.objective,
            match c.objective {
                Objective::Travel => "travel",
                Objective::Completion => "completion",
            }
        );
    }
    for v in &e.violations {
        println!("broken     {}", numbered(*v));
    }
}

/// Reads a tour file as an order of stops: node numbers of the instance, each at most once
/// (any count: optional stops may be left out).
fn read_order(file: &Path, inst: &Instance) -> Result<Vec<usize>, CliError> {
    let tf = wend_tsplib::read_tour(file)?;
    super::shared::check_nodes(&tf, file, &inst.name, inst.dimension)?;
    if tf.nodes.is_empty() {
        return Err(CliError::Input(format!(
            "{}: the tour lists no node",
            file.display()
        )));
    }
    Ok(tf.nodes)
}

/// `wend solve` under constraints.
pub fn solve(
    a: &SequenceArgs,
    run: &SolveRun<'_>,
    inst: &Instance,
    c: &Constraints,
) -> Result<(), CliError> {
    let settings = run.settings;
    let start = a
        .initial_order
        .as_deref()
        .map(|f| read_order(f, inst))
        .transpose()?;
    let hooks = super::shared::hooks(settings, run.json);
    let out = solve_sequence(inst.cost(), c, settings, start.as_deref(), hooks).map_err(|e| {
        let file = match (&e, &a.initial_order) {
            (wend::constraints::SequenceError::Start(_), Some(f)) => f.as_path(),
            _ => run.path,
        };
        CliError::Input(format!("{}: {e}", file.display()))
    })?;
    if out.feasible {
        if let Some(file) = run.tour_out {
            write_file(file, |w| {
                wend_tsplib::write_tour(
                    &format!("{}.tour", inst.name),
                    &tour_comment(&out, settings),
                    &out.order,
                    w,
                )
            })?;
        }
        if let Some(file) = &a.schedule {
            write_schedule(file, &out.evaluation)?;
        }
    }
    if run.json {
        let v = solve_json(a, run, inst, c, &out)?;
        println!("{}", Value::Object(v));
    } else {
        print_solve_summary(inst, &out, c);
        for (file, what) in [(run.tour_out, "tour"), (a.schedule.as_deref(), "schedule")] {
            if let (Some(f), true) = (file, out.feasible) {
                println!("{what:<10} written to {}", f.display());
            }
        }
    }
    if out.feasible {
        return Ok(());
    }
    let what = if out.proven_infeasible {
        "no order meets every constraint (proven by the exact programme)"
    } else {
        "no order meeting every constraint was found"
    };
    let unwritten = match (run.tour_out.is_some(), a.schedule.is_some()) {
        (false, false) => "",
        (true, false) => "; the tour file was not written",
        (false, true) => "; the schedule file was not written",
        (true, true) => "; the tour and schedule files were not written",
    };
    Err(CliError::Infeasible(format!("{what}{unwritten}")))
}

/// The comment line of the tour file.
fn tour_comment(out: &SequenceOutcome, settings: &Settings) -> String {
    let head = match out.method {
        "exact" => "exact".to_string(),
        m => format!("{m} seed {}", settings.seed),
    };
    let mut comment = format!(
        "wend {} {head} travel {}",
        env!("CARGO_PKG_VERSION"),
        out.evaluation.travel_cost
    );
    if out.minimised == Objective::Completion {
        comment.push_str(&format!(" completion {}", out.evaluation.completion_time));
    }
    if out.evaluation.penalty != 0 {
        comment.push_str(&format!(" penalty {}", out.evaluation.penalty));
    }
    if out.method == "exact" {
        comment.push_str(if out.proven_optimal {
            " proven optimal"
        } else {
            " not proven optimal"
        });
    }
    if out.route == Route::Path {
        comment.push_str(" open path");
    }
    comment
}

/// Writes the schedule CSV: one row per visited stop, stops as node numbers.
fn write_schedule(file: &Path, e: &Evaluation) -> Result<(), CliError> {
    write_file(file, |w| {
        let mut csv = csv::Writer::from_writer(w);
        csv.write_record(SCHEDULE_COLUMNS)?;
        for (k, r) in e.rows.iter().enumerate() {
            let slack = r.slack.map_or(String::new(), |s| s.to_string());
            csv.write_record([
                (k + 1).to_string(),
                (r.stop + 1).to_string(),
                r.arrival.to_string(),
                r.start.to_string(),
                r.wait.to_string(),
                r.departure.to_string(),
                slack,
            ])?;
        }
        csv.flush()
    })
}

/// The columns of the schedule CSV.
const SCHEDULE_COLUMNS: [&str; 7] = [
    "position",
    "stop",
    "arrival",
    "start",
    "wait",
    "departure",
    "slack",
];

/// The `--json` object of a constrained solve.
fn solve_json(
    a: &SequenceArgs,
    run: &SolveRun<'_>,
    inst: &Instance,
    c: &Constraints,
    out: &SequenceOutcome,
) -> Result<Map<String, Value>, CliError> {
    let fail = |e: serde_json::Error| CliError::Failure(e.to_string());
    let Value::Object(mut obj) = serde_json::to_value(out).map_err(fail)? else {
        return Err(CliError::Failure("the outcome is not an object".into()));
    };
    obj.remove("trace");
    obj.extend(evaluation_json(&out.evaluation, c)?);
    let shown = |p: Option<&Path>| p.map(|p| p.display().to_string());
    let written = |p: Option<&Path>| shown(p.filter(|_| out.feasible));
    let own = json!({
        "tour": node_numbers(&out.order),
        "instance": inst.name,
        "file": run.path.display().to_string(),
        "type": inst.kind.keyword(),
        "nodes": inst.dimension,
        "seed": run.settings.seed,
        "time_limit": run.settings.time_limit,
        "tour_out": written(run.tour_out),
        "schedule_out": written(a.schedule.as_deref()),
        "constraints": shown(a.constraints.constraints.as_deref()),
        "initial_order": shown(a.initial_order.as_deref()),
    });
    if let Value::Object(own) = own {
        obj.extend(own);
    }
    Ok(obj)
}

/// The text summary of a constrained solve.
fn print_solve_summary(inst: &Instance, out: &SequenceOutcome, c: &Constraints) {
    print_instance(inst, c);
    println!("method     {}", out.method);
    print_evaluation(&out.evaluation, c);
    if out.method == "exact" {
        if out.proven_optimal {
            println!("proof      optimal");
        } else if out.proven_infeasible {
            println!("proof      no order meets every constraint");
        } else {
            println!("proof      not finished in time");
        }
        println!("time       {:.3} s", out.seconds);
    } else {
        if let Some(b) = out.lower_bound {
            println!("bound      {b}");
        }
        println!(
            "time       {:.3} s, {} run(s), {} iteration(s), stopped: {}",
            out.seconds,
            out.runs,
            out.iterations,
            super::shared::stop_words(out.stop_reason)
        );
    }
}

fn print_instance(inst: &Instance, c: &Constraints) {
    let route = match c.route {
        Route::Closed => "closed tour",
        Route::Path => "path",
    };
    println!(
        "instance   {} ({} nodes, {}; {route} from node {})",
        inst.name,
        inst.dimension,
        inst.kind.keyword(),
        c.depot + 1
    );
}

/// `wend measure` under constraints: the measures of the tour and everything it breaks.
pub fn measure(inst: &Instance, c: &Constraints, tour: &Path, json: bool) -> Result<(), CliError> {
    let mut order = read_order(tour, inst)?;
    // A closed tour may be written from any of its stops.
    if let (Route::Closed, Some(at)) = (c.route, order.iter().position(|&s| s == c.depot)) {
        order.rotate_left(at);
    }
    let e = evaluate(inst.cost(), c, &order);
    if json {
        let mut v = evaluation_json(&e, c)?;
        v.insert("instance".into(), json!(inst.name));
        v.insert("nodes".into(), json!(inst.dimension));
        v.insert("tour".into(), json!(tour.display().to_string()));
        println!("{}", Value::Object(v));
    } else {
        print_instance(inst, c);
        print_evaluation(&e, c);
    }
    match e.violations.len() {
        0 => Ok(()),
        k => Err(CliError::Infeasible(format!(
            "{}: the tour breaks {k} constraint(s)",
            tour.display()
        ))),
    }
}
