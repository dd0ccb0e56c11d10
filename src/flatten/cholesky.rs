//! Sparse Cholesky `LLᵀ` through faer: symbolic analysis (fill-reducing ordering and
//! elimination structure) once per pattern, numeric factorization per matrix, solves
//! in place. Matrices are given as their lower triangle in CSC form.
//!
//! Scalar systems (Tutte, local–global) use faer's approximate minimum degree; the
//! Newton system, whose unknowns come in 2×2 vertex blocks, takes an [`Ordering`] of its
//! vertex graph (see [`super::ordering`]).

use super::ordering::{dissection, expand_blocks, metis, vertex_amd, vertex_graph, Ordering};
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltRegularization;
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, LltRef, SymbolicCholesky,
    SymbolicCholeskyRaw, SymmetricOrdering,
};
use faer::sparse::linalg::SupernodalThreshold;
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side};

/// Unknowns up to which [`Cholesky::analyse_for_solves`] keeps the factor simplicial
/// (the largest size measured faster that way: 100k quads' Laplacian, 100k unknowns;
/// above it faer's own choice stands, unmeasured against simplicial).
const SIMPLICIAL_MAX: usize = 120_000;

/// A symbolic factorization and the storage of one numeric factor.
pub(crate) struct Cholesky {
    symbolic: SymbolicCholesky<usize>,
    factor: Vec<f64>,
    scratch: MemBuffer,
    factored: bool,
}

impl Cholesky {
    /// Symbolic analysis of the n×n pattern (lower triangle, CSC, rows sorted) with
    /// faer's approximate minimum degree ordering.
    pub fn analyse(n: usize, col_ptr: &[usize], row_idx: &[usize]) -> Result<Self, String> {
        Self::analyse_ordered(n, col_ptr, row_idx, SymmetricOrdering::Amd)
    }

    /// Symbolic analysis of a pattern of 2×2 blocks (vertex `k` owns unknowns `2k`,
    /// `2k + 1`; lower triangle, CSC, rows sorted) with `ordering`; `points` are the
    /// vertices' 3D positions, used by [`Ordering::Dissection`].
    pub fn analyse_blocks(
        col_ptr: &[usize],
        row_idx: &[usize],
        ordering: Ordering,
        points: &[[f64; 3]],
    ) -> Result<Self, String> {
        let n = 2 * points.len();
        if ordering == Ordering::ScalarAmd || n == 0 {
            return Self::analyse(n, col_ptr, row_idx);
        }
        let (xadj, adjncy) = vertex_graph(points.len(), col_ptr, row_idx);
        let order = match ordering {
            Ordering::Dissection => dissection(points, &xadj, &adjncy)?,
            Ordering::Metis => metis(&xadj, &adjncy)?,
            _ => vertex_amd(&xadj, &adjncy)?,
        };
        drop((xadj, adjncy));
        let (fwd, inv) = expand_blocks(&order);
        let perm = PermRef::new_checked(&fwd, &inv, n);
        Self::analyse_ordered(n, col_ptr, row_idx, SymmetricOrdering::Custom(perm))
    }

    /// Symbolic analysis as [`Cholesky::analyse`] for a matrix factored once and
    /// solved with many times (the Laplacian `L(λ)` of local–global and the
    /// preconditioned L-BFGS): up to [`SIMPLICIAL_MAX`] unknowns the factor is kept
    /// simplicial, whose triangular solves faer runs faster than the
    /// supernodal ones it picks for quad patterns (2.5-3 times). Measured on the arap
    /// local–global solve of the crossover's quad bumps (interleaved runs of
    /// `solve_chart`, shortest of 7 at 20k and of 2 at 100k): at 20k quads
    /// factorization plus 25 two-column solves took 62 ms against 115 ms, at 100k
    /// 0.65 s against 0.87 s (triangulated: 0.54 s against 0.76 s).
    pub fn analyse_for_solves(
        n: usize,
        col_ptr: &[usize],
        row_idx: &[usize],
    ) -> Result<Self, String> {
        let mut params = CholeskySymbolicParams::default();
        if n <= SIMPLICIAL_MAX {
            params.supernodal_flop_ratio_threshold = SupernodalThreshold::FORCE_SIMPLICIAL;
        }
        Self::analyse_with(n, col_ptr, row_idx, SymmetricOrdering::Amd, params)
    }

