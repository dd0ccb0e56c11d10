//! One face's term of the flattening objective (DESIGN §2):
//!
//! `E_f(W_f) = A_f ψ(J_f) + λ ‖P_f D_f W_f‖²_F`, with `J_f = (G2_f W_f)ᵀ`.
//!
//! Shapes and units (n = the face's arity):
//! - `A_f`: the face's 3D area (length²);
//! - `G2_f`: 2×n tangent-frame gradient (1/length), stored as n columns `[G2₀ᵢ, G2₁ᵢ]`;
//! - `Q_f = λ (P_f D_f)ᵀ (P_f D_f)`: n×n, row-major, the penalty with its weight λ
//!   (length² per UV unit², so that it adds to `A_f ψ`);
//! - `W_f`: the n UV corners (UV units).
//!
//! Local unknowns are ordered `(u₀ … u_{n−1}, v₀ … v_{n−1})`, so with
//! `K_f = blockdiag(G2_f, G2_f)` (4×2n) `vec(J_f) = K_f (u; v)` (row-major `vec`), the
//! gradient is `A_f K_fᵀ vec(∂ψ/∂J) + 2 blockdiag(Q_f, Q_f) (u; v)` and the Hessian
//! `A_f K_fᵀ H_ψ K_f + 2 blockdiag(Q_f, Q_f)`.

use super::energy::Energy;
use crate::operators::face::{self, FaceError};
use nalgebra::{DMatrix, DVector, Matrix2, Point2, Point3};

/// Precomputed data of one face: everything the objective needs from its 3D corners.
#[derive(Debug, Clone, PartialEq)]
pub struct FaceTerm {
    /// 3D area `A_f` (length²).
    pub area: f64,
    /// `G2_f` column by column: `g2[i] = [G2₀ᵢ, G2₁ᵢ]` (1/length).
    pub g2: Vec<[f64; 2]>,
    /// `Q_f = λ (P_f D_f)ᵀ (P_f D_f)`, n×n row-major.
    pub penalty: Vec<f64>,
}

impl FaceTerm {
    /// Precomputes the term of the face with 3D `corners` (n ≥ 3, in order) and
    /// penalty weight `lambda` (≥ 0).
    pub fn new(corners: &[Point3<f64>], lambda: f64) -> Result<Self, FaceError> {
        let (area, _) = face::area_normal(corners)?;
        let g2 = face::gradient_2d(corners)?;
        let n = corners.len();
        let pd = face::projection(corners)? * face::difference(n);
        let q: DMatrix<f64> = pd.transpose() * pd * lambda;
        Ok(FaceTerm {
            area,
            g2: (0..n).map(|i| [g2[(0, i)], g2[(1, i)]]).collect(),
            penalty: (0..n * n).map(|k| q[(k / n, k % n)]).collect(),
        })
    }

    /// Borrowed view of this term.
    pub fn view(&self) -> FaceView<'_> {
        FaceView {
            area: self.area,
            g2: &self.g2,
            penalty: &self.penalty,
        }
    }

    /// `E_f(W_f)` with its gradient (2n) and Hessian (2n×2n), in the local order
    /// described in the module docs; the Hessian is projected to positive
    /// semi-definite when `project` is true. `w` holds the n UV corners.
    pub fn evaluate(
        &self,
        energy: &dyn Energy,
        w: &[Point2<f64>],
        project: bool,
    ) -> (f64, DVector<f64>, DMatrix<f64>) {
        let n = self.g2.len();
        let w: Vec<[f64; 2]> = w.iter().map(|p| [p.x, p.y]).collect();
        let mut grad = vec![0.0; 2 * n];
        let mut packed = vec![0.0; packed_len(n)];
        let view = self.view();
        let value = view.value(energy, &w);
        view.gradient_hessian(energy, &w, &mut grad, Some((&mut packed, project)));
        let hess = DMatrix::from_fn(2 * n, 2 * n, |a, b| {
            packed[packed_index(a.max(b), a.min(b))]
        });
        (value, DVector::from_vec(grad), hess)
    }
}

