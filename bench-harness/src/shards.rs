//! A sweep split into shards: the shard a batch scheduler's array task stands for, the records
//! file of each shard, and the plan that every shard writing into one folder must share.
//!
//! A sweep folder holds:
//! - `runs.jsonl`: the records of a sweep run as one piece;
//! - `runs.shard-K-of-N.jsonl`: the records of shard K of N. Each shard appends only to its own
//!   file, so shards on different machines never write the same file on shared storage;
//! - `plan.json`: what a sharded sweep runs (instances, methods, ends, seeds, limits and the
//!   binary), written once, whole, by whichever shard starts first. A shard is a slice of the
//!   run list, so shards of different plans would cover neither plan: a shard whose plan differs
//!   from the folder's is refused;
//! - `tours/`: one TOUR file per run, named after the run.

use crate::record::{read_runs_file, Ending, RecordError, RunRecord};
use serde::{Deserialize, Serialize};
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// The plan file's name in a sweep folder.
pub const PLAN_FILE: &str = "plan.json";

/// The records file of a shard (`runs.shard-K-of-N.jsonl`), or of a whole sweep (`runs.jsonl`).
pub fn records_file(shard: Option<(usize, usize)>) -> String {
    match shard {
        None => "runs.jsonl".into(),
        Some((k, n)) => format!("runs.shard-{k}-of-{n}.jsonl"),
    }
}

/// `(k, n)` of a shard's records file name, None for any other name.
fn shard_of(name: &str) -> Option<(usize, usize)> {
    let middle = name.strip_prefix("runs.shard-")?.strip_suffix(".jsonl")?;
    let (k, n) = middle.split_once("-of-")?;
    Some((k.parse().ok()?, n.parse().ok()?))
}

/// Every records file of a folder: `runs.jsonl` first, then the shards' files by shard count
/// and number.
pub fn record_files(dir: &Path) -> std::io::Result<Vec<PathBuf>> {
    let mut shards = Vec::new();
    let mut whole = None;
    for entry in std::fs::read_dir(dir)? {
        let path = entry?.path();
        let Some(name) = path.file_name().and_then(|n| n.to_str()) else {
            continue;
        };
        if name == "runs.jsonl" {
            whole = Some(path);
        } else if let Some((k, n)) = shard_of(name) {
            shards.push(((n, k), path));
        }
    }
    shards.sort();
    Ok(whole
        .into_iter()
        .chain(shards.into_iter().map(|(_, p)| p))
        .collect())
}

/// A torn last line found while reading a folder's records.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TornLine {
    /// The records file.
    pub file: PathBuf,
    /// 1-based line number.
    pub line: usize,
}

/// Every whole run in the records files of `dir`, and the torn last lines left out.
pub fn read_folder(dir: &Path) -> Result<(Vec<RunRecord>, Vec<TornLine>), RecordError> {
    let files = record_files(dir).map_err(|e| RecordError {
        file: dir.display().to_string(),
        line: 0,
        message: e.to_string(),
    })?;
    let mut runs = Vec::new();
    let mut torn = Vec::new();
    for f in files {
        let read = read_runs_file(&f)?;
        runs.extend(read.runs);
        if let Ending::Torn { line, .. } = read.ending {
            torn.push(TornLine { file: f, line });
        }
    }
    Ok((runs, torn))
}

