//! Proofs of optimality: branch and bound on the 1-tree bound of [`crate::bounds::ascent`], with the
//! branching rule of Volgenant and Jonker (1982).
//!
//! # Subproblems
//!
//! A subproblem is the set of tours containing some forced edges and none of some forbidden
//! ones. Before its bound is computed, the rules are closed under what every tour obeys: a node
//! with two forced edges loses its other edges, a node with only two edges left has them
//! forced, more than two forced edges at a node or fewer than two left make the subproblem
//! empty, and the edge joining the two ends of a path of forced edges is forbidden unless the
//! path covers every node (a cycle of forced edges through fewer than all the nodes makes it
//! empty).
//!
//! Its bound is a short subgradient ascent of the 1-tree under the rules (the cheapest 1-tree
//! with every forced edge and no forbidden one, as [`crate::bounds::one_tree`] defines it, found
//! by Prim's algorithm over the allowed edges), warm-started from the penalties of its parent:
//! the step rule of [`crate::bounds::ascent`] with `lambda` starting at 0.5, halved after 8 1-trees
//! without a better bound, at most 80 + n / 5 1-trees, ending early once `lambda` is below 0.005,
//! the bound reaches the incumbent's length or the 1-tree is a tour. The root gets the full
//! ascent of [`crate::bounds::held_karp_bound`], with the starting tour as upper bound.
//!
//! A subproblem is closed when its bound, rounded up, is no less than the best tour's length,
//! when its rules admit no 1-tree, or when its cheapest 1-tree is a tour (then the best tour of
//! the subproblem: a shorter one becomes the incumbent).
//!
//! # Reduced costs
//!
//! After every ascent, with `w` the modified costs at the best penalties `pi`, `L(pi)` the
//! bound and `U` the incumbent's length:
//!
//! - *elimination*: a free edge `e` outside the 1-tree is in no 1-tree of the subproblem cheaper
//!   than `L(pi) + w(e) - w(f)`, where `f` is the dearest free edge `e` could replace (on the tree
//!   path between its ends, or the dearer free edge at the special node). When that rounds up
//!   to at least `U`, `e` is forbidden in the whole subtree: no tour through it is shorter than
//!   the incumbent.
//! - *fixing*: a free edge `f` of the 1-tree is in every 1-tree cheaper than
//!   `L(pi) + w(e) - w(f)`, where `e` is the cheapest allowed edge that could replace it (that
//!   reconnects the tree, or the third edge at the special node). When that rounds up to at
//!   least `U` (or nothing can replace `f`), `f` is forced in the whole subtree.
//!
//! The closure above then runs again; when it empties the subproblem, the subproblem is closed.
//!
//! # Branching
//!
//! Otherwise the ascent's best 1-tree has a node `v` of degree above two. The node chosen is one
//! that already has a forced edge when there is one (two children instead of three), otherwise
//! the one of largest degree, the lower index on ties. Let `e1`, `e2` be the free tree edges at
//! `v` with the largest modified costs. The children are
//!
//! 1. `e1` forbidden;
//! 2. `e1` forced, `e2` forbidden;
//! 3. `e1` and `e2` forced (so every other edge at `v` is forbidden),
//!
//! and when `v` already has a forced edge, only `e1` forbidden and `e1` forced. The children
//! partition the parent's tours and each excludes the parent's 1-tree. (When the reduced-cost
//! rules have changed the state of the tree's own edges so that no node can be branched on, the
//! subproblem is evaluated again under its new rules instead.)
//!
//! # Order
//!
//! Subproblems are explored best first: lowest bound, then deepest, then oldest. The lowest open
//! bound is then the best global lower bound at every moment, which is what is reported when the
//! time or node limit stops the search. Each open subproblem keeps its decisions as a link to
//! its parent's and its parent's penalties, shared with its siblings.

use super::ascent::{
    AscentOptions, AscentPlan, Best, BoundError, EdgeRules, EdgeState, Scaled, root_plan,
};
use crate::control::StopHandle;
use crate::cost::Cost;
use crate::tour::{Tour, closed_length};
use std::cmp::Ordering;
use std::collections::BinaryHeap;
use std::rc::Rc;
use std::time::{Duration, Instant};

/// Limits of [`branch_and_bound`].
#[derive(Clone, Debug, Default)]
pub struct BranchOptions {
    /// Wall-clock limit; when it runs out the best tour and the best lower bound are returned.
    pub time_limit: Option<Duration>,
    /// Largest number of subproblems to evaluate (the root counts as one).
    pub node_limit: Option<u64>,
}

