//! Branch and cut on the subtour programme.
//!
//! The root is the subtour bound of [`crate::subtour`]. Every node of the tree holds some edges
//! at 0 or 1 (column bounds) and is settled the same way: subtour cuts until none is violated,
//! then pricing of every free edge; its bound is the Lagrangian bound of its duals, valid for
//! every tour that keeps its fixings. A node whose bound cannot beat the best tour known
//! (tour lengths are integers) is closed; an integral LP point is a tour and may become the
//! best; otherwise the node branches on the fractional edge nearest 1/2 (one child holds it at
//! 1, the other at 0). Nodes are taken best bound first, so the smallest open bound is the
//! tree's lower bound at any moment. After the root, reduced-cost fixing leaves out every edge
//! whose reduced cost alone lifts the root bound to the best tour's length: no better tour
//! uses it. Cuts are global: found at one node, they stay for all.

use crate::lp::{LpError, LpStatus, LpValues};
use crate::subtour::{check_costs, separate, starting_edges, CutsError, Stage, SubtourLp};
use std::cmp::Ordering;
use std::collections::BinaryHeap;
use std::time::{Duration, Instant};
use wend::{Cost, StopHandle};

/// Options of [`branch_and_cut`].
#[derive(Clone, Debug)]
pub struct BranchCutOptions {
    /// Wall-clock limit: the best tour and the tree's bound are returned when it passes.
    pub time_limit: Option<Duration>,
    /// Largest number of nodes settled.
    pub node_limit: Option<u64>,
    /// Candidate neighbours per node in the starting edge set.
    pub neighbours: usize,
    /// Blossom inequalities besides subtour cuts.
    pub blossoms: bool,
    /// Comb inequalities besides blossoms.
    pub combs: bool,
    /// Strong branching: the fractional edges nearest 1/2 tried as the branching edge (each
    /// child's LP re-solved for a few simplex iterations), the one whose weaker child rises
    /// most chosen; 0 or 1 takes the edge nearest 1/2 without trying.
    pub strong_candidates: usize,
}

impl Default for BranchCutOptions {
    fn default() -> Self {
        BranchCutOptions {
            time_limit: None,
            node_limit: None,
            neighbours: 10,
            blossoms: true,
            combs: true,
            strong_candidates: 8,
        }
    }
}

/// Progress of the tree, for a caller's display.
#[derive(Clone, Copy, Debug)]
pub struct TreeProgress {
    /// The tree's lower bound.
    pub lower_bound: i64,
    /// The best tour's length.
    pub best: i64,
    /// Nodes settled.
    pub nodes: u64,
    /// Nodes open.
    pub open: usize,
    /// Seconds since the start.
    pub seconds: f64,
}

/// What [`branch_and_cut`] found.
#[derive(Clone, Debug)]
pub struct BranchCutResult {
    /// The best tour (starting at node 0).
    pub tour: Vec<usize>,
    /// Its length.
    pub length: i64,
    /// A lower bound on every tour: equal to `length` when proven.
    pub lower_bound: i64,
    /// True when `tour` is proven optimal.
    pub proven_optimal: bool,
    /// The root's bound (the subtour bound, or less when the root closed on the first tour's
    /// length before every edge was priced in); −∞ when the root did not settle.
    pub root_bound: f64,
    /// Nodes settled (the root included).
    pub nodes: u64,
    /// Cuts added in all.
    pub cuts_added: usize,
    /// Edges left out by reduced-cost fixing after the root.
    pub edges_fixed_out: usize,
    /// Why the search ended before a proof (`time_limit`, `node_limit`, `stopped`, or
    /// `lp_unsolved` when the LP solver left nodes unsettled and the rest of the tree closed).
    pub stopped: Option<&'static str>,
    /// Wall-clock seconds.
    pub seconds: f64,
}

/// An open node: its bound and its fixings (column, value).
struct Open {
    bound: f64,
    fix: Vec<(usize, bool)>,
    seq: u64,
}

