//! Least-squares conformal energy `ψ(J) = ½‖J‖²_F − det J = ½(σ1 − σ2)²` (Lévy, Petitjean,
//! Ray & Maillot 2002, "Least squares conformal maps for automatic texture atlas
//! generation", ACM TOG 21(3)). Zero exactly at similarities; quadratic in `J` with a
//! constant positive semi-definite Hessian, so one Newton step is exact.

use super::{cofactor, Energy};
use nalgebra::{Matrix2, Matrix4, Vector4};

/// Least-squares conformal energy.
#[derive(Debug, Clone, Copy, Default)]
pub struct Conformal;

impl Energy for Conformal {
    fn value(&self, j: &Matrix2<f64>) -> f64 {
        // ½((J₀₀ − J₁₁)² + (J₀₁ + J₁₀)²), free of cancellation near similarities.
        0.5 * ((j[(0, 0)] - j[(1, 1)]).powi(2) + (j[(0, 1)] + j[(1, 0)]).powi(2))
    }

    fn gradient(&self, j: &Matrix2<f64>) -> Matrix2<f64> {
        j - cofactor(j)
    }

    fn hessian(&self, _j: &Matrix2<f64>, _project: bool) -> Matrix4<f64> {
        // ψ = ½(a·vec J)² + ½(b·vec J)² with a = (1, 0, 0, −1), b = (0, 1, 1, 0): already PSD.
        let a = Vector4::new(1.0, 0.0, 0.0, -1.0);
        let b = Vector4::new(0.0, 1.0, 1.0, 0.0);
        a * a.transpose() + b * b.transpose()
    }

    fn is_barrier(&self) -> bool {
        false
    }
}
