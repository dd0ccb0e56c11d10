//! Shared helpers of the flattening tests and benchmark: mesh generators, Jacobian
//! singular values, and a minimal reader of the Spot fixtures' UV islands.
#![allow(dead_code)]

use nalgebra::{Matrix2, Point2, Point3};
use polyflat::operators::face;
use polyflat::PolyMesh;
use std::path::PathBuf;

/// Planar (z = 0) grid of `nx × ny` quads of side `h`, with the interior vertices
/// moved by up to `jitter × h` (deterministically) so that it is irregular.
pub fn quad_grid(nx: usize, ny: usize, h: f64, jitter: f64) -> PolyMesh {
    let mut positions = Vec::new();
    for j in 0..=ny {
        for i in 0..=nx {
            let interior = i > 0 && j > 0 && i < nx && j < ny;
            let (dx, dy) = if interior {
                let s = (i * 7919 + j * 104729) as f64;
                (
                    (s * 0.618).sin() * jitter * h,
                    (s * 0.377).cos() * jitter * h,
                )
            } else {
                (0.0, 0.0)
            };
            positions.push(Point3::new(i as f64 * h + dx, j as f64 * h + dy, 0.0));
        }
    }
    let id = |i: usize, j: usize| (j * (nx + 1) + i) as u32;
    let mut faces = Vec::new();
    for j in 0..ny {
        for i in 0..nx {
            faces.push(vec![id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1)]);
        }
    }
    PolyMesh::from_faces(positions, &faces)
}

/// The same surface with every face split into a triangle fan from its first corner.
pub fn triangulated(mesh: &PolyMesh) -> PolyMesh {
    let mut faces = Vec::new();
    for f in mesh.faces() {
        for i in 1..f.len() - 1 {
            faces.push(vec![f[0], f[i], f[i + 1]]);
        }
    }
    PolyMesh::from_faces(mesh.positions.clone(), &faces)
}

/// Planar patch of regular hexagons (side `s`), `rows × cols` cells, in the z = 0 plane.
pub fn hex_patch(rows: usize, cols: usize, s: f64) -> PolyMesh {
    let mut positions: Vec<Point3<f64>> = Vec::new();
    let mut faces = Vec::new();
    let w = 3f64.sqrt() * s;
    let mut index = std::collections::HashMap::new();
    for r in 0..rows {
        for c in 0..cols {
            let cx = c as f64 * w + if r % 2 == 1 { 0.5 * w } else { 0.0 };
            let cy = r as f64 * 1.5 * s;
            let mut face = Vec::new();
            for k in 0..6 {
                let a = std::f64::consts::PI / 6.0 + k as f64 * std::f64::consts::PI / 3.0;
                let p = (cx + s * a.cos(), cy + s * a.sin());
                let key = ((p.0 * 1e6).round() as i64, (p.1 * 1e6).round() as i64);
                let id = *index.entry(key).or_insert_with(|| {
                    positions.push(Point3::new(p.0, p.1, 0.0));
                    positions.len() as u32 - 1
                });
                face.push(id);
            }
            faces.push(face);
        }
    }
    PolyMesh::from_faces(positions, &faces)
}

/// Maps every vertex through `f` (same connectivity).
pub fn mapped(mesh: &PolyMesh, f: impl Fn(Point3<f64>) -> Point3<f64>) -> PolyMesh {
    let mut m = mesh.clone();
    for p in m.positions.iter_mut() {
        *p = f(*p);
    }
    m
}

/// Wraps the plane onto a cylinder of radius `r` around the y axis (an isometry of the
/// plane onto the surface).
pub fn on_cylinder(mesh: &PolyMesh, r: f64) -> PolyMesh {
    mapped(mesh, |p| {
        Point3::new(r * (p.x / r).sin(), p.y, r * (1.0 - (p.x / r).cos()))
    })
}

/// Wraps the plane onto a cone (half-angle `alpha`, apex at the origin): the point at
/// polar coordinates (ρ, φ) goes to distance ρ from the apex at angle φ / sin α around
/// the axis — an isometry of a plane sector onto the cone.
pub fn on_cone(mesh: &PolyMesh, alpha: f64) -> PolyMesh {
    mapped(mesh, |p| {
        let rho = p.x.hypot(p.y);
        let theta = p.y.atan2(p.x) / alpha.sin();
        let r = rho * alpha.sin();
        Point3::new(r * theta.cos(), r * theta.sin(), rho * alpha.cos())
    })
}

