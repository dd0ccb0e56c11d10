//! Packing figures: utilization and time on synthetic chart sets.
//!
//! Run: `cargo run --release --example bench_pack`

use nalgebra::Point2;
use polyflat::pack::{pack, ChartPolygons};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
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
}
