//! Sequencing constraints on top of any [`crate::Cost`]: time windows, service durations,
//! precedence with lags, optional stops with penalties, fixed edges, a depot and a start time.
//!
//! Times are in the cost's units: travelling from `i` to `j` takes `cost(i, j)`. A sequence
//! leaves its first stop (the depot of a closed tour, the start of a path) at
//! [`Constraints::start_time`]; at each stop, service starts at the arrival time or, if the stop
//! is reached before a window opens, when the earliest window at or after the arrival opens
//! (the vehicle waits); it ends `service` later, and the next travel starts then. Arriving after
//! the last window of a stop has closed breaks that window.
//!
//! This module holds the plain description ([`Constraints`]) that readers and front ends fill in;
//! checking it for contradictions ([`Constraints::check`]), evaluating a sequence against it
//! ([`evaluate`], [`Segment`] for constant-time checks of moves) and the exact dynamic programme
//! ([`solve_exact`]) live in its submodules.
//!
//! [`evaluate`], [`Segment`] and [`solve_exact`] read every order by the same rules (the
//! evaluator's module documentation lists them), and the tests check that they agree.

mod check;
mod rule;
mod schedule;
mod segment;

pub use check::ConstraintsError;
pub use rule::{NoRule, StepRule, evaluate_with};
pub use schedule::{Evaluation, Row, Violation, evaluate};
pub use segment::Segment;

use serde::{Deserialize, Serialize};

mod exact;
pub use exact::{EXACT_LIMIT, ExactError, ExactOutcome, solve_exact};

mod search;
mod solve;
#[cfg(test)]
mod testing;
pub use solve::{
    SEQUENCE_RUNS, SequenceError, SequenceOutcome, default_stall, solve_sequence,
    solve_sequence_with,
};

/// One window of service start: service may start at any time in `earliest..=latest`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Window {
    /// Earliest start of service.
    pub earliest: i64,
    /// Latest start of service.
    pub latest: i64,
}

/// `before` must be served before `after`. With lags, the start of service of `after` minus
/// that of `before` must lie in `min_lag..=max_lag` (each bound optional).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Precedence {
    /// The stop served first (0-based).
    pub before: usize,
    /// The stop served later (0-based).
    pub after: usize,
    /// Least time between the two starts of service, if any.
    pub min_lag: Option<i64>,
    /// Most time between the two starts of service, if any.
    pub max_lag: Option<i64>,
}

/// What the search minimises; both are reported whatever is chosen.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Objective {
    /// Sum of the travel costs of the steps taken (waiting not counted), plus the penalties of
    /// the optional stops left out.
    #[default]
    Travel,
    /// The time the sequence ends (waiting counted): the return to the depot of a closed tour,
    /// the end of service at the last stop of a path; plus the penalties.
    Completion,
}

/// The shape of the sequence.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Route {
    /// A closed tour from the depot back to it; the depot's windows bound the return.
    #[default]
    Closed,
    /// A path from the depot (its first stop) ending anywhere.
    Path,
}

/// The constraints of one sequencing problem over `nodes` stops (0-based ids, the cost's).
///
/// Every per-stop vector has `nodes` entries. An empty window list means "any time".
///
/// ```
/// use wend::constraints::{Constraints, Window};
/// let mut c = Constraints::new(3);
/// c.windows[1] = vec![Window { earliest: 10, latest: 20 }];
/// c.service[1] = 5;
/// assert_eq!(c.nodes(), 3);
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Constraints {
    /// Per stop, disjoint windows of service start sorted by `earliest`; empty: any time.
    pub windows: Vec<Vec<Window>>,
    /// Per stop, the service duration (non-negative).
    pub service: Vec<i64>,
    /// Per stop: `None` when it must be visited, `Some(penalty)` when it may be left out at
    /// that penalty (non-negative, in the objective's units).
    pub penalty: Vec<Option<i64>>,
    /// Precedence pairs.
    pub precedence: Vec<Precedence>,
    /// Edges `(a, b)`: `b` directly follows `a`.
    pub fixed_edges: Vec<(usize, usize)>,
    /// The depot: first stop of a closed tour (and its end) or of a path.
    pub depot: usize,
    /// When the sequence leaves the depot.
    pub start_time: i64,
    /// A closed tour or a path from the depot.
    pub route: Route,
    /// What the search minimises.
    pub objective: Objective,
}

impl Constraints {
    /// No constraint on `nodes` stops: every stop required, any time, no service, depot 0,
    /// start time 0, a closed tour, travel cost minimised.
    pub fn new(nodes: usize) -> Constraints {
        Constraints {
            windows: vec![Vec::new(); nodes],
            service: vec![0; nodes],
            penalty: vec![None; nodes],
            precedence: Vec::new(),
            fixed_edges: Vec::new(),
            depot: 0,
            start_time: 0,
            route: Route::Closed,
            objective: Objective::Travel,
        }
    }

    /// The number of stops these constraints are for.
    pub fn nodes(&self) -> usize {
        self.windows.len()
    }

    /// True when something beyond fixed edges constrains the order: a window, a service
    /// duration, an optional stop or a precedence pair. Without any, a tour problem with fixed
    /// edges is solved by the tour methods, which keep fixed edges themselves.
    pub fn has_schedule_rules(&self) -> bool {
        self.windows.iter().any(|w| !w.is_empty())
            || self.service.iter().any(|&s| s != 0)
            || self.penalty.iter().any(Option::is_some)
            || !self.precedence.is_empty()
    }

    /// True when nothing constrains the order beyond a plain tour from the depot: no window,
    /// service, optional stop, precedence or fixed edge.
    pub fn is_unconstrained(&self) -> bool {
        self.windows.iter().all(Vec::is_empty)
            && self.service.iter().all(|&s| s == 0)
            && self.penalty.iter().all(Option::is_none)
            && self.precedence.is_empty()
            && self.fixed_edges.is_empty()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn new_constrains_nothing_and_a_window_does() {
        let mut c = Constraints::new(4);
        assert!(c.is_unconstrained());
        c.windows[2].push(Window {
            earliest: 0,
            latest: 9,
        });
        assert!(!c.is_unconstrained());
    }

    #[test]
    fn reads_from_json_with_kebab_names() {
        let text = r#"{"windows": [[], [{"earliest": 1, "latest": 2}]], "service": [0, 3],
            "penalty": [null, 7], "precedence": [{"before": 0, "after": 1,
            "min_lag": null, "max_lag": 5}], "fixed_edges": [[1, 0]], "depot": 0,
            "start_time": 0, "route": "path", "objective": "completion"}"#;
        let c: Constraints = serde_json::from_str(text).unwrap();
        assert_eq!(c.route, Route::Path);
        assert_eq!(c.objective, Objective::Completion);
        assert_eq!(c.penalty[1], Some(7));
    }
}
