//! `wend bench`: seeded sweeps over instances and methods, and reports from their results.

use super::CliError;
use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use serde::Deserialize;
use std::collections::{BTreeMap, BTreeSet, HashMap, HashSet};
use std::path::{Path, PathBuf};
use wend::CandidateSource;
use wend_bench::record::{RunKey, RunRecord};
use wend_bench::runner::{constrained_refusal, run_sweep, SweepPlan};
use wend_bench::runner::{EndsChoice, MethodSpec};
use wend_bench::shards::{read_folder, read_plan, record_files};
use wend_tsplib::{read_instance, read_optima, read_problem, read_tour};

#[derive(Args, Debug)]
pub struct BenchArgs {
    /// A suite file (TOML) naming instances, methods, seeds and limits; options given on the
    /// command line override it.
    #[arg(long, value_name = "FILE")]
    suite: Option<PathBuf>,
    /// Instance files, folders (every .tsp and .atsp inside, and every other file in the
    /// time-window layout) or glob patterns. Problems with time windows run only under the
    /// default method, as closed routes.
    #[arg(long, num_args = 1.., value_name = "PATH")]
    instances: Vec<String>,
    /// Methods to run (see `wend solve --list-methods`), each optionally with the source and
    /// count of its neighbour lists and with parameters: `lk`, `lk:alpha`, `lk:nearest:5`,
    /// `mmas+local-search=2opt` [default: lk]
    #[arg(long, num_args = 1.., value_name = "NAME")]
    methods: Vec<String>,
    /// Where the neighbour lists come from (quadrant, nearest, alpha), for every method that
    /// does not name its own (`lk:nearest`).
    #[arg(long, alias = "candidates", value_name = "SOURCE")]
    neighbour_lists: Option<String>,
    /// How many neighbours each list holds, for every method that does not give its own
    /// (`lk:nearest:5`).
    #[arg(long, alias = "neighbours", value_name = "K")]
    neighbour_count: Option<usize>,
    /// What each run is asked for: closed (tours), open (paths with free ends), start (paths
    /// from the file's first node), end (paths to it), start-end (paths from the first node to
    /// the last). Several give runs of each; paths are reported apart from tours, and their gap
    /// columns stay empty (known optima are of tours) [default: closed]
    #[arg(long, num_args = 1.., value_name = "ENDS")]
    ends: Vec<String>,
    /// Number of seeds per (instance, method): seeds 0, 1, ..., N-1.
    #[arg(long, value_name = "N")]
    seeds: Option<u64>,
    /// Time limit of each run, in seconds.
    #[arg(long, short = 't', value_name = "SECONDS")]
    time_limit: Option<f64>,
    /// Independent runs inside each run of the sweep (as `wend solve --runs`), which makes
    /// them repeatable to the bit (the time limit still caps them).
    #[arg(long, alias = "restarts", value_name = "N")]
    runs: Option<usize>,
    /// Iterations of each run of an iterative method: kicks (lk), generations (acs, mmas),
    /// batches of moves (anneal). With --runs, runs repeat to the bit.
    #[arg(long, alias = "kicks", value_name = "N")]
    iterations: Option<u64>,
    /// Threads inside each run.
    #[arg(long, value_name = "N")]
    threads_per_run: Option<usize>,
    /// Runs at the same time.
    #[arg(long, value_name = "N")]
    jobs: Option<usize>,
    /// Run only the K-th of N fixed slices of the run list (for several machines), appending to
    /// the folder's runs.shard-K-of-N.jsonl. Inside a job array of a batch scheduler the task's
    /// variables give it when this is not given (SLURM_ARRAY_TASK_ID less the lowest task id,
    /// plus 1, of SLURM_ARRAY_TASK_COUNT).
    #[arg(long, value_name = "K/N")]
    shard: Option<String>,
    /// File of known optimal lengths (`name : length` lines; a name may be `folder/name`, the
    /// instance file's folder and stem). Default: `optima.txt` beside each instance.
    #[arg(long, alias = "optima", value_name = "FILE")]
    known_lengths: Option<PathBuf>,
    /// End each run when it reaches the known optimal length (the result is the same, the
    /// sweep finishes sooner; time-to-best figures are unchanged).
    #[arg(long, alias = "stop-at-optimum")]
    until_known: bool,
    /// Only instances with at least this many nodes.
    #[arg(long, value_name = "N")]
    min_nodes: Option<usize>,
    /// Only instances with at most this many nodes.
    #[arg(long, value_name = "N")]
    max_nodes: Option<usize>,
    /// Output folder for the run records (runs.jsonl, or one file per shard), runs.csv,
    /// summary.md and the plots. Shards of one sweep may share it.
    #[arg(long, short = 'o', value_name = "DIR")]
    out: Option<PathBuf>,
    /// Do not sweep: rebuild the report from every records file of these folders (runs.jsonl
    /// and the shards' files, merged), written to --out (default: the first folder).
    #[arg(long, num_args = 1.., value_name = "DIR", conflicts_with_all = ["instances", "methods", "suite", "shard"])]
    report: Vec<PathBuf>,
}

