//! The array representation: a visiting order plus each node's position.

use super::MAX_SEGMENT;
use super::TourRepr;

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
    #[cfg_attr(not(feature = "internals"), allow(dead_code))] // for `internals` callers
    pub fn len(&self) -> usize {
        self.order.len()
    }

    /// True when there are no nodes.
    #[cfg_attr(not(feature = "internals"), allow(dead_code))] // for `internals` callers
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
    pub fn steps(&self, a: usize, b: usize) -> usize {
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

impl TourRepr for ArrayTour {
    fn from_order(order: Vec<usize>) -> Self {
        ArrayTour::new(order)
    }
    #[inline]
    fn len(&self) -> usize {
        self.order.len()
    }
    #[inline]
    fn next(&self, v: usize) -> usize {
        ArrayTour::next(self, v)
    }
    #[inline]
    fn prev(&self, v: usize) -> usize {
        ArrayTour::prev(self, v)
    }
    #[inline]
    fn steps(&self, a: usize, b: usize) -> usize {
        ArrayTour::steps(self, a, b)
    }
    fn reverse(&mut self, from: usize, to: usize, keep_direction: bool) {
        ArrayTour::reverse(self, from, to, keep_direction)
    }
    fn move_segment(&mut self, s1: usize, len: usize, c: usize) {
        ArrayTour::move_segment(self, s1, len, c)
    }
    fn stored_order(&self) -> Vec<usize> {
        self.order.clone()
    }
    fn into_stored_order(self) -> Vec<usize> {
        self.order
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

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
