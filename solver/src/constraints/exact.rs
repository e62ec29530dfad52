//! The exact method under constraints: a label-setting dynamic programme over (visited set, last
//! stop) with time dominance and window-based pruning.
//!
//! A label is a partial sequence from the depot, summarised by the set of stops it visited, its
//! last stop, the time it is ready to leave that stop (service start plus service) and its travel
//! cost. Labels are built layer by layer (one more stop each time). Two labels with the same set
//! and last stop face the same future, and an earlier ready time can only lead to earlier or
//! equal service starts later on, so a label that is no later and no dearer than another makes
//! the other useless: for [`Objective::Travel`] each (set, last) keeps the Pareto front of
//! (ready time, travel cost); for [`Objective::Completion`] it keeps the single earliest label
//! (the cheaper on ties). A label is dropped as soon as some required stop not yet visited can no
//! longer be reached before its last window closes (by shortest travel times, when no cost or
//! service is negative).
//!
//! Rules as this programme reads them:
//! The rules are those of [`evaluate`](super::evaluate):
//! - the depot is reached at [`Constraints::start_time`] and served like any stop (waiting for
//!   its first window); a closed tour's return must come by the close of the depot's last
//!   window, and its completion is that arrival; a path's completion is the end of service at
//!   its last stop;
//! - a precedence pair lets `after` be visited only once `before` has been (so leaving out an
//!   optional `before` leaves out its `after` too); a precedence into the depot is refused;
//!   lags are not supported ([`ExactError::Unsupported`]);
//! - a fixed edge `(a, b)` holds when neither stop is visited or `b` comes directly after `a`
//!   (the return to the depot counts as coming after the last stop of a closed tour).

use super::{Constraints, Objective, Route, Window};
use crate::control::StopHandle;
use crate::cost::Cost;
use crate::memory::{self, MemoryError};
use std::collections::HashMap;
use std::time::Instant;

/// Largest number of stops [`solve_exact`] accepts (visited sets are 64-bit masks).
pub const EXACT_LIMIT: usize = 64;

/// Bytes counted per label kept: the label itself plus its share of the tables that index it.
const LABEL_BYTES: usize = 64;

/// Extensions between two polls of the stop handle and the deadline.
const POLL_EVERY: u64 = 1 << 12;

/// What [`solve_exact`] found.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ExactOutcome {
    /// The best order found, from the depot (the return of a closed tour not repeated); optional
    /// stops left out are not in it. `None` when none was found.
    pub order: Option<Vec<usize>>,
    /// Its objective: travel cost or completion time, plus the penalties of the stops left out.
    pub objective: Option<i64>,
    /// True when the search ran to its end and `order` is optimal.
    pub proven_optimal: bool,
    /// True when the search ran to its end and no order meets every window and rule.
    pub proven_infeasible: bool,
    /// Labels created (the work done).
    pub labels: u64,
}

/// Why [`solve_exact`] gave no outcome.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum ExactError {
    /// More stops than [`EXACT_LIMIT`].
    #[error("the exact method handles at most {limit} stops; this instance has {n}")]
    TooManyStops {
        /// Stops in the instance.
        n: usize,
        /// [`EXACT_LIMIT`].
        limit: usize,
    },
    /// A constraint this method does not handle.
    #[error("the exact method does not support {0}")]
    Unsupported(String),
    /// The constraints do not fit the cost or contradict the shape of a sequence.
    #[error("constraints not usable by the exact method: {0}")]
    Invalid(String),
    /// A time or cost sum would overflow a 64-bit integer.
    #[error("times or costs are so large that a sum would overflow a 64-bit integer")]
    Overflow,
    /// The labels would pass the memory ceiling.
    #[error(transparent)]
    Memory(#[from] MemoryError),
}

