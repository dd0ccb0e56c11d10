//! `reflatten` after edits that change the topology: quads re-split into triangles,
//! faces deleted, a quad replaced by a fan around a new vertex. Faces that match the
//! previous model by position carry their UVs (drift 0); the charts they form are
//! `carried` when they are whole previous islands and `changed` otherwise; faces
//! with a new vertex form `new` charts placed in free space; nothing overlaps.

mod flatten_common;
mod reflatten_support;

use nalgebra::Point3;
use polyflat::reflatten::Status;
use polyflat::PolyMesh;
use reflatten_support::*;

/// `mesh` with each face in `split` cut into two triangles along its first
/// diagonal, face `fan` replaced by four triangles around its centroid (a new
/// vertex), and the faces in `delete` removed.
fn remeshed(mesh: &PolyMesh, split: &[usize], fan: Option<usize>, delete: &[usize]) -> PolyMesh {
    let mut positions = mesh.positions.clone();
    let mut faces = Vec::new();
    for f in 0..mesh.face_count() {
        let v = mesh.face(f);
        if delete.contains(&f) {
            continue;
        }
        if split.contains(&f) {
            faces.push(vec![v[0], v[1], v[2]]);
            faces.push(vec![v[0], v[2], v[3]]);
        } else if fan == Some(f) {
            let c = positions.len() as u32;
            let n = v.len() as f64;
            positions.push(
                mesh.face_corners(f)
                    .iter()
                    .fold(Point3::origin(), |a, p| a + p.coords / n),
            );
            for i in 0..v.len() {
                faces.push(vec![v[i], v[(i + 1) % v.len()], c]);
            }
        } else {
            faces.push(v.to_vec());
        }
    }
    PolyMesh::from_faces(positions, &faces)
}

/// Checks a result: no drift on matched corners, and no overlap beyond the
/// previous layout's own (`overlaps_before` pairs; a hand-made layout may have
/// some), none of them on a new chart.
fn assert_clean(
    label: &str,
    edited: &PolyMesh,
    r: &polyflat::reflatten::Reflattened,
    overlaps_before: usize,
) {
    let g = &r.outcome.report.global.metrics;
    let s = &r.section;
    eprintln!(
        "{label}: statuses {:?}, matched {} new {} faces, drift max {:.2e} texels, flipped {}, overlaps {}",
        s.charts.iter().map(|c| c.status).collect::<Vec<_>>(),
        s.matched_faces,
        s.new_faces,
        s.drift_texels.max,
        g.flipped_faces,
        g.overlapping_face_pairs
    );
    assert!(!s.same_topology);
    assert!(g.overlapping_face_pairs <= overlaps_before, "{label}");
    let (_, overlaps) = faults(edited, &r.outcome.uvs, &r.outcome.corner_uvs);
    for (f, g) in overlaps {
        for face in [f, g] {
            let chart = r.outcome.face_chart[face as usize] as usize;
            assert_ne!(s.charts[chart].status, Status::New, "{label}: face {face}");
        }
    }
    // Carried UVs are copied: the drift of every matched corner is exactly 0.
    assert_eq!(s.drift_texels.max, 0.0, "{label}");
    for c in &s.charts {
        match c.status {
            Status::New => assert!(c.drift_texels_mean.is_none()),
            _ => assert_eq!(c.drift_texels_max, Some(0.0), "{label}: chart {}", c.id),
        }
    }
}

#[test]
fn split_deleted_and_fanned_faces_on_one_patch_leave_the_other_carried() {
    let mesh = two_patches(12);
    let per_patch = mesh.face_count() / 2;
    let (previous, outcome) = own_layout(&mesh);
    assert_eq!(outcome.report.charts.len(), 2, "one chart per patch");
    let edited = remeshed(&mesh, &[13, 14, 15, 26], Some(40), &[90, 91]);
    let r = run(&edited, &previous);
    assert_clean("patches", &edited, &r, 0);
    let s = &r.section;
    assert_eq!(s.new_faces, 4, "the fan around the new vertex");
    assert_eq!(s.matched_faces, 2 * per_patch - 3 + 4);
    let status_of = |face: usize| s.charts[r.outcome.face_chart[face] as usize].status;
    // Edited face 0 lies in the first patch (changed); the last face in the second.
    assert_eq!(status_of(0), Status::Changed);
    assert_eq!(status_of(edited.face_count() - 1), Status::Carried);
    let new: Vec<_> = s
        .charts
        .iter()
        .filter(|c| c.status == Status::New)
        .collect();
    assert_eq!(new.len(), 1, "the fan is one new chart");
    // The new chart is placed at the previous layout's texel density: its UV area over
    // its 3D area matches the previous layout's (within the packer's rounding).
    let report = &r.outcome.report.charts[new[0].id];
    let previous_density =
        outcome.report.global.metrics.utilization / flatten_common::area_3d(&mesh);
    let density = report.area_uv / report.area_3d;
    assert!(
        (density / previous_density - 1.0).abs() < 0.05,
        "{density} vs {previous_density}"
    );
}

#[test]
fn spot_with_split_and_deleted_faces_keeps_its_islands() {
    let Some(dir) = flatten_common::fixtures() else {
        return;
    };
    let previous = polyflat::io::read_obj(&dir.join("spot").join("spot_quadrangulated.obj"))
        .expect("readable Spot fixture")
        .mesh;
    let edited = remeshed(
        &previous,
        &[100, 101, 102, 103],
        Some(2000),
        &[1500, 1501, 1502],
    );
    let r = run(&edited, &previous);
    let (_, before) = faults(
        &previous,
        &previous.uvs,
        previous.corner_uvs.as_ref().unwrap(),
    );
    assert_clean("Spot", &edited, &r, before.len());
    let s = &r.section;
    let count = |status| s.charts.iter().filter(|c| c.status == status).count();
    assert_eq!(count(Status::New), 1);
    assert!(
        count(Status::Changed) >= 1 && count(Status::Changed) <= 3,
        "{}",
        count(Status::Changed)
    );
    assert!(count(Status::Carried) >= 10, "{}", count(Status::Carried));
}
