//! Lower bounds on the length of every tour: the 1-tree bound of Held and Karp (1970, 1971),
//! raised by subgradient optimisation of node penalties.
//!
//! # The bound
//!
//! A *1-tree* on nodes `0..n` is a spanning tree on the nodes other than a special node (here
//! node 0) plus two edges from the special node. Every tour is a 1-tree, so the cheapest 1-tree
//! costs no more than the shortest tour. Adding a penalty `pi[v]` to every edge at `v` adds
//! `2 * sum(pi)` to every tour (each node has degree two in a tour) but changes which 1-tree is
//! cheapest, so for every `pi`
//!
//! ```text
//! L(pi) = min over 1-trees T of  sum_{(i,j) in T} (c(i,j) + pi[i] + pi[j])  -  2 * sum(pi)
//! ```
//!
//! is a lower bound on every tour. [`held_karp_bound`] searches for penalties that make `L`
//! large; [`one_tree`] finds a cheapest 1-tree, optionally with edges that must be in it
//! ([`EdgeState::Forced`]) or must not ([`EdgeState::Forbidden`]), which the branch and bound of
//! [`crate::bounds::branch`] uses.
//!
//! # Exact arithmetic
//!
//! Inside the ascent every cost is multiplied by a power of two `SCALE` (1024, or less when the
//! costs are so large that the products would come near `i64::MAX`) and the penalties are
//! integers in units of `1 / SCALE`. The 1-tree's cost and `sum(pi)` are summed in `i128`, so
//! `L_scaled = SCALE * L(pi)` is computed without rounding, and the bound reported is
//! `ceil(L_scaled / SCALE)`: tour lengths are integers, so a tour no shorter than `L(pi)` is no
//! shorter than its ceiling. Floating point only proposes the next penalties; it never enters
//! the value reported. Penalties are kept within `2 * SCALE * max |c|` of zero, which no useful
//! penalty exceeds, so every modified cost fits in `i64`.
//!
//! # Step size
//!
//! The ascent moves the penalties along the subgradient `d[v] = degree(v) - 2` of the current
//! cheapest 1-tree (smoothed: the direction is `0.7 d + 0.3` times the previous direction), with
//! Polyak's step length
//!
//! ```text
//! t = lambda * (UB - L(pi)) / ||direction||^2,
//! ```
//!
//! where `UB` is the length of a tour: [`AscentOptions::upper_bound`] when given, otherwise a
//! tour built here by nearest neighbour (and 2-opt up to 2,000 nodes). `lambda` starts at 2 and
//! is halved, with the penalties reset to the best found so far, after `patience` iterations in
//! a row without a new best bound (`patience` = 30 + n / 10 iterations); the ascent ends when
//! `lambda` falls below 1e-4, when the bound reaches `UB`, when the cheapest 1-tree is a tour
//! (its length is then the optimum), or at the time or iteration limit. Measured on TSPLIB's
//! Euclidean instances, the ascent stops after about a thousand 1-trees below 200 nodes and two
//! to five thousand at 500 to 1,000 nodes (2 s for att532, 10 s for pr1002 on one core, where
//! a six-times longer run adds 0.02 % more); the bound is then within 1 % of the optimum except
//! on instances where the 1-tree bound itself is further away (pr76 2.8 %, kroA100 1.6 %).
//!
//! # Cost
//!
//! Each 1-tree is O(n^2): Prim's algorithm on the complete graph. Up to [`DENSE_LIMIT`] nodes the
//! costs are read once into a table; above it the oracle is asked for every pair in every
//! iteration. Limits are checked between 1-trees.
//!
//! # Tiny instances
//!
//! For `n <= 3` every tour has the same length and the bound is that length, as
//! [`crate::tour::closed_length`] defines it: 0 for no node or one, `c(0,1) + c(1,0)` for two.
//!
//! Asymmetric costs are refused ([`BoundError::Asymmetric`]): the 1-tree bound needs
//! `c(i,j) == c(j,i)`.

use crate::control::StopHandle;
use crate::cost::Cost;
use crate::tour::{Overflow, closed_length};
use std::time::{Duration, Instant};

/// Limits and hints for [`held_karp_bound`].
#[derive(Clone, Debug, Default)]
pub struct AscentOptions {
    /// Wall-clock limit of the ascent (the best bound so far is returned when it runs out).
    pub time_limit: Option<Duration>,
    /// Largest number of 1-trees to compute.
    pub max_iterations: Option<usize>,
    /// The length of a known tour. It sets the step length; without it a quick tour is built.
    /// The ascent stops once the bound reaches it, so it must be the length of a real tour for
    /// the bound to be tight (the bound stays valid whatever is given).
    pub upper_bound: Option<i64>,
}

/// The result of [`held_karp_bound`].
#[derive(Clone, Debug)]
pub struct Ascent {
    /// A lower bound on the length of every tour.
    pub lower_bound: i64,
    /// The penalties that gave it, in cost units (node 0, the special node, keeps 0).
    pub pi: Vec<f64>,
    /// Number of 1-trees computed.
    pub iterations: usize,
    /// True when the cheapest 1-tree under the best penalties is a tour: `lower_bound` is then
    /// the optimal tour length.
    pub tree_is_tour: bool,
    /// That tour, starting at node 0, when `tree_is_tour`.
    pub tour: Option<Vec<usize>>,
    /// Wall-clock seconds spent.
    pub seconds: f64,
}

/// Why no bound could be computed.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum BoundError {
    /// The 1-tree bound needs symmetric costs.
    #[error("the 1-tree bound needs symmetric costs; these costs are asymmetric")]
    Asymmetric,
    /// Costs so large that scaled costs plus penalties could overflow 64-bit integers.
    #[error("costs up to {max_cost} are too large for the bound's exact integer arithmetic")]
    CostsTooLarge {
        /// The largest absolute cost.
        max_cost: i64,
    },
    /// A tour's length does not fit in `i64`.
    #[error(transparent)]
    Overflow(#[from] Overflow),
    /// The starting tour given to the branch and bound is not a permutation of the nodes.
    #[error("the starting tour is not a tour of the instance: {0}")]
    InvalidTour(#[from] crate::tour::TourError),
    /// The deadline passed or the stop handle fired before the first 1-tree was computed.
    #[error("stopped before the first 1-tree was computed, so there is no bound yet")]
    Stopped,
    /// A table would pass the memory ceiling.
    #[error(transparent)]
    Memory(#[from] crate::memory::MemoryError),
}

/// What a 1-tree may do with one edge.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub(crate) enum EdgeState {
    /// The 1-tree may use the edge or not.
    #[default]
    Free,
    /// The 1-tree must contain the edge.
    Forced,
    /// The 1-tree must not contain the edge.
    Forbidden,
}

/// Forced and forbidden edges of a 1-tree over `n` nodes (symmetric: the state of `(i, j)` is
/// that of `(j, i)`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct EdgeRules {
    n: usize,
    state: Vec<EdgeState>,
}