/// The shard a batch scheduler's array task stands for, from its environment (`get` reads a
/// variable): task id − lowest task id + 1, of the task count. None outside an array task.
/// Refused: an array with a step, or with ids that are not one unbroken range (a count that
/// disagrees with the lowest and highest ids), since shard numbers would then have gaps.
pub fn shard_from_array_task(
    get: impl Fn(&str) -> Option<String>,
) -> Result<Option<(usize, usize)>, String> {
    let Some(id) = get("SLURM_ARRAY_TASK_ID") else {
        return Ok(None);
    };
    let number = |name: &str| -> Result<Option<usize>, String> {
        get(name)
            .map(|v| {
                v.trim()
                    .parse::<usize>()
                    .map_err(|_| format!("{name}={v:?} is not a whole number"))
            })
            .transpose()
    };
    let id: usize = id
        .trim()
        .parse()
        .map_err(|_| format!("SLURM_ARRAY_TASK_ID={id:?} is not a whole number"))?;
    if let Some(step) = number("SLURM_ARRAY_TASK_STEP")?.filter(|&s| s != 1) {
        return Err(format!(
            "the job array has a step of {step}; submit it without one (--array=MIN-MAX), \
             or give --shard K/N"
        ));
    }
    let (min, max) = (
        number("SLURM_ARRAY_TASK_MIN")?,
        number("SLURM_ARRAY_TASK_MAX")?,
    );
    let Some(min) = min else {
        return Err(
            "SLURM_ARRAY_TASK_ID is set but SLURM_ARRAY_TASK_MIN is not; give --shard K/N".into(),
        );
    };
    let span = max.filter(|&m| m >= min).map(|m| m - min + 1);
    let count = match (number("SLURM_ARRAY_TASK_COUNT")?, span) {
        (Some(c), Some(s)) if c != s => {
            return Err(format!(
                "the job array's {c} task ids are not one unbroken range from {min} to {}; \
                 submit it as --array=MIN-MAX, or give --shard K/N",
                min + s - 1
            ))
        }
        (Some(c), _) => c,
        (None, Some(s)) => s,
        (None, None) => {
            return Err(
                "neither SLURM_ARRAY_TASK_COUNT nor SLURM_ARRAY_TASK_MAX is set for \
                        this array task; give --shard K/N"
                    .into(),
            )
        }
    };
    if id < min || id - min >= count {
        return Err(format!(
            "SLURM_ARRAY_TASK_ID={id} lies outside the array's ids {min} to {}",
            min + count - 1
        ));
    }
    Ok(Some((id - min + 1, count)))
}

/// What a sharded sweep runs, as its folder's `plan.json` records it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FolderPlan {
    /// Instance names, sorted.
    pub instances: Vec<String>,
    /// Method labels, in the order given.
    pub methods: Vec<String>,
    /// Closed tours and kinds of path.
    pub ends: Vec<String>,
    /// Seeds.
    pub seeds: Vec<u64>,
    /// Time limit of each run, in seconds.
    pub time_limit: f64,
    /// Runs inside each run, when counted.
    pub runs: Option<usize>,
    /// Iterations of each run, when budgeted.
    pub iterations: Option<u64>,
    /// Threads inside each run.
    pub threads_per_run: usize,
    /// Whether runs end at the known optimal length.
    pub until_known: bool,
    /// How many shards the run list is cut into.
    pub shards: usize,
    /// Runs in the whole sweep, over every shard.
    pub planned_runs: usize,
    /// Version of `wend` that writes the records.
    pub version: String,
    /// Git commit it was built from.
    pub commit: String,
    /// Instance files as the first shard was given them (for people; not compared: shared
    /// storage may be mounted at other paths on other machines).
    pub files: Vec<String>,
}

impl FolderPlan {
    /// What differs between the folder's plan (`self`) and another, one line per field; empty
    /// when they agree. Lists say what is only in one of them.
    pub fn differences(&self, other: &FolderPlan) -> Vec<String> {
        let (Ok(serde_json::Value::Object(a)), Ok(serde_json::Value::Object(b))) =
            (serde_json::to_value(self), serde_json::to_value(other))
        else {
            return vec!["the plans cannot be compared".into()];
        };
        let mut out = Vec::new();
        for (key, va) in &a {
            let vb = b.get(key).unwrap_or(&serde_json::Value::Null);
            if key == "files" || va == vb {
                continue;
            }
            let line = match (va, vb) {
                (serde_json::Value::Array(la), serde_json::Value::Array(lb)) => {
                    let show = |v: &serde_json::Value| match v {
                        serde_json::Value::String(s) => s.clone(),
                        other => other.to_string(),
                    };
                    let sa: BTreeSet<String> = la.iter().map(show).collect();
                    let sb: BTreeSet<String> = lb.iter().map(show).collect();
                    let only = |x: &BTreeSet<String>, y: &BTreeSet<String>| {
                        x.difference(y).cloned().collect::<Vec<_>>().join(", ")
                    };
                    let (fa, fb) = (only(&sa, &sb), only(&sb, &sa));
                    if fa.is_empty() && fb.is_empty() {
                        format!("{key}: the same, in another order: folder {va}, this command {vb}")
                    } else {
                        format!(
                            "{key}: only in the folder's plan: {}; only in this command: {}",
                            if fa.is_empty() { "none" } else { &fa },
                            if fb.is_empty() { "none" } else { &fb }
                        )
                    }
                }
                _ => {
                    let show = |v: &serde_json::Value| match v {
                        serde_json::Value::Null => "not set".to_string(),
                        other => other.to_string(),
                    };
                    let mut line = format!("{key}: folder {}, this command {}", show(va), show(vb));
                    if key == "shards" {
                        line.push_str(
                            " (a job array resubmitted in part, as --array=2, has that many \
                             tasks: resubmit the whole range, whose finished shards end at \
                             once, or give --shard K/N)",
                        );
                    }
                    line
                }
            };
            out.push(line);
        }
        out
    }
}

