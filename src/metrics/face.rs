//! Per-face distortion of a UV layout (DESIGN §3).
//!
//! Input: a mesh (3D corners), UV values (UV unit) and one UV index per face corner
//! (same layout as `mesh.face_vertices`). Output: one [`FaceMetrics`] per face.
//!
//! Conventions, applied everywhere a singular value enters a formula:
//! - flipped faces (`σ2 < 0`) are measured by `|σ2|`, i.e. by the magnitude of the
//!   stretch; they are counted separately in `flipped_faces`;
//! - a value that would be infinite or undefined (a UV polygon collapsed to a segment
//!   or a point, `σ2 = 0`) is reported as [`DISTORTION_CAP`]. Such faces have
//!   `det J = 0` and so always count as flipped. No value is ever NaN.

use nalgebra::{Point2, Point3};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::jacobian::{jacobian, signed_singular_values};
use crate::error::Result;
use crate::mesh::PolyMesh;
use crate::operators::face;
use crate::operators::global::{checked_face, checked_face_range, face_error, mesh_error};

/// Stand-in for an infinite or undefined distortion (collapsed UV faces).
pub const DISTORTION_CAP: f64 = 1.0e9;

/// Distortion of one face. Areas are unsigned except `area_uv`; the last four fields
/// are measured after the global scale `s = sqrt(Σ|A_uv| / Σ A_f)` over all faces of
/// the mesh (see [`FaceMetrics::distortion`] for other scales).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FaceMetrics {
    /// 3D area `A_f = |a_f|` (length unit²).
    pub area_3d: f64,
    /// Signed shoelace area of the UV polygon (UV unit²; negative when its corners
    /// run clockwise).
    pub area_uv: f64,
    /// Larger singular value of `J_f` (UV unit per length unit).
    pub sigma1: f64,
    /// Signed smaller singular value of `J_f`: negative when `det J_f < 0`.
    pub sigma2: f64,
    /// `det J_f ≤ 0`, or a UV fan triangle `(c_uv, w_i, w_{i+1})` with signed area
    /// `≤ 0` (`c_uv` the mean of the UV corners).
    pub flipped: bool,
    /// `σ1 / |σ2|` (1 is conformal).
    pub angle_distortion: f64,
    /// `|ln(σ1' |σ2'|)|` (0 is area-preserving).
    pub area_distortion: f64,
    /// `sqrt((σ1'⁻² + σ2'⁻²) / 2)` (Sander et al. 2001; 1 is isometric).
    pub stretch_l2: f64,
    /// `1 / |σ2'|`, the largest stretch of a unit UV vector back onto the surface.
    pub stretch_linf: f64,
}

/// The four scale-dependent distortions of one face.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Distortion {
    /// `σ1 / |σ2|`.
    pub angle: f64,
    /// `|ln(σ1' |σ2'|)|`.
    pub area: f64,
    /// `sqrt((σ1'⁻² + σ2'⁻²) / 2)`.
    pub stretch_l2: f64,
    /// `1 / |σ2'|`.
    pub stretch_linf: f64,
}

fn capped(x: f64) -> f64 {
    if x.is_nan() || x > DISTORTION_CAP {
        DISTORTION_CAP
    } else {
        x
    }
}

impl FaceMetrics {
    /// Distortions after dividing the singular values by the scale `s` (UV unit per
    /// length unit, > 0), each capped at [`DISTORTION_CAP`].
    pub fn distortion(&self, s: f64) -> Distortion {
        let s1 = self.sigma1 / s;
        let s2 = self.sigma2.abs() / s;
        Distortion {
            angle: capped(self.sigma1 / self.sigma2.abs()),
            area: capped((s1 * s2).ln().abs()),
            stretch_l2: capped(((s1.powi(-2) + s2.powi(-2)) * 0.5).sqrt()),
            stretch_linf: capped(1.0 / s2),
        }
    }

    fn with_scale(mut self, s: f64) -> Self {
        let d = self.distortion(s);
        self.angle_distortion = d.angle;
        self.area_distortion = d.area;
        self.stretch_l2 = d.stretch_l2;
        self.stretch_linf = d.stretch_linf;
        self
    }
}

/// Global scale `s = sqrt(Σ|A_uv| / Σ A_f)` over `faces` (all when `None`; indices
/// past the end are ignored). Falls back to 1 when the UV area is zero (then every
/// distortion is capped anyway) or no face is given.
pub fn global_scale(metrics: &[FaceMetrics], faces: Option<&[u32]>) -> f64 {
    let (mut uv, mut area) = (0.0, 0.0);
    for m in selected(metrics, faces) {
        uv += m.area_uv.abs();
        area += m.area_3d;
    }
    let s = (uv / area).sqrt();
    if s.is_finite() && s > 0.0 {
        s
    } else {
        1.0
    }
}

