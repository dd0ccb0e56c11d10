//! The polygon Laplacian `L(λ)` (DESIGN §1) over a chart's free vertices (the others
//! pinned), factored once: the global matrix of ARAP local–global and the initial
//! inverse Hessian of the Laplacian-preconditioned L-BFGS. It is a scalar matrix that
//! acts on u and v alike, so interleaved unknowns (`2k` = u, `2k + 1` = v of free
//! vertex `k`, as in [`Dofs`]) are solved as two right-hand sides.

use super::assembly::{Dofs, PINNED};
use super::chart::Chart;
use super::cholesky::Cholesky;
use super::stopping::{timed, Clocks};
use crate::operators::global::laplacian;

/// `L(λ)` over the free vertices of a chart with pins, factored.
pub(crate) struct PinnedLaplacian {
    /// Free vertices and their numbering.
    pub dofs: Dofs,
    /// `(free vertex, pinned vertex, entry)` for every entry of `L(λ)` that couples a
    /// free vertex to a pinned one (they move the pinned UVs to the right-hand side).
    pinned: Vec<(usize, u32, f64)>,
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    values: Vec<f64>,
    cholesky: Cholesky,
    /// u block then v block, for the solves.
    columns: Vec<f64>,
}

impl PinnedLaplacian {
    /// Assembles and factors `L(λ)` of `chart` with the vertices `pins` removed; its
    /// set-up and factorization times go to `clocks`.
    pub fn new(chart: &Chart, pins: &[u32], clocks: &mut Clocks) -> Result<Self, String> {
        let dofs = Dofs::new(chart.vertex_count(), pins);
        let free = dofs.free;
        let l = timed(&mut clocks.setup, || laplacian(chart.mesh, chart.lambda))
            .map_err(|e| format!("cannot assemble L(λ): {e}"))?;
        // Lower triangle over free vertices, and the couplings to pinned vertices.
        let mut col_ptr = vec![0usize];
        let mut row_idx = Vec::new();
        let mut values = Vec::new();
        let mut pinned = Vec::new();
        let mut columns: Vec<(usize, usize)> = (0..chart.vertex_count())
            .filter(|&v| dofs.index[v] != PINNED)
            .map(|v| (dofs.index[v] as usize, v))
            .collect();
        columns.sort_unstable();
        for &(k, v) in &columns {
            let mut entries: Vec<(usize, f64)> = Vec::new();
            for (r, &x) in l.row_idx_of_col_raw(v).iter().zip(l.val_of_col(v)) {
                let kr = dofs.index[*r];
                if kr == PINNED {
                    pinned.push((k, *r as u32, x));
                } else if kr as usize >= k {
                    entries.push((kr as usize, x));
                }
            }
            entries.sort_unstable_by_key(|e| e.0);
            for (r, x) in entries {
                row_idx.push(r);
                values.push(x);
            }
            col_ptr.push(row_idx.len());
        }
        let mut cholesky = timed(&mut clocks.setup, || {
            Cholesky::analyse_for_solves(free, &col_ptr, &row_idx)
        })?;
        clocks.factorizations += 1;
        if free > 0
            && !timed(&mut clocks.factor, || {
                cholesky.factor(&col_ptr, &row_idx, &values)
            })
        {
            return Err(
                "the Laplacian L(λ) is not positive definite; is a face degenerate?".into(),
            );
        }
        Ok(PinnedLaplacian {
            dofs,
            pinned,
            col_ptr,
            row_idx,
            values,
            cholesky,
            columns: vec![0.0; 2 * free],
        })
    }

    /// Subtracts the pinned vertices' part `L_fp uv_p` from interleaved `rhs`.
    pub fn move_pins_right(&self, uv: &[[f64; 2]], rhs: &mut [f64]) {
        for &(k, p, x) in &self.pinned {
            let q = uv[p as usize];
            rhs[2 * k] -= x * q[0];
            rhs[2 * k + 1] -= x * q[1];
        }
    }

    /// Solves `L x = b` in place for interleaved `x` (u and v of every free vertex).
    pub fn solve(&mut self, x: &mut [f64]) {
        let free = self.dofs.free;
        for k in 0..free {
            self.columns[k] = x[2 * k];
            self.columns[free + k] = x[2 * k + 1];
        }
        self.cholesky.solve(&mut self.columns);
        for k in 0..free {
            x[2 * k] = self.columns[k];
            x[2 * k + 1] = self.columns[free + k];
        }
    }

    /// `sᵀ L s` summed over the u and v parts of interleaved `s`.
    pub fn quadratic_form(&self, s: &[f64]) -> f64 {
        let mut sum = 0.0;
        for j in 0..self.dofs.free {
            let range = self.col_ptr[j]..self.col_ptr[j + 1];
            for (&i, &a) in self.row_idx[range.clone()].iter().zip(&self.values[range]) {
                let pair = s[2 * i] * s[2 * j] + s[2 * i + 1] * s[2 * j + 1];
                sum += if i == j { a * pair } else { 2.0 * a * pair };
            }
        }
        sum
    }
}
