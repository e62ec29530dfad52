//! Exact answers for tiny instances.

use crate::cost::Cost;

/// Largest instance [`enumerate`] accepts: 8! = 40,320 orders with the first node fixed.
pub const ENUMERATION_LIMIT: usize = 9;

/// The shortest closed tour by trying every order with node 0 first (and pruning partial orders
/// that are already no better than the best), for `n <= ENUMERATION_LIMIT`. Sums saturate, so a
/// cost near `i64::MAX` cannot wrap; the caller checks the length of the result exactly.
pub fn enumerate<C: Cost + ?Sized>(cost: &C) -> Option<Vec<usize>> {
    let n = cost.len();
    if n > ENUMERATION_LIMIT {
        return None;
    }
    if n <= 2 {
        return Some((0..n).collect());
    }
    let mut best = (i64::MAX, Vec::new());
    let mut path = vec![0usize];
    let mut used = vec![false; n];
    used[0] = true;
    fn go<C: Cost + ?Sized>(
        cost: &C,
        path: &mut Vec<usize>,
        used: &mut [bool],
        sum: i64,
        best: &mut (i64, Vec<usize>),
    ) {
        let n = used.len();
        let last = path[path.len() - 1];
        if path.len() == n {
            let total = sum.saturating_add(cost.cost(last, path[0]));
            if total < best.0 || best.1.is_empty() {
                *best = (total, path.clone());
            }
            return;
        }
        for v in 1..n {
            if !used[v] {
                let s = sum.saturating_add(cost.cost(last, v));
                if s >= best.0 && !best.1.is_empty() {
                    continue;
                }
                used[v] = true;
                path.push(v);
                go(cost, path, used, s, best);
                path.pop();
                used[v] = false;
            }
        }
    }
    go(cost, &mut path, &mut used, 0, &mut best);
    Some(best.1)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::MatrixCost;
    use crate::tour::closed_length;

    #[test]
    fn finds_the_directed_optimum() {
        // Asymmetric 4-cycle: 0->1->2->3->0 costs 4, the reverse costs 40.
        let m = MatrixCost::from_rows(&[
            vec![0, 1, 10, 10],
            vec![10, 0, 1, 10],
            vec![10, 10, 0, 1],
            vec![1, 10, 10, 0],
        ])
        .unwrap();
        let t = enumerate(&m).unwrap();
        assert_eq!(closed_length(&m, &t), Ok(4));
    }
}
