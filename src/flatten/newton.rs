//! Projected Newton: per-face Hessians projected to positive semi-definite (see
//! [`super::energy`]), a sparse Cholesky factorization per step on a pattern analysed
//! once per chart, and a backtracking (Armijo) line search whose first trial never
//! passes the first flip of any face for barrier energies (Smith & Schaefer 2015).
//!
//! Projection keeps every step a descent direction far from the minimum, but near it
//! the clamped negative curvature (a compressed face's twist mode under symmetric
//! Dirichlet, for one) leaves the model too stiff and convergence linear: on a steep
//! bump the energy crept down by a factor of about 0.6 per step for 15-20 steps. So
//! once a full step lowers the energy by at most [`NEAR`] of its value, the next
//! step tries the energy's own Hessian, unprojected: where that matrix is positive
//! definite the step is the true Newton step and convergence is quadratic; where its
//! factorization fails the step is taken with the projected Hessian as before, and
//! the next attempt waits twice as many iterations as the last. Using the
//! unprojected Hessian where it is definite is the idea of Chen et al. 2024,
//! "Trust-region eigenvalue filtering for projected Newton", SIGGRAPH Asia (from
//! memory); the trigger and back-off here are our own.
//!
//! Pinned vertices are removed from the system (one pin removes translations; the
//! conformal energy pins two to fix the similarity). What is left of the rigid-motion
//! null space (rotation) gets a small diagonal shift, raised when a factorization
//! fails.

use super::assembly::{Dofs, NewtonSystem, PINNED};
use super::cholesky::Cholesky;
use super::objective::{hessian_offsets, Objective};
use super::ordering::Ordering;
use super::stopping::{Clocks, Outcome, StopRules};
use super::Stage;
use crate::progress::Progress;
use std::time::{Duration, Instant};

/// Armijo sufficient-decrease constant (common practice, no published source).
const ARMIJO: f64 = 1e-4;
/// Fraction of the distance to the first flip taken as the first trial step
/// (Smith & Schaefer 2015 use a fraction of the bound; 0.9 is our choice).
const FLIP_MARGIN: f64 = 0.9;
/// Halvings before the line search gives up (the energy cannot decrease further in
/// floating point).
const MAX_HALVINGS: usize = 60;
/// Diagonal shift relative to the mean diagonal, first try and growth per failure.
const SHIFT: f64 = 1e-9;
const SHIFT_GROWTH: f64 = 100.0;
const MAX_SHIFTS: usize = 12;
/// Relative decrease of a full step at or below which the next step tries the
/// unprojected Hessian (measured on steep bumps of 100-4 900 faces: 1e-2 made more
/// attempts fail while the Hessian was still indefinite, for no fewer iterations).
const NEAR: f64 = 1e-3;
/// Diagonal shift of the unprojected Hessian, relative to the mean diagonal. Away
/// from the stationary point the rotation about the pin is not an exact null
/// direction of that Hessian (its curvature is `gᵀx`, which can be negative), and
/// 1e-9 let most attempts fail; 1e-4 and more slowed the final convergence.
const EXACT_SHIFT: f64 = 1e-6;

/// A Newton solver for one objective: pattern, symbolic analysis and buffers are
/// built once and reused by every step.
pub(crate) struct Newton<'o, 'c, 'm> {
    objective: &'o Objective<'c, 'm>,
    system: NewtonSystem,
    cholesky: Cholesky,
    hess_offsets: Vec<usize>,
    shift: bool,
    /// When the symbolic analysis began and ended.
    analysis: (Instant, Instant),
}

impl<'o, 'c, 'm> Newton<'o, 'c, 'm> {
    /// Prepares Newton's method on `objective` with the vertices `pins` held fixed.
    /// `shift` adds the small diagonal shift from the first factorization (needed
    /// when a rotation null space is left); `ordering` is the symbolic analysis's
    /// fill-reducing ordering.
    pub fn new(
        objective: &'o Objective<'c, 'm>,
        pins: &[u32],
        shift: bool,
        ordering: Ordering,
    ) -> Result<Self, String> {
        let chart = objective.chart;
        let hess_offsets = hessian_offsets(chart);
        let dofs = Dofs::new(chart.vertex_count(), pins);
        let system = NewtonSystem::new(chart, dofs, &hess_offsets)?;
        let points: Vec<[f64; 3]> = system
            .dofs
            .index
            .iter()
            .zip(&chart.mesh.positions)
            .filter(|(k, _)| **k != PINNED)
            .map(|(_, p)| [p.x, p.y, p.z])
            .collect();
        let clock = Instant::now();
        let cholesky =
            Cholesky::analyse_blocks(&system.col_ptr, &system.row_idx, ordering, &points)?;
        let analysis = (clock, Instant::now());
        Ok(Newton {
            objective,
            system,
            cholesky,
            hess_offsets,
            shift,
            analysis,
        })
    }

