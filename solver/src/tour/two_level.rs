//! The two-level list: the tour cut into segments of about sqrt(n) nodes, kept in a ring, each
//! segment with a reversal bit.
//!
//! Reversing a long path splits the segments at its two ends, so that the path is a run of
//! whole segments, then reverses the order of that run in the ring and flips each segment's bit:
//! O(sqrt(n)) instead of O(n). A short path (up to one segment's worth of nodes) is reversed by
//! swapping nodes between their slots, as in an array. Splitting moves the smaller part of a
//! segment into its neighbour, or makes it a segment of its own when the neighbour is full; the
//! whole structure is re-cut when the segments have become too many.

use super::TourRepr;

#[derive(Clone, Debug, Default)]
struct Segment {
    /// The segment's nodes in its own order; read backwards when `rev` is set.
    nodes: Vec<u32>,
    rev: bool,
    /// Index of the segment in the ring.
    rank: usize,
    /// Tour position (counted from the first node of `ring[0]`) of the segment's first node in
    /// tour order.
    start: usize,
}

/// A tour as a ring of segments of about sqrt(n) nodes, each with a reversal bit: O(1)
/// successor and predecessor, O(sqrt(n)) reversal. See the [module](super) for the contract it
/// shares with [`super::ArrayTour`].
#[derive(Clone, Debug)]
pub(crate) struct TwoLevelTour {
    n: usize,
    /// Segment of each node.
    seg: Vec<u32>,
    /// Index of each node in its segment's `nodes`.
    idx: Vec<u32>,
    segs: Vec<Segment>,
    /// Segment ids in tour order.
    ring: Vec<u32>,
    /// Ideal segment length; segments never grow beyond twice this.
    size: usize,
}

impl TwoLevelTour {
    /// Wraps a visiting order (a permutation of `0..order.len()`).
    pub(crate) fn new(order: Vec<usize>) -> Self {
        let n = order.len();
        let size = ((n as f64).sqrt().round() as usize).max(8);
        let mut t = TwoLevelTour {
            n,
            seg: vec![0; n],
            idx: vec![0; n],
            segs: Vec::new(),
            ring: Vec::new(),
            size,
        };
        t.cut(&order);
        t
    }

    /// Number of segments (for tests and tuning).
    #[cfg(test)]
    pub fn segments(&self) -> usize {
        self.ring.len()
    }

    /// Cuts `order` into segments of the ideal length.
    fn cut(&mut self, order: &[usize]) {
        self.segs.clear();
        self.ring.clear();
        for (r, chunk) in order.chunks(self.size.max(1)).enumerate() {
            let nodes: Vec<u32> = chunk.iter().map(|&v| v as u32).collect();
            for (i, &v) in nodes.iter().enumerate() {
                self.seg[v as usize] = r as u32;
                self.idx[v as usize] = i as u32;
            }
            self.segs.push(Segment {
                nodes,
                rev: false,
                rank: r,
                start: r * self.size,
            });
            self.ring.push(r as u32);
        }
    }

    #[inline]
    fn first(&self, s: usize) -> u32 {
        let sg = &self.segs[s];
        if sg.rev {
            sg.nodes[sg.nodes.len() - 1]
        } else {
            sg.nodes[0]
        }
    }

    #[inline]
    fn last(&self, s: usize) -> u32 {
        let sg = &self.segs[s];
        if sg.rev {
            sg.nodes[0]
        } else {
            sg.nodes[sg.nodes.len() - 1]
        }
    }

    /// Offset of `v` from its segment's first node, in tour order.
    #[inline]
    fn offset(&self, v: usize) -> usize {
        let sg = &self.segs[self.seg[v] as usize];
        let i = self.idx[v] as usize;
        if sg.rev { sg.nodes.len() - 1 - i } else { i }
    }

    #[inline]
    fn pos(&self, v: usize) -> usize {
        let s = self.seg[v] as usize;
        // Both terms are below n.
        let p = self.segs[s].start + self.offset(v);
        if p >= self.n { p - self.n } else { p }
    }

