//! The constraints file: a CSV of sequencing constraints on the stops of an instance, named by
//! their TSPLIB node numbers (from 1).
//!
//! The first line is the header. It names the columns, in any order: `kind` always, and those of
//! `stop`, `other`, `earliest`, `latest` and `value` that the rows use. Every other line is one
//! constraint; cells are trimmed, an empty cell means "not given", blank lines and lines starting
//! with `#` are skipped. Times are integers in the units of the instance's costs.
//!
//! - `window`: `stop`, `earliest`, `latest`: service at `stop` may start in
//!   `earliest..=latest`; several rows for one stop give it several windows.
//! - `service`: `stop`, `value`: service at `stop` takes `value` (at least 0).
//! - `optional`: `stop`, `value`: `stop` may be left out at the penalty `value` (at least 0).
//! - `before`: `stop`, `other`, and optionally `earliest` and `latest`: `stop` is served before
//!   `other`, their starts of service at least `earliest` and at most `latest` apart.
//! - `edge`: `stop`, `other`: `other` comes directly after `stop`.
//! - `depot`: `stop`: the sequence starts (and a closed tour ends) at `stop`; node 1 when no
//!   row says.
//! - `start`: `value`: the time the sequence leaves the depot; 0 when no row says.
//! - `path`: no cell: the sequence ends anywhere instead of back at the depot.
//!
//! Cells a kind does not use must be empty. Each row is checked on its own (node numbers in
//! range, integers, a window or lag range not closing before it opens, a stop not paired with
//! itself) and against repeats (the same window, pair or per-stop setting given twice);
//! contradictions between different rows, such as a precedence cycle, are for the solver to find.
//!
//! ```
//! let text = "kind,stop,other,earliest,latest,value\n\
//!             ## a delivery day, in minutes\n\
//!             depot,1,,,,\n\
//!             start,,,,,480\n\
//!             window,2,,540,600,\n\
//!             window,2,,780,840,\n\
//!             service,2,,,,15\n\
//!             before,3,4,,90,\n\
//!             optional,5,,,,1000\n\
//!             edge,4,5,,,\n";
//! let c = wend_tsplib::parse_constraints(text, "day.csv", 5).unwrap();
//! assert_eq!(c.start_time, 480);
//! assert_eq!(c.windows[1].len(), 2);
//! assert_eq!(c.precedence[0].before, 2);
//! assert_eq!(c.precedence[0].max_lag, Some(90));
//! assert_eq!(c.penalty[4], Some(1000));
//! assert_eq!(c.fixed_edges, vec![(3, 4)]);
//! ```

use std::collections::HashMap;
use std::path::Path;

use wend::constraints::{Constraints, Precedence, Route, Window};

use super::error::{Ctx, TsplibError};
use super::lex::{parse_i64, parse_whole, shown, NumError};
use super::read_text;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Col {
    Kind,
    Stop,
    Other,
    Earliest,
    Latest,
    Value,
}

const COLS: [(Col, &str); 6] = [
    (Col::Kind, "kind"),
    (Col::Stop, "stop"),
    (Col::Other, "other"),
    (Col::Earliest, "earliest"),
    (Col::Latest, "latest"),
    (Col::Value, "value"),
];

fn col_name(c: Col) -> &'static str {
    COLS.iter()
        .find(|(k, _)| *k == c)
        .map_or("?", |(_, name)| name)
}

/// Each kind: its name, the cells it needs and the cells it may have.
const KINDS: [(&str, &[Col], &[Col]); 8] = [
    ("window", &[Col::Stop, Col::Earliest, Col::Latest], &[]),
    ("service", &[Col::Stop, Col::Value], &[]),
    ("optional", &[Col::Stop, Col::Value], &[]),
    (
        "before",
        &[Col::Stop, Col::Other],
        &[Col::Earliest, Col::Latest],
    ),
    ("edge", &[Col::Stop, Col::Other], &[]),
    ("depot", &[Col::Stop], &[]),
    ("start", &[Col::Value], &[]),
    ("path", &[], &[]),
];

/// What a row sets, to find the same setting given twice.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
enum Key {
    Window(usize, i64, i64),
    Service(usize),
    Optional(usize),
    Before(usize, usize),
    Edge(usize, usize),
    Depot,
    Start,
    Path,
}

/// One data row with the column positions of the header.
struct Row<'r> {
    ctx: Ctx<'r>,
    record: &'r csv::StringRecord,
    at: &'r HashMap<&'static str, usize>,
    line: usize,
    kind: &'r str,
    nodes: usize,
}

