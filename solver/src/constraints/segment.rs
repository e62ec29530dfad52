//! Constant-size summaries of runs of consecutive stops, for checking moves in constant time.
//!
//! Think of a run of stops as a machine: it is entered at some arrival time `x` at its first
//! stop and is done when service at its last stop ends. With one window per stop, the end time
//! has a simple shape. Starting earlier than some instant `earliest` gains nothing (the run
//! waits somewhere inside for a window to open), later starts shift the end one for one, and
//! starting after some instant `latest` makes a stop miss its window. So the end is
//! `max(x, earliest) + duration` for every `x <= latest`, where `duration` holds the travel,
//! the service and the waiting that cannot be avoided.
//!
//! Two runs joined by a step of `t` keep that shape, and the three numbers of the joined run
//! follow from the six of its parts (see [`Segment::concat`]).

//!
//! A run that cannot meet every window also has a summary: its `warp` is the least total time by
//! which service starts would have to move back to meet every window (zero exactly when some
//! arrival meets them all). A search that lets orders break windows for a while penalises the
//! warp, as the published concatenation methods for time windows do. A move that cuts an order into
//! pieces and glues them back in another order is therefore checked by joining a few
//! precomputed summaries, whatever the lengths of the pieces.
//!
//! This holds for stops with at most one window. A stop with several windows has a
//! staircase-shaped end time that three numbers cannot hold: [`Segment::stop`] returns `None`
//! for it, and callers then fall back to the full schedule of
//! [`evaluate`](super::evaluate).
//!
//! Open bounds are `i64::MIN` and `i64::MAX`, and the arithmetic saturates at them; with times
//! and costs far from the `i64` limits the summaries are exact.

use super::{Constraints, Route};
use crate::Cost;

/// Summary of a run of consecutive stops; see the [module docs](self).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Segment {
    /// Time from the start of service at the first stop, when it starts no earlier than
    /// `earliest`, to the end of service at the last stop: travel, service and forced waiting.
    pub duration: i64,
    /// Arrival at the first stop before which an earlier arrival ends the run no sooner.
    pub earliest: i64,
    /// Latest arrival at the first stop for which every stop of the run meets its window.
    pub latest: i64,
    /// Sum of the travel costs inside the run.
    pub travel: i64,
    /// Total time the run would have to go back to meet every window when entered no later
    /// than `latest`; zero when it can meet them all. With a warp, `duration` and the bounds
    /// describe the run with those returns made.
    pub warp: i64,
}

impl Segment {
    /// The run of the one stop `stop`; `None` when it has several windows (or is unknown).
    pub fn stop(c: &Constraints, stop: usize) -> Option<Segment> {
        let windows = c.windows.get(stop)?;
        let service = *c.service.get(stop)?;
        let (earliest, latest) = match windows.as_slice() {
            [] => (i64::MIN, i64::MAX),
            [w] => (w.earliest, w.latest),
            _ => return None,
        };
        Some(Segment {
            duration: service,
            earliest,
            latest,
            travel: 0,
            warp: earliest.saturating_sub(latest).max(0),
        })
    }

    /// The return of a closed tour to `depot`: it ends on arrival and must come no later than
    /// the close of the depot's last window. Any number of depot windows is fine here.
    pub fn return_to(c: &Constraints, depot: usize) -> Option<Segment> {
        let latest = c.windows.get(depot)?.last().map_or(i64::MAX, |w| w.latest);
        Some(Segment {
            duration: 0,
            earliest: i64::MIN,
            latest,
            travel: 0,
            warp: 0,
        })
    }