/// One partial sequence.
#[derive(Clone, Copy, Debug)]
struct Label {
    set: u64,
    /// Time the vehicle may leave `last`.
    ready: i64,
    /// Travel cost so far.
    travel: i64,
    /// Index of the label it extends in the kept labels (`u32::MAX` for the first).
    parent: u32,
    last: u8,
}

/// The constraints in the form the search reads.
struct Prepared<'a> {
    n: usize,
    depot: usize,
    windows: &'a [Vec<Window>],
    service: &'a [i64],
    /// Per stop, the mask of stops that must be visited before it.
    preds: Vec<u64>,
    /// Per stop, the stop that must directly follow it; `Some(None)` when two fixed edges
    /// disagree, so that nothing may follow it.
    next: Vec<Option<Option<usize>>>,
    /// Per stop, the stop that must directly precede it, the same way.
    prev: Vec<Option<Option<usize>>>,
    /// Mask of the stops that must be visited.
    required: u64,
    /// Penalty of each optional stop (0 for required ones).
    penalty: Vec<i64>,
    /// Shortest travel time between stops, service of the stops passed included, when no cost
    /// or service is negative (then it bounds arrival times from below).
    reach: Option<Vec<i64>>,
    /// Latest start of service per stop (`i64::MAX` without windows).
    latest: Vec<i64>,
    objective: Objective,
    route: Route,
    costs: Vec<i64>,
}

/// The start of service at a stop with `windows` reached at `arrival`, by the rule of
/// [`evaluate`](super::evaluate); `None` once every window has closed (or the times leave the
/// `i64` range, which no label can then use).
fn service_start(windows: &[Window], arrival: i64) -> Option<i64> {
    super::schedule::service_start(windows, arrival)
        .ok()
        .filter(|s| s.late.is_none())
        .map(|s| s.start)
}

fn prepare<'a, C: Cost + ?Sized>(cost: &C, c: &'a Constraints) -> Result<Prepared<'a>, ExactError> {
    let n = cost.len();
    if n > EXACT_LIMIT {
        return Err(ExactError::TooManyStops {
            n,
            limit: EXACT_LIMIT,
        });
    }
    if n == 0 {
        return Err(ExactError::Invalid("the cost has no stops".into()));
    }
    let sizes = [
        ("windows", c.windows.len()),
        ("service", c.service.len()),
        ("penalty", c.penalty.len()),
    ];
    for (what, len) in sizes {
        if len != n {
            return Err(ExactError::Invalid(format!(
                "{len} {what} entries for {n} stops"
            )));
        }
    }
    let depot = c.depot;
    if depot >= n {
        return Err(ExactError::Invalid(format!(
            "depot {depot} is not one of the {n} stops"
        )));
    }
    let in_range = |s: usize, what: &str| {
        if s < n {
            Ok(())
        } else {
            Err(ExactError::Invalid(format!(
                "{what} names stop {s}, not one of the {n} stops"
            )))
        }
    };
    let mut preds = vec![0u64; n];
    for p in &c.precedence {
        in_range(p.before, "a precedence")?;
        in_range(p.after, "a precedence")?;
        if p.min_lag.is_some() || p.max_lag.is_some() {
            return Err(ExactError::Unsupported(format!(
                "lags on precedence pairs ({} before {})",
                p.before, p.after
            )));
        }
        if p.after == depot || p.before == p.after {
            return Err(ExactError::Invalid(format!(
                "precedence {} before {} cannot hold: the depot is served first and a stop \
                 cannot precede itself",
                p.before, p.after
            )));
        }
        preds[p.after] |= 1 << p.before;
    }
    let mut next: Vec<Option<Option<usize>>> = vec![None; n];
    let mut prev: Vec<Option<Option<usize>>> = vec![None; n];
    let pin = |slot: &mut Option<Option<usize>>, to: usize| {
        *slot = match *slot {
            None => Some(Some(to)),
            Some(Some(old)) if old == to => Some(Some(to)),
            Some(_) => Some(None),
        };
    };
    for &(a, b) in &c.fixed_edges {
        in_range(a, "a fixed edge")?;
        in_range(b, "a fixed edge")?;
        if a == b {
            return Err(ExactError::Invalid(format!(
                "fixed edge from stop {a} to itself"
            )));
        }
        pin(&mut next[a], b);
        pin(&mut prev[b], a);
    }
    let mut required = 0u64;
    let mut penalty = vec![0i64; n];
    for (s, p) in c.penalty.iter().enumerate() {
        match p {
            None => required |= 1 << s,
            Some(p) => penalty[s] = *p,
        }
    }
    required |= 1 << depot;
    penalty[depot] = 0;
    let mut costs = Vec::with_capacity(n * n);
    for i in 0..n {
        for j in 0..n {
            costs.push(if i == j { 0 } else { cost.cost(i, j) });
        }
    }
    let nonnegative = costs.iter().all(|&x| x >= 0) && c.service.iter().all(|&s| s >= 0);
    let reach = nonnegative.then(|| shortest_times(n, &costs, &c.service));
    let latest = c
        .windows
        .iter()
        .map(|ws| ws.iter().map(|w| w.latest).max().unwrap_or(i64::MAX))
        .collect();
    Ok(Prepared {
        n,
        depot,
        windows: &c.windows,
        service: &c.service,
        preds,
        next,
        prev,
        required,
        penalty,
        reach,
        latest,
        objective: c.objective,
        route: c.route,
        costs,
    })
}