    /// Stored entries of the factor of the Newton matrix.
    pub fn factor_entries(&self) -> usize {
        self.cholesky.factor_entries()
    }

    /// Multiply-adds of one numeric factorization of the Newton matrix.
    pub fn factor_flops(&self) -> f64 {
        self.cholesky.flops()
    }

    /// When the symbolic analysis (ordering included) began and ended.
    pub fn analysis_span(&self) -> (Instant, Instant) {
        self.analysis
    }

    /// Assembles the Hessian at `uv` (shifted as the first step would be) and
    /// factors it `repeats` times: the shortest numeric factorization, or `None` when
    /// the matrix is not positive definite.
    pub fn time_factorization(&mut self, uv: &[[f64; 2]], repeats: usize) -> Option<Duration> {
        let chart = self.objective.chart;
        let mut grad_buf = vec![0.0; 2 * chart.mesh.corner_count()];
        let mut hess_buf = vec![0.0; self.hess_offsets[chart.face_count()]];
        let mut values = vec![0.0; self.system.row_idx.len()];
        self.objective.evaluate(
            uv,
            &mut grad_buf,
            Some((&mut hess_buf, &self.hess_offsets, true)),
        );
        self.system.assemble_hessian(&hess_buf, &mut values);
        let diagonal = &self.system.diagonal;
        let mean =
            diagonal.iter().map(|&p| values[p].abs()).sum::<f64>() / diagonal.len().max(1) as f64;
        if self.shift {
            for &p in diagonal {
                values[p] += SHIFT * mean;
            }
        }
        let (col_ptr, row_idx) = (&self.system.col_ptr, &self.system.row_idx);
        (0..repeats.max(1))
            .map(|_| {
                let clock = Instant::now();
                self.cholesky
                    .factor(col_ptr, row_idx, &values)
                    .then(|| clock.elapsed())
            })
            .collect::<Option<Vec<_>>>()?
            .into_iter()
            .min()
    }

