//! Reading the targets CSV.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools.
//!
//! # Format
//!
//! Comma-separated, UTF-8 (a byte-order mark and CRLF line endings are accepted). The first
//! line that is not a comment is the header; it names the columns, in any order:
//!
//! | column         | required | meaning                                                             |
//! |----------------|----------|---------------------------------------------------------------------|
//! | `id`           | yes      | the target's identifier, unique in the file, not empty              |
//! | `ra_deg`       | yes      | right ascension, ICRS, degrees in [0, 360)                          |
//! | `dec_deg`      | yes      | declination, ICRS, degrees in [−90, 90]                             |
//! | `duration_s`   | yes      | dwell time, seconds, at least 0                                     |
//! | `instrument`   | no       | an instrument name of the profile; absent or empty: the first       |
//! | `priority`     | no       | whole number 1 (highest) to 9 (lowest); absent or empty: 5          |
//! | `window_start` | no       | proposal window opens: ISO 8601 time with a UTC offset (`Z`, `+02:00`) or a bare date (00:00 UTC) |
//! | `window_end`   | no       | proposal window closes, same form, after `window_start`             |
//! | `roll_min_deg` | no       | least roll offset allowed for this target, degrees                  |
//! | `roll_max_deg` | no       | greatest roll offset allowed, degrees; −180 ≤ min ≤ max ≤ 180       |
//!
//! `window_start` and `window_end` come together (both columns or neither), and so do
//! `roll_min_deg` and `roll_max_deg`. In a row, both cells of a pair are given or both are
//! empty (empty: no proposal window; the profile's roll range). The observation must start and
//! end inside its window. A roll range given here replaces the profile's for this target.
//!
//! Columns not in this table are **refused** (a misspelt `instrument` column would otherwise
//! silently send every target to the default instrument). Every row must have as many fields
//! as the header. Fields may be quoted and are trimmed of surrounding spaces. Lines starting
//! with `#` are comments; blank lines and rows whose fields are all empty are skipped. Numbers
//! must be finite (`nan`, `inf` and overflowing values such as `1e999` are refused).
//!
//! Errors name the file, the line in the file (comments and blank lines counted) and, for
//! data, the row (1-based, counting data rows only) and the target's id once it is read.

use std::collections::HashMap;
use std::path::Path;

use crate::{Profile, Target};

/// A targets file that could not be read, with the place the trouble was found.
///
/// Displayed as `{source_name}:{line}: row {row}: {message}`; the line part is left out when
/// `line == 0` and the row part when `row == 0`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{source_name}{}: {}{message}", super::line_part(*.line), row_part(*.row))]
pub struct TargetsError {
    /// The file name (or other label) the text came from.
    pub source_name: String,
    /// 1-based line in the file; 0 when the trouble is not tied to one line.
    pub line: usize,
    /// 1-based data row (the header and comments not counted); 0 when the trouble is not in
    /// a data row (the header, an empty file).
    pub row: usize,
    /// What was expected and what was found.
    pub message: String,
}

fn row_part(row: usize) -> String {
    if row == 0 {
        String::new()
    } else {
        format!("row {row}: ")
    }
}

impl TargetsError {
    fn new(source: &str, line: usize, row: usize, message: impl Into<String>) -> Self {
        TargetsError {
            source_name: source.to_string(),
            line,
            row,
            // Quoted fields may hold line breaks; an error stays one line.
            message: escape_controls(&message.into()),
        }
    }
}

/// The columns a targets file may have, in the order the documentation lists them.
const COLUMNS: [&str; 10] = [
    "id",
    "ra_deg",
    "dec_deg",
    "duration_s",
    "instrument",
    "priority",
    "window_start",
    "window_end",
    "roll_min_deg",
    "roll_max_deg",
];
/// Indices into [`COLUMNS`].
const ID: usize = 0;
const RA: usize = 1;
const DEC: usize = 2;
const DURATION: usize = 3;
const INSTRUMENT: usize = 4;
const PRIORITY: usize = 5;
const WINDOW_START: usize = 6;
const WINDOW_END: usize = 7;
const ROLL_MIN: usize = 8;
const ROLL_MAX: usize = 9;
/// The table of columns, the first four required, others refused.
const TABLE: super::input::Columns<'static> = super::input::Columns {
    names: &COLUMNS,
    required: 4,
    ignore_unknown: false,
};
/// Columns that come in pairs: both or neither.
const PAIRS: [(usize, usize); 2] = [(WINDOW_START, WINDOW_END), (ROLL_MIN, ROLL_MAX)];

