//! The subtour linear programme, solved by cutting planes and column generation.
//!
//! Over the edges `e = {i, j}` of the complete graph:
//!
//! ```text
//! minimise    Σ c_e x_e
//! subject to  x(δ(v)) = 2      for every node v        (degree rows)
//!             x(δ(S)) ≥ 2      for node sets S          (subtour cuts, added when violated)
//!             0 ≤ x_e ≤ 1
//! ```
//!
//! The programme starts on a sparse edge set (candidate neighbours and the edges of a tour, so
//! that the degree rows can always be met) and no cuts. After each solve the support graph is
//! searched for violated subtour cuts exactly ([`crate::support`]); when none is violated,
//! every edge of the complete graph is priced with the row duals, and edges of negative
//! reduced cost join the programme. The loop ends when no cut is violated and no edge prices
//! in: the value is then the subtour bound over all edges (the Held–Karp value).
//!
//! Whenever it stops, the bound reported is the Lagrangian bound of the last duals over every
//! edge, `Σ 2 y_v + Σ 2 π_S + Σ_e min(0, c_e − y_i − y_j − Σ_{S: e ∈ δ(S)} π_S)`, valid for
//! any duals (with `π_S ≥ 0`): it equals the LP value once every edge prices out, and stays a
//! true lower bound on every tour when the loop is cut short.
//!
//! Asymmetric costs get the same programme over arcs: the assignment rows (one arc out of and
//! one into every node) in place of the degree rows, and the same cuts on the sum of the two
//! directions of each pair, `x(δ(S)) ≥ 2` counting arcs out of and into `S` (with the
//! assignment rows, one arc out of `S` at least). Every cut family of the undirected programme
//! holds over arcs, since a directed tour is an undirected one.

use crate::blossom::violated_blossoms;
use crate::comb::violated_combs;
use crate::lp::{Entries, Lp, LpError, LpStatus, LpValues};
use crate::support::{violated_subtours, Weighted};
use std::collections::HashMap;
use std::time::{Duration, Instant};
use wend::{candidates, CandidateSource, Cost, StopHandle};

/// A cut is violated when `x(δ(S)) < 2 − CUT_TOL`.
pub(crate) const CUT_TOL: f64 = 1e-6;
/// An edge prices in when its reduced cost is below `−PRICE_TOL`.
const PRICE_TOL: f64 = 1e-7;
/// An LP value counts as positive (in the support graph) above this.
const SUPPORT_EPS: f64 = 1e-9;

/// Options of [`subtour_bound`].
#[derive(Clone, Debug)]
pub struct SubtourOptions {
    /// Wall-clock limit; the bound of the last duals is returned when it passes.
    pub time_limit: Option<Duration>,
    /// Candidate neighbours per node in the starting edge set.
    pub neighbours: usize,
    /// A tour whose edges join the starting set (a nearest-neighbour tour when `None`).
    pub tour: Option<Vec<usize>>,
    /// Solves a cut may stay slack before it leaves the programme (separation is exact, so
    /// a cut that leaves is found again if it is ever violated).
    pub slack_solves: usize,
    /// After the subtour bound, add blossom inequalities (odd-component heuristic).
    pub blossoms: bool,
    /// After the blossoms, add comb inequalities (heuristics on the support graph).
    pub combs: bool,
    /// Edges (arcs, for asymmetric costs) every tour must use, as node pairs: held at 1 in
    /// the programme, so the bound is over the tours that use them all.
    pub fixed_edges: Vec<(usize, usize)>,
}

impl Default for SubtourOptions {
    fn default() -> Self {
        SubtourOptions {
            time_limit: None,
            neighbours: 10,
            tour: None,
            slack_solves: 3,
            blossoms: true,
            combs: true,
            fixed_edges: Vec::new(),
        }
    }
}

