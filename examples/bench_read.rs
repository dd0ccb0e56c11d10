//! Reading and connectivity at scale: writes a 1000×1000-quad OBJ (1,002,001 vertices,
//! 1,000,000 quads, with `vt` per vertex) to a temporary folder, then times reading it,
//! building its connectivity, UV islands, validation and writing it back.
//!
//! `cargo run --release --example bench_read [N]` (N quads per side, default 1000).
//! Target: reading ≤ 3 s and connectivity ≈ 1 s in release on one core.

use nalgebra::Point2;
use polyflat::io::{parse_obj, read_obj, write_obj};
use polyflat::mesh::{island_count, uv_islands, validate, Topology};
use std::fmt::Write as _;
use std::time::Instant;

/// Wall-clock and process CPU time of one stage; CPU time (from /proc/self/stat, Linux
/// only, 10 ms resolution) shows the cost when other processes share the cores.
struct Timer {
    wall: Instant,
    cpu: Option<f64>,
}

impl Timer {
    fn start() -> Self {
        Timer {
            wall: Instant::now(),
            cpu: cpu_seconds(),
        }
    }

    fn stop(&self) -> String {
        let wall = self.wall.elapsed().as_secs_f64();
        match (cpu_seconds(), self.cpu) {
            (Some(b), Some(a)) => format!("{wall:6.3} s wall, {:6.2} s CPU", b - a),
            _ => format!("{wall:6.3} s wall"),
        }
    }
}

/// User + system CPU seconds of this process (clock ticks of 1/100 s).
fn cpu_seconds() -> Option<f64> {
    let stat = std::fs::read_to_string("/proc/self/stat").ok()?;
    // Fields after the parenthesised command name; utime and stime are fields 14 and 15.
    let rest = stat.get(stat.rfind(')')? + 2..)?;
    let fields: Vec<&str> = rest.split_whitespace().collect();
    let utime: f64 = fields.get(11)?.parse().ok()?;
    let stime: f64 = fields.get(12)?.parse().ok()?;
    Some((utime + stime) / 100.0)
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let n: usize = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(1000);
    let dir = tempfile::tempdir()?;
    let path = dir.path().join("grid.obj");

    let t = Instant::now();
    let mut text = String::new();
    for j in 0..=n {
        for i in 0..=n {
            let (x, y) = (i as f64 / n as f64, j as f64 / n as f64);
            writeln!(
                text,
                "v {x} {y} {}",
                0.05 * (7.0 * x).sin() * (5.0 * y).cos()
            )?;
        }
    }
    for j in 0..=n {
        for i in 0..=n {
            writeln!(text, "vt {} {}", i as f64 / n as f64, j as f64 / n as f64)?;
        }
    }
    let id = |i: usize, j: usize| j * (n + 1) + i + 1;
    for j in 0..n {
        for i in 0..n {
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            writeln!(text, "f {a}/{a} {b}/{b} {c}/{c} {d}/{d}")?;
        }
    }
    std::fs::write(&path, &text)?;
    println!(
        "generated {} quads, {:.1} MB, in {:.2} s",
        n * n,
        text.len() as f64 / 1e6,
        t.elapsed().as_secs_f64()
    );
    drop(text);

    let t = Timer::start();
    let bytes = std::fs::read(&path)?;
    println!("file read       {}", t.stop());
    let t = Timer::start();
    let parsed = parse_obj(std::str::from_utf8(&bytes)?, "grid.obj")?;
    println!("parse_obj       {}", t.stop());
    drop((bytes, parsed));

    let t = Timer::start();
    let obj = read_obj(&path)?;
    println!(
        "read_obj        {}  ({} vertices, {} faces)",
        t.stop(),
        obj.mesh.vertex_count(),
        obj.mesh.face_count()
    );

    let t = Timer::start();
    let topo = Topology::build(&obj.mesh);
    println!(
        "Topology::build {}  ({} edges, {} boundary loops, genus {})",
        t.stop(),
        topo.edge_count(),
        topo.boundary_loops.len(),
        topo.genus()
    );

    let t = Timer::start();
    let islands = uv_islands(&obj.mesh).map(|ids| island_count(&ids));
    println!("uv_islands      {}  ({islands:?} islands)", t.stop());

    let t = Timer::start();
    let problems = validate(&obj.mesh, &topo);
    println!(
        "validate        {}  ({} problems)",
        t.stop(),
        problems.len()
    );

    let t = Timer::start();
    let uvs: Vec<Point2<f64>> = obj.mesh.uvs.clone();
    let corner_uvs = obj.mesh.corner_uvs.clone().unwrap_or_default();
    write_obj(&dir.path().join("out.obj"), &obj, &uvs, &corner_uvs)?;
    println!("write_obj       {}", t.stop());
    Ok(())
}
