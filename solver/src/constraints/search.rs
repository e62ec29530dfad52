//! The heuristic search under constraints: insertion construction, local moves checked by
//! segment summaries, a penalised phase that may cross orders breaking windows, and kicks.
//!
//! An order lists the visited stops from the depot; fixed edges glue stops into chains that
//! move as one. Every order the search holds keeps the precedence pairs, the fixed edges and
//! every required stop; only windows (and, on the slow path, lags and the caller's rule) may be
//! broken while searching, at a price: the score of an order is its objective plus
//! `weight × breach`, where the breach is the total warp of the order's segment summary (the
//! time its service starts would have to move back to meet every window). The weight grows
//! while local optima break windows and shrinks while they meet them, so the search crosses
//! between feasible regions without settling in infeasible ones. Only orders that break
//! nothing are kept as answers.
//!
//! Fast path: when every stop has at most one window, no precedence pair has lags and the
//! caller has no rule, a move is scored in constant time from precomputed summaries of every
//! run of the current order, forward and reversed. Otherwise (slow path) each candidate order
//! is written out and scheduled in full by [`evaluate_with`], and its breach is the sum of what
//! it breaks by.
//!
//! Moves: relocation of one to three chains (Or-opt), exchange of two chains, reversal of a run
//! (2-opt, with the reversed travel costs of asymmetric costs), dropping an optional chain and
//! inserting a left-out one. A kick relocates a few random chains to random places allowed by
//! the precedence pairs, then the descent repairs.

use super::{Constraints, Objective, Route, Segment, StepRule, Violation, evaluate_with};
use crate::Cost;
use crate::methods::drive::Iterative;
use rand::Rng;
use rand::seq::SliceRandom as _;
use rand_pcg::Pcg64;

/// Most stops for which the tables of run summaries are kept (two `n × n` tables).
const TABLE_LIMIT: usize = 1000;

/// Weight of the breach at the start of a run, and its bounds.
const WEIGHT_START: i128 = 16;
const WEIGHT_MAX: i128 = 1 << 40;

/// How far a kick moves a chain, in positions, most of the time.
const KICK_REACH: usize = 6;

/// Not visited.
const NONE: usize = usize::MAX;

/// The problem as the search reads it.
pub(crate) struct Problem<'a, C: ?Sized, R: ?Sized> {
    pub cost: &'a C,
    pub c: &'a Constraints,
    pub rule: &'a R,
    n: usize,
    /// Per stop, its one-stop summary (fast path only).
    stop_seg: Vec<Segment>,
    fast: bool,
    preds: Vec<Vec<usize>>,
    succs: Vec<Vec<usize>>,
    /// Per stop, the stop a fixed edge sends it to.
    next_fixed: Vec<Option<usize>>,
    /// Chains: stops glued by fixed edges, in order; the depot's chain first.
    chains: Vec<Vec<usize>>,
    chain_of: Vec<usize>,
    /// Per chain: its penalty when every stop in it is optional, else `None`.
    chain_penalty: Vec<Option<i64>>,
    /// Per chain: the penalties of its optional stops, saved when the chain is visited.
    chain_saving: Vec<i64>,
    /// The chain ending at the depot of a closed tour (its return is fixed), if any.
    closing_chain: Option<usize>,
    /// Fast path: `late[a * n + b]` when `b` cannot be served in its window once `a` has been
    /// (opening of `a`, its service and the step to `b` pass the close of `b`). Moves that put
    /// `b` after `a` are not tried; without the triangle inequality this prunes a little more
    /// than it proves.
    late: Vec<bool>,
}

