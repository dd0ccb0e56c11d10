//! Global unknowns and the sparse Newton system: which vertices are free, the
//! lower-triangular CSC pattern of the Hessian over free unknowns (built once per
//! chart), and gather lists that sum per-face buffers into it in parallel.
//!
//! Free vertex `k` owns unknowns `2k` (u) and `2k + 1` (v).

use super::chart::Chart;
use super::face_term::packed_index;
use rayon::prelude::*;

/// Marks pinned vertices (fixed UVs) and numbers the free ones.
#[derive(Debug, Clone)]
pub(crate) struct Dofs {
    /// Per vertex: its free index, or `u32::MAX` when pinned.
    pub index: Vec<u32>,
    /// Number of free vertices.
    pub free: usize,
}

/// Marks a pinned vertex in [`Dofs::index`].
pub(crate) const PINNED: u32 = u32::MAX;

impl Dofs {
    /// Every vertex of `vertex_count` is free except `pins`.
    pub fn new(vertex_count: usize, pins: &[u32]) -> Self {
        let mut index = vec![0u32; vertex_count];
        for &p in pins {
            index[p as usize] = PINNED;
        }
        let mut free = 0;
        for i in index.iter_mut() {
            if *i != PINNED {
                *i = free as u32;
                free += 1;
            }
        }
        Dofs { index, free }
    }

    /// Global unknown of corner value `c` (0 = u, 1 = v) at vertex `v`, if free.
    pub fn unknown(&self, v: u32, c: usize) -> Option<usize> {
        let k = self.index[v as usize];
        (k != PINNED).then_some(2 * k as usize + c)
    }
}

/// Sums groups of buffer entries: `out[p] = Σ buf[src[ptr[p]..ptr[p + 1]]]`.
#[derive(Debug, Clone, Default)]
pub(crate) struct Gather {
    ptr: Vec<usize>,
    src: Vec<u32>,
}

impl Gather {
    /// Builds the gather from `(target, source)` pairs produced twice by `pairs` (a
    /// counting pass and a filling pass), for `targets` outputs.
    fn build(targets: usize, pairs: impl Fn(&mut dyn FnMut(usize, usize))) -> Result<Self, String> {
        let mut ptr = vec![0usize; targets + 1];
        pairs(&mut |t, _| ptr[t + 1] += 1);
        for i in 0..targets {
            ptr[i + 1] += ptr[i];
        }
        let mut fill = ptr.clone();
        let mut src = vec![0u32; ptr[targets]];
        let mut overflow = false;
        pairs(&mut |t, s| {
            overflow |= s > u32::MAX as usize;
            src[fill[t]] = s as u32;
            fill[t] += 1;
        });
        if overflow {
            return Err(
                "the chart is too large for one solve; split it into smaller charts".into(),
            );
        }
        Ok(Gather { ptr, src })
    }

    /// `out[p] = Σ buf[sources of p]` for every target, in parallel.
    pub fn apply(&self, buf: &[f64], out: &mut [f64]) {
        out.par_iter_mut()
            .enumerate()
            .with_min_len(1024)
            .for_each(|(p, o)| {
                *o = self.src[self.ptr[p]..self.ptr[p + 1]]
                    .iter()
                    .map(|&s| buf[s as usize])
                    .sum();
            });
    }
}

/// Gather from per-face gradient buffers (2 values per corner, see
/// [`super::objective`]) to the free unknowns of `dofs`.
pub(crate) fn gradient_gather(chart: &Chart, dofs: &Dofs) -> Result<Gather, String> {
    let offsets = chart.offsets();
    Gather::build(2 * dofs.free, |emit| {
        for (f, &offset) in offsets.iter().enumerate().take(chart.face_count()) {
            let face = chart.face(f);
            let m = face.len();
            for a in 0..2 * m {
                if let Some(r) = dofs.unknown(face[a % m], a / m) {
                    emit(r, 2 * offset + a);
                }
            }
        }
    })
}

