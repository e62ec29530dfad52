//! Paths instead of closed tours: which ends a visiting order must have ([`Ends`]), and the
//! dummy-node costs ([`EndedCost`]) that turn every path variant into a closed tour.
//!
//! # The dummy node
//!
//! For `n` nodes, [`EndedCost`] adds node `d = n`. A closed tour through `d` is read as the
//! path that starts at the node after `d` and ends at the node before it; the two steps at `d`
//! are not part of the path. Steps between the caller's nodes keep their costs; the steps at
//! `d` cost 0 where the requested ends allow them and a penalty `B` where they do not:
//!
//! | variant            | `d -> j` (j first)        | `i -> d` (i last)         |
//! |--------------------|---------------------------|---------------------------|
//! | `Open`             | 0                         | 0                         |
//! | `Start(s)`         | 0 if `j == s`, else `B`   | 0                         |
//! | `End(e)`           | 0                         | 0 if `i == e`, else `B`   |
//! | `StartEnd(s, e)`   | 0 if `j == s`, else `B`   | 0 if `i == e`, else `B`   |
//!
//! For symmetric costs a step and its reverse must cost the same, so there the edge `{d, j}`
//! costs 0 when `j` is a fixed end (or for `Open`) and `B` otherwise. A symmetric `Start(s)` or
//! `End(e)` tour then pays `B` once on its free end (the constant offset of
//! [`EndedCost::offset`]); its direction is chosen when the path is read off, so that `s` comes
//! first (or `e` last).
//!
//! `B = (n - 1) * (cmax - cmin) + 1`, where `[cmin, cmax]` holds every cost between the caller's
//! nodes (from [`Cost::max_cost_hint`] as `[-h, h]` when there is one, otherwise from a scan of
//! all pairs). A path has `n - 1` steps, so two paths differ by at most `(n - 1) (cmax - cmin)
//! < B`: every tour with the requested ends is shorter than every tour without, and the
//! shortest tour through `d` is the shortest path with the requested ends. All constants are
//! computed with checked arithmetic; when a tour of the augmented costs could overflow `i64`,
//! [`EndedCost::new`] refuses.
//!
//! A heuristic may still return a tour whose ends are wrong; [`EndedCost::path_from_tour`]
//! repairs it by moving the fixed nodes to their places, so the answer is always a permutation
//! with the requested ends, and its length is always computed on the caller's costs.

use crate::cost::Cost;
use crate::neighbours::{CandidateSource, Neighbours, candidates};
use crate::tour::Overflow;

/// Which ends a visiting order has. Node ids are the caller's, `0..n`.
#[derive(
    Clone, Copy, Debug, Default, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize,
)]
#[serde(rename_all = "kebab-case")]
pub enum Ends {
    /// A closed tour, returning to its first node (the default).
    #[default]
    Closed,
    /// A path with free ends: no return step.
    Open,
    /// A path from this node to any end.
    Start(usize),
    /// A path from any node to this one.
    End(usize),
    /// A path from the first node to the second. The same node twice means a closed tour
    /// starting there.
    StartEnd(usize, usize),
}

impl Ends {
    /// The name used in result files: `closed`, `open`, `start`, `end` or `start-end`.
    pub fn name(self) -> &'static str {
        match self {
            Ends::Closed => "closed",
            Ends::Open => "open",
            Ends::Start(_) => "start",
            Ends::End(_) => "end",
            Ends::StartEnd(s, e) if s == e => "closed",
            Ends::StartEnd(..) => "start-end",
        }
    }

    /// The fixed first node, if any (for `StartEnd(s, s)`, `s`).
    pub fn start(self) -> Option<usize> {
        match self {
            Ends::Start(s) | Ends::StartEnd(s, _) => Some(s),
            _ => None,
        }
    }

    /// The fixed last node of a path, if any (`None` for closed tours, also `StartEnd(s, s)`).
    pub fn end(self) -> Option<usize> {
        match self {
            Ends::End(e) => Some(e),
            Ends::StartEnd(s, e) if s != e => Some(e),
            _ => None,
        }
    }

    /// True when the answer is a path (no return step), false for a closed tour.
    pub fn is_path(self) -> bool {
        match self {
            Ends::Closed => false,
            Ends::StartEnd(s, e) => s != e,
            _ => true,
        }
    }

    /// Checks that every fixed node is below `n`.
    pub fn check(self, n: usize) -> Result<(), EndsError> {
        let nodes = match self {
            Ends::Closed | Ends::Open => [None, None],
            Ends::Start(s) => [Some(("start", s)), None],
            Ends::End(e) => [Some(("end", e)), None],
            Ends::StartEnd(s, e) => [Some(("start", s)), Some(("end", e))],
        };
        for (role, node) in nodes.into_iter().flatten() {
            if node >= n {
                return Err(EndsError::OutOfRange { role, node, n });
            }
        }
        Ok(())
    }

    /// True when `order` (a permutation) has the fixed ends this asks for.
    pub fn respected_by(self, order: &[usize]) -> bool {
        self.start().is_none_or(|s| order.first() == Some(&s))
            && self.end().is_none_or(|e| order.last() == Some(&e))
    }
}

