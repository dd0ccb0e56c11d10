//! Global polygon operators (gradient, Laplacian, lumped mass) on small meshes.
//! Properties from de Goes, Butts & Desbrun (2020), "Discrete differential operators
//! on polygonal meshes", ACM TOG 39(4) (listed in DESIGN §1); expected values are
//! analytic unless stated.

use faer::sparse::SparseColMat;
use nalgebra::{DMatrix, DVector, Point3, Vector3};
use polyflat::operators::{self, face};
use polyflat::{Error, PolyMesh};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

fn dense(m: &SparseColMat<usize, f64>) -> DMatrix<f64> {
    let mut d = DMatrix::zeros(m.nrows(), m.ncols());
    for t in m.triplet_iter() {
        d[(t.row, t.col)] += *t.val;
    }
    d
}

/// Planar mesh of the square [0, 6]² mixing hexagons, pentagons, quads and
/// triangles, interior vertices jittered (so hexagons and pentagons are irregular and
/// some non-convex). Rows of cells, bottom to top: hexagons (two cells merged),
/// pentagon + triangle, quads, two triangles, pentagon + triangle, hexagons.
fn mixed_planar_mesh(jitter: f64) -> PolyMesh {
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let mut positions = Vec::new();
    for j in 0..=6 {
        for i in 0..=6 {
            let interior = (1..6).contains(&i) && (1..6).contains(&j);
            let (dx, dy) = if interior {
                (
                    jitter * rng.random_range(-1.0..1.0),
                    jitter * rng.random_range(-1.0..1.0),
                )
            } else {
                (0.0, 0.0)
            };
            positions.push(Point3::new(i as f64 + dx, j as f64 + dy, 0.0));
        }
    }
    let v = |i: u32, j: u32| j * 7 + i;
    let mut faces = Vec::new();
    for j in 0..6u32 {
        for i in (0..6u32).step_by(2) {
            match j {
                0 | 5 => faces.push(vec![
                    v(i, j),
                    v(i + 1, j),
                    v(i + 2, j),
                    v(i + 2, j + 1),
                    v(i + 1, j + 1),
                    v(i, j + 1),
                ]),
                1 | 4 => {
                    let (a, b, c, d) = (v(i + 1, j), v(i + 2, j), v(i + 2, j + 1), v(i + 1, j + 1));
                    faces.push(vec![v(i, j), a, c, d, v(i, j + 1)]);
                    faces.push(vec![a, b, c]);
                }
                2 => {
                    for k in [i, i + 1] {
                        faces.push(vec![v(k, j), v(k + 1, j), v(k + 1, j + 1), v(k, j + 1)]);
                    }
                }
                _ => {
                    for k in [i, i + 1] {
                        let (a, b, c, d) = (v(k, j), v(k + 1, j), v(k + 1, j + 1), v(k, j + 1));
                        faces.push(vec![a, b, c]);
                        faces.push(vec![a, c, d]);
                    }
                }
            }
        }
    }
    PolyMesh::from_faces(positions, &faces)
}

/// Closed mesh: a cube with each side split into 2×2 quads, every vertex moved by a
/// random offset, so the quads are non-planar.
fn bumpy_cube() -> PolyMesh {
    let mut rng = ChaCha8Rng::seed_from_u64(12);
    let mut positions: Vec<Point3<f64>> = Vec::new();
    let mut index = std::collections::HashMap::new();
    let mut vertex = |p: [i32; 3], positions: &mut Vec<Point3<f64>>| -> u32 {
        *index.entry(p).or_insert_with(|| {
            positions.push(Point3::new(p[0] as f64, p[1] as f64, p[2] as f64));
            (positions.len() - 1) as u32
        })
    };
    let mut faces = Vec::new();
    // Each side: fixed axis `a` at value ±2 (grid −2..2 step 2), outward orientation.
    for a in 0..3 {
        for sign in [-1i32, 1] {
            let (b, c) = if sign > 0 {
                ((a + 1) % 3, (a + 2) % 3)
            } else {
                ((a + 2) % 3, (a + 1) % 3)
            };
            for s in [-2, 0] {
                for t in [-2, 0] {
                    let mut quad = Vec::new();
                    for (ds, dt) in [(0, 0), (2, 0), (2, 2), (0, 2)] {
                        let mut p = [0i32; 3];
                        p[a] = 2 * sign;
                        p[b] = s + ds;
                        p[c] = t + dt;
                        quad.push(vertex(p, &mut positions));
                    }
                    faces.push(quad);
                }
            }
        }
    }
    for p in &mut positions {
        *p += Vector3::new(
            rng.random_range(-0.3..0.3),
            rng.random_range(-0.3..0.3),
            rng.random_range(-0.3..0.3),
        );
    }
    PolyMesh::from_faces(positions, &faces)
}