impl EdgeRules {
    /// Every edge free.
    pub(crate) fn new(n: usize) -> Self {
        EdgeRules {
            n,
            state: vec![EdgeState::Free; n * n],
        }
    }

    /// Number of nodes.
    pub(crate) fn len(&self) -> usize {
        self.n
    }

    /// The state of edge `(i, j)`.
    #[inline]
    pub(crate) fn state(&self, i: usize, j: usize) -> EdgeState {
        self.state[i * self.n + j]
    }

    /// Sets the state of edge `(i, j)` (and of `(j, i)`). `i` must differ from `j`.
    pub(crate) fn set(&mut self, i: usize, j: usize, state: EdgeState) {
        debug_assert_ne!(i, j, "a 1-tree has no loops");
        self.state[i * self.n + j] = state;
        self.state[j * self.n + i] = state;
    }

    /// Requires edge `(i, j)`.
    pub(crate) fn force(&mut self, i: usize, j: usize) {
        self.set(i, j, EdgeState::Forced);
    }

    /// Excludes edge `(i, j)`.
    pub(crate) fn forbid(&mut self, i: usize, j: usize) {
        self.set(i, j, EdgeState::Forbidden);
    }
}

/// A cheapest 1-tree found by [`one_tree`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct OneTree {
    /// Sum of the weights of its edges, exactly.
    pub cost: i128,
    /// Degree of every node in it.
    pub degree: Vec<usize>,
    /// Its edges: the tree's `n - 2` edges, then the special node's two. For two nodes the
    /// single edge appears twice (the 1-tree is the tour there and back); no edges below two.
    pub edges: Vec<(usize, usize)>,
}

impl OneTree {
    /// True when the 1-tree is a Hamiltonian cycle (every degree is two; a 1-tree is
    /// connected, so it is then a single cycle through every node).
    pub(crate) fn is_tour(&self) -> bool {
        self.degree.iter().all(|&d| d == 2) && self.degree.len() >= 2
    }

    /// The cycle as a visiting order starting at node 0, when [`OneTree::is_tour`].
    pub(crate) fn tour(&self) -> Option<Vec<usize>> {
        let n = self.degree.len();
        if !self.is_tour() {
            return None;
        }
        if n == 2 {
            return Some(vec![0, 1]);
        }
        let mut adj = vec![[usize::MAX; 2]; n];
        for &(a, b) in &self.edges {
            for (x, y) in [(a, b), (b, a)] {
                if adj[x][0] == usize::MAX {
                    adj[x][0] = y;
                } else {
                    adj[x][1] = y;
                }
            }
        }
        let mut order = Vec::with_capacity(n);
        let (mut prev, mut v) = (usize::MAX, 0);
        for _ in 0..n {
            order.push(v);
            let next = if adj[v][0] != prev {
                adj[v][0]
            } else {
                adj[v][1]
            };
            prev = v;
            v = next;
        }
        Some(order)
    }
}

/// Largest node count for which the ascent keeps a dense cost matrix (32-bit entries when the
/// costs fit, so 64 MB at this size, 128 MB while it is filled), and only within the memory
/// ceiling ([`crate::memory`]); otherwise costs are asked of the oracle on the fly.
pub(crate) const DENSE_LIMIT: usize = 4000;

/// Largest node count for which [`held_karp_bound`] improves its own starting tour by 2-opt
/// (each pass looks at every pair of edges).
const QUICK_TWO_OPT_LIMIT: usize = 2000;

/// A cheapest 1-tree on nodes `0..n` with special node `special`, under edge weights
/// `weight(i, j)` (read for `i != j` only, and assumed symmetric), by Prim's algorithm on the
/// complete graph in O(n^2).
///
/// With `rules`, the 1-tree contains every forced edge and no forbidden one, and is the
/// cheapest such 1-tree; `None` when no 1-tree satisfies the rules (then no tour does either,
/// since every tour is a 1-tree). Forced edges are preferred to free ones and free ones to
/// forbidden ones before any weight is compared, so the weights may be any `i64`.
///
/// For `n == 2` the 1-tree is the edge between the two nodes taken twice, and for `n < 2` it is
/// empty, matching [`crate::tour::closed_length`].
#[cfg(test)]
pub fn one_tree<F: Fn(usize, usize) -> i64>(
    n: usize,
    special: usize,
    weight: F,
    rules: Option<&EdgeRules>,
) -> Option<OneTree> {
    assert!(
        n == 0 || special < n,
        "special node {special} outside 0..{n}"
    );
    if let Some(r) = rules {
        assert_eq!(r.len(), n, "rules for {} nodes, 1-tree of {n}", r.len());
    }
    if n < 2 {
        return Some(OneTree {
            cost: 0,
            degree: vec![0; n],
            edges: Vec::new(),
        });
    }
    let edges = match rules {
        None => prim(n, special, &weight, &|| false)?,
        Some(r) => {
            let key = |i: usize, j: usize| -> i128 {
                let class: i128 = match r.state(i, j) {
                    EdgeState::Forced => 0,
                    EdgeState::Free => 1,
                    EdgeState::Forbidden => 2,
                };
                (class << 64) + weight(i, j) as i128
            };
            prim(n, special, &key, &|| false)?
        }
    };
    let mut degree = vec![0usize; n];
    let mut cost: i128 = 0;
    for &(a, b) in &edges {
        degree[a] += 1;
        degree[b] += 1;
        cost += weight(a, b) as i128;
    }
    if let Some(r) = rules {
        // The tree minimises (forbidden edges - forced edges) before weight, so it satisfies
        // the rules whenever some 1-tree does.
        let mut forced_in = 0usize;
        for (k, &(a, b)) in edges.iter().enumerate() {
            match r.state(a, b) {
                EdgeState::Forbidden => return None,
                // For two nodes the one edge is listed twice; count it once.
                EdgeState::Forced if !(n == 2 && k == 1) => forced_in += 1,
                _ => {}
            }
        }
        let forced_total = (0..n)
            .flat_map(|i| (i + 1..n).map(move |j| (i, j)))
            .filter(|&(i, j)| r.state(i, j) == EdgeState::Forced)
            .count();
        if forced_in != forced_total {
            return None;
        }
    }
    Some(OneTree {
        cost,
        degree,
        edges,
    })
}

