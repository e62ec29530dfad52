//! `wend._native`: the wend core as a Python extension module.
//!
//! The Python package `wend` (python/wend/__init__.py) wraps these functions: it checks and
//! converts arguments (NumPy arrays, pandas tables) and turns the dictionaries returned here
//! into result objects and DataFrames. Everything here takes plain arguments and returns plain
//! dictionaries so that the wrapper stays the single documented surface.
//!
//! Long calls run the core on a worker thread with the GIL released; the calling thread wakes
//! every [`WATCH_SLICE`] to let Python handle signals. On Ctrl-C (KeyboardInterrupt) the core is
//! stopped through its [`StopHandle`] and the best result so far is returned, with the stop
//! reason `cancelled`.
//!
//! Errors: bad input raises `ValueError` with the core's message; a file that cannot be read or
//! written raises `OSError` (or its subclass, e.g. `FileNotFoundError`); a fault inside the core
//! raises `RuntimeError` and never aborts the interpreter.
//!
//! Exact proofs (`exact=True`): with the cargo feature `cuts` the module carries the
//! cutting-plane crate and proves with branch and cut above the dynamic programme's range, for
//! symmetric and asymmetric costs, as `wend solve --exact` does; without it (the default, light
//! build: no C++ compiler needed) branch and bound on the 1-tree bound, symmetric costs only.
//! [`exact_methods`] says which build this is.

// Bad input from Python is an exception, never a panic.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

use std::path::{Path, PathBuf};
use std::time::Duration;

use numpy::ndarray::Array2;
use numpy::{PyArray1, PyArray2, PyReadonlyArray2, PyUntypedArrayMethods};
use pyo3::exceptions::{PyOSError, PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList};
use serde::de::DeserializeOwned;
use serde_json::{json, Map, Value};

use wend::{solve_with, CoordCost, Cost, Ends, Hooks, MatrixCost, Method, Metric, Outcome};
use wend::{ExactMethod, ProveError, Prover, Settings, SolveWithError, StopHandle};
use wend_sky::front::{search_front, Front, FrontOptions, FrontProgress};
use wend_sky::output::{parse_utc, plan_json, CAUTION, DEMO_START_UTC};
use wend_sky::plan::{plan, Plan, PlanOptions};
use wend_sky::schedule::Schedule;
use wend_sky::{demo_links, demo_profile, demo_targets, parse_profile, parse_targets};
use wend_sky::{Profile, Target};
use wend_tsplib as tsplib;
use wend_tsplib::{Instance, ProblemKind, Weights};

mod constrained;

/// How long the calling thread waits, with the GIL released, between two looks for a signal.
const WATCH_SLICE: Duration = Duration::from_millis(50);

/// The command that builds and installs the module with branch and cut (python/README.md):
/// maturin reads the cargo options of a PEP 517 build from pip's `build-args` setting.
const WITH_CUTS_INSTALL: &str =
    "python3 -m pip install ./python --config-settings=\"build-args=--features cuts\"";

/// Branch and cut for exact proofs, when the module was built with the feature `cuts`.
fn prover() -> Option<std::sync::Arc<dyn Prover>> {
    #[cfg(feature = "cuts")]
    {
        Some(std::sync::Arc::new(wend_cuts::BranchCutProver::default()))
    }
    #[cfg(not(feature = "cuts"))]
    {
        None
    }
}

/// The sentence a refusal of the light build ends with: why, and how to build it otherwise.
fn without_cuts_note() -> String {
    format!(
        "this wend module was built without branch and cut (the cargo feature `cuts` of \
         wend-python); build and install it with branch and cut: {WITH_CUTS_INSTALL}"
    )
}

/// The message of a failed solve: the core's, and for a proof that needs branch and cut the
/// module lacks, what to do about it.
fn solve_error_text(e: &SolveWithError) -> String {
    match e {
        SolveWithError::Prove(ProveError::NoProver) => format!(
            "exact_method \"branch-and-cut\" is not available: {}",
            without_cuts_note()
        ),
        SolveWithError::Prove(ProveError::AsymmetricTooLarge { .. }) if prover().is_none() => {
            format!("{e}; {}", without_cuts_note())
        }
        _ => e.to_string(),
    }
}

/// What went wrong, and which Python exception says so.
enum Fail {
    /// The caller's input is wrong: `ValueError`.
    Input(String),
    /// A file could not be read or written: `OSError` (the subclass of the I/O error's kind).
    Io(std::io::Error, String),
    /// A fault of the core (a panic caught): `RuntimeError`.
    Internal(String),
}