    /// Minimises from `uv` (per-vertex UVs, updated in place) until a stop rule holds.
    pub fn run(
        &mut self,
        uv: &mut [[f64; 2]],
        stop: &StopRules,
        progress: &dyn Progress,
    ) -> Result<Outcome, String> {
        let chart = self.objective.chart;
        let n = self.system.n;
        let mut out = Outcome::default();
        let mut grad_buf = vec![0.0; 2 * chart.mesh.corner_count()];
        let mut hess_buf = vec![0.0; self.hess_offsets[chart.face_count()]];
        let mut values = vec![0.0; self.system.row_idx.len()];
        let mut grad = vec![0.0; n];
        let mut step = vec![0.0; n];
        let mut duv = vec![[0.0; 2]; uv.len()];
        let mut trial = uv.to_vec();
        // Whether this iteration uses the energy's own Hessian; failed attempts so
        // far and iterations since the last one.
        let mut exact = false;
        let (mut failures, mut since_failure) = (0u32, 0usize);
        while out.iterations < stop.max_iterations {
            let e = out.clocks.time(Stage::Evaluate, || {
                self.objective.evaluate(
                    uv,
                    &mut grad_buf,
                    Some((&mut hess_buf, &self.hess_offsets, !exact)),
                )
            });
            if !e.is_finite() {
                return Err(
                    "the energy is not finite at the start; a face is flipped or degenerate".into(),
                );
            }
            let energy = e;
            if out.history.is_empty() {
                out.record(e);
            }
            out.clocks.time(Stage::Assemble, || {
                self.system.gradient.apply(&grad_buf, &mut grad);
                self.system.assemble_hessian(&hess_buf, &mut values);
            });
            let g_max = grad.iter().fold(0.0f64, |m, g| m.max(g.abs()));
            if n == 0 || stop.stationary(g_max) {
                break;
            }
            if exact && !self.solve(&mut values, &grad, &mut step, &mut out.clocks, false)? {
                // The energy's own Hessian is not positive definite here: project.
                exact = false;
                failures += 1;
                since_failure = 0;
                out.clocks.time(Stage::Evaluate, || {
                    self.objective.evaluate(
                        uv,
                        &mut grad_buf,
                        Some((&mut hess_buf, &self.hess_offsets, true)),
                    )
                });
                out.clocks.time(Stage::Assemble, || {
                    self.system.assemble_hessian(&hess_buf, &mut values);
                });
            }
            if !exact {
                self.solve(&mut values, &grad, &mut step, &mut out.clocks, true)?;
            }
            let mut slope: f64 = grad.iter().zip(&step).map(|(g, d)| g * d).sum();
            if slope.is_nan() || slope >= 0.0 {
                // Not a descent direction (round-off on a nearly singular system).
                for (d, g) in step.iter_mut().zip(&grad) {
                    *d = -g;
                }
                slope = -grad.iter().map(|g| g * g).sum::<f64>();
            }
            let accepted = out.clocks.time(Stage::LineSearch, || {
                duv.iter_mut().for_each(|d| *d = [0.0; 2]);
                self.system.dofs.scatter(&step, &mut duv);
                let mut t: f64 = 1.0;
                if self.objective.energy.is_barrier() {
                    t = t.min(FLIP_MARGIN * self.objective.first_flip(uv, &duv));
                }
                for _ in 0..MAX_HALVINGS {
                    for ((p, q), d) in trial.iter_mut().zip(uv.iter()).zip(&duv) {
                        *p = [q[0] + t * d[0], q[1] + t * d[1]];
                    }
                    let e_new = self.objective.value(&trial);
                    if e_new <= energy + ARMIJO * t * slope {
                        return Some((e_new, t));
                    }
                    t *= 0.5;
                }
                None
            });
            let Some((e_new, t)) = accepted else {
                break;
            };
            uv.copy_from_slice(&trial);
            out.iterations += 1;
            out.record(e_new);
            progress.advance(out.iterations as u64);
            if stop.stalled(energy, e_new) {
                break;
            }
            since_failure += 1;
            exact = t == 1.0
                && energy - e_new <= NEAR * energy.abs()
                && since_failure >= 1 << failures.min(16);
        }
        if out.history.is_empty() {
            out.record(self.objective.value(uv));
        }
        Ok(out)
    }

    /// Factors `values` (shifted as needed) and solves for the Newton step. With
    /// `grow`, a failed factorization is retried with a growing shift (an error when
    /// none succeeds); without it, `values` is the unprojected Hessian, shifted by
    /// [`EXACT_SHIFT`] once, and `Ok(false)` says it was not positive definite.
    fn solve(
        &mut self,
        values: &mut [f64],
        grad: &[f64],
        step: &mut [f64],
        clocks: &mut Clocks,
        grow: bool,
    ) -> Result<bool, String> {
        let diagonal = &self.system.diagonal;
        let mean =
            diagonal.iter().map(|&p| values[p].abs()).sum::<f64>() / diagonal.len().max(1) as f64;
        let mut shift = match (grow, self.shift) {
            (false, _) => EXACT_SHIFT * mean,
            (true, true) => SHIFT * mean,
            (true, false) => 0.0,
        };
        let mut applied = 0.0;
        for _ in 0..MAX_SHIFTS {
            for &p in diagonal {
                values[p] += shift - applied;
            }
            applied = shift;
            clocks.factorizations += 1;
            let (col_ptr, row_idx) = (&self.system.col_ptr, &self.system.row_idx);
            if clocks.time(Stage::Factor, || {
                self.cholesky.factor(col_ptr, row_idx, values)
            }) {
                for (s, g) in step.iter_mut().zip(grad) {
                    *s = -g;
                }
                clocks.time(Stage::Solve, || self.cholesky.solve(step));
                return Ok(true);
            }
            if !grow {
                return Ok(false);
            }
            shift = if shift > 0.0 {
                shift * SHIFT_GROWTH
            } else {
                SHIFT * mean
            };
        }
        Err("the Newton system stays singular even after regularisation".into())
    }
}