impl<'a, C: Cost + ?Sized, R: StepRule + ?Sized> Problem<'a, C, R> {
    /// Reads `c`, which has passed [`Constraints::check`].
    pub fn new(cost: &'a C, c: &'a Constraints, rule: &'a R, has_rule: bool) -> Self {
        let n = cost.len();
        let stop_seg: Vec<Option<Segment>> = (0..n).map(|s| Segment::stop(c, s)).collect();
        let lags = c
            .precedence
            .iter()
            .any(|p| p.min_lag.is_some() || p.max_lag.is_some());
        let fast = !has_rule && !lags && n <= TABLE_LIMIT && stop_seg.iter().all(Option::is_some);
        let stop_seg = stop_seg
            .into_iter()
            .map(Option::unwrap_or_default)
            .collect();
        let mut preds = vec![Vec::new(); n];
        let mut succs = vec![Vec::new(); n];
        for p in &c.precedence {
            preds[p.after].push(p.before);
            succs[p.before].push(p.after);
        }
        let mut next_fixed = vec![None; n];
        let mut prev_fixed = vec![None; n];
        for &(a, b) in &c.fixed_edges {
            next_fixed[a] = Some(b);
            prev_fixed[b] = Some(a);
        }
        let mut chains = Vec::new();
        let mut chain_of = vec![NONE; n];
        let mut starts: Vec<usize> = vec![c.depot];
        starts.extend((0..n).filter(|&s| s != c.depot && prev_fixed[s].is_none()));
        if c.route == Route::Closed {
            // The chain into the depot: walk back from it.
            if let Some(mut s) = prev_fixed[c.depot] {
                while let Some(p) = prev_fixed[s] {
                    if p == c.depot {
                        break;
                    }
                    s = p;
                }
                if !starts.contains(&s) {
                    starts.push(s);
                }
            }
        }
        for start in starts {
            if chain_of[start] != NONE {
                continue;
            }
            let id = chains.len();
            let mut chain = vec![start];
            chain_of[start] = id;
            let mut s = start;
            while let Some(t) = next_fixed[s] {
                if chain_of[t] != NONE || t == c.depot {
                    break;
                }
                chain_of[t] = id;
                chain.push(t);
                s = t;
            }
            chains.push(chain);
        }
        let closing_chain = prev_fixed[c.depot]
            .filter(|_| c.route == Route::Closed)
            .map(|a| chain_of[a]);
        let chain_saving = chains
            .iter()
            .map(|ch| {
                ch.iter()
                    .filter_map(|&s| c.penalty[s])
                    .fold(0i64, i64::saturating_add)
            })
            .collect();
        let chain_penalty = chains
            .iter()
            .map(|ch| {
                ch.iter()
                    .try_fold(0i64, |acc, &s| c.penalty[s].map(|p| acc.saturating_add(p)))
            })
            .collect();
        let late = if fast {
            let open = |s: usize| c.windows[s].first().map_or(i64::MIN, |w| w.earliest);
            let close = |s: usize| c.windows[s].last().map_or(i64::MAX, |w| w.latest);
            (0..n * n)
                .map(|k| {
                    let (a, b) = (k / n, k % n);
                    a != b
                        && open(a)
                            .saturating_add(c.service[a])
                            .saturating_add(cost.cost(a, b))
                            > close(b)
                })
                .collect()
        } else {
            Vec::new()
        };
        Problem {
            late,
            cost,
            c,
            rule,
            n,
            stop_seg,
            fast,
            preds,
            succs,
            next_fixed,
            chains,
            chain_of,
            chain_penalty,
            chain_saving,
            closing_chain,
        }
    }

    fn travel(&self, a: usize, b: usize) -> i64 {
        self.cost.cost(a, b)
    }

    /// True when `b` can never be served after `a` (fast path only).
    fn too_late(&self, a: usize, b: usize) -> bool {
        self.late.get(a * self.n + b).copied().unwrap_or(false)
    }

    /// True when a fixed edge joins `a` to `b`.
    fn glued(&self, a: usize, b: usize) -> bool {
        self.next_fixed[a] == Some(b)
    }
}

/// One piece of a candidate order: a run of the current order, forward or reversed, or a chain
/// not in it.
#[derive(Clone, Copy, Debug)]
enum Piece {
    Fwd(usize, usize),
    Rev(usize, usize),
    Chain(usize),
}

/// A candidate order: up to five pieces, and the change of the penalties of left-out stops.
#[derive(Clone, Copy, Debug)]
struct Candidate {
    pieces: [Piece; 5],
    len: usize,
    penalty: i64,
}

impl Candidate {
    fn new(pieces: &[Piece], penalty: i64) -> Candidate {
        let mut all = [Piece::Fwd(0, 0); 5];
        all[..pieces.len()].copy_from_slice(pieces);
        Candidate {
            pieces: all,
            len: pieces.len(),
            penalty,
        }
    }
}

/// The score of an order: objective plus weighted breach.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Score {
    /// Travel cost or completion time plus penalties.
    pub objective: i64,
    /// Total breach (zero: feasible).
    pub breach: i64,
}

impl Score {
    fn value(self, weight: i128) -> i128 {
        self.objective as i128 + weight * self.breach as i128
    }
}

/// One order and what the search knows of it.
#[derive(Clone, Debug)]
pub(crate) struct State {
    pub order: Vec<usize>,
    /// Position of each stop, [`NONE`] when left out.
    pos: Vec<usize>,
    /// Penalties of the left-out stops.
    penalty: i64,
    pub score: Score,
    /// Summaries of every run `order[i..=j]` at `i * len + j`, forward and reversed (fast path).
    fwd: Vec<Segment>,
    rev: Vec<Segment>,
}

impl State {
    fn len(&self) -> usize {
        self.order.len()
    }
}

/// The search's view of one run: a problem, a scratch buffer and the weight.
pub(crate) struct Search<'p, 'a, C: ?Sized, R: ?Sized> {
    pub p: &'p Problem<'a, C, R>,
    weight: i128,
    scratch: Vec<usize>,
}

impl<'p, 'a, C: Cost + ?Sized, R: StepRule + ?Sized> Search<'p, 'a, C, R> {
    pub fn new(p: &'p Problem<'a, C, R>) -> Self {
        Search {
            p,
            weight: WEIGHT_START,
            scratch: Vec::with_capacity(p.n),
        }
    }

    /// A state for `order` (which keeps the links), with its tables and score.
    pub fn state(&mut self, order: Vec<usize>) -> State {
        let mut pos = vec![NONE; self.p.n];
        for (i, &s) in order.iter().enumerate() {
            pos[s] = i;
        }
        let penalty = (0..self.p.n)
            .filter(|&s| pos[s] == NONE)
            .map(|s| self.p.c.penalty[s].unwrap_or(0))
            .fold(0i64, i64::saturating_add);
        let mut st = State {
            order,
            pos,
            penalty,
            score: Score {
                objective: 0,
                breach: 0,
            },
            fwd: Vec::new(),
            rev: Vec::new(),
        };
        self.tables(&mut st);
        let len = st.len();
        st.score = self.score(&st, &Candidate::new(&[Piece::Fwd(0, len - 1)], 0));
        st
    }

