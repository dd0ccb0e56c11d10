//! Per-face and summary distortion metrics (DESIGN §3) on maps with analytic values.
//! The Jacobian uses the polygon gradient of de Goes, Butts & Desbrun (2020), exact
//! for affine maps of planar faces; L2 stretch is that of Sander et al. (2001).

use nalgebra::{Matrix2, Point2, Point3, Rotation3, Vector3};
use polyflat::metrics::{
    self, face_metrics, signed_singular_values, summarize, Metrics, DISTORTION_CAP,
};
use polyflat::{Error, PolyMesh};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// Planar mesh of [0, 3]² (jittered interior): a hexagon (two cells merged), a
/// pentagon + triangle, quads, and triangle pairs. Returns the mesh placed in 3D by a
/// fixed rotation and translation, and each vertex's plane coordinates.
fn mixed_mesh() -> (PolyMesh, Vec<Point2<f64>>) {
    let mut rng = ChaCha8Rng::seed_from_u64(21);
    let mut plane = Vec::new();
    for j in 0..=3 {
        for i in 0..=3 {
            let interior = (1..3).contains(&i) && (1..3).contains(&j);
            let d = if interior { 0.2 } else { 0.0 };
            plane.push(Point2::new(
                i as f64 + rng.random_range(-1.0..1.0) * d,
                j as f64 + rng.random_range(-1.0..1.0) * d,
            ));
        }
    }
    let v = |i: u32, j: u32| j * 4 + i;
    let faces = vec![
        vec![v(0, 0), v(1, 0), v(2, 0), v(2, 1), v(1, 1), v(0, 1)],
        vec![v(2, 0), v(3, 0), v(3, 1), v(2, 1)],
        vec![v(0, 1), v(1, 1), v(2, 2), v(1, 2), v(0, 2)],
        vec![v(1, 1), v(2, 1), v(2, 2)],
        vec![v(2, 1), v(3, 1), v(3, 2), v(2, 2)],
        vec![v(0, 2), v(1, 2), v(1, 3), v(0, 3)],
        vec![v(1, 2), v(2, 2), v(2, 3)],
        vec![v(1, 2), v(2, 3), v(1, 3)],
        vec![v(2, 2), v(3, 2), v(3, 3), v(2, 3)],
    ];
    let rot = Rotation3::from_euler_angles(0.3, -1.1, 2.0);
    let shift = Vector3::new(4.0, -2.0, 7.5);
    let positions = plane
        .iter()
        .map(|p| Point3::from(rot * Vector3::new(p.x, p.y, 0.0) + shift))
        .collect();
    (PolyMesh::from_faces(positions, &faces), plane)
}

