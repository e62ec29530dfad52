//! The assignment lower bound for asymmetric costs.
//!
//! Every closed tour gives each node exactly one successor and each node exactly one
//! predecessor, so its edges form an assignment of the nodes to themselves without fixed points.
//! The cheapest such assignment (a set of cycles covering every node, found by the Hungarian
//! method of Kuhn 1955 and Munkres 1957 in O(n³)) is therefore a lower bound on every tour.
//! Dropping the one-cycle condition costs little on random asymmetric costs, where the bound is
//! typically within a few percent of the optimum (common practice); on costs close to
//! symmetric ones it is weak, since pairs of two-node cycles are then cheap.

use crate::cost::Cost;
use pathfinding::kuhn_munkres::kuhn_munkres_min;
use pathfinding::matrix::Matrix;

/// Largest instance [`assignment_bound`] accepts: an `n x n` matrix of `i64` (32 MB at 2,000
/// nodes, 800 MB at 10,000) and O(n³) work.
pub(crate) const ASSIGNMENT_LIMIT: usize = 10_000;

/// The cheapest cycle cover and its cost.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct AssignmentBound {
    /// The lower bound: the cost of the cheapest assignment.
    pub lower_bound: i64,
    /// `successor[i]`: the node after `i` in the cheapest cover.
    pub successor: Vec<usize>,
    /// Cycles of the cover; one cycle means the cover is an optimal tour.
    pub cycles: usize,
}

/// Why [`assignment_bound`] gave no bound.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum AssignmentError {
    /// Too many nodes for the O(n²) matrix.
    #[error("the assignment bound is computed for up to {limit} nodes; this instance has {n}")]
    TooManyNodes {
        /// Nodes in the instance.
        n: usize,
        /// `ASSIGNMENT_LIMIT`.
        limit: usize,
    },
    /// Costs so large that sums of them could overflow.
    #[error("costs are so large that an assignment's cost could overflow a 64-bit integer")]
    Overflow,
    /// The matrix would pass the memory ceiling.
    #[error(transparent)]
    Memory(#[from] crate::memory::MemoryError),
    /// The matrix came out malformed: a bug, reported instead of a panic.
    #[error("internal error in the assignment bound: {0}; please report it")]
    Internal(String),
}

/// The assignment lower bound on every closed tour of `cost` (symmetric or not). For fewer than
/// two nodes the bound is 0; for two it is the one tour's length.
///
/// ```
/// let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
/// let bound = wend::assignment_bound(&wend::MatrixCost::from_rows(&rows).unwrap()).unwrap();
/// // Without a node staying in place, each node's successor is one of the two 3-cycles.
/// assert_eq!(bound.lower_bound, 17); // 0 -> 2 -> 1 -> 0
/// assert_eq!(bound.cycles, 1);
/// ```
pub fn assignment_bound<C: Cost + ?Sized>(cost: &C) -> Result<AssignmentBound, AssignmentError> {
    let n = cost.len();
    if n > ASSIGNMENT_LIMIT {
        return Err(AssignmentError::TooManyNodes {
            n,
            limit: ASSIGNMENT_LIMIT,
        });
    }
    if n < 2 {
        return Ok(AssignmentBound {
            lower_bound: 0,
            successor: (0..n).collect(),
            cycles: n,
        });
    }
    crate::memory::check(crate::memory::square(n, 8), || {
        format!("the assignment bound's cost matrix of {n} nodes")
    })?;
    let mut values = Vec::with_capacity(n * n);
    let mut max_abs: i64 = 0;
    for i in 0..n {
        for j in 0..n {
            let c = if i == j { 0 } else { cost.cost(i, j) };
            max_abs = max_abs.max(c.checked_abs().ok_or(AssignmentError::Overflow)?);
            values.push(c);
        }
    }
    // A node may not be its own successor: the diagonal costs more than any assignment without
    // it can (n * max |c| + 1 above the largest cost), checked so that no sum of n entries,
    // nor the algorithm's differences of them, can overflow.
    let big = (n as i64)
        .checked_mul(max_abs)
        .and_then(|v| v.checked_add(max_abs))
        .and_then(|v| v.checked_add(1))
        .ok_or(AssignmentError::Overflow)?;
    (n as i64)
        .checked_mul(big)
        .and_then(|v| v.checked_mul(4))
        .ok_or(AssignmentError::Overflow)?;
    for i in 0..n {
        values[i * n + i] = big;
    }
    let m = Matrix::from_vec(n, n, values).map_err(|e| AssignmentError::Internal(e.to_string()))?;
    let (total, successor): (i64, Vec<usize>) = kuhn_munkres_min(&m);
    debug_assert!(successor.iter().enumerate().all(|(i, &j)| i != j));
    let mut seen = vec![false; n];
    let mut cycles = 0;
    for start in 0..n {
        if !seen[start] {
            cycles += 1;
            let mut v = start;
            while !seen[v] {
                seen[v] = true;
                v = successor[v];
            }
        }
    }
    Ok(AssignmentBound {
        lower_bound: total,
        successor,
        cycles,
    })
}