    #[inline]
    fn ring_next(&self, s: usize) -> usize {
        let r = self.segs[s].rank + 1;
        self.ring[if r == self.ring.len() { 0 } else { r }] as usize
    }

    #[inline]
    fn ring_prev(&self, s: usize) -> usize {
        let r = self.segs[s].rank;
        self.ring[if r == 0 { self.ring.len() - 1 } else { r - 1 }] as usize
    }

    /// The slot after slot `i` of segment `s`, in tour order.
    #[inline]
    fn slot_after(&self, s: usize, i: usize) -> (usize, usize) {
        let sg = &self.segs[s];
        if sg.rev {
            if i > 0 {
                return (s, i - 1);
            }
        } else if i + 1 < sg.nodes.len() {
            return (s, i + 1);
        }
        let t = self.ring_next(s);
        let sg = &self.segs[t];
        (t, if sg.rev { sg.nodes.len() - 1 } else { 0 })
    }

    /// The slot before slot `i` of segment `s`, in tour order.
    #[inline]
    fn slot_before(&self, s: usize, i: usize) -> (usize, usize) {
        let sg = &self.segs[s];
        if sg.rev {
            if i + 1 < sg.nodes.len() {
                return (s, i + 1);
            }
        } else if i > 0 {
            return (s, i - 1);
        }
        let t = self.ring_prev(s);
        let sg = &self.segs[t];
        (t, if sg.rev { 0 } else { sg.nodes.len() - 1 })
    }

    /// The nodes of segment `s` in tour order.
    fn tour_nodes(&self, s: usize) -> Vec<u32> {
        let sg = &self.segs[s];
        if sg.rev {
            sg.nodes.iter().rev().copied().collect()
        } else {
            sg.nodes.clone()
        }
    }

    /// Makes `nodes` (in tour order) the content of segment `s`, unreversed.
    fn set_nodes(&mut self, s: usize, nodes: Vec<u32>) {
        for (i, &v) in nodes.iter().enumerate() {
            self.seg[v as usize] = s as u32;
            self.idx[v as usize] = i as u32;
        }
        self.segs[s].nodes = nodes;
        self.segs[s].rev = false;
    }

    /// Stores segment `s` in tour order (its reversal bit cleared), its nodes' indices updated.
    fn unreverse(&mut self, s: usize) {
        if self.segs[s].rev {
            self.flip_store(s);
        }
    }

    /// Stores segment `s` against tour order (its reversal bit set), its nodes' indices updated.
    fn reverse_store(&mut self, s: usize) {
        if !self.segs[s].rev {
            self.flip_store(s);
        }
    }

    fn flip_store(&mut self, s: usize) {
        let sg = &mut self.segs[s];
        sg.nodes.reverse();
        sg.rev = !sg.rev;
        for (i, &v) in sg.nodes.iter().enumerate() {
            self.idx[v as usize] = i as u32;
        }
    }

    /// Removes `k` nodes of segment `s` at one end in tour order: its first nodes when `first`,
    /// else its last. The segment must keep at least one. The removed nodes' `seg` and `idx`
    /// are left for the caller, which has moved them.
    fn drop_end(&mut self, s: usize, k: usize, first: bool) {
        let sg = &mut self.segs[s];
        let len = sg.nodes.len();
        if first != sg.rev {
            // The end is the front of the store: the nodes behind it move up.
            sg.nodes.drain(..k);
            for (i, &v) in sg.nodes.iter().enumerate() {
                self.idx[v as usize] = i as u32;
            }
        } else {
            sg.nodes.truncate(len - k);
        }
    }

    /// Ranks and start positions from the ring, counting positions from `ring[0]`.
    fn renumber(&mut self) {
        let mut p = 0;
        for r in 0..self.ring.len() {
            let s = self.ring[r] as usize;
            self.segs[s].rank = r;
            self.segs[s].start = p;
            p += self.segs[s].nodes.len();
        }
    }