/// Why the requested ends cannot be used.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum EndsError {
    /// A fixed end outside `0..n`.
    #[error("{role} node {node} is out of range: the instance has nodes 0..{n}")]
    OutOfRange {
        /// `start` or `end`.
        role: &'static str,
        /// The node asked for.
        node: usize,
        /// Nodes in the instance.
        n: usize,
    },
    /// The dummy node's penalty would make tour lengths overflow `i64`.
    #[error(
        "costs spanning {span} over {n} nodes are too large for a path: the penalty that fixes \
         the ends could overflow a 64-bit length; scale them down"
    )]
    TooLarge {
        /// An upper bound on `cmax - cmin` (saturated).
        span: i64,
        /// Nodes in the instance.
        n: usize,
    },
}

/// Exact length of the path `order`: the sum of consecutive steps, no return step. Zero for
/// fewer than two nodes.
///
/// ```
/// use wend::{path_length, CoordCost, Metric};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// assert_eq!(path_length(&square, &[0, 1, 2, 3]), Ok(30)); // no step back from 3 to 0
/// ```
pub fn path_length<C: Cost + ?Sized>(cost: &C, order: &[usize]) -> Result<i64, Overflow> {
    order.windows(2).try_fold(0i64, |total, w| {
        total.checked_add(cost.cost(w[0], w[1])).ok_or(Overflow)
    })
}

/// The smallest and largest cost between distinct nodes, or bounds on them: `[-h, h]` from
/// [`Cost::max_cost_hint`], else a scan of every pair. `(0, 0)` for fewer than two nodes.
pub(crate) fn cost_range<C: Cost + ?Sized>(cost: &C) -> (i64, i64) {
    let n = cost.len();
    if n < 2 {
        return (0, 0);
    }
    if let Some(h) = cost.max_cost_hint() {
        let h = h.checked_abs().unwrap_or(i64::MAX);
        return (-h, h);
    }
    let mut lo = i64::MAX;
    let mut hi = i64::MIN;
    for i in 0..n {
        for j in 0..n {
            if i != j {
                let c = cost.cost(i, j);
                lo = lo.min(c);
                hi = hi.max(c);
            }
        }
    }
    (lo, hi)
}

/// The caller's costs with one dummy node `n` added, so that the shortest closed tour is the
/// shortest path with the requested [`Ends`] (see the [module documentation](self)).
pub(crate) struct EndedCost<'a, C: Cost + ?Sized> {
    inner: &'a C,
    n: usize,
    ends: Ends,
    symmetric: bool,
    penalty: i64,
    /// Largest `|cost|` of the augmented costs.
    max_abs: i64,
    /// Largest path length between the caller's nodes, `(n - 1) * cmax` (saturated).
    path_max: i64,
}

impl<'a, C: Cost + ?Sized> EndedCost<'a, C> {
    /// The augmented costs for `ends`, which must be a path variant with ends in range and
    /// `inner` at least one node. Refuses when the penalty could make lengths overflow: every
    /// closed tour of the `n + 1` nodes, plus a few moves' worth of costs, must fit in `i64`.
    pub(crate) fn new(inner: &'a C, ends: Ends) -> Result<Self, EndsError> {
        let n = inner.len();
        ends.check(n)?;
        debug_assert!(ends.is_path());
        let (lo, hi) = cost_range(inner);
        let too_large = |span| EndsError::TooLarge { span, n };
        let span = hi.checked_sub(lo).ok_or(too_large(i64::MAX))?;
        let steps = n.saturating_sub(1) as i64;
        let penalty = steps
            .checked_mul(span)
            .and_then(|p| p.checked_add(1))
            .ok_or(too_large(span))?;
        let max_abs = penalty
            .max(hi.checked_abs().unwrap_or(i64::MAX))
            .max(lo.checked_abs().unwrap_or(i64::MAX));
        // The solver's own check on the augmented costs: max |cost| * (nodes + 8).
        if max_abs.checked_mul(n as i64 + 9).is_none() {
            return Err(too_large(span));
        }
        Ok(EndedCost {
            inner,
            n,
            ends,
            symmetric: inner.is_symmetric(),
            penalty,
            max_abs,
            path_max: steps.saturating_mul(hi),
        })
    }

