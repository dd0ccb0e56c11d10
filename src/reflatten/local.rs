//! Re-flattening one chart whose surface was edited (same topology).
//!
//! The chart keeps its previous texel density `s_c = sqrt(Σ|A_uv| / Σ A_3d)` (its
//! previous UV area over its previous 3D area). Its previous UVs, divided by `s_c`
//! (and reflected when they were mirrored, since the engine flattens unmirrored), are
//! the warm start. Two ways, the first that works:
//!
//! 1. **Local**: the vertices that moved plus [`MARGIN_RINGS`] rings of faces around
//!    them are free; every other vertex is held where it was (with `hold_boundary`,
//!    the chart's boundary is held too, so its outline cannot change). The chosen
//!    energy is minimised over the free vertices only, on the faces that touch them
//!    ([`crate::flatten::solve_chart_held`]); the held part keeps its previous UVs
//!    exactly, so nothing outside the edited region drifts, and a fold elsewhere in
//!    a hand-made previous layout does not stop the solve.
//! 2. **Whole**: when nothing would be held (the whole chart moved) or the local
//!    solve cannot start, the whole chart is flattened from the warm start
//!    ([`crate::flatten::solve_chart`]) and put back by the best rotation and
//!    translation onto its previous UVs at scale `s_c` ([`super::place::fit`]),
//!    mirrored when it was.

use nalgebra::{DVector, Matrix2x3, Point2, Point3, Vector3};

use super::place::fit;
use crate::charts::Chart;
use crate::error::Result;
use crate::flatten::{self, SolveOptions, Start};
use crate::mesh::PolyMesh;
use crate::metrics::signed_area;
use crate::operators::face::{gradient, vector_area};
use crate::progress::Silent;

/// Rings of faces around the moved vertices that may move with them.
pub const MARGIN_RINGS: usize = 3;

/// How a changed chart was re-flattened.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// Only the edited region moved.
    Local,
    /// The whole chart was flattened again and fitted back.
    Whole,
}

/// A re-flattened chart.
#[derive(Debug, Clone)]
pub struct Resolved {
    /// Final UV of every chart vertex, in the previous layout's units.
    pub uvs: Vec<Point2<f64>>,
    /// Solver iterations.
    pub iterations: usize,
    /// The solver that ran.
    pub solver: String,
    /// Energy history of the solve.
    pub history: Vec<f64>,
    /// Which way it went.
    pub method: Method,
}

/// The inputs that describe one chart of the edit.
pub struct ChartEdit<'a> {
    /// The edited mesh.
    pub edited: &'a PolyMesh,
    /// The previous mesh (same topology: same vertex and face numbering).
    pub previous: &'a PolyMesh,
    /// The chart (of the edited mesh).
    pub chart: &'a Chart,
    /// Previous UV of every chart vertex.
    pub previous_uvs: &'a [Point2<f64>],
    /// Per mesh vertex: whether the edit moved it.
    pub moved: &'a [bool],
    /// Scale to keep when the chart's own previous density is undefined.
    pub fallback_scale: f64,
}

/// Re-flattens a changed chart (module notes).
pub fn resolve(edit: &ChartEdit, opts: &SolveOptions, hold_boundary: bool) -> Result<Resolved> {
    let chart = edit.chart;
    let faces = chart.local_faces(edit.edited);
    let scale = density(edit, &faces);
    let mirror = chart.mirrored_in_input;
    let sign = if mirror { -1.0 } else { 1.0 };
    let start: Vec<Point2<f64>> = edit
        .previous_uvs
        .iter()
        .map(|p| Point2::new(sign * p.x / scale, p.y / scale))
        .collect();
    let chart_mesh = chart.mesh(edit.edited);

    let held = held_vertices(edit, &faces, hold_boundary);
    if !held.is_empty() && held.len() < start.len() {
        let rest = PolyMesh {
            positions: rest_positions(edit, &faces, &start, scale, sign),
            ..chart_mesh.clone()
        };
        if let Some(r) = solve_region(&rest, &faces, &start, &held, opts) {
            let uvs = r
                .uvs
                .iter()
                .zip(edit.previous_uvs)
                .zip(&r.free)
                .map(|((p, before), &free)| {
                    if free {
                        Point2::new(sign * p.x * scale, p.y * scale)
                    } else {
                        *before
                    }
                })
                .collect();
            return Ok(Resolved {
                uvs,
                iterations: r.iterations,
                solver: r.solver,
                history: r.history,
                method: Method::Local,
            });
        }
    }
    let solution = flatten::solve_chart(&chart_mesh, opts, Start::Given(&start), &Silent)?;
    let placed = fit(&solution.uvs, edit.previous_uvs, scale, mirror);
    Ok(Resolved {
        uvs: solution.uvs.iter().map(|p| placed.apply(p)).collect(),
        iterations: solution.iterations,
        solver: solution.solver.to_string(),
        history: solution.history,
        method: Method::Whole,
    })
}

