//! Subtour cuts from an LP point, found exactly.
//!
//! The support graph holds the edges with `x_e > 0`, weighted by `x_e`. A node set `S` breaks
//! a subtour constraint when `x(δ(S)) < 2`. When the support graph is disconnected, every
//! component is such a set. When it is connected, the components of the edges at or above a
//! few thresholds of `x` are tried first (a linear-time pass each); only when none of them is
//! violated does a global minimum cut (Stoer and Wagner's algorithm) look for a set of smallest
//! `x(δ(S))`, so no violated subtour constraint is missed either way; further sets come from
//! the graph with each set found shrunk. Cuts run on capacities scaled to integers
//! (`x_e · 10⁹`).

use pathfinding::undirected::connected_components::components;
use rustworkx_core::connectivity::stoer_wagner_min_cut;
use rustworkx_core::petgraph::graph::{NodeIndex, UnGraph};
use rustworkx_core::petgraph::unionfind::UnionFind;
use std::collections::HashMap;

/// Integer units per unit of `x` in the cuts.
const SCALE: f64 = 1e9;

/// An edge of the support graph: its ends and its LP value.
pub type Weighted = (usize, usize, f64);

/// `x(δ(S))` for the node set marked by `inside`.
pub fn crossing(edges: &[Weighted], inside: &[bool]) -> f64 {
    edges
        .iter()
        .filter(|&&(u, v, _)| inside[u] != inside[v])
        .map(|&(_, _, x)| x)
        .sum()
}

/// The connected components of the support graph over nodes `0..n` (edges with `x` above
/// `eps`), each sorted.
pub fn support_components(n: usize, edges: &[Weighted], eps: f64) -> Vec<Vec<usize>> {
    let mut groups: Vec<Vec<usize>> = (0..n).map(|v| vec![v]).collect();
    groups.extend(
        edges
            .iter()
            .filter(|e| e.2 > eps)
            .map(|&(u, v, _)| vec![u, v]),
    );
    let mut out: Vec<Vec<usize>> = components(&groups)
        .into_iter()
        .map(|c| {
            let mut c: Vec<usize> = c.into_iter().collect();
            c.sort_unstable();
            c
        })
        .collect();
    out.sort();
    out
}

/// Node sets with `x(δ(S)) < 2 − tol`, each as its smaller side (sorted, never empty, never all
/// `n` nodes), without repeats; empty only when no such set exists.
pub fn violated_subtours(n: usize, edges: &[Weighted], tol: f64) -> Vec<Vec<usize>> {
    if n < 3 {
        return Vec::new();
    }
    let parts = support_components(n, edges, 0.0);
    if parts.len() > 1 {
        let mut out: Vec<Vec<usize>> = parts.into_iter().map(|s| smaller_side(n, s)).collect();
        out.sort();
        out.dedup();
        return out;
    }
    let quick = threshold_sets(n, edges, tol);
    if !quick.is_empty() {
        return quick;
    }
    min_cut_sets(n, edges, tol)
}

/// Values of `x` at which [`threshold_sets`] cuts the support graph.
const THRESHOLDS: [f64; 4] = [1.0 - 1e-9, 0.75, 0.5, 0.25];

/// Violated sets among the components of the edges with `x` at or above each of
/// [`THRESHOLDS`] (common practice: sets held together by heavy edges are the usual subtours
/// of an LP point), up to [`CUTS_PER_ROUND`]. May miss violated sets; finds none that is not.
fn threshold_sets(n: usize, edges: &[Weighted], tol: f64) -> Vec<Vec<usize>> {
    let mut found: Vec<Vec<usize>> = Vec::new();
    for t in THRESHOLDS {
        let mut sets = UnionFind::<usize>::new(n);
        for &(u, v, x) in edges {
            if x >= t {
                sets.union(u, v);
            }
        }
        let root: Vec<usize> = (0..n).map(|v| sets.find_mut(v)).collect();
        let mut size = vec![0usize; n];
        for &r in &root {
            size[r] += 1;
        }
        let mut cross = vec![0.0; n];
        for &(u, v, x) in edges {
            if root[u] != root[v] {
                cross[root[u]] += x;
                cross[root[v]] += x;
            }
        }
        for r in 0..n {
            if size[r] >= 2 && size[r] < n && cross[r] < 2.0 - tol {
                let set: Vec<usize> = (0..n).filter(|&v| root[v] == r).collect();
                found.push(smaller_side(n, set));
            }
        }
        if found.len() >= CUTS_PER_ROUND {
            break;
        }
    }
    found.sort();
    found.dedup();
    found.truncate(CUTS_PER_ROUND);
    found
}

