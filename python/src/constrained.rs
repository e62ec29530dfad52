//! Solving under sequencing constraints (time windows, service, optional stops, precedence,
//! fixed edges, depot, start time, route, objective) for the Python package.
//!
//! The constraints come from up to three places, added together in this order:
//! 1. the problem file of `solve_file` (the windows of a time-window file, the fixed edges of a
//!    TSPLIB file);
//! 2. a constraints table in the layout of the project's constraints CSV (node numbers from 1),
//!    as CSV text or a file, read by [`tsplib::parse_constraints`] so that the rules are the
//!    command's;
//! 3. the array arguments of the Python functions, converted and checked for shape there and
//!    passed here as one JSON object ([`Given`], 0-based stop ids).
//!
//! A stop gets its windows, its service duration and its penalty from one place only (giving
//! them twice is an error naming the stop); precedence pairs and fixed edges are added up; the
//! depot, start time, route and objective given as arguments override a table's. The core then
//! checks the whole ([`Constraints::check`]) and solves with [`solve_sequence`]. Stop ids in
//! the result are 0-based, as every id the Python package returns.

use std::path::{Path, PathBuf};

use numpy::ndarray::Array2;
use numpy::{PyArray1, PyArray2, PyReadonlyArray2};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use serde::Deserialize;
use serde_json::{json, Value};

use wend::constraints::{
    solve_sequence, Constraints, Objective, Precedence, Route, SequenceOutcome, Violation, Window,
};
use wend::{Cost, Hooks, StopHandle};
use wend_tsplib as tsplib;

use super::{
    coord_cost, input, matrix_cost, read_file_bytes, run_watched, Fail, SolveRequest, Source,
};

/// The constraints the array arguments give, under the names of the Python keywords; every
/// field may be absent.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct Given {
    windows: Option<Vec<Vec<Window>>>,
    service: Option<Vec<i64>>,
    penalty: Option<Vec<Option<i64>>>,
    #[serde(default)]
    precedence: Vec<Precedence>,
    #[serde(default)]
    fixed_edges: Vec<(usize, usize)>,
    depot: Option<usize>,
    start_time: Option<i64>,
    route: Option<Route>,
    objective: Option<Objective>,
}

impl Given {
    /// A whole constraints table as something to add: its per-stop settings, pairs and edges,
    /// and the depot, start time and route when they differ from the defaults.
    fn from_table(t: Constraints) -> Given {
        let fresh = Constraints::new(0);
        Given {
            depot: (t.depot != fresh.depot).then_some(t.depot),
            start_time: (t.start_time != fresh.start_time).then_some(t.start_time),
            route: (t.route != fresh.route).then_some(t.route),
            objective: None,
            windows: Some(t.windows),
            service: Some(t.service),
            penalty: Some(t.penalty),
            precedence: t.precedence,
            fixed_edges: t.fixed_edges,
        }
    }
}

/// The constraints gathered so far and where they came from, for the messages.
struct Gathered {
    c: Constraints,
    /// The places already added, in words (`the file`, `the constraints table`).
    from: Vec<&'static str>,
}

/// Checks that a per-stop argument has one entry per stop.
fn per_stop<T>(field: &str, v: &[T], nodes: usize) -> Result<(), Fail> {
    if v.len() == nodes {
        Ok(())
    } else {
        Err(Fail::Input(format!(
            "{field} has {} entries but there are {nodes} stops",
            v.len()
        )))
    }
}

/// Sets `slot[i]` from `new[i]` wherever `new[i]` is set, refusing a stop set in both.
fn fill<T: Clone>(
    field: &str,
    what: &str,
    slot: &mut [T],
    new: Vec<T>,
    is_set: impl Fn(&T) -> bool,
    earlier: &str,
) -> Result<(), Fail> {
    per_stop(field, &new, slot.len())?;
    for (i, (old, v)) in slot.iter_mut().zip(new).enumerate() {
        if !is_set(&v) {
            continue;
        }
        if is_set(old) {
            return Err(Fail::Input(format!(
                "{field}: stop {i} already has {what} from {earlier}"
            )));
        }
        *old = v;
    }
    Ok(())
}