/// What [`subtour_bound`] found.
#[derive(Clone, Debug)]
pub struct SubtourBound {
    /// A lower bound on every tour's length: the Lagrangian bound rounded up (tour lengths are
    /// integers).
    pub lower_bound: i64,
    /// The best Lagrangian bound over every edge, of all the solves' duals.
    pub lagrangian: f64,
    /// The last LP's value (over the edges in it).
    pub lp_value: f64,
    /// True when the loop ended with no violated cut and no edge pricing in: `lp_value` is
    /// then the subtour bound.
    pub complete: bool,
    /// The bound when the subtour cuts were done (every edge priced out, no subtour cut
    /// violated), before any blossom: the subtour bound. `None` when stopped before.
    pub subtour_only: Option<f64>,
    /// The bound when the blossoms were done too (no blossom found violated), before any comb;
    /// `None` when stopped before or when blossoms were not asked for.
    pub with_blossoms: Option<f64>,
    /// Why the loop ended early, when it did (`time_limit`, `stopped`).
    pub stopped: Option<&'static str>,
    /// LP solves.
    pub solves: usize,
    /// Cuts added in all (subtour cuts and blossoms).
    pub cuts_added: usize,
    /// Blossoms among them.
    pub blossoms_added: usize,
    /// Combs with a tooth of more than two nodes among them.
    pub combs_added: usize,
    /// Cuts in the last LP.
    pub cuts_in_lp: usize,
    /// Edges (columns) in the last LP.
    pub edges_in_lp: usize,
    /// Edges added by pricing.
    pub edges_priced_in: usize,
    /// The last LP point: edges with a positive value.
    pub support: Vec<Weighted>,
    /// The cuts in the last LP.
    pub cuts: Vec<Cut>,
    /// Wall-clock seconds.
    pub seconds: f64,
}

/// Why there is no bound.
#[derive(Debug, thiserror::Error)]
pub enum CutsError {
    /// Fewer than three nodes: no subtour constraints to speak of.
    #[error("the subtour programme needs at least 3 nodes, this instance has {n}")]
    TooSmall {
        /// Nodes.
        n: usize,
    },
    /// The starting tour is not a permutation of the nodes.
    #[error("the starting tour is not a tour of the {n} nodes")]
    BadTour {
        /// Nodes.
        n: usize,
    },
    /// The bound does not fit a 64-bit length.
    #[error("the bound {value} does not fit a 64-bit tour length")]
    Overflow {
        /// The bound.
        value: f64,
    },
    /// The LP solver failed or found the programme infeasible (a bug: the tour's edges alone
    /// meet every row).
    #[error(transparent)]
    Lp(#[from] LpError),
    /// The programme was infeasible (should not happen, see above).
    #[error("the subtour programme was infeasible on its edge set")]
    Infeasible,
    /// A fixed edge names a node out of range, or a loop.
    #[error("fixed edge {a}-{b} is not an edge of the {n} nodes (0-based)")]
    BadFixedEdge {
        /// Its ends.
        a: usize,
        /// Its ends.
        b: usize,
        /// Nodes.
        n: usize,
    },
    /// No tour uses every fixed edge: the programme over the whole graph is infeasible.
    #[error(
        "no tour uses all {count} fixed edges (the programme with them held at 1 is infeasible)"
    )]
    FixedEdgesInfeasible {
        /// Fixed edges given.
        count: usize,
    },
}

/// A cut to add: a node set `S` (the handle of a comb) and, for a comb, its teeth.
///
/// With no teeth it is the subtour cut `x(δ(S)) ≥ 2`. With an odd number `k ≥ 3` of
/// pairwise disjoint teeth, each meeting the handle and leaving it, it is the comb inequality
/// `x(δ(H)) + Σ_i x(δ(T_i)) ≥ 3k + 1`; a blossom is the comb whose teeth are single edges
/// (two nodes each). Over directed arcs, `x(δ(S))` sums the arcs leaving and entering `S`,
/// and every inequality holds for the same reason: a directed tour is an undirected one.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct Cut {
    /// The node set (the handle of a comb), sorted.
    pub set: Vec<usize>,
    /// The teeth of a comb, each a sorted node set; empty for a subtour cut.
    pub teeth: Vec<Vec<usize>>,
}

