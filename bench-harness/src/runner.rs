//! Benchmark sweeps: every (instance, method, seed) run, resumable and splittable into shards.
//!
//! The run list is a pure function of the plan, sorted by (instance, method, seed), so shard
//! `K/N` (runs whose index is `K-1` modulo `N`) names the same runs on every machine. Each shard
//! appends to its own records file, and the report merges every records file of a folder
//! ([`crate::shards`]).

use crate::record::{mend_ending, read_runs_file, Ending, RunKey, RunRecord};
use crate::shards::{
    claim_plan, read_folder, read_plan, records_file, FolderPlan, PlanClaim, PLAN_FILE,
};
use sysinfo::{CpuRefreshKind, MemoryRefreshKind, RefreshKind, System};
use wend_tsplib::{read_problem, write_tour, Problem, TsplibError};

use std::collections::{BTreeMap, BTreeSet, HashSet};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;
use wend::constraints::solve_sequence;
use wend::{solve_with, CandidateSource, Ends, Hooks, Method, Settings, StopHandle};

/// A method with optional candidate-list settings and parameters: `lk`, `lk:alpha`,
/// `lk:nearest:5`, `mmas+local-search=2opt+evaporation=0.1`. Runs of different variants of one
/// method are kept apart in records and reports by their label.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MethodSpec {
    /// The method.
    pub method: Method,
    /// Where neighbour lists come from (default: the solver's).
    pub neighbour_lists: Option<CandidateSource>,
    /// How many neighbours each list holds (default: the solver's).
    pub neighbour_count: Option<usize>,
    /// Method parameters as `(key, value)`, set in order ([`Settings::set`]).
    pub params: Vec<(String, String)>,
}

impl From<Method> for MethodSpec {
    fn from(method: Method) -> Self {
        MethodSpec {
            method,
            neighbour_lists: None,
            neighbour_count: None,
            params: Vec::new(),
        }
    }
}

impl MethodSpec {
    /// Reads `METHOD[:SOURCE[:WIDTH]][+KEY=VALUE...]`, with a message naming the choices when
    /// it is wrong.
    pub fn parse(text: &str) -> Result<MethodSpec, String> {
        let mut pieces = text.split('+');
        let head = pieces.next().unwrap_or_default();
        let mut params = Vec::new();
        for piece in pieces {
            let (k, v) = piece.split_once('=').ok_or_else(|| {
                format!("{piece:?} in {text:?} is not KEY=VALUE; write METHOD+KEY=VALUE")
            })?;
            params.push((k.trim().to_string(), v.trim().to_string()));
        }
        let mut parts = head.split(':');
        let name = parts.next().unwrap_or_default();
        let method = Method::from_name(name).ok_or_else(|| {
            let names: Vec<&str> = Method::ALL.iter().map(|m| m.name()).collect();
            format!(
                "unknown method {name:?} in {text:?}; choose from: {}",
                names.join(", ")
            )
        })?;
        let neighbour_lists = match parts.next() {
            None => None,
            Some(src) => Some(CandidateSource::from_name(src).ok_or_else(|| {
                let names: Vec<&str> = CandidateSource::ALL.iter().map(|s| s.name()).collect();
                format!(
                    "unknown source of neighbour lists {src:?} in {text:?}; choose from: {}",
                    names.join(", ")
                )
            })?),
        };
        let neighbour_count = match parts.next() {
            None => None,
            Some(k) => match k.parse::<usize>() {
                Ok(k) if k >= 1 => Some(k),
                _ => {
                    return Err(format!(
                        "neighbour count {k:?} in {text:?} must be a whole number of at least 1"
                    ))
                }
            },
        };
        if parts.next().is_some() {
            return Err(format!(
                "{text:?} has too many parts; write METHOD, METHOD:SOURCE or METHOD:SOURCE:WIDTH"
            ));
        }
        let spec = MethodSpec {
            method,
            neighbour_lists,
            neighbour_count,
            params,
        };
        // Checked now, so that a bad key stops the sweep before its first run.
        spec.settings().map_err(|e| format!("{text:?}: {e}"))?;
        Ok(spec)
    }

