//! Starting tours: nearest neighbour, greedy edge and a space-filling curve.
//!
//! Each returns a visiting order (a permutation of all nodes). The `noise` variants give the
//! restarts of the local search different, still reasonable, starting points.

use crate::cost::{Cost, Geometry};
use crate::neighbours::Neighbours;
use crate::neighbours::tree::PointTree;
use petgraph::unionfind::UnionFind;
use rand::Rng;
use rayon::prelude::*;

/// Nearest neighbour from `start`: always step to the cheapest unvisited node.
///
/// The neighbour lists answer most steps; when all of a node's neighbours are taken the remaining
/// nodes are scanned, so the worst case is quadratic but typical runs are near linear.
pub(crate) fn nearest_neighbour<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    start: usize,
) -> Vec<usize> {
    let n = cost.len();
    if n == 0 {
        return Vec::new();
    }
    // Unvisited nodes in a vector with positions, so removal is O(1) and the fallback scan only
    // looks at nodes still to visit.
    let mut unvisited: Vec<usize> = (0..n).collect();
    let mut slot: Vec<usize> = (0..n).collect();
    let mut take = |v: usize, unvisited: &mut Vec<usize>| {
        let s = slot[v];
        let last = unvisited.len() - 1;
        unvisited.swap(s, last);
        slot[unvisited[s]] = s;
        unvisited.pop();
        slot[v] = usize::MAX;
    };
    let mut order = Vec::with_capacity(n);
    let mut cur = start.min(n - 1);
    take(cur, &mut unvisited);
    order.push(cur);
    let mut is_taken = vec![false; n];
    is_taken[cur] = true;
    while !unvisited.is_empty() {
        let next = nb
            .out(cur)
            .iter()
            .map(|&j| j as usize)
            .find(|&j| !is_taken[j])
            .unwrap_or_else(|| {
                // `min_by_key` keeps the first minimum; scanning in a fixed order keeps runs
                // reproducible.
                let mut best = unvisited[0];
                let mut best_cost = cost.cost(cur, best);
                for &v in &unvisited[1..] {
                    let c = cost.cost(cur, v);
                    if c < best_cost || (c == best_cost && v < best) {
                        best = v;
                        best_cost = c;
                    }
                }
                best
            });
        take(next, &mut unvisited);
        is_taken[next] = true;
        order.push(next);
        cur = next;
    }
    order
}

/// Greedy edge: take candidate edges cheapest first whenever they keep every node at degree two
/// or less and close no cycle; then join the fragments end to end, nearest end first.
///
/// With `noise > 0`, each edge's cost is scaled by a random factor in `[1, 1 + noise)` before
/// sorting, which gives different fragments on each restart.
pub fn greedy_edge<C: Cost + ?Sized, R: Rng>(
    cost: &C,
    nb: &Neighbours,
    noise: f64,
    rng: &mut R,
) -> Vec<usize> {
    match greedy_edge_until(cost, nb, noise, rng, &mut || false) {
        Some(order) => order,
        None => (0..cost.len()).collect(),
    }
}

/// [`greedy_edge`], given up when `stop` turns true (polled every few thousand nodes or
/// edges): `None` then. On a million nodes the construction takes seconds.
pub(crate) fn greedy_edge_until<C: Cost + ?Sized, R: Rng>(
    cost: &C,
    nb: &Neighbours,
    noise: f64,
    rng: &mut R,
    stop: &mut dyn FnMut() -> bool,
) -> Option<Vec<usize>> {
    let n = cost.len();
    if n < 3 {
        return Some((0..n).collect());
    }
    let symmetric = cost.is_symmetric();
    let mut edges: Vec<(f64, usize, usize)> = Vec::with_capacity(n * nb.k());
    for i in 0..n {
        if i.is_multiple_of(4096) && stop() {
            return None;
        }
        for &j in nb.out(i) {
            let j = j as usize;
            if symmetric && j < i && nb.out(j).contains(&(i as u32)) {
                continue; // the same undirected edge is listed from j
            }
            let (a, b) = if symmetric {
                (i.min(j), i.max(j))
            } else {
                (i, j)
            };
            let mut key = cost.cost(a, b) as f64;
            if noise > 0.0 {
                key *= 1.0 + noise * rng.r#gen::<f64>();
            }
            edges.push((key, a, b));
        }
    }
    // (key, a, b) orders every edge apart, so the unstable sort gives the one order there is.
    edges.par_sort_unstable_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)).then(x.2.cmp(&y.2)));
    edges.dedup_by(|x, y| x.1 == y.1 && x.2 == y.2);
    if stop() {
        return None;
    }

    // succ/pred links of the fragments; for symmetric costs the two links of a node are
    // unordered ends.
    const NONE: usize = usize::MAX;
    let mut link = vec![[NONE, NONE]; n];
    // Union-find over nodes keeps the fragments acyclic.
    let mut dsu = UnionFind::<usize>::new(n);
    let mut added = 0;
    for (e, &(_, a, b)) in edges.iter().enumerate() {
        if added == n - 1 {
            break;
        }
        if e.is_multiple_of(65536) && stop() {
            return None;
        }
        let ok = if symmetric {
            link[a][1] == NONE && link[b][1] == NONE
        } else {
            link[a][1] == NONE && link[b][0] == NONE
        };
        if ok && dsu.union(a, b) {
            if symmetric {
                link_ends(&mut link, a, b);
            } else {
                link[a][1] = b; // a -> b
                link[b][0] = a;
            }
            added += 1;
        }
    }
    if symmetric && let Some(g) = cost.geometry().filter(|g| g.points.len() == n) {
        match_ends(cost, g, &mut link, &mut dsu, added, stop)?;
    }
    join_fragments(cost, nb, &link, symmetric, stop)
}

