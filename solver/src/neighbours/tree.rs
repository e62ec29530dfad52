//! Nearest points by a k-d tree over as many coordinates as the points have.
//!
//! Points in the plane are kept with a third coordinate of zero; a tree over all three would
//! split on that zero every third level and prune nothing there, and its queries take about
//! three times as long as those of a tree over the two that vary.

use crate::cost::Geometry;
use kiddo::SquaredEuclidean;
use kiddo::immutable::float::kdtree::ImmutableKdTree;
use std::num::NonZeroUsize;

/// Points per leaf of the tree.
const LEAF: usize = 32;

/// A k-d tree over points of the plane or of space.
pub(crate) enum PointTree {
    Plane(ImmutableKdTree<f64, u32, 2, LEAF>),
    Space(ImmutableKdTree<f64, u32, 3, LEAF>),
}

impl PointTree {
    /// The tree over `points`, of which the first `dims` (2 or 3) coordinates count.
    pub(crate) fn new(points: &[[f64; 3]], dims: usize) -> Self {
        if dims <= 2 {
            let flat: Vec<[f64; 2]> = points.iter().map(|p| [p[0], p[1]]).collect();
            PointTree::Plane(ImmutableKdTree::new_from_slice(&flat))
        } else {
            PointTree::Space(ImmutableKdTree::new_from_slice(points))
        }
    }

    /// The tree over a cost's geometry.
    pub(crate) fn of(g: &Geometry<'_>) -> Self {
        Self::new(g.points, g.dims)
    }

    /// Indices of the `m` points nearest `p` (`p` itself among them when it is a point of the
    /// tree), nearest first; fewer when the tree holds fewer.
    pub(crate) fn nearest(&self, p: &[f64; 3], m: usize) -> Vec<u32> {
        let m = NonZeroUsize::new(m).unwrap_or(NonZeroUsize::MIN);
        match self {
            PointTree::Plane(t) => t
                .nearest_n::<SquaredEuclidean>(&[p[0], p[1]], m)
                .into_iter()
                .map(|x| x.item)
                .collect(),
            PointTree::Space(t) => t
                .nearest_n::<SquaredEuclidean>(p, m)
                .into_iter()
                .map(|x| x.item)
                .collect(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The nearest points by a scan of all of them, nearest first (ties by index).
    fn by_scan(points: &[[f64; 3]], p: &[f64; 3], m: usize) -> Vec<u32> {
        let mut d: Vec<(f64, u32)> = points
            .iter()
            .enumerate()
            .map(|(i, q)| ((0..3).map(|k| (p[k] - q[k]).powi(2)).sum::<f64>(), i as u32))
            .collect();
        d.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        d.into_iter().take(m).map(|x| x.1).collect()
    }

    #[test]
    fn plane_and_space_trees_find_what_a_scan_finds() {
        // Points on an irregular lattice: distances with few ties.
        let plane: Vec<[f64; 3]> = (0..500)
            .map(|i| [(i * 37 % 101) as f64 * 1.3, (i * 53 % 97) as f64 * 0.7, 0.0])
            .collect();
        let space: Vec<[f64; 3]> = (0..500)
            .map(|i| {
                [
                    (i * 37 % 101) as f64,
                    (i * 53 % 97) as f64,
                    (i * 29 % 89) as f64,
                ]
            })
            .collect();
        for (points, dims) in [(&plane, 2), (&space, 3)] {
            let tree = PointTree::new(points, dims);
            for p in points.iter().step_by(7) {
                let got = tree.nearest(p, 9);
                let want = by_scan(points, p, 9);
                // Same distances in the same order (ties may list either point first).
                let dist = |i: u32| {
                    let q = points[i as usize];
                    (0..3).map(|k| (p[k] - q[k]).powi(2)).sum::<f64>()
                };
                let g: Vec<f64> = got.iter().map(|&i| dist(i)).collect();
                let w: Vec<f64> = want.iter().map(|&i| dist(i)).collect();
                assert_eq!(g, w);
            }
        }
    }
}
