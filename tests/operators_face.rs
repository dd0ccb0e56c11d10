//! Properties of the per-face polygon operators stated by de Goes, Butts & Desbrun
//! (2020), "Discrete differential operators on polygonal meshes", ACM TOG 39(4)
//! (listed in DESIGN §1). Polygons are random (fixed seeds), of arity 3–9, convex
//! and non-convex, placed in 3D by a random rigid motion.

use nalgebra::{DMatrix, DVector, Matrix3, Point2, Point3, Quaternion, UnitQuaternion, Vector3};
use polyflat::operators::face::{self, FaceError};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// A simple polygon in the plane, counter-clockwise, star-shaped about the origin.
/// Convex: corners on an ellipse. Non-convex: random radii, redrawn until at least
/// one corner is reflex (impossible for triangles, which are returned convex).
fn random_polygon(rng: &mut ChaCha8Rng, n: usize, convex: bool) -> Vec<Point2<f64>> {
    loop {
        let gaps: Vec<f64> = (0..n).map(|_| rng.random_range(0.7..1.3)).collect();
        let total: f64 = gaps.iter().sum();
        let (a, b) = (rng.random_range(0.5..2.0), rng.random_range(0.5..2.0));
        let mut angle = rng.random_range(0.0..std::f64::consts::TAU);
        let poly: Vec<Point2<f64>> = gaps
            .iter()
            .map(|g| {
                angle += std::f64::consts::TAU * g / total;
                let r = if convex {
                    1.0
                } else {
                    rng.random_range(0.25..1.0)
                };
                Point2::new(a * r * angle.cos(), b * r * angle.sin())
            })
            .collect();
        if convex || n == 3 || has_reflex_corner(&poly) {
            return poly;
        }
    }
}

fn has_reflex_corner(poly: &[Point2<f64>]) -> bool {
    let n = poly.len();
    (0..n).any(|i| {
        let a = poly[(i + n - 1) % n];
        let b = poly[i];
        let c = poly[(i + 1) % n];
        (b - a).perp(&(c - b)) < 0.0
    })
}

fn random_rotation(rng: &mut ChaCha8Rng) -> UnitQuaternion<f64> {
    let q = Quaternion::new(
        rng.random_range(-1.0..1.0),
        rng.random_range(-1.0..1.0),
        rng.random_range(-1.0..1.0),
        rng.random_range(-1.0..1.0),
    );
    UnitQuaternion::from_quaternion(q)
}

/// Places a plane polygon in 3D by a random rotation and translation; returns the
/// corners and the plane's unit normal.
fn place(rng: &mut ChaCha8Rng, poly: &[Point2<f64>]) -> (Vec<Point3<f64>>, Vector3<f64>) {
    let rot = random_rotation(rng);
    let shift = Vector3::new(
        rng.random_range(-5.0..5.0),
        rng.random_range(-5.0..5.0),
        rng.random_range(-5.0..5.0),
    );
    let corners = poly
        .iter()
        .map(|p| Point3::from(rot * Vector3::new(p.x, p.y, 0.0) + shift))
        .collect();
    (corners, rot * Vector3::z())
}

/// A non-planar polygon: a placed plane polygon with corners lifted off its plane.
fn non_planar(rng: &mut ChaCha8Rng, n: usize) -> Vec<Point3<f64>> {
    let convex = rng.random_bool(0.5);
    let poly = random_polygon(rng, n, convex);
    let (mut corners, normal) = place(rng, &poly);
    for c in &mut corners {
        *c += normal * rng.random_range(-0.3..0.3);
    }
    corners
}

/// A placed plane polygon: 3D corners, plane normal, and the polygon in its plane.
type Placed = (Vec<Point3<f64>>, Vector3<f64>, Vec<Point2<f64>>);

/// Four convex and four non-convex placed polygons of every arity 3–9.
fn plane_polygons(seed: u64) -> Vec<Placed> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut out = Vec::new();
    for n in 3..=9 {
        for convex in [true, false] {
            for _ in 0..4 {
                let poly = random_polygon(&mut rng, n, convex);
                let (corners, normal) = place(&mut rng, &poly);
                out.push((corners, normal, poly));
            }
        }
    }
    out
}