    /// The penalty `B` on a step at the dummy node that the ends forbid.
    #[cfg(test)]
    pub fn penalty(&self) -> i64 {
        self.penalty
    }

    /// What a closed tour with the requested ends pays at the dummy node on top of its path:
    /// `B` for symmetric `Start` or `End`, 0 otherwise.
    pub(crate) fn offset(&self) -> i64 {
        if self.symmetric && matches!(self.ends, Ends::Start(_) | Ends::End(_)) {
            self.penalty
        } else {
            0
        }
    }

    /// The path length a closed-tour length of the augmented costs stands for, when the tour has
    /// the requested ends (judged from the length alone: a tour with a wrong end pays at least
    /// `B` more, which takes it above every path); `None` otherwise.
    pub(crate) fn path_length_of(&self, tour_length: i64) -> Option<i64> {
        let p = tour_length.checked_sub(self.offset())?;
        (p <= self.path_max).then_some(p)
    }

    /// The closed-tour length of the augmented costs that a path of length `path` has.
    pub(crate) fn tour_length_of(&self, path: i64) -> Option<i64> {
        path.checked_add(self.offset())
    }

    /// The cost of the step at the dummy node from `d` to `j` (`j` first in the path).
    fn step_from_dummy(&self, j: usize) -> i64 {
        let free = if self.symmetric {
            self.ends == Ends::Open || self.ends.start() == Some(j) || self.ends.end() == Some(j)
        } else {
            matches!(self.ends, Ends::Open | Ends::End(_)) || self.ends.start() == Some(j)
        };
        if free { 0 } else { self.penalty }
    }

    /// The cost of the step at the dummy node from `i` to `d` (`i` last in the path).
    fn step_to_dummy(&self, i: usize) -> i64 {
        if self.symmetric {
            return self.step_from_dummy(i);
        }
        let free = match self.ends {
            Ends::Open | Ends::Start(_) => true,
            _ => self.ends.end() == Some(i),
        };
        if free { 0 } else { self.penalty }
    }

    /// Reads the path off a closed tour of the `n + 1` nodes: from the node after the dummy to
    /// the node before it (for symmetric costs turned round if that puts the fixed ends in
    /// place). If the tour's ends are still wrong, the fixed nodes are moved to their places;
    /// the result is always a permutation of `0..n` with the requested ends.
    pub(crate) fn path_from_tour(&self, tour: &[usize]) -> Vec<usize> {
        let d = self.n;
        let mut path: Vec<usize> = match tour.iter().position(|&v| v == d) {
            Some(p) => tour[p + 1..]
                .iter()
                .chain(&tour[..p])
                .copied()
                .filter(|&v| v < d)
                .collect(),
            None => tour.iter().copied().filter(|&v| v < d).collect(),
        };
        if self.symmetric && !self.ends.respected_by(&path) {
            path.reverse();
            if !self.ends.respected_by(&path) {
                path.reverse();
            }
        }
        repair_ends(&mut path, self.ends);
        path
    }

    /// Neighbour lists for the augmented costs from lists `nb` of the caller's costs: each
    /// node's list gains the dummy node, the dummy's list holds the nodes it is cheapest to
    /// reach (the fixed ends first), all sorted by the augmented costs. Lists of width
    /// `nb.k() + 1`; falls back to a scan of the augmented costs if they cannot be built.
    pub(crate) fn neighbours(&self, nb: &Neighbours, source: CandidateSource) -> Neighbours {
        let n = self.n;
        let k = nb.k();
        let width = k + 1;
        if k == 0 || width > n {
            return candidates(self, width, source);
        }
        let d = n;
        let mut out = Vec::with_capacity((n + 1) * width);
        let mut inc = Vec::new();
        let mut row: Vec<(i64, u32)> = Vec::with_capacity(width);
        let push = |list: &mut Vec<u32>, row: &mut Vec<(i64, u32)>| {
            // Stable: equal costs keep the order of the caller's lists.
            row.sort_by_key(|&(c, _)| c);
            list.extend(row.drain(..).map(|(_, j)| j));
        };
        // The dummy node comes last in every list, whatever its cost: at cost 0 (a free end) it
        // would lead every list, and the moves would spend their first tries on it from every
        // node (measured: an open path on 3,000 points took twice the time per kick).
        for i in 0..n {
            row.extend(nb.out(i).iter().map(|&j| (self.cost(i, j as usize), j)));
            push(&mut out, &mut row);
            out.push(d as u32);
        }
        row.extend((0..n).map(|j| (self.cost(d, j), j as u32)));
        row.sort_by_key(|&(c, _)| c);
        row.truncate(width);
        push(&mut out, &mut row);
        if !self.symmetric {
            inc.reserve((n + 1) * width);
            for i in 0..n {
                row.extend(
                    nb.incoming(i)
                        .iter()
                        .map(|&j| (self.cost(j as usize, i), j)),
                );
                push(&mut inc, &mut row);
                inc.push(d as u32);
            }
            row.extend((0..n).map(|j| (self.cost(j, d), j as u32)));
            row.sort_by_key(|&(c, _)| c);
            row.truncate(width);
            push(&mut inc, &mut row);
        }
        Neighbours::from_lists(n + 1, width, out, inc)
            .unwrap_or_else(|_| candidates(self, width, source))
    }
}

