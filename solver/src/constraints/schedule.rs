//! The schedule of one order under [`Constraints`]: when each stop is reached, served and left,
//! what the order costs, and every constraint it breaks.
//!
//! The order lists the visited stops, the depot first. A closed tour's return to its first stop
//! is implied and not listed; optional stops may be left out. The rules:
//!
//! - the first stop is reached at [`Constraints::start_time`]; like every stop, its service
//!   starts then if a window is open, else when the next window opens (so a depot with windows
//!   is left no earlier than its first window);
//! - travelling from `i` to `j` takes `cost(i, j)`; service starts at the arrival if a window
//!   is open, at the opening of the next window if one is still to come, and otherwise at the
//!   arrival, late ([`Violation::Late`]); the stop is left `service` later;
//! - a closed tour ends with the return to its first stop, which must come no later than the
//!   close of that stop's last window (the return does not wait); its completion time is that
//!   arrival. A path is complete when service at its last stop ends;
//! - a precedence pair `a` before `b` lets `b` be visited only after `a` (so leaving out an
//!   optional `a` leaves out `b` too); its lags, when both are visited, compare the starts of
//!   service and never make the vehicle wait;
//! - a fixed edge `a -> b` holds when neither stop is visited or `b` directly follows `a`
//!   (for a closed tour, the return to the first stop follows the last stop).
//!
//! All sums are checked: a sum beyond the `i64` range ends the evaluation with
//! [`Violation::Overflow`] instead of a wrong value or a panic.

use super::{Constraints, Objective, Route, Window};
use crate::Cost;
use serde::Serialize;
use std::fmt;

/// One visited stop in the schedule.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct Row {
    /// The stop (0-based).
    pub stop: usize,
    /// When it is reached.
    pub arrival: i64,
    /// When its service starts.
    pub start: i64,
    /// Time spent waiting for a window: `start - arrival`.
    pub wait: i64,
    /// When its service ends and the next travel begins.
    pub departure: i64,
    /// Latest start of the window used minus `start` (negative when late); `None` when the
    /// stop has no window.
    pub slack: Option<i64>,
}

/// A constraint an order breaks.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Violation {
    /// Service at `stop` starts `by` after its last window closed (for a closed tour's first
    /// stop, also the return to it).
    Late {
        /// The stop.
        stop: usize,
        /// How late.
        by: i64,
    },
    /// A stop that must be visited is not in the order.
    MissingRequired {
        /// The stop.
        stop: usize,
    },
    /// `after` is visited before `before`.
    Precedence {
        /// The stop that should come first.
        before: usize,
        /// The stop that should come later.
        after: usize,
    },
    /// `after` is visited but `before`, which must come first, is not.
    BeforeSkipped {
        /// The stop that should come first.
        before: usize,
        /// The stop visited without it.
        after: usize,
    },
    /// A rule of the caller's ([`StepRule`](super::StepRule)) is broken on reaching `stop`, by
    /// `by` in the rule's own units.
    Rule {
        /// The stop reached.
        stop: usize,
        /// By how much.
        by: i64,
    },
    /// The starts of service of a precedence pair are closer than its least lag, by `by`.
    MinLag {
        /// First stop of the pair.
        before: usize,
        /// Second stop of the pair.
        after: usize,
        /// How much longer the gap must be.
        by: i64,
    },
    /// The starts of service of a precedence pair are further apart than its greatest lag,
    /// by `by`.
    MaxLag {
        /// First stop of the pair.
        before: usize,
        /// Second stop of the pair.
        after: usize,
        /// How much shorter the gap must be.
        by: i64,
    },
    /// `to` does not directly follow `from`.
    FixedEdge {
        /// Tail of the edge.
        from: usize,
        /// Head of the edge.
        to: usize,
    },
    /// A stop appears more than once.
    Duplicate {
        /// The stop.
        stop: usize,
    },
    /// The order names a stop that does not exist; it is left out of the schedule.
    UnknownStop {
        /// The id given.
        stop: usize,
    },
    /// The order does not start at the depot.
    WrongStart {
        /// The depot.
        depot: usize,
        /// The first stop of the order, `None` when it is empty.
        found: Option<usize>,
    },
    /// A time or cost sum left the `i64` range; the schedule stops there.
    Overflow {
        /// Position in the order where it happened.
        position: usize,
    },
}

