//! ARAP local–global iterations (Liu, Zhang, Xu, Gotsman & Gortler 2008, "A local/global
//! approach to mesh parameterization", SGP). Local step: every face's closest rotation
//! `R_f` to its Jacobian. Global step: the UVs minimising
//! `Σ_f A_f ‖J_f − R_f‖² + λ Σ_f ‖P_f D_f W_f‖²`, whose normal equations have the
//! polygon Laplacian `L(λ)` (DESIGN §1) as matrix: it is factored once per chart, and
//! each iteration is one solve with two right-hand sides (u and v).

use super::assembly::{gradient_gather, Dofs, PINNED};
use super::cholesky::Cholesky;
use super::energy::{closest_rotation, Energy};
use super::objective::Objective;
use super::stopping::{timed, Outcome, StopRules};
use crate::operators::global::laplacian;
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
    let dofs = Dofs::new(chart.vertex_count(), &[pin]);
    let free = dofs.free;
    let l = timed(&mut out.clocks.setup, || {
        laplacian(chart.mesh, chart.lambda)
    })
    .map_err(|e| format!("cannot assemble L(λ): {e}"))?;
    // Lower triangle over free vertices, and the pinned vertex's column.
    let mut col_ptr = vec![0usize];
    let mut row_idx = Vec::new();
    let mut values = Vec::new();
    let mut pinned_column = vec![0.0; free];
    let mut columns: Vec<(usize, usize)> = (0..chart.vertex_count())
        .filter(|&v| dofs.index[v] != PINNED)
        .map(|v| (dofs.index[v] as usize, v))
        .collect();
    columns.sort_unstable();
    for &(k, v) in &columns {
        let rows = l.row_idx_of_col_raw(v);
        let vals = l.val_of_col(v);
        let mut entries: Vec<(usize, f64)> = Vec::new();
        for (r, &x) in rows.iter().zip(vals) {
            let kr = dofs.index[*r];
            if kr == PINNED {
                pinned_column[k] += x;
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
    let mut cholesky = timed(&mut out.clocks.setup, || {
        Cholesky::analyse(free, &col_ptr, &row_idx)
    })?;
    out.clocks.factorizations += 1;
    if free > 0
        && !timed(&mut out.clocks.factor, || {
            cholesky.factor(&col_ptr, &row_idx, &values)
        })
    {
        return Err("the Laplacian L(λ) is not positive definite; is a face degenerate?".into());
    }
    let gather = gradient_gather(chart, &dofs)?;
    let pinned_uv = uv[pin as usize];
    let mut rhs_buf = vec![0.0; 2 * chart.mesh.corner_count()];
    let mut rhs = vec![0.0; 2 * free];
    let mut columns_rhs = vec![0.0; 2 * free];
    let mut previous: Option<f64> = None;
    loop {
        let e = timed(&mut out.clocks.evaluate, || {
            local_step(objective, uv, &mut rhs_buf)
        });
        out.record(e);
        if let Some(p) = previous {
            out.iterations += 1;
            progress.advance(out.iterations as u64);
            if stop.stalled(p, e) || handoff.is_some_and(|b| stop.too_slow(&out.history, b)) {
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
            for k in 0..free {
                columns_rhs[k] = rhs[2 * k] - pinned_column[k] * pinned_uv[0];
                columns_rhs[free + k] = rhs[2 * k + 1] - pinned_column[k] * pinned_uv[1];
            }
            cholesky.solve(&mut columns_rhs);
        });
        for (v, p) in uv.iter_mut().enumerate() {
            let k = dofs.index[v];
            if k != PINNED {
                *p = [columns_rhs[k as usize], columns_rhs[free + k as usize]];
            }
        }
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
