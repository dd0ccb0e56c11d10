//! Charts from `--seams auto` and `--seams keep`: every chart is a topological disk
//! (checked with the Euler–Poincaré formula χ = V − E + F = 2 − 2g − b, which for a
//! connected genus-0 chart with b boundary loops gives χ = 2 − b), every face is in
//! exactly one chart, and whole models come out fold-free, overlap-free, inside the
//! unit square with the requested padding between charts (measured in texels).

mod flatten_common;

use flatten_common::fixtures;
use nalgebra::{Point2, Point3};
use polyflat::charts::{self, Chart, ChartOrigin};
use polyflat::mesh::Topology;
use polyflat::pipeline::{self, Outcome};
use polyflat::progress::Silent;
use polyflat::settings::SeamMode;
use polyflat::{PolyMesh, Settings};
use std::collections::HashMap;
use std::path::Path;

/// Cube sphere: the six faces of a cube, each an `n × n` grid of quads, projected
/// onto the unit sphere (closed, genus 0, all quads, outward winding).
fn cube_sphere(n: u32) -> PolyMesh {
    let mut index: HashMap<[u32; 3], u32> = HashMap::new();
    let mut positions = Vec::new();
    let mut faces = Vec::new();
    for axis in 0..3 {
        for high in [false, true] {
            // (b, c) with e_b × e_c = ±e_axis, so every face winds outward.
            let (mut b, mut c) = ((axis + 1) % 3, (axis + 2) % 3);
            if !high {
                std::mem::swap(&mut b, &mut c);
            }
            let mut vertex = |i: u32, j: u32| {
                let mut key = [0; 3];
                key[axis] = if high { n } else { 0 };
                key[b] = i;
                key[c] = j;
                *index.entry(key).or_insert_with(|| {
                    let p = Point3::from(key.map(|k| 2.0 * f64::from(k) / f64::from(n) - 1.0));
                    positions.push(Point3::from(p.coords.normalize()));
                    (positions.len() - 1) as u32
                })
            };
            for i in 0..n {
                for j in 0..n {
                    faces.push(vec![
                        vertex(i, j),
                        vertex(i + 1, j),
                        vertex(i + 1, j + 1),
                        vertex(i, j + 1),
                    ]);
                }
            }
        }
    }
    PolyMesh::from_faces(positions, &faces)
}

fn bundled(name: &str) -> PolyMesh {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name);
    polyflat::io::read_obj(&path).expect("bundled fixture").mesh
}

/// Asserts that the charts partition the faces and that each is a disk:
/// connected, manifold, χ = 2 − b with b ≥ 1.
fn assert_disks(name: &str, mesh: &PolyMesh, charts: &[Chart]) {
    let mut seen = vec![0u32; mesh.face_count()];
    for (k, chart) in charts.iter().enumerate() {
        for &f in &chart.faces {
            seen[f as usize] += 1;
        }
        let cm = chart.mesh(mesh);
        let t = Topology::build(&cm);
        let b = t.boundary_loops.len() as i64;
        let chi = t.used_vertices as i64 - t.edge_count() as i64 + cm.face_count() as i64;
        assert_eq!(t.component_count(), 1, "{name} chart {k} is not connected");
        assert!(
            t.non_manifold_edges.is_empty() && t.non_manifold_vertices.is_empty(),
            "{name} chart {k} is not manifold"
        );
        assert!(b >= 1, "{name} chart {k} has no boundary");
        assert_eq!(chi, 2 - b, "{name} chart {k}: χ = {chi} with {b} loops");
    }
    assert!(
        seen.iter().all(|&n| n == 1),
        "{name}: some face is in no chart or in several"
    );
}

fn auto_charts(mesh: &PolyMesh) -> Vec<Chart> {
    charts::build(mesh, &Topology::build(mesh), SeamMode::Auto).expect("charts")
}

/// The charts of a finished layout, each as a mesh of its own whose vertices are the
/// layout's UV points (so seams are open), for the disk check.
fn layout_charts(mesh: &PolyMesh, outcome: &Outcome) -> Vec<PolyMesh> {
    let n = outcome.report.global.charts;
    let mut faces: Vec<Vec<Vec<u32>>> = vec![Vec::new(); n];
    let mut position = vec![Point3::origin(); outcome.uvs.len()];
    for f in 0..mesh.face_count() {
        let r = mesh.face_range(f);
        for (&v, &t) in mesh.face_vertices[r.clone()]
            .iter()
            .zip(&outcome.corner_uvs[r.clone()])
        {
            position[t as usize] = mesh.positions[v as usize];
        }
        faces[outcome.face_chart[f] as usize].push(outcome.corner_uvs[r].to_vec());
    }
    faces
        .iter()
        .map(|fs| flatten_common::compact(&position, fs))
        .collect()
}