/// Metrics of the map sending each vertex's plane coordinates `p` to `map(p)`, with
/// UV indices equal to vertex indices; the layout is also stored in the mesh.
fn measure(
    map: impl Fn(Point2<f64>) -> Point2<f64>,
) -> (PolyMesh, Vec<metrics::FaceMetrics>, Metrics) {
    let (mut mesh, plane) = mixed_mesh();
    mesh.uvs = plane.iter().map(|&p| map(p)).collect();
    mesh.corner_uvs = Some(mesh.face_vertices.clone());
    let per_face = face_metrics(&mesh, &mesh.uvs, &mesh.face_vertices).unwrap();
    let summary = summarize(&mesh, &per_face, None);
    (mesh, per_face, summary)
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

// Analytic: an isometry has σ1 = σ2 = 1, so angle 1, area 0, stretch 1 (the lower
// bound of Sander et al. 2001), no flips, no overlaps; utilization is the UV area 9.
#[test]
fn identity_map_is_distortion_free() {
    let (_, per_face, m) = measure(|p| p);
    for f in &per_face {
        assert!(close(f.sigma1, 1.0, 1e-12) && close(f.sigma2, 1.0, 1e-12));
        assert!(close(f.area_uv, f.area_3d, 1e-12) && !f.flipped);
    }
    assert!(close(m.angle_distortion_mean, 1.0, 1e-12));
    assert!(close(m.angle_distortion_max, 1.0, 1e-12));
    assert!(close(m.area_distortion_mean, 0.0, 1e-12));
    assert!(close(m.area_distortion_max, 0.0, 1e-12));
    assert!(close(m.stretch_l2, 1.0, 1e-12));
    assert!(close(m.stretch_linf, 1.0, 1e-12));
    assert_eq!((m.flipped_faces, m.overlapping_face_pairs), (0, 0));
    assert!(close(m.utilization, 9.0, 1e-12));
}

// Analytic: UV = 0.1·p + t has σ = 0.1 everywhere; the global scale s = 0.1 removes
// it, leaving the identity's values; utilization = 0.01 · 9.
#[test]
fn uniform_scaling_is_removed_by_global_normalisation() {
    let (_, per_face, m) = measure(|p| Point2::new(0.1 * p.x + 0.2, 0.1 * p.y + 0.5));
    assert!(per_face.iter().all(|f| close(f.sigma1, 0.1, 1e-13)));
    assert!(per_face
        .iter()
        .all(|f| close(f.area_distortion, 0.0, 1e-12)));
    assert!(close(m.area_distortion_max, 0.0, 1e-12));
    assert!(close(m.angle_distortion_max, 1.0, 1e-12));
    assert!(close(m.stretch_l2, 1.0, 1e-12));
    assert!(close(m.stretch_linf, 1.0, 1e-12));
    assert!(close(m.utilization, 0.09, 1e-13));
}

// Analytic: the shear [[1, k], [0, 1]] has σ = (√(k²+4) ± k)/2 and determinant 1, so
// s = 1, angle distortion σ1/σ2, area distortion 0, L2 stretch √((σ1²+σ2²)/2) =
// √((k²+2)/2) and L∞ stretch 1/σ2 = σ1.
#[test]
fn shear_has_known_singular_values() {
    let k = 0.75;
    let (_, per_face, m) = measure(|p| Point2::new(p.x + k * p.y, p.y));
    let root = (k * k + 4.0_f64).sqrt();
    let (s1, s2) = ((root + k) / 2.0, (root - k) / 2.0);
    for f in &per_face {
        assert!(close(f.sigma1, s1, 1e-12) && close(f.sigma2, s2, 1e-12));
    }
    assert!(close(m.angle_distortion_mean, s1 / s2, 1e-12));
    assert!(close(m.angle_distortion_max, s1 / s2, 1e-12));
    assert!(close(m.area_distortion_max, 0.0, 1e-12));
    assert!(close(m.stretch_l2, ((k * k + 2.0) / 2.0).sqrt(), 1e-12));
    assert!(close(m.stretch_linf, s1, 1e-12));
    assert_eq!(m.flipped_faces, 0);
}

// Analytic: the mirror (u, v) = (−x, y) has det J = −1 on every face: all faces are
// flipped, σ2 = −1, and with |σ2| the distortions are those of an isometry.
#[test]
fn mirrored_map_flips_every_face() {
    let (mesh, per_face, m) = measure(|p| Point2::new(-p.x, p.y));
    assert_eq!(m.flipped_faces, mesh.face_count());
    for f in &per_face {
        assert!(f.flipped);
        assert!(close(f.sigma1, 1.0, 1e-12) && close(f.sigma2, -1.0, 1e-12));
        assert!(close(f.area_uv, -f.area_3d, 1e-12));
    }
    assert!(close(m.angle_distortion_max, 1.0, 1e-12));
    assert!(close(m.area_distortion_max, 0.0, 1e-12));
    assert!(close(m.stretch_l2, 1.0, 1e-12));
    assert!(close(m.utilization, 9.0, 1e-12));
}

fn unit_square_mesh(uvs: Vec<Point2<f64>>) -> PolyMesh {
    let mut mesh = PolyMesh::from_faces(
        vec![
            Point3::new(0.0, 0.0, 0.0),
            Point3::new(1.0, 0.0, 0.0),
            Point3::new(1.0, 1.0, 0.0),
            Point3::new(0.0, 1.0, 0.0),
        ],
        &[vec![0, 1, 2, 3]],
    );
    mesh.uvs = uvs;
    mesh.corner_uvs = Some(vec![0, 1, 2, 3]);
    mesh
}

// Analytic: on the unit square the polygon gradient is the trapezoid-rule boundary
// integral (1/A) Σ_i ½(u_i + u_{i+1}) (e_i × n). UV corners (0,0), (1,0), (0.2,0.2),
// (0,1) (corner 2 folded across the diagonal) give J = [[0.6, −0.4], [−0.4, 0.6]]:
// σ = (1, 0.2), det J = 0.2 > 0, shoelace area 0.2 — yet the fan triangle (c, w1, w2)
// is inverted, so the face counts as flipped (DESIGN §2, Injectivity).
#[test]
fn folded_quad_is_flipped_although_det_is_positive() {
    let mesh = unit_square_mesh(vec![
        Point2::new(0.0, 0.0),
        Point2::new(1.0, 0.0),
        Point2::new(0.2, 0.2),
        Point2::new(0.0, 1.0),
    ]);
    let per_face = face_metrics(&mesh, &mesh.uvs, &[0, 1, 2, 3]).unwrap();
    let f = per_face[0];
    assert!(close(f.sigma1, 1.0, 1e-12) && close(f.sigma2, 0.2, 1e-12));
    assert!(close(f.area_uv, 0.2, 1e-12));
    assert!(f.flipped);
    let j = metrics::jacobian(&mesh.face_corners(0), &mesh.uvs).unwrap();
    assert!((j - Matrix2::new(0.6, -0.4, -0.4, 0.6)).amax() <= 1e-12);
    assert_eq!(summarize(&mesh, &per_face, None).flipped_faces, 1);
}

// Analytic (same formula): the bow-tie (0,0), (1,0), (0,1), (1,1) has J = [[0, 0],
// [0, 1]], so σ2 = 0 — a collapsed direction. It is flipped (det J = 0) and every
// undefined distortion is reported as the cap, so the JSON holds no NaN or null.
#[test]
fn collapsed_face_gives_capped_finite_values() {
    let mesh = unit_square_mesh(vec![
        Point2::new(0.0, 0.0),
        Point2::new(1.0, 0.0),
        Point2::new(0.0, 1.0),
        Point2::new(1.0, 1.0),
    ]);
    let per_face = face_metrics(&mesh, &mesh.uvs, &[0, 1, 2, 3]).unwrap();
    let f = per_face[0];
    assert!(close(f.sigma1, 1.0, 1e-12) && f.sigma2.abs() <= 1e-12);
    assert!(f.flipped);
    let m = summarize(&mesh, &per_face, None);
    assert_eq!(m.flipped_faces, 1);
    assert_eq!(m.angle_distortion_max, DISTORTION_CAP);
    assert_eq!(m.stretch_linf, DISTORTION_CAP);
    let json = serde_json::to_string(&m).unwrap();
    assert!(!json.contains("null") && !json.contains("NaN"), "{json}");
    // A UV polygon collapsed to a point.
    let mesh = unit_square_mesh(vec![Point2::new(0.5, 0.5); 4]);
    let per_face = face_metrics(&mesh, &mesh.uvs, &[0, 1, 2, 3]).unwrap();
    let m = summarize(&mesh, &per_face, None);
    assert_eq!(m.angle_distortion_mean, DISTORTION_CAP);
    assert_eq!(m.area_distortion_mean, DISTORTION_CAP);
    assert_eq!(m.stretch_l2, DISTORTION_CAP);
    assert_eq!(m.utilization, 0.0);
    assert!(!serde_json::to_string(&m).unwrap().contains("null"));
}

// The report's keys (DESIGN §3), exactly.
#[test]
fn summary_serialises_with_the_documented_keys() {
    let (_, _, m) = measure(|p| p);
    let value = serde_json::to_value(m).unwrap();
    let mut keys: Vec<&str> = value
        .as_object()
        .unwrap()
        .keys()
        .map(|k| k.as_str())
        .collect();
    keys.sort_unstable();
    assert_eq!(
        keys,
        vec![
            "angle_distortion_max",
            "angle_distortion_mean",
            "area_distortion_max",
            "area_distortion_mean",
            "flipped_faces",
            "overlapping_face_pairs",
            "stretch_l2",
            "stretch_linf",
            "utilization",
        ]
    );
    let back: Metrics = serde_json::from_value(value).unwrap();
    assert_eq!(back, m);
}

// Analytic: two unit squares, one mapped by the identity, one scaled by 2. Over both,
// s² = (1 + 4)/2 = 2.5, so the area distortions are ln 2.5 and ln 1.6; per chart
// (subset of faces, its own s) both are 0. Overlaps count only within the subset.
#[test]
fn per_chart_summary_uses_its_own_scale() {
    let mut mesh = PolyMesh::from_faces(
        vec![
            Point3::new(0.0, 0.0, 0.0),
            Point3::new(1.0, 0.0, 0.0),
            Point3::new(1.0, 1.0, 0.0),
            Point3::new(0.0, 1.0, 0.0),
            Point3::new(5.0, 0.0, 1.0),
            Point3::new(6.0, 0.0, 1.0),
            Point3::new(6.0, 1.0, 1.0),
            Point3::new(5.0, 1.0, 1.0),
        ],
        &[vec![0, 1, 2, 3], vec![4, 5, 6, 7]],
    );
    mesh.uvs = vec![
        Point2::new(0.0, 0.0),
        Point2::new(1.0, 0.0),
        Point2::new(1.0, 1.0),
        Point2::new(0.0, 1.0),
        Point2::new(0.5, 0.5),
        Point2::new(2.5, 0.5),
        Point2::new(2.5, 2.5),
        Point2::new(0.5, 2.5),
    ];
    mesh.corner_uvs = Some((0..8).collect());
    let per_face = face_metrics(&mesh, &mesh.uvs, &(0..8).collect::<Vec<u32>>()).unwrap();
    let all = summarize(&mesh, &per_face, None);
    assert!(close(all.area_distortion_max, 2.5_f64.ln(), 1e-12));
    assert!(close(
        all.area_distortion_mean,
        (2.5_f64.ln() + 1.6_f64.ln()) / 2.0,
        1e-12
    ));
    assert!(close(all.utilization, 5.0, 1e-12));
    assert_eq!(all.overlapping_face_pairs, 1);
    for chart in [[0u32], [1u32]] {
        let m = summarize(&mesh, &per_face, Some(&chart));
        assert!(close(m.area_distortion_max, 0.0, 1e-12));
        assert!(close(m.stretch_l2, 1.0, 1e-12));
        assert_eq!(m.overlapping_face_pairs, 0);
    }
    assert!(close(
        summarize(&mesh, &per_face, Some(&[1])).utilization,
        4.0,
        1e-12
    ));
}

// Sander et al. (2001): after normalising total area, L2 stretch ≥ 1. Exact on
// triangles (det J · A_f = A_uv); checked on random flip-free perturbations.
#[test]
fn l2_stretch_is_at_least_one_on_triangle_maps() {
    let mut rng = ChaCha8Rng::seed_from_u64(22);
    let n = 6;
    let mut positions = Vec::new();
    let mut uvs = Vec::new();
    for j in 0..=n {
        for i in 0..=n {
            let (x, y) = (i as f64, j as f64);
            positions.push(Point3::new(x, y, 0.3 * (x * 0.7).sin()));
            uvs.push(Point2::new(
                x + rng.random_range(-0.25..0.25),
                y + rng.random_range(-0.25..0.25),
            ));
        }
    }
    let mut faces = Vec::new();
    for j in 0..n as u32 {
        for i in 0..n as u32 {
            let a = j * (n as u32 + 1) + i;
            let (b, c, d) = (a + 1, a + n as u32 + 2, a + n as u32 + 1);
            faces.push(vec![a, b, c]);
            faces.push(vec![a, c, d]);
        }
    }
    let mut mesh = PolyMesh::from_faces(positions, &faces);
    let per_face = face_metrics(&mesh, &uvs, &mesh.face_vertices).unwrap();
    mesh.uvs = uvs;
    mesh.corner_uvs = Some(mesh.face_vertices.clone());
    let m = summarize(&mesh, &per_face, None);
    assert_eq!(m.flipped_faces, 0);
    assert!(m.stretch_l2 >= 1.0 - 1e-12, "{}", m.stretch_l2);
    assert!(m.stretch_l2 > 1.001, "the perturbation should distort");
}

// Closed-form signed SVD against nalgebra's SVD (magnitudes) and the determinant (sign).
#[test]
fn signed_singular_values_match_svd() {
    let mut rng = ChaCha8Rng::seed_from_u64(23);
    for _ in 0..200 {
        let m = Matrix2::from_fn(|_, _| rng.random_range(-3.0..3.0));
        let (s1, s2) = signed_singular_values(&m);
        let sv = m.svd(false, false).singular_values;
        let (hi, lo) = (sv[0].max(sv[1]), sv[0].min(sv[1]));
        assert!(close(s1, hi, 1e-12) && close(s2.abs(), lo, 1e-12));
        assert!(close(s1 * s2, m.determinant(), 1e-12));
    }
}

fn mesh_message(err: Error) -> String {
    match err {
        Error::Mesh { message, .. } => message,
        other => panic!("expected a mesh error, got {other}"),
    }
}

// Library contract (RULES): bad UV input is refused naming the face, never a panic.
#[test]
fn bad_uv_input_is_refused() {
    let mut mesh = unit_square_mesh(vec![Point2::new(0.0, 0.0); 4]);
    mesh.face_lines = vec![3];
    let msg = mesh_message(face_metrics(&mesh, &mesh.uvs, &[0, 1, 2, 7]).unwrap_err());
    assert_eq!(
        msg,
        "face 1 (line 3) uses UV 8, but the layout has only 4 UVs"
    );
    let msg = mesh_message(face_metrics(&mesh, &mesh.uvs, &[0, 1]).unwrap_err());
    assert!(
        msg.contains("2 corner UV indices for 4 face corners"),
        "{msg}"
    );
    let nan = vec![Point2::new(f64::NAN, 0.0); 4];
    let msg = mesh_message(face_metrics(&mesh, &nan, &[0, 1, 2, 3]).unwrap_err());
    assert_eq!(msg, "face 1 (line 3) has a non-finite UV value");
}
