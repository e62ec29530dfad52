//! Every thread on one tour: the iterated LK search of a large instance, cut into parts.
//!
//! Above [`PARTS_FROM`] nodes on coordinates, independent runs side by side would each improve
//! their own copy of a large tour, and all but one copy would be thrown away. Here a run takes
//! its greedy tour to a local optimum of the whole tour (on one thread, for now), then works in
//! rounds: the tour is cut into consecutive stretches of about [`PART_NODES`] nodes, and each
//! stretch, a path with fixed ends between its first and last node, becomes a small instance of
//! its own (its points, the whole tour's neighbour lists kept to the stretch, a dummy node
//! closing the path, as for any path with fixed ends) whose LK search with kicks runs on one of
//! the loop's threads. The improved path goes back in place of the stretch when it is shorter.
//! Stretches are disjoint, so their searches never meet. The next round cuts the tour half a
//! part further on, so no edge stays on a boundary.
//!
//! One step of such a run is one round, and an iteration budget counts kicks as for `lk`, turned
//! into rounds of [`KICKS_PER_NODE`] kicks per node. The cuts depend on the number of nodes and
//! the run's random stream only, and each part's search has its own stream and kick budget,
//! drawn before the round starts: with an iteration budget the tour is the same for any number
//! of threads.

use super::drive::{Iterative, LoopOutcome, drive};
use super::lk::{LkPlan, LkRun};
use crate::construct::{Start, start_tour};
use crate::control::Improvement;
use crate::cost::{CoordCost, Cost};
use crate::neighbours::{CandidateSource, Neighbours};
use crate::tour::{ArrayTour, TourRepr, TwoLevelTour, closed_length};
use crate::transform::{EndedCost, Ends, path_length};
use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;
use rayon::prelude::*;
use std::time::Instant;

/// Fewest nodes for the search in parts; below, runs go side by side as before.
pub(crate) const PARTS_FROM: usize = 150_000;
/// Nodes of a part, about: every part has `n / ceil(n / PART_NODES)` nodes, give or take one.
/// Smaller parts cut more edges and pay each part's pass over its nodes more often; larger ones
/// leave threads idle at the end of a round (parts do not depend on the thread count).
pub(crate) const PART_NODES: usize = 25_000;
/// Kicks per node of a part in each round (each part's search also passes once over all its
/// nodes first, so fewer kicks would make rounds mostly that pass).
const KICKS_PER_NODE: f64 = 0.25;

/// What the search in parts needs besides the tour.
pub(crate) struct PartsPlan<'a> {
    /// The LK plan (its limits are the run's; its parameters and layout are each part's).
    pub lk: &'a LkPlan,
    /// Where the neighbour lists come from (for the dummy node's list of each part).
    pub source: CandidateSource,
    /// Nodes of a part, about ([`PART_NODES`]).
    pub part_nodes: usize,
}

/// One run of the search in parts.
pub(crate) struct PartsRun<'a> {
    cost: &'a CoordCost,
    nb: &'a Neighbours,
    plan: &'a PartsPlan<'a>,
    order: Vec<usize>,
    length: i64,
    round: u64,
}