/// A local solve: UVs of every chart vertex (held ones unchanged) in the solve's
/// frame, and which vertices were free.
struct Region {
    uvs: Vec<Point2<f64>>,
    free: Vec<bool>,
    iterations: usize,
    solver: String,
    history: Vec<f64>,
}

/// Minimises over the free vertices: first on the faces that touch a free vertex
/// only (faces whose corners are all held add a constant to the energy, and one of
/// them folded in the previous layout would stop a barrier energy from starting),
/// then, if that region is not a valid chart (two separate pieces, say), on the
/// whole chart. `None` when neither works or the result folds.
fn solve_region(
    chart_mesh: &PolyMesh,
    faces: &[Vec<u32>],
    start: &[Point2<f64>],
    held: &[u32],
    opts: &SolveOptions,
) -> Option<Region> {
    let mut free = vec![true; start.len()];
    for &v in held {
        free[v as usize] = false;
    }
    let touching: Vec<u32> = (0..faces.len() as u32)
        .filter(|&f| faces[f as usize].iter().any(|&v| free[v as usize]))
        .collect();
    let (region, to_chart) = chart_mesh.submesh(&touching);
    let attempts = [
        (region, to_chart),
        (chart_mesh.clone(), (0..start.len() as u32).collect()),
    ];
    for (mesh, to_chart) in attempts {
        let local_start: Vec<Point2<f64>> = to_chart.iter().map(|&v| start[v as usize]).collect();
        let local_held: Vec<u32> = (0..to_chart.len() as u32)
            .filter(|&i| !free[to_chart[i as usize] as usize])
            .collect();
        let Ok(solution) =
            flatten::solve_chart_held(&mesh, opts, &local_start, &local_held, &Silent)
        else {
            continue;
        };
        if solution.flipped_faces > 0 {
            continue;
        }
        let mut uvs = start.to_vec();
        for (&v, p) in to_chart.iter().zip(&solution.uvs) {
            uvs[v as usize] = *p;
        }
        return Some(Region {
            uvs,
            free,
            iterations: solution.iterations,
            solver: solution.solver.to_string(),
            history: solution.history,
        });
    }
    None
}

