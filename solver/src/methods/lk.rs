//! Lin–Kernighan-style local search and the iterated search built on it (method `lk`).
//!
//! # The move
//!
//! For symmetric costs one LK move is a chain of 2-opt moves ("flips") applied tentatively to an
//! [`ArrayTour`]. Starting at a node `t1` with a tour neighbour `t2`, the chain removes the edge
//! `(t1, t2)`, then at each level adds an edge `(t2, t3)` to a candidate `t3`, removes the tour
//! edge `(t3, t4)` that keeps the tour one cycle, and closes with `(t4, t1)`. The chain goes on
//! from `t4` while the cumulative gain stays positive (the positive gain criterion); the best
//! closing seen is kept and the flips beyond it are undone. Edges removed in a move are not added
//! again and added edges are not removed again, and a breadth schedule bounds the alternatives
//! tried per level ([`LkParams`]).
//!
//! Moves covered:
//! - every 2-opt move that adds a candidate edge (each level evaluates the closing of all its
//!   candidates, not only those it descends into);
//! - sequential 3-opt moves that reconnect with a reversed segment, as two chained flips, and
//!   deeper sequential k-opt moves (k up to [`LkParams::max_depth`] + 1) reachable as chains of
//!   flips whose every intermediate is a tour;
//! - moving a segment elsewhere without reversing it (the pure sequential 3-opt "segment
//!   insertion") needs three flips and is found when the gain criterion admits the intermediate
//!   steps; for segments of up to [`crate::tour::MAX_SEGMENT`] nodes it is always tried
//!   directly, in both orientations, by the Or-opt moves of [`crate::moves::improve`], which run from
//!   `t1` when no LK move starts there.
//!
//! For asymmetric costs a flip would reverse a path and change its cost, so on the costs as
//! given only the direction-keeping Or-opt moves run. By default [`crate::Solver`] does not
//! search asymmetric costs that way: it runs these symmetric moves on their transformation to
//! symmetric costs over twice the nodes (Jonker and Volgenant 1983, [`crate::transform::twin`]) and maps
//! the tour back; [`crate::AsymmetricMode::Direct`] keeps the direct moves.
//!
//! # The iterated search
//!
//! Each run builds a greedy tour, takes it to a local optimum, then repeats: a double-bridge kick
//! close to a random node, local search from the eight endpoints of the kick, and acceptance if
//! the tour is no longer than before (otherwise the kick and the repairs are undone from a log,
//! so a rejected kick costs what it changed, not O(n)). Runs are independent, each with its own
//! random stream seeded from (seed, run index), and the answer is the best by
//! (length, run index), so with a kick budget the answer does not depend on thread timing.
//! Tours of different runs are not recombined.
//!
//! # Representations
//!
//! Everything here is generic over [`TourRepr`]: the array of [`ArrayTour`] for small and medium
//! instances, the segments of [`TwoLevelTour`] (O(sqrt(n)) flips) for large ones, chosen by
//! [`Layout`]. Both give the same tour from the same seed.

use super::drive::{Iterative, LoopOutcome, LoopPlan, drive};
use crate::construct::{Start, start_tour};
use crate::control::Improvement;
use crate::cost::Cost;
use crate::moves::{ImproveStats, try_or_opt};
use crate::neighbours::Neighbours;
use crate::tour::closed_length;
use crate::tour::{ArrayTour, Layout, MAX_SEGMENT, TourRepr, TwoLevelTour};
use rand::Rng;
use rand_pcg::Pcg64;
use std::collections::VecDeque;
use std::time::Instant;

/// Tuning of the LK move and of the kicks.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct LkParams {
    /// Alternatives tried per level of the chain, first level first; levels beyond the list
    /// try one.
    pub breadth: Vec<usize>,
    /// Most flips in one move.
    pub max_depth: usize,
    /// Longest segment of a double-bridge kick (capped at an eighth of the tour for small
    /// instances).
    pub kick_segment: usize,
}

impl Default for LkParams {
    /// Chosen by measurement at a fixed time (10 s, one thread) on pr1002, fnl4461 and
    /// brd14051: breadth 5, 3, 1 beat 3, 1 and 5, 1; depth 10 gave as short tours as 20 or 30
    /// with about twice the kicks; segments of up to 100 beat 25, 50 and 400 (small kicks are
    /// mostly repaired back into the same tour).
    fn default() -> Self {
        LkParams {
            breadth: vec![5, 3, 1],
            max_depth: 10,
            kick_segment: 100,
        }
    }
}

/// One flip: tour edges `(a, a2)` and `(b, b2)`, with `a2` after `a` and `b2` after `b` when it
/// was applied, replaced by `(a, b)` and `(a2, b2)`.
#[derive(Clone, Copy, Debug)]
struct Flip {
    a: usize,
    a2: usize,
    b: usize,
    b2: usize,
}

