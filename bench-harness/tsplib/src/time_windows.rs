//! The plain time-window layout of the published TSP-with-time-windows benchmark sets:
//!
//! ```text
//! n                      number of nodes, the depot (node 0) included
//! c[0][0] ... c[0][n-1]  n lines: the rows of the travel-time matrix (integers)
//! ...
//! a_0 b_0                n lines: earliest and latest start of service at node i
//! ...
//! ```
//!
//! The tour leaves the depot (node 0) at time 0 and comes back to it within the depot's window;
//! a vehicle arriving before a window opens waits, and arriving after it closes breaks it. Travel
//! times already include service, so the constraints carry no service durations.
//!
//! A file is taken to be in this layout when it does not start with a TSPLIB keyword and its
//! first token is a whole number ([`parse_problem`] decides).

use wend::constraints::{Constraints, Window};
use wend::MatrixCost;

use super::error::{Ctx, TsplibError};
use super::lex::{parse_i64, parse_key_line, parse_whole, shown, Line, Lines, NumError, Tokens};
use super::{default_name, Instance, ProblemKind, Weights};

/// An instance together with the constraints its file gives.
#[derive(Clone, Debug)]
pub struct Problem {
    /// The costs and what the file says about itself. A time-window file gives an explicit
    /// full matrix; its name is the file name without directories or extension.
    pub instance: Instance,
    /// Windows, depot and start time of a time-window file; the fixed edges of a TSPLIB file
    /// (everything else unconstrained).
    pub constraints: Constraints,
}

/// Reads either kind of problem text: the time-window layout when the first non-blank line is
/// not a TSPLIB keyword line and starts with a whole number, TSPLIB 95 otherwise (see
/// [`super::parse_instance`]). `source` names the text in error messages.
pub fn parse_problem(text: &str, source: &str) -> Result<Problem, TsplibError> {
    if looks_like_time_windows(text) {
        return parse_time_windows(text, source);
    }
    let instance = super::parse_instance(text, source)?;
    let mut constraints = Constraints::new(instance.dimension);
    constraints.fixed_edges.clone_from(&instance.fixed_edges);
    Ok(Problem {
        instance,
        constraints,
    })
}

fn looks_like_time_windows(text: &str) -> bool {
    let mut lines = Lines::new(text);
    let Some(first) = lines.next_nonblank() else {
        return false;
    };
    parse_key_line(first.text).is_none()
        && Tokens::new(first.text)
            .next()
            .is_some_and(|t| matches!(parse_whole(t), Ok(_) | Err(NumError::Overflow)))
}

