//! Non-planarity of one face.
//!
//! Input: the face's n ≥ 3 corner positions (any length unit). Output: the largest
//! distance of a corner from the face's least-squares plane divided by the face's
//! diameter (dimensionless; 0 for planar faces and triangles). The plane passes through
//! the centroid with the normal given by the right singular vector of the smallest
//! singular value of the centred n×3 corner matrix, computed as the SVD of its 3×3 Gram
//! matrix `Σ (x_i − c)(x_i − c)ᵀ` (same right singular vectors).

use crate::operators::face::{centroid, diameter};
use nalgebra::{Matrix3, Point3};

/// Largest corner distance from the best-fit plane over the face diameter; 0 for
/// fewer than 4 corners or a face of zero diameter, `NaN` for non-finite input.
pub fn non_planarity(corners: &[Point3<f64>]) -> f64 {
    if corners.len() < 4 {
        return 0.0;
    }
    let d = diameter(corners);
    if d.is_nan() {
        return f64::NAN;
    }
    if d <= 0.0 {
        return 0.0;
    }
    let c = centroid(corners);
    let mut gram = Matrix3::zeros();
    for p in corners {
        let r = (p - c) / d;
        gram += r * r.transpose();
    }
    let svd = gram.svd(false, true);
    let Some(v_t) = svd.v_t else {
        return f64::NAN;
    };
    let smallest = svd
        .singular_values
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))
        .map(|(i, _)| i)
        .unwrap_or(2);
    let normal = v_t.row(smallest).transpose();
    corners
        .iter()
        .map(|p| ((p - c) / d).dot(&normal).abs())
        .fold(0.0, f64::max)
}