/// Replaces the edges after `a` and after `b` by `(a, b)` and `(next a, next b)`.
fn flip<T: TourRepr>(tour: &mut T, a: usize, b: usize) -> Flip {
    let a2 = tour.next(a);
    let b2 = tour.next(b);
    tour.reverse(a2, b, false);
    Flip { a, a2, b, b2 }
}

/// Restores the two edges of `f`. The tour must be the same cycle as right after `f`, in either
/// orientation: the shorter-side reversal may have turned the whole array round.
fn unflip<T: TourRepr>(tour: &mut T, f: Flip) {
    if tour.next(f.a) == f.b {
        tour.reverse(f.b, f.a2, false); // a b .. a2 b2  ->  a a2 .. b b2
    } else {
        tour.reverse(f.a, f.b2, false); // b a .. b2 a2  ->  b b2 .. a a2
    }
}

/// The flip of one LK level: removes `(t1, t2)` and `(t3, t4)`, adds `(t2, t3)` and `(t4, t1)`.
/// Works in either orientation of the array.
fn lk_flip<T: TourRepr>(tour: &mut T, t1: usize, t2: usize, t3: usize, t4: usize) -> Flip {
    if tour.next(t1) == t2 {
        flip(tour, t1, t4) // t1 t2 .. t4 t3  ->  t1 t4 .. t2 t3
    } else {
        flip(tour, t3, t2) // t3 t4 .. t2 t1  ->  t3 t2 .. t4 t1
    }
}

/// What the log needs to take back a committed change.
#[derive(Clone, Copy, Debug)]
enum Undo {
    Flip(Flip),
    /// The segment `s1 ..= s2` had been between `p` and `nx` (in the order p s1 .. s2 nx).
    OrOpt {
        p: usize,
        nx: usize,
        s1: usize,
        s2: usize,
    },
}

/// Puts a segment that an Or-opt move took from between `p` and `nx` back there.
fn undo_or_opt<T: TourRepr>(tour: &mut T, p: usize, nx: usize, s1: usize, s2: usize) {
    // The segment is contiguous; find its length and which end comes first now (a later flip may
    // have turned the array round).
    let mut len = 1;
    let mut v = s1;
    let mut forward = s1 == s2;
    while !forward && len < MAX_SEGMENT {
        v = tour.next(v);
        len += 1;
        forward = v == s2;
    }
    let (first, len) = if forward {
        (s1, len)
    } else {
        let mut len = 1;
        let mut v = s1;
        while v != s2 && len < MAX_SEGMENT {
            v = tour.prev(v);
            len += 1;
        }
        (s2, len)
    };
    let (target, want_first) = if tour.next(p) == nx {
        (p, s1)
    } else {
        (nx, s2)
    };
    tour.move_segment(first, len, target);
    if tour.next(target) != want_first {
        let last = if first == s1 { s2 } else { s1 };
        tour.reverse(first, last, true);
    }
}

/// A double-bridge kick as applied, enough to take it back.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Kick {
    /// First node of the segment that now follows `v` (`ends[0]`).
    pub first: usize,
    /// The eight nodes whose tour edges changed: `v`, then each segment's first and last node
    /// as they were in tour order before the kick, then `w`, the node after them. All `v` when
    /// the tour was left alone.
    pub ends: [usize; 8],
    /// Change in tour length (positive: longer).
    pub delta: i64,
}

/// Double bridge next to `v`: the three segments of `lens` nodes that follow `v`, `B C D`, are
/// put in the order `D C B`, each keeping its direction, so four edges change and nothing is
/// reversed (valid for asymmetric costs). Lengths below one count as one; when they do not
/// leave at least one other node the tour is left alone (delta 0). Costs O(sum of `lens`).
pub(crate) fn double_bridge<C: Cost + ?Sized, T: TourRepr>(
    cost: &C,
    tour: &mut T,
    v: usize,
    lens: [usize; 3],
) -> Kick {
    let walk = |tour: &T, mut x: usize, k: usize| {
        for _ in 0..k {
            x = tour.next(x);
        }
        x
    };
    let lens = lens.map(|l| l.max(1));
    if lens.iter().sum::<usize>() >= tour.len() {
        return Kick {
            first: v,
            ends: [v; 8],
            delta: 0,
        };
    }
    let b2 = walk(tour, v, lens[0]);
    let c2 = walk(tour, b2, lens[1]);
    let d2 = walk(tour, c2, lens[2]);
    double_bridge_at(cost, tour, v, [b2, c2, d2])
}

