//! Tours: validated permutations of the nodes and their exact lengths, and the two
//! representations that local search edits in place.
//!
//! - [`ArrayTour`]: the order in an array plus each node's position. Successor, predecessor and
//!   distance along the tour are O(1); a reversal costs the length of the shorter side, up to
//!   n / 2.
//! - [`TwoLevelTour`]: segments of about sqrt(n) nodes, each with a reversal bit, kept in a ring.
//!   Successor and predecessor are O(1) with a few more indirections; a reversal costs
//!   O(sqrt(n)).
//!
//! Both implement [`TourRepr`] with the same semantics to the node: the same calls from the same
//! order leave the same cycle in the same direction, so a search gives identical tours on
//! either. [`Layout::Auto`] picks the array below [`TWO_LEVEL_FROM`] nodes and the segments from
//! there on.

use crate::cost::Cost;

mod array;
mod two_level;

pub use array::ArrayTour;
pub(crate) use two_level::TwoLevelTour;

/// Longest segment an Or-opt move relocates (and [`TourRepr::move_segment`] moves).
pub(crate) const MAX_SEGMENT: usize = 3;

/// A closed tour that local moves edit in place.
///
/// "Forward" is the direction of [`TourRepr::next`]. Every implementation must make the same
/// choices where the interface leaves one open (which side a reversal turns round), so that a
/// search is independent of the representation.
pub trait TourRepr {
    /// Wraps a visiting order (a permutation of `0..order.len()`).
    fn from_order(order: Vec<usize>) -> Self
    where
        Self: Sized;
    /// Number of nodes.
    fn len(&self) -> usize;
    /// True when there are no nodes.
    #[cfg_attr(not(feature = "internals"), allow(dead_code))] // for `internals` callers
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Node after `v`.
    fn next(&self, v: usize) -> usize;
    /// Node before `v`.
    fn prev(&self, v: usize) -> usize;
    /// Number of steps forward from `a` to `b` (0 when equal).
    fn steps(&self, a: usize, b: usize) -> usize;
    /// Reverses the path `from ..= to` (walking forward). Unless `keep_direction`, the
    /// complementary path is reversed instead when it has fewer nodes (the same cycle, with the
    /// other orientation); a path of all `n` nodes is then left alone.
    fn reverse(&mut self, from: usize, to: usize, keep_direction: bool);
    /// Moves the segment of `len` (at most [`MAX_SEGMENT`]) nodes starting at
    /// `s1` (walking forward) to between `c` and its successor; every node keeps its direction.
    /// `c` must not be in the segment and must not be the segment's predecessor.
    fn move_segment(&mut self, s1: usize, len: usize, c: usize);
    /// The nodes in the representation's own order: the given order until the first change,
    /// then some rotation of the cycle, forward.
    fn stored_order(&self) -> Vec<usize>;
    /// [`TourRepr::stored_order`], consuming the tour.
    #[cfg_attr(not(feature = "internals"), allow(dead_code))] // for `internals` callers
    fn into_stored_order(self) -> Vec<usize>
    where
        Self: Sized;
    /// The cycle walked forward from `start`.
    fn walk_from(&self, start: usize) -> Vec<usize> {
        let n = self.len();
        let mut out = Vec::with_capacity(n);
        let mut v = start;
        for _ in 0..n {
            out.push(v);
            v = self.next(v);
        }
        out
    }
}

/// Which representation a search edits.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Layout {
    /// `ArrayTour` below `TWO_LEVEL_FROM` nodes, `TwoLevelTour` from there on.
    #[default]
    Auto,
    /// Always `ArrayTour`.
    Array,
    /// Always `TwoLevelTour`.
    TwoLevel,
}

/// Size from which [`Layout::Auto`] uses [`TwoLevelTour`]: measured crossover of kicks per
/// second on 2 cores (array ahead by 14 % at 4,461 nodes, behind by 10 % at 14,051).
pub(crate) const TWO_LEVEL_FROM: usize = 10_000;

impl Layout {
    /// True when a tour of `n` nodes should use `TwoLevelTour`.
    pub fn two_level(self, n: usize) -> bool {
        match self {
            Layout::Auto => n >= TWO_LEVEL_FROM,
            Layout::Array => false,
            Layout::TwoLevel => true,
        }
    }
}

/// A closed tour: every node exactly once, the last one returning to the first.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Tour {
    order: Vec<usize>,
}