impl Cut {
    /// A subtour cut on `set`.
    pub fn subtour(set: Vec<usize>) -> Cut {
        Cut {
            set,
            teeth: Vec::new(),
        }
    }

    /// The right-hand side: 2 for a subtour cut, `3k + 1` for a comb of `k` teeth.
    pub fn rhs(&self) -> f64 {
        if self.teeth.is_empty() {
            2.0
        } else {
            3.0 * self.teeth.len() as f64 + 1.0
        }
    }

    /// The left-hand side at the point `edges` over nodes `0..n`: `x(δ(S))` summed over the
    /// handle and every tooth.
    pub fn lhs(&self, n: usize, edges: &[Weighted]) -> f64 {
        std::iter::once(&self.set)
            .chain(&self.teeth)
            .map(|s| {
                let mut inside = vec![false; n];
                for &v in s {
                    inside[v] = true;
                }
                crate::support::crossing(edges, &inside)
            })
            .sum()
    }

    /// True when the point `edges` breaks the cut by more than `tol`.
    pub fn violated(&self, n: usize, edges: &[Weighted], tol: f64) -> bool {
        self.lhs(n, edges) < self.rhs() - tol
    }
}

/// A cut in the programme.
#[derive(Clone, Debug)]
pub(crate) struct CutRow {
    /// The handle, sorted.
    pub members: Vec<usize>,
    /// The teeth, each sorted.
    pub teeth: Vec<Vec<usize>>,
    /// Membership of every node in the handle (first) and in each tooth.
    pub inside: Vec<Vec<bool>>,
    /// Right-hand side: 2, or 3k + 1 for a comb.
    pub rhs: f64,
    /// Solves in a row it stayed slack with a zero dual.
    pub slack: usize,
}

impl CutRow {
    /// The coefficient of edge or arc `(i, j)` in the row: how many of its sets it crosses.
    pub fn coef(&self, i: usize, j: usize) -> f64 {
        self.inside.iter().filter(|s| s[i] != s[j]).count() as f64
    }

    /// The handle and the teeth.
    fn sets(&self) -> impl Iterator<Item = &Vec<usize>> {
        std::iter::once(&self.members).chain(&self.teeth)
    }
}

/// The subtour programme held between solves.
///
/// Over undirected edges (symmetric costs) a column is an edge `{i, j}`, kept as `(i, j)` with
/// `i < j`, and node `v` has one degree row `x(δ(v)) = 2`. Over directed arcs (asymmetric
/// costs) a column is an arc `(i, j)`, and node `v` has two rows: one arc out, one arc in (the
/// assignment rows, `v` and `n + v`). Cuts follow, in row order.
pub(crate) struct SubtourLp<'c, C: Cost + ?Sized> {
    pub cost: &'c C,
    pub n: usize,
    /// Columns are arcs (asymmetric costs).
    pub directed: bool,
    pub lp: Lp,
    /// Ends of each column's edge (i < j) or arc.
    pub edges: Vec<(usize, usize)>,
    pub column: HashMap<(usize, usize), usize>,
    /// Cut rows, in row order after the degree rows.
    pub cuts: Vec<CutRow>,
    pub cuts_added: usize,
    /// Blossoms among them.
    pub blossoms_added: usize,
    /// Combs with a tooth of more than two nodes among them.
    pub combs_added: usize,
    pub edges_priced_in: usize,
    /// Columns held at 0 or 1 (branching, reduced-cost fixing).
    pub fixed: HashMap<usize, bool>,
    /// Edges `i < j` or arcs `(i, j)` (index `i·n + j`) left out of every tour that could beat
    /// the best known: pricing skips them.
    pub excluded: Option<Vec<bool>>,
}

