//! Instances and tours shared by the unit tests of several modules.

use crate::cost::{CoordCost, Cost, MatrixCost, Metric};
use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;

/// Rounded Euclidean distances between `n` random points of a 1000 x 1000 square, plus (when
/// `asym_weight` is not 0) a direction-dependent term `asym_weight * ((7 i + 13 j) mod 17)` so
/// that the matrix is not symmetric.
pub(crate) fn random_costs(n: usize, seed: u64, asym_weight: i64) -> MatrixCost {
    let mut rng = Pcg64::seed_from_u64(seed);
    let pts: Vec<[f64; 2]> = (0..n)
        .map(|_| [rng.gen_range(0.0..1000.0), rng.gen_range(0.0..1000.0)])
        .collect();
    let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
    let rows: Vec<Vec<i64>> = (0..n)
        .map(|i| {
            (0..n)
                .map(|j| {
                    let extra = if i != j {
                        ((i * 7 + j * 13) % 17) as i64 * asym_weight
                    } else {
                        0
                    };
                    c.cost(i, j) + extra
                })
                .collect()
        })
        .collect();
    MatrixCost::from_rows(&rows).unwrap()
}

/// A random permutation of `0..n`.
pub(crate) fn shuffled(n: usize, seed: u64) -> Vec<usize> {
    let mut rng = Pcg64::seed_from_u64(seed ^ 0xABCD);
    let mut v: Vec<usize> = (0..n).collect();
    for i in (1..n).rev() {
        v.swap(i, rng.gen_range(0..=i));
    }
    v
}