impl fmt::Display for Violation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Violation::Late { stop, by } => write!(f, "stop {stop} is served {by} late"),
            Violation::MissingRequired { stop } => write!(f, "required stop {stop} is not visited"),
            Violation::Precedence { before, after } => {
                write!(f, "stop {after} is visited before stop {before}")
            }
            Violation::BeforeSkipped { before, after } => {
                write!(
                    f,
                    "stop {after} is visited but stop {before}, which must come first, is not"
                )
            }
            Violation::Rule { stop, by } => {
                write!(
                    f,
                    "the caller's rule is broken by {by} on reaching stop {stop}"
                )
            }
            Violation::MinLag { before, after, by } => write!(
                f,
                "stop {after} starts {by} too soon after stop {before} (least lag)"
            ),
            Violation::MaxLag { before, after, by } => write!(
                f,
                "stop {after} starts {by} too long after stop {before} (greatest lag)"
            ),
            Violation::FixedEdge { from, to } => {
                write!(f, "stop {to} does not directly follow stop {from}")
            }
            Violation::Duplicate { stop } => write!(f, "stop {stop} is visited more than once"),
            Violation::UnknownStop { stop } => write!(f, "stop {stop} does not exist"),
            Violation::WrongStart { depot, found: None } => {
                write!(f, "the order is empty; it must start at depot {depot}")
            }
            Violation::WrongStart {
                depot,
                found: Some(s),
            } => write!(f, "the order starts at stop {s}, not at depot {depot}"),
            Violation::Overflow { position } => {
                write!(f, "times or costs overflow at position {position}")
            }
        }
    }
}

/// The schedule and measures of one order; see the [module docs](self) for the rules.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Evaluation {
    /// One row per visited stop, in order (unknown stop ids left out); serialised as
    /// `schedule`.
    #[serde(rename = "schedule")]
    pub rows: Vec<Row>,
    /// Sum of the travel costs, the return of a closed tour included.
    pub travel_cost: i64,
    /// The return to the first stop of a closed tour; the end of the last service of a path.
    pub completion_time: i64,
    /// Total waiting for windows.
    pub wait: i64,
    /// Sum of the penalties of the optional stops left out.
    pub penalty: i64,
    /// The value the search minimises: travel cost or completion time, plus `penalty`.
    pub objective: i64,
    /// Optional stops left out, in increasing order.
    pub skipped: Vec<usize>,
    /// Everything the order breaks; empty when it is feasible.
    pub violations: Vec<Violation>,
}

impl Evaluation {
    /// True when the order breaks nothing.
    pub fn feasible(&self) -> bool {
        self.violations.is_empty()
    }
}

/// When service starts for a given arrival.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct ServiceStart {
    /// Start of service.
    pub start: i64,
    /// Latest start of the window used minus `start`; `None` with no window.
    pub slack: Option<i64>,
    /// How late, when every window has closed.
    pub late: Option<i64>,
}

/// A sum or difference left the `i64` range.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Overflow;

fn add(a: i64, b: i64) -> Result<i64, Overflow> {
    a.checked_add(b).ok_or(Overflow)
}

fn sub(a: i64, b: i64) -> Result<i64, Overflow> {
    a.checked_sub(b).ok_or(Overflow)
}

/// Start of service for `arrival` at a stop with these sorted, disjoint `windows`.
pub(crate) fn service_start(windows: &[Window], arrival: i64) -> Result<ServiceStart, Overflow> {
    let Some(last) = windows.last() else {
        return Ok(ServiceStart {
            start: arrival,
            slack: None,
            late: None,
        });
    };
    match windows.iter().find(|w| w.latest >= arrival) {
        Some(w) => {
            let start = arrival.max(w.earliest);
            Ok(ServiceStart {
                start,
                slack: Some(sub(w.latest, start)?),
                late: None,
            })
        }
        None => Ok(ServiceStart {
            start: arrival,
            slack: Some(sub(last.latest, arrival)?),
            late: Some(sub(arrival, last.latest)?),
        }),
    }
}