impl From<Fail> for PyErr {
    fn from(f: Fail) -> PyErr {
        match f {
            Fail::Input(m) => PyValueError::new_err(m),
            Fail::Io(e, m) => {
                // The subclass (FileNotFoundError, PermissionError, ...) from the error's kind,
                // the message naming the file.
                let typed = PyErr::from(e);
                Python::attach(|py| {
                    let kind = typed.get_type(py);
                    let made = kind.call1((m.clone(),));
                    match made {
                        Ok(obj) => PyErr::from_value(obj),
                        Err(_) => PyOSError::new_err(m),
                    }
                })
            }
            Fail::Internal(m) => PyRuntimeError::new_err(m),
        }
    }
}

fn input(e: impl std::fmt::Display) -> Fail {
    Fail::Input(e.to_string())
}

/// The text of a file, read so that an unreadable file is an `OSError` naming it.
fn read_file_bytes(path: &Path) -> Result<Vec<u8>, Fail> {
    std::fs::read(path).map_err(|e| {
        let m = format!("{}: cannot read the file: {e}", path.display());
        Fail::Io(e, m)
    })
}

/// Writes `bytes` to `path`, an `OSError` naming the file when that fails.
fn write_file_bytes(path: &Path, bytes: &[u8]) -> Result<(), Fail> {
    std::fs::write(path, bytes).map_err(|e| {
        let m = format!("{}: cannot write: {e}", path.display());
        Fail::Io(e, m)
    })
}

fn panic_text(p: &(dyn std::any::Any + Send)) -> String {
    if let Some(s) = p.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = p.downcast_ref::<String>() {
        s.clone()
    } else {
        "unknown panic".into()
    }
}

/// Runs `work` on a worker thread with the GIL released. The calling thread waits in slices of
/// [`WATCH_SLICE`], taking the GIL back between them to let Python run its signal handlers; when
/// one raises (Ctrl-C: KeyboardInterrupt), `stop` is triggered, the exception is dropped and the
/// worker's result (the best so far) is awaited and returned. A panic in the core becomes
/// [`Fail::Internal`].
fn run_watched<T: Send>(
    py: Python<'_>,
    stop: &StopHandle,
    work: impl FnOnce() -> T + Send,
) -> Result<T, Fail> {
    std::thread::scope(|scope| {
        let (tx, rx) = std::sync::mpsc::channel::<()>();
        let worker = scope.spawn(move || {
            let out = std::panic::catch_unwind(std::panic::AssertUnwindSafe(work));
            let _ = tx.send(());
            out
        });
        let mut rx = rx;
        loop {
            let (done, back) = py.detach(move || {
                let r = rx.recv_timeout(WATCH_SLICE);
                (
                    !matches!(r, Err(std::sync::mpsc::RecvTimeoutError::Timeout)),
                    rx,
                )
            });
            rx = back;
            if done {
                break;
            }
            if py.check_signals().is_err() {
                stop.stop();
                break;
            }
        }
        let joined = py.detach(move || worker.join());
        match joined {
            Ok(Ok(value)) => Ok(value),
            Ok(Err(p)) | Err(p) => Err(Fail::Internal(format!(
                "internal error in the wend core: {}",
                panic_text(&*p)
            ))),
        }
    })
}

/// A solve as the Python functions ask for it: the core's [`Settings`], read with serde from the
/// options under their Python names (the same names as the fields), and the tour file, which
/// only a front end writes.
struct SolveRequest {
    settings: Settings,
    /// Where to write the tour as a TSPLIB TOUR file.
    tour_out: Option<PathBuf>,
}

/// Takes `key` out of the options and reads it (absent or `None`: the type's default), the
/// error naming the option.
fn take<T: DeserializeOwned + Default>(map: &mut Map<String, Value>, key: &str) -> Result<T, Fail> {
    match map.remove(key) {
        None | Some(Value::Null) => Ok(T::default()),
        Some(v) => serde_json::from_value(v).map_err(|e| Fail::Input(format!("{key}: {e}"))),
    }
}

/// The settings the remaining options give, every absent one at the core's default. serde's
/// message does not say which option it refused, so on an error each option is read alone and
/// the first that fails is named.
fn settings_of(map: Map<String, Value>) -> Result<Settings, Fail> {
    serde_json::from_value(Value::Object(map.clone())).map_err(|whole| {
        let named = map.into_iter().find_map(|(key, value)| {
            let alone = Value::Object(Map::from_iter([(key.clone(), value)]));
            serde_json::from_value::<Settings>(alone)
                .err()
                .map(|e| format!("{key}: {e}"))
        });
        Fail::Input(named.unwrap_or_else(|| whole.to_string()))
    })
}

