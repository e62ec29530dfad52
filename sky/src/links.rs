//! Reading the links file (CSV): timing links between targets of the pool.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools.
//!
//! # Format
//!
//! Comma-separated, UTF-8 (a byte-order mark and CRLF line endings are accepted), read like the
//! targets file: lines starting with `#` are comments, blank lines and rows whose fields are
//! all empty are skipped, fields may be quoted and are trimmed. The first line that is not a
//! comment is the header; it names the columns, in any order:
//!
//! | column      | required | meaning                                                           |
//! |-------------|----------|-------------------------------------------------------------------|
//! | `kind`      | yes      | `after`, `before` or `group` (below)                              |
//! | `first`     | yes      | a target id of the targets file                                   |
//! | `second`    | yes      | another target id of the targets file                             |
//! | `min_lag_s` | no       | least time from one start to the other, seconds; empty: no least  |
//! | `max_lag_s` | no       | greatest time from one start to the other, seconds; empty: no most |
//!
//! The kinds:
//!
//! - `after`: `second` starts after `first` starts, and, where lags are given, between
//!   `min_lag_s` and `max_lag_s` after it.
//! - `before`: `second` starts before `first` starts, the lags measured from the start of
//!   `second` to the start of `first`. It is the same link as `after` with the two ids swapped,
//!   and is read as that.
//! - `group`: `first` and `second` are observed back to back: `second` directly follows
//!   `first`, with no other observation and no waiting between them. Lags are refused (the
//!   gap is the transition between the two). Chains of groups (`A` then `B`, `B` then `C`)
//!   are allowed; a target has at most one group successor and one group predecessor.
//!
//! Lags are at least 0 and at most 10⁹ s (about 32 years; longer ones can only be typing
//! errors), `min_lag_s` at most `max_lag_s`, and `max_lag_s` at least the dwell of the target
//! that starts first (the other cannot start before it ends).
//!
//! Refused, with the file, the line and the target ids: an empty file or one without links,
//! unknown, missing or repeated columns, unknown kinds, unknown or empty ids, a target linked
//! to itself, lags that are negative, not finite numbers or too long, `min_lag_s` above
//! `max_lag_s`, a greatest lag shorter than the first dwell, lags on a group, two links between
//! the same two targets (whatever their kinds and order), a target with two group successors
//! or two group predecessors, and links that go round in a cycle (after and group links
//! together: no order satisfies them), with the ids on the cycle named.

use std::collections::HashMap;
use std::path::Path;

use crate::input::{escape_controls, shown};
use crate::{Link, LinkKind, Target};

/// A links file that could not be read, with the place the trouble was found.
///
/// Displayed as `{source_name}:{line}: {message}`; the line part is left out when `line == 0`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{source_name}{}: {message}", super::line_part(*.line))]
pub struct LinksError {
    /// The file name (or other label) the text came from.
    pub source_name: String,
    /// 1-based line in the file; 0 when the trouble is not tied to one line.
    pub line: usize,
    /// What was expected and what was found, with the target ids concerned.
    pub message: String,
}

impl LinksError {
    fn new(source: &str, line: usize, message: impl Into<String>) -> Self {
        LinksError {
            source_name: source.to_string(),
            line,
            message: escape_controls(&message.into()),
        }
    }
}

/// The longest lag a link may ask, seconds (as [`crate::profile::MAX_STEP_S`]: beyond any
/// horizon, and in range of the planner's integer milliseconds).
const MAX_LAG_S: f64 = crate::profile::MAX_STEP_S;

const COLUMNS: [&str; 5] = ["kind", "first", "second", "min_lag_s", "max_lag_s"];
const KIND: usize = 0;
const FIRST: usize = 1;
const SECOND: usize = 2;
const MIN_LAG: usize = 3;
const MAX_LAG: usize = 4;
const TABLE: super::input::Columns<'static> = super::input::Columns {
    names: &COLUMNS,
    required: 3,
    ignore_unknown: false,
};

/// Reads a links file; see [`parse_links`]. The path, as displayed, names the file in errors.
/// Bytes that are not UTF-8 are refused.
pub fn read_links(path: &Path, targets: &[Target]) -> Result<Vec<Link>, LinksError> {
    let source = path.display().to_string();
    let text = super::read_utf8(path).map_err(|(line, m)| LinksError::new(&source, line, m))?;
    parse_links(&text, &source, targets)
}

