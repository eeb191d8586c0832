//! Sparse direct solve of the real symmetric positive definite system: faer's supernodal
//! Cholesky with a fill-reducing ordering. The symbolic analysis is kept so that a matrix with
//! the same pattern (a Newton step, another frequency) is refactorised numerically only, and
//! any number of right-hand sides are solved from one factorisation.

use faer::linalg::solvers::Solve;
use faer::sparse::linalg::solvers::{Llt, SymbolicLlt};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Mat, Side};

use crate::assembly::Pattern;
use crate::SolveError;

/// Largest relative residual ‖Ax − b‖/‖b‖ accepted after a direct solve.
pub const RESIDUAL_TOLERANCE: f64 = 1e-8;

/// Symbolic Cholesky analysis of a pattern, reusable across numeric factorisations.
pub struct CholeskyAnalysis {
    symbolic: SymbolicLlt<usize>,
}

impl CholeskyAnalysis {
    pub fn new(p: &Pattern) -> Result<Self, SolveError> {
        let sym = SymbolicSparseColMatRef::new_checked(p.n, p.n, &p.col_ptr, None, &p.row_idx);
        let symbolic = SymbolicLlt::try_new(sym, Side::Lower)
            .map_err(|e| SolveError::Factorisation(format!("symbolic analysis: {e:?}")))?;
        Ok(CholeskyAnalysis { symbolic })
    }

    /// Numeric factorisation of the matrix with `values` on the analysed pattern.
    pub fn factor(&self, p: &Pattern, values: &[f64]) -> Result<Cholesky, SolveError> {
        let sym = SymbolicSparseColMatRef::new_checked(p.n, p.n, &p.col_ptr, None, &p.row_idx);
        let mat = SparseColMatRef::new(sym, values);
        let llt = Llt::try_new_with_symbolic(self.symbolic.clone(), mat, Side::Lower)
            .map_err(|_| SolveError::Singular)?;
        Ok(Cholesky { llt })
    }
}

pub struct Cholesky {
    llt: Llt<usize, f64>,
}

impl Cholesky {
    /// Solves for several right-hand sides, one column at a time (measured faster than a
    /// multi-column solve on this kind of machine, CRATE-NOTES.md).
    pub fn solve(&self, rhs: &[Vec<f64>]) -> Vec<Vec<f64>> {
        rhs.iter()
            .map(|b| {
                let mut x = Mat::<f64>::from_fn(b.len(), 1, |i, _| b[i]);
                self.llt.solve_in_place(x.as_mut());
                (0..b.len()).map(|i| x[(i, 0)]).collect()
            })
            .collect()
    }
}

/// Relative residual ‖Ax − b‖ / ‖b‖ (0 when b = 0 and x = 0).
pub fn relative_residual(p: &Pattern, values: &[f64], x: &[f64], b: &[f64]) -> f64 {
    let ax = p.mul(values, x);
    let num: f64 = ax
        .iter()
        .zip(b)
        .map(|(a, b)| (a - b) * (a - b))
        .sum::<f64>()
        .sqrt();
    let den: f64 = b.iter().map(|v| v * v).sum::<f64>().sqrt();
    if den == 0.0 {
        num
    } else {
        num / den
    }
}
