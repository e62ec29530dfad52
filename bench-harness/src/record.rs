//! One benchmark run as it is stored: a line of `runs.jsonl`.
//!
//! The runner appends these, one line per finished run, each in one write; the report reads them
//! back. A sweep split across machines is merged by reading every shard's file
//! ([`crate::shards`]).

use serde::{Deserialize, Serialize};
use std::path::Path;

/// Everything known about one run of one method on one instance with one seed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RunRecord {
    /// Instance name: the file's stem (`kroA100` for `kroA100.tsp`).
    pub instance: String,
    /// Path of the instance file as it was given to the sweep.
    pub file: String,
    /// `TSP` or `ATSP`.
    #[serde(rename = "type")]
    pub problem_type: String,
    /// What was asked for: `closed` (a tour), or a path: `open`, `start` (from the file's first
    /// node), `end` (to it) or `start-end` (from the first node to the last). Older files,
    /// without the field, hold closed tours.
    #[serde(default = "closed")]
    pub ends: String,
    /// Number of nodes.
    pub nodes: usize,
    /// Method name, as `wend solve --method` takes it.
    pub method: String,
    /// Seed of the run.
    pub seed: u64,
    /// Time limit in seconds.
    pub time_limit: f64,
    /// Worker threads the run used.
    pub threads: usize,
    /// Length of the best tour found; under constraints, the travel cost of the best feasible
    /// order. None (`null`) when a run under constraints found no feasible order: such a run
    /// has no length, no gap, and counts against the feasibility rate.
    pub length: Option<i64>,
    /// Whether the run's result meets every constraint of its problem. Always true for a
    /// problem without constraints (every tour is one); older files, without the field, hold
    /// such runs.
    #[serde(default = "yes")]
    pub feasible: bool,
    /// The objective the constrained search minimised (travel cost plus the penalties of
    /// optional stops left out, or the completion time), of the order found (for an infeasible
    /// run, of the least-breaking order seen: not a solution's). Written only for problems with
    /// constraints, and its presence is what marks such a run.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub objective: Option<i64>,
    /// Known optimal length, if the optima file lists the instance.
    pub optimum: Option<i64>,
    /// `100 * (length - optimum) / optimum`, when the optimum is known and the run has a length.
    pub gap_percent: Option<f64>,
    /// Wall-clock seconds of the run.
    pub seconds: f64,
    /// Seconds until the best tour was first found.
    pub time_to_best: f64,
    /// Proven lower bound, when the method gives one.
    pub lower_bound: Option<i64>,
    /// Why the run stopped (`time_limit`, `run_budget`, ...; older files' `restart_budget` is
    /// read as `run_budget`).
    #[serde(deserialize_with = "stop_reason")]
    pub stop_reason: String,
    /// Independent runs completed inside this run (every method). Older files: `restarts`.
    #[serde(alias = "restarts")]
    pub runs: usize,
    /// Iterations over those runs (a kick of `lk`, a generation of `acs` and `mmas`, a batch
    /// of moves of `anneal`; zero for the other methods). Older files: `kicks`, or nothing.
    #[serde(default, alias = "kicks")]
    pub iterations: u64,
    /// Every new best tour as `[seconds, length]`: the run's anytime curve.
    pub trace: Vec<(f64, i64)>,
    /// The best tour, as a TOUR file relative to the output folder.
    pub tour_file: Option<String>,
    /// Version of `wend` that ran.
    pub version: String,
    /// Git commit the binary was built from (`unknown` outside a checkout). Older files:
    /// `git_commit`.
    #[serde(alias = "git_commit")]
    pub commit: String,
    /// Machine description: cores, CPU model, memory, operating system.
    pub machine: String,
}

/// What identifies a run, for resuming and for comparing sweeps.
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct RunKey {
    /// Instance name.
    pub instance: String,
    /// Method name.
    pub method: String,
    /// Seed.
    pub seed: u64,
    /// Time limit in milliseconds (so the key can be hashed).
    pub time_limit_ms: u64,
    /// `closed`, or the kind of path.
    pub ends: String,
}

fn closed() -> String {
    "closed".into()
}

fn yes() -> bool {
    true
}

/// A stop reason, with the words of older files read as today's.
fn stop_reason<'de, D: serde::Deserializer<'de>>(d: D) -> Result<String, D::Error> {
    let reason = String::deserialize(d)?;
    Ok(match reason.as_str() {
        "restart_budget" => "run_budget".into(),
        _ => reason,
    })
}

impl RunRecord {
    /// The run's identity.
    pub fn key(&self) -> RunKey {
        RunKey {
            instance: self.instance.clone(),
            method: self.method.clone(),
            seed: self.seed,
            time_limit_ms: (self.time_limit * 1000.0).round() as u64,
            ends: self.ends.clone(),
        }
    }

    /// True for a run on a problem with constraints (time windows and the like).
    pub fn is_constrained(&self) -> bool {
        self.objective.is_some()
    }

    /// True for a closed tour, false for any kind of path.
    pub fn is_closed(&self) -> bool {
        self.ends == "closed"
    }

    /// The problem the run solved: the instance name for a closed tour, `name [ends path]` for
    /// a path, so that reports never compare or average paths with tours.
    pub fn problem(&self) -> String {
        if self.is_closed() {
            self.instance.clone()
        } else {
            format!("{} [{} path]", self.instance, self.ends)
        }
    }

