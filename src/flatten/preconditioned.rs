//! L-BFGS whose initial inverse Hessian is the factored polygon Laplacian `L(λ)⁻¹`
//! (Liu, Bouaziz & Kavan 2017, "Quasi-Newton methods for real-time simulation of
//! hyperelastic materials", ACM TOG 36(3); used for distortion energies by Zhu,
//! Bridson & Kaufman 2018, "Blended cured quasi-Newton for distortion optimization",
//! ACM TOG 37(4)). `L(λ)` is factored once per chart, so an iteration costs one
//! gradient, two triangular solves and a line search: about what local–global costs,
//! and much less than a Newton step, whose matrix changes every time.
//!
//! The two-loop recursion is Nocedal's (1980, Math. Comp. 35) with `H₀ = γ L⁻¹`,
//! `γ = sᵀLs / sᵀy` from the latest pair (the Hessian's curvature along the last step
//! relative to the Laplacian's). argmin's L-BFGS has no custom `H₀`, hence this
//! loop. The line search is Newton's: its first trial stops short of the first flip
//! for barrier energies (Smith & Schaefer 2015), then it halves until the Armijo
//! condition holds.

use super::assembly::gradient_gather;
use super::laplacian_system::PinnedLaplacian;
use super::objective::Objective;
use super::stopping::{Outcome, StopRules};
use super::Stage;
use crate::progress::Progress;
use std::collections::VecDeque;

/// Correction pairs kept (common practice, no published source).
const MEMORY: usize = 8;
/// Armijo sufficient-decrease constant (common practice, no published source).
const ARMIJO: f64 = 1e-4;
/// Fraction of the distance to the first flip taken as the first trial step.
const FLIP_MARGIN: f64 = 0.9;
/// Halvings before the line search gives up.
const MAX_HALVINGS: usize = 60;
/// Iterations over which the rate of convergence is judged for a handoff (see
/// [`StopRules::too_slow`]): quasi-Newton decreases are uneven from one iteration to
/// the next.
const RATE_WINDOW: usize = 3;

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// One correction pair `s = x₊ − x`, `y = g₊ − g` with `ρ = 1 / sᵀy`.
struct Pair {
    s: Vec<f64>,
    y: Vec<f64>,
    rho: f64,
}

