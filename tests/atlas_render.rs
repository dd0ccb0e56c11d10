//! Pixel-level checks of the distortion atlas.

use nalgebra::{Point2, Point3};
use polyflat::atlas::{self, color, legend_height, render_atlas, AtlasInput, ColorScale, Oklab};
use polyflat::settings::AtlasMetric;
use polyflat::PolyMesh;

/// Quads side by side: face i covers UV [x0 + i·w, x0 + (i+1)·w] × [y0, y0 + h],
/// with shared vertices (and shared UV corners) between neighbours.
fn strip(n: usize, x0: f64, y0: f64, w: f64, h: f64) -> (PolyMesh, Vec<Point2<f64>>, Vec<u32>) {
    let mut positions = Vec::new();
    let mut uvs = Vec::new();
    for i in 0..=n {
        for j in 0..2 {
            let (u, v) = (x0 + i as f64 * w, y0 + j as f64 * h);
            positions.push(Point3::new(u, v, 0.0));
            uvs.push(Point2::new(u, v));
        }
    }
    let faces: Vec<Vec<u32>> = (0..n as u32)
        .map(|i| vec![2 * i, 2 * i + 2, 2 * i + 3, 2 * i + 1])
        .collect();
    let mesh = PolyMesh::from_faces(positions, &faces);
    let corner_uvs = mesh.face_vertices.clone();
    (mesh, uvs, corner_uvs)
}

fn px(img: &image::RgbaImage, x: u32, y: u32) -> [u8; 3] {
    let p = img.get_pixel(x, y).0;
    [p[0], p[1], p[2]]
}

#[test]
fn quad_centre_has_its_scale_colour_and_v_points_up() {
    // One quad on UV [0.25, 0.5] × [0.125, 0.375]: in a 256-pixel image (v flipped)
    // that is columns 64..128 and rows 160..224, centre (96, 192).
    let (mesh, uvs, corner_uvs) = strip(1, 0.25, 0.125, 0.25, 0.25);
    let input = AtlasInput {
        mesh: &mesh,
        uvs: &uvs,
        corner_uvs: &corner_uvs,
        face_values: &[1.8],
        metric: AtlasMetric::Angle,
        flipped: &[false],
        face_chart: &[0],
    };
    let img = render_atlas(&input, 256).unwrap();
    let expected = ColorScale::for_metric(AtlasMetric::Angle).color(1.8);
    assert_eq!(px(&img, 96, 192), expected);
    // The mirrored spot (v not flipped) is empty texture space.
    assert_eq!(px(&img, 100, 60), color::background());
    assert_eq!(px(&img, 10, 10), color::background());
    // A guide line runs every 1/8 of UV: column 32 is one.
    assert_eq!(px(&img, 32, 10), color::grid_line());
}

#[test]
fn size_is_the_square_plus_the_documented_legend() {
    // Documented: legend height = 40 · max(1, R / 256).
    assert_eq!(legend_height(16), 40);
    assert_eq!(legend_height(256), 40);
    assert_eq!(legend_height(300), 40);
    assert_eq!(legend_height(512), 80);
    assert_eq!(legend_height(1024), 160);
    let (mesh, uvs, corner_uvs) = strip(1, 0.1, 0.1, 0.5, 0.5);
    for (res, metric) in [
        (16, AtlasMetric::Angle),
        (300, AtlasMetric::Area),
        (1024, AtlasMetric::Stretch),
    ] {
        let input = AtlasInput {
            mesh: &mesh,
            uvs: &uvs,
            corner_uvs: &corner_uvs,
            face_values: &[1.0],
            metric,
            flipped: &[false],
            face_chart: &[0],
        };
        let img = render_atlas(&input, res).unwrap();
        assert_eq!((img.width(), img.height()), (res, res + legend_height(res)));
    }
}

#[test]
fn legend_shows_the_bar_and_text() {
    // At R = 1024 the font pixel is k = 4: the bar spans x 40 … 984 and rows
    // R + 60 … R + 100 (documented in legend.rs); the title occupies rows R + 16 … R + 48.
    let (mesh, uvs, corner_uvs) = strip(1, 0.1, 0.1, 0.5, 0.5);
    let input = AtlasInput {
        mesh: &mesh,
        uvs: &uvs,
        corner_uvs: &corner_uvs,
        face_values: &[2.0],
        metric: AtlasMetric::Area,
        flipped: &[false],
        face_chart: &[0],
    };
    let img = render_atlas(&input, 1024).unwrap();
    let scale = ColorScale::for_metric(AtlasMetric::Area);
    let bar_y = 1024 + 80;
    // The bar's pixel column at x covers position (x + 0.5 − 40) / 944.
    for x in [40u32, 512, 983] {
        let p = (f64::from(x) + 0.5 - 40.0) / 944.0;
        assert_eq!(
            px(&img, x, bar_y),
            scale.color_at(p).to_srgb8(),
            "bar at x = {x}"
        );
    }
    assert_eq!(px(&img, 20, bar_y), color::legend_panel());
    let text_pixels = (1024 + 16..1024 + 48)
        .flat_map(|y| (0..1024).map(move |x| (x, y)))
        .filter(|&(x, y)| px(&img, x, y) == color::legend_text())
        .count();
    // "area ratio uv/surface" and "flipped: 0" ink a few thousand pixels at k = 4.
    assert!(text_pixels > 1000, "only {text_pixels} text pixels");
}