impl<'c, C: Cost + ?Sized> SubtourLp<'c, C> {
    /// Degree rows and the starting edges; arcs when the costs are asymmetric.
    pub fn new(cost: &'c C, start: &[(usize, usize)]) -> Result<Self, CutsError> {
        let n = cost.len();
        let directed = !cost.is_symmetric();
        let mut lp = Lp::new()?;
        let (rows, rhs) = if directed { (2 * n, 1.0) } else { (n, 2.0) };
        let entries: Vec<&Entries> = vec![&[]; rows];
        lp.add_rows(&vec![rhs; rows], &vec![rhs; rows], &entries)?;
        let mut me = SubtourLp {
            cost,
            n,
            directed,
            lp,
            edges: Vec::new(),
            column: HashMap::new(),
            cuts: Vec::new(),
            cuts_added: 0,
            blossoms_added: 0,
            combs_added: 0,
            edges_priced_in: 0,
            fixed: HashMap::new(),
            excluded: None,
        };
        me.add_edges(start)?;
        Ok(me)
    }

    /// Rows before the first cut.
    pub fn degree_rows(&self) -> usize {
        if self.directed {
            2 * self.n
        } else {
            self.n
        }
    }

    /// The column key of `(i, j)`: the arc itself, or the edge with its smaller end first.
    pub fn key(&self, i: usize, j: usize) -> (usize, usize) {
        if self.directed {
            (i, j)
        } else {
            (i.min(j), i.max(j))
        }
    }

    /// Every edge or arc of the complete graph not left out and not yet in the programme.
    pub fn all_missing(&self) -> Vec<(usize, usize)> {
        let n = self.n;
        let mut all = Vec::new();
        for i in 0..n {
            let from = if self.directed { 0 } else { i + 1 };
            for j in from..n {
                let out = self.excluded.as_ref().is_some_and(|x| x[i * n + j]);
                if i != j && !out && !self.column.contains_key(&(i, j)) {
                    all.push((i, j));
                }
            }
        }
        all
    }

    /// Adds the edges not yet in the programme, with their entries in the degree rows and in
    /// every cut they cross.
    pub fn add_edges(&mut self, list: &[(usize, usize)]) -> Result<usize, CutsError> {
        let mut fresh = Vec::new();
        for &(i, j) in list {
            let k = self.key(i, j);
            if i != j && !self.column.contains_key(&k) {
                self.column.insert(k, self.edges.len() + fresh.len());
                fresh.push(k);
            }
        }
        let base = self.degree_rows();
        let entries: Vec<Vec<(usize, f64)>> = fresh
            .iter()
            .map(|&(i, j)| {
                let mut e = if self.directed {
                    vec![(i, 1.0), (self.n + j, 1.0)]
                } else {
                    vec![(i, 1.0), (j, 1.0)]
                };
                for (k, c) in self.cuts.iter().enumerate() {
                    let a = c.coef(i, j);
                    if a != 0.0 {
                        e.push((base + k, a));
                    }
                }
                e
            })
            .collect();
        let refs: Vec<&Entries> = entries.iter().map(Vec::as_slice).collect();
        let cost: Vec<f64> = fresh
            .iter()
            .map(|&(i, j)| self.cost.cost(i, j) as f64)
            .collect();
        let k = fresh.len();
        self.lp
            .add_cols(&cost, &vec![0.0; k], &vec![1.0; k], &refs)?;
        self.edges.extend(fresh);
        Ok(k)
    }

    /// Adds the cuts given (subtour cuts and combs).
    pub fn add_cuts(&mut self, cuts: Vec<Cut>) -> Result<(), CutsError> {
        let mut rows = Vec::new();
        let mut lower = Vec::new();
        for cut in cuts {
            let rhs = cut.rhs();
            if !cut.teeth.is_empty() {
                if cut.teeth.iter().all(|t| t.len() == 2) {
                    self.blossoms_added += 1;
                } else {
                    self.combs_added += 1;
                }
            }
            let inside = std::iter::once(&cut.set)
                .chain(&cut.teeth)
                .map(|s| {
                    let mut m = vec![false; self.n];
                    for &v in s {
                        m[v] = true;
                    }
                    m
                })
                .collect();
            let row = CutRow {
                members: cut.set,
                teeth: cut.teeth,
                inside,
                rhs,
                slack: 0,
            };
            let entries: Vec<(usize, f64)> = self
                .edges
                .iter()
                .enumerate()
                .map(|(c, &(i, j))| (c, row.coef(i, j)))
                .filter(|&(_, a)| a != 0.0)
                .collect();
            rows.push(entries);
            lower.push(rhs);
            self.cuts.push(row);
        }
        let refs: Vec<&Entries> = rows.iter().map(Vec::as_slice).collect();
        let k = rows.len();
        self.lp.add_rows(&lower, &vec![f64::INFINITY; k], &refs)?;
        self.cuts_added += k;
        Ok(())
    }

