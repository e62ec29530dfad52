//! A linear programme held by the LP solver and changed between solves.
//!
//! The solver keeps its basis across changes, so a re-solve after added rows (cuts), added
//! columns (priced-in edges) or changed column bounds (branching) starts from the last optimum
//! (the dual simplex after rows and bounds, the primal after columns). This module is the only
//! place that talks to the solver's C interface.

use highs_sys::{
    HighsInt, Highs_addCols, Highs_addRows, Highs_changeColBounds, Highs_create,
    Highs_deleteRowsBySet, Highs_destroy, Highs_getModelStatus, Highs_getNumCol, Highs_getNumRow,
    Highs_getObjectiveValue, Highs_getSolution, Highs_run, Highs_setBoolOptionValue,
    Highs_setDoubleOptionValue, Highs_setIntOptionValue, Highs_setStringOptionValue,
    Highs_zeroAllClocks, MODEL_STATUS_INFEASIBLE, MODEL_STATUS_OPTIMAL,
    MODEL_STATUS_REACHED_ITERATION_LIMIT, STATUS_ERROR,
};
use std::ffi::{c_void, CString};
use std::ptr::NonNull;

/// What went wrong in the LP solver.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum LpError {
    /// The solver could not be created.
    #[error("the LP solver could not be started")]
    Create,
    /// A call was refused (a bug if it happens: the arguments are checked first).
    #[error("the LP solver refused {call}")]
    Refused {
        /// The refused call.
        call: &'static str,
    },
    /// The solver ended without an optimum or a proof of infeasibility.
    #[error("the LP solver ended with status {status} (neither optimal nor infeasible)")]
    Unsolved {
        /// The solver's model status code.
        status: i64,
    },
    /// A problem too large for the solver's index type.
    #[error("the linear programme is too large for the LP solver ({what})")]
    TooLarge {
        /// What overflowed.
        what: &'static str,
    },
}

/// How a solve ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LpStatus {
    /// An optimum was found.
    Optimal,
    /// No point satisfies the rows and bounds.
    Infeasible,
}

/// Values of the last solve: primal values of the columns, duals of the rows (one per row, in
/// row order) and reduced costs of the columns, with the convention
/// `reduced_cost = cost - Aᵀ row_dual`.
#[derive(Clone, Debug, Default)]
pub struct LpValues {
    /// Column values.
    pub x: Vec<f64>,
    /// Row activities `A x`.
    pub row_value: Vec<f64>,
    /// Row duals.
    pub row_dual: Vec<f64>,
    /// Column reduced costs.
    pub reduced_cost: Vec<f64>,
}

/// A sparse row or column: (index, coefficient) pairs.
pub type Entries = [(usize, f64)];

/// A minimisation LP: `min cᵀx` subject to `lower ≤ A x ≤ upper` and bounds on `x`.
pub struct Lp {
    highs: NonNull<c_void>,
}

// SAFETY: the solver instance is owned by this value alone and used from one thread at a time
// (every method takes `&mut self` or reads through `&self` without shared state).
unsafe impl Send for Lp {}

fn index(i: usize, what: &'static str) -> Result<HighsInt, LpError> {
    HighsInt::try_from(i).map_err(|_| LpError::TooLarge { what })
}

fn checked(status: HighsInt, call: &'static str) -> Result<(), LpError> {
    if status == STATUS_ERROR {
        Err(LpError::Refused { call })
    } else {
        Ok(())
    }
}

/// A sparse matrix in compressed form, as the solver takes it: where each row (or column)
/// starts, then the indices and values of its entries.
type Compressed = (Vec<HighsInt>, Vec<HighsInt>, Vec<f64>);

/// Compressed sparse form of `lists`, every index checked below `bound`.
fn compressed(lists: &[&Entries], bound: usize, what: &'static str) -> Result<Compressed, LpError> {
    let mut starts = Vec::with_capacity(lists.len());
    let mut idx = Vec::new();
    let mut val = Vec::new();
    for list in lists {
        starts.push(index(idx.len(), what)?);
        for &(i, v) in list.iter() {
            if i >= bound || !v.is_finite() {
                return Err(LpError::Refused { call: what });
            }
            idx.push(index(i, what)?);
            val.push(v);
        }
    }
    Ok((starts, idx, val))
}