/// The greedy matching carried on among the free ends of the fragments, in rounds: each round
/// pairs every free end with the nearest few other free ends in the plane (or space) and adds
/// those edges, shortest first, under the same rules, until few fragments are left. Without it,
/// joining the tens of thousands of fragments a million points leave, each to the nearest end
/// found by a scan, takes time quadratic in their number.
fn match_ends<C: Cost + ?Sized>(
    cost: &C,
    g: Geometry<'_>,
    link: &mut [[usize; 2]],
    dsu: &mut UnionFind<usize>,
    mut added: usize,
    stop: &mut dyn FnMut() -> bool,
) -> Option<()> {
    const NONE: usize = usize::MAX;
    /// Other free ends each free end is paired with in a round.
    const NEAR: usize = 8;
    /// Up to this many free ends, the scan of [`join_fragments`] takes well under a second;
    /// instances below about 150,000 nodes never leave more, and the scan alone joins them.
    const FEW: usize = 10_000;
    let n = link.len();
    loop {
        let ends: Vec<usize> = (0..n).filter(|&v| link[v][1] == NONE).collect();
        if added + 1 >= n || ends.len() <= FEW {
            return Some(());
        }
        if stop() {
            return None;
        }
        let points: Vec<[f64; 3]> = ends.iter().map(|&v| g.points[v]).collect();
        let tree = PointTree::new(&points, g.dims);
        let found = &*dsu;
        let mut edges: Vec<(i64, usize, usize)> = (0..ends.len())
            .into_par_iter()
            .flat_map_iter(|i| {
                let a = ends[i];
                tree.nearest(&points[i], NEAR + 1)
                    .into_iter()
                    .map(|m| ends[m as usize])
                    .filter(move |&b| b != a && !found.equiv(a, b))
                    .map(move |b| (cost.cost(a.min(b), a.max(b)), a.min(b), a.max(b)))
            })
            .collect();
        edges.par_sort_unstable();
        edges.dedup();
        let before = added;
        for &(_, a, b) in &edges {
            if link[a][1] == NONE && link[b][1] == NONE && dsu.union(a, b) {
                link_ends(link, a, b);
                added += 1;
            }
        }
        if added == before {
            return Some(());
        }
    }
}

/// Joins the free ends `a` and `b` of two fragments of symmetric costs (each end's first free
/// slot of its two unordered links).
fn link_ends(link: &mut [[usize; 2]], a: usize, b: usize) {
    let sa = usize::from(link[a][0] != usize::MAX);
    let sb = usize::from(link[b][0] != usize::MAX);
    link[a][sa] = b;
    link[b][sb] = a;
}