    /// Removes cuts that stayed slack with a zero dual for `after` solves in a row (counted
    /// with the values of the last solve).
    pub fn drop_slack_cuts(&mut self, v: &LpValues, after: usize) -> Result<(), CutsError> {
        let base = self.degree_rows();
        let mut gone = Vec::new();
        for (k, c) in self.cuts.iter_mut().enumerate() {
            let row = base + k;
            let value = v.row_value.get(row).copied().unwrap_or(f64::NEG_INFINITY);
            if value > c.rhs + 1e-6 && v.row_dual.get(row).is_none_or(|d| d.abs() < 1e-12) {
                c.slack += 1;
                if c.slack >= after {
                    gone.push(k);
                }
            } else {
                c.slack = 0;
            }
        }
        if !gone.is_empty() {
            let rows: Vec<usize> = gone.iter().map(|k| base + k).collect();
            self.lp.delete_rows(&rows)?;
            let mut k = 0;
            self.cuts.retain(|_| {
                let keep = !gone.contains(&k);
                k += 1;
                keep
            });
        }
        Ok(())
    }

    /// The support graph of the last solve: edges `i < j` with a positive value; over arcs,
    /// the two directions of each pair summed (what every cut family reads).
    pub fn support(&self, v: &LpValues) -> Vec<Weighted> {
        let positive = self
            .edges
            .iter()
            .zip(&v.x)
            .filter(|(_, &x)| x > SUPPORT_EPS);
        if !self.directed {
            return positive.map(|(&(i, j), &x)| (i, j, x.min(1.0))).collect();
        }
        let mut sum: HashMap<(usize, usize), f64> = HashMap::new();
        for (&(i, j), &x) in positive {
            *sum.entry((i.min(j), i.max(j))).or_insert(0.0) += x;
        }
        let mut out: Vec<Weighted> = sum
            .into_iter()
            .map(|((i, j), x)| (i, j, x.min(1.0)))
            .collect();
        out.sort_by_key(|a| (a.0, a.1));
        out
    }

    /// Calls `f(i, j, reduced cost)` for every column key `(i, j)` of the complete graph
    /// (edges `i < j`, or every arc), with the duals `v` (cut duals below zero taken as zero);
    /// returns the dual objective's constant part, `Σ rhs · dual` over the degree rows and cuts.
    pub fn scan(&self, v: &LpValues, mut f: impl FnMut(usize, usize, f64)) -> f64 {
        let n = self.n;
        let base = self.degree_rows();
        let y = &v.row_dual[..base];
        let pi: Vec<f64> = (0..self.cuts.len())
            .map(|k| v.row_dual.get(base + k).copied().unwrap_or(0.0).max(0.0))
            .collect();
        // Every set of every cut with a positive dual: p[v] = Σ π over the sets holding v,
        // by_node[v] = those sets (cut, set).
        let mut p = vec![0.0; n];
        let mut by_node: Vec<Vec<(usize, usize)>> = vec![Vec::new(); n];
        for (k, c) in self.cuts.iter().enumerate() {
            if pi[k] > 0.0 {
                for (s, set) in c.sets().enumerate() {
                    for &m in set {
                        p[m] += pi[k];
                        by_node[m].push((k, s));
                    }
                }
            }
        }
        let set = |k: usize, s: usize| -> &Vec<usize> {
            if s == 0 {
                &self.cuts[k].members
            } else {
                &self.cuts[k].teeth[s - 1]
            }
        };
        // q[j]: Σ π over the sets holding both i and j, for the current i; an edge crosses a
        // set holding exactly one of its ends.
        let mut q = vec![0.0; n];
        for i in 0..n {
            for &(k, s) in &by_node[i] {
                for &m in set(k, s) {
                    q[m] += pi[k];
                }
            }
            let from = if self.directed { 0 } else { i + 1 };
            for j in from..n {
                if j == i {
                    continue;
                }
                let crossing = p[i] + p[j] - 2.0 * q[j];
                let degree = if self.directed {
                    y[i] + y[n + j]
                } else {
                    y[i] + y[j]
                };
                f(i, j, self.cost.cost(i, j) as f64 - degree - crossing);
            }
            for &(k, s) in &by_node[i] {
                for &m in set(k, s) {
                    q[m] = 0.0;
                }
            }
        }
        let degree_rhs = if self.directed { 1.0 } else { 2.0 };
        degree_rhs * y.iter().sum::<f64>()
            + self
                .cuts
                .iter()
                .zip(&pi)
                .map(|(c, p)| c.rhs * p)
                .sum::<f64>()
    }