/// Old names of suite keys, `(old, new)`, read for one release with a line on stderr.
const OLD_SUITE_KEYS: [(&str, &str); 6] = [
    ("restarts", "runs"),
    ("kicks", "iterations"),
    ("optima", "known_lengths"),
    ("stop_at_optimum", "until_known"),
    ("candidates", "neighbour_lists"),
    ("neighbours", "neighbour_count"),
];

/// A suite file: the same settings as the command-line options.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct Suite {
    instances: Option<Vec<String>>,
    methods: Option<Vec<String>>,
    #[serde(alias = "candidates")]
    neighbour_lists: Option<String>,
    #[serde(alias = "neighbours")]
    neighbour_count: Option<usize>,
    ends: Option<Vec<String>>,
    seeds: Option<u64>,
    time_limit: Option<f64>,
    #[serde(alias = "restarts")]
    runs: Option<usize>,
    #[serde(alias = "kicks")]
    iterations: Option<u64>,
    threads_per_run: Option<usize>,
    jobs: Option<usize>,
    #[serde(alias = "optima")]
    known_lengths: Option<String>,
    #[serde(alias = "stop_at_optimum")]
    until_known: Option<bool>,
    min_nodes: Option<usize>,
    max_nodes: Option<usize>,
    out: Option<String>,
}

