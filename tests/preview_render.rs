//! Pixel-level checks of the checker preview.

use nalgebra::{Point2, Point3};
use polyflat::atlas::Oklab;
use polyflat::preview::{render_preview, view_rect, DARK_L, LIGHT_L};
use polyflat::PolyMesh;

/// One face: corner positions and their UVs.
type Part = (Vec<Point3<f64>>, Vec<Point2<f64>>);

/// A square in the plane z = `z`, x, y ∈ [−1, 1], counter-clockwise seen from +z,
/// with the given UV corners (in the same order: (−1,−1), (1,−1), (1,1), (−1,1)).
fn square(z: f64, uv: [[f64; 2]; 4]) -> Part {
    let p = [[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]];
    (
        p.iter().map(|q| Point3::new(q[0], q[1], z)).collect(),
        uv.iter().map(|t| Point2::new(t[0], t[1])).collect(),
    )
}

fn mesh_of(parts: &[Part]) -> (PolyMesh, Vec<Point2<f64>>, Vec<u32>) {
    let mut positions = Vec::new();
    let mut uvs = Vec::new();
    let mut faces = Vec::new();
    for (p, t) in parts {
        let base = positions.len() as u32;
        faces.push((0..p.len() as u32).map(|i| base + i).collect::<Vec<_>>());
        positions.extend_from_slice(p);
        uvs.extend_from_slice(t);
    }
    let mesh = PolyMesh::from_faces(positions, &faces);
    let corner_uvs = mesh.face_vertices.clone();
    (mesh, uvs, corner_uvs)
}

fn lightness(img: &image::RgbaImage, x: u32, y: u32) -> f64 {
    let p = img.get_pixel(x, y).0;
    Oklab::from_srgb8([p[0], p[1], p[2]]).l
}

/// Expected OKLab lightness of a checker colour of lightness `l` on a face that
/// looks straight at the front camera. Shading multiplies linear light by
/// s = 0.32 + 0.68 · (n · light) with light ∝ (−0.45, 0.60, 0.66) in camera space,
/// n = (0, 0, 1); OKLab L scales with the cube root of a uniform factor.
fn shaded(l: f64) -> f64 {
    let light_z = 0.66 / (0.45f64 * 0.45 + 0.60 * 0.60 + 0.66 * 0.66).sqrt();
    l * (0.32 + 0.68 * light_z).cbrt()
}

#[test]
fn flat_quad_shows_both_checker_colours_half_and_half() {
    let (mesh, uvs, corner_uvs) = mesh_of(&[square(
        0.0,
        [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]],
    )]);
    let img = render_preview(&mesh, &uvs, &corner_uvs, 512).unwrap();
    // Front view: top-left 256² cell. The square spans ±62% of the half cell around
    // the centre (bounding-sphere framing), so the central ±60 px lie inside it.
    let (x0, y0, w, h) = view_rect(512, 0);
    let (cx, cy) = (x0 + w / 2, y0 + h / 2);
    let (light, dark) = (shaded(LIGHT_L), shaded(DARK_L));
    let (mut n_light, mut n_dark, mut n_all) = (0usize, 0usize, 0usize);
    for y in cy - 60..cy + 60 {
        for x in cx - 60..cx + 60 {
            let l = lightness(&img, x, y);
            n_all += 1;
            n_light += usize::from((l - light).abs() < 0.02);
            n_dark += usize::from((l - dark).abs() < 0.02);
        }
    }
    // About 11 × 11 checker cells lie in the window; cells are ~7.5 px wide, so the
    // boundary pixels (filtered blends of the two) are ≈ 2/7.5 of each axis.
    let (fl, fd) = (n_light as f64 / n_all as f64, n_dark as f64 / n_all as f64);
    assert!(
        fl + fd > 0.5,
        "only {:.2} of pixels are pure checker colours",
        fl + fd
    );
    let ratio = n_light as f64 / (n_light + n_dark) as f64;
    assert!((ratio - 0.5).abs() < 0.04, "light share {ratio:.3}");
}

#[test]
fn z_buffer_keeps_the_nearer_quad() {
    // Quad A at z = 0.5 maps into light cell (0, 0); quad B at z = 0 into dark cell
    // (1, 0). Seen from +z, A is nearer; seen from −z, B is nearer — in either face
    // order.
    let light_uv = [[0.01, 0.01], [0.05, 0.01], [0.05, 0.05], [0.01, 0.05]];
    let dark_uv = [[0.07, 0.01], [0.12, 0.01], [0.12, 0.05], [0.07, 0.05]];
    let a = square(0.5, light_uv);
    let b = square(0.0, dark_uv);
    for parts in [[a.clone(), b.clone()], [b.clone(), a.clone()]] {
        let (mesh, uvs, corner_uvs) = mesh_of(&parts);
        let img = render_preview(&mesh, &uvs, &corner_uvs, 256).unwrap();
        let centre = |i| {
            let (x, y, w, h) = view_rect(256, i);
            lightness(&img, x + w / 2, y + h / 2)
        };
        assert!(
            (centre(0) - shaded(LIGHT_L)).abs() < 0.02,
            "front L {}",
            centre(0)
        );
        // From the back the lit side is the flipped normal: same shading factor.
        assert!(
            (centre(2) - shaded(DARK_L)).abs() < 0.02,
            "back L {}",
            centre(2)
        );
    }
}

#[test]
fn preview_is_deterministic() {
    // A wavy, non-planar 12 × 12 grid of quads.
    let n = 12;
    let mut positions = Vec::new();
    let mut uvs = Vec::new();
    for j in 0..=n {
        for i in 0..=n {
            let (u, v) = (i as f64 / n as f64, j as f64 / n as f64);
            positions.push(Point3::new(
                u * 2.0 - 1.0,
                v * 2.0 - 1.0,
                0.3 * (3.0 * u).sin() * (2.0 * v).cos(),
            ));
            uvs.push(Point2::new(u, v));
        }
    }
    let idx = |i: usize, j: usize| (j * (n + 1) + i) as u32;
    let faces: Vec<Vec<u32>> = (0..n)
        .flat_map(|j| {
            (0..n).map(move |i| vec![idx(i, j), idx(i + 1, j), idx(i + 1, j + 1), idx(i, j + 1)])
        })
        .collect();
    let mesh = PolyMesh::from_faces(positions, &faces);
    let corner_uvs = mesh.face_vertices.clone();
    let a = render_preview(&mesh, &uvs, &corner_uvs, 200).unwrap();
    let b = render_preview(&mesh, &uvs, &corner_uvs, 200).unwrap();
    assert_eq!((a.width(), a.height()), (200, 200));
    assert_eq!(a.as_raw(), b.as_raw());
}

#[test]
fn bad_input_is_an_error_naming_the_problem() {
    let (mesh, uvs, corner_uvs) = mesh_of(&[square(
        0.0,
        [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]],
    )]);
    let err = |m: &PolyMesh, t: &[Point2<f64>], c: &[u32], s| {
        render_preview(m, t, c, s).unwrap_err().to_string()
    };
    assert!(err(&mesh, &uvs, &corner_uvs, 10).contains("size"));
    assert!(err(&mesh, &uvs, &corner_uvs[..3], 128).contains("3 UV corner indices"));
    let mut nan = mesh.clone();
    nan.positions[2].y = f64::INFINITY;
    assert!(err(&nan, &uvs, &corner_uvs, 128).contains("face 1 uses vertex 3"));
    let empty = PolyMesh::from_faces(Vec::new(), &[]);
    assert!(err(&empty, &[], &[], 128).contains("no faces"));
}
