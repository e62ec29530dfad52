//! Candidate sets: for each node, the few other nodes a good tour is likely to connect it to.
//!
//! Local search only looks at moves that add a candidate edge, which turns quadratic
//! neighbourhoods into linear ones. With geometry the lists come from a k-d tree in
//! O(n log n); otherwise from a scan of each row of costs.

use crate::cost::{Cost, Geometry};
use kiddo::immutable::float::kdtree::ImmutableKdTree;
use kiddo::SquaredEuclidean;
use rayon::prelude::*;

/// Fixed-width neighbour lists, sorted by cost, nearest first.
#[derive(Clone, Debug)]
pub struct Neighbours {
    k: usize,
    /// `out[i * k ..][..k]`: nodes `j` by increasing `cost(i, j)`.
    out: Vec<u32>,
    /// For asymmetric costs, nodes `j` by increasing `cost(j, i)`; empty when symmetric.
    inc: Vec<u32>,
}

impl Neighbours {
    /// Width of each list (at most `n - 1`).
    pub fn k(&self) -> usize {
        self.k
    }

    /// Nodes `j` with the cheapest steps `i -> j`, cheapest first.
    #[inline]
    pub fn out(&self, i: usize) -> &[u32] {
        &self.out[i * self.k..(i + 1) * self.k]
    }

    /// Nodes `j` with the cheapest steps `j -> i`, cheapest first (same as `out` when symmetric).
    #[inline]
    pub fn incoming(&self, i: usize) -> &[u32] {
        if self.inc.is_empty() {
            self.out(i)
        } else {
            &self.inc[i * self.k..(i + 1) * self.k]
        }
    }
}

/// The `k` nearest neighbours of every node (fewer when there are fewer other nodes).
pub fn k_nearest<C: Cost + ?Sized>(cost: &C, k: usize) -> Neighbours {
    let n = cost.len();
    let k = k.min(n.saturating_sub(1));
    if k == 0 {
        return Neighbours {
            k,
            out: Vec::new(),
            inc: Vec::new(),
        };
    }
    let symmetric = cost.is_symmetric();
    let (out, inc) = match cost.geometry() {
        Some(g) => {
            let pre = geometric_prefilter(g, k);
            let out = rerank(cost, &pre, k, |i, j| cost.cost(i, j));
            let inc = if symmetric {
                Vec::new()
            } else {
                rerank(cost, &pre, k, |i, j| cost.cost(j, i))
            };
            (out, inc)
        }
        None => {
            let out = scan(n, k, |i, j| cost.cost(i, j));
            let inc = if symmetric {
                Vec::new()
            } else {
                scan(n, k, |i, j| cost.cost(j, i))
            };
            (out, inc)
        }
    };
    Neighbours { k, out, inc }
}

/// Euclidean nearest points, a few more than `k`, so that reranking by the true cost (rounded,
/// or a different norm) still finds the best `k` in nearly all cases.
fn geometric_prefilter(g: Geometry<'_>, k: usize) -> Vec<Vec<u32>> {
    let n = g.points.len();
    let want = (k + k / 2 + 2).min(n);
    let want_nz = std::num::NonZeroUsize::new(want.max(1)).unwrap_or(std::num::NonZeroUsize::MIN);
    let tree: ImmutableKdTree<f64, u32, 3, 32> = ImmutableKdTree::new_from_slice(g.points);
    (0..n)
        .into_par_iter()
        .map(|i| {
            tree.nearest_n::<SquaredEuclidean>(&g.points[i], want_nz)
                .into_iter()
                .map(|nb| nb.item)
                .filter(|&j| j as usize != i)
                .collect()
        })
        .collect()
}

fn rerank<C: Cost + ?Sized>(
    cost: &C,
    pre: &[Vec<u32>],
    k: usize,
    c: impl Fn(usize, usize) -> i64 + Sync,
) -> Vec<u32> {
    let n = cost.len();
    let rows: Vec<Vec<u32>> = (0..n)
        .into_par_iter()
        .map(|i| {
            let mut row: Vec<(i64, u32)> = pre[i].iter().map(|&j| (c(i, j as usize), j)).collect();
            if row.len() < k {
                // Fewer Euclidean hits than asked (tiny instances): fall back to a scan.
                row = (0..n)
                    .filter(|&j| j != i)
                    .map(|j| (c(i, j), j as u32))
                    .collect();
            }
            row.sort_unstable();
            row.truncate(k);
            row.into_iter().map(|(_, j)| j).collect()
        })
        .collect();
    rows.concat()
}

fn scan(n: usize, k: usize, c: impl Fn(usize, usize) -> i64 + Sync) -> Vec<u32> {
    let rows: Vec<Vec<u32>> = (0..n)
        .into_par_iter()
        .map(|i| {
            let mut row: Vec<(i64, u32)> = (0..n)
                .filter(|&j| j != i)
                .map(|j| (c(i, j), j as u32))
                .collect();
            if row.len() > k {
                row.select_nth_unstable(k - 1);
                row.truncate(k);
            }
            row.sort_unstable();
            row.into_iter().map(|(_, j)| j).collect()
        })
        .collect();
    rows.concat()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::{CoordCost, MatrixCost, Metric};

    #[test]
    fn geometric_lists_match_a_full_scan() {
        // A grid with many ties and some duplicate points.
        let mut pts = Vec::new();
        for x in 0..12 {
            for y in 0..9 {
                pts.push([x as f64 * 3.0, y as f64 * 2.0]);
            }
        }
        pts.extend(std::iter::repeat_n([5.0, 5.0], 300));
        let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
        let nb = k_nearest(&c, 6);
        let n = pts.len();
        for i in 0..n {
            let mut costs: Vec<i64> = (0..n).filter(|&j| j != i).map(|j| c.cost(i, j)).collect();
            costs.sort();
            let got: Vec<i64> = nb.out(i).iter().map(|&j| c.cost(i, j as usize)).collect();
            assert_eq!(got, costs[..6].to_vec(), "node {i}");
            assert!(nb.out(i).iter().all(|&j| j as usize != i));
        }
    }

    #[test]
    fn asymmetric_lists_are_directional() {
        let m = MatrixCost::from_rows(&[
            vec![0, 1, 9, 9],
            vec![9, 0, 1, 9],
            vec![9, 9, 0, 1],
            vec![1, 9, 9, 0],
        ])
        .unwrap();
        let nb = k_nearest(&m, 1);
        assert_eq!(nb.out(0), &[1]);
        assert_eq!(nb.incoming(0), &[3]);
    }

    #[test]
    fn tiny_instances() {
        let c = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0]]).unwrap();
        assert_eq!(k_nearest(&c, 5).k(), 0);
        let c = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [1.0, 0.0]]).unwrap();
        assert_eq!(k_nearest(&c, 5).out(0), &[1]);
    }
}