    /// Prices every edge of the complete graph with the duals of the last solve: the
    /// Lagrangian bound over the tours that keep the current fixings (`fixed`: columns held at
    /// 0 or 1; `excluded`: edges no better tour uses), and the free edges outside the
    /// programme of negative reduced cost (most negative first, at most `keep`).
    pub fn price(&self, v: &LpValues, keep: usize) -> (f64, Vec<(usize, usize)>) {
        let n = self.n;
        let mut bound = 0.0;
        let mut negative: Vec<(f64, usize, usize)> = Vec::new();
        let base = self.scan(v, |i, j, rc| {
            match self.column.get(&(i, j)) {
                Some(c) => match self.fixed.get(c) {
                    Some(true) => {
                        bound += rc;
                        return;
                    }
                    Some(false) => return,
                    None => {}
                },
                None => {
                    if self.excluded.as_ref().is_some_and(|x| x[i * n + j]) {
                        return;
                    }
                }
            }
            if rc < 0.0 {
                bound += rc;
                if rc < -PRICE_TOL && !self.column.contains_key(&(i, j)) {
                    negative.push((rc, i, j));
                }
            }
        });
        negative.sort_by(|a, b| a.0.total_cmp(&b.0));
        negative.truncate(keep);
        (
            base + bound,
            negative.into_iter().map(|(_, i, j)| (i, j)).collect(),
        )
    }
}

/// A nearest-neighbour tour from node 0 (O(n²) cost calls).
fn nearest_neighbour_tour<C: Cost + ?Sized>(cost: &C) -> Vec<usize> {
    let n = cost.len();
    let mut used = vec![false; n];
    let mut tour = Vec::with_capacity(n);
    let mut at = 0;
    used[0] = true;
    tour.push(0);
    for _ in 1..n {
        let next = (0..n)
            .filter(|&j| !used[j])
            .min_by_key(|&j| cost.cost(at, j))
            .unwrap_or(0);
        used[next] = true;
        tour.push(next);
        at = next;
    }
    tour
}

/// The starting edge set: candidate neighbours and the tour's edges.
pub(crate) fn starting_edges<C: Cost + ?Sized>(
    cost: &C,
    neighbours: usize,
    tour: Option<&[usize]>,
) -> Result<Vec<(usize, usize)>, CutsError> {
    let n = cost.len();
    let tour: Vec<usize> = match tour {
        Some(t) => {
            let mut seen = vec![false; n];
            if t.len() != n
                || t.iter()
                    .any(|&v| v >= n || std::mem::replace(&mut seen[v], true))
            {
                return Err(CutsError::BadTour { n });
            }
            t.to_vec()
        }
        None => nearest_neighbour_tour(cost),
    };
    let mut out: Vec<(usize, usize)> = (0..n).map(|k| (tour[k], tour[(k + 1) % n])).collect();
    let k = neighbours.min(n - 1);
    if k > 0 {
        let lists = candidates(cost, k, CandidateSource::Quadrant);
        for i in 0..n {
            // Both directions: over arcs, a near pair is a candidate either way.
            out.extend(
                lists
                    .out(i)
                    .iter()
                    .flat_map(|&j| [(i, j as usize), (j as usize, i)]),
            );
        }
    }
    Ok(out)
}

