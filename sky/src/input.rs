//! Helpers of the readers (targets, links and plan CSVs, observatory profile TOML): UTF-8
//! text, line numbers and CSV headers.
//!
//! The sky adapter's input side: the targets CSV, the observatory profile TOML, and the
//! built-in demo observatory.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. Spacecraft operations can damage hardware; nothing read or made here is
//! a command to a spacecraft.
//!
//! - [`parse_targets`] / [`read_targets`]: a CSV of targets into [`crate::Target`]s,
//!   instrument names resolved against a [`crate::Profile`]. Format in [`targets`].
//! - [`parse_profile`] / [`read_profile`]: an observatory profile in TOML into a
//!   [`crate::Profile`], every value checked. Keys and units in [`profile`].
//! - [`parse_links`] / [`read_links`]: a CSV of timing links between targets into
//!   [`crate::Link`]s. Format in [`links`].
//! - [`parse_plan_file`] / [`read_plan_file`]: a plan CSV (an order of targets, with rolls and
//!   start times where given) into [`crate::plan_file::PlannedObservation`]s, to be replayed.
//!   Format in [`plan_file`].
//! - [`demo_profile`] / [`demo_targets`]: the invented "Lantern Deep-Sky Observatory" and its
//!   72 invented targets, embedded in the binary (`instances/sky/demo-profile.toml`,
//!   `instances/sky/demo-targets.csv`).
//!
//! Errors name the file, the place (line; row for targets, key for profiles), the target ids
//! concerned and the problem,
//! in the `file:line: ...` form of the TSPLIB reader. Nothing a user feeds in makes these
//! functions panic.

use std::path::Path;

/// A file's text, refusing bytes that are not UTF-8 (ids and names must not change silently).
/// On failure: (line, message), line 0 when the file could not be read at all.
pub(crate) fn read_utf8(path: &Path) -> Result<String, (usize, String)> {
    let bytes = std::fs::read(path).map_err(|e| (0, format!("cannot read the file: {e}")))?;
    String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        let line = 1 + e.as_bytes()[..at].iter().filter(|&&b| b == b'\n').count();
        (
            line,
            format!("the file is not UTF-8 text (bad byte at offset {at})"),
        )
    })
}

/// 1-based line of a byte offset in `text` (offsets past the end count as the last line).
pub(crate) fn line_of(text: &str, offset: usize) -> usize {
    let end = offset.min(text.len());
    1 + text.as_bytes()[..end]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
}

/// `:LINE` for an error message, or nothing for line 0 (an error not tied to one line).
pub(crate) fn line_part(line: usize) -> String {
    if line == 0 {
        String::new()
    } else {
        format!(":{line}")
    }
}

/// A CSV reader as every table of the adapter is read: no header handling (the callers find
/// the header row themselves, after comments), rows of any length (checked by the callers, with
/// a better message), fields trimmed, lines starting with `#` skipped. `text` must already have
/// lost its byte-order mark.
pub(crate) fn csv_reader(text: &str) -> csv::Reader<&[u8]> {
    csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(text.as_bytes())
}

/// The 1-based line a record starts on, from the byte offset the CSV reader reports (the
/// reader's own line count skips comments and blank lines, and its offset may point at the
/// blank or comment lines before the record, which are stepped over here).
pub(crate) fn record_line(text: &str, byte: u64) -> usize {
    let mut at = usize::try_from(byte).unwrap_or(usize::MAX).min(text.len());
    while at < text.len() {
        let rest = &text.as_bytes()[at..];
        let end = rest.iter().position(|&b| b == b'\n');
        let this = &rest[..end.unwrap_or(rest.len())];
        let skip = this.is_empty() || this == b"\r" || this.first() == Some(&b'#');
        match end {
            Some(e) if skip => at += e + 1,
            _ => break,
        }
    }
    line_of(text, at)
}

/// The columns of a CSV table: their names, in the order the documentation lists them, the
/// first `required` of them required.
pub(crate) struct Columns<'a> {
    pub(crate) names: &'a [&'a str],
    pub(crate) required: usize,
    /// True when columns not in `names` are passed over (a file written by another step that
    /// carries more than this reader needs); false when they are refused.
    pub(crate) ignore_unknown: bool,
}

