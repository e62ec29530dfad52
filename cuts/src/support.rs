//! Subtour cuts from an LP point, found exactly.
//!
//! The support graph holds the edges with `x_e > 0`, weighted by `x_e`. A node set `S` breaks
//! a subtour constraint when `x(δ(S)) < 2`. When the support graph is disconnected, every
//! component is such a set. When it is connected, the sets of smallest `x(δ(S))` are found by
//! minimum cuts: one maximum flow from each node to its parent in a flow-equivalent tree
//! (Gusfield's construction, n − 1 flows), which meets every pair's minimum cut, so no violated
//! subtour constraint is missed; one global minimum cut first (Stoer and Wagner) tells whether
//! any is violated at all. Flows run on capacities scaled to integers (`x_e · 10⁹`).

use pathfinding::directed::edmonds_karp::edmonds_karp_sparse;
use pathfinding::undirected::connected_components::components;
use rustworkx_core::connectivity::stoer_wagner_min_cut;
use rustworkx_core::petgraph::graph::{NodeIndex, UnGraph};
use std::collections::{HashSet, VecDeque};

/// Integer units per unit of `x` in the flows.
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

/// Every node set found with `x(δ(S)) < 2 − tol`, as the side without node 0's... the smaller
/// side (sorted, never empty, never all `n` nodes), without repeats.
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
    // The common case late in the loop: no violated cut at all. One global minimum cut
    // (Stoer and Wagner's algorithm) settles it; only when it is below 2 do the n − 1 flows
    // run, to collect every violated set.
    if let Some(value) = global_min_cut(n, edges) {
        if value >= ((2.0 - tol) * SCALE) as i64 {
            return Vec::new();
        }
    }
    min_cut_sets(n, edges, tol)
}

/// The value of a global minimum cut of the support graph (capacities scaled to integers), by
/// Stoer and Wagner's algorithm; `None` for fewer than two nodes.
fn global_min_cut(n: usize, edges: &[Weighted]) -> Option<i64> {
    let mut g: UnGraph<(), i64> = UnGraph::with_capacity(n, edges.len());
    let nodes: Vec<NodeIndex> = (0..n).map(|_| g.add_node(())).collect();
    for &(u, v, x) in edges {
        if x > 0.0 && u != v {
            g.add_edge(nodes[u], nodes[v], (x * SCALE).round() as i64);
        }
    }
    let cut: Result<Option<(i64, Vec<NodeIndex>)>, std::convert::Infallible> =
        stoer_wagner_min_cut(&g, |e| Ok(*e.weight()));
    cut.ok().flatten().map(|(value, _)| value)
}

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

/// The minimum cuts of a connected support graph below `2 − tol`, by Gusfield's n − 1 flows.
fn min_cut_sets(n: usize, edges: &[Weighted], tol: f64) -> Vec<Vec<usize>> {
    let caps: Vec<((usize, usize), i64)> = edges
        .iter()
        .filter(|e| e.2 > 0.0)
        .flat_map(|&(u, v, x)| {
            let c = (x * SCALE).round() as i64;
            [((u, v), c), ((v, u), c)]
        })
        .collect();
    let mut adjacent: Vec<Vec<usize>> = vec![Vec::new(); n];
    for &(u, v, x) in edges {
        if x > 0.0 {
            adjacent[u].push(v);
            adjacent[v].push(u);
        }
    }
    let nodes: Vec<usize> = (0..n).collect();
    let limit = ((2.0 - tol) * SCALE) as i64;
    let mut parent = vec![0usize; n];
    let mut found: HashSet<Vec<usize>> = HashSet::new();
    for s in 1..n {
        let t = parent[s];
        let (_, value, cut) = edmonds_karp_sparse(&nodes, &s, &t, caps.iter().copied());
        let side = source_side(n, s, &adjacent, &cut);
        for i in s + 1..n {
            if side[i] && parent[i] == t {
                parent[i] = s;
            }
        }
        if value < limit {
            let set: Vec<usize> = (0..n).filter(|&v| side[v]).collect();
            found.insert(smaller_side(n, set));
        }
    }
    let mut out: Vec<Vec<usize>> = found.into_iter().collect();
    out.sort();
    out
}

/// The nodes reached from `s` without crossing an edge of `cut` (the arcs a minimum cut
/// saturates): a source side of that minimum cut.
fn source_side(
    n: usize,
    s: usize,
    adjacent: &[Vec<usize>],
    cut: &[((usize, usize), i64)],
) -> Vec<bool> {
    let blocked: HashSet<(usize, usize)> = cut
        .iter()
        .flat_map(|&((u, v), _)| [(u, v), (v, u)])
        .collect();
    let mut seen = vec![false; n];
    seen[s] = true;
    let mut queue = VecDeque::from([s]);
    while let Some(u) = queue.pop_front() {
        for &v in &adjacent[u] {
            if !seen[v] && !blocked.contains(&(u, v)) {
                seen[v] = true;
                queue.push_back(v);
            }
        }
    }
    seen
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
        // Random support graphs on 9 nodes: when the least crossing value found by enumerating
        // all 510 proper subsets is below 2, a set of that value is among those found, and
        // every set found is below 2.
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
            for s in &sets {
                let mut inside = vec![false; n];
                for &v in s {
                    inside[v] = true;
                }
                assert!(crossing(&e, &inside) < 2.0 - 1e-6, "{s:?} in {e:?}");
                assert!(!s.is_empty() && s.len() < n);
            }
            if least < 2.0 - 1e-6 {
                let best = sets
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
                assert!(sets.is_empty());
            }
        }
    }
}