/// Reads a targets CSV file; see [`parse_targets`]. The path, as displayed, names the file in
/// errors. Bytes that are not UTF-8 are refused.
pub fn read_targets(path: &Path, profile: &Profile) -> Result<Vec<Target>, TargetsError> {
    let source = path.display().to_string();
    let text =
        super::read_utf8(path).map_err(|(line, m)| TargetsError::new(&source, line, 0, m))?;
    parse_targets(&text, &source, profile)
}

/// Parses a targets CSV (format in the [module documentation](self)) into targets in file
/// order, instrument names turned into indices of `profile.instruments`. `source` names the
/// text in errors (usually the file name).
///
/// Refused, with the file, line and row named (and the target id, once read): an empty file or
/// one without data rows, missing, unknown or repeated columns, one column of a pair without
/// the other, rows with the wrong number of fields, empty ids, duplicate ids (both rows named),
/// values that are not finite numbers, RA outside [0, 360), Dec outside [−90, 90], negative
/// durations, instruments the profile does not know (the known ones listed), priorities that
/// are not whole numbers from 1 to 9, one cell of a pair without the other, times that are not
/// ISO 8601 with a UTC offset, windows that do not end after they start, and roll ranges
/// outside [−180, 180] or with min above max.
pub fn parse_targets(
    text: &str,
    source: &str,
    profile: &Profile,
) -> Result<Vec<Target>, TargetsError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let err = |line: usize, row: usize, m: String| TargetsError::new(source, line, row, m);
    let mut reader = super::input::csv_reader(text);

    let mut header: Option<(usize, Vec<Option<usize>>)> = None;
    let mut header_len = 0;
    let mut targets = Vec::new();
    let mut seen: HashMap<String, (usize, usize)> = HashMap::new();

    for record in reader.records() {
        let record = record.map_err(|e| {
            let line = e.position().map_or(0, |p| record_line(text, p.byte()));
            err(line, 0, format!("not readable as CSV: {e}"))
        })?;
        let line = record.position().map_or(0, |p| record_line(text, p.byte()));
        if record.iter().all(str::is_empty) {
            continue;
        }
        let Some((_, cols)) = &header else {
            header_len = record.len();
            header = Some((line, read_header(&record).map_err(|m| err(line, 0, m))?));
            continue;
        };
        let row = targets.len() + 1;
        let target = read_row(&record, cols, header_len, profile).map_err(|m| err(line, row, m))?;
        if let Some(&(first_row, first_line)) = seen.get(&target.id) {
            return Err(err(
                line,
                row,
                format!(
                    "duplicate id `{}`: row {first_row} (line {first_line}) has it too",
                    shown(&target.id)
                ),
            ));
        }
        seen.insert(target.id.clone(), (row, line));
        targets.push(target);
    }

    match header {
        None => Err(err(
            0,
            0,
            format!(
                "the file is empty: expected a header row naming the columns {}",
                column_list()
            ),
        )),
        Some((line, _)) if targets.is_empty() => Err(err(
            line,
            0,
            "no targets: the file has a header but no data rows".to_string(),
        )),
        Some(_) => Ok(targets),
    }
}

use super::input::record_line;
use super::input::{escape_controls, shown};

fn column_list() -> String {
    TABLE.list()
}

/// The field index of each of [`COLUMNS`] (None: absent, only allowed for optional ones).
fn read_header(record: &csv::StringRecord) -> Result<Vec<Option<usize>>, String> {
    let cols = TABLE.find(record)?;
    for (a, b) in PAIRS {
        for (given, lacking) in [(a, b), (b, a)] {
            if cols[given].is_some() && cols[lacking].is_none() {
                return Err(format!(
                    "column `{}` needs column `{}` too: give both or neither",
                    COLUMNS[given], COLUMNS[lacking]
                ));
            }
        }
    }
    Ok(cols)
}

fn read_row(
    record: &csv::StringRecord,
    cols: &[Option<usize>],
    header_len: usize,
    profile: &Profile,
) -> Result<Target, String> {
    super::input::check_row_len(record, header_len)?;
    let cell = |k: usize| cols[k].and_then(|i| record.get(i)).unwrap_or("");
    let id = cell(ID);
    if id.is_empty() {
        return Err("`id` is empty".to_string());
    }
    read_values(id, &cell, profile).map_err(|m| format!("target `{}`: {m}", shown(id)))
}

