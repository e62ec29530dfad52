//! Cost oracles: where the integer cost of going from one node to another comes from.
//!
//! Every method in this crate is generic over [`Cost`], a deliberately small trait: the number of
//! nodes, the cost of one directed step, and whether costs are symmetric. Coordinates under every
//! TSPLIB 95 distance function ([`CoordCost`]), dense matrices ([`MatrixCost`]) and a caller's
//! closure ([`FnCost`]) implement it. Nothing here precomputes a full matrix for coordinates, so a
//! million-node instance costs a few tens of megabytes.

use std::fmt;

/// Integer cost of travelling between nodes `0..len()`.
///
/// Costs are `i64` so that comparisons are exact and runs repeat bit for bit; adapters that start
/// from physical quantities scale them to integers and say which scale they used.
///
/// The heavy public functions (searches, bounds, proofs) are compiled once, in this crate, for
/// `dyn Cost`, and the search of [`crate::Solver::solve`] also for [`CoordCost`] and
/// [`MatrixCost`]: they hand any other cost over as `dyn Cost`, so a caller's crate does not
/// compile the solver again for each cost type it uses. The search then calls coordinates and
/// matrices directly, and other costs (closures, a caller's own type) through one indirect
/// call per cost.
pub trait Cost: Sync + AsDynCost {
    /// Number of nodes.
    fn len(&self) -> usize;

    /// Cost of the step from node `from` to node `to`. Both are below [`Cost::len`].
    fn cost(&self, from: usize, to: usize) -> i64;

    /// True when `cost(i, j) == cost(j, i)` for every pair.
    fn is_symmetric(&self) -> bool;

    /// True when there are no nodes.
    fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Points in the plane or in space whose Euclidean closeness approximates closeness in cost,
    /// used to build neighbour lists and space-filling curves in O(n log n). `None` when the costs
    /// have no geometry (matrices, closures).
    fn geometry(&self) -> Option<Geometry<'_>> {
        None
    }

    /// An upper bound on `|cost(i, j)|` over all pairs when one is cheaply known, so that callers
    /// can refuse instances whose tour sums could overflow before doing any work.
    fn max_cost_hint(&self) -> Option<i64> {
        None
    }

    /// Which of the cost types the solver is compiled for this is, when it is one.
    #[doc(hidden)]
    fn as_known(&self) -> KnownCost<'_> {
        KnownCost::Other
    }
}

/// Any cost as a trait object: what the public functions hand to the solver's one compiled
/// copy. Implemented for every sized [`Cost`]; nothing to implement by hand.
#[doc(hidden)]
pub trait AsDynCost {
    /// This cost as `dyn Cost` (a trait object's own, not one wrapped around it).
    fn as_dyn_cost(&self) -> &dyn Cost;
}

impl<T: Cost> AsDynCost for T {
    fn as_dyn_cost(&self) -> &dyn Cost {
        self
    }
}

/// The cost types the searches are compiled for, told apart at run time so that each runs its
/// own compiled search with direct calls.
#[doc(hidden)]
#[derive(Clone, Copy)]
pub enum KnownCost<'a> {
    /// Coordinates.
    Coord(&'a CoordCost),
    /// A dense matrix.
    Matrix(&'a MatrixCost),
    /// Any other cost.
    Other,
}

/// Points attached to a cost oracle; see [`Cost::geometry`].
#[derive(Clone, Copy, Debug)]
pub struct Geometry<'a> {
    /// One point per node. Unused trailing components are zero.
    pub points: &'a [[f64; 3]],
    /// 2 or 3.
    pub dims: usize,
}

/// References and boxes of a cost are costs: every method forwards to the cost inside.
macro_rules! forward_cost {
    ($($outer:ty),*) => {$(
        impl<T: Cost + ?Sized> Cost for $outer {
            fn len(&self) -> usize {
                (**self).len()
            }
            fn cost(&self, from: usize, to: usize) -> i64 {
                (**self).cost(from, to)
            }
            fn is_symmetric(&self) -> bool {
                (**self).is_symmetric()
            }
            fn geometry(&self) -> Option<Geometry<'_>> {
                (**self).geometry()
            }
            fn max_cost_hint(&self) -> Option<i64> {
                (**self).max_cost_hint()
            }
            fn as_known(&self) -> KnownCost<'_> {
                (**self).as_known()
            }
        }
    )*};
}
forward_cost!(&T, Box<T>);