    /// Makes `v` the first node (in tour order) of a segment, leaving `protect` the first node
    /// of its segment if it was one.
    fn split(&mut self, v: usize, protect: Option<u32>) {
        let s = self.seg[v] as usize;
        let off = self.offset(v);
        if off == 0 {
            return;
        }
        let len = self.segs[s].nodes.len();
        let (a_len, b_len) = (off, len - off);
        let p = self.ring_prev(s);
        let nx = self.ring_next(s);
        let max = 2 * self.size;
        let a_ok =
            p != s && self.segs[p].nodes.len() + a_len <= max && Some(self.first(s)) != protect;
        let b_ok =
            nx != s && self.segs[nx].nodes.len() + b_len <= max && Some(self.first(nx)) != protect;
        let start = self.segs[s].start;
        let move_a = if a_len <= b_len { a_ok } else { a_ok && !b_ok };
        let move_b = !move_a && b_ok;
        if move_a {
            // The first `off` nodes (in tour order) go to the end of the segment before.
            self.unreverse(p);
            let at = self.segs[p].nodes.len();
            self.segs[p].nodes.reserve(a_len);
            let mut w = self.first(s) as usize;
            for i in 0..a_len {
                self.segs[p].nodes.push(w as u32);
                let after = self.next(w);
                (self.seg[w], self.idx[w]) = (p as u32, (at + i) as u32);
                w = after;
            }
            self.drop_end(s, a_len, true);
            self.segs[s].start = (start + a_len) % self.n;
        } else if move_b {
            // The nodes from `v` on go to the front of the segment after: pushed last first
            // onto its reversed store.
            self.reverse_store(nx);
            let at = self.segs[nx].nodes.len();
            self.segs[nx].nodes.reserve(b_len);
            let mut w = self.last(s) as usize;
            for i in 0..b_len {
                self.segs[nx].nodes.push(w as u32);
                let before = self.prev(w);
                (self.seg[w], self.idx[w]) = (nx as u32, (at + i) as u32);
                w = before;
            }
            self.drop_end(s, b_len, false);
            self.segs[nx].start = (start + a_len) % self.n;
        } else {
            // Both neighbours full (or the ring is one segment): the smaller part becomes a
            // segment of its own.
            let mut nodes = self.tour_nodes(s);
            let b_part = nodes.split_off(off);
            let a_part = nodes;
            let id = self.segs.len();
            self.segs.push(Segment::default());
            let rank = self.segs[s].rank;
            if a_len <= b_len {
                self.set_nodes(id, a_part);
                self.set_nodes(s, b_part);
                self.ring.insert(rank, id as u32);
            } else {
                self.set_nodes(id, b_part);
                self.set_nodes(s, a_part);
                self.ring.insert(rank + 1, id as u32);
            }
            self.renumber();
        }
    }

    /// Reverses the path of `len` nodes from `a` forward to `b`, exactly.
    fn reverse_path(&mut self, a: usize, b: usize, len: usize) {
        if len <= 1 {
            return;
        }
        if len <= self.size {
            // Swap nodes between their slots, as an array would: one slot walking forward from
            // `a`, one walking back from `b`.
            let (mut sa, mut ia) = (self.seg[a] as usize, self.idx[a] as usize);
            let (mut sb, mut ib) = (self.seg[b] as usize, self.idx[b] as usize);
            for _ in 0..len / 2 {
                let x = self.segs[sa].nodes[ia];
                let y = self.segs[sb].nodes[ib];
                self.segs[sa].nodes[ia] = y;
                self.segs[sb].nodes[ib] = x;
                (self.seg[y as usize], self.idx[y as usize]) = (sa as u32, ia as u32);
                (self.seg[x as usize], self.idx[x as usize]) = (sb as u32, ib as u32);
                (sa, ia) = self.slot_after(sa, ia);
                (sb, ib) = self.slot_before(sb, ib);
            }
            return;
        }
        self.split(a, None);
        let c = self.next(b);
        if c != a {
            self.split(c, Some(a as u32));
        }
        let r = self.ring.len();
        let ra = self.segs[self.seg[a] as usize].rank;
        let rb = self.segs[self.seg[b] as usize].rank;
        let count = if rb >= ra { rb - ra } else { rb + r - ra } + 1;
        // Ring slots wrap round without a division.
        let wrap = |i: usize| if i >= r { i - r } else { i };
        for t in 0..count / 2 {
            self.ring.swap(wrap(ra + t), wrap(rb + r - t));
        }
        for t in 0..count {
            let s = self.ring[wrap(ra + t)] as usize;
            self.segs[s].rev = !self.segs[s].rev;
        }
        if self.ring.len() > 2 * self.n.div_ceil(self.size) + 8 {
            // Splits made too many small segments: cut the tour afresh.
            let order = self.stored_order();
            self.cut(&order);
        } else {
            self.renumber();
        }
    }
}

