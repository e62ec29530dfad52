//! `runs.csv`: the scalar fields of every run, one row each, for spreadsheets and scripts.

use super::ReportError;
use crate::record::RunRecord;
use std::path::Path;

/// Column names, in order; they follow the JSON field names so both files read the same.
const HEADER: [&str; 25] = [
    "instance",
    "file",
    "type",
    "nodes",
    "method",
    "seed",
    "time_limit",
    "threads",
    "length",
    "optimum",
    "gap_percent",
    "seconds",
    "time_to_best",
    "lower_bound",
    "stop_reason",
    "runs",
    "iterations",
    "trace_points",
    "tour_file",
    "version",
    "commit",
    "machine",
    "ends",
    "feasible",
    "objective",
];

/// Writes the runs sorted by (instance, method, seed, time limit); runs equal in all four keep
/// their input order, so duplicates stay visible next to each other.
pub(crate) fn write(runs: &[RunRecord], path: &Path) -> Result<(), ReportError> {
    let csv_err = |source| ReportError::Csv {
        path: path.to_owned(),
        source,
    };
    let mut sorted: Vec<&RunRecord> = runs.iter().collect();
    sorted.sort_by(|a, b| {
        (&a.instance, &a.ends, &a.method, a.seed)
            .cmp(&(&b.instance, &b.ends, &b.method, b.seed))
            .then(a.time_limit.total_cmp(&b.time_limit))
    });
    let mut w = csv::Writer::from_path(path).map_err(csv_err)?;
    w.write_record(HEADER).map_err(csv_err)?;
    for r in sorted {
        w.write_record(row(r)).map_err(csv_err)?;
    }
    w.flush().map_err(|source| ReportError::Io {
        path: path.to_owned(),
        source,
    })
}

fn row(r: &RunRecord) -> [String; 25] {
    [
        r.instance.clone(),
        r.file.clone(),
        r.problem_type.clone(),
        r.nodes.to_string(),
        r.method.clone(),
        r.seed.to_string(),
        float(r.time_limit),
        r.threads.to_string(),
        opt(r.length),
        opt(r.optimum),
        r.gap_percent.map(float).unwrap_or_default(),
        float(r.seconds),
        float(r.time_to_best),
        opt(r.lower_bound),
        r.stop_reason.clone(),
        r.runs.to_string(),
        r.iterations.to_string(),
        r.trace.len().to_string(),
        r.tour_file.clone().unwrap_or_default(),
        r.version.clone(),
        r.commit.clone(),
        r.machine.clone(),
        r.ends.clone(),
        r.feasible.to_string(),
        opt(r.objective),
    ]
}

/// An empty cell rather than `NaN` or `inf`, which many readers of CSV take for text.
fn float(v: f64) -> String {
    if v.is_finite() {
        v.to_string()
    } else {
        String::new()
    }
}

fn opt(v: Option<i64>) -> String {
    v.map(|v| v.to_string()).unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::sample;

    #[test]
    fn rows_are_sorted_and_gaps_left_empty_without_optimum() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("runs.csv");
        let mut runs = vec![
            sample("b", "x", 1, 1100),
            sample("a", "y", 1, 1000),
            sample("a", "x", 2, 1000),
            sample("a", "x", 1, 1000),
        ];
        runs[0].optimum = None;
        runs[0].gap_percent = None;
        runs[1].seconds = f64::NAN;
        write(&runs, &path).unwrap();
        let text = std::fs::read_to_string(&path).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 5);
        assert!(lines[0].starts_with("instance,file,type,nodes,method,seed,"));
        let keys: Vec<String> = lines[1..]
            .iter()
            .map(|l| {
                let f: Vec<&str> = l.split(',').collect();
                format!("{} {} {}", f[0], f[4], f[5])
            })
            .collect();
        assert_eq!(keys, ["a x 1", "a x 2", "a y 1", "b x 1"]);
        let last: Vec<&str> = lines[4].split(',').collect();
        assert_eq!(last[9], ""); // optimum
        assert_eq!(last[10], ""); // gap_percent
        assert_eq!(last[8], "1100");
        assert_eq!(last[15], "10"); // runs of `sample`
        assert_eq!(last[17], "2"); // trace points of `sample`
        let y: Vec<&str> = lines[3].split(',').collect();
        assert_eq!(y[11], ""); // NaN seconds
        assert!(!text.contains("NaN"));
    }
}