    /// Fills the run summaries (fast path).
    fn tables(&self, st: &mut State) {
        if !self.p.fast {
            return;
        }
        let len = st.len();
        st.fwd.clear();
        st.rev.clear();
        st.fwd.resize(len * len, Segment::default());
        st.rev.resize(len * len, Segment::default());
        for i in 0..len {
            let a = st.order[i];
            st.fwd[i * len + i] = self.p.stop_seg[a];
            st.rev[i * len + i] = self.p.stop_seg[a];
            for j in i + 1..len {
                let b = st.order[j];
                let prev = st.order[j - 1];
                st.fwd[i * len + j] = Segment::concat(
                    &st.fwd[i * len + j - 1],
                    &self.p.stop_seg[b],
                    self.p.travel(prev, b),
                );
                st.rev[i * len + j] = Segment::concat(
                    &self.p.stop_seg[b],
                    &st.rev[i * len + j - 1],
                    self.p.travel(b, prev),
                );
            }
        }
    }

    fn first_last(&self, st: &State, piece: Piece) -> (usize, usize) {
        match piece {
            Piece::Fwd(i, j) => (st.order[i], st.order[j]),
            Piece::Rev(i, j) => (st.order[j], st.order[i]),
            Piece::Chain(k) => {
                let ch = &self.p.chains[k];
                (ch[0], ch[ch.len() - 1])
            }
        }
    }

    fn piece_segment(&self, st: &State, piece: Piece) -> Segment {
        let len = st.len();
        match piece {
            Piece::Fwd(i, j) => st.fwd[i * len + j],
            Piece::Rev(i, j) => st.rev[i * len + j],
            Piece::Chain(k) => {
                let ch = &self.p.chains[k];
                let mut seg = self.p.stop_seg[ch[0]];
                for w in ch.windows(2) {
                    seg = Segment::concat(&seg, &self.p.stop_seg[w[1]], self.p.travel(w[0], w[1]));
                }
                seg
            }
        }
    }

    /// The score of a candidate.
    fn score(&mut self, st: &State, cand: &Candidate) -> Score {
        let penalty = st.penalty.saturating_add(cand.penalty);
        let pieces = &cand.pieces[..cand.len];
        if self.p.fast {
            let mut seg: Option<(Segment, usize)> = None;
            for &piece in pieces {
                let (first, last) = self.first_last(st, piece);
                let s = self.piece_segment(st, piece);
                seg = Some(match seg {
                    None => (s, last),
                    Some((acc, prev)) => {
                        (Segment::concat(&acc, &s, self.p.travel(prev, first)), last)
                    }
                });
            }
            let Some((mut seg, last)) = seg else {
                return Score {
                    objective: penalty,
                    breach: 0,
                };
            };
            let c = self.p.c;
            if c.route == Route::Closed {
                let back = Segment::return_to(c, c.depot).unwrap_or_default();
                let step = if seg.travel == 0 && last == c.depot {
                    0
                } else {
                    self.p.travel(last, c.depot)
                };
                seg = Segment::concat(&seg, &back, step);
            }
            let breach = seg.warp_at(c.start_time);
            let completion = c
                .start_time
                .max(seg.earliest)
                .saturating_add(seg.duration.saturating_sub(seg.warp));
            #[cfg(test)]
            self.cross_check(st, cand, breach, seg.travel, completion);
            let base = match c.objective {
                Objective::Travel => seg.travel,
                Objective::Completion => completion,
            };
            return Score {
                objective: base.saturating_add(penalty),
                breach,
            };
        }
        self.scratch.clear();
        for &piece in pieces {
            match piece {
                Piece::Fwd(i, j) => self.scratch.extend_from_slice(&st.order[i..=j]),
                Piece::Rev(i, j) => self.scratch.extend(st.order[i..=j].iter().rev()),
                Piece::Chain(k) => self.scratch.extend_from_slice(&self.p.chains[k]),
            }
        }
        let e = evaluate_with(self.p.cost, self.p.c, &self.scratch, self.p.rule);
        Score {
            objective: e.objective,
            breach: breach_of(&e.violations),
        }
    }

