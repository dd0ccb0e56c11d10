//! Per-face distortion energies `ψ(J)` of the face Jacobian `J` (2×2, surface → UV,
//! row 0 is ∇u and row 1 is ∇v; dimensionless).
//!
//! Every energy implements [`Energy`]: value, gradient and Hessian in `J`-space. The
//! Hessian acts on `vec(J) = (J₀₀, J₀₁, J₁₀, J₁₁)` (row-major) and can be projected to
//! positive semi-definite for Newton's method. The isotropic energies use the closed
//! form eigensystem of Smith, de Goes & Kim (2019), "Analytic eigensystems for
//! isotropic distortion energies", ACM TOG 38(1): with the signed SVD
//! `J = U diag(σ1, σ2) Vᵀ` the eigenvectors are the two scaling modes `u_i v_iᵀ`
//! (coupled by `∂²ψ/∂σ²`), the twist `(u2 v1ᵀ − u1 v2ᵀ)/√2` with eigenvalue
//! `(ψ₁ + ψ₂)/(σ1 + σ2)` and the flip `(u2 v1ᵀ + u1 v2ᵀ)/√2` with eigenvalue
//! `(ψ₁ − ψ₂)/(σ1 − σ2)` (`ψᵢ = ∂ψ/∂σᵢ`). Projection clamps negative eigenvalues to 0.
//!
//! Adding an energy is adding one file that implements the trait.

mod arap;
mod conformal;
mod symmetric_dirichlet;

pub use arap::{closest_rotation, Arap};
pub use conformal::Conformal;
pub use symmetric_dirichlet::SymmetricDirichlet;

use crate::settings::EnergyKind;
use nalgebra::{Matrix2, Matrix4, Vector4};

/// A distortion energy density `ψ(J)` (per unit of 3D area).
pub trait Energy: Send + Sync {
    /// `ψ(J)`; `+∞` where the energy is not defined (barrier energies at `det J ≤ 0`).
    fn value(&self, j: &Matrix2<f64>) -> f64;
    /// `∂ψ/∂J` (2×2, laid out like `J`).
    fn gradient(&self, j: &Matrix2<f64>) -> Matrix2<f64>;
    /// `∂²ψ/∂vec(J)²` (4×4, `vec` row-major); clamped to positive semi-definite when
    /// `project` is true.
    fn hessian(&self, j: &Matrix2<f64>, project: bool) -> Matrix4<f64>;
    /// True when `ψ → ∞` as `det J → 0⁺`: the solver must start flip-free and bound
    /// every step so that no face flips (Smith & Schaefer 2015).
    fn is_barrier(&self) -> bool;
}

/// The energy implementing `kind`.
pub fn energy(kind: EnergyKind) -> &'static dyn Energy {
    match kind {
        EnergyKind::Arap => &Arap,
        EnergyKind::SymmetricDirichlet => &SymmetricDirichlet,
        EnergyKind::Conformal => &Conformal,
    }
}

/// Signed singular value decomposition `J = U diag(σ1, σ2) Vᵀ` of a 2×2 matrix, with
/// `U`, `V` rotations, `σ1 ≥ |σ2|` and `σ2 < 0` exactly when `det J < 0`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Svd2 {
    /// Left rotation (2×2).
    pub u: Matrix2<f64>,
    /// Signed singular values `[σ1, σ2]`.
    pub sigma: [f64; 2],
    /// Right rotation (2×2).
    pub v: Matrix2<f64>,
}

fn rotation(angle: f64) -> Matrix2<f64> {
    let (s, c) = angle.sin_cos();
    Matrix2::new(c, -s, s, c)
}

/// Closed-form signed SVD of `j` (2×2).
pub fn signed_svd(j: &Matrix2<f64>) -> Svd2 {
    let (a, b, c, d) = (j[(0, 0)], j[(0, 1)], j[(1, 0)], j[(1, 1)]);
    let e = 0.5 * (a + d);
    let f = 0.5 * (a - d);
    let g = 0.5 * (c + b);
    let h = 0.5 * (c - b);
    let q = e.hypot(h);
    let r = f.hypot(g);
    let a1 = g.atan2(f);
    let a2 = h.atan2(e);
    // J = Rot(φ) diag(q + r, q − r) Rot(θ)
    let theta = 0.5 * (a2 - a1);
    let phi = 0.5 * (a2 + a1);
    Svd2 {
        u: rotation(phi),
        sigma: [q + r, q - r],
        v: rotation(-theta),
    }
}

/// `vec(M)` in row-major order `(M₀₀, M₀₁, M₁₀, M₁₁)`.
pub fn vec_row_major(m: &Matrix2<f64>) -> Vector4<f64> {
    Vector4::new(m[(0, 0)], m[(0, 1)], m[(1, 0)], m[(1, 1)])
}

/// Cofactor matrix `cof(J) = ∂ det J / ∂J` (2×2).
pub(crate) fn cofactor(j: &Matrix2<f64>) -> Matrix2<f64> {
    Matrix2::new(j[(1, 1)], -j[(1, 0)], -j[(0, 1)], j[(0, 0)])
}

/// Hessian of an isotropic energy from its eigensystem (Smith, de Goes & Kim 2019).
///
/// `h_sigma`: `∂²ψ/∂σ²` (2×2); `twist`, `flip`: the eigenvalues of the twist and flip
/// modes. Returns the 4×4 Hessian in `vec(J)` (row-major); negative eigenvalues are
/// clamped to 0 when `project` is true.
pub(crate) fn isotropic_hessian(
    svd: &Svd2,
    h_sigma: &Matrix2<f64>,
    twist: f64,
    flip: f64,
    project: bool,
) -> Matrix4<f64> {
    let u1 = svd.u.column(0);
    let u2 = svd.u.column(1);
    let v1 = svd.v.column(0);
    let v2 = svd.v.column(1);
    let d1 = vec_row_major(&(u1 * v1.transpose()));
    let d2 = vec_row_major(&(u2 * v2.transpose()));
    let s = std::f64::consts::FRAC_1_SQRT_2;
    let a = vec_row_major(&(u2 * v1.transpose()));
    let b = vec_row_major(&(u1 * v2.transpose()));
    let t = (a - b) * s;
    let l = (a + b) * s;
    let clamp = |x: f64| if project { x.max(0.0) } else { x };
    let mut h = t * t.transpose() * clamp(twist) + l * l.transpose() * clamp(flip);
    if project {
        // Closed-form eigen-decomposition of the symmetric 2×2 scaling block.
        let (p, q, r) = (h_sigma[(0, 0)], h_sigma[(0, 1)], h_sigma[(1, 1)]);
        let mean = 0.5 * (p + r);
        let radius = (0.5 * (p - r)).hypot(q);
        let angle = 0.5 * (2.0 * q).atan2(p - r);
        let (sn, cs) = angle.sin_cos();
        let e1 = d1 * cs + d2 * sn;
        let e2 = d2 * cs - d1 * sn;
        h += e1 * e1.transpose() * (mean + radius).max(0.0)
            + e2 * e2.transpose() * (mean - radius).max(0.0);
    } else {
        let basis = [d1, d2];
        for (i, di) in basis.iter().enumerate() {
            for (k, dk) in basis.iter().enumerate() {
                h += di * dk.transpose() * h_sigma[(i, k)];
            }
        }
    }
    h
}