/// Prim's algorithm on the nodes other than `special`, then the two cheapest edges at
/// `special` (by `key`), for `n >= 2`; `None` if `halt` (polled every 256 nodes added) turns
/// true first.
fn prim<K: Ord + Copy, F: Fn(usize, usize) -> K>(
    n: usize,
    special: usize,
    key: &F,
    halt: &dyn Fn() -> bool,
) -> Option<Vec<(usize, usize)>> {
    let mut edges = Vec::with_capacity(n);
    let root = if special == 0 { 1 } else { 0 };
    if n == 2 {
        edges.push((special, root));
        edges.push((special, root));
        return Some(edges);
    }
    // The nodes not yet in the tree, with their cheapest known link to it, kept compact.
    let mut rest: Vec<usize> = (0..n).filter(|&v| v != special && v != root).collect();
    let mut link: Vec<K> = rest.iter().map(|&u| key(root, u)).collect();
    let mut from: Vec<usize> = vec![root; rest.len()];
    let mut at = 0;
    for k in 1..rest.len() {
        if link[k] < link[at] {
            at = k;
        }
    }
    while !rest.is_empty() {
        if rest.len().is_multiple_of(256) && halt() {
            return None;
        }
        let v = rest.swap_remove(at);
        link.swap_remove(at);
        edges.push((from.swap_remove(at), v));
        // Relax the links through `v` and find the next node in the same pass.
        at = 0;
        for k in 0..rest.len() {
            let c = key(v, rest[k]);
            if c < link[k] {
                link[k] = c;
                from[k] = v;
            }
            if link[k] < link[at] {
                at = k;
            }
        }
    }
    // The two cheapest edges at the special node.
    let mut first: Option<(K, usize)> = None;
    let mut second: Option<(K, usize)> = None;
    for v in (0..n).filter(|&v| v != special) {
        let k = key(special, v);
        if first.is_none_or(|(f, _)| k < f) {
            second = first;
            first = Some((k, v));
        } else if second.is_none_or(|(s, _)| k < s) {
            second = Some((k, v));
        }
    }
    for (_, v) in [first, second].into_iter().flatten() {
        edges.push((special, v));
    }
    Some(edges)
}

/// Ceiling of `a / b` for `b > 0`.
fn ceil_div(a: i128, b: i128) -> i128 {
    -((-a).div_euclid(b))
}

/// Costs as the ascent reads them: scaled by `scale`, from a dense table when it fits.
pub(crate) struct Scaled<'a, C: ?Sized> {
    cost: &'a C,
    n: usize,
    scale: i64,
    /// Largest absolute penalty, in scaled units.
    pi_cap: i64,
    dense: Dense,
    /// Ends a 1-tree or the quick tour midway (each is O(n^2): seconds on 100,000 nodes).
    stop: StopHandle,
    deadline: Option<Instant>,
}

enum Dense {
    None,
    Narrow(Vec<i32>),
    Wide(Vec<i64>),
}

/// What one ascent found.
pub(crate) struct Run {
    /// The best penalties, their scaled bound `SCALE * L(pi)` and the 1-tree there; `None`
    /// when no 1-tree satisfies the rules.
    pub best: Option<Best>,
    /// 1-trees computed.
    pub iterations: usize,
}

/// Scaled costs with forced and forbidden edges folded in; see [`Scaled::with_rules`].
pub(crate) struct RuledCosts {
    /// Edges of node `v`: `next[start[v]..start[v + 1]]`, as (neighbour, scaled cost).
    start: Vec<usize>,
    next: Vec<(u32, i64)>,
    /// Number of forced edges.
    forced: usize,
}

/// The best point of an ascent.
pub(crate) struct Best {
    /// `SCALE * L(pi)`, exactly.
    pub value: i128,
    /// Penalties in scaled units.
    pub pi: Vec<i64>,
    /// The cheapest 1-tree under them.
    pub tree: OneTree,
}

/// The step-size schedule of one ascent.
#[derive(Clone, Debug)]
pub(crate) struct AscentPlan {
    /// Initial step factor.
    pub lambda: f64,
    /// Non-improving iterations before the factor halves.
    pub patience: usize,
    /// The ascent stops when the factor falls below this.
    pub lambda_min: f64,
    /// Largest number of 1-trees.
    pub max_iterations: usize,
    /// Wall-clock deadline.
    pub deadline: Option<Instant>,
}

