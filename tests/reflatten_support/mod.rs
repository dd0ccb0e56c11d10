//! Shared helpers of the reflatten tests: a smooth local bump, layouts as meshes,
//! and per-chart checks.
#![allow(dead_code)]

use nalgebra::{Point2, Point3, Vector3};
use polyflat::operators::face;
use polyflat::pipeline::Outcome;
use polyflat::reflatten::{self, Reflattened, Status};
use polyflat::{PolyMesh, Settings};

/// Two wavy `n × n` quad patches side by side (two charts), the first patch's faces
/// first.
pub fn two_patches(n: usize) -> PolyMesh {
    let grid = crate::flatten_common::quad_grid(n, n, 1.0 / n as f64, 0.2);
    let wavy = crate::flatten_common::mapped(&grid, |p| {
        Point3::new(p.x, p.y, 0.08 * (5.0 * p.x).sin() * (4.0 * p.y).cos())
    });
    let count = wavy.positions.len() as u32;
    let mut positions = wavy.positions.clone();
    positions.extend(
        wavy.positions
            .iter()
            .map(|p| Point3::new(p.x + 1.5, p.y, p.z)),
    );
    let faces: Vec<Vec<u32>> = wavy
        .faces()
        .map(|f| f.to_vec())
        .chain(wavy.faces().map(|f| f.iter().map(|v| v + count).collect()))
        .collect();
    PolyMesh::from_faces(positions, &faces)
}

/// A Spot fixture mesh, or `None` (skip message; fails under `CI`) when absent.
pub fn spot(name: &str) -> Option<PolyMesh> {
    let path = crate::flatten_common::fixtures()?.join("spot").join(name);
    Some(
        polyflat::io::read_obj(&path)
            .expect("readable Spot fixture")
            .mesh,
    )
}

/// `mesh` flattened by polyflat with default settings, as the previous layout, and
/// the run's outcome.
pub fn own_layout(mesh: &PolyMesh) -> (PolyMesh, Outcome) {
    let outcome = polyflat::pipeline::flatten(
        mesh,
        "previous.obj",
        &Settings::default(),
        &polyflat::progress::Silent,
    )
    .expect("previous layout");
    (with_layout(mesh, &outcome), outcome)
}

/// `mesh` with its layout replaced by `outcome`'s (what `flatten` writes to its OBJ).
pub fn with_layout(mesh: &PolyMesh, outcome: &Outcome) -> PolyMesh {
    PolyMesh {
        uvs: outcome.uvs.clone(),
        corner_uvs: Some(outcome.corner_uvs.clone()),
        ..mesh.clone()
    }
}

/// Area-weighted vertex normals (unit; zero for unused vertices).
pub fn vertex_normals(mesh: &PolyMesh) -> Vec<Vector3<f64>> {
    let mut n = vec![Vector3::zeros(); mesh.positions.len()];
    for f in 0..mesh.face_count() {
        let a = face::vector_area(&mesh.face_corners(f));
        for &v in mesh.face(f) {
            n[v as usize] += a;
        }
    }
    n.iter()
        .map(|v| v.try_normalize(0.0).unwrap_or_else(Vector3::zeros))
        .collect()
}

/// A smooth bump: every vertex within `radius` of `centre` moves along its normal
/// by `height · (1 − (d/r)²)²`. Returns the edited mesh (positions only change) and
/// the number of vertices moved.
pub fn bump(mesh: &PolyMesh, centre: Point3<f64>, radius: f64, height: f64) -> (PolyMesh, usize) {
    let normals = vertex_normals(mesh);
    let mut out = mesh.clone();
    let mut moved = 0;
    for (p, n) in out.positions.iter_mut().zip(&normals) {
        let d = (*p - centre).norm();
        if d < radius {
            let t = 1.0 - (d / radius).powi(2);
            *p += n * height * t * t;
            moved += 1;
        }
    }
    (out, moved)
}

/// Bounding-box diagonal of the positions.
pub fn diagonal(mesh: &PolyMesh) -> f64 {
    let mut lo = Point3::new(f64::INFINITY, f64::INFINITY, f64::INFINITY);
    let mut hi = -lo;
    for p in &mesh.positions {
        lo = lo.inf(p);
        hi = hi.sup(p);
    }
    (hi - lo).norm()
}

