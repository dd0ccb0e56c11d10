//! Layout-wide (or per-chart) summary of the per-face metrics (DESIGN §3).
//!
//! Input: the mesh carrying the layout (`mesh.uvs`, `mesh.corner_uvs`), the
//! [`FaceMetrics`] of that layout, and optionally a subset of faces (a chart).
//! Output: one [`Metrics`], the object the report prints under `global` and per chart.

use serde::{Deserialize, Serialize};

use super::face::{global_scale, selected, FaceMetrics, DISTORTION_CAP};
use super::overlap::overlapping_pairs_among;
use crate::mesh::PolyMesh;

/// Summary metrics of a UV layout or of one chart. Distortions are measured after
/// the scale `s = sqrt(Σ|A_uv| / Σ A_f)` over the same faces, means are weighted by
/// the 3D area `A_f`, and flipped faces enter through `|σ2|` (see
/// [`super::face`]). Every value is finite: an undefined per-face value counts as
/// [`DISTORTION_CAP`]. An empty face set gives the ideal values (angle 1, area 0,
/// stretch 1) and zero counts.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Metrics {
    /// Area-weighted mean of `σ1/|σ2|` (1 is conformal).
    pub angle_distortion_mean: f64,
    /// Largest `σ1/|σ2|`.
    pub angle_distortion_max: f64,
    /// Area-weighted mean of `|ln(σ1' |σ2'|)|` (0 is area-preserving).
    pub area_distortion_mean: f64,
    /// Largest `|ln(σ1' |σ2'|)|`.
    pub area_distortion_max: f64,
    /// `sqrt(Σ A_f s_f² / Σ A_f)` with `s_f = sqrt((σ1'⁻² + σ2'⁻²)/2)`; at least 1
    /// (Sander et al. 2001).
    pub stretch_l2: f64,
    /// Largest `1/|σ2'|`.
    pub stretch_linf: f64,
    /// Faces with `det J ≤ 0` or an inverted UV fan triangle.
    pub flipped_faces: usize,
    /// Pairs of faces whose UV polygons' interiors intersect.
    pub overlapping_face_pairs: usize,
    /// Total UV polygon area (sum of `|A_uv|`) divided by the unit square's area.
    pub utilization: f64,
}

/// Summarises `face_metrics` (from [`super::face_metrics`]) over `faces` (all faces
/// when `None`; each face listed once; indices without metrics are ignored), with the global scale taken
/// over those faces. Overlaps are counted between pairs of those faces, in the
/// layout `mesh.uvs` / `mesh.corner_uvs`, which must be the one the metrics were
/// computed from (a mesh without corner UVs has no overlaps).
pub fn summarize(mesh: &PolyMesh, face_metrics: &[FaceMetrics], faces: Option<&[u32]>) -> Metrics {
    let s = global_scale(face_metrics, faces);
    let mut count = 0usize;
    let (mut area, mut uv_area) = (0.0, 0.0);
    let (mut angle_sum, mut area_dist_sum, mut stretch_sq_sum) = (0.0, 0.0, 0.0);
    let mut out = Metrics {
        angle_distortion_mean: 1.0,
        angle_distortion_max: 1.0,
        area_distortion_mean: 0.0,
        area_distortion_max: 0.0,
        stretch_l2: 1.0,
        stretch_linf: 0.0,
        flipped_faces: 0,
        overlapping_face_pairs: 0,
        utilization: 0.0,
    };
    for m in selected(face_metrics, faces) {
        let d = m.distortion(s);
        count += 1;
        area += m.area_3d;
        uv_area += m.area_uv.abs();
        angle_sum += m.area_3d * d.angle;
        area_dist_sum += m.area_3d * d.area;
        stretch_sq_sum += m.area_3d * d.stretch_l2 * d.stretch_l2;
        out.angle_distortion_max = out.angle_distortion_max.max(d.angle);
        out.area_distortion_max = out.area_distortion_max.max(d.area);
        out.stretch_linf = out.stretch_linf.max(d.stretch_linf);
        out.flipped_faces += usize::from(m.flipped);
    }
    if count == 0 {
        out.stretch_linf = 1.0;
        return out;
    }
    if area > 0.0 {
        out.angle_distortion_mean = finite_or_cap(angle_sum / area);
        out.area_distortion_mean = finite_or_cap(area_dist_sum / area);
        out.stretch_l2 = finite_or_cap((stretch_sq_sum / area).sqrt());
    }
    // The unit square has area 1.
    out.utilization = finite_or_cap(uv_area);
    if let Some(corner_uvs) = &mesh.corner_uvs {
        out.overlapping_face_pairs =
            overlapping_pairs_among(&mesh.uvs, corner_uvs, mesh, faces).len();
    }
    out
}

fn finite_or_cap(x: f64) -> f64 {
    if x.is_finite() {
        x.min(DISTORTION_CAP)
    } else {
        DISTORTION_CAP
    }
}