/// Parses a links file (format in the [module documentation](self)) into links in file order,
/// ids turned into indices of `targets` and `before` links turned into `after` links with the
/// two targets swapped. `source` names the text in errors (usually the file name).
pub fn parse_links(text: &str, source: &str, targets: &[Target]) -> Result<Vec<Link>, LinksError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let err = |line: usize, m: String| LinksError::new(source, line, m);
    let ids: HashMap<&str, usize> = targets
        .iter()
        .enumerate()
        .map(|(i, t)| (t.id.as_str(), i))
        .collect();
    let id = |i: usize| format!("`{}`", shown(&targets[i].id));

    let mut header: Option<(usize, Vec<Option<usize>>, usize)> = None;
    let mut links: Vec<Link> = Vec::new();
    let mut lines: Vec<usize> = Vec::new();
    // The line of the link between each unordered pair; the line and the other target of each
    // target's group successor and predecessor.
    let mut pairs: HashMap<(usize, usize), usize> = HashMap::new();
    let mut group_next: HashMap<usize, (usize, usize)> = HashMap::new();
    let mut group_prev: HashMap<usize, (usize, usize)> = HashMap::new();

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
        let Some((_, cols, header_len)) = &header else {
            let cols = TABLE.find(&record).map_err(|m| err(line, m))?;
            header = Some((line, cols, record.len()));
            continue;
        };
        let link = read_row(&record, cols, *header_len, &ids, targets).map_err(|m| err(line, m))?;
        let (a, b) = (link.first, link.second);
        let key = (a.min(b), a.max(b));
        if let Some(first_line) = pairs.get(&key) {
            return Err(err(
                line,
                format!(
                    "{} and {} are linked twice (lines {first_line} and {line}); give one link \
                     per pair, with both lags on it",
                    id(key.0),
                    id(key.1)
                ),
            ));
        }
        pairs.insert(key, line);
        if link.kind == LinkKind::Group {
            for (map, at, other, what) in [
                (&mut group_next, a, b, "successors"),
                (&mut group_prev, b, a, "predecessors"),
            ] {
                if let Some(&(first_line, earlier)) = map.get(&at) {
                    return Err(err(
                        line,
                        format!(
                            "{} has two group {what}, {} (line {first_line}) and {}: a target \
                             is observed back to back with at most one target on each side",
                            id(at),
                            id(earlier),
                            id(other)
                        ),
                    ));
                }
                map.insert(at, (line, other));
            }
        }
        links.push(link);
        lines.push(line);
    }

    match header {
        None => {
            return Err(err(
                0,
                format!(
                    "the file is empty: expected a header row naming the columns {}",
                    TABLE.list()
                ),
            ))
        }
        Some((line, _, _)) if links.is_empty() => {
            return Err(err(
                line,
                "no links: the file has a header but no data rows".to_string(),
            ))
        }
        Some(_) => {}
    }

    if let Some(cycle) = find_cycle(targets.len(), &links) {
        let names: Vec<String> = cycle
            .iter()
            .map(|&k| id(links[k].first))
            .chain(cycle.first().map(|&k| id(links[k].first)))
            .collect();
        let mut on: Vec<usize> = cycle.iter().map(|&k| lines[k]).collect();
        let last = on.iter().copied().max().unwrap_or(0);
        on.sort_unstable();
        let on: Vec<String> = on.iter().map(usize::to_string).collect();
        return Err(err(
            last,
            format!(
                "the links go round in a cycle, {} (lines {}): no order of observations \
                 satisfies them",
                names.join(" -> "),
                on.join(", ")
            ),
        ));
    }
    Ok(links)
}