impl Row<'_> {
    fn cell(&self, c: Col) -> Option<&str> {
        let i = *self.at.get(col_name(c))?;
        self.record.get(i).filter(|s| !s.is_empty())
    }

    fn err(&self, message: impl Into<String>) -> TsplibError {
        self.ctx.err(self.line, message)
    }

    fn need(&self, c: Col) -> Result<&str, TsplibError> {
        self.cell(c).ok_or_else(|| {
            let name = col_name(c);
            let why = if self.at.contains_key(name) {
                "is empty"
            } else {
                "is not a column of the header"
            };
            self.err(format!("a {} row needs {name}, which {why}", self.kind))
        })
    }

    fn int(&self, c: Col) -> Result<Option<i64>, TsplibError> {
        let Some(tok) = self.cell(c) else {
            return Ok(None);
        };
        let name = col_name(c);
        parse_i64(tok).map(Some).map_err(|e| {
            let why = match e {
                NumError::Overflow => "does not fit a 64-bit integer",
                _ => "is not an integer",
            };
            self.err(format!("{name} {} {why}", shown(tok)))
        })
    }

    fn need_int(&self, c: Col) -> Result<i64, TsplibError> {
        self.need(c)?;
        self.int(c)?
            .ok_or_else(|| self.err(format!("{} is empty", col_name(c))))
    }

    fn amount(&self, c: Col) -> Result<i64, TsplibError> {
        let v = self.need_int(c)?;
        if v < 0 {
            return Err(self.err(format!(
                "the {} of a {} row must not be negative, found {v}",
                col_name(c),
                self.kind
            )));
        }
        Ok(v)
    }

    /// A stop as a 0-based index.
    fn stop(&self, c: Col) -> Result<usize, TsplibError> {
        let tok = self.need(c)?;
        let n = self.nodes;
        match parse_whole(tok) {
            Ok(id) if (1..=n).contains(&id) => Ok(id - 1),
            Ok(id) => Err(self.err(format!(
                "{} {id} is not a stop of this instance (stops are 1 to {n})",
                col_name(c)
            ))),
            Err(_) => Err(self.err(format!(
                "{} {} is not a stop number (1 to {n})",
                col_name(c),
                shown(tok)
            ))),
        }
    }

    fn pair(&self) -> Result<(usize, usize), TsplibError> {
        let (a, b) = (self.stop(Col::Stop)?, self.stop(Col::Other)?);
        if a == b {
            return Err(self.err(format!(
                "a {} row pairs stop {} with itself",
                self.kind,
                a + 1
            )));
        }
        Ok((a, b))
    }

    /// Cells the kind does not use must be empty.
    fn only(&self, needed: &[Col], allowed: &[Col]) -> Result<(), TsplibError> {
        for (c, name) in COLS.iter().skip(1) {
            if needed.contains(c) || allowed.contains(c) {
                continue;
            }
            if let Some(v) = self.cell(*c) {
                return Err(self.err(format!(
                    "a {} row takes no {name}, found {}",
                    self.kind,
                    shown(v)
                )));
            }
        }
        Ok(())
    }
}

/// Reads a constraints CSV (see the module documentation) for an instance of `nodes` stops.
/// `source` names the text in error messages.
pub fn parse_constraints(
    text: &str,
    source: &str,
    nodes: usize,
) -> Result<Constraints, TsplibError> {
    let ctx = Ctx { source };
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let mut records = reader.records();
    let mut lines = LineFinder {
        text,
        byte: 0,
        line: 1,
    };
    let csv_err = |e: csv::Error| ctx.err(0, format!("not readable as CSV: {e}"));
    let header = records
        .next()
        .ok_or_else(|| ctx.err(0, "the file is empty: expected a header such as \"kind,stop,other,earliest,latest,value\""))?
        .map_err(csv_err)?;
    let header_line = lines.line_of(&header);
    let at = read_header(ctx, &header, header_line)?;
    let width = header.len();

    let mut c = Constraints::new(nodes);
    let mut seen: HashMap<Key, usize> = HashMap::new();
    for record in records {
        let record = record.map_err(csv_err)?;
        let line = lines.line_of(&record);
        if record.len() != width {
            return Err(ctx.err(
                line,
                format!(
                    "expected {width} cells as in the header (line {header_line}), found {}",
                    record.len()
                ),
            ));
        }
        let kind_cell = at.get("kind").and_then(|&i| record.get(i)).unwrap_or("");
        let Some(&(kind, needed, allowed)) = KINDS.iter().find(|(k, _, _)| *k == kind_cell) else {
            return Err(ctx.err(
                line,
                format!(
                    "unknown kind {}: expected window, service, optional, before, edge, depot, \
                     start or path",
                    shown(kind_cell)
                ),
            ));
        };
        let row = Row {
            ctx,
            record: &record,
            at: &at,
            line,
            kind,
            nodes,
        };
        row.only(needed, allowed)?;
        for &col in needed {
            row.need(col)?;
        }
        let key = apply(&row, &mut c)?;
        if let Some(prev) = seen.insert(key, line) {
            return Err(ctx.err(
                line,
                format!("duplicate row: line {prev} already gives this {kind}"),
            ));
        }
    }
    for w in &mut c.windows {
        w.sort_by_key(|w| (w.earliest, w.latest));
    }
    Ok(c)
}