/// Double bridge after `v` whose three segments `B C D` end at `lasts` (in tour order after
/// `v`, distinct, none of them `v`), put in the order `D C B` as [`double_bridge`] does. Costs
/// four path reversals, whatever the segments' lengths.
pub(crate) fn double_bridge_at<C: Cost + ?Sized, T: TourRepr>(
    cost: &C,
    tour: &mut T,
    v: usize,
    lasts: [usize; 3],
) -> Kick {
    let [b2, c2, d2] = lasts;
    let b1 = tour.next(v);
    let c1 = tour.next(b2);
    let d1 = tour.next(c2);
    let w = tour.next(d2);
    let delta = cost.cost(v, d1) + cost.cost(d2, c1) + cost.cost(c2, b1) + cost.cost(b2, w)
        - cost.cost(v, b1)
        - cost.cost(b2, c1)
        - cost.cost(c2, d1)
        - cost.cost(d2, w);
    // Reversing the whole window gives D' C' B'; reversing each piece back gives D C B.
    tour.reverse(b1, d2, true);
    tour.reverse(d2, d1, true);
    tour.reverse(c2, c1, true);
    tour.reverse(b2, b1, true);
    Kick {
        first: d1,
        ends: [v, b1, b2, c1, c2, d1, d2, w],
        delta,
    }
}

/// Takes back a [`double_bridge`]; the tour must be the same cycle as right after it, in either
/// orientation.
pub(crate) fn undo_double_bridge<C: Cost + ?Sized, T: TourRepr>(cost: &C, tour: &mut T, k: &Kick) {
    let [v, b1, b2, c1, c2, d1, d2, w] = k.ends;
    if v == b1 {
        return; // the tour was left alone
    }
    if tour.next(v) == k.first {
        // v D C B w
        double_bridge_at(cost, tour, v, [d2, c2, b2]);
    } else {
        // The array was turned round: from w the segments read B' C' D'.
        double_bridge_at(cost, tour, w, [b1, c1, d1]);
    }
}

/// Lin–Kernighan-style local search over neighbour lists, with a queue of active nodes
/// (don't-look bits) and an optional log of committed changes for undoing a rejected kick.
///
/// Buffers are kept between calls, so one value serves a whole iterated search.
pub(crate) struct LinKernighan<'a, C: Cost + ?Sized> {
    cost: &'a C,
    nb: &'a Neighbours,
    params: LkParams,
    symmetric: bool,
    /// `cost(i, nb.out(i)[j])` at `i * k + j`: most cost look-ups of a move are candidate
    /// edges, and some cost oracles (GEO, closures) are slow.
    nb_cost: Vec<i64>,
    queue: VecDeque<usize>,
    queued: Vec<bool>,
    logging: bool,
    log: Vec<Undo>,
    // State of the move being built.
    t1: usize,
    chain: Vec<Flip>,
    added: Vec<(usize, usize)>,
    removed: Vec<(usize, usize)>,
    best_gain: i64,
    best_len: usize,
    best_pending: Option<(usize, usize, usize)>,
    cands: Vec<Vec<(i64, usize, usize)>>,
}

impl<'a, C: Cost + ?Sized> LinKernighan<'a, C> {
    /// A search over `cost` with candidate lists `nb`.
    pub(crate) fn new(cost: &'a C, nb: &'a Neighbours, params: LkParams) -> Self {
        let n = cost.len();
        let depth = params.max_depth.max(1);
        let nb_cost = (0..n)
            .flat_map(|i| nb.out(i).iter().map(move |&j| cost.cost(i, j as usize)))
            .collect();
        LinKernighan {
            cost,
            nb,
            params: LkParams {
                max_depth: depth,
                ..params
            },
            symmetric: cost.is_symmetric(),
            nb_cost,
            queue: VecDeque::new(),
            queued: vec![false; n],
            logging: false,
            log: Vec::new(),
            t1: 0,
            chain: Vec::new(),
            added: Vec::new(),
            removed: Vec::new(),
            best_gain: 0,
            best_len: 0,
            best_pending: None,
            cands: vec![Vec::new(); depth],
        }
    }

    /// Marks `v` active: the next [`LinKernighan::run`] tries moves from it.
    pub(crate) fn activate(&mut self, v: usize) {
        if !self.queued[v] {
            self.queued[v] = true;
            self.queue.push_back(v);
        }
    }

