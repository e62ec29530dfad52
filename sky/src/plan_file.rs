//! Reading a plan file (CSV): an order of targets, with rolls and start times where given, to
//! be replayed and checked against the model.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. A plan that replays without trouble here is still only a proposal.
//!
//! # Format
//!
//! Comma-separated, UTF-8 (a byte-order mark and CRLF line endings are accepted), read like the
//! targets file: lines starting with `#` are comments (such as the caution line of the
//! planner's `plan.csv`), blank lines and rows whose fields are all empty are skipped, fields
//! may be quoted and are trimmed. The first line that is not a comment is the header. One row
//! per observation, in the order they are made:
//!
//! | column      | required | meaning                                                            |
//! |-------------|----------|--------------------------------------------------------------------|
//! | `target`    | yes      | the id of a target of the targets file; each at most once          |
//! | `roll_deg`  | no       | roll offset from the nominal roll, degrees in [−180, 180]; empty: 0 |
//! | `start_utc` | no       | when the dwell starts: ISO 8601 with a UTC offset (`Z`, `+02:00`) or a bare date (00:00 UTC); empty: as early as possible |
//!
//! The planner's `plan.csv` names the target column `id`; a file without a `target` column
//! may name it so (a file with both is refused: which one is meant is not clear). Every other
//! column is passed over, so that a plan the planner wrote can be read back as it is; so is a
//! misspelt optional column, which then leaves its default (0° roll, as early as possible).
//!
//! Given start times must increase down the file (each later than the last one given).
//!
//! Refused, with the file, the line and the target: an empty file or a plan without rows, a
//! header without the target column (or with both names), repeated columns, rows with the
//! wrong number of fields, empty or unknown target ids, a target planned twice (both lines
//! named), rolls that are not finite numbers in [−180, 180], times that are not ISO 8601 with
//! a UTC offset, and start times that do not increase.

use std::collections::HashMap;
use std::path::Path;

use crate::input::{escape_controls, shown};
use crate::{Epoch, Target};

/// One observation of a plan file.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlannedObservation {
    /// Index of the target in the pool.
    pub target: usize,
    /// Roll offset from the nominal roll, degrees in [−180, 180] (0 when not given).
    pub roll_deg: f64,
    /// When the dwell starts; `None`: as early as possible after the previous observation.
    pub start: Option<Epoch>,
    /// The 1-based line of the file the row starts on, counting line feeds (for the checker's
    /// messages; a lone carriage return ends a row but not a line).
    pub line: usize,
}

/// A plan file that could not be read, with the place the trouble was found.
///
/// Displayed as `{source_name}:{line}: {message}`; the line part is left out when `line == 0`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{source_name}{}: {message}", super::line_part(*.line))]
pub struct PlanFileError {
    /// The file name (or other label) the text came from.
    pub source_name: String,
    /// 1-based line in the file; 0 when the trouble is not tied to one line.
    pub line: usize,
    /// What was expected and what was found, with the target concerned.
    pub message: String,
}

impl PlanFileError {
    fn new(source: &str, line: usize, message: impl Into<String>) -> Self {
        PlanFileError {
            source_name: source.to_string(),
            line,
            message: escape_controls(&message.into()),
        }
    }
}

const COLUMNS: [&str; 4] = ["target", "id", "roll_deg", "start_utc"];
const TARGET: usize = 0;
const ID: usize = 1;
const ROLL: usize = 2;
const START: usize = 3;
/// The target column is required in one of its two names, checked by [`header`].
const TABLE: super::input::Columns<'static> = super::input::Columns {
    names: &COLUMNS,
    required: 0,
    ignore_unknown: true,
};

/// Reads a plan file; see [`parse_plan_file`]. The path, as displayed, names the file in
/// errors. Bytes that are not UTF-8 are refused.
pub fn read_plan_file(
    path: &Path,
    targets: &[Target],
) -> Result<Vec<PlannedObservation>, PlanFileError> {
    let source = path.display().to_string();
    let text = super::read_utf8(path).map_err(|(line, m)| PlanFileError::new(&source, line, m))?;
    parse_plan_file(&text, &source, targets)
}