impl TourRepr for TwoLevelTour {
    fn from_order(order: Vec<usize>) -> Self {
        TwoLevelTour::new(order)
    }

    #[inline]
    fn len(&self) -> usize {
        self.n
    }

    #[inline]
    fn next(&self, v: usize) -> usize {
        let s = self.seg[v] as usize;
        let i = self.idx[v] as usize;
        let sg = &self.segs[s];
        if sg.rev {
            if i > 0 {
                return sg.nodes[i - 1] as usize;
            }
        } else if i + 1 < sg.nodes.len() {
            return sg.nodes[i + 1] as usize;
        }
        self.first(self.ring_next(s)) as usize
    }

    #[inline]
    fn prev(&self, v: usize) -> usize {
        let s = self.seg[v] as usize;
        let i = self.idx[v] as usize;
        let sg = &self.segs[s];
        if sg.rev {
            if i + 1 < sg.nodes.len() {
                return sg.nodes[i + 1] as usize;
            }
        } else if i > 0 {
            return sg.nodes[i - 1] as usize;
        }
        self.last(self.ring_prev(s)) as usize
    }

    #[inline]
    fn steps(&self, a: usize, b: usize) -> usize {
        let (pa, pb) = (self.pos(a), self.pos(b));
        if pb >= pa { pb - pa } else { pb + self.n - pa }
    }

    fn reverse(&mut self, from: usize, to: usize, keep_direction: bool) {
        let n = self.n;
        if n == 0 {
            return;
        }
        let len = self.steps(from, to) + 1;
        if !keep_direction && 2 * len > n {
            if len < n {
                let (a, b) = (self.next(to), self.prev(from));
                self.reverse_path(a, b, n - len);
            }
        } else {
            self.reverse_path(from, to, len);
        }
    }

    fn move_segment(&mut self, s1: usize, len: usize, c: usize) {
        let n = self.n;
        let mut s2 = s1;
        for _ in 1..len {
            s2 = self.next(s2);
        }
        let p = self.prev(s1);
        let nx = self.next(s2);
        // Nodes strictly after the segment up to and including c, and the rest.
        let ahead = self.steps(nx, c) + 1;
        let behind = n - len - ahead;
        if ahead <= behind {
            // p [s1..s2] [nx..c] d  ->  p [nx..c] [s1..s2] d
            self.reverse_path(s1, c, len + ahead);
            self.reverse_path(c, nx, ahead);
            self.reverse_path(s2, s1, len);
        } else {
            // c [d..p] [s1..s2] nx  ->  c [s1..s2] [d..p] nx
            let d = self.next(c);
            self.reverse_path(d, s2, behind + len);
            self.reverse_path(s2, s1, len);
            self.reverse_path(p, d, behind);
        }
    }

    fn stored_order(&self) -> Vec<usize> {
        let mut out = Vec::with_capacity(self.n);
        for &s in &self.ring {
            let sg = &self.segs[s as usize];
            if sg.rev {
                out.extend(sg.nodes.iter().rev().map(|&v| v as usize));
            } else {
                out.extend(sg.nodes.iter().map(|&v| v as usize));
            }
        }
        out
    }