/// Walks the fragments given by `link` and concatenates them, each time entering the fragment
/// whose free end is cheapest to reach from the current end.
fn join_fragments<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    link: &[[usize; 2]],
    symmetric: bool,
    stop: &mut dyn FnMut() -> bool,
) -> Option<Vec<usize>> {
    const NONE: usize = usize::MAX;
    let n = link.len();
    // Fragment starts: for symmetric costs any node of degree < 2, for asymmetric costs nodes
    // with no predecessor.
    let is_start = |v: usize| {
        if symmetric {
            link[v][1] == NONE
        } else {
            link[v][0] == NONE
        }
    };
    let mut used = vec![false; n];
    let mut order = Vec::with_capacity(n);
    // Walk one fragment from its end `v`.
    let walk = |v: usize, used: &mut Vec<bool>, order: &mut Vec<usize>| {
        let mut prev = NONE;
        let mut cur = v;
        loop {
            used[cur] = true;
            order.push(cur);
            let next = if symmetric {
                if link[cur][0] != prev && link[cur][0] != NONE {
                    link[cur][0]
                } else if link[cur][1] != prev {
                    link[cur][1]
                } else {
                    NONE
                }
            } else {
                link[cur][1]
            };
            if next == NONE || used[next] {
                break cur;
            }
            prev = cur;
            cur = next;
        }
    };
    let starts: Vec<usize> = (0..n).filter(|&v| is_start(v)).collect();
    if starts.is_empty() {
        // Only possible if the links closed a cycle, which the union-find forbids.
        return Some((0..n).collect());
    }
    let mut end = walk(starts[0], &mut used, &mut order);
    let mut remaining: Vec<usize> = starts[1..].to_vec();
    let mut joins = 0usize;
    while order.len() < n {
        joins += 1;
        if joins.is_multiple_of(1024) && stop() {
            return None;
        }
        remaining.retain(|&v| !used[v]);
        // A neighbour that is a free fragment end, else the cheapest remaining end by scan.
        let next = nb
            .out(end)
            .iter()
            .map(|&j| j as usize)
            .find(|&j| !used[j] && is_start(j))
            .or_else(|| {
                remaining
                    .iter()
                    .copied()
                    .min_by_key(|&v| (cost.cost(end, v), v))
            });
        match next {
            Some(v) => end = walk(v, &mut used, &mut order),
            None => break,
        }
    }
    Some(order)
}

/// Order along a Hilbert curve through the nodes' geometry (the two coordinates with the
/// largest spread). `None` when the costs have no geometry. `shift` in `[0, 1)^2` moves the
/// curve's origin (wrapping), for varied restarts.
pub(crate) fn space_filling_curve<C: Cost + ?Sized>(
    cost: &C,
    shift: [f64; 2],
) -> Option<Vec<usize>> {
    let g = cost.geometry()?;
    let n = g.points.len();
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in g.points {
        for d in 0..g.dims {
            lo[d] = lo[d].min(p[d]);
            hi[d] = hi[d].max(p[d]);
        }
    }
    let mut axes: Vec<usize> = (0..g.dims).collect();
    axes.sort_by(|&a, &b| (hi[b] - lo[b]).total_cmp(&(hi[a] - lo[a])));
    let (ax, ay) = (axes[0], axes.get(1).copied().unwrap_or(axes[0]));
    let span = (hi[ax] - lo[ax])
        .max(hi[ay] - lo[ay])
        .max(f64::MIN_POSITIVE);
    const SIDE: u32 = 1 << 16;
    let cell = |v: f64, lo: f64, s: f64| -> u32 {
        let t = ((v - lo) / span + s).fract();
        ((t * SIDE as f64) as u32).min(SIDE - 1)
    };
    let mut keyed: Vec<(u64, usize)> = (0..n)
        .map(|i| {
            let p = g.points[i];
            let x = cell(p[ax], lo[ax], shift[0]);
            let y = cell(p[ay], lo[ay], shift[1]);
            (hilbert_index(SIDE, x, y), i)
        })
        .collect();
    keyed.sort_unstable();
    Some(keyed.into_iter().map(|(_, i)| i).collect())
}