impl Gathered {
    /// Adds `g`; `name` names the place in messages (`None`: the argument's own name).
    fn add(&mut self, g: Given, name: Option<&'static str>) -> Result<(), Fail> {
        let earlier = if self.from.is_empty() {
            "another argument".to_string()
        } else {
            self.from.join(" or ")
        };
        let c = &mut self.c;
        let field = |f: &'static str| name.unwrap_or(f);
        if let Some(w) = g.windows {
            let set = |w: &Vec<Window>| !w.is_empty();
            fill(
                field("windows"),
                "windows",
                &mut c.windows,
                w,
                set,
                &earlier,
            )?;
        }
        if let Some(s) = g.service {
            let set = |s: &i64| *s != 0;
            fill(
                field("service"),
                "a service duration",
                &mut c.service,
                s,
                set,
                &earlier,
            )?;
        }
        if let Some(p) = g.penalty {
            let set = |p: &Option<i64>| p.is_some();
            fill(
                field("penalty"),
                "a penalty",
                &mut c.penalty,
                p,
                set,
                &earlier,
            )?;
        }
        c.precedence.extend(g.precedence);
        c.fixed_edges.extend(g.fixed_edges);
        if let Some(d) = g.depot {
            c.depot = d;
        }
        if let Some(t) = g.start_time {
            c.start_time = t;
        }
        if let Some(r) = g.route {
            c.route = r;
        }
        if let Some(o) = g.objective {
            c.objective = o;
        }
        if let Some(name) = name {
            self.from.push(name);
        }
        Ok(())
    }
}

/// The constraints of one solve over `nodes` stops: `base` (from a file, else none), then the
/// table (CSV text or a file), then the arguments (`given`, a JSON object of [`Given`]).
fn gather(
    nodes: usize,
    base: Option<Constraints>,
    given: &str,
    table_text: Option<String>,
    table_path: Option<PathBuf>,
) -> Result<Constraints, Fail> {
    let given: Given = serde_json::from_str(given)
        .map_err(|e| Fail::Input(format!("the constraint arguments: {e}")))?;
    let mut all = match base {
        Some(c) => Gathered {
            c,
            from: vec!["the file"],
        },
        None => Gathered {
            c: Constraints::new(nodes),
            from: Vec::new(),
        },
    };
    if let Some(text) = table_text {
        let t = tsplib::parse_constraints(&text, "constraints", nodes).map_err(input)?;
        all.add(Given::from_table(t), Some("the constraints table"))?;
    }
    if let Some(path) = table_path {
        let t = read_table(&path, nodes)?;
        all.add(Given::from_table(t), Some("the constraints file"))?;
    }
    all.add(given, None)?;
    Ok(all.c)
}

/// A constraints CSV file, unreadable files raising `OSError`.
fn read_table(path: &Path, nodes: usize) -> Result<Constraints, Fail> {
    let bytes = read_file_bytes(path)?;
    let text = String::from_utf8_lossy(&bytes);
    tsplib::parse_constraints(&text, &path.display().to_string(), nodes).map_err(input)
}

/// One violation for Python: its kind, the stops it names (0-based), by how much (when it says)
/// and the core's sentence.
fn violation_value(v: &Violation) -> Value {
    let (stops, by): (Vec<usize>, Option<i64>) = match *v {
        Violation::Late { stop, by } | Violation::Rule { stop, by } => (vec![stop], Some(by)),
        Violation::MissingRequired { stop }
        | Violation::Duplicate { stop }
        | Violation::UnknownStop { stop } => (vec![stop], None),
        Violation::Precedence { before, after } | Violation::BeforeSkipped { before, after } => {
            (vec![before, after], None)
        }
        Violation::MinLag { before, after, by } | Violation::MaxLag { before, after, by } => {
            (vec![before, after], Some(by))
        }
        Violation::FixedEdge { from, to } => (vec![from, to], None),
        Violation::WrongStart { depot, found } => {
            (std::iter::once(depot).chain(found).collect(), None)
        }
        Violation::Overflow { .. } => (Vec::new(), None),
    };
    let kind = serde_json::to_value(v)
        .ok()
        .and_then(|x| x.get("kind").cloned())
        .unwrap_or(Value::Null);
    json!({"kind": kind, "stops": stops, "by": by, "message": v.to_string()})
}