    /// Takes `tour` to a local optimum from every node (in tour order), or until `should_stop`
    /// says so (polled every few dozen nodes).
    pub(crate) fn optimise<T: TourRepr>(
        &mut self,
        tour: &mut T,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> ImproveStats {
        for v in tour.stored_order() {
            self.activate(v);
        }
        self.run(tour, should_stop)
    }

    /// Applies improving moves from the active nodes until none is active or `should_stop`
    /// says so (polled every few dozen nodes).
    pub(crate) fn run<T: TourRepr>(
        &mut self,
        tour: &mut T,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> ImproveStats {
        let mut stats = ImproveStats::default();
        if tour.len() < 5 || self.nb.k() == 0 {
            self.clear_queue();
            return stats;
        }
        let mut polls = 0u32;
        while let Some(a) = self.queue.pop_front() {
            self.queued[a] = false;
            polls += 1;
            if polls.is_multiple_of(32) && should_stop() {
                stats.interrupted = true;
                break;
            }
            if let Some(gain) = self.improve_from(tour, a) {
                stats.moves += 1;
                stats.gain += gain;
                self.activate(a);
            }
        }
        stats
    }

    /// One improving move from `t1`, applied (its changed endpoints become active); its gain,
    /// or `None` when no move starts at `t1`.
    pub(crate) fn improve_from<T: TourRepr>(&mut self, tour: &mut T, t1: usize) -> Option<i64> {
        if tour.len() < 5 || self.nb.k() == 0 {
            return None;
        }
        if self.symmetric {
            for t2 in [tour.next(t1), tour.prev(t1)] {
                if let Some(g) = self.lk_move(tour, t1, t2) {
                    return Some(g);
                }
            }
        }
        let (gain, touched) = try_or_opt(self.cost, self.nb, tour, t1, self.symmetric)?;
        // Slots 0..4 are (p, nx, s1, s2): see `try_or_opt`.
        if let [Some(p), Some(nx), Some(s1), Some(s2), ..] = touched {
            if self.logging {
                self.log.push(Undo::OrOpt { p, nx, s1, s2 });
            }
        }
        for v in touched.into_iter().flatten() {
            self.activate(v);
        }
        Some(gain)
    }

    /// Starts logging committed changes (clearing the log), for [`LinKernighan::undo_log`].
    pub(crate) fn start_log(&mut self) {
        self.logging = true;
        self.log.clear();
    }

    /// Forgets the logged changes (they stay applied) and stops logging.
    pub(crate) fn keep_log(&mut self) {
        self.logging = false;
        self.log.clear();
    }

    /// Takes back every change logged since [`LinKernighan::start_log`], newest first, and
    /// stops logging.
    pub(crate) fn undo_log<T: TourRepr>(&mut self, tour: &mut T) {
        while let Some(u) = self.log.pop() {
            match u {
                Undo::Flip(f) => unflip(tour, f),
                Undo::OrOpt { p, nx, s1, s2 } => undo_or_opt(tour, p, nx, s1, s2),
            }
        }
        self.logging = false;
    }

    fn clear_queue(&mut self) {
        while let Some(v) = self.queue.pop_front() {
            self.queued[v] = false;
        }
    }

    /// The best LK move that starts by removing `(t1, t2)`, applied if it gains.
    fn lk_move<T: TourRepr>(&mut self, tour: &mut T, t1: usize, t2: usize) -> Option<i64> {
        self.t1 = t1;
        self.chain.clear();
        self.added.clear();
        self.removed.clear();
        self.removed.push((t1, t2));
        self.best_gain = 0;
        self.best_len = 0;
        self.best_pending = None;
        let g = self.cost.cost(t1, t2);
        if self.descend(tour, 0, t2, g) {
            Some(self.commit(tour))
        } else {
            debug_assert!(self.chain.is_empty());
            None
        }
    }

    /// Level `level` of the chain: `chain` holds `level` applied flips, `t2` is the tour
    /// neighbour of `t1` whose edge to it is the one to remove next, and `g` the gain so far
    /// counting that edge as removed. True when a gaining move was found (and left for
    /// [`Self::commit`]); false leaves the tour as it was on entry.
    fn descend<T: TourRepr>(&mut self, tour: &mut T, level: usize, t2: usize, g: i64) -> bool {
        let t1 = self.t1;
        let fwd = tour.next(t1) == t2;
        let mut cands = std::mem::take(&mut self.cands[level]);
        cands.clear();
        let k = self.nb.k();
        for (j, &t3) in self.nb.out(t2).iter().enumerate() {
            let t3 = t3 as usize;
            let g1 = g - self.nb_cost[t2 * k + j];
            if g1 <= 0 {
                break; // sorted lists: no later candidate passes the gain criterion
            }
            if t3 == t1 {
                continue;
            }
            // The neighbour of t3 on t2's side keeps one cycle; the other would split it.
            let t4 = if fwd { tour.prev(t3) } else { tour.next(t3) };
            if t4 == t2 {
                continue; // (t2, t3) is already a tour edge
            }
            if self.removed.iter().any(|&e| same_edge(e, t2, t3))
                || self.added.iter().any(|&e| same_edge(e, t3, t4))
            {
                continue;
            }
            let value = g1 + self.cost.cost(t3, t4);
            let close = value - self.cost.cost(t4, t1);
            if close > self.best_gain {
                self.best_gain = close;
                self.best_len = level;
                self.best_pending = Some((t2, t3, t4));
            }
            cands.push((value, t3, t4));
        }
        let mut found = false;
        if level + 1 < self.params.max_depth {
            // Best first: largest value, then smallest t3.
            let order = |x: &(i64, usize, usize), y: &(i64, usize, usize)| {
                y.0.cmp(&x.0).then(x.1.cmp(&y.1))
            };
            let breadth = self.params.breadth.get(level).copied().unwrap_or(1);
            if breadth == 1 {
                // Only the best is tried: bring it to the front without sorting the rest.
                if let Some(best) = (0..cands.len()).min_by(|&i, &j| order(&cands[i], &cands[j])) {
                    cands.swap(0, best);
                }
            } else {
                cands.sort_unstable_by(order);
            }
            for &(value, t3, t4) in cands.iter().take(breadth) {
                if value <= self.nb_cost[t4 * k] {
                    // Not even t4's nearest neighbour passes the gain criterion at the next
                    // level: the flip would be applied only to be undone.
                    continue;
                }
                let f = lk_flip(tour, t1, t2, t3, t4);
                self.chain.push(f);
                self.added.push((t2, t3));
                self.removed.push((t3, t4));
                if self.descend(tour, level + 1, t4, value) {
                    found = true;
                    break;
                }
                // A deeper level that returns false has seen no gain: safe to try the next.
                self.chain.pop();
                self.added.pop();
                self.removed.pop();
                unflip(tour, f);
            }
        }
        self.cands[level] = cands;
        found || self.best_gain > 0
    }

    /// Keeps the flips of the best closing found, activates their endpoints and returns the gain.
    fn commit<T: TourRepr>(&mut self, tour: &mut T) -> i64 {
        while self.chain.len() > self.best_len {
            if let Some(f) = self.chain.pop() {
                unflip(tour, f);
            }
        }
        if let Some((t2, t3, t4)) = self.best_pending.take() {
            let f = lk_flip(tour, self.t1, t2, t3, t4);
            self.chain.push(f);
        }
        for i in 0..self.chain.len() {
            let f = self.chain[i];
            if self.logging {
                self.log.push(Undo::Flip(f));
            }
            for v in [f.a, f.a2, f.b, f.b2] {
                self.activate(v);
            }
        }
        self.chain.clear();
        self.best_gain
    }
}

fn same_edge(e: (usize, usize), a: usize, b: usize) -> bool {
    (e.0 == a && e.1 == b) || (e.0 == b && e.1 == a)
}

/// Longest kick segment for `n` nodes: `kick_segment`, but at most an eighth of the tour so that
/// the three segments never wrap round.
fn kick_segment(n: usize, cap: usize) -> usize {
    cap.min(n / 8).max(1)
}

/// Smallest instance that gets kicks: three segments and the node before them must fit.
const MIN_KICK_NODES: usize = 8;

/// Parameters of an iterated LK search.
#[derive(Clone, Debug)]
pub(crate) struct LkPlan {
    /// Runs, kicks per run (iterations), stall and target limits, deadline, stop handle.
    pub limits: LoopPlan,
    pub params: LkParams,
    pub layout: Layout,
    /// A tour run 0 starts from instead of its greedy tour (the patched assignment cover, for
    /// asymmetric costs); the other runs keep their own starts, for diversity.
    pub start: Option<Vec<usize>>,
}

/// One run of the iterated search on representation `T`: a local optimum, then one kick and its
/// repair per step, kept when the tour is no longer.
pub(crate) struct LkRun<'a, C: Cost + ?Sized, T: TourRepr> {
    cost: &'a C,
    lk: LinKernighan<'a, C>,
    tour: T,
    length: i64,
    seg: usize,
}

impl<'a, C: Cost + ?Sized, T: TourRepr> LkRun<'a, C, T> {
    pub(crate) fn start(
        cost: &'a C,
        nb: &'a Neighbours,
        plan: &LkPlan,
        order: Vec<usize>,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Self {
        Self::start_from(cost, nb, plan, order, None, should_stop)
    }

    /// [`LkRun::start`], the first descent trying moves from the `active` nodes only (and from
    /// the nodes its moves touch), or from every node when `None`.
    pub(crate) fn start_from(
        cost: &'a C,
        nb: &'a Neighbours,
        plan: &LkPlan,
        order: Vec<usize>,
        active: Option<&[usize]>,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Self {
        let mut tour = T::from_order(order);
        let mut lk = LinKernighan::new(cost, nb, plan.params.clone());
        match active {
            Some(nodes) => {
                for &v in nodes {
                    lk.activate(v);
                }
                lk.run(&mut tour, should_stop);
            }
            None => {
                lk.optimise(&mut tour, should_stop);
            }
        }
        let length = closed_length(cost, &tour.stored_order()).unwrap_or(i64::MAX);
        LkRun {
            cost,
            lk,
            tour,
            length,
            seg: kick_segment(cost.len(), plan.params.kick_segment),
        }
    }
}

impl<C: Cost + ?Sized, T: TourRepr> Iterative for LkRun<'_, C, T> {
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        let n = self.cost.len();
        let v = rng.gen_range(0..n);
        let lens = [
            rng.gen_range(1..=self.seg),
            rng.gen_range(1..=self.seg),
            rng.gen_range(1..=self.seg),
        ];
        let kick = double_bridge(self.cost, &mut self.tour, v, lens);
        self.lk.start_log();
        for v in kick.ends {
            self.lk.activate(v);
        }
        let stats = self.lk.run(&mut self.tour, should_stop);
        let new_length = self.length + kick.delta - stats.gain;
        if new_length <= self.length {
            self.lk.keep_log();
            self.length = new_length;
        } else {
            self.lk.undo_log(&mut self.tour);
            undo_double_bridge(self.cost, &mut self.tour, &kick);
        }
    }