/// Refuses costs the programme is not for: fewer than 3 nodes.
pub(crate) fn check_costs<C: Cost + ?Sized>(cost: &C) -> Result<(), CutsError> {
    let n = cost.len();
    if n < 3 {
        return Err(CutsError::TooSmall { n });
    }
    Ok(())
}

/// Integer tour lengths: a bound `b` proves no tour shorter than `ceil(b)` (less a hair for
/// the floating point of the duals).
pub(crate) fn ceil_bound(b: f64) -> f64 {
    (b - 1e-6 - 1e-9 * b.abs()).ceil()
}

/// The subtour bound of `cost` (over arcs when asymmetric), with blossoms and combs when
/// asked for: see the module documentation.
pub fn subtour_bound<C: Cost + ?Sized>(
    cost: &C,
    options: &SubtourOptions,
    stop: &StopHandle,
) -> Result<SubtourBound, CutsError> {
    subtour_bound_dyn(cost.as_dyn_cost(), options, stop)
}

/// [`subtour_bound`], compiled here once, on any cost.
fn subtour_bound_dyn(
    cost: &dyn Cost,
    options: &SubtourOptions,
    stop: &StopHandle,
) -> Result<SubtourBound, CutsError> {
    let began = Instant::now();
    let n = cost.len();
    check_costs(cost)?;
    let deadline = options.time_limit.map(|d| began + d);
    let start = starting_edges(cost, options.neighbours, options.tour.as_deref())?;
    let mut sub = SubtourLp::new(cost, &start)?;
    for &(a, b) in &options.fixed_edges {
        if a >= n || b >= n || a == b {
            return Err(CutsError::BadFixedEdge { a, b, n });
        }
    }
    sub.add_edges(&options.fixed_edges)?;
    for &(a, b) in &options.fixed_edges {
        if let Some(&c) = sub.column.get(&sub.key(a, b)) {
            sub.lp.set_col_bounds(c, 1.0, 1.0)?;
            sub.fixed.insert(c, true);
        }
    }
    // With fixed edges the starting set may not hold a tour that uses them: every edge comes
    // in once before the programme is called infeasible.
    let mut widened = false;
    let mut run = Run {
        solves: 0,
        best: f64::NEG_INFINITY,
        subtour_only: None,
        with_blossoms: None,
        value: f64::NAN,
        support: Vec::new(),
    };
    // The families in use: subtour cuts (stage 0), then blossoms (1), then combs (2).
    let mut stage = Stage::Subtour;
    let mut stopped = None;
    'solve: loop {
        if stop.is_stopped() {
            stopped = Some("stopped");
        } else if deadline.is_some_and(|d| Instant::now() >= d) {
            stopped = Some("time_limit");
        }
        if stopped.is_some() && run.solves > 0 {
            break;
        }
        if let Some(d) = deadline {
            let left = d.saturating_duration_since(Instant::now()).as_secs_f64();
            sub.lp.set_time_limit(left.max(0.01))?;
        }
        match sub.lp.solve() {
            Ok(LpStatus::Optimal) => {}
            Ok(LpStatus::Infeasible) if !options.fixed_edges.is_empty() => {
                if widened {
                    return Err(CutsError::FixedEdgesInfeasible {
                        count: options.fixed_edges.len(),
                    });
                }
                widened = true;
                let all = sub.all_missing();
                sub.edges_priced_in += sub.add_edges(&all)?;
                continue;
            }
            Ok(LpStatus::Infeasible) => return Err(CutsError::Infeasible),
            // A solve cut short by the time limit: the bounds of the solves before stand.
            Err(LpError::Unsolved { .. }) if run.solves > 0 && deadline.is_some() => {
                stopped = Some("time_limit");
                break;
            }
            Err(e) => return Err(e.into()),
        }
        run.solves += 1;
        let v = sub.lp.values();
        run.value = sub.lp.objective();
        run.support = sub.support(&v);
        // Every solve's duals give a true bound; the best of them is kept.
        let (bound, fresh) = sub.price(&v, n.max(100));
        run.best = run.best.max(bound);
        let cuts = separate(n, &run.support, stage);
        if !cuts.is_empty() {
            sub.drop_slack_cuts(&v, options.slack_solves)?;
            sub.add_cuts(cuts)?;
            continue;
        }
        if !fresh.is_empty() {
            sub.edges_priced_in += sub.add_edges(&fresh)?;
            continue;
        }
        // The LP optimum over every edge, no cut of the families in use violated: the bound
        // of these families; the next family in turn, if asked for.
        loop {
            match stage {
                Stage::Subtour => run.subtour_only = Some(bound),
                Stage::Blossom => run.with_blossoms = Some(bound),
                Stage::Comb => {}
            }
            stage = match stage {
                Stage::Subtour if options.blossoms => Stage::Blossom,
                Stage::Subtour | Stage::Blossom if options.combs => Stage::Comb,
                _ => return finish(&sub, run, true, None, began),
            };
            let cuts = separate(n, &run.support, stage);
            if !cuts.is_empty() {
                sub.add_cuts(cuts)?;
                continue 'solve;
            }
        }
    }
    finish(&sub, run, false, stopped, began)
}