/// What [`branch_and_bound`] established.
#[derive(Clone, Debug, PartialEq)]
pub struct Proof {
    /// The best tour found, starting at node 0.
    pub tour: Vec<usize>,
    /// Its exact length.
    pub length: i64,
    /// A lower bound on every tour: the least bound of the subproblems still open (or `length`
    /// when none is). Equal to `length` when `proven_optimal`.
    pub lower_bound: i64,
    /// True when every subproblem was closed: `tour` is optimal.
    pub proven_optimal: bool,
    /// Subproblems evaluated, the root included.
    pub nodes: u64,
    /// Wall-clock seconds spent.
    pub seconds: f64,
}

/// Decisions of a subproblem on top of its parent's, shared by siblings.
struct Step {
    forced: Vec<(u32, u32)>,
    forbidden: Vec<(u32, u32)>,
    up: Option<Rc<Step>>,
}

/// An open subproblem.
struct Open {
    /// A lower bound on its tours (its parent's).
    bound: i64,
    depth: u32,
    seq: u64,
    step: Rc<Step>,
    /// The parent's best penalties, in scaled units.
    pi: Rc<[f64]>,
}

impl PartialEq for Open {
    fn eq(&self, other: &Self) -> bool {
        self.cmp(other) == Ordering::Equal
    }
}
impl Eq for Open {}
impl PartialOrd for Open {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Open {
    /// The heap's greatest: lowest bound, then deepest, then first made.
    fn cmp(&self, other: &Self) -> Ordering {
        other
            .bound
            .cmp(&self.bound)
            .then(self.depth.cmp(&other.depth))
            .then(other.seq.cmp(&self.seq))
    }
}

/// Ascent of a subproblem: a few dozen 1-trees from the parent's penalties.
fn child_plan(n: usize, deadline: Option<Instant>) -> AscentPlan {
    AscentPlan {
        lambda: 0.5,
        patience: 8,
        lambda_min: 0.005,
        max_iterations: 80 + n / 5,
        deadline,
    }
}

/// Proves a tour optimal, or improves it, by branch and bound on the 1-tree bound, starting
/// from `initial_tour` (a permutation of the nodes: the better it is, the less there is to
/// search; an empty vector asks for a quick tour built here). See the module documentation.
///
/// When a limit stops the search the result holds the best tour, the best lower bound and
/// `proven_optimal == false`; the lower bound is valid in every case.
///
/// ```
/// use wend::{branch_and_bound, BranchOptions, CoordCost, Metric, StopHandle};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// // Start from the crossing tour 0 2 1 3 (length 48).
/// let proof = branch_and_bound(&square, vec![0, 2, 1, 3], &BranchOptions::default(), &StopHandle::new())
///     .unwrap();
/// assert_eq!(proof.length, 40);
/// assert!(proof.proven_optimal);
/// ```
pub fn branch_and_bound<C: Cost + ?Sized>(
    cost: &C,
    initial_tour: Vec<usize>,
    opts: &BranchOptions,
    stop: &StopHandle,
) -> Result<Proof, BoundError> {
    branch_and_bound_dyn(cost.as_dyn_cost(), initial_tour, opts, stop)
}

/// [`branch_and_bound`], compiled here once, on any cost.
fn branch_and_bound_dyn(
    cost: &dyn Cost,
    initial_tour: Vec<usize>,
    opts: &BranchOptions,
    stop: &StopHandle,
) -> Result<Proof, BoundError> {
    let began = Instant::now();
    let n = cost.len();
    if !cost.is_symmetric() {
        return Err(BoundError::Asymmetric);
    }
    let deadline = opts.time_limit.and_then(|l| began.checked_add(l));
    let finish = |mut tour: Vec<usize>, length, lower_bound, proven, nodes| {
        if let Some(p) = tour.iter().position(|&v| v == 0) {
            tour.rotate_left(p);
        }
        Proof {
            tour,
            length,
            lower_bound,
            proven_optimal: proven,
            nodes,
            seconds: began.elapsed().as_secs_f64(),
        }
    };
    if n <= 3 {
        let tour = if initial_tour.is_empty() {
            (0..n).collect()
        } else {
            Tour::new(initial_tour, n)?.order().to_vec()
        };
        // Every order of three or fewer nodes is the same cycle, in one direction or the other.
        let length = closed_length(cost, &tour)?;
        return Ok(finish(tour, length, length, true, 0));
    }
    let scaled = Scaled::new(cost)?.interruptible(stop, deadline);
    let mut best_tour = if initial_tour.is_empty() {
        scaled.quick_tour(deadline)
    } else {
        Tour::new(initial_tour, n)?.order().to_vec()
    };
    let mut best_len = closed_length(cost, &best_tour)?;

    // The root: a full ascent.
    let mut plan = root_plan(n, &AscentOptions::default(), began);
    plan.deadline = deadline;
    let run = scaled.ascend(None, &vec![0.0; n], best_len, &plan, stop);
    // Without rules every complete graph has a 1-tree: none means the search never began.
    let Some(root) = run.best else {
        // Every tour leaves each node by one edge: the cheapest ones add up to a bound
        // (saturating, which only lowers it).
        let floor = (0..n)
            .map(|i| (0..n).filter(|&j| j != i).map(|j| cost.cost(i, j)).min())
            .fold(0i64, |a, c| a.saturating_add(c.unwrap_or(0)));
        return Ok(finish(best_tour, best_len, floor.min(best_len), false, 1));
    };
    let mut nodes: u64 = 1;
    let root_bound = scaled.bound(root.value);
    if let Some(tour) = root.tree.tour() {
        let length = closed_length(cost, &tour)?;
        return Ok(finish(tour, length, length, true, nodes));
    }
    if root_bound >= best_len {
        return Ok(finish(best_tour, best_len, best_len, true, nodes));
    }
    crate::memory::check(crate::memory::square(n, 1), || {
        format!("the edge table of branch and bound over {n} nodes")
    })?;
    let mut global = EdgeRules::new(n);
    let reduction = reduce(&scaled, &root, None, best_len);
    for &(a, b) in &reduction.gone {
        global.forbid(a as usize, b as usize);
    }
    for &(a, b) in &reduction.fixed {
        global.force(a as usize, b as usize);
    }
    let mut root_rules = global.clone();
    let mut heap = BinaryHeap::new();
    let mut seq = 0u64;
    let root_step = Rc::new(Step {
        forced: Vec::new(),
        forbidden: Vec::new(),
        up: None,
    });
    if propagate(&mut root_rules) {
        push_children(
            &scaled,
            &root,
            &root_rules,
            root_bound,
            0,
            &root_step,
            &mut seq,
            &mut heap,
        );
    }

    let child = child_plan(n, deadline);
    let mut interrupted: Option<i64> = None;
    let mut rules = global.clone();
    while let Some(open) = heap.pop() {
        if open.bound >= best_len {
            // Best first: every other open subproblem is bounded as high.
            heap.clear();
            break;
        }
        if stop.is_stopped()
            || deadline.is_some_and(|d| Instant::now() >= d)
            || opts.node_limit.is_some_and(|l| nodes >= l)
        {
            interrupted = Some(open.bound);
            heap.push(open);
            break;
        }
        nodes += 1;
        rules.clone_from(&global);
        let mut s = Some(&open.step);
        while let Some(step) = s {
            for &(a, b) in &step.forced {
                rules.force(a as usize, b as usize);
            }
            for &(a, b) in &step.forbidden {
                rules.forbid(a as usize, b as usize);
            }
            s = step.up.as_ref();
        }
        if !propagate(&mut rules) {
            continue;
        }
        let run = scaled.ascend(Some(&rules), &open.pi, best_len, &child, stop);
        let Some(b) = run.best else {
            continue;
        };
        let bound = scaled.bound(b.value).max(open.bound);
        if let Some(tour) = b.tree.tour() {
            let length = closed_length(cost, &tour)?;
            if length < best_len {
                best_len = length;
                best_tour = tour;
            }
            continue;
        }
        if bound >= best_len {
            continue;
        }
        let Reduction { gone, fixed } = reduce(&scaled, &b, Some(&rules), best_len);
        for &(a, c) in &gone {
            rules.forbid(a as usize, c as usize);
        }
        for &(a, c) in &fixed {
            rules.force(a as usize, c as usize);
        }
        let parent = if gone.is_empty() && fixed.is_empty() {
            open.step.clone()
        } else {
            if !propagate(&mut rules) {
                continue;
            }
            Rc::new(Step {
                forced: fixed,
                forbidden: gone,
                up: Some(open.step.clone()),
            })
        };
        push_children(
            &scaled,
            &b,
            &rules,
            bound,
            open.depth + 1,
            &parent,
            &mut seq,
            &mut heap,
        );
    }
    let open_min = heap.peek().map(|o| o.bound);
    match (interrupted, open_min) {
        (None, _) => Ok(finish(best_tour, best_len, best_len, true, nodes)),
        (Some(b), m) => {
            let lower = m.unwrap_or(b).min(b).min(best_len);
            let proven = lower >= best_len;
            Ok(finish(best_tour, best_len, lower, proven, nodes))
        }
    }
}

/// Chooses the branching node of `best.tree` and pushes the children (see the module
/// documentation).
#[allow(clippy::too_many_arguments)]
fn push_children<C: Cost + ?Sized>(
    scaled: &Scaled<'_, C>,
    best: &Best,
    rules: &EdgeRules,
    bound: i64,
    depth: u32,
    parent: &Rc<Step>,
    seq: &mut u64,
    heap: &mut BinaryHeap<Open>,
) {
    let n = scaled.len();
    let tree = &best.tree;
    let forced_at = |v: usize| {
        (0..n)
            .filter(|&u| u != v && rules.state(v, u) == EdgeState::Forced)
            .count()
    };
    let free_tree_edge = |v: usize| {
        tree.edges
            .iter()
            .any(|&(a, b)| (a == v || b == v) && a != b && rules.state(a, b) == EdgeState::Free)
    };
    // A node with a forced edge first (two children, not three), then the largest degree.
    let mut choice: Option<(usize, (bool, usize))> = None;
    for v in 0..n {
        if tree.degree[v] > 2 && free_tree_edge(v) {
            let key = (forced_at(v) > 0, tree.degree[v]);
            if choice.is_none_or(|(_, k)| key > k) {
                choice = Some((v, key));
            }
        }
    }
    let pi: Rc<[f64]> = best.pi.iter().map(|&p| p as f64).collect();
    let mut push = |forced: Vec<(u32, u32)>, forbidden: Vec<(u32, u32)>| {
        *seq += 1;
        heap.push(Open {
            bound,
            depth,
            seq: *seq,
            step: Rc::new(Step {
                forced,
                forbidden,
                up: Some(parent.clone()),
            }),
            pi: pi.clone(),
        });
    };
    let Some((v, _)) = choice else {
        // The rules changed under the tree (eliminated edges made some of its edges forced or
        // forbidden): evaluate the subproblem again under them.
        push(Vec::new(), Vec::new());
        return;
    };
    let w = |a: usize, b: usize| scaled.scale() * scaled.cost(a, b) + best.pi[a] + best.pi[b];
    let mut free: Vec<(i64, usize)> = tree
        .edges
        .iter()
        .filter_map(|&(a, b)| match (a == v, b == v) {
            (true, _) => Some(b),
            (_, true) => Some(a),
            _ => None,
        })
        .filter(|&u| rules.state(v, u) == EdgeState::Free)
        .map(|u| (w(v, u), u))
        .collect();
    free.sort_by(|x, y| y.cmp(x));
    let e = |u: usize| (v as u32, u as u32);
    if forced_at(v) > 0 || free.len() < 2 {
        let u1 = free[0].1;
        push(Vec::new(), vec![e(u1)]);
        push(vec![e(u1)], Vec::new());
    } else {
        let (u1, u2) = (free[0].1, free[1].1);
        push(Vec::new(), vec![e(u1)]);
        push(vec![e(u1)], vec![e(u2)]);
        push(vec![e(u1), e(u2)], Vec::new());
    }
}

/// Closes `rules` under the degree and subtour rules of the module documentation; false when
/// no tour satisfies them.
fn propagate(rules: &mut EdgeRules) -> bool {
    Closure::new(rules).is_some_and(|mut c| c.run(rules))
}

/// Bookkeeping of [`propagate`]: degrees and the paths of forced edges.
struct Closure {
    n: usize,
    forced: Vec<usize>,
    allowed: Vec<usize>,
    /// For a node ending a path of forced edges (or on none): the other end (itself).
    end: Vec<usize>,
    /// Nodes on the path ending at this node (meaningful at path ends).
    size: Vec<usize>,
    queue: Vec<usize>,
    queued: Vec<bool>,
    /// A cycle of forced edges through every node: nothing more to decide.
    tour: bool,
}

impl Closure {
    /// Counts degrees and walks the paths; `None` when the forced edges already rule out
    /// every tour.
    fn new(rules: &EdgeRules) -> Option<Closure> {
        let n = rules.len();
        let mut c = Closure {
            n,
            forced: vec![0; n],
            allowed: vec![0; n],
            end: (0..n).collect(),
            size: vec![1; n],
            queue: (0..n).collect(),
            queued: vec![true; n],
            tour: false,
        };
        let mut adj = vec![[usize::MAX; 2]; n];
        for i in 0..n {
            for j in i + 1..n {
                match rules.state(i, j) {
                    EdgeState::Forbidden => continue,
                    EdgeState::Free => {}
                    EdgeState::Forced => {
                        for (a, b) in [(i, j), (j, i)] {
                            if c.forced[a] == 2 {
                                return None;
                            }
                            adj[a][c.forced[a]] = b;
                            c.forced[a] += 1;
                        }
                    }
                }
                c.allowed[i] += 1;
                c.allowed[j] += 1;
            }
        }
        let mut seen = vec![false; n];
        for start in 0..n {
            if seen[start] || c.forced[start] == 2 {
                continue;
            }
            let (mut prev, mut v, mut count) = (usize::MAX, start, 1);
            seen[start] = true;
            loop {
                let next = if adj[v][0] != prev {
                    adj[v][0]
                } else {
                    adj[v][1]
                };
                if next == usize::MAX {
                    break;
                }
                prev = v;
                v = next;
                seen[v] = true;
                count += 1;
            }
            c.end[start] = v;
            c.end[v] = start;
            c.size[start] = count;
            c.size[v] = count;
        }
        // What is left has two forced edges at every node: cycles.
        for start in 0..n {
            if seen[start] {
                continue;
            }
            let (mut prev, mut v, mut count) = (usize::MAX, start, 0);
            loop {
                seen[v] = true;
                count += 1;
                let next = if adj[v][0] != prev {
                    adj[v][0]
                } else {
                    adj[v][1]
                };
                prev = v;
                v = next;
                if v == start {
                    break;
                }
            }
            if count < n {
                return None;
            }
            c.tour = true;
        }
        Some(c)
    }