impl Lp {
    /// An empty programme, quiet, solved by the simplex method without presolve (so that each
    /// re-solve starts from the last basis).
    pub fn new() -> Result<Lp, LpError> {
        // SAFETY: Highs_create has no preconditions; a null result is handled.
        let raw = unsafe { Highs_create() };
        let highs = NonNull::new(raw).ok_or(LpError::Create)?;
        let mut lp = Lp { highs };
        lp.set_bool("output_flag", false)?;
        lp.set_string("presolve", "off")?;
        lp.set_string("solver", "simplex")?;
        lp.set_double("primal_feasibility_tolerance", 1e-9)?;
        lp.set_double("dual_feasibility_tolerance", 1e-9)?;
        Ok(lp)
    }

    fn set_bool(&mut self, name: &str, value: bool) -> Result<(), LpError> {
        let name = CString::new(name).map_err(|_| LpError::Refused { call: "option" })?;
        // SAFETY: the instance is live and the name a valid C string for the call's duration.
        let s = unsafe {
            Highs_setBoolOptionValue(self.highs.as_ptr(), name.as_ptr(), HighsInt::from(value))
        };
        checked(s, "a boolean option")
    }

    fn set_string(&mut self, name: &str, value: &str) -> Result<(), LpError> {
        let name = CString::new(name).map_err(|_| LpError::Refused { call: "option" })?;
        let value = CString::new(value).map_err(|_| LpError::Refused { call: "option" })?;
        // SAFETY: as in `set_bool`; both strings outlive the call.
        let s = unsafe {
            Highs_setStringOptionValue(self.highs.as_ptr(), name.as_ptr(), value.as_ptr())
        };
        checked(s, "a string option")
    }

    fn set_double(&mut self, name: &str, value: f64) -> Result<(), LpError> {
        let name = CString::new(name).map_err(|_| LpError::Refused { call: "option" })?;
        // SAFETY: as in `set_bool`.
        let s = unsafe { Highs_setDoubleOptionValue(self.highs.as_ptr(), name.as_ptr(), value) };
        checked(s, "a number option")
    }

    fn set_int(&mut self, name: &str, value: i32) -> Result<(), LpError> {
        let name = CString::new(name).map_err(|_| LpError::Refused { call: "option" })?;
        // SAFETY: as in `set_bool`.
        let s = unsafe {
            Highs_setIntOptionValue(self.highs.as_ptr(), name.as_ptr(), HighsInt::from(value))
        };
        checked(s, "an integer option")
    }

    /// A solve of at most `iterations` simplex iterations from the last basis, for an estimate
    /// (strong branching): the objective where it stopped, or `None` when the programme was
    /// found infeasible. The limit is lifted again before returning.
    pub fn probe(&mut self, iterations: u32) -> Result<Option<f64>, LpError> {
        self.set_int(
            "simplex_iteration_limit",
            i32::try_from(iterations).unwrap_or(i32::MAX),
        )?;
        // The solver's clock runs on across solves and its time limit is checked against it:
        // zeroed first, the limit is of this solve.
        // SAFETY: the instance is live.
        unsafe { Highs_zeroAllClocks(self.highs.as_ptr()) };
        // SAFETY: as above.
        let s = unsafe { Highs_run(self.highs.as_ptr()) };
        // SAFETY: as above.
        let status = unsafe { Highs_getModelStatus(self.highs.as_ptr()) };
        self.set_int("simplex_iteration_limit", i32::MAX)?;
        if status == MODEL_STATUS_INFEASIBLE {
            Ok(None)
        } else if status == MODEL_STATUS_OPTIMAL || status == MODEL_STATUS_REACHED_ITERATION_LIMIT {
            Ok(Some(self.objective()))
        } else if s == STATUS_ERROR {
            Err(LpError::Refused { call: "solve" })
        } else {
            Err(LpError::Unsolved {
                status: i64::from(status),
            })
        }
    }

    /// A time limit for each solve, seconds.
    pub fn set_time_limit(&mut self, seconds: f64) -> Result<(), LpError> {
        self.set_double("time_limit", seconds.max(0.0))
    }

    /// Number of rows.
    pub fn rows(&self) -> usize {
        // SAFETY: the instance is live.
        usize::try_from(unsafe { Highs_getNumRow(self.highs.as_ptr()) }).unwrap_or(0)
    }