/// Solves over `cost` under `c`, watching for Ctrl-C; the result as [`sequence_dict`] gives it.
fn solve_under<'py>(
    py: Python<'py>,
    cost: &dyn Cost,
    req: &SolveRequest,
    source: &Source<'_>,
    c: &Constraints,
    start: Option<Vec<usize>>,
) -> Result<Bound<'py, PyDict>, Fail> {
    if req.tour_out.is_some() {
        return Err(Fail::Input(
            "tour_out: a TOUR file holds every node once, which an order under constraints \
             need not; write the order with write_tour() when it visits every stop"
                .into(),
        ));
    }
    let settings = &req.settings;
    let stop = StopHandle::new();
    let hooks = Hooks {
        stop: stop.clone(),
        ..Hooks::default()
    };
    let out = run_watched(py, &stop, move || {
        solve_sequence(cost, c, settings, start.as_deref(), hooks)
    })?
    .map_err(|e| {
        Fail::Input(match source.file {
            Some(p) => format!("{}: {e}", p.display()),
            None => e.to_string(),
        })
    })?;
    sequence_dict(py, cost, req, source, c, &out)
}

/// The result: `json`, the outcome's keys (without `tour` and `trace`, the violations as
/// [`violation_value`] gives them) with those only a front end knows; `order`, the order as an
/// `int64` array; `trace`, every new best feasible objective as a `(seconds, objective)` row.
fn sequence_dict<'py>(
    py: Python<'py>,
    cost: &dyn Cost,
    req: &SolveRequest,
    source: &Source<'_>,
    c: &Constraints,
    out: &SequenceOutcome,
) -> Result<Bound<'py, PyDict>, Fail> {
    let internal = |e: &dyn std::fmt::Display| Fail::Internal(e.to_string());
    let mut value = serde_json::to_value(out).map_err(|e| internal(&e))?;
    let Value::Object(keys) = &mut value else {
        return Err(Fail::Internal("the outcome is not a JSON object".into()));
    };
    keys.remove("tour");
    keys.remove("trace");
    let violations: Vec<Value> = out
        .evaluation
        .violations
        .iter()
        .map(violation_value)
        .collect();
    keys.insert("violations".into(), Value::Array(violations));
    let own = json!({
        "file": source.file.map(|p| p.display().to_string()),
        "instance": source.instance,
        "type": source.kind,
        "nodes": cost.len(),
        "seed": req.settings.seed,
        "time_limit": req.settings.time_limit,
        "depot": c.depot,
        "start_time": c.start_time,
    });
    if let Value::Object(own) = own {
        for (key, v) in own {
            keys.entry(key).or_insert(v);
        }
    }
    let d = PyDict::new(py);
    let fail = |e: PyErr| Fail::Internal(e.to_string());
    d.set_item("json", value.to_string()).map_err(fail)?;
    let order: Vec<i64> = out.order.iter().map(|&v| v as i64).collect();
    d.set_item("order", PyArray1::from_vec(py, order))
        .map_err(fail)?;
    let flat: Vec<f64> = out
        .trace
        .iter()
        .flat_map(|t| [t.seconds, t.length as f64])
        .collect();
    let trace = Array2::from_shape_vec((out.trace.len(), 2), flat).map_err(|e| internal(&e))?;
    d.set_item("trace", PyArray2::from_owned_array(py, trace))
        .map_err(fail)?;
    Ok(d)
}

