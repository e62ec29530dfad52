//! Optimal tours with a certificate: the exact methods behind one call.
//!
//! [`prove_optimal`] picks the method the costs allow:
//!
//! - up to [`DP_DIRECT_LIMIT`] nodes, or asymmetric costs up to [`DP_LIMIT`] nodes: the dynamic
//!   programme of [`crate::exact`], exact for either kind of costs;
//! - larger costs: a short iterated Lin–Kernighan-style search for a first tour, then branch
//!   and cut from a [`Prover`] supplied in [`ProveOptions::prover`] (the cutting-plane crate
//!   `wend-cuts` supplies one, for symmetric and asymmetric costs); without one, or asked for
//!   by name, the branch and bound of [`crate::bounds::branch`] on the 1-tree bound (symmetric
//!   costs only);
//! - larger asymmetric costs without a prover are refused with
//!   [`ProveError::AsymmetricTooLarge`].
//!
//! With a time limit the answer may come back unproven: the best tour found, the best lower
//! bound known (none when the dynamic programme was stopped) and `proven_optimal == false`.

use crate::bounds::{AscentOptions, BoundError, held_karp_bound};
use crate::bounds::{BranchOptions, branch_and_bound};
use crate::control::{self, StopHandle};
use crate::cost::Cost;
use crate::exact::{DEFAULT_DP_MEMORY, DP_LIMIT, DpError, optimal_path};
use crate::solve::{Method, SolveError, Solver};
use crate::tour::{Overflow, Tour, TourError, closed_length};
use crate::transform::{Ends, FixedCost, FixedEdgesError};
use std::sync::Arc;
use std::time::{Duration, Instant};

/// An exact method supplied from outside the core, as the cutting-plane crate supplies branch
/// and cut; see [`ProveOptions::prover`].
pub trait Prover: Send + Sync + std::fmt::Debug {
    /// Proves `first` (a tour) optimal on `cost` (symmetric or not), or finds a shorter tour and proves
    /// that, within `time_limit`; when stopped or out of time, the best tour and a true lower
    /// bound. An `Err` is a message for the user.
    fn prove(
        &self,
        cost: &dyn Cost,
        first: &[usize],
        time_limit: Option<Duration>,
        stop: &StopHandle,
    ) -> Result<ProverAnswer, String>;
}

/// What a [`Prover`] established.
#[derive(Clone, Debug)]
pub struct ProverAnswer {
    /// The best tour.
    pub tour: Vec<usize>,
    /// A lower bound on every tour.
    pub lower_bound: i64,
    /// True when `tour` is proven optimal.
    pub proven_optimal: bool,
    /// Subproblems (tree nodes) evaluated.
    pub nodes: u64,
}

/// Symmetric instances up to this size go to the dynamic programme (it takes well under a
/// second there); larger ones to branch and bound.
pub(crate) const DP_DIRECT_LIMIT: usize = 16;

/// Limits of [`prove_optimal`].
#[derive(Clone, Debug)]
pub struct ProveOptions {
    /// Wall-clock limit over the whole call, first tour included.
    pub time_limit: Option<Duration>,
    /// Seed of the search for the first tour.
    pub seed: u64,
    /// Worker threads of the first tour's search and of the dynamic programme (default: one
    /// per core).
    pub threads: Option<usize>,
    /// Memory the dynamic programme may allocate.
    pub dp_memory_bytes: usize,
    /// Largest number of branch-and-bound subproblems.
    pub node_limit: Option<u64>,
    /// The method to use; `None` picks as the module documentation says.
    pub method: Option<ExactMethod>,
    /// A closed tour (the default) or a path: paths are solved by the dynamic programme only
    /// ([`crate::exact::optimal_path`], up to `DP_LIMIT - 1` nodes).
    pub ends: Ends,
    /// Edges every tour must use (see [`Solver::fixed_edges`]), for closed tours only: the
    /// proof then holds over the tours that use them all.
    pub fixed_edges: Vec<(usize, usize)>,
    /// Branch and cut from outside the core, run when `method` asks for
    /// [`ExactMethod::BranchAndCut`].
    pub prover: Option<Arc<dyn Prover>>,
}