/// Schedules `order` under `c` with travel times from `cost`, and lists what it breaks.
///
/// Stops are the ids below both `cost.len()` and the lengths of `c`'s per-stop vectors; other
/// ids are reported as [`Violation::UnknownStop`]. The constraints need not have passed
/// [`Constraints::check`]; links naming unknown stops are then ignored.
///
/// ```
/// use wend::constraints::{evaluate, Constraints, Window};
/// use wend::MatrixCost;
/// let cost = MatrixCost::from_rows(&[vec![0, 4, 9], vec![4, 0, 3], vec![9, 3, 0]]).unwrap();
/// let mut c = Constraints::new(3);
/// c.windows[1] = vec![Window { earliest: 6, latest: 8 }];
/// let e = evaluate(&cost, &c, &[0, 1, 2]);
/// // Reach 1 at 4, wait until 6, reach 2 at 9, back at the depot at 18.
/// assert_eq!((e.travel_cost, e.wait, e.completion_time), (16, 2, 18));
/// assert!(e.feasible());
/// ```
pub fn evaluate<C: Cost + ?Sized>(cost: &C, c: &Constraints, order: &[usize]) -> Evaluation {
    let limit = [
        cost.len(),
        c.windows.len(),
        c.service.len(),
        c.penalty.len(),
    ]
    .into_iter()
    .min()
    .unwrap_or(0);
    let mut e = Evaluation::default();
    if order.first() != Some(&c.depot) {
        e.violations.push(Violation::WrongStart {
            depot: c.depot,
            found: order.first().copied(),
        });
    }
    let mut seen = vec![false; limit];
    let mut stops = Vec::with_capacity(order.len());
    for &stop in order {
        match seen.get_mut(stop) {
            None => e.violations.push(Violation::UnknownStop { stop }),
            Some(true) => {
                e.violations.push(Violation::Duplicate { stop });
                stops.push(stop);
            }
            Some(s) => {
                *s = true;
                stops.push(stop);
            }
        }
    }
    if let Err(Overflow) = schedule(cost, c, &stops, &mut e) {
        e.violations.push(Violation::Overflow {
            position: e.rows.len(),
        });
        return e;
    }
    for (stop, &visited) in seen.iter().enumerate() {
        match (visited, c.penalty[stop]) {
            (true, _) => {}
            (false, None) => e.violations.push(Violation::MissingRequired { stop }),
            (false, Some(p)) => {
                e.skipped.push(stop);
                e.penalty = e.penalty.saturating_add(p);
            }
        }
    }
    let base = match c.objective {
        Objective::Travel => e.travel_cost,
        Objective::Completion => e.completion_time,
    };
    match base.checked_add(e.penalty) {
        Some(objective) => e.objective = objective,
        None => e.violations.push(Violation::Overflow {
            position: e.rows.len(),
        }),
    }
    check_links(c, &mut e);
    e
}

/// Fills the rows, travel cost, wait and completion time, and the late stops.
fn schedule<C: Cost + ?Sized>(
    cost: &C,
    c: &Constraints,
    stops: &[usize],
    e: &mut Evaluation,
) -> Result<(), Overflow> {
    let mut previous: Option<(usize, i64)> = None;
    for &stop in stops {
        let arrival = match previous {
            None => c.start_time,
            Some((from, departure)) => {
                let step = cost.cost(from, stop);
                e.travel_cost = add(e.travel_cost, step)?;
                add(departure, step)?
            }
        };
        let s = service_start(&c.windows[stop], arrival)?;
        if let Some(by) = s.late {
            e.violations.push(Violation::Late { stop, by });
        }
        let wait = sub(s.start, arrival)?;
        e.wait = add(e.wait, wait)?;
        let departure = add(s.start, c.service[stop])?;
        e.rows.push(Row {
            stop,
            arrival,
            start: s.start,
            wait,
            departure,
            slack: s.slack,
        });
        previous = Some((stop, departure));
    }
    e.completion_time = match (previous, stops.first()) {
        (Some((last, departure)), Some(&first)) if c.route == Route::Closed => {
            let step = if stops.len() > 1 {
                cost.cost(last, first)
            } else {
                0
            };
            e.travel_cost = add(e.travel_cost, step)?;
            let back = add(departure, step)?;
            if let Some(w) = c.windows[first].last() {
                if back > w.latest {
                    let by = sub(back, w.latest)?;
                    e.violations.push(Violation::Late { stop: first, by });
                }
            }
            back
        }
        (Some((_, departure)), _) => departure,
        (None, _) => c.start_time,
    };
    Ok(())
}