impl PartialEq for Open {
    fn eq(&self, o: &Self) -> bool {
        self.cmp(o) == Ordering::Equal
    }
}
impl Eq for Open {}
impl PartialOrd for Open {
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Open {
    /// The heap's top is the smallest bound (then the newest node: deeper first on ties).
    fn cmp(&self, o: &Self) -> Ordering {
        o.bound.total_cmp(&self.bound).then(self.seq.cmp(&o.seq))
    }
}

/// How a node settled.
enum Settled {
    /// No tour keeps its fixings.
    Infeasible,
    /// Its bound cannot beat `best`: the bound.
    Closed(f64),
    /// The LP optimum over every edge, no subtour cut violated: bound and point.
    Point(f64, LpValues),
    /// Out of time or stopped.
    Halted(&'static str),
    /// The LP solver ended without an answer before the deadline.
    Unsolved,
}

/// Simplex iterations of each child's trial solve in strong branching.
const STRONG_ITERATIONS: u32 = 100;

/// [`crate::subtour::ceil_bound`] as a length.
fn ceil_bound(b: f64) -> i64 {
    crate::subtour::ceil_bound(b) as i64
}

struct Tree<'c, 's, C: Cost + ?Sized> {
    sub: SubtourLp<'c, C>,
    best: i64,
    best_tour: Vec<usize>,
    deadline: Option<Instant>,
    stop: &'s StopHandle,
    /// The cut families in use.
    stage: Stage,
}

impl<C: Cost + ?Sized> Tree<'_, '_, C> {
    fn halted(&self) -> Option<&'static str> {
        if self.stop.is_stopped() {
            Some("stopped")
        } else if self.deadline.is_some_and(|d| Instant::now() >= d) {
            Some("time_limit")
        } else {
            None
        }
    }

    /// Holds the columns of `fix` and frees every other fixed column (reduced-cost fixings
    /// to 0, kept in `sub.excluded` or as columns held at 0 in `global`, stay).
    fn apply(&mut self, fix: &[(usize, bool)], global: &[usize]) -> Result<(), CutsError> {
        let old: Vec<usize> = self.sub.fixed.keys().copied().collect();
        for c in old {
            self.sub.lp.set_col_bounds(c, 0.0, 1.0)?;
        }
        self.sub.fixed.clear();
        for &c in global {
            self.sub.lp.set_col_bounds(c, 0.0, 0.0)?;
            self.sub.fixed.insert(c, false);
        }
        for &(c, one) in fix {
            let v = if one { 1.0 } else { 0.0 };
            self.sub.lp.set_col_bounds(c, v, v)?;
            self.sub.fixed.insert(c, one);
        }
        Ok(())
    }

    /// Cuts and pricing at the current fixings until settled.
    fn settle(&mut self) -> Result<Settled, CutsError> {
        let n = self.sub.n;
        let mut widened = false;
        loop {
            if let Some(why) = self.halted() {
                return Ok(Settled::Halted(why));
            }
            if let Some(d) = self.deadline {
                let left = d.saturating_duration_since(Instant::now()).as_secs_f64();
                self.sub.lp.set_time_limit(left.max(0.01))?;
            }
            match self.sub.lp.solve() {
                Ok(LpStatus::Optimal) => {}
                Ok(LpStatus::Infeasible) => {
                    // The edges in the programme cannot meet the degree rows under these
                    // fixings; every edge still allowed may, so they all come in once.
                    if widened {
                        return Ok(Settled::Infeasible);
                    }
                    widened = true;
                    let all = self.sub.all_missing();
                    if all.is_empty() {
                        return Ok(Settled::Infeasible);
                    }
                    self.sub.edges_priced_in += self.sub.add_edges(&all)?;
                    continue;
                }
                // The solver's own time limit is the deadline: out of time.
                Err(LpError::Unsolved { .. }) if self.halted().is_some() => {
                    return Ok(Settled::Halted(self.halted().unwrap_or("time_limit")));
                }
                // The LP solver gave up on this node (numerical trouble) with time left: the
                // node is set aside unsettled, its bound kept as a floor of the tree's bound.
                Err(LpError::Unsolved { .. }) => return Ok(Settled::Unsolved),
                Err(e) => return Err(e.into()),
            }
            let v = self.sub.lp.values();
            let support = self.sub.support(&v);
            let cuts = separate(n, &support, self.stage);
            if !cuts.is_empty() {
                self.sub.drop_slack_cuts(&v, 3)?;
                self.sub.add_cuts(cuts)?;
                continue;
            }
            let (bound, fresh) = self.sub.price(&v, n.max(100));
            if ceil_bound(bound) >= self.best {
                return Ok(Settled::Closed(bound));
            }
            if fresh.is_empty() {
                return Ok(Settled::Point(bound, v));
            }
            self.sub.edges_priced_in += self.sub.add_edges(&fresh)?;
        }
    }

