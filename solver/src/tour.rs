//! Tours: validated permutations of the nodes, and their exact lengths.

use crate::cost::Cost;

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