/// Parses a plan file (format in the [module documentation](self)) into observations in file
/// order, target ids turned into indices of `targets`. `source` names the text in errors
/// (usually the file name).
pub fn parse_plan_file(
    text: &str,
    source: &str,
    targets: &[Target],
) -> Result<Vec<PlannedObservation>, PlanFileError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let err = |line: usize, m: String| PlanFileError::new(source, line, m);
    let ids: HashMap<&str, usize> = targets
        .iter()
        .enumerate()
        .map(|(i, t)| (t.id.as_str(), i))
        .collect();

    // (line, field index of the target column, field index of each column, field count)
    let mut head: Option<(usize, usize, Vec<Option<usize>>, usize)> = None;
    let mut plan: Vec<PlannedObservation> = Vec::new();
    let mut seen: HashMap<usize, usize> = HashMap::new();
    // The last start given: (epoch, as written, target, line).
    let mut last_start: Option<(Epoch, String, usize, usize)> = None;

    for record in super::input::csv_reader(text).records() {
        let record = record.map_err(|e| {
            let line = e
                .position()
                .map_or(0, |p| super::input::record_line(text, p.byte()));
            err(line, format!("not readable as CSV: {e}"))
        })?;
        let line = record
            .position()
            .map_or(0, |p| super::input::record_line(text, p.byte()));
        if record.iter().all(str::is_empty) {
            continue;
        }
        let Some((_, target_col, cols, header_len)) = &head else {
            let (target_col, cols) = header(&record).map_err(|m| err(line, m))?;
            head = Some((line, target_col, cols, record.len()));
            continue;
        };
        super::input::check_row_len(&record, *header_len).map_err(|m| err(line, m))?;
        let cell = |k: usize| cols[k].and_then(|i| record.get(i)).unwrap_or("");
        let column = COLUMNS[*target_col];
        let name = record.get(cols[*target_col].unwrap_or(0)).unwrap_or("");
        if name.is_empty() {
            return Err(err(
                line,
                format!("`{column}` is empty; it names a target id"),
            ));
        }
        let Some(&target) = ids.get(name) else {
            return Err(err(
                line,
                format!(
                    "unknown target `{}` in `{column}`: the targets file has no such target",
                    shown(name)
                ),
            ));
        };
        let about = |m: String| err(line, format!("target `{}`: {m}", shown(name)));
        if let Some(first_line) = seen.get(&target) {
            return Err(about(format!(
                "planned twice (lines {first_line} and {line}); a target is observed once"
            )));
        }
        seen.insert(target, line);

        let roll_deg = match cell(ROLL) {
            "" => 0.0,
            text => {
                let v = super::input::number(text, COLUMNS[ROLL]).map_err(about)?;
                if !(-180.0..=180.0).contains(&v) {
                    return Err(about(format!(
                        "`roll_deg` is {}, outside [-180, 180]",
                        shown(text)
                    )));
                }
                v
            }
        };
        let start = match cell(START) {
            "" => None,
            text => {
                let at = super::input::utc(text, COLUMNS[START]).map_err(about)?;
                if let Some((before, written, prev, prev_line)) = &last_start {
                    if at.jd <= before.jd {
                        return Err(about(format!(
                            "`start_utc` {} is not after the start of `{}` on line {prev_line} \
                             ({}): start times must increase down the file",
                            shown(text),
                            shown(&targets[*prev].id),
                            shown(written)
                        )));
                    }
                }
                last_start = Some((at, text.to_string(), target, line));
                Some(at)
            }
        };
        plan.push(PlannedObservation {
            target,
            roll_deg,
            start,
            line,
        });
    }

    match head {
        None => Err(err(
            0,
            "the file is empty: expected a header row with a `target` column".to_string(),
        )),
        Some((line, ..)) if plan.is_empty() => Err(err(
            line,
            "an empty plan: the file has a header but no observations".to_string(),
        )),
        Some(_) => Ok(plan),
    }
}

