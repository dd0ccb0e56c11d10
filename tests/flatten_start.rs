//! Starting layouts: the Tutte embedding is flip-free with convex faces; the
//! least-squares conformal start is a similarity on planar charts.

mod flatten_common;

use flatten_common::*;
use nalgebra::Point2;
use polyflat::flatten::{solve_chart, ChartSolution, SolveOptions, Start, StartKind};
use polyflat::progress::Silent;
use polyflat::settings::{EnergyKind, SolverKind};
use polyflat::PolyMesh;

/// The start itself (zero iterations), scaled to the chart's area.
fn start_of(mesh: &PolyMesh, start: Start) -> ChartSolution {
    let opts = SolveOptions {
        energy: EnergyKind::Arap,
        solver: SolverKind::Newton,
        max_iterations: 0,
        ..SolveOptions::default()
    };
    solve_chart(mesh, &opts, start, &Silent).expect("start")
}

/// Number of faces whose UV polygon is not strictly convex and counter-clockwise.
fn non_convex_faces(mesh: &PolyMesh, uvs: &[Point2<f64>]) -> usize {
    mesh.faces()
        .filter(|f| {
            let n = f.len();
            (0..n).any(|i| {
                let a = uvs[f[i] as usize];
                let b = uvs[f[(i + 1) % n] as usize];
                let c = uvs[f[(i + 2) % n] as usize];
                let cross = (b - a).perp(&(c - b));
                // Relative threshold: corners on a straight line count as not convex.
                cross.is_nan() || cross <= 1e-12 * (b - a).norm() * (c - b).norm()
            })
        })
        .count()
}

fn assert_tutte_is_convex(name: &str, mesh: &PolyMesh) {
    let s = start_of(mesh, Start::Tutte);
    assert_eq!(s.start, StartKind::Tutte);
    assert_eq!(s.flipped_faces, 0, "{name}: flipped faces");
    assert_eq!(
        non_convex_faces(mesh, &s.uvs),
        0,
        "{name}: non-convex faces"
    );
}

#[test]
fn tutte_is_flip_free_and_convex_on_generated_charts() {
    // Expected: Tutte (1963) — a 3-connected planar graph with a convex outer face and
    // every other vertex at the average of its neighbours has convex faces.
    let grid = quad_grid(12, 9, 0.1, 0.25);
    assert_tutte_is_convex("jittered quad grid", &grid);
    assert_tutte_is_convex("triangulated grid", &triangulated(&grid));
    assert_tutte_is_convex("hexagon patch", &hex_patch(6, 7, 0.2));
    assert_tutte_is_convex(
        "cylinder patch",
        &on_cylinder(&quad_grid(10, 8, 0.15, 0.2), 1.0),
    );
    // Two holes, each filled virtually for the embedding only.
    let holes = without_faces(&quad_grid(12, 12, 0.1, 0.2), |f| {
        let (i, j) = (f % 12, f / 12);
        (3..5).contains(&i) && (3..6).contains(&j) || (8..10).contains(&i) && (7..9).contains(&j)
    });
    assert_tutte_is_convex("grid with two holes", &holes);
    for n in 3..=8 {
        let mut rng = <rand_chacha::ChaCha8Rng as rand::SeedableRng>::seed_from_u64(n as u64);
        let face = random_polygon(n, &mut rng);
        let single = PolyMesh::from_faces(face, &[(0..n as u32).collect()]);
        assert_tutte_is_convex(&format!("single {n}-gon"), &single);
    }
}

#[test]
fn tutte_is_flip_free_and_convex_on_spot_islands() {
    // The UV islands of the public-domain Spot meshes (quads; and quads, pentagons and
    // triangles for the control cage), each flattened as its own chart. Two islands
    // per file touch themselves at a vertex: the solver must reject them as pinched,
    // and accept them once that vertex is split.
    let Some(dir) = fixtures() else { return };
    for file in ["spot/spot_control_mesh.obj", "spot/spot_quadrangulated.obj"] {
        let islands = obj_islands(&dir.join(file));
        assert_eq!(islands.len(), 13, "{file}");
        for (k, island) in islands.iter().enumerate() {
            let chart = unpinched(island);
            if chart.vertex_count() != island.vertex_count() {
                let opts = SolveOptions::default();
                let err =
                    solve_chart(island, &opts, Start::Tutte, &Silent).expect_err("pinched island");
                assert!(err.to_string().contains("pinched"), "{err}");
            }
            assert_tutte_is_convex(&format!("{file} island {k}"), &chart);
        }
    }
}

#[test]
fn conformal_start_is_a_similarity_on_planar_charts() {
    // Expected (analytic): on a planar chart the least-squares conformal map (Lévy et
    // al. 2002) with two pins is a similarity; scaled to the 3D area it is an isometry.
    for (name, mesh) in [
        ("jittered quads", quad_grid(8, 6, 0.1, 0.25)),
        ("hexagons", hex_patch(4, 5, 0.2)),
    ] {
        let s = start_of(&mesh, Start::Conformal);
        assert_eq!(s.start, StartKind::Conformal);
        let err = max_sigma_error(&mesh, &s.uvs);
        assert!(err < 1e-9, "{name}: σ deviates from 1 by {err}");
    }
}

#[test]
fn a_start_replaced_by_tutte_is_said_in_the_report_notes() {
    // A steep dome kept as one UV island: its least-squares conformal map folds 8 faces
    // (measured), which symmetric Dirichlet cannot start from, so the chart starts from
    // the Tutte embedding; the report's input.notes must say so for that chart.
    let mut dome = mapped(&quad_grid(14, 14, 1.0 / 14.0, 0.2), |p| {
        let (x, y) = (p.x - 0.5, p.y - 0.5);
        nalgebra::Point3::new(p.x, p.y, 2.0 * (-(x * x + y * y) * 6.0).exp())
    });
    dome.uvs = dome
        .positions
        .iter()
        .map(|p| Point2::new(p.x, p.y))
        .collect();
    dome.corner_uvs = Some(dome.face_vertices.clone());
    let settings = polyflat::settings::Settings::default();
    let outcome =
        polyflat::pipeline::flatten(&dome, "dome.obj", &settings, &Silent).expect("flatten");
    let notes = &outcome.report.input.notes;
    assert!(
        notes.iter().any(
            |n| n.starts_with("chart 0: the conformal start flips 8 faces")
                && n.contains("started from the Tutte embedding")
        ),
        "{notes:?}"
    );
    assert_eq!(outcome.report.global.metrics.flipped_faces, 0);
}