impl SolveRequest {
    /// Reads the options, a JSON object under the names of the Python functions: the fields of
    /// [`Settings`] as they are, and `open`, `start`, `end` (0-based), `params` (the method's
    /// parameters, applied with [`Settings::set`]) and `tour_out`. Checked as the core checks
    /// them; the ends are checked against the instance by the solve.
    fn from_json(text: &str) -> Result<SolveRequest, Fail> {
        let mut map: Map<String, Value> = serde_json::from_str(text)
            .map_err(|e| Fail::Input(format!("the solve options are not a JSON object: {e}")))?;
        let open: bool = take(&mut map, "open")?;
        let start: Option<usize> = take(&mut map, "start")?;
        let end: Option<usize> = take(&mut map, "end")?;
        let params: Map<String, Value> = take(&mut map, "params")?;
        let tour_out: Option<PathBuf> = take(&mut map, "tour_out")?;
        map.retain(|_, v| !v.is_null());
        let mut settings = settings_of(map)?;
        settings.ends = match (start, end) {
            (Some(s), Some(e)) => Ends::StartEnd(s, e),
            (Some(s), None) => Ends::Start(s),
            (None, Some(e)) => Ends::End(e),
            (None, None) if open => Ends::Open,
            (None, None) => Ends::Closed,
        };
        for (key, value) in params {
            let text = match value {
                Value::String(s) => s,
                other => other.to_string(),
            };
            settings.set(key.trim(), text.trim()).map_err(input)?;
        }
        settings.check().map_err(input)?;
        Ok(SolveRequest { settings, tour_out })
    }
}

/// What a result says of the costs it was solved over.
struct Source<'a> {
    /// The TSPLIB file, when the costs came from one (its errors are prefixed with it).
    file: Option<&'a Path>,
    /// The instance's name (from the file).
    instance: Option<&'a str>,
    /// `TSP` or `ATSP`.
    kind: &'static str,
}

impl Source<'_> {
    /// Costs given directly: `TSP` when symmetric.
    fn direct(cost: &dyn Cost) -> Source<'static> {
        let kind = if cost.is_symmetric() { "TSP" } else { "ATSP" };
        Source {
            file: None,
            instance: None,
            kind,
        }
    }
}

/// Solves over `cost` as `wend solve` does with the same options, watching for Ctrl-C, and
/// writes the tour file when asked.
fn solve_cost<'py>(
    py: Python<'py>,
    cost: &dyn Cost,
    req: &SolveRequest,
    source: &Source<'_>,
) -> Result<Bound<'py, PyDict>, Fail> {
    let settings = &req.settings;
    let stop = StopHandle::new();
    let hooks = Hooks {
        stop: stop.clone(),
        prover: prover(),
        ..Hooks::default()
    };
    let out = run_watched(py, &stop, move || solve_with(cost, settings, hooks))?.map_err(|e| {
        let text = solve_error_text(&e);
        Fail::Input(match source.file {
            Some(p) => format!("{}: {text}", p.display()),
            None => text,
        })
    })?;
    if let Some(path) = &req.tour_out {
        write_result_tour(path, source, settings, &out)?;
    }
    outcome_dict(py, cost, req, source, &out)
}

/// Writes the tour of `out` as a TSPLIB TOUR file named after the instance (or the file), its
/// comment `wend VERSION METHOD seed SEED length LENGTH`.
fn write_result_tour(
    path: &Path,
    source: &Source<'_>,
    settings: &Settings,
    out: &Outcome,
) -> Result<(), Fail> {
    let stem = path.file_stem().map(|s| s.to_string_lossy());
    let name = match (source.instance, stem) {
        (Some(name), _) => format!("{name}.tour"),
        (None, Some(stem)) => format!("{stem}.tour"),
        (None, None) => "tour".to_string(),
    };
    let comment = format!(
        "wend {} {} seed {} length {}",
        env!("CARGO_PKG_VERSION"),
        out.method.map_or("exact", Method::name),
        settings.seed,
        out.length
    );
    let mut bytes = Vec::new();
    tsplib::write_tour(&name, &comment, out.tour.order(), &mut bytes)
        .map_err(|e| Fail::Internal(e.to_string()))?;
    write_file_bytes(path, &bytes)
}

