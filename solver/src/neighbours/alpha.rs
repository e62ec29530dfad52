//! Alpha-nearness candidates from the penalised minimum 1-tree (Helsgaun 2000).
//!
//! With node penalties `pi` (from the Held–Karp ascent, or zero), costs become
//! `c'(i, j) = c(i, j) + pi[i] + pi[j]`. A minimum 1-tree is a minimum spanning tree on the nodes
//! other than a special node (here node 0) plus the two cheapest edges from the special node.
//! The alpha-value of an edge is how much longer the cheapest 1-tree that contains it is than the
//! minimum 1-tree: 0 for tree edges, and otherwise
//!
//! - `c'(i, j) - beta(i, j)` for `i, j != 0`, where `beta` is the costliest edge on the tree path
//!   from `i` to `j` (adding `(i, j)` closes a cycle; dropping its costliest edge is cheapest);
//! - `c'(0, j) - (second cheapest edge at 0)` for the special node.
//!
//! Edges of small alpha are far more often in optimal tours than short edges are, so a few
//! alpha-nearest candidates do the work of many nearest ones. Building the lists costs O(n²)
//! time (every pair is looked at once) and O(n) memory per thread; it is offered up to
//! [`ALPHA_LIMIT`] nodes.

use super::lists::Neighbours;
use crate::cost::Cost;
use rayon::prelude::*;

/// Largest instance [`alpha_nearness`] accepts: the O(n²) work is a few seconds there.
pub(crate) const ALPHA_LIMIT: usize = 20_000;

/// Why alpha-nearness lists could not be built.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum AlphaError {
    /// The costs are not symmetric; alpha-values are defined on undirected 1-trees.
    #[error("alpha-nearness candidates need symmetric costs")]
    Asymmetric,
    /// Too many nodes for the O(n²) construction.
    #[error("alpha-nearness candidates are built for up to {limit} nodes, the instance has {n}")]
    TooLarge {
        /// Nodes in the instance.
        n: usize,
        /// [`ALPHA_LIMIT`].
        limit: usize,
    },
    /// The penalties could not be computed.
    #[error("{0}")]
    Bound(String),
    /// The lists came out malformed: a bug, reported instead of a panic.
    #[error("internal error building alpha-nearness lists: {0}; please report it")]
    Internal(String),
    /// `pi` does not have one entry per node.
    #[error("{got} penalties for {n} nodes")]
    Penalties {
        /// Nodes in the instance.
        n: usize,
        /// Entries given.
        got: usize,
    },
}

/// A minimum spanning tree of nodes `1..n` under `c'`, as parents (`parent[1]` is the root's own
/// index, 1) and the order nodes joined it (parents before children).
struct Tree {
    parent: Vec<usize>,
    /// `c'(v, parent[v])`.
    up: Vec<f64>,
    order: Vec<usize>,
}

fn spanning_tree(n: usize, c: &(dyn Fn(usize, usize) -> f64 + Sync)) -> Tree {
    let mut parent = vec![1usize; n];
    let mut up = vec![f64::INFINITY; n];
    let mut order = Vec::with_capacity(n.saturating_sub(1));
    let mut done = vec![false; n];
    if n < 2 {
        return Tree { parent, up, order };
    }
    done[0] = true;
    let mut v = 1;
    done[1] = true;
    up[1] = 0.0;
    order.push(1);
    for _ in 2..n {
        for w in 2..n {
            if !done[w] {
                let d = c(v, w);
                if d < up[w] {
                    up[w] = d;
                    parent[w] = v;
                }
            }
        }
        let mut next = 0;
        let mut best = f64::INFINITY;
        for w in 2..n {
            if !done[w] && (next == 0 || up[w] < best) {
                best = up[w];
                next = w;
            }
        }
        done[next] = true;
        order.push(next);
        v = next;
    }
    Tree { parent, up, order }
}