/// Why a cost oracle could not be built.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CostError {
    /// A coordinate is NaN or infinite.
    #[error("node {node}: coordinate is not a finite number")]
    NonFinite {
        /// Zero-based node index.
        node: usize,
    },
    /// Coordinates so large that a distance could not be represented as an integer cost.
    #[error("node {node}: coordinate {value} is too large for integer distances")]
    TooLarge {
        /// Zero-based node index.
        node: usize,
        /// The offending coordinate.
        value: f64,
    },
    /// A matrix whose entry count does not match `n * n`.
    #[error("matrix has {got} entries, expected {n} x {n} = {expected}")]
    MatrixShape {
        /// Side of the matrix.
        n: usize,
        /// `n * n`.
        expected: usize,
        /// Entries given.
        got: usize,
    },
    /// GEO coordinates must be latitude/longitude in the DDD.MM format.
    #[error("node {node}: GEO coordinate {value} is outside latitude/longitude range")]
    GeoRange {
        /// Zero-based node index.
        node: usize,
        /// The offending coordinate.
        value: f64,
    },
}

/// The distance functions of TSPLIB 95 (Reinelt 1995, "TSPLIB 95", section 2), with its exact
/// rounding. `nint(x)` there means `(int)(x + 0.5)`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Metric {
    /// Euclidean distance in the plane, rounded to the nearest integer.
    Euc2d,
    /// Euclidean distance in space, rounded to the nearest integer.
    Euc3d,
    /// Euclidean distance in the plane, rounded up.
    Ceil2d,
    /// Pseudo-Euclidean distance of the att instances: `ceil`-like rounding of `sqrt(d^2 / 10)`.
    Att,
    /// Geographical distance on an idealised sphere of radius 6378.388 km; coordinates are
    /// latitude and longitude in DDD.MM (degrees, then minutes after the point).
    Geo,
    /// Manhattan distance in the plane, rounded to the nearest integer.
    Man2d,
    /// Manhattan distance in space, rounded to the nearest integer.
    Man3d,
    /// Maximum-coordinate distance in the plane, each difference rounded to the nearest integer.
    Max2d,
    /// Maximum-coordinate distance in space, each difference rounded to the nearest integer.
    Max3d,
}

impl Metric {
    /// The TSPLIB 95 keyword (`EDGE_WEIGHT_TYPE`) of this metric.
    pub fn keyword(self) -> &'static str {
        match self {
            Metric::Euc2d => "EUC_2D",
            Metric::Euc3d => "EUC_3D",
            Metric::Ceil2d => "CEIL_2D",
            Metric::Att => "ATT",
            Metric::Geo => "GEO",
            Metric::Man2d => "MAN_2D",
            Metric::Man3d => "MAN_3D",
            Metric::Max2d => "MAX_2D",
            Metric::Max3d => "MAX_3D",
        }
    }

    /// The metric named by a TSPLIB 95 `EDGE_WEIGHT_TYPE` keyword, if it is a coordinate metric.
    pub fn from_keyword(word: &str) -> Option<Metric> {
        Some(match word {
            "EUC_2D" => Metric::Euc2d,
            "EUC_3D" => Metric::Euc3d,
            "CEIL_2D" => Metric::Ceil2d,
            "ATT" => Metric::Att,
            "GEO" => Metric::Geo,
            "MAN_2D" => Metric::Man2d,
            "MAN_3D" => Metric::Man3d,
            "MAX_2D" => Metric::Max2d,
            "MAX_3D" => Metric::Max3d,
            _ => return None,
        })
    }

    /// Number of coordinates per node.
    pub fn dims(self) -> usize {
        match self {
            Metric::Euc3d | Metric::Man3d | Metric::Max3d => 3,
            _ => 2,
        }
    }
}

impl fmt::Display for Metric {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.keyword())
    }
}

/// TSPLIB's `nint`: round half up, `(int)(x + 0.5)`.
#[inline]
fn nint(x: f64) -> i64 {
    (x + 0.5) as i64
}

/// Largest coordinate magnitude accepted: distances stay far below 2^53, where `f64` still holds
/// integers exactly, and a tour of a million such steps stays within `i64`.
const MAX_COORD: f64 = 1.0e12;

/// Idealised earth radius of TSPLIB's GEO metric, in km.
const GEO_RRR: f64 = 6378.388;
/// TSPLIB's GEO metric uses this truncated value of pi, not `std::f64::consts::PI`.
#[allow(clippy::approx_constant)]
const GEO_PI: f64 = 3.141592;