pub fn run(a: BenchArgs) -> Result<(), CliError> {
    if !a.report.is_empty() {
        let out = a.out.clone().unwrap_or_else(|| a.report[0].clone());
        return report(&a.report, &out);
    }
    let (suite, base) = match &a.suite {
        Some(p) => {
            let text = std::fs::read_to_string(p)
                .map_err(|e| CliError::Input(format!("{}: cannot read: {e}", p.display())))?;
            let s: Suite = toml::from_str(&text).map_err(|e| {
                CliError::Input(format!("{}: {}", p.display(), one_line(&e.to_string())))
            })?;
            if let Ok(table) = toml::from_str::<toml::Table>(&text) {
                for (old, new) in OLD_SUITE_KEYS {
                    if table.contains_key(old) {
                        eprintln!(
                            "wend: {}: the key {old} is deprecated; use {new}",
                            p.display()
                        );
                    }
                }
            }
            (s, p.parent().map(Path::to_path_buf).unwrap_or_default())
        }
        None => (Suite::default(), PathBuf::new()),
    };
    let rel = |s: &str| base.join(s);
    let patterns: Vec<(String, PathBuf)> = if !a.instances.is_empty() {
        a.instances
            .iter()
            .map(|s| (s.clone(), PathBuf::from(s)))
            .collect()
    } else {
        suite
            .instances
            .iter()
            .flatten()
            .map(|s| (s.clone(), rel(s)))
            .collect()
    };
    if patterns.is_empty() {
        return Err(CliError::Input(
            "no instances: give --instances PATH... or a --suite file".into(),
        ));
    }
    let mut method_names = if !a.methods.is_empty() {
        a.methods.clone()
    } else {
        suite.methods.clone().unwrap_or_default()
    };
    if method_names.is_empty() {
        // As `wend solve` does without --method.
        method_names.push(wend::Settings::default().method.name().to_string());
    }
    let neighbour_lists = match a
        .neighbour_lists
        .as_ref()
        .or(suite.neighbour_lists.as_ref())
    {
        None => None,
        Some(name) => Some(CandidateSource::from_name(name).ok_or_else(|| {
            let names: Vec<&str> = CandidateSource::ALL.iter().map(|s| s.name()).collect();
            CliError::Input(format!(
                "unknown source of neighbour lists {name:?}; choose one of: {}",
                names.join(", ")
            ))
        })?),
    };
    let neighbour_count = a.neighbour_count.or(suite.neighbour_count);
    if neighbour_count == Some(0) {
        return Err(CliError::Input(
            "--neighbour-count must be at least 1".into(),
        ));
    }
    let methods = method_names
        .iter()
        .map(|n| {
            let mut spec = MethodSpec::parse(n).map_err(CliError::Input)?;
            spec.neighbour_lists = spec.neighbour_lists.or(neighbour_lists);
            spec.neighbour_count = spec.neighbour_count.or(neighbour_count);
            Ok(spec)
        })
        .collect::<Result<Vec<_>, CliError>>()?;
    let ends_names = if !a.ends.is_empty() {
        a.ends.clone()
    } else {
        suite.ends.clone().unwrap_or_default()
    };
    let ends = ends_names
        .iter()
        .map(|n| EndsChoice::parse(n).map_err(CliError::Input))
        .collect::<Result<Vec<_>, _>>()?;
    let seeds = a.seeds.or(suite.seeds).unwrap_or(1);
    if seeds == 0 {
        return Err(CliError::Input("--seeds must be at least 1".into()));
    }
    let time_limit = a.time_limit.or(suite.time_limit).unwrap_or(1.0);
    if !(time_limit.is_finite() && time_limit > 0.0) {
        return Err(CliError::Input(format!(
            "--time-limit must be a positive number of seconds, got {time_limit}"
        )));
    }
    let threads_per_run = a.threads_per_run.or(suite.threads_per_run).unwrap_or(1);
    let jobs = a.jobs.or(suite.jobs).unwrap_or(1);
    if threads_per_run == 0 || jobs == 0 {
        return Err(CliError::Input(
            "--threads-per-run and --jobs must be at least 1".into(),
        ));
    }
    let shard = match a.shard.as_deref() {
        Some(s) => Some(parse_shard(s)?),
        None => {
            let shard = wend_bench::shards::shard_from_array_task(|k| std::env::var(k).ok())
                .map_err(|e| CliError::Input(format!("job array: {e}")))?;
            if let Some((k, n)) = shard {
                eprintln!("shard {k}/{n}, from the job array's task variables");
            }
            shard
        }
    };
    let out = a
        .out
        .clone()
        .or_else(|| suite.out.as_deref().map(rel))
        .ok_or_else(|| CliError::Input("no output folder: give --out DIR".into()))?;

    // (file, whether it was found in a folder without a problem extension: such a file is
    // left out quietly when it is not a time-window problem).
    let mut files = Vec::new();
    for (shown, p) in &patterns {
        files.extend(expand(shown, p)?);
    }
    let (min_nodes, max_nodes) = (
        a.min_nodes.or(suite.min_nodes),
        a.max_nodes.or(suite.max_nodes),
    );
    // Every file is read once up front: a file that cannot be solved (a refused section, a
    // syntax error) is reported and left out, instead of stopping the sweep halfway.
    let mut kept = Vec::new();
    let mut constrained = BTreeSet::new();
    for (f, guessed) in files {
        match read_problem(&f) {
            Ok(problem) => {
                let (inst, c) = (&problem.instance, &problem.constraints);
                // Fixed edges alone go to the tour methods, which keep them.
                let plain = !c.has_schedule_rules();
                if guessed && plain {
                    // A TSPLIB file without a problem extension in a folder: left out as before.
                    continue;
                }
                let n = inst.dimension;
                if let Err(e) = c.check(n) {
                    eprintln!("wend: skipped: {}: {e}", f.display());
                    continue;
                }
                if !(min_nodes.is_none_or(|m| n >= m) && max_nodes.is_none_or(|m| n <= m)) {
                    continue;
                }
                if !plain {
                    constrained_skips(&f, &methods, &ends);
                    constrained.insert(f.clone());
                }
                kept.push(f);
            }
            Err(_) if guessed => {}
            Err(e) => eprintln!("wend: skipped: {e}"),
        }
    }
    let files = kept;
    if files.is_empty() {
        return Err(CliError::Input("no instance files left to run".into()));
    }
    let known_lengths = match a
        .known_lengths
        .clone()
        .or_else(|| suite.known_lengths.as_deref().map(rel))
    {
        Some(p) => read_optima(&p)?,
        None => {
            // Default: optima.txt beside each instance, when there is one.
            let mut all = BTreeMap::new();
            let mut dirs: Vec<PathBuf> = files
                .iter()
                .filter_map(|f| f.parent().map(Path::to_path_buf))
                .collect();
            dirs.sort();
            dirs.dedup();
            for d in dirs {
                let p = d.join("optima.txt");
                if p.is_file() {
                    all.extend(read_optima(&p)?);
                }
            }
            all
        }
    };
    let plan = SweepPlan {
        instances: files,
        methods,
        ends,
        seeds: (0..seeds).collect(),
        time_limit,
        runs: a.runs.or(suite.runs),
        iterations: a.iterations.or(suite.iterations),
        threads_per_run,
        jobs,
        shard,
        known_lengths,
        constrained,
        until_known: a.until_known || suite.until_known.unwrap_or(false),
        out: out.clone(),
        stop: super::interrupt::handle(),
    };
    let bar = ProgressBar::new(0);
    bar.set_style(
        ProgressStyle::with_template("{elapsed:>4} [{bar:30}] {pos}/{len} runs, about {eta} left")
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .progress_chars("=> "),
    );
    eprintln!(
        "sweeping {} instance file(s), {} method(s), {} seed(s) into {}",
        plan.instances.len(),
        plan.methods.len(),
        plan.seeds.len(),
        out.display()
    );
    let outcome = run_sweep(&plan, &|done, total| {
        bar.set_length(total as u64);
        bar.set_position(done as u64);
    })
    .map_err(|e| CliError::Input(e.to_string()))?;
    bar.finish_and_clear();
    if let Some(wend_bench::record::Ending::Torn { line, .. }) = outcome.mended {
        eprintln!(
            "wend: {}:{line}: cut short (a run killed while its record was written); removed, \
             and the run is done again",
            outcome.records.display()
        );
    }
    eprintln!(
        "{} runs in this sweep{}: {} done now, {} already recorded; records in {}",
        outcome.planned,
        shard.map_or(String::new(), |(k, n)| format!(" (shard {k}/{n})")),
        outcome.ran,
        outcome.skipped,
        outcome.records.display()
    );
    if outcome.stopped {
        eprintln!(
            "wend: the sweep was interrupted; the run under way was dropped. The same command \
             continues it (runs already recorded are skipped)."
        );
        if outcome.ran + outcome.skipped == 0 {
            // Nothing recorded yet: no report to write.
            return Ok(());
        }
    }
    if shard.is_some() {
        // Other shards may be writing into the same folder: the report waits for all of them.
        eprintln!(
            "when every shard is done: wend bench --report {}",
            out.display()
        );
        return Ok(());
    }
    report(std::slice::from_ref(&out), &out)
}

