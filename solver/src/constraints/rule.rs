//! Rules of the caller's own, carried along a sequence: a state that each step updates and that
//! may break a limit (stored momentum that must stay below a threshold, a fill level, a battery
//! charge).
//!
//! The search cannot summarise such a state in constant size, so an order that passes the
//! window and link checks is scheduled in full and the rule run along its rows before it is
//! accepted; the amount by which the rule is broken counts as a violation (and, while the search
//! crosses infeasible orders, as a penalty).

use super::{Constraints, Evaluation, Row, Violation, evaluate};
use crate::Cost;

/// A rule checked step by step along a scheduled sequence.
///
/// ```
/// use wend::constraints::{evaluate_with, Constraints, Row, StepRule, Violation};
/// /// At most 10 units of waiting in total.
/// struct WaitBudget;
/// impl StepRule for WaitBudget {
///     type State = i64;
///     fn begin(&self, first: &Row) -> i64 {
///         first.wait
///     }
///     fn step(&self, total: &mut i64, _from: &Row, to: &Row) -> i64 {
///         *total += to.wait;
///         (*total - 10).max(0)
///     }
/// }
/// let cost = wend::FnCost::new(3, true, |i, j| (i as i64 - j as i64).abs());
/// let mut c = Constraints::new(3);
/// c.windows[1] = vec![wend::constraints::Window { earliest: 15, latest: 20 }];
/// let e = evaluate_with(&cost, &c, &[0, 1, 2], &WaitBudget);
/// // 14 units of waiting at stop 1, still 14 after stop 2.
/// assert_eq!(
///     e.violations,
///     vec![Violation::Rule { stop: 1, by: 4 }, Violation::Rule { stop: 2, by: 4 }]
/// );
/// ```
pub trait StepRule: Sync {
    /// What the rule carries from stop to stop.
    type State: Clone;
    /// The state at the first stop of the sequence.
    fn begin(&self, first: &Row) -> Self::State;
    /// Updates `state` for the step from `from` to `to` and returns by how much the step breaks
    /// the rule (zero or less: it holds).
    fn step(&self, state: &mut Self::State, from: &Row, to: &Row) -> i64;
}

/// No rule of the caller's: every step holds.
#[derive(Clone, Copy, Debug, Default)]
pub struct NoRule;

impl StepRule for NoRule {
    type State = ();
    fn begin(&self, _: &Row) {}
    fn step(&self, _: &mut (), _: &Row, _: &Row) -> i64 {
        0
    }
}

/// [`evaluate`], and `rule` checked along the scheduled rows: each step it breaks adds a
/// [`Violation::Rule`].
pub fn evaluate_with<C: Cost + ?Sized, R: StepRule + ?Sized>(
    cost: &C,
    c: &Constraints,
    order: &[usize],
    rule: &R,
) -> Evaluation {
    let mut e = evaluate(cost, c, order);
    if let Some((first, rest)) = e.rows.split_first() {
        let mut state = rule.begin(first);
        let mut from = first;
        let mut broken = Vec::new();
        for to in rest {
            let by = rule.step(&mut state, from, to);
            if by > 0 {
                broken.push(Violation::Rule { stop: to.stop, by });
            }
            from = to;
        }
        e.violations.extend(broken);
    }
    e
}