/// Position of cell `(x, y)` along the Hilbert curve filling a `side x side` grid.
fn hilbert_index(side: u32, mut x: u32, mut y: u32) -> u64 {
    let mut d: u64 = 0;
    let mut s = side / 2;
    while s > 0 {
        let rx = u32::from(x & s > 0);
        let ry = u32::from(y & s > 0);
        d += u64::from(s) * u64::from(s) * u64::from((3 * rx) ^ ry);
        // Rotate the quadrant so the curve stays continuous.
        if ry == 0 {
            if rx == 1 {
                x = side - 1 - x;
                y = side - 1 - y;
            }
            std::mem::swap(&mut x, &mut y);
        }
        s /= 2;
    }
    d
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::{CoordCost, MatrixCost, Metric};
    use crate::neighbours::k_nearest;
    use crate::tour::{Tour, closed_length};
    use rand::SeedableRng;

    fn grid(n: usize) -> CoordCost {
        let pts: Vec<[f64; 2]> = (0..n)
            .map(|i| [(i * 7919 % 101) as f64, (i * 104729 % 97) as f64])
            .collect();
        CoordCost::plane(Metric::Euc2d, &pts).unwrap()
    }

    /// `n` points spread uniformly over a square of side `side`.
    fn uniform(n: usize, side: f64, seed: u64) -> CoordCost {
        let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
        let pts: Vec<[f64; 2]> = (0..n)
            .map(|_| [rng.r#gen::<f64>() * side, rng.r#gen::<f64>() * side])
            .collect();
        CoordCost::plane(Metric::Euc2d, &pts).unwrap()
    }

    #[test]
    fn greedy_with_its_fragments_matched_in_rounds_is_a_greedy_length_tour() {
        // 200,000 points leave well over 10,000 fragment ends, so the rounds of matching among
        // the ends run before the last few fragments are joined by a scan.
        let n = 200_000;
        let side = 1_000_000.0;
        let c = uniform(n, side, 3);
        let nb =
            crate::neighbours::candidates(&c, 10, crate::neighbours::CandidateSource::Quadrant);
        let mut rng = rand_pcg::Pcg64::seed_from_u64(1);
        let order = greedy_edge(&c, &nb, 0.0, &mut rng);
        assert!(Tour::new(order.clone(), n).is_ok());
        let length = closed_length(&c, &order).unwrap() as f64;
        // 0.7124 * sqrt(n * A): the asymptotic optimal length of uniform random points
        // (Beardwood–Halton–Hammersley constant as estimated by Applegate, Bixby, Chvátal, Cook
        // and others; from memory). Greedy edge lies 14-20% above the Held–Karp bound on such
        // instances (Johnson and McGeoch's experimental analysis; from memory), and the bound
        // lies below the optimum: 25% above the yardstick would mean a badly joined tour.
        let yardstick = 0.7124 * (n as f64 * side * side).sqrt();
        assert!(
            length > yardstick,
            "{length} is shorter than the optimum can be"
        );
        assert!(
            length < 1.25 * yardstick,
            "{length} is {:.1}% above the yardstick",
            100.0 * (length / yardstick - 1.0)
        );
    }

    #[test]
    fn constructions_are_permutations() {
        let mut rng = rand_pcg::Pcg64::seed_from_u64(1);
        for n in [1, 2, 3, 4, 5, 17, 300] {
            let c = grid(n);
            let nb = k_nearest(&c, 8);
            assert!(Tour::new(nearest_neighbour(&c, &nb, 0), n).is_ok());
            assert!(Tour::new(greedy_edge(&c, &nb, 0.0, &mut rng), n).is_ok());
            assert!(Tour::new(greedy_edge(&c, &nb, 0.2, &mut rng), n).is_ok());
            assert!(Tour::new(space_filling_curve(&c, [0.3, 0.7]).unwrap(), n).is_ok());
        }
    }

    #[test]
    fn asymmetric_greedy_is_a_permutation() {
        let n = 40;
        let rows: Vec<Vec<i64>> = (0..n)
            .map(|i| (0..n).map(|j| ((i * 31 + j * 17) % 23) as i64).collect())
            .collect();
        let m = MatrixCost::from_rows(&rows).unwrap();
        let nb = k_nearest(&m, 5);
        let mut rng = rand_pcg::Pcg64::seed_from_u64(3);
        assert!(Tour::new(greedy_edge(&m, &nb, 0.1, &mut rng), n).is_ok());
        assert!(Tour::new(nearest_neighbour(&m, &nb, 7), n).is_ok());
    }

    #[test]
    fn hilbert_visits_every_cell_once_in_adjacent_steps() {
        let side = 8;
        let mut cells: Vec<(u64, u32, u32)> = (0..side)
            .flat_map(|x| (0..side).map(move |y| (hilbert_index(side, x, y), x, y)))
            .collect();
        cells.sort();
        for (k, w) in cells.windows(2).enumerate() {
            assert_eq!(w[0].0, k as u64);
            let step = w[0].1.abs_diff(w[1].1) + w[0].2.abs_diff(w[1].2);
            assert_eq!(step, 1, "cells {:?} and {:?} are not adjacent", w[0], w[1]);
        }
    }
}
