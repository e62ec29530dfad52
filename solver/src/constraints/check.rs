//! Contradiction checks of a [`Constraints`] description before any search uses it.
//!
//! Every error names the stops it is about by their 0-based ids; readers that know the file and
//! line a value came from add those themselves.

use super::{Constraints, Route};
use petgraph::algo::toposort;
use petgraph::graph::{DiGraph, NodeIndex};
use std::collections::HashSet;
use thiserror::Error;

/// A contradiction or malformed value in a [`Constraints`] description.
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub enum ConstraintsError {
    /// A per-stop vector does not have one entry per stop.
    #[error("{field} has {len} entries but there are {nodes} stops")]
    Length {
        /// Name of the per-stop field.
        field: &'static str,
        /// Its number of entries.
        len: usize,
        /// The number of stops.
        nodes: usize,
    },
    /// The depot is not one of the stops.
    #[error("depot {depot} is not a stop (there are {nodes} stops, numbered from 0)")]
    DepotUnknown {
        /// The depot id given.
        depot: usize,
        /// The number of stops.
        nodes: usize,
    },
    /// The depot is marked optional.
    #[error("depot {depot} cannot be optional")]
    DepotOptional {
        /// The depot.
        depot: usize,
    },
    /// A window closes before it opens.
    #[error("stop {stop}: window {earliest}..{latest} closes before it opens")]
    WindowReversed {
        /// The stop.
        stop: usize,
        /// Opening of the window.
        earliest: i64,
        /// Closing of the window.
        latest: i64,
    },
    /// Two windows of one stop overlap or are not sorted by opening time.
    #[error(
        "stop {stop}: window {index} does not start after window {previous} ends (windows must be disjoint and sorted)"
    )]
    WindowsOverlap {
        /// The stop.
        stop: usize,
        /// Position of the earlier window in the stop's list.
        previous: usize,
        /// Position of the window that starts too early.
        index: usize,
    },
    /// A service duration is negative.
    #[error("stop {stop}: service duration {service} is negative")]
    NegativeService {
        /// The stop.
        stop: usize,
        /// The duration given.
        service: i64,
    },
    /// A penalty is negative.
    #[error("stop {stop}: penalty {penalty} is negative")]
    NegativePenalty {
        /// The stop.
        stop: usize,
        /// The penalty given.
        penalty: i64,
    },
    /// A precedence pair or fixed edge names a stop that does not exist.
    #[error("{what} names stop {stop}, but there are only {nodes} stops (numbered from 0)")]
    UnknownStop {
        /// `"precedence"` or `"fixed edge"`.
        what: &'static str,
        /// The id given.
        stop: usize,
        /// The number of stops.
        nodes: usize,
    },
    /// A precedence pair or fixed edge links a stop to itself.
    #[error("{what} links stop {stop} to itself")]
    SelfLink {
        /// `"precedence"` or `"fixed edge"`.
        what: &'static str,
        /// The stop.
        stop: usize,
    },
    /// The same precedence pair appears twice.
    #[error("precedence {before} before {after} is given twice")]
    DuplicatePrecedence {
        /// First stop of the pair.
        before: usize,
        /// Second stop of the pair.
        after: usize,
    },
    /// The same fixed edge appears twice.
    #[error("fixed edge {from} -> {to} is given twice")]
    DuplicateFixedEdge {
        /// Tail of the edge.
        from: usize,
        /// Head of the edge.
        to: usize,
    },
    /// A precedence asks a stop to come before the depot, which is always first.
    #[error("precedence {before} before {after} cannot hold: the depot {after} comes first")]
    BeforeDepot {
        /// The stop asked to come first.
        before: usize,
        /// The depot.
        after: usize,
    },
    /// The least lag of a precedence exceeds its greatest lag.
    #[error(
        "precedence {before} before {after}: least lag {min_lag} exceeds greatest lag {max_lag}"
    )]
    LagsReversed {
        /// First stop of the pair.
        before: usize,
        /// Second stop of the pair.
        after: usize,
        /// The least lag.
        min_lag: i64,
        /// The greatest lag.
        max_lag: i64,
    },
    /// The precedence pairs form a cycle.
    #[error("the precedence pairs form a cycle through stop {stop}")]
    PrecedenceCycle {
        /// A stop on the cycle.
        stop: usize,
    },
    /// A stop has two fixed successors.
    #[error("stop {stop} has two fixed successors, {first} and {second}")]
    TwoSuccessors {
        /// The stop.
        stop: usize,
        /// One successor.
        first: usize,
        /// The other.
        second: usize,
    },
    /// A stop has two fixed predecessors.
    #[error("stop {stop} has two fixed predecessors, {first} and {second}")]
    TwoPredecessors {
        /// The stop.
        stop: usize,
        /// One predecessor.
        first: usize,
        /// The other.
        second: usize,
    },
    /// The fixed edges close a cycle that is not a whole closed tour.
    #[error(
        "the fixed edges form a cycle of {len} stops through stop {stop}, which is not a tour through all {nodes} stops"
    )]
    FixedCycle {
        /// A stop on the cycle.
        stop: usize,
        /// Number of stops on the cycle.
        len: usize,
        /// The number of stops.
        nodes: usize,
    },
    /// A path cannot enter its first stop.
    #[error("fixed edge {from} -> {to} enters the depot {to}, which starts the path")]
    FixedIntoPathStart {
        /// Tail of the edge.
        from: usize,
        /// The depot.
        to: usize,
    },
    /// A fixed edge goes against a precedence pair.
    #[error("fixed edge {from} -> {to} contradicts the precedence {to} before {from}")]
    FixedAgainstPrecedence {
        /// Tail of the edge.
        from: usize,
        /// Head of the edge.
        to: usize,
    },
    /// Fixed edges and precedence pairs together force a stop to come before itself.
    #[error("the fixed edges and precedence pairs together form a cycle through stop {stop}")]
    MixedCycle {
        /// A stop on the cycle.
        stop: usize,
    },
}

