//! Choosing the starting tour of each restart.

use super::{greedy_edge_until, nearest_neighbour, space_filling_curve};
use crate::cost::Cost;
use crate::neighbours::Neighbours;
use rand::Rng;
use rand_pcg::Pcg64;

/// How the starting tour of each restart is built.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Start {
    /// Nearest neighbour from a random node.
    NearestNeighbour,
    /// Greedy edge (the first restart without noise, later ones with random noise).
    GreedyEdge,
    /// Hilbert curve (a random shift of the curve for later restarts); nearest neighbour when
    /// the costs have no geometry.
    SpaceFillingCurve,
    /// Greedy first, then the curve, then alternating noisy greedy and nearest neighbour.
    Mixed,
}

/// The starting tour of restart `r` by `start`, drawing from `rng`; a greedy start given up at
/// `should_stop` falls back to the curve.
pub(crate) fn start_tour<C: Cost + ?Sized>(
    cost: &C,
    nb: &Neighbours,
    start: Start,
    r: usize,
    rng: &mut Pcg64,
    should_stop: &mut dyn FnMut() -> bool,
) -> Vec<usize> {
    let n = cost.len();
    let nn = |rng: &mut Pcg64| {
        let s = if r == 0 {
            0
        } else {
            rng.gen_range(0..n.max(1))
        };
        nearest_neighbour(cost, nb, s)
    };
    let curve = |rng: &mut Pcg64| {
        let shift = if r == 0 {
            [0.0, 0.0]
        } else {
            [rng.r#gen::<f64>(), rng.r#gen::<f64>()]
        };
        space_filling_curve(cost, shift)
    };
    let noise = if r == 0 { 0.0 } else { 0.3 };
    // A greedy start given up at a stop request or the deadline: the curve, which takes a
    // fraction of the time (or the nodes in order, without geometry), so a tour is at hand.
    let mut greedy = |noise: f64, rng: &mut Pcg64| {
        greedy_edge_until(cost, nb, noise, rng, should_stop)
            .or_else(|| space_filling_curve(cost, [0.0, 0.0]))
            .unwrap_or_else(|| (0..n).collect())
    };
    match start {
        Start::NearestNeighbour => nn(rng),
        Start::GreedyEdge => greedy(noise, rng),
        Start::SpaceFillingCurve => curve(rng).unwrap_or_else(|| nn(rng)),
        Start::Mixed => match r {
            0 => greedy(0.0, rng),
            1 => curve(rng).unwrap_or_else(|| nn(rng)),
            r if r % 2 == 0 => greedy(0.3, rng),
            _ => nn(rng),
        },
    }
}