fn read_row(
    record: &csv::StringRecord,
    cols: &[Option<usize>],
    header_len: usize,
    ids: &HashMap<&str, usize>,
    targets: &[Target],
) -> Result<Link, String> {
    super::input::check_row_len(record, header_len)?;
    let cell = |k: usize| cols[k].and_then(|i| record.get(i)).unwrap_or("");
    let kind = cell(KIND);
    let (kind, swap) = match kind {
        "after" => (LinkKind::After, false),
        "before" => (LinkKind::After, true),
        "group" => (LinkKind::Group, false),
        "" => return Err("`kind` is empty; it is `after`, `before` or `group`".to_string()),
        other => {
            return Err(format!(
                "unknown kind `{}`; a link is `after`, `before` or `group`",
                shown(other)
            ))
        }
    };
    let target = |k: usize| -> Result<usize, String> {
        let name = cell(k);
        if name.is_empty() {
            return Err(format!("`{}` is empty; it names a target id", COLUMNS[k]));
        }
        ids.get(name).copied().ok_or_else(|| {
            format!(
                "unknown target id `{}` in `{}`: the targets file has no such target",
                shown(name),
                COLUMNS[k]
            )
        })
    };
    let (a, b) = (target(FIRST)?, target(SECOND)?);
    let what = format!(
        "{} link `{}` -> `{}`",
        cell(KIND),
        shown(&targets[a].id),
        shown(&targets[b].id)
    );
    if a == b {
        return Err(format!("{what}: a target cannot be linked to itself"));
    }
    let lag = |k: usize| -> Result<Option<f64>, String> {
        let text = cell(k);
        if text.is_empty() {
            return Ok(None);
        }
        let v = super::input::number(text, COLUMNS[k])?;
        if v < 0.0 {
            return Err(format!("`{}` is {}, negative", COLUMNS[k], shown(text)));
        }
        if v > MAX_LAG_S {
            return Err(format!(
                "`{}` is {}, longer than {MAX_LAG_S:e} s (about 32 years)",
                COLUMNS[k],
                shown(text)
            ));
        }
        Ok(Some(v))
    };
    let (min_lag_s, max_lag_s) = (
        lag(MIN_LAG).map_err(|m| format!("{what}: {m}"))?,
        lag(MAX_LAG).map_err(|m| format!("{what}: {m}"))?,
    );
    if kind == LinkKind::Group && (min_lag_s.is_some() || max_lag_s.is_some()) {
        return Err(format!(
            "{what}: a group takes no lags (the second follows the first directly); leave \
             `min_lag_s` and `max_lag_s` empty"
        ));
    }
    if let (Some(lo), Some(hi)) = (min_lag_s, max_lag_s) {
        if lo > hi {
            return Err(format!(
                "{what}: `min_lag_s` {} is above `max_lag_s` {}",
                shown(cell(MIN_LAG)),
                shown(cell(MAX_LAG))
            ));
        }
    }
    let (first, second) = if swap { (b, a) } else { (a, b) };
    if let Some(hi) = max_lag_s {
        let dwell = targets[first].duration_s;
        if hi < dwell {
            return Err(format!(
                "{what}: `max_lag_s` {} is shorter than the {dwell} s dwell of `{}`, and `{}` \
                 cannot start before it ends",
                shown(cell(MAX_LAG)),
                shown(&targets[first].id),
                shown(&targets[second].id)
            ));
        }
    }
    Ok(Link {
        kind,
        first,
        second,
        min_lag_s,
        max_lag_s,
    })
}