/// Why a sequence of nodes is not a tour.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum TourError {
    /// The sequence does not have one entry per node.
    #[error("tour has {got} nodes, the instance has {expected}")]
    WrongLength {
        /// Nodes in the instance.
        expected: usize,
        /// Entries in the sequence.
        got: usize,
    },
    /// A node index outside `0..n`.
    #[error("node {node} is outside 0..{n}")]
    OutOfRange {
        /// The offending entry.
        node: usize,
        /// Nodes in the instance.
        n: usize,
    },
    /// A node that appears twice (so another one is missing).
    #[error("node {node} appears more than once")]
    Repeated {
        /// The repeated node.
        node: usize,
    },
}

/// The sum of a tour's costs does not fit in `i64`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[error("the tour length overflows a 64-bit integer")]
pub struct Overflow;

impl Tour {
    /// Checks that `order` is a permutation of `0..n`.
    ///
    /// ```
    /// let tour = wend::Tour::new(vec![2, 0, 1], 3).unwrap();
    /// assert_eq!(tour.order(), &[2, 0, 1]);
    /// assert!(wend::Tour::new(vec![0, 0, 1], 3).is_err()); // node 0 twice
    /// ```
    pub fn new(order: Vec<usize>, n: usize) -> Result<Tour, TourError> {
        if order.len() != n {
            return Err(TourError::WrongLength {
                expected: n,
                got: order.len(),
            });
        }
        let mut seen = vec![false; n];
        for &node in &order {
            if node >= n {
                return Err(TourError::OutOfRange { node, n });
            }
            if std::mem::replace(&mut seen[node], true) {
                return Err(TourError::Repeated { node });
            }
        }
        Ok(Tour { order })
    }

    /// For sequences the crate built itself; checked in debug builds.
    pub(crate) fn trusted(order: Vec<usize>) -> Tour {
        debug_assert!(Tour::new(order.clone(), order.len()).is_ok());
        Tour { order }
    }

    /// The nodes in visiting order.
    pub fn order(&self) -> &[usize] {
        &self.order
    }

    /// Number of nodes.
    pub fn len(&self) -> usize {
        self.order.len()
    }

    /// True for the tour of an empty instance.
    pub fn is_empty(&self) -> bool {
        self.order.is_empty()
    }

    /// The visiting order, consumed.
    pub fn into_order(self) -> Vec<usize> {
        self.order
    }

    /// Exact length of the closed tour, including the step back to the first node.
    pub fn length<C: Cost + ?Sized>(&self, cost: &C) -> Result<i64, Overflow> {
        closed_length(cost, &self.order)
    }

    /// Rotates the tour so that it starts at `node` (no change if `node` is absent).
    pub fn rotate_to(&mut self, node: usize) {
        if let Some(p) = self.order.iter().position(|&v| v == node) {
            self.order.rotate_left(p);
        }
    }
}

/// Exact length of the closed tour `order` (sum of consecutive costs and the closing step).
/// A single node has length 0: there is no step to take.
///
/// ```
/// use wend::{closed_length, CoordCost, Metric};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// assert_eq!(closed_length(&square, &[0, 1, 2, 3]), Ok(40));
/// assert_eq!(closed_length(&square, &[0, 2, 1, 3]), Ok(48));
/// ```
pub fn closed_length<C: Cost + ?Sized>(cost: &C, order: &[usize]) -> Result<i64, Overflow> {
    if order.len() < 2 {
        return Ok(0);
    }
    let mut total: i64 = 0;
    for w in order.windows(2) {
        total = total.checked_add(cost.cost(w[0], w[1])).ok_or(Overflow)?;
    }
    let last = order[order.len() - 1];
    total.checked_add(cost.cost(last, order[0])).ok_or(Overflow)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::MatrixCost;

    #[test]
    fn validation() {
        assert!(Tour::new(vec![2, 0, 1], 3).is_ok());
        assert_eq!(
            Tour::new(vec![0, 0, 1], 3),
            Err(TourError::Repeated { node: 0 })
        );
        assert_eq!(
            Tour::new(vec![0, 3, 1], 3),
            Err(TourError::OutOfRange { node: 3, n: 3 })
        );
        assert!(Tour::new(vec![0, 1], 3).is_err());
    }

    #[test]
    fn length_includes_closing_step_and_detects_overflow() {
        let m = MatrixCost::from_rows(&[vec![0, 1, 5], vec![2, 0, 3], vec![7, 4, 0]]).unwrap();
        // 0->1 (1) + 1->2 (3) + 2->0 (7)
        assert_eq!(closed_length(&m, &[0, 1, 2]), Ok(11));
        let big = MatrixCost::from_rows(&[vec![0, i64::MAX], vec![i64::MAX, 0]]).unwrap();
        assert_eq!(closed_length(&big, &[0, 1]), Err(Overflow));
    }
}