/// The result: `json`, the outcome serialised as the command prints it (without the tour and
/// the trace) with the keys only a front end knows added; `order`, the tour as an `int64`
/// array; `trace`, every new best as a `(seconds, length)` row (none for an exact proof).
fn outcome_dict<'py>(
    py: Python<'py>,
    cost: &dyn Cost,
    req: &SolveRequest,
    source: &Source<'_>,
    out: &Outcome,
) -> Result<Bound<'py, PyDict>, Fail> {
    let internal = |e: &dyn std::fmt::Display| Fail::Internal(e.to_string());
    let mut value = serde_json::to_value(out).map_err(|e| internal(&e))?;
    let Value::Object(keys) = &mut value else {
        return Err(Fail::Internal("the outcome is not a JSON object".into()));
    };
    keys.remove("tour");
    keys.remove("trace");
    let s = &req.settings;
    let threads = s.threads.unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|t| t.get())
            .unwrap_or(1)
    });
    let mut own = json!({
        "file": source.file.map(|p| p.display().to_string()),
        "instance": source.instance,
        "type": source.kind,
        "nodes": cost.len(),
        "seed": s.seed,
        "threads": threads,
        "time_limit": s.time_limit,
        "tour_out": req.tour_out.as_ref().map(|p| p.display().to_string()),
    });
    if out.proof.is_none() {
        own["start"] = json!(s.ends.start());
        own["end"] = json!(match s.ends {
            Ends::StartEnd(_, e) | Ends::End(e) => Some(e),
            _ => None,
        });
    }
    if let Value::Object(own) = own {
        // What the core reports wins over what is worked out here.
        for (key, v) in own {
            keys.entry(key).or_insert(v);
        }
    }
    let d = PyDict::new(py);
    let fail = |e: PyErr| Fail::Internal(e.to_string());
    d.set_item("json", value.to_string()).map_err(fail)?;
    let order: Vec<i64> = out.tour.order().iter().map(|&v| v as i64).collect();
    d.set_item("order", PyArray1::from_vec(py, order))
        .map_err(fail)?;
    let steps = out.search.as_ref().map_or(&[][..], |s| &s.trace[..]);
    let flat: Vec<f64> = steps
        .iter()
        .flat_map(|t| [t.seconds, t.length as f64])
        .collect();
    let trace = Array2::from_shape_vec((steps.len(), 2), flat).map_err(|e| internal(&e))?;
    d.set_item("trace", PyArray2::from_owned_array(py, trace))
        .map_err(fail)?;
    Ok(d)
}

/// Points from an `n x 2` or `n x 3` float array, as the core's 3-coordinate points.
fn points_of(points: &PyReadonlyArray2<'_, f64>) -> Result<Vec<[f64; 3]>, Fail> {
    let shape = points.shape();
    let (n, dims) = (shape[0], shape[1]);
    if !(dims == 2 || dims == 3) {
        return Err(Fail::Input(format!(
            "points must be an n x 2 or n x 3 array, got shape ({n}, {dims})"
        )));
    }
    let view = points.as_array();
    let mut out = Vec::with_capacity(n);
    for (i, row) in view.rows().into_iter().enumerate() {
        let mut p = [0.0; 3];
        for (k, v) in row.iter().enumerate() {
            if !v.is_finite() {
                return Err(Fail::Input(format!(
                    "node {i}: coordinate is not a finite number ({v})"
                )));
            }
            p[k] = *v;
        }
        out.push(p);
    }
    Ok(out)
}

fn coord_cost(points: &PyReadonlyArray2<'_, f64>, metric: &str) -> Result<CoordCost, Fail> {
    let m = Metric::from_keyword(metric).ok_or_else(|| {
        Fail::Input(format!(
            "unknown distance {metric:?}; choose one of: EUC_2D, EUC_3D, CEIL_2D, ATT, GEO, MAN_2D, MAN_3D, MAX_2D, MAX_3D"
        ))
    })?;
    let dims = points.shape()[1];
    let pts = points_of(points)?;
    if m.dims() == 3 && dims != 3 {
        return Err(Fail::Input(format!(
            "distance {metric} needs an n x 3 array of points, got n x {dims}"
        )));
    }
    CoordCost::new(m, pts).map_err(input)
}

fn matrix_cost(matrix: &PyReadonlyArray2<'_, i64>) -> Result<MatrixCost, Fail> {
    let shape = matrix.shape();
    if shape[0] != shape[1] {
        return Err(Fail::Input(format!(
            "the cost matrix must be square, got shape ({}, {})",
            shape[0], shape[1]
        )));
    }
    let n = shape[0];
    let weights: Vec<i64> = matrix.as_array().iter().copied().collect();
    MatrixCost::from_row_major(n, weights).map_err(input)
}

/// Solves over points under a TSPLIB distance; `options` is the JSON object of
/// [`SolveRequest::from_json`].
#[pyfunction]
fn solve_points<'py>(
    py: Python<'py>,
    points: PyReadonlyArray2<'py, f64>,
    metric: &str,
    options: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let req = SolveRequest::from_json(options)?;
    let cost = coord_cost(&points, metric)?;
    Ok(solve_cost(py, &cost, &req, &Source::direct(&cost))?)
}