    /// The settings of this variant: its method, neighbour lists and parameters (the
    /// defaults otherwise).
    pub fn settings(&self) -> Result<Settings, wend::SolveError> {
        let mut settings = Settings {
            method: self.method,
            ..Settings::default()
        };
        if let Some(c) = self.neighbour_lists {
            settings.neighbour_lists = c;
        }
        if let Some(k) = self.neighbour_count {
            settings.neighbour_count = k;
        }
        for (k, v) in &self.params {
            settings.set(k, v)?;
        }
        Ok(settings)
    }

    /// The canonical text of the variant, as records and reports name it.
    pub fn label(&self) -> String {
        let mut s = self.method.name().to_string();
        if let Some(c) = self.neighbour_lists {
            s.push(':');
            s.push_str(c.name());
        }
        if let Some(k) = self.neighbour_count {
            if self.neighbour_lists.is_none() {
                s.push(':');
                s.push_str(CandidateSource::default().name());
            }
            s.push_str(&format!(":{k}"));
        }
        for (k, v) in &self.params {
            s.push_str(&format!("+{k}={v}"));
        }
        s
    }
}

/// What each run is asked for: a closed tour or a kind of path, with fixed ends taken from the
/// file's first and last nodes so that every run of a sweep asks the same.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum EndsChoice {
    /// A closed tour (the default).
    #[default]
    Closed,
    /// A path with free ends.
    Open,
    /// A path from the file's first node, the other end free.
    Start,
    /// A path to the file's first node, the other end free.
    End,
    /// A path from the file's first node to its last.
    StartEnd,
}

impl EndsChoice {
    /// Every choice, in the order help texts list them.
    pub const ALL: [EndsChoice; 5] = [
        EndsChoice::Closed,
        EndsChoice::Open,
        EndsChoice::Start,
        EndsChoice::End,
        EndsChoice::StartEnd,
    ];

    /// The name on the command line and in run records (as `wend solve --json` names ends).
    pub fn name(self) -> &'static str {
        match self {
            EndsChoice::Closed => "closed",
            EndsChoice::Open => "open",
            EndsChoice::Start => "start",
            EndsChoice::End => "end",
            EndsChoice::StartEnd => "start-end",
        }
    }

    /// The choice with this name, or a message naming the choices.
    pub fn parse(name: &str) -> Result<EndsChoice, String> {
        EndsChoice::ALL
            .into_iter()
            .find(|e| e.name() == name)
            .ok_or_else(|| {
                let names: Vec<&str> = EndsChoice::ALL.iter().map(|e| e.name()).collect();
                format!("unknown ends {name:?}; choose from: {}", names.join(", "))
            })
    }

    /// The ends to ask the solver for on `n` nodes.
    pub fn ends(self, n: usize) -> Ends {
        match self {
            EndsChoice::Closed => Ends::Closed,
            EndsChoice::Open => Ends::Open,
            EndsChoice::Start => Ends::Start(0),
            EndsChoice::End => Ends::End(0),
            EndsChoice::StartEnd => Ends::StartEnd(0, n.saturating_sub(1)),
        }
    }
}

/// What to run.
#[derive(Clone, Debug)]
pub struct SweepPlan {
    /// Instance files.
    pub instances: Vec<PathBuf>,
    /// Methods and their variants.
    pub methods: Vec<MethodSpec>,
    /// Closed tours, paths, or both: every instance and method runs with each.
    pub ends: Vec<EndsChoice>,
    /// Seeds.
    pub seeds: Vec<u64>,
    /// Time limit of each run, in seconds.
    pub time_limit: f64,
    /// Runs inside each sweep run (the solver's `runs`); with a count, runs are repeatable to
    /// the bit.
    pub runs: Option<usize>,
    /// Iterations of each run of an iterative method; with a budget (and a run count), runs
    /// are repeatable to the bit.
    pub iterations: Option<u64>,
    /// Threads inside each run.
    pub threads_per_run: usize,
    /// Runs at the same time.
    pub jobs: usize,
    /// `(k, n)`: run only the k-th (1-based) of n slices.
    pub shard: Option<(usize, usize)>,
    /// Known optimal lengths by instance name, or by `folder/name` ([`known_length`]).
    pub known_lengths: BTreeMap<String, i64>,
    /// Instance files whose problems carry constraints (time windows and the like), as the
    /// caller found on reading them: they run only under the default method and as closed
    /// routes ([`constrained_refusal`]).
    pub constrained: BTreeSet<PathBuf>,
    /// End a run as soon as it reaches the instance's known optimal length (nothing shorter
    /// exists, so the result is the same; the sweep just finishes sooner).
    pub until_known: bool,
    /// Output folder.
    pub out: PathBuf,
    /// Ends the sweep early: the run under way is dropped (not recorded, so a resumed sweep
    /// does it again) and no new run starts.
    pub stop: StopHandle,
}