impl<'a> PartsRun<'a> {
    /// A run from its greedy tour (`r`: the run's index), taken to a local optimum in parts,
    /// then as a whole.
    pub(crate) fn start(
        cost: &'a CoordCost,
        nb: &'a Neighbours,
        plan: &'a PartsPlan<'a>,
        r: usize,
        rng: &mut Pcg64,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Self {
        let order = start_tour(cost, nb, Start::GreedyEdge, r, rng, should_stop);
        let length = closed_length(cost, &order).unwrap_or(i64::MAX);
        let mut run = PartsRun {
            cost,
            nb,
            plan,
            order,
            length,
            round: 0,
        };
        if should_stop() {
            return run;
        }
        // Each stretch of the greedy tour to its local optimum, on every thread: most of the
        // work of the first descent. Stretches of a tour that is far from good wind through
        // each other, which no part alone can undo: the descent of the whole tour does.
        run.round(rng, 0.0);
        let order = std::mem::take(&mut run.order);
        let order = if plan.lk.layout.two_level(cost.len()) {
            LkRun::<CoordCost, TwoLevelTour>::start(cost, nb, plan.lk, order, should_stop)
                .best_order()
        } else {
            LkRun::<CoordCost, ArrayTour>::start(cost, nb, plan.lk, order, should_stop).best_order()
        };
        run.length = closed_length(cost, &order).unwrap_or(i64::MAX);
        run.order = order;
        run
    }

    /// One round: the tour cut again, every part improved on the loop's threads with
    /// `kicks_per_node` kicks per node after its pass over all its nodes.
    fn round(&mut self, rng: &mut Pcg64, kicks_per_node: f64) {
        let n = self.order.len();
        let parts = n.div_ceil(self.plan.part_nodes.max(8)).max(2);
        let size = n / parts;
        // Half a part further on than the last round, plus a little jitter, so that the
        // boundaries never come back to the same places.
        let offset = (self.round as usize * (size / 2) + rng.gen_range(0..size.max(2) / 8 + 1)) % n;
        self.order.rotate_left(offset);
        let stretches = bounds(n, parts);
        let seeds: Vec<u64> = stretches.iter().map(|_| rng.r#gen()).collect();
        let limits = &self.plan.lk.limits;
        let over =
            || limits.stop.is_stopped() || limits.deadline.is_some_and(|d| Instant::now() >= d);
        let cost = self.cost;
        let plan = self.plan;
        let nb = self.nb;
        // Where each node stands in the cut tour, to turn the tour's lists into each part's.
        let mut position = vec![0u32; n];
        for (i, &v) in self.order.iter().enumerate() {
            position[v] = i as u32;
        }
        let position = &position;
        let mut pieces: Vec<&mut [usize]> = Vec::with_capacity(parts);
        let mut rest: &mut [usize] = &mut self.order;
        for &(a, b) in &stretches {
            let (head, tail) = rest.split_at_mut(b - a);
            pieces.push(head);
            rest = tail;
        }
        let gains: i64 = pieces
            .into_par_iter()
            .zip(seeds)
            .zip(stretches.par_iter())
            .map(|((piece, seed), &(first, _))| {
                let lists = part_lists(nb, position, piece, first);
                improve_part(cost, plan, piece, lists, seed, kicks_per_node, &over)
            })
            .sum();
        self.length = self.length.saturating_sub(gains);
        self.round += 1;
        debug_assert_eq!(closed_length(cost, &self.order).ok(), Some(self.length));
    }
}

/// The iterated search in parts on `cost`: runs as [`drive`] owns them, one at a time, each
/// round of a run spread over the loop's threads. An iteration budget counts kicks, as for
/// `lk`: a round makes about `KICKS_PER_NODE` kicks per node, so the budget becomes rounds.
pub(crate) fn in_parts(
    cost: &CoordCost,
    nb: &Neighbours,
    plan: &PartsPlan<'_>,
    began: Instant,
    observer: &(dyn Fn(Improvement) + Sync),
) -> LoopOutcome {
    let per_round = (cost.len() as f64 * KICKS_PER_NODE).max(1.0);
    let mut limits = plan.lk.limits.clone();
    limits.iterations = limits
        .iterations
        .map(|k| ((k as f64 / per_round).ceil() as u64).max(1));
    drive(&limits, began, observer, |r, rng, should_stop| {
        PartsRun::start(cost, nb, plan, r, rng, should_stop)
    })
}

/// The bounds of `parts` consecutive stretches of `n` positions, as even as can be.
fn bounds(n: usize, parts: usize) -> Vec<(usize, usize)> {
    let (base, extra) = (n / parts, n % parts);
    let mut at = 0;
    (0..parts)
        .map(|i| {
            let len = base + usize::from(i < extra);
            let b = (at, at + len);
            at += len;
            b
        })
        .collect()
}

impl Iterative for PartsRun<'_> {
    fn step(&mut self, rng: &mut Pcg64, should_stop: &mut dyn FnMut() -> bool) {
        if !should_stop() {
            self.round(rng, KICKS_PER_NODE);
        }
    }

    fn best_length(&self) -> i64 {
        self.length
    }

    fn best_order(&self) -> Vec<usize> {
        let mut order = self.order.clone();
        if let Some(p) = order.iter().position(|&v| v == 0) {
            order.rotate_left(p);
        }
        order
    }

    fn finished(&self) -> bool {
        self.length == i64::MAX
    }

    const PARALLEL_STEPS: bool = true;
}

/// The neighbour lists of a part, from the whole tour's: each node keeps the candidates that lie
/// in its part (at position `first` of the cut tour, `position` giving every node's), and fills
/// the places of the others with its own part's nodes next to it on the tour.
fn part_lists(
    nb: &Neighbours,
    position: &[u32],
    piece: &[usize],
    first: usize,
) -> Option<Neighbours> {
    let m = piece.len();
    let k = nb.k().min(m.saturating_sub(1));
    if k == 0 {
        return None;
    }
    let mut out = Vec::with_capacity(m * k);
    for (i, &v) in piece.iter().enumerate() {
        let start = out.len();
        for &w in nb.out(v) {
            let p = position[w as usize] as usize;
            if out.len() - start < k && p >= first && p < first + m {
                out.push((p - first) as u32);
            }
        }
        // Fill with the part's nodes nearest on the tour, alternately after and before.
        let mut step = 1;
        while out.len() - start < k {
            for j in [i + step, i.wrapping_sub(step)] {
                if out.len() - start < k && j < m && !out[start..].contains(&(j as u32)) {
                    out.push(j as u32);
                }
            }
            step += 1;
        }
    }
    Neighbours::from_lists(m, k, out, Vec::new()).ok()
}

/// Improves the stretch `piece` of the tour as a path between its first and last node, with
/// its own search (seeded from `seed`); writes the better path back in place and returns by how
/// much it is shorter (0 when the stretch is kept).
fn improve_part(
    cost: &CoordCost,
    plan: &PartsPlan<'_>,
    piece: &mut [usize],
    lists: Option<Neighbours>,
    seed: u64,
    kicks_per_node: f64,
    over: &(dyn Fn() -> bool + Sync),
) -> i64 {
    let m = piece.len();
    if m < 8 || over() {
        return 0;
    }
    let points: Vec<[f64; 3]> = piece.iter().map(|&v| cost.points()[v]).collect();
    let Ok(sub) = CoordCost::new(cost.metric(), points) else {
        return 0;
    };
    let local: Vec<usize> = (0..m).collect();
    let Ok(before) = path_length(&sub, &local) else {
        return 0;
    };
    let Some(lists) = lists else {
        return 0;
    };
    let Ok(ended) = EndedCost::new(&sub, Ends::StartEnd(0, m - 1)) else {
        return 0;
    };
    let nb = ended.neighbours(&lists, plan.source);
    // The path as a closed tour through the dummy node `m`.
    let tour: Vec<usize> = std::iter::once(m).chain(0..m).collect();
    let kicks = (m as f64 * kicks_per_node).ceil() as u64;
    let mut rng = Pcg64::seed_from_u64(seed);
    let path = if plan.lk.layout.two_level(m + 1) {
        search::<TwoLevelTour>(&ended, &nb, plan.lk, tour, kicks, &mut rng, over)
    } else {
        search::<ArrayTour>(&ended, &nb, plan.lk, tour, kicks, &mut rng, over)
    };
    let path = ended.path_from_tour(&path);
    let Ok(after) = path_length(&sub, &path) else {
        return 0;
    };
    if after >= before || path.first() != Some(&0) || path.last() != Some(&(m - 1)) {
        return 0;
    }
    let global: Vec<usize> = path.iter().map(|&i| piece[i]).collect();
    piece.copy_from_slice(&global);
    before - after
}

/// The iterated LK search on one part's closed tour: its local optimum, then `kicks` kicks.
fn search<T: TourRepr>(
    ended: &EndedCost<'_, CoordCost>,
    nb: &Neighbours,
    plan: &LkPlan,
    tour: Vec<usize>,
    kicks: u64,
    rng: &mut Pcg64,
    over: &(dyn Fn() -> bool + Sync),
) -> Vec<usize> {
    let mut stop = || over();
    let mut run = LkRun::<EndedCost<'_, CoordCost>, T>::start(ended, nb, plan, tour, &mut stop);
    for _ in 0..kicks {
        if run.finished() || over() {
            break;
        }
        run.step(rng, &mut stop);
    }
    run.best_order()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::control::StopHandle;
    use crate::methods::{LkParams, LoopPlan};
    use crate::neighbours::candidates;
    use crate::tour::Layout;

    /// att532 of TSPLIB 95 (ATT distances), from the repository's instances folder.
    fn att532() -> CoordCost {
        let text = std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../instances/att532.tsp"
        ))
        .unwrap();
        let points: Vec<[f64; 3]> = text
            .lines()
            .skip_while(|l| !l.starts_with("NODE_COORD_SECTION"))
            .skip(1)
            .take_while(|l| !l.starts_with("EOF"))
            .map(|l| {
                let f: Vec<f64> = l.split_whitespace().map(|x| x.parse().unwrap()).collect();
                [f[1], f[2], 0.0]
            })
            .collect();
        assert_eq!(points.len(), 532);
        CoordCost::new(crate::cost::Metric::Att, points).unwrap()
    }

    fn solve(cost: &CoordCost, threads: usize, kicks: u64) -> LoopOutcome {
        let nb = candidates(cost, 8, CandidateSource::default());
        let lk = LkPlan {
            limits: LoopPlan {
                seed: 5,
                threads,
                runs: Some(1),
                iterations: Some(kicks),
                stall: None,
                target: None,
                deadline: None,
                stop: StopHandle::new(),
            },
            params: LkParams::default(),
            layout: Layout::Auto,
            start: None,
        };
        let plan = PartsPlan {
            lk: &lk,
            source: CandidateSource::default(),
            part_nodes: 60,
        };
        in_parts(cost, &nb, &plan, Instant::now(), &|_| {})
    }

    #[test]
    fn parts_give_a_near_optimal_tour_the_same_for_any_thread_count() {
        let cost = att532();
        // 10 rounds of a quarter kick per node, over parts of about 60 nodes.
        let one = solve(&cost, 1, 532 * 5 / 2);
        let two = solve(&cost, 2, 532 * 5 / 2);
        assert_eq!(one.order, two.order);
        let mut sorted = one.order.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..532).collect::<Vec<_>>());
        assert_eq!(closed_length(&cost, &one.order).ok(), Some(one.length));
        // 27686: the optimal length of att532 in TSPLIB 95's list of optima.
        assert!(one.length >= 27686);
        assert!(
            (one.length as f64) < 27686.0 * 1.03,
            "{} is more than 3% above the optimum",
            one.length
        );
    }

    #[test]
    fn stretches_cover_the_tour_evenly() {
        let b = bounds(10, 3);
        assert_eq!(b, vec![(0, 4), (4, 7), (7, 10)]);
        let b = bounds(1_000_003, 40);
        assert_eq!(b.last().map(|x| x.1), Some(1_000_003));
        let sizes: Vec<usize> = b.iter().map(|(a, b)| b - a).collect();
        assert!(sizes.iter().max().unwrap() - sizes.iter().min().unwrap() <= 1);
    }
}