/// The surface the local solve measures distortion against: the previous layout
/// (`start`, in length units) bent by the edit. Each chart vertex sits at its
/// start UV plus its displacement `d = p_new − p_previous` mapped into the layout by
/// the previous map's Jacobian around it (area-weighted over its faces, divided by
/// the density), lifted off the plane by `d`'s component along the previous
/// normal. Faces without a moved vertex are exactly their previous UV polygons, so
/// the energy holds them where the previous layout put them, whatever distortion a
/// hand-made layout gave them; only the edit's change of shape is flattened.
fn rest_positions(
    edit: &ChartEdit,
    faces: &[Vec<u32>],
    start: &[Point2<f64>],
    scale: f64,
    sign: f64,
) -> Vec<Point3<f64>> {
    let n = start.len();
    let mut jacobian = vec![Matrix2x3::zeros(); n];
    let mut normal = vec![Vector3::zeros(); n];
    for (local, &f) in faces.iter().zip(&edit.chart.faces) {
        let Some(corners) = (f as usize)
            .lt(&edit.previous.face_count())
            .then(|| edit.previous.face_corners(f as usize))
        else {
            continue;
        };
        let Ok(g) = gradient(&corners) else {
            continue;
        };
        let u = DVector::from_iterator(
            local.len(),
            local.iter().map(|&v| edit.previous_uvs[v as usize].x),
        );
        let v = DVector::from_iterator(
            local.len(),
            local.iter().map(|&v| edit.previous_uvs[v as usize].y),
        );
        let area_vector = vector_area(&corners);
        let j = Matrix2x3::from_rows(&[(&g * u).transpose(), (&g * v).transpose()])
            * area_vector.norm();
        for &k in local {
            jacobian[k as usize] += j;
            normal[k as usize] += area_vector;
        }
    }
    (0..n)
        .map(|i| {
            let m = edit.chart.vertices[i] as usize;
            let d = match (edit.edited.positions.get(m), edit.previous.positions.get(m)) {
                (Some(a), Some(b)) => a - b,
                _ => Vector3::zeros(),
            };
            let weight = normal[i].norm();
            if !(weight > 0.0) || d == Vector3::zeros() {
                return Point3::new(start[i].x, start[i].y, 0.0);
            }
            let shift = jacobian[i] * d / (weight * scale);
            Point3::new(
                start[i].x + sign * shift.x,
                start[i].y + shift.y,
                normal[i].dot(&d) / weight,
            )
        })
        .collect()
}

/// The chart's previous texel density `sqrt(Σ|A_uv| / Σ A_3d)` over its faces, or
/// the fallback when that is not a positive number.
fn density(edit: &ChartEdit, faces: &[Vec<u32>]) -> f64 {
    let (mut uv, mut area) = (0.0, 0.0);
    for (k, face) in faces.iter().enumerate() {
        let poly: Vec<Point2<f64>> = face
            .iter()
            .filter_map(|&v| edit.previous_uvs.get(v as usize).copied())
            .collect();
        uv += signed_area(&poly).abs();
        let Some(&f) = edit.chart.faces.get(k) else {
            continue;
        };
        if (f as usize) < edit.previous.face_count() {
            area += vector_area(&edit.previous.face_corners(f as usize)).norm();
        }
    }
    let s = (uv / area).sqrt();
    if s.is_finite() && s > 0.0 {
        s
    } else {
        edit.fallback_scale
    }
}

/// Chart vertices held fixed: all but the moved ones and [`MARGIN_RINGS`] rings of
/// faces around them; plus the chart's boundary when `hold_boundary`. Ascending.
fn held_vertices(edit: &ChartEdit, faces: &[Vec<u32>], hold_boundary: bool) -> Vec<u32> {
    let n = edit.chart.vertices.len();
    let mut free: Vec<bool> = edit
        .chart
        .vertices
        .iter()
        .map(|&v| edit.moved.get(v as usize).copied().unwrap_or(false))
        .collect();
    for _ in 0..MARGIN_RINGS {
        let touched: Vec<&Vec<u32>> = faces
            .iter()
            .filter(|f| f.iter().any(|&v| free[v as usize]))
            .collect();
        for face in touched {
            for &v in face {
                free[v as usize] = true;
            }
        }
    }
    if hold_boundary {
        for v in boundary_vertices(faces, n) {
            free[v as usize] = false;
        }
    }
    (0..n as u32).filter(|&v| !free[v as usize]).collect()
}

/// Vertices on edges that only one face of the chart uses.
fn boundary_vertices(faces: &[Vec<u32>], n: usize) -> Vec<u32> {
    let mut edges: Vec<(u32, u32)> = faces
        .iter()
        .flat_map(|f| {
            (0..f.len()).map(move |i| {
                let (a, b) = (f[i], f[(i + 1) % f.len()]);
                (a.min(b), a.max(b))
            })
        })
        .collect();
    edges.sort_unstable();
    let mut on = vec![false; n];
    let mut i = 0;
    while i < edges.len() {
        let mut j = i + 1;
        while j < edges.len() && edges[j] == edges[i] {
            j += 1;
        }
        if j - i == 1 {
            let (a, b) = edges[i];
            on[a as usize] = true;
            on[b as usize] = true;
        }
        i = j;
    }
    (0..n as u32).filter(|&v| on[v as usize]).collect()
}