/// The index in [`COLUMNS`] of the target column (`target` or `id`) and the field index of
/// each column.
fn header(record: &csv::StringRecord) -> Result<(usize, Vec<Option<usize>>), String> {
    let cols = TABLE.find(record)?;
    match (cols[TARGET], cols[ID]) {
        (Some(_), None) => Ok((TARGET, cols)),
        (None, Some(_)) => Ok((ID, cols)),
        (Some(a), Some(b)) => Err(format!(
            "both `target` (column {}) and `id` (column {}) name a target; keep one",
            a + 1,
            b + 1
        )),
        (None, None) => Err(
            "the header has no `target` column (or `id`, as in the planner's plan.csv) naming \
             the target of each row"
                .to_string(),
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn targets() -> Vec<Target> {
        ["A", "B", "C", "D"]
            .iter()
            .map(|id| Target::new(*id, 10.0, 0.0, 100.0))
            .collect()
    }

    fn parse(text: &str) -> Result<Vec<PlannedObservation>, PlanFileError> {
        parse_plan_file(text, "p.csv", &targets())
    }

    fn obs(target: usize, roll_deg: f64, start: Option<f64>, line: usize) -> PlannedObservation {
        PlannedObservation {
            target,
            roll_deg,
            start: start.map(|jd| Epoch { jd }),
            line,
        }
    }

    /// The Julian date (TT) of `hours` after 2027-03-01T00:00:00 UTC: JD 2461465.5 in UTC
    /// (counted by hand: 9920.5 days after JD 2451545.0, 2000-01-01T12:00) plus this crate's
    /// fixed TT − UTC of 69.184 s.
    fn jd(hours: f64) -> f64 {
        2_461_465.5 + (hours * 3600.0 + 69.184) / 86_400.0
    }

    fn close(a: &[PlannedObservation], b: &[PlannedObservation]) -> bool {
        a.len() == b.len()
            && a.iter().zip(b).all(|(x, y)| {
                x.target == y.target
                    && x.roll_deg == y.roll_deg
                    && x.line == y.line
                    && match (x.start, y.start) {
                        (None, None) => true,
                        (Some(p), Some(q)) => (p.jd - q.jd).abs() < 1e-9,
                        _ => false,
                    }
            })
    }

    /// The error for `text`, checked to name the file and the line.
    fn error_at(text: &str, line: usize) -> String {
        let e = match parse(text) {
            Ok(p) => panic!("expected an error, got {p:?}"),
            Err(e) => e,
        };
        assert_eq!(e.source_name, "p.csv");
        assert_eq!(e.line, line, "{e}");
        let shown = e.to_string();
        let place = if line == 0 {
            String::new()
        } else {
            format!(":{line}")
        };
        assert!(shown.starts_with(&format!("p.csv{place}: ")), "{shown}");
        assert!(!shown.contains('\n'), "{shown}");
        shown
    }

    #[test]
    fn reads_targets_rolls_and_starts_and_ignores_other_columns() {
        let text = "# a plan\n\
                    note,start_utc,target,roll_deg,slew_s\n\
                    first,2027-03-01T01:00:00Z,C,-12.5,0\n\
                    \n\
                    ,,A,,3\n\
                    x,2027-03-01T03:30:00+01:00,B,180,\n";
        let want = [
            obs(2, -12.5, Some(jd(1.0)), 3),
            obs(0, 0.0, None, 5),
            obs(1, 180.0, Some(jd(2.5)), 6),
        ];
        let got = parse(text).unwrap();
        assert!(close(&got, &want), "{got:?}");
        // The target column alone.
        assert!(close(
            &parse("target\nD\nA\n").unwrap(),
            &[obs(3, 0.0, None, 2), obs(0, 0.0, None, 3)]
        ));
    }

    #[test]
    fn a_plan_the_planner_wrote_reads_back() {
        use crate::schedule::{Context, Visit};
        use crate::testing::{sky_profile, sky_targets};
        let mut p = sky_profile();
        p.roll_range_deg = (-20.0, 20.0);
        let pool = sky_targets(40, 5);
        let start = Epoch { jd: 2_461_465.5 };
        let ctx = Context::new(&p, &pool, start, 3.0).unwrap();
        let (cands, _) = ctx.screen();
        let visits: Vec<Visit> = cands
            .iter()
            .take(8)
            .enumerate()
            .map(|(k, &target)| Visit {
                target,
                roll: (k % 3) as u8,
            })
            .collect();
        let schedule = ctx.play_lenient(&visits, &[]).unwrap();
        assert!(schedule.observations.len() >= 3);
        let mut out = Vec::new();
        crate::output::write_plan_csv(&mut out, &p, &pool, &schedule).unwrap();
        let text = String::from_utf8(out).unwrap();
        let got = parse_plan_file(&text, "plan.csv", &pool).unwrap();
        assert_eq!(got.len(), schedule.observations.len());
        for (k, (g, o)) in got.iter().zip(&schedule.observations).enumerate() {
            assert_eq!(g.target, o.target);
            assert!((g.roll_deg - o.roll_deg).abs() < 0.01);
            // Line 1 is the header; times are written to the second.
            assert_eq!(g.line, k + 2);
            assert!((g.start.unwrap().jd - o.start.jd).abs() * 86_400.0 <= 0.5 + 1e-6);
        }
    }

    #[test]
    fn crlf_and_byte_order_mark_are_accepted() {
        let text = "\u{feff}target,roll_deg\r\nA,1\r\nB,2\r\n";
        assert!(close(
            &parse(text).unwrap(),
            &[obs(0, 1.0, None, 2), obs(1, 2.0, None, 3)]
        ));
        let shown = error_at("\u{feff}# c\r\ntarget,roll_deg\r\nA,1\r\nB,200\r\n", 4);
        assert!(
            shown.contains("target `B`: `roll_deg` is 200, outside [-180, 180]"),
            "{shown}"
        );
    }

    #[test]
    fn the_target_column_is_required_in_one_name() {
        let shown = error_at("# c\nroll_deg,start_utc\n0,\n", 2);
        assert!(
            shown.contains("the header has no `target` column"),
            "{shown}"
        );
        let shown = error_at("target,id\nA,A\n", 1);
        assert!(
            shown.contains("both `target` (column 1) and `id` (column 2)"),
            "{shown}"
        );
        let shown = error_at("target,roll_deg,target\n", 1);
        assert!(shown.contains("column `target` appears twice"), "{shown}");
    }

    #[test]
    fn unknown_empty_and_repeated_targets_are_refused() {
        let shown = error_at("target\nA\nZ\n", 3);
        assert!(
            shown.contains("unknown target `Z` in `target`: the targets file has no such"),
            "{shown}"
        );
        let shown = error_at("id,x\nA,1\nb,2\n", 3);
        assert!(shown.contains("unknown target `b` in `id`"), "{shown}");
        let shown = error_at("target,roll_deg\nA,1\n,2\n", 3);
        assert!(shown.contains("`target` is empty"), "{shown}");
        let shown = error_at("target\nA\nB\n# again\nA\n", 5);
        assert!(
            shown.contains("target `A`: planned twice (lines 2 and 5)"),
            "{shown}"
        );
    }

    #[test]
    fn rolls_must_be_finite_numbers_within_a_half_turn() {
        for (roll, wanted) in [
            ("-180.5", "`roll_deg` is -180.5, outside [-180, 180]"),
            ("1e300", "`roll_deg` is 1e300, outside"),
            ("nan", "`roll_deg` value `nan` is not a finite number"),
            ("-inf", "`roll_deg` value `-inf` is not a finite number"),
            ("1e999", "`roll_deg` value `1e999` is not a finite number"),
            ("ten", "`roll_deg` value `ten` is not a number"),
        ] {
            let shown = error_at(&format!("target,roll_deg\nA,0\nC,{roll}\n"), 3);
            assert!(
                shown.contains(&format!("target `C`: {wanted}")),
                "{roll}: {shown}"
            );
        }
        assert!(parse("target,roll_deg\nA,-180\nB,180\n").is_ok());
    }

    #[test]
    fn start_times_must_be_utc_and_increase_down_the_file() {
        for bad in ["2027-03-01T00:00:00", "noon", "2027-02-29", "nan"] {
            let shown = error_at(&format!("target,start_utc\nA,\nB,{bad}\n"), 3);
            assert!(
                shown.contains("target `B`: `start_utc` value `")
                    && shown.contains("is not an ISO 8601 time with a UTC offset"),
                "{bad}: {shown}"
            );
        }
        // Equal starts, and a start before the last one given (rows without a start between).
        let shown = error_at(
            "target,start_utc\nA,2027-03-01T01:00:00Z\nB,2027-03-01T02:00:00+01:00\n",
            3,
        );
        assert!(
            shown.contains(
                "target `B`: `start_utc` 2027-03-01T02:00:00+01:00 is not after the start of \
                 `A` on line 2 (2027-03-01T01:00:00Z)"
            ),
            "{shown}"
        );
        let shown = error_at(
            "target,start_utc\nA,2027-03-02\nB,\nC,\nD,2027-03-01T23:59:59Z\n",
            5,
        );
        assert!(
            shown.contains("not after the start of `A` on line 2"),
            "{shown}"
        );
    }

    #[test]
    fn empty_files_and_plans_and_ragged_rows_are_refused() {
        for text in ["", "\u{feff}", "# only\n\n", " , \n"] {
            let shown = error_at(text, 0);
            assert!(shown.contains("the file is empty"), "{shown}");
        }
        let shown = error_at("# CAUTION\ntarget,roll_deg\n\n,\n", 2);
        assert!(shown.contains("an empty plan"), "{shown}");
        let shown = error_at("target,roll_deg\nA,1,2\n", 2);
        assert!(
            shown.contains("3 fields, but the header has 2 columns"),
            "{shown}"
        );
    }

    #[test]
    fn a_lone_carriage_return_ends_a_row_but_not_a_line() {
        // Found by fuzzing: rows split by a lone CR share the line counted by line feeds.
        let text = "target,roll_deg;,s\u{feff}t_utc\nA,10,2027-03-01T00:00:00Z\nB,,\n\
                    C,-5.5,2027-03\rD,180,201_-03-02\n";
        assert!(close(
            &parse(text).unwrap(),
            &[
                obs(0, 0.0, None, 2),
                obs(1, 0.0, None, 3),
                obs(2, 0.0, None, 4),
                obs(3, 0.0, None, 4),
            ]
        ));
        let shown = error_at("target,roll_deg\nA,1\rB,500\n", 2);
        assert!(shown.contains("target `B`: `roll_deg` is 500"), "{shown}");
    }

    #[test]
    fn read_plan_file_names_the_path() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("plan.csv");
        std::fs::write(&path, "target\nA\nQ\n").unwrap();
        let e = read_plan_file(&path, &targets()).unwrap_err();
        assert_eq!(e.source_name, path.display().to_string());
        assert_eq!(e.line, 3);
        std::fs::write(&path, b"target\n\xffA\n").unwrap();
        let e = read_plan_file(&path, &targets()).unwrap_err();
        assert!(e.message.contains("not UTF-8"), "{e}");
        let missing = dir.path().join("absent.csv");
        let e = read_plan_file(&missing, &targets()).unwrap_err();
        assert!(e.to_string().contains("cannot read the file"), "{e}");
        std::fs::write(&path, "target\nB\n").unwrap();
        assert!(close(
            &read_plan_file(&path, &targets()).unwrap(),
            &[obs(1, 0.0, None, 2)]
        ));
    }

    const GOOD: &str =
        "target,roll_deg,start_utc\nA,10,2027-03-01T00:00:00Z\nB,,\nC,-5,2027-03-02\n";

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn random_text_never_panics(text in "[ -~\t\r\n\u{feff}é]{0,200}") {
            let _ = parse(&text);
        }

        #[test]
        fn edited_files_never_panic(at in 0usize..GOOD.len(), insert in "[-,0-9.eEinfABCDTZ:+\"#\r\n ]{0,6}") {
            let mut text = GOOD.to_string();
            let mut at = at;
            while !text.is_char_boundary(at) { at -= 1; }
            text.insert_str(at, &insert);
            if let Ok(plan) = parse(&text) {
                // Whatever is accepted keeps the promises of the format.
                let mut seen = std::collections::HashSet::new();
                let mut last: Option<f64> = None;
                for o in &plan {
                    prop_assert!(seen.insert(o.target));
                    prop_assert!(o.roll_deg.is_finite() && (-180.0..=180.0).contains(&o.roll_deg));
                    if let Some(s) = o.start {
                        prop_assert!(last.is_none_or(|l| s.jd > l));
                        last = Some(s.jd);
                    }
                }
            }
        }
    }
}