    fn push(&mut self, v: usize) {
        if !self.queued[v] {
            self.queued[v] = true;
            self.queue.push(v);
        }
    }

    fn forbid(&mut self, rules: &mut EdgeRules, a: usize, b: usize) {
        rules.forbid(a, b);
        self.allowed[a] -= 1;
        self.allowed[b] -= 1;
        self.push(a);
        self.push(b);
    }

    /// Forces the free edge `(a, b)`; false when that closes a cycle through fewer than all the
    /// nodes or gives a node a third forced edge.
    fn force(&mut self, rules: &mut EdgeRules, a: usize, b: usize) -> bool {
        if self.forced[a] == 2 || self.forced[b] == 2 {
            return false;
        }
        rules.force(a, b);
        self.forced[a] += 1;
        self.forced[b] += 1;
        self.push(a);
        self.push(b);
        let (x, y) = (self.end[a], self.end[b]);
        if x == b {
            // Closes the path into a cycle.
            if self.size[a] < self.n {
                return false;
            }
            self.tour = true;
            return true;
        }
        let size = self.size[a] + self.size[b];
        self.end[x] = y;
        self.end[y] = x;
        self.size[x] = size;
        self.size[y] = size;
        if size < self.n && rules.state(x, y) == EdgeState::Free {
            self.forbid(rules, x, y);
        }
        true
    }