/// A cycle of `links` (each going from `first` to `second`) among `n` targets, as the indices
/// of its links in order (each link's `second` is the next one's `first`), or None.
fn find_cycle(n: usize, links: &[Link]) -> Option<Vec<usize>> {
    let mut out: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (k, l) in links.iter().enumerate() {
        out[l.first].push(k);
    }
    // 0: not seen, 1: on the current path, 2: done.
    let mut state = vec![0u8; n];
    for root in 0..n {
        if state[root] != 0 {
            continue;
        }
        // The path: (target, index of its next outgoing link to try, link that led here).
        let mut path: Vec<(usize, usize, Option<usize>)> = vec![(root, 0, None)];
        state[root] = 1;
        while let Some(top) = path.last_mut() {
            let (v, next) = (top.0, top.1);
            let Some(&k) = out[v].get(next) else {
                state[v] = 2;
                path.pop();
                continue;
            };
            top.1 += 1;
            let w = links[k].second;
            match state[w] {
                0 => {
                    state[w] = 1;
                    path.push((w, 0, Some(k)));
                }
                1 => {
                    // The links from w along the path, then k back to w.
                    let at = path.iter().position(|p| p.0 == w).unwrap_or(0);
                    let mut cycle: Vec<usize> = path[at + 1..].iter().filter_map(|p| p.2).collect();
                    cycle.push(k);
                    return Some(cycle);
                }
                _ => {}
            }
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Five targets written out by hand; `C` dwells 600 s, the others 100 s.
    fn targets() -> Vec<Target> {
        ["A", "B", "C", "D", "E"]
            .iter()
            .map(|id| Target::new(*id, 10.0, 0.0, if *id == "C" { 600.0 } else { 100.0 }))
            .collect()
    }

    fn parse(text: &str) -> Result<Vec<Link>, LinksError> {
        parse_links(text, "l.csv", &targets())
    }

    fn link(kind: LinkKind, first: usize, second: usize, lags: (Option<f64>, Option<f64>)) -> Link {
        Link {
            kind,
            first,
            second,
            min_lag_s: lags.0,
            max_lag_s: lags.1,
        }
    }

    /// The error for `text`, checked to name the file and the line.
    fn error_at(text: &str, line: usize) -> String {
        let e = match parse(text) {
            Ok(l) => panic!("expected an error, got {l:?}"),
            Err(e) => e,
        };
        assert_eq!(e.source_name, "l.csv");
        assert_eq!(e.line, line, "{e}");
        let shown = e.to_string();
        let place = if line == 0 {
            String::new()
        } else {
            format!(":{line}")
        };
        assert!(shown.starts_with(&format!("l.csv{place}: ")), "{shown}");
        assert!(!shown.contains('\n'), "{shown}");
        shown
    }

    const H: &str = "kind,first,second,min_lag_s,max_lag_s\n";

    #[test]
    fn reads_after_before_and_group_links() {
        let text = "# links of the test pool\n\
                    second,kind,first,max_lag_s,min_lag_s\n\
                    B,after,A,3600,60\n\
                    \n\
                    C,before,D,,120.5\n\
                    E,group,D,,\n\
                    A,after,E,,\n";
        assert_eq!(
            parse(text).unwrap(),
            vec![
                link(LinkKind::After, 0, 1, (Some(60.0), Some(3600.0))),
                // `C before D`: C starts first, at least 120.5 s before D.
                link(LinkKind::After, 2, 3, (Some(120.5), None)),
                link(LinkKind::Group, 3, 4, (None, None)),
                link(LinkKind::After, 4, 0, (None, None)),
            ]
        );
    }

    #[test]
    fn lag_columns_are_optional_and_crlf_and_byte_order_mark_are_accepted() {
        let text = "\u{feff}kind,first,second\r\ngroup,A,B\r\n\"after\",\"B\",C\r\n";
        assert_eq!(
            parse(text).unwrap(),
            vec![
                link(LinkKind::Group, 0, 1, (None, None)),
                link(LinkKind::After, 1, 2, (None, None)),
            ]
        );
        let shown = error_at(
            "\u{feff}# c\r\nkind,first,second\r\nafter,A,B\r\nafter,B,X\r\n",
            4,
        );
        assert!(
            shown.contains("unknown target id `X` in `second`"),
            "{shown}"
        );
    }

    #[test]
    fn a_before_link_is_an_after_link_swapped_with_its_lags() {
        let got = parse(&format!("{H}before,A,B,10,200\n")).unwrap();
        assert_eq!(
            got,
            vec![link(LinkKind::After, 1, 0, (Some(10.0), Some(200.0)))]
        );
    }

    #[test]
    fn unknown_and_empty_ids_and_kinds_are_refused() {
        let shown = error_at(&format!("{H}after,A,B,,\nafter,Q,B,,\n"), 3);
        assert!(
            shown.contains("unknown target id `Q` in `first`: the targets file has no such"),
            "{shown}"
        );
        let shown = error_at(&format!("{H}after,a,B,,\n"), 2);
        assert!(shown.contains("unknown target id `a`"), "{shown}");
        let shown = error_at(&format!("{H}after,,B,,\n"), 2);
        assert!(shown.contains("`first` is empty"), "{shown}");
        let shown = error_at(&format!("{H}following,A,B,,\n"), 2);
        assert!(
            shown.contains("unknown kind `following`; a link is `after`, `before` or `group`"),
            "{shown}"
        );
        let shown = error_at(&format!("{H},A,B,1,\n"), 2);
        assert!(shown.contains("`kind` is empty"), "{shown}");
    }

    #[test]
    fn a_target_linked_to_itself_is_refused() {
        let shown = error_at(&format!("{H}after,A,B,,\ngroup,D,D,,\n"), 3);
        assert!(
            shown.contains("group link `D` -> `D`: a target cannot be linked to itself"),
            "{shown}"
        );
    }

    #[test]
    fn lags_must_be_finite_non_negative_ordered_and_not_absurd() {
        for (lags, wanted) in [
            ("-1,", "`min_lag_s` is -1, negative"),
            (",-0.5", "`max_lag_s` is -0.5, negative"),
            ("nan,", "`min_lag_s` value `nan` is not a finite number"),
            (",inf", "`max_lag_s` value `inf` is not a finite number"),
            ("1e999,", "`min_lag_s` value `1e999` is not a finite number"),
            ("soon,", "`min_lag_s` value `soon` is not a number"),
            (",2e9", "`max_lag_s` is 2e9, longer than 1e9 s"),
            ("500,400", "`min_lag_s` 500 is above `max_lag_s` 400"),
        ] {
            let shown = error_at(&format!("{H}after,A,B,{lags}\n"), 2);
            assert!(
                shown.contains(&format!("after link `A` -> `B`: {wanted}")),
                "{lags}: {shown}"
            );
        }
        // Equal lags, zero lags and the longest lag are fine.
        assert!(parse(&format!("{H}after,A,B,400,400\n")).is_ok());
        assert!(parse(&format!("{H}after,A,B,0,1e9\n")).is_ok());
    }

    #[test]
    fn a_greatest_lag_shorter_than_the_first_dwell_is_refused() {
        // C dwells 600 s: D cannot start within 500 s of C's start.
        let shown = error_at(&format!("{H}after,C,D,,500\n"), 2);
        assert!(
            shown.contains("`max_lag_s` 500 is shorter than the 600 s dwell of `C`"),
            "{shown}"
        );
        // The same with `before`: D before C is C after D, and D dwells 100 s.
        assert!(parse(&format!("{H}before,C,D,,500\n")).is_ok());
        let shown = error_at(&format!("{H}before,D,C,,500\n"), 2);
        assert!(shown.contains("dwell of `C`"), "{shown}");
        assert!(parse(&format!("{H}after,C,D,,600\n")).is_ok());
    }

    #[test]
    fn groups_take_no_lags() {
        let shown = error_at(&format!("{H}group,A,B,,10\n"), 2);
        assert!(
            shown.contains("group link `A` -> `B`: a group takes no lags"),
            "{shown}"
        );
        error_at(&format!("{H}group,A,B,0,\n"), 2);
    }

    #[test]
    fn the_same_pair_twice_is_refused_whatever_the_kinds_and_order() {
        for second in ["after,A,B,,", "before,B,A,,", "group,A,B,,", "after,B,A,1,"] {
            let shown = error_at(&format!("{H}after,A,B,,100\n#\n{second}\n"), 4);
            assert!(
                shown.contains("`A` and `B` are linked twice (lines 2 and 4)"),
                "{second}: {shown}"
            );
        }
    }

    #[test]
    fn a_target_has_at_most_one_group_successor_and_predecessor() {
        let shown = error_at(&format!("{H}group,A,B,,\ngroup,C,D,,\ngroup,A,E,,\n"), 4);
        assert!(
            shown.contains("`A` has two group successors, `B` (line 2) and `E`"),
            "{shown}"
        );
        let shown = error_at(&format!("{H}group,A,C,,\ngroup,B,C,,\n"), 3);
        assert!(
            shown.contains("`C` has two group predecessors, `A` (line 2) and `B`"),
            "{shown}"
        );
        // After links do not count: A may be grouped with B and have any number of afters.
        assert!(parse(&format!("{H}group,A,B,,\nafter,A,C,,\nafter,A,D,,\n")).is_ok());
    }

    #[test]
    fn a_cycle_is_refused_with_its_ids_named() {
        // A -> B (group), B -> D (after), and `A before D` is read as D -> A; E -> C is off
        // the cycle.
        let text = format!("{H}group,A,B,,\nafter,E,C,,\nafter,B,D,,\nbefore,A,D,,\n");
        let shown = error_at(&text, 5);
        assert!(
            shown.contains(
                "the links go round in a cycle, `A` -> `B` -> `D` -> `A` (lines 2, 4, 5)"
            ),
            "{shown}"
        );
        // The cycle is named at its last line in the file, wherever the search starts.
        let text = format!("{H}after,D,A,,\nafter,C,D,,\nafter,A,C,,\nafter,E,A,,\n");
        let shown = error_at(&text, 4);
        assert!(shown.contains("(lines 2, 3, 4)"), "{shown}");
        for name in ["`A`", "`C`", "`D`"] {
            assert!(shown.contains(name), "{shown}");
        }
        assert!(!shown.contains("`E`"), "{shown}");
        // A chain is no cycle.
        assert!(parse(&format!("{H}after,A,B,,\nafter,B,C,,\nafter,A,C,,\n")).is_ok());
    }

    #[test]
    fn empty_files_and_bad_headers_are_refused() {
        for text in ["", "\u{feff}", "\n# nothing\n", ",,\n"] {
            let shown = error_at(text, 0);
            assert!(
                shown.contains("the file is empty: expected a header row"),
                "{shown}"
            );
        }
        let shown = error_at("# c\nkind,first,second\n\n", 2);
        assert!(
            shown.contains("no links: the file has a header but no data rows"),
            "{shown}"
        );
        let shown = error_at("kind,first,second,lag_s\n", 1);
        assert!(
            shown.contains("unknown column `lag_s` (column 4)"),
            "{shown}"
        );
        let shown = error_at("kind,first\nafter,A\n", 1);
        assert!(
            shown.contains("lacks the required column `second`"),
            "{shown}"
        );
        let shown = error_at("kind,first,second,first\n", 1);
        assert!(shown.contains("column `first` appears twice"), "{shown}");
        let shown = error_at(&format!("{H}after,A,B\n"), 2);
        assert!(
            shown.contains("3 fields, but the header has 5 columns"),
            "{shown}"
        );
    }

    #[test]
    fn read_links_names_the_path() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("links.csv");
        std::fs::write(&path, format!("{H}after,A,B,,\nafter,A,A,,\n")).unwrap();
        let e = read_links(&path, &targets()).unwrap_err();
        assert_eq!(
            (e.source_name.as_str(), e.line),
            (path.display().to_string().as_str(), 3)
        );
        std::fs::write(&path, b"kind,first,second\nafter,A\xff,B\n").unwrap();
        let e = read_links(&path, &targets()).unwrap_err();
        assert_eq!(e.line, 2);
        assert!(e.message.contains("not UTF-8"), "{e}");
        std::fs::write(&path, format!("{H}after,A,B,,\n")).unwrap();
        assert_eq!(
            read_links(&path, &targets()).unwrap(),
            vec![link(LinkKind::After, 0, 1, (None, None))]
        );
    }

    const GOOD: &str =
        "kind,first,second,min_lag_s,max_lag_s\nafter,A,B,10,900\nbefore,C,D,,\ngroup,D,E,,\n";

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn random_text_never_panics(text in "[ -~\t\r\n\u{feff}é]{0,200}") {
            let _ = parse(&text);
        }

        #[test]
        fn edited_files_never_panic(at in 0usize..GOOD.len(), insert in "[-,0-9.eEinfABCDEaftergoup\"#\r\n ]{0,6}") {
            let mut text = GOOD.to_string();
            let mut at = at;
            while !text.is_char_boundary(at) { at -= 1; }
            text.insert_str(at, &insert);
            let _ = parse(&text);
        }

        /// Random links among the five targets: whatever is accepted has no cycle, no pair
        /// twice and at most one group successor and predecessor per target.
        #[test]
        fn accepted_links_keep_their_promises(rows in proptest::collection::vec((0usize..3, 0usize..5, 0usize..5), 1..12)) {
            let names = ["A", "B", "C", "D", "E"];
            let kinds = ["after", "before", "group"];
            let mut text = "kind,first,second\n".to_string();
            for (k, a, b) in &rows {
                text.push_str(&format!("{},{},{}\n", kinds[*k], names[*a], names[*b]));
            }
            if let Ok(links) = parse(&text) {
                prop_assert_eq!(links.len(), rows.len());
                // No cycle: every link goes forward in some order of the five.
                let mut order: Vec<usize> = Vec::new();
                let mut left: Vec<usize> = (0..5).collect();
                while !left.is_empty() {
                    let free = left.iter().position(|&v| !links.iter().any(|l| l.second == v && left.contains(&l.first)));
                    prop_assert!(free.is_some(), "cycle accepted: {text}");
                    order.push(left.remove(free.unwrap_or(0)));
                }
                let mut pairs = std::collections::HashSet::new();
                for l in &links {
                    prop_assert!(l.first != l.second);
                    prop_assert!(pairs.insert((l.first.min(l.second), l.first.max(l.second))));
                }
                for v in 0..5 {
                    let groups = |f: fn(&Link) -> usize| links.iter().filter(|l| l.kind == LinkKind::Group && f(l) == v).count();
                    prop_assert!(groups(|l| l.first) <= 1 && groups(|l| l.second) <= 1);
                }
            }
        }
    }
}
