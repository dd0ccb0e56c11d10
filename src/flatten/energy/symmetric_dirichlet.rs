//! Symmetric Dirichlet energy `ψ(J) = ‖J‖²_F + ‖J⁻¹‖²_F = σ1² + σ2² + σ1⁻² + σ2⁻²`
//! (Smith & Schaefer 2015, "Bijective parameterization with free boundaries", ACM TOG
//! 34(4)). Minimum 4 exactly at rotations; `+∞` at `det J ≤ 0`, so it keeps faces
//! from flipping when every step is bounded.

use super::{cofactor, isotropic_hessian, signed_svd, Energy};
use nalgebra::{Matrix2, Matrix4};

/// Symmetric Dirichlet energy.
#[derive(Debug, Clone, Copy, Default)]
pub struct SymmetricDirichlet;

impl Energy for SymmetricDirichlet {
    fn value(&self, j: &Matrix2<f64>) -> f64 {
        // In 2D ‖J⁻¹‖² = ‖J‖² / det²J.
        let det = j.determinant();
        if !(det > 0.0) {
            return f64::INFINITY;
        }
        j.norm_squared() * (1.0 + 1.0 / (det * det))
    }

    fn gradient(&self, j: &Matrix2<f64>) -> Matrix2<f64> {
        let det = j.determinant();
        let n2 = j.norm_squared();
        let inv2 = 1.0 / (det * det);
        j * (2.0 * (1.0 + inv2)) - cofactor(j) * (2.0 * n2 * inv2 / det)
    }

    fn hessian(&self, j: &Matrix2<f64>, project: bool) -> Matrix4<f64> {
        let svd = signed_svd(j);
        let [s1, s2] = svd.sigma;
        let p3 = (s1 * s2).powi(3);
        let h_sigma = Matrix2::new(2.0 + 6.0 / s1.powi(4), 0.0, 0.0, 2.0 + 6.0 / s2.powi(4));
        // (ψ₁ ± ψ₂)/(σ1 ± σ2) with ψᵢ = 2σᵢ − 2σᵢ⁻³, simplified so that σ1 = σ2 is exact.
        let twist = 2.0 - 2.0 * (s1 * s1 - s1 * s2 + s2 * s2) / p3;
        let flip = 2.0 + 2.0 * (s1 * s1 + s1 * s2 + s2 * s2) / p3;
        isotropic_hessian(&svd, &h_sigma, twist, flip, project)
    }

    fn is_barrier(&self) -> bool {
        true
    }
}