    fn run(&mut self, rules: &mut EdgeRules) -> bool {
        let n = self.n;
        // Path ends found in `new`.
        for v in 0..n {
            let w = self.end[v];
            if v < w && self.size[v] < n && rules.state(v, w) == EdgeState::Free {
                self.forbid(rules, v, w);
            }
        }
        while let Some(v) = self.queue.pop() {
            self.queued[v] = false;
            if self.tour {
                return true;
            }
            if self.forced[v] > 2 || self.allowed[v] < 2 {
                return false;
            }
            if self.forced[v] == 2 && self.allowed[v] > 2 {
                for u in 0..n {
                    if u != v && rules.state(v, u) == EdgeState::Free {
                        self.forbid(rules, v, u);
                    }
                }
            } else if self.forced[v] < 2 && self.allowed[v] == 2 {
                for u in 0..n {
                    if u != v && rules.state(v, u) == EdgeState::Free && !self.force(rules, v, u) {
                        return false;
                    }
                }
            }
        }
        true
    }
}

/// What the reduced costs of one 1-tree settle; see [`reduce`].
struct Reduction {
    /// Free edges no tour shorter than the incumbent uses, `(a, b)` with `a < b`.
    gone: Vec<(u32, u32)>,
    /// Free tree edges every tour shorter than the incumbent uses.
    fixed: Vec<(u32, u32)>,
}

/// Reduced-cost tests on the ascent's best 1-tree (see the module documentation), against the
/// incumbent's length `upper`:
///
/// - a free edge `e` outside the tree goes when the cheapest 1-tree containing it, the tree
///   plus `e` minus the dearest free edge it could replace, is bounded by at least `upper`;
/// - then a free tree edge is fixed when the cheapest 1-tree without it, the tree minus the
///   edge plus the cheapest allowed edge that reconnects it, is bounded by at least `upper`.
fn reduce<C: Cost + ?Sized>(
    scaled: &Scaled<'_, C>,
    best: &Best,
    rules: Option<&EdgeRules>,
    upper: i64,
) -> Reduction {
    let n = scaled.len();
    let s = scaled.scale();
    let w = |a: usize, b: usize| s * scaled.cost(a, b) + best.pi[a] + best.pi[b];
    let state = |a: usize, b: usize| rules.map_or(EdgeState::Free, |r| r.state(a, b));
    let too_long = |delta: i64| scaled.bound(best.value + delta as i128) >= upper;
    let tree = &best.tree;
    let mut out = Reduction {
        gone: Vec::new(),
        fixed: Vec::new(),
    };
    // The tree on 1..n rooted at node 1, and the special node's two edges.
    let mut adj: Vec<Vec<usize>> = vec![Vec::new(); n];
    let mut at_0: Vec<usize> = Vec::new();
    for &(a, b) in &tree.edges {
        if a == 0 || b == 0 {
            at_0.push(a + b);
        } else {
            adj[a].push(b);
            adj[b].push(a);
        }
    }
    let mut parent = vec![usize::MAX; n];
    let mut depth = vec![0usize; n];
    // Cost of the edge to the parent when it is free (`None` when forced).
    let mut up_cost: Vec<Option<i64>> = vec![None; n];
    let mut order = vec![1usize];
    parent[1] = 1;
    let mut k = 0;
    while k < order.len() {
        let v = order[k];
        k += 1;
        for &u in &adj[v] {
            if parent[u] == usize::MAX {
                parent[u] = v;
                depth[u] = depth[v] + 1;
                up_cost[u] = (state(u, v) == EdgeState::Free).then(|| w(u, v));
                order.push(u);
            }
        }
    }
    // Elimination; the survivors are what fixing may reconnect with.
    let worst_at_0 = at_0
        .iter()
        .filter(|&&j| state(0, j) == EdgeState::Free)
        .map(|&j| w(0, j))
        .max();
    let mut third_at_0 = i64::MAX;
    for j in 1..n {
        if at_0.contains(&j) || state(0, j) != EdgeState::Free {
            continue;
        }
        let c = w(0, j);
        match worst_at_0 {
            Some(worst) if too_long(c - worst) => out.gone.push((0, j as u32)),
            _ => third_at_0 = third_at_0.min(c),
        }
    }
    let mut others: Vec<(i64, usize, usize)> = Vec::new();
    for i in 1..n {
        for j in i + 1..n {
            if state(i, j) != EdgeState::Free || parent[i] == j || parent[j] == i {
                continue;
            }
            let (mut a, mut b) = (i, j);
            let mut dearest: Option<i64> = None;
            while a != b {
                if depth[a] < depth[b] {
                    std::mem::swap(&mut a, &mut b);
                }
                if let Some(c) = up_cost[a] {
                    dearest = Some(dearest.map_or(c, |d| d.max(c)));
                }
                a = parent[a];
            }
            let c = w(i, j);
            let gone = match dearest {
                Some(d) => too_long(c - d),
                // Only forced edges on the path: the edge would close a cycle of forced ones.
                None => true,
            };
            if gone {
                out.gone.push((i as u32, j as u32));
            } else {
                others.push((c, i, j));
            }
        }
    }
    // Cheapest first, each surviving edge covers the tree path between its ends: the first to
    // cover a tree edge is its cheapest replacement.
    others.sort_unstable();
    let mut cover = vec![i64::MAX; n]; // cheapest replacement of the edge (v, parent[v])
    let mut next_open: Vec<usize> = (0..n).collect(); // nearest ancestor-or-self not covered
    fn find(up: &mut [usize], mut x: usize) -> usize {
        while up[x] != x {
            up[x] = up[up[x]];
            x = up[x];
        }
        x
    }
    for &(c, i, j) in &others {
        let (mut a, mut b) = (find(&mut next_open, i), find(&mut next_open, j));
        while a != b {
            if depth[a] < depth[b] {
                std::mem::swap(&mut a, &mut b);
            }
            cover[a] = c;
            next_open[a] = parent[a];
            a = find(&mut next_open, a);
        }
    }
    for &(a, b) in &tree.edges {
        if state(a, b) != EdgeState::Free {
            continue;
        }
        let replacement = if a == 0 || b == 0 {
            third_at_0
        } else {
            cover[if parent[a] == b { a } else { b }]
        };
        let delta = if replacement == i64::MAX {
            i64::MAX
        } else {
            replacement - w(a, b)
        };
        if delta == i64::MAX || too_long(delta) {
            out.fixed.push((a as u32, b as u32));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bounds::ascent::tests::{brute_force_optimum, matrix};
    use crate::cost::{FnCost, MatrixCost};
    use proptest::prelude::*;

    fn forced(n: usize, edges: &[(usize, usize)]) -> EdgeRules {
        let mut r = EdgeRules::new(n);
        for &(a, b) in edges {
            r.force(a, b);
        }
        r
    }

    #[test]
    fn a_forced_path_forbids_its_closing_edge() {
        let mut r = forced(5, &[(0, 1), (1, 2)]);
        assert!(propagate(&mut r));
        assert_eq!(r.state(0, 2), EdgeState::Forbidden);
        // Node 1 has its two edges: the others go.
        for u in [3, 4] {
            assert_eq!(r.state(1, u), EdgeState::Forbidden);
        }
        assert_eq!(r.state(0, 3), EdgeState::Free);
    }

    #[test]
    fn impossible_rules_are_detected() {
        // Three forced edges at node 0.
        assert!(!propagate(&mut forced(5, &[(0, 1), (0, 2), (0, 3)])));
        // A forced cycle through three of five nodes.
        assert!(!propagate(&mut forced(5, &[(0, 1), (1, 2), (2, 0)])));
        // Node 4 with two of its four edges forbidden keeps the other two, forced; with three
        // forbidden it has too few.
        let mut r = EdgeRules::new(5);
        r.forbid(4, 1);
        r.forbid(4, 2);
        assert!(propagate(&mut r));
        assert_eq!(r.state(4, 0), EdgeState::Forced);
        assert_eq!(r.state(4, 3), EdgeState::Forced);
        r.forbid(4, 3);
        assert!(!propagate(&mut r));
        // A forced tour is fine.
        assert!(propagate(&mut forced(4, &[(0, 1), (1, 2), (2, 3), (3, 0)])));
    }

    #[test]
    fn two_edges_left_are_forced_and_can_cascade_into_a_contradiction() {
        // Node 3 of 4 keeps only 3-0 and 3-1; node 2 keeps only 2-0 and 2-1. Forcing all four
        // makes the tour 0-3-1-2-0, which is consistent.
        let mut r = EdgeRules::new(4);
        r.forbid(3, 2);
        assert!(propagate(&mut r));
        for (a, b) in [(3, 0), (3, 1), (2, 0), (2, 1)] {
            assert_eq!(r.state(a, b), EdgeState::Forced, "{a}-{b}");
        }
        assert_eq!(r.state(0, 1), EdgeState::Forbidden);
        // Five nodes, path 1-2-3 forced, 1-4 and 1-0 forbidden: node 1 keeps only 1-2 and 1-3,
        // but 1-3 would close the path into a cycle of three: no tour.
        let mut r = EdgeRules::new(5);
        r.force(1, 2);
        r.force(2, 3);
        r.forbid(1, 4);
        r.forbid(1, 0);
        assert!(!propagate(&mut r));
    }

    #[test]
    fn tiny_and_invalid_inputs() {
        let stop = StopHandle::new();
        let opts = BranchOptions::default();
        let two = MatrixCost::from_rows(&[vec![0, 7], vec![7, 0]]).unwrap();
        let p = branch_and_bound(&two, vec![1, 0], &opts, &stop).unwrap();
        assert_eq!((p.length, p.lower_bound, p.proven_optimal), (14, 14, true));
        assert_eq!(p.tour, vec![0, 1]);
        let empty = MatrixCost::from_rows(&[]).unwrap();
        let p = branch_and_bound(&empty, vec![], &opts, &stop).unwrap();
        assert_eq!((p.length, p.proven_optimal), (0, true));
        let asym = MatrixCost::from_rows(&[vec![0, 1, 2], vec![5, 0, 1], vec![1, 1, 0]]).unwrap();
        assert_eq!(
            branch_and_bound(&asym, vec![0, 1, 2], &opts, &stop).unwrap_err(),
            BoundError::Asymmetric
        );
        let m = MatrixCost::from_rows(&matrix(5, &[3, 1, 4, 1, 5, 9, 2, 6, 5, 3])).unwrap();
        assert!(matches!(
            branch_and_bound(&m, vec![0, 1, 1, 2, 3], &opts, &stop).unwrap_err(),
            BoundError::InvalidTour(_)
        ));
    }

    #[test]
    fn limits_stop_the_search_with_a_valid_bound() {
        // Random-looking costs on 9 nodes: the root 1-tree is no tour and its bound is below
        // the optimum, so one subproblem is not enough.
        let entries: Vec<i64> = (0..36).map(|k| (k * 7919 % 97) as i64 + 3).collect();
        let m = matrix(9, &entries);
        let optimum = brute_force_optimum(&m);
        let c = MatrixCost::from_rows(&m).unwrap();
        let start: Vec<usize> = (0..9).collect();
        let opts = BranchOptions {
            node_limit: Some(1),
            ..Default::default()
        };
        let p = branch_and_bound(&c, start.clone(), &opts, &StopHandle::new()).unwrap();
        assert!(p.lower_bound <= optimum && optimum <= p.length);
        if !p.proven_optimal {
            assert!(p.lower_bound < p.length);
        }
        assert!(p.nodes <= 1);
        // A search stopped before it starts still returns a valid answer.
        let stop = StopHandle::new();
        stop.stop();
        let p = branch_and_bound(&c, start.clone(), &BranchOptions::default(), &stop).unwrap();
        assert!(p.lower_bound <= optimum && optimum <= p.length);
        // Unlimited, it proves the optimum.
        let p = branch_and_bound(&c, start, &BranchOptions::default(), &StopHandle::new()).unwrap();
        assert!(p.proven_optimal);
        assert_eq!(p.length, optimum); // brute force over every order
        assert_eq!(p.lower_bound, optimum);
        assert!(
            p.nodes > 1,
            "the root alone should not settle this instance"
        );
    }

    #[test]
    fn an_empty_start_gets_a_tour_built_here() {
        let c = FnCost::new(7, true, |i: usize, j: usize| (i as i64 - j as i64).abs());
        let p = branch_and_bound(
            &c,
            Vec::new(),
            &BranchOptions::default(),
            &StopHandle::new(),
        )
        .unwrap();
        // 0 to 6 and back along the line: 6 + 6.
        assert_eq!((p.length, p.proven_optimal), (12, true));
        assert_eq!(closed_length(&c, &p.tour).unwrap(), 12);
    }

    fn check_against_brute_force(n: usize, entries: &[i64]) -> Result<(), TestCaseError> {
        let m = matrix(n, entries);
        let optimum = brute_force_optimum(&m);
        let c = MatrixCost::from_rows(&m).unwrap();
        let p = branch_and_bound(
            &c,
            (0..n).collect(),
            &BranchOptions::default(),
            &StopHandle::new(),
        )
        .unwrap();
        prop_assert!(p.proven_optimal);
        prop_assert_eq!(p.length, optimum);
        prop_assert_eq!(p.lower_bound, optimum);
        let tour = Tour::new(p.tour.clone(), n).expect("a permutation");
        prop_assert_eq!(tour.length(&c).unwrap(), optimum);
        prop_assert_eq!(p.tour[0], 0);
        // Stopped after a few subproblems, the bound is still valid.
        let opts = BranchOptions {
            node_limit: Some(3),
            ..Default::default()
        };
        let q = branch_and_bound(&c, (0..n).collect(), &opts, &StopHandle::new()).unwrap();
        prop_assert!(q.lower_bound <= optimum && optimum <= q.length);
        prop_assert_eq!(q.proven_optimal, q.lower_bound == q.length);
        Ok(())
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(150))]

        // From a poor starting tour (the identity order), the search proves the optimum that
        // a brute force over every order finds, and returns a tour of that length. Most such
        // instances are settled at the root; costs of 1 and 2 only (many ties, weak 1-tree
        // bounds) make the search branch, eliminate and fix.
        #[test]
        fn proves_the_brute_force_optimum(n in 4usize..=9, entries in proptest::collection::vec(-20i64..1000, 36)) {
            check_against_brute_force(n, &entries)?;
        }

        #[test]
        fn proves_the_brute_force_optimum_with_ties(n in 6usize..=9, entries in proptest::collection::vec(1i64..=2, 36)) {
            check_against_brute_force(n, &entries)?;
        }
    }
}
