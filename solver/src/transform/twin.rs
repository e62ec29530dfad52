//! Asymmetric costs as symmetric ones on twice the nodes (Jonker and Volgenant 1983,
//! "Transforming asymmetric into symmetric traveling salesman problems", Operations Research
//! Letters 2(4)), so that the symmetric Lin–Kernighan machinery of [`crate::methods::lk`] can search
//! them.
//!
//! # The construction
//!
//! Each of the `m` nodes `i` becomes an "in" copy `i` and an "out" copy `m + i`. Edges of
//! [`TwinCost`], symmetric by construction:
//!
//! - `{i, m + i}`, the twin edge: 0;
//! - `{m + i, j}` for `i != j` (leave `i`, enter `j`): `c(i, j) - cmin + M`;
//! - every other pair (two in copies, two out copies): `F = 2 M`;
//!
//! with `[cmin, cmax]` the range of the costs between distinct nodes (from a scan of all
//! pairs), `W = cmax - cmin` and `M = m W + 1`. Rather than a large negative cost on the twin
//! edges, the choice here is to make every other edge dearer by `M`: the lists, lengths and
//! gains stay non-negative, and since every tour has `2m` edges, the two choices differ by a
//! constant on every tour and give the same moves.
//!
//! A tour that keeps all `m` twin edges and uses no in-in or out-out edge alternates twin and
//! arc edges, reads as the directed tour of its in copies, and has length
//! `L = length + m (M - cmin)`, within `[m M, m M + m W]`. Any other tour has at least `m + 1`
//! edges of cost `M` or more, so `L >= (m + 1) M > m M + m W`: every tour of the original
//! costs is shorter than every tour that breaks the structure, the shortest symmetric tour is
//! the shortest directed one, and a length alone tells whether a tour is valid
//! ([`TwinCost::original_length`]). All constants are computed with checked arithmetic and
//! [`TwinCost::new`] refuses costs for which `(2m + 8) F` would overflow `i64`.
//!
//! A search may in principle stop at a tour that breaks a twin edge; [`TwinCost::tour_back`]
//! then keeps the order of the in copies (a permutation of the nodes, so always a tour), in
//! whichever direction is shorter on the original costs.

use crate::cost::Cost;
use crate::neighbours::{CandidateSource, Neighbours, candidates};
use crate::tour::closed_length;

/// Why the transformation cannot be applied.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error(
    "costs from {lo} to {hi} over {m} nodes are too large for the symmetric transformation of \
     asymmetric costs: its constants could overflow a 64-bit length; scale them down"
)]
pub struct TwinTooLarge {
    /// Smallest cost between distinct nodes.
    pub lo: i64,
    /// Largest cost between distinct nodes.
    pub hi: i64,
    /// Nodes of the asymmetric costs.
    pub m: usize,
}

/// Symmetric costs on `2m` nodes whose shortest tours are the shortest directed tours of `m`
/// asymmetric costs (see the [module documentation](self)).
pub(crate) struct TwinCost<'a, C: Cost + ?Sized> {
    inner: &'a C,
    m: usize,
    lo: i64,
    big: i64,
    forbidden: i64,
}

impl<'a, C: Cost + ?Sized> TwinCost<'a, C> {
    /// The transformed costs of `inner` (any costs, at least two nodes; scans all pairs once).
    pub(crate) fn new(inner: &'a C) -> Result<Self, TwinTooLarge> {
        let m = inner.len();
        let (mut lo, mut hi) = (0i64, 0i64);
        if m >= 2 {
            (lo, hi) = (i64::MAX, i64::MIN);
            for i in 0..m {
                for j in 0..m {
                    if i != j {
                        let c = inner.cost(i, j);
                        lo = lo.min(c);
                        hi = hi.max(c);
                    }
                }
            }
        }
        let err = TwinTooLarge { lo, hi, m };
        let span = hi.checked_sub(lo).ok_or(err.clone())?;
        let big = (m as i64)
            .checked_mul(span)
            .and_then(|x| x.checked_add(1))
            .ok_or(err.clone())?;
        let forbidden = big.checked_mul(2).ok_or(err.clone())?;
        // Every tour of the 2m nodes, and the solver's margin of a few moves on top.
        (2 * m as i64 + 8).checked_mul(forbidden).ok_or(err)?;
        Ok(TwinCost {
            inner,
            m,
            lo,
            big,
            forbidden,
        })
    }

