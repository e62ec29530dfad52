//! Every thread on one tour: the iterated LK search of a large instance, cut into parts.
//!
//! From [`PARTS_FROM`] nodes on coordinates, independent runs side by side would each improve
//! their own copy of a large tour, and all but one copy would be thrown away. Here one run keeps
//! one tour, and every step of it is spread over the loop's threads:
//!
//! 1. **The first tour, in blocks.** The points in the order of a space-filling curve are cut
//!    into blocks of consecutive points (compact regions); each block's greedy path from its
//!    first point to its last is taken to its local optimum, blocks side by side, and the paths
//!    are joined in curve order.
//! 2. **The seams.** The nodes with a candidate in another block are where moves may remain:
//!    the whole tour's descent tries moves from them only, on one thread (about a twentieth of
//!    the nodes on a million points).
//! 3. **Rounds.** The tour is cut into consecutive stretches of about [`PART_NODES`] nodes, and
//!    each stretch, a path with fixed ends between its first and last node, becomes a small
//!    instance of its own (its points, the whole tour's neighbour lists kept to the stretch, a
//!    dummy node closing the path, as for any path with fixed ends) whose LK search, from the
//!    last round's seams and then with kicks, runs on one of the loop's threads. The improved
//!    path goes back in place of the stretch when it is shorter. Stretches are disjoint, so
//!    their searches never meet. Each round turns the tour on from where the last one cut it
//!    by its round number times half a part, plus up to an eighth of a part at random: every
//!    other round the cuts move half a part, and in the rounds between by the random shift
//!    only, so the same edge is almost never on a boundary twice running.
//!
//! One step of such a run is one round, and an iteration budget counts kicks as for `lk`, turned
//! into rounds of [`KICKS_PER_NODE`] kicks per node. Blocks and cuts depend on the number of
//! nodes and the run's random stream only, and each part's search has its own stream and kick
//! budget, drawn before the round starts: with an iteration budget the tour is the same for any
//! number of threads.

use super::drive::{Iterative, LoopOutcome, LoopPlan, drive};
use super::lk::{LkPlan, LkRun};
use crate::construct::{Start, greedy_edge, space_filling_curve, start_tour};
use crate::control::Improvement;
use crate::cost::{CoordCost, Cost};
use crate::neighbours::{CandidateSource, Neighbours};
use crate::tour::{ArrayTour, TourRepr, TwoLevelTour, closed_length};
use crate::transform::{EndedCost, Ends, path_length};
use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;
use rayon::prelude::*;
use std::time::Instant;

/// Fewest nodes for the search in parts; below, runs go side by side as before. Measured on two
/// threads against two runs side by side: pla33810 at 300 s 0.201% above its optimum against
/// 0.289%, 50,000 uniform points at 60 s 0.475% against 0.518% above the yardstick, 100,000
/// 0.533% against 0.618%. At 25,000 uniform points at 60 s (seeds 1–3) parts gave 0.800%,
/// 0.817% and 0.796% against 0.760%, 0.812% and 0.801% side by side: no better, so runs stay
/// side by side there.
pub(crate) const PARTS_FROM: usize = 30_000;
/// Nodes of a part, about: every part has `n / ceil(n / PART_NODES)` nodes, give or take one.
/// Measured on a million points at 60 s: parts of 10,000 nodes gave a tour 0.08% longer, of
/// 5,000 (at a quarter kick per node) 0.1% longer than 25,000 (more edges cut, more seams to
/// pass over); larger parts leave threads idle at the end of a round (parts do not depend on
/// the thread count).
pub(crate) const PART_NODES: usize = 25_000;
/// Kicks per node of a part in each round. Measured on a million points at 60 s: 0.1 (three
/// rounds) beat 0.25 (one round; 0.19% longer) and 0.05 (five rounds; 0.007% longer): more
/// rounds move the cuts more often, fewer kicks per round leave more of a round's time to
/// its seams.
const KICKS_PER_NODE: f64 = 0.1;

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
    /// The parts of the last round: stretches of positions in `order`.
    cuts: Vec<(usize, usize)>,
}

