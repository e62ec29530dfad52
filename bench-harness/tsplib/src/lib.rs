//! Reading and writing TSPLIB 95 files: problems (`TYPE : TSP` / `ATSP`), tours
//! (`TYPE : TOUR`) and lists of optimal lengths.
//!
//! The reader is strict where leniency would change the problem (unknown keywords, unsupported
//! sections, wrong counts, non-integral explicit weights are all errors naming the line) and
//! lenient where it would not (CRLF endings, a byte-order mark, blank lines, trailing spaces, a
//! missing `EOF`). Sizes taken from the header are checked against the length of the file before
//! anything is allocated for them, so a hostile `DIMENSION` cannot exhaust memory.
//!
//! Node numbers are 1-based in files and 0-based everywhere in this API.

// User files reach almost every path here: failures are errors, never `unwrap`/`expect` panics.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

mod constraints_csv;
mod error;
mod header;
mod lex;
mod matrix;
mod optima;
mod problem;
mod time_windows;
mod tour;
mod write;

#[cfg(test)]
mod tests;

use std::path::Path;

pub use constraints_csv::{parse_constraints, read_constraints};
pub use error::TsplibError;
pub use optima::{parse_optima, read_optima};
pub use problem::parse_instance;
pub use time_windows::{parse_problem, parse_time_windows, Problem};
pub use tour::{parse_tour, write_tour};
pub use write::write_instance;

/// What a problem file asks for (its `TYPE`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ProblemKind {
    /// Symmetric travelling salesman problem.
    Tsp,
    /// Asymmetric travelling salesman problem.
    Atsp,
}

impl ProblemKind {
    /// The TSPLIB `TYPE` keyword.
    pub fn keyword(self) -> &'static str {
        match self {
            ProblemKind::Tsp => "TSP",
            ProblemKind::Atsp => "ATSP",
        }
    }
}

/// Where an instance's costs come from.
#[derive(Clone, Debug)]
pub enum Weights {
    /// Node coordinates under one of the TSPLIB distance functions.
    Coords(wend::CoordCost),
    /// An explicit matrix, already expanded to full `n x n` whatever its layout in the file.
    Matrix(wend::MatrixCost),
}

/// A TSP or ATSP instance read from a TSPLIB 95 file.
#[derive(Clone, Debug)]
pub struct Instance {
    /// `NAME`, or the file name without extension when the file has none.
    pub name: String,
    /// Every `COMMENT` line, in file order.
    pub comments: Vec<String>,
    /// `TYPE`.
    pub kind: ProblemKind,
    /// `DIMENSION`: the number of nodes.
    pub dimension: usize,
    /// The costs.
    pub weights: Weights,
    /// Points to draw the nodes at: the `DISPLAY_DATA_SECTION`, or the first two node
    /// coordinates under `COORD_DISPLAY` (for GEO the raw latitude/longitude numbers). `None`
    /// under `NO_DISPLAY` and for explicit weights without display data.
    pub display: Option<Vec<[f64; 2]>>,
    /// The file name (or other label) used in error messages.
    pub source: String,
    /// `EDGE_WEIGHT_TYPE` as written, e.g. `EUC_2D` or `EXPLICIT`.
    pub edge_weight_type: String,
    /// `EDGE_WEIGHT_FORMAT` as written, when given.
    pub edge_weight_format: Option<String>,
    /// The `FIXED_EDGES_SECTION`: edges `(a, b)` (0-based) every tour must use, as written
    /// (undirected for `TSP`, `b` right after `a` for `ATSP`); empty when the file has none.
    /// The solve honours them when they are given to `wend::Settings::fixed_edges`.
    ///
    /// ```
    /// let text = "NAME : f\nTYPE : TSP\nDIMENSION : 4\nEDGE_WEIGHT_TYPE : EUC_2D\n\
    ///     NODE_COORD_SECTION\n1 0 0\n2 10 0\n3 10 10\n4 0 10\nFIXED_EDGES_SECTION\n1 3\n-1\nEOF\n";
    /// let inst = wend_tsplib::parse_instance(text, "f.tsp").unwrap();
    /// assert_eq!(inst.fixed_edges, vec![(0, 2)]);
    /// let settings = wend::Settings { fixed_edges: inst.fixed_edges.clone(), ..Default::default() };
    /// let out = wend::solve_with(inst.cost(), &settings, Default::default()).unwrap();
    /// let order = out.tour.order();
    /// assert!(order[1] == 2 || order[3] == 2, "{order:?}"); // the diagonal 1-3 of the file
    /// assert_eq!(out.length, 14 + 10 + 10 + 14);
    /// ```
    pub fixed_edges: Vec<(usize, usize)>,
}

impl Instance {
    /// The cost oracle, whichever kind of weights the file gave.
    pub fn cost(&self) -> &dyn wend::Cost {
        match &self.weights {
            Weights::Coords(c) => c,
            Weights::Matrix(m) => m,
        }
    }
}

/// A tour read from a TSPLIB 95 `TYPE : TOUR` file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TourFile {
    /// `NAME`, or the file name without extension when the file has none.
    pub name: String,
    /// Every `COMMENT` line, in file order.
    pub comments: Vec<String>,
    /// `DIMENSION`, when given; the tour then visits exactly that many nodes.
    pub dimension: Option<usize>,
    /// The line `DIMENSION` was given on, to point at it when it does not fit an instance.
    pub dimension_line: Option<usize>,
    /// The nodes in visiting order, zero-based.
    pub nodes: Vec<usize>,
    /// The line of each of `nodes`, to point at a node that does not fit an instance.
    pub node_lines: Vec<usize>,
}

/// Reads a whole file as text; bytes that are not UTF-8 become U+FFFD, which can only matter
/// inside `NAME` or `COMMENT` values since every other token is ASCII.
fn read_text(path: &Path) -> Result<(String, String), TsplibError> {
    let source = path.display().to_string();
    let bytes = std::fs::read(path)
        .map_err(|e| TsplibError::new(&source, 0, format!("cannot read the file: {e}")))?;
    let text = match String::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => String::from_utf8_lossy(e.as_bytes()).into_owned(),
    };
    Ok((text, source))
}

/// Reads a TSP or ATSP instance from a file; see [`parse_instance`].
pub fn read_instance(path: &Path) -> Result<Instance, TsplibError> {
    let (text, source) = read_text(path)?;
    parse_instance(&text, &source)
}

/// Reads a problem of either kind (TSPLIB 95 or the time-window layout) from a file; see
/// [`parse_problem`].
pub fn read_problem(path: &Path) -> Result<Problem, TsplibError> {
    let (text, source) = read_text(path)?;
    parse_problem(&text, &source)
}

/// Reads a tour from a file; see [`parse_tour`].
pub fn read_tour(path: &Path) -> Result<TourFile, TsplibError> {
    let (text, source) = read_text(path)?;
    parse_tour(&text, &source)
}

/// The name to use when a file has no `NAME`: its file name without directories or extension.
fn default_name(source: &str) -> String {
    let p = Path::new(source);
    p.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default()
}