    fn best_length(&self) -> i64 {
        self.length
    }

    /// The same cycle gives the same answer from either representation: walked from node 0.
    fn best_order(&self) -> Vec<usize> {
        self.tour.walk_from(0)
    }

    /// Too small for kicks, or a length that overflowed (it cannot be updated by deltas; such a
    /// run keeps its local optimum).
    fn finished(&self) -> bool {
        self.cost.len() < MIN_KICK_NODES || self.length == i64::MAX
    }
}

/// Runs the iterated search on the loop owner and returns the best tour by (length, run index).
pub(crate) fn iterated<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    plan: &LkPlan,
    began: Instant,
    observer: &(dyn Fn(Improvement) + Sync),
) -> LoopOutcome {
    fn go<C: Cost + ?Sized, T: TourRepr>(
        cost: &C,
        nb: &Neighbours,
        plan: &LkPlan,
        began: Instant,
        observer: &(dyn Fn(Improvement) + Sync),
    ) -> LoopOutcome {
        drive(&plan.limits, began, observer, |r, rng, should_stop| {
            let order = match &plan.start {
                Some(order) if r == 0 => order.clone(),
                _ => start_tour(cost, nb, Start::GreedyEdge, r, rng, should_stop),
            };
            LkRun::<C, T>::start(cost, nb, plan, order, should_stop)
        })
    }
    let out = if plan.layout.two_level(cost.len()) {
        go::<C, TwoLevelTour>(cost, nb, plan, began, observer)
    } else {
        go::<C, ArrayTour>(cost, nb, plan, began, observer)
    };
    debug_assert!(
        out.length == i64::MAX || closed_length(cost, &out.order) == Ok(out.length),
        "incremental length drifted"
    );
    out
}