/// Runs the library re-flattening with default settings (resolution 1024).
pub fn run(edited: &PolyMesh, previous: &PolyMesh) -> Reflattened {
    reflatten::reflatten(
        edited,
        "edited.obj",
        previous,
        "previous.obj",
        &Settings::default(),
        &polyflat::progress::Silent,
    )
    .expect("reflatten succeeds")
}

/// Signed UV area of the faces of chart `id` in the result.
pub fn signed_uv_area(mesh: &PolyMesh, r: &Reflattened, id: usize) -> f64 {
    let o = &r.outcome;
    (0..mesh.face_count())
        .filter(|&f| o.face_chart[f] as usize == id)
        .map(|f| {
            let poly: Vec<Point2<f64>> = mesh
                .face_range(f)
                .map(|c| o.uvs[o.corner_uvs[c] as usize])
                .collect();
            polyflat::metrics::signed_area(&poly)
        })
        .sum()
}

/// Whether chart `id` contains a vertex the edit moved.
pub fn chart_was_edited(mesh: &PolyMesh, edited: &PolyMesh, r: &Reflattened, id: usize) -> bool {
    (0..mesh.face_count())
        .filter(|&f| r.outcome.face_chart[f] as usize == id)
        .flat_map(|f| mesh.face(f).to_vec())
        .any(|v| mesh.positions[v as usize] != edited.positions[v as usize])
}

/// Flipped faces and overlapping face pairs of a layout carried by `mesh`.
pub fn faults(
    mesh: &PolyMesh,
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
) -> (Vec<usize>, Vec<(u32, u32)>) {
    let m = polyflat::metrics::face_metrics(mesh, uvs, corner_uvs).unwrap();
    let flipped = (0..m.len()).filter(|&f| m[f].flipped).collect();
    (
        flipped,
        polyflat::metrics::overlapping_face_pairs(uvs, corner_uvs, mesh),
    )
}

/// Checks the common targets of a local edit and prints the figures. Flipped faces
/// and overlaps are compared with the previous layout's own (a hand-made layout may
/// have some): the result may keep those, in charts it carried, and add none.
pub fn assert_local_edit_targets(
    label: &str,
    previous: &PolyMesh,
    edited: &PolyMesh,
    r: &Reflattened,
) {
    let s = &r.section;
    let o = &r.outcome;
    let changed = s
        .charts
        .iter()
        .filter(|c| c.status == Status::Changed)
        .count();
    let (flipped_before, overlaps_before) = faults(
        previous,
        &previous.uvs,
        previous.corner_uvs.as_ref().unwrap(),
    );
    let (flipped, overlaps) = faults(edited, &o.uvs, &o.corner_uvs);
    eprintln!(
        "{label}: {} charts ({changed} changed), {} moved vertices, drift median {:.4} p95 {:.4} max {:.4} mean {:.4} texels; flipped {} (previous {}), overlapping pairs {} (previous {})",
        s.charts.len(),
        s.moved_vertices,
        s.drift_texels.median,
        s.drift_texels.p95,
        s.drift_texels.max,
        s.drift_texels.mean,
        flipped.len(),
        flipped_before.len(),
        overlaps.len(),
        overlaps_before.len()
    );
    assert!(changed >= 1, "{label}: the edit changed no chart");
    assert!(
        s.drift_texels.median <= 1.0,
        "{label}: median {}",
        s.drift_texels.median
    );
    assert!(
        s.drift_texels.p95 <= 8.0,
        "{label}: p95 {}",
        s.drift_texels.p95
    );
    for f in &flipped {
        assert!(
            flipped_before.contains(f),
            "{label}: face {f} is newly flipped"
        );
        let chart = o.face_chart[*f] as usize;
        assert_eq!(s.charts[chart].status, Status::Carried, "{label}: face {f}");
    }
    for pair in &overlaps {
        assert!(
            overlaps_before.contains(pair),
            "{label}: faces {pair:?} newly overlap"
        );
    }
    assert_eq!(o.report.global.metrics.flipped_faces, flipped.len());
    for c in &s.charts {
        if !chart_was_edited(previous, edited, r, c.id) {
            assert_eq!(c.status, Status::Carried, "{label}: chart {}", c.id);
            let max = c.drift_texels_max.expect("kept charts have a drift");
            assert!(
                max < 0.05,
                "{label}: unedited chart {} drifted {max} texels",
                c.id
            );
        }
    }
}