#[test]
fn flipped_face_is_hatched_in_the_marker_colour() {
    // Two quads of 0.25 UV side: face 0 normal, face 1 flipped. Count marker-coloured
    // pixels well inside each face (6 px clear of its outline).
    let (mesh, uvs, corner_uvs) = strip(2, 0.125, 0.25, 0.25, 0.25);
    let input = AtlasInput {
        mesh: &mesh,
        uvs: &uvs,
        corner_uvs: &corner_uvs,
        face_values: &[1.0, 1.0],
        metric: AtlasMetric::Angle,
        flipped: &[false, true],
        face_chart: &[0, 0],
    };
    let img = render_atlas(&input, 512).unwrap();
    let marker = color::marker();
    let share = |x0: u32| {
        let (mut hits, mut all) = (0, 0);
        for y in 262..378 {
            for x in x0 + 6..x0 + 122 {
                all += 1;
                hits += usize::from(px(&img, x, y) == marker);
            }
        }
        hits as f64 / all as f64
    };
    // Face 0 spans x 64..192, face 1 x 192..320 (rows 256..384).
    assert_eq!(share(64), 0.0);
    // The stripe is 40% of the hatch period; pixels fully inside it (exact marker
    // colour) are that less about one pixel per period of 6 px: ≈ 0.25.
    let s = share(192);
    assert!((0.15..0.42).contains(&s), "marker share {s}");
}

#[test]
fn chart_boundaries_are_outlined_and_interior_edges_are_not() {
    // Two quads sharing the edge u = 0.5. Same chart: the shared edge is interior
    // (thin translucent polygon edge, the fill stays light). Different charts: the
    // shared edge is a chart boundary drawn in the near-black outline colour.
    let (mesh, uvs, corner_uvs) = strip(2, 0.25, 0.25, 0.25, 0.25);
    let l_at_edge = |charts: [u32; 2]| {
        let input = AtlasInput {
            mesh: &mesh,
            uvs: &uvs,
            corner_uvs: &corner_uvs,
            face_values: &[1.0, 1.0],
            metric: AtlasMetric::Angle,
            flipped: &[false, false],
            face_chart: &charts,
        };
        let img = render_atlas(&input, 512).unwrap();
        // Edge u = 0.5 is the pixel boundary between columns 255 and 256.
        let l = |x| Oklab::from_srgb8(px(&img, x, 320)).l;
        l(255).min(l(256))
    };
    let joined = l_at_edge([0, 0]);
    let split = l_at_edge([0, 1]);
    // Fill L is 0.97; the interior edge (outline colour at 25% alpha, 0.6 px) darkens
    // it a little; a chart boundary (1 px, opaque, L 0.16) nearly reaches the outline.
    assert!(joined > 0.75, "interior edge too dark: L {joined}");
    assert!(split < 0.45, "chart boundary too light: L {split}");
}

#[test]
fn atlas_is_deterministic_and_written_atomically() {
    let (mesh, uvs, corner_uvs) = strip(3, 0.1, 0.1, 0.2, 0.3);
    let input = AtlasInput {
        mesh: &mesh,
        uvs: &uvs,
        corner_uvs: &corner_uvs,
        face_values: &[-0.3, 0.0, 0.9],
        metric: AtlasMetric::Area,
        flipped: &[false, true, false],
        face_chart: &[0, 0, 1],
    };
    let a = render_atlas(&input, 256).unwrap();
    let b = render_atlas(&input, 256).unwrap();
    assert_eq!(a.as_raw(), b.as_raw());

    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("atlas.png");
    atlas::write_png(&path, &a).unwrap();
    let back = image::open(&path).unwrap().to_rgba8();
    assert_eq!(back.as_raw(), a.as_raw());
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(
        names,
        vec![std::ffi::OsString::from("atlas.png")],
        "temporary files left behind"
    );

    let missing = dir.path().join("no-such-folder").join("atlas.png");
    let err = atlas::write_png(&missing, &a).unwrap_err().to_string();
    assert!(err.contains("no-such-folder"), "{err}");
    assert!(!missing.exists());
}

#[test]
fn inconsistent_inputs_are_errors_naming_the_problem() {
    let (mesh, uvs, corner_uvs) = strip(2, 0.1, 0.1, 0.2, 0.2);
    let base = AtlasInput {
        mesh: &mesh,
        uvs: &uvs,
        corner_uvs: &corner_uvs,
        face_values: &[1.0, 1.0],
        metric: AtlasMetric::Angle,
        flipped: &[false, false],
        face_chart: &[0, 0],
    };
    let err = |input: AtlasInput, res: u32| render_atlas(&input, res).unwrap_err().to_string();
    assert!(err(base, 8).contains("--resolution"));
    assert!(err(
        AtlasInput {
            face_values: &[1.0],
            ..base
        },
        64
    )
    .contains("face_values has 1 entries"));
    assert!(err(
        AtlasInput {
            flipped: &[],
            ..base
        },
        64
    )
    .contains("flipped"));
    let mut bad = corner_uvs.clone();
    bad[5] = 99;
    assert!(err(
        AtlasInput {
            corner_uvs: &bad,
            ..base
        },
        64
    )
    .contains("face 2 refers to UV 100"));
    let mut nan = uvs.clone();
    nan[0].x = f64::NAN;
    assert!(err(AtlasInput { uvs: &nan, ..base }, 64).contains("face 1 uses UV 1"));
}
