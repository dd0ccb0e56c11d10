//! Reading and connectivity at scale: writes a 1000×1000-quad OBJ (1,002,001 vertices,
//! 1,000,000 quads, with `vt` per vertex) to a temporary folder, then times reading it,
//! building its connectivity, UV islands, validation and writing it back.
//!
//! `cargo run --release --example bench_read [N]` (N quads per side, default 1000).
//! Target: reading ≤ 3 s and connectivity ≈ 1 s in release on one core.

use nalgebra::Point2;
use polyflat::io::{read_obj, write_obj};
use polyflat::mesh::{island_count, uv_islands, validate, Topology};
use std::fmt::Write as _;
use std::time::Instant;

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

    let t = Instant::now();
    let obj = read_obj(&path)?;
    println!(
        "read_obj        {:6.3} s  ({} vertices, {} faces)",
        t.elapsed().as_secs_f64(),
        obj.mesh.vertex_count(),
        obj.mesh.face_count()
    );

    let t = Instant::now();
    let topo = Topology::build(&obj.mesh);
    println!(
        "Topology::build {:6.3} s  ({} edges, {} boundary loops, genus {})",
        t.elapsed().as_secs_f64(),
        topo.edge_count(),
        topo.boundary_loops.len(),
        topo.genus()
    );

    let t = Instant::now();
    let islands = uv_islands(&obj.mesh).map(|ids| island_count(&ids));
    println!(
        "uv_islands      {:6.3} s  ({islands:?} islands)",
        t.elapsed().as_secs_f64()
    );

    let t = Instant::now();
    let problems = validate(&obj.mesh, &topo);
    println!(
        "validate        {:6.3} s  ({} problems)",
        t.elapsed().as_secs_f64(),
        problems.len()
    );

    let t = Instant::now();
    let uvs: Vec<Point2<f64>> = obj.mesh.uvs.clone();
    let corner_uvs = obj.mesh.corner_uvs.clone().unwrap_or_default();
    write_obj(&dir.path().join("out.obj"), &obj, &uvs, &corner_uvs)?;
    println!("write_obj       {:6.3} s", t.elapsed().as_secs_f64());
    Ok(())
}