impl<'a, C: Cost + ?Sized> Scaled<'a, C> {
    /// Reads the costs (into a table when `n <= DENSE_LIMIT`) and picks the scale.
    pub(crate) fn new(cost: &'a C) -> Result<Self, BoundError> {
        let n = cost.len();
        let mut max_abs: i64 = 0;
        // The table (8 bytes an entry while it is filled) only when it fits the memory
        // ceiling; otherwise costs are read from the oracle each time, which is slower only.
        let table_fits = crate::memory::square(n, 8) <= crate::memory::ceiling();
        let dense = if n <= DENSE_LIMIT && table_fits {
            let mut wide = vec![0i64; n * n];
            for i in 0..n {
                for j in 0..n {
                    if i != j {
                        let c = cost.cost(i, j);
                        max_abs = max_abs.max(c.checked_abs().unwrap_or(i64::MAX));
                        wide[i * n + j] = c;
                    }
                }
            }
            if max_abs <= i32::MAX as i64 {
                Dense::Narrow(wide.into_iter().map(|c| c as i32).collect())
            } else {
                Dense::Wide(wide)
            }
        } else {
            max_abs = match cost.max_cost_hint() {
                Some(hint) => hint.checked_abs().unwrap_or(i64::MAX),
                None => {
                    let mut m: i64 = 0;
                    for i in 0..n {
                        for j in i + 1..n {
                            m = m.max(cost.cost(i, j).checked_abs().unwrap_or(i64::MAX));
                        }
                    }
                    m
                }
            };
            Dense::None
        };
        // Modified costs are at most 5 * scale * max_abs in size (cost plus two penalties of
        // at most twice the scaled largest cost); keep them below 2^58, so that the offsets of
        // forced and forbidden edges (2^60, see `with_rules`) dominate them.
        const ROOM: i64 = 1 << 55;
        let mut scale: i64 = 1024;
        while scale > 1 && max_abs > ROOM / scale {
            scale /= 2;
        }
        if max_abs > ROOM / scale {
            return Err(BoundError::CostsTooLarge { max_cost: max_abs });
        }
        Ok(Scaled {
            cost,
            n,
            scale,
            pi_cap: 2 * scale * max_abs.max(1),
            dense,
            stop: StopHandle::new(),
            deadline: None,
        })
    }

    /// Lets `stop` and `deadline` end a 1-tree or the quick tour midway.
    pub(crate) fn interruptible(mut self, stop: &StopHandle, deadline: Option<Instant>) -> Self {
        self.stop = stop.clone();
        self.deadline = deadline;
        self
    }

    fn halted(&self) -> bool {
        self.stop.is_stopped() || self.deadline.is_some_and(|d| Instant::now() >= d)
    }

    /// The scale factor of costs and penalties.
    pub(crate) fn scale(&self) -> i64 {
        self.scale
    }

    /// Number of nodes.
    pub(crate) fn len(&self) -> usize {
        self.n
    }

    /// The unscaled cost of edge `(i, j)`.
    #[inline]
    pub(crate) fn cost(&self, i: usize, j: usize) -> i64 {
        match &self.dense {
            Dense::None => self.cost.cost(i, j),
            Dense::Narrow(m) => m[i * self.n + j] as i64,
            Dense::Wide(m) => m[i * self.n + j],
        }
    }

    /// The cheapest 1-tree under scaled costs plus the penalties `pi` (scaled units), without
    /// rules.
    /// `None` when the stop handle or the deadline ended it midway.
    pub(crate) fn tree(&self, pi: &[i64]) -> Option<OneTree> {
        let (n, s) = (self.n, self.scale);
        let halt = || self.halted();
        let edges = match &self.dense {
            Dense::None => prim(
                n,
                0,
                &|i, j| s * self.cost.cost(i, j) + pi[i] + pi[j],
                &halt,
            ),
            Dense::Narrow(m) => prim(n, 0, &|i, j| s * m[i * n + j] as i64 + pi[i] + pi[j], &halt),
            Dense::Wide(m) => prim(n, 0, &|i, j| s * m[i * n + j] + pi[i] + pi[j], &halt),
        }?;
        Some(self.finish_tree(edges, pi))
    }

    /// Degrees and exact cost of a 1-tree given by its edges.
    fn finish_tree(&self, edges: Vec<(usize, usize)>, pi: &[i64]) -> OneTree {
        let mut degree = vec![0usize; self.n];
        let mut cost: i128 = 0;
        for &(a, b) in &edges {
            degree[a] += 1;
            degree[b] += 1;
            cost += (self.scale * self.cost(a, b) + pi[a] + pi[b]) as i128;
        }
        OneTree {
            cost,
            degree,
            edges,
        }
    }

    /// The edges `rules` allow, as adjacency lists with scaled costs, forced edges `2^60`
    /// cheaper. Modified costs stay below `2^58` in size (see [`Scaled::new`]), so every forced
    /// edge is cheaper than every free one whatever the penalties.
    pub(crate) fn with_rules(&self, rules: &EdgeRules) -> RuledCosts {
        const BIG: i64 = 1 << 60;
        let n = self.n;
        let mut start = Vec::with_capacity(n + 1);
        let mut next = Vec::new();
        let mut forced = 0usize;
        start.push(0);
        for i in 0..n {
            for j in 0..n {
                if i == j {
                    continue;
                }
                let offset = match rules.state(i, j) {
                    EdgeState::Free => 0,
                    EdgeState::Forced => {
                        forced += usize::from(i < j);
                        -BIG
                    }
                    EdgeState::Forbidden => continue,
                };
                next.push((j as u32, self.scale * self.cost(i, j) + offset));
            }
            start.push(next.len());
        }
        RuledCosts {
            start,
            next,
            forced,
        }
    }

    /// The cheapest 1-tree under `rules` (folded into `ruled` by [`Scaled::with_rules`]) and
    /// the penalties `pi`, by Prim's algorithm over the allowed edges (each extraction scans
    /// the nodes left, each allowed edge is relaxed once); `None` when no 1-tree satisfies the
    /// rules.
    pub(crate) fn ruled_tree(
        &self,
        ruled: &RuledCosts,
        rules: &EdgeRules,
        pi: &[i64],
    ) -> Option<OneTree> {
        let n = self.n;
        let adj = |v: usize| &ruled.next[ruled.start[v]..ruled.start[v + 1]];
        let mut edges = Vec::with_capacity(n);
        // The nodes not yet in the tree (all but 0 and the root 1), kept compact with their
        // cheapest known link to the tree; `pos[u]` is the slot of `u`, `usize::MAX` once in.
        let mut rest: Vec<usize> = (2..n).collect();
        let mut link: Vec<i64> = vec![i64::MAX; rest.len()];
        let mut from: Vec<usize> = vec![usize::MAX; rest.len()];
        let mut pos: Vec<usize> = vec![usize::MAX; n];
        for (k, &u) in rest.iter().enumerate() {
            pos[u] = k;
        }
        let mut v = 1;
        loop {
            for &(u, c) in adj(v) {
                let k = pos[u as usize];
                if k != usize::MAX {
                    let key = c + pi[v] + pi[u as usize];
                    if key < link[k] {
                        link[k] = key;
                        from[k] = v;
                    }
                }
            }
            if rest.is_empty() {
                break;
            }
            let (mut at, mut low) = (0, link[0]);
            for (k, &l) in link.iter().enumerate().skip(1) {
                if l < low {
                    at = k;
                    low = l;
                }
            }
            if from[at] == usize::MAX {
                // The allowed edges do not connect the nodes other than 0.
                return None;
            }
            v = rest.swap_remove(at);
            link.swap_remove(at);
            edges.push((from.swap_remove(at), v));
            pos[v] = usize::MAX;
            if at < rest.len() {
                pos[rest[at]] = at;
            }
        }
        // The two cheapest allowed edges at node 0.
        let mut first: Option<(i64, usize)> = None;
        let mut second: Option<(i64, usize)> = None;
        for &(u, c) in adj(0) {
            let u = u as usize;
            let k = c + pi[0] + pi[u];
            if first.is_none_or(|(f, _)| k < f) {
                second = first;
                first = Some((k, u));
            } else if second.is_none_or(|(s, _)| k < s) {
                second = Some((k, u));
            }
        }
        let (Some((_, a)), Some((_, b))) = (first, second) else {
            return None;
        };
        edges.push((0, a));
        edges.push((0, b));
        // Forced edges come before free ones, so the tree holds every forced edge unless they
        // close a cycle or three meet at node 0: then no 1-tree satisfies the rules.
        let forced_in = edges
            .iter()
            .filter(|&&(a, b)| rules.state(a, b) == EdgeState::Forced)
            .count();
        if forced_in != ruled.forced {
            return None;
        }
        Some(self.finish_tree(edges, pi))
    }

