//! The neighbour lists and their plain sources; a leaf, using nothing of the crate but the costs.
//!
//! With geometry the lists come from a k-d tree in O(n log n); otherwise from a scan of each row
//! of costs. Sources are pluggable: [`k_nearest`], [`quadrant`] (for clustered instances, where the
//! nearest nodes all sit in the node's own cluster), or any lists a caller computes (for
//! example from a lower-bound calculation) through [`Neighbours::from_lists`].

use super::tree::PointTree;
use crate::cost::{Cost, Geometry};
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

/// Why caller-made lists were refused.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum ListError {
    /// `out` (or `incoming`) does not hold `n * k` entries.
    #[error("candidate lists hold {got} entries, expected {n} nodes x {k}")]
    Size {
        /// Nodes.
        n: usize,
        /// List width.
        k: usize,
        /// Entries given.
        got: usize,
    },
    /// An entry names a node outside `0..n` or the node itself.
    #[error(
        "candidate list of node {node} holds {entry}, which is out of range or the node itself"
    )]
    Entry {
        /// The node whose list it is.
        node: usize,
        /// The bad entry.
        entry: u32,
    },
}

impl Neighbours {
    /// Lists made elsewhere: `out[i * k ..][..k]` are node `i`'s candidates, best first;
    /// `incoming` likewise for asymmetric costs (empty when symmetric).
    ///
    /// ```
    /// // Three nodes, one candidate each: 0 -> 1, 1 -> 2, 2 -> 0 (symmetric: no incoming lists).
    /// let lists = wend::Neighbours::from_lists(3, 1, vec![1, 2, 0], Vec::new()).unwrap();
    /// assert_eq!(lists.out(2), &[0]);
    /// assert!(wend::Neighbours::from_lists(3, 1, vec![1, 2], Vec::new()).is_err());
    /// ```
    pub fn from_lists(
        n: usize,
        k: usize,
        out: Vec<u32>,
        incoming: Vec<u32>,
    ) -> Result<Self, ListError> {
        let size_ok = |l: &Vec<u32>| l.len() == n * k;
        if !size_ok(&out) {
            return Err(ListError::Size {
                n,
                k,
                got: out.len(),
            });
        }
        if !incoming.is_empty() && !size_ok(&incoming) {
            return Err(ListError::Size {
                n,
                k,
                got: incoming.len(),
            });
        }
        for list in [&out, &incoming] {
            for (pos, &e) in list.iter().enumerate() {
                let node = pos / k.max(1);
                if e as usize >= n || e as usize == node {
                    return Err(ListError::Entry { node, entry: e });
                }
            }
        }
        Ok(Neighbours {
            k,
            out,
            inc: incoming,
        })
    }

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
#[cfg(any(test, feature = "internals"))]
pub fn k_nearest<C: Cost + ?Sized>(cost: &C, k: usize) -> Neighbours {
    nearest_until(cost, k, &|| false)
}

pub(crate) fn nearest_until<C: Cost + ?Sized>(
    cost: &C,
    k: usize,
    stop: &(dyn Fn() -> bool + Sync),
) -> Neighbours {
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
            let pre = geometric_prefilter(g, k, stop);
            let out = rerank(cost, &pre, k, stop, |i, j| cost.cost(i, j));
            let inc = if symmetric {
                Vec::new()
            } else {
                rerank(cost, &pre, k, stop, |i, j| cost.cost(j, i))
            };
            (out, inc)
        }
        None => {
            let out = scan(n, k, stop, |i, j| cost.cost(i, j));
            let inc = if symmetric {
                Vec::new()
            } else {
                scan(n, k, stop, |i, j| cost.cost(j, i))
            };
            (out, inc)
        }
    };
    Neighbours { k, out, inc }
}

/// Euclidean nearest points, a few more than `k`, so that reranking by the true cost (rounded,
/// or a different norm) still finds the best `k` in nearly all cases.
fn geometric_prefilter(
    g: Geometry<'_>,
    k: usize,
    stop: &(dyn Fn() -> bool + Sync),
) -> Vec<Vec<u32>> {
    let n = g.points.len();
    let want = (k + k / 2 + 2).min(n);
    let tree = PointTree::of(&g);
    (0..n)
        .into_par_iter()
        .map(|i| {
            if stop() {
                return Vec::new();
            }
            tree.nearest(&g.points[i], want)
                .into_iter()
                .filter(|&j| j as usize != i)
                .collect()
        })
        .collect()
}

