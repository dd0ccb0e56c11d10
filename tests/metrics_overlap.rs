//! Overlap detection between UV polygons (DESIGN §3, `overlapping_face_pairs`).
//! Expected values are analytic (plane geometry of the listed layouts); the spatial
//! index is checked against direct evaluation of every pair.

use nalgebra::{Point2, Point3};
use polyflat::metrics::overlapping_face_pairs;
use polyflat::PolyMesh;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// A mesh whose faces are given directly as UV polygons (each with its own UV
/// corners); the 3D positions are the UVs at z = 0 (they play no part here).
fn layout(polys: &[Vec<Point2<f64>>]) -> (PolyMesh, Vec<Point2<f64>>, Vec<u32>) {
    let mut positions = Vec::new();
    let mut faces = Vec::new();
    let mut uvs = Vec::new();
    for p in polys {
        let start = uvs.len() as u32;
        faces.push((start..start + p.len() as u32).collect::<Vec<u32>>());
        for q in p {
            uvs.push(*q);
            positions.push(Point3::new(q.x, q.y, 0.0));
        }
    }
    let mesh = PolyMesh::from_faces(positions, &faces);
    let corners = mesh.face_vertices.clone();
    (mesh, uvs, corners)
}

fn square(x: f64, y: f64, s: f64) -> Vec<Point2<f64>> {
    vec![
        Point2::new(x, y),
        Point2::new(x + s, y),
        Point2::new(x + s, y + s),
        Point2::new(x, y + s),
    ]
}

fn pairs(polys: &[Vec<Point2<f64>>]) -> Vec<(u32, u32)> {
    let (mesh, uvs, corners) = layout(polys);
    overlapping_face_pairs(&uvs, &corners, &mesh)
}

#[test]
fn overlapping_squares_are_one_pair() {
    assert_eq!(
        pairs(&[square(0.0, 0.0, 1.0), square(0.5, 0.5, 1.0)]),
        vec![(0, 1)]
    );
    // Same square twice, and one inside the other.
    assert_eq!(
        pairs(&[square(0.0, 0.0, 1.0), square(0.0, 0.0, 1.0)]),
        vec![(0, 1)]
    );
    assert_eq!(
        pairs(&[square(0.0, 0.0, 1.0), square(0.2, 0.3, 0.1)]),
        vec![(0, 1)]
    );
}

#[test]
fn squares_sharing_an_edge_or_corner_do_not_overlap() {
    // Separate UV corners with equal values (a seam).
    assert!(pairs(&[square(0.0, 0.0, 1.0), square(1.0, 0.0, 1.0)]).is_empty());
    assert!(pairs(&[square(0.0, 0.0, 1.0), square(1.0, 1.0, 1.0)]).is_empty());
    // Shared UV corners (one island): two quads using UV indices 1 and 2 jointly.
    let mut mesh = PolyMesh::from_faces(
        (0..6)
            .map(|k| Point3::new((k % 3) as f64, (k / 3) as f64, 0.0))
            .collect(),
        &[vec![0, 1, 4, 3], vec![1, 2, 5, 4]],
    );
    let uvs: Vec<Point2<f64>> = (0..6)
        .map(|k| Point2::new(0.3 * (k % 3) as f64, 0.3 * (k / 3) as f64))
        .collect();
    mesh.uvs = uvs.clone();
    let corners = mesh.face_vertices.clone();
    assert!(overlapping_face_pairs(&uvs, &corners, &mesh).is_empty());
    // Six-decimal rounding of a seam's copy does not create an overlap.
    let a = square(0.1, 0.1, 0.3);
    let b = vec![
        Point2::new(0.4000004, 0.0999996),
        Point2::new(0.7, 0.1),
        Point2::new(0.7, 0.4),
        Point2::new(0.3999996, 0.4000004),
    ];
    assert!(pairs(&[a, b]).is_empty());
}