    /// `SCALE * L(pi)` of a 1-tree computed under `pi`.
    pub(crate) fn value(&self, tree: &OneTree, pi: &[i64]) -> i128 {
        tree.cost - 2 * pi.iter().map(|&p| p as i128).sum::<i128>()
    }

    /// The bound in cost units: `ceil(value / SCALE)`, saturated into `i64`.
    pub(crate) fn bound(&self, value: i128) -> i64 {
        ceil_div(value, self.scale as i128).clamp(i64::MIN as i128, i64::MAX as i128) as i64
    }

    /// Penalties in cost units.
    pub(crate) fn unscaled(&self, pi: &[i64]) -> Vec<f64> {
        pi.iter().map(|&p| p as f64 / self.scale as f64).collect()
    }

    /// Subgradient ascent from penalties `start` (scaled units) under `rules`, with the step
    /// length set by `upper` (the length of a tour). Stops early once the bound reaches `upper`
    /// or the 1-tree is a tour.
    pub(crate) fn ascend(
        &self,
        rules: Option<&EdgeRules>,
        start: &[f64],
        upper: i64,
        plan: &AscentPlan,
        stop: &StopHandle,
    ) -> Run {
        let n = self.n;
        let scale = self.scale as f64;
        let cap = self.pi_cap as f64;
        let upper_scaled = upper as f64 * scale;
        let mut pi_f: Vec<f64> = start.to_vec();
        let mut pi: Vec<i64> = vec![0; n];
        let mut dir = vec![0.0f64; n];
        let ruled = rules.map(|r| (self.with_rules(r), r));
        let mut lambda = plan.lambda;
        let mut since_best = 0usize;
        let mut best: Option<Best> = None;
        let mut iterations = 0usize;
        while iterations < plan.max_iterations.max(1) {
            if iterations > 0
                && (stop.is_stopped() || plan.deadline.is_some_and(|d| Instant::now() >= d))
            {
                break;
            }
            for (p, &f) in pi.iter_mut().zip(&pi_f) {
                *p = f.clamp(-cap, cap).round() as i64;
            }
            iterations += 1;
            let tree = match &ruled {
                None => match self.tree(&pi) {
                    Some(t) => Some(t),
                    // Stopped midway: the best 1-tree so far stands.
                    None => break,
                },
                Some((costs, r)) => self.ruled_tree(costs, r, &pi),
            };
            let Some(tree) = tree else {
                return Run {
                    best: None,
                    iterations,
                };
            };
            let value = self.value(&tree, &pi);
            let improved = best.as_ref().is_none_or(|b| value > b.value);
            let mut norm2 = 0.0;
            for (v, d) in dir.iter_mut().enumerate() {
                let g = tree.degree[v] as f64 - 2.0;
                *d = 0.7 * g + 0.3 * *d;
                norm2 += *d * *d;
            }
            if improved {
                best = Some(Best {
                    value,
                    pi: pi.clone(),
                    tree,
                });
                since_best = 0;
            } else {
                since_best += 1;
            }
            let reached = best
                .as_ref()
                .is_some_and(|b| self.bound(b.value) >= upper || b.tree.is_tour());
            if reached || norm2 == 0.0 {
                break;
            }
            let gap = (upper_scaled - value as f64).max(scale);
            let t = lambda * gap / norm2;
            for (p, &d) in pi_f.iter_mut().zip(&dir) {
                *p += t * d;
            }
            if since_best >= plan.patience {
                lambda /= 2.0;
                since_best = 0;
                if let Some(b) = &best {
                    for (f, &p) in pi_f.iter_mut().zip(&b.pi) {
                        *f = p as f64;
                    }
                    dir.iter_mut().for_each(|d| *d = 0.0);
                }
                if lambda < plan.lambda_min {
                    break;
                }
            }
        }
        Run { best, iterations }
    }