    fn into_stored_order(self) -> Vec<usize> {
        self.stored_order()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tour::ArrayTour;
    use proptest::prelude::*;

    /// Checks the internal invariants and that `t` is the same directed cycle as `a`.
    fn agree(t: &TwoLevelTour, a: &ArrayTour) -> Result<(), TestCaseError> {
        let n = a.len();
        for v in 0..n {
            prop_assert_eq!(t.next(v), a.next(v), "next({})", v);
            prop_assert_eq!(t.prev(v), a.prev(v), "prev({})", v);
            prop_assert_eq!(t.steps(0, v), a.steps(0, v), "steps(0, {})", v);
        }
        for (r, &s) in t.ring.iter().enumerate() {
            let sg = &t.segs[s as usize];
            prop_assert_eq!(sg.rank, r);
            prop_assert!(!sg.nodes.is_empty() && sg.nodes.len() <= 2 * t.size);
            for (i, &v) in sg.nodes.iter().enumerate() {
                prop_assert_eq!((t.seg[v as usize], t.idx[v as usize]), (s, i as u32));
            }
        }
        let mut order = t.stored_order();
        order.sort_unstable();
        prop_assert_eq!(order, (0..n).collect::<Vec<_>>());
        Ok(())
    }

    #[derive(Clone, Debug)]
    enum Op {
        Reverse(usize, usize, bool),
        Move(usize, usize, usize),
    }

    fn ops(n: usize) -> impl Strategy<Value = Vec<Op>> {
        prop::collection::vec(
            prop_oneof![
                (0..n, 0..n, any::<bool>()).prop_map(|(a, b, k)| Op::Reverse(a, b, k)),
                (0..n, 1..=3usize, 0..n).prop_map(|(s, l, c)| Op::Move(s, l, c)),
            ],
            1..60,
        )
    }

    proptest! {
        // Every reversal and segment move leaves the same cycle, in the same direction, as the
        // array representation, for sizes around and beyond the segment length.
        #[test]
        fn matches_the_array_tour((n, ops) in (9usize..400).prop_flat_map(|n| (Just(n), ops(n))), seed in 0u64..1000) {
            let mut order: Vec<usize> = (0..n).collect();
            let mut s = seed;
            for i in (1..n).rev() {
                s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                order.swap(i, (s >> 33) as usize % (i + 1));
            }
            let mut a = ArrayTour::new(order.clone());
            let mut t = TwoLevelTour::new(order);
            for op in ops {
                match op {
                    Op::Reverse(x, y, k) => {
                        a.reverse(x, y, k);
                        t.reverse(x, y, k);
                    }
                    Op::Move(s1, len, c) => {
                        let mut seg = vec![s1];
                        for _ in 1..len { seg.push(a.next(*seg.last().unwrap())); }
                        if seg.contains(&c) || c == a.prev(s1) { continue; }
                        a.move_segment(s1, len, c);
                        t.move_segment(s1, len, c);
                    }
                }
                agree(&t, &a)?;
            }
        }
    }

    #[test]
    fn a_fresh_tour_keeps_the_given_order() {
        let order: Vec<usize> = (0..1000).map(|i| (i * 7) % 1000).collect();
        let t = TwoLevelTour::new(order.clone());
        assert_eq!(t.stored_order(), order);
        assert_eq!(t.segments(), 32);
    }

    #[test]
    fn many_long_reversals_keep_the_segment_count_bounded() {
        let n = 10_000;
        let mut a = ArrayTour::new((0..n).collect());
        let mut t = TwoLevelTour::new((0..n).collect());
        let mut s = 1u64;
        for _ in 0..5_000 {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let x = (s >> 33) as usize % n;
            let y = (s >> 13) as usize % n;
            a.reverse(x, y, false);
            t.reverse(x, y, false);
            assert!(t.segments() <= 2 * n.div_ceil(t.size) + 8);
        }
        assert_eq!(t.walk_from(0), a.walk_from(0));
    }
}