/// Says on stderr which runs of a problem with constraints the sweep leaves out, and why.
fn constrained_skips(file: &Path, methods: &[MethodSpec], ends: &[EndsChoice]) {
    let closed = [EndsChoice::Closed];
    let ends = if ends.is_empty() { &closed[..] } else { ends };
    for &e in ends {
        for m in methods {
            if let Some(why) = constrained_refusal(m, e) {
                eprintln!(
                    "wend: skipped: {} under {} ({}): {why}",
                    file.display(),
                    m.label(),
                    e.name()
                );
            }
        }
    }
}

fn one_line(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

fn parse_shard(s: &str) -> Result<(usize, usize), CliError> {
    let bad = || CliError::Input(format!("--shard takes K/N with 1 <= K <= N, got {s:?}"));
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if k == 0 || n == 0 || k > n {
        return Err(bad());
    }
    Ok((k, n))
}

/// A file, every file of a folder, or the files a glob pattern matches; each with whether it is
/// only a guess: a file of a folder without the .tsp or .atsp extension, kept later only if it
/// reads as a time-window problem (told by its content).
fn expand(shown: &str, p: &Path) -> Result<Vec<(PathBuf, bool)>, CliError> {
    let is_problem =
        |p: &Path| matches!(p.extension().and_then(|e| e.to_str()), Some("tsp" | "atsp"));
    if p.is_dir() {
        let mut v: Vec<(PathBuf, bool)> = std::fs::read_dir(p)
            .map_err(|e| CliError::Input(format!("{shown}: cannot read the folder: {e}")))?
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.is_file())
            .map(|p| {
                let guessed = !is_problem(&p);
                (p, guessed)
            })
            .collect();
        v.sort();
        if v.is_empty() {
            return Err(CliError::Input(format!(
                "{shown}: no .tsp or .atsp files in this folder"
            )));
        }
        return Ok(v);
    }
    if p.is_file() {
        return Ok(vec![(p.to_path_buf(), false)]);
    }
    let pattern = p.to_string_lossy();
    let mut v: Vec<(PathBuf, bool)> = glob::glob(&pattern)
        .map_err(|e| CliError::Input(format!("{shown}: not a file, folder or valid pattern: {e}")))?
        .filter_map(Result::ok)
        .filter(|p| p.is_file())
        .map(|p| (p, false))
        .collect();
    v.sort();
    if v.is_empty() {
        return Err(CliError::Input(format!(
            "{shown}: no such file, and no files match it as a pattern"
        )));
    }
    Ok(v)
}