    /// A quick tour (nearest neighbour, then 2-opt while it helps and time allows).
    pub(crate) fn quick_tour(&self, deadline: Option<Instant>) -> Vec<usize> {
        let n = self.n;
        if n == 0 {
            return Vec::new();
        }
        let mut used = vec![false; n];
        let mut order = Vec::with_capacity(n);
        let mut v = 0;
        used[0] = true;
        order.push(0);
        for step in 1..n {
            if step.is_multiple_of(64) && self.halted() {
                // Stopped: the rest in index order, still a tour.
                order.extend((0..n).filter(|&u| !used[u]));
                return order;
            }
            let mut next = usize::MAX;
            let mut best = i64::MAX;
            for (u, &taken) in used.iter().enumerate() {
                if !taken && (next == usize::MAX || self.cost(v, u) < best) {
                    best = self.cost(v, u);
                    next = u;
                }
            }
            used[next] = true;
            order.push(next);
            v = next;
        }
        if !(5..=QUICK_TWO_OPT_LIMIT).contains(&n) {
            return order;
        }
        // First-improvement 2-opt over all pairs: reverse order[i+1..=j] when
        // c(a,b) + c(c,d) > c(a,c) + c(b,d) for a = order[i], b = order[i+1], c = order[j],
        // d = order[j+1].
        let mut improved = true;
        while improved {
            improved = false;
            if deadline.is_some_and(|d| Instant::now() >= d) {
                break;
            }
            for i in 0..n - 2 {
                if i % 64 == 0 && deadline.is_some_and(|d| Instant::now() >= d) {
                    return order;
                }
                for j in i + 2..n - (i == 0) as usize {
                    let (a, b) = (order[i], order[i + 1]);
                    let (c, d) = (order[j], order[(j + 1) % n]);
                    let delta = self.cost(a, c) as i128 + self.cost(b, d) as i128
                        - self.cost(a, b) as i128
                        - self.cost(c, d) as i128;
                    if delta < 0 {
                        order[i + 1..=j].reverse();
                        improved = true;
                    }
                }
            }
        }
        order
    }
}

/// The ascent's default schedule for `n` nodes; see the module documentation.
pub(crate) fn root_plan(n: usize, opts: &AscentOptions, began: Instant) -> AscentPlan {
    AscentPlan {
        lambda: 2.0,
        patience: 30 + n / 10,
        lambda_min: 1e-4,
        max_iterations: opts.max_iterations.unwrap_or(usize::MAX),
        deadline: opts.time_limit.and_then(|l| began.checked_add(l)),
    }
}

/// The Held–Karp 1-tree lower bound of a symmetric instance, raised by subgradient
/// optimisation of node penalties (see the module documentation for the step size and the
/// exact arithmetic). The result is a lower bound on every tour whatever the limits; longer
/// ascents make it tighter.
///
/// ```
/// use wend::{held_karp_bound, AscentOptions, CoordCost, Metric, StopHandle};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// let ascent = held_karp_bound(&square, &AscentOptions::default(), &StopHandle::new()).unwrap();
/// assert_eq!(ascent.lower_bound, 40); // the rim of the square is its cheapest 1-tree
/// assert!(ascent.tree_is_tour);
/// ```
pub fn held_karp_bound<C: Cost + ?Sized>(
    cost: &C,
    opts: &AscentOptions,
    stop: &StopHandle,
) -> Result<Ascent, BoundError> {
    held_karp_bound_dyn(cost.as_dyn_cost(), opts, stop)
}