/// Solves over a square integer cost matrix (symmetric or not).
#[pyfunction]
fn solve_matrix<'py>(
    py: Python<'py>,
    matrix: PyReadonlyArray2<'py, i64>,
    options: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let req = SolveRequest::from_json(options)?;
    let cost = matrix_cost(&matrix)?;
    Ok(solve_cost(py, &cost, &req, &Source::direct(&cost))?)
}

fn load_instance(path: &Path) -> Result<Instance, Fail> {
    let bytes = read_file_bytes(path)?;
    let text = String::from_utf8_lossy(&bytes);
    tsplib::parse_instance(&text, &path.display().to_string()).map_err(input)
}

/// Solves a TSPLIB file.
#[pyfunction]
fn solve_file<'py>(py: Python<'py>, path: PathBuf, options: &str) -> PyResult<Bound<'py, PyDict>> {
    let mut req = SolveRequest::from_json(options)?;
    let inst = load_instance(&path)?;
    req.settings.fixed_edges.extend(&inst.fixed_edges);
    let source = Source {
        file: Some(&path),
        instance: Some(&inst.name),
        kind: inst.kind.keyword(),
    };
    Ok(solve_cost(py, inst.cost(), &req, &source)?)
}

/// A TSPLIB problem file as a dictionary.
#[pyfunction]
fn read_tsplib<'py>(py: Python<'py>, path: PathBuf) -> PyResult<Bound<'py, PyDict>> {
    let inst = load_instance(&path)?;
    let d = PyDict::new(py);
    d.set_item("name", &inst.name)?;
    d.set_item("comments", &inst.comments)?;
    d.set_item("kind", inst.kind.keyword())?;
    d.set_item("dimension", inst.dimension)?;
    d.set_item("edge_weight_type", &inst.edge_weight_type)?;
    d.set_item("edge_weight_format", &inst.edge_weight_format)?;
    match &inst.weights {
        Weights::Coords(c) => {
            let dims = c.metric().dims();
            let flat: Vec<f64> = c
                .points()
                .iter()
                .flat_map(|p| p[..dims].iter().copied())
                .collect();
            let arr = Array2::from_shape_vec((inst.dimension, dims), flat)
                .map_err(|e| PyRuntimeError::new_err(e.to_string()))?;
            d.set_item("points", PyArray2::from_owned_array(py, arr))?;
            d.set_item("metric", c.metric().keyword())?;
            d.set_item("matrix", py.None())?;
        }
        Weights::Matrix(m) => {
            let arr =
                Array2::from_shape_vec((inst.dimension, inst.dimension), m.weights().to_vec())
                    .map_err(|e| PyRuntimeError::new_err(e.to_string()))?;
            d.set_item("points", py.None())?;
            d.set_item("metric", py.None())?;
            d.set_item("matrix", PyArray2::from_owned_array(py, arr))?;
        }
    }
    match &inst.display {
        Some(pts) => {
            let flat: Vec<f64> = pts.iter().flat_map(|p| p.iter().copied()).collect();
            let arr = Array2::from_shape_vec((pts.len(), 2), flat)
                .map_err(|e| PyRuntimeError::new_err(e.to_string()))?;
            d.set_item("display", PyArray2::from_owned_array(py, arr))?;
        }
        None => d.set_item("display", py.None())?,
    }
    Ok(d)
}

fn write_instance_file(path: &Path, inst: &Instance) -> Result<(), Fail> {
    let mut bytes = Vec::new();
    tsplib::write_instance(inst, &mut bytes).map_err(|e| {
        if e.kind() == std::io::ErrorKind::InvalidInput {
            Fail::Input(e.to_string())
        } else {
            Fail::Internal(e.to_string())
        }
    })?;
    write_file_bytes(path, &bytes)
}

/// Writes points under a TSPLIB distance as a TSP file.
#[pyfunction]
fn write_points(
    path: PathBuf,
    points: PyReadonlyArray2<'_, f64>,
    metric: &str,
    name: String,
    comments: Vec<String>,
) -> PyResult<()> {
    let cost = coord_cost(&points, metric)?;
    let inst = Instance {
        name,
        comments,
        kind: ProblemKind::Tsp,
        dimension: cost.len(),
        weights: Weights::Coords(cost),
        display: None,
        source: path.display().to_string(),
        edge_weight_type: metric.to_string(),
        edge_weight_format: None,
        fixed_edges: Vec::new(),
    };
    Ok(write_instance_file(&path, &inst)?)
}

