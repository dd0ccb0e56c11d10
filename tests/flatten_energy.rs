//! Energies ψ(J) and the per-face objective term: values at known points, gradients and
//! Hessians against central finite differences, positive semi-definite projections,
//! and the per-face polygon operators they are built on.

mod flatten_common;

use flatten_common::random_polygon;
use nalgebra::{DMatrix, Matrix2, Matrix4, Point2, Point3, Vector2};
use polyflat::flatten::energy::{self, signed_svd, vec_row_major, Energy};
use polyflat::flatten::face_term::FaceTerm;
use polyflat::flatten::injectivity::{first_flip, is_flipped};
use polyflat::operators::face;
use polyflat::settings::EnergyKind;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

fn rotation(t: f64) -> Matrix2<f64> {
    Matrix2::new(t.cos(), -t.sin(), t.sin(), t.cos())
}

/// A random Jacobian with positive determinant, singular values in [0.3, 2].
fn random_jacobian(rng: &mut impl Rng) -> Matrix2<f64> {
    let s = Matrix2::new(
        rng.random_range(0.3..2.0),
        0.0,
        0.0,
        rng.random_range(0.3..2.0),
    );
    rotation(rng.random_range(-3.0..3.0)) * s * rotation(rng.random_range(-3.0..3.0))
}

fn all() -> Vec<(EnergyKind, &'static dyn Energy)> {
    EnergyKind::ALL
        .iter()
        .map(|&k| (k, energy::energy(k)))
        .collect()
}

/// Matrix of unit vector `k` of vec(J) (row-major).
fn unit(k: usize) -> Matrix2<f64> {
    let mut m = Matrix2::zeros();
    m[(k / 2, k % 2)] = 1.0;
    m
}

#[test]
fn values_at_rotations_and_similarities() {
    // Expected values: analytic (DESIGN §2): ARAP 0, symmetric Dirichlet 4 (its minimum,
    // Smith & Schaefer 2015), conformal 0 at rotations; conformal 0 at similarities and
    // ARAP 2(s − 1)² at a similarity of scale s.
    for t in [-2.5, -0.3, 0.0, 0.7, 3.0] {
        let r = rotation(t);
        assert!(energy::Arap.value(&r).abs() < 1e-14);
        assert!((energy::SymmetricDirichlet.value(&r) - 4.0).abs() < 1e-13);
        assert!(energy::Conformal.value(&r).abs() < 1e-14);
        for s in [0.2, 1.7, 5.0] {
            assert!(energy::Conformal.value(&(r * s)).abs() < 1e-13);
            assert!((energy::Arap.value(&(r * s)) - 2.0 * (s - 1.0).powi(2)).abs() < 1e-12);
            // Symmetric Dirichlet at a similarity: 2s² + 2/s².
            assert!(
                (energy::SymmetricDirichlet.value(&(r * s)) - (2.0 * s * s + 2.0 / (s * s))).abs()
                    < 1e-12
            );
        }
    }
    // The barrier is infinite on flipped Jacobians.
    assert_eq!(
        energy::SymmetricDirichlet.value(&Matrix2::new(1.0, 0.0, 0.0, -1.0)),
        f64::INFINITY
    );
}

#[test]
fn signed_svd_reconstructs_with_signed_sigma() {
    // Expected: J = U diag(σ) Vᵀ to round-off, U and V rotations, σ2 < 0 iff det J < 0.
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    for _ in 0..200 {
        let j = Matrix2::new(
            rng.random_range(-2.0..2.0),
            rng.random_range(-2.0..2.0),
            rng.random_range(-2.0..2.0),
            rng.random_range(-2.0..2.0),
        );
        let s = signed_svd(&j);
        let back = s.u * Matrix2::new(s.sigma[0], 0.0, 0.0, s.sigma[1]) * s.v.transpose();
        assert!((back - j).norm() < 1e-12);
        assert!((s.u.determinant() - 1.0).abs() < 1e-12 && (s.v.determinant() - 1.0).abs() < 1e-12);
        assert_eq!(s.sigma[1] < 0.0, j.determinant() < 0.0);
        assert!(s.sigma[0] >= s.sigma[1].abs());
    }
}

#[test]
fn gradient_matches_finite_differences() {
    // Expected: central differences, step 1e-6; tolerance 1e-6 relative (common practice).
    let mut rng = ChaCha8Rng::seed_from_u64(2);
    for (kind, e) in all() {
        for _ in 0..50 {
            let j = random_jacobian(&mut rng);
            let g = e.gradient(&j);
            for k in 0..4 {
                let h = 1e-6;
                let fd = (e.value(&(j + unit(k) * h)) - e.value(&(j - unit(k) * h))) / (2.0 * h);
                let an = g[(k / 2, k % 2)];
                assert!(
                    (fd - an).abs() < 1e-6 * (1.0 + an.abs()),
                    "{kind}: {fd} vs {an}"
                );
            }
        }
    }
}