/// Costs from coordinates under a TSPLIB metric, computed on demand.
#[derive(Clone, Debug)]
pub struct CoordCost {
    metric: Metric,
    points: Vec<[f64; 3]>,
    /// GEO only: latitude and longitude in radians, as TSPLIB converts them.
    geo: Vec<[f64; 2]>,
    /// GEO only: points on a sphere, so that Euclidean closeness matches great-circle closeness.
    geo_space: Vec<[f64; 3]>,
    max_cost: i64,
}

impl CoordCost {
    /// Costs between `points` under `metric`. For 2-D metrics the third component is ignored.
    ///
    /// ```
    /// use wend::{Cost, CoordCost, Metric};
    ///
    /// let cube = CoordCost::new(Metric::Euc3d, vec![[0.0, 0.0, 0.0], [3.0, 4.0, 12.0]]).unwrap();
    /// assert_eq!(cube.cost(0, 1), 13);
    /// assert!(CoordCost::new(Metric::Euc3d, vec![[f64::NAN, 0.0, 0.0]]).is_err());
    /// ```
    pub fn new(metric: Metric, points: Vec<[f64; 3]>) -> Result<Self, CostError> {
        let dims = metric.dims();
        let mut lo = [f64::INFINITY; 3];
        let mut hi = [f64::NEG_INFINITY; 3];
        for (node, p) in points.iter().enumerate() {
            for (d, &value) in p.iter().enumerate().take(dims) {
                if !value.is_finite() {
                    return Err(CostError::NonFinite { node });
                }
                if value.abs() > MAX_COORD {
                    return Err(CostError::TooLarge { node, value });
                }
                lo[d] = lo[d].min(value);
                hi[d] = hi[d].max(value);
            }
        }
        let mut points = points;
        if dims == 2 {
            for p in &mut points {
                p[2] = 0.0;
            }
        }
        let (geo, geo_space) = if metric == Metric::Geo {
            let mut geo = Vec::with_capacity(points.len());
            let mut space = Vec::with_capacity(points.len());
            for (node, p) in points.iter().enumerate() {
                if p[0].abs() > 1000.0 || p[1].abs() > 1000.0 {
                    return Err(CostError::GeoRange {
                        node,
                        value: if p[0].abs() > 1000.0 { p[0] } else { p[1] },
                    });
                }
                let lat = geo_radians(p[0]);
                let lon = geo_radians(p[1]);
                geo.push([lat, lon]);
                space.push([
                    GEO_RRR * lat.cos() * lon.cos(),
                    GEO_RRR * lat.cos() * lon.sin(),
                    GEO_RRR * lat.sin(),
                ]);
            }
            (geo, space)
        } else {
            (Vec::new(), Vec::new())
        };
        let max_cost = if points.is_empty() {
            0
        } else if metric == Metric::Geo {
            // Half the circumference of the sphere, plus the metric's `+ 1.0`.
            (GEO_RRR * std::f64::consts::PI) as i64 + 2
        } else {
            let span: f64 = (0..dims).map(|d| hi[d] - lo[d]).sum();
            span.ceil() as i64 + 2
        };
        Ok(CoordCost {
            metric,
            points,
            geo,
            geo_space,
            max_cost,
        })
    }

    /// Costs between points in the plane.
    ///
    /// ```
    /// use wend::{Cost, CoordCost, Metric};
    ///
    /// let pair = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [3.0, 4.0]]).unwrap();
    /// assert_eq!(pair.cost(0, 1), 5);
    /// ```
    pub fn plane(metric: Metric, points: &[[f64; 2]]) -> Result<Self, CostError> {
        Self::new(metric, points.iter().map(|p| [p[0], p[1], 0.0]).collect())
    }

    /// The metric.
    pub fn metric(&self) -> Metric {
        self.metric
    }

    /// The coordinates as given (third component zero for 2-D metrics).
    pub fn points(&self) -> &[[f64; 3]] {
        &self.points
    }
}

/// TSPLIB's GEO conversion: DDD.MM to radians, with the integer part truncated towards zero.
fn geo_radians(x: f64) -> f64 {
    let deg = x.trunc();
    let min = x - deg;
    GEO_PI * (deg + 5.0 * min / 3.0) / 180.0
}

impl Cost for CoordCost {
    fn len(&self) -> usize {
        self.points.len()
    }