/// Reads the time-window layout (see the module documentation).
pub fn parse_time_windows(text: &str, source: &str) -> Result<Problem, TsplibError> {
    let ctx = Ctx { source };
    let mut lines = Lines::new(text);
    let first = lines
        .next_nonblank()
        .ok_or_else(|| ctx.err(0, "the file is empty: expected the number of nodes"))?;
    let n = node_count(ctx, first, &lines)?;
    // Twice the number of steps of a schedule: no sum of times along one can overflow when
    // every time is below i64::MAX divided by it.
    let limit = i64::MAX / (2 * (n as i64 + 1));
    let mut weights = Vec::with_capacity(n * n);
    let mut last = first.no;
    for row in 0..n {
        let line = next_data_line(ctx, &mut lines, last, || {
            format!("the matrix ended after {row} of {n} rows; each row is one line of {n} times")
        })?;
        let before = weights.len();
        for tok in Tokens::new(line.text) {
            let col = weights.len() - before;
            if col == n {
                return Err(ctx.err(
                    line.no,
                    format!(
                        "matrix row {} has more than {n} entries: {} is one too many",
                        row + 1,
                        shown(tok)
                    ),
                ));
            }
            let what = format!("the travel time from node {row} to node {col}");
            weights.push(time(ctx, line.no, tok, &what, limit)?);
        }
        let got = weights.len() - before;
        if got < n {
            return Err(ctx.err(
                line.no,
                format!(
                    "matrix row {} has {got} entries, expected {n} (one per node)",
                    row + 1
                ),
            ));
        }
        last = line.no;
    }
    let mut constraints = Constraints::new(n);
    for (node, slot) in constraints.windows.iter_mut().enumerate() {
        let line = next_data_line(ctx, &mut lines, last, || {
            format!("the windows ended after {node} of {n} lines \"earliest latest\"")
        })?;
        let toks: Vec<&str> = Tokens::new(line.text).take(3).collect();
        let [a, b] = toks[..] else {
            return Err(ctx.err(
                line.no,
                format!(
                    "expected \"earliest latest\" for node {node}, found {}",
                    shown(line.text)
                ),
            ));
        };
        let earliest = time(
            ctx,
            line.no,
            a,
            &format!("the earliest time of node {node}"),
            limit,
        )?;
        let latest = time(
            ctx,
            line.no,
            b,
            &format!("the latest time of node {node}"),
            limit,
        )?;
        if latest < earliest {
            return Err(ctx.err(
                line.no,
                format!(
                    "the window of node {node} closes at {latest} before it opens at {earliest}"
                ),
            ));
        }
        slot.push(Window { earliest, latest });
        last = line.no;
    }
    if let Some(extra) = lines.next_nonblank() {
        return Err(ctx.err(
            extra.no,
            format!(
                "expected the end of the file after the {n} windows, found {}",
                shown(extra.text)
            ),
        ));
    }
    let cost = MatrixCost::from_row_major(n, weights).map_err(|e| ctx.err(0, e.to_string()))?;
    let kind = if wend::Cost::is_symmetric(&cost) {
        ProblemKind::Tsp
    } else {
        ProblemKind::Atsp
    };
    let instance = Instance {
        name: default_name(source),
        comments: Vec::new(),
        kind,
        dimension: n,
        weights: Weights::Matrix(cost),
        display: None,
        source: source.to_string(),
        edge_weight_type: "EXPLICIT".to_string(),
        edge_weight_format: Some("FULL_MATRIX".to_string()),
        fixed_edges: Vec::new(),
    };
    Ok(Problem {
        instance,
        constraints,
    })
}

/// The first line: the number of nodes alone, at least 1, and no more than the rest of the
/// file has lines for (each node needs a matrix row and a window line), checked before
/// anything is allocated for it.
fn node_count(ctx: Ctx<'_>, first: Line<'_>, lines: &Lines<'_>) -> Result<usize, TsplibError> {
    let mut toks = Tokens::new(first.text);
    let tok = toks.next().unwrap_or("");
    let n = parse_whole(tok).map_err(|e| {
        let m = match e {
            NumError::Overflow => format!("the number of nodes {} is too large", shown(tok)),
            _ => format!("expected the number of nodes, found {}", shown(tok)),
        };
        ctx.err(first.no, m)
    })?;
    if let Some(extra) = toks.next() {
        return Err(ctx.err(
            first.no,
            format!(
                "expected the number of nodes alone on the first line, found also {}",
                shown(extra)
            ),
        ));
    }
    if n == 0 {
        return Err(ctx.err(first.no, "the number of nodes must be at least 1, found 0"));
    }
    let room = lines.remaining_lines();
    if n > room / 2 {
        return Err(ctx.err(
            first.no,
            format!(
                "{n} nodes need {} more lines (a matrix row and a window each), but the file \
                 has only {room}",
                n.saturating_mul(2)
            ),
        ));
    }
    Ok(n)
}

fn next_data_line<'a>(
    ctx: Ctx<'_>,
    lines: &mut Lines<'a>,
    last: usize,
    ended: impl FnOnce() -> String,
) -> Result<Line<'a>, TsplibError> {
    lines.next_nonblank().ok_or_else(|| ctx.err(last, ended()))
}

/// A non-negative integer time no larger than `limit`.
fn time(ctx: Ctx<'_>, line: usize, tok: &str, what: &str, limit: i64) -> Result<i64, TsplibError> {
    let v = parse_i64(tok).map_err(|e| {
        let m = match e {
            NumError::Overflow => format!("{what}, {}, does not fit a 64-bit integer", shown(tok)),
            _ => format!("{what} must be an integer, found {}", shown(tok)),
        };
        ctx.err(line, m)
    })?;
    if v < 0 {
        return Err(ctx.err(line, format!("{what} must not be negative, found {v}")));
    }
    if v > limit {
        return Err(ctx.err(
            line,
            format!("{what}, {v}, is too large: sums of times along a tour could overflow"),
        ));
    }
    Ok(v)
}