/// Writes a square cost matrix as a TSP file (symmetric) or an ATSP file.
#[pyfunction]
fn write_matrix(
    path: PathBuf,
    matrix: PyReadonlyArray2<'_, i64>,
    name: String,
    comments: Vec<String>,
) -> PyResult<()> {
    let cost = matrix_cost(&matrix)?;
    let kind = if cost.is_symmetric() {
        ProblemKind::Tsp
    } else {
        ProblemKind::Atsp
    };
    let inst = Instance {
        name,
        comments,
        kind,
        dimension: cost.len(),
        weights: Weights::Matrix(cost),
        display: None,
        source: path.display().to_string(),
        edge_weight_type: "EXPLICIT".into(),
        edge_weight_format: Some("FULL_MATRIX".into()),
        fixed_edges: Vec::new(),
    };
    Ok(write_instance_file(&path, &inst)?)
}

/// A TOUR file: name, comments, dimension and the 0-based order.
#[pyfunction]
fn read_tour<'py>(py: Python<'py>, path: PathBuf) -> PyResult<Bound<'py, PyDict>> {
    let bytes = read_file_bytes(&path)?;
    let text = String::from_utf8_lossy(&bytes);
    let t = tsplib::parse_tour(&text, &path.display().to_string()).map_err(input)?;
    let d = PyDict::new(py);
    d.set_item("name", &t.name)?;
    d.set_item("comments", &t.comments)?;
    d.set_item("dimension", t.dimension)?;
    let order: Vec<i64> = t.nodes.iter().map(|&v| v as i64).collect();
    d.set_item("order", PyArray1::from_vec(py, order))?;
    Ok(d)
}

/// Writes a 0-based order as a TOUR file (1-based ids in the file).
#[pyfunction]
fn write_tour(path: PathBuf, order: Vec<i64>, name: String, comment: String) -> PyResult<()> {
    let mut nodes = Vec::with_capacity(order.len());
    let mut seen = vec![false; order.len()];
    for (k, &v) in order.iter().enumerate() {
        let ok = usize::try_from(v).ok().filter(|&u| u < order.len());
        let Some(u) = ok else {
            return Err(Fail::Input(format!(
                "order[{k}] = {v} is not a node index in 0..{}",
                order.len()
            ))
            .into());
        };
        if seen[u] {
            return Err(Fail::Input(format!("order[{k}]: node {v} appears twice")).into());
        }
        seen[u] = true;
        nodes.push(u);
    }
    let mut bytes = Vec::new();
    tsplib::write_tour(&name, &comment, &nodes, &mut bytes)
        .map_err(|e| Fail::Input(e.to_string()))?;
    Ok(write_file_bytes(&path, &bytes)?)
}

fn schedule_columns<'py>(
    py: Python<'py>,
    profile: &Profile,
    targets: &[Target],
    s: &Schedule,
) -> PyResult<Bound<'py, PyDict>> {
    // The columns of plan.csv, typed: numbers as numbers, the rest as text.
    let rows = wend_sky::output::plan_rows(profile, targets, s);
    let d = PyDict::new(py);
    let text = ["target", "instrument", "start_utc", "end_utc", "idle"];
    let ints = ["seq", "dumps_before"];
    for (k, name) in wend_sky::output::PLAN_COLUMNS.iter().enumerate() {
        let cells = rows.iter().map(|r| r[k].as_str());
        if text.contains(name) {
            d.set_item(*name, cells.map(str::to_string).collect::<Vec<_>>())?;
        } else if ints.contains(name) {
            d.set_item(
                *name,
                cells
                    .map(|c| c.parse::<i64>().unwrap_or(0))
                    .collect::<Vec<_>>(),
            )?;
        } else {
            d.set_item(
                *name,
                cells
                    .map(|c| c.parse::<f64>().unwrap_or(f64::NAN))
                    .collect::<Vec<_>>(),
            )?;
        }
    }
    // Unrounded values beside the rounded columns.
    let obs = &s.observations;
    d.set_item(
        "momentum_after_nms",
        obs.iter().map(|o| o.momentum_nms).collect::<Vec<_>>(),
    )?;
    d.set_item(
        "wait_before_s",
        obs.iter().map(|o| o.wait_s).collect::<Vec<_>>(),
    )?;
    d.set_item(
        "busy_before_s",
        obs.iter().map(|o| o.busy_s).collect::<Vec<_>>(),
    )?;
    Ok(d)
}

