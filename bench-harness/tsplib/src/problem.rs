//! Problem files (`TYPE : TSP` / `ATSP`): the specification part, the data sections, and the
//! cross-checks between them.

use std::collections::HashMap;

use wend::{CoordCost, CostError, MatrixCost, Metric};

use super::error::{Ctx, TsplibError};
use super::header::{bare, nonempty_value, set_once, value, At};
use super::lex::{parse_f64, parse_key_line, parse_whole, shown, Lines, NumError, Tokens};
use super::matrix::{read_weights, MatrixFormat};
use super::{default_name, Instance, ProblemKind, Weights};

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum WeightType {
    Metric(Metric),
    Explicit,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum FormatSpec {
    Function,
    Matrix(MatrixFormat),
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum CoordType {
    TwoD,
    ThreeD,
    NoCoords,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum DisplayType {
    Coord,
    TwoD,
    NoDisplay,
}

#[derive(Default)]
struct Header {
    name: Option<At<String>>,
    kind: Option<At<ProblemKind>>,
    comments: Vec<String>,
    dimension: Option<At<usize>>,
    weight_type: Option<At<WeightType>>,
    weight_type_text: String,
    format: Option<At<FormatSpec>>,
    coord_type: Option<At<CoordType>>,
    display_type: Option<At<DisplayType>>,
    edge_data_format: Option<At<()>>,
}

/// A node section (`NODE_COORD_SECTION` or `DISPLAY_DATA_SECTION`) as read.
struct NodeData {
    points: Vec<[f64; 3]>,
    /// Line of each node, to point coordinate errors found later at the right place.
    lines: Vec<usize>,
    header: usize,
}

/// The data sections read so far.
#[derive(Default)]
struct Data {
    coords: Option<NodeData>,
    matrix: Option<At<Vec<i64>>>,
    display: Option<NodeData>,
    fixed_edges: Option<At<Vec<(usize, usize)>>>,
}

/// Reads a TSP or ATSP instance from TSPLIB 95 text. `source` names the text in error messages
/// (usually the file name).
///
/// Accepts every coordinate `EDGE_WEIGHT_TYPE` of [`wend::Metric`] and `EXPLICIT` in all nine
/// matrix layouts; refuses, with the line, everything it cannot represent faithfully (other
/// weight types, CVRP data, edge lists, tours inside problem files). A `FIXED_EDGES_SECTION`
/// is read into [`Instance::fixed_edges`].
pub fn parse_instance(text: &str, source: &str) -> Result<Instance, TsplibError> {
    let ctx = Ctx { source };
    let mut lines = Lines::new(text);
    let mut h = Header::default();
    let mut data = Data::default();
    let mut seen_any = false;
    while let Some(line) = lines.next_nonblank() {
        seen_any = true;
        let Some(kl) = parse_key_line(line.text) else {
            return Err(ctx.err(
                line.no,
                format!(
                    "expected a keyword line such as \"DIMENSION : 10\" or a section name, \
                     found {}",
                    shown(line.text)
                ),
            ));
        };
        let no = line.no;
        match kl.key {
            "EOF" => {
                bare(ctx, no, kl)?;
                break;
            }
            "NAME" => {
                let v = value(ctx, no, kl)?;
                set_once(ctx, &mut h.name, "NAME", v.to_string(), no)?;
            }
            "COMMENT" => h.comments.push(value(ctx, no, kl)?.to_string()),
            "TYPE" => {
                let v = nonempty_value(ctx, no, kl)?;
                // Some published files append a remark, as in "TSP (M.~Hofmeister)".
                let word = Tokens::new(v).next().unwrap_or(v);
                let kind = problem_kind(word).map_err(|m| ctx.err(no, m))?;
                set_once(ctx, &mut h.kind, "TYPE", kind, no)?;
            }
            "DIMENSION" => {
                let v = nonempty_value(ctx, no, kl)?;
                let n = dimension(v, text.len()).map_err(|m| ctx.err(no, m))?;
                set_once(ctx, &mut h.dimension, "DIMENSION", n, no)?;
            }
            "CAPACITY" => {
                return Err(ctx.err(
                    no,
                    "CAPACITY is not supported: capacitated vehicle routing (CVRP) instances \
                     cannot be read, only TSP and ATSP",
                ))
            }
            "EDGE_WEIGHT_TYPE" => {
                let v = nonempty_value(ctx, no, kl)?;
                let t = weight_type(v).map_err(|m| ctx.err(no, m))?;
                set_once(ctx, &mut h.weight_type, "EDGE_WEIGHT_TYPE", t, no)?;
                h.weight_type_text = v.to_string();
            }
            "EDGE_WEIGHT_FORMAT" => {
                let v = nonempty_value(ctx, no, kl)?;
                let f = match v {
                    "FUNCTION" => FormatSpec::Function,
                    _ => FormatSpec::Matrix(MatrixFormat::from_keyword(v).ok_or_else(|| {
                        ctx.err(
                            no,
                            format!(
                                "unknown EDGE_WEIGHT_FORMAT {}: expected FUNCTION, FULL_MATRIX, \
                                 UPPER_ROW, LOWER_ROW, UPPER_DIAG_ROW, LOWER_DIAG_ROW, \
                                 UPPER_COL, LOWER_COL, UPPER_DIAG_COL or LOWER_DIAG_COL",
                                shown(v)
                            ),
                        )
                    })?),
                };
                set_once(ctx, &mut h.format, "EDGE_WEIGHT_FORMAT", f, no)?;
            }
            "EDGE_DATA_FORMAT" => {
                // Only meaningful with an EDGE_DATA_SECTION, which is refused below; the
                // keyword alone changes nothing, but its value must still be a TSPLIB one.
                let v = nonempty_value(ctx, no, kl)?;
                if v != "EDGE_LIST" && v != "ADJ_LIST" {
                    return Err(ctx.err(
                        no,
                        format!(
                            "unknown EDGE_DATA_FORMAT {}: expected EDGE_LIST or ADJ_LIST",
                            shown(v)
                        ),
                    ));
                }
                set_once(ctx, &mut h.edge_data_format, "EDGE_DATA_FORMAT", (), no)?;
            }
            "NODE_COORD_TYPE" => {
                let v = nonempty_value(ctx, no, kl)?;
                let t = match v {
                    "TWOD_COORDS" => CoordType::TwoD,
                    "THREED_COORDS" => CoordType::ThreeD,
                    "NO_COORDS" => CoordType::NoCoords,
                    _ => {
                        return Err(ctx.err(
                            no,
                            format!(
                                "unknown NODE_COORD_TYPE {}: expected TWOD_COORDS, \
                                 THREED_COORDS or NO_COORDS",
                                shown(v)
                            ),
                        ))
                    }
                };
                set_once(ctx, &mut h.coord_type, "NODE_COORD_TYPE", t, no)?;
            }
            "DISPLAY_DATA_TYPE" => {
                let v = nonempty_value(ctx, no, kl)?;
                let t = match v {
                    "COORD_DISPLAY" => DisplayType::Coord,
                    "TWOD_DISPLAY" => DisplayType::TwoD,
                    "NO_DISPLAY" => DisplayType::NoDisplay,
                    _ => {
                        return Err(ctx.err(
                            no,
                            format!(
                                "unknown DISPLAY_DATA_TYPE {}: expected COORD_DISPLAY, \
                                 TWOD_DISPLAY or NO_DISPLAY",
                                shown(v)
                            ),
                        ))
                    }
                };
                set_once(ctx, &mut h.display_type, "DISPLAY_DATA_TYPE", t, no)?;
            }
            "NODE_COORD_SECTION" => {
                bare(ctx, no, kl)?;
                once_section(ctx, data.coords.as_ref().map(|d| d.header), kl.key, no)?;
                let n = need_dimension(ctx, &h, kl.key, no)?;
                let dims = coord_dims(ctx, &h, no)?;
                data.coords = Some(read_nodes(ctx, &mut lines, n, dims, kl.key, no)?);
            }
            "EDGE_WEIGHT_SECTION" => {
                bare(ctx, no, kl)?;
                once_section(ctx, data.matrix.as_ref().map(|d| d.line), kl.key, no)?;
                let n = need_dimension(ctx, &h, kl.key, no)?;
                let format = matrix_format(ctx, &h, no)?;
                let w = read_weights(ctx, &mut lines, n, format, no)?;
                data.matrix = Some(At { value: w, line: no });
            }
            "DISPLAY_DATA_SECTION" => {
                bare(ctx, no, kl)?;
                once_section(ctx, data.display.as_ref().map(|d| d.header), kl.key, no)?;
                let n = need_dimension(ctx, &h, kl.key, no)?;
                data.display = Some(read_nodes(ctx, &mut lines, n, 2, kl.key, no)?);
            }
            "FIXED_EDGES_SECTION" => {
                bare(ctx, no, kl)?;
                once_section(ctx, data.fixed_edges.as_ref().map(|d| d.line), kl.key, no)?;
                let n = need_dimension(ctx, &h, kl.key, no)?;
                let edges = read_fixed_edges(ctx, &mut lines, n)?;
                data.fixed_edges = Some(At {
                    value: edges,
                    line: no,
                });
            }
            "DEPOT_SECTION" | "DEMAND_SECTION" => {
                return Err(unsupported(
                    ctx,
                    kl.key,
                    no,
                    "it holds vehicle routing data; only TSP and ATSP instances can be read",
                ))
            }
            "EDGE_DATA_SECTION" => {
                return Err(unsupported(
                    ctx,
                    kl.key,
                    no,
                    "edge lists describe incomplete graphs; give coordinates or an explicit \
                     EDGE_WEIGHT_SECTION instead",
                ))
            }
            "TOUR_SECTION" => {
                return Err(unsupported(
                    ctx,
                    kl.key,
                    no,
                    "a problem file cannot carry a tour; put tours in a separate TYPE : TOUR \
                     file",
                ))
            }
            other => return Err(ctx.err(no, format!("unknown keyword {other}"))),
        }
    }
    if !seen_any {
        return Err(ctx.err(0, "the file is empty: expected a TSPLIB 95 header"));
    }
    build(ctx, source, h, data, lines.line_number())
}

/// Assembles the instance once the whole file is read, checking what the sections imply for
/// each other. `end` is the last line, where missing sections are reported.
fn build(
    ctx: Ctx<'_>,
    source: &str,
    h: Header,
    data: Data,
    end: usize,
) -> Result<Instance, TsplibError> {
    let kind = h
        .kind
        .ok_or_else(|| ctx.err(0, "the header has no TYPE (expected TSP or ATSP)"))?
        .value;
    let n = h
        .dimension
        .ok_or_else(|| ctx.err(0, "the header has no DIMENSION"))?
        .value;
    let weight_type = h
        .weight_type
        .ok_or_else(|| ctx.err(0, "the header has no EDGE_WEIGHT_TYPE"))?;

    if let (Some(ct), Some(coords)) = (h.coord_type, &data.coords) {
        if ct.value == CoordType::NoCoords {
            return Err(ctx.err(
                coords.header,
                format!(
                    "NODE_COORD_SECTION given but NODE_COORD_TYPE (line {}) is NO_COORDS",
                    ct.line
                ),
            ));
        }
    }

    let weights = match weight_type.value {
        WeightType::Metric(metric) => {
            if let Some(f) = h.format {
                if let FormatSpec::Matrix(m) = f.value {
                    return Err(ctx.err(
                        f.line,
                        format!(
                            "EDGE_WEIGHT_FORMAT {} needs EDGE_WEIGHT_TYPE EXPLICIT, but it is {}",
                            m.keyword(),
                            metric.keyword()
                        ),
                    ));
                }
            }
            if let Some(ct) = h.coord_type {
                let declared = match ct.value {
                    CoordType::TwoD => 2,
                    CoordType::ThreeD => 3,
                    CoordType::NoCoords => 0,
                };
                if declared != metric.dims() {
                    return Err(ctx.err(
                        ct.line,
                        format!(
                            "NODE_COORD_TYPE does not fit EDGE_WEIGHT_TYPE {} (line {}), which \
                             needs {} coordinates per node",
                            metric.keyword(),
                            weight_type.line,
                            metric.dims()
                        ),
                    ));
                }
            }
            let coords = data.coords.as_ref().ok_or_else(|| {
                ctx.err(
                    end,
                    format!(
                        "the file ended without a NODE_COORD_SECTION, which EDGE_WEIGHT_TYPE {} \
                         (line {}) needs",
                        metric.keyword(),
                        weight_type.line
                    ),
                )
            })?;
            let cost = CoordCost::new(metric, coords.points.clone())
                .map_err(|e| coord_error(ctx, e, coords))?;
            Weights::Coords(cost)
        }
        WeightType::Explicit => {
            let format = match h.format {
                Some(At {
                    value: FormatSpec::Matrix(m),
                    line,
                }) => At { value: m, line },
                Some(At {
                    value: FormatSpec::Function,
                    line,
                }) => {
                    return Err(ctx.err(
                        line,
                        "EDGE_WEIGHT_FORMAT FUNCTION needs a coordinate EDGE_WEIGHT_TYPE, but \
                         it is EXPLICIT",
                    ))
                }
                None => {
                    return Err(ctx.err(
                        weight_type.line,
                        "EDGE_WEIGHT_TYPE EXPLICIT needs an EDGE_WEIGHT_FORMAT",
                    ))
                }
            };
            if kind == ProblemKind::Atsp && format.value.is_triangular() {
                return Err(ctx.err(
                    format.line,
                    format!(
                        "TYPE ATSP needs EDGE_WEIGHT_FORMAT FULL_MATRIX: {} gives one triangle, \
                         which only describes symmetric costs",
                        format.value.keyword()
                    ),
                ));
            }
            let matrix = data.matrix.ok_or_else(|| {
                ctx.err(
                    end,
                    format!(
                        "the file ended without an EDGE_WEIGHT_SECTION, which EDGE_WEIGHT_TYPE \
                         EXPLICIT (line {}) needs",
                        weight_type.line
                    ),
                )
            })?;
            let section = matrix.line;
            let cost = MatrixCost::from_row_major(n, matrix.value)
                .map_err(|e| ctx.err(section, e.to_string()))?;
            if kind == ProblemKind::Tsp && !wend::Cost::is_symmetric(&cost) {
                return Err(asymmetric(ctx, &cost, n, section));
            }
            Weights::Matrix(cost)
        }
    };

    let display = match h.display_type {
        Some(At {
            value: DisplayType::Coord,
            line,
        }) => {
            if let Some(d) = &data.display {
                return Err(ctx.err(
                    d.header,
                    format!(
                        "DISPLAY_DATA_SECTION given but DISPLAY_DATA_TYPE (line {line}) is \
                         COORD_DISPLAY"
                    ),
                ));
            }
            let coords = data.coords.as_ref().ok_or_else(|| {
                ctx.err(
                    line,
                    "DISPLAY_DATA_TYPE COORD_DISPLAY needs a NODE_COORD_SECTION",
                )
            })?;
            Some(plane(coords))
        }
        Some(At {
            value: DisplayType::TwoD,
            line,
        }) => {
            let d = data.display.as_ref().ok_or_else(|| {
                ctx.err(
                    end,
                    format!(
                        "the file ended without a DISPLAY_DATA_SECTION, which \
                         DISPLAY_DATA_TYPE TWOD_DISPLAY (line {line}) needs"
                    ),
                )
            })?;
            Some(plane(d))
        }
        Some(At {
            value: DisplayType::NoDisplay,
            line,
        }) => {
            if let Some(d) = &data.display {
                return Err(ctx.err(
                    d.header,
                    format!(
                        "DISPLAY_DATA_SECTION given but DISPLAY_DATA_TYPE (line {line}) is \
                         NO_DISPLAY"
                    ),
                ));
            }
            None
        }
        // TSPLIB 95's default: COORD_DISPLAY when there are coordinates, NO_DISPLAY otherwise;
        // display data given without the keyword is taken as TWOD_DISPLAY.
        None => match (&data.display, &data.coords) {
            (Some(d), _) => Some(plane(d)),
            (None, Some(c)) => Some(plane(c)),
            (None, None) => None,
        },
    };

    Ok(Instance {
        name: h
            .name
            .map(|a| a.value)
            .unwrap_or_else(|| default_name(source)),
        comments: h.comments,
        kind,
        dimension: n,
        weights,
        display,
        source: source.to_string(),
        edge_weight_type: h.weight_type_text,
        edge_weight_format: h.format.map(|f| match f.value {
            FormatSpec::Function => "FUNCTION".to_string(),
            FormatSpec::Matrix(m) => m.keyword().to_string(),
        }),
        fixed_edges: data.fixed_edges.map(|f| f.value).unwrap_or_default(),
    })
}

fn plane(d: &NodeData) -> Vec<[f64; 2]> {
    d.points.iter().map(|p| [p[0], p[1]]).collect()
}

fn asymmetric(ctx: Ctx<'_>, cost: &MatrixCost, n: usize, section: usize) -> TsplibError {
    let w = cost.weights();
    let pair = (0..n)
        .flat_map(|i| (i + 1..n).map(move |j| (i, j)))
        .find(|&(i, j)| w.get(i * n + j) != w.get(j * n + i));
    let detail = match pair {
        Some((i, j)) => format!(
            ": weight({}, {}) = {} but weight({}, {}) = {}",
            i + 1,
            j + 1,
            w.get(i * n + j).copied().unwrap_or_default(),
            j + 1,
            i + 1,
            w.get(j * n + i).copied().unwrap_or_default()
        ),
        None => String::new(),
    };
    ctx.err(
        section,
        format!("TYPE is TSP but the FULL_MATRIX is not symmetric{detail}; use TYPE ATSP"),
    )
}

/// Points a coordinate error from the cost oracle back at the line of the node.
fn coord_error(ctx: Ctx<'_>, e: CostError, coords: &NodeData) -> TsplibError {
    let line_of = |node: usize| coords.lines.get(node).copied().unwrap_or(coords.header);
    match e {
        CostError::NonFinite { node } => ctx.err(
            line_of(node),
            format!("node {}: coordinate is not a finite number", node + 1),
        ),
        CostError::TooLarge { node, value } => ctx.err(
            line_of(node),
            format!(
                "node {}: coordinate {} is too large for integer distances",
                node + 1,
                shown_f64(value)
            ),
        ),
        CostError::GeoRange { node, value } => ctx.err(
            line_of(node),
            format!(
                "node {}: GEO coordinate {} is outside the latitude/longitude range \
                 (DDD.MM, at most 1000 in magnitude)",
                node + 1,
                shown_f64(value)
            ),
        ),
        other @ CostError::MatrixShape { .. } => ctx.err(coords.header, other.to_string()),
    }
}

/// A number for an error message: as usual while short, in exponent form when `Display` would
/// spell out hundreds of digits (`1e300`).
fn shown_f64(v: f64) -> String {
    if v.abs() < 1e16 {
        v.to_string()
    } else {
        format!("{v:e}")
    }
}

fn problem_kind(word: &str) -> Result<ProblemKind, String> {
    match word {
        "TSP" => Ok(ProblemKind::Tsp),
        "ATSP" => Ok(ProblemKind::Atsp),
        "TOUR" => Err("TYPE TOUR: this is a tour file, not a problem; read it as a tour".into()),
        "CVRP" | "SOP" | "HCP" => Err(format!(
            "TYPE {word} is not supported: only TSP and ATSP instances can be read"
        )),
        _ => Err(format!(
            "unknown TYPE {}: expected TSP or ATSP",
            shown(word)
        )),
    }
}

fn dimension(v: &str, file_len: usize) -> Result<usize, String> {
    let n = parse_whole(v).map_err(|e| match e {
        NumError::Overflow => format!("DIMENSION {} is too large", shown(v)),
        _ => format!("expected a whole number for DIMENSION, found {}", shown(v)),
    })?;
    if n == 0 {
        return Err("DIMENSION must be at least 1, found 0".into());
    }
    // Every node needs at least a byte of the file, whatever the format: refuse sizes no file
    // this short could back, before anything is allocated for them.
    if n > file_len {
        return Err(format!(
            "DIMENSION {n} is more nodes than this file of {file_len} bytes could describe"
        ));
    }
    Ok(n)
}

fn weight_type(v: &str) -> Result<WeightType, String> {
    if v == "EXPLICIT" {
        return Ok(WeightType::Explicit);
    }
    if let Some(m) = Metric::from_keyword(v) {
        return Ok(WeightType::Metric(m));
    }
    match v {
        "GEOM" | "XRAY1" | "XRAY2" | "SPECIAL" => Err(format!(
            "EDGE_WEIGHT_TYPE {v} is not supported: expected EXPLICIT, EUC_2D, EUC_3D, CEIL_2D, \
             ATT, GEO, MAN_2D, MAN_3D, MAX_2D or MAX_3D"
        )),
        _ => Err(format!(
            "unknown EDGE_WEIGHT_TYPE {}: expected EXPLICIT, EUC_2D, EUC_3D, CEIL_2D, ATT, GEO, \
             MAN_2D, MAN_3D, MAX_2D or MAX_3D",
            shown(v)
        )),
    }
}

fn once_section(
    ctx: Ctx<'_>,
    prev: Option<usize>,
    key: &str,
    line: usize,
) -> Result<(), TsplibError> {
    match prev {
        Some(p) => Err(ctx.err(line, format!("{key} given twice (lines {p} and {line})"))),
        None => Ok(()),
    }
}

/// Sections are sized by DIMENSION, so it must come first (as it does in every TSPLIB file).
fn need_dimension(ctx: Ctx<'_>, h: &Header, key: &str, line: usize) -> Result<usize, TsplibError> {
    h.dimension.map(|d| d.value).ok_or_else(|| {
        ctx.err(
            line,
            format!("{key} comes before DIMENSION; the specification must precede the data"),
        )
    })
}

/// Coordinates per node: from the metric, else from NODE_COORD_TYPE (coordinates alongside
/// explicit weights are display positions), else two.
fn coord_dims(ctx: Ctx<'_>, h: &Header, line: usize) -> Result<usize, TsplibError> {
    match (
        h.weight_type.map(|t| t.value),
        h.coord_type.map(|t| t.value),
    ) {
        (Some(WeightType::Metric(m)), _) => Ok(m.dims()),
        (Some(WeightType::Explicit), Some(CoordType::ThreeD)) => Ok(3),
        (Some(WeightType::Explicit), _) => Ok(2),
        (None, _) => Err(ctx.err(
            line,
            "NODE_COORD_SECTION comes before EDGE_WEIGHT_TYPE; the specification must precede \
             the data",
        )),
    }
}

fn matrix_format(ctx: Ctx<'_>, h: &Header, line: usize) -> Result<MatrixFormat, TsplibError> {
    match h.weight_type {
        None => {
            return Err(ctx.err(
                line,
                "EDGE_WEIGHT_SECTION comes before EDGE_WEIGHT_TYPE; the specification must \
                 precede the data",
            ))
        }
        Some(At {
            value: WeightType::Metric(m),
            line: at,
        }) => {
            return Err(ctx.err(
                line,
                format!(
                    "EDGE_WEIGHT_SECTION given but EDGE_WEIGHT_TYPE (line {at}) is {}, whose \
                     weights come from coordinates",
                    m.keyword()
                ),
            ))
        }
        Some(_) => {}
    }
    match h.format {
        Some(At {
            value: FormatSpec::Matrix(m),
            ..
        }) => Ok(m),
        Some(At {
            value: FormatSpec::Function,
            line: at,
        }) => Err(ctx.err(
            line,
            format!("EDGE_WEIGHT_SECTION given but EDGE_WEIGHT_FORMAT (line {at}) is FUNCTION"),
        )),
        None => Err(ctx.err(
            line,
            "EDGE_WEIGHT_SECTION comes before EDGE_WEIGHT_FORMAT, which says how to read it",
        )),
    }
}

fn unsupported(ctx: Ctx<'_>, key: &str, line: usize, why: &str) -> TsplibError {
    ctx.err(line, format!("{key} is not supported (line {line}): {why}"))
}

/// Reads `a b` lines (node numbers from 1) up to `-1`, the next keyword line or the end of the
/// file, as 0-based edges. An edge given twice (in either direction) is an error; whether the
/// edges together still allow a tour is for the solver to check.
fn read_fixed_edges(
    ctx: Ctx<'_>,
    lines: &mut Lines<'_>,
    n: usize,
) -> Result<Vec<(usize, usize)>, TsplibError> {
    let mut edges: Vec<(usize, usize)> = Vec::new();
    let mut seen: HashMap<(usize, usize), usize> = HashMap::new();
    while let Some(line) = lines.next_nonblank() {
        if parse_key_line(line.text).is_some() {
            lines.push_back(line);
            break;
        }
        let mut toks = Tokens::new(line.text);
        let first = toks.next().unwrap_or("");
        if first == "-1" {
            if let Some(extra) = toks.next() {
                return Err(ctx.err(
                    line.no,
                    format!(
                        "expected nothing after the -1 that ends FIXED_EDGES_SECTION, found {}",
                        shown(extra)
                    ),
                ));
            }
            break;
        }
        let Some(second) = toks.next() else {
            return Err(ctx.err(
                line.no,
                format!(
                    "expected a fixed edge \"a b\" (two node numbers) or -1, found {}",
                    shown(line.text)
                ),
            ));
        };
        if let Some(extra) = toks.next() {
            return Err(ctx.err(
                line.no,
                format!(
                    "expected one fixed edge \"a b\" per line, found more: {}",
                    shown(extra)
                ),
            ));
        }
        let a = edge_node(ctx, line.no, first, n)?;
        let b = edge_node(ctx, line.no, second, n)?;
        if a == b {
            return Err(ctx.err(
                line.no,
                format!("fixed edge {} {} joins a node to itself", a + 1, b + 1),
            ));
        }
        let key = (a.min(b), a.max(b));
        if let Some(prev) = seen.get(&key) {
            return Err(ctx.err(
                line.no,
                format!(
                    "fixed edge {} {} given twice (lines {prev} and {})",
                    a + 1,
                    b + 1,
                    line.no
                ),
            ));
        }
        seen.insert(key, line.no);
        edges.push((a, b));
    }
    Ok(edges)
}

fn edge_node(ctx: Ctx<'_>, line: usize, tok: &str, n: usize) -> Result<usize, TsplibError> {
    match parse_whole(tok) {
        Ok(id) if (1..=n).contains(&id) => Ok(id - 1),
        Ok(id) => Err(ctx.err(
            line,
            format!("node {id} of a fixed edge is outside 1..={n} (DIMENSION is {n})"),
        )),
        Err(_) => Err(ctx.err(
            line,
            format!(
                "expected a node number (1 to {n}) in a fixed edge, found {}",
                shown(tok)
            ),
        )),
    }
}

/// Reads `id x y [z]` lines up to the next keyword line: every id in `1..=n` exactly once.
fn read_nodes(
    ctx: Ctx<'_>,
    lines: &mut Lines<'_>,
    n: usize,
    dims: usize,
    section: &str,
    header: usize,
) -> Result<NodeData, TsplibError> {
    // Each node needs its own line: when fewer lines follow than DIMENSION says, the section
    // is bound to fall short, so nothing is allocated for DIMENSION and the lines are still
    // read to report the first concrete problem.
    let dense = n <= lines.remaining_lines();
    const AXES: [&str; 3] = ["x", "y", "z"];
    let mut points = if dense {
        vec![[0.0f64; 3]; n]
    } else {
        Vec::new()
    };
    let mut seen = if dense {
        Seen::Dense(vec![0; n])
    } else {
        Seen::Sparse(HashMap::new())
    };
    let mut count = 0usize;
    let mut last = header;
    while let Some(line) = lines.next_nonblank() {
        if parse_key_line(line.text).is_some() {
            lines.push_back(line);
            break;
        }
        let mut toks = Tokens::new(line.text);
        let id_tok = toks.next().unwrap_or("");
        let id = parse_whole(id_tok).map_err(|_| {
            ctx.err(
                line.no,
                format!(
                    "expected a node id (1 to {n}) at the start of a {section} line, found {}",
                    shown(id_tok)
                ),
            )
        })?;
        if id == 0 || id > n {
            return Err(ctx.err(
                line.no,
                format!("node id {id} is outside 1..={n} (DIMENSION is {n})"),
            ));
        }
        let slot = id - 1;
        if let Some(prev) = seen.get(slot) {
            return Err(ctx.err(
                line.no,
                format!(
                    "node {id} appears twice in {section} (lines {prev} and {})",
                    line.no
                ),
            ));
        }
        let mut p = [0.0f64; 3];
        for (k, axis) in AXES.iter().enumerate().take(dims) {
            let Some(tok) = toks.next() else {
                return Err(ctx.err(
                    line.no,
                    format!("expected {dims} coordinates for node {id}, found {k}"),
                ));
            };
            p[k] = parse_f64(tok).map_err(|e| {
                let finite = if e == NumError::NotFinite {
                    "finite "
                } else {
                    ""
                };
                ctx.err(
                    line.no,
                    format!(
                        "expected a {finite}number for the {axis} coordinate of node {id}, \
                         found {}",
                        shown(tok)
                    ),
                )
            })?;
        }
        if let Some(extra) = toks.next() {
            return Err(ctx.err(
                line.no,
                format!(
                    "expected {} fields on a {section} line (node id and {dims} coordinates), \
                     found more: {}",
                    dims + 1,
                    shown(extra)
                ),
            ));
        }
        if let Some(ps) = points.get_mut(slot) {
            *ps = p;
        }
        seen.set(slot, line.no);
        count += 1;
        last = line.no;
    }
    if count < n {
        let missing = seen.first_missing(n).map_or(0, |i| i + 1);
        return Err(ctx.err(
            last,
            format!(
                "{section} ended after {count} of {n} nodes (DIMENSION {n}); node {missing} is \
                 missing"
            ),
        ));
    }
    let Seen::Dense(at) = seen else {
        // Unreachable: fewer lines than nodes cannot give all nodes.
        return Err(ctx.err(
            last,
            format!("{section} has fewer lines than DIMENSION {n}"),
        ));
    };
    Ok(NodeData {
        points,
        lines: at,
        header,
    })
}

/// Line of each node seen so far: indexed by node when DIMENSION is plausible for the file,
/// hashed when it is not (so a huge DIMENSION allocates nothing).
enum Seen {
    Dense(Vec<usize>),
    Sparse(HashMap<usize, usize>),
}

impl Seen {
    fn get(&self, slot: usize) -> Option<usize> {
        match self {
            Seen::Dense(v) => v.get(slot).copied().filter(|&l| l != 0),
            Seen::Sparse(m) => m.get(&slot).copied(),
        }
    }

    fn set(&mut self, slot: usize, line: usize) {
        match self {
            Seen::Dense(v) => {
                if let Some(l) = v.get_mut(slot) {
                    *l = line;
                }
            }
            Seen::Sparse(m) => {
                m.insert(slot, line);
            }
        }
    }

    fn first_missing(&self, n: usize) -> Option<usize> {
        (0..n).find(|&s| self.get(s).is_none())
    }
}