fn interior_vertices(mesh: &PolyMesh) -> Vec<usize> {
    (0..mesh.vertex_count())
        .filter(|&k| {
            let p = mesh.positions[k];
            p.x > 1e-9 && p.x < 6.0 - 1e-9 && p.y > 1e-9 && p.y < 6.0 - 1e-9
        })
        .collect()
}

#[test]
fn mixed_mesh_has_the_intended_arities_and_non_convex_faces() {
    // Guard for the tests below.
    let mesh = mixed_planar_mesh(0.2);
    let mut arities: Vec<usize> = (0..mesh.face_count()).map(|f| mesh.arity(f)).collect();
    arities.sort_unstable();
    arities.dedup();
    assert_eq!(arities, vec![3, 4, 5, 6]);
    assert_eq!(interior_vertices(&mesh).len(), 25);
    let reflex = (0..mesh.face_count()).any(|f| {
        let c = mesh.face_corners(f);
        let n = c.len();
        (0..n).any(|i| {
            let (a, b, d) = (c[(i + n - 1) % n], c[i], c[(i + 1) % n]);
            (b - a).cross(&(d - b)).z < 0.0
        })
    });
    assert!(reflex, "no non-convex face in the test mesh");
}

// de Goes et al. 2020: L is symmetric, positive semi-definite and L·1 = 0, on a planar
// mixed mesh and on a closed mesh of non-planar quads.
#[test]
fn laplacian_is_symmetric_psd_and_kills_constants() {
    for mesh in [mixed_planar_mesh(0.2), bumpy_cube()] {
        for lambda in [0.0, 1.0, 10.0] {
            let l = dense(&operators::laplacian(&mesh, lambda).unwrap());
            let v = mesh.vertex_count();
            assert_eq!((l.nrows(), l.ncols()), (v, v));
            assert!((&l - l.transpose()).amax() <= 1e-12, "λ = {lambda}");
            let ones = DVector::from_element(v, 1.0);
            assert!((&l * ones).amax() <= 1e-12, "λ = {lambda}");
            let eig = l.symmetric_eigen().eigenvalues;
            assert!(
                eig.min() >= -1e-10,
                "λ = {lambda}: smallest eigenvalue {}",
                eig.min()
            );
            // Connected mesh: exactly one zero eigenvalue (the constants) for λ > 0.
            if lambda > 0.0 {
                assert_eq!(eig.iter().filter(|&&e| e < 1e-9).count(), 1);
            }
        }
    }
}

// de Goes et al. 2020: linear precision, (L x)_i = 0 at interior vertices of a planar
// mesh, for any linear function x and any λ.
#[test]
fn laplacian_has_linear_precision_on_planar_mixed_mesh() {
    let mesh = mixed_planar_mesh(0.2);
    let interior = interior_vertices(&mesh);
    for lambda in [0.0, 1.0, 10.0] {
        let l = dense(&operators::laplacian(&mesh, lambda).unwrap());
        for (gx, gy) in [(1.0, 0.0), (0.0, 1.0), (0.7, -1.3)] {
            let u = DVector::from_iterator(
                mesh.vertex_count(),
                mesh.positions.iter().map(|p| gx * p.x + gy * p.y + 2.0),
            );
            let lu = &l * u;
            for &i in &interior {
                assert!(lu[i].abs() <= 1e-12, "λ = {lambda}, vertex {i}: {}", lu[i]);
            }
            // And not trivially: boundary rows do see the function.
            assert!(lu.amax() > 1e-3);
        }
    }
}

// Definition (DESIGN §1): for λ = 0, L = Gᵀ diag(A_f I₃) G.
#[test]
fn laplacian_at_zero_lambda_is_gradient_dirichlet_form() {
    let mesh = bumpy_cube();
    let g = dense(&operators::gradient(&mesh).unwrap());
    assert_eq!(
        (g.nrows(), g.ncols()),
        (3 * mesh.face_count(), mesh.vertex_count())
    );
    let mut weights = DVector::zeros(3 * mesh.face_count());
    for f in 0..mesh.face_count() {
        let (area, _) = face::area_normal(&mesh.face_corners(f)).unwrap();
        for k in 0..3 {
            weights[3 * f + k] = area;
        }
    }
    let expected = g.transpose() * DMatrix::from_diagonal(&weights) * &g;
    let l = dense(&operators::laplacian(&mesh, 0.0).unwrap());
    assert!((l - expected).amax() <= 1e-12);
}

