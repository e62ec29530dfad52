//! Tour files (`TYPE : TOUR`): reading and writing.

use std::collections::HashMap;
use std::io::{self, BufWriter, Write};

use super::error::{Ctx, TsplibError};
use super::header::{bare, nonempty_value, set_once, value, At};
use super::lex::{parse_i64, parse_key_line, parse_whole, shown, Lines, NumError, Tokens};
use super::{default_name, TourFile};

/// Reads a tour from TSPLIB 95 `TYPE : TOUR` text. `source` names the text in error messages.
///
/// The `TOUR_SECTION` lists 1-based node ids, any number per line, closed by `-1`; ids must be
/// distinct, and when `DIMENSION` is given they must lie in `1..=DIMENSION` and number exactly
/// `DIMENSION`. A missing `TYPE` is tolerated; any other `TYPE` than `TOUR` is refused. Only one
/// tour per file is read: data after the closing `-1` is an error.
pub fn parse_tour(text: &str, source: &str) -> Result<TourFile, TsplibError> {
    let ctx = Ctx { source };
    let mut lines = Lines::new(text);
    let mut name: Option<At<String>> = None;
    let mut kind: Option<At<()>> = None;
    let mut comments = Vec::new();
    let mut dimension: Option<At<usize>> = None;
    let mut tour: Option<Section> = None;
    let mut seen_any = false;
    while let Some(line) = lines.next_nonblank() {
        seen_any = true;
        let no = line.no;
        let Some(kl) = parse_key_line(line.text) else {
            return Err(ctx.err(
                no,
                format!(
                    "expected a keyword line such as \"DIMENSION : 10\" or TOUR_SECTION, found {}",
                    shown(line.text)
                ),
            ));
        };
        match kl.key {
            "EOF" => {
                bare(ctx, no, kl)?;
                break;
            }
            "NAME" => {
                let v = value(ctx, no, kl)?;
                set_once(ctx, &mut name, "NAME", v.to_string(), no)?;
            }
            "COMMENT" => comments.push(value(ctx, no, kl)?.to_string()),
            "TYPE" => {
                let v = nonempty_value(ctx, no, kl)?;
                let word = Tokens::new(v).next().unwrap_or(v);
                match word {
                    "TOUR" => set_once(ctx, &mut kind, "TYPE", (), no)?,
                    "TSP" | "ATSP" | "CVRP" | "SOP" | "HCP" => {
                        return Err(ctx.err(
                            no,
                            format!("TYPE {word}: this is a problem file, not a tour"),
                        ))
                    }
                    _ => {
                        return Err(ctx.err(
                            no,
                            format!("unknown TYPE {} for a tour file: expected TOUR", shown(v)),
                        ))
                    }
                }
            }
            "DIMENSION" => {
                let v = nonempty_value(ctx, no, kl)?;
                let n = parse_whole(v).map_err(|e| {
                    ctx.err(
                        no,
                        match e {
                            NumError::Overflow => format!("DIMENSION {} is too large", shown(v)),
                            _ => {
                                format!("expected a whole number for DIMENSION, found {}", shown(v))
                            }
                        },
                    )
                })?;
                if n == 0 {
                    return Err(ctx.err(no, "DIMENSION must be at least 1, found 0"));
                }
                set_once(ctx, &mut dimension, "DIMENSION", n, no)?;
            }
            "TOUR_SECTION" => {
                bare(ctx, no, kl)?;
                if let Some(prev) = &tour {
                    return Err(ctx.err(
                        no,
                        format!("TOUR_SECTION given twice (lines {} and {no})", prev.header),
                    ));
                }
                tour = Some(read_section(
                    ctx,
                    &mut lines,
                    no,
                    dimension.map(|d| d.value),
                )?);
            }
            other => {
                return Err(ctx.err(
                    no,
                    format!(
                        "unknown keyword {other} in a tour file (expected NAME, TYPE, COMMENT, \
                         DIMENSION, TOUR_SECTION or EOF)"
                    ),
                ))
            }
        }
    }
    if !seen_any {
        return Err(ctx.err(0, "the file is empty: expected a TSPLIB 95 tour"));
    }
    let tour =
        tour.ok_or_else(|| ctx.err(lines.line_number(), "the file ended without a TOUR_SECTION"))?;
    if let Some(d) = dimension {
        let n = d.value;
        // DIMENSION may follow the section; then the ids are checked only now.
        if let Some((&id, &line)) = tour.nodes.iter().zip(&tour.lines).find(|(&id, _)| id >= n) {
            return Err(ctx.err(
                line,
                format!(
                    "node id {} is outside 1..={n} (DIMENSION on line {} is {n})",
                    id + 1,
                    d.line
                ),
            ));
        }
        if tour.nodes.len() != n {
            return Err(ctx.err(
                tour.end,
                format!(
                    "the tour has {} nodes but DIMENSION (line {}) is {n}",
                    tour.nodes.len(),
                    d.line
                ),
            ));
        }
    }
    Ok(TourFile {
        name: name
            .map(|a| a.value)
            .unwrap_or_else(|| default_name(source)),
        comments,
        dimension: dimension.map(|d| d.value),
        dimension_line: dimension.map(|d| d.line),
        nodes: tour.nodes,
        node_lines: tour.lines,
    })
}