impl Default for ProveOptions {
    fn default() -> Self {
        ProveOptions {
            time_limit: None,
            seed: 0,
            threads: None,
            dp_memory_bytes: DEFAULT_DP_MEMORY.min(crate::memory::ceiling()),
            node_limit: None,
            method: None,
            ends: Ends::Closed,
            fixed_edges: Vec::new(),
            prover: None,
        }
    }
}

/// Which exact method answered.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ExactMethod {
    /// The dynamic programme over subsets.
    DynamicProgramme,
    /// Branch and bound on the 1-tree bound.
    BranchAndBound,
    /// Branch and cut on the linear programme, by a [`Prover`] from outside the core.
    BranchAndCut,
}

impl ExactMethod {
    /// Both methods.
    pub const ALL: [ExactMethod; 3] = [
        ExactMethod::DynamicProgramme,
        ExactMethod::BranchAndBound,
        ExactMethod::BranchAndCut,
    ];

    /// Name on the command line and in its JSON output.
    pub fn name(self) -> &'static str {
        match self {
            ExactMethod::DynamicProgramme => "dynamic-programme",
            ExactMethod::BranchAndBound => "branch-and-bound",
            ExactMethod::BranchAndCut => "branch-and-cut",
        }
    }

    /// The method of a [`name`](Self::name).
    pub fn from_name(name: &str) -> Option<ExactMethod> {
        Self::ALL.into_iter().find(|m| m.name() == name)
    }
}

/// What [`prove_optimal`] established.
#[derive(Clone, Debug)]
pub struct Certificate {
    /// The best tour found, starting at node 0 (or at the fixed start of
    /// [`ProveOptions::ends`]); for a path, from its first node to its last.
    pub tour: Tour,
    /// Its exact length (for a path, without a return step).
    pub length: i64,
    /// A lower bound on every tour's length, when one is known; equal to `length` when
    /// `proven_optimal`.
    pub lower_bound: Option<i64>,
    /// True when `tour` is proven optimal.
    pub proven_optimal: bool,
    /// The method that answered.
    pub method: ExactMethod,
    /// Branch-and-bound or branch-and-cut subproblems evaluated (zero for the dynamic
    /// programme).
    pub subproblems: u64,
    /// Length of the first tour, from the heuristic search (the tree methods only).
    pub first_tour_length: Option<i64>,
    /// Wall-clock seconds of the whole call.
    pub seconds: f64,
}