    #[inline]
    fn cost(&self, from: usize, to: usize) -> i64 {
        let a = &self.points[from];
        let b = &self.points[to];
        let dx = a[0] - b[0];
        let dy = a[1] - b[1];
        match self.metric {
            Metric::Euc2d => nint((dx * dx + dy * dy).sqrt()),
            Metric::Ceil2d => {
                // `ceil` without a library call: exact for the non-negative distances here.
                let d = (dx * dx + dy * dy).sqrt();
                let t = d as i64;
                if (t as f64) < d { t + 1 } else { t }
            }
            Metric::Euc3d => {
                let dz = a[2] - b[2];
                nint((dx * dx + dy * dy + dz * dz).sqrt())
            }
            Metric::Att => {
                let r = ((dx * dx + dy * dy) / 10.0).sqrt();
                let t = nint(r);
                if (t as f64) < r { t + 1 } else { t }
            }
            Metric::Geo => {
                if from == to {
                    return 0;
                }
                let [lat_a, lon_a] = self.geo[from];
                let [lat_b, lon_b] = self.geo[to];
                let q1 = (lon_a - lon_b).cos();
                let q2 = (lat_a - lat_b).cos();
                let q3 = (lat_a + lat_b).cos();
                let arg = (0.5 * ((1.0 + q1) * q2 - (1.0 - q1) * q3)).clamp(-1.0, 1.0);
                (GEO_RRR * arg.acos() + 1.0) as i64
            }
            Metric::Man2d => nint(dx.abs() + dy.abs()),
            Metric::Man3d => nint(dx.abs() + dy.abs() + (a[2] - b[2]).abs()),
            Metric::Max2d => nint(dx.abs()).max(nint(dy.abs())),
            Metric::Max3d => nint(dx.abs())
                .max(nint(dy.abs()))
                .max(nint((a[2] - b[2]).abs())),
        }
    }

    fn is_symmetric(&self) -> bool {
        true
    }

    fn geometry(&self) -> Option<Geometry<'_>> {
        if self.metric == Metric::Geo {
            Some(Geometry {
                points: &self.geo_space,
                dims: 3,
            })
        } else {
            Some(Geometry {
                points: &self.points,
                dims: self.metric.dims(),
            })
        }
    }

    fn max_cost_hint(&self) -> Option<i64> {
        Some(self.max_cost)
    }
    fn as_known(&self) -> KnownCost<'_> {
        KnownCost::Coord(self)
    }
}

/// A dense `n x n` cost matrix, symmetric or not, stored row-major.
#[derive(Clone, Debug)]
pub struct MatrixCost {
    n: usize,
    weights: Vec<i64>,
    symmetric: bool,
    max_abs: i64,
}

impl MatrixCost {
    /// A matrix from its rows, row-major (`weights[i * n + j]` is the cost from `i` to `j`).
    /// Symmetry is detected, not assumed.
    ///
    /// ```
    /// use wend::{Cost, MatrixCost};
    ///
    /// let m = MatrixCost::from_row_major(2, vec![0, 7, 3, 0]).unwrap();
    /// assert_eq!((m.cost(0, 1), m.cost(1, 0)), (7, 3));
    /// assert!(MatrixCost::from_row_major(2, vec![0, 7, 3]).is_err()); // not 2 x 2
    /// ```
    pub fn from_row_major(n: usize, weights: Vec<i64>) -> Result<Self, CostError> {
        let expected = n.checked_mul(n).ok_or(CostError::MatrixShape {
            n,
            expected: usize::MAX,
            got: weights.len(),
        })?;
        if weights.len() != expected {
            return Err(CostError::MatrixShape {
                n,
                expected,
                got: weights.len(),
            });
        }
        let symmetric =
            (0..n).all(|i| (i + 1..n).all(|j| weights[i * n + j] == weights[j * n + i]));
        let max_abs = weights
            .iter()
            .map(|w| w.checked_abs().unwrap_or(i64::MAX))
            .max()
            .unwrap_or(0);
        Ok(MatrixCost {
            n,
            weights,
            symmetric,
            max_abs,
        })
    }

    /// A matrix from nested rows; every row must have `rows.len()` entries.
    ///
    /// ```
    /// use wend::{Cost, MatrixCost};
    ///
    /// let m = MatrixCost::from_rows(&[vec![0, 7], vec![3, 0]]).unwrap();
    /// assert_eq!(m.cost(1, 0), 3);
    /// assert!(!m.is_symmetric());
    /// ```
    pub fn from_rows(rows: &[Vec<i64>]) -> Result<Self, CostError> {
        let n = rows.len();
        let mut weights = Vec::with_capacity(n * n);
        for row in rows {
            if row.len() != n {
                return Err(CostError::MatrixShape {
                    n,
                    expected: n * n,
                    got: rows.iter().map(Vec::len).sum(),
                });
            }
            weights.extend_from_slice(row);
        }
        Self::from_row_major(n, weights)
    }

