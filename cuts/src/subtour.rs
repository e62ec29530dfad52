//! The subtour linear programme of symmetric costs, solved by cutting planes and column
//! generation.
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

use crate::blossom::violated_blossoms;
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
}

impl Default for SubtourOptions {
    fn default() -> Self {
        SubtourOptions {
            time_limit: None,
            neighbours: 10,
            tour: None,
            slack_solves: 3,
            blossoms: true,
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
    /// Why the loop ended early, when it did (`time_limit`, `stopped`).
    pub stopped: Option<&'static str>,
    /// LP solves.
    pub solves: usize,
    /// Cuts added in all (subtour cuts and blossoms).
    pub cuts_added: usize,
    /// Blossoms among them.
    pub blossoms_added: usize,
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
    /// Asymmetric costs (this programme is over undirected edges).
    #[error("the subtour programme over edges needs symmetric costs")]
    Asymmetric,
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
}

/// A cut to add: a node set `S` and, for a blossom, its teeth (edges with one end in `S`).
///
/// With no teeth it is the subtour cut `x(δ(S)) ≥ 2`; with an odd number `|T| ≥ 3` of
/// node-disjoint teeth it is the blossom (2-matching) inequality
/// `x(δ(S) \ T) − x(T) ≥ 1 − |T|`.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct Cut {
    /// The node set (the handle of a blossom), sorted.
    pub set: Vec<usize>,
    /// Teeth of a blossom, each `(i, j)` with `i < j`; empty for a subtour cut.
    pub teeth: Vec<(usize, usize)>,
}

impl Cut {
    /// A subtour cut on `set`.
    pub fn subtour(set: Vec<usize>) -> Cut {
        Cut {
            set,
            teeth: Vec::new(),
        }
    }
}

/// A cut in the programme.
#[derive(Clone, Debug)]
pub(crate) struct CutRow {
    /// The node set, sorted.
    pub members: Vec<usize>,
    /// Membership of every node.
    pub inside: Vec<bool>,
    /// Teeth (coefficient −1), sorted; empty for a subtour cut.
    pub teeth: Vec<(usize, usize)>,
    /// Right-hand side: 2, or 1 − |teeth| for a blossom.
    pub rhs: f64,
    /// Solves in a row it stayed slack with a zero dual.
    pub slack: usize,
}

impl CutRow {
    /// The coefficient of edge `{i, j}` in the row.
    pub fn coef(&self, i: usize, j: usize) -> f64 {
        if self.inside[i] == self.inside[j] {
            0.0
        } else if !self.teeth.is_empty() && self.teeth.binary_search(&key(i, j)).is_ok() {
            -1.0
        } else {
            1.0
        }
    }
}

/// The subtour programme held between solves.
pub(crate) struct SubtourLp<'c, C: Cost + ?Sized> {
    pub cost: &'c C,
    pub n: usize,
    pub lp: Lp,
    /// Ends of each column's edge (i < j).
    pub edges: Vec<(usize, usize)>,
    pub column: HashMap<(usize, usize), usize>,
    /// Cut rows, in row order after the n degree rows.
    pub cuts: Vec<CutRow>,
    pub cuts_added: usize,
    /// Blossoms among them.
    pub blossoms_added: usize,
    pub edges_priced_in: usize,
    /// Columns held at 0 or 1 (branching, reduced-cost fixing).
    pub fixed: HashMap<usize, bool>,
    /// Edges `i < j` (index `i·n + j`) left out of every tour that could beat the best known:
    /// pricing skips them.
    pub excluded: Option<Vec<bool>>,
}

fn key(i: usize, j: usize) -> (usize, usize) {
    (i.min(j), i.max(j))
}