impl Constraints {
    /// Checks that these constraints describe `nodes` stops without contradiction: lengths,
    /// depot, windows, durations, penalties, precedence pairs (ids, duplicates, lags, cycles)
    /// and fixed edges (ids, duplicates, branching, short cycles, clashes with precedence).
    ///
    /// It does not decide whether some order meets every window; that is the search's job.
    ///
    /// ```
    /// use wend::constraints::{Constraints, ConstraintsError, Window};
    /// let mut c = Constraints::new(3);
    /// assert_eq!(c.check(3), Ok(()));
    /// c.windows[2] = vec![Window { earliest: 9, latest: 4 }];
    /// assert!(matches!(c.check(3), Err(ConstraintsError::WindowReversed { stop: 2, .. })));
    /// ```
    pub fn check(&self, nodes: usize) -> Result<(), ConstraintsError> {
        self.check_lengths(nodes)?;
        self.check_stops()?;
        self.check_precedence(nodes)?;
        self.check_fixed_edges(nodes)?;
        self.check_mixed(nodes)
    }

    fn check_lengths(&self, nodes: usize) -> Result<(), ConstraintsError> {
        let lengths = [
            ("windows", self.windows.len()),
            ("service", self.service.len()),
            ("penalty", self.penalty.len()),
        ];
        for (field, len) in lengths {
            if len != nodes {
                return Err(ConstraintsError::Length { field, len, nodes });
            }
        }
        if self.depot >= nodes {
            return Err(ConstraintsError::DepotUnknown {
                depot: self.depot,
                nodes,
            });
        }
        if self.penalty[self.depot].is_some() {
            return Err(ConstraintsError::DepotOptional { depot: self.depot });
        }
        Ok(())
    }