/// The values of the row of target `id` (`cell(k)`: the cell of column `k`, "" when absent).
fn read_values<'a>(
    id: &str,
    cell: &dyn Fn(usize) -> &'a str,
    profile: &Profile,
) -> Result<Target, String> {
    // Values out of range are quoted as written: `Display` would spell 1e300 in 301 digits.
    let ra_deg = number(cell(RA), COLUMNS[RA])?;
    if !(0.0..360.0).contains(&ra_deg) {
        return Err(format!("`ra_deg` is {}, outside [0, 360)", shown(cell(RA))));
    }
    let dec_deg = number(cell(DEC), COLUMNS[DEC])?;
    if !(-90.0..=90.0).contains(&dec_deg) {
        return Err(format!(
            "`dec_deg` is {}, outside [-90, 90]",
            shown(cell(DEC))
        ));
    }
    let duration_s = number(cell(DURATION), COLUMNS[DURATION])?;
    if duration_s < 0.0 {
        return Err(format!(
            "`duration_s` is {}, negative",
            shown(cell(DURATION))
        ));
    }
    let instrument = instrument_index(cell(INSTRUMENT), profile)?;
    let priority = priority(cell(PRIORITY))?;
    let window = match pair(cell, WINDOW_START, WINDOW_END)? {
        None => None,
        Some((a, b)) => {
            let start = super::input::utc(a, COLUMNS[WINDOW_START])?;
            let end = super::input::utc(b, COLUMNS[WINDOW_END])?;
            if start.jd >= end.jd {
                return Err(format!(
                    "`window_end` {} is not after `window_start` {}: the window must end after \
                     it starts",
                    shown(b),
                    shown(a)
                ));
            }
            Some((start, end))
        }
    };
    let roll_range_deg = match pair(cell, ROLL_MIN, ROLL_MAX)? {
        None => None,
        Some((a, b)) => {
            let min = number(a, COLUMNS[ROLL_MIN])?;
            let max = number(b, COLUMNS[ROLL_MAX])?;
            for (v, text, k) in [(min, a, ROLL_MIN), (max, b, ROLL_MAX)] {
                if !(-180.0..=180.0).contains(&v) {
                    return Err(format!(
                        "`{}` is {}, outside [-180, 180]",
                        COLUMNS[k],
                        shown(text)
                    ));
                }
            }
            if min > max {
                return Err(format!(
                    "`roll_min_deg` {} is above `roll_max_deg` {}",
                    shown(a),
                    shown(b)
                ));
            }
            Some((min, max))
        }
    };
    Ok(Target {
        id: id.to_string(),
        ra_deg,
        dec_deg,
        duration_s,
        instrument,
        priority,
        window,
        roll_range_deg,
    })
}

/// The two cells of a pair of columns: both given, or both empty (None); one alone is refused.
fn pair<'a>(
    cell: &dyn Fn(usize) -> &'a str,
    a: usize,
    b: usize,
) -> Result<Option<(&'a str, &'a str)>, String> {
    match (cell(a), cell(b)) {
        ("", "") => Ok(None),
        (x, "") | ("", x) => {
            let (given, empty) = if cell(a).is_empty() { (b, a) } else { (a, b) };
            Err(format!(
                "`{}` is {} but `{}` is empty: give both or neither",
                COLUMNS[given],
                shown(x),
                COLUMNS[empty]
            ))
        }
        (x, y) => Ok(Some((x, y))),
    }
}

/// The priority grade of a cell: empty for the default, else a whole number from 1 to
/// [`crate::LOWEST_PRIORITY`].
fn priority(text: &str) -> Result<u8, String> {
    if text.is_empty() {
        return Ok(crate::DEFAULT_PRIORITY);
    }
    let range = format!(
        "a whole number from 1 (highest) to {} (lowest)",
        crate::LOWEST_PRIORITY
    );
    match text.parse::<i64>() {
        Ok(p) if (1..=i64::from(crate::LOWEST_PRIORITY)).contains(&p) => {
            u8::try_from(p).map_err(|_| format!("`priority` is {}, not {range}", shown(text)))
        }
        _ => Err(format!("`priority` is {}, not {range}", shown(text))),
    }
}

use super::input::number;