    /// Tests only: the summary's verdict on a candidate equals the full schedule's.
    #[cfg(test)]
    fn cross_check(
        &mut self,
        st: &State,
        cand: &Candidate,
        breach: i64,
        travel: i64,
        completion: i64,
    ) {
        self.scratch.clear();
        for &piece in &cand.pieces[..cand.len] {
            match piece {
                Piece::Fwd(i, j) => self.scratch.extend_from_slice(&st.order[i..=j]),
                Piece::Rev(i, j) => self.scratch.extend(st.order[i..=j].iter().rev()),
                Piece::Chain(k) => self.scratch.extend_from_slice(&self.p.chains[k]),
            }
        }
        let e = super::evaluate(self.p.cost, self.p.c, &self.scratch);
        let late = e
            .violations
            .iter()
            .any(|v| matches!(v, Violation::Late { .. }));
        assert_eq!(breach > 0, late, "{:?} {e:?}", self.scratch);
        assert_eq!(travel, e.travel_cost, "{:?}", self.scratch);
        if breach == 0 {
            assert_eq!(completion, e.completion_time, "{:?}", self.scratch);
            let penalty = st.penalty.saturating_add(cand.penalty);
            assert_eq!(penalty, e.penalty, "{:?}", self.scratch);
            // While the order is being built, missing stops leave links open; once every
            // required stop is in, a move must keep every link.
            let building = e
                .violations
                .iter()
                .any(|v| matches!(v, Violation::MissingRequired { .. }));
            let links_now = super::evaluate(self.p.cost, self.p.c, &st.order)
                .violations
                .iter()
                .all(|v| matches!(v, Violation::Late { .. }));
            assert!(
                building || e.feasible() || !links_now || st.order.len() <= 1,
                "a move broke a link: {:?} {e:?}",
                self.scratch
            );
        }
    }

    /// Writes a candidate out as the new current state.
    fn apply(&mut self, st: &mut State, cand: &Candidate) {
        let mut order = Vec::with_capacity(st.len() + 4);
        for &piece in &cand.pieces[..cand.len] {
            match piece {
                Piece::Fwd(i, j) => order.extend_from_slice(&st.order[i..=j]),
                Piece::Rev(i, j) => order.extend(st.order[i..=j].iter().rev()),
                Piece::Chain(k) => order.extend_from_slice(&self.p.chains[k]),
            }
        }
        *st = self.state(order);
    }

    /// True when positions `a` and `a + 1` of the order may be cut apart (`a + 1 == len`: the
    /// end of the order, before a closed tour's return).
    fn cuttable(&self, st: &State, a: usize) -> bool {
        let len = st.len();
        if a + 1 < len {
            return !self.p.glued(st.order[a], st.order[a + 1]);
        }
        !(self.p.c.route == Route::Closed && self.p.glued(st.order[a], self.p.c.depot))
    }

    /// The end of the chain that starts at position `i`.
    fn chain_end(&self, st: &State, i: usize) -> usize {
        let mut j = i;
        while j + 1 < st.len() && self.p.glued(st.order[j], st.order[j + 1]) {
            j += 1;
        }
        j
    }

    /// First position a move may touch: after the depot's chain.
    fn first_free(&self, st: &State) -> usize {
        self.chain_end(st, 0) + 1
    }

    /// True when a stop in `st.order[lo..=hi]` is a predecessor of `s`.
    fn pred_within(&self, st: &State, s: usize, lo: usize, hi: usize) -> bool {
        self.p.preds[s]
            .iter()
            .any(|&q| (lo..=hi).contains(&st.pos[q]))
    }

    /// True when a stop in `st.order[lo..=hi]` is a successor of `s`.
    fn succ_within(&self, st: &State, s: usize, lo: usize, hi: usize) -> bool {
        self.p.succs[s]
            .iter()
            .any(|&q| (lo..=hi).contains(&st.pos[q]))
    }