/// Asserts that every chart of a finished layout is a disk: connected, manifold,
/// χ = 2 − b with b = 1 boundary loop (auto charts are cut to disks).
fn assert_layout_disks(name: &str, mesh: &PolyMesh, outcome: &Outcome) {
    for (k, cm) in layout_charts(mesh, outcome).iter().enumerate() {
        let t = Topology::build(cm);
        let b = t.boundary_loops.len() as i64;
        let chi = t.used_vertices as i64 - t.edge_count() as i64 + cm.face_count() as i64;
        assert_eq!(t.component_count(), 1, "{name} chart {k} is not connected");
        assert_eq!(b, 1, "{name} chart {k} has {b} boundary loops");
        assert_eq!(chi, 1, "{name} chart {k}: χ = {chi}, a disk has 1");
    }
}

#[test]
fn automatic_charts_are_disks_on_closed_and_higher_genus_models() {
    // Most charts allowed: six for the cube sphere and the cube (the cube's faces are
    // a natural chart set); one for the open wavy sheet; two for the developable
    // hexagon cylinder (its unrolled strip is 3.6 times as long as wide, so it is cut
    // once across); twelve for the coarse torus (four bands of quads around its tube,
    // each bending by 90°, each band cut in three across its length; measured 12, a
    // regression guard).
    let models = [
        ("cube sphere", cube_sphere(8), 6),
        ("torus", bundled("torus_quads.obj"), 12),
        ("cube", bundled("cube_quads.obj"), 6),
        ("hexagon cylinder", bundled("hex_cylinder.obj"), 2),
        ("wavy sheet", bundled("wavy_quads.obj"), 1),
    ];
    for (name, mesh, most) in &models {
        let charts = auto_charts(mesh);
        assert_disks(name, mesh, &charts);
        assert!(charts.iter().all(|c| c.origin == ChartOrigin::Auto));
        let settings = Settings {
            seams: Some(SeamMode::Auto),
            ..Settings::default()
        };
        let outcome = flatten(mesh, &settings);
        assert_layout_disks(name, mesh, &outcome);
        let count = outcome.report.global.charts;
        assert!(
            count <= *most,
            "{name}: {count} charts, expected at most {most}"
        );
        let extra = count.saturating_sub(charts.len());
        let split = outcome
            .report
            .charts
            .iter()
            .filter(|c| c.origin == "split")
            .count();
        assert!(
            extra <= split,
            "{name}: {extra} charts more than the segmentation, only {split} from splits"
        );
    }
}

#[test]
fn elongated_automatic_charts_are_cut_across_so_strips_pack() {
    // A strip of aspect a alone covers at most 1/a of the square (common practice, no
    // published source): the hexagon cylinder's unrolled strip (aspect 3.6) packed at
    // 0.278 and the torus's four bands at 0.261 before elongated charts were cut.
    // Measured after: 0.731 and 0.593 (1024 px, 4 px padding); bounds 0.02 below.
    for (file, least) in [("hex_cylinder.obj", 0.71), ("torus_quads.obj", 0.57)] {
        let mesh = bundled(file);
        let settings = Settings {
            seams: Some(SeamMode::Auto),
            ..Settings::default()
        };
        let outcome = flatten(&mesh, &settings);
        let g = &outcome.report.global;
        assert!(
            g.metrics.utilization >= least,
            "{file}: utilization {:.3}, expected at least {least}",
            g.metrics.utilization
        );
        assert!(
            g.metrics.stretch_l2 < 1.01,
            "{file}: L2 stretch {}",
            g.metrics.stretch_l2
        );
        assert_eq!(g.metrics.overlapping_face_pairs, 0, "{file}");
        // Charts of fewer than 4 faces are never split (each piece keeps 2 or more).
        for c in outcome.report.charts.iter().filter(|c| c.faces >= 4) {
            let b = &c.bounding_box;
            let (w, h) = (b.max[0] - b.min[0], b.max[1] - b.min[1]);
            assert!(
                w.max(h) / w.min(h) <= 3.2,
                "{file}: chart {} is {w:.3} by {h:.3}",
                c.id
            );
        }
    }
}