    /// The constant `M` added to every arc.
    #[cfg(test)]
    pub fn arc_offset(&self) -> i64 {
        self.big
    }

    /// The length on the original costs of a transformed tour of length `tour_length`, when that
    /// tour keeps every twin edge; `None` when it does not (its length is at least `(m + 1) M`).
    pub(crate) fn original_length(&self, tour_length: i64) -> Option<i64> {
        let m = self.m as i128;
        let limit = (m + 1) * self.big as i128;
        if (tour_length as i128) >= limit {
            return None;
        }
        let real = tour_length as i128 - m * self.big as i128 + m * self.lo as i128;
        i64::try_from(real).ok()
    }

    /// The transformed length of a tour of length `length` on the original costs.
    pub(crate) fn transformed_length(&self, length: i64) -> Option<i64> {
        let m = self.m as i128;
        let t = length as i128 + m * self.big as i128 - m * self.lo as i128;
        i64::try_from(t).ok()
    }

    /// The directed tour of the original nodes that a tour of the `2m` nodes stands for, and
    /// whether it had to be repaired (a twin edge broken or a forbidden edge used; then the
    /// order of the in copies is kept in the direction that is shorter on the original costs).
    pub(crate) fn tour_back(&self, tour: &[usize]) -> (Vec<usize>, bool) {
        let m = self.m;
        let len = tour.len();
        if m == 0 || len != 2 * m {
            return ((0..m).collect(), true);
        }
        let p0 = tour.iter().position(|&v| v == 0).unwrap_or(0);
        // Walk so that the in copy of node 0 is followed by its out copy.
        let forward = tour[(p0 + 1) % len] == m;
        let at = |s: usize| {
            if forward {
                tour[(p0 + s) % len]
            } else {
                tour[(p0 + len - s % len) % len]
            }
        };
        let valid = (0..m).all(|s| {
            let a = at(2 * s);
            a < m && at(2 * s + 1) == a + m
        });
        if valid {
            return ((0..m).map(|s| at(2 * s)).collect(), false);
        }
        let ins: Vec<usize> = (0..len).map(at).filter(|&v| v < m).collect();
        let mut back = ins.clone();
        back.reverse();
        let l1 = closed_length(self.inner, &ins).unwrap_or(i64::MAX);
        let l2 = closed_length(self.inner, &back).unwrap_or(i64::MAX);
        (if l2 < l1 { back } else { ins }, true)
    }

    /// Neighbour lists of the `2m` nodes from lists `nb` of the original costs (with their
    /// incoming lists): the in copy of `j` gets its twin, then the out copies of the cheapest
    /// predecessors of `j`; the out copy of `i` its twin, then the in copies of the cheapest
    /// successors of `i`. Width `nb.k() + 1`, so every node's twin is among its candidates
    /// (first, at cost 0). Falls back to a scan of the transformed costs if they cannot be built.
    pub(crate) fn neighbours(&self, nb: &Neighbours, source: CandidateSource) -> Neighbours {
        let m = self.m;
        let k = nb.k();
        let width = k + 1;
        if k == 0 {
            return candidates(self, width.min((2 * m).saturating_sub(1)), source);
        }
        let mut out = Vec::with_capacity(2 * m * width);
        let mut row: Vec<(i64, u32)> = Vec::with_capacity(width);
        for v in 0..2 * m {
            let (twin, others): (usize, Vec<usize>) = if v < m {
                (
                    v + m,
                    nb.incoming(v).iter().map(|&i| i as usize + m).collect(),
                )
            } else {
                (v - m, nb.out(v - m).iter().map(|&j| j as usize).collect())
            };
            row.push((0, twin as u32));
            row.extend(others.into_iter().map(|u| (self.cost(v, u), u as u32)));
            row.sort_by_key(|&(c, _)| c);
            out.extend(row.drain(..).map(|(_, u)| u));
        }
        Neighbours::from_lists(2 * m, width, out, Vec::new())
            .unwrap_or_else(|_| candidates(self, width, source))
    }
}

