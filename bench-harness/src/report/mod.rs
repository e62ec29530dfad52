//! Reports from run records: every run as CSV, a Markdown summary, and SVG figures.
//!
//! [`write_report`] is the entry point. The pieces it is built from are public too, so that their
//! numbers can be checked (and reused) without going through files: [`summary`] holds the
//! tables, [`anytime`] the gap-over-time curves, [`profile`] the performance profile.

pub mod anytime;
mod drawing;
pub mod profile;
mod runs_csv;
mod style;
pub mod summary;

use crate::record::RunRecord;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// What the report's callback gives for a run: the instance's display points and the run's best
/// tour as a zero-based node order over them.
pub type TourPoints = (Vec<[f64; 2]>, Vec<usize>);

/// Why a report could not be written.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// There was nothing to report on.
    #[error("no runs to report on")]
    NoRuns,
    /// A file or folder of the report could not be written.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// What went wrong.
        #[source]
        source: std::io::Error,
    },
    /// `runs.csv` could not be written.
    #[error("{}: {source}", path.display())]
    Csv {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        #[source]
        source: csv::Error,
    },
    /// A figure could not be drawn.
    #[error("{}: cannot draw: {message}", path.display())]
    Plot {
        /// The figure's file.
        path: PathBuf,
        /// What the plotting library said.
        message: String,
    },
}

/// What [`write_report`] did.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ReportSummary {
    /// Runs reported on.
    pub runs: usize,
    /// Problems found in the results (tours below a known optimum, duplicate runs, tours that
    /// could not be drawn); the same lines open `summary.md`.
    pub errors: Vec<String>,
    /// Every file written, in the order written.
    pub files: Vec<PathBuf>,
}

/// Writes the report on `runs` into `out_dir` (created if missing): `runs.csv`, `summary.md`,
/// `gap-vs-time.svg`, `performance-profile.svg`, and `tours/<instance>.svg` for each instance
/// whose best run `points` can give points and a tour for.
///
/// `points` is asked once per instance, with that instance's shortest run (ties go to the
/// smallest method name, seed and time limit, so the choice does not depend on input order).
pub fn write_report(
    runs: &[RunRecord],
    out_dir: &Path,
    points: &dyn Fn(&RunRecord) -> Option<TourPoints>,
) -> Result<ReportSummary, ReportError> {
    if runs.is_empty() {
        return Err(ReportError::NoRuns);
    }
    std::fs::create_dir_all(out_dir).map_err(|source| ReportError::Io {
        path: out_dir.to_owned(),
        source,
    })?;
    let mut done = ReportSummary {
        runs: runs.len(),
        errors: summary::find_errors(runs),
        files: Vec::new(),
    };
    let colours = wend_charts::Colours::new(runs.iter().map(|r| r.method.as_str()));

    let csv_path = out_dir.join("runs.csv");
    runs_csv::write(runs, &csv_path)?;
    done.files.push(csv_path);

    let path = out_dir.join(anytime::FILE);
    anytime::write_plot(runs, &path, &colours)?;
    done.files.push(path);

    let path = out_dir.join(profile::FILE);
    profile::write_plot(runs, &path, &colours)?;
    done.files.push(path);

    let mut tours = Vec::new();
    let mut names = drawing::FileNames::default();
    for best in best_runs(runs).into_values() {
        let Some((pts, order)) = points(best) else {
            continue;
        };
        if let Err(why) = drawing::check_tour(&pts, &order) {
            done.errors.push(format!(
                "tour of {} ({}, seed {}) cannot be drawn: {why}",
                best.instance, best.method, best.seed
            ));
            continue;
        }
        let rel = PathBuf::from("tours").join(names.file_for(&best.instance));
        let path = out_dir.join(&rel);
        if let Some(dir) = path.parent() {
            std::fs::create_dir_all(dir).map_err(|source| ReportError::Io {
                path: dir.to_owned(),
                source,
            })?;
        }
        drawing::write_tour(best, &pts, &order, &path, &colours)?;
        tours.push((best.instance.clone(), rel));
        done.files.push(path);
    }

    let figures = summary::Figures {
        anytime: anytime::FILE.into(),
        profile: profile::FILE.into(),
        tours,
    };
    let md_path = out_dir.join("summary.md");
    let md = summary::render(runs, &done.errors, &figures);
    std::fs::write(&md_path, md).map_err(|source| ReportError::Io {
        path: md_path.clone(),
        source,
    })?;
    done.files.push(md_path);
    Ok(done)
}

/// The shortest closed tour of each instance (paths are not drawn).
fn best_runs(runs: &[RunRecord]) -> BTreeMap<&str, &RunRecord> {
    let mut best: BTreeMap<&str, &RunRecord> = BTreeMap::new();
    for r in runs.iter().filter(|r| r.is_closed() && r.length.is_some()) {
        let better = match best.get(r.instance.as_str()) {
            None => true,
            Some(b) => {
                (r.length, &r.method, r.seed, r.time_limit).partial_cmp(&(
                    b.length,
                    &b.method,
                    b.seed,
                    b.time_limit,
                )) == Some(std::cmp::Ordering::Less)
            }
        };
        if better {
            best.insert(&r.instance, r);
        }
    }
    best
}

