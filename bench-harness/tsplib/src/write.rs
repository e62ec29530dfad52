//! Writing problem files that read back to the same costs.

use std::io::{self, BufWriter, Write};

use super::tour::one_line;
use super::{Instance, ProblemKind, Weights};

fn invalid(msg: String) -> io::Error {
    io::Error::new(io::ErrorKind::InvalidInput, msg)
}

/// Writes a TSP or ATSP instance in TSPLIB 95 format: coordinates as a `NODE_COORD_SECTION`
/// under their metric, matrices as `EXPLICIT` / `FULL_MATRIX` whatever layout they were read
/// from. Coordinates are printed in Rust's shortest exact form, so reading the file back with
/// [`parse_instance`](super::parse_instance) gives bit-identical points and identical costs.
/// Display points are kept: as `COORD_DISPLAY` when they are the node coordinates, otherwise as
/// a `DISPLAY_DATA_SECTION`.
pub fn write_instance(inst: &Instance, out: &mut impl Write) -> io::Result<()> {
    let cost = inst.cost();
    let n = cost.len();
    if let Some(d) = &inst.display {
        if d.len() != n {
            return Err(invalid(format!(
                "instance has {n} nodes but {} display points",
                d.len()
            )));
        }
    }
    if matches!(inst.weights, Weights::Matrix(_))
        && inst.kind == ProblemKind::Tsp
        && !cost.is_symmetric()
    {
        // The reader refuses such a file, so writing it would break the round trip.
        return Err(invalid(
            "TYPE TSP with an asymmetric matrix cannot be written; use ATSP".into(),
        ));
    }
    // Checked before the first byte so that a refused instance leaves `out` untouched.
    let mut w = BufWriter::new(out);
    writeln!(w, "NAME : {}", one_line(&inst.name))?;
    writeln!(w, "TYPE : {}", inst.kind.keyword())?;
    for c in &inst.comments {
        writeln!(w, "COMMENT : {}", one_line(c))?;
    }
    writeln!(w, "DIMENSION : {n}")?;
    match &inst.weights {
        Weights::Coords(c) => {
            let metric = c.metric();
            let dims = metric.dims();
            let points = c.points();
            let is_coord_display = inst.display.as_ref().map(|d| {
                d.iter()
                    .zip(points)
                    .all(|(a, p)| a[0] == p[0] && a[1] == p[1])
            });
            writeln!(w, "EDGE_WEIGHT_TYPE : {}", metric.keyword())?;
            let display_type = match is_coord_display {
                Some(true) => "COORD_DISPLAY",
                Some(false) => "TWOD_DISPLAY",
                None => "NO_DISPLAY",
            };
            writeln!(w, "DISPLAY_DATA_TYPE : {display_type}")?;
            writeln!(w, "NODE_COORD_SECTION")?;
            for (i, p) in points.iter().enumerate() {
                write!(w, "{} {} {}", i + 1, p[0], p[1])?;
                if dims == 3 {
                    write!(w, " {}", p[2])?;
                }
                writeln!(w)?;
            }
            if is_coord_display == Some(false) {
                write_display(&mut w, inst.display.as_deref().unwrap_or_default())?;
            }
        }
        Weights::Matrix(m) => {
            writeln!(w, "EDGE_WEIGHT_TYPE : EXPLICIT")?;
            writeln!(w, "EDGE_WEIGHT_FORMAT : FULL_MATRIX")?;
            let display_type = if inst.display.is_some() {
                "TWOD_DISPLAY"
            } else {
                "NO_DISPLAY"
            };
            writeln!(w, "DISPLAY_DATA_TYPE : {display_type}")?;
            writeln!(w, "EDGE_WEIGHT_SECTION")?;
            if n > 0 {
                for row in m.weights().chunks(n) {
                    let mut first = true;
                    for v in row {
                        if !first {
                            w.write_all(b" ")?;
                        }
                        first = false;
                        write!(w, "{v}")?;
                    }
                    writeln!(w)?;
                }
            }
            if let Some(d) = &inst.display {
                write_display(&mut w, d)?;
            }
        }
    }
    if !inst.fixed_edges.is_empty() {
        writeln!(w, "FIXED_EDGES_SECTION")?;
        for (a, b) in &inst.fixed_edges {
            writeln!(w, "{} {}", a + 1, b + 1)?;
        }
        writeln!(w, "-1")?;
    }
    writeln!(w, "EOF")?;
    w.flush()
}

fn write_display(w: &mut impl Write, points: &[[f64; 2]]) -> io::Result<()> {
    writeln!(w, "DISPLAY_DATA_SECTION")?;
    for (i, p) in points.iter().enumerate() {
        writeln!(w, "{} {} {}", i + 1, p[0], p[1])?;
    }
    Ok(())
}