/// All-pairs shortest travel times where passing through `k` adds its service (Floyd and
/// Warshall), saturating; costs and services are non-negative.
fn shortest_times(n: usize, costs: &[i64], service: &[i64]) -> Vec<i64> {
    let mut d = costs.to_vec();
    for k in 0..n {
        for i in 0..n {
            let ik = d[i * n + k].saturating_add(service[k]);
            for j in 0..n {
                let via = ik.saturating_add(d[k * n + j]);
                if via < d[i * n + j] {
                    d[i * n + j] = via;
                }
            }
        }
    }
    d
}

impl Prepared<'_> {
    #[inline]
    fn cost(&self, i: usize, j: usize) -> i64 {
        self.costs[i * self.n + j]
    }

    /// True when some required stop outside `set` can no longer be served in time by leaving
    /// `last` at `ready`, or a closed tour could no longer return to the depot in time.
    fn doomed(&self, set: u64, last: usize, ready: i64) -> bool {
        let Some(reach) = &self.reach else {
            return false;
        };
        let row = &reach[last * self.n..(last + 1) * self.n];
        let mut missing = self.required & !set;
        while missing != 0 {
            let j = missing.trailing_zeros() as usize;
            missing &= missing - 1;
            if ready.saturating_add(row[j]) > self.latest[j] {
                return true;
            }
        }
        self.route == Route::Closed
            && last != self.depot
            && ready.saturating_add(row[self.depot]) > self.latest[self.depot]
    }

    /// The label after visiting `j` next, or `None` when a rule or window forbids it.
    fn extend(&self, from: &Label, index: u32, j: usize) -> Result<Option<Label>, ExactError> {
        let bit = 1u64 << j;
        let last = from.last as usize;
        if from.set & bit != 0 || self.preds[j] & !from.set != 0 {
            return Ok(None);
        }
        if matches!(self.next[last], Some(b) if b != Some(j))
            || matches!(self.prev[j], Some(a) if a != Some(last))
        {
            return Ok(None);
        }
        let arrival = from
            .ready
            .checked_add(self.cost(last, j))
            .ok_or(ExactError::Overflow)?;
        let Some(start) = service_start(&self.windows[j], arrival) else {
            return Ok(None);
        };
        let ready = start
            .checked_add(self.service[j])
            .ok_or(ExactError::Overflow)?;
        let travel = from
            .travel
            .checked_add(self.cost(last, j))
            .ok_or(ExactError::Overflow)?;
        let set = from.set | bit;
        if self.doomed(set, j, ready) {
            return Ok(None);
        }
        Ok(Some(Label {
            set,
            ready,
            travel,
            parent: index,
            last: j as u8,
        }))
    }

    /// The objective of ending the sequence after `label`, or `None` when it may not end there.
    fn finish(&self, label: &Label) -> Result<Option<i64>, ExactError> {
        if self.required & !label.set != 0 {
            return Ok(None);
        }
        let last = label.last as usize;
        let alone = last == self.depot;
        let (travel, completion) = match self.route {
            Route::Closed if alone => {
                if self.next[last].is_some() || self.prev[last].is_some() {
                    return Ok(None);
                }
                (0, label.ready)
            }
            Route::Closed => {
                if matches!(self.next[last], Some(b) if b != Some(self.depot))
                    || matches!(self.prev[self.depot], Some(a) if a != Some(last))
                {
                    return Ok(None);
                }
                let back = self.cost(last, self.depot);
                let arrival = label.ready.checked_add(back).ok_or(ExactError::Overflow)?;
                let travel = label.travel.checked_add(back).ok_or(ExactError::Overflow)?;
                (travel, arrival)
            }
            Route::Path => {
                if self.next[last].is_some() || self.prev[self.depot].is_some() {
                    return Ok(None);
                }
                (label.travel, label.ready)
            }
        };
        if self.route == Route::Closed && completion > self.latest[self.depot] {
            return Ok(None);
        }
        let mut skipped = !label.set & (u64::MAX >> (64 - self.n));
        let mut penalties = 0i64;
        while skipped != 0 {
            let s = skipped.trailing_zeros() as usize;
            skipped &= skipped - 1;
            penalties = penalties
                .checked_add(self.penalty[s])
                .ok_or(ExactError::Overflow)?;
        }
        let base = match self.objective {
            Objective::Travel => travel,
            Objective::Completion => completion,
        };
        base.checked_add(penalties)
            .map(Some)
            .ok_or(ExactError::Overflow)
    }

    /// True when `a` makes `b` useless (same set and last stop assumed).
    #[inline]
    fn dominates(&self, a: &Label, b: &Label) -> bool {
        match self.objective {
            Objective::Travel => a.ready <= b.ready && a.travel <= b.travel,
            Objective::Completion => {
                a.ready < b.ready || (a.ready == b.ready && a.travel <= b.travel)
            }
        }
    }
}