    /// Number of columns.
    pub fn cols(&self) -> usize {
        // SAFETY: the instance is live.
        usize::try_from(unsafe { Highs_getNumCol(self.highs.as_ptr()) }).unwrap_or(0)
    }

    /// Adds columns: cost, bounds and entries (row, coefficient) in existing rows each.
    pub fn add_cols(
        &mut self,
        cost: &[f64],
        lower: &[f64],
        upper: &[f64],
        entries: &[&Entries],
    ) -> Result<(), LpError> {
        let k = cost.len();
        if lower.len() != k || upper.len() != k || entries.len() != k {
            return Err(LpError::Refused {
                call: "add columns",
            });
        }
        if k == 0 {
            return Ok(());
        }
        let (starts, idx, val) = compressed(entries, self.rows(), "add columns")?;
        // SAFETY: every array has the length the call is told (k columns, idx.len() entries),
        // and the indices were checked against the current row count.
        let s = unsafe {
            Highs_addCols(
                self.highs.as_ptr(),
                index(k, "columns")?,
                cost.as_ptr(),
                lower.as_ptr(),
                upper.as_ptr(),
                index(idx.len(), "entries")?,
                starts.as_ptr(),
                idx.as_ptr(),
                val.as_ptr(),
            )
        };
        checked(s, "add columns")
    }

    /// Adds rows: bounds and entries (column, coefficient) each.
    pub fn add_rows(
        &mut self,
        lower: &[f64],
        upper: &[f64],
        entries: &[&Entries],
    ) -> Result<(), LpError> {
        let k = lower.len();
        if upper.len() != k || entries.len() != k {
            return Err(LpError::Refused { call: "add rows" });
        }
        if k == 0 {
            return Ok(());
        }
        let (starts, idx, val) = compressed(entries, self.cols(), "add rows")?;
        // SAFETY: as in `add_cols`, with the indices checked against the column count.
        let s = unsafe {
            Highs_addRows(
                self.highs.as_ptr(),
                index(k, "rows")?,
                lower.as_ptr(),
                upper.as_ptr(),
                index(idx.len(), "entries")?,
                starts.as_ptr(),
                idx.as_ptr(),
                val.as_ptr(),
            )
        };
        checked(s, "add rows")
    }

    /// Deletes the rows `set` (indices, any order); the rows after them move up.
    pub fn delete_rows(&mut self, set: &[usize]) -> Result<(), LpError> {
        if set.is_empty() {
            return Ok(());
        }
        let rows = self.rows();
        let mut v: Vec<HighsInt> = Vec::with_capacity(set.len());
        for &r in set {
            if r >= rows {
                return Err(LpError::Refused {
                    call: "delete rows",
                });
            }
            v.push(index(r, "rows")?);
        }
        v.sort_unstable();
        v.dedup();
        // SAFETY: the set holds valid, sorted, distinct row indices and its length is passed.
        let s = unsafe {
            Highs_deleteRowsBySet(self.highs.as_ptr(), index(v.len(), "rows")?, v.as_ptr())
        };
        checked(s, "delete rows")
    }

    /// Changes the bounds of column `col`.
    pub fn set_col_bounds(&mut self, col: usize, lower: f64, upper: f64) -> Result<(), LpError> {
        if col >= self.cols() {
            return Err(LpError::Refused {
                call: "column bounds",
            });
        }
        // SAFETY: the column index is valid.
        let s = unsafe {
            Highs_changeColBounds(self.highs.as_ptr(), index(col, "columns")?, lower, upper)
        };
        checked(s, "column bounds")
    }

    /// Solves from the last basis.
    pub fn solve(&mut self) -> Result<LpStatus, LpError> {
        // The solver's clock runs on across solves and its time limit is checked against it:
        // zeroed first, the limit is of this solve.
        // SAFETY: the instance is live.
        unsafe { Highs_zeroAllClocks(self.highs.as_ptr()) };
        // SAFETY: as above.
        let s = unsafe { Highs_run(self.highs.as_ptr()) };
        // SAFETY: as above.
        let status = unsafe { Highs_getModelStatus(self.highs.as_ptr()) };
        if status == MODEL_STATUS_OPTIMAL {
            Ok(LpStatus::Optimal)
        } else if status == MODEL_STATUS_INFEASIBLE {
            Ok(LpStatus::Infeasible)
        } else if s == STATUS_ERROR {
            Err(LpError::Refused { call: "solve" })
        } else {
            Err(LpError::Unsolved {
                status: i64::from(status),
            })
        }
    }