/// The metrics of `faces` (all when `None`), skipping indices past the end.
pub(crate) fn selected<'a>(
    metrics: &'a [FaceMetrics],
    faces: Option<&'a [u32]>,
) -> Box<dyn Iterator<Item = &'a FaceMetrics> + 'a> {
    match faces {
        None => Box::new(metrics.iter()),
        Some(ids) => Box::new(ids.iter().filter_map(|&f| metrics.get(f as usize))),
    }
}

/// Signed shoelace area of a 2D polygon (about its corner mean, to limit round-off).
pub fn signed_area(poly: &[Point2<f64>]) -> f64 {
    let c = mean(poly);
    let n = poly.len();
    let mut twice = 0.0;
    for i in 0..n {
        let p = poly[i] - c;
        let q = poly[(i + 1) % n] - c;
        twice += p.x * q.y - p.y * q.x;
    }
    0.5 * twice
}

fn mean(poly: &[Point2<f64>]) -> Point2<f64> {
    let mut s = nalgebra::Vector2::zeros();
    for p in poly {
        s += p.coords;
    }
    Point2::from(s / poly.len().max(1) as f64)
}

/// `x ≤ 0` or NaN (an overflowed product counts as degenerate).
fn not_positive(x: f64) -> bool {
    x.is_nan() || x <= 0.0
}

/// Whether some fan triangle `(c_uv, w_i, w_{i+1})` of a UV polygon, `c_uv` the mean
/// of its corners, has signed area `≤ 0` (DESIGN §2, Injectivity).
pub fn has_inverted_fan_triangle(poly: &[Point2<f64>]) -> bool {
    let c = mean(poly);
    let n = poly.len();
    (0..n).any(|i| {
        let p = poly[i] - c;
        let q = poly[(i + 1) % n] - c;
        not_positive(p.x * q.y - p.y * q.x)
    })
}

/// Metrics of one face from its 3D corners and UV corners (same order and length).
/// Fields that depend on the global scale are measured at scale 1.
pub fn face_metric(
    corners: &[Point3<f64>],
    uv_corners: &[Point2<f64>],
) -> Result<FaceMetrics, face::FaceError> {
    let (area_3d, _) = face::area_normal(corners)?;
    let j = jacobian(corners, uv_corners)?;
    let (sigma1, sigma2) = signed_singular_values(&j);
    let flipped = not_positive(j.determinant()) || has_inverted_fan_triangle(uv_corners);
    let m = FaceMetrics {
        area_3d,
        area_uv: signed_area(uv_corners),
        sigma1,
        sigma2,
        flipped,
        angle_distortion: 0.0,
        area_distortion: 0.0,
        stretch_l2: 0.0,
        stretch_linf: 0.0,
    };
    Ok(m.with_scale(1.0))
}

/// Metrics of every face of `mesh` under the UV layout `uvs` / `corner_uvs`
/// (`corner_uvs[k]` is the UV index of corner `k`, same layout as
/// `mesh.face_vertices`). The scale-dependent fields use the global scale over all
/// faces ([`global_scale`]).
///
/// Errors ([`crate::Error::Mesh`], naming the face) when `corner_uvs` does not have one entry
/// per corner, a UV index is out of range, a UV value is not finite, or a face has no
/// operators (fewer than 3 corners, zero area, bad vertex index).
pub fn face_metrics(
    mesh: &PolyMesh,
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
) -> Result<Vec<FaceMetrics>> {
    if corner_uvs.len() != mesh.corner_count() {
        return Err(mesh_error(format!(
            "the UV layout has {} corner UV indices for {} face corners",
            corner_uvs.len(),
            mesh.corner_count()
        )));
    }
    let results: Vec<Result<FaceMetrics>> = (0..mesh.face_count())
        .into_par_iter()
        .map(|f| {
            let (_, corners) = checked_face(mesh, f)?;
            let range = checked_face_range(mesh, f)?;
            let uv_corners = corner_uvs
                .get(range)
                .unwrap_or_default()
                .iter()
                .map(|&t| match uvs.get(t as usize) {
                    Some(p) if p.x.is_finite() && p.y.is_finite() => Ok(*p),
                    Some(_) => Err(face_error(mesh, f, "has a non-finite UV value")),
                    None => Err(face_error(
                        mesh,
                        f,
                        format!(
                            "uses UV {}, but the layout has only {} UVs",
                            t as usize + 1,
                            uvs.len()
                        ),
                    )),
                })
                .collect::<Result<Vec<_>>>()?;
            face_metric(&corners, &uv_corners).map_err(|e| face_error(mesh, f, e))
        })
        .collect();
    let metrics = results.into_iter().collect::<Result<Vec<_>>>()?;
    let s = global_scale(&metrics, None);
    Ok(metrics.into_iter().map(|m| m.with_scale(s)).collect())
}
