//! Local improvement: 2-opt and Or-opt over neighbour lists, driven by a queue of active nodes
//! with don't-look bits.
//!
//! A node leaves the queue when no improving move starts at it, and comes back only when a move
//! changes one of its tour edges, so a converged region costs nothing. For asymmetric costs only
//! direction-keeping Or-opt moves are used: a 2-opt move reverses a path, which changes its cost.

use crate::candidates::Neighbours;
use crate::cost::Cost;
use std::collections::VecDeque;

/// Longest segment an Or-opt move relocates.
pub const MAX_SEGMENT: usize = 3;

/// A tour as an array plus the position of each node, so that successor, predecessor and
/// "is between" are O(1) and a reversal costs the length of the shorter side.
#[derive(Clone, Debug)]
pub struct ArrayTour {
    order: Vec<usize>,
    pos: Vec<usize>,
}

impl ArrayTour {
    /// Wraps a visiting order (a permutation of `0..order.len()`).
    pub fn new(order: Vec<usize>) -> Self {
        let mut pos = vec![0; order.len()];
        for (p, &v) in order.iter().enumerate() {
            pos[v] = p;
        }
        ArrayTour { order, pos }
    }

    /// Number of nodes.
    pub fn len(&self) -> usize {
        self.order.len()
    }

    /// True when there are no nodes.
    pub fn is_empty(&self) -> bool {
        self.order.is_empty()
    }

    /// The visiting order.
    pub fn order(&self) -> &[usize] {
        &self.order
    }

    /// The visiting order, consumed.
    pub fn into_order(self) -> Vec<usize> {
        self.order
    }

    /// Node after `v`.
    #[inline]
    pub fn next(&self, v: usize) -> usize {
        let p = self.pos[v] + 1;
        self.order[if p == self.order.len() { 0 } else { p }]
    }

    /// Node before `v`.
    #[inline]
    pub fn prev(&self, v: usize) -> usize {
        let p = self.pos[v];
        self.order[if p == 0 { self.order.len() - 1 } else { p - 1 }]
    }

    /// Number of steps forward from `a` to `b`.
    #[inline]
    fn steps(&self, a: usize, b: usize) -> usize {
        let n = self.order.len();
        (self.pos[b] + n - self.pos[a]) % n
    }

    /// Reverses the path `from ..= to` (walking forward). For symmetric costs reversing the
    /// complementary path gives the same cycle, and is done when it is shorter; `keep_direction`
    /// forbids that, because it would reverse the orientation of everything else.
    pub fn reverse(&mut self, from: usize, to: usize, keep_direction: bool) {
        let n = self.order.len();
        let len = self.steps(from, to) + 1;
        let (mut i, mut j, len) = if !keep_direction && 2 * len > n {
            (self.pos[to] + 1, self.pos[from] + n - 1, n - len)
        } else {
            (self.pos[from], self.pos[from] + len - 1, len)
        };
        for _ in 0..len / 2 {
            let (a, b) = (i % n, j % n);
            self.order.swap(a, b);
            self.pos[self.order[a]] = a;
            self.pos[self.order[b]] = b;
            i += 1;
            j += n - 1;
        }
    }

