//! Per-face polygon operators of de Goes, Butts & Desbrun (2020), "Discrete
//! differential operators on polygonal meshes", ACM TOG 39(4).
//!
//! Every function is a pure function of one face's corners `x_0 … x_{n-1}` (3D, in
//! order, any length unit, n ≥ 3; indices are taken mod n). Shapes are stated with
//! each function; "n" is the face's arity. Faces need not be planar or convex.

use nalgebra::{DMatrix, Matrix2xX, Matrix3, Matrix3xX, MatrixXx3, Point3, Vector3};

/// Why a face has no operators.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FaceError {
    /// Fewer than three corners.
    #[error("has {0} corners; a face needs at least 3")]
    TooFewCorners(usize),
    /// The vector area vanishes, so the face has no normal.
    #[error("has zero area")]
    ZeroArea,
    /// A corner coordinate is NaN or infinite.
    #[error("has a corner with a non-finite coordinate")]
    NonFinite,
    /// A per-corner attribute list (UVs) does not have one entry per corner.
    #[error("has {corners} corners but {uvs} UV corners")]
    UvCountMismatch {
        /// Number of 3D corners.
        corners: usize,
        /// Number of UV corners given.
        uvs: usize,
    },
}

/// Area below which a face counts as degenerate, relative to its squared diameter.
const RELATIVE_AREA_EPS: f64 = 1e-14;

fn check(corners: &[Point3<f64>]) -> Result<(), FaceError> {
    if corners.len() < 3 {
        return Err(FaceError::TooFewCorners(corners.len()));
    }
    if corners
        .iter()
        .any(|p| !p.coords.iter().all(|c| c.is_finite()))
    {
        return Err(FaceError::NonFinite);
    }
    Ok(())
}

/// Vector area `a_f = ½ Σ_i x_i × x_{i+1}` (3-vector, length unit²). Its length is
/// the face's area and its direction the face normal; for a non-planar face it is the
/// area of the projection onto the plane it is normal to. Computed about the
/// centroid, which leaves it unchanged and avoids cancellation far from the origin.
pub fn vector_area(corners: &[Point3<f64>]) -> Vector3<f64> {
    let c = centroid(corners);
    let n = corners.len();
    let mut a = Vector3::zeros();
    for i in 0..n {
        let p = corners[i] - c;
        let q = corners[(i + 1) % n] - c;
        a += p.cross(&q);
    }
    a * 0.5
}

/// Face area `A_f = |a_f|` and unit normal `n_f = a_f / A_f`.
///
/// Errors when the face has fewer than 3 corners, a non-finite coordinate, or an area
/// below 1e-14 of its squared diameter.
pub fn area_normal(corners: &[Point3<f64>]) -> Result<(f64, Vector3<f64>), FaceError> {
    check(corners)?;
    let a = vector_area(corners);
    let area = a.norm();
    let diam2 = diameter(corners).powi(2);
    // NaN (from overflow) counts as degenerate too.
    if area.is_nan() || area <= RELATIVE_AREA_EPS * diam2 {
        return Err(FaceError::ZeroArea);
    }
    Ok((area, a / area))
}

/// Centroid `c_f`: the mean of the corners.
pub fn centroid(corners: &[Point3<f64>]) -> Point3<f64> {
    let mut s = Vector3::zeros();
    for p in corners {
        s += p.coords;
    }
    Point3::from(s / corners.len().max(1) as f64)
}

/// Largest distance between two corners (length unit).
pub fn diameter(corners: &[Point3<f64>]) -> f64 {
    let mut d: f64 = 0.0;
    for (i, p) in corners.iter().enumerate() {
        for q in &corners[i + 1..] {
            d = d.max((p - q).norm());
        }
    }
    d
}

/// Edge vectors `E_f` (n×3): row `i` is `x_{i+1} − x_i`.
pub fn edges(corners: &[Point3<f64>]) -> MatrixXx3<f64> {
    let n = corners.len();
    MatrixXx3::from_fn(n, |i, k| corners[(i + 1) % n][k] - corners[i][k])
}

/// Edge midpoints `M_f` (n×3): row `i` is `(x_i + x_{i+1}) / 2`.
pub fn midpoints(corners: &[Point3<f64>]) -> MatrixXx3<f64> {
    let n = corners.len();
    MatrixXx3::from_fn(n, |i, k| 0.5 * (corners[i][k] + corners[(i + 1) % n][k]))
}