impl Columns<'_> {
    /// "`a`, `b` (required) and `c`, `d` (optional)", for messages.
    pub(crate) fn list(&self) -> String {
        let quote = |names: &[&str]| {
            names
                .iter()
                .map(|c| format!("`{c}`"))
                .collect::<Vec<_>>()
                .join(", ")
        };
        let (required, optional) = self.names.split_at(self.required.min(self.names.len()));
        if optional.is_empty() {
            format!("{} (required)", quote(required))
        } else {
            format!(
                "{} (required) and {} (optional)",
                quote(required),
                quote(optional)
            )
        }
    }

    /// The field index of each column of `names` (None: absent, only allowed for optional
    /// ones), from the header record.
    pub(crate) fn find(&self, record: &csv::StringRecord) -> Result<Vec<Option<usize>>, String> {
        let mut cols = vec![None; self.names.len()];
        for (i, name) in record.iter().enumerate() {
            let Some(k) = self.names.iter().position(|c| *c == name) else {
                if self.ignore_unknown {
                    continue;
                }
                let what = if name.is_empty() {
                    format!("column {} has no name", i + 1)
                } else {
                    format!("unknown column `{}` (column {})", shown(name), i + 1)
                };
                return Err(format!(
                    "{what}; the header must name the columns {} and no others",
                    self.list()
                ));
            };
            if let Some(first) = cols[k] {
                return Err(format!(
                    "column `{}` appears twice (columns {} and {})",
                    shown(name),
                    first + 1,
                    i + 1
                ));
            }
            cols[k] = Some(i);
        }
        let missing: Vec<String> = self.names[..self.required]
            .iter()
            .zip(&cols)
            .filter(|(_, c)| c.is_none())
            .map(|(name, _)| format!("`{name}`"))
            .collect();
        if !missing.is_empty() {
            return Err(format!(
                "the header lacks the required column{} {}; it must name {}",
                if missing.len() > 1 { "s" } else { "" },
                missing.join(", "),
                self.list()
            ));
        }
        Ok(cols)
    }
}

/// Refuses a row whose field count differs from the header's.
pub(crate) fn check_row_len(record: &csv::StringRecord, header_len: usize) -> Result<(), String> {
    if record.len() == header_len {
        return Ok(());
    }
    Err(format!(
        "{} field{}, but the header has {} columns",
        record.len(),
        if record.len() == 1 { "" } else { "s" },
        header_len
    ))
}

/// A finite number from a cell (`column` names it in messages); empty cells are refused.
pub(crate) fn number(text: &str, column: &str) -> Result<f64, String> {
    if text.is_empty() {
        return Err(format!("`{column}` is empty"));
    }
    let v: f64 = text
        .parse()
        .map_err(|_| format!("`{column}` value `{}` is not a number", shown(text)))?;
    if !v.is_finite() {
        return Err(format!(
            "`{column}` value `{}` is not a finite number",
            shown(text)
        ));
    }
    Ok(v)
}

/// A UTC time from a cell (`column` names it in messages), by [`crate::output::parse_utc`].
pub(crate) fn utc(text: &str, column: &str) -> Result<crate::Epoch, String> {
    crate::utc::parse_utc(text).map_err(|_| {
        format!(
            "`{column}` value `{}` is not an ISO 8601 time with a UTC offset (like \
             2027-03-01T00:00:00Z) within the calendar",
            shown(text)
        )
    })
}

/// A value from the file for an error message: control characters (line breaks, NUL, ...)
/// escaped so that the message stays one line, and cut short so that a megabyte field does
/// not end up in it.
pub(crate) fn shown(value: &str) -> String {
    const MAX: usize = 40;
    let (head, cut) = match value.char_indices().nth(MAX) {
        Some((at, _)) => (&value[..at], "..."),
        None => (value, ""),
    };
    format!("{}{cut}", escape_controls(head))
}

/// `text` with every control character written as its Rust escape (`\n`, `\u{0}`).
pub(crate) fn escape_controls(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        if c.is_control() {
            out.extend(c.escape_default());
        } else {
            out.push(c);
        }
    }
    out
}