/// [`held_karp_bound`], compiled here once, on any cost.
fn held_karp_bound_dyn(
    cost: &dyn Cost,
    opts: &AscentOptions,
    stop: &StopHandle,
) -> Result<Ascent, BoundError> {
    let began = Instant::now();
    let n = cost.len();
    if !cost.is_symmetric() {
        return Err(BoundError::Asymmetric);
    }
    if n <= 3 {
        let order: Vec<usize> = (0..n).collect();
        let length = closed_length(cost, &order)?;
        return Ok(Ascent {
            lower_bound: length,
            pi: vec![0.0; n],
            iterations: 0,
            tree_is_tour: true,
            tour: Some(order),
            seconds: began.elapsed().as_secs_f64(),
        });
    }
    let plan = root_plan(n, opts, began);
    let scaled = Scaled::new(cost)?.interruptible(stop, plan.deadline);
    let upper = match opts.upper_bound {
        Some(u) => u,
        None => {
            let tour = scaled.quick_tour(plan.deadline);
            closed_length(cost, &tour)?
        }
    };
    let run = scaled.ascend(None, &vec![0.0; n], upper, &plan, stop);
    // Without rules every complete graph has a 1-tree: none means the search never began.
    let best = run.best.ok_or(BoundError::Stopped)?;
    let tour = best.tree.tour();
    Ok(Ascent {
        lower_bound: scaled.bound(best.value),
        pi: scaled.unscaled(&best.pi),
        iterations: run.iterations,
        tree_is_tour: tour.is_some(),
        tour,
        seconds: began.elapsed().as_secs_f64(),
    })
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::cost::{FnCost, MatrixCost};
    use proptest::prelude::*;

    /// The shortest tour by trying every order with node 0 first, written here independently
    /// of the code under test.
    pub(crate) fn brute_force_optimum(m: &[Vec<i64>]) -> i64 {
        let n = m.len();
        if n <= 1 {
            return 0;
        }
        let mut rest: Vec<usize> = (1..n).collect();
        let mut best = i64::MAX;
        // Heap's algorithm over the orders of `rest`.
        fn visit(k: usize, rest: &mut Vec<usize>, m: &[Vec<i64>], best: &mut i64) {
            if k == 1 {
                let mut len = m[0][rest[0]] + m[rest[rest.len() - 1]][0];
                for w in rest.windows(2) {
                    len += m[w[0]][w[1]];
                }
                *best = (*best).min(len);
                return;
            }
            for i in 0..k {
                visit(k - 1, rest, m, best);
                if k & 1 == 0 {
                    rest.swap(i, k - 1);
                } else {
                    rest.swap(0, k - 1);
                }
            }
        }
        let k = rest.len();
        visit(k, &mut rest, m, &mut best);
        best
    }

    /// The cheapest 1-tree with special node 0 satisfying `rules`, by trying every set of
    /// n - 2 edges on the nodes 1..n (kept when they form a spanning tree, checked by
    /// union-find) with every pair of edges at node 0; `None` when no 1-tree satisfies them.
    fn brute_force_one_tree(m: &[Vec<i64>], rules: &EdgeRules) -> Option<i64> {
        let n = m.len();
        let inner: Vec<(usize, usize)> = (1..n)
            .flat_map(|i| (i + 1..n).map(move |j| (i, j)))
            .collect();
        let ok = |(a, b): (usize, usize), chosen: bool| match rules.state(a, b) {
            EdgeState::Forced => chosen,
            EdgeState::Forbidden => !chosen,
            EdgeState::Free => true,
        };
        let mut best: Option<i64> = None;
        for mask in 0u32..(1 << inner.len()) {
            if mask.count_ones() as usize != n - 2 {
                continue;
            }
            let mut root: Vec<usize> = (0..n).collect();
            fn find(r: &mut [usize], mut x: usize) -> usize {
                while r[x] != x {
                    x = r[x];
                }
                x
            }
            let mut tree = true;
            let mut cost = 0;
            for (k, &(a, b)) in inner.iter().enumerate() {
                let chosen = mask >> k & 1 == 1;
                if !ok((a, b), chosen) {
                    tree = false;
                    break;
                }
                if chosen {
                    let (ra, rb) = (find(&mut root, a), find(&mut root, b));
                    if ra == rb {
                        tree = false;
                        break;
                    }
                    root[ra] = rb;
                    cost += m[a][b];
                }
            }
            if !tree {
                continue;
            }
            for x in 1..n {
                for y in x + 1..n {
                    let fits = (1..n).all(|j| ok((0, j), j == x || j == y));
                    if fits {
                        let total = cost + m[0][x] + m[0][y];
                        best = Some(best.map_or(total, |b| b.min(total)));
                    }
                }
            }
        }
        best
    }

    #[allow(clippy::needless_range_loop)]
    pub(crate) fn matrix(n: usize, entries: &[i64]) -> Vec<Vec<i64>> {
        // Fills the upper triangle row by row from `entries`, mirrored.
        let mut m = vec![vec![0; n]; n];
        let mut k = 0;
        for i in 0..n {
            for j in i + 1..n {
                m[i][j] = entries[k % entries.len()];
                m[j][i] = m[i][j];
                k += 1;
            }
        }
        m
    }

    // A five-node instance checked by hand:
    //
    //        0  1  2  3  4
    //    0   -  3  4  2  7
    //    1   3  -  4  6  3
    //    2   4  4  -  5  8
    //    3   2  6  5  -  6
    //    4   7  3  8  6  -
    //
    // Without penalties, the minimum spanning tree on {1, 2, 3, 4} (Kruskal: 1-4 of 3, 1-2 of 4,
    // 2-3 of 5) costs 12 and the two cheapest edges at 0 (0-3 of 2, 0-1 of 3) cost 5: the minimum
    // 1-tree costs 17, with degrees 2, 3, 2, 2, 1. Of the 12 tours, written out by hand, the
    // shortest is 0-2-1-4-3-0 = 4 + 4 + 3 + 6 + 2 = 19. With penalties pi = (0, 1, 0, 0, -1) the
    // tree on {1, 2, 3, 4} becomes 1-4 (3), 1-2 (5), 2-3 (5) = 13, the edges at 0 cost 2 + 4, and
    // 2 * sum(pi) = 0, so L(pi) = 19: the Held-Karp bound is the optimum, 19.
    fn hand_instance() -> Vec<Vec<i64>> {
        vec![
            vec![0, 3, 4, 2, 7],
            vec![3, 0, 4, 6, 3],
            vec![4, 4, 0, 5, 8],
            vec![2, 6, 5, 0, 6],
            vec![7, 3, 8, 6, 0],
        ]
    }

    #[test]
    fn minimum_one_tree_of_the_hand_instance() {
        let m = hand_instance();
        let t = one_tree(5, 0, |i, j| m[i][j], None).unwrap();
        assert_eq!(t.cost, 17); // by hand, above
        assert_eq!(t.degree, vec![2, 3, 2, 2, 1]); // by hand, above
        assert_eq!(t.edges.len(), 5);
        assert!(!t.is_tour());
        let pi = [0, 1, 0, 0, -1];
        let t = one_tree(5, 0, |i, j| m[i][j] + pi[i] + pi[j], None).unwrap();
        assert_eq!(t.cost, 19); // by hand, above
    }

    #[test]
    fn bound_of_the_hand_instance_is_its_optimum() {
        let m = MatrixCost::from_rows(&hand_instance()).unwrap();
        let a = held_karp_bound(&m, &AscentOptions::default(), &StopHandle::new()).unwrap();
        assert_eq!(a.lower_bound, 19); // by hand, above
        assert_eq!(a.pi.len(), 5);
        assert!(
            a.iterations >= 2,
            "the 1-tree without penalties is not a tour"
        );
    }

    #[test]
    fn a_tree_that_is_a_tour_proves_optimality() {
        // Six points on a circle, costs the round distances along it (1 per step): the 1-tree
        // without penalties is the ring itself, of length 6.
        let c = FnCost::new(6, true, |i: usize, j: usize| {
            let d = i.abs_diff(j);
            d.min(6 - d) as i64
        });
        let a = held_karp_bound(&c, &AscentOptions::default(), &StopHandle::new()).unwrap();
        assert!(a.tree_is_tour);
        assert_eq!(a.lower_bound, 6); // six unit steps round the ring
        let tour = a.tour.unwrap();
        let mut sorted = tour.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..6).collect::<Vec<_>>());
        assert_eq!(closed_length(&c, &tour).unwrap(), 6);
    }

    #[test]
    fn tiny_instances_match_closed_length() {
        let stop = StopHandle::new();
        let opts = AscentOptions::default();
        let empty = MatrixCost::from_rows(&[]).unwrap();
        assert_eq!(
            held_karp_bound(&empty, &opts, &stop).unwrap().lower_bound,
            0
        );
        let one = MatrixCost::from_rows(&[vec![0]]).unwrap();
        assert_eq!(held_karp_bound(&one, &opts, &stop).unwrap().lower_bound, 0);
        // Two nodes: there and back, 7 + 7 (closed_length's definition).
        let two = MatrixCost::from_rows(&[vec![0, 7], vec![7, 0]]).unwrap();
        assert_eq!(held_karp_bound(&two, &opts, &stop).unwrap().lower_bound, 14);
        // Three nodes: the only tour, 2 + 3 + 4.
        let three = MatrixCost::from_rows(&[vec![0, 2, 4], vec![2, 0, 3], vec![4, 3, 0]]).unwrap();
        let a = held_karp_bound(&three, &opts, &stop).unwrap();
        assert_eq!(a.lower_bound, 9);
        assert!(a.tree_is_tour);
        // The 1-tree of two nodes is the edge twice.
        let t = one_tree(2, 0, |_, _| 7, None).unwrap();
        assert_eq!((t.cost, t.degree.clone()), (14, vec![2, 2]));
        assert_eq!(t.tour(), Some(vec![0, 1]));
    }

    #[test]
    fn asymmetric_costs_are_refused() {
        let m = MatrixCost::from_rows(&[vec![0, 1, 2], vec![5, 0, 1], vec![1, 1, 0]]).unwrap();
        let e = held_karp_bound(&m, &AscentOptions::default(), &StopHandle::new()).unwrap_err();
        assert_eq!(e, BoundError::Asymmetric);
    }

    #[test]
    fn huge_costs_are_refused_not_overflowed() {
        let c = FnCost::new(
            5,
            true,
            |i: usize, j: usize| {
                if i == j { 0 } else { i64::MAX / 4 }
            },
        );
        let e = held_karp_bound(&c, &AscentOptions::default(), &StopHandle::new()).unwrap_err();
        assert!(matches!(e, BoundError::CostsTooLarge { .. }));
    }

    #[test]
    fn limits_are_honoured() {
        let m = matrix(30, &[17, 4, 93, 28, 61, 5, 77, 40, 12, 88, 33]);
        let m = MatrixCost::from_rows(&m).unwrap();
        let opts = AscentOptions {
            max_iterations: Some(3),
            upper_bound: Some(i64::MAX / 2),
            ..Default::default()
        };
        let a = held_karp_bound(&m, &opts, &StopHandle::new()).unwrap();
        assert!(a.iterations <= 3);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(200))]

        // The bound never exceeds the optimum (brute force over every order), and it is at
        // least the minimum 1-tree without penalties (brute force over every 1-tree), which
        // the ascent starts from.
        #[test]
        fn bound_is_below_the_optimum(n in 4usize..=8, entries in proptest::collection::vec(-20i64..1000, 28)) {
            let m = matrix(n, &entries);
            let optimum = brute_force_optimum(&m);
            let tree = brute_force_one_tree(&m, &EdgeRules::new(n)).unwrap();
            let c = MatrixCost::from_rows(&m).unwrap();
            let a = held_karp_bound(&c, &AscentOptions::default(), &StopHandle::new()).unwrap();
            prop_assert!(a.lower_bound <= optimum, "bound {} above optimum {optimum}", a.lower_bound);
            prop_assert!(a.lower_bound >= tree, "bound {} below the plain 1-tree {tree}", a.lower_bound);
            if a.tree_is_tour {
                prop_assert_eq!(a.lower_bound, optimum);
                prop_assert_eq!(closed_length(&c, a.tour.as_ref().unwrap()).unwrap(), optimum);
            }
            // A good upper bound changes the steps, never the validity.
            let opts = AscentOptions { upper_bound: Some(optimum), ..Default::default() };
            let b = held_karp_bound(&c, &opts, &StopHandle::new()).unwrap();
            prop_assert!(b.lower_bound <= optimum);
        }

        // With forced and forbidden edges the 1-tree contains every forced edge and no
        // forbidden one, and costs what the cheapest such 1-tree costs by brute force (or
        // there is none, by both accounts).
        #[test]
        fn one_tree_respects_forced_and_forbidden_edges(
            n in 3usize..=6,
            entries in proptest::collection::vec(-5i64..50, 15),
            marks in proptest::collection::vec(0u8..8, 15),
        ) {
            let m = matrix(n, &entries);
            let mut rules = EdgeRules::new(n);
            let mut k = 0;
            for i in 0..n {
                for j in i + 1..n {
                    match marks[k] {
                        0 => rules.force(i, j),
                        1 | 2 => rules.forbid(i, j),
                        _ => {}
                    }
                    k += 1;
                }
            }
            let expected = brute_force_one_tree(&m, &rules);
            let got = one_tree(n, 0, |i, j| m[i][j], Some(&rules));
            prop_assert_eq!(got.as_ref().map(|t| t.cost as i64), expected);
            if let Some(t) = got {
                let has = |a: usize, b: usize| t.edges.iter().any(|&(x, y)| (x, y) == (a, b) || (x, y) == (b, a));
                for i in 0..n {
                    for j in i + 1..n {
                        match rules.state(i, j) {
                            EdgeState::Forced => prop_assert!(has(i, j), "forced edge {i}-{j} missing"),
                            EdgeState::Forbidden => prop_assert!(!has(i, j), "forbidden edge {i}-{j} used"),
                            EdgeState::Free => {}
                        }
                    }
                }
                let degree_sum: usize = t.degree.iter().sum();
                prop_assert_eq!(degree_sum, 2 * n);
                prop_assert_eq!(t.degree[0], 2);
            }
        }

        // The branch and bound's own 1-tree under rules (Prim over the allowed edges, with
        // costs scaled and penalties added) agrees with the brute force too.
        #[test]
        fn scaled_one_tree_under_rules_matches_brute_force(
            n in 3usize..=6,
            entries in proptest::collection::vec(-5i64..50, 15),
            marks in proptest::collection::vec(0u8..8, 15),
            penalties in proptest::collection::vec(-20i64..20, 6),
        ) {
            let plain = matrix(n, &entries);
            let mut rules = EdgeRules::new(n);
            let mut k = 0;
            for i in 0..n {
                for j in i + 1..n {
                    match marks[k] {
                        0 => rules.force(i, j),
                        1 | 2 => rules.forbid(i, j),
                        _ => {}
                    }
                    k += 1;
                }
            }
            let mut modified = plain.clone();
            for (i, row) in modified.iter_mut().enumerate() {
                for (j, c) in row.iter_mut().enumerate() {
                    if i != j {
                        *c += penalties[i] + penalties[j];
                    }
                }
            }
            let expected = brute_force_one_tree(&modified, &rules);
            let c = MatrixCost::from_rows(&plain).unwrap();
            let scaled = Scaled::new(&c).unwrap();
            let s = scaled.scale();
            let pi: Vec<i64> = penalties[..n].iter().map(|&p| p * s).collect();
            let ruled = scaled.with_rules(&rules);
            let got = scaled.ruled_tree(&ruled, &rules, &pi);
            prop_assert_eq!(got.as_ref().map(|t| t.cost), expected.map(|e| e as i128 * s as i128));
            if let Some(t) = got {
                for &(a, b) in &t.edges {
                    prop_assert!(rules.state(a, b) != EdgeState::Forbidden);
                }
            }
        }
    }
}