/// Difference `D_f` (n×n): `(D_f u)_i = u_{i+1} − u_i`, corner values to edge values.
pub fn difference(n: usize) -> DMatrix<f64> {
    let mut d = DMatrix::zeros(n, n);
    for i in 0..n {
        d[(i, i)] -= 1.0;
        d[(i, (i + 1) % n)] += 1.0;
    }
    d
}

/// Cross-product matrix `[v]_×` with `[v]_× w = v × w`.
pub fn cross_matrix(v: &Vector3<f64>) -> Matrix3<f64> {
    Matrix3::new(0.0, -v.z, v.y, v.z, 0.0, -v.x, -v.y, v.x, 0.0)
}

/// Sharp `U_f = (1/A_f) [n_f]_× (M_f − 1 c_fᵀ)ᵀ` (3×n): edge values (one-form) to a
/// tangent vector (value units per length unit).
pub fn sharp(corners: &[Point3<f64>]) -> Result<Matrix3xX<f64>, FaceError> {
    let (area, normal) = area_normal(corners)?;
    let c = centroid(corners);
    let m = midpoints(corners);
    let nx = cross_matrix(&normal);
    let n = corners.len();
    let mut u = Matrix3xX::zeros(n);
    for i in 0..n {
        let r = Vector3::new(m[(i, 0)] - c.x, m[(i, 1)] - c.y, m[(i, 2)] - c.z);
        u.set_column(i, &(nx * r / area));
    }
    Ok(u)
}

/// Gradient `G_f = U_f D_f` (3×n): corner values to the face's constant gradient
/// (value units per length unit). Exact for linear functions on planar faces.
pub fn gradient(corners: &[Point3<f64>]) -> Result<Matrix3xX<f64>, FaceError> {
    Ok(sharp(corners)? * difference(corners.len()))
}

/// Flat `V_f = E_f (I − n_f n_fᵀ)` (n×3): a tangent vector to edge values.
pub fn flat(corners: &[Point3<f64>]) -> Result<MatrixXx3<f64>, FaceError> {
    let (_, normal) = area_normal(corners)?;
    let tangential = Matrix3::identity() - normal * normal.transpose();
    Ok(edges(corners) * tangential)
}

/// Projection `P_f = I − V_f U_f` (n×n): removes from a one-form the part the sharp
/// operator sees, leaving the null-space ("hourglass") modes.
pub fn projection(corners: &[Point3<f64>]) -> Result<DMatrix<f64>, FaceError> {
    let n = corners.len();
    let vu = flat(corners)? * sharp(corners)?;
    Ok(DMatrix::identity(n, n) - vu)
}

/// Inner product on one-forms `M_f(λ) = A_f U_fᵀ U_f + λ P_fᵀ P_f` (n×n, symmetric
/// positive semi-definite; positive definite for λ > 0).
pub fn inner_product(corners: &[Point3<f64>], lambda: f64) -> Result<DMatrix<f64>, FaceError> {
    let (area, _) = area_normal(corners)?;
    let u = sharp(corners)?;
    let p = projection(corners)?;
    Ok(u.transpose() * &u * area + p.transpose() * &p * lambda)
}

/// Tangent frame `(t1, t2)` with `t1 = normalize(e_0 − (e_0·n) n)`, `t2 = n × t1`.
pub fn tangent_frame(corners: &[Point3<f64>]) -> Result<(Vector3<f64>, Vector3<f64>), FaceError> {
    let (_, normal) = area_normal(corners)?;
    let e0 = corners[1] - corners[0];
    let t = e0 - normal * e0.dot(&normal);
    let len = t.norm();
    let t1 = if len > 0.0 {
        t / len
    } else {
        // e_0 is parallel to the normal (a folded face); any tangent direction works.
        let helper = if normal.x.abs() < 0.9 {
            Vector3::x()
        } else {
            Vector3::y()
        };
        (helper - normal * helper.dot(&normal)).normalize()
    };
    Ok((t1, normal.cross(&t1)))
}

/// Gradient in the face's tangent frame `G2_f = [t1ᵀ; t2ᵀ] G_f` (2×n): corner values
/// to the 2D gradient (value units per length unit).
pub fn gradient_2d(corners: &[Point3<f64>]) -> Result<Matrix2xX<f64>, FaceError> {
    let g = gradient(corners)?;
    let (t1, t2) = tangent_frame(corners)?;
    let n = corners.len();
    let mut g2 = Matrix2xX::zeros(n);
    for j in 0..n {
        let col = g.column(j);
        g2[(0, j)] = t1.dot(&col);
        g2[(1, j)] = t2.dot(&col);
    }
    Ok(g2)
}
