//! Fixed edges: edges (for asymmetric costs, arcs) every tour must use, honoured by solving on
//! costs where each of them is made very cheap ([`FixedCost`]).
//!
//! # The transformation
//!
//! For `n` nodes whose costs between distinct nodes lie in `[cmin, cmax]` (from
//! [`Cost::max_cost_hint`] as `[-h, h]` when there is one, otherwise from a scan of all pairs),
//! every fixed edge costs its own cost less `M = n (cmax - cmin) + 1`, every other step keeps
//! its cost. Two tours differ by at most `n (cmax - cmin) < M` on the caller's costs, so a tour
//! that uses all `k` fixed edges is shorter on the transformed costs than every tour that misses
//! one of them, and among the tours that use them all the order is unchanged: a tour's length
//! on the caller's costs is its transformed length plus `k M` ([`FixedCost::offset`]). Every
//! method, bound and exact proof then works on the transformed costs as they are: the optimum
//! there is the optimum among the tours that use the fixed edges, and a lower bound there plus
//! `k M` bounds every such tour.
//!
//! The fixed edges are checked first ([`FixedCost::new`]): nodes in range, no loops or
//! duplicates, and they must fit in one tour (symmetric: at most two fixed edges at a node, no
//! cycle short of the whole tour; asymmetric: at most one fixed arc out of and one into a node,
//! no cycle short of the whole tour). All constants are computed with checked arithmetic; when a
//! transformed tour could overflow `i64`, the constructor refuses.
//!
//! The neighbour lists come from the caller's costs (with their geometry) and get each node's
//! fixed partners put first ([`FixedCost::neighbours`]), where their cost puts them anyway. A
//! tour a method returns is read back by [`FixedCost::tour_back`]: should it miss a fixed edge
//! (a construction, or a search stopped before its first improvement), the fixed paths are
//! put together where the tour first meets them; the answer is then checked to use every fixed
//! edge, and refused ([`FixedEdgesError::Broken`]) if it does not.

use crate::cost::Cost;
use crate::neighbours::Neighbours;
use crate::transform::ends::cost_range;
use std::fmt;

/// No partner in a slot of [`FixedCost`]'s table.
const NONE: u32 = u32::MAX;

/// A fixed edge as error messages show it: `a-b` for symmetric costs, `a->b` for asymmetric
/// ones (0-based node ids).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FixedEdge {
    /// The first node as given.
    pub a: usize,
    /// The second node as given.
    pub b: usize,
    /// True for an arc `a -> b` of asymmetric costs.
    pub directed: bool,
}

impl fmt::Display for FixedEdge {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let joint = if self.directed { "->" } else { "-" };
        write!(f, "{}{joint}{}", self.a, self.b)
    }
}

