//! Exact answers for small instances: trying every order ([`enumerate`], up to 9 nodes) and the
//! dynamic programme over subsets ([`dynamic_programme`], up to 24 nodes).

use crate::cost::Cost;
use crate::transform::{EndedCost, Ends, path_length};
use rayon::prelude::*;

/// Largest instance [`enumerate`] accepts: 8! = 40,320 orders with the first node fixed.
pub(crate) const ENUMERATION_LIMIT: usize = 9;

/// The shortest closed tour by trying every order with node 0 first (and, when no cost is
/// negative, pruning partial orders that are already no better than the best), for
/// `n <= ENUMERATION_LIMIT`. Sums saturate, so a cost near `i64::MAX` cannot wrap; the caller
/// checks the length of the result exactly.
pub(crate) fn enumerate<C: Cost + ?Sized>(cost: &C) -> Option<Vec<usize>> {
    let n = cost.len();
    if n > ENUMERATION_LIMIT {
        return None;
    }
    if n <= 2 {
        return Some((0..n).collect());
    }
    // A partial sum bounds the total from below only when no step can make it smaller.
    let prune = (0..n).all(|i| (0..n).all(|j| i == j || cost.cost(i, j) >= 0));
    let mut best = (i64::MAX, Vec::new());
    let mut path = vec![0usize];
    let mut used = vec![false; n];
    used[0] = true;
    fn go<C: Cost + ?Sized>(
        cost: &C,
        path: &mut Vec<usize>,
        used: &mut [bool],
        sum: i64,
        prune: bool,
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
                if prune && s >= best.0 && !best.1.is_empty() {
                    continue;
                }
                used[v] = true;
                path.push(v);
                go(cost, path, used, s, prune, best);
                path.pop();
                used[v] = false;
            }
        }
    }
    go(cost, &mut path, &mut used, 0, prune, &mut best);
    Some(best.1)
}

/// Largest instance [`dynamic_programme`] accepts. At 24 nodes the table has
/// 23 * 2^22 = 96,468,992 entries: 386 MB with 32-bit entries, 772 MB with 64-bit ones.
pub const DP_LIMIT: usize = 24;

/// Default memory budget of [`dynamic_programme`]: 2 GiB.
pub const DEFAULT_DP_MEMORY: usize = 2 << 30;

/// Subset layers are computed in batches of about this many additions, with `should_stop`
/// polled between batches.
const DP_BATCH_WORK: usize = 1 << 22;

/// Subsets per parallel task within a batch.
const DP_TASK_SUBSETS: usize = 256;

/// An optimal closed tour found by [`dynamic_programme`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DpTour {
    /// The visiting order, starting at node 0 (empty for an empty instance).
    pub order: Vec<usize>,
    /// Its exact length, as [`crate::tour::closed_length`] defines it.
    pub length: i64,
}