/// Percent above the known optimum, from the length and optimum themselves rather than the
/// stored `gap_percent`, so that every table and figure agrees with the lengths it shows.
/// None without an optimum, with one that is not positive (a percentage of it means nothing), or
/// without a length (a run under constraints that found no feasible order).
pub fn gap_percent(run: &RunRecord) -> Option<f64> {
    let o = run.optimum?;
    let l = run.length?;
    if o <= 0 {
        return None;
    }
    let g = 100.0 * (l as f64 - o as f64) / o as f64;
    g.is_finite().then_some(g)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::sample;

    fn line_count(path: &Path) -> usize {
        std::fs::read_to_string(path).unwrap().lines().count()
    }

    fn no_points(_: &RunRecord) -> Option<TourPoints> {
        None
    }

    #[test]
    fn no_runs_is_an_error() {
        let dir = tempfile::tempdir().unwrap();
        assert!(matches!(
            write_report(&[], dir.path(), &no_points),
            Err(ReportError::NoRuns)
        ));
    }

    #[test]
    fn writes_every_file_and_one_csv_line_per_run() {
        let dir = tempfile::tempdir().unwrap();
        let mut runs = vec![
            sample("b", "two-opt", 1, 1010),
            sample("a", "two-opt", 2, 1000),
            sample("a", "or-opt", 1, 1020),
            sample("a", "two-opt", 1, 1005),
        ];
        runs[0].optimum = None;
        runs[0].gap_percent = None;
        // A square: the drawing must come out for instance `a` only.
        let square = |r: &RunRecord| {
            (r.instance == "a").then(|| {
                (
                    vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]],
                    vec![0, 1, 2, 3],
                )
            })
        };
        let s = write_report(&runs, dir.path(), &square).unwrap();
        assert_eq!(s.runs, 4);
        assert!(s.errors.is_empty(), "{:?}", s.errors);
        let names: Vec<String> = s
            .files
            .iter()
            .map(|p| {
                p.strip_prefix(dir.path())
                    .unwrap()
                    .to_string_lossy()
                    .replace('\\', "/")
            })
            .collect();
        assert_eq!(
            names,
            [
                "runs.csv",
                "gap-vs-time.svg",
                "performance-profile.svg",
                "tours/a.svg",
                "summary.md"
            ]
        );
        assert_eq!(line_count(&dir.path().join("runs.csv")), 5);
        for f in &s.files {
            let text = std::fs::read_to_string(f).unwrap();
            assert!(!text.is_empty(), "{}", f.display());
            if f.extension().is_some_and(|e| e == "svg") {
                let head = text.trim_start();
                assert!(
                    head.starts_with("<svg") || head.starts_with("<?xml"),
                    "{}",
                    f.display()
                );
                assert!(text.trim_end().ends_with("</svg>"), "{}", f.display());
                assert!(!text.contains("NaN"), "{}", f.display());
            }
        }
        let tour = std::fs::read_to_string(dir.path().join("tours/a.svg")).unwrap();
        // The best run of `a` is two-opt seed 2 with length 1000.
        assert!(tour.contains("two-opt"), "{tour}");
        assert!(tour.contains("seed 2"), "{tour}");
        assert!(tour.contains("1000"), "{tour}");
    }

    #[test]
    fn edge_cases_still_give_every_figure() {
        // One method with one run, all gaps zero, and an empty trace.
        let mut one = sample("a", "two-opt", 1, 1000);
        one.trace.clear();
        let dir = tempfile::tempdir().unwrap();
        let s = write_report(&[one.clone()], dir.path(), &no_points).unwrap();
        assert_eq!(s.files.len(), 4);
        one.trace = vec![(0.0, 1000)];
        let dir = tempfile::tempdir().unwrap();
        let s = write_report(&[one], dir.path(), &no_points).unwrap();
        for f in &s.files {
            let text = std::fs::read_to_string(f).unwrap();
            let bad = text
                .split(|c: char| !c.is_ascii_alphanumeric())
                .find(|w| matches!(*w, "NaN" | "inf" | "Infinity"));
            assert_eq!(bad, None, "{}: {text}", f.display());
        }
    }

    #[test]
    fn a_bad_tour_is_reported_not_drawn() {
        let dir = tempfile::tempdir().unwrap();
        let runs = [sample("a", "two-opt", 1, 1000)];
        let bad = |_: &RunRecord| Some((vec![[0.0, 0.0], [1.0, 0.0]], vec![0, 5]));
        let s = write_report(&runs, dir.path(), &bad).unwrap();
        assert_eq!(s.errors.len(), 1, "{:?}", s.errors);
        assert!(s.errors[0].contains("tour of a"), "{:?}", s.errors);
        assert!(!dir.path().join("tours").exists());
        let md = std::fs::read_to_string(dir.path().join("summary.md")).unwrap();
        assert!(md.contains("## Errors"));
    }

    #[test]
    fn gap_is_computed_from_length_and_optimum() {
        let mut r = sample("a", "m", 1, 1025);
        r.gap_percent = Some(99.0);
        assert_eq!(gap_percent(&r), Some(2.5));
        r.optimum = Some(0);
        assert_eq!(gap_percent(&r), None);
        r.optimum = None;
        assert_eq!(gap_percent(&r), None);
    }
}