impl<'a> PartsRun<'a> {
    /// A run from its first tour, built in blocks (or, without geometry, its greedy tour; `r`:
    /// the run's index), taken to a local optimum: the blocks, then their seams.
    pub(crate) fn start(
        cost: &'a CoordCost,
        nb: &'a Neighbours,
        plan: &'a PartsPlan<'a>,
        r: usize,
        rng: &mut Pcg64,
        should_stop: &mut dyn FnMut() -> bool,
    ) -> Self {
        let mut run = PartsRun {
            cost,
            nb,
            plan,
            order: Vec::new(),
            length: i64::MAX,
            round: 0,
            cuts: Vec::new(),
        };
        if !run.first_tour(rng) {
            run.order = start_tour(cost, nb, Start::GreedyEdge, r, rng, should_stop);
        }
        run.length = closed_length(cost, &run.order).unwrap_or(i64::MAX);
        if should_stop() {
            return run;
        }
        // Moves between blocks, on the whole tour. (A round cut half a block further on,
        // trying moves from the seams side by side, then the whole tour from the seams it
        // could not reach, took longer on two threads: on a million points each part's set-up
        // outweighs its share of the 47,000 seams.)
        let seams = run.seams();
        let seams = Some(&seams[..]);
        let order = std::mem::take(&mut run.order);
        let order = if plan.lk.layout.two_level(cost.len()) {
            LkRun::<CoordCost, TwoLevelTour>::start_from(
                cost,
                nb,
                plan.lk,
                order,
                seams,
                should_stop,
            )
            .best_order()
        } else {
            LkRun::<CoordCost, ArrayTour>::start_from(cost, nb, plan.lk, order, seams, should_stop)
                .best_order()
        };
        run.length = closed_length(cost, &order).unwrap_or(i64::MAX);
        run.order = order;
        run
    }