/// Why fixed edges cannot be honoured.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum FixedEdgesError {
    /// A node outside `0..n`.
    #[error("fixed edge {edge}: node {node} is out of range: the instance has nodes 0..{n}")]
    OutOfRange {
        /// The edge.
        edge: FixedEdge,
        /// The node out of range.
        node: usize,
        /// Nodes in the instance.
        n: usize,
    },
    /// An edge from a node to itself.
    #[error("fixed edge {edge} is a loop: a tour never steps from a node to itself")]
    Loop {
        /// The edge.
        edge: FixedEdge,
    },
    /// The same edge twice.
    #[error("fixed edge {edge} is given twice")]
    Duplicate {
        /// The edge.
        edge: FixedEdge,
    },
    /// Too many fixed edges at one node for a tour to use them all.
    #[error("fixed edge {edge}: node {node} would have {what}; a tour cannot use them all")]
    Degree {
        /// The edge that was one too many.
        edge: FixedEdge,
        /// The node.
        node: usize,
        /// `three fixed edges`, `two fixed arcs out` or `two fixed arcs in`.
        what: &'static str,
    },
    /// The edge closes a cycle of fixed edges through fewer than all nodes.
    #[error(
        "fixed edge {edge} closes a cycle of fixed edges through {len} of the {n} nodes; a \
         tour cannot use them all"
    )]
    Cycle {
        /// The edge that closes the cycle.
        edge: FixedEdge,
        /// Nodes on the cycle.
        len: usize,
        /// Nodes in the instance.
        n: usize,
    },
    /// The constant that makes fixed edges cheap would let tour lengths overflow `i64`.
    #[error(
        "costs spanning {span} over {n} nodes are too large for fixed edges: the constant that \
         makes them cheap could overflow a 64-bit length; scale them down"
    )]
    TooLarge {
        /// An upper bound on `cmax - cmin` (saturated).
        span: i64,
        /// Nodes in the instance.
        n: usize,
    },
    /// Fixed edges asked together with path ends.
    #[error("fixed edges are honoured for closed tours only, not together with {ends} ends")]
    Path {
        /// The ends' name (`open`, `start`, `end`, `start-end`).
        ends: &'static str,
    },
    /// A method returned a tour without a fixed edge (refused rather than returned).
    #[error("the tour found does not use fixed edge {edge}; it is refused")]
    Broken {
        /// The edge missing.
        edge: FixedEdge,
    },
}

/// The caller's costs with every fixed edge made cheaper by a constant `M` (see the
/// [module documentation](self)).
pub(crate) struct FixedCost<'a, C: Cost + ?Sized> {
    inner: &'a C,
    n: usize,
    symmetric: bool,
    /// Symmetric: the (up to two) fixed partners of each node; asymmetric: its fixed successor
    /// and its fixed predecessor. [`NONE`] where there is none.
    partner: Vec<[u32; 2]>,
    /// The fixed edges as given.
    edges: Vec<(usize, usize)>,
    /// `M`.
    bonus: i64,
    /// `k M`.
    offset: i64,
    /// `n cmax`: no tour on the caller's costs is longer.
    top: i64,
    /// An upper bound on every `|cost|` of the transformed costs.
    hint: i64,
}

/// Union–find over the nodes, with component sizes, to find cycles of fixed edges.
struct Components {
    parent: Vec<usize>,
    size: Vec<usize>,
}

impl Components {
    fn new(n: usize) -> Self {
        Components {
            parent: (0..n).collect(),
            size: vec![1; n],
        }
    }

    fn root(&mut self, mut v: usize) -> usize {
        while self.parent[v] != v {
            self.parent[v] = self.parent[self.parent[v]];
            v = self.parent[v];
        }
        v
    }

    /// Joins the components of `a` and `b`; `Err(size)` when they are one already.
    fn join(&mut self, a: usize, b: usize) -> Result<(), usize> {
        let (ra, rb) = (self.root(a), self.root(b));
        if ra == rb {
            return Err(self.size[ra]);
        }
        let (big, small) = if self.size[ra] >= self.size[rb] {
            (ra, rb)
        } else {
            (rb, ra)
        };
        self.parent[small] = big;
        self.size[big] += self.size[small];
        Ok(())
    }
}