fn unscheduled_columns<'py>(
    py: Python<'py>,
    targets: &[Target],
    s: &Schedule,
) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    let u = &s.unscheduled;
    d.set_item(
        "target",
        u.iter()
            .map(|x| targets[x.target].id.clone())
            .collect::<Vec<_>>(),
    )?;
    d.set_item(
        "priority",
        u.iter()
            .map(|x| i64::from(targets[x.target].priority))
            .collect::<Vec<_>>(),
    )?;
    d.set_item(
        "reason",
        u.iter().map(|x| x.reason.code()).collect::<Vec<_>>(),
    )?;
    d.set_item(
        "explanation",
        u.iter().map(|x| x.reason.to_string()).collect::<Vec<_>>(),
    )?;
    d.set_item(
        "min_elongation_deg",
        u.iter().map(|x| x.min_elongation_deg).collect::<Vec<_>>(),
    )?;
    d.set_item(
        "max_elongation_deg",
        u.iter().map(|x| x.max_elongation_deg).collect::<Vec<_>>(),
    )?;
    Ok(d)
}

fn front_dict<'py>(
    py: Python<'py>,
    profile: &Profile,
    targets: &[Target],
    front: &Front,
    start: wend_sky::Epoch,
) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    let rows = PyDict::new(py);
    let lines = wend_sky::output::front_lines(front, start);
    let col = |f: &dyn Fn(&wend_sky::output::FrontLine) -> f64| -> Vec<f64> {
        lines.iter().map(f).collect()
    };
    let count = |f: &dyn Fn(&wend_sky::output::FrontLine) -> usize| -> Vec<usize> {
        lines.iter().map(f).collect()
    };
    rows.set_item("plan", count(&|r| r.plan))?;
    rows.set_item("elapsed_s", col(&|r| r.elapsed_s))?;
    rows.set_item(
        "end_utc",
        lines.iter().map(|r| r.end_utc.clone()).collect::<Vec<_>>(),
    )?;
    rows.set_item("busy_overhead_s", col(&|r| r.busy_overhead_s))?;
    rows.set_item("wait_s", col(&|r| r.wait_s))?;
    rows.set_item("propellant_kg", col(&|r| r.propellant_kg))?;
    rows.set_item("dumps", count(&|r| r.dumps))?;
    rows.set_item("scheduled", count(&|r| r.scheduled))?;
    d.set_item("rows", rows)?;
    let plans = PyList::empty(py);
    for x in &front.plans {
        plans.append(schedule_columns(py, profile, targets, &x.schedule)?)?;
    }
    d.set_item("plans", plans)?;
    d.set_item("knee", front.knee.map(|k| k + 1))?;
    d.set_item(
        "hypervolume_h_g",
        wend_sky::output::hour_grams(front.hypervolume),
    )?;
    let reference = PyDict::new(py);
    reference.set_item("elapsed_h", front.reference.0 / 3600.0)?;
    reference.set_item("propellant_g", front.reference.1 * 1000.0)?;
    d.set_item("hypervolume_reference", reference)?;
    Ok(d)
}