/// Violated sets found at most per call by [`min_cut_sets`].
const CUTS_PER_ROUND: usize = 8;

/// `s` (sorted) or its complement, whichever has fewer nodes; on a tie, the one holding node 0.
fn smaller_side(n: usize, s: Vec<usize>) -> Vec<usize> {
    if 2 * s.len() < n || (2 * s.len() == n && s.first() == Some(&0)) {
        return s;
    }
    let mut inside = vec![false; n];
    for &v in &s {
        inside[v] = true;
    }
    (0..n).filter(|&v| !inside[v]).collect()
}

/// Violated sets of a connected support graph by global minimum cuts (Stoer and Wagner's
/// algorithm): the first is a minimum cut of the whole graph, so none is missed when it is not
/// below `2 − tol`. After each set found below, the set and its most strongly joined node
/// outside are shrunk into one node (no later cut separates them, the same set is not found
/// twice) and the search goes on, up to [`CUTS_PER_ROUND`] sets.
fn min_cut_sets(n: usize, edges: &[Weighted], tol: f64) -> Vec<Vec<usize>> {
    let limit = ((2.0 - tol) * SCALE) as i64;
    // group[v]: the shrunk node holding v (a node id of its members). When every node meets
    // the degree equation, the ends of every edge at 1 start shrunk together: if a set S
    // holding u but not v (x_uv = 1) is violated, so is S ∪ {v}, since
    // x(δ(S ∪ {v})) = x(δ(S)) + 2 − 2 x(v : S) ≤ x(δ(S)) (a safe shrinking of Padberg and
    // Rinaldi, Mathematical Programming 47, 1990).
    let mut group: Vec<usize> = (0..n).collect();
    let mut degree = vec![0.0; n];
    for &(u, v, x) in edges {
        degree[u] += x;
        degree[v] += x;
    }
    if degree.iter().all(|d| (d - 2.0).abs() < 1e-6) {
        let mut sets = UnionFind::<usize>::new(n);
        for &(u, v, x) in edges {
            if x >= 1.0 - 1e-9 {
                sets.union(u, v);
            }
        }
        for (v, g) in group.iter_mut().enumerate() {
            *g = sets.find_mut(v);
        }
    }
    let mut found: Vec<Vec<usize>> = Vec::new();
    while found.len() < CUTS_PER_ROUND {
        // The shrunk graph: one node per group, parallel edges summed.
        let mut ids: Vec<usize> = group.clone();
        ids.sort_unstable();
        ids.dedup();
        if ids.len() < 2 {
            break;
        }
        let index = |g: usize| ids.binary_search(&g).unwrap_or(0);
        let mut weight: HashMap<(usize, usize), i64> = HashMap::new();
        for &(u, v, x) in edges {
            let (a, b) = (index(group[u]), index(group[v]));
            if a != b && x > 0.0 {
                *weight.entry((a.min(b), a.max(b))).or_insert(0) += (x * SCALE).round() as i64;
            }
        }
        let mut g: UnGraph<(), i64> = UnGraph::with_capacity(ids.len(), weight.len());
        let nodes: Vec<NodeIndex> = (0..ids.len()).map(|_| g.add_node(())).collect();
        let mut pairs: Vec<(&(usize, usize), &i64)> = weight.iter().collect();
        pairs.sort_unstable();
        for (&(a, b), &w) in pairs {
            g.add_edge(nodes[a], nodes[b], w);
        }
        let cut: Result<Option<(i64, Vec<NodeIndex>)>, std::convert::Infallible> =
            stoer_wagner_min_cut(&g, |e| Ok(*e.weight()));
        let Some((value, side)) = cut.ok().flatten() else {
            break;
        };
        if value >= limit {
            break;
        }
        let mut inside = vec![false; ids.len()];
        for v in &side {
            inside[v.index()] = true;
        }
        let set: Vec<usize> = (0..n).filter(|&v| inside[index(group[v])]).collect();
        if set.is_empty() || set.len() == n {
            break;
        }
        found.push(smaller_side(n, set));
        // Shrink the set with the shrunk node outside it joined to it most strongly.
        let mut pull: Vec<i64> = vec![0; ids.len()];
        for (&(a, b), &w) in &weight {
            if inside[a] != inside[b] {
                pull[if inside[a] { b } else { a }] += w;
            }
        }
        let Some(partner) = (0..ids.len())
            .filter(|&k| !inside[k])
            .max_by_key(|&k| (pull[k], std::cmp::Reverse(k)))
        else {
            break;
        };
        let target = ids[partner];
        for v in 0..n {
            if inside[index(group[v])] {
                group[v] = target;
            }
        }
    }
    found.sort();
    found.dedup();
    found
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every non-empty proper subset's crossing value, by enumeration.
    fn brute_force_min(n: usize, edges: &[Weighted]) -> f64 {
        (1..(1u32 << n) - 1)
            .map(|mask| {
                let inside: Vec<bool> = (0..n).map(|v| mask >> v & 1 == 1).collect();
                crossing(edges, &inside)
            })
            .fold(f64::INFINITY, f64::min)
    }

    #[test]
    fn two_triangles_are_two_subtours() {
        let e = [
            (0, 1, 1.0),
            (1, 2, 1.0),
            (2, 0, 1.0),
            (3, 4, 1.0),
            (4, 5, 1.0),
            (5, 3, 1.0),
        ];
        assert_eq!(violated_subtours(6, &e, 1e-6), vec![vec![0, 1, 2]]);
    }

    #[test]
    fn a_connected_point_with_a_weak_cut() {
        // Two triangles joined by two half edges, every degree 2: x(δ({0,1,2})) = 1 < 2, yet
        // connected.
        let e = [
            (0, 1, 1.0),
            (1, 2, 1.0),
            (2, 0, 0.5),
            (3, 4, 1.0),
            (4, 5, 1.0),
            (5, 3, 0.5),
            (2, 3, 0.5),
            (0, 5, 0.5),
        ];
        let sets = violated_subtours(6, &e, 1e-6);
        assert_eq!(sets, vec![vec![0, 1, 2]]);
        let inside: Vec<bool> = (0..6).map(|v| v < 3).collect();
        assert!((crossing(&e, &inside) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn a_tour_has_no_violated_subtour() {
        let e: Vec<Weighted> = (0..7).map(|i| (i, (i + 1) % 7, 1.0)).collect();
        assert!(violated_subtours(7, &e, 1e-6).is_empty());
    }

    #[test]
    fn the_cuts_found_are_the_smallest_by_enumeration() {
        // Random support graphs on 9 nodes, against the least crossing value found by
        // enumerating all 510 proper subsets: a violated set is found exactly when that value is
        // below 2, every set found is below 2, and the minimum cut search (or the components of
        // a disconnected support) finds a set of that least value.
        let mut state = 12345u64;
        let mut next = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 33) as f64 / (1u64 << 31) as f64
        };
        for _ in 0..200 {
            let n = 9;
            let mut e = Vec::new();
            for u in 0..n {
                for v in u + 1..n {
                    if next() < 0.35 {
                        e.push((u, v, (next() * 8.0).round() / 8.0));
                    }
                }
            }
            let least = brute_force_min(n, &e);
            let sets = violated_subtours(n, &e, 1e-6);
            // None missed: a violated set exists exactly when one is found.
            assert_eq!(sets.is_empty(), least >= 2.0 - 1e-6, "{e:?}");
            let connected = support_components(n, &e, 0.0).len() == 1;
            // The minimum cut search on its own, on a connected support: a set of the least value.
            let exact = if connected {
                min_cut_sets(n, &e, 1e-6)
            } else {
                sets.clone()
            };
            for s in sets.iter().chain(&exact) {
                let mut inside = vec![false; n];
                for &v in s {
                    inside[v] = true;
                }
                assert!(crossing(&e, &inside) < 2.0 - 1e-6, "{s:?} in {e:?}");
                assert!(!s.is_empty() && s.len() < n);
            }
            if least < 2.0 - 1e-6 {
                let best = exact
                    .iter()
                    .map(|s| {
                        let mut inside = vec![false; n];
                        for &v in s {
                            inside[v] = true;
                        }
                        crossing(&e, &inside)
                    })
                    .fold(f64::INFINITY, f64::min);
                assert!(
                    (best - least).abs() < 1e-9,
                    "least {least}, found {best}, {e:?}"
                );
            } else {
                assert!(exact.is_empty());
            }
        }
    }
}
