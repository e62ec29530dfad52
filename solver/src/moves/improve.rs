//! Local improvement: 2-opt and Or-opt over neighbour lists, driven by a queue of active nodes
//! with don't-look bits.
//!
//! A node leaves the queue when no improving move starts at it, and comes back only when a move
//! changes one of its tour edges, so a converged region costs nothing. For asymmetric costs only
//! direction-keeping Or-opt moves are used: a 2-opt move reverses a path, which changes its cost.

use crate::cost::Cost;
use crate::neighbours::Neighbours;
use crate::tour::{MAX_SEGMENT, TourRepr};
use std::collections::VecDeque;

/// What a local search run did.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct ImproveStats {
    /// Improving moves applied.
    pub moves: u64,
    /// Total gain of those moves (the tour got this much shorter).
    pub gain: i64,
    /// True when the run stopped because `should_stop` said so, before reaching a local optimum.
    pub interrupted: bool,
}

/// Improves `tour` by 2-opt (symmetric costs only) and Or-opt moves until no improving move
/// starts at any node, or `should_stop` returns true (polled every few hundred nodes).
pub fn two_opt_or_opt<C: Cost + ?Sized, T: TourRepr>(
    cost: &C,
    nb: &Neighbours,
    tour: &mut T,
    should_stop: &mut dyn FnMut() -> bool,
) -> ImproveStats {
    let n = tour.len();
    let mut stats = ImproveStats::default();
    if n < 5 || nb.k() == 0 {
        return stats;
    }
    let symmetric = cost.is_symmetric();
    let mut queue: VecDeque<usize> = tour.stored_order().into_iter().collect();
    let mut queued = vec![true; n];
    let mut polls = 0u32;
    while let Some(a) = queue.pop_front() {
        queued[a] = false;
        polls += 1;
        if polls.is_multiple_of(256) && should_stop() {
            stats.interrupted = true;
            break;
        }
        let touched = if symmetric {
            try_two_opt(cost, nb, tour, a).or_else(|| try_or_opt(cost, nb, tour, a, true))
        } else {
            try_or_opt(cost, nb, tour, a, false)
        };
        if let Some((gain, nodes)) = touched {
            stats.moves += 1;
            stats.gain += gain;
            for v in nodes.into_iter().flatten() {
                if !queued[v] {
                    queued[v] = true;
                    queue.push_back(v);
                }
            }
            if !queued[a] {
                queued[a] = true;
                queue.push_back(a);
            }
        }
    }
    stats
}

/// Nodes whose tour edges a move changed (at most eight). For Or-opt moves the first four are
/// the segment's old neighbours and its ends, `(p, nx, s1, s2)`, which `lk` relies on to undo.
pub(crate) type Touched = [Option<usize>; 8];

/// First improving 2-opt move removing an edge at `a`: replaces (a, b) and (c, d) by (a, c) and
/// (b, d), with `c` a neighbour of `a`.
fn try_two_opt<C: Cost + ?Sized, T: TourRepr>(
    cost: &C,
    nb: &Neighbours,
    tour: &mut T,
    a: usize,
) -> Option<(i64, Touched)> {
    for forward in [true, false] {
        let b = if forward { tour.next(a) } else { tour.prev(a) };
        let d_ab = cost.cost(a, b);
        for &c in nb.out(a) {
            let c = c as usize;
            let g1 = d_ab - cost.cost(a, c);
            if g1 <= 0 {
                break; // lists are sorted: no later neighbour can give a positive first gain
            }
            let d = if forward { tour.next(c) } else { tour.prev(c) };
            if c == b || d == a {
                continue;
            }
            let gain = g1 + cost.cost(c, d) - cost.cost(b, d);
            if gain > 0 {
                if forward {
                    tour.reverse(b, c, false); // a b .. c d  ->  a c .. b d
                } else {
                    tour.reverse(c, b, false); // d c .. b a  ->  d b .. c a
                }
                return Some((
                    gain,
                    [Some(a), Some(b), Some(c), Some(d), None, None, None, None],
                ));
            }
        }
    }
    None
}