    /// The row-major entries.
    pub fn weights(&self) -> &[i64] {
        &self.weights
    }
}

impl Cost for MatrixCost {
    fn len(&self) -> usize {
        self.n
    }
    #[inline]
    fn cost(&self, from: usize, to: usize) -> i64 {
        self.weights[from * self.n + to]
    }
    fn is_symmetric(&self) -> bool {
        self.symmetric
    }
    fn max_cost_hint(&self) -> Option<i64> {
        Some(self.max_abs)
    }
    fn as_known(&self) -> KnownCost<'_> {
        KnownCost::Matrix(self)
    }
}

/// Costs from a caller's closure `f(from, to)`.
///
/// The closure is called many times per move evaluated; keep it cheap (a table look-up or a short
/// formula). Symmetry is the caller's declaration: declaring symmetric costs that are not gives
/// tours whose reported length is still exact, but the search may miss directed improvements.
pub struct FnCost<F> {
    n: usize,
    symmetric: bool,
    f: F,
}

impl<F: Fn(usize, usize) -> i64 + Sync> FnCost<F> {
    /// `n` nodes with costs `f(from, to)`, declared symmetric or not.
    ///
    /// ```
    /// use wend::{Cost, FnCost};
    ///
    /// // Stations on a line, 5 apart.
    /// let line = FnCost::new(4, true, |i, j| 5 * (i as i64 - j as i64).abs());
    /// assert_eq!(line.cost(0, 3), 15);
    /// ```
    pub fn new(n: usize, symmetric: bool, f: F) -> Self {
        FnCost { n, symmetric, f }
    }
}

impl<F: Fn(usize, usize) -> i64 + Sync> Cost for FnCost<F> {
    fn len(&self) -> usize {
        self.n
    }
    #[inline]
    fn cost(&self, from: usize, to: usize) -> i64 {
        (self.f)(from, to)
    }
    fn is_symmetric(&self) -> bool {
        self.symmetric
    }
}

impl<F> fmt::Debug for FnCost<F> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("FnCost")
            .field("n", &self.n)
            .field("symmetric", &self.symmetric)
            .finish_non_exhaustive()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Distance definitions: TSPLIB 95 documentation (Reinelt), section 2.
    #[test]
    fn euc_2d_rounds_half_up() {
        let c = CoordCost::plane(Metric::Euc2d, &[[0.0, 0.0], [3.0, 4.0], [0.5, 0.0]]).unwrap();
        assert_eq!(c.cost(0, 1), 5);
        assert_eq!(c.cost(0, 2), 1); // nint(0.5) = 1
    }

    #[test]
    fn ceil_2d_rounds_up() {
        let c = CoordCost::plane(Metric::Ceil2d, &[[0.0, 0.0], [1.0, 1.0]]).unwrap();
        assert_eq!(c.cost(0, 1), 2); // ceil(1.414...)
    }

    #[test]
    fn att_rounds_up_when_nint_falls_short() {
        // sqrt((100^2 + 0) / 10) = 31.62..; nint = 32 >= r, so 32.
        // sqrt((10^2)/10) = 3.1622..; nint = 3 < r, so 4.
        let c = CoordCost::plane(Metric::Att, &[[0.0, 0.0], [100.0, 0.0], [10.0, 0.0]]).unwrap();
        assert_eq!(c.cost(0, 1), 32);
        assert_eq!(c.cost(0, 2), 4);
    }

    #[test]
    fn max_and_man() {
        let pts = [[0.0, 0.0], [3.4, 4.6]];
        let man = CoordCost::plane(Metric::Man2d, &pts).unwrap();
        let max = CoordCost::plane(Metric::Max2d, &pts).unwrap();
        assert_eq!(man.cost(0, 1), 8);
        assert_eq!(max.cost(0, 1), 5);
    }

    #[test]
    fn non_finite_is_refused() {
        let e = CoordCost::plane(Metric::Euc2d, &[[0.0, f64::NAN]]).unwrap_err();
        assert_eq!(e, CostError::NonFinite { node: 0 });
    }

    #[test]
    fn matrix_detects_symmetry() {
        let m = MatrixCost::from_rows(&[vec![0, 1], vec![1, 0]]).unwrap();
        assert!(m.is_symmetric());
        let a = MatrixCost::from_rows(&[vec![0, 1], vec![2, 0]]).unwrap();
        assert!(!a.is_symmetric());
        assert!(MatrixCost::from_row_major(3, vec![0; 8]).is_err());
    }
}