#[test]
fn automatic_charts_are_disks_on_spot() {
    let Some(dir) = fixtures() else { return };
    // Most charts allowed: measured 9 and 17 (regression guards; the coarse control
    // mesh bends sharply between its few faces). Least utilization: measured 0.659
    // and 0.659 at 1024 px with 4 px padding (0.617 and 0.663 before merges had to
    // keep charts compact and strips were cut); bounds 0.02 below.
    for (file, most, least) in [
        ("spot_quadrangulated.obj", 12, 0.64),
        ("spot_control_mesh.obj", 18, 0.64),
    ] {
        let mesh = polyflat::io::read_obj(&dir.join("spot").join(file))
            .expect("Spot")
            .mesh;
        assert_disks(file, &mesh, &auto_charts(&mesh));
        let settings = Settings {
            seams: Some(SeamMode::Auto),
            ..Settings::default()
        };
        let outcome = flatten(&mesh, &settings);
        assert_layout_disks(file, &mesh, &outcome);
        assert_whole_layout_is_sound(file, &mesh, &outcome, 1024, 4);
        let count = outcome.report.global.charts;
        assert!(count <= most, "{file}: {count} charts");
        let utilization = outcome.report.global.metrics.utilization;
        assert!(utilization >= least, "{file}: utilization {utilization:.3}");
        // Every automatic chart ends within --max-stretch (1.25 by default).
        for c in &outcome.report.charts {
            assert!(
                c.metrics.stretch_l2 <= 1.25 + 1e-9,
                "{file} chart {}: {}",
                c.id,
                c.metrics.stretch_l2
            );
        }
    }
}

#[test]
fn spot_keeps_its_thirteen_islands() {
    // Expected: 13 islands, 1 of them mirrored (fixtures' README; island count also
    // from tests/reference/spot_counts.py).
    let Some(dir) = fixtures() else { return };
    let mesh = polyflat::io::read_obj(&dir.join("spot").join("spot_quadrangulated.obj"))
        .expect("Spot")
        .mesh;
    let charts = charts::build(&mesh, &Topology::build(&mesh), SeamMode::Keep).expect("charts");
    assert_eq!(charts.len(), 13);
    assert_eq!(charts.iter().filter(|c| c.mirrored_in_input).count(), 1);
    assert!(charts.iter().all(|c| c.origin == ChartOrigin::Kept));
    let outcome = flatten(&mesh, &Settings::default());
    assert_eq!(outcome.report.global.charts, 13);
    assert_whole_layout_is_sound("Spot", &mesh, &outcome, 1024, 4);
    // Every island is already a disk once its pinched corners are split.
    assert!(outcome.report.charts.iter().all(|c| c.seams_added == 0));
}

#[test]
fn a_closed_island_with_a_handle_is_opened_by_the_shortest_cut_and_reported() {
    // A 16 × 8 quad torus whose UVs are a planar projection shared by every face: one
    // closed UV island of genus 1. Opening it needs a loop around the tube (at least
    // 8 edges) and one around the hole (at least 16): 24 edges at the least, and the
    // cut found is that short.
    let (n, m) = (16u32, 8u32);
    let mut positions = Vec::new();
    for i in 0..n {
        for j in 0..m {
            let a = std::f64::consts::TAU * f64::from(i) / f64::from(n);
            let b = std::f64::consts::TAU * f64::from(j) / f64::from(m);
            let r = 1.0 + 0.4 * b.cos();
            positions.push(Point3::new(r * a.cos(), r * a.sin(), 0.4 * b.sin()));
        }
    }
    let faces: Vec<Vec<u32>> = (0..n)
        .flat_map(|i| {
            (0..m).map(move |j| {
                let at = |i: u32, j: u32| (i % n) * m + j % m;
                vec![at(i, j), at(i + 1, j), at(i + 1, j + 1), at(i, j + 1)]
            })
        })
        .collect();
    let mut mesh = PolyMesh::from_faces(positions, &faces);
    mesh.uvs = mesh
        .positions
        .iter()
        .map(|p| Point2::new((p.x + 1.5) / 3.0, (p.y + 1.5) / 3.0))
        .collect();
    mesh.corner_uvs = Some(mesh.face_vertices.clone());
    let outcome = flatten(&mesh, &Settings::default());
    let report = &outcome.report;
    assert_eq!(report.global.charts, 1);
    assert_eq!(report.charts[0].origin, "kept");
    assert_eq!(report.charts[0].seams_added, 24);
    assert_note(
        "torus island",
        &outcome,
        "1 UV island is closed or has a handle; polyflat cut 24 edges",
    );
    assert_layout_disks("torus island", &mesh, &outcome);
    assert_whole_layout_is_sound("torus island", &mesh, &outcome, 1024, 4);
}

