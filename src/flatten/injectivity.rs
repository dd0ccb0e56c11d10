//! Flip tests and the flip-free step bound (DESIGN §2 Injectivity; Smith & Schaefer
//! 2015, "Bijective parameterization with free boundaries", ACM TOG 34(4)).
//!
//! A face is flipped when `det J_f ≤ 0` or a triangle of its UV fan `(c, w_i, w_{i+1})`,
//! `c` the mean of the n UV corners, has signed area `≤ 0`. Along a direction each of
//! these is a quadratic in the step `t`, so the first flip is the smallest positive root.

use nalgebra::Matrix2;

/// Mean of the UV corners (UV units).
fn mean(w: &[[f64; 2]]) -> [f64; 2] {
    let k = 1.0 / w.len().max(1) as f64;
    let (x, y) = w.iter().fold((0.0, 0.0), |(x, y), p| (x + p[0], y + p[1]));
    [x * k, y * k]
}

fn cross(p: [f64; 2], q: [f64; 2]) -> f64 {
    p[0] * q[1] - p[1] * q[0]
}

fn sub(p: [f64; 2], q: [f64; 2]) -> [f64; 2] {
    [p[0] - q[0], p[1] - q[1]]
}

/// True when the face with Jacobian `j` (2×2) and UV corners `w` (n, in order) is
/// flipped: `det j ≤ 0` or a UV fan triangle has signed area `≤ 0`.
pub fn is_flipped(j: &Matrix2<f64>, w: &[[f64; 2]]) -> bool {
    if !(j.determinant() > 0.0) {
        return true;
    }
    let c = mean(w);
    let n = w.len();
    (0..n).any(|i| !(cross(sub(w[i], c), sub(w[(i + 1) % n], c)) > 0.0))
}

/// Smallest `t > 0` with `a t² + b t + c = 0`, given `c > 0`; `+∞` when there is none
/// (and 0 when `c ≤ 0`, i.e. already at or past zero).
pub fn smallest_positive_root(a: f64, b: f64, c: f64) -> f64 {
    if !(c > 0.0) {
        return 0.0;
    }
    let scale = a.abs().max(b.abs()).max(c);
    if a.abs() <= 1e-14 * scale {
        return if b < 0.0 { -c / b } else { f64::INFINITY };
    }
    let disc = b * b - 4.0 * a * c;
    if disc < 0.0 {
        return f64::INFINITY;
    }
    // Numerically stable pair of roots: q/a and c/q.
    let q = -0.5 * (b + b.signum() * disc.sqrt());
    [q / a, c / q]
        .into_iter()
        .filter(|t| *t > 0.0)
        .fold(f64::INFINITY, f64::min)
}

/// First `t > 0` at which the face flips when its corners move as `w + t dw` (and its
/// Jacobian as `j + t dj`); `+∞` if it never does. Both `w` and `dw` hold n corners.
pub fn first_flip(j: &Matrix2<f64>, dj: &Matrix2<f64>, w: &[[f64; 2]], dw: &[[f64; 2]]) -> f64 {
    // det(J + t dJ) = det J + t (J₀₀ dJ₁₁ + dJ₀₀ J₁₁ − J₀₁ dJ₁₀ − dJ₀₁ J₁₀) + t² det dJ
    let lin = j[(0, 0)] * dj[(1, 1)] + dj[(0, 0)] * j[(1, 1)]
        - j[(0, 1)] * dj[(1, 0)]
        - dj[(0, 1)] * j[(1, 0)];
    let mut t = smallest_positive_root(dj.determinant(), lin, j.determinant());
    let c = mean(w);
    let dc = mean(dw);
    let n = w.len();
    for i in 0..n {
        let k = (i + 1) % n;
        let (p0, p1) = (sub(w[i], c), sub(dw[i], dc));
        let (q0, q1) = (sub(w[k], c), sub(dw[k], dc));
        let root =
            smallest_positive_root(cross(p1, q1), cross(p0, q1) + cross(p1, q0), cross(p0, q0));
        t = t.min(root);
    }
    t
}