    /// One pass over every move; applies the first that lowers the score. True when one did.
    fn improve_once(&mut self, st: &mut State) -> bool {
        let w = self.weight;
        let now = st.score.value(w);
        let len = st.len();
        let lo = self.first_free(st);
        let mut best: Option<Candidate> = None;
        // Relocation of one to three chains.
        'relocate: for i in lo..len {
            if !self.cuttable(st, i - 1) {
                continue;
            }
            let mut j = i;
            for _ in 0..3 {
                j = self.chain_end(st, j);
                if !self.cuttable(st, j) {
                    break;
                }
                // Earlier: order[p+1..i] slides behind the block.
                for p in (0..i - 1).rev() {
                    let m = st.order[p + 1];
                    if self.succ_within(st, m, i, j) || self.p.too_late(st.order[j], m) {
                        break;
                    }
                    if p + 1 < lo {
                        break;
                    }
                    if !self.cuttable(st, p) {
                        continue;
                    }
                    let all = [
                        Piece::Fwd(0, p),
                        Piece::Fwd(i, j),
                        Piece::Fwd(p + 1, i - 1),
                        Piece::Fwd(j + 1, len - 1),
                    ];
                    let pieces = &all[..if j + 1 < len { 4 } else { 3 }];
                    let cand = Candidate::new(pieces, 0);
                    if self.score(st, &cand).value(w) < now {
                        best = Some(cand);
                        break 'relocate;
                    }
                }
                // Later: order[j+1..=p] slides before the block.
                for p in j + 1..len {
                    let m = st.order[p];
                    if self.pred_within(st, m, i, j) || self.p.too_late(m, st.order[i]) {
                        break;
                    }
                    if !self.cuttable(st, p) {
                        continue;
                    }
                    let all = [
                        Piece::Fwd(0, i - 1),
                        Piece::Fwd(j + 1, p),
                        Piece::Fwd(i, j),
                        Piece::Fwd(p + 1, len - 1),
                    ];
                    let pieces = &all[..if p + 1 < len { 4 } else { 3 }];
                    let cand = Candidate::new(pieces, 0);
                    if self.score(st, &cand).value(w) < now {
                        best = Some(cand);
                        break 'relocate;
                    }
                }
                j += 1;
                if j >= len {
                    break;
                }
            }
        }
        if best.is_none() {
            // Exchange of two chains.
            'exchange: for i in lo..len {
                if !self.cuttable(st, i - 1) {
                    continue;
                }
                let ie = self.chain_end(st, i);
                if !self.cuttable(st, ie) {
                    continue;
                }
                let mut k = ie + 1;
                while k < len {
                    // The chain at i goes after order[k]: once it cannot, it cannot further on.
                    if self.p.too_late(st.order[k], st.order[ie]) {
                        break;
                    }
                    let ke = self.chain_end(st, k);
                    if !self.cuttable(st, ke) {
                        k = ke + 1;
                        continue;
                    }
                    // The chain at k moves before order[i..k]; the chain at i after order[i..=ke].
                    let blocked = st.order[k..=ke]
                        .iter()
                        .any(|&s| self.pred_within(st, s, i, k - 1))
                        || st.order[i..=ie]
                            .iter()
                            .any(|&s| self.succ_within(st, s, ie + 1, ke));
                    if !blocked {
                        let mut all = [Piece::Fwd(0, i - 1); 5];
                        let mut used = 1;
                        let mut push = |piece| {
                            all[used] = piece;
                            used += 1;
                        };
                        push(Piece::Fwd(k, ke));
                        if ie + 1 < k {
                            push(Piece::Fwd(ie + 1, k - 1));
                        }
                        push(Piece::Fwd(i, ie));
                        if ke + 1 < len {
                            push(Piece::Fwd(ke + 1, len - 1));
                        }
                        let cand = Candidate::new(&all[..used], 0);
                        if self.score(st, &cand).value(w) < now {
                            best = Some(cand);
                            break 'exchange;
                        }
                    }
                    k = ke + 1;
                }
            }
        }
        if best.is_none() {
            // Reversal of order[i..=j].
            'reverse: for i in lo..len {
                if !self.cuttable(st, i - 1) {
                    continue;
                }
                for j in i + 1..len {
                    if !self.cuttable(st, j - 1)
                        || self.pred_within(st, st.order[j], i, j - 1)
                        || self.p.too_late(st.order[j], st.order[i])
                    {
                        break;
                    }
                    if !self.cuttable(st, j) {
                        continue;
                    }
                    let all = [
                        Piece::Fwd(0, i - 1),
                        Piece::Rev(i, j),
                        Piece::Fwd(j + 1, len - 1),
                    ];
                    let pieces = &all[..if j + 1 < len { 3 } else { 2 }];
                    let cand = Candidate::new(pieces, 0);
                    if self.score(st, &cand).value(w) < now {
                        best = Some(cand);
                        break 'reverse;
                    }
                }
            }
        }
        if best.is_none() {
            best = self.drop_or_insert(st, now);
        }
        match best {
            Some(cand) => {
                self.apply(st, &cand);
                true
            }
            None => false,
        }
    }

    /// Dropping an optional chain or inserting a left-out one, the first that lowers the score.
    fn drop_or_insert(&mut self, st: &State, now: i128) -> Option<Candidate> {
        let w = self.weight;
        let len = st.len();
        let lo = self.first_free(st);
        let mut i = lo;
        while i < len {
            let j = self.chain_end(st, i);
            let k = self.p.chain_of[st.order[i]];
            let whole = self.p.chains[k].first() == Some(&st.order[i])
                && self.p.chains[k].len() == j + 1 - i;
            if let (true, Some(pen)) = (whole, self.p.chain_penalty[k]) {
                let needed = st.order[i..=j].iter().any(|&s| {
                    self.p.succs[s]
                        .iter()
                        .any(|&q| st.pos[q] != NONE && self.p.chain_of[q] != k)
                });
                if !needed && self.cuttable(st, i - 1) && self.cuttable(st, j) {
                    let all = [Piece::Fwd(0, i - 1), Piece::Fwd(j + 1, len - 1)];
                    let pieces = &all[..if j + 1 < len { 2 } else { 1 }];
                    let cand = Candidate::new(pieces, pen);
                    if self.score(st, &cand).value(w) < now {
                        return Some(cand);
                    }
                }
            }
            i = j + 1;
        }
        for k in 0..self.p.chains.len() {
            let chain = &self.p.chains[k];
            let Some(pen) = self.p.chain_penalty[k] else {
                continue;
            };
            if st.pos[chain[0]] != NONE || Some(k) == self.p.closing_chain {
                continue;
            }
            // Every predecessor must be visited (or in the chain); insert after the last one
            // and before the first successor.
            let mut after = 0usize;
            let mut missing = false;
            let mut before = len;
            for &s in chain {
                for &q in &self.p.preds[s] {
                    if self.p.chain_of[q] == k {
                        continue;
                    }
                    match st.pos[q] {
                        NONE => missing = true,
                        at => after = after.max(at),
                    }
                }
                for &q in &self.p.succs[s] {
                    if st.pos[q] != NONE {
                        before = before.min(st.pos[q]);
                    }
                }
            }
            if missing {
                continue;
            }
            let from = after.max(lo - 1);
            for p in from..len.min(before) {
                if !self.cuttable(st, p) {
                    continue;
                }
                let all = [
                    Piece::Fwd(0, p),
                    Piece::Chain(k),
                    Piece::Fwd(p + 1, len - 1),
                ];
                let pieces = &all[..if p + 1 < len { 3 } else { 2 }];
                let cand = Candidate::new(pieces, -pen);
                if self.score(st, &cand).value(w) < now {
                    return Some(cand);
                }
            }
        }
        None
    }

    /// Descends to a local optimum of the current weight.
    pub fn descend(&mut self, st: &mut State, should_stop: &mut dyn FnMut() -> bool) {
        let mut steps = 0u32;
        while self.improve_once(st) {
            steps += 1;
            if steps.is_multiple_of(16) && should_stop() {
                return;
            }
        }
    }

    /// Adapts the weight to the local optimum just reached.
    pub fn adapt(&mut self, st: &State) {
        if st.score.breach > 0 {
            self.weight = (self.weight * 2).min(WEIGHT_MAX);
        } else {
            self.weight = (self.weight * 3 / 4).max(1);
        }
    }

    /// Moves `count` random chains to random places the precedence pairs allow.
    pub fn kick(&mut self, st: &mut State, rng: &mut Pcg64, count: usize) {
        let mut order = st.order.clone();
        for _ in 0..count {
            let len = order.len();
            let lo = {
                let mut e = 0;
                while e + 1 < len && self.p.glued(order[e], order[e + 1]) {
                    e += 1;
                }
                e + 1
            };
            if lo >= len {
                return;
            }
            let start = rng.gen_range(lo..len);
            let mut i = start;
            while i > lo && self.p.glued(order[i - 1], order[i]) {
                i -= 1;
            }
            let mut j = i;
            while j + 1 < len && self.p.glued(order[j], order[j + 1]) {
                j += 1;
            }
            if Some(self.p.chain_of[order[j]]) == self.p.closing_chain {
                continue;
            }
            let block: Vec<usize> = order.drain(i..=j).collect();
            // Allowed places: after every predecessor, before every successor.
            let mut lo_at = lo;
            let mut hi_at = order.len();
            for (at, &s) in order.iter().enumerate() {
                if block.iter().any(|&b| self.p.preds[b].contains(&s)) {
                    lo_at = lo_at.max(at + 1);
                }
                if block.iter().any(|&b| self.p.succs[b].contains(&s)) {
                    hi_at = hi_at.min(at);
                }
            }
            let places: Vec<usize> = (lo_at..=hi_at)
                .filter(|&at| {
                    at == 0 || at == order.len() || !self.p.glued(order[at - 1], order[at])
                })
                .filter(|&at| {
                    !(at == order.len()
                        && self.p.closing_chain.is_some()
                        && self.p.c.route == Route::Closed)
                })
                .collect();
            // Mostly a short way off, now and then anywhere.
            let near: Vec<usize> = places
                .iter()
                .copied()
                .filter(|&at| at.abs_diff(i) <= KICK_REACH)
                .collect();
            let pool = if near.is_empty() || rng.gen_bool(0.1) {
                &places
            } else {
                &near
            };
            let at = pool.choose(rng).copied().unwrap_or(i);
            for (k, s) in block.into_iter().enumerate() {
                order.insert(at + k, s);
            }
        }
        *st = self.state(order);
    }

    /// Builds an order by insertion: chains in an order that respects precedence, each earliest
    /// closing first (ties and, with `noise`, small shuffles by `rng`), at its cheapest place.
    /// With `hint`, chains follow the stops' ranks in it instead.
    pub fn construct(&mut self, rng: &mut Pcg64, noise: bool, hint: Option<&[usize]>) -> State {
        let p = self.p;
        let chains = p.chains.len();
        let mut key: Vec<(i64, u64)> = (0..chains)
            .map(|k| {
                let ch = &p.chains[k];
                let close = ch
                    .iter()
                    .map(|&s| p.c.windows[s].last().map_or(i64::MAX, |w| w.latest))
                    .min()
                    .unwrap_or(i64::MAX);
                let jitter = if noise { rng.r#gen::<u64>() } else { k as u64 };
                (close, jitter)
            })
            .collect();
        if noise {
            // Perturb closings by up to a tenth of their spread.
            let finite: Vec<i64> = key.iter().map(|k| k.0).filter(|&x| x != i64::MAX).collect();
            let spread = finite.iter().max().unwrap_or(&0) - finite.iter().min().unwrap_or(&0);
            let amp = (spread / 10).max(1);
            for k in key.iter_mut().filter(|k| k.0 != i64::MAX) {
                k.0 = k.0.saturating_add(rng.gen_range(-amp..=amp));
            }
        }
        if let Some(hint) = hint {
            let mut rank = vec![i64::MAX; p.n];
            for (r, &s) in hint.iter().enumerate() {
                if s < p.n && rank[s] == i64::MAX {
                    rank[s] = r as i64;
                }
            }
            for (k, ch) in p.chains.iter().enumerate() {
                key[k].0 = ch.iter().map(|&s| rank[s]).min().unwrap_or(i64::MAX);
            }
        }
        // Chains in precedence order, by key among those ready.
        let mut waiting: Vec<usize> = vec![0; chains];
        for (s, pr) in p.preds.iter().enumerate() {
            for &q in pr {
                if p.chain_of[q] != p.chain_of[s] {
                    waiting[p.chain_of[s]] += 1;
                }
            }
        }
        let depot_chain = p.chain_of[p.c.depot];
        let mut done = vec![false; chains];
        done[depot_chain] = true;
        let mut order: Vec<usize> = p.chains[depot_chain].clone();
        let release = |k: usize, waiting: &mut Vec<usize>| {
            for &s in &p.chains[k] {
                for &q in &p.succs[s] {
                    if p.chain_of[q] != k {
                        waiting[p.chain_of[q]] -= 1;
                    }
                }
            }
        };
        release(depot_chain, &mut waiting);
        let mut st = self.state(order.clone());
        // The chain into the depot of a closed tour goes last, at once.
        if let Some(k) = p.closing_chain.filter(|&k| k != depot_chain) {
            order.extend_from_slice(&p.chains[k]);
            done[k] = true;
            release(k, &mut waiting);
            st = self.state(order);
        }
        let saved = self.weight;
        self.weight = WEIGHT_MAX;
        loop {
            let next = (0..chains)
                .filter(|&k| !done[k] && waiting[k] == 0)
                .min_by_key(|&k| key[k]);
            let Some(k) = next else {
                break;
            };
            done[k] = true;
            release(k, &mut waiting);
            let len = st.len();
            let lo = self.first_free(&st);
            let after = p.chains[k]
                .iter()
                .flat_map(|&s| p.preds[s].iter())
                .filter(|&&q| p.chain_of[q] != k && st.pos[q] != NONE)
                .map(|&q| st.pos[q])
                .max()
                .unwrap_or(0);
            let mut best: Option<(i128, Candidate)> = None;
            let last_place = if p.closing_chain.is_some() && p.c.route == Route::Closed {
                len - 1
            } else {
                len
            };
            for at in after.max(lo - 1)..last_place {
                if !self.cuttable(&st, at) {
                    continue;
                }
                let all = [
                    Piece::Fwd(0, at),
                    Piece::Chain(k),
                    Piece::Fwd(at + 1, len - 1),
                ];
                let pieces = &all[..if at + 1 < len { 3 } else { 2 }];
                let pen = p.chain_saving[k];
                let cand = Candidate::new(pieces, -pen);
                let value = self.score(&st, &cand).value(self.weight);
                if best.as_ref().is_none_or(|(b, _)| value < *b) {
                    best = Some((value, cand));
                }
            }
            if let Some((value, cand)) = best {
                // An optional chain goes in only when it is worth it and breaks nothing.
                let worth = p.chain_penalty[k].is_none() || value < st.score.value(self.weight);
                if worth {
                    self.apply(&mut st, &cand);
                }
            }
        }
        self.weight = saved;
        st
    }
}