/// First improving Or-opt move of a segment of 1..=3 nodes that starts or ends at `a`, to
/// between two adjacent nodes elsewhere, one of them a neighbour of a segment end. Reversed
/// insertion is tried only when `reversible`.
pub(crate) fn try_or_opt<C: Cost + ?Sized, T: TourRepr>(
    cost: &C,
    nb: &Neighbours,
    tour: &mut T,
    a: usize,
    reversible: bool,
) -> Option<(i64, Touched)> {
    let n = tour.len();
    for len in 1..=MAX_SEGMENT.min(n.saturating_sub(4)) {
        // Segments starting at a, and (for len > 1) ending at a.
        for seg_start in [a, back(tour, a, len - 1)] {
            let s1 = seg_start;
            let s2 = ahead(tour, s1, len - 1);
            let p = tour.prev(s1);
            let nx = tour.next(s2);
            let g_remove = cost.cost(p, s1) + cost.cost(s2, nx) - cost.cost(p, nx);
            if g_remove <= 0 {
                if len == 1 {
                    break;
                }
                continue;
            }
            let in_segment = |v: usize| tour.steps(s1, v) < len;
            // Insert with s1 right after c:  c -> s1 .. s2 -> succ(c).
            for &c in nb.incoming(s1) {
                let c = c as usize;
                let g1 = g_remove - cost.cost(c, s1);
                if g1 <= 0 {
                    break;
                }
                let d = tour.next(c);
                if in_segment(c) || in_segment(d) || c == p {
                    continue;
                }
                let gain = g1 + cost.cost(c, d) - cost.cost(s2, d);
                if gain > 0 {
                    tour.move_segment(s1, len, c);
                    return Some((gain, touched(p, nx, s1, s2, c, d)));
                }
            }
            // Insert with s2 right before c:  pred(c) -> s1 .. s2 -> c.
            for &c in nb.out(s2) {
                let c = c as usize;
                let g1 = g_remove - cost.cost(s2, c);
                if g1 <= 0 {
                    break;
                }
                let e = tour.prev(c);
                if in_segment(c) || in_segment(e) || e == p {
                    continue;
                }
                let gain = g1 + cost.cost(e, c) - cost.cost(e, s1);
                if gain > 0 {
                    tour.move_segment(s1, len, e);
                    return Some((gain, touched(p, nx, s1, s2, e, c)));
                }
            }
            if reversible {
                // Reversed:  c -> s2 .. s1 -> succ(c), with c a neighbour of s2; and
                // pred(c) -> s2 .. s1 -> c, with c a neighbour of s1.
                for &c in nb.out(s2) {
                    let c = c as usize;
                    let g1 = g_remove - cost.cost(c, s2);
                    if g1 <= 0 {
                        break;
                    }
                    let d = tour.next(c);
                    if in_segment(c) || in_segment(d) || c == p {
                        continue;
                    }
                    let gain = g1 + cost.cost(c, d) - cost.cost(s1, d);
                    if gain > 0 {
                        tour.move_segment(s1, len, c);
                        tour.reverse(s1, s2, true);
                        return Some((gain, touched(p, nx, s1, s2, c, d)));
                    }
                }
                for &c in nb.out(s1) {
                    let c = c as usize;
                    let g1 = g_remove - cost.cost(s1, c);
                    if g1 <= 0 {
                        break;
                    }
                    let e = tour.prev(c);
                    if in_segment(c) || in_segment(e) || e == p {
                        continue;
                    }
                    let gain = g1 + cost.cost(e, c) - cost.cost(e, s2);
                    if gain > 0 {
                        tour.move_segment(s1, len, e);
                        tour.reverse(s1, s2, true);
                        return Some((gain, touched(p, nx, s1, s2, e, c)));
                    }
                }
            }
            if len == 1 {
                break; // the segment starting and ending at `a` is the same one
            }
        }
    }
    None
}

fn touched(p: usize, nx: usize, s1: usize, s2: usize, c: usize, d: usize) -> Touched {
    [
        Some(p),
        Some(nx),
        Some(s1),
        Some(s2),
        Some(c),
        Some(d),
        None,
        None,
    ]
}

/// The node `k` steps after `v` (k is at most a segment length).
fn ahead<T: TourRepr>(tour: &T, mut v: usize, k: usize) -> usize {
    for _ in 0..k {
        v = tour.next(v);
    }
    v
}

/// The node `k` steps before `v`.
fn back<T: TourRepr>(tour: &T, mut v: usize, k: usize) -> usize {
    for _ in 0..k {
        v = tour.prev(v);
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::{CoordCost, MatrixCost, Metric};
    use crate::neighbours::k_nearest;
    use crate::tour::{ArrayTour, Tour, TwoLevelTour, closed_length};
    use proptest::prelude::*;

    fn random_points(n: usize, seed: u64) -> Vec<[f64; 2]> {
        let mut s = seed
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (0..n)
            .map(|_| {
                let mut next = || {
                    s = s
                        .wrapping_mul(6364136223846793005)
                        .wrapping_add(1442695040888963407);
                    ((s >> 33) % 1000) as f64
                };
                [next(), next()]
            })
            .collect()
    }

    proptest! {
        // Each applied move's reported gain equals the recomputed change in length, and the
        // result is a local optimum that is a permutation.
        #[test]
        fn gains_are_exact(n in 5usize..80, seed in 0u64..1000, asym in any::<bool>()) {
            let pts = random_points(n, seed);
            let coords = CoordCost::plane(Metric::Euc2d, &pts).unwrap();
            let rows: Vec<Vec<i64>> = (0..n).map(|i| (0..n).map(|j| {
                let base = coords.cost(i, j);
                if asym && i != j { base + ((i * 7 + j * 13) % 11) as i64 } else { base }
            }).collect()).collect();
            let m = MatrixCost::from_rows(&rows).unwrap();
            let nb = k_nearest(&m, 8);
            let start: Vec<usize> = (0..n).collect();
            let before = closed_length(&m, &start).unwrap();
            let mut t = ArrayTour::new(start.clone());
            let stats = two_opt_or_opt(&m, &nb, &mut t, &mut || false);
            let after = closed_length(&m, t.order()).unwrap();
            prop_assert!(Tour::new(t.order().to_vec(), n).is_ok());
            prop_assert_eq!(before - after, stats.gain);
            // The two-level list takes the very same moves.
            let mut u = TwoLevelTour::new(start);
            let stats2 = two_opt_or_opt(&m, &nb, &mut u, &mut || false);
            prop_assert_eq!(stats, stats2);
            prop_assert_eq!(u.walk_from(0), t.walk_from(0));
            prop_assert!(after <= before);
        }
    }
}