    /// The kind of problem, as report sections name it: `TSP`, `ATSP`, with the kind of path
    /// (`TSP, open paths`), or for a problem with constraints `ATSP, constrained`.
    pub fn kind(&self) -> String {
        if self.is_constrained() {
            format!("{}, constrained", self.problem_type)
        } else if self.is_closed() {
            self.problem_type.clone()
        } else {
            format!("{}, {} paths", self.problem_type, self.ends)
        }
    }

    /// True when the tour is shorter than the listed optimum: a distance bug or a wrong optimum,
    /// never a record.
    pub fn beats_optimum(&self) -> bool {
        matches!((self.length, self.optimum), (Some(l), Some(o)) if l < o)
    }
}

/// A line of a runs file that is not a run.
#[derive(Debug, thiserror::Error)]
#[error("{file}:{line}: {message}")]
pub struct RecordError {
    /// The file.
    pub file: String,
    /// 1-based line, 0 when the file could not be read at all.
    pub line: usize,
    /// What was wrong.
    pub message: String,
}

/// How a records file ends.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Ending {
    /// With a full line (or the file is empty or missing).
    Clean,
    /// With a whole record that lacks only its line break.
    Unterminated,
    /// With a line cut short, as a writer killed mid-write leaves it: not a record, left out.
    Torn {
        /// 1-based line number of the cut line.
        line: usize,
        /// Byte offset where it starts (the length the file has without it).
        offset: u64,
    },
}

/// The runs of a records file and how the file ends.
#[derive(Clone, Debug)]
pub struct RunsFile {
    /// Every whole record, in file order.
    pub runs: Vec<RunRecord>,
    /// How the file ends.
    pub ending: Ending,
}

/// Reads every run of a records file (`runs.jsonl`, or a shard's file); a missing file holds no
/// runs. A last line without its line break that is not a record is a torn write, left out
/// (see [`Ending::Torn`]); a bad line anywhere else is an error naming the line.
pub fn read_runs_file(path: &Path) -> Result<RunsFile, RecordError> {
    let file = path.display().to_string();
    let bytes = match std::fs::read(path) {
        Ok(b) => b,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            return Ok(RunsFile {
                runs: Vec::new(),
                ending: Ending::Clean,
            })
        }
        Err(e) => {
            return Err(RecordError {
                file,
                line: 0,
                message: e.to_string(),
            })
        }
    };
    let mut runs = Vec::new();
    let mut ending = Ending::Clean;
    let mut offset = 0usize;
    for (i, piece) in bytes.split_inclusive(|&b| b == b'\n').enumerate() {
        let start = offset;
        offset += piece.len();
        let whole = piece.ends_with(b"\n");
        let text = piece.strip_suffix(b"\n").unwrap_or(piece);
        if text.iter().all(u8::is_ascii_whitespace) {
            continue;
        }
        match serde_json::from_slice::<RunRecord>(text) {
            Ok(run) => {
                runs.push(run);
                if !whole {
                    ending = Ending::Unterminated;
                }
            }
            Err(_) if !whole => {
                ending = Ending::Torn {
                    line: i + 1,
                    offset: start as u64,
                }
            }
            Err(e) => {
                return Err(RecordError {
                    file,
                    line: i + 1,
                    message: format!("not a run record: {e}"),
                })
            }
        }
    }
    Ok(RunsFile { runs, ending })
}

/// Reads every whole run of a records file, leaving out a torn last line ([`read_runs_file`]).
pub fn read_runs(path: &Path) -> Result<Vec<RunRecord>, RecordError> {
    read_runs_file(path).map(|f| f.runs)
}

/// Makes a records file end cleanly before more records are appended to it: a torn last line is
/// cut off, a last record without its line break gets one.
pub fn mend_ending(path: &Path, ending: Ending) -> std::io::Result<()> {
    match ending {
        Ending::Clean => Ok(()),
        Ending::Unterminated => {
            let mut f = std::fs::OpenOptions::new().append(true).open(path)?;
            std::io::Write::write_all(&mut f, b"\n")
        }
        Ending::Torn { offset, .. } => std::fs::OpenOptions::new()
            .write(true)
            .open(path)?
            .set_len(offset),
    }
}

#[cfg(test)]
pub(crate) fn sample(instance: &str, method: &str, seed: u64, length: i64) -> RunRecord {
    RunRecord {
        instance: instance.into(),
        file: format!("instances/{instance}.tsp"),
        problem_type: "TSP".into(),
        ends: "closed".into(),
        nodes: 100,
        method: method.into(),
        seed,
        time_limit: 1.0,
        threads: 1,
        length: Some(length),
        feasible: true,
        objective: None,
        optimum: Some(1000),
        gap_percent: Some(100.0 * (length - 1000) as f64 / 1000.0),
        seconds: 1.0,
        time_to_best: 0.5,
        lower_bound: None,
        stop_reason: "time_limit".into(),
        runs: 10,
        iterations: 0,
        trace: vec![(0.01, length + 50), (0.5, length)],
        tour_file: None,
        version: "0.1.0".into(),
        commit: "unknown".into(),
        machine: "test".into(),
    }
}