/// Why [`prove_optimal`] gave no tour.
#[derive(Debug, thiserror::Error)]
pub enum ProveError {
    /// Asymmetric costs beyond the dynamic programme's reach.
    #[error(
        "exact solving of asymmetric costs is limited to {limit} nodes (the dynamic programme) \
         without branch and cut; this instance has {n}"
    )]
    AsymmetricTooLarge {
        /// Nodes in the instance.
        n: usize,
        /// [`DP_LIMIT`].
        limit: usize,
    },
    /// A path asked of a method that handles closed tours only, or of more nodes than the
    /// dynamic programme takes.
    #[error(
        "exact paths are found by the dynamic programme only, for up to {limit} nodes; this \
         instance has {n}{}",
        if *branch_asked { " and branch and bound was asked for" } else { "" }
    )]
    PathUnsupported {
        /// Nodes in the instance.
        n: usize,
        /// `DP_LIMIT - 1` (the dummy node takes one place).
        limit: usize,
        /// True when branch and bound was asked for.
        branch_asked: bool,
    },
    /// Branch and cut asked for without a [`Prover`] to run it.
    #[error(
        "branch and cut needs the cutting-plane crate (wend-cuts), which was not given to this \
         call"
    )]
    NoProver,
    /// The [`Prover`] failed.
    #[error("branch and cut: {0}")]
    Prover(String),
    /// The dynamic programme refused (memory, overflow).
    #[error(transparent)]
    Dp(#[from] DpError),
    /// Branch and bound refused (overflowing costs, say).
    #[error(transparent)]
    Bound(#[from] BoundError),
    /// The search for a first tour failed.
    #[error(transparent)]
    Solve(#[from] SolveError),
    /// The fixed edges cannot all be in one tour, come with a path, or their transformation
    /// could overflow; or a tour without one of them was refused.
    #[error(transparent)]
    FixedEdges(#[from] FixedEdgesError),
    /// A tour length overflowed.
    #[error(transparent)]
    Overflow(#[from] Overflow),
    /// A tour was malformed (a bug if it happens).
    #[error(transparent)]
    Tour(#[from] TourError),
}

/// An optimal tour with its proof, or the best tour and bound within the limits. See the module
/// documentation for which method runs when [`ProveOptions::method`] is `None`; a method asked
/// for that cannot run (the dynamic programme beyond [`DP_LIMIT`] nodes or its memory limit,
/// branch and bound on asymmetric costs) is an error.
///
/// ```
/// use wend::{prove_optimal, CoordCost, Metric, ProveOptions, StopHandle};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// let certificate = prove_optimal(&square, &ProveOptions::default(), &StopHandle::new()).unwrap();
/// assert_eq!(certificate.length, 40);
/// assert!(certificate.proven_optimal);
/// ```
pub fn prove_optimal<C: Cost + ?Sized>(
    cost: &C,
    opts: &ProveOptions,
    stop: &StopHandle,
) -> Result<Certificate, ProveError> {
    prove_optimal_dyn(cost.as_dyn_cost(), opts, stop)
}

/// [`prove_optimal`], compiled here once, on any cost.
fn prove_optimal_dyn(
    cost: &dyn Cost,
    opts: &ProveOptions,
    stop: &StopHandle,
) -> Result<Certificate, ProveError> {
    if !opts.fixed_edges.is_empty() {
        return prove_fixed(cost, opts, stop);
    }
    prove_closed_or_path(cost, opts, stop)
}

/// [`prove_optimal`] without fixed edges.
fn prove_closed_or_path<C: Cost + ?Sized>(
    cost: &C,
    opts: &ProveOptions,
    stop: &StopHandle,
) -> Result<Certificate, ProveError> {
    let began = Instant::now();
    let n = cost.len();
    let symmetric = cost.is_symmetric();
    let deadline = opts.time_limit.and_then(|l| began.checked_add(l));
    let remaining = || deadline.map(|d| d.saturating_duration_since(Instant::now()));
    if opts.ends.is_path() {
        let branch_asked = matches!(
            opts.method,
            Some(ExactMethod::BranchAndBound | ExactMethod::BranchAndCut)
        );
        if branch_asked || n + 1 > DP_LIMIT {
            return Err(ProveError::PathUnsupported {
                n,
                limit: DP_LIMIT - 1,
                branch_asked,
            });
        }
    }
    let method = opts
        .method
        .unwrap_or(if n <= DP_DIRECT_LIMIT || (!symmetric && n <= DP_LIMIT) {
            ExactMethod::DynamicProgramme
        } else if opts.prover.is_some() {
            ExactMethod::BranchAndCut
        } else {
            ExactMethod::BranchAndBound
        });
    if method == ExactMethod::BranchAndCut && opts.prover.is_none() {
        return Err(ProveError::NoProver);
    }
    if !symmetric && method == ExactMethod::BranchAndBound {
        return Err(if opts.method.is_some() {
            ProveError::Bound(BoundError::Asymmetric)
        } else {
            ProveError::AsymmetricTooLarge { n, limit: DP_LIMIT }
        });
    }
    if method == ExactMethod::DynamicProgramme {
        let mut should_stop = || stop.is_stopped() || deadline.is_some_and(|d| Instant::now() >= d);
        let mut run = || optimal_path(cost, opts.ends, opts.dp_memory_bytes, &mut should_stop);
        let dp = match opts.threads {
            Some(t) => control::within_threads(t, run),
            None => run(),
        };
        return match dp {
            Ok(t) => Ok(Certificate {
                tour: Tour::new(t.order, n)?,
                length: t.length,
                lower_bound: Some(t.length),
                proven_optimal: true,
                method: ExactMethod::DynamicProgramme,
                subproblems: 0,
                first_tour_length: None,
                seconds: began.elapsed().as_secs_f64(),
            }),
            Err(DpError::Stopped) => {
                // Out of time: the best heuristic tour there is time for, without a bound.
                let mut s = Solver::new(cost)
                    .seed(opts.seed)
                    .ends(opts.ends)
                    .time_limit(Duration::from_millis(200));
                if let Some(t) = opts.threads {
                    s = s.threads(t);
                }
                let sol = s.solve()?;
                let mut tour = sol.tour;
                if !opts.ends.is_path() {
                    tour.rotate_to(opts.ends.start().unwrap_or(0));
                }
                Ok(Certificate {
                    tour,
                    length: sol.length,
                    lower_bound: None,
                    proven_optimal: false,
                    method: ExactMethod::DynamicProgramme,
                    subproblems: 0,
                    first_tour_length: None,
                    seconds: began.elapsed().as_secs_f64(),
                })
            }
            Err(e) => Err(e.into()),
        };
    }
    // A first tour: the better it is, the less the tree has to search (a tour one unit too
    // long can cost the tree more than the search). One run of 25 n kicks, within a tenth of
    // the time limit.
    let mut s = Solver::new(cost)
        .seed(opts.seed)
        .method(Method::Lk)
        .runs(1)
        .kicks(25 * n as u64)
        .stop_handle(stop.clone());
    if let Some(t) = opts.threads {
        s = s.threads(t);
    }
    if let Some(r) = remaining() {
        s = s.time_limit(r / 10);
    }
    let first = s.solve()?;
    if let (ExactMethod::BranchAndCut, Some(prover)) = (method, &opts.prover) {
        let dynamic: &dyn Cost = &cost;
        let answer = prover
            .prove(dynamic, first.tour.order(), remaining(), stop)
            .map_err(ProveError::Prover)?;
        let length = closed_length(cost, &answer.tour)?;
        let mut tour = Tour::new(answer.tour, n)?;
        tour.rotate_to(0);
        return Ok(Certificate {
            tour,
            length,
            lower_bound: Some(answer.lower_bound.min(length)),
            proven_optimal: answer.proven_optimal && answer.lower_bound >= length,
            method: ExactMethod::BranchAndCut,
            subproblems: answer.nodes,
            first_tour_length: Some(first.length),
            seconds: began.elapsed().as_secs_f64(),
        });
    }
    let branch = BranchOptions {
        time_limit: remaining(),
        node_limit: opts.node_limit,
    };
    let proof = branch_and_bound(cost, first.tour.order().to_vec(), &branch, stop)?;
    Ok(Certificate {
        tour: Tour::new(proof.tour, n)?,
        length: proof.length,
        lower_bound: Some(proof.lower_bound),
        proven_optimal: proof.proven_optimal,
        method: ExactMethod::BranchAndBound,
        subproblems: proof.nodes,
        first_tour_length: Some(first.length),
        seconds: began.elapsed().as_secs_f64(),
    })
}

/// [`prove_optimal`] with fixed edges: the proof on their transformed costs (see
/// `crate::transform::fixed`), its tour read back and checked, its lengths and bound moved back
/// to the caller's costs.
fn prove_fixed<C: Cost + ?Sized>(
    cost: &C,
    opts: &ProveOptions,
    stop: &StopHandle,
) -> Result<Certificate, ProveError> {
    if opts.ends.is_path() {
        let ends = opts.ends.name();
        return Err(FixedEdgesError::Path { ends }.into());
    }
    let fixed = FixedCost::new(cost, &opts.fixed_edges)?;
    let plain = ProveOptions {
        fixed_edges: Vec::new(),
        ..opts.clone()
    };
    let c = prove_closed_or_path(&fixed, &plain, stop)?;
    let order = fixed.tour_back(c.tour.order().to_vec())?;
    let length = closed_length(cost, &order)?;
    let mut tour = Tour::new(order, cost.len())?;
    tour.rotate_to(opts.ends.start().unwrap_or(0));
    Ok(Certificate {
        tour,
        length,
        lower_bound: c
            .lower_bound
            .map(|b| b.saturating_add(fixed.offset()).min(length)),
        first_tour_length: c.first_tour_length.and_then(|l| fixed.original_length(l)),
        ..c
    })
}

/// Why [`lower_bound`] gave no bound.
#[derive(Debug, thiserror::Error)]
pub enum LowerBoundError {
    /// The Held–Karp ascent refused (overflowing costs, memory) or was stopped first.
    #[error(transparent)]
    HeldKarp(#[from] BoundError),
    /// The assignment bound refused (too many nodes, overflowing costs, memory).
    #[error(transparent)]
    Assignment(#[from] crate::bounds::AssignmentError),
    /// The ends are out of range, or their penalty could overflow.
    #[error(transparent)]
    Ends(#[from] crate::transform::EndsError),
    /// The fixed edges cannot all be in one tour, come with a path, or their transformation
    /// could overflow.
    #[error(transparent)]
    FixedEdges(#[from] FixedEdgesError),
}

/// A lower bound on every tour of `cost` with the given `ends` (a closed tour or a path), for
/// a tour or path of `length` already found (which caps it): the Held–Karp bound for symmetric
/// costs, within `time_limit` and until `stop`, the assignment bound for asymmetric ones. For
/// a path, the bound of the closed tours through the dummy node that fixes its ends, less what
/// such a tour pays at that node on top of its path: every path with those ends is one of
/// these tours.
///
/// ```
/// use std::time::Duration;
/// use wend::{lower_bound, CoordCost, Ends, Metric, StopHandle};
///
/// let square = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]).unwrap();
/// let bound = lower_bound(&square, Ends::Closed, 40, Duration::from_secs(1), &StopHandle::new())
///     .unwrap();
/// assert!(bound <= 40); // never above a real tour's length
/// assert!(bound >= 30);
/// ```
pub fn lower_bound<C: Cost + ?Sized>(
    cost: &C,
    ends: Ends,
    length: i64,
    time_limit: Duration,
    stop: &StopHandle,
) -> Result<i64, LowerBoundError> {
    lower_bound_dyn(cost.as_dyn_cost(), ends, length, time_limit, stop)
}

/// [`lower_bound`], compiled here once, on any cost.
fn lower_bound_dyn(
    cost: &dyn Cost,
    ends: Ends,
    length: i64,
    time_limit: Duration,
    stop: &StopHandle,
) -> Result<i64, LowerBoundError> {
    fn closed<D: Cost + ?Sized>(
        cost: &D,
        opts: &AscentOptions,
        stop: &StopHandle,
    ) -> Result<i64, LowerBoundError> {
        Ok(if cost.is_symmetric() {
            held_karp_bound(cost, opts, stop)?.lower_bound
        } else {
            crate::bounds::assignment_bound(cost)?.lower_bound
        })
    }
    let opts = AscentOptions {
        time_limit: Some(time_limit),
        max_iterations: None,
        upper_bound: Some(length),
    };
    let bound = if ends.is_path() {
        let ended = crate::transform::EndedCost::new(cost, ends)?;
        let opts = AscentOptions {
            upper_bound: ended.tour_length_of(length),
            ..opts
        };
        closed(&ended, &opts, stop)?.saturating_sub(ended.offset())
    } else {
        closed(cost, &opts, stop)?
    };
    Ok(bound.min(length))
}

/// [`lower_bound`] over the tours that use every edge of `fixed_edges` (closed tours only;
/// without fixed edges, [`lower_bound`] itself): the bound of their transformed costs plus what
/// those tours pay back there (see `crate::transform::fixed`).
pub(crate) fn lower_bound_fixed<C: Cost + ?Sized>(
    cost: &C,
    fixed_edges: &[(usize, usize)],
    ends: Ends,
    length: i64,
    time_limit: Duration,
    stop: &StopHandle,
) -> Result<i64, LowerBoundError> {
    if fixed_edges.is_empty() {
        return lower_bound(cost, ends, length, time_limit, stop);
    }
    if ends.is_path() {
        let ends = ends.name();
        return Err(FixedEdgesError::Path { ends }.into());
    }
    let fixed = FixedCost::new(cost, fixed_edges)?;
    let inner = length.saturating_sub(fixed.offset());
    let bound = lower_bound(&fixed, ends, inner, time_limit, stop)?;
    Ok(bound.saturating_add(fixed.offset()).min(length))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cost::MatrixCost;
    use crate::exact::dynamic_programme;
    use crate::exact::enumerate;

    #[allow(clippy::needless_range_loop)]
    fn random_matrix(n: usize, seed: u64, symmetric: bool) -> Vec<Vec<i64>> {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
        let mut m = vec![vec![0i64; n]; n];
        for i in 0..n {
            for j in 0..n {
                if i != j && (!symmetric || j > i) {
                    m[i][j] = rng.gen_range(1..1000);
                    if symmetric {
                        m[j][i] = m[i][j];
                    }
                }
            }
        }
        m
    }

    // Against enumeration of every tour (n <= 9), both kinds of costs.
    #[test]
    fn matches_enumeration_on_small_instances() {
        for seed in 0..20 {
            for symmetric in [true, false] {
                let n = 4 + (seed as usize % 6);
                let c = MatrixCost::from_rows(&random_matrix(n, seed, symmetric)).unwrap();
                let best = enumerate(&c).unwrap();
                let expected = crate::tour::closed_length(&c, &best).unwrap();
                let cert = prove_optimal(&c, &ProveOptions::default(), &StopHandle::new()).unwrap();
                assert!(cert.proven_optimal);
                assert_eq!(cert.length, expected, "seed {seed}, symmetric {symmetric}");
                assert_eq!(cert.tour.length(&c).unwrap(), expected);
                assert_eq!(cert.lower_bound, Some(expected));
            }
        }
    }

    #[test]
    fn large_asymmetric_costs_are_refused() {
        let c = MatrixCost::from_rows(&random_matrix(DP_LIMIT + 1, 1, false)).unwrap();
        let e = prove_optimal(&c, &ProveOptions::default(), &StopHandle::new()).unwrap_err();
        assert!(
            matches!(e, ProveError::AsymmetricTooLarge { n: 25, .. }),
            "{e}"
        );
    }

    // Above the dynamic programme's direct range the branch and bound answers and its proof
    // agrees with the dynamic programme run on the same costs.
    #[test]
    fn branch_and_bound_agrees_with_the_dynamic_programme() {
        for seed in 0..3 {
            let c = MatrixCost::from_rows(&random_matrix(20, seed, true)).unwrap();
            let cert = prove_optimal(&c, &ProveOptions::default(), &StopHandle::new()).unwrap();
            assert_eq!(cert.method, ExactMethod::BranchAndBound);
            let dp = dynamic_programme(&c, DEFAULT_DP_MEMORY, &mut || false).unwrap();
            assert!(cert.proven_optimal);
            assert_eq!(cert.length, dp.length);
        }
    }

    // A zero time limit on a table that takes a while still returns a valid tour, unproven.
    #[test]
    fn a_stopped_dynamic_programme_returns_an_unproven_tour() {
        let c = MatrixCost::from_rows(&random_matrix(22, 5, false)).unwrap();
        let opts = ProveOptions {
            time_limit: Some(Duration::ZERO),
            ..Default::default()
        };
        let cert = prove_optimal(&c, &opts, &StopHandle::new()).unwrap();
        assert!(!cert.proven_optimal);
        assert_eq!(cert.lower_bound, None);
        assert_eq!(cert.tour.length(&c).unwrap(), cert.length);
    }
}