impl<'c, C: Cost + ?Sized> SubtourLp<'c, C> {
    /// Degree rows and the starting edges.
    pub fn new(cost: &'c C, start: &[(usize, usize)]) -> Result<Self, CutsError> {
        let n = cost.len();
        let mut lp = Lp::new()?;
        let entries: Vec<&Entries> = vec![&[]; n];
        lp.add_rows(&vec![2.0; n], &vec![2.0; n], &entries)?;
        let mut me = SubtourLp {
            cost,
            n,
            lp,
            edges: Vec::new(),
            column: HashMap::new(),
            cuts: Vec::new(),
            cuts_added: 0,
            blossoms_added: 0,
            edges_priced_in: 0,
            fixed: HashMap::new(),
            excluded: None,
        };
        me.add_edges(start)?;
        Ok(me)
    }

    /// Adds the edges not yet in the programme, with their entries in the degree rows and in
    /// every cut they cross.
    pub fn add_edges(&mut self, list: &[(usize, usize)]) -> Result<usize, CutsError> {
        let mut fresh = Vec::new();
        for &(i, j) in list {
            let k = key(i, j);
            if i != j && !self.column.contains_key(&k) {
                self.column.insert(k, self.edges.len() + fresh.len());
                fresh.push(k);
            }
        }
        let entries: Vec<Vec<(usize, f64)>> = fresh
            .iter()
            .map(|&(i, j)| {
                let mut e = vec![(i, 1.0), (j, 1.0)];
                for (k, c) in self.cuts.iter().enumerate() {
                    let a = c.coef(i, j);
                    if a != 0.0 {
                        e.push((self.n + k, a));
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

    /// Adds the cuts given (subtour cuts and blossoms).
    pub fn add_cuts(&mut self, cuts: Vec<Cut>) -> Result<(), CutsError> {
        let mut rows = Vec::new();
        let mut lower = Vec::new();
        for cut in cuts {
            let mut inside = vec![false; self.n];
            for &v in &cut.set {
                inside[v] = true;
            }
            let mut teeth = cut.teeth;
            teeth.sort_unstable();
            let rhs = if teeth.is_empty() {
                2.0
            } else {
                self.blossoms_added += 1;
                1.0 - teeth.len() as f64
            };
            let row = CutRow {
                members: cut.set,
                inside,
                teeth,
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
        let mut gone = Vec::new();
        for (k, c) in self.cuts.iter_mut().enumerate() {
            let row = self.n + k;
            let value: f64 = self
                .edges
                .iter()
                .zip(&v.x)
                .map(|(&(i, j), &x)| c.coef(i, j) * x)
                .sum();
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
            let rows: Vec<usize> = gone.iter().map(|k| self.n + k).collect();
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

    /// The support graph of the last solve.
    pub fn support(&self, v: &LpValues) -> Vec<Weighted> {
        self.edges
            .iter()
            .zip(&v.x)
            .filter(|(_, &x)| x > SUPPORT_EPS)
            .map(|(&(i, j), &x)| (i, j, x.min(1.0)))
            .collect()
    }

    /// Calls `f(i, j, reduced cost)` for every edge `i < j` of the complete graph, with the
    /// duals `v` (cut duals below zero taken as zero); returns `Σ 2 y_v + Σ rhs_S π_S`.
    pub fn scan(&self, v: &LpValues, mut f: impl FnMut(usize, usize, f64)) -> f64 {
        let n = self.n;
        let y = &v.row_dual[..n];
        let pi: Vec<f64> = (0..self.cuts.len())
            .map(|k| v.row_dual.get(n + k).copied().unwrap_or(0.0).max(0.0))
            .collect();
        // p[v]: Σ π over cuts holding v; by_node[v]: those cuts.
        let mut p = vec![0.0; n];
        let mut by_node: Vec<Vec<usize>> = vec![Vec::new(); n];
        for (k, c) in self.cuts.iter().enumerate() {
            if pi[k] > 0.0 {
                for &m in &c.members {
                    p[m] += pi[k];
                    by_node[m].push(k);
                }
            }
        }
        // Teeth have coefficient −1 where the membership sum counts +1: 2π back for each.
        let mut teeth: HashMap<(usize, usize), f64> = HashMap::new();
        for (k, c) in self.cuts.iter().enumerate() {
            if pi[k] > 0.0 {
                for &t in &c.teeth {
                    *teeth.entry(t).or_insert(0.0) += 2.0 * pi[k];
                }
            }
        }
        // q[j]: Σ π over cuts holding both i and j, for the current i.
        let mut q = vec![0.0; n];
        for i in 0..n {
            for &k in &by_node[i] {
                for &m in &self.cuts[k].members {
                    q[m] += pi[k];
                }
            }
            for j in i + 1..n {
                let crossing = p[i] + p[j] - 2.0 * q[j];
                let mut rc = self.cost.cost(i, j) as f64 - y[i] - y[j] - crossing;
                if !teeth.is_empty() {
                    rc += teeth.get(&(i, j)).copied().unwrap_or(0.0);
                }
                f(i, j, rc);
            }
            for &k in &by_node[i] {
                for &m in &self.cuts[k].members {
                    q[m] = 0.0;
                }
            }
        }
        2.0 * y.iter().sum::<f64>()
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
            out.extend(lists.out(i).iter().map(|&j| (i, j as usize)));
        }
    }
    Ok(out)
}

/// Refuses costs the programme is not for: fewer than 3 nodes, or asymmetric.
pub(crate) fn check_costs<C: Cost + ?Sized>(cost: &C) -> Result<(), CutsError> {
    let n = cost.len();
    if n < 3 {
        return Err(CutsError::TooSmall { n });
    }
    if !cost.is_symmetric() {
        return Err(CutsError::Asymmetric);
    }
    Ok(())
}

/// Integer tour lengths: a bound `b` proves no tour shorter than `ceil(b)` (less a hair for
/// the floating point of the duals).
pub(crate) fn ceil_bound(b: f64) -> f64 {
    (b - 1e-6 - 1e-9 * b.abs()).ceil()
}

/// The subtour bound of symmetric `cost`: see the module documentation.
pub fn subtour_bound<C: Cost + ?Sized>(
    cost: &C,
    options: &SubtourOptions,
    stop: &StopHandle,
) -> Result<SubtourBound, CutsError> {
    let began = Instant::now();
    let n = cost.len();
    check_costs(cost)?;
    let deadline = options.time_limit.map(|d| began + d);
    let start = starting_edges(cost, options.neighbours, options.tour.as_deref())?;
    let mut sub = SubtourLp::new(cost, &start)?;
    let mut run = Run {
        solves: 0,
        best: f64::NEG_INFINITY,
        subtour_only: None,
        value: f64::NAN,
        support: Vec::new(),
    };
    let mut blossom_stage = false;
    let mut stopped = None;
    loop {
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
        let mut cuts: Vec<Cut> = violated_subtours(n, &run.support, CUT_TOL)
            .into_iter()
            .map(Cut::subtour)
            .collect();
        if cuts.is_empty() && blossom_stage {
            cuts = violated_blossoms(n, &run.support, CUT_TOL);
        }
        if !cuts.is_empty() {
            sub.drop_slack_cuts(&v, options.slack_solves)?;
            sub.add_cuts(cuts)?;
            continue;
        }
        if !fresh.is_empty() {
            sub.edges_priced_in += sub.add_edges(&fresh)?;
            continue;
        }
        // The LP optimum over every edge, no cut of the families in use violated.
        if run.subtour_only.is_none() {
            run.subtour_only = Some(bound);
        }
        if options.blossoms && !blossom_stage {
            blossom_stage = true;
            let b = violated_blossoms(n, &run.support, CUT_TOL);
            if !b.is_empty() {
                sub.add_cuts(b)?;
                continue;
            }
        }
        return finish(&sub, run, true, None, began);
    }
    finish(&sub, run, false, stopped, began)
}

/// What the loop keeps between solves.
struct Run {
    solves: usize,
    /// The best Lagrangian bound so far.
    best: f64,
    /// The bound when subtour cuts alone were done.
    subtour_only: Option<f64>,
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
        complete,
        stopped,
        solves: run.solves,
        cuts_added: sub.cuts_added,
        blossoms_added: sub.blossoms_added,
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
