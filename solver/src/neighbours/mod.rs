//! Candidate sets: for each node, the few other nodes a good tour is likely to connect it to.
//!
//! Local search only looks at moves that add a candidate edge, which turns quadratic
//! neighbourhoods into linear ones. [`lists`] holds the [`Neighbours`] type and the plain
//! sources (nearest, quadrant, caller-made lists); [`alpha`] the alpha-nearness lists from the
//! 1-tree. The choice among them by [`CandidateSource`] sits here, above both, so the plain
//! lists never depend on the bounds that alpha-nearness needs.

pub(crate) mod alpha;
pub(crate) mod lists;
pub(crate) mod tree;

#[cfg(any(test, feature = "internals"))]
pub use lists::k_nearest;
pub use lists::{ListError, Neighbours};
use lists::{nearest_until, quadrant_until};

use crate::cost::Cost;

/// Where candidate lists come from.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum CandidateSource {
    /// The `k` cheapest other nodes.
    Nearest,
    /// The nearest few in each quadrant around the node (octant for 3-D points), topped up with
    /// the nearest overall. Without geometry this is the same as `Nearest`. The default: on
    /// uniform instances it finds as good tours as `Nearest`, on clustered ones better.
    #[default]
    Quadrant,
    /// The alpha-nearest: edges that the cheapest 1-tree containing them makes least longer,
    /// under penalties from a short Held–Karp ascent (`alpha`). Symmetric costs up to
    /// `alpha::ALPHA_LIMIT` nodes; otherwise the same as `Quadrant`. Costs O(n²).
    Alpha,
}

impl CandidateSource {
    /// Every source, for option parsing.
    pub const ALL: [CandidateSource; 3] = [
        CandidateSource::Nearest,
        CandidateSource::Quadrant,
        CandidateSource::Alpha,
    ];

    /// Name as the command line takes it.
    pub fn name(self) -> &'static str {
        match self {
            CandidateSource::Nearest => "nearest",
            CandidateSource::Quadrant => "quadrant",
            CandidateSource::Alpha => "alpha",
        }
    }

    /// The source of this name.
    pub fn from_name(name: &str) -> Option<CandidateSource> {
        Self::ALL.into_iter().find(|s| s.name() == name)
    }
}

/// Candidate lists of width `k` from `source`.
///
/// ```
/// use wend::{candidates, CandidateSource, CoordCost, Metric};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// let lists = candidates(&square, 2, CandidateSource::Nearest);
/// assert_eq!(lists.k(), 2);
/// let mut near = lists.out(0).to_vec();
/// near.sort();
/// assert_eq!(near, vec![1, 3]); // the two corners 10 away
/// ```
pub fn candidates<C: Cost + ?Sized>(cost: &C, k: usize, source: CandidateSource) -> Neighbours {
    build(cost, k, source, &|| false)
}

/// [`candidates`], given up when `stop` turns true (polled once per node, from every thread
/// building lists): `None` then. On a million points the lists take seconds, so a stop request
/// or a deadline must not wait for them.
pub(crate) fn candidates_until<C: Cost + ?Sized>(
    cost: &C,
    k: usize,
    source: CandidateSource,
    stop: &(dyn Fn() -> bool + Sync),
) -> Option<Neighbours> {
    let lists = build(cost, k, source, stop);
    (!stop()).then_some(lists)
}

/// The lists, incomplete (and to be thrown away) if `stop` turned true meanwhile.
fn build<C: Cost + ?Sized>(
    cost: &C,
    k: usize,
    source: CandidateSource,
    stop: &(dyn Fn() -> bool + Sync),
) -> Neighbours {
    match source {
        CandidateSource::Nearest => nearest_until(cost, k, stop),
        CandidateSource::Quadrant => quadrant_until(cost, k, stop),
        CandidateSource::Alpha => {
            alpha::from_ascent(cost, k).unwrap_or_else(|_| quadrant_until(cost, k, stop))
        }
    }
}