impl<C: Cost + ?Sized> Cost for TwinCost<'_, C> {
    fn len(&self) -> usize {
        2 * self.m
    }

    #[inline]
    fn cost(&self, a: usize, b: usize) -> i64 {
        let m = self.m;
        if a == b || a.abs_diff(b) == m {
            return 0; // a twin edge
        }
        let (from, to) = match (a >= m, b >= m) {
            (true, false) => (a - m, b),
            (false, true) => (b - m, a),
            _ => return self.forbidden,
        };
        // Within range by construction: 0 <= c - lo <= W, and W + M < F.
        self.inner.cost(from, to) - self.lo + self.big
    }

    fn is_symmetric(&self) -> bool {
        true
    }

    fn max_cost_hint(&self) -> Option<i64> {
        Some(self.forbidden)
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
    fn a_directed_tour_maps_to_a_symmetric_one_and_back() {
        let c = asym();
        let t = TwinCost::new(&c).unwrap();
        // W = 9 - 1 = 8, M = 4 * 8 + 1 = 33.
        assert_eq!(t.arc_offset(), 33);
        assert_eq!(t.cost(0, 4), 0);
        assert_eq!(t.cost(4, 1), 33); // c(0, 1) - cmin + M = 1 - 1 + 33
        assert_eq!(t.cost(1, 4), t.cost(4, 1));
        assert_eq!(t.cost(0, 1), 66);
        // 0 -> 1 -> 2 -> 3 -> 0: 1 + 2 + 1 + 5 = 9.
        let sym = [0, 4, 1, 5, 2, 6, 3, 7];
        let l = closed_length(&t, &sym).unwrap();
        assert_eq!(t.original_length(l), Some(9));
        assert_eq!(t.transformed_length(9), Some(l));
        assert_eq!(t.tour_back(&sym), (vec![0, 1, 2, 3], false));
        // The same cycle the other way round is the same directed tour.
        let mut rev = sym;
        rev.reverse();
        assert_eq!(t.tour_back(&rev), (vec![0, 1, 2, 3], false));
    }

    #[test]
    fn a_broken_twin_is_repaired_and_detected_by_its_length() {
        let c = asym();
        let t = TwinCost::new(&c).unwrap();
        let broken = [0, 1, 4, 5, 2, 6, 3, 7];
        let l = closed_length(&t, &broken).unwrap();
        assert_eq!(t.original_length(l), None);
        let (order, repaired) = t.tour_back(&broken);
        assert!(repaired);
        let mut sorted = order.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, vec![0, 1, 2, 3]);
    }

    #[test]
    fn twins_lead_the_candidate_lists() {
        let c = asym();
        let t = TwinCost::new(&c).unwrap();
        let nb = crate::neighbours::k_nearest(&c, 2);
        let tn = t.neighbours(&nb, CandidateSource::Nearest);
        assert_eq!(tn.k(), 3);
        for v in 0..8 {
            assert_eq!(tn.out(v)[0] as usize, (v + 4) % 8);
        }
        // Out copy of 0: cheapest successors of 0 are 1 (1) and 3 (4).
        assert_eq!(tn.out(4), &[0, 1, 3]);
    }

    #[test]
    fn huge_costs_are_refused() {
        let c = MatrixCost::from_rows(&[vec![0, i64::MAX / 2], vec![-5, 0]]).unwrap();
        assert!(TwinCost::new(&c).is_err());
    }
}