#[test]
fn hessian_matches_finite_differences_of_gradient() {
    // Expected: central differences of the analytic gradient, step 1e-6; tolerance
    // 1e-5 relative (common practice).
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    for (kind, e) in all() {
        for _ in 0..50 {
            let j = random_jacobian(&mut rng);
            let h = e.hessian(&j, false);
            for k in 0..4 {
                let step = 1e-6;
                let fd = (vec_row_major(&e.gradient(&(j + unit(k) * step)))
                    - vec_row_major(&e.gradient(&(j - unit(k) * step))))
                    / (2.0 * step);
                for r in 0..4 {
                    assert!(
                        (fd[r] - h[(r, k)]).abs() < 1e-5 * (1.0 + h.norm()),
                        "{kind}: H[{r},{k}] = {} vs {}",
                        h[(r, k)],
                        fd[r]
                    );
                }
            }
        }
    }
}

fn min_eigenvalue(h: &Matrix4<f64>) -> f64 {
    h.symmetric_eigen().eigenvalues.min()
}

#[test]
fn projected_hessians_are_psd_and_unchanged_where_already_psd() {
    // Expected: the clamped eigensystem (Smith, de Goes & Kim 2019) is PSD (smallest
    // eigenvalue ≥ −1e-10 ‖H‖), symmetric, and equals the exact Hessian wherever that
    // is PSD.
    let mut rng = ChaCha8Rng::seed_from_u64(4);
    let mut indefinite = 0;
    for (kind, e) in all() {
        for _ in 0..200 {
            let j = random_jacobian(&mut rng);
            let p = e.hessian(&j, true);
            let h = e.hessian(&j, false);
            assert!((p - p.transpose()).norm() < 1e-12 * (1.0 + p.norm()));
            assert!(min_eigenvalue(&p) >= -1e-10 * (1.0 + p.norm()), "{kind}");
            if min_eigenvalue(&h) >= 0.0 {
                assert!((p - h).norm() < 1e-10 * (1.0 + h.norm()), "{kind}");
            } else {
                indefinite += 1;
            }
        }
    }
    // ARAP and symmetric Dirichlet are not convex: the projection had work to do.
    assert!(
        indefinite > 20,
        "only {indefinite} indefinite Hessians were sampled"
    );
}

/// Random UV corners: an affine image of the polygon's tangent-plane projection,
/// with positive determinant, plus small noise.
fn random_uvs(corners: &[Point3<f64>], rng: &mut impl Rng) -> Vec<Point2<f64>> {
    let (t1, t2) = face::tangent_frame(corners).expect("valid face");
    let a = random_jacobian(rng);
    corners
        .iter()
        .map(|p| {
            let q = Vector2::new(p.coords.dot(&t1), p.coords.dot(&t2));
            let w = a * q;
            Point2::new(
                w.x + rng.random_range(-0.02..0.02),
                w.y + rng.random_range(-0.02..0.02),
            )
        })
        .collect()
}

#[test]
fn face_term_gradient_and_hessian_match_finite_differences() {
    // The whole per-face objective A ψ(J) + λ‖P D W‖² on random non-planar polygons
    // of arity 3–8. Expected: central differences (step 1e-6) of the value for the
    // gradient and of the gradient for the (unprojected) Hessian; tolerance 1e-5
    // relative (common practice).
    let mut rng = ChaCha8Rng::seed_from_u64(5);
    for n in 3..=8 {
        for (kind, e) in all() {
            for lambda in [0.0, 1.0, 3.5] {
                let corners = random_polygon(n, &mut rng);
                let term = FaceTerm::new(&corners, lambda).expect("valid face");
                let w = random_uvs(&corners, &mut rng);
                let (value, grad, hess) = term.evaluate(e, &w, false);
                assert!(value.is_finite());
                let perturbed = |k: usize, h: f64| {
                    let mut q = w.clone();
                    if k < n {
                        q[k].x += h;
                    } else {
                        q[k - n].y += h;
                    }
                    q
                };
                let step = 1e-6;
                for k in 0..2 * n {
                    let (vp, gp, _) = term.evaluate(e, &perturbed(k, step), false);
                    let (vm, gm, _) = term.evaluate(e, &perturbed(k, -step), false);
                    let fd = (vp - vm) / (2.0 * step);
                    assert!(
                        (fd - grad[k]).abs() < 1e-5 * (1.0 + grad.amax()),
                        "{kind} n={n} λ={lambda}: dE/dx{k} {} vs {fd}",
                        grad[k]
                    );
                    let fdh = (gp - gm) / (2.0 * step);
                    for r in 0..2 * n {
                        assert!(
                            (fdh[r] - hess[(r, k)]).abs() < 1e-5 * (1.0 + hess.amax()),
                            "{kind} n={n} λ={lambda}: H[{r},{k}] {} vs {}",
                            hess[(r, k)],
                            fdh[r]
                        );
                    }
                }
                let (_, _, projected) = term.evaluate(e, &w, true);
                let eig = projected.clone().symmetric_eigen().eigenvalues.min();
                assert!(
                    eig >= -1e-9 * (1.0 + projected.amax()),
                    "{kind} n={n}: {eig}"
                );
            }
        }
    }
}