    /// Objective value of the last solve.
    pub fn objective(&self) -> f64 {
        // SAFETY: the instance is live.
        unsafe { Highs_getObjectiveValue(self.highs.as_ptr()) }
    }

    /// Values of the last solve.
    pub fn values(&self) -> LpValues {
        let (n, m) = (self.cols(), self.rows());
        let mut v = LpValues {
            x: vec![0.0; n],
            row_value: vec![0.0; m],
            row_dual: vec![0.0; m],
            reduced_cost: vec![0.0; n],
        };
        // SAFETY: each array has the length of the current column or row count, as the call
        // requires.
        unsafe {
            Highs_getSolution(
                self.highs.as_ptr(),
                v.x.as_mut_ptr(),
                v.reduced_cost.as_mut_ptr(),
                v.row_value.as_mut_ptr(),
                v.row_dual.as_mut_ptr(),
            );
        }
        v
    }
}

impl Drop for Lp {
    fn drop(&mut self) {
        // SAFETY: the instance was made by Highs_create and is destroyed once, here.
        unsafe { Highs_destroy(self.highs.as_ptr()) }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_small_programme_its_duals_and_a_cut() {
        // min x + y  s.t.  x + 2y >= 2,  3x + y >= 3,  0 <= x, y <= 10.
        // By hand (vertex of the two rows): x = 0.8, y = 0.6, value 1.4; duals solve
        // [1 3; 2 1] u = [1; 1]: u = (0.4, 0.2).
        let mut lp = Lp::new().unwrap();
        lp.add_cols(&[1.0, 1.0], &[0.0, 0.0], &[10.0, 10.0], &[&[], &[]])
            .unwrap();
        lp.add_rows(
            &[2.0, 3.0],
            &[f64::INFINITY, f64::INFINITY],
            &[&[(0, 1.0), (1, 2.0)], &[(0, 3.0), (1, 1.0)]],
        )
        .unwrap();
        assert_eq!(lp.solve().unwrap(), LpStatus::Optimal);
        assert!((lp.objective() - 1.4).abs() < 1e-9);
        let v = lp.values();
        assert!((v.x[0] - 0.8).abs() < 1e-9 && (v.x[1] - 0.6).abs() < 1e-9);
        assert!((v.row_dual[0] - 0.4).abs() < 1e-9, "{:?}", v.row_dual);
        assert!((v.row_dual[1] - 0.2).abs() < 1e-9, "{:?}", v.row_dual);
        // A cut x >= 1 moves the optimum to x = 1, y = 0.5 (by hand), value 1.5.
        lp.add_rows(&[1.0], &[f64::INFINITY], &[&[(0, 1.0)]])
            .unwrap();
        assert_eq!(lp.solve().unwrap(), LpStatus::Optimal);
        assert!((lp.objective() - 1.5).abs() < 1e-9);
        // Deleting it gives the first optimum back.
        lp.delete_rows(&[2]).unwrap();
        assert_eq!(lp.rows(), 2);
        lp.solve().unwrap();
        assert!((lp.objective() - 1.4).abs() < 1e-9);
        // A bound that cannot hold with the rows: infeasible.
        lp.set_col_bounds(0, 0.0, 0.0).unwrap();
        lp.set_col_bounds(1, 0.0, 0.5).unwrap();
        assert_eq!(lp.solve().unwrap(), LpStatus::Infeasible);
    }

    #[test]
    fn bad_indices_are_refused_not_passed_on() {
        let mut lp = Lp::new().unwrap();
        lp.add_cols(&[1.0], &[0.0], &[1.0], &[&[]]).unwrap();
        assert!(lp.add_rows(&[0.0], &[1.0], &[&[(3, 1.0)]]).is_err());
        assert!(lp.add_rows(&[0.0], &[1.0], &[&[(0, f64::NAN)]]).is_err());
        assert!(lp.delete_rows(&[0]).is_err());
        assert!(lp.set_col_bounds(1, 0.0, 1.0).is_err());
        assert!(lp.add_cols(&[1.0], &[0.0], &[1.0], &[&[(0, 1.0)]]).is_err());
    }
}