/// Extrudes the plane curve y = a sin(x / b) along z: (s, t) ↦ (x(s), y(s), t) with `s`
/// the curve's arc length (an isometry; the arc length is integrated numerically).
pub fn on_extruded_curve(mesh: &PolyMesh, a: f64, b: f64) -> PolyMesh {
    // Tabulate arc length s(x) finely, then invert by interpolation.
    let steps = 200_000;
    let x_max = 20.0;
    let dx = x_max / steps as f64;
    let mut s_of = vec![0.0; steps + 1];
    for i in 0..steps {
        let xm = (i as f64 + 0.5) * dx;
        let dy = a / b * (xm / b).cos();
        s_of[i + 1] = s_of[i] + dx * (1.0 + dy * dy).sqrt();
    }
    mapped(mesh, |p| {
        let k = s_of.partition_point(|&s| s < p.x).clamp(1, steps);
        let t = (p.x - s_of[k - 1]) / (s_of[k] - s_of[k - 1]);
        let x = (k as f64 - 1.0 + t) * dx;
        Point3::new(x, a * (x / b).sin(), p.y)
    })
}

/// Removes the faces for which `drop` is true and the vertices no face uses.
pub fn without_faces(mesh: &PolyMesh, drop: impl Fn(usize) -> bool) -> PolyMesh {
    let faces: Vec<Vec<u32>> = (0..mesh.face_count())
        .filter(|&f| !drop(f))
        .map(|f| mesh.face(f).to_vec())
        .collect();
    compact(&mesh.positions, &faces)
}

/// A mesh of `faces` over `positions` keeping only the vertices used, in first-use order.
pub fn compact(positions: &[Point3<f64>], faces: &[Vec<u32>]) -> PolyMesh {
    let mut map = vec![u32::MAX; positions.len()];
    let mut kept = Vec::new();
    let faces: Vec<Vec<u32>> = faces
        .iter()
        .map(|f| {
            f.iter()
                .map(|&v| {
                    if map[v as usize] == u32::MAX {
                        map[v as usize] = kept.len() as u32;
                        kept.push(positions[v as usize]);
                    }
                    map[v as usize]
                })
                .collect()
        })
        .collect();
    PolyMesh::from_faces(kept, &faces)
}

/// Per-face Jacobians of `uvs` over `mesh` (via the polygon operators).
pub fn jacobians(mesh: &PolyMesh, uvs: &[Point2<f64>]) -> Vec<Matrix2<f64>> {
    (0..mesh.face_count())
        .map(|f| {
            let g2 = face::gradient_2d(&mesh.face_corners(f)).expect("valid face");
            let mut j = Matrix2::zeros();
            for (i, &v) in mesh.face(f).iter().enumerate() {
                let w = uvs[v as usize];
                for k in 0..2 {
                    j[(0, k)] += g2[(k, i)] * w.x;
                    j[(1, k)] += g2[(k, i)] * w.y;
                }
            }
            j
        })
        .collect()
}

/// Largest deviation of any face's singular values from 1.
pub fn max_sigma_error(mesh: &PolyMesh, uvs: &[Point2<f64>]) -> f64 {
    jacobians(mesh, uvs)
        .iter()
        .map(|j| {
            let s = j.singular_values();
            (s[0] - 1.0).abs().max((s[1] - 1.0).abs())
        })
        .fold(0.0, f64::max)
}

/// Signed area of each UV polygon (shoelace).
pub fn uv_polygon_areas(mesh: &PolyMesh, uvs: &[Point2<f64>]) -> Vec<f64> {
    mesh.faces()
        .map(|f| {
            let n = f.len();
            0.5 * (0..n)
                .map(|i| {
                    let p = uvs[f[i] as usize];
                    let q = uvs[f[(i + 1) % n] as usize];
                    p.x * q.y - p.y * q.x
                })
                .sum::<f64>()
        })
        .collect()
}

/// Total 3D area.
pub fn area_3d(mesh: &PolyMesh) -> f64 {
    (0..mesh.face_count())
        .map(|f| face::vector_area(&mesh.face_corners(f)).norm())
        .sum()
}