    /// The edge to branch on at the point `v`: `None` when it is integral. See
    /// [`BranchCutOptions::strong_candidates`].
    fn choose(&mut self, v: &LpValues, candidates: usize) -> Result<Option<usize>, CutsError> {
        let mut frac: Vec<(f64, usize)> =
            v.x.iter()
                .enumerate()
                .filter(|(_, &x)| x > 1e-6 && x < 1.0 - 1e-6)
                .map(|(c, &x)| ((x - 0.5).abs(), c))
                .collect();
        frac.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let Some(&(_, first)) = frac.first() else {
            return Ok(None);
        };
        if candidates <= 1 || frac.len() == 1 {
            return Ok(Some(first));
        }
        frac.truncate(candidates);
        let z = self.sub.lp.objective();
        // A child found infeasible on the edges in the programme counts as a large rise.
        let infeasible = 1e3 * (z.abs() + 1.0);
        let mut best = (f64::NEG_INFINITY, first);
        for &(_, c) in &frac {
            let mut rise = [0.0; 2];
            for (k, value) in [0.0, 1.0].into_iter().enumerate() {
                self.sub.lp.set_col_bounds(c, value, value)?;
                rise[k] = match self.sub.lp.probe(STRONG_ITERATIONS) {
                    Ok(Some(zc)) => (zc - z).max(0.0),
                    Ok(None) => infeasible,
                    // Out of time: the choice so far.
                    Err(LpError::Unsolved { .. }) => {
                        self.sub.lp.set_col_bounds(c, 0.0, 1.0)?;
                        return Ok(Some(best.1));
                    }
                    Err(e) => return Err(e.into()),
                };
            }
            self.sub.lp.set_col_bounds(c, 0.0, 1.0)?;
            // The product rule: both children should rise.
            let score = rise[0].max(1e-6) * rise[1].max(1e-6);
            if score > best.0 {
                best = (score, c);
            }
        }
        Ok(Some(best.1))
    }