/// The `k` alpha-nearest candidates of every node under penalties `pi` (all zero for the plain
/// minimum 1-tree), ties broken by `c'` and then by node index. Symmetric costs only.
pub(crate) fn alpha_nearness<C: Cost + ?Sized>(
    cost: &C,
    pi: &[f64],
    k: usize,
) -> Result<Neighbours, AlphaError> {
    let n = cost.len();
    if !cost.is_symmetric() {
        return Err(AlphaError::Asymmetric);
    }
    if n > ALPHA_LIMIT {
        return Err(AlphaError::TooLarge {
            n,
            limit: ALPHA_LIMIT,
        });
    }
    if pi.len() != n {
        return Err(AlphaError::Penalties { n, got: pi.len() });
    }
    let k = k.min(n.saturating_sub(1));
    let c = |i: usize, j: usize| cost.cost(i, j) as f64 + pi[i] + pi[j];
    if n < 3 || k == 0 {
        // Every other node is a candidate.
        let out: Vec<u32> = (0..n)
            .flat_map(|i| (0..n).filter(move |&j| j != i).take(k).map(|j| j as u32))
            .collect();
        return Neighbours::from_lists(n, k, out, Vec::new())
            .map_err(|e| AlphaError::Internal(e.to_string()));
    }
    let tree = spanning_tree(n, &c);
    // The special node's two cheapest edges.
    let mut at0: Vec<(f64, usize)> = (1..n).map(|j| (c(0, j), j)).collect();
    at0.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let (first0, second0) = (at0[0].1, at0[1].1);
    let second_cost = at0[1].0;
    let alpha_to_0 = |j: usize| {
        if j == first0 || j == second0 {
            0.0
        } else {
            c(0, j) - second_cost
        }
    };
    let rows: Vec<Vec<u32>> = (0..n)
        .into_par_iter()
        .map_init(
            || (vec![0.0f64; n], vec![usize::MAX; n]),
            |(beta, mark), i| {
                let mut row: Vec<(f64, f64, u32)> = Vec::with_capacity(n - 1);
                if i == 0 {
                    for j in 1..n {
                        row.push((alpha_to_0(j), c(0, j), j as u32));
                    }
                } else {
                    // beta[j]: costliest edge on the tree path i .. j. First the path from i to
                    // the root, then everything else from its parent, parents first.
                    beta[i] = f64::NEG_INFINITY;
                    mark[i] = i;
                    let mut v = i;
                    while v != 1 {
                        let p = tree.parent[v];
                        beta[p] = beta[v].max(tree.up[v]);
                        mark[p] = i;
                        v = p;
                    }
                    for &j in &tree.order {
                        if mark[j] != i {
                            beta[j] = beta[tree.parent[j]].max(tree.up[j]);
                        }
                    }
                    row.push((alpha_to_0(i), c(i, 0), 0));
                    for (j, &bj) in beta.iter().enumerate().skip(1) {
                        if j != i {
                            let cij = c(i, j);
                            row.push(((cij - bj).max(0.0), cij, j as u32));
                        }
                    }
                }
                let by = |a: &(f64, f64, u32), b: &(f64, f64, u32)| {
                    a.0.total_cmp(&b.0)
                        .then(a.1.total_cmp(&b.1))
                        .then(a.2.cmp(&b.2))
                };
                if row.len() > k {
                    row.select_nth_unstable_by(k - 1, by);
                    row.truncate(k);
                }
                row.sort_by(by);
                row.into_iter().map(|(_, _, j)| j).collect()
            },
        )
        .collect();
    Neighbours::from_lists(n, k, rows.concat(), Vec::new())
        .map_err(|e| AlphaError::Internal(e.to_string()))
}

/// One-trees the ascent of [`from_ascent`] may compute: enough for good penalties on small
/// instances, and about 4·10⁸ cost look-ups at most on large ones (about a second for 2-D
/// Euclidean costs; 20 one-trees from 4,500 nodes on). A budget of 2·10⁹ left nothing of a
/// 10 s limit for the search at 4,461 nodes (an 18 % gap against 0.2 % with nearest lists).
pub(crate) fn ascent_iterations(n: usize) -> usize {
    let n2 = (n.max(1) as u64).saturating_mul(n.max(1) as u64);
    (400_000_000 / n2).clamp(20, 300) as usize
}