/// Quadrant (octant) candidates: per region around each node the `max(1, k / 5)` nearest
/// (`max(1, k / 10)` for 3-D points), then the nearest overall until the list holds `k`, all
/// sorted by cost. Regions are searched among the nearest few hundred points only, so a region
/// that is empty nearby stays short and the list is topped up instead. Falls back to
/// [`k_nearest`] without geometry.
#[cfg(test)]
pub fn quadrant<C: Cost + ?Sized>(cost: &C, k: usize) -> Neighbours {
    quadrant_until(cost, k, &|| false)
}

pub(crate) fn quadrant_until<C: Cost + ?Sized>(
    cost: &C,
    k: usize,
    stop: &(dyn Fn() -> bool + Sync),
) -> Neighbours {
    let n = cost.len();
    let k = k.min(n.saturating_sub(1));
    let Some(g) = cost.geometry() else {
        return nearest_until(cost, k, stop);
    };
    if k == 0 {
        return nearest_until(cost, k, stop);
    }
    let dims = g.dims.clamp(2, 3);
    let regions = 1usize << dims;
    let quota = if dims == 2 {
        (k / 5).max(1)
    } else {
        (k / 10).max(1)
    };
    const REACH: usize = 512;
    let tree = PointTree::of(&g);
    let lists = |c: &(dyn Fn(usize, usize) -> i64 + Sync)| -> Vec<u32> {
        let rows: Vec<Vec<u32>> = (0..n)
            .into_par_iter()
            .map(|i| {
                if stop() {
                    return Vec::new();
                }
                let p = g.points[i];
                let region = |j: usize| -> usize {
                    let q = g.points[j];
                    (0..dims).fold(0, |r, d| r | (usize::from(q[d] < p[d]) << d))
                };
                let mut m = (4 * k + 2).min(n);
                loop {
                    let near: Vec<u32> = tree
                        .nearest(&p, m)
                        .into_iter()
                        .filter(|&j| j as usize != i)
                        .collect();
                    let mut counts = vec![0usize; regions];
                    for &j in &near {
                        counts[region(j as usize)] += 1;
                    }
                    let short = counts.iter().any(|&c| c < quota);
                    if short && m < n && m < REACH {
                        m = (2 * m).min(n).min(REACH);
                        continue;
                    }
                    // Per region the cheapest `quota`, then the cheapest of the rest.
                    let mut ranked: Vec<(i64, u32)> =
                        near.iter().map(|&j| (c(i, j as usize), j)).collect();
                    ranked.sort_unstable();
                    let mut taken = vec![0usize; regions];
                    let mut pick = Vec::with_capacity(k);
                    let mut rest = Vec::new();
                    for &(cij, j) in &ranked {
                        let r = region(j as usize);
                        if taken[r] < quota {
                            taken[r] += 1;
                            pick.push((cij, j));
                        } else {
                            rest.push((cij, j));
                        }
                    }
                    pick.truncate(k);
                    let room = k - pick.len();
                    pick.extend(rest.into_iter().take(room));
                    if pick.len() < k {
                        // Fewer points within reach than asked (tiny instances): scan.
                        pick = (0..n)
                            .filter(|&j| j != i)
                            .map(|j| (c(i, j), j as u32))
                            .collect();
                        pick.sort_unstable();
                        pick.truncate(k);
                    }
                    pick.sort_unstable();
                    return pick.into_iter().map(|(_, j)| j).collect();
                }
            })
            .collect();
        rows.concat()
    };
    let out = lists(&|i, j| cost.cost(i, j));
    let inc = if cost.is_symmetric() {
        Vec::new()
    } else {
        lists(&|i, j| cost.cost(j, i))
    };
    Neighbours { k, out, inc }
}