    /// The tour of an integral point without subtours, from node 0 (over arcs, in their
    /// direction).
    fn tour_of(&self, v: &LpValues) -> Option<Vec<usize>> {
        let n = self.sub.n;
        let mut adj: Vec<Vec<usize>> = vec![Vec::new(); n];
        for (&(i, j), &x) in self.sub.edges.iter().zip(&v.x) {
            if x > 0.5 {
                adj[i].push(j);
                if !self.sub.directed {
                    adj[j].push(i);
                }
            }
        }
        let degree = if self.sub.directed { 1 } else { 2 };
        if adj.iter().any(|a| a.len() != degree) {
            return None;
        }
        let mut tour = vec![0];
        let (mut prev, mut at) = (0, adj[0][0]);
        while at != 0 {
            tour.push(at);
            let next = if adj[at][0] == prev && degree == 2 {
                adj[at][1]
            } else {
                adj[at][0]
            };
            prev = at;
            at = next;
            if tour.len() > n {
                return None;
            }
        }
        (tour.len() == n).then_some(tour)
    }
}

fn tour_length<C: Cost + ?Sized>(cost: &C, tour: &[usize]) -> i64 {
    let n = tour.len();
    (0..n)
        .map(|k| cost.cost(tour[k], tour[(k + 1) % n]))
        .fold(0i64, i64::saturating_add)
}

/// Optimal tour of `cost` (symmetric, or asymmetric over arcs) by branch and cut, from `start` (a tour: the first upper
/// bound). See the module documentation. `progress` is called after every node settled.
pub fn branch_and_cut<C: Cost + ?Sized>(
    cost: &C,
    start: &[usize],
    options: &BranchCutOptions,
    stop: &StopHandle,
    mut progress: impl FnMut(&TreeProgress),
) -> Result<BranchCutResult, CutsError> {
    branch_and_cut_dyn(cost.as_dyn_cost(), start, options, stop, &mut progress)
}

/// [`branch_and_cut`], compiled here once, on any cost.
fn branch_and_cut_dyn(
    cost: &dyn Cost,
    start: &[usize],
    options: &BranchCutOptions,
    stop: &StopHandle,
    progress: &mut dyn FnMut(&TreeProgress),
) -> Result<BranchCutResult, CutsError> {
    let began = Instant::now();
    check_costs(cost)?;
    let edges = starting_edges(cost, options.neighbours, Some(start))?;
    let mut tree = Tree {
        sub: SubtourLp::new(cost, &edges)?,
        best: tour_length(cost, start),
        best_tour: start.to_vec(),
        deadline: options.time_limit.map(|d| began + d),
        stop,
        stage: match (options.blossoms, options.combs) {
            (_, true) => Stage::Comb,
            (true, false) => Stage::Blossom,
            (false, false) => Stage::Subtour,
        },
    };
    let mut heap = BinaryHeap::new();
    let mut seq = 0u64;
    let mut nodes = 0u64;
    let mut root_bound = f64::NEG_INFINITY;
    let mut global: Vec<usize> = Vec::new();
    let mut edges_fixed_out = 0usize;
    let mut stopped = None;
    heap.push(Open {
        bound: f64::NEG_INFINITY,
        fix: Vec::new(),
        seq,
    });
    // The smallest bound among nodes closed for time: the tree's bound must not pass it.
    let mut halted_bound = f64::INFINITY;
    // Nodes the LP solver could not settle.
    let mut unsolved = 0u64;
    while let Some(node) = heap.pop() {
        if ceil_bound(node.bound) >= tree.best {
            continue;
        }
        if options.node_limit.is_some_and(|l| nodes >= l) {
            stopped = Some("node_limit");
            halted_bound = halted_bound.min(node.bound);
            break;
        }
        tree.apply(&node.fix, &global)?;
        let settled = tree.settle()?;
        nodes += 1;
        match settled {
            Settled::Halted(why) => {
                stopped = Some(why);
                halted_bound = halted_bound.min(node.bound);
                break;
            }
            Settled::Unsolved => {
                unsolved += 1;
                halted_bound = halted_bound.min(node.bound);
            }
            Settled::Infeasible => {}
            Settled::Closed(bound) => {
                if nodes == 1 {
                    root_bound = bound;
                }
            }
            Settled::Point(bound, v) => {
                if nodes == 1 {
                    root_bound = bound;
                }
                let fractional = tree.choose(&v, options.strong_candidates)?;
                match fractional {
                    None => {
                        if let Some(t) = tree.tour_of(&v) {
                            let len = tour_length(cost, &t);
                            if len < tree.best {
                                tree.best = len;
                                tree.best_tour = t;
                            }
                        }
                    }
                    Some(c) => {
                        for one in [true, false] {
                            seq += 1;
                            let mut fix = node.fix.clone();
                            fix.push((c, one));
                            heap.push(Open { bound, fix, seq });
                        }
                    }
                }
                if nodes == 1 {
                    edges_fixed_out = fix_by_reduced_cost(&mut tree, &v, bound, &mut global)?;
                }
            }
        }
        let open_bound = heap
            .iter()
            .map(|o| o.bound)
            .fold(f64::INFINITY, f64::min)
            .min(halted_bound);
        let lb = if open_bound.is_finite() {
            ceil_bound(open_bound).min(tree.best)
        } else {
            tree.best
        };
        progress(&TreeProgress {
            lower_bound: lb,
            best: tree.best,
            nodes,
            open: heap.len(),
            seconds: began.elapsed().as_secs_f64(),
        });
    }
    let open_bound = heap
        .iter()
        .filter(|o| ceil_bound(o.bound) < tree.best)
        .map(|o| o.bound)
        .fold(f64::INFINITY, f64::min)
        .min(halted_bound);
    let lower_bound = if open_bound.is_finite() {
        ceil_bound(open_bound).min(tree.best)
    } else {
        tree.best
    };
    let lower_bound = if nodes == 1 && stopped.is_some() && root_bound.is_finite() {
        lower_bound.max(ceil_bound(root_bound)).min(tree.best)
    } else {
        lower_bound
    };
    let mut tour = tree.best_tour.clone();
    if let Some(p) = tour.iter().position(|&v| v == 0) {
        tour.rotate_left(p);
    }
    Ok(BranchCutResult {
        length: tree.best,
        tour,
        lower_bound,
        proven_optimal: lower_bound >= tree.best,
        root_bound,
        nodes,
        cuts_added: tree.sub.cuts_added,
        edges_fixed_out,
        stopped: if lower_bound >= tree.best {
            None
        } else {
            stopped.or((unsolved > 0).then_some("lp_unsolved"))
        },
        seconds: began.elapsed().as_secs_f64(),
    })
}

/// After the root: every edge whose reduced cost lifts the root bound to the best tour's
/// length or more is left out (no tour shorter than the best uses it). Edges in the
/// programme are held at 0 (`global`), the others skipped by pricing.
fn fix_by_reduced_cost<C: Cost + ?Sized>(
    tree: &mut Tree<'_, '_, C>,
    v: &LpValues,
    bound: f64,
    global: &mut Vec<usize>,
) -> Result<usize, CutsError> {
    let n = tree.sub.n;
    let best = tree.best;
    let mut out = vec![false; n * n];
    let mut count = 0;
    tree.sub.scan(v, |i, j, rc| {
        if rc > 0.0 && ceil_bound(bound + rc) >= best {
            out[i * n + j] = true;
            count += 1;
        }
    });
    for (c, &(i, j)) in tree.sub.edges.iter().enumerate() {
        if out[i * n + j] {
            global.push(c);
        }
    }
    tree.sub.excluded = Some(out);
    Ok(count)
}

/// A callback for the tree's progress.
pub type TreeObserver = std::sync::Arc<dyn Fn(&TreeProgress) + Send + Sync>;

/// [`branch_and_cut`] as the core's exact method for `wend::prove_optimal` and
/// `wend::solve_with` (give it in `ProveOptions::prover` or `Hooks::prover`).
#[derive(Clone, Default)]
pub struct BranchCutProver {
    /// Options other than the time limit, which the call gives.
    pub options: BranchCutOptions,
    /// Called after every node settled (for a progress display).
    pub progress: Option<TreeObserver>,
}

impl std::fmt::Debug for BranchCutProver {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("BranchCutProver")
            .field("options", &self.options)
            .field("progress", &self.progress.is_some())
            .finish()
    }
}

impl wend::Prover for BranchCutProver {
    fn prove(
        &self,
        cost: &dyn Cost,
        first: &[usize],
        time_limit: Option<Duration>,
        stop: &StopHandle,
    ) -> Result<wend::ProverAnswer, String> {
        let options = BranchCutOptions {
            time_limit,
            ..self.options.clone()
        };
        let r = branch_and_cut(cost, first, &options, stop, |p| {
            if let Some(f) = &self.progress {
                f(p);
            }
        })
        .map_err(|e| e.to_string())?;
        Ok(wend::ProverAnswer {
            tour: r.tour,
            lower_bound: r.lower_bound,
            proven_optimal: r.proven_optimal,
            nodes: r.nodes,
        })
    }
}
