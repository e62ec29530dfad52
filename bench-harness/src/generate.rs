//! Seeded instance generators: random uniform points in a square, written as TSPLIB files.
//!
//! For `n` random uniform points in a region of area `A`, the optimal tour length approaches
//! `0.7124 * sqrt(n * A)` as `n` grows (the Beardwood–Halton–Hammersley constant; the value is
//! the estimate of Applegate, Bixby, Chvátal, Cook and others, quoted from memory), which gives
//! very large instances a yardstick without a known optimum.

use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;
use std::io::{self, Write};

/// Estimate of the Beardwood–Halton–Hammersley constant for uniform points in the plane.
pub const BHH_CONSTANT: f64 = 0.7124;

/// `n` points with integer coordinates drawn uniformly from `[0, side)` x `[0, side)`; the same
/// seed gives the same points on every platform.
pub fn uniform_square(n: usize, side: u64, seed: u64) -> Vec<[f64; 2]> {
    let mut rng = Pcg64::seed_from_u64(seed);
    let side = side.max(1);
    (0..n)
        .map(|_| [rng.gen_range(0..side) as f64, rng.gen_range(0..side) as f64])
        .collect()
}

/// The asymptotic optimal tour length of `n` uniform points in a square of side `side`.
pub fn expected_tour_length(n: usize, side: u64) -> f64 {
    BHH_CONSTANT * ((n as f64) * (side as f64) * (side as f64)).sqrt()
}

/// Writes `points` as a TSPLIB `EUC_2D` instance (coordinates are written as integers when they
/// are whole numbers).
pub fn write_points(
    name: &str,
    comment: &str,
    points: &[[f64; 2]],
    out: &mut impl Write,
) -> io::Result<()> {
    writeln!(out, "NAME : {name}")?;
    writeln!(out, "COMMENT : {comment}")?;
    writeln!(out, "TYPE : TSP")?;
    writeln!(out, "DIMENSION : {}", points.len())?;
    writeln!(out, "EDGE_WEIGHT_TYPE : EUC_2D")?;
    writeln!(out, "NODE_COORD_SECTION")?;
    for (i, p) in points.iter().enumerate() {
        writeln!(out, "{} {} {}", i + 1, p[0], p[1])?;
    }
    writeln!(out, "EOF")
}

/// An `n x n` matrix of asymmetric costs drawn uniformly from `1..=max_cost` off the diagonal
/// (0 on it); the same seed gives the same matrix on every platform.
pub fn uniform_matrix(n: usize, max_cost: i64, seed: u64) -> Vec<Vec<i64>> {
    let mut rng = Pcg64::seed_from_u64(seed);
    let max_cost = max_cost.max(1);
    (0..n)
        .map(|i| {
            (0..n)
                .map(|j| {
                    if i == j {
                        0
                    } else {
                        rng.gen_range(1..=max_cost)
                    }
                })
                .collect()
        })
        .collect()
}

/// Writes `rows` as a TSPLIB `ATSP` instance with an `EXPLICIT` `FULL_MATRIX`.
pub fn write_matrix(
    name: &str,
    comment: &str,
    rows: &[Vec<i64>],
    out: &mut impl Write,
) -> io::Result<()> {
    writeln!(out, "NAME : {name}")?;
    writeln!(out, "COMMENT : {comment}")?;
    writeln!(out, "TYPE : ATSP")?;
    writeln!(out, "DIMENSION : {}", rows.len())?;
    writeln!(out, "EDGE_WEIGHT_TYPE : EXPLICIT")?;
    writeln!(out, "EDGE_WEIGHT_FORMAT : FULL_MATRIX")?;
    writeln!(out, "EDGE_WEIGHT_SECTION")?;
    for row in rows {
        let line: Vec<String> = row.iter().map(|c| c.to_string()).collect();
        writeln!(out, "{}", line.join(" "))?;
    }
    writeln!(out, "EOF")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uniform_matrix_is_seeded_and_in_range() {
        let m = uniform_matrix(50, 1000, 3);
        assert_eq!(m, uniform_matrix(50, 1000, 3));
        assert_ne!(m, uniform_matrix(50, 1000, 4));
        for (i, row) in m.iter().enumerate() {
            for (j, &c) in row.iter().enumerate() {
                assert!(if i == j {
                    c == 0
                } else {
                    (1..=1000).contains(&c)
                });
            }
        }
        // Asymmetric: some pair differs by direction.
        assert!((0..50).any(|i| (0..50).any(|j| m[i][j] != m[j][i])));
    }

    #[test]
    fn same_seed_same_points_and_they_fill_the_square() {
        let a = uniform_square(10_000, 1000, 5);
        assert_eq!(a, uniform_square(10_000, 1000, 5));
        assert_ne!(a, uniform_square(10_000, 1000, 6));
        assert!(a
            .iter()
            .all(|p| (0.0..1000.0).contains(&p[0]) && (0.0..1000.0).contains(&p[1])));
        // Each quarter of the square gets about a quarter of the points (binomial, sd = 43).
        let low_left = a.iter().filter(|p| p[0] < 500.0 && p[1] < 500.0).count();
        assert!((2300..2700).contains(&low_left), "{low_left}");
    }

    #[test]
    fn written_file_reads_back() {
        let pts = uniform_square(50, 100, 1);
        let mut buf = Vec::new();
        write_points("u50", "test", &pts, &mut buf).unwrap();
        let inst =
            wend_tsplib::parse_instance(std::str::from_utf8(&buf).unwrap(), "u50.tsp").unwrap();
        assert_eq!(inst.dimension, 50);
        assert_eq!(inst.cost().cost(0, 1), {
            let d = ((pts[0][0] - pts[1][0]).powi(2) + (pts[0][1] - pts[1][1]).powi(2)).sqrt();
            (d + 0.5).floor() as i64 // TSPLIB 95's nint for EUC_2D
        });
    }
}