    fn check_stops(&self) -> Result<(), ConstraintsError> {
        for (stop, windows) in self.windows.iter().enumerate() {
            for (index, w) in windows.iter().enumerate() {
                if w.latest < w.earliest {
                    return Err(ConstraintsError::WindowReversed {
                        stop,
                        earliest: w.earliest,
                        latest: w.latest,
                    });
                }
                if index > 0 && w.earliest <= windows[index - 1].latest {
                    return Err(ConstraintsError::WindowsOverlap {
                        stop,
                        previous: index - 1,
                        index,
                    });
                }
            }
        }
        if let Some((stop, &service)) = self.service.iter().enumerate().find(|&(_, &s)| s < 0) {
            return Err(ConstraintsError::NegativeService { stop, service });
        }
        for (stop, penalty) in self.penalty.iter().enumerate() {
            if let Some(p) = *penalty {
                if p < 0 {
                    return Err(ConstraintsError::NegativePenalty { stop, penalty: p });
                }
            }
        }
        Ok(())
    }

    fn check_precedence(&self, nodes: usize) -> Result<(), ConstraintsError> {
        let mut seen = HashSet::new();
        for p in &self.precedence {
            check_link("precedence", p.before, p.after, nodes)?;
            if !seen.insert((p.before, p.after)) {
                return Err(ConstraintsError::DuplicatePrecedence {
                    before: p.before,
                    after: p.after,
                });
            }
            if p.after == self.depot {
                return Err(ConstraintsError::BeforeDepot {
                    before: p.before,
                    after: p.after,
                });
            }
            if let (Some(min_lag), Some(max_lag)) = (p.min_lag, p.max_lag) {
                if min_lag > max_lag {
                    return Err(ConstraintsError::LagsReversed {
                        before: p.before,
                        after: p.after,
                        min_lag,
                        max_lag,
                    });
                }
            }
        }
        let arcs = self.precedence.iter().map(|p| (p.before, p.after));
        match first_cycle(nodes, arcs) {
            Some(stop) => Err(ConstraintsError::PrecedenceCycle { stop }),
            None => Ok(()),
        }
    }

    fn check_fixed_edges(&self, nodes: usize) -> Result<(), ConstraintsError> {
        let mut next: Vec<Option<usize>> = vec![None; nodes];
        let mut prev: Vec<Option<usize>> = vec![None; nodes];
        for &(from, to) in &self.fixed_edges {
            check_link("fixed edge", from, to, nodes)?;
            if next[from] == Some(to) {
                return Err(ConstraintsError::DuplicateFixedEdge { from, to });
            }
            if let Some(first) = next[from] {
                return Err(ConstraintsError::TwoSuccessors {
                    stop: from,
                    first,
                    second: to,
                });
            }
            if let Some(first) = prev[to] {
                return Err(ConstraintsError::TwoPredecessors {
                    stop: to,
                    first,
                    second: from,
                });
            }
            if self.route == Route::Path && to == self.depot {
                return Err(ConstraintsError::FixedIntoPathStart { from, to });
            }
            next[from] = Some(to);
            prev[to] = Some(from);
        }
        // With at most one successor and one predecessor each, the fixed edges are disjoint
        // chains and cycles; a cycle is followed from its smallest stop only.
        for start in 0..nodes {
            let mut len = 1;
            let mut at = start;
            while let Some(n) = next[at] {
                if n == start {
                    let whole_tour = self.route == Route::Closed && len == nodes;
                    if !whole_tour {
                        return Err(ConstraintsError::FixedCycle {
                            stop: start,
                            len,
                            nodes,
                        });
                    }
                    break;
                }
                if n < start {
                    break;
                }
                at = n;
                len += 1;
            }
        }
        Ok(())
    }

    /// Fixed edges against precedence: directly, and through longer chains of both. An edge
    /// into the depot of a closed tour is the return step and orders nothing.
    fn check_mixed(&self, nodes: usize) -> Result<(), ConstraintsError> {
        let pairs: HashSet<(usize, usize)> = self
            .precedence
            .iter()
            .map(|p| (p.before, p.after))
            .collect();
        let ordering_edges = || self.fixed_edges.iter().filter(|&&(_, to)| to != self.depot);
        for &(from, to) in ordering_edges() {
            if pairs.contains(&(to, from)) {
                return Err(ConstraintsError::FixedAgainstPrecedence { from, to });
            }
        }
        let arcs = pairs.iter().copied().chain(ordering_edges().copied());
        match first_cycle(nodes, arcs) {
            Some(stop) => Err(ConstraintsError::MixedCycle { stop }),
            None => Ok(()),
        }
    }
}

