//! Starting layouts: uniform-weight Tutte embedding and least-squares conformal map.

use super::chart::Chart;
use super::cholesky::Cholesky;
use super::energy::Conformal;
use super::newton::Newton;
use super::objective::Objective;
use super::ordering::Ordering;
use super::stopping::StopRules;
use crate::progress::Silent;
use std::f64::consts::PI;

/// Uniform-weight Tutte embedding (Tutte 1963, "How to draw a graph", Proc. London
/// Math. Soc. 13): the outer boundary loop goes on a circle, spaced by 3D arc length,
/// and every other vertex is the average of its neighbours along face edges. Each hole
/// is filled, for this embedding only, by a virtual centre vertex joined to every
/// vertex of the hole's loop. On a disk the result is flip-free with convex faces.
///
/// Returns per-vertex UVs; the circle's circumference is the boundary's 3D length.
pub(crate) fn tutte(chart: &Chart) -> Result<Vec<[f64; 2]>, String> {
    let mesh = chart.mesh;
    let nv = mesh.vertex_count();
    let outer = &chart.loops[0];
    let mut uv = vec![[0.0; 2]; nv];
    let lengths: Vec<f64> = (0..outer.len())
        .map(|i| {
            (mesh.positions[outer[(i + 1) % outer.len()] as usize]
                - mesh.positions[outer[i] as usize])
                .norm()
        })
        .collect();
    let total: f64 = lengths.iter().sum();
    if total.is_nan() || total <= 0.0 {
        return Err("the chart's boundary has zero length".into());
    }
    let radius = total / (2.0 * PI);
    let mut s = 0.0;
    const FIXED: u32 = u32::MAX;
    // Unknown index per vertex (real vertices, then one virtual centre per hole).
    let holes = chart.loops.len() - 1;
    let mut unknown = vec![0u32; nv + holes];
    for (i, &v) in outer.iter().enumerate() {
        let angle = 2.0 * PI * s / total;
        uv[v as usize] = [radius * angle.cos(), radius * angle.sin()];
        unknown[v as usize] = FIXED;
        s += lengths[i];
    }
    let mut count = 0u32;
    for u in unknown.iter_mut().filter(|u| **u != FIXED) {
        *u = count;
        count += 1;
    }
    let m = count as usize;
    // Neighbour lists over all nodes (face edges plus virtual spokes).
    let mut neighbours: Vec<Vec<u32>> = vec![Vec::new(); nv + holes];
    for face in mesh.faces() {
        for i in 0..face.len() {
            let (a, b) = (face[i], face[(i + 1) % face.len()]);
            neighbours[a as usize].push(b);
            neighbours[b as usize].push(a);
        }
    }
    for (h, lp) in chart.loops[1..].iter().enumerate() {
        let centre = (nv + h) as u32;
        for &v in lp {
            neighbours[centre as usize].push(v);
            neighbours[v as usize].push(centre);
        }
    }
    let mut col_ptr = vec![0usize];
    let mut row_idx = Vec::new();
    let mut values = Vec::new();
    let mut rhs = vec![0.0; 2 * m];
    // Column order = unknown order: visit nodes sorted by unknown index.
    let mut order: Vec<usize> = (0..nv + holes).filter(|&i| unknown[i] != FIXED).collect();
    order.sort_by_key(|&i| unknown[i]);
    for &i in &order {
        let nb = &mut neighbours[i];
        nb.sort_unstable();
        nb.dedup();
        let k = unknown[i] as usize;
        let mut column: Vec<(usize, f64)> = vec![(k, nb.len() as f64)];
        for &j in nb.iter() {
            let uj = unknown[j as usize];
            if uj == FIXED {
                rhs[k] += uv[j as usize][0];
                rhs[m + k] += uv[j as usize][1];
            } else if uj as usize > k {
                column.push((uj as usize, -1.0));
            }
        }
        column.sort_unstable_by_key(|e| e.0);
        for (r, v) in column {
            row_idx.push(r);
            values.push(v);
        }
        col_ptr.push(row_idx.len());
    }
    if m > 0 {
        let mut cholesky = Cholesky::analyse(m, &col_ptr, &row_idx)?;
        if !cholesky.factor(&col_ptr, &row_idx, &values) {
            return Err(
                "the Tutte system is singular (a vertex is not connected to the boundary)".into(),
            );
        }
        cholesky.solve(&mut rhs);
    }
    for v in 0..nv {
        if unknown[v] != FIXED {
            let k = unknown[v] as usize;
            uv[v] = [rhs[k], rhs[m + k]];
        }
    }
    Ok(uv)
}

/// The two vertices of the outer boundary loop farthest apart in 3D, lower vertex index
/// first (ties: the first pair in increasing index order). These are the conformal
/// energy's pins.
pub(crate) fn far_pins(chart: &Chart) -> [u32; 2] {
    let mut b: Vec<u32> = chart.loops[0].clone();
    b.sort_unstable();
    let p = &chart.mesh.positions;
    let mut best = (f64::NEG_INFINITY, b[0], b[b.len() - 1]);
    for (i, &a) in b.iter().enumerate() {
        for &c in &b[i + 1..] {
            let d = (p[c as usize] - p[a as usize]).norm_squared();
            if d > best.0 {
                best = (d, a, c);
            }
        }
    }
    [best.1, best.2]
}

/// Least-squares conformal map (Lévy, Petitjean, Ray & Maillot 2002): the minimiser of
/// the conformal energy (with the projection penalty) over the whole chart, with the
/// [`far_pins`] at `(0, 0)` and `(d, 0)`, `d` their 3D distance. The energy is
/// quadratic, so this is one linear solve (one Newton step), analysed with `ordering`.
pub(crate) fn least_squares_conformal(
    chart: &Chart,
    ordering: Ordering,
) -> Result<Vec<[f64; 2]>, String> {
    let pins = far_pins(chart);
    let p = &chart.mesh.positions;
    let d = (p[pins[1] as usize] - p[pins[0] as usize]).norm();
    let mut uv = vec![[0.0; 2]; chart.vertex_count()];
    uv[pins[1] as usize] = [d, 0.0];
    let objective = Objective::new(chart, &Conformal);
    let mut newton = Newton::new(&objective, &pins, false, ordering)?;
    let stop = StopRules {
        max_iterations: 1,
        tolerance: 0.0,
        gradient: 0.0,
    };
    newton.run(&mut uv, &stop, &Silent)?;
    Ok(uv)
}