/// Why [`dynamic_programme`] gave no tour.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum DpError {
    /// More nodes than [`DP_LIMIT`].
    #[error("the dynamic programme handles at most {limit} nodes; this instance has {n}")]
    TooManyNodes {
        /// Nodes in the instance.
        n: usize,
        /// [`DP_LIMIT`].
        limit: usize,
    },
    /// The table would need more memory than the caller allowed; nothing was allocated.
    #[error(
        "the dynamic programme over {n} nodes would need {needed_bytes} bytes ({}), \
         more than the limit of {limit_bytes} bytes ({})",
        human_bytes(*needed_bytes),
        human_bytes(*limit_bytes)
    )]
    TooLarge {
        /// Nodes in the instance.
        n: usize,
        /// Bytes the table and its cost matrices would take.
        needed_bytes: usize,
        /// The caller's limit.
        limit_bytes: usize,
    },
    /// The allocator could not provide the memory, though it was within the limit.
    #[error("could not allocate {needed_bytes} bytes ({}) for the dynamic programme", human_bytes(*needed_bytes))]
    OutOfMemory {
        /// Bytes requested.
        needed_bytes: usize,
    },
    /// Costs so large that a sum of `n` of them could overflow a 64-bit integer.
    #[error("costs are so large that a tour length could overflow a 64-bit integer")]
    Overflow,
    /// `should_stop` returned true.
    #[error("the dynamic programme was stopped")]
    Stopped,
    /// The table does not hold what it should: a bug, reported instead of a panic.
    #[error("internal error in the dynamic programme: {0}; please report it")]
    Internal(&'static str),
    /// The ends asked of [`optimal_path`] are out of range, or their penalty could overflow.
    #[error(transparent)]
    Ends(#[from] crate::transform::EndsError),
}

/// `bytes` in MiB or GiB, for messages.
fn human_bytes(bytes: usize) -> String {
    let b = bytes as f64;
    if b >= (1u64 << 30) as f64 {
        format!("{:.2} GiB", b / (1u64 << 30) as f64)
    } else {
        format!("{:.1} MiB", b / (1u64 << 20) as f64)
    }
}

/// Bytes [`dynamic_programme`] allocates for `n` nodes with table entries of `entry_bytes` (4
/// when `n * max |cost(i, j)|` over `i != j` fits in `i32`, 8 otherwise):
/// `(n-1) * 2^(n-2) * entry_bytes` for the table, `(n-1)^2 * entry_bytes` for the cost matrix the
/// inner loop reads and `n^2 * 8` for the full `i64` matrix. Zero for `n < 2`; `None` if the
/// count overflows `usize`.
pub(crate) fn dp_memory_bytes(n: usize, entry_bytes: usize) -> Option<usize> {
    if n < 2 {
        return Some(0);
    }
    let m = n - 1;
    let entries = 1usize.checked_shl((m - 1) as u32)?.checked_mul(m)?;
    entries
        .checked_add(m * m)?
        .checked_mul(entry_bytes)?
        .checked_add(n.checked_mul(n)?.checked_mul(8)?)
}

/// A table entry: `i32` when every tour's length fits, `i64` otherwise.
trait Entry: Copy + Ord + Send + Sync + Default + std::ops::Add<Output = Self> {
    fn from_i64(v: i64) -> Self;
    fn to_i64(self) -> i64;
}

impl Entry for i32 {
    #[inline]
    fn from_i64(v: i64) -> Self {
        v as i32
    }
    #[inline]
    fn to_i64(self) -> i64 {
        self as i64
    }
}

impl Entry for i64 {
    #[inline]
    fn from_i64(v: i64) -> Self {
        v
    }
    #[inline]
    fn to_i64(self) -> i64 {
        self
    }
}

/// Binomial coefficients `C(a, b)` for `a, b <= DP_LIMIT`.
struct Binomials([[usize; DP_LIMIT + 1]; DP_LIMIT + 1]);

impl Binomials {
    fn new() -> Self {
        let mut c = [[0usize; DP_LIMIT + 1]; DP_LIMIT + 1];
        for a in 0..=DP_LIMIT {
            c[a][0] = 1;
            for b in 1..=a {
                c[a][b] = c[a - 1][b - 1] + if b < a { c[a - 1][b] } else { 0 };
            }
        }
        Binomials(c)
    }

    #[inline]
    fn get(&self, a: usize, b: usize) -> usize {
        if b > a { 0 } else { self.0[a][b] }
    }

    /// Colexicographic rank of a subset among those of its size: `sum_i C(p_i, i + 1)` over its
    /// elements `p_0 < p_1 < ...`. Equals the rank of the mask in increasing numeric order.
    fn rank(&self, mut set: u32) -> usize {
        let mut r = 0;
        let mut i = 1;
        while set != 0 {
            r += self.get(set.trailing_zeros() as usize, i);
            set &= set - 1;
            i += 1;
        }
        r
    }

    /// The `size`-subset of colexicographic rank `r`.
    fn unrank(&self, mut r: usize, size: usize) -> u32 {
        let mut set = 0u32;
        let mut p = DP_LIMIT;
        for i in (1..=size).rev() {
            while self.get(p, i) > r {
                p -= 1;
            }
            set |= 1 << p;
            r -= self.get(p, i);
            p = p.saturating_sub(1);
        }
        set
    }
}

/// The next mask with the same number of bits, in increasing order (Gosper).
#[inline]
fn next_same_size(x: u32) -> u32 {
    let c = x & x.wrapping_neg();
    let r = x + c;
    (((r ^ x) >> 2) / c) | r
}

/// The shortest closed tour by the dynamic programme over subsets (Held and Karp 1962), exact for
/// symmetric and asymmetric costs, for `n <= DP_LIMIT`. Time O(n^2 2^n), parallel over the
/// subsets of each size; memory `dp_memory_bytes`, refused with [`DpError::TooLarge`] before
/// anything is allocated when above `memory_limit_bytes`.
///
/// Node 0 is the start. For every nonempty subset `S` of the other nodes (relabelled
/// `0..n-1`) and every `j` in `S`, the table holds the shortest path from node 0 through exactly
/// `S`, ending at `j`. Subsets are stored by size, each size in increasing mask order, each
/// subset as one row of `|S|` entries (one per member, in increasing order), so a row is found
/// from the subset's combinatorial rank and the table has exactly `(n-1) * 2^(n-2)` entries. The
/// tour is recovered by walking back from the full set, recomputing which predecessor gives each
/// entry's value.
///
/// `should_stop` is polled between batches of a few million additions; when it returns true the
/// call ends with [`DpError::Stopped`]. The length is that of [`crate::tour::closed_length`]: 0
/// for fewer than two nodes.
///
/// ```
/// let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
/// let costs = wend::MatrixCost::from_rows(&rows).unwrap();
/// let best = wend::dynamic_programme(&costs, wend::DEFAULT_DP_MEMORY, &mut || false).unwrap();
/// assert_eq!(best.order, vec![0, 2, 1]);
/// assert_eq!(best.length, 17);
/// ```
pub fn dynamic_programme<C: Cost + ?Sized>(
    cost: &C,
    memory_limit_bytes: usize,
    should_stop: &mut dyn FnMut() -> bool,
) -> Result<DpTour, DpError> {
    dynamic_programme_dyn(cost.as_dyn_cost(), memory_limit_bytes, should_stop)
}

/// [`dynamic_programme`], compiled here once, on any cost.
fn dynamic_programme_dyn(
    cost: &dyn Cost,
    memory_limit_bytes: usize,
    should_stop: &mut dyn FnMut() -> bool,
) -> Result<DpTour, DpError> {
    let n = cost.len();
    if n > DP_LIMIT {
        return Err(DpError::TooManyNodes { n, limit: DP_LIMIT });
    }
    if n < 2 {
        return Ok(DpTour {
            order: (0..n).collect(),
            length: 0,
        });
    }
    // n^2 <= 576 cost calls; the table's entry width depends on the largest one.
    let mut full = Vec::with_capacity(n * n);
    let mut max_abs: i64 = 0;
    for i in 0..n {
        for j in 0..n {
            let c = if i == j { 0 } else { cost.cost(i, j) };
            max_abs = max_abs.max(c.checked_abs().ok_or(DpError::Overflow)?);
            full.push(c);
        }
    }
    let bound = max_abs.checked_mul(n as i64).ok_or(DpError::Overflow)?;
    let narrow = bound <= i32::MAX as i64;
    let entry_bytes = if narrow { 4 } else { 8 };
    let needed_bytes = dp_memory_bytes(n, entry_bytes).unwrap_or(usize::MAX);
    if needed_bytes > memory_limit_bytes {
        return Err(DpError::TooLarge {
            n,
            needed_bytes,
            limit_bytes: memory_limit_bytes,
        });
    }
    let (order, best) = if narrow {
        solve_table::<i32>(n, &full, needed_bytes, should_stop)?
    } else {
        solve_table::<i64>(n, &full, needed_bytes, should_stop)?
    };
    let length = crate::tour::closed_length(cost, &order).map_err(|_| DpError::Overflow)?;
    debug_assert_eq!(length, best);
    Ok(DpTour { order, length })
}

/// The shortest visiting order with the given [`Ends`] by the dynamic programme: for a closed
/// tour ([`Ends::Closed`], or `StartEnd(s, s)`) that of [`dynamic_programme`], rotated to start
/// at `s`; for a path, the shortest closed tour of the costs with one dummy node
/// (`crate::transform::EndedCost`, exact because its penalty exceeds every difference of path
/// lengths), read off as a path. The order runs from the path's first node to its last, and
/// `length` is the path's length on `cost`, without a return step. Paths take one node more
/// than tours, so at most `DP_LIMIT - 1` nodes.
///
/// ```
/// use wend::{optimal_path, CoordCost, Ends, Metric, DEFAULT_DP_MEMORY};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// let path = optimal_path(&square, Ends::StartEnd(0, 1), DEFAULT_DP_MEMORY, &mut || false).unwrap();
/// assert_eq!(path.order, vec![0, 3, 2, 1]); // the long way round: 1 is reached last
/// assert_eq!(path.length, 30);
/// ```
pub fn optimal_path<C: Cost + ?Sized>(
    cost: &C,
    ends: Ends,
    memory_limit_bytes: usize,
    should_stop: &mut dyn FnMut() -> bool,
) -> Result<DpTour, DpError> {
    let n = cost.len();
    ends.check(n)?;
    if !ends.is_path() {
        let mut t = dynamic_programme(cost, memory_limit_bytes, should_stop)?;
        if let Some(p) = t.order.iter().position(|&v| Some(v) == ends.start()) {
            t.order.rotate_left(p);
        }
        return Ok(t);
    }
    if n < 2 {
        return Ok(DpTour {
            order: (0..n).collect(),
            length: 0,
        });
    }
    if n + 1 > DP_LIMIT {
        return Err(DpError::TooManyNodes {
            n,
            limit: DP_LIMIT - 1,
        });
    }
    let ended = EndedCost::new(cost, ends)?;
    let t = dynamic_programme(&ended, memory_limit_bytes, should_stop)?;
    let order = ended.path_from_tour(&t.order);
    let length = path_length(cost, &order).map_err(|_| DpError::Overflow)?;
    Ok(DpTour { order, length })
}

/// Fills the table with entries of type `E` and walks back; returns the order and the optimum.
fn solve_table<E: Entry>(
    n: usize,
    full: &[i64],
    needed_bytes: usize,
    should_stop: &mut dyn FnMut() -> bool,
) -> Result<(Vec<usize>, i64), DpError> {
    let m = n - 1; // nodes other than 0, relabelled v -> v - 1
    let bin = Binomials::new();
    // into[j * m + u]: cost of the step from u to j (relabelled), the column the inner loop reads.
    let mut into = Vec::new();
    into.try_reserve_exact(m * m)
        .map_err(|_| DpError::OutOfMemory { needed_bytes })?;
    for j in 0..m {
        for u in 0..m {
            into.push(E::from_i64(full[(u + 1) * n + (j + 1)]));
        }
    }
    // base[k]: offset of the rows of the subsets of size k.
    let mut base = vec![0usize; m + 2];
    for k in 1..=m {
        base[k + 1] = base[k] + bin.get(m, k) * k;
    }
    let entries = base[m + 1];
    let mut table: Vec<E> = Vec::new();
    table
        .try_reserve_exact(entries)
        .map_err(|_| DpError::OutOfMemory { needed_bytes })?;
    table.resize(entries, E::default());

    // Subsets of size 1: the step out of node 0.
    for j in 0..m {
        table[j] = E::from_i64(full[j + 1]);
    }
    for k in 2..=m {
        let (done, rest) = table.split_at_mut(base[k]);
        let prev = &done[base[k - 1]..];
        let layer = &mut rest[..bin.get(m, k) * k];
        let count = bin.get(m, k);
        let batch = (DP_BATCH_WORK / (k * k)).max(DP_TASK_SUBSETS);
        let mut r0 = 0;
        while r0 < count {
            if should_stop() {
                return Err(DpError::Stopped);
            }
            let r1 = (r0 + batch).min(count);
            let rows = &mut layer[r0 * k..r1 * k];
            let into = &into[..];
            let bin = &bin;
            rows.par_chunks_mut(DP_TASK_SUBSETS * k)
                .enumerate()
                .for_each(|(task, chunk)| {
                    let mut set = bin.unrank(r0 + task * DP_TASK_SUBSETS, k);
                    for row in chunk.chunks_exact_mut(k) {
                        fill_row(set, k, row, prev, into, m, bin);
                        set = next_same_size(set);
                    }
                });
            r0 = r1;
        }
    }
    if should_stop() {
        return Err(DpError::Stopped);
    }

    // Close the tour from the full set, then walk back.
    let all = ((1u64 << m) - 1) as u32;
    let last_row = &table[base[m]..base[m] + m];
    // Shortest total, ties to the smallest last node.
    let (optimum, mut j) = last_row
        .iter()
        .enumerate()
        .map(|(j, &v)| (v.to_i64() + full[(j + 1) * n], j))
        .min()
        .ok_or(DpError::Internal(
            "no last node for a table of at least two nodes",
        ))?;
    let mut set = all;
    let mut rev = Vec::with_capacity(n);
    loop {
        rev.push(j + 1);
        let size = set.count_ones() as usize;
        if size == 1 {
            break;
        }
        let at = |s: u32, v: usize| {
            let size = s.count_ones() as usize;
            let below = (s & ((1u32 << v) - 1)).count_ones() as usize;
            table[base[size] + bin.rank(s) * size + below]
        };
        let value = at(set, j);
        let rest = set & !(1 << j);
        let mut bits = rest;
        let mut found = None;
        while bits != 0 {
            let u = bits.trailing_zeros() as usize;
            bits &= bits - 1;
            if at(rest, u) + into[j * m + u] == value {
                found = Some(u);
                break;
            }
        }
        j = found.ok_or(DpError::Internal("an entry achieved by no predecessor"))?;
        set = rest;
    }
    rev.push(0);
    rev.reverse();
    Ok((rev, optimum))
}

/// Computes the row of subset `set` (of size `k >= 2`): for each member `p_t`, the best path
/// through `set` ending at `p_t`, from the row of `set` without `p_t` in `prev`.
#[inline]
fn fill_row<E: Entry>(
    set: u32,
    k: usize,
    row: &mut [E],
    prev: &[E],
    into: &[E],
    m: usize,
    bin: &Binomials,
) {
    let mut p = [0usize; DP_LIMIT];
    let mut bits = set;
    for slot in p.iter_mut().take(k) {
        *slot = bits.trailing_zeros() as usize;
        bits &= bits - 1;
    }
    // Rank of set \ {p_t} = sum_{i<t} C(p_i, i+1) + sum_{i>t} C(p_i, i).
    let mut before = 0usize;
    let mut after: usize = (1..k).map(|i| bin.get(p[i], i)).sum();
    for t in 0..k {
        let j = p[t];
        let rank = before + after;
        before += bin.get(p[t], t + 1);
        if t + 1 < k {
            after -= bin.get(p[t + 1], t + 1);
        }
        let from = &prev[rank * (k - 1)..rank * (k - 1) + (k - 1)];
        let col = &into[j * m..j * m + m];
        let mut best = from[0] + col[if t == 0 { p[1] } else { p[0] }];
        for u in 1..t {
            best = best.min(from[u] + col[p[u]]);
        }
        for u in t.max(1)..k - 1 {
            best = best.min(from[u] + col[p[u + 1]]);
        }
        row[t] = best;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::{FnCost, MatrixCost};
    use crate::tour::{Tour, closed_length};
    use proptest::prelude::*;
    use std::cell::Cell;

    /// The shortest closed tour by listing every permutation with node 0 first, summed in `i128`
    /// so that no partial sum can wrap. Written here independently of the code under test.
    fn brute_force(n: usize, w: &[i64]) -> i128 {
        if n < 2 {
            return 0; // no step to take
        }
        fn go(n: usize, w: &[i64], path: &mut Vec<usize>, used: &mut [bool], best: &mut i128) {
            if path.len() == n {
                let mut total = 0i128;
                for i in 0..n {
                    total += w[path[i] * n + path[(i + 1) % n]] as i128;
                }
                *best = (*best).min(total);
                return;
            }
            for v in 1..n {
                if !used[v] {
                    used[v] = true;
                    path.push(v);
                    go(n, w, path, used, best);
                    path.pop();
                    used[v] = false;
                }
            }
        }
        let mut best = i128::MAX;
        let mut used = vec![false; n];
        used[0] = true;
        go(n, w, &mut vec![0], &mut used, &mut best);
        best
    }

    fn never() -> impl FnMut() -> bool {
        || false
    }

    /// Random `n x n` weights in `-span/10 .. span`, mirrored when `symmetric`.
    fn instance(max_n: usize) -> impl Strategy<Value = (usize, Vec<i64>)> {
        (
            0..=max_n,
            any::<bool>(),
            prop_oneof![Just(100i64), Just(1_000_000_000_000i64)],
        )
            .prop_flat_map(|(n, symmetric, span)| {
                proptest::collection::vec(-span / 10..span, n * n).prop_map(move |mut w| {
                    if symmetric {
                        for i in 0..n {
                            for j in 0..i {
                                w[i * n + j] = w[j * n + i];
                            }
                        }
                    }
                    (n, w)
                })
            })
    }

    proptest! {
        #[test]
        fn dynamic_programme_matches_brute_force((n, w) in instance(9)) {
            let m = MatrixCost::from_row_major(n, w.clone()).unwrap();
            let t = dynamic_programme(&m, DEFAULT_DP_MEMORY, &mut never()).unwrap();
            prop_assert_eq!(t.length as i128, brute_force(n, &w));
            prop_assert!(Tour::new(t.order.clone(), n).is_ok());
            if n > 0 {
                prop_assert_eq!(t.order[0], 0);
            }
            prop_assert_eq!(closed_length(&m, &t.order), Ok(t.length));
            let e = enumerate(&m).unwrap();
            prop_assert_eq!(closed_length(&m, &e), Ok(t.length));
        }
    }

    #[test]
    fn dynamic_programme_tiny_instances() {
        // One node: no step, length 0 even with a nonzero self-cost (as `closed_length`).
        let one = MatrixCost::from_rows(&[vec![7]]).unwrap();
        let t = dynamic_programme(&one, DEFAULT_DP_MEMORY, &mut never()).unwrap();
        assert_eq!(
            t,
            DpTour {
                order: vec![0],
                length: 0
            }
        );
        let none = MatrixCost::from_row_major(0, vec![]).unwrap();
        let t = dynamic_programme(&none, DEFAULT_DP_MEMORY, &mut never()).unwrap();
        assert_eq!(
            t,
            DpTour {
                order: vec![],
                length: 0
            }
        );
        // Two nodes: there and back, 3 + 5.
        let two = MatrixCost::from_rows(&[vec![0, 3], vec![5, 0]]).unwrap();
        let t = dynamic_programme(&two, DEFAULT_DP_MEMORY, &mut never()).unwrap();
        assert_eq!(
            t,
            DpTour {
                order: vec![0, 1],
                length: 8
            }
        );
        // The directed 4-cycle: 0->1->2->3->0 costs 4, every other tour at least 13.
        let four = MatrixCost::from_rows(&[
            vec![0, 1, 10, 10],
            vec![10, 0, 1, 10],
            vec![10, 10, 0, 1],
            vec![1, 10, 10, 0],
        ])
        .unwrap();
        let t = dynamic_programme(&four, DEFAULT_DP_MEMORY, &mut never()).unwrap();
        assert_eq!(
            t,
            DpTour {
                order: vec![0, 1, 2, 3],
                length: 4
            }
        );
    }

    #[test]
    fn dynamic_programme_finds_a_planted_cycle_on_twelve_nodes() {
        // Beyond the property test's sizes, where brute force is slow: an instance whose
        // optimum is known by construction. Steps i -> i+1 (mod n) cost 1, every other step
        // costs at least 100, so the cycle (length 12) is the only tour below 100.
        let n = 12;
        let c = FnCost::new(n, false, move |i, j| {
            if j == (i + 1) % n {
                1
            } else {
                100 + ((i * 7 + j * 13) % 50) as i64
            }
        });
        let t = dynamic_programme(&c, DEFAULT_DP_MEMORY, &mut never()).unwrap();
        assert_eq!(t.length, 12);
        assert_eq!(t.order, (0..12).collect::<Vec<_>>());
    }

    #[test]
    fn dynamic_programme_refuses_before_allocating() {
        let polled = Cell::new(0);
        let c = FnCost::new(24, true, |i, j| (i + j) as i64);
        let mut stop = || {
            polled.set(polled.get() + 1);
            false
        };
        let e = dynamic_programme(&c, 1 << 20, &mut stop).unwrap_err();
        let needed = dp_memory_bytes(24, 4).unwrap();
        // 23 * 2^22 entries of 4 bytes, plus the two small matrices.
        assert_eq!(needed, 23 * (1 << 22) * 4 + 23 * 23 * 4 + 24 * 24 * 8);
        assert_eq!(
            e,
            DpError::TooLarge {
                n: 24,
                needed_bytes: needed,
                limit_bytes: 1 << 20
            }
        );
        // The table is allocated before the first poll; no poll means no table.
        assert_eq!(polled.get(), 0);
        let msg = e.to_string();
        assert!(msg.contains(&needed.to_string()), "{msg}");
        assert!(msg.contains("MiB"), "{msg}");
    }

    #[test]
    fn dynamic_programme_refuses_25_nodes_without_asking_costs() {
        let c = FnCost::new(25, true, |_, _| -> i64 {
            panic!("no cost should be asked for")
        });
        let e = dynamic_programme(&c, usize::MAX, &mut never()).unwrap_err();
        assert_eq!(e, DpError::TooManyNodes { n: 25, limit: 24 });
        assert!(e.to_string().contains("at most 24 nodes"));
    }

    #[test]
    fn dynamic_programme_refuses_overflowing_costs() {
        let big = i64::MAX / 4;
        let c = FnCost::new(5, true, move |i, j| if i == j { 0 } else { big });
        let e = dynamic_programme(&c, DEFAULT_DP_MEMORY, &mut never()).unwrap_err();
        assert_eq!(e, DpError::Overflow);
        let min = FnCost::new(3, false, |_, _| i64::MIN);
        let e = dynamic_programme(&min, DEFAULT_DP_MEMORY, &mut never()).unwrap_err();
        assert_eq!(e, DpError::Overflow);
        // Just above the 32-bit range: 64-bit entries, exact answer.
        let wide = i32::MAX as i64 / 2;
        let c = FnCost::new(4, true, move |i, j| if i == j { 0 } else { wide });
        let t = dynamic_programme(&c, DEFAULT_DP_MEMORY, &mut never()).unwrap();
        assert_eq!(t.length, 4 * wide);
    }

    #[test]
    fn dynamic_programme_stops_when_asked() {
        let c = FnCost::new(14, true, |i, j| (i * j % 17) as i64);
        let mut calls = 0;
        let mut stop = || {
            calls += 1;
            calls > 2
        };
        let e = dynamic_programme(&c, DEFAULT_DP_MEMORY, &mut stop).unwrap_err();
        assert_eq!(e, DpError::Stopped);
    }

    #[test]
    fn ranks_follow_numeric_order() {
        let bin = Binomials::new();
        for size in 1..=5usize {
            let mut set = (1u32 << size) - 1;
            for r in 0..bin.get(10, size) {
                assert_eq!(bin.rank(set), r);
                assert_eq!(bin.unrank(r, size), set);
                let next = next_same_size(set);
                assert!(next > set && next.count_ones() as usize == size);
                set = next;
            }
        }
    }

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
