//! As-rigid-as-possible energy `ψ(J) = (σ1 − 1)² + (σ2 − 1)² = ‖J − R‖²_F`, `R` the
//! closest rotation to `J` (Liu, Zhang, Xu, Gotsman & Gortler 2008, "A local/global
//! approach to mesh parameterization", SGP). Minimum 0 exactly at rotations.

use super::{isotropic_hessian, signed_svd, Energy};
use nalgebra::{Matrix2, Matrix4};

/// As-rigid-as-possible energy.
#[derive(Debug, Clone, Copy, Default)]
pub struct Arap;

/// Closest rotation to `j` (2×2) in the Frobenius norm, `R = U Vᵀ` of the signed SVD.
/// Returns the identity for the one matrix family (`J₀₀ + J₁₁ = J₁₀ − J₀₁ = 0`) where
/// every rotation is equally close.
pub fn closest_rotation(j: &Matrix2<f64>) -> Matrix2<f64> {
    let x = j[(0, 0)] + j[(1, 1)];
    let y = j[(1, 0)] - j[(0, 1)];
    let r = x.hypot(y);
    if r == 0.0 {
        return Matrix2::identity();
    }
    let (c, s) = (x / r, y / r);
    Matrix2::new(c, -s, s, c)
}

impl Energy for Arap {
    fn value(&self, j: &Matrix2<f64>) -> f64 {
        // ‖J‖² − 2 tr(Rᵀ J) + 2 with tr(Rᵀ J) = σ1 + σ2 = |(J₀₀ + J₁₁, J₁₀ − J₀₁)|.
        let trace = (j[(0, 0)] + j[(1, 1)]).hypot(j[(1, 0)] - j[(0, 1)]);
        j.norm_squared() - 2.0 * trace + 2.0
    }

    fn gradient(&self, j: &Matrix2<f64>) -> Matrix2<f64> {
        (j - closest_rotation(j)) * 2.0
    }

    fn hessian(&self, j: &Matrix2<f64>, project: bool) -> Matrix4<f64> {
        let svd = signed_svd(j);
        let sum = svd.sigma[0] + svd.sigma[1];
        // Twist eigenvalue (ψ₁ + ψ₂)/(σ1 + σ2) = 2 − 4/(σ1 + σ2); undefined at σ1 + σ2 = 0
        // where the closest rotation jumps, so that mode gets no curvature there.
        let twist = if sum > 0.0 { 2.0 - 4.0 / sum } else { 0.0 };
        isotropic_hessian(&svd, &(Matrix2::identity() * 2.0), twist, 2.0, project)
    }

    fn is_barrier(&self) -> bool {
        false
    }
}