impl<'a, C: Cost + ?Sized> FixedCost<'a, C> {
    /// Checks `edges` against `inner` and builds the transformed costs.
    pub(crate) fn new(inner: &'a C, edges: &[(usize, usize)]) -> Result<Self, FixedEdgesError> {
        let n = inner.len();
        let symmetric = inner.is_symmetric();
        let mut partner = vec![[NONE; 2]; n];
        let mut parts = Components::new(n);
        for &(a, b) in edges {
            let edge = FixedEdge {
                a,
                b,
                directed: !symmetric,
            };
            if let Some(node) = [a, b].into_iter().find(|&v| v >= n) {
                return Err(FixedEdgesError::OutOfRange { edge, node, n });
            }
            if a == b {
                return Err(FixedEdgesError::Loop { edge });
            }
            let taken = |slots: &[u32; 2], v: usize| slots.contains(&(v as u32));
            let duplicate = if symmetric {
                taken(&partner[a], b)
            } else {
                partner[a][0] == b as u32
            };
            if duplicate {
                return Err(FixedEdgesError::Duplicate { edge });
            }
            if symmetric {
                for (v, w) in [(a, b), (b, a)] {
                    let slot = partner[v].iter().position(|&p| p == NONE).ok_or(
                        FixedEdgesError::Degree {
                            edge,
                            node: v,
                            what: "three fixed edges",
                        },
                    )?;
                    partner[v][slot] = w as u32;
                }
            } else {
                let degree = |node, what| FixedEdgesError::Degree { edge, node, what };
                if partner[a][0] != NONE {
                    return Err(degree(a, "two fixed arcs out"));
                }
                if partner[b][1] != NONE {
                    return Err(degree(b, "two fixed arcs in"));
                }
                partner[a][0] = b as u32;
                partner[b][1] = a as u32;
            }
            if let Err(len) = parts.join(a, b) {
                if len < n {
                    return Err(FixedEdgesError::Cycle { edge, len, n });
                }
            }
        }
        let (lo, hi) = cost_range(inner);
        let span = hi.saturating_sub(lo);
        let too_large = FixedEdgesError::TooLarge { span, n };
        let nn = i64::try_from(n).map_err(|_| too_large.clone())?;
        let k = i64::try_from(edges.len()).map_err(|_| too_large.clone())?;
        let bonus = hi
            .checked_sub(lo)
            .and_then(|s| s.checked_mul(nn))
            .and_then(|x| x.checked_add(1))
            .ok_or(too_large.clone())?;
        let hint = lo
            .checked_abs()
            .map(|l| l.max(hi.saturating_abs()))
            .and_then(|m| m.checked_add(bonus))
            .ok_or(too_large.clone())?;
        // Every tour, and the solver's margin of a few moves on top.
        (nn + 8).checked_mul(hint).ok_or(too_large.clone())?;
        let offset = k.checked_mul(bonus).ok_or(too_large.clone())?;
        let top = nn.checked_mul(hi).ok_or(too_large)?;
        Ok(FixedCost {
            inner,
            n,
            symmetric,
            partner,
            edges: edges.to_vec(),
            bonus,
            offset,
            top,
            hint,
        })
    }

    /// True when the step `i -> j` is a fixed edge (or arc).
    #[inline]
    fn is_fixed(&self, i: usize, j: usize) -> bool {
        let p = &self.partner[i];
        let j = j as u32;
        p[0] == j || (self.symmetric && p[1] == j)
    }

    /// `k M`: a tour that uses every fixed edge is this much longer on the caller's costs.
    pub(crate) fn offset(&self) -> i64 {
        self.offset
    }

    /// The caller's length of a transformed tour of length `length`, when that tour uses every
    /// fixed edge; `None` when it does not (its transformed length is then above `n cmax - k M`).
    pub(crate) fn original_length(&self, length: i64) -> Option<i64> {
        length.checked_add(self.offset).filter(|&l| l <= self.top)
    }

    /// The transformed length of a tour of `length` on the caller's costs that uses every
    /// fixed edge.
    pub(crate) fn transformed_length(&self, length: i64) -> Option<i64> {
        length.checked_sub(self.offset)
    }

