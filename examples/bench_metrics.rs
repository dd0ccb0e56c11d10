//! Times global operator assembly and the layout metrics on a large quad grid.
//!
//! Usage: `cargo run --release --example bench_metrics [SIDE]` (default SIDE = 317,
//! i.e. 100,489 quads). The grid is non-planar (a smooth bump) with jittered
//! vertices; its UVs are the jittered plane coordinates scaled into the unit square,
//! so the layout has no overlaps; a second overlap run adds a shifted copy of it.

use std::time::Instant;

use nalgebra::{Point2, Point3};
use polyflat::{metrics, operators, PolyMesh};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let side: u32 = match std::env::args().nth(1) {
        Some(s) => s.parse()?,
        None => 317,
    };
    let n = side + 1;
    let mut positions = Vec::new();
    let mut uvs = Vec::new();
    let mut state = 0x2545_f491_4f6c_dd1d_u64;
    let mut jitter = || {
        // xorshift64*: a fixed, dependency-free sequence in [-0.2, 0.2).
        state ^= state >> 12;
        state ^= state << 25;
        state ^= state >> 27;
        (state.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64 * 0.4 - 0.2
    };
    for j in 0..n {
        for i in 0..n {
            let interior = i > 0 && j > 0 && i < side && j < side;
            let (dx, dy) = if interior {
                (jitter(), jitter())
            } else {
                (0.0, 0.0)
            };
            let (x, y) = (i as f64 + dx, j as f64 + dy);
            positions.push(Point3::new(x, y, 3.0 * (x * 0.05).sin() * (y * 0.07).cos()));
            uvs.push(Point2::new(x / side as f64, y / side as f64));
        }
    }
    let faces: Vec<Vec<u32>> = (0..side)
        .flat_map(|j| {
            (0..side).map(move |i| {
                let a = j * n + i;
                vec![a, a + 1, a + n + 1, a + n]
            })
        })
        .collect();
    let mut mesh = PolyMesh::from_faces(positions, &faces);
    mesh.uvs = uvs;
    mesh.corner_uvs = Some(mesh.face_vertices.clone());
    println!(
        "mesh: {} quads, {} vertices, {} rayon threads",
        mesh.face_count(),
        mesh.vertex_count(),
        rayon::current_num_threads()
    );

    let t = Instant::now();
    let g = operators::gradient(&mesh)?;
    println!(
        "gradient        {:8.1} ms  ({} nonzeros)",
        ms(t),
        g.compute_nnz()
    );
    let t = Instant::now();
    let l = operators::laplacian(&mesh, 1.0)?;
    println!(
        "laplacian       {:8.1} ms  ({} nonzeros)",
        ms(t),
        l.compute_nnz()
    );
    let t = Instant::now();
    let mass = operators::lumped_mass(&mesh)?;
    println!(
        "lumped_mass     {:8.1} ms  (total area {:.3})",
        ms(t),
        mass.iter().sum::<f64>()
    );

    let corners = mesh.face_vertices.clone();
    let t = Instant::now();
    let per_face = metrics::face_metrics(&mesh, &mesh.uvs, &corners)?;
    println!("face_metrics    {:8.1} ms", ms(t));
    let t = Instant::now();
    let pairs = metrics::overlapping_face_pairs(&mesh.uvs, &corners, &mesh);
    println!("overlaps        {:8.1} ms  ({} pairs)", ms(t), pairs.len());
    let t = Instant::now();
    let summary = metrics::summarize(&mesh, &per_face, None);
    println!("summarize       {:8.1} ms  (includes overlaps)", ms(t));
    println!("{}", serde_json::to_string_pretty(&summary)?);

    // Worst case for the overlap test: the layout plus a copy shifted by half a cell
    // diagonally, so every face of the copy overlaps up to four faces.
    let count = mesh.uvs.len() as u32;
    let half = 0.5 / side as f64;
    let mut uvs = mesh.uvs.clone();
    uvs.extend(mesh.uvs.iter().map(|p| Point2::new(p.x + half, p.y + half)));
    let copies: Vec<Vec<u32>> = faces
        .iter()
        .chain(faces.iter())
        .enumerate()
        .map(|(k, f)| {
            f.iter()
                .map(|&v| v + if k < faces.len() { 0 } else { count })
                .collect()
        })
        .collect();
    let doubled = PolyMesh::from_faces(mesh.positions.clone(), &[faces.clone(), faces].concat());
    let corners: Vec<u32> = copies.concat();
    let t = Instant::now();
    let pairs = metrics::overlapping_face_pairs(&uvs, &corners, &doubled);
    println!(
        "overlaps        {:8.1} ms  ({} faces, layout + shifted copy: {} pairs)",
        ms(t),
        doubled.face_count(),
        pairs.len()
    );
    Ok(())
}

fn ms(t: Instant) -> f64 {
    t.elapsed().as_secs_f64() * 1e3
}
