//! Sparse Cholesky `LLᵀ` through faer: symbolic analysis (fill-reducing ordering and
//! elimination structure) once per pattern, numeric factorization per matrix, solves
//! in place. Matrices are given as their lower triangle in CSC form.

use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltRegularization;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, LltRef, SymbolicCholesky, SymmetricOrdering,
};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side};

/// A symbolic factorization and the storage of one numeric factor.
pub(crate) struct Cholesky {
    symbolic: SymbolicCholesky<usize>,
    factor: Vec<f64>,
    scratch: MemBuffer,
    factored: bool,
    par: Par,
}

impl Cholesky {
    /// Symbolic analysis of the n×n pattern (lower triangle, CSC, rows sorted).
    pub fn analyse(n: usize, col_ptr: &[usize], row_idx: &[usize]) -> Result<Self, String> {
        let pattern = SymbolicSparseColMatRef::new_checked(n, n, col_ptr, None, row_idx);
        let symbolic = factorize_symbolic_cholesky(
            pattern,
            Side::Lower,
            SymmetricOrdering::Amd,
            Default::default(),
        )
        .map_err(|e| format!("the sparse analysis failed ({e:?})"))?;
        let par = Par::rayon(0);
        let req = symbolic
            .factorize_numeric_llt_scratch::<f64>(par, Default::default())
            .or(symbolic.solve_in_place_scratch::<f64>(2, par));
        let scratch = MemBuffer::try_new(req)
            .map_err(|_| "not enough memory for the factorization".to_string())?;
        let factor = vec![0.0; symbolic.len_val()];
        Ok(Cholesky {
            symbolic,
            factor,
            scratch,
            factored: false,
            par,
        })
    }

    /// Numeric factorization of the matrix with the analysed pattern and `values`;
    /// false when it is not numerically positive definite.
    pub fn factor(&mut self, col_ptr: &[usize], row_idx: &[usize], values: &[f64]) -> bool {
        let n = self.symbolic.nrows();
        let pattern = SymbolicSparseColMatRef::new_checked(n, n, col_ptr, None, row_idx);
        let matrix = SparseColMatRef::new(pattern, values);
        self.factored = self
            .symbolic
            .factorize_numeric_llt::<f64>(
                &mut self.factor,
                matrix,
                Side::Lower,
                LltRegularization::default(),
                self.par,
                MemStack::new(&mut self.scratch),
                Default::default(),
            )
            .is_ok();
        self.factored
    }

    /// Solves `A x = b` in place for the right-hand sides stored column after column
    /// in `rhs` (length a multiple of n). Does nothing before a successful
    /// [`Cholesky::factor`].
    pub fn solve(&mut self, rhs: &mut [f64]) {
        let n = self.symbolic.nrows();
        if !self.factored || n == 0 {
            return;
        }
        let llt = LltRef::new(&self.symbolic, &self.factor);
        // The scratch was sized for two columns at a time.
        for block in rhs.chunks_mut(2 * n) {
            let k = block.len() / n;
            let mat = MatMut::from_column_major_slice_mut(&mut block[..k * n], n, k);
            llt.solve_in_place_with_conj(Conj::No, mat, self.par, MemStack::new(&mut self.scratch));
        }
    }
}