fn shoelace(poly: &[Point2<f64>]) -> f64 {
    let n = poly.len();
    0.5 * (0..n)
        .map(|i| poly[i].coords.perp(&poly[(i + 1) % n].coords))
        .sum::<f64>()
}

#[test]
fn generator_covers_convex_and_non_convex_polygons_of_every_arity() {
    // Guard for the tests below: the non-convex set really has reflex corners.
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    for n in 4..=9 {
        assert!(has_reflex_corner(&random_polygon(&mut rng, n, false)));
        assert!(!has_reflex_corner(&random_polygon(&mut rng, n, true)));
    }
}

// Expected value: the polygon's own area (shoelace formula, analytic) and the plane's
// normal; the vector area of a planar polygon is area × normal.
#[test]
fn vector_area_of_planar_polygon_is_area_times_normal() {
    for (corners, normal, poly) in plane_polygons(1) {
        let (area, n) = face::area_normal(&corners).unwrap();
        let expected = shoelace(&poly);
        assert!(
            (area - expected).abs() <= 1e-12 * expected,
            "{area} vs {expected}"
        );
        assert!((n - normal).norm() <= 1e-12);
    }
}

// de Goes et al. 2020: G_f (x·g) = g for in-plane g on a planar polygon of any arity.
#[test]
fn gradient_is_exact_on_linear_functions_of_planar_polygons() {
    let mut rng = ChaCha8Rng::seed_from_u64(2);
    for (corners, normal, _) in plane_polygons(2) {
        let g = face::gradient(&corners).unwrap();
        for _ in 0..3 {
            let raw = Vector3::new(
                rng.random_range(-3.0..3.0),
                rng.random_range(-3.0..3.0),
                rng.random_range(-3.0..3.0),
            );
            let grad = raw - normal * raw.dot(&normal);
            let offset = rng.random_range(-10.0..10.0);
            let u = DVector::from_iterator(
                corners.len(),
                corners.iter().map(|x| x.coords.dot(&grad) + offset),
            );
            let got = &g * u;
            assert!(
                (got - grad).norm() <= 1e-10 * grad.norm().max(1.0),
                "arity {}",
                corners.len()
            );
        }
    }
}

// de Goes et al. 2020: U_f V_f = I − n_f n_fᵀ (flat then sharp returns the tangent
// vector); an identity of the definitions that holds for non-planar faces too.
#[test]
fn sharp_after_flat_is_the_tangent_projector() {
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    let mut faces: Vec<Vec<Point3<f64>>> = plane_polygons(3).into_iter().map(|p| p.0).collect();
    faces.extend((3..=9).map(|n| non_planar(&mut rng, n)));
    for corners in faces {
        let (_, n) = face::area_normal(&corners).unwrap();
        let uv = face::sharp(&corners).unwrap() * face::flat(&corners).unwrap();
        let expected = Matrix3::identity() - n * n.transpose();
        assert!((uv - expected).norm() <= 1e-12, "arity {}", corners.len());
    }
}

// de Goes et al. 2020: P_f is a projector, P_f² = P_f (planar and non-planar faces).
#[test]
fn projection_is_idempotent() {
    let mut rng = ChaCha8Rng::seed_from_u64(4);
    let mut faces: Vec<Vec<Point3<f64>>> = plane_polygons(4).into_iter().map(|p| p.0).collect();
    faces.extend((3..=9).map(|n| non_planar(&mut rng, n)));
    for corners in faces {
        let p = face::projection(&corners).unwrap();
        assert!((&p * &p - &p).norm() <= 1e-11, "arity {}", corners.len());
    }
}

// de Goes et al. 2020: P_f D_f u = 0 for u linear on a planar face.
#[test]
fn projection_kills_differences_of_linear_functions() {
    let mut rng = ChaCha8Rng::seed_from_u64(5);
    for (corners, _, _) in plane_polygons(5) {
        let n = corners.len();
        let pd = face::projection(&corners).unwrap() * face::difference(n);
        let g = Vector3::new(
            rng.random_range(-3.0..3.0),
            rng.random_range(-3.0..3.0),
            rng.random_range(-3.0..3.0),
        );
        let u = DVector::from_iterator(n, corners.iter().map(|x| x.coords.dot(&g) + 1.5));
        assert!((pd * u).norm() <= 1e-10 * g.norm(), "arity {n}");
    }
}