/// Length of a packed lower-triangular 2n×2n matrix.
pub const fn packed_len(n: usize) -> usize {
    2 * n * (2 * n + 1) / 2
}

/// Index of entry `(a, b)`, `a ≥ b`, in a packed lower-triangular matrix.
pub const fn packed_index(a: usize, b: usize) -> usize {
    a * (a + 1) / 2 + b
}

/// Borrowed face data (see [`FaceTerm`]); what the chart's face table hands out.
#[derive(Debug, Clone, Copy)]
pub struct FaceView<'a> {
    /// 3D area (length²).
    pub area: f64,
    /// `G2_f` columns (n).
    pub g2: &'a [[f64; 2]],
    /// `Q_f`, n×n row-major.
    pub penalty: &'a [f64],
}

impl FaceView<'_> {
    /// `J_f = (G2_f W_f)ᵀ` (2×2) for the n UV corners `w`.
    pub fn jacobian(&self, w: &[[f64; 2]]) -> Matrix2<f64> {
        let mut j = Matrix2::zeros();
        for (g, p) in self.g2.iter().zip(w) {
            for r in 0..2 {
                for k in 0..2 {
                    j[(r, k)] += g[k] * p[r];
                }
            }
        }
        j
    }

    /// The penalty `Σ_c w_cᵀ Q_f w_c` over the two UV components.
    fn penalty_value(&self, w: &[[f64; 2]]) -> f64 {
        let n = w.len();
        let mut e = 0.0;
        for i in 0..n {
            let row = &self.penalty[i * n..(i + 1) * n];
            for (qij, wj) in row.iter().zip(w) {
                e += qij * (w[i][0] * wj[0] + w[i][1] * wj[1]);
            }
        }
        e
    }

    /// `E_f(W_f)`; `+∞` where `ψ` is.
    pub fn value(&self, energy: &dyn Energy, w: &[[f64; 2]]) -> f64 {
        self.area * energy.value(&self.jacobian(w)) + self.penalty_value(w)
    }

    /// Writes the gradient (2n) into `grad` and, when asked, the packed lower triangle
    /// of the Hessian (see [`packed_index`]) into `hess.0`, projected to PSD when
    /// `hess.1` is true.
    pub fn gradient_hessian(
        &self,
        energy: &dyn Energy,
        w: &[[f64; 2]],
        grad: &mut [f64],
        hess: Option<(&mut [f64], bool)>,
    ) {
        let n = w.len();
        let j = self.jacobian(w);
        let dpsi = energy.gradient(&j) * self.area;
        for i in 0..n {
            let g = self.g2[i];
            let row = &self.penalty[i * n..(i + 1) * n];
            for c in 0..2 {
                let qw: f64 = row.iter().zip(w).map(|(q, p)| q * p[c]).sum();
                grad[c * n + i] = dpsi[(c, 0)] * g[0] + dpsi[(c, 1)] * g[1] + 2.0 * qw;
            }
        }
        let Some((packed, project)) = hess else {
            return;
        };
        let h = energy.hessian(&j, project) * self.area;
        for a in 0..2 * n {
            let (ca, ia) = (a / n, a % n);
            let ga = self.g2[ia];
            // Row 2ca + k of K is G2 row k placed in block ca: (Kᵀ H K)_ab = Σ_k,l G2_k,ia H_(2ca+k)(2cb+l) G2_l,ib.
            let mut hk = [0.0; 4];
            for (s, hs) in hk.iter_mut().enumerate() {
                *hs = ga[0] * h[(2 * ca, s)] + ga[1] * h[(2 * ca + 1, s)];
            }
            for b in 0..=a {
                let (cb, ib) = (b / n, b % n);
                let gb = self.g2[ib];
                let mut v = hk[2 * cb] * gb[0] + hk[2 * cb + 1] * gb[1];
                if ca == cb {
                    v += 2.0 * self.penalty[ia * n + ib];
                }
                packed[packed_index(a, b)] = v;
            }
        }
    }
}
