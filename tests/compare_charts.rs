//! `pipeline::flatten_with_charts`, the entry point `compare` uses to flatten the
//! same charts with several energies.
//!
//! The solver is deterministic per chart, so flattening the charts an ordinary run
//! produced must give that run's layout again (to 1e-12, rounding only), and charts
//! that do not fit the mesh must be refused with a sentence, never a panic.

use polyflat::io::read_obj;
use polyflat::pipeline::{flatten, flatten_with_charts};
use polyflat::progress::Silent;
use polyflat::settings::{EnergyKind, SeamMode};
use polyflat::{Error, Settings};
use std::path::Path;

fn fixture(name: &str) -> polyflat::io::ObjFile {
    read_obj(
        &Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("fixtures")
            .join(name),
    )
    .unwrap()
}

#[test]
fn the_charts_of_a_run_flatten_to_the_same_layout() {
    let obj = fixture("torus_quads.obj");
    let settings = Settings {
        energy: EnergyKind::Arap,
        seams: Some(SeamMode::Auto),
        max_iterations: 60,
        ..Settings::default()
    };
    let first = flatten(&obj.mesh, "torus_quads.obj", &settings, &Silent).unwrap();
    let again = flatten_with_charts(
        &obj.mesh,
        "torus_quads.obj",
        &settings,
        &first.charts,
        &Silent,
    )
    .unwrap();
    assert_eq!(again.charts, first.charts);
    assert_eq!(again.face_chart, first.face_chart);
    assert_eq!(again.corner_uvs, first.corner_uvs);
    assert_eq!(again.uvs.len(), first.uvs.len());
    for (a, b) in again.uvs.iter().zip(&first.uvs) {
        assert!((a - b).norm() <= 1e-12, "{a} vs {b}");
    }
    assert_eq!(again.report.global, first.report.global);
    // No chart building and no re-split stage when the charts are given.
    assert!(!again.report.timings_ms.contains_key("charts"));
    assert!(!again.report.timings_ms.contains_key("resplit"));
    assert!(first.report.timings_ms.contains_key("charts"));

    // Another energy over the same charts keeps every chart's faces.
    let conformal = Settings {
        energy: EnergyKind::Conformal,
        ..settings.clone()
    };
    let other = flatten_with_charts(
        &obj.mesh,
        "torus_quads.obj",
        &conformal,
        &first.charts,
        &Silent,
    )
    .unwrap();
    assert_eq!(other.face_chart, first.face_chart);
    assert_eq!(other.report.global.energy, "conformal");
}

#[test]
fn charts_that_do_not_fit_the_mesh_are_refused() {
    let obj = fixture("wavy_quads.obj");
    let settings = Settings::default();
    let run = flatten(&obj.mesh, "wavy_quads.obj", &settings, &Silent).unwrap();
    let message = |charts: &[polyflat::charts::Chart]| match flatten_with_charts(
        &obj.mesh,
        "wavy_quads.obj",
        &settings,
        charts,
        &Silent,
    ) {
        Err(e @ Error::Mesh { .. }) => e.to_string(),
        other => panic!("expected a mesh error, got {other:?}"),
    };

    let mut beyond = run.charts.clone();
    beyond[0].faces.push(99);
    let e = message(&beyond);
    assert!(e.starts_with("wavy_quads.obj: chart 0 "), "{e}");
    assert!(e.contains("face 100 is out of range"), "{e}");

    let twice = vec![run.charts[0].clone(), run.charts[0].clone()];
    assert!(message(&twice).contains("is in two charts"));

    let mut short = run.charts.clone();
    short[0].corners.pop();
    assert!(message(&short).contains("corners listed for"));

    // A face left out: the chart then lists a vertex none of its faces uses, which
    // the engine refuses with a sentence of its own.
    let mut missing = run.charts.clone();
    let last = missing[0].faces.len() - 1;
    let arity = obj.mesh.arity(missing[0].faces[last] as usize);
    missing[0].faces.pop();
    let keep = missing[0].corners.len() - arity;
    missing[0].corners.truncate(keep);
    let e = flatten_with_charts(&obj.mesh, "wavy_quads.obj", &settings, &missing, &Silent)
        .unwrap_err()
        .to_string();
    assert!(e.contains("chart 0"), "{e}");
}
