//! ARAP local–global iterations (Liu, Zhang, Xu, Gotsman & Gortler 2008, "A local/global
//! approach to mesh parameterization", SGP). Local step: every face's closest rotation
//! `R_f` to its Jacobian. Global step: the UVs minimising
//! `Σ_f A_f ‖J_f − R_f‖² + λ Σ_f ‖P_f D_f W_f‖²`, whose normal equations have the
//! polygon Laplacian `L(λ)` (DESIGN §1) as matrix: it is factored once per chart, and
//! each iteration is one solve with two right-hand sides (u and v).

use super::assembly::gradient_gather;
use super::energy::{closest_rotation, Energy};
use super::laplacian_system::PinnedLaplacian;
use super::objective::Objective;
use super::stopping::{timed, Outcome, StopRules};
use crate::progress::Progress;
use rayon::prelude::*;

/// Runs local–global ARAP from `uv` (updated in place) with vertex `pin` fixed. With
/// `handoff`, it also stops once its rate of convergence says it will not stall
/// within that many iterations ([`StopRules::too_slow`]).
pub(crate) fn run(
    objective: &Objective,
    pin: u32,
    uv: &mut [[f64; 2]],
    stop: &StopRules,
    handoff: Option<usize>,
    progress: &dyn Progress,
) -> Result<Outcome, String> {
    let chart = objective.chart;
    let mut out = Outcome::default();
    let mut system = PinnedLaplacian::new(chart, &[pin], &mut out.clocks)?;
    let free = system.dofs.free;
    let gather = gradient_gather(chart, &system.dofs)?;
    let mut rhs_buf = vec![0.0; 2 * chart.mesh.corner_count()];
    let mut rhs = vec![0.0; 2 * free];
    let mut previous: Option<f64> = None;
    loop {
        let e = timed(&mut out.clocks.evaluate, || {
            local_step(objective, uv, &mut rhs_buf)
        });
        out.record(e);
        if let Some(p) = previous {
            out.iterations += 1;
            progress.advance(out.iterations as u64);
            if stop.stalled(p, e) || handoff.is_some_and(|b| stop.too_slow(&out.history, b, 1)) {
                break;
            }
        }
        if out.iterations >= stop.max_iterations || free == 0 {
            break;
        }
        timed(&mut out.clocks.assemble, || {
            gather.apply(&rhs_buf, &mut rhs)
        });
        timed(&mut out.clocks.solve, || {
            system.move_pins_right(uv, &mut rhs);
            system.solve(&mut rhs);
        });
        system.dofs.scatter(&rhs, uv);
        previous = Some(e);
    }
    Ok(out)
}

/// Local step: writes each face's right-hand side `A_f G2_fᵀ R_fᵀ` (2 values per
/// corner, u block then v block) into `rhs_buf` and returns `E(uv)`.
fn local_step(objective: &Objective, uv: &[[f64; 2]], rhs_buf: &mut [f64]) -> f64 {
    let chart = objective.chart;
    let energy: &dyn Energy = objective.energy;
    let offsets = chart.offsets();
    let mut parts: Vec<&mut [f64]> = Vec::with_capacity(chart.face_count());
    let mut rest = rhs_buf;
    for f in 0..chart.face_count() {
        let (head, tail) =
            std::mem::take(&mut rest).split_at_mut(2 * (offsets[f + 1] - offsets[f]));
        parts.push(head);
        rest = tail;
    }
    let sums: Vec<f64> = parts
        .into_par_iter()
        .enumerate()
        .with_min_len(256)
        .map_init(Vec::new, |w, (f, out)| {
            chart.gather(f, uv, w);
            let view = chart.view(f);
            let j = view.jacobian(w);
            let r = closest_rotation(&j);
            let n = w.len();
            for (i, g) in view.g2.iter().enumerate() {
                for c in 0..2 {
                    out[c * n + i] = view.area * (g[0] * r[(c, 0)] + g[1] * r[(c, 1)]);
                }
            }
            view.excess(energy, w)
        })
        .collect();
    sums.iter().sum()
}
