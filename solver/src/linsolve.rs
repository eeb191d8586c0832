//! Sparse direct solve of the real symmetric positive definite system: faer's supernodal
//! Cholesky with a fill-reducing ordering. The symbolic analysis is kept so that a matrix with
//! the same pattern (a Newton step, another frequency) is refactorised numerically only, and
//! any number of right-hand sides are solved from one factorisation.

use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltParams;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, LltRef, SymbolicCholesky,
    SymmetricOrdering,
};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side, Spec};

use crate::assembly::Pattern;
use crate::SolveError;

/// Largest relative residual ‖Ax − b‖/‖b‖ accepted after a direct solve.
pub const RESIDUAL_TOLERANCE: f64 = 1e-8;

/// Symbolic Cholesky analysis of a pattern, reusable across numeric factorisations.
pub struct CholeskyAnalysis {
    symbolic: SymbolicCholesky<usize>,
}

fn symbolic_ref(p: &Pattern) -> SymbolicSparseColMatRef<'_, usize> {
    SymbolicSparseColMatRef::new_checked(p.n, p.n, &p.col_ptr, None, &p.row_idx)
}

/// faer's parallelism for the factorisation: rayon over the current pool's threads.
fn par() -> Par {
    let t = rayon::current_num_threads();
    if t <= 1 {
        Par::Seq
    } else {
        Par::rayon(t)
    }
}

impl CholeskyAnalysis {
    /// Analysis with faer's approximate minimum degree ordering. The solvers use
    /// [`Self::with_ordering`] with [`crate::ordering::nested_dissection`], which gives less
    /// fill on meshes of more than a few thousand vertices (README, "Performance").
    pub fn new(p: &Pattern) -> Result<Self, SolveError> {
        Self::analyse(p, SymmetricOrdering::Amd)
    }

    /// Analysis with the ordering `perm` (`perm[new] = old`, a permutation of the unknowns),
    /// or minimum degree when `None`. See [`crate::ordering::nested_dissection`].
    pub fn with_ordering(p: &Pattern, perm: Option<Vec<usize>>) -> Result<Self, SolveError> {
        let Some(fwd) = perm else {
            return Self::new(p);
        };
        let not_a_permutation =
            || SolveError::Factorisation("the ordering is not a permutation".into());
        if fwd.len() != p.n {
            return Err(not_a_permutation());
        }
        let mut inv = vec![usize::MAX; p.n];
        for (new, &old) in fwd.iter().enumerate() {
            if old >= p.n || inv[old] != usize::MAX {
                return Err(not_a_permutation());
            }
            inv[old] = new;
        }
        Self::analyse(
            p,
            SymmetricOrdering::Custom(faer::perm::PermRef::new_checked(&fwd, &inv, p.n)),
        )
    }

    fn analyse(p: &Pattern, ordering: SymmetricOrdering<'_, usize>) -> Result<Self, SolveError> {
        let symbolic = factorize_symbolic_cholesky(
            symbolic_ref(p),
            Side::Lower,
            ordering,
            CholeskySymbolicParams::default(),
        )
        .map_err(|e| SolveError::Factorisation(format!("symbolic analysis: {e:?}")))?;
        Ok(CholeskyAnalysis { symbolic })
    }

    /// Number of stored values of the factor L (its fill).
    pub fn factor_nnz(&self) -> usize {
        self.symbolic.len_val()
    }

    /// Numeric factorisation of the matrix with `values` on the analysed pattern.
    pub fn factor(&self, p: &Pattern, values: &[f64]) -> Result<Cholesky<'_>, SolveError> {
        return_free_memory();
        let mat = SparseColMatRef::new(symbolic_ref(p), values);
        let mut l_values = Vec::new();
        l_values
            .try_reserve_exact(self.symbolic.len_val())
            .map_err(|_| SolveError::Factorisation("out of memory for the factor".into()))?;
        l_values.resize(self.symbolic.len_val(), 0.0);
        let par = par();
        let params: Spec<LltParams, f64> = Default::default();
        let mut mem = MemBuffer::try_new(
            self.symbolic
                .factorize_numeric_llt_scratch::<f64>(par, params),
        )
        .map_err(|_| SolveError::Factorisation("out of memory for the workspace".into()))?;
        self.symbolic
            .factorize_numeric_llt(
                &mut l_values,
                mat,
                Side::Lower,
                Default::default(),
                par,
                MemStack::new(&mut mem),
                params,
            )
            .map_err(|_| SolveError::Singular)?;
        Ok(Cholesky {
            symbolic: &self.symbolic,
            values: l_values,
        })
    }
}

/// Gives the allocator's free heap pages back to the system. The pattern's assembly map and
/// temporaries, the element matrices and the ordering's graph are freed before the
/// factorisation, where memory peaks; glibc keeps blocks below its (self-raising, up to 32 MB) mmap
/// threshold in the heap after they are freed. Measured at about 1M unknowns: peak 1250 ->
/// 1008 MB (planar), 1877 -> 1471 MB (60 Hz wire), 24 ms per call. Elsewhere a no-op.
fn return_free_memory() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    // SAFETY: malloc_trim only releases free memory of the allocator; it takes no pointers.
    unsafe {
        libc::malloc_trim(0);
    }
}

/// A numeric factorisation, borrowing its analysis.
pub struct Cholesky<'a> {
    symbolic: &'a SymbolicCholesky<usize>,
    values: Vec<f64>,
}

/// Right-hand sides solved together in one sweep through the factor: the triangular solves
/// read the whole factor from memory for each sweep, so a block of columns costs little more
/// than one (measured in DEVELOPERS.md, "Performance").
const BLOCK: usize = 16;

impl Cholesky<'_> {
    /// Solves for several right-hand sides, in at least two blocks (when there are two or
    /// more) of up to 16 columns per sweep, the blocks in parallel: one sweep is
    /// memory-bound, but one thread does not use all the bandwidth. The block width depends
    /// on the number of right-hand sides only, so the results do not depend on the thread
    /// count.
    pub fn solve(&self, rhs: &[Vec<f64>]) -> Vec<Vec<f64>> {
        use rayon::prelude::*;
        let width = rhs.len().div_ceil(2).clamp(1, BLOCK);
        rhs.par_chunks(width)
            .map(|block| {
                let n = self.symbolic.nrows();
                let k = block.len();
                let mut x = vec![0.0; n * k];
                for (j, b) in block.iter().enumerate() {
                    x[j * n..(j + 1) * n].copy_from_slice(b);
                }
                self.solve_block(&mut x, k);
                x.chunks(n).map(|c| c.to_vec()).collect::<Vec<_>>()
            })
            .collect::<Vec<_>>()
            .into_iter()
            .flatten()
            .collect()
    }

    /// Solves in place for `k` column-major right-hand sides stored one after the other.
    pub fn solve_block(&self, x: &mut [f64], k: usize) {
        let n = self.symbolic.nrows();
        assert_eq!(x.len(), n * k, "block size");
        let llt = LltRef::<'_, usize, f64>::new(self.symbolic, &self.values);
        // Sequential: the sweeps are memory-bound, and the callers run independent solves
        // in parallel themselves.
        let par = Par::Seq;
        let mut mem = MemBuffer::new(self.symbolic.solve_in_place_scratch::<f64>(k, par));
        let rhs = MatMut::from_column_major_slice_mut(x, n, k);
        llt.solve_in_place_with_conj(Conj::No, rhs, par, MemStack::new(&mut mem));
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