/// How a sweep's plan met its folder.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PlanClaim {
    /// This command wrote the folder's plan.
    Written,
    /// The folder's plan is this command's.
    Matches,
}

/// Why a plan does not fit a folder.
#[derive(Debug, thiserror::Error)]
pub enum PlanError {
    /// The folder holds another plan.
    #[error(
        "{path}: this folder holds another sweep's plan, and a shard of a different plan would \
         leave runs out or do them twice. What differs:\n  {}\nGive the folder's plan again, \
         or write into another --out folder.",
        differences.join("\n  ")
    )]
    Differs {
        /// The plan file.
        path: String,
        /// One line per differing field.
        differences: Vec<String>,
    },
    /// The plan file cannot be read, or is not a plan.
    #[error("{path}: {message}")]
    Unreadable {
        /// The plan file.
        path: String,
        /// What went wrong.
        message: String,
    },
}

/// Reads a folder's plan, if it has one.
pub fn read_plan(dir: &Path) -> Result<Option<FolderPlan>, PlanError> {
    let path = dir.join(PLAN_FILE);
    let unreadable = |message: String| PlanError::Unreadable {
        path: path.display().to_string(),
        message,
    };
    match std::fs::read_to_string(&path) {
        Ok(text) => serde_json::from_str(&text)
            .map(Some)
            .map_err(|e| unreadable(format!("not a sweep plan: {e}"))),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(unreadable(e.to_string())),
    }
}