/// Moves the fixed nodes of `ends` to their places in the permutation `path`: the start to
/// the front, the end to the back, keeping the order of the others.
pub(crate) fn repair_ends(path: &mut Vec<usize>, ends: Ends) {
    if let Some(s) = ends.start() {
        if let Some(p) = path.iter().position(|&v| v == s) {
            if p != 0 {
                let v = path.remove(p);
                path.insert(0, v);
            }
        }
    }
    if let Some(e) = ends.end() {
        if let Some(p) = path.iter().position(|&v| v == e) {
            if p + 1 != path.len() {
                let v = path.remove(p);
                path.push(v);
            }
        }
    }
}

impl<C: Cost + ?Sized> Cost for EndedCost<'_, C> {
    fn len(&self) -> usize {
        self.n + 1
    }

    #[inline]
    fn cost(&self, from: usize, to: usize) -> i64 {
        let d = self.n;
        if from < d && to < d {
            self.inner.cost(from, to)
        } else if from == to {
            0
        } else if to == d {
            self.step_to_dummy(from)
        } else {
            self.step_from_dummy(to)
        }
    }

    fn is_symmetric(&self) -> bool {
        self.symmetric
    }

    fn max_cost_hint(&self) -> Option<i64> {
        Some(self.max_abs)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::MatrixCost;

    fn asym() -> MatrixCost {
        MatrixCost::from_rows(&[
            vec![0, 1, 9, 4],
            vec![7, 0, 2, 8],
            vec![3, 6, 0, 1],
            vec![5, 2, 7, 0],
        ])
        .unwrap()
    }

    #[test]
    fn penalty_exceeds_every_difference_of_paths() {
        let c = asym();
        let e = EndedCost::new(&c, Ends::Start(2)).unwrap();
        // Hint [-9, 9]: B = 3 * 18 + 1.
        assert_eq!(e.penalty(), 55);
        assert_eq!(e.cost(4, 2), 0);
        assert_eq!(e.cost(4, 0), 55);
        assert_eq!(e.cost(1, 4), 0);
        assert_eq!(e.len(), 5);
    }

    #[test]
    fn out_of_range_ends_are_named() {
        let c = asym();
        let err = EndedCost::new(&c, Ends::StartEnd(0, 4)).err().unwrap();
        assert_eq!(
            err,
            EndsError::OutOfRange {
                role: "end",
                node: 4,
                n: 4
            }
        );
        assert!(err.to_string().contains("end node 4"));
    }

    #[test]
    fn huge_costs_are_refused() {
        let c = MatrixCost::from_rows(&[vec![0, i64::MAX / 4], vec![1, 0]]).unwrap();
        assert!(matches!(
            EndedCost::new(&c, Ends::Open),
            Err(EndsError::TooLarge { .. })
        ));
    }

    #[test]
    fn wrong_ends_are_repaired() {
        let c = asym();
        let e = EndedCost::new(&c, Ends::StartEnd(1, 3)).unwrap();
        // Dummy 4 between 0 and 2: the path 2 3 1 0 has neither end right.
        assert_eq!(e.path_from_tour(&[3, 1, 0, 4, 2]), vec![1, 2, 0, 3]);
        assert_eq!(e.path_from_tour(&[4, 1, 2, 0, 3]), vec![1, 2, 0, 3]);
    }

    #[test]
    fn paths_have_no_return_step() {
        let c = asym();
        assert_eq!(path_length(&c, &[0, 1, 2, 3]), Ok(4));
        assert_eq!(path_length(&c, &[2]), Ok(0));
        assert_eq!(path_length(&c, &[]), Ok(0));
    }
}