#[test]
fn face_term_is_zero_for_isometric_map_of_planar_polygon() {
    // Expected: for a planar polygon mapped by a rotation, J is that rotation (G exact
    // on linear functions) and P D W = 0, so ARAP and conformal give 0 and symmetric
    // Dirichlet gives 4 A (analytic, DESIGN §1–2).
    let mut rng = ChaCha8Rng::seed_from_u64(6);
    for n in 3..=8 {
        let flat: Vec<Point3<f64>> = random_polygon(n, &mut rng)
            .into_iter()
            .map(|p| Point3::new(p.x, p.y, 0.0))
            .collect();
        let r = rotation(0.4);
        let w: Vec<Point2<f64>> = flat
            .iter()
            .map(|p| {
                let q = r * Vector2::new(p.x, p.y);
                Point2::new(q.x + 3.0, q.y - 1.0)
            })
            .collect();
        let term = FaceTerm::new(&flat, 1.0).expect("valid face");
        let (arap, _, _) = term.evaluate(&energy::Arap, &w, true);
        let (sd, _, _) = term.evaluate(&energy::SymmetricDirichlet, &w, true);
        let (conf, _, _) = term.evaluate(&energy::Conformal, &w, true);
        assert!(
            arap.abs() < 1e-12 && conf.abs() < 1e-12,
            "n={n}: {arap} {conf}"
        );
        assert!((sd - 4.0 * term.area).abs() < 1e-11, "n={n}: {sd}");
    }
}

#[test]
fn polygon_operators_properties() {
    // Checks of src/operators/face.rs that the objective relies on (DESIGN §1, de Goes,
    // Butts & Desbrun 2020): G exact on linear functions of a planar (here non-convex)
    // polygon, P² = P, P D u = 0 for linear u on a planar face, P D = 0 on triangles,
    // U V = I − n nᵀ.
    let planar = [
        Point3::new(0.0, 0.0, 0.0),
        Point3::new(2.0, 0.0, 0.0),
        Point3::new(2.0, 2.0, 0.0),
        Point3::new(1.0, 0.5, 0.0),
        Point3::new(0.0, 2.0, 0.0),
    ];
    let g = face::gradient(&planar).expect("valid face");
    let grad = nalgebra::Vector3::new(0.3, -1.2, 0.0);
    let u = nalgebra::DVector::from_iterator(5, planar.iter().map(|p| p.coords.dot(&grad) + 0.7));
    assert!((&g * &u - grad).norm() < 1e-12);
    let p = face::projection(&planar).expect("valid face");
    assert!((&p * &p - &p).norm() < 1e-12);
    assert!((&p * face::difference(5) * &u).norm() < 1e-12);
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    for n in 3..=8 {
        let c = random_polygon(n, &mut rng);
        let (_, normal) = face::area_normal(&c).expect("valid face");
        let uv = face::sharp(&c).expect("valid face") * face::flat(&c).expect("valid face");
        let tangential = nalgebra::Matrix3::identity() - normal * normal.transpose();
        assert!((uv - tangential).norm() < 1e-12, "n={n}");
        if n == 3 {
            let pd: DMatrix<f64> = face::projection(&c).expect("valid face") * face::difference(3);
            assert!(pd.norm() < 1e-12);
        }
    }
}

#[test]
fn flip_step_bound_is_the_first_root() {
    // A unit square whose corner 2 moves towards and past the diagonal from corner 1
    // to corner 3. Expected (analytic): the fan triangle (c, w1, w2) first reaches zero
    // area where w2 crosses the line through c and w1, which for w2 = (1 − t, 1 − t)
    // happens at t = 2/3 (c moves with w2, so solve the quadratic by hand).
    let w = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
    let dw = [[0.0, 0.0], [0.0, 0.0], [-1.0, -1.0], [0.0, 0.0]];
    let corners: Vec<Point3<f64>> = w.iter().map(|p| Point3::new(p[0], p[1], 0.0)).collect();
    let term = FaceTerm::new(&corners, 1.0).expect("valid face");
    let view = term.view();
    let j = view.jacobian(&w);
    let dj = view.jacobian(&dw);
    assert!(!is_flipped(&j, &w));
    let t = first_flip(&j, &dj, &w, &dw);
    // Fan triangle (c, w1, w2): c = ((2 − t)/4, (2 − t)/4), w1 = (1, 0), w2 = (1 − t, 1 − t);
    // 2·area = (1 − c)(1 − t − c) + c(1 − t − c) = (1 − t − c)  → zero at t = 2/3.
    assert!((t - 2.0 / 3.0).abs() < 1e-12, "{t}");
    let at = |s: f64| -> Vec<[f64; 2]> {
        w.iter()
            .zip(&dw)
            .map(|(p, d)| [p[0] + s * d[0], p[1] + s * d[1]])
            .collect()
    };
    let before = at(t * (1.0 - 1e-9));
    let after = at(t * (1.0 + 1e-9));
    assert!(!is_flipped(&view.jacobian(&before), &before));
    assert!(is_flipped(&view.jacobian(&after), &after));
}