    /// The run of `a` followed, after a step of `travel` from its last stop, by the run of `b`.
    ///
    /// With `a` entered at `x <= a.latest`, `b` is reached at `max(x, a.earliest) + d` where
    /// `d = a.duration + travel`. That meets `b`'s bound when `max(x, a.earliest) <= b.latest -
    /// d`, so the joined run has `latest = min(a.latest, b.latest - d)`; when even `a.earliest`
    /// exceeds `b.latest - d`, the excess is warp, and the joined run is described as if that
    /// return in time were made. `b` waits unless it is reached after `b.earliest`, that is
    /// unless `max(x, a.earliest) >= b.earliest - d`: the joined `earliest` is the larger of
    /// `a.earliest` and `b.earliest - d`, but no later than `a.latest`; when `b.earliest - d`
    /// lies beyond `a.latest`, the wait it leaves is forced and goes into the duration.
    pub fn concat(a: &Segment, b: &Segment, travel: i64) -> Segment {
        // Time from the start of `a` to the arrival at `b`, `a`'s own warp taken back.
        let d = a.duration.saturating_sub(a.warp).saturating_add(travel);
        let b_latest = b.latest.saturating_sub(d);
        let b_earliest = b.earliest.saturating_sub(d);
        let forced_wait = b_earliest.saturating_sub(a.latest).max(0);
        let new_warp = a.earliest.saturating_sub(b_latest).max(0);
        Segment {
            duration: a
                .duration
                .saturating_add(travel)
                .saturating_add(b.duration)
                .saturating_add(forced_wait),
            earliest: a.earliest.max(b_earliest).saturating_sub(forced_wait),
            latest: a.latest.min(b_latest).saturating_add(new_warp),
            travel: a.travel.saturating_add(travel).saturating_add(b.travel),
            warp: a.warp.saturating_add(b.warp).saturating_add(new_warp),
        }
    }

    /// When the run ends if its first stop is reached at `arrival`; `None` when a stop of the
    /// run would miss its window.
    pub fn end(&self, arrival: i64) -> Option<i64> {
        if self.warp > 0 || arrival > self.latest {
            return None;
        }
        Some(arrival.max(self.earliest).saturating_add(self.duration))
    }

    /// The warp of the run when its first stop is reached at `arrival`: zero exactly when
    /// [`end`](Segment::end) is `Some`.
    pub fn warp_at(&self, arrival: i64) -> i64 {
        self.warp
            .saturating_add(arrival.saturating_sub(self.latest).max(0))
    }