fn flatten(mesh: &PolyMesh, settings: &Settings) -> Outcome {
    pipeline::flatten(mesh, "test.obj", settings, &Silent).expect("flatten")
}

/// Asserts that one of the report's `input.notes` contains `text`.
fn assert_note(name: &str, outcome: &Outcome, text: &str) {
    let notes = &outcome.report.input.notes;
    assert!(
        notes.iter().any(|n| n.contains(text)),
        "{name}: no note with {text:?} in {notes:?}"
    );
}

/// Boundary segments of every chart of the packed layout, in UV.
fn chart_boundaries(mesh: &PolyMesh, outcome: &Outcome) -> Vec<Vec<[Point2<f64>; 2]>> {
    let charts = outcome.report.global.charts;
    let mut count: HashMap<(u32, u32), (u32, usize)> = HashMap::new();
    for f in 0..mesh.face_count() {
        let r = mesh.face_range(f);
        let t = &outcome.corner_uvs[r];
        for i in 0..t.len() {
            let (a, b) = (t[i], t[(i + 1) % t.len()]);
            let key = (a.min(b), a.max(b));
            count.entry(key).or_insert((0, f)).0 += 1;
        }
    }
    let mut out = vec![Vec::new(); charts];
    for ((a, b), (n, f)) in count {
        if n == 1 {
            let c = outcome.face_chart[f] as usize;
            out[c].push([outcome.uvs[a as usize], outcome.uvs[b as usize]]);
        }
    }
    out
}

fn point_segment(p: Point2<f64>, [a, b]: [Point2<f64>; 2]) -> f64 {
    let ab = b - a;
    let t = ((p - a).dot(&ab) / ab.norm_squared().max(1e-300)).clamp(0.0, 1.0);
    (a + ab * t - p).norm()
}

fn segment_distance(s: [Point2<f64>; 2], q: [Point2<f64>; 2]) -> f64 {
    let cross = |o: Point2<f64>, a: Point2<f64>, b: Point2<f64>| (a - o).perp(&(b - o));
    let d1 = cross(s[0], s[1], q[0]);
    let d2 = cross(s[0], s[1], q[1]);
    let d3 = cross(q[0], q[1], s[0]);
    let d4 = cross(q[0], q[1], s[1]);
    if d1 * d2 < 0.0 && d3 * d4 < 0.0 {
        return 0.0;
    }
    point_segment(s[0], q)
        .min(point_segment(s[1], q))
        .min(point_segment(q[0], s))
        .min(point_segment(q[1], s))
}

/// No folds, no overlaps, everything inside the unit square with `padding` texels to
/// the border, and at least `padding` texels between the boundaries of any two
/// charts (no overlaps means a chart cannot sit inside another, so boundary distance
/// is the distance between charts).
fn assert_whole_layout_is_sound(
    name: &str,
    mesh: &PolyMesh,
    outcome: &Outcome,
    resolution: u32,
    padding: u32,
) {
    let g = &outcome.report.global.metrics;
    assert_eq!(g.flipped_faces, 0, "{name}: flipped faces");
    assert_eq!(g.overlapping_face_pairs, 0, "{name}: overlapping faces");
    let gap = f64::from(padding) / f64::from(resolution);
    // Tolerance: 1e-9 UV units, far below a texel.
    for p in &outcome.uvs {
        assert!(
            p.x >= gap - 1e-9
                && p.y >= gap - 1e-9
                && p.x <= 1.0 - gap + 1e-9
                && p.y <= 1.0 - gap + 1e-9,
            "{name}: UV {p} is within {padding} texels of the border"
        );
    }
    let boundaries = chart_boundaries(mesh, outcome);
    let mut closest = f64::INFINITY;
    for i in 0..boundaries.len() {
        for j in i + 1..boundaries.len() {
            for s in &boundaries[i] {
                for q in &boundaries[j] {
                    closest = closest.min(segment_distance(*s, *q));
                }
            }
        }
    }
    let texels = closest * f64::from(resolution);
    assert!(
        boundaries.len() < 2 || texels >= f64::from(padding) - 1e-6,
        "{name}: two charts are {texels:.3} texels apart, padding {padding}"
    );
}

#[test]
fn cube_sphere_and_torus_give_valid_padded_atlases() {
    for (name, mesh, resolution, padding) in [
        ("cube sphere", cube_sphere(8), 512, 4),
        ("torus", bundled("torus_quads.obj"), 256, 2),
    ] {
        let settings = Settings {
            resolution,
            padding,
            ..Settings::default()
        };
        let outcome = flatten(&mesh, &settings);
        assert!(outcome.report.global.charts >= 1);
        assert_whole_layout_is_sound(name, &mesh, &outcome, resolution, padding);
    }
}

