//! `reflatten` after a local edit that keeps the topology: polyflat's own previous
//! layout (a generated two-piece mesh and the Spot fixture) and the Spot fixture's
//! own hand-made layout. Targets from issue 6: median corner drift ≤ 1 texel, 95th
//! percentile ≤ 8 texels at 1024, charts without an edited vertex < 0.05 texel (they
//! keep their UVs bit for bit), no flipped face, no overlapping face pair.

mod flatten_common;
mod reflatten_support;

use nalgebra::Point3;
use polyflat::reflatten::Status;
use polyflat::{pipeline, PolyMesh, Settings};
use reflatten_support::*;

#[test]
fn a_bump_on_one_patch_moves_only_that_patch() {
    let mesh = two_patches(16);
    let (previous, _) = own_layout(&mesh);
    let (edited, moved) = bump(&mesh, Point3::new(0.5, 0.5, 0.0), 0.15, 0.05);
    assert!(moved > 5 && moved < 40, "{moved} vertices moved");
    let r = run(&edited, &previous);
    assert!(r.section.same_topology);
    assert_eq!(r.section.moved_vertices, moved);
    assert_local_edit_targets("two patches, own layout", &previous, &edited, &r);
    // The edited chart was flattened again, not just carried: on the bumped surface
    // its L2 stretch is lower than that of the previous UVs left as they were.
    let changed = r
        .section
        .charts
        .iter()
        .find(|c| c.status == Status::Changed)
        .unwrap();
    let faces: Vec<u32> = (0..edited.face_count() as u32)
        .filter(|&f| r.outcome.face_chart[f as usize] as usize == changed.id)
        .collect();
    let old_uvs = previous.corner_uvs.as_ref().unwrap();
    let carried = polyflat::metrics::face_metrics(&edited, &previous.uvs, old_uvs).unwrap();
    let laid = PolyMesh {
        uvs: previous.uvs.clone(),
        corner_uvs: Some(old_uvs.clone()),
        ..edited.clone()
    };
    let before = polyflat::metrics::summarize(&laid, &carried, Some(&faces)).stretch_l2;
    let after = r.outcome.report.charts[changed.id].metrics.stretch_l2;
    eprintln!("stretch L2 of the edited chart: previous UVs {before:.5}, re-flattened {after:.5}");
    assert!(r.outcome.report.charts[changed.id].iterations > 0);
    assert!(after < before, "{after} ≥ {before}");
}

#[test]
fn an_unedited_mesh_keeps_its_layout_exactly() {
    let mesh = two_patches(16);
    let (previous, _) = own_layout(&mesh);
    let r = run(&mesh, &previous);
    assert!(r.section.charts.iter().all(|c| c.status == Status::Carried));
    assert_eq!(r.section.drift_texels.max, 0.0);
}

#[test]
fn spot_with_its_polyflat_layout_after_a_bump() {
    let Some(mesh) = spot("spot_quadrangulated.obj") else {
        return;
    };
    let settings = Settings {
        seams: Some(polyflat::settings::SeamMode::Auto),
        ..Settings::default()
    };
    let plain = PolyMesh {
        uvs: Vec::new(),
        corner_uvs: None,
        ..mesh.clone()
    };
    let outcome =
        pipeline::flatten(&plain, "spot.obj", &settings, &polyflat::progress::Silent).unwrap();
    let previous = with_layout(&plain, &outcome);
    let (edited, moved) = bump(
        &previous,
        spot_bump_centre(&mesh),
        0.08 * diagonal(&mesh),
        0.02 * diagonal(&mesh),
    );
    assert!(moved > 10 && moved < 150, "{moved} vertices moved");
    let r = run(&edited, &previous);
    assert_local_edit_targets("Spot, polyflat layout", &previous, &edited, &r);
}

#[test]
fn spot_with_its_own_layout_after_a_bump() {
    let Some(previous) = spot("spot_quadrangulated.obj") else {
        return;
    };
    let (edited, moved) = bump(
        &previous,
        spot_bump_centre(&previous),
        0.08 * diagonal(&previous),
        0.02 * diagonal(&previous),
    );
    assert!(moved > 10 && moved < 150, "{moved} vertices moved");
    let r = run(&edited, &previous);
    assert_eq!(r.section.charts.len(), 13);
    let mirrored: Vec<usize> = r
        .outcome
        .report
        .charts
        .iter()
        .filter(|c| c.mirrored_in_input)
        .map(|c| c.id)
        .collect();
    assert_eq!(mirrored.len(), 1, "the fixture has one mirrored island");
    for c in &r.outcome.report.charts {
        let area = signed_uv_area(&edited, &r, c.id);
        assert_eq!(
            area < 0.0,
            c.mirrored_in_input,
            "chart {}: signed UV area {area}",
            c.id
        );
    }
    assert_local_edit_targets("Spot, own layout", &previous, &edited, &r);
}

/// A point on the side of Spot's body, away from the seams: the vertex with the
/// largest x among those near the bounding-box centre in y (up) and z (length).
fn spot_bump_centre(mesh: &PolyMesh) -> Point3<f64> {
    let (mut lo, mut hi) = (mesh.positions[0], mesh.positions[0]);
    for p in &mesh.positions {
        lo = lo.inf(p);
        hi = hi.sup(p);
    }
    let c = nalgebra::center(&lo, &hi);
    *mesh
        .positions
        .iter()
        .filter(|p| (p.y - c.y).abs() < 0.1 && (p.z - c.z).abs() < 0.1)
        .max_by(|a, b| a.x.total_cmp(&b.x))
        .unwrap_or(&c)
}