/// A TOUR_SECTION as read.
struct Section {
    /// Zero-based nodes in order.
    nodes: Vec<usize>,
    /// Line of each node.
    lines: Vec<usize>,
    header: usize,
    /// Line of the closing `-1`.
    end: usize,
}

fn read_section(
    ctx: Ctx<'_>,
    lines: &mut Lines<'_>,
    header: usize,
    dimension: Option<usize>,
) -> Result<Section, TsplibError> {
    let mut nodes = Vec::new();
    let mut at = Vec::new();
    let mut first_seen: HashMap<usize, usize> = HashMap::new();
    let mut closed: Option<usize> = None;
    let mut last = header;
    while let Some(line) = lines.next_nonblank() {
        if parse_key_line(line.text).is_some() {
            lines.push_back(line);
            break;
        }
        for tok in Tokens::new(line.text) {
            if let Some(end) = closed {
                return Err(ctx.err(
                    line.no,
                    format!(
                        "found {} after the -1 that closed the tour on line {end}; only one \
                         tour per file is supported",
                        shown(tok)
                    ),
                ));
            }
            if tok.starts_with('-') {
                if parse_i64(tok) == Ok(-1) {
                    closed = Some(line.no);
                    continue;
                }
                return Err(ctx.err(
                    line.no,
                    format!(
                        "expected a node id or the closing -1 in TOUR_SECTION, found {}",
                        shown(tok)
                    ),
                ));
            }
            let id = parse_whole(tok).map_err(|_| {
                ctx.err(
                    line.no,
                    format!(
                        "expected a node id or the closing -1 in TOUR_SECTION, found {}",
                        shown(tok)
                    ),
                )
            })?;
            if id == 0 {
                return Err(ctx.err(line.no, "node ids start at 1, found 0"));
            }
            if let Some(n) = dimension {
                if id > n {
                    return Err(ctx.err(
                        line.no,
                        format!("node id {id} is outside 1..={n} (DIMENSION is {n})"),
                    ));
                }
            }
            if let Some(prev) = first_seen.insert(id, line.no) {
                return Err(ctx.err(
                    line.no,
                    format!(
                        "node {id} appears twice in the tour (lines {prev} and {})",
                        line.no
                    ),
                ));
            }
            nodes.push(id - 1);
            at.push(line.no);
        }
        last = line.no;
    }
    let end = closed.ok_or_else(|| {
        ctx.err(
            last,
            format!(
                "TOUR_SECTION (line {header}) ended after {} nodes without the closing -1",
                nodes.len()
            ),
        )
    })?;
    Ok(Section {
        nodes,
        lines: at,
        header,
        end,
    })
}

/// Header values are one line each in TSPLIB; a line break inside one would end it early.
pub(crate) fn one_line(s: &str) -> String {
    s.replace(['\r', '\n'], " ")
}

/// Writes a tour in TSPLIB 95 `TYPE : TOUR` format: `NAME`, `TYPE`, `COMMENT`, `DIMENSION`,
/// then `TOUR_SECTION` with one 1-based id per line, `-1` and `EOF`. `nodes` are zero-based.
pub fn write_tour(
    name: &str,
    comment: &str,
    nodes: &[usize],
    out: &mut impl Write,
) -> io::Result<()> {
    let mut w = BufWriter::new(out);
    writeln!(w, "NAME : {}", one_line(name))?;
    writeln!(w, "TYPE : TOUR")?;
    writeln!(w, "COMMENT : {}", one_line(comment))?;
    writeln!(w, "DIMENSION : {}", nodes.len())?;
    writeln!(w, "TOUR_SECTION")?;
    for &v in nodes {
        let id = v.checked_add(1).ok_or_else(|| {
            io::Error::new(
                io::ErrorKind::InvalidInput,
                "node index too large for a tour file",
            )
        })?;
        writeln!(w, "{id}")?;
    }
    writeln!(w, "-1")?;
    writeln!(w, "EOF")?;
    w.flush()
}