#[test]
fn non_manifold_and_inconsistently_wound_meshes_are_cut_not_refused() {
    let p = |x: f64, y: f64, z: f64| Point3::new(x, y, z);
    // Three quads on one edge (0–1), like pages of a book: a non-manifold edge.
    let book = PolyMesh::from_faces(
        vec![
            p(0.0, 0.0, 0.0),
            p(0.0, 0.0, 1.0),
            p(1.0, 0.0, 1.0),
            p(1.0, 0.0, 0.0),
            p(0.0, 1.0, 1.0),
            p(0.0, 1.0, 0.0),
            p(-1.0, 0.0, 1.0),
            p(-1.0, 0.0, 0.0),
        ],
        &[vec![0, 3, 2, 1], vec![0, 1, 4, 5], vec![1, 0, 7, 6]],
    );
    // A 3 × 3 grid whose middle face is wound backwards: four inconsistent edges.
    let mut grid = flatten_common::quad_grid(3, 3, 1.0, 0.0);
    let mut faces: Vec<Vec<u32>> = grid.faces().map(|f| f.to_vec()).collect();
    faces[4].reverse();
    grid = PolyMesh::from_faces(grid.positions.clone(), &faces);
    // Two quads that share only a corner: a non-manifold vertex.
    let bowtie = PolyMesh::from_faces(
        vec![
            p(0.0, 0.0, 0.0),
            p(1.0, 0.0, 0.0),
            p(1.0, 1.0, 0.0),
            p(0.0, 1.0, 0.0),
            p(2.0, 1.0, 0.0),
            p(2.0, 2.0, 0.0),
            p(1.0, 2.0, 0.0),
        ],
        &[vec![0, 1, 2, 3], vec![2, 4, 5, 6]],
    );
    for (name, mesh, notes) in [
        ("book", &book, "shared by 3 faces"),
        ("grid", &grid, "same direction"),
        ("bowtie", &bowtie, "non-manifold"),
    ] {
        let outcome = flatten(mesh, &Settings::default());
        let report = &outcome.report;
        assert_note(name, &outcome, notes);
        assert_disks(name, mesh, &auto_charts(mesh));
        assert_whole_layout_is_sound(name, mesh, &outcome, 1024, 4);
        // Planar pieces flatten exactly (stretch 1 to 1e-6).
        assert!(
            (report.global.metrics.stretch_l2 - 1.0).abs() < 1e-6,
            "{name}: stretch {}",
            report.global.metrics.stretch_l2
        );
    }
}

/// A scan-like surface: [`cube_sphere`] (16 × 16 quads a side) lifted by smooth
/// bumps, with about one face in eleven missing, scattered, so holes touch each other
/// at corners (pinched boundaries and non-manifold vertices) as in a cleaned-up scan.
fn holey_bumpy_sphere() -> PolyMesh {
    let sphere = cube_sphere(16);
    let positions = sphere
        .positions
        .iter()
        .map(|p| {
            let r = 1.0
                + 0.2 * (3.0 * p.x + 1.0).sin() * (4.0 * p.y).cos()
                + 0.1 * (9.0 * p.z + 2.0 * p.x).sin();
            Point3::from(p.coords * r)
        })
        .collect();
    let faces: Vec<Vec<u32>> = sphere
        .faces()
        .enumerate()
        .filter(|(f, _)| (*f as u64 * 2_654_435_761) % 53 >= 5)
        .map(|(_, face)| face.to_vec())
        .collect();
    PolyMesh::from_faces(positions, &faces)
}

#[test]
fn charts_that_still_overlap_after_the_stretch_splits_are_split_until_they_do_not() {
    // Measured with the stretch rounds alone (no further splitting for overlaps):
    // 32 charts, 4 overlapping face pairs; with them 30 charts and none.
    let mesh = holey_bumpy_sphere();
    let outcome = flatten(&mesh, &Settings::default());
    let report = &outcome.report;
    assert_note("holey sphere", &outcome, "non-manifold");
    assert_whole_layout_is_sound("holey sphere", &mesh, &outcome, 1024, 4);
    assert_layout_disks("holey sphere", &mesh, &outcome);
    assert!(
        report.global.charts <= 40,
        "{} charts for 1391 faces",
        report.global.charts
    );
}