/// Ids in range and no self link.
fn check_link(
    what: &'static str,
    a: usize,
    b: usize,
    nodes: usize,
) -> Result<(), ConstraintsError> {
    for stop in [a, b] {
        if stop >= nodes {
            return Err(ConstraintsError::UnknownStop { what, stop, nodes });
        }
    }
    if a == b {
        return Err(ConstraintsError::SelfLink { what, stop: a });
    }
    Ok(())
}

/// A stop on a directed cycle of `arcs` over `nodes` stops, if there is one.
fn first_cycle(nodes: usize, arcs: impl Iterator<Item = (usize, usize)>) -> Option<usize> {
    let mut graph: DiGraph<(), ()> = DiGraph::with_capacity(nodes, 0);
    for _ in 0..nodes {
        graph.add_node(());
    }
    for (a, b) in arcs {
        graph.add_edge(NodeIndex::new(a), NodeIndex::new(b), ());
    }
    toposort(&graph, None)
        .err()
        .map(|cycle| cycle.node_id().index())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constraints::{Precedence, Window};

    fn pre(before: usize, after: usize) -> Precedence {
        Precedence {
            before,
            after,
            min_lag: None,
            max_lag: None,
        }
    }

    fn win(earliest: i64, latest: i64) -> Window {
        Window { earliest, latest }
    }

    #[test]
    fn plain_constraints_pass() {
        let mut c = Constraints::new(5);
        c.windows[1] = vec![win(0, 5), win(6, 9)];
        c.service[2] = 3;
        c.penalty[3] = Some(0);
        c.precedence = vec![pre(1, 2), pre(2, 3), pre(1, 3)];
        c.fixed_edges = vec![(3, 4), (4, 0)];
        assert_eq!(c.check(5), Ok(()));
    }

    #[test]
    fn lengths_and_depot() {
        let c = Constraints::new(4);
        assert_eq!(
            c.check(5),
            Err(ConstraintsError::Length {
                field: "windows",
                len: 4,
                nodes: 5
            })
        );
        let mut c = Constraints::new(4);
        c.service.pop();
        assert!(matches!(
            c.check(4),
            Err(ConstraintsError::Length {
                field: "service",
                len: 3,
                ..
            })
        ));
        let mut c = Constraints::new(4);
        c.depot = 4;
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::DepotUnknown { depot: 4, nodes: 4 })
        );
        let mut c = Constraints::new(4);
        c.penalty[0] = Some(3);
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::DepotOptional { depot: 0 })
        );
    }

    #[test]
    fn windows_service_and_penalties() {
        let mut c = Constraints::new(3);
        c.windows[1] = vec![win(3, 2)];
        assert!(matches!(
            c.check(3),
            Err(ConstraintsError::WindowReversed { stop: 1, .. })
        ));
        // Touching windows overlap at the shared instant.
        c.windows[1] = vec![win(0, 4), win(4, 8)];
        assert_eq!(
            c.check(3),
            Err(ConstraintsError::WindowsOverlap {
                stop: 1,
                previous: 0,
                index: 1
            })
        );
        c.windows[1] = vec![win(10, 14), win(0, 4)];
        assert!(matches!(
            c.check(3),
            Err(ConstraintsError::WindowsOverlap { stop: 1, .. })
        ));
        c.windows[1] = vec![win(0, 4), win(5, 8)];
        assert_eq!(c.check(3), Ok(()));
        c.service[2] = -1;
        assert_eq!(
            c.check(3),
            Err(ConstraintsError::NegativeService {
                stop: 2,
                service: -1
            })
        );
        c.service[2] = 0;
        c.penalty[2] = Some(-4);
        assert_eq!(
            c.check(3),
            Err(ConstraintsError::NegativePenalty {
                stop: 2,
                penalty: -4
            })
        );
    }

    #[test]
    fn precedence_errors() {
        let mut c = Constraints::new(4);
        c.precedence = vec![pre(1, 7)];
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::UnknownStop {
                what: "precedence",
                stop: 7,
                nodes: 4
            })
        );
        c.precedence = vec![pre(2, 2)];
        assert!(matches!(
            c.check(4),
            Err(ConstraintsError::SelfLink { stop: 2, .. })
        ));
        c.precedence = vec![pre(1, 2), pre(1, 2)];
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::DuplicatePrecedence {
                before: 1,
                after: 2
            })
        );
        c.precedence = vec![pre(1, 0)];
        assert!(matches!(
            c.check(4),
            Err(ConstraintsError::BeforeDepot { .. })
        ));
        let mut lagged = pre(1, 2);
        lagged.min_lag = Some(5);
        lagged.max_lag = Some(4);
        c.precedence = vec![lagged];
        assert!(matches!(
            c.check(4),
            Err(ConstraintsError::LagsReversed {
                min_lag: 5,
                max_lag: 4,
                ..
            })
        ));
        c.precedence = vec![pre(1, 2), pre(2, 3), pre(3, 1)];
        assert!(matches!(
            c.check(4),
            Err(ConstraintsError::PrecedenceCycle { stop: 1..=3 })
        ));
    }

    #[test]
    fn fixed_edge_errors() {
        let mut c = Constraints::new(4);
        c.fixed_edges = vec![(1, 2), (1, 2)];
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::DuplicateFixedEdge { from: 1, to: 2 })
        );
        c.fixed_edges = vec![(1, 2), (1, 3)];
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::TwoSuccessors {
                stop: 1,
                first: 2,
                second: 3
            })
        );
        c.fixed_edges = vec![(1, 3), (2, 3)];
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::TwoPredecessors {
                stop: 3,
                first: 1,
                second: 2
            })
        );
        c.fixed_edges = vec![(5, 1)];
        assert!(matches!(
            c.check(4),
            Err(ConstraintsError::UnknownStop { stop: 5, .. })
        ));
        c.fixed_edges = vec![(3, 3)];
        assert!(matches!(
            c.check(4),
            Err(ConstraintsError::SelfLink { stop: 3, .. })
        ));
        c.fixed_edges = vec![(2, 3), (3, 1), (1, 2)];
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::FixedCycle {
                stop: 1,
                len: 3,
                nodes: 4
            })
        );
        // A closed tour through every stop is allowed, but not on a path.
        c.fixed_edges = vec![(0, 1), (1, 2), (2, 3), (3, 0)];
        assert_eq!(c.check(4), Ok(()));
        c.route = Route::Path;
        assert_eq!(
            c.check(4),
            Err(ConstraintsError::FixedIntoPathStart { from: 3, to: 0 })
        );
    }

    #[test]
    fn fixed_edges_against_precedence() {
        let mut c = Constraints::new(5);
        c.precedence = vec![pre(2, 1)];
        c.fixed_edges = vec![(1, 2)];
        assert_eq!(
            c.check(5),
            Err(ConstraintsError::FixedAgainstPrecedence { from: 1, to: 2 })
        );
        // 1 -> 2 fixed, 2 before 3, 3 before 1: no direct clash, but a cycle.
        c.precedence = vec![pre(2, 3), pre(3, 1)];
        assert!(matches!(
            c.check(5),
            Err(ConstraintsError::MixedCycle { stop: 1..=3 })
        ));
        // The return step into the depot of a closed tour orders nothing.
        c.precedence = vec![pre(4, 3)];
        c.fixed_edges = vec![(3, 0)];
        assert_eq!(c.check(5), Ok(()));
    }

    #[test]
    fn messages_name_the_stops() {
        let e = ConstraintsError::FixedAgainstPrecedence { from: 3, to: 7 };
        assert_eq!(
            e.to_string(),
            "fixed edge 3 -> 7 contradicts the precedence 7 before 3"
        );
        let e = ConstraintsError::PrecedenceCycle { stop: 4 };
        assert_eq!(
            e.to_string(),
            "the precedence pairs form a cycle through stop 4"
        );
    }
}