    /// The lists of `nb` (of the caller's costs) with each node's fixed partners first (for
    /// asymmetric costs: its fixed successor first among the steps out, its fixed predecessor
    /// among the steps in), the rest in their order, the width kept.
    pub(crate) fn neighbours(&self, nb: &Neighbours) -> Neighbours {
        let k = nb.k();
        let list = |firsts: &[u32], rest: &[u32], into: &mut Vec<u32>| {
            let start = into.len();
            into.extend(firsts.iter().copied().filter(|&p| p != NONE));
            for &j in rest {
                if into.len() - start == k {
                    break;
                }
                if !into[start..].contains(&j) {
                    into.push(j);
                }
            }
            into.truncate(start + k);
        };
        let mut out = Vec::with_capacity(self.n * k);
        let mut inc = Vec::new();
        for i in 0..self.n {
            let p = self.partner[i];
            if self.symmetric {
                list(&p, nb.out(i), &mut out);
            } else {
                list(&p[..1], nb.out(i), &mut out);
                list(&p[1..], nb.incoming(i), &mut inc);
            }
        }
        Neighbours::from_lists(self.n, k, out, inc).unwrap_or_else(|_| nb.clone())
    }

    /// The paths the fixed edges form, each in its order (a node without fixed edges is a path
    /// of its own); `comp[v]` is the index of `v`'s path. When the fixed edges close the whole
    /// tour, one path from node 0.
    fn paths(&self) -> (Vec<Vec<usize>>, Vec<usize>) {
        let n = self.n;
        let mut comp = vec![usize::MAX; n];
        let mut paths: Vec<Vec<usize>> = Vec::new();
        // The next node along the path from `v`, having come from `from`.
        let next = |v: usize, from: usize| -> Option<usize> {
            let p = self.partner[v];
            let step = if self.symmetric {
                p.into_iter().find(|&w| w != NONE && w as usize != from)
            } else {
                Some(p[0]).filter(|&w| w != NONE)
            };
            step.map(|w| w as usize)
        };
        // A path starts at a node with at most one fixed partner (symmetric; its first slot
        // fills first) or without a fixed predecessor (asymmetric): the second slot is free.
        let heads: Vec<usize> = (0..n).filter(|&v| self.partner[v][1] == NONE).collect();
        // No head: the fixed edges are one cycle through every node.
        let starts = if heads.is_empty() && n > 0 {
            vec![0]
        } else {
            heads
        };
        for s in starts {
            if comp[s] != usize::MAX {
                continue;
            }
            let id = paths.len();
            let mut path = vec![s];
            comp[s] = id;
            let (mut from, mut v) = (usize::MAX, s);
            while let Some(w) = next(v, from) {
                if comp[w] != usize::MAX {
                    break;
                }
                comp[w] = id;
                path.push(w);
                (from, v) = (v, w);
            }
            paths.push(path);
        }
        (paths, comp)
    }

    /// The first fixed edge `order` (a closed tour) does not use, if any.
    pub(crate) fn missing(&self, order: &[usize]) -> Option<FixedEdge> {
        let n = order.len();
        let mut pos = vec![usize::MAX; self.n];
        for (p, &v) in order.iter().enumerate() {
            if let Some(slot) = pos.get_mut(v) {
                *slot = p;
            }
        }
        let at = |v: usize| pos.get(v).copied().unwrap_or(usize::MAX);
        self.edges
            .iter()
            .find(|&&(a, b)| {
                let (pa, pb) = (at(a), at(b));
                if pa == usize::MAX || pb == usize::MAX || n < 2 {
                    return true;
                }
                let forward = (pa + 1) % n == pb;
                let backward = (pb + 1) % n == pa;
                !(forward || (self.symmetric && backward))
            })
            .map(|&(a, b)| FixedEdge {
                a,
                b,
                directed: !self.symmetric,
            })
    }