/// Precedence pairs, lags and fixed edges against the scheduled rows.
fn check_links(c: &Constraints, e: &mut Evaluation) {
    let mut position: Vec<Option<usize>> = vec![None; c.nodes()];
    for (i, row) in e.rows.iter().enumerate().rev() {
        if let Some(p) = position.get_mut(row.stop) {
            *p = Some(i);
        }
    }
    let at = |stop: usize| position.get(stop).copied().flatten();
    for p in &c.precedence {
        let (before, after) = (p.before, p.after);
        let (b, a) = match (at(before), at(after)) {
            (Some(b), Some(a)) => (b, a),
            (None, Some(_)) => {
                e.violations
                    .push(Violation::BeforeSkipped { before, after });
                continue;
            }
            _ => continue,
        };
        if b > a {
            e.violations.push(Violation::Precedence { before, after });
            continue;
        }
        let Some(gap) = e.rows[a].start.checked_sub(e.rows[b].start) else {
            e.violations.push(Violation::Overflow { position: a });
            continue;
        };
        if let Some(by) = p.min_lag.and_then(|m| m.checked_sub(gap)) {
            if by > 0 {
                e.violations.push(Violation::MinLag { before, after, by });
            }
        }
        if let Some(by) = p.max_lag.and_then(|m| gap.checked_sub(m)) {
            if by > 0 {
                e.violations.push(Violation::MaxLag { before, after, by });
            }
        }
    }
    let len = e.rows.len();
    for &(from, to) in &c.fixed_edges {
        let holds = match (at(from), at(to)) {
            (None, None) => true,
            (Some(i), Some(j)) => {
                j == i + 1 || (c.route == Route::Closed && j == 0 && i + 1 == len)
            }
            _ => false,
        };
        if !holds {
            e.violations.push(Violation::FixedEdge { from, to });
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constraints::Precedence;
    use crate::{FnCost, MatrixCost};

    fn win(earliest: i64, latest: i64) -> Window {
        Window { earliest, latest }
    }

    /// Worked by hand: 0 -> 1 takes 4, 1 -> 2 takes 3, 2 -> 3 takes `two_three`, 3 -> 0 takes 6.
    fn four_stops(two_three: i64) -> (MatrixCost, Constraints) {
        let cost = MatrixCost::from_rows(&[
            vec![0, 4, 50, 50],
            vec![50, 0, 3, 50],
            vec![50, 50, 0, two_three],
            vec![6, 50, 50, 0],
        ])
        .unwrap();
        let mut c = Constraints::new(4);
        c.windows[1] = vec![win(10, 20)];
        c.windows[2] = vec![win(0, 12)];
        c.windows[3] = vec![win(25, 30), win(40, 50)];
        c.service = vec![0, 2, 1, 4];
        (cost, c)
    }

    fn row(stop: usize, arrival: i64, start: i64, departure: i64, slack: Option<i64>) -> Row {
        Row {
            stop,
            arrival,
            start,
            wait: start - arrival,
            departure,
            slack,
        }
    }

    #[test]
    fn closed_tour_worked_by_hand() {
        let (cost, mut c) = four_stops(5);
        let e = evaluate(&cost, &c, &[0, 1, 2, 3]);
        // Worked by hand: depot left at 0; 1 reached at 4, waits for 10, leaves at 12;
        // 2 reached at 15 after its window closed at 12 (3 late), leaves at 16; 3 reached at
        // 21, waits for 25, leaves at 29; back at the depot at 35.
        assert_eq!(
            e.rows,
            vec![
                row(0, 0, 0, 0, None),
                row(1, 4, 10, 12, Some(10)),
                row(2, 15, 15, 16, Some(-3)),
                row(3, 21, 25, 29, Some(5)),
            ]
        );
        assert_eq!(e.travel_cost, 18);
        assert_eq!(e.completion_time, 35);
        assert_eq!(e.wait, 10);
        assert_eq!(e.penalty, 0);
        assert_eq!(e.objective, 18);
        assert_eq!(e.violations, vec![Violation::Late { stop: 2, by: 3 }]);
        assert!(!e.feasible());
        c.objective = Objective::Completion;
        assert_eq!(evaluate(&cost, &c, &[0, 1, 2, 3]).objective, 35);
    }

    #[test]
    fn second_window_and_path() {
        let (cost, mut c) = four_stops(15);
        c.windows[2] = vec![win(0, 15)];
        let e = evaluate(&cost, &c, &[0, 1, 2, 3]);
        // Worked by hand: 2 reached at 15 just in time; 3 reached at 31, between its windows,
        // waits for 40, leaves at 44; back at 50. Travel 4 + 3 + 15 + 6.
        assert_eq!(e.rows[2], row(2, 15, 15, 16, Some(0)));
        assert_eq!(e.rows[3], row(3, 31, 40, 44, Some(10)));
        assert_eq!((e.travel_cost, e.completion_time, e.wait), (28, 50, 15));
        assert!(e.feasible(), "{:?}", e.violations);
        c.route = Route::Path;
        let e = evaluate(&cost, &c, &[0, 1, 2, 3]);
        // A path ends when service at 3 ends; no return step.
        assert_eq!((e.travel_cost, e.completion_time), (22, 44));
        // Arriving at 3 after its last window closed.
        let (cost, c) = four_stops(40);
        let e = evaluate(&cost, &c, &[0, 1, 2, 3]);
        // 3 reached at 16 + 40 = 56, 6 after 50.
        assert!(e.violations.contains(&Violation::Late { stop: 3, by: 6 }));
    }

    #[test]
    fn depot_windows_bound_departure_and_return() {
        let cost = FnCost::new(3, true, |i, j| if i == j { 0 } else { 10 });
        let mut c = Constraints::new(3);
        c.windows[0] = vec![win(5, 100)];
        c.start_time = 2;
        let e = evaluate(&cost, &c, &[0, 1, 2]);
        // Waits at the depot from 2 to 5; back at 5 + 30 = 35.
        assert_eq!(e.rows[0], row(0, 2, 5, 5, Some(95)));
        assert_eq!(e.completion_time, 35);
        assert!(e.feasible());
        c.windows[0] = vec![win(5, 20), win(25, 30)];
        let e = evaluate(&cost, &c, &[0, 1, 2]);
        assert_eq!(e.violations, vec![Violation::Late { stop: 0, by: 5 }]);
    }

    #[test]
    fn order_errors_optional_stops_and_links() {
        let cost = FnCost::new(5, true, |i, j| if i == j { 0 } else { 1 });
        let mut c = Constraints::new(5);
        c.penalty[4] = Some(7);
        c.precedence = vec![Precedence {
            before: 1,
            after: 2,
            min_lag: None,
            max_lag: None,
        }];
        c.fixed_edges = vec![(2, 1), (4, 3), (1, 3)];
        let e = evaluate(&cost, &c, &[0, 2, 1, 9, 2]);
        assert_eq!(
            e.violations,
            vec![
                Violation::UnknownStop { stop: 9 },
                Violation::Duplicate { stop: 2 },
                Violation::MissingRequired { stop: 3 },
                Violation::Precedence {
                    before: 1,
                    after: 2
                },
                Violation::FixedEdge { from: 1, to: 3 },
            ]
        );
        assert_eq!(e.skipped, vec![4]);
        assert_eq!(e.penalty, 7);
        // Steps 0-2, 2-1, 1-2 and the return: 4, plus the penalty 7.
        assert_eq!(e.objective, 11);
        let e = evaluate(&cost, &c, &[1, 0]);
        assert_eq!(
            e.violations[0],
            Violation::WrongStart {
                depot: 0,
                found: Some(1)
            }
        );
        let e = evaluate(&cost, &c, &[]);
        assert_eq!(
            e.violations[0],
            Violation::WrongStart {
                depot: 0,
                found: None
            }
        );
    }

    #[test]
    fn lags_and_return_edge() {
        let cost = FnCost::new(3, true, |i, j| if i == j { 0 } else { 1 });
        let mut c = Constraints::new(3);
        c.precedence = vec![
            Precedence {
                before: 1,
                after: 2,
                min_lag: Some(3),
                max_lag: None,
            },
            Precedence {
                before: 0,
                after: 2,
                min_lag: None,
                max_lag: Some(1),
            },
        ];
        c.fixed_edges = vec![(2, 0)];
        let e = evaluate(&cost, &c, &[0, 1, 2]);
        // Starts at 0, 1, 2: the gap 1 -> 2 is 1 (2 short of 3), 0 -> 2 is 2 (1 over 1).
        assert_eq!(
            e.violations,
            vec![
                Violation::MinLag {
                    before: 1,
                    after: 2,
                    by: 2
                },
                Violation::MaxLag {
                    before: 0,
                    after: 2,
                    by: 1
                },
            ]
        );
        c.route = Route::Path;
        let e = evaluate(&cost, &c, &[0, 1, 2]);
        assert!(
            e.violations
                .contains(&Violation::FixedEdge { from: 2, to: 0 })
        );
    }

    #[test]
    fn overflow_is_reported_not_a_panic() {
        let cost = FnCost::new(4, true, |i, j| if i == j { 0 } else { i64::MAX / 2 });
        let c = Constraints::new(4);
        let e = evaluate(&cost, &c, &[0, 1, 2, 3]);
        // Arrivals i64::MAX / 2 and i64::MAX - 1 fit; the third step does not.
        assert_eq!(e.rows.len(), 3);
        assert_eq!(e.violations, vec![Violation::Overflow { position: 3 }]);
    }

    #[test]
    fn service_start_rules() {
        let w = [win(10, 20), win(30, 40)];
        let at = |t| service_start(&w, t).unwrap();
        assert_eq!(at(5).start, 10);
        assert_eq!(at(15).start, 15);
        assert_eq!(at(25).start, 30);
        assert_eq!(at(25).slack, Some(10));
        assert_eq!(at(45).late, Some(5));
        assert_eq!(at(45).slack, Some(-5));
        assert_eq!(service_start(&[], 7).unwrap().slack, None);
    }
}