/// Merges the runs of `dirs` and writes the report into `out`.
fn report(dirs: &[PathBuf], out: &Path) -> Result<(), CliError> {
    let mut runs: Vec<RunRecord> = Vec::new();
    let mut home: HashMap<RunKey, PathBuf> = HashMap::new();
    for d in dirs {
        let files =
            record_files(d).map_err(|e| CliError::Input(format!("{}: {e}", d.display())))?;
        if files.is_empty() {
            return Err(CliError::Input(format!(
                "{}: no run records here (runs.jsonl, or a shard's runs.shard-K-of-N.jsonl)",
                d.display()
            )));
        }
        let (found, torn) = read_folder(d).map_err(|e| CliError::Input(e.to_string()))?;
        for t in torn {
            eprintln!(
                "wend: {}:{}: cut short (a run killed while its record was written); left out",
                t.file.display(),
                t.line
            );
        }
        let found_count = found.len();
        for r in found {
            home.entry(r.key()).or_insert_with(|| d.clone());
            runs.push(r);
        }
        // A sharded sweep's plan tells how many runs the folder should hold.
        if let Some(plan) = read_plan(d).map_err(|e| CliError::Input(e.to_string()))? {
            let unique: HashSet<RunKey> = runs[runs.len() - found_count..]
                .iter()
                .map(RunRecord::key)
                .collect();
            if unique.len() < plan.planned_runs {
                eprintln!(
                    "wend: {}: {} of the {} planned runs are recorded; the sweep's command, run \
                     again (or its array resubmitted), does the others",
                    d.display(),
                    unique.len(),
                    plan.planned_runs
                );
            } else {
                eprintln!(
                    "{}: all {} planned runs recorded",
                    d.display(),
                    plan.planned_runs
                );
            }
        }
    }
    std::fs::create_dir_all(out)
        .map_err(|e| CliError::Failure(format!("{}: {e}", out.display())))?;
    // Drawings need the instance's points and the run's tour.
    let points = |r: &RunRecord| -> Option<(Vec<[f64; 2]>, Vec<usize>)> {
        let inst = read_instance(Path::new(&r.file)).ok()?;
        let geo = inst.edge_weight_type == "GEO";
        // GEO display points are (latitude, longitude): draw longitude across, like a map.
        let pts: Vec<[f64; 2]> = inst
            .display?
            .into_iter()
            .map(|p| if geo { [p[1], p[0]] } else { p })
            .collect();
        let dir = home.get(&r.key())?;
        let tour = read_tour(&dir.join(r.tour_file.as_ref()?)).ok()?;
        (tour.nodes.len() == pts.len()).then_some((pts, tour.nodes))
    };
    let summary = wend_bench::report::write_report(&runs, out, &points)
        .map_err(|e| CliError::Failure(e.to_string()))?;
    eprintln!(
        "report of {} runs written to {}",
        summary.runs,
        out.display()
    );
    for e in &summary.errors {
        eprintln!("error in results: {e}");
    }
    Ok(())
}