fn rerank<C: Cost + ?Sized>(
    cost: &C,
    pre: &[Vec<u32>],
    k: usize,
    stop: &(dyn Fn() -> bool + Sync),
    c: impl Fn(usize, usize) -> i64 + Sync,
) -> Vec<u32> {
    let n = cost.len();
    let rows: Vec<Vec<u32>> = (0..n)
        .into_par_iter()
        .map(|i| {
            if stop() {
                return Vec::new();
            }
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

fn scan(
    n: usize,
    k: usize,
    stop: &(dyn Fn() -> bool + Sync),
    c: impl Fn(usize, usize) -> i64 + Sync,
) -> Vec<u32> {
    let rows: Vec<Vec<u32>> = (0..n)
        .into_par_iter()
        .map(|i| {
            if stop() {
                return Vec::new();
            }
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

    /// Quadrant lists by brute force: per region the `quota` cheapest, then the cheapest rest.
    fn quadrant_by_scan(c: &CoordCost, pts: &[[f64; 2]], i: usize, k: usize) -> Vec<i64> {
        let n = pts.len();
        let region = |j: usize| {
            usize::from(pts[j][0] < pts[i][0]) | (usize::from(pts[j][1] < pts[i][1]) << 1)
        };
        let mut all: Vec<(i64, usize)> = (0..n)
            .filter(|&j| j != i)
            .map(|j| (c.cost(i, j), j))
            .collect();
        all.sort();
        let quota = (k / 5).max(1);
        let mut taken = [0; 4];
        let (mut pick, mut rest) = (Vec::new(), Vec::new());
        for (cij, j) in all {
            if taken[region(j)] < quota {
                taken[region(j)] += 1;
                pick.push(cij);
            } else {
                rest.push(cij);
            }
        }
        pick.truncate(k);
        let room = k - pick.len();
        pick.extend(rest.into_iter().take(room));
        pick.sort();
        pick
    }

    #[test]
    fn quadrant_lists_match_a_brute_force_scan() {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_pcg::Pcg64::seed_from_u64(7);
        // Three clusters, so some regions are empty near many nodes.
        let mut pts = Vec::new();
        for c in [[0.0, 0.0], [50_000.0, 3_000.0], [20_000.0, 60_000.0]] {
            for _ in 0..60 {
                pts.push([
                    c[0] + rng.gen_range(0.0..2_000.0),
                    c[1] + rng.gen_range(0.0..2_000.0),
                ]);
            }
        }
        let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
        for k in [4, 10] {
            let nb = quadrant(&c, k);
            for i in 0..pts.len() {
                let got: Vec<i64> = nb.out(i).iter().map(|&j| c.cost(i, j as usize)).collect();
                assert_eq!(got, quadrant_by_scan(&c, &pts, i, k), "node {i}, k {k}");
                let mut seen = nb.out(i).to_vec();
                seen.sort();
                seen.dedup();
                assert_eq!(seen.len(), k, "node {i}: duplicate entries");
                assert!(nb.out(i).iter().all(|&j| j as usize != i));
            }
        }
    }

    #[test]
    fn quadrant_lists_reach_across_a_gap_that_nearest_lists_do_not() {
        let mut pts = Vec::new();
        for i in 0..40 {
            pts.push([(i % 8) as f64, (i / 8) as f64]);
            pts.push([1_000.0 + (i % 8) as f64, (i / 8) as f64]);
        }
        let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
        let crosses = |nb: &Neighbours| {
            (0..pts.len()).any(|i| {
                nb.out(i)
                    .iter()
                    .any(|&j| (pts[i][0] < 500.0) != (pts[j as usize][0] < 500.0))
            })
        };
        assert!(!crosses(&k_nearest(&c, 8)));
        assert!(crosses(&quadrant(&c, 8)));
    }

    #[test]
    fn caller_lists_are_checked() {
        assert!(Neighbours::from_lists(3, 1, vec![1, 2, 0], Vec::new()).is_ok());
        assert_eq!(
            Neighbours::from_lists(3, 1, vec![1, 2], Vec::new()).unwrap_err(),
            ListError::Size { n: 3, k: 1, got: 2 }
        );
        assert_eq!(
            Neighbours::from_lists(3, 1, vec![1, 1, 0], Vec::new()).unwrap_err(),
            ListError::Entry { node: 1, entry: 1 }
        );
        assert!(Neighbours::from_lists(3, 1, vec![1, 2, 0], vec![2, 0, 5]).is_err());
    }

    #[test]
    fn tiny_instances() {
        let c = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0]]).unwrap();
        assert_eq!(k_nearest(&c, 5).k(), 0);
        let c = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [1.0, 0.0]]).unwrap();
        assert_eq!(k_nearest(&c, 5).out(0), &[1]);
    }
}