fn numerical_rank(m: &DMatrix<f64>) -> usize {
    let sv = m.clone().svd(false, false).singular_values;
    let max = sv.max();
    sv.iter().filter(|&&s| s > 1e-9 * max.max(1e-300)).count()
}

// de Goes et al. 2020: P_f restricted to closed one-forms (the image of D_f) has rank
// n − 3, planar or not; on triangles P_f D_f = 0.
#[test]
fn projection_has_rank_n_minus_3_on_closed_one_forms() {
    let mut rng = ChaCha8Rng::seed_from_u64(6);
    let mut faces: Vec<Vec<Point3<f64>>> = plane_polygons(6).into_iter().map(|p| p.0).collect();
    faces.extend((3..=9).map(|n| non_planar(&mut rng, n)));
    for corners in faces {
        let n = corners.len();
        let pd = face::projection(&corners).unwrap() * face::difference(n);
        if n == 3 {
            assert!(pd.norm() <= 1e-12, "triangle: |P D| = {}", pd.norm());
        } else {
            assert_eq!(numerical_rank(&pd), n - 3, "arity {n}");
        }
    }
}

// Consequence of the definitions: M_f(λ) = A_f U_fᵀU_f + λ P_fᵀP_f is symmetric,
// has nullity n − 2 at λ = 0 (U_f has rank 2) and is positive definite for λ > 0.
#[test]
fn inner_product_is_psd_and_definite_for_positive_lambda() {
    let mut rng = ChaCha8Rng::seed_from_u64(8);
    for n in 3..=9 {
        let corners = non_planar(&mut rng, n);
        let m0 = face::inner_product(&corners, 0.0).unwrap();
        assert!((&m0 - m0.transpose()).norm() <= 1e-12);
        let e0 = m0.clone().symmetric_eigen().eigenvalues;
        let scale = e0.max();
        assert!(e0.min() >= -1e-12 * scale);
        assert_eq!(e0.iter().filter(|&&e| e > 1e-10 * scale).count(), 2);
        let m1 = face::inner_product(&corners, 1.0).unwrap();
        assert!(m1.symmetric_eigen().eigenvalues.min() > 1e-8);
    }
}

// Analytic: the frame is orthonormal and tangent, and G2 is G in that frame.
#[test]
fn tangent_frame_and_2d_gradient_agree_with_3d_gradient() {
    let mut rng = ChaCha8Rng::seed_from_u64(9);
    for n in 3..=9 {
        let corners = non_planar(&mut rng, n);
        let (_, normal) = face::area_normal(&corners).unwrap();
        let (t1, t2) = face::tangent_frame(&corners).unwrap();
        assert!((t1.norm() - 1.0).abs() < 1e-12 && (t2.norm() - 1.0).abs() < 1e-12);
        assert!(t1.dot(&t2).abs() < 1e-12 && t1.dot(&normal).abs() < 1e-12);
        assert!((t1.cross(&t2) - normal).norm() < 1e-12);
        let g = face::gradient(&corners).unwrap();
        let g2 = face::gradient_2d(&corners).unwrap();
        for j in 0..n {
            let col = g.column(j).into_owned();
            // G_f's columns are tangent, so the frame loses nothing.
            assert!(col.dot(&normal).abs() < 1e-12);
            let back = t1 * g2[(0, j)] + t2 * g2[(1, j)];
            assert!((back - col).norm() < 1e-12);
        }
    }
}

// Degenerate faces are refused with the documented error (no panic).
#[test]
fn degenerate_faces_are_refused() {
    let p = |x: f64, y: f64| Point3::new(x, y, 0.0);
    assert_eq!(
        face::area_normal(&[p(0.0, 0.0), p(1.0, 0.0)]),
        Err(FaceError::TooFewCorners(2))
    );
    assert_eq!(
        face::gradient(&[p(0.0, 0.0), p(1.0, 0.0), p(2.0, 0.0)]),
        Err(FaceError::ZeroArea)
    );
    assert_eq!(
        face::projection(&[p(0.0, 0.0), p(1.0, f64::NAN), p(0.0, 1.0)]),
        Err(FaceError::NonFinite)
    );
    assert_eq!(face::gradient_2d(&[]), Err(FaceError::TooFewCorners(0)));
}