    /// The first tour, built in blocks: the points in the order of a space-filling curve, cut
    /// into blocks of consecutive points (as many as a round has parts), each block's greedy
    /// path from its first point to its last taken to a local optimum on one of the loop's
    /// threads, the paths joined in curve order. Blocks are compact regions, so moves between
    /// them only remain along their borders. False (and nothing done) without geometry.
    fn first_tour(&mut self, rng: &mut Pcg64) -> bool {
        let Some(curve) = space_filling_curve(self.cost, [0.0, 0.0]) else {
            return false;
        };
        let n = curve.len();
        let parts = n.div_ceil(self.plan.part_nodes.max(8)).max(2);
        let blocks = bounds(n, parts);
        let seeds: Vec<u64> = blocks.iter().map(|_| rng.r#gen()).collect();
        let position = positions(&curve);
        self.order = curve;
        let (cost, plan, nb, position) = (self.cost, self.plan, self.nb, &position);
        let over = over(&self.plan.lk.limits);
        pieces(&mut self.order, &blocks)
            .into_par_iter()
            .zip(seeds)
            .zip(blocks.par_iter())
            .for_each(|((piece, seed), &(first, _))| {
                let lists = part_lists(nb, position, piece, first);
                improve_part(cost, plan, piece, lists, seed, Begin::Greedy, &over);
            });
        self.cuts = blocks;
        self.round = 1;
        true
    }

    /// The nodes of the last round's parts that had a candidate in another part, and the ends
    /// of each part, in tour order: where moves no part could make may remain. Every node
    /// before the first round.
    fn seams(&self) -> Vec<usize> {
        let n = self.order.len();
        if self.cuts.is_empty() {
            return self.order.clone();
        }
        let mut part = vec![0u32; n];
        for (i, &(a, b)) in self.cuts.iter().enumerate() {
            for &v in &self.order[a..b] {
                part[v] = i as u32;
            }
        }
        let part = &part;
        let nb = self.nb;
        (0..n)
            .into_par_iter()
            .filter(|&i| {
                let v = self.order[i];
                let (a, b) = self.cuts[part[v] as usize];
                i == a || i == b - 1 || nb.out(v).iter().any(|&w| part[w as usize] != part[v])
            })
            .map(|i| self.order[i])
            .collect()
    }

    /// One round: the tour cut again, every part improved on the loop's threads: a descent
    /// from its nodes marked in `from`, then `kicks_per_node` kicks per node.
    fn round(&mut self, rng: &mut Pcg64, kicks_per_node: f64, from: &[bool]) {
        let n = self.order.len();
        let parts = n.div_ceil(self.plan.part_nodes.max(8)).max(2);
        let size = n / parts;
        // The round number times half a part, plus a little jitter, on from where the last
        // round cut: half a part in odd rounds, the jitter only in even ones. (Half a part in
        // every round measured no better on pla33810, over three seeds at 150 s.)
        let offset = (self.round as usize * (size / 2) + rng.gen_range(0..size.max(2) / 8 + 1)) % n;
        self.order.rotate_left(offset);
        let stretches = bounds(n, parts);
        self.cuts.clone_from(&stretches);
        let seeds: Vec<u64> = stretches.iter().map(|_| rng.r#gen()).collect();
        let over = over(&self.plan.lk.limits);
        let (cost, plan, nb) = (self.cost, self.plan, self.nb);
        // Where each node stands in the cut tour, to turn the tour's lists into each part's.
        let position = &positions(&self.order);
        let begin = Begin::Stretch {
            kicks_per_node,
            from,
        };
        let gains: i64 = pieces(&mut self.order, &stretches)
            .into_par_iter()
            .zip(seeds)
            .zip(stretches.par_iter())
            .map(|((piece, seed), &(first, _))| {
                let lists = part_lists(nb, position, piece, first);
                improve_part(cost, plan, piece, lists, seed, begin, &over)
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

/// True once the run's time is up or a stop was asked for.
fn over(limits: &LoopPlan) -> impl Fn() -> bool + Sync + '_ {
    || limits.stop.is_stopped() || limits.deadline.is_some_and(|d| Instant::now() >= d)
}

/// Where each node stands in `order`.
fn positions(order: &[usize]) -> Vec<u32> {
    let mut at = vec![0u32; order.len()];
    for (i, &v) in order.iter().enumerate() {
        at[v] = i as u32;
    }
    at
}

/// `order` cut at `stretches` (consecutive, covering it).
fn pieces<'o>(order: &'o mut [usize], stretches: &[(usize, usize)]) -> Vec<&'o mut [usize]> {
    let mut out = Vec::with_capacity(stretches.len());
    let mut rest = order;
    for &(a, b) in stretches {
        let (head, tail) = rest.split_at_mut(b - a);
        out.push(head);
        rest = tail;
    }
    out
}

/// Where the search of a part begins.
#[derive(Clone, Copy)]
enum Begin<'s> {
    /// From the stretch as it is in the tour, which it only replaces by a shorter path; the
    /// first descent tries moves from the nodes marked in `from` (and those its moves touch),
    /// then `kicks_per_node` kicks per node.
    Stretch {
        kicks_per_node: f64,
        from: &'s [bool],
    },
    /// From the greedy path between the stretch's first and last node, to its local optimum:
    /// the path replaces the stretch whatever their lengths.
    Greedy,
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
            let mut marked = vec![false; self.order.len()];
            for v in self.seams() {
                marked[v] = true;
            }
            self.round(rng, KICKS_PER_NODE, &marked);
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
    begin: Begin<'_>,
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
    let mut rng = Pcg64::seed_from_u64(seed);
    // The path as a closed tour through the dummy node `m`.
    let start = match begin {
        Begin::Stretch {
            kicks_per_node,
            from,
        } => PartStart {
            tour: std::iter::once(m).chain(0..m).collect(),
            active: Some((0..m).filter(|&i| from[piece[i]]).collect()),
            kicks: (m as f64 * kicks_per_node).ceil() as u64,
        },
        Begin::Greedy => PartStart {
            tour: greedy_edge(&ended, &nb, 0.0, &mut rng),
            active: None,
            kicks: 0,
        },
    };
    let path = if plan.lk.layout.two_level(m + 1) {
        search::<TwoLevelTour>(&ended, &nb, plan.lk, start, &mut rng, over)
    } else {
        search::<ArrayTour>(&ended, &nb, plan.lk, start, &mut rng, over)
    };
    let path = ended.path_from_tour(&path);
    let Ok(after) = path_length(&sub, &path) else {
        return 0;
    };
    let kept = matches!(begin, Begin::Stretch { .. }) && after >= before;
    if kept || path.first() != Some(&0) || path.last() != Some(&(m - 1)) {
        return 0;
    }
    let global: Vec<usize> = path.iter().map(|&i| piece[i]).collect();
    piece.copy_from_slice(&global);
    before - after
}

/// Where the search of one part's closed tour begins.
struct PartStart {
    tour: Vec<usize>,
    /// The nodes the first descent tries moves from (every node when `None`).
    active: Option<Vec<usize>>,
    /// Kicks after the first descent.
    kicks: u64,
}

/// The iterated LK search on one part's closed tour: its local optimum, then its kicks.
fn search<T: TourRepr>(
    ended: &EndedCost<'_, CoordCost>,
    nb: &Neighbours,
    plan: &LkPlan,
    start: PartStart,
    rng: &mut Pcg64,
    over: &(dyn Fn() -> bool + Sync),
) -> Vec<usize> {
    let mut stop = || over();
    let active = start.active.as_deref();
    let mut run = LkRun::<EndedCost<'_, CoordCost>, T>::start_from(
        ended, nb, plan, start.tour, active, &mut stop,
    );
    for _ in 0..start.kicks {
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