/// One run to do.
#[derive(Clone, Debug, PartialEq)]
pub struct RunSpec {
    /// Instance file.
    pub file: PathBuf,
    /// Instance name (file stem).
    pub instance: String,
    /// Method and variant.
    pub method: MethodSpec,
    /// Closed tour or kind of path.
    pub ends: EndsChoice,
    /// Seed.
    pub seed: u64,
}

/// Why a sweep could not run.
#[derive(Debug, thiserror::Error)]
pub enum SweepError {
    /// An instance file is bad.
    #[error(transparent)]
    Instance(#[from] TsplibError),
    /// The existing results file is bad.
    #[error(transparent)]
    Record(#[from] crate::record::RecordError),
    /// The folder holds another sweep's plan, or a plan that cannot be read.
    #[error(transparent)]
    Plan(#[from] crate::shards::PlanError),
    /// The output folder could not be written.
    #[error("{path}: {source}")]
    Io {
        /// The file or folder.
        path: String,
        /// The error.
        source: std::io::Error,
    },
    /// A solve failed.
    #[error("{file}: {message}")]
    Solve {
        /// The instance file.
        file: String,
        /// The error.
        message: String,
    },
}

/// What a sweep did.
#[derive(Clone, Debug, Default)]
pub struct SweepOutcome {
    /// Runs in this shard.
    pub planned: usize,
    /// Runs skipped because the folder's records already held them.
    pub skipped: usize,
    /// Runs done now.
    pub ran: usize,
    /// Whether the stop handle ended the sweep before every run was done.
    pub stopped: bool,
    /// The records file this sweep appended to.
    pub records: PathBuf,
    /// How that file ended before this sweep mended it and appended (a torn last line, left by
    /// a writer killed mid-write, is cut off).
    pub mended: Option<Ending>,
    /// Whether this sweep wrote the folder's plan or found it there; None for a sweep that is
    /// not sharded, into a folder without a plan.
    pub plan: Option<PlanClaim>,
}

/// Name of an instance: its file stem.
pub fn instance_name(path: &Path) -> String {
    path.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string())
}

/// The known length of an instance: listed under the name of the file's folder and its stem
/// (`dumas/n20w20.001` for `.../dumas/n20w20.001.txt`, as lists of benchmark sets name them),
/// or else under the instance name alone.
pub fn known_length(known: &BTreeMap<String, i64>, file: &Path, instance: &str) -> Option<i64> {
    let folder = file
        .parent()
        .and_then(Path::file_name)
        .map(|d| d.to_string_lossy());
    folder
        .and_then(|d| known.get(&format!("{d}/{instance}")))
        .or_else(|| known.get(instance))
        .copied()
}

/// Why a problem with constraints is not run under `method` as `ends`, or None when it is: only
/// the default method, plain, runs the constrained search, and only closed routes (the
/// constraints' depot and route say where a sequence starts).
pub fn constrained_refusal(method: &MethodSpec, ends: EndsChoice) -> Option<String> {
    let default = Settings::default().method;
    if *method != MethodSpec::from(default) {
        return Some(format!(
            "method {} does not run on problems with constraints (time windows and the like); \
             only the default method {} does, as the constrained search",
            method.label(),
            default.name()
        ));
    }
    (ends != EndsChoice::Closed).then(|| {
        format!(
            "{} paths are not run on problems with constraints: the constraints' depot and \
             route say where a sequence starts",
            ends.name()
        )
    })
}

/// The runs of the plan's shard, in a fixed order. Files in [`SweepPlan::constrained`] get
/// only the runs [`constrained_refusal`] lets through.
pub fn plan_runs(plan: &SweepPlan) -> Vec<RunSpec> {
    let mut files: Vec<(String, PathBuf)> = plan
        .instances
        .iter()
        .map(|p| (instance_name(p), p.clone()))
        .collect();
    files.sort();
    files.dedup_by(|a, b| a.0 == b.0);
    let mut runs = Vec::new();
    let closed_only = [EndsChoice::Closed];
    let ends = if plan.ends.is_empty() {
        &closed_only[..]
    } else {
        &plan.ends[..]
    };
    for (instance, file) in &files {
        let constrained = plan.constrained.contains(file);
        for &e in ends {
            for method in &plan.methods {
                if constrained && constrained_refusal(method, e).is_some() {
                    continue;
                }
                for &seed in &plan.seeds {
                    runs.push(RunSpec {
                        file: file.clone(),
                        instance: instance.clone(),
                        method: method.clone(),
                        ends: e,
                        seed,
                    });
                }
            }
        }
    }
    match plan.shard {
        Some((k, n)) => runs
            .into_iter()
            .enumerate()
            .filter(|(i, _)| i % n == k - 1)
            .map(|(_, r)| r)
            .collect(),
        None => runs,
    }
}

/// Cores, CPU model, memory and operating system of this machine, in one line.
pub fn machine_description() -> String {
    let cores = std::thread::available_parallelism()
        .map(|c| c.get())
        .unwrap_or(1);
    let system = System::new_with_specifics(
        RefreshKind::nothing()
            .with_cpu(CpuRefreshKind::nothing())
            .with_memory(MemoryRefreshKind::nothing().with_ram()),
    );
    let cpu = system
        .cpus()
        .first()
        .map(|c| c.brand().trim().to_string())
        .filter(|b| !b.is_empty())
        .unwrap_or_else(|| "unknown CPU".into());
    let mem = match system.total_memory() {
        0 => "unknown memory".into(),
        bytes => format!("{:.0} GiB", bytes as f64 / (1u64 << 30) as f64),
    };
    format!(
        "{cores} cores, {cpu}, {mem}, {} {}",
        std::env::consts::OS,
        std::env::consts::ARCH
    )
}

/// The plan as a sweep folder records it: the whole sweep's, whichever shard runs.
pub fn folder_plan(plan: &SweepPlan) -> FolderPlan {
    let whole = SweepPlan {
        shard: None,
        ..plan.clone()
    };
    let mut named: Vec<(String, String)> = plan
        .instances
        .iter()
        .map(|p| (instance_name(p), p.display().to_string()))
        .collect();
    named.sort();
    named.dedup_by(|a, b| a.0 == b.0);
    let ends = if plan.ends.is_empty() {
        vec![EndsChoice::Closed.name().to_string()]
    } else {
        plan.ends.iter().map(|e| e.name().to_string()).collect()
    };
    FolderPlan {
        instances: named.iter().map(|(n, _)| n.clone()).collect(),
        methods: plan.methods.iter().map(MethodSpec::label).collect(),
        ends,
        seeds: plan.seeds.clone(),
        time_limit: plan.time_limit,
        runs: plan.runs,
        iterations: plan.iterations,
        threads_per_run: plan.threads_per_run,
        until_known: plan.until_known,
        shards: plan.shard.map_or(1, |(_, n)| n),
        planned_runs: plan_runs(&whole).len(),
        version: env!("CARGO_PKG_VERSION").to_string(),
        commit: env!("WEND_GIT_COMMIT").to_string(),
        files: named.into_iter().map(|(_, f)| f).collect(),
    }
}

/// Runs every planned run not yet in the output folder's records (those of every shard),
/// appending each result to this shard's records file as it finishes (`runs.jsonl` when the
/// sweep is not sharded). A sharded sweep writes the folder's plan, or checks it is the same.
/// `progress(done, total)` is called after each run.
pub fn run_sweep(
    plan: &SweepPlan,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<SweepOutcome, SweepError> {
    let io = |path: &Path| {
        let path = path.display().to_string();
        move |source| SweepError::Io { path, source }
    };
    let tours_dir = plan.out.join("tours");
    std::fs::create_dir_all(&tours_dir).map_err(io(&tours_dir))?;
    let claim = if plan.shard.is_some() || plan.out.join(PLAN_FILE).is_file() {
        let mut ours = folder_plan(plan);
        if plan.shard.is_none() {
            // The whole run list, into a sharded sweep's folder: it finishes what the shards
            // left, whatever their count.
            if let Some(found) = read_plan(&plan.out)? {
                ours.shards = found.shards;
            }
        }
        Some(claim_plan(&plan.out, &ours)?)
    } else {
        None
    };
    let runs_path = plan.out.join(records_file(plan.shard));
    // This shard's own file is mended before anything is appended; a torn line in another
    // shard's file (a shard still writing, or killed) is only left out.
    let ending = read_runs_file(&runs_path)?.ending;
    if ending != Ending::Clean {
        mend_ending(&runs_path, ending).map_err(io(&runs_path))?;
    }
    let done: HashSet<RunKey> = read_folder(&plan.out)?.0.iter().map(|r| r.key()).collect();
    let specs = plan_runs(plan);
    let key = |s: &RunSpec| RunKey {
        instance: s.instance.clone(),
        method: s.method.label(),
        seed: s.seed,
        time_limit_ms: (plan.time_limit * 1000.0).round() as u64,
        ends: s.ends.name().to_string(),
    };
    let todo: Vec<&RunSpec> = specs.iter().filter(|s| !done.contains(&key(s))).collect();
    let mut outcome = SweepOutcome {
        planned: specs.len(),
        skipped: specs.len() - todo.len(),
        ran: 0,
        stopped: false,
        records: runs_path.clone(),
        mended: (ending != Ending::Clean).then_some(ending),
        plan: claim,
    };
    let file = std::fs::OpenOptions::new()
        .create(true)
        .append(true)
        .open(&runs_path)
        .map_err(io(&runs_path))?;
    let sink = Mutex::new(file);
    let machine = machine_description();
    let count = Mutex::new(0usize);
    // Instances are read once each, in order; the runs of one instance go `jobs` at a time on
    // plain threads. (Not on a thread pool: a pool's worker that waits for a run's own worker
    // threads would pick up the next run meanwhile, and runs would overlap.)
    let mut by_instance: BTreeMap<&str, Vec<&RunSpec>> = BTreeMap::new();
    for s in &todo {
        by_instance.entry(s.instance.as_str()).or_default().push(s);
    }
    for runs in by_instance.values() {
        let problem = read_problem(&runs[0].file)?;
        let next = AtomicUsize::new(0);
        let failed: Mutex<Option<SweepError>> = Mutex::new(None);
        let worker = || loop {
            let i = next.fetch_add(1, Ordering::Relaxed);
            if i >= runs.len()
                || plan.stop.is_stopped()
                || failed.lock().map_or(true, |f| f.is_some())
            {
                break;
            }
            let outcome = run_one(plan, &problem, runs[i], &machine).and_then(|rec| {
                let Some(rec) = rec else {
                    return Ok(false);
                };
                let mut line = serde_json::to_string(&rec).map_err(|e| SweepError::Io {
                    path: runs_path.display().to_string(),
                    source: std::io::Error::other(e),
                })?;
                // One write per record, so that a writer killed mid-way leaves at most its
                // last line torn.
                line.push('\n');
                let mut f = sink.lock().unwrap_or_else(|e| e.into_inner());
                f.write_all(line.as_bytes())
                    .and_then(|_| f.flush())
                    .map_err(io(&runs_path))
                    .map(|()| true)
            });
            match outcome {
                Ok(false) => {}
                Ok(true) => {
                    let mut c = count.lock().unwrap_or_else(|e| e.into_inner());
                    *c += 1;
                    progress(*c, todo.len());
                }
                Err(e) => {
                    let mut f = failed.lock().unwrap_or_else(|e| e.into_inner());
                    f.get_or_insert(e);
                }
            }
        };
        std::thread::scope(|scope| {
            for _ in 0..plan.jobs.clamp(1, runs.len().max(1)) {
                scope.spawn(worker);
            }
        });
        if let Some(e) = failed.into_inner().unwrap_or_else(|e| e.into_inner()) {
            return Err(e);
        }
        if plan.stop.is_stopped() {
            break;
        }
    }
    outcome.ran = count.into_inner().unwrap_or_else(|e| e.into_inner());
    outcome.stopped = outcome.skipped + outcome.ran < outcome.planned;
    Ok(outcome)
}

/// The `COMMENT` of a tour file: `wend VERSION HEAD length LENGTH TAIL`, and for a path (any
/// kind: free or fixed ends) ` open path FIRST to LAST` in the file's node numbers (`head` names the method and seed,
/// `tail` is what follows the length, e.g. ` proven optimal`).
pub fn tour_comment(head: &str, length: i64, tail: &str, ends: Ends, order: &[usize]) -> String {
    let mut comment = format!(
        "wend {} {head} length {length}{tail}",
        env!("CARGO_PKG_VERSION")
    );
    if let (true, Some(first), Some(last)) = (ends.is_path(), order.first(), order.last()) {
        comment.push_str(&format!(" open path {} to {}", first + 1, last + 1));
    }
    comment
}

/// What a run found, whichever solver ran it.
struct Found {
    /// Length of the tour; under constraints, the travel cost of a feasible order (None when
    /// the order found is not feasible).
    length: Option<i64>,
    feasible: bool,
    /// The constrained search's objective; None without constraints.
    objective: Option<i64>,
    order: Vec<usize>,
    ends: Ends,
    seconds: f64,
    lower_bound: Option<i64>,
    stop_reason: wend::StopReason,
    runs: usize,
    iterations: u64,
    trace: Vec<wend::Improvement>,
}

/// One run, or `None` when the stop handle cut it short (such a run is not recorded). A problem
/// with constraints runs the constrained search; its order is recorded with a length only when
/// it is feasible.
fn run_one(
    plan: &SweepPlan,
    problem: &Problem,
    spec: &RunSpec,
    machine: &str,
) -> Result<Option<RunRecord>, SweepError> {
    let inst = &problem.instance;
    let failed = |message: String| SweepError::Solve {
        file: spec.file.display().to_string(),
        message,
    };
    // Known optima are of closed tours; a path has none.
    let closed = spec.ends == EndsChoice::Closed;
    let optimum = known_length(&plan.known_lengths, &spec.file, &spec.instance).filter(|_| closed);
    let settings = Settings {
        seed: spec.seed,
        threads: Some(plan.threads_per_run),
        time_limit: Some(plan.time_limit),
        ends: spec.ends.ends(inst.dimension),
        fixed_edges: inst.fixed_edges.clone(),
        runs: plan.runs,
        iterations: plan.iterations,
        target: optimum.filter(|_| plan.until_known),
        ..spec.method.settings().map_err(|e| failed(e.to_string()))?
    };
    let hooks = Hooks {
        stop: plan.stop.clone(),
        prover: Some(std::sync::Arc::new(wend_cuts::BranchCutProver::default())),
        ..Hooks::default()
    };
    let found = if !problem.constraints.has_schedule_rules() {
        let out = solve_with(inst.cost(), &settings, hooks).map_err(|e| failed(e.to_string()))?;
        let search =
            (out.search.as_ref()).ok_or_else(|| failed("the search reported nothing".into()))?;
        Found {
            length: Some(out.length),
            feasible: true,
            objective: None,
            order: out.tour.order().to_vec(),
            ends: out.ends,
            seconds: out.seconds,
            lower_bound: None,
            stop_reason: search.stop_reason,
            runs: search.runs,
            iterations: search.iterations,
            trace: search.trace.clone(),
        }
    } else {
        let out = solve_sequence(inst.cost(), &problem.constraints, &settings, None, hooks)
            .map_err(|e| failed(e.to_string()))?;
        Found {
            length: out.feasible.then_some(out.length),
            feasible: out.feasible,
            objective: Some(out.evaluation.objective),
            order: out.order,
            ends: Ends::Closed,
            seconds: out.seconds,
            lower_bound: out.lower_bound,
            stop_reason: out.stop_reason,
            runs: out.runs,
            iterations: out.iterations,
            trace: out.trace,
        }
    };
    if plan.stop.is_stopped() {
        return Ok(None);
    }
    // An infeasible order is no solution: no tour file for it.
    let tour_file = match found.length {
        Some(length) => Some(write_run_tour(plan, inst, spec, length, &found)?),
        None => None,
    };
    Ok(Some(RunRecord {
        instance: spec.instance.clone(),
        file: spec.file.display().to_string(),
        problem_type: inst.kind.keyword().to_string(),
        ends: spec.ends.name().to_string(),
        nodes: inst.dimension,
        method: spec.method.label(),
        seed: spec.seed,
        time_limit: plan.time_limit,
        threads: plan.threads_per_run,
        length: found.length,
        feasible: found.feasible,
        objective: found.objective,
        optimum,
        gap_percent: optimum
            .zip(found.length)
            .filter(|&(o, _)| o != 0)
            .map(|(o, l)| 100.0 * (l - o) as f64 / o as f64),
        seconds: found.seconds,
        time_to_best: found.trace.last().map_or(found.seconds, |t| t.seconds),
        lower_bound: found.lower_bound,
        stop_reason: serde_json::to_value(found.stop_reason)
            .ok()
            .and_then(|v| v.as_str().map(str::to_string))
            .unwrap_or_default(),
        runs: found.runs,
        iterations: found.iterations,
        trace: found.trace.iter().map(|t| (t.seconds, t.length)).collect(),
        tour_file,
        version: env!("CARGO_PKG_VERSION").to_string(),
        commit: env!("WEND_GIT_COMMIT").to_string(),
        machine: machine.to_string(),
    }))
}

/// Writes the run's tour into the output's `tours` folder; gives its path relative to the
/// output folder.
fn write_run_tour(
    plan: &SweepPlan,
    inst: &wend_tsplib::Instance,
    spec: &RunSpec,
    length: i64,
    found: &Found,
) -> Result<String, SweepError> {
    let closed = spec.ends == EndsChoice::Closed;
    let tour_name = format!(
        "{}{}.{}.s{}.t{}.tour",
        spec.instance,
        if closed {
            String::new()
        } else {
            format!(".{}-path", spec.ends.name())
        },
        spec.method.label().replace(':', "-"),
        spec.seed,
        plan.time_limit
    );
    let tour_path = plan.out.join("tours").join(&tour_name);
    let comment = tour_comment(
        &format!("{} seed {}", spec.method.label(), spec.seed),
        length,
        "",
        found.ends,
        &found.order,
    );
    std::fs::File::create(&tour_path)
        .and_then(|f| {
            let mut w = std::io::BufWriter::new(f);
            write_tour(&inst.name, &comment, &found.order, &mut w)?;
            w.flush()
        })
        .map_err(|source| SweepError::Io {
            path: tour_path.display().to_string(),
            source,
        })?;
    Ok(format!("tours/{tour_name}"))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plan(shard: Option<(usize, usize)>) -> SweepPlan {
        SweepPlan {
            instances: vec!["b/x.tsp".into(), "a/y.tsp".into(), "c/x.tsp".into()],
            methods: vec![Method::TwoOpt.into(), Method::Greedy.into()],
            ends: Vec::new(),
            seeds: vec![0, 1, 2],
            time_limit: 1.0,
            runs: None,
            iterations: None,
            threads_per_run: 1,
            jobs: 1,
            shard,
            known_lengths: BTreeMap::new(),
            constrained: BTreeSet::new(),
            until_known: false,
            stop: StopHandle::new(),
            out: "out".into(),
        }
    }

    #[test]
    fn tour_comments_name_version_method_seed_length_and_path() {
        let v = env!("CARGO_PKG_VERSION");
        assert_eq!(
            tour_comment("lk seed 1", 7542, "", Ends::Closed, &[0, 1, 2]),
            format!("wend {v} lk seed 1 length 7542")
        );
        assert_eq!(
            tour_comment("lk seed 1", 30, "", Ends::Open, &[2, 0, 6]),
            format!("wend {v} lk seed 1 length 30 open path 3 to 7")
        );
        assert_eq!(
            tour_comment("lk seed 1", 30, "", Ends::StartEnd(2, 6), &[2, 0, 6]),
            format!("wend {v} lk seed 1 length 30 open path 3 to 7")
        );
        // A closed tour from a fixed node is no path.
        assert_eq!(
            tour_comment("lk seed 1", 30, "", Ends::StartEnd(2, 2), &[2, 0, 6]),
            format!("wend {v} lk seed 1 length 30")
        );
        assert_eq!(
            tour_comment(
                "exact dynamic-programme",
                39,
                " proven optimal",
                Ends::Closed,
                &[0, 1]
            ),
            format!("wend {v} exact dynamic-programme length 39 proven optimal")
        );
    }

    #[test]
    fn known_lengths_match_folder_and_name_first() {
        let known: BTreeMap<String, i64> = [
            ("dumas/n20w20.001".to_string(), 378),
            ("n20w20.001".to_string(), 1),
            ("kroA100".to_string(), 21282),
        ]
        .into();
        let f = |p: &str, name: &str| known_length(&known, Path::new(p), name);
        assert_eq!(f("sets/dumas/n20w20.001.txt", "n20w20.001"), Some(378));
        // Another folder falls back to the plain name.
        assert_eq!(f("sets/gendreau/n20w20.001.txt", "n20w20.001"), Some(1));
        assert_eq!(f("instances/kroA100.tsp", "kroA100"), Some(21282));
        assert_eq!(f("kroA100.tsp", "kroA100"), Some(21282));
        assert_eq!(f("instances/eil51.tsp", "eil51"), None);
    }

    #[test]
    fn constrained_files_run_only_the_plain_default_method_as_tours() {
        let mut p = plan(None);
        p.methods.push(Method::Lk.into());
        p.methods.push(MethodSpec::parse("lk:nearest:5").unwrap());
        p.ends = vec![EndsChoice::Closed, EndsChoice::Open];
        p.constrained.insert("a/y.tsp".into());
        let runs = plan_runs(&p);
        let y: Vec<(String, EndsChoice)> = runs
            .iter()
            .filter(|r| r.instance == "y")
            .map(|r| (r.method.label(), r.ends))
            .collect();
        assert_eq!(y, vec![("lk".to_string(), EndsChoice::Closed); 3]);
        // The other files keep every method and both ends: 4 methods, 2 ends, 3 seeds.
        assert_eq!(runs.iter().filter(|r| r.instance == "x").count(), 4 * 2 * 3);
        assert!(
            constrained_refusal(&Method::TwoOpt.into(), EndsChoice::Closed)
                .is_some_and(|w| w.contains("2opt"))
        );
        assert!(constrained_refusal(&Method::Lk.into(), EndsChoice::Open).is_some());
    }

    #[test]
    fn shards_partition_the_run_list() {
        let all = plan_runs(&plan(None));
        // Two distinct names (x listed twice keeps its first file), 2 methods, 3 seeds.
        assert_eq!(all.len(), 2 * 2 * 3);
        let mut merged: Vec<RunSpec> = (1..=3)
            .flat_map(|k| plan_runs(&plan(Some((k, 3)))))
            .collect();
        assert_eq!(merged.len(), all.len());
        let key = |r: &RunSpec| (r.instance.clone(), r.method.label(), r.seed);
        merged.sort_by_key(key);
        let mut sorted = all.clone();
        sorted.sort_by_key(key);
        assert_eq!(merged, sorted);
    }
}