/// Minimises `objective` from `uv` (updated in place) with the vertices `pins` held. With
/// `handoff`, it also stops once its rate of convergence says it will not stall
/// within that many iterations ([`StopRules::too_slow`]).
pub(crate) fn run(
    objective: &Objective,
    pins: &[u32],
    uv: &mut [[f64; 2]],
    stop: &StopRules,
    handoff: Option<usize>,
    progress: &dyn Progress,
) -> Result<Outcome, String> {
    let chart = objective.chart;
    let mut out = Outcome::default();
    let mut laplacian = PinnedLaplacian::new(chart, pins, &mut out.clocks)?;
    let dofs = laplacian.dofs.clone();
    let gather = gradient_gather(chart, &dofs)?;
    let n = 2 * dofs.free;
    let mut buf = vec![0.0; 2 * chart.mesh.corner_count()];
    let mut grad = vec![0.0; n];
    let mut evaluate = |uv: &[[f64; 2]], grad: &mut [f64], out: &mut Outcome| {
        out.clocks.time(Stage::Evaluate, || {
            let e = objective.evaluate(uv, &mut buf, None);
            gather.apply(&buf, grad);
            e
        })
    };
    let mut energy = evaluate(uv, &mut grad, &mut out);
    if !energy.is_finite() {
        return Err(
            "the energy is not finite at the start; a face is flipped or degenerate".into(),
        );
    }
    out.record(energy);
    let mut pairs: VecDeque<Pair> = VecDeque::with_capacity(MEMORY);
    let mut gamma = 1.0;
    let mut step = vec![0.0; n];
    let mut alphas = [0.0; MEMORY];
    let mut duv = vec![[0.0; 2]; uv.len()];
    let mut trial = uv.to_vec();
    let mut next_grad = vec![0.0; n];
    let mut restarted = false;
    while out.iterations < stop.max_iterations && n > 0 {
        let g_max = grad.iter().fold(0.0f64, |m, g| m.max(g.abs()));
        if stop.stationary(g_max) {
            break;
        }
        // Two-loop recursion: step = −H g.
        step.copy_from_slice(&grad);
        for (i, p) in pairs.iter().enumerate().rev() {
            alphas[i] = p.rho * dot(&p.s, &step);
            for (q, y) in step.iter_mut().zip(&p.y) {
                *q -= alphas[i] * y;
            }
        }
        out.clocks.time(Stage::Solve, || laplacian.solve(&mut step));
        step.iter_mut().for_each(|q| *q *= gamma);
        for (i, p) in pairs.iter().enumerate() {
            let beta = p.rho * dot(&p.y, &step);
            for (r, s) in step.iter_mut().zip(&p.s) {
                *r += (alphas[i] - beta) * s;
            }
        }
        step.iter_mut().for_each(|r| *r = -*r);
        let mut slope = dot(&grad, &step);
        if slope.is_nan() || slope >= 0.0 {
            // The curvature pairs went bad: restart from the preconditioned gradient.
            pairs.clear();
            step.copy_from_slice(&grad);
            out.clocks.time(Stage::Solve, || laplacian.solve(&mut step));
            step.iter_mut().for_each(|r| *r *= -gamma);
            slope = dot(&grad, &step);
            if slope.is_nan() || slope >= 0.0 {
                break;
            }
        }
        let mut bounded = false;
        let accepted = out.clocks.time(Stage::LineSearch, || {
            duv.iter_mut().for_each(|d| *d = [0.0; 2]);
            dofs.scatter(&step, &mut duv);
            let mut t: f64 = 1.0;
            if objective.energy.is_barrier() {
                let bound = FLIP_MARGIN * objective.first_flip(uv, &duv);
                bounded = bound < 1.0;
                t = t.min(bound);
            }
            for _ in 0..MAX_HALVINGS {
                for ((p, q), d) in trial.iter_mut().zip(uv.iter()).zip(&duv) {
                    *p = [q[0] + t * d[0], q[1] + t * d[1]];
                }
                let e_new = objective.value(&trial);
                if e_new <= energy + ARMIJO * t * slope {
                    return Some(t);
                }
                t *= 0.5;
            }
            None
        });
        let Some(t) = accepted else {
            out.cut_short = bounded;
            break;
        };
        uv.copy_from_slice(&trial);
        let e_new = evaluate(uv, &mut next_grad, &mut out);
        step.iter_mut().for_each(|s| *s *= t);
        let y: Vec<f64> = next_grad.iter().zip(&grad).map(|(a, b)| a - b).collect();
        let sy = dot(&step, &y);
        if sy > f64::EPSILON * dot(&step, &step).sqrt() * dot(&y, &y).sqrt() {
            gamma = laplacian.quadratic_form(&step) / sy;
            if pairs.len() == MEMORY {
                pairs.pop_front();
            }
            pairs.push_back(Pair {
                s: step.clone(),
                y,
                rho: 1.0 / sy,
            });
        }
        std::mem::swap(&mut grad, &mut next_grad);
        out.iterations += 1;
        out.record(e_new);
        progress.advance(out.iterations as u64);
        let before = energy;
        energy = e_new;
        if stop.stalled(before, e_new) && bounded && !pairs.is_empty() && !restarted {
            // A stall on a step the flip bound shortened is a blocked direction, not
            // convergence: forget the pairs and go on once along the preconditioned
            // gradient.
            pairs.clear();
            restarted = true;
            continue;
        }
        restarted = false;
        if stop.stalled(before, e_new)
            || handoff.is_some_and(|b| stop.too_slow(&out.history, b, RATE_WINDOW))
        {
            out.cut_short = bounded;
            break;
        }
    }
    Ok(out)
}