/// Solves over costs given directly (points, a matrix) under the constraints of `given` and the
/// table (CSV text, a file).
fn solve_direct<'py>(
    py: Python<'py>,
    cost: &dyn Cost,
    req: &SolveRequest,
    given: &str,
    (table_text, table_path): (Option<String>, Option<PathBuf>),
    start: Option<Vec<usize>>,
) -> Result<Bound<'py, PyDict>, Fail> {
    let c = gather(cost.len(), None, given, table_text, table_path)?;
    solve_under(py, cost, req, &Source::direct(cost), &c, start)
}

/// Solves over points under a TSPLIB distance and constraints: `options` as for
/// `solve_points`, `given` the JSON object of the constraint arguments, `table_text` /
/// `table_path` a constraints table, `start` an order to improve (0-based).
#[pyfunction]
#[pyo3(signature = (points, metric, options, given, table_text, table_path, start))]
#[allow(clippy::too_many_arguments)]
pub(crate) fn solve_points_constrained<'py>(
    py: Python<'py>,
    points: PyReadonlyArray2<'py, f64>,
    metric: &str,
    options: &str,
    given: &str,
    table_text: Option<String>,
    table_path: Option<PathBuf>,
    start: Option<Vec<usize>>,
) -> PyResult<Bound<'py, PyDict>> {
    let req = SolveRequest::from_json(options)?;
    let cost = coord_cost(&points, metric)?;
    let table = (table_text, table_path);
    Ok(solve_direct(py, &cost, &req, given, table, start)?)
}

/// Solves over a square integer cost matrix under constraints; the arguments as for
/// [`solve_points_constrained`].
#[pyfunction]
#[pyo3(signature = (matrix, options, given, table_text, table_path, start))]
pub(crate) fn solve_matrix_constrained<'py>(
    py: Python<'py>,
    matrix: PyReadonlyArray2<'py, i64>,
    options: &str,
    given: &str,
    table_text: Option<String>,
    table_path: Option<PathBuf>,
    start: Option<Vec<usize>>,
) -> PyResult<Bound<'py, PyDict>> {
    let req = SolveRequest::from_json(options)?;
    let cost = matrix_cost(&matrix)?;
    let table = (table_text, table_path);
    Ok(solve_direct(py, &cost, &req, given, table, start)?)
}

/// Solves a problem file (TSPLIB 95 or the plain time-window layout) under the constraints it
/// gives and those added; the other arguments as for [`solve_points_constrained`]. With
/// `only_with_windows`, a file without time windows is not solved here and `None` comes back
/// (the caller then solves it as a plain TSPLIB file).
#[pyfunction]
#[pyo3(signature = (path, options, given, table_text, table_path, start, only_with_windows))]
#[allow(clippy::too_many_arguments)]
pub(crate) fn solve_file_constrained<'py>(
    py: Python<'py>,
    path: PathBuf,
    options: &str,
    given: &str,
    table_text: Option<String>,
    table_path: Option<PathBuf>,
    start: Option<Vec<usize>>,
    only_with_windows: bool,
) -> PyResult<Option<Bound<'py, PyDict>>> {
    let bytes = read_file_bytes(&path)?;
    let text = String::from_utf8_lossy(&bytes);
    let problem = tsplib::parse_problem(&text, &path.display().to_string()).map_err(input)?;
    if only_with_windows && problem.constraints.windows.iter().all(Vec::is_empty) {
        return Ok(None);
    }
    let req = SolveRequest::from_json(options)?;
    let inst = &problem.instance;
    let c = gather(
        inst.dimension,
        Some(problem.constraints.clone()),
        given,
        table_text,
        table_path,
    )?;
    let source = Source {
        file: Some(&path),
        instance: Some(&inst.name),
        kind: inst.kind.keyword(),
    };
    Ok(Some(solve_under(
        py,
        inst.cost(),
        &req,
        &source,
        &c,
        start,
    )?))
}