/// Kicks per run when nothing else bounds a run (no time limit, no stall limit).
pub(crate) fn default_kicks(n: usize) -> u64 {
    n.clamp(1_000, 10_000) as u64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::control::{StopHandle, StopReason};
    use crate::cost::MatrixCost;
    use crate::neighbours::k_nearest;
    use crate::testing::{random_costs, shuffled};
    use crate::tour::Tour;
    use crate::{Method, Solver};
    use proptest::prelude::*;
    use std::time::Duration;

    fn instance(n: usize, seed: u64, asym: bool) -> MatrixCost {
        random_costs(n, seed, if asym { 1 } else { 0 })
    }

    fn length<T: TourRepr>(c: &MatrixCost, t: &T) -> i64 {
        closed_length(c, &t.stored_order()).unwrap()
    }

    /// The tour's edges as a sorted list, undirected when `undirected`.
    fn edges<T: TourRepr>(t: &T, undirected: bool) -> Vec<(usize, usize)> {
        let o = t.stored_order();
        let mut e: Vec<(usize, usize)> = (0..o.len())
            .map(|i| {
                let (a, b) = (o[i], o[(i + 1) % o.len()]);
                if undirected {
                    (a.min(b), a.max(b))
                } else {
                    (a, b)
                }
            })
            .collect();
        e.sort_unstable();
        e
    }

    /// Best gain of any 2-opt move, by trying all pairs of tour edges.
    fn best_two_opt_gain(c: &MatrixCost, order: &[usize]) -> i64 {
        let n = order.len();
        let mut best = 0;
        for i in 0..n {
            for j in i + 2..n {
                if i == 0 && j == n - 1 {
                    continue; // the two edges share node order[0]
                }
                let (a, b) = (order[i], order[i + 1]);
                let (x, y) = (order[j], order[(j + 1) % n]);
                best = best.max(c.cost(a, b) + c.cost(x, y) - c.cost(a, x) - c.cost(b, y));
            }
        }
        best
    }

    #[test]
    fn double_bridge_reorders_three_segments_keeping_direction() {
        let c = instance(12, 1, true);
        let mut t = ArrayTour::new((0..12).collect());
        let k = double_bridge(&c, &mut t, 1, [2, 3, 1]);
        // 0 1 [2 3] [4 5 6] [7] 8 ..  ->  0 1 [7] [4 5 6] [2 3] 8 ..
        assert_eq!(t.order(), &[0, 1, 7, 4, 5, 6, 2, 3, 8, 9, 10, 11]);
        assert_eq!(k.ends, [1, 2, 3, 4, 6, 7, 7, 8]);
        undo_double_bridge(&c, &mut t, &k);
        assert_eq!(t.order(), &(0..12).collect::<Vec<_>>()[..]);
    }

    /// The same cycle, read the other way round.
    fn turned(t: &ArrayTour) -> ArrayTour {
        ArrayTour::new(t.order().iter().rev().copied().collect())
    }

    // Undoing works whichever way the array reads: a later flip may have turned it round.
    #[test]
    fn undo_is_orientation_free() {
        let n = 20;
        let c = instance(n, 2, false);
        let start = ArrayTour::new((0..n).collect());
        let original = edges(&start, true);
        for turn in [false, true] {
            let mut t = start.clone();
            let k = double_bridge(&c, &mut t, 17, [2, 3, 4]); // wraps past the array's end
            if turn {
                t = turned(&t);
            }
            undo_double_bridge(&c, &mut t, &k);
            assert_eq!(edges(&t, true), original, "kick, turned: {turn}");

            let mut t = start.clone();
            let f = flip(&mut t, 3, 12);
            assert_ne!(edges(&t, true), original);
            if turn {
                t = turned(&t);
            }
            unflip(&mut t, f);
            assert_eq!(edges(&t, true), original, "flip, turned: {turn}");

            for reversed in [false, true] {
                // Segment 5 6 7 (between 4 and 8) moved to between 14 and 15.
                let mut t = start.clone();
                t.move_segment(5, 3, 14);
                if reversed {
                    t.reverse(5, 7, true);
                }
                if turn {
                    t = turned(&t);
                }
                undo_or_opt(&mut t, 4, 8, 5, 7);
                assert_eq!(
                    edges(&t, true),
                    original,
                    "or-opt {reversed}, turned: {turn}"
                );
            }
        }
    }

    /// Optimises `t`, kicks it, repairs, checks the delta and that undoing restores the cycle;
    /// returns the cycle after the repair (from node 0) for comparing representations.
    fn kick_and_undo<T: TourRepr>(
        c: &MatrixCost,
        nb: &Neighbours,
        mut t: T,
        v: usize,
        lens: [usize; 3],
        asym: bool,
    ) -> Result<Vec<usize>, TestCaseError> {
        let n = t.len();
        let mut lk = LinKernighan::new(c, nb, LkParams::default());
        lk.optimise(&mut t, &mut || false);
        let before_edges = edges(&t, !asym);
        let before_arcs = edges(&t, false);
        let before = length(c, &t);
        let kick = double_bridge(c, &mut t, v, lens);
        prop_assert!(Tour::new(t.stored_order(), n).is_ok());
        prop_assert_eq!(length(c, &t) - before, kick.delta);
        // Four arcs change (a kick never turns the tour round); with symmetric costs and
        // one-node segments some of them are old edges walked the other way.
        let mut changed: Vec<(usize, usize)> = edges(&t, false);
        changed.retain(|e| !before_arcs.contains(e));
        prop_assert_eq!(changed.len(), 4, "a double bridge changes four arcs");
        lk.start_log();
        for e in kick.ends {
            lk.activate(e);
        }
        let stats = lk.run(&mut t, &mut || false);
        prop_assert!(Tour::new(t.stored_order(), n).is_ok());
        prop_assert_eq!(length(c, &t), before + kick.delta - stats.gain);
        let repaired = t.walk_from(0);
        lk.undo_log(&mut t);
        undo_double_bridge(c, &mut t, &kick);
        prop_assert_eq!(edges(&t, !asym), before_edges);
        Ok(repaired)
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        // Each single LK step (or Or-opt fallback) keeps a permutation and reports exactly the
        // change in length that a full recomputation sees, on both representations, which take
        // the same steps.
        #[test]
        fn each_step_gain_is_the_length_change(n in 8usize..80, seed in 0u64..10_000, asym in any::<bool>(), k in 3usize..10) {
            let c = instance(n, seed, asym);
            let nb = k_nearest(&c, k);
            let mut t = ArrayTour::new(shuffled(n, seed));
            let mut u = TwoLevelTour::new(shuffled(n, seed));
            let mut lk = LinKernighan::new(&c, &nb, LkParams::default());
            let mut lk2 = LinKernighan::new(&c, &nb, LkParams::default());
            for round in 0..3 {
                for i in 0..n {
                    let v = (i * 7 + round) % n;
                    let before = length(&c, &t);
                    let g = lk.improve_from(&mut t, v);
                    let g2 = lk2.improve_from(&mut u, v);
                    prop_assert!(Tour::new(t.order().to_vec(), n).is_ok());
                    prop_assert!(Tour::new(u.stored_order(), n).is_ok());
                    let after = length(&c, &t);
                    prop_assert_eq!(before - after, g.unwrap_or(0));
                    prop_assert_eq!(length(&c, &u), after);
                    prop_assert_eq!(g, g2);
                    prop_assert_eq!(t.walk_from(0), u.walk_from(0));
                    if let Some(g) = g { prop_assert!(g > 0); }
                }
            }
        }

        // A kick's delta is exact, and undoing the local search and then the kick from the log
        // gives back the same cycle (the same directed cycle for asymmetric costs), on both
        // representations.
        #[test]
        fn kick_and_repair_undo_exactly(n in 8usize..80, seed in 0u64..10_000, asym in any::<bool>(), v in 0usize..80, l in (1usize..10, 1usize..10, 1usize..10)) {
            let c = instance(n, seed, asym);
            let nb = k_nearest(&c, 6);
            let seg = kick_segment(n, 50);
            let lens = [1 + (l.0 - 1) % seg, 1 + (l.1 - 1) % seg, 1 + (l.2 - 1) % seg];
            let a = kick_and_undo(&c, &nb, ArrayTour::new(shuffled(n, seed)), v % n, lens, asym)?;
            let b = kick_and_undo(&c, &nb, TwoLevelTour::new(shuffled(n, seed)), v % n, lens, asym)?;
            prop_assert_eq!(a, b);
        }

        // With complete candidate lists, a tour where LK finds nothing from any node admits no
        // improving 2-opt move at all (checked by trying every pair of edges).
        #[test]
        fn lk_optimum_is_two_opt_optimal(n in 8usize..60, seed in 0u64..10_000) {
            let c = instance(n, seed, false);
            let nb = k_nearest(&c, n - 1);
            let mut t = ArrayTour::new(shuffled(n, seed));
            let mut lk = LinKernighan::new(&c, &nb, LkParams::default());
            while lk.optimise(&mut t, &mut || false).moves > 0 {}
            prop_assert_eq!(best_two_opt_gain(&c, t.order()), 0);
        }
    }

    #[test]
    fn same_seed_and_kicks_give_the_same_tour_for_any_thread_count() {
        let c = instance(150, 9, false);
        let run = |threads| {
            Solver::new(&c)
                .method(crate::Method::Lk)
                .seed(4)
                .runs(3)
                .kicks(300)
                .threads(threads)
                .solve()
                .unwrap()
        };
        let (a, b) = (run(1), run(2));
        assert_eq!(a.tour, b.tour);
        assert_eq!(a.length, b.length);
        assert_eq!(a.iterations, 900);
        assert_eq!(a.stop_reason, StopReason::IterationBudget);
        let asym = instance(60, 9, true);
        let run = |threads| {
            Solver::new(&asym)
                .seed(4)
                .kicks(200)
                .threads(threads)
                .solve()
                .unwrap()
                .tour
        };
        assert_eq!(run(1), run(2));
    }

    #[test]
    fn both_representations_give_the_same_tour_from_the_same_seed() {
        for (n, asym) in [(300, false), (120, true)] {
            let c = instance(n, 11, asym);
            let run = |layout| {
                Solver::new(&c)
                    .seed(3)
                    .runs(2)
                    .kicks(400)
                    .threads(1)
                    .layout(layout)
                    .solve()
                    .unwrap()
            };
            let (a, b) = (run(Layout::Array), run(Layout::TwoLevel));
            assert_eq!(a.tour, b.tour, "n {n}, asymmetric {asym}");
            assert_eq!(a.length, b.length);
        }
    }

    #[test]
    fn stops_on_stall_target_and_stop_handle() {
        let c = instance(120, 5, false);
        let s = Solver::new(&c).seed(1).stall_limit(20).solve().unwrap();
        assert_eq!(s.stop_reason, StopReason::StallLimit);
        // A target every tour meets ends the search after the first local optimum.
        let s = Solver::new(&c)
            .seed(1)
            .target(i64::MAX)
            .time_limit(Duration::from_secs(30))
            .solve()
            .unwrap();
        assert_eq!(s.stop_reason, StopReason::TargetReached);
        assert!(s.seconds < 5.0);
        // The 2-opt baseline honours the target too: one restart per thread at most.
        let s = Solver::new(&c)
            .method(Method::TwoOpt)
            .threads(1)
            .target(i64::MAX)
            .time_limit(Duration::from_secs(30))
            .solve()
            .unwrap();
        assert_eq!(s.stop_reason, StopReason::TargetReached);
        assert_eq!(s.runs, 1);
        let stop = StopHandle::new();
        stop.stop();
        let s = Solver::new(&c)
            .time_limit(Duration::from_secs(30))
            .stop_handle(stop)
            .solve()
            .unwrap();
        assert_eq!(s.stop_reason, StopReason::Cancelled);
        assert!(Tour::new(s.tour.order().to_vec(), 120).is_ok());
    }

    #[test]
    fn time_limit_is_honoured_within_a_few_milliseconds() {
        let c = instance(2000, 3, false);
        let limit = Duration::from_millis(300);
        let s = Solver::new(&c)
            .time_limit(limit)
            .threads(2)
            .solve()
            .unwrap();
        assert_eq!(s.stop_reason, StopReason::TimeLimit);
        assert!(s.seconds < 0.3 + 0.2, "took {} s", s.seconds);
        // The trace is the anytime curve: strictly decreasing, ending at the answer.
        assert!(s.trace.windows(2).all(|w| w[1].length < w[0].length));
        assert_eq!(s.trace.last().map(|i| i.length), Some(s.length));
    }
}
