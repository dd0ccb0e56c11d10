//! Packing figures: utilization and time on synthetic chart sets, then whole runs
//! (charts, flattening, packing) on the bundled fixtures and the shared Spot fixture
//! with charts, utilization and stretch.
//!
//! Run: `cargo run --release --example bench_pack` (`-- big` for the 1000-chart set
//! only).

use nalgebra::Point2;
use polyflat::pack::{pack, ChartPolygons};
use polyflat::settings::SeamMode;
use polyflat::Settings;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::path::{Path, PathBuf};
use std::time::Instant;

fn polygon(points: Vec<Point2<f64>>) -> ChartPolygons {
    let n = points.len() as u32;
    ChartPolygons {
        points,
        faces: vec![(0..n).collect()],
    }
}

/// Seeded rectangles, L shapes, discs and triangles of sizes in `[lo, hi)`, turned.
fn synthetic(count: usize, lo: f64, hi: f64, seed: u64) -> Vec<ChartPolygons> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    (0..count)
        .map(|_| {
            let s: f64 = rng.random_range(lo..hi);
            let a: f64 = rng.random_range(1.0..4.0);
            let xy: Vec<(f64, f64)> = match rng.random_range(0..4) {
                0 => vec![(0.0, 0.0), (a, 0.0), (a, 1.0), (0.0, 1.0)],
                1 => vec![
                    (0.0, 0.0),
                    (2.0, 0.0),
                    (2.0, 1.0),
                    (1.0, 1.0),
                    (1.0, 2.0),
                    (0.0, 2.0),
                ],
                2 => (0..9)
                    .map(|k| {
                        let t = k as f64 * std::f64::consts::TAU / 9.0;
                        (t.cos(), t.sin())
                    })
                    .collect(),
                _ => vec![(0.0, 0.0), (1.0, 0.0), (0.3, 0.8)],
            };
            let (sn, cs) = rng.random_range(0.0f64..6.3).sin_cos();
            polygon(
                xy.into_iter()
                    .map(|(x, y)| Point2::new(s * (cs * x - sn * y), s * (sn * x + cs * y)))
                    .collect(),
            )
        })
        .collect()
}

fn report(name: &str, charts: &[ChartPolygons], resolution: u32, padding: u32) {
    let start = Instant::now();
    match pack(charts, resolution, padding) {
        Ok(p) => println!(
            "{name:<40} {:>5} charts  {resolution:>5} px  pad {padding}  utilization {:.3}  {:>8.1} ms",
            charts.len(),
            p.utilization,
            start.elapsed().as_secs_f64() * 1e3
        ),
        Err(e) => println!("{name:<40} failed: {e}"),
    }
}

fn main() {
    if std::env::args().count() > 1 {
        report(
            "synthetic mixed, 1000 charts",
            &synthetic(1000, 0.2, 2.0, 4),
            1024,
            2,
        );
        return;
    }
    report(
        "synthetic mixed, sizes 0.2–2",
        &synthetic(80, 0.2, 2.0, 3),
        1024,
        4,
    );

    report(
        "synthetic mixed, sizes 0.2–2",
        &synthetic(80, 0.2, 2.0, 3),
        4096,
        8,
    );
    report(
        "synthetic mixed, 1000 charts",
        &synthetic(1000, 0.2, 2.0, 4),
        1024,
        2,
    );
    report(
        "synthetic mixed, 1000 charts",
        &synthetic(1000, 0.2, 2.0, 4),
        4096,
        4,
    );
    report(
        "synthetic tiny, 1000 charts",
        &synthetic(1000, 0.001, 0.01, 5),
        1024,
        2,
    );
    report(
        "one elongated 200:1 strip",
        &synthetic(1, 1.0, 1.0001, 6),
        1024,
        4,
    );
    println!();
    whole_runs();
}

/// Flattens every fixture at 1024 px with 4 px padding and prints the layout figures.
fn whole_runs() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut files: Vec<(PathBuf, Option<SeamMode>)> = [
        "quad_grid.obj",
        "mixed_planar.obj",
        "wavy_quads.obj",
        "cube_quads.obj",
        "hex_cylinder.obj",
        "torus_quads.obj",
    ]
    .iter()
    .map(|n| (root.join("fixtures").join(n), None))
    .collect();
    // The torus and the cube also without their own UVs.
    for n in ["cube_quads.obj", "torus_quads.obj"] {
        files.push((root.join("fixtures").join(n), Some(SeamMode::Auto)));
    }
    let spot = root.join("../shared/fixtures/spot/spot_quadrangulated.obj");
    if spot.is_file() {
        files.push((spot.clone(), Some(SeamMode::Keep)));
        files.push((spot, Some(SeamMode::Auto)));
    } else {
        println!("(Spot fixture not found beside the repository: skipped)");
    }
    println!(
        "{:<28} {:>5} {:>6} {:>6} {:>11} {:>10} {:>9}",
        "fixture", "seams", "faces", "charts", "utilization", "stretch L2", "time ms"
    );
    for (path, seams) in files {
        let name = path.file_name().map(|n| n.to_string_lossy().to_string());
        let name = name.unwrap_or_default();
        let obj = match polyflat::io::read_obj(&path) {
            Ok(o) => o,
            Err(e) => {
                println!("{name:<28} failed: {e}");
                continue;
            }
        };
        let settings = Settings {
            seams,
            ..Settings::default()
        };
        let start = Instant::now();
        match polyflat::pipeline::flatten(&obj.mesh, &name, &settings, &polyflat::progress::Silent)
        {
            Ok(out) => {
                let g = &out.report.global;
                println!(
                    "{name:<28} {:>5} {:>6} {:>6} {:>11.3} {:>10.4} {:>9.0}",
                    out.report.settings.seams.map_or("", |s| s.as_str()),
                    out.report.input.faces,
                    g.charts,
                    g.metrics.utilization,
                    g.metrics.stretch_l2,
                    start.elapsed().as_secs_f64() * 1e3
                );
            }
            Err(e) => println!("{name:<28} failed: {e}"),
        }
    }
}