/// A closed tour from a cycle cover (`successor[i]`: the node after `i`), by patching (Karp
/// 1979, "A patching algorithm for the nonsymmetric traveling-salesman problem", SIAM Journal
/// on Computing 8(4)): while more than one cycle remains, the largest cycle absorbs the one it
/// joins most cheaply, by exchanging the successors of one node `a` of its own and one node `b`
/// of the other (arcs `a -> a'` and `b -> b'` become `a -> b'` and `b -> a'`). Ties go to the
/// first pair found, so the result is deterministic. Returns the tour from node 0.
///
/// Each merge scans `|largest| x |rest|` pairs, so a cover of `k` cycles costs at most
/// `k n² / 4` look-ups; the cheapest cover of random asymmetric costs has few cycles (common
/// practice: about `ln n`), and the tour found lies close to the assignment bound on them.
///
/// `successor` must be a permutation of `0..cost.len()`; anything else gives the identity order.
pub(crate) fn patch_cover<C: Cost + ?Sized>(cost: &C, successor: &[usize]) -> Vec<usize> {
    let n = cost.len();
    let mut seen = vec![false; n];
    if successor.len() != n
        || successor
            .iter()
            .any(|&s| s >= n || std::mem::replace(&mut seen[s], true))
    {
        return (0..n).collect();
    }
    let mut succ = successor.to_vec();
    let mut cycle = vec![usize::MAX; n];
    loop {
        // Label the cycles and find the largest.
        cycle.fill(usize::MAX);
        let (mut count, mut largest, mut largest_size) = (0, 0, 0);
        for s in 0..n {
            if cycle[s] != usize::MAX {
                continue;
            }
            let mut size = 0;
            let mut v = s;
            while cycle[v] == usize::MAX {
                cycle[v] = count;
                size += 1;
                v = succ[v];
            }
            if size > largest_size {
                (largest, largest_size) = (count, size);
            }
            count += 1;
        }
        if count <= 1 {
            break;
        }
        let inside: Vec<usize> = (0..n).filter(|&v| cycle[v] == largest).collect();
        let mut best: Option<(i64, usize, usize)> = None;
        for b in (0..n).filter(|&v| cycle[v] != largest) {
            let (sb, cb) = (succ[b], cost.cost(b, succ[b]));
            for &a in &inside {
                let sa = succ[a];
                let delta = cost
                    .cost(a, sb)
                    .saturating_add(cost.cost(b, sa))
                    .saturating_sub(cost.cost(a, sa))
                    .saturating_sub(cb);
                if best.is_none_or(|(d, _, _)| delta < d) {
                    best = Some((delta, a, b));
                }
            }
        }
        let Some((_, a, b)) = best else { break };
        succ.swap(a, b);
    }
    let mut order = Vec::with_capacity(n);
    let mut v = 0;
    for _ in 0..n {
        order.push(v);
        v = succ[v];
    }
    order
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::MatrixCost;
    use crate::exact::dynamic_programme;
    use proptest::prelude::*;

    /// Two pairs of nodes 1 apart, 10 between the pairs.
    fn two_cheap_pairs() -> MatrixCost {
        MatrixCost::from_rows(&[
            vec![0, 1, 10, 10],
            vec![1, 0, 10, 10],
            vec![10, 10, 0, 1],
            vec![10, 10, 1, 0],
        ])
        .unwrap()
    }

    // A hand-checked case: the cheapest cover of 0 -> 1 -> 0 (1 + 1) and 2 -> 3 -> 2 (1 + 1) costs
    // 4, while every tour must leave the pair {0, 1} once at cost 10 and come back once at 10.
    #[test]
    fn two_cheap_pairs_give_a_cover_of_two_cycles() {
        let c = two_cheap_pairs();
        let b = assignment_bound(&c).unwrap();
        assert_eq!(b.lower_bound, 4);
        assert_eq!(b.cycles, 2);
        assert_eq!(b.successor, vec![1, 0, 3, 2]);
    }

    #[test]
    fn tiny_instances() {
        let c = MatrixCost::from_rows(&[vec![0, 3], vec![5, 0]]).unwrap();
        assert_eq!(assignment_bound(&c).unwrap().lower_bound, 8);
        let c = MatrixCost::from_rows(&[vec![0]]).unwrap();
        assert_eq!(assignment_bound(&c).unwrap().lower_bound, 0);
        let c = MatrixCost::from_rows(&[vec![0, i64::MAX / 2], vec![1, 0]]).unwrap();
        assert_eq!(assignment_bound(&c), Err(AssignmentError::Overflow));
    }

    // A hand-checked patch: the cover 0 <-> 1, 2 <-> 3 of the two-cheap-pairs matrix becomes
    // one tour by exchanging one successor from each pair: 1 + 10 + 1 + 10 = 22, the optimum.
    #[test]
    fn two_cycles_are_patched_into_the_optimal_tour() {
        let c = two_cheap_pairs();
        let order = patch_cover(&c, &[1, 0, 3, 2]);
        assert_eq!(crate::tour::closed_length(&c, &order), Ok(22));
        assert_eq!(order[0], 0);
    }

    #[test]
    fn a_cover_that_is_not_a_permutation_gives_the_identity() {
        let c = MatrixCost::from_rows(&[vec![0, 1, 2], vec![1, 0, 3], vec![2, 3, 0]]).unwrap();
        assert_eq!(patch_cover(&c, &[1, 1, 0]), vec![0, 1, 2]);
        assert_eq!(patch_cover(&c, &[1, 2]), vec![0, 1, 2]);
    }

    proptest! {
        // Never above the optimum of the exact dynamic programme; equal to it when the cover
        // is one cycle; and the cover's cost is its reported bound.
        #[test]
        fn never_above_the_optimum(n in 2usize..=9, entries in proptest::collection::vec(0i64..100, 81)) {
            let rows: Vec<Vec<i64>> = (0..n)
                .map(|i| (0..n).map(|j| if i == j { 0 } else { entries[i * 9 + j] }).collect())
                .collect();
            let c = MatrixCost::from_rows(&rows).unwrap();
            let b = assignment_bound(&c).unwrap();
            let opt = dynamic_programme(&c, 1 << 30, &mut || false).unwrap().length;
            prop_assert!(b.lower_bound <= opt);
            let cover: i64 = (0..n).map(|i| rows[i][b.successor[i]]).sum();
            prop_assert_eq!(cover, b.lower_bound);
            if b.cycles == 1 {
                prop_assert_eq!(b.lower_bound, opt);
            }
            // The patched cover is a tour, no shorter than the optimum, and the cover itself
            // when that is one cycle already.
            let order = patch_cover(&c, &b.successor);
            let mut sorted = order.clone();
            sorted.sort_unstable();
            prop_assert_eq!(sorted, (0..n).collect::<Vec<_>>());
            let l = crate::tour::closed_length(&c, &order).unwrap();
            prop_assert!(l >= opt);
            if b.cycles == 1 {
                prop_assert_eq!(l, b.lower_bound);
            }
        }
    }
}