/// Writes `plan` as the folder's plan if it has none, or checks that it has this one. The file
/// appears whole or not at all (written aside, then linked in place, which fails if another
/// shard got there first), so shards starting together agree on one plan.
pub fn claim_plan(dir: &Path, plan: &FolderPlan) -> Result<PlanClaim, PlanError> {
    let path = dir.join(PLAN_FILE);
    let failed = |e: std::io::Error| PlanError::Unreadable {
        path: path.display().to_string(),
        message: e.to_string(),
    };
    let compare = |found: FolderPlan| {
        let differences = found.differences(plan);
        if differences.is_empty() {
            Ok(PlanClaim::Matches)
        } else {
            Err(PlanError::Differs {
                path: path.display().to_string(),
                differences,
            })
        }
    };
    if let Some(found) = read_plan(dir)? {
        return compare(found);
    }
    let mut text =
        serde_json::to_string_pretty(plan).map_err(|e| failed(std::io::Error::other(e)))?;
    text.push('\n');
    let nanos = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.subsec_nanos());
    let aside = dir.join(format!(".{PLAN_FILE}.{}-{nanos}.part", std::process::id()));
    std::fs::write(&aside, &text).map_err(failed)?;
    let linked = std::fs::hard_link(&aside, &path);
    let _ = std::fs::remove_file(&aside);
    // Another shard wrote the plan first: its plan must be this one.
    let taken = |e: std::io::Error| match read_plan(dir)? {
        Some(found) => compare(found),
        None => Err(failed(e)),
    };
    match linked {
        Ok(()) => Ok(PlanClaim::Written),
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => taken(e),
        // A file system without hard links: an exclusive create, written at once.
        Err(_) => {
            use std::io::Write;
            match std::fs::OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(&path)
            {
                Ok(mut f) => {
                    f.write_all(text.as_bytes()).map_err(failed)?;
                    Ok(PlanClaim::Written)
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => taken(e),
                Err(e) => Err(failed(e)),
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::{read_runs_file, sample};
    use std::collections::HashMap;

    fn env(pairs: &[(&str, &str)]) -> impl Fn(&str) -> Option<String> {
        let map: HashMap<String, String> = pairs
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect();
        move |k| map.get(k).cloned()
    }

    #[test]
    fn array_tasks_name_their_shard() {
        assert_eq!(shard_from_array_task(env(&[])), Ok(None));
        // --array=1-8, task 3.
        let t = [
            ("SLURM_ARRAY_TASK_ID", "3"),
            ("SLURM_ARRAY_TASK_MIN", "1"),
            ("SLURM_ARRAY_TASK_MAX", "8"),
            ("SLURM_ARRAY_TASK_COUNT", "8"),
            ("SLURM_ARRAY_TASK_STEP", "1"),
        ];
        assert_eq!(shard_from_array_task(env(&t)), Ok(Some((3, 8))));
        // --array=0-3, task 0 is the first shard; without a count, the ids' span gives it.
        let t = [
            ("SLURM_ARRAY_TASK_ID", "0"),
            ("SLURM_ARRAY_TASK_MIN", "0"),
            ("SLURM_ARRAY_TASK_MAX", "3"),
        ];
        assert_eq!(shard_from_array_task(env(&t)), Ok(Some((1, 4))));
        // --array=10-12, task 12.
        let t = [
            ("SLURM_ARRAY_TASK_ID", "12"),
            ("SLURM_ARRAY_TASK_MIN", "10"),
            ("SLURM_ARRAY_TASK_COUNT", "3"),
        ];
        assert_eq!(shard_from_array_task(env(&t)), Ok(Some((3, 3))));
    }

    #[test]
    fn arrays_with_steps_or_gaps_are_refused() {
        // --array=0-6:2: ids 0, 2, 4, 6.
        let stepped = [
            ("SLURM_ARRAY_TASK_ID", "2"),
            ("SLURM_ARRAY_TASK_MIN", "0"),
            ("SLURM_ARRAY_TASK_MAX", "6"),
            ("SLURM_ARRAY_TASK_COUNT", "4"),
            ("SLURM_ARRAY_TASK_STEP", "2"),
        ];
        let e = shard_from_array_task(env(&stepped)).unwrap_err();
        assert!(e.contains("step of 2"), "{e}");
        // --array=1,2,5: three ids over a span of five.
        let gaps = [
            ("SLURM_ARRAY_TASK_ID", "5"),
            ("SLURM_ARRAY_TASK_MIN", "1"),
            ("SLURM_ARRAY_TASK_MAX", "5"),
            ("SLURM_ARRAY_TASK_COUNT", "3"),
        ];
        let e = shard_from_array_task(env(&gaps)).unwrap_err();
        assert!(e.contains("unbroken range"), "{e}");
        let bad = [("SLURM_ARRAY_TASK_ID", "x"), ("SLURM_ARRAY_TASK_MIN", "1")];
        assert!(shard_from_array_task(env(&bad)).is_err());
        let no_min = [("SLURM_ARRAY_TASK_ID", "1")];
        assert!(shard_from_array_task(env(&no_min)).is_err());
    }

    #[test]
    fn shard_files_are_found_and_ordered() {
        let dir = tempfile::tempdir().unwrap();
        for name in [
            "runs.shard-10-of-12.jsonl",
            "runs.shard-2-of-12.jsonl",
            "runs.jsonl",
            "runs.csv",
            "runs.shard-x-of-2.jsonl",
            "plan.json",
        ] {
            std::fs::write(dir.path().join(name), "").unwrap();
        }
        let names: Vec<String> = record_files(dir.path())
            .unwrap()
            .iter()
            .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
            .collect();
        assert_eq!(
            names,
            [
                "runs.jsonl",
                "runs.shard-2-of-12.jsonl",
                "runs.shard-10-of-12.jsonl"
            ]
        );
        assert_eq!(records_file(Some((2, 12))), "runs.shard-2-of-12.jsonl");
    }

    #[test]
    fn a_torn_last_line_is_left_out_and_mended() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("runs.shard-1-of-2.jsonl");
        let a = serde_json::to_string(&sample("a", "lk", 0, 1010)).unwrap();
        let b = serde_json::to_string(&sample("b", "lk", 0, 1020)).unwrap();
        // A writer killed halfway through the second record.
        let text = format!("{a}\n{}", &b[..b.len() / 2]);
        std::fs::write(&path, &text).unwrap();
        let read = read_runs_file(&path).unwrap();
        assert_eq!(read.runs.len(), 1);
        assert_eq!(
            read.ending,
            Ending::Torn {
                line: 2,
                offset: a.len() as u64 + 1
            }
        );
        crate::record::mend_ending(&path, read.ending).unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), format!("{a}\n"));
        // A whole record missing only its line break is kept, and gets the break.
        std::fs::write(&path, format!("{a}\n{b}")).unwrap();
        let read = read_runs_file(&path).unwrap();
        assert_eq!((read.runs.len(), read.ending), (2, Ending::Unterminated));
        crate::record::mend_ending(&path, read.ending).unwrap();
        assert_eq!(
            std::fs::read_to_string(&path).unwrap(),
            format!("{a}\n{b}\n")
        );
        // A bad line that is not the last is an error naming it.
        std::fs::write(&path, format!("{a}\n{{oops\n{b}\n")).unwrap();
        let e = read_runs_file(&path).unwrap_err();
        assert_eq!(e.line, 2);
        assert!(read_folder(dir.path()).is_err());
    }

    fn plan() -> FolderPlan {
        FolderPlan {
            instances: vec!["berlin52".into(), "eil51".into()],
            methods: vec!["lk".into(), "2opt".into()],
            ends: vec!["closed".into()],
            seeds: vec![0, 1, 2],
            time_limit: 10.0,
            runs: Some(1),
            iterations: Some(100),
            threads_per_run: 1,
            until_known: false,
            shards: 4,
            planned_runs: 12,
            version: "0.1.0".into(),
            commit: "abc".into(),
            files: vec!["a/berlin52.tsp".into(), "a/eil51.tsp".into()],
        }
    }

    #[test]
    fn the_first_plan_is_kept_and_others_are_refused_with_what_differs() {
        let dir = tempfile::tempdir().unwrap();
        assert_eq!(claim_plan(dir.path(), &plan()).unwrap(), PlanClaim::Written);
        // Other paths to the same files are the same plan.
        let mut moved = plan();
        moved.files = vec!["/mnt/b/berlin52.tsp".into(), "/mnt/b/eil51.tsp".into()];
        assert_eq!(claim_plan(dir.path(), &moved).unwrap(), PlanClaim::Matches);
        let mut other = plan();
        other.seeds = vec![0, 1];
        other.time_limit = 20.0;
        other.instances.push("st70".into());
        // Task 2 of an array resubmitted alone sees an array of one task.
        other.shards = 1;
        let e = claim_plan(dir.path(), &other).unwrap_err();
        let PlanError::Differs { differences, .. } = &e else {
            panic!("{e}");
        };
        assert_eq!(differences.len(), 4, "{differences:?}");
        assert!(e
            .to_string()
            .contains("shards: folder 4, this command 1 (a job array resubmitted in part"));
        let text = e.to_string();
        assert!(text.contains("seeds: only in the folder's plan: 2; only in this command: none"));
        assert!(text.contains("time_limit: folder 10.0, this command 20.0"));
        assert!(
            text.contains("instances: only in the folder's plan: none; only in this command: st70")
        );
        // The folder's plan is unchanged, and nothing was left aside.
        assert_eq!(read_plan(dir.path()).unwrap(), Some(plan()));
        let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(left.len(), 1);
    }

    #[test]
    fn shards_starting_together_agree_on_one_plan() {
        let dir = tempfile::tempdir().unwrap();
        let claims: Vec<PlanClaim> = std::thread::scope(|s| {
            let handles: Vec<_> = (0..8)
                .map(|_| s.spawn(|| claim_plan(dir.path(), &plan()).unwrap()))
                .collect();
            handles.into_iter().map(|h| h.join().unwrap()).collect()
        });
        assert_eq!(
            claims.iter().filter(|&&c| c == PlanClaim::Written).count(),
            1
        );
    }
}