/// Fills in what one row says; returns what it set.
fn apply(row: &Row<'_>, c: &mut Constraints) -> Result<Key, TsplibError> {
    let key = match row.kind {
        "window" => {
            let stop = row.stop(Col::Stop)?;
            let earliest = row.need_int(Col::Earliest)?;
            let latest = row.need_int(Col::Latest)?;
            if latest < earliest {
                return Err(row.err(format!(
                    "the window of stop {} closes at {latest} before it opens at {earliest}",
                    stop + 1
                )));
            }
            if let Some(w) = c.windows.get_mut(stop) {
                w.push(Window { earliest, latest });
            }
            Key::Window(stop, earliest, latest)
        }
        "service" => {
            let stop = row.stop(Col::Stop)?;
            let v = row.amount(Col::Value)?;
            if let Some(s) = c.service.get_mut(stop) {
                *s = v;
            }
            Key::Service(stop)
        }
        "optional" => {
            let stop = row.stop(Col::Stop)?;
            let v = row.amount(Col::Value)?;
            if let Some(p) = c.penalty.get_mut(stop) {
                *p = Some(v);
            }
            Key::Optional(stop)
        }
        "before" => {
            let (before, after) = row.pair()?;
            let min_lag = row.int(Col::Earliest)?;
            let max_lag = row.int(Col::Latest)?;
            if let (Some(lo), Some(hi)) = (min_lag, max_lag) {
                if hi < lo {
                    return Err(row.err(format!(
                        "the most time between stops {} and {} ({hi}) is less than the least \
                         ({lo})",
                        before + 1,
                        after + 1
                    )));
                }
            }
            c.precedence.push(Precedence {
                before,
                after,
                min_lag,
                max_lag,
            });
            Key::Before(before, after)
        }
        "edge" => {
            let (a, b) = row.pair()?;
            c.fixed_edges.push((a, b));
            Key::Edge(a, b)
        }
        "depot" => {
            c.depot = row.stop(Col::Stop)?;
            Key::Depot
        }
        "start" => {
            c.start_time = row.need_int(Col::Value)?;
            Key::Start
        }
        _ => {
            c.route = Route::Path;
            Key::Path
        }
    };
    Ok(key)
}

/// Line numbers of records. The CSV reader gives each record's byte offset, which may point at
/// the end of the line before it and at blank or comment lines it skipped; the line of the
/// record is the first one from there that holds data.
struct LineFinder<'t> {
    text: &'t str,
    /// A byte offset at or before every record still to come, and the line it is on.
    byte: usize,
    line: usize,
}

impl LineFinder<'_> {
    fn line_of(&mut self, record: &csv::StringRecord) -> usize {
        record.position().map_or(0, |p| {
            self.line_at(usize::try_from(p.byte()).unwrap_or(usize::MAX))
        })
    }

    fn line_at(&mut self, byte: usize) -> usize {
        let byte = byte.min(self.text.len());
        if byte >= self.byte {
            let skipped = self.text.get(self.byte..byte).unwrap_or("");
            self.line += skipped.bytes().filter(|&b| b == b'\n').count();
            self.byte = byte;
        }
        let mut line = self.line;
        let mut rest = self.text.get(byte..).unwrap_or("");
        loop {
            let (head, tail) = match rest.find('\n') {
                Some(at) => (
                    rest.get(..at).unwrap_or(""),
                    rest.get(at + 1..).unwrap_or(""),
                ),
                None => (rest, ""),
            };
            let head = head.trim_end_matches('\r');
            if !(head.is_empty() || head.starts_with('#')) || tail.is_empty() {
                return line;
            }
            line += 1;
            rest = tail;
        }
    }
}

/// Column positions by name; `kind` must be there, every name known and given once.
fn read_header(
    ctx: Ctx<'_>,
    header: &csv::StringRecord,
    line: usize,
) -> Result<HashMap<&'static str, usize>, TsplibError> {
    let mut at = HashMap::new();
    for (i, cell) in header.iter().enumerate() {
        let Some(&(_, name)) = COLS.iter().find(|(_, name)| *name == cell) else {
            let hint = if KINDS.iter().any(|(k, _, _)| *k == cell) {
                "; the first line must be the header, such as \
                 \"kind,stop,other,earliest,latest,value\""
            } else {
                ""
            };
            return Err(ctx.err(
                line,
                format!(
                    "unknown column {} in the header: expected kind, stop, other, earliest, \
                     latest or value{hint}",
                    shown(cell)
                ),
            ));
        };
        if at.insert(name, i).is_some() {
            return Err(ctx.err(line, format!("column {name} named twice in the header")));
        }
    }
    if !at.contains_key("kind") {
        return Err(ctx.err(
            line,
            "the header has no kind column: the first line must name the columns, such as \
             \"kind,stop,other,earliest,latest,value\"",
        ));
    }
    Ok(at)
}

/// Reads a constraints CSV from a file; see [`parse_constraints`].
pub fn read_constraints(path: &Path, nodes: usize) -> Result<Constraints, TsplibError> {
    let (text, source) = read_text(path)?;
    parse_constraints(&text, &source, nodes)
}