#[test]
fn non_convex_polygons() {
    let l_shape = vec![
        Point2::new(0.0, 0.0),
        Point2::new(2.0, 0.0),
        Point2::new(2.0, 1.0),
        Point2::new(1.0, 1.0),
        Point2::new(1.0, 2.0),
        Point2::new(0.0, 2.0),
    ];
    // A square in the notch touches along two edges: no overlap, although the boxes
    // overlap by a whole unit square.
    assert!(pairs(&[l_shape.clone(), square(1.0, 1.0, 1.0)]).is_empty());
    assert!(pairs(&[l_shape.clone(), square(1.2, 1.2, 0.5)]).is_empty());
    assert_eq!(pairs(&[l_shape, square(0.9, 0.9, 0.5)]), vec![(0, 1)]);
}

#[test]
fn clockwise_and_degenerate_polygons() {
    let mut cw = square(0.5, 0.5, 1.0);
    cw.reverse();
    assert_eq!(pairs(&[square(0.0, 0.0, 1.0), cw]), vec![(0, 1)]);
    // A UV polygon collapsed to a segment has no interior.
    let segment = vec![
        Point2::new(0.0, 0.5),
        Point2::new(1.0, 0.5),
        Point2::new(0.5, 0.5),
    ];
    assert!(pairs(&[square(0.0, 0.0, 1.0), segment]).is_empty());
}

// A 10×10 grid of unit quads sharing UV corners has no overlap; a square over the
// inside of one cell overlaps exactly that cell, and a unit square centred on a grid
// vertex overlaps the four cells around it.
#[test]
fn grid_with_extra_squares() {
    let n = 10;
    let mut polys: Vec<Vec<Point2<f64>>> = Vec::new();
    for j in 0..n {
        for i in 0..n {
            polys.push(square(i as f64, j as f64, 1.0));
        }
    }
    assert!(pairs(&polys).is_empty());
    polys.push(square(3.25, 4.25, 0.5));
    assert_eq!(pairs(&polys), vec![(4 * n + 3, 100)]);
    polys.pop();
    polys.push(square(6.5, 2.5, 1.0));
    let expected: Vec<(u32, u32)> = [2 * n + 6, 2 * n + 7, 3 * n + 6, 3 * n + 7]
        .iter()
        .map(|&f| (f, 100))
        .collect();
    assert_eq!(pairs(&polys), expected);
}

// Invalid faces are skipped, never a panic.
#[test]
fn invalid_faces_are_skipped() {
    let (mesh, uvs, mut corners) = layout(&[square(0.0, 0.0, 1.0), square(0.5, 0.5, 1.0)]);
    corners[5] = 99;
    assert!(overlapping_face_pairs(&uvs, &corners, &mesh).is_empty());
    assert!(overlapping_face_pairs(&uvs, &corners[..3], &mesh).is_empty());
}

/// A random star-shaped (often non-convex) polygon around `centre`.
fn random_polygon(rng: &mut ChaCha8Rng, centre: Point2<f64>, size: f64) -> Vec<Point2<f64>> {
    let n = rng.random_range(3..8);
    (0..n)
        .map(|k| {
            let t = std::f64::consts::TAU * (k as f64 + rng.random_range(0.0..0.6)) / n as f64;
            let r = size * rng.random_range(0.3..1.0);
            Point2::new(centre.x + r * t.cos(), centre.y + r * t.sin())
        })
        .collect()
}

// The grid index must find exactly the pairs that testing every pair finds.
#[test]
fn spatial_index_agrees_with_all_pairs() {
    let mut rng = ChaCha8Rng::seed_from_u64(31);
    let mut polys = Vec::new();
    for k in 0..120 {
        let size = if k % 40 == 0 { 0.3 } else { 0.04 };
        let centre = Point2::new(rng.random_range(0.0..1.0), rng.random_range(0.0..1.0));
        polys.push(random_polygon(&mut rng, centre, size));
    }
    let found = pairs(&polys);
    let mut expected = Vec::new();
    for i in 0..polys.len() {
        for j in i + 1..polys.len() {
            if !pairs(&[polys[i].clone(), polys[j].clone()]).is_empty() {
                expected.push((i as u32, j as u32));
            }
        }
    }
    assert!(
        expected.len() > 20,
        "too few overlaps to be a test: {}",
        expected.len()
    );
    assert_eq!(found, expected);
}
