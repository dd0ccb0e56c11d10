//! The chart's objective `E(W) = Σ_f A_f ψ(J_f) + λ Σ_f ‖P_f D_f W_f‖²_F`, evaluated
//! face by face in parallel (rayon) into per-face buffers that the assembly gathers.
//! Values are measured above the constant `Σ_f A_f min ψ` (see
//! [`super::energy::Energy::excess`]); gradients and Hessians are unaffected.
//!
//! UVs are per vertex (`[u, v]`, UV units). Per-face gradient buffers hold 2n values
//! per face at offset `2 × (first corner)`; Hessian buffers hold the packed lower
//! triangle of each face's 2n×2n Hessian at the offsets of [`hessian_offsets`].

use super::chart::Chart;
use super::energy::Energy;
use super::face_term::packed_len;
use super::injectivity;
use nalgebra::Matrix2;
use rayon::prelude::*;
use std::ops::Range;

/// Faces per parallel work item.
const BLOCK: usize = 512;

/// Splits `buf` at the given increasing `cuts` (the first cut is 0) into one slice per
/// consecutive pair of cuts.
fn split_mut<'a, T>(mut buf: &'a mut [T], cuts: &[usize]) -> Vec<&'a mut [T]> {
    let mut out = Vec::with_capacity(cuts.len().saturating_sub(1));
    for w in cuts.windows(2) {
        let (head, tail) = std::mem::take(&mut buf).split_at_mut(w[1] - w[0]);
        out.push(head);
        buf = tail;
    }
    out
}

/// Offsets of each face's packed Hessian in a Hessian buffer (`faces + 1` entries).
pub(crate) fn hessian_offsets(chart: &Chart) -> Vec<usize> {
    let mut off = Vec::with_capacity(chart.face_count() + 1);
    off.push(0);
    let mut total = 0;
    for f in 0..chart.face_count() {
        total += packed_len(chart.corners(f).len());
        off.push(total);
    }
    off
}

/// The objective of one chart with one energy.
pub(crate) struct Objective<'c, 'm> {
    /// The chart.
    pub chart: &'c Chart<'m>,
    /// The energy density ψ.
    pub energy: &'static dyn Energy,
    /// Face ranges processed as one parallel work item.
    blocks: Vec<Range<usize>>,
}

impl<'c, 'm> Objective<'c, 'm> {
    pub fn new(chart: &'c Chart<'m>, energy: &'static dyn Energy) -> Self {
        let nf = chart.face_count();
        let blocks = (0..nf.div_ceil(BLOCK))
            .map(|b| b * BLOCK..((b + 1) * BLOCK).min(nf))
            .collect();
        Objective {
            chart,
            energy,
            blocks,
        }
    }

    /// Sums `per_face(f, w)` over faces in parallel, in a fixed order (deterministic).
    fn sum_faces(
        &self,
        uv: &[[f64; 2]],
        per_face: impl Fn(usize, &[[f64; 2]]) -> f64 + Sync,
    ) -> f64 {
        let partial: Vec<f64> = self
            .blocks
            .par_iter()
            .map(|range| {
                let mut w = Vec::new();
                let mut s = 0.0;
                for f in range.clone() {
                    self.chart.gather(f, uv, &mut w);
                    s += per_face(f, &w);
                }
                s
            })
            .collect();
        partial.iter().sum()
    }

    /// `E(uv) − Σ_f A_f min ψ`; `+∞` when the energy is a barrier and some face is
    /// flipped.
    pub fn value(&self, uv: &[[f64; 2]]) -> f64 {
        let barrier = self.energy.is_barrier();
        self.sum_faces(uv, |f, w| {
            let view = self.chart.view(f);
            if barrier && injectivity::is_flipped(&view.jacobian(w), w) {
                f64::INFINITY
            } else {
                view.excess(self.energy, w)
            }
        })
    }

    /// `E(uv) − Σ_f A_f min ψ` with per-face gradients written to `grad` (2 per corner) and, when
    /// given, per-face Hessians to `hess` (at [`hessian_offsets`]), projected to
    /// positive semi-definite when its flag is true.
    pub fn evaluate(
        &self,
        uv: &[[f64; 2]],
        grad: &mut [f64],
        hess: Option<(&mut [f64], &[usize], bool)>,
    ) -> f64 {
        let offsets = self.chart.offsets();
        let grad_cuts: Vec<usize> = self
            .blocks
            .iter()
            .map(|r| 2 * offsets[r.start])
            .chain(std::iter::once(2 * offsets[self.chart.face_count()]))
            .collect();
        let grad_parts = split_mut(grad, &grad_cuts);
        let project = hess.as_ref().is_none_or(|h| h.2);
        let (hess_parts, hess_offsets): (Vec<Option<&mut [f64]>>, &[usize]) = match hess {
            Some((buf, off, _)) => {
                let cuts: Vec<usize> = self
                    .blocks
                    .iter()
                    .map(|r| off[r.start])
                    .chain(std::iter::once(off[self.chart.face_count()]))
                    .collect();
                (split_mut(buf, &cuts).into_iter().map(Some).collect(), off)
            }
            None => ((0..self.blocks.len()).map(|_| None).collect(), &[]),
        };
        let partial: Vec<f64> = self
            .blocks
            .par_iter()
            .zip(grad_parts)
            .zip(hess_parts)
            .map(|((range, g), mut h)| {
                let mut w = Vec::new();
                let mut s = 0.0;
                let g0 = 2 * offsets[range.start];
                let h0 = hess_offsets.get(range.start).copied().unwrap_or(0);
                for f in range.clone() {
                    self.chart.gather(f, uv, &mut w);
                    let view = self.chart.view(f);
                    s += view.excess(self.energy, &w);
                    let gr = 2 * offsets[f] - g0..2 * offsets[f + 1] - g0;
                    let hs = h.as_deref_mut().map(|h| {
                        (
                            &mut h[hess_offsets[f] - h0..hess_offsets[f + 1] - h0],
                            project,
                        )
                    });
                    view.gradient_hessian(self.energy, &w, &mut g[gr], hs);
                }
                s
            })
            .collect();
        partial.iter().sum()
    }

    /// Number of flipped faces (see [`injectivity::is_flipped`]).
    pub fn flipped_faces(&self, uv: &[[f64; 2]]) -> usize {
        self.sum_faces(uv, |f, w| {
            f64::from(u8::from(injectivity::is_flipped(
                &self.chart.view(f).jacobian(w),
                w,
            )))
        }) as usize
    }

    /// First step `t > 0` along `duv` at which some face flips (`+∞` if none).
    pub fn first_flip(&self, uv: &[[f64; 2]], duv: &[[f64; 2]]) -> f64 {
        self.blocks
            .par_iter()
            .map(|range| {
                let (mut w, mut dw) = (Vec::new(), Vec::new());
                let mut t = f64::INFINITY;
                for f in range.clone() {
                    self.chart.gather(f, uv, &mut w);
                    self.chart.gather(f, duv, &mut dw);
                    let view = self.chart.view(f);
                    let j: Matrix2<f64> = view.jacobian(&w);
                    let dj = view.jacobian(&dw);
                    t = t.min(injectivity::first_flip(&j, &dj, &w, &dw));
                }
                t
            })
            .reduce(|| f64::INFINITY, f64::min)
    }
}
