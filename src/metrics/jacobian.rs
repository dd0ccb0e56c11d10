//! Per-face Jacobian of a UV map and its signed singular values.
//!
//! `jacobian`: inputs are one face's n 3D corners (length unit) and its n UV corners
//! (UV unit), in the same order; output is the 2×2 Jacobian `J_f = (G2_f W_f)ᵀ`
//! (UV unit per length unit; row 0 is ∇u, row 1 is ∇v in the face's tangent frame
//! of [`crate::operators::face::tangent_frame`]).
//! `signed_singular_values`: input a 2×2 matrix, output `(σ1, σ2)` with
//! `σ1 ≥ |σ2|` and `σ2 < 0` exactly when the determinant is negative.

use nalgebra::{Matrix2, Point2, Point3};

use crate::operators::face::{self, FaceError};

/// Jacobian `J_f = (G2_f W_f)ᵀ` (2×2) of the map from face `f` to its UV polygon,
/// using the polygon gradient `G2_f` of [`face::gradient_2d`] (de Goes, Butts &
/// Desbrun 2020). Exact for an affine map of a planar face.
///
/// `corners` and `uv_corners` must have the same length n ≥ 3, else
/// [`FaceError::UvCountMismatch`].
pub fn jacobian(
    corners: &[Point3<f64>],
    uv_corners: &[Point2<f64>],
) -> Result<Matrix2<f64>, FaceError> {
    if uv_corners.len() != corners.len() {
        return Err(FaceError::UvCountMismatch {
            corners: corners.len(),
            uvs: uv_corners.len(),
        });
    }
    let g2 = face::gradient_2d(corners)?;
    let mut j = Matrix2::zeros();
    for (k, w) in uv_corners.iter().enumerate() {
        // J = (G2 W)ᵀ: J[r][c] = Σ_k W[k][r] G2[c][k].
        for c in 0..2 {
            j[(0, c)] += w.x * g2[(c, k)];
            j[(1, c)] += w.y * g2[(c, k)];
        }
    }
    Ok(j)
}

/// Signed singular values `(σ1, σ2)` of a 2×2 matrix in closed form: with
/// `E = (a+d)/2`, `F = (a−d)/2`, `G = (c+b)/2`, `H = (c−b)/2`,
/// `σ1 = √(E²+H²) + √(F²+G²)` and `σ2 = √(E²+H²) − √(F²+G²)`, so `σ1 σ2 = det`
/// and `σ2 < 0` when the matrix reverses orientation.
pub fn signed_singular_values(m: &Matrix2<f64>) -> (f64, f64) {
    let (a, b, c, d) = (m[(0, 0)], m[(0, 1)], m[(1, 0)], m[(1, 1)]);
    let e = 0.5 * (a + d);
    let f = 0.5 * (a - d);
    let g = 0.5 * (c + b);
    let h = 0.5 * (c - b);
    let q = e.hypot(h);
    let r = f.hypot(g);
    (q + r, q - r)
}