/// The total amount by which an evaluation breaks what the search may break for a while; links
/// the search always keeps count at a large fixed amount.
pub(crate) fn breach_of(violations: &[Violation]) -> i64 {
    violations
        .iter()
        .map(|v| match *v {
            Violation::Late { by, .. }
            | Violation::MinLag { by, .. }
            | Violation::MaxLag { by, .. }
            | Violation::Rule { by, .. } => by.max(1),
            _ => 1 << 30,
        })
        .fold(0i64, i64::saturating_add)
}

/// One independent run of the search, as the loop owner steps it.
pub(crate) struct Run<'p, 'a, C: ?Sized, R: ?Sized> {
    search: Search<'p, 'a, C, R>,
    current: State,
    /// Best order that breaks nothing, and its objective.
    best: Option<(i64, Vec<usize>)>,
    /// Least-breaching order seen while none was feasible.
    fallback: (Score, Vec<usize>),
    since_better: u32,
}

impl<'p, 'a, C: Cost + ?Sized, R: StepRule + ?Sized> Run<'p, 'a, C, R> {
    /// Starts run `r`: builds its first order (from `hint` when given) and descends.
    pub fn start(
        p: &'p Problem<'a, C, R>,
        r: usize,
        hint: Option<&[usize]>,
        rng: &mut Pcg64,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Self {
        let mut search = Search::new(p);
        let mut current = search.construct(rng, r > 0 && hint.is_none(), hint);
        search.descend(&mut current, should_stop);
        search.adapt(&current);
        let mut run = Run {
            search,
            fallback: (current.score, current.order.clone()),
            current,
            best: None,
            since_better: 0,
        };
        run.note();
        run
    }

    /// Starts from an order given as is (it keeps the links).
    pub fn start_from(
        p: &'p Problem<'a, C, R>,
        order: Vec<usize>,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Self {
        let mut search = Search::new(p);
        let mut current = search.state(order);
        search.descend(&mut current, should_stop);
        search.adapt(&current);
        let mut run = Run {
            search,
            fallback: (current.score, current.order.clone()),
            current,
            best: None,
            since_better: 0,
        };
        run.note();
        run
    }

    /// Records the current order if it is the best so far. True when it is.
    fn note(&mut self) -> bool {
        let s = self.current.score;
        if s.breach == 0 {
            if self.best.as_ref().is_none_or(|(b, _)| s.objective < *b) {
                self.best = Some((s.objective, self.current.order.clone()));
                return true;
            }
        } else if self.best.is_none()
            && (s.breach, s.objective) < (self.fallback.0.breach, self.fallback.0.objective)
        {
            self.fallback = (s, self.current.order.clone());
        }
        false
    }
}

impl<C: Cost + ?Sized, R: StepRule + ?Sized> Iterative for Run<'_, '_, C, R> {
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        let (before, before_score) = (self.current.order.clone(), self.current.score);
        let kicks = rng.gen_range(1..=3);
        self.search.kick(&mut self.current, rng, kicks);
        self.search.descend(&mut self.current, should_stop);
        self.search.adapt(&self.current);
        if self.note() {
            self.since_better = 0;
        } else {
            self.since_better += 1;
            // Keep the kicked order only when it scores no worse; every so often go back to
            // the best feasible order.
            let w = self.search.weight;
            if self.current.score.value(w) > before_score.value(w) {
                self.current = self.search.state(before);
            }
            if self.since_better.is_multiple_of(64) {
                if let Some((_, order)) = &self.best {
                    self.current = self.search.state(order.clone());
                }
            }
        }
    }

    fn best_length(&self) -> i64 {
        self.best.as_ref().map_or(i64::MAX, |(v, _)| *v)
    }

    fn best_order(&self) -> Vec<usize> {
        match &self.best {
            Some((_, order)) => order.clone(),
            None => self.fallback.1.clone(),
        }
    }
}

#[cfg(test)]
mod tests {
    use crate::constraints::testing::random_instance;
    use crate::constraints::{Precedence, evaluate, solve_exact, solve_sequence};
    use crate::{MatrixCost, Settings, StopHandle};
    use rand::{Rng, SeedableRng};
    use rand_pcg::Pcg64;