/// Adds `label` to the front of its (set, last) unless one there dominates it, dropping those it
/// dominates.
fn insert(p: &Prepared, front: &mut Vec<Label>, label: Label) {
    if front.iter().any(|old| p.dominates(old, &label)) {
        return;
    }
    front.retain(|old| !p.dominates(&label, old));
    front.push(label);
}

/// The stops of the sequence ending with `kept[index]`, from the depot.
fn order_of(kept: &[Label], mut index: u32) -> Vec<usize> {
    let mut order = Vec::new();
    while let Some(label) = kept.get(index as usize) {
        order.push(label.last as usize);
        index = label.parent;
    }
    order.reverse();
    order
}

/// Solves a sequencing problem under constraints exactly, for at most [`EXACT_LIMIT`] stops,
/// by the dynamic programme this module describes.
///
/// Ends early, with neither `proven_optimal` nor `proven_infeasible` and the best order found so
/// far, when `stop` is stopped or `deadline` passes. Refuses lags, more than [`EXACT_LIMIT`]
/// stops, constraints whose sizes differ from the cost's, and labels beyond the memory ceiling
/// of [`crate::memory`] (counted at 64 bytes each).
///
/// ```
/// use wend::constraints::{solve_exact, Constraints, Window};
/// let rows = vec![vec![0, 2, 9], vec![1, 0, 6], vec![15, 7, 0]];
/// let costs = wend::MatrixCost::from_rows(&rows).unwrap();
/// let mut c = Constraints::new(3);
/// // Stop 1 must start by time 5, so it comes first.
/// c.windows[1] = vec![Window { earliest: 0, latest: 5 }];
/// let out = solve_exact(&costs, &c, &wend::StopHandle::new(), None).unwrap();
/// assert_eq!(out.order, Some(vec![0, 1, 2]));
/// assert_eq!(out.objective, Some(2 + 6 + 15));
/// assert!(out.proven_optimal);
/// ```
pub fn solve_exact<C: Cost + ?Sized>(
    cost: &C,
    c: &Constraints,
    stop: &StopHandle,
    deadline: Option<Instant>,
) -> Result<ExactOutcome, ExactError> {
    solve_exact_dyn(cost.as_dyn_cost(), c, stop, deadline)
}