    fn analyse_ordered(
        n: usize,
        col_ptr: &[usize],
        row_idx: &[usize],
        ordering: SymmetricOrdering<'_, usize>,
    ) -> Result<Self, String> {
        Self::analyse_with(n, col_ptr, row_idx, ordering, Default::default())
    }

    fn analyse_with(
        n: usize,
        col_ptr: &[usize],
        row_idx: &[usize],
        ordering: SymmetricOrdering<'_, usize>,
        params: CholeskySymbolicParams<'_>,
    ) -> Result<Self, String> {
        let pattern = SymbolicSparseColMatRef::new_checked(n, n, col_ptr, None, row_idx);
        let symbolic = factorize_symbolic_cholesky(pattern, Side::Lower, ordering, params)
            .map_err(|e| format!("the sparse analysis failed ({e:?})"))?;
        let req = symbolic
            .factorize_numeric_llt_scratch::<f64>(Par::Seq, Default::default())
            .or(symbolic.solve_in_place_scratch::<f64>(2, Par::Seq));
        let scratch = MemBuffer::try_new(req)
            .map_err(|_| "not enough memory for the factorization".to_string())?;
        let factor = vec![0.0; symbolic.len_val()];
        Ok(Cholesky {
            symbolic,
            factor,
            scratch,
            factored: false,
        })
    }

    /// Stored entries of the factor `L`.
    pub fn factor_entries(&self) -> usize {
        self.symbolic.len_val()
    }

    /// Multiply-adds of one numeric factorization, `Σ_j c_j²` over the factor's
    /// columns of `c_j` stored entries (supernodes counted with their padding): a
    /// measure of its cost that does not depend on the machine's load.
    pub fn flops(&self) -> f64 {
        match self.symbolic.raw() {
            SymbolicCholeskyRaw::Simplicial(s) => s
                .col_ptr()
                .windows(2)
                .map(|w| ((w[1] - w[0]) as f64).powi(2))
                .sum(),
            SymbolicCholeskyRaw::Supernodal(s) => (0..s.n_supernodes())
                .map(|k| {
                    let width = s.supernode_end()[k] - s.supernode_begin()[k];
                    let below = s.supernode(k).pattern().len();
                    (1..=width)
                        .map(|c| ((c + below) as f64).powi(2))
                        .sum::<f64>()
                })
                .sum(),
        }
    }

    /// Numeric factorization of the matrix with the analysed pattern and `values`;
    /// false when it is not numerically positive definite.
    ///
    /// Factorizations run on one thread: on this project's 2-core machine faer's
    /// parallel supernodal factorization took 1.06-1.8 times as long at every size
    /// measured (one factorization of the arap Newton matrix: 10k quads 0.017 s
    /// against 0.025-0.032 s, 100k quads 0.27 s against 0.37-0.48 s, 1M quads 8.2 s
    /// against 8.7 s; `bench_flatten -- --orderings` run with each setting, and a
    /// 1M-quad factorization timed the same way), and the per-face work around
    /// it keeps both threads busy.
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
                Par::Seq,
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
        // The scratch was sized for two columns at a time. Solves run on one thread:
        // faer's parallel triangular solve took 40-100 times as long on the
        // local-global Laplacian of 15k-40k vertices (25 solves of a 120 × 120 quad
        // bump: 0.96 s against 0.057 s; `bench_flatten -- --crossover`), and the
        // Newton solves measured the same either way.
        for block in rhs.chunks_mut(2 * n) {
            let k = block.len() / n;
            let mat = MatMut::from_column_major_slice_mut(&mut block[..k * n], n, k);
            llt.solve_in_place_with_conj(Conj::No, mat, Par::Seq, MemStack::new(&mut self.scratch));
        }
    }
}