/// The Newton system's pattern over free unknowns and the gathers that fill it.
pub(crate) struct NewtonSystem {
    /// Unknown numbering.
    pub dofs: Dofs,
    /// Number of unknowns (`2 × free vertices`).
    pub n: usize,
    /// Lower-triangular CSC pattern: column pointers.
    pub col_ptr: Vec<usize>,
    /// Lower-triangular CSC pattern: row indices (sorted within each column).
    pub row_idx: Vec<usize>,
    /// Position of each diagonal entry in the values array.
    pub diagonal: Vec<usize>,
    /// Per-face Hessian buffer entries → matrix values.
    hessian: Gather,
    /// Per-face gradient buffer entries → free unknowns.
    pub gradient: Gather,
}

impl NewtonSystem {
    /// Builds the pattern for `chart` with the unknowns `dofs`; `hess_offsets` are the
    /// per-face packed Hessian offsets.
    pub fn new(chart: &Chart, dofs: Dofs, hess_offsets: &[usize]) -> Result<Self, String> {
        let nf = chart.face_count();
        // Vertex-level lower adjacency between free vertices (including self).
        let mut adjacency: Vec<Vec<u32>> = vec![Vec::new(); dofs.free];
        for f in 0..nf {
            for &a in chart.face(f) {
                let ka = dofs.index[a as usize];
                if ka == PINNED {
                    continue;
                }
                for &b in chart.face(f) {
                    let kb = dofs.index[b as usize];
                    if kb != PINNED && kb >= ka {
                        adjacency[ka as usize].push(kb);
                    }
                }
            }
        }
        let n = 2 * dofs.free;
        let mut col_ptr = Vec::with_capacity(n + 1);
        let mut row_idx = Vec::new();
        let mut diagonal = Vec::with_capacity(n);
        col_ptr.push(0);
        for (k, adj) in adjacency.iter_mut().enumerate() {
            adj.sort_unstable();
            adj.dedup();
            for c in 0..2 {
                for &m in adj.iter() {
                    let m = m as usize;
                    if m == k {
                        diagonal.push(row_idx.len());
                        row_idx.push(2 * k + c);
                        if c == 0 {
                            row_idx.push(2 * k + 1);
                        }
                    } else {
                        row_idx.push(2 * m);
                        row_idx.push(2 * m + 1);
                    }
                }
                col_ptr.push(row_idx.len());
            }
        }
        drop(adjacency);
        let position = |row: usize, col: usize| -> usize {
            let range = col_ptr[col]..col_ptr[col + 1];
            let rows = &row_idx[range.clone()];
            range.start + rows.partition_point(|&r| r < row)
        };
        let hessian = Gather::build(row_idx.len(), |emit| {
            for (f, &offset) in hess_offsets.iter().enumerate().take(nf) {
                let face = chart.face(f);
                let m = face.len();
                for a in 0..2 * m {
                    let Some(ra) = dofs.unknown(face[a % m], a / m) else {
                        continue;
                    };
                    for b in 0..=a {
                        let Some(rb) = dofs.unknown(face[b % m], b / m) else {
                            continue;
                        };
                        let p = position(ra.max(rb), ra.min(rb));
                        emit(p, offset + packed_index(a, b));
                    }
                }
            }
        })?;
        let gradient = gradient_gather(chart, &dofs)?;
        Ok(NewtonSystem {
            dofs,
            n,
            col_ptr,
            row_idx,
            diagonal,
            hessian,
            gradient,
        })
    }

    /// Sums per-face Hessians (`hess_buf`) into the matrix `values`.
    pub fn assemble_hessian(&self, hess_buf: &[f64], values: &mut [f64]) {
        self.hessian.apply(hess_buf, values);
    }
}

impl Dofs {
    /// Free unknowns of `uv` (per-vertex UVs), in unknown order.
    pub fn gather(&self, uv: &[[f64; 2]]) -> Vec<f64> {
        let mut x = vec![0.0; 2 * self.free];
        for (k, p) in self.index.iter().zip(uv) {
            if *k != PINNED {
                x[2 * *k as usize] = p[0];
                x[2 * *k as usize + 1] = p[1];
            }
        }
        x
    }

    /// Writes the free unknowns `x` into `uv`, leaving pinned vertices as they are.
    pub fn scatter(&self, x: &[f64], uv: &mut [[f64; 2]]) {
        for (k, p) in self.index.iter().zip(uv.iter_mut()) {
            if *k != PINNED {
                *p = [x[2 * *k as usize], x[2 * *k as usize + 1]];
            }
        }
    }
}