/// Alpha-nearness lists under penalties from a Held–Karp ascent of [`ascent_iterations`]
/// one-trees (a fixed count, so the lists and every search using them are repeatable).
pub fn from_ascent<C: Cost + ?Sized>(cost: &C, k: usize) -> Result<Neighbours, AlphaError> {
    let n = cost.len();
    if !cost.is_symmetric() {
        return Err(AlphaError::Asymmetric);
    }
    if n > ALPHA_LIMIT {
        return Err(AlphaError::TooLarge {
            n,
            limit: ALPHA_LIMIT,
        });
    }
    let opts = crate::bounds::AscentOptions {
        time_limit: None,
        max_iterations: Some(ascent_iterations(n)),
        upper_bound: None,
    };
    let asc = crate::bounds::held_karp_bound(cost, &opts, &crate::control::StopHandle::new())
        .map_err(|e| AlphaError::Bound(e.to_string()))?;
    alpha_nearness(cost, &asc.pi, k)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::{CoordCost, MatrixCost, Metric};
    use proptest::prelude::*;

    /// Minimum 1-tree cost, computed independently of the code under test: Kruskal on the
    /// nodes 1..n (with the forced edge taken first when it avoids node 0) plus the two cheapest
    /// edges at 0 (one of them the forced edge when it touches 0).
    fn one_tree_cost(m: &[Vec<f64>], forced: Option<(usize, usize)>) -> f64 {
        let n = m.len();
        let mut root: Vec<usize> = (0..n).collect();
        fn find(r: &mut [usize], mut x: usize) -> usize {
            while r[x] != x {
                x = r[x];
            }
            x
        }
        let mut total = 0.0;
        let mut edges: Vec<(f64, usize, usize)> = Vec::new();
        for (i, row) in m.iter().enumerate().skip(1) {
            for (j, &w) in row.iter().enumerate().skip(i + 1) {
                edges.push((w, i, j));
            }
        }
        edges.sort_by(|a, b| a.0.total_cmp(&b.0));
        if let Some((a, b)) = forced.filter(|&(a, b)| a != 0 && b != 0) {
            total += m[a][b];
            root[a.max(b)] = a.min(b);
            edges.retain(|&(_, x, y)| (x, y) != (a.min(b), a.max(b)));
        }
        for (w, x, y) in edges {
            let (rx, ry) = (find(&mut root, x), find(&mut root, y));
            if rx != ry {
                root[rx] = ry;
                total += w;
            }
        }
        let mut at0: Vec<(f64, usize)> = (1..n).map(|j| (m[0][j], j)).collect();
        at0.sort_by(|a, b| a.0.total_cmp(&b.0));
        match forced.filter(|&(a, b)| a == 0 || b == 0) {
            Some((a, b)) => {
                let j = a.max(b);
                let other = at0.iter().find(|&&(_, x)| x != j).map_or(0.0, |e| e.0);
                total + m[0][j] + other
            }
            None => total + at0[0].0 + at0[1].0,
        }
    }

    proptest! {
        // On small random instances, each node's list holds the k edges whose forced 1-trees
        // are cheapest, compared by brute force (one Prim run per forced edge).
        #[test]
        fn lists_hold_the_edges_of_cheapest_forced_one_trees(n in 4usize..12, seed in 0u64..500, k in 1usize..5) {
            let mut s = seed.wrapping_add(1);
            let pts: Vec<[f64; 2]> = (0..n).map(|_| {
                let mut r = || { s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407); ((s >> 33) % 10_000) as f64 };
                [r(), r()]
            }).collect();
            let c = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
            let pi: Vec<f64> = (0..n).map(|i| ((i * 37 + seed as usize) % 13) as f64 - 6.0).collect();
            let m: Vec<Vec<f64>> = (0..n).map(|i| (0..n).map(|j| if i == j { 0.0 } else { c.cost(i, j) as f64 + pi[i] + pi[j] }).collect()).collect();
            let base = one_tree_cost(&m, None);
            let k = k.min(n - 1);
            let nb = alpha_nearness(&c, &pi, k).unwrap();
            for i in 0..n {
                let mut alphas: Vec<f64> = (0..n).filter(|&j| j != i).map(|j| one_tree_cost(&m, Some((i, j))) - base).collect();
                alphas.sort_by(f64::total_cmp);
                let mut got: Vec<f64> = nb.out(i).iter().map(|&j| one_tree_cost(&m, Some((i, j as usize))) - base).collect();
                got.sort_by(f64::total_cmp);
                for (g, w) in got.iter().zip(&alphas) {
                    prop_assert!((g - w).abs() < 1e-6, "node {}: got {:?}, want {:?}", i, got, &alphas[..k]);
                }
            }
        }
    }

    #[test]
    fn refuses_what_it_cannot_do() {
        let m = MatrixCost::from_rows(&[vec![0, 1, 2], vec![2, 0, 1], vec![1, 2, 0]]).unwrap();
        assert_eq!(
            alpha_nearness(&m, &[0.0; 3], 2).unwrap_err(),
            AlphaError::Asymmetric
        );
        let c = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]]).unwrap();
        assert!(matches!(
            alpha_nearness(&c, &[0.0; 2], 2),
            Err(AlphaError::Penalties { n: 3, got: 2 })
        ));
        let nb = alpha_nearness(&c, &[0.0; 3], 5).unwrap();
        assert_eq!(nb.k(), 2);
    }
}