/// The shared fixtures folder: `$POLYFLAT_FIXTURES`, else the first `shared/fixtures`
/// found walking up from the crate root. `None` (after printing a skip message) when
/// absent; panics when absent and the environment variable `CI` is set.
pub fn fixtures() -> Option<PathBuf> {
    let found = std::env::var_os("POLYFLAT_FIXTURES")
        .map(PathBuf::from)
        .or_else(|| {
            let mut dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
            loop {
                let candidate = dir.join("shared").join("fixtures");
                if candidate.is_dir() {
                    return Some(candidate);
                }
                if !dir.pop() {
                    return None;
                }
            }
        });
    if found.is_none() {
        assert!(
            std::env::var_os("CI").is_none(),
            "fixtures not found and CI is set"
        );
        eprintln!("skipped: fixtures folder not found (set POLYFLAT_FIXTURES)");
    }
    found
}

/// The UV islands of an OBJ file as separate charts: faces are joined across edges
/// whose two sides use the same `vt` corners; a chart vertex is one `vt` record,
/// placed at its `v` position. Minimal reader for the fixtures (`v`, `vt`, `f v/vt`).
pub fn obj_islands(path: &std::path::Path) -> Vec<PolyMesh> {
    let text = std::fs::read_to_string(path).expect("readable fixture");
    let mut positions = Vec::new();
    let mut uv_count = 0usize;
    let mut faces: Vec<Vec<(u32, u32)>> = Vec::new();
    for line in text.lines() {
        let mut it = line.split_whitespace();
        match it.next() {
            Some("v") => {
                let c: Vec<f64> = it.take(3).map(|x| x.parse().expect("number")).collect();
                positions.push(Point3::new(c[0], c[1], c[2]));
            }
            Some("vt") => uv_count += 1,
            Some("f") => faces.push(
                it.map(|c| {
                    let mut parts = c.split('/');
                    let v: u32 = parts
                        .next()
                        .and_then(|x| x.parse().ok())
                        .expect("vertex index");
                    let t: u32 = parts.next().and_then(|x| x.parse().ok()).expect("uv index");
                    (v - 1, t - 1)
                })
                .collect(),
            ),
            _ => {}
        }
    }
    // Union faces sharing an edge with identical (v, vt) corners on both sides.
    let mut parent: Vec<usize> = (0..faces.len()).collect();
    fn find(p: &mut [usize], mut x: usize) -> usize {
        while p[x] != x {
            p[x] = p[p[x]];
            x = p[x];
        }
        x
    }
    let mut edges = std::collections::HashMap::new();
    for (f, face) in faces.iter().enumerate() {
        let n = face.len();
        for i in 0..n {
            let (a, b) = (face[i], face[(i + 1) % n]);
            let key = if a < b { (a, b) } else { (b, a) };
            if let Some(&g) = edges.get(&key) {
                let (rf, rg) = (find(&mut parent, f), find(&mut parent, g));
                parent[rf] = rg;
            } else {
                edges.insert(key, f);
            }
        }
    }
    let mut groups: std::collections::BTreeMap<usize, Vec<usize>> = Default::default();
    for f in 0..faces.len() {
        let r = find(&mut parent, f);
        groups.entry(r).or_default().push(f);
    }
    let mut vt_position = vec![Point3::origin(); uv_count];
    for face in &faces {
        for &(v, t) in face {
            vt_position[t as usize] = positions[v as usize];
        }
    }
    groups
        .values()
        .map(|fs| {
            let island: Vec<Vec<u32>> = fs
                .iter()
                .map(|&f| faces[f].iter().map(|c| c.1).collect())
                .collect();
            compact(&vt_position, &island)
        })
        .collect()
}

/// A random star-shaped, non-planar polygon with `n` corners around the origin.
pub fn random_polygon(n: usize, rng: &mut impl rand::Rng) -> Vec<Point3<f64>> {
    (0..n)
        .map(|i| {
            let a =
                2.0 * std::f64::consts::PI * (i as f64 + rng.random_range(-0.3..0.3)) / n as f64;
            let r = rng.random_range(0.7..1.3);
            Point3::new(r * a.cos(), r * a.sin(), rng.random_range(-0.25..0.25))
        })
        .collect()
}