    /// The tour `order` of a method on these costs, as a tour that uses every fixed edge: as it
    /// is when it does; otherwise each fixed path is put in one piece where the tour first meets
    /// one of its nodes (entered at that node when it is an end of a symmetric path). Checked
    /// before it is returned.
    pub(crate) fn tour_back(&self, order: Vec<usize>) -> Result<Vec<usize>, FixedEdgesError> {
        if self.missing(&order).is_none() {
            return Ok(order);
        }
        let (paths, comp) = self.paths();
        let mut placed = vec![false; paths.len()];
        let mut out = Vec::with_capacity(self.n);
        for &v in &order {
            let Some(&c) = comp.get(v) else { continue };
            if c == usize::MAX || placed[c] {
                continue;
            }
            placed[c] = true;
            let path = &paths[c];
            if self.symmetric && path.last() == Some(&v) {
                out.extend(path.iter().rev());
            } else {
                out.extend(path.iter());
            }
        }
        match self.missing(&out) {
            Some(edge) => Err(FixedEdgesError::Broken { edge }),
            None if out.len() != self.n => Err(FixedEdgesError::Broken {
                edge: FixedEdge {
                    a: self.edges.first().map_or(0, |e| e.0),
                    b: self.edges.first().map_or(0, |e| e.1),
                    directed: !self.symmetric,
                },
            }),
            None => Ok(out),
        }
    }
}