/// The cut families in use, in the order they join.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Stage {
    /// Subtour cuts only.
    Subtour,
    /// Subtour cuts, then blossoms.
    Blossom,
    /// Subtour cuts, blossoms, then combs.
    Comb,
}

/// Violated cuts at the point `support`: subtour cuts, else (from stage [`Stage::Blossom`])
/// blossoms, else (from stage [`Stage::Comb`]) combs.
pub(crate) fn separate(n: usize, support: &[Weighted], stage: Stage) -> Vec<Cut> {
    let cuts: Vec<Cut> = violated_subtours(n, support, CUT_TOL)
        .into_iter()
        .map(Cut::subtour)
        .collect();
    if !cuts.is_empty() || stage == Stage::Subtour {
        return cuts;
    }
    let cuts = violated_blossoms(n, support, CUT_TOL);
    if !cuts.is_empty() || stage == Stage::Blossom {
        return cuts;
    }
    violated_combs(n, support, CUT_TOL)
}

/// What the loop keeps between solves.
struct Run {
    solves: usize,
    /// The best Lagrangian bound so far.
    best: f64,
    /// The bound when subtour cuts alone were done.
    subtour_only: Option<f64>,
    /// The bound when blossoms were done too.
    with_blossoms: Option<f64>,
    /// The last LP's value and point.
    value: f64,
    support: Vec<Weighted>,
}

fn finish<C: Cost + ?Sized>(
    sub: &SubtourLp<'_, C>,
    run: Run,
    complete: bool,
    stopped: Option<&'static str>,
    began: Instant,
) -> Result<SubtourBound, CutsError> {
    let bound = run.best;
    let lower = ceil_bound(bound);
    if !(lower.is_finite() && lower.abs() < 9.0e18) {
        return Err(CutsError::Overflow { value: bound });
    }
    Ok(SubtourBound {
        lower_bound: lower as i64,
        lagrangian: bound,
        lp_value: run.value,
        subtour_only: run.subtour_only,
        with_blossoms: run.with_blossoms,
        complete,
        stopped,
        solves: run.solves,
        cuts_added: sub.cuts_added,
        blossoms_added: sub.blossoms_added,
        combs_added: sub.combs_added,
        cuts_in_lp: sub.cuts.len(),
        edges_in_lp: sub.edges.len(),
        edges_priced_in: sub.edges_priced_in,
        support: run.support,
        cuts: sub
            .cuts
            .iter()
            .map(|c| Cut {
                set: c.members.clone(),
                teeth: c.teeth.clone(),
            })
            .collect(),
        seconds: began.elapsed().as_secs_f64(),
    })
}