    /// On small random instances (symmetric and asymmetric costs, windows, precedence, optional
    /// stops, fixed edges; with lags now and then, which take the full-schedule path): every
    /// move the search scores from summaries agrees with a full schedule of the moved order (the
    /// check runs inside the scorer in tests), the answer is never better than the exact
    /// programme's proven optimum, it is reported feasible exactly when the evaluator finds
    /// nothing broken, and it is feasible whenever the exact programme proves a feasible order
    /// exists (on all but a few cases).
    #[test]
    fn moves_agree_with_full_schedules_and_never_beat_the_optimum() {
        let mut rng = Pcg64::seed_from_u64(31);
        let (mut cases, mut feasible, mut found) = (0, 0, 0);
        for case in 0..300 {
            let n = rng.gen_range(2..=9);
            let (rows, mut c) = random_instance(&mut rng, n);
            let lags = rng.gen_bool(0.15) && n >= 3;
            if lags {
                let others: Vec<usize> = (0..n).filter(|&s| s != c.depot).collect();
                c.precedence.push(Precedence {
                    before: others[0],
                    after: others[1],
                    min_lag: Some(rng.gen_range(0..20)),
                    max_lag: Some(rng.gen_range(20..80)),
                });
            }
            if c.check(n).is_err() {
                continue;
            }
            cases += 1;
            let cost = MatrixCost::from_rows(&rows).unwrap();
            let settings = Settings {
                seed: case,
                threads: Some(1),
                runs: Some(2),
                iterations: Some(40),
                ..Default::default()
            };
            let out = solve_sequence(&cost, &c, &settings, None, Default::default()).unwrap();
            let e = evaluate(&cost, &c, &out.order);
            assert_eq!(out.feasible, e.feasible(), "case {case}");
            if lags {
                continue;
            }
            let exact = solve_exact(&cost, &c, &StopHandle::new(), None).unwrap();
            if let Some(best) = exact.objective {
                feasible += 1;
                if out.feasible {
                    found += 1;
                    assert!(out.evaluation.objective >= best, "case {case}");
                }
            } else {
                assert!(!out.feasible, "case {case}: feasible where none exists");
            }
        }
        assert!(cases >= 150, "{cases}");
        assert!(found * 100 >= feasible * 95, "{found} of {feasible}");
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]

        /// Every move the search scores from segment summaries (the in-test cross-check
        /// compares each with a full recomputation of the schedule: lateness, travel, penalty,
        /// completion time, links) on random windows, precedence, optional stops and fixed
        /// edges, symmetric and asymmetric costs, 2 to 29 stops; with one window per stop the
        /// search takes its table-driven path.
        #[test]
        fn every_scored_move_agrees_with_a_full_schedule(
            seed in proptest::prelude::any::<u64>(),
            n in 2usize..30,
            one_window in proptest::prelude::any::<bool>(),
        ) {
            let mut rng = Pcg64::seed_from_u64(seed);
            let (rows, mut c) = random_instance(&mut rng, n);
            if one_window {
                for w in &mut c.windows {
                    w.truncate(1);
                }
            }
            proptest::prop_assume!(c.check(n).is_ok());
            let cost = MatrixCost::from_rows(&rows).unwrap();
            let settings = Settings {
                seed,
                threads: Some(1),
                runs: Some(1),
                iterations: Some(30),
                ..Default::default()
            };
            let out = solve_sequence(&cost, &c, &settings, None, Default::default()).unwrap();
            proptest::prop_assert_eq!(out.feasible, evaluate(&cost, &c, &out.order).feasible());
        }
    }
}