// de Goes et al. 2020: G is exact on linear functions on every planar face.
#[test]
fn global_gradient_is_exact_on_planar_mixed_mesh() {
    let mesh = mixed_planar_mesh(0.2);
    let g = dense(&operators::gradient(&mesh).unwrap());
    let grad = Vector3::new(0.8, -2.1, 0.0);
    let u = DVector::from_iterator(
        mesh.vertex_count(),
        mesh.positions.iter().map(|p| p.coords.dot(&grad) - 4.0),
    );
    let gu = g * u;
    for f in 0..mesh.face_count() {
        let got = Vector3::new(gu[3 * f], gu[3 * f + 1], gu[3 * f + 2]);
        assert!((got - grad).norm() <= 1e-12, "face {f}");
    }
}

// Analytic: the entries sum to the total area (36 for the square [0, 6]²); on the
// unjittered grid, a vertex shared by faces gets Σ A_f / n_f over them.
#[test]
fn lumped_mass_splits_face_areas_among_corners() {
    let mesh = mixed_planar_mesh(0.2);
    let mass = operators::lumped_mass(&mesh).unwrap();
    assert!((mass.iter().sum::<f64>() - 36.0).abs() <= 1e-12);
    let regular = mixed_planar_mesh(0.0);
    let mass = operators::lumped_mass(&regular).unwrap();
    // Vertex (1, 0): corner of one hexagon of area 2 → 2/6.
    assert!((mass[1] - 2.0 / 6.0).abs() <= 1e-14);
    // Vertex (3, 3): corner of quads (2,2) and (3,2) (area 1, 4 corners each) and of
    // three triangles (area 1/2, 3 corners each) of row 3: a-b-c of cell (2,3), and
    // a-b-c and a-c-d of cell (3,3).
    let expected = 2.0 * 0.25 + 3.0 * (0.5 / 3.0);
    let k = 3 * 7 + 3;
    assert!((mass[k] - expected).abs() <= 1e-14, "{}", mass[k]);
}

fn mesh_message(err: Error) -> String {
    match err {
        Error::Mesh { message, .. } => message,
        other => panic!("expected a mesh error, got {other}"),
    }
}

// Library contract (RULES): bad faces give Error::Mesh naming the face, never a panic.
#[test]
fn bad_faces_are_reported_by_label() {
    let positions = vec![
        Point3::new(0.0, 0.0, 0.0),
        Point3::new(1.0, 0.0, 0.0),
        Point3::new(1.0, 1.0, 0.0),
        Point3::new(2.0, 2.0, 0.0),
    ];
    let mut mesh = PolyMesh::from_faces(positions.clone(), &[vec![0, 1, 2], vec![0, 2, 3]]);
    mesh.face_lines = vec![7, 8];
    let msg = mesh_message(operators::laplacian(&mesh, 1.0).unwrap_err());
    assert_eq!(msg, "face 2 (line 8) has zero area");
    let msg = mesh_message(operators::gradient(&mesh).unwrap_err());
    assert!(msg.starts_with("face 2 (line 8)"));
    assert!(operators::lumped_mass(&mesh).is_err());

    let mesh = PolyMesh::from_faces(positions.clone(), &[vec![0, 1, 2], vec![0, 1, 9]]);
    let msg = mesh_message(operators::lumped_mass(&mesh).unwrap_err());
    assert_eq!(
        msg,
        "face 2 refers to vertex 10, but the mesh has only 4 vertices"
    );

    let mut broken = PolyMesh::from_faces(positions, &[vec![0, 1, 2]]);
    broken.face_offsets = vec![0, 5];
    assert!(operators::gradient(&broken).is_err());
}

#[test]
fn negative_projection_weight_is_refused() {
    let mesh = mixed_planar_mesh(0.2);
    for bad in [-1.0, f64::NAN, f64::INFINITY] {
        match operators::laplacian(&mesh, bad) {
            Err(Error::Settings(msg)) => assert!(msg.contains("--projection-weight")),
            other => panic!("expected a settings error, got {other:?}"),
        }
    }
}