/// Plans an observing sequence, as `wend sky plan` does (planning proposals to be confirmed by
/// the operations team's validated tools).
#[pyfunction]
#[pyo3(signature = (targets_csv, source, profile_path, start, horizon_days, time_limit, seed, threads, front, links_csv=None))]
#[allow(clippy::too_many_arguments)]
fn plan_sky<'py>(
    py: Python<'py>,
    targets_csv: Option<String>,
    source: String,
    profile_path: Option<PathBuf>,
    start: Option<String>,
    horizon_days: f64,
    time_limit: Option<f64>,
    seed: u64,
    threads: Option<usize>,
    front: bool,
    links_csv: Option<String>,
) -> PyResult<Bound<'py, PyDict>> {
    let profile: Profile = match &profile_path {
        Some(p) => {
            let bytes = read_file_bytes(p)?;
            let text = String::from_utf8(bytes)
                .map_err(|_| Fail::Input(format!("{}: the file is not UTF-8 text", p.display())))?;
            parse_profile(&text, &p.display().to_string()).map_err(input)?
        }
        None => demo_profile(),
    };
    let (targets, start_text) = match &targets_csv {
        Some(text) => {
            let t = parse_targets(text, &source, &profile).map_err(input)?;
            let s = start.clone().ok_or_else(|| {
                Fail::Input(format!(
                    "give the plan start (ISO 8601 UTC, e.g. {DEMO_START_UTC})"
                ))
            })?;
            (t, s)
        }
        None => (
            demo_targets(&profile),
            start.clone().unwrap_or_else(|| DEMO_START_UTC.into()),
        ),
    };
    let links = match (&links_csv, &targets_csv) {
        (Some(text), _) => wend_sky::links::parse_links(text, "links", &targets).map_err(input)?,
        (None, None) => demo_links(&targets),
        (None, Some(_)) => Vec::new(),
    };
    let epoch = parse_utc(&start_text).map_err(|e| Fail::Input(format!("start: {e}")))?;
    if !(horizon_days.is_finite() && horizon_days > 0.0 && horizon_days <= 3660.0) {
        return Err(Fail::Input(format!(
            "horizon_days must be in (0, 3660], got {horizon_days}"
        ))
        .into());
    }
    let limit = match time_limit {
        None => None,
        Some(s) if s.is_finite() && s > 0.0 && s < 1e9 => Some(Duration::from_secs_f64(s)),
        Some(s) => {
            return Err(Fail::Input(format!(
                "time_limit must be a positive number of seconds, got {s}"
            ))
            .into())
        }
    };
    if threads == Some(0) {
        return Err(Fail::Input("threads must be at least 1".into()).into());
    }
    let stop = StopHandle::new();
    let mut options = PlanOptions::new(epoch);
    options.horizon_days = horizon_days;
    options.time_limit = limit;
    options.seed = seed;
    options.threads = threads;
    options.stop = stop.clone();
    let (made, found): (Plan, Option<Front>) = {
        let profile = &profile;
        let targets = &targets;
        let links = &links;
        run_watched(py, &stop, move || {
            if front {
                let mut fo = FrontOptions::new(options);
                if let Some(t) = limit {
                    fo.time_limit = t;
                }
                let quiet = |_: FrontProgress| {};
                search_front(profile, targets, links, &fo, &quiet)
                    .map(|f| (f.single.clone(), Some(f)))
                    .map_err(|e| e.to_string())
            } else {
                plan(profile, targets, links, &options)
                    .map(|p| (p, None))
                    .map_err(|e| e.to_string())
            }
        })?
        .map_err(Fail::Input)?
    };
    let mut summary = plan_json(&profile, &targets, &made, epoch, horizon_days);
    if let (Some(f), Some(obj)) = (&found, summary.as_object_mut()) {
        obj.extend(wend_sky::output::front_json(f, epoch));
    }
    let d = PyDict::new(py);
    d.set_item("caution", CAUTION)?;
    d.set_item("summary_json", summary.to_string())?;
    d.set_item(
        "plan",
        schedule_columns(py, &profile, &targets, &made.schedule)?,
    )?;
    d.set_item(
        "unscheduled",
        unscheduled_columns(py, &targets, &made.schedule)?,
    )?;
    match &found {
        Some(f) => d.set_item("front", front_dict(py, &profile, &targets, f, epoch)?)?,
        None => d.set_item("front", py.None())?,
    }
    d.set_item("cancelled", stop.is_stopped())?;
    Ok(d)
}

/// The names of the methods and a line on each.
#[pyfunction]
fn methods() -> Vec<(String, String)> {
    Method::ALL
        .iter()
        .map(|m| (m.name().to_string(), m.describe().to_string()))
        .collect()
}

/// The exact methods this build of the module can run, by their names: `dynamic-programme`,
/// `branch-and-bound`, and `branch-and-cut` when built with the feature `cuts`.
#[pyfunction]
fn exact_methods() -> Vec<&'static str> {
    ExactMethod::ALL
        .into_iter()
        .filter(|m| *m != ExactMethod::BranchAndCut || prover().is_some())
        .map(ExactMethod::name)
        .collect()
}

/// The wend core as a Python extension module; use it through the `wend` package.
#[pymodule]
#[pyo3(name = "_native")]
fn native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(solve_points, m)?)?;
    m.add_function(wrap_pyfunction!(solve_matrix, m)?)?;
    m.add_function(wrap_pyfunction!(solve_file, m)?)?;
    m.add_function(wrap_pyfunction!(read_tsplib, m)?)?;
    m.add_function(wrap_pyfunction!(write_points, m)?)?;
    m.add_function(wrap_pyfunction!(write_matrix, m)?)?;
    m.add_function(wrap_pyfunction!(read_tour, m)?)?;
    m.add_function(wrap_pyfunction!(write_tour, m)?)?;
    m.add_function(wrap_pyfunction!(plan_sky, m)?)?;
    m.add_function(wrap_pyfunction!(methods, m)?)?;
    m.add_function(wrap_pyfunction!(exact_methods, m)?)?;
    m.add_function(wrap_pyfunction!(constrained::solve_points_constrained, m)?)?;
    m.add_function(wrap_pyfunction!(constrained::solve_matrix_constrained, m)?)?;
    m.add_function(wrap_pyfunction!(constrained::solve_file_constrained, m)?)?;
    m.add("CAUTION", CAUTION)?;
    m.add("VERSION", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}