/// [`solve_exact`], compiled here once, on any cost.
fn solve_exact_dyn(
    cost: &dyn Cost,
    c: &Constraints,
    stop: &StopHandle,
    deadline: Option<Instant>,
) -> Result<ExactOutcome, ExactError> {
    solve_within(cost, c, stop, deadline, memory::ceiling())
}

/// [`solve_exact`] under an explicit memory ceiling.
fn solve_within<C: Cost + ?Sized>(
    cost: &C,
    c: &Constraints,
    stop: &StopHandle,
    deadline: Option<Instant>,
    ceiling_bytes: usize,
) -> Result<ExactOutcome, ExactError> {
    let p = prepare(cost, c)?;
    let Some(depot_start) = service_start(&c.windows[p.depot], c.start_time) else {
        return Ok(ExactOutcome {
            order: None,
            objective: None,
            proven_optimal: false,
            proven_infeasible: true,
            labels: 0,
        });
    };
    let first = Label {
        set: 1 << p.depot,
        ready: depot_start
            .checked_add(c.service[p.depot])
            .ok_or(ExactError::Overflow)?,
        travel: 0,
        parent: u32::MAX,
        last: p.depot as u8,
    };
    let mut kept: Vec<Label> = Vec::new();
    let mut layer = vec![first];
    let mut best: Option<(i64, Vec<usize>)> = None;
    let mut labels: u64 = 1;
    let mut tries: u64 = 0;
    let mut stopped = false;
    'layers: while !layer.is_empty() {
        let base = kept.len();
        let needed = memory::bytes_of(base + layer.len(), LABEL_BYTES);
        memory::check_against(needed, ceiling_bytes, || {
            format!(
                "the exact method's {} labels over {} stops",
                base + layer.len(),
                p.n
            )
        })?;
        let Ok(end) = u32::try_from(base + layer.len()) else {
            return Err(ExactError::Invalid("more than 2^32 labels".into()));
        };
        kept.append(&mut layer);
        for index in base as u32..end {
            let label = kept[index as usize];
            if let Some(value) = p.finish(&label)? {
                if best.as_ref().is_none_or(|(b, _)| value < *b) {
                    best = Some((value, order_of(&kept, index)));
                }
            }
        }
        let mut fronts: HashMap<(u64, u8), Vec<Label>> = HashMap::new();
        for index in base as u32..end {
            let from = kept[index as usize];
            for j in 0..p.n {
                tries += 1;
                if tries.is_multiple_of(POLL_EVERY)
                    && (stop.is_stopped() || deadline.is_some_and(|d| Instant::now() >= d))
                {
                    stopped = true;
                    break 'layers;
                }
                if let Some(label) = p.extend(&from, index, j)? {
                    labels += 1;
                    insert(
                        &p,
                        fronts.entry((label.set, label.last)).or_default(),
                        label,
                    );
                }
            }
        }
        let mut keys: Vec<(u64, u8)> = fronts.keys().copied().collect();
        keys.sort_unstable();
        for key in keys {
            if let Some(front) = fronts.remove(&key) {
                layer.extend(front);
            }
        }
    }
    let found = best.is_some();
    let (objective, order) = match best {
        Some((value, order)) => (Some(value), Some(order)),
        None => (None, None),
    };
    Ok(ExactOutcome {
        order,
        objective,
        proven_optimal: found && !stopped,
        proven_infeasible: !found && !stopped,
        labels,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::MatrixCost;
    use crate::constraints::Precedence;
    use crate::constraints::testing::random_instance;
    use rand::{Rng, SeedableRng};
    use rand_pcg::Pcg64;

    // ---------------------------------------------------------------------------------------
    // Reference, written apart from the programme above: every sequence from the depot (every
    // subset of stops in every order), each evaluated directly against the rules.
    // ---------------------------------------------------------------------------------------

    /// Earliest service start at or after `arrival` over all windows (any order), if any.
    fn reference_start(windows: &[Window], arrival: i64) -> Option<i64> {
        if windows.is_empty() {
            return Some(arrival);
        }
        windows
            .iter()
            .filter(|w| arrival <= w.latest && w.earliest <= w.latest)
            .map(|w| arrival.max(w.earliest))
            .min()
    }

    /// The objective of `seq` (depot first), or `None` when it breaks a rule or a window.
    fn reference_value(rows: &[Vec<i64>], c: &Constraints, seq: &[usize]) -> Option<i64> {
        let n = rows.len();
        let pos = |s: usize| seq.iter().position(|&x| x == s);
        if seq.first() != Some(&c.depot) {
            return None;
        }
        for s in 0..n {
            if seq.iter().filter(|&&x| x == s).count() > 1 {
                return None;
            }
            if c.penalty[s].is_none() && pos(s).is_none() {
                return None;
            }
        }
        for p in &c.precedence {
            if let Some(pa) = pos(p.after) {
                match pos(p.before) {
                    Some(pb) if pb < pa => {}
                    _ => return None,
                }
            }
        }
        for &(a, b) in &c.fixed_edges {
            if pos(a).is_none() && pos(b).is_none() {
                continue;
            }
            let pa = pos(a)?;
            let successor = match seq.get(pa + 1) {
                Some(&s) => Some(s),
                None if c.route == Route::Closed => Some(c.depot),
                None => None,
            };
            if successor != Some(b) {
                return None;
            }
        }
        let mut time = reference_start(&c.windows[c.depot], c.start_time)? + c.service[c.depot];
        let mut travel = 0;
        for step in seq.windows(2) {
            let (from, to) = (step[0], step[1]);
            travel += rows[from][to];
            let start = reference_start(&c.windows[to], time + rows[from][to])?;
            time = start + c.service[to];
        }
        let mut completion = time;
        if c.route == Route::Closed && c.windows[c.depot].last().is_some_and(|w| time > w.latest) {
            return None;
        }
        if c.route == Route::Closed && seq.len() > 1 {
            let last = seq[seq.len() - 1];
            travel += rows[last][c.depot];
            completion = time + rows[last][c.depot];
            if c.windows[c.depot]
                .last()
                .is_some_and(|w| completion > w.latest)
            {
                return None;
            }
        }
        let penalties: i64 = (0..n)
            .filter(|&s| pos(s).is_none())
            .map(|s| c.penalty[s].unwrap_or(0))
            .sum();
        Some(
            penalties
                + match c.objective {
                    Objective::Travel => travel,
                    Objective::Completion => completion,
                },
        )
    }

    /// The least objective over every sequence from the depot, if any is valid.
    fn reference_best(rows: &[Vec<i64>], c: &Constraints) -> Option<i64> {
        fn grow(rows: &[Vec<i64>], c: &Constraints, seq: &mut Vec<usize>, best: &mut Option<i64>) {
            if let Some(v) = reference_value(rows, c, seq) {
                if best.is_none_or(|b| v < b) {
                    *best = Some(v);
                }
            }
            for s in 0..rows.len() {
                if !seq.contains(&s) {
                    seq.push(s);
                    grow(rows, c, seq, best);
                    seq.pop();
                }
            }
        }
        let mut best = None;
        grow(rows, c, &mut vec![c.depot], &mut best);
        best
    }

    #[test]
    fn equals_every_order_tried_on_small_random_instances() {
        let mut rng = Pcg64::seed_from_u64(21);
        let (mut feasible, mut infeasible) = (0, 0);
        for case in 0..400 {
            let n = rng.gen_range(1..=8);
            let (rows, c) = random_instance(&mut rng, n);
            let costs = MatrixCost::from_rows(&rows).unwrap();
            let out = solve_exact(&costs, &c, &StopHandle::new(), None).unwrap();
            let expected = reference_best(&rows, &c);
            assert_eq!(out.objective, expected, "case {case}: {c:?} {rows:?}");
            match expected {
                Some(_) => {
                    feasible += 1;
                    assert!(out.proven_optimal && !out.proven_infeasible, "case {case}");
                    let order = out.order.unwrap();
                    assert_eq!(reference_value(&rows, &c, &order), expected, "case {case}");
                    // The evaluator, written apart from both, reads the order the same way.
                    let e = crate::constraints::evaluate(&costs, &c, &order);
                    assert!(e.feasible(), "case {case}: {e:?}");
                    assert_eq!(Some(e.objective), expected, "case {case}");
                }
                None => {
                    infeasible += 1;
                    assert!(out.proven_infeasible && !out.proven_optimal, "case {case}");
                    assert!(out.order.is_none());
                }
            }
        }
        // Both kinds of answer were exercised.
        assert!(
            feasible >= 50 && infeasible >= 50,
            "{feasible} {infeasible}"
        );
    }

    #[test]
    fn the_evaluator_reads_every_sequence_as_the_reference_does() {
        fn every(n: usize, seq: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
            out.push(seq.clone());
            for s in 0..n {
                if !seq.contains(&s) {
                    seq.push(s);
                    every(n, seq, out);
                    seq.pop();
                }
            }
        }
        let mut rng = Pcg64::seed_from_u64(22);
        let mut feasible = 0;
        for case in 0..150 {
            let n = rng.gen_range(1..=6);
            let (rows, c) = random_instance(&mut rng, n);
            let costs = MatrixCost::from_rows(&rows).unwrap();
            let mut all = Vec::new();
            every(n, &mut vec![c.depot], &mut all);
            for seq in all {
                let e = crate::constraints::evaluate(&costs, &c, &seq);
                let expected = reference_value(&rows, &c, &seq);
                assert_eq!(
                    e.feasible(),
                    expected.is_some(),
                    "case {case} {seq:?}: {e:?} {c:?}"
                );
                if let Some(v) = expected {
                    feasible += 1;
                    assert_eq!(e.objective, v, "case {case} {seq:?}");
                }
            }
        }
        assert!(feasible > 300, "{feasible}");
    }

    /// The plain layout of the time-window benchmark sets: n, the n by n matrix, n lines
    /// "earliest latest"; node 0 the depot, a closed tour leaving at time 0.
    fn read_plain(text: &str) -> (Vec<Vec<i64>>, Constraints) {
        let nums: Vec<i64> = text
            .split_whitespace()
            .map(|t| t.parse::<f64>().unwrap() as i64)
            .collect();
        let n = nums[0] as usize;
        let rows: Vec<Vec<i64>> = nums[1..1 + n * n].chunks(n).map(<[i64]>::to_vec).collect();
        let mut c = Constraints::new(n);
        for (i, w) in nums[1 + n * n..1 + n * n + 2 * n].chunks(2).enumerate() {
            c.windows[i] = vec![Window {
                earliest: w[0],
                latest: w[1],
            }];
        }
        (rows, c)
    }

    #[test]
    fn published_optimum_of_a_tight_window_instance() {
        // Dumas, Desrosiers, Gelinas and Solomon, Operations Research 43(2), 1995: the optimal
        // travel cost of n20w20.001 is 378 (recalled from memory; the shared optima list agrees).
        let path = concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../instances/tsptw/n20w20.001.txt"
        );
        let (rows, c) = read_plain(&std::fs::read_to_string(path).unwrap());
        assert_eq!(rows.len(), 21);
        let costs = MatrixCost::from_rows(&rows).unwrap();
        let out = solve_exact(&costs, &c, &StopHandle::new(), None).unwrap();
        assert_eq!(out.objective, Some(378));
        assert!(out.proven_optimal);
        let order = out.order.unwrap();
        assert_eq!(order.len(), 21);
        assert_eq!(reference_value(&rows, &c, &order), Some(378));
    }

    #[test]
    fn a_stopped_search_proves_nothing() {
        let n = 20;
        let rows: Vec<Vec<i64>> = (0..n)
            .map(|i| (0..n).map(|j| ((i * 7 + j * 3) % 11) as i64).collect())
            .collect();
        let costs = MatrixCost::from_rows(&rows).unwrap();
        let stop = StopHandle::new();
        stop.stop();
        let out = solve_exact(&costs, &Constraints::new(n), &stop, None).unwrap();
        assert!(!out.proven_optimal && !out.proven_infeasible);
        assert!(out.labels < 10_000, "{}", out.labels);
        let past = Instant::now();
        let out = solve_exact(&costs, &Constraints::new(n), &StopHandle::new(), Some(past));
        let out = out.unwrap();
        assert!(!out.proven_optimal && !out.proven_infeasible);
    }

    #[test]
    fn refuses_lags_too_many_stops_and_mismatched_sizes() {
        let rows = vec![vec![0, 1, 1], vec![1, 0, 1], vec![1, 1, 0]];
        let costs = MatrixCost::from_rows(&rows).unwrap();
        let mut c = Constraints::new(3);
        c.precedence.push(Precedence {
            before: 1,
            after: 2,
            min_lag: Some(4),
            max_lag: None,
        });
        let e = solve_exact(&costs, &c, &StopHandle::new(), None).unwrap_err();
        assert!(matches!(e, ExactError::Unsupported(_)), "{e}");
        assert!(e.to_string().contains("lags"), "{e}");
        let e = solve_exact(&costs, &Constraints::new(4), &StopHandle::new(), None).unwrap_err();
        assert!(matches!(e, ExactError::Invalid(_)), "{e}");
        let mut c = Constraints::new(3);
        c.fixed_edges.push((1, 7));
        let e = solve_exact(&costs, &c, &StopHandle::new(), None).unwrap_err();
        assert!(e.to_string().contains("stop 7"), "{e}");
        let big = vec![vec![1i64; 65]; 65];
        let costs = MatrixCost::from_rows(&big).unwrap();
        let e = solve_exact(&costs, &Constraints::new(65), &StopHandle::new(), None).unwrap_err();
        assert_eq!(e, ExactError::TooManyStops { n: 65, limit: 64 });
    }

    #[test]
    fn labels_beyond_the_memory_ceiling_are_refused() {
        let n = 16;
        let rows: Vec<Vec<i64>> = (0..n)
            .map(|i| (0..n).map(|j| ((i * 5 + j * 3) % 13) as i64).collect())
            .collect();
        let costs = MatrixCost::from_rows(&rows).unwrap();
        let c = Constraints::new(n);
        let e = solve_within(&costs, &c, &StopHandle::new(), None, 1 << 20).unwrap_err();
        assert!(matches!(e, ExactError::Memory(_)), "{e:?}");
        assert!(e.to_string().contains("labels over 16 stops"), "{e}");
    }
}