impl<C: Cost + ?Sized> Cost for FixedCost<'_, C> {
    fn len(&self) -> usize {
        self.n
    }

    #[inline]
    fn cost(&self, from: usize, to: usize) -> i64 {
        let c = self.inner.cost(from, to);
        if self.is_fixed(from, to) {
            c - self.bonus
        } else {
            c
        }
    }

    fn is_symmetric(&self) -> bool {
        self.symmetric
    }

    fn max_cost_hint(&self) -> Option<i64> {
        Some(self.hint)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::MatrixCost;

    fn line(n: usize, symmetric: bool) -> MatrixCost {
        let rows: Vec<Vec<i64>> = (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| {
                        let d = (i as i64 - j as i64).abs();
                        if symmetric || j >= i { d } else { 2 * d }
                    })
                    .collect()
            })
            .collect();
        MatrixCost::from_rows(&rows).unwrap()
    }

    /// Random costs in `1..1000` (symmetric or not) and `count` fixed edges taken from a random
    /// tour, so that they always fit in one.
    #[allow(clippy::needless_range_loop)]
    fn random_case(
        n: usize,
        seed: u64,
        symmetric: bool,
        count: usize,
    ) -> (MatrixCost, Vec<(usize, usize)>) {
        use rand::seq::SliceRandom;
        use rand::{Rng, SeedableRng};
        let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
        let mut m = vec![vec![0i64; n]; n];
        for i in 0..n {
            for j in 0..n {
                if i != j && (!symmetric || j > i) {
                    m[i][j] = rng.gen_range(1..1000);
                    if symmetric {
                        m[j][i] = m[i][j];
                    }
                }
            }
        }
        let mut order: Vec<usize> = (0..n).collect();
        order.shuffle(&mut rng);
        let edges = (0..count)
            .map(|i| (order[2 * i], order[2 * i + 1]))
            .collect();
        (MatrixCost::from_rows(&m).unwrap(), edges)
    }

    /// The shortest tour that uses every fixed edge, by trying every order from node 0.
    fn brute_force(c: &MatrixCost, edges: &[(usize, usize)]) -> i64 {
        fn uses(order: &[usize], edges: &[(usize, usize)], symmetric: bool) -> bool {
            let n = order.len();
            edges.iter().all(|&(a, b)| {
                (0..n).any(|p| {
                    let (x, y) = (order[p], order[(p + 1) % n]);
                    (x, y) == (a, b) || (symmetric && (y, x) == (a, b))
                })
            })
        }
        fn walk(c: &MatrixCost, edges: &[(usize, usize)], order: &mut Vec<usize>, best: &mut i64) {
            let n = c.len();
            if order.len() == n {
                if uses(order, edges, c.is_symmetric()) {
                    let len: i64 = (0..n).map(|p| c.cost(order[p], order[(p + 1) % n])).sum();
                    *best = (*best).min(len);
                }
                return;
            }
            for v in 1..n {
                if !order.contains(&v) {
                    order.push(v);
                    walk(c, edges, order, best);
                    order.pop();
                }
            }
        }
        let mut best = i64::MAX;
        walk(c, edges, &mut vec![0], &mut best);
        best
    }

    fn assert_uses(order: &[usize], edges: &[(usize, usize)], symmetric: bool, what: &str) {
        let n = order.len();
        for &(a, b) in edges {
            let pa = order.iter().position(|&v| v == a).unwrap();
            let pb = order.iter().position(|&v| v == b).unwrap();
            let ok = (pa + 1) % n == pb || (symmetric && (pb + 1) % n == pa);
            assert!(ok, "{what}: {order:?} misses {a}-{b}");
        }
    }

    // Every method and the exact methods against brute force over the tours that use the
    // fixed edges (up to ten nodes: from ten on, lk searches instead of enumerating).
    #[test]
    fn solves_match_brute_force_over_tours_with_the_fixed_edges() {
        use crate::StopHandle;
        use crate::solve::{ExactMethod, Method, ProveOptions, Solver, prove_optimal};
        for seed in 0..24u64 {
            for symmetric in [true, false] {
                let n = 5 + (seed as usize % 6);
                let count = 1 + (seed as usize / 6) % 2;
                let (c, edges) = random_case(n, seed, symmetric, count);
                let expected = brute_force(&c, &edges);
                let what = format!("seed {seed}, n {n}, symmetric {symmetric}, {edges:?}");
                for method in [Method::Lk, Method::TwoOpt] {
                    let s = Solver::new(&c)
                        .method(method)
                        .seed(seed)
                        .threads(1)
                        .fixed_edges(edges.iter().copied())
                        .solve()
                        .unwrap();
                    assert_eq!(s.length, expected, "{} {what}", method.name());
                    assert_eq!(crate::closed_length(&c, s.tour.order()), Ok(expected));
                    assert_uses(s.tour.order(), &edges, symmetric, &what);
                }
                let mut exact = vec![ExactMethod::DynamicProgramme];
                if symmetric {
                    exact.push(ExactMethod::BranchAndBound);
                }
                for m in exact {
                    let opts = ProveOptions {
                        method: Some(m),
                        fixed_edges: edges.clone(),
                        ..ProveOptions::default()
                    };
                    let cert = prove_optimal(&c, &opts, &StopHandle::new()).unwrap();
                    assert!(cert.proven_optimal, "{} {what}", m.name());
                    assert_eq!(cert.length, expected, "{} {what}", m.name());
                    assert_eq!(cert.lower_bound, Some(expected), "{} {what}", m.name());
                    assert_uses(cert.tour.order(), &edges, symmetric, &what);
                }
            }
        }
    }

    // The bound of solve_with never passes the brute-force optimum over the tours with the
    // fixed edges, and its exact answer and the constructions keep the edges too.
    #[test]
    fn the_bound_and_every_construction_keep_to_the_fixed_edges() {
        use crate::solve::{Method, Settings, solve_with};
        for seed in 0..8u64 {
            for symmetric in [true, false] {
                let (c, edges) = random_case(8, 100 + seed, symmetric, 2);
                let expected = brute_force(&c, &edges);
                let what = format!("seed {seed}, symmetric {symmetric}, {edges:?}");
                let bound = Settings {
                    bound: true,
                    bound_time: 1.0,
                    threads: Some(1),
                    fixed_edges: edges.clone(),
                    ..Settings::default()
                };
                let o = solve_with(&c, &bound, Default::default()).unwrap();
                assert_eq!(o.length, expected, "{what}");
                let b = o.lower_bound.unwrap();
                assert!(b <= expected, "bound {b} above {expected}: {what}");
                let exact = Settings {
                    exact: true,
                    ..bound.clone()
                };
                let o = solve_with(&c, &exact, Default::default()).unwrap();
                assert_eq!(
                    (o.length, o.lower_bound),
                    (expected, Some(expected)),
                    "{what}"
                );
                for method in Method::ALL {
                    let s = Settings {
                        method,
                        bound: false,
                        iterations: Some(20),
                        ..bound.clone()
                    };
                    let o = solve_with(&c, &s, Default::default()).unwrap();
                    assert!(o.length >= expected, "{} {what}", method.name());
                    assert_eq!(crate::closed_length(&c, o.tour.order()), Ok(o.length));
                    assert_uses(o.tour.order(), &edges, symmetric, &what);
                }
            }
        }
    }

    // Larger instances, where lk searches: its tour keeps the edges, and its length is the
    // one branch and bound proves optimal over the tours with those edges.
    #[test]
    fn lk_keeps_the_fixed_edges_where_it_searches() {
        use crate::StopHandle;
        use crate::solve::{Method, ProveOptions, Solver, prove_optimal};
        for seed in 0..4u64 {
            for symmetric in [true, false] {
                let (c, edges) = random_case(14, 200 + seed, symmetric, 3);
                let what = format!("seed {seed}, symmetric {symmetric}, {edges:?}");
                let s = Solver::new(&c)
                    .method(Method::Lk)
                    .seed(seed)
                    .threads(1)
                    .fixed_edges(edges.iter().copied())
                    .solve()
                    .unwrap();
                assert_uses(s.tour.order(), &edges, symmetric, &what);
                let opts = ProveOptions {
                    fixed_edges: edges.clone(),
                    ..ProveOptions::default()
                };
                let cert = prove_optimal(&c, &opts, &StopHandle::new()).unwrap();
                assert!(cert.proven_optimal, "{what}");
                assert!(s.length >= cert.length, "{what}");
                assert!(
                    s.length * 100 <= cert.length * 102,
                    "{} vs {}: {what}",
                    s.length,
                    cert.length
                );
                // Without the fixed edges the optimum is never longer.
                let free = prove_optimal(&c, &ProveOptions::default(), &StopHandle::new()).unwrap();
                assert!(free.length <= cert.length, "{what}");
            }
        }
    }

    #[test]
    fn refusals_reach_the_solver_and_paths_are_refused() {
        use crate::solve::{SolveError, Solver};
        let s = line(6, true);
        let e = Solver::new(&s)
            .fixed_edges([(0, 1), (1, 2), (2, 0)])
            .solve()
            .unwrap_err();
        assert!(
            matches!(
                e,
                SolveError::FixedEdges(FixedEdgesError::Cycle { len: 3, .. })
            ),
            "{e}"
        );
        let e = Solver::new(&s)
            .fixed_edges([(0, 1)])
            .ends(crate::Ends::Open)
            .solve()
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "fixed edges are honoured for closed tours only, not together with open ends"
        );
        let opts = crate::ProveOptions {
            fixed_edges: vec![(4, 9)],
            ..Default::default()
        };
        let e = crate::prove_optimal(&s, &opts, &crate::StopHandle::new()).unwrap_err();
        assert!(
            e.to_string()
                .starts_with("fixed edge 4-9: node 9 is out of range"),
            "{e}"
        );
    }

    #[test]
    fn contradictory_edges_are_refused_naming_the_edge() {
        let s = line(5, true);
        let a = line(5, false);
        type Case<'a> = (&'a MatrixCost, &'a [(usize, usize)], &'a str);
        let cases: [Case; 9] = [
            (
                &s,
                &[(0, 5)],
                "fixed edge 0-5: node 5 is out of range: the instance has nodes 0..5",
            ),
            (&s, &[(2, 2)], "fixed edge 2-2 is a loop"),
            (&s, &[(1, 2), (2, 1)], "fixed edge 2-1 is given twice"),
            (&a, &[(1, 2), (1, 2)], "fixed edge 1->2 is given twice"),
            (
                &s,
                &[(0, 1), (0, 2), (0, 3)],
                "fixed edge 0-3: node 0 would have three fixed edges",
            ),
            (
                &a,
                &[(0, 1), (0, 2)],
                "fixed edge 0->2: node 0 would have two fixed arcs out",
            ),
            (
                &a,
                &[(0, 2), (1, 2)],
                "fixed edge 1->2: node 2 would have two fixed arcs in",
            ),
            (
                &s,
                &[(0, 1), (1, 2), (2, 0)],
                "fixed edge 2-0 closes a cycle of fixed edges through 3 of the 5 nodes",
            ),
            (
                &a,
                &[(3, 4), (4, 3)],
                "fixed edge 4->3 closes a cycle of fixed edges through 2 of the 5 nodes",
            ),
        ];
        for (cost, edges, message) in cases {
            let e = FixedCost::new(cost, edges).err().unwrap().to_string();
            assert!(e.starts_with(message), "{edges:?}: {e}");
        }
        // Asymmetric arcs both ways between two nodes are a cycle only short of the whole tour.
        let two = line(2, false);
        assert!(FixedCost::new(&two, &[(0, 1), (1, 0)]).is_ok());
        // A cycle through every node is the whole tour.
        let whole = [(0, 1), (1, 2), (2, 3), (3, 4), (4, 0)];
        assert!(FixedCost::new(&s, &whole).is_ok());
    }

    #[test]
    fn overflowing_costs_are_refused() {
        let big = MatrixCost::from_rows(&[
            vec![0, i64::MAX / 4, 1],
            vec![i64::MAX / 4, 0, 1],
            vec![1, 1, 0],
        ])
        .unwrap();
        let e = FixedCost::new(&big, &[(0, 1)]).err().unwrap();
        assert!(matches!(e, FixedEdgesError::TooLarge { n: 3, .. }), "{e}");
    }

    #[test]
    fn a_tour_missing_edges_is_put_together_and_checked() {
        // Edges 1-3 and 3-0 form the path 1 3 0; edge 2-4 the path 2 4 (worked by hand).
        let s = line(6, true);
        let f = FixedCost::new(&s, &[(1, 3), (3, 0), (2, 4)]).unwrap();
        assert_eq!(
            f.missing(&[0, 1, 2, 3, 4, 5]),
            Some(FixedEdge {
                a: 1,
                b: 3,
                directed: false
            })
        );
        let back = f.tour_back(vec![5, 4, 0, 1, 2, 3]).unwrap();
        assert_eq!(back, vec![5, 4, 2, 0, 3, 1]);
        // A tour using them all comes back as it is, also when one closes the tour.
        let fine = vec![3, 1, 5, 4, 2, 0];
        assert_eq!(f.tour_back(fine.clone()).unwrap(), fine);
        // Arcs keep their direction: 4 -> 1 -> 0.
        let a = line(5, false);
        let f = FixedCost::new(&a, &[(1, 0), (4, 1)]).unwrap();
        assert!(f.missing(&[0, 1, 4, 2, 3]).is_some());
        assert_eq!(
            f.tour_back(vec![0, 2, 1, 3, 4]).unwrap(),
            vec![4, 1, 0, 2, 3]
        );
    }

    #[test]
    fn fixed_partners_lead_the_lists_and_cost_less() {
        let s = line(8, true);
        let f = FixedCost::new(&s, &[(0, 7)]).unwrap();
        // The bonus: 8 nodes times the span 14 of [-7, 7] (the matrix's bound on |cost|),
        // plus one.
        assert_eq!(f.cost(0, 7), 7 - 113);
        assert_eq!(f.cost(7, 0), 7 - 113);
        assert_eq!(f.cost(0, 1), 1);
        assert_eq!(f.offset(), 113);
        let nb = crate::neighbours::k_nearest(&s, 3);
        let lists = f.neighbours(&nb);
        assert_eq!(lists.out(0)[0], 7);
        assert_eq!(lists.out(7)[0], 0);
        assert_eq!(lists.out(3), nb.out(3));
        assert_eq!(lists.k(), 3);
    }
}