    /// The summary of a whole order as [`evaluate`](super::evaluate) schedules it: the stops
    /// in turn and, for a closed tour, the return to the first. `None` when the order is empty,
    /// names an unknown stop or a stop with several windows.
    ///
    /// Its [`end`](Segment::end) at [`Constraints::start_time`] is the completion time of a
    /// feasible order; `None` there means a window is missed.
    pub fn of_order<C: Cost + ?Sized>(
        cost: &C,
        c: &Constraints,
        order: &[usize],
    ) -> Option<Segment> {
        let (&first, rest) = order.split_first()?;
        if order.iter().any(|&s| s >= cost.len()) {
            return None;
        }
        let mut run = Segment::stop(c, first)?;
        let mut last = first;
        for &s in rest {
            run = Segment::concat(&run, &Segment::stop(c, s)?, cost.cost(last, s));
            last = s;
        }
        if c.route == Route::Closed {
            let step = if rest.is_empty() {
                0
            } else {
                cost.cost(last, first)
            };
            run = Segment::concat(&run, &Segment::return_to(c, first)?, step);
        }
        Some(run)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::MatrixCost;
    use crate::constraints::{Window, evaluate};
    use proptest::prelude::*;

    #[test]
    fn two_stops_worked_by_hand() {
        // Stop A: window 0..10, service 2; step 3; stop B: window 20..30, service 1.
        let a = Segment {
            duration: 2,
            earliest: 0,
            latest: 10,
            travel: 0,
            warp: 0,
        };
        let b = Segment {
            duration: 1,
            earliest: 20,
            latest: 30,
            travel: 0,
            warp: 0,
        };
        let ab = Segment::concat(&a, &b, 3);
        // Entering A at any time up to 10 reaches B by 15 and waits for 20: the end is 21
        // whatever the start; entering after 10 misses A's window.
        assert_eq!(ab.end(0), Some(21));
        assert_eq!(ab.end(10), Some(21));
        assert_eq!(ab.end(11), None);
        assert_eq!(
            (ab.earliest, ab.latest, ab.duration, ab.travel),
            (10, 10, 11, 3)
        );
        // B before A: B ends at 21 at the earliest, A's window has closed by 24.
        // B ends at 21 at the earliest, A must start by 10: 14 of warp.
        assert_eq!(Segment::concat(&b, &a, 3).warp, 14);
    }

    #[test]
    fn several_windows_fall_back() {
        let mut c = Constraints::new(2);
        c.windows[1] = vec![
            Window {
                earliest: 0,
                latest: 1,
            },
            Window {
                earliest: 5,
                latest: 6,
            },
        ];
        assert_eq!(Segment::stop(&c, 1), None);
        assert!(Segment::stop(&c, 0).is_some());
        assert_eq!(Segment::stop(&c, 2), None);
    }

    /// A random instance: costs, one optional window and a service per stop, a start time,
    /// a route, and an order starting at the depot 0.
    fn instance(symmetric: bool) -> impl Strategy<Value = (MatrixCost, Constraints, Vec<usize>)> {
        (2usize..=7).prop_flat_map(move |n| {
            (
                prop::collection::vec(0i64..30, n * n),
                prop::collection::vec(prop::option::weighted(0.8, (0i64..150, 0i64..80)), n),
                prop::collection::vec(0i64..10, n),
                0i64..20,
                any::<bool>(),
                Just((1..n).collect::<Vec<usize>>()).prop_shuffle(),
            )
                .prop_map(move |(w, windows, service, start, closed, rest)| {
                    let weight = |i: usize, j: usize| match (i == j, symmetric && i > j) {
                        (true, _) => 0,
                        (false, true) => w[j * n + i],
                        (false, false) => w[i * n + j],
                    };
                    let rows: Vec<Vec<i64>> = (0..n)
                        .map(|i| (0..n).map(|j| weight(i, j)).collect())
                        .collect();
                    let cost = MatrixCost::from_rows(&rows).unwrap();
                    let mut c = Constraints::new(n);
                    c.windows = windows
                        .iter()
                        .map(|w| {
                            w.iter()
                                .map(|&(earliest, width)| Window {
                                    earliest,
                                    latest: earliest + width,
                                })
                                .collect()
                        })
                        .collect();
                    c.service = service;
                    c.start_time = start;
                    c.route = if closed { Route::Closed } else { Route::Path };
                    let mut order = vec![0];
                    order.extend(rest);
                    (cost, c, order)
                })
        })
    }

    fn agrees_with_evaluate(cost: &MatrixCost, c: &Constraints, order: &[usize]) {
        let e = evaluate(cost, c, order);
        let run = Segment::of_order(cost, c, order).unwrap();
        let end = run.end(c.start_time);
        assert_eq!(end.is_some(), e.feasible(), "{e:?} {run:?}");
        if let Some(end) = end {
            assert_eq!(end, e.completion_time);
        }
        assert_eq!(run.travel, e.travel_cost);
    }

    proptest! {
        #[test]
        fn whole_order_agrees_asymmetric((cost, c, order) in instance(false)) {
            agrees_with_evaluate(&cost, &c, &order);
        }

        #[test]
        fn whole_order_agrees_symmetric((cost, c, order) in instance(true)) {
            agrees_with_evaluate(&cost, &c, &order);
        }

        /// Joining the summaries of a prefix and a suffix gives the same run as summarising
        /// the whole order stop by stop, for every arrival time tried.
        #[test]
        fn split_and_join_agree((cost, c, order) in instance(false), cut in 1usize..7, x in -10i64..200) {
            let cut = cut.min(order.len() - 1).max(1);
            let mut open = c.clone();
            open.route = Route::Path;
            let whole = Segment::of_order(&cost, &open, &order).unwrap();
            if cut < order.len() {
                let head = Segment::of_order(&cost, &open, &order[..cut]).unwrap();
                let tail = Segment::of_order(&cost, &open, &order[cut..]).unwrap();
                let joined = Segment::concat(&head, &tail, cost.cost(order[cut - 1], order[cut]));
                prop_assert_eq!(joined.warp, whole.warp);
                prop_assert_eq!(joined.warp_at(x), whole.warp_at(x));
                prop_assert_eq!(joined.warp_at(x) > 0, whole.end(x).is_none());
                prop_assert_eq!(joined.travel, whole.travel);
                prop_assert_eq!(joined.end(x), whole.end(x));
            }
        }
    }
}