    /// Moves the segment of `len` nodes starting at `s1` (walking forward) to between `c` and
    /// its successor, keeping the segment's direction. `c` must not be in the segment and must not
    /// be the segment's predecessor. Shifts whichever side of the tour is shorter.
    pub fn move_segment(&mut self, s1: usize, len: usize, c: usize) {
        let n = self.order.len();
        let i = self.pos[s1];
        let mut seg = [0usize; MAX_SEGMENT];
        for (t, slot) in seg.iter_mut().enumerate().take(len) {
            *slot = self.order[(i + t) % n];
        }
        // Nodes strictly after the segment up to and including c.
        let ahead = (self.pos[c] + n - (i + len) % n) % n + 1;
        let behind = n - len - ahead;
        if ahead <= behind {
            for t in 0..ahead {
                let v = self.order[(i + len + t) % n];
                let p = (i + t) % n;
                self.order[p] = v;
                self.pos[v] = p;
            }
            for (t, &v) in seg.iter().enumerate().take(len) {
                let p = (i + ahead + t) % n;
                self.order[p] = v;
                self.pos[v] = p;
            }
        } else {
            // Shift the nodes from c's successor back to the segment's predecessor forward by
            // `len`, and put the segment where they began.
            for t in 0..behind {
                let from = (i + n - 1 - t) % n;
                let to = (from + len) % n;
                let v = self.order[from];
                self.order[to] = v;
                self.pos[v] = to;
            }
            let start = (i + n - behind) % n;
            for (t, &v) in seg.iter().enumerate().take(len) {
                let p = (start + t) % n;
                self.order[p] = v;
                self.pos[v] = p;
            }
        }
    }
}

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
pub fn two_opt_or_opt<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    tour: &mut ArrayTour,
    should_stop: &mut dyn FnMut() -> bool,
) -> ImproveStats {
    let n = tour.len();
    let mut stats = ImproveStats::default();
    if n < 5 || nb.k() == 0 {
        return stats;
    }
    let symmetric = cost.is_symmetric();
    let mut queue: VecDeque<usize> = tour.order().iter().copied().collect();
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
fn try_two_opt<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    tour: &mut ArrayTour,
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
pub(crate) fn try_or_opt<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    tour: &mut ArrayTour,
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

fn ahead(tour: &ArrayTour, v: usize, k: usize) -> usize {
    let n = tour.len();
    tour.order[(tour.pos[v] + k) % n]
}

fn back(tour: &ArrayTour, v: usize, k: usize) -> usize {
    let n = tour.len();
    tour.order[(tour.pos[v] + n - k % n) % n]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::candidates::k_nearest;
    use crate::cost::{CoordCost, MatrixCost, Metric};
    use crate::tour::{closed_length, Tour};
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

    #[test]
    fn reverse_and_move_keep_a_permutation() {
        let mut t = ArrayTour::new((0..10).collect());
        let cyc = |t: &ArrayTour| {
            let mut v = t.order().to_vec();
            let p = v.iter().position(|&x| x == 0).unwrap();
            v.rotate_left(p);
            v
        };
        t.reverse(2, 5, true);
        assert_eq!(t.order(), &[0, 1, 5, 4, 3, 2, 6, 7, 8, 9]);
        t.move_segment(5, 2, 8); // segment 5 4 after 8
        assert_eq!(cyc(&t), vec![0, 1, 3, 2, 6, 7, 8, 5, 4, 9]);
        t.move_segment(9, 1, 1); // wraps: 9 after 1
        assert_eq!(cyc(&t), vec![0, 1, 9, 3, 2, 6, 7, 8, 5, 4]);
        for (p, &v) in t.order().iter().enumerate() {
            assert_eq!(t.pos[v], p);
        }
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
            let mut t = ArrayTour::new(start);
            let stats = two_opt_or_opt(&m, &nb, &mut t, &mut || false);
            let after = closed_length(&m, t.order()).unwrap();
            prop_assert!(Tour::new(t.order().to_vec(), n).is_ok());
            prop_assert_eq!(before - after, stats.gain);
            prop_assert!(after <= before);
        }

        // move_segment keeps direction and equals the naive remove-and-insert.
        #[test]
        fn move_segment_matches_naive(n in 6usize..30, s in 0usize..30, len in 1usize..=3, c in 0usize..30) {
            let s = s % n; let c = c % n;
            let seg: Vec<usize> = (0..len).map(|t| (s + t) % n).collect();
            let p = (s + n - 1) % n;
            prop_assume!(!seg.contains(&c) && c != p);
            let mut t = ArrayTour::new((0..n).collect());
            t.move_segment(s, len, c);
            let mut naive: Vec<usize> = (0..n).filter(|v| !seg.contains(v)).collect();
            let at = naive.iter().position(|&v| v == c).unwrap() + 1;
            for (k, &v) in seg.iter().enumerate() { naive.insert(at + k, v); }
            let rot = |mut v: Vec<usize>| { let p = v.iter().position(|&x| x == 0).unwrap(); v.rotate_left(p); v };
            prop_assert_eq!(rot(t.order().to_vec()), rot(naive));
        }
    }
}