fn instrument_index(name: &str, profile: &Profile) -> Result<usize, String> {
    if profile.instruments.is_empty() {
        return Err("the profile has no instruments to observe with".to_string());
    }
    if name.is_empty() {
        return Ok(0);
    }
    profile
        .instruments
        .iter()
        .position(|i| i.name == name)
        .ok_or_else(|| {
            let known: Vec<String> = profile
                .instruments
                .iter()
                .map(|i| format!("`{}`", shown(&i.name)))
                .collect();
            format!(
                "unknown instrument `{}`; the profile knows {}",
                shown(name),
                known.join(", ")
            )
        })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Instrument;
    use proptest::prelude::*;

    /// A profile written out by hand, independent of the profile reader.
    fn profile() -> Profile {
        Profile {
            name: "Test bench".to_string(),
            slew_rate_deg_s: 0.1,
            slew_accel_deg_s2: 0.001,
            thermal_warm_s_per_deg: 10.0,
            thermal_cool_s_per_deg: 2.0,
            instruments: vec![
                Instrument {
                    name: "cam".to_string(),
                    settle_s: 60.0,
                },
                Instrument {
                    name: "spec".to_string(),
                    settle_s: 200.0,
                },
                Instrument {
                    name: "phot".to_string(),
                    settle_s: 30.0,
                },
            ],
            setup_s: vec![vec![0.0; 3]; 3],
            elongation_min_deg: 97.0,
            elongation_max_deg: 153.0,
            shield_area_m2: 64.0,
            shield_normal: [1.0, 0.0, 0.0],
            specular_reflectivity: 0.5,
            diffuse_reflectivity: 0.1,
            pressure_offset_m: [0.0, 0.2, 1.5],
            wheel_limit_nms: 20.0,
            wheel_margin: 0.8,
            thruster_arm_m: 1.0,
            thruster_isp_s: 220.0,
            dump_s: 600.0,
            roll_range_deg: (0.0, 0.0),
            roll_steps: 3,
            start_pointing: None,
            start_momentum_nms: [0.0; 3],
        }
    }

    fn parse(text: &str) -> Result<Vec<Target>, TargetsError> {
        parse_targets(text, "t.csv", &profile())
    }

    fn target(id: &str, ra: f64, dec: f64, dur: f64, inst: usize) -> Target {
        Target {
            id: id.to_string(),
            ra_deg: ra,
            dec_deg: dec,
            duration_s: dur,
            instrument: inst,
            priority: crate::DEFAULT_PRIORITY,
            window: None,
            roll_range_deg: None,
        }
    }

    /// The error for `text`, checked to name the file, the line and the row.
    fn error_at(text: &str, line: usize, row: usize) -> String {
        let e = match parse(text) {
            Ok(t) => panic!("expected an error, got {t:?}"),
            Err(e) => e,
        };
        assert_eq!(e.source_name, "t.csv");
        assert_eq!((e.line, e.row), (line, row), "{e}");
        let shown = e.to_string();
        assert!(shown.starts_with(&format!("t.csv:{line}: ")), "{shown}");
        if row > 0 {
            assert!(shown.contains(&format!("row {row}: ")), "{shown}");
        }
        shown
    }

    #[test]
    fn reads_columns_in_any_order() {
        let text = "instrument,duration_s,id,dec_deg,ra_deg\n\
                    spec,600,A-1,-12.5,10.25\n\
                    phot,7200,A-2,90,359.5\n\
                    cam,0,\"A,3\",-90,0\n";
        assert_eq!(
            parse(text).unwrap(),
            vec![
                target("A-1", 10.25, -12.5, 600.0, 1),
                target("A-2", 359.5, 90.0, 7200.0, 2),
                target("A,3", 0.0, -90.0, 0.0, 0),
            ]
        );
    }

    #[test]
    fn missing_instrument_column_or_cell_means_the_first_instrument() {
        let text = "id,ra_deg,dec_deg,duration_s\nA,1,2,3\n";
        assert_eq!(parse(text).unwrap(), vec![target("A", 1.0, 2.0, 3.0, 0)]);
        let text = "id,ra_deg,dec_deg,duration_s,instrument\nA,1,2,3,\nB,4,5,6,  phot \n";
        assert_eq!(
            parse(text).unwrap(),
            vec![target("A", 1.0, 2.0, 3.0, 0), target("B", 4.0, 5.0, 6.0, 2)]
        );
    }

    #[test]
    fn crlf_and_byte_order_mark_are_accepted() {
        let text =
            "\u{feff}id,ra_deg,dec_deg,duration_s,instrument\r\nA,1,2,3,spec\r\nB,4,5,6,cam\r\n";
        assert_eq!(
            parse(text).unwrap(),
            vec![target("A", 1.0, 2.0, 3.0, 1), target("B", 4.0, 5.0, 6.0, 0)]
        );
        // The line numbers still count CRLF lines once each.
        let text = "\u{feff}# c\r\nid,ra_deg,dec_deg,duration_s\r\nA,1,2,3\r\nB,400,2,3\r\n";
        let shown = error_at(text, 4, 2);
        assert!(
            shown.contains("`ra_deg` is 400, outside [0, 360)"),
            "{shown}"
        );
    }

    #[test]
    fn comments_and_blank_lines_count_as_lines_not_rows() {
        let text = "# targets\n\nid,ra_deg,dec_deg,duration_s\n# first\nA,1,2,3\n\n,,,\nB,1,95,3\n";
        let shown = error_at(text, 8, 2);
        assert!(
            shown.contains("`dec_deg` is 95, outside [-90, 90]"),
            "{shown}"
        );
    }

    #[test]
    fn ra_outside_0_to_360_is_refused() {
        let h = "id,ra_deg,dec_deg,duration_s\nA,0,0,1\n";
        let shown = error_at(&format!("{h}B,360,0,1\n"), 3, 2);
        assert!(
            shown.contains("`ra_deg` is 360, outside [0, 360)"),
            "{shown}"
        );
        let shown = error_at(&format!("{h}B,-0.5,0,1\n"), 3, 2);
        assert!(shown.contains("`ra_deg` is -0.5, outside"), "{shown}");
        // Just inside the range is fine.
        assert_eq!(parse(&format!("{h}B,359.9999,0,1\n")).unwrap().len(), 2);
    }

    #[test]
    fn dec_outside_minus_90_to_90_is_refused() {
        let h = "id,ra_deg,dec_deg,duration_s\n";
        let shown = error_at(&format!("{h}A,10,-90.001,1\n"), 2, 1);
        assert!(
            shown.contains("`dec_deg` is -90.001, outside [-90, 90]"),
            "{shown}"
        );
        let shown = error_at(&format!("{h}A,10,91,1\n"), 2, 1);
        assert!(shown.contains("`dec_deg` is 91"), "{shown}");
    }

    #[test]
    fn negative_durations_are_refused() {
        let shown = error_at("id,ra_deg,dec_deg,duration_s\nA,10,0,-1\n", 2, 1);
        assert!(shown.contains("`duration_s` is -1, negative"), "{shown}");
    }

    #[test]
    fn non_finite_values_are_refused_in_every_column() {
        let h = "id,ra_deg,dec_deg,duration_s\n";
        for (row, column) in [
            ("A,NaN,0,1", "ra_deg"),
            ("A,nan,0,1", "ra_deg"),
            ("A,1,inf,1", "dec_deg"),
            ("A,1,-infinity,1", "dec_deg"),
            ("A,1,0,inf", "duration_s"),
            ("A,1,0,1e999", "duration_s"),
        ] {
            let shown = error_at(&format!("{h}{row}\n"), 2, 1);
            assert!(
                shown.contains(&format!("`{column}` value"))
                    && shown.contains("not a finite number"),
                "{row}: {shown}"
            );
        }
    }

    #[test]
    fn bad_and_empty_numbers_are_refused() {
        let h = "id,ra_deg,dec_deg,duration_s\nA,1,2,3\n";
        let shown = error_at(&format!("{h}B,1.2.3,0,1\n"), 3, 2);
        assert!(
            shown.contains("`ra_deg` value `1.2.3` is not a number"),
            "{shown}"
        );
        let shown = error_at(&format!("{h}B,1,0,ten\n"), 3, 2);
        assert!(
            shown.contains("`duration_s` value `ten` is not a number"),
            "{shown}"
        );
        let shown = error_at(&format!("{h}B,1,,1\n"), 3, 2);
        assert!(shown.contains("`dec_deg` is empty"), "{shown}");
    }

    #[test]
    fn duplicate_ids_name_both_rows() {
        let text = "id,ra_deg,dec_deg,duration_s\nA,1,2,3\nB,1,2,3\n#\nA,4,5,6\n";
        let shown = error_at(text, 5, 3);
        assert!(
            shown.contains("duplicate id `A`: row 1 (line 2) has it too"),
            "{shown}"
        );
    }

    #[test]
    fn errors_stay_one_short_line_whatever_the_values() {
        // A quoted id with a line break, repeated.
        let text = "id,ra_deg,dec_deg,duration_s\nA,1,2,3\n\"B\nX\",1,2,3\n\"B\nX\",4,5,6\n";
        let shown = error_at(text, 5, 3);
        assert!(
            shown.contains("duplicate id `B\\nX`: row 2 (line 3)"),
            "{shown}"
        );
        assert!(!shown.contains('\n'), "{shown}");
        // Huge values are quoted as written, not spelt out in 301 digits.
        let shown = error_at("id,ra_deg,dec_deg,duration_s\nA,1e300,2,3\n", 2, 1);
        assert!(
            shown.contains("`ra_deg` is 1e300, outside [0, 360)"),
            "{shown}"
        );
        let shown = error_at("id,ra_deg,dec_deg,duration_s\nA,1,-1e300,3\n", 2, 1);
        assert!(shown.contains("`dec_deg` is -1e300, outside"), "{shown}");
        // NUL bytes and carriage returns in a column name, a number, an instrument.
        let shown = error_at("id,ra_deg,dec_deg,duration_s,\"x\u{0}\ry\"\n", 1, 0);
        assert!(shown.contains("unknown column `x\\u{0}\\ry`"), "{shown}");
        let shown = error_at("id,ra_deg,dec_deg,duration_s\nA,\"1\n2\",2,3\n", 2, 1);
        assert!(
            shown.contains("`ra_deg` value `1\\n2` is not a number"),
            "{shown}"
        );
        let text = "id,ra_deg,dec_deg,duration_s,instrument\nA,1,2,3,\"c\nam\"\n";
        let shown = error_at(text, 2, 1);
        assert!(shown.contains("unknown instrument `c\\nam`"), "{shown}");
        // A long id is cut short.
        let long = "L".repeat(5000);
        let text = format!("id,ra_deg,dec_deg,duration_s\n{long},1,2,3\n{long},1,2,3\n");
        let shown = error_at(&text, 3, 2);
        assert!(shown.len() < 200, "{shown}");
    }

    #[test]
    fn empty_ids_are_refused() {
        let shown = error_at("id,ra_deg,dec_deg,duration_s\n  ,1,2,3\n", 2, 1);
        assert!(shown.contains("`id` is empty"), "{shown}");
    }

    #[test]
    fn unknown_instruments_list_the_known_ones() {
        let text = "id,ra_deg,dec_deg,duration_s,instrument\nA,1,2,3,cam\nB,1,2,3,Cam\n";
        let shown = error_at(text, 3, 2);
        assert!(
            shown.contains("unknown instrument `Cam`; the profile knows `cam`, `spec`, `phot`"),
            "{shown}"
        );
    }

    #[test]
    fn a_profile_without_instruments_is_an_error_not_a_panic() {
        let mut p = profile();
        p.instruments.clear();
        let e = parse_targets("id,ra_deg,dec_deg,duration_s\nA,1,2,3\n", "t.csv", &p).unwrap_err();
        assert_eq!((e.line, e.row), (2, 1));
        assert!(e.message.contains("no instruments"), "{e}");
    }

    #[test]
    fn empty_files_are_refused() {
        for text in ["", "\u{feff}", "\n\n", "# only a comment\r\n", " , \n"] {
            let e = parse(text).unwrap_err();
            assert_eq!((e.line, e.row), (0, 0), "{text:?}");
            let shown = e.to_string();
            assert!(
                shown.starts_with("t.csv: the file is empty: expected a header row"),
                "{shown}"
            );
        }
        let shown = error_at("# c\nid,ra_deg,dec_deg,duration_s\n\n", 2, 0);
        assert!(
            shown.contains("no targets: the file has a header but no data rows"),
            "{shown}"
        );
    }

    #[test]
    fn missing_required_columns_are_named() {
        let shown = error_at("id,dec_deg\nA,1\n", 1, 0);
        assert!(
            shown.contains("lacks the required columns `ra_deg`, `duration_s`"),
            "{shown}"
        );
        let shown = error_at("\n\nid,ra_deg,dec_deg\n", 3, 0);
        assert!(
            shown.contains("lacks the required column `duration_s`;"),
            "{shown}"
        );
    }

    #[test]
    fn unknown_empty_and_repeated_columns_are_refused() {
        let shown = error_at(
            "id,ra_deg,dec_deg,duration_s,instrumnet\nA,1,2,3,cam\n",
            1,
            0,
        );
        assert!(
            shown.contains("unknown column `instrumnet` (column 5)"),
            "{shown}"
        );
        assert!(
            shown.contains("(required) and `instrument`, `priority`, `window_start`"),
            "{shown}"
        );
        assert!(shown.contains("`roll_max_deg` (optional)"), "{shown}");
        let shown = error_at("id,ra_deg,dec_deg,duration_s,\nA,1,2,3,\n", 1, 0);
        assert!(shown.contains("column 5 has no name"), "{shown}");
        let shown = error_at("id,ra_deg,id,dec_deg,duration_s\n", 1, 0);
        assert!(
            shown.contains("column `id` appears twice (columns 1 and 3)"),
            "{shown}"
        );
        // A file that starts with data, without a header.
        let shown = error_at("A,1,2,3\n", 1, 0);
        assert!(shown.contains("unknown column `A` (column 1)"), "{shown}");
    }

    #[test]
    fn rows_with_the_wrong_number_of_fields_are_refused() {
        let h = "id,ra_deg,dec_deg,duration_s\n";
        let shown = error_at(&format!("{h}A,1,2\n"), 2, 1);
        assert!(
            shown.contains("3 fields, but the header has 4 columns"),
            "{shown}"
        );
        let shown = error_at(&format!("{h}A,1,2,3,4\n"), 2, 1);
        assert!(
            shown.contains("5 fields, but the header has 4 columns"),
            "{shown}"
        );
    }

    #[test]
    fn read_targets_names_the_path() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("pool.csv");
        std::fs::write(&path, "id,ra_deg,dec_deg,duration_s\nA,1,2,3\nB,1,-100,3\n").unwrap();
        let e = read_targets(&path, &profile()).unwrap_err();
        assert_eq!(e.source_name, path.display().to_string());
        assert_eq!((e.line, e.row), (3, 2));

        std::fs::write(&path, b"id,ra_deg,dec_deg,duration_s\nA\xff,1,2,3\n").unwrap();
        let e = read_targets(&path, &profile()).unwrap_err();
        assert_eq!(e.line, 2);
        assert!(e.message.contains("not UTF-8"), "{e}");

        let missing = dir.path().join("absent.csv");
        let e = read_targets(&missing, &profile()).unwrap_err();
        assert!(e
            .to_string()
            .starts_with(&format!("{}: cannot read the file", missing.display())));

        std::fs::write(&path, "id,ra_deg,dec_deg,duration_s\nA,1,2,3\n").unwrap();
        assert_eq!(
            read_targets(&path, &profile()).unwrap(),
            vec![target("A", 1.0, 2.0, 3.0, 0)]
        );
    }

    /// Julian date of a UTC time given by hand: days since 2000-01-01T12:00 UTC (JD
    /// 2451545.0 in UTC) plus this crate's fixed TT − UTC of 69.184 s.
    fn jd_utc(days_after_2000_noon: f64) -> f64 {
        2_451_545.0 + days_after_2000_noon + 69.184 / 86_400.0
    }

    #[test]
    fn reads_priority_window_and_roll_range() {
        let text = "id,ra_deg,dec_deg,duration_s,priority,window_start,window_end,roll_min_deg,roll_max_deg\n\
                    A,1,2,3,1,2027-03-01T00:00:00Z,2027-03-02T12:00:00+02:00,-15,20.5\n\
                    B,4,5,6,,,,,\n\
                    C,7,8,9,9,2027-03-01,2027-03-03,0,0\n";
        let got = parse(text).unwrap();
        // 2027-03-01T00:00Z is 9920.5 days after 2000-01-01T12:00 UTC (27 years of which 7
        // leap years, 2000 to 2024, then the 59 days of January and February 2027, less the
        // half day; counted by hand); +02:00 makes the end 10:00Z.
        let d0 = 27.0 * 365.0 + 7.0 + 59.0 - 0.5;
        let mut a = target("A", 1.0, 2.0, 3.0, 0);
        a.priority = 1;
        a.roll_range_deg = Some((-15.0, 20.5));
        let (s, e) = got[0].window.unwrap();
        assert!((s.jd - jd_utc(d0)).abs() < 1e-9, "{}", s.jd);
        assert!(
            (e.jd - jd_utc(d0 + 1.0 + 10.0 / 24.0)).abs() < 1e-9,
            "{}",
            e.jd
        );
        a.window = got[0].window;
        assert_eq!(got[0], a);
        assert_eq!(got[1], target("B", 4.0, 5.0, 6.0, 0));
        assert_eq!(got[1].priority, 5);
        assert_eq!(got[2].priority, 9);
        assert_eq!(got[2].roll_range_deg, Some((0.0, 0.0)));
        let (s, e) = got[2].window.unwrap();
        assert!((s.jd - jd_utc(d0)).abs() < 1e-9 && (e.jd - jd_utc(d0 + 2.0)).abs() < 1e-9);
    }

    #[test]
    fn priorities_must_be_whole_numbers_from_1_to_9() {
        let h = "id,ra_deg,dec_deg,duration_s,priority\nA,1,2,3,2\n";
        for bad in [
            "0",
            "10",
            "-1",
            "2.5",
            "high",
            "300",
            "99999999999999999999999",
            "nan",
        ] {
            let shown = error_at(&format!("{h}B,1,2,3,{bad}\n"), 3, 2);
            assert!(
                shown.contains(&format!(
                    "target `B`: `priority` is {bad}, not a whole number from 1 (highest) to 9"
                )),
                "{shown}"
            );
        }
    }

    #[test]
    fn window_columns_and_cells_come_in_pairs() {
        let shown = error_at(
            "id,ra_deg,dec_deg,duration_s,window_start\nA,1,2,3,2027-03-01\n",
            1,
            0,
        );
        assert!(
            shown.contains("column `window_start` needs column `window_end` too"),
            "{shown}"
        );
        let shown = error_at("id,ra_deg,dec_deg,window_end,duration_s\n", 1, 0);
        assert!(
            shown.contains("column `window_end` needs column `window_start` too"),
            "{shown}"
        );
        let h = "id,ra_deg,dec_deg,duration_s,window_start,window_end\n";
        let shown = error_at(&format!("{h}A,1,2,3,2027-03-01,\n"), 2, 1);
        assert!(
            shown.contains("target `A`: `window_start` is 2027-03-01 but `window_end` is empty"),
            "{shown}"
        );
        let shown = error_at(&format!("{h}A,1,2,3,,2027-03-01\n"), 2, 1);
        assert!(
            shown.contains("`window_end` is 2027-03-01 but `window_start` is empty"),
            "{shown}"
        );
    }

    #[test]
    fn windows_must_be_utc_times_that_end_after_they_start() {
        let h = "id,ra_deg,dec_deg,duration_s,window_start,window_end\n";
        for (cells, column) in [
            ("2027-03-01T00:00:00,2027-03-02", "window_start"),
            ("2027-03-01,tomorrow", "window_end"),
            ("2027-02-30,2027-03-02", "window_start"),
            ("2027-03-01,99999-01-01T00:00:00Z", "window_end"),
            ("nan,2027-03-02", "window_start"),
        ] {
            let shown = error_at(&format!("{h}A,1,2,3,{cells}\n"), 2, 1);
            assert!(
                shown.contains(&format!("target `A`: `{column}` value `"))
                    && shown.contains("is not an ISO 8601 time with a UTC offset"),
                "{cells}: {shown}"
            );
        }
        for cells in [
            "2027-03-02,2027-03-01",
            "2027-03-01T00:00:00Z,2027-03-01T02:00:00+02:00",
        ] {
            let shown = error_at(&format!("{h}A,1,2,3,{cells}\n"), 2, 1);
            assert!(
                shown.contains("is not after `window_start`"),
                "{cells}: {shown}"
            );
        }
    }

    #[test]
    fn roll_ranges_must_be_finite_ordered_and_within_a_half_turn() {
        let shown = error_at("id,ra_deg,dec_deg,duration_s,roll_max_deg\n", 1, 0);
        assert!(
            shown.contains("column `roll_max_deg` needs column `roll_min_deg` too"),
            "{shown}"
        );
        let h = "id,ra_deg,dec_deg,duration_s,roll_min_deg,roll_max_deg\nA,1,2,3,-180,180\n";
        for (cells, wanted) in [
            (
                "-181,0",
                "target `B`: `roll_min_deg` is -181, outside [-180, 180]",
            ),
            ("0,180.5", "`roll_max_deg` is 180.5, outside [-180, 180]"),
            ("0,1e300", "`roll_max_deg` is 1e300, outside"),
            ("nan,0", "`roll_min_deg` value `nan` is not a finite number"),
            ("0,inf", "`roll_max_deg` value `inf` is not a finite number"),
            ("10,-10", "`roll_min_deg` 10 is above `roll_max_deg` -10"),
            ("5,", "`roll_min_deg` is 5 but `roll_max_deg` is empty"),
            ("x,5", "`roll_min_deg` value `x` is not a number"),
        ] {
            let shown = error_at(&format!("{h}B,1,2,3,{cells}\n"), 3, 2);
            assert!(shown.contains(wanted), "{cells}: {shown}");
        }
        let got = parse(h).unwrap();
        assert_eq!(got[0].roll_range_deg, Some((-180.0, 180.0)));
    }

    #[test]
    fn errors_after_the_id_name_the_target() {
        let shown = error_at("id,ra_deg,dec_deg,duration_s\nA,1,2,3\nB-7,1,2,-3\n", 3, 2);
        assert!(
            shown.contains("row 2: target `B-7`: `duration_s` is -3, negative"),
            "{shown}"
        );
    }

    const GOOD: &str = "id,ra_deg,dec_deg,duration_s,instrument,priority,window_start,window_end,roll_min_deg,roll_max_deg\n\
                        A,1,2,3,cam,1,2027-03-01,2027-03-02T00:00:00Z,-10,10\n\
                        B,4.5,-6,700,spec,,,,,\n";

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn random_text_never_panics(text in "[ -~\t\r\n\u{feff}é]{0,200}") {
            let _ = parse(&text);
        }

        #[test]
        fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..300)) {
            let _ = parse(&String::from_utf8_lossy(&bytes));
        }

        #[test]
        fn edited_files_never_panic(at in 0usize..GOOD.len(), insert in "[-,0-9.eEinfaTZ:+\"#\r\n ]{0,6}") {
            let mut text = GOOD.to_string();
            let mut at = at;
            while !text.is_char_boundary(at) { at -= 1; }
            text.insert_str(at, &insert);
            let _ = parse(&text);
        }
    }
}
