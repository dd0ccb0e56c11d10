//! Timing of the distortion atlas and the checker preview, plus sample renders.
//!
//! `cargo run --release --example bench_visuals` prints the time to draw a
//! 102 400-quad torus (atlas at 1024 and 2048 pixels, preview at 1024) and, when the
//! Spot fixtures are found (env `POLYFLAT_FIXTURES` or a `shared/fixtures` folder
//! above the crate), writes sample images of Spot's own UV layout to
//! `target/samples/`. The small OBJ reader and per-face metrics here serve only this
//! example; the pipeline supplies both in real runs.

use nalgebra::{Matrix2, Point2, Point3};
use polyflat::atlas::{self, AtlasInput};
use polyflat::operators::face::{gradient_2d, vector_area};
use polyflat::settings::AtlasMetric;
use polyflat::PolyMesh;
use std::path::{Path, PathBuf};
use std::time::Instant;

type Error = Box<dyn std::error::Error>;

fn main() -> Result<(), Error> {
    let (mesh, uvs) = torus(320, 320);
    let corner_uvs = mesh.corner_uvs.clone().unwrap_or_default();
    let metrics = face_metrics(&mesh, &uvs, &corner_uvs);
    let charts = vec![0u32; mesh.face_count()];
    println!("torus: {} quads", mesh.face_count());
    for res in [1024, 2048] {
        let input = AtlasInput {
            mesh: &mesh,
            uvs: &uvs,
            corner_uvs: &corner_uvs,
            face_values: &metrics.angle,
            metric: AtlasMetric::Angle,
            flipped: &metrics.flipped,
            face_chart: &charts,
        };
        let t = Instant::now();
        let img = atlas::render_atlas(&input, res)?;
        println!(
            "atlas {res}: {:.0} ms ({}×{})",
            ms(t),
            img.width(),
            img.height()
        );
    }
    let t = Instant::now();
    let img = polyflat::preview::render_preview(&mesh, &uvs, &corner_uvs, 1024)?;
    println!(
        "preview 1024: {:.0} ms ({}×{})",
        ms(t),
        img.width(),
        img.height()
    );

    let out = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/samples");
    std::fs::create_dir_all(&out)?;
    atlas::write_png(&out.join("torus_preview.png"), &img)?;
    let Some(dir) = fixtures() else {
        println!("Spot fixtures not found: no Spot samples written");
        return Ok(());
    };
    for name in ["spot_quadrangulated", "spot_control_mesh"] {
        let (mesh, uvs) = read_obj(&dir.join(format!("spot/{name}.obj")))?;
        let corner_uvs = mesh.corner_uvs.clone().unwrap_or_default();
        let m = face_metrics(&mesh, &uvs, &corner_uvs);
        let charts = vec![0u32; mesh.face_count()];
        for (metric, values) in [
            (AtlasMetric::Angle, &m.angle),
            (AtlasMetric::Area, &m.area),
            (AtlasMetric::Stretch, &m.stretch),
        ] {
            let input = AtlasInput {
                mesh: &mesh,
                uvs: &uvs,
                corner_uvs: &corner_uvs,
                face_values: values,
                metric,
                flipped: &m.flipped,
                face_chart: &charts,
            };
            let t = Instant::now();
            let img = atlas::render_atlas(&input, 1024)?;
            let path = out.join(format!("{name}_atlas_{metric}.png"));
            atlas::write_png(&path, &img)?;
            println!("{}: {:.0} ms", path.display(), ms(t));
        }
        let t = Instant::now();
        let img = polyflat::preview::render_preview(&mesh, &uvs, &corner_uvs, 1024)?;
        let path = out.join(format!("{name}_preview.png"));
        atlas::write_png(&path, &img)?;
        println!("{}: {:.0} ms", path.display(), ms(t));
    }
    Ok(())
}

fn ms(t: Instant) -> f64 {
    t.elapsed().as_secs_f64() * 1e3
}

/// Per-face metrics of DESIGN §3 (angle σ1/σ2, signed ln(σ1'σ2'), L2 stretch, flips).
struct Metrics {
    angle: Vec<f64>,
    area: Vec<f64>,
    stretch: Vec<f64>,
    flipped: Vec<bool>,
}

fn face_metrics(mesh: &PolyMesh, uvs: &[Point2<f64>], corner_uvs: &[u32]) -> Metrics {
    let mut sv = Vec::with_capacity(mesh.face_count());
    let (mut area_3d, mut area_uv) = (0.0, 0.0);
    for f in 0..mesh.face_count() {
        let corners = mesh.face_corners(f);
        let w: Vec<Point2<f64>> = corner_uvs[mesh.face_range(f)]
            .iter()
            .map(|&t| uvs[t as usize])
            .collect();
        area_3d += vector_area(&corners).norm();
        area_uv += 0.5
            * w.iter()
                .zip(w.iter().cycle().skip(1))
                .map(|(a, b)| a.x * b.y - b.x * a.y)
                .sum::<f64>()
                .abs();
        let s = gradient_2d(&corners).ok().map(|g| {
            let (mut du, mut dv) = (nalgebra::Vector2::zeros(), nalgebra::Vector2::zeros());
            for (j, p) in w.iter().enumerate() {
                du += g.column(j) * p.x;
                dv += g.column(j) * p.y;
            }
            let jac = Matrix2::new(du.x, du.y, dv.x, dv.y);
            let svd = jac.svd(false, false).singular_values;
            let (s1, s2) = (svd[0].max(svd[1]), svd[0].min(svd[1]));
            (s1, if jac.determinant() < 0.0 { -s2 } else { s2 })
        });
        sv.push(s.unwrap_or((f64::NAN, f64::NAN)));
    }
    let scale = (area_uv / area_3d).sqrt();
    Metrics {
        angle: sv.iter().map(|&(a, b)| a / b.abs()).collect(),
        area: sv
            .iter()
            .map(|&(a, b)| (a * b.abs() / (scale * scale)).ln())
            .collect(),
        stretch: sv
            .iter()
            .map(|&(a, b)| (((scale / a).powi(2) + (scale / b).powi(2)) / 2.0).sqrt())
            .collect(),
        flipped: sv.iter().map(|&(_, b)| b.is_nan() || b <= 0.0).collect(),
    }
}

/// A torus of `nu` × `nv` quads, its UVs the parameter square with a wavy warp.
fn torus(nu: usize, nv: usize) -> (PolyMesh, Vec<Point2<f64>>) {
    let mut positions = Vec::new();
    let mut uvs = Vec::new();
    for j in 0..nv {
        for i in 0..nu {
            let (a, b) = (
                i as f64 / nu as f64 * std::f64::consts::TAU,
                j as f64 / nv as f64 * std::f64::consts::TAU,
            );
            positions.push(Point3::new(
                (2.0 + b.cos()) * a.cos(),
                b.sin(),
                (2.0 + b.cos()) * a.sin(),
            ));
        }
    }
    for j in 0..=nv {
        for i in 0..=nu {
            let (u, v) = (i as f64 / nu as f64, j as f64 / nv as f64);
            uvs.push(Point2::new(
                0.05 + 0.9 * u + 0.02 * (6.0 * v).sin(),
                0.05 + 0.9 * v,
            ));
        }
    }
    let p = |i: usize, j: usize| ((j % nv) * nu + (i % nu)) as u32;
    let t = |i: usize, j: usize| (j * (nu + 1) + i) as u32;
    let mut faces = Vec::new();
    let mut corner_uvs = Vec::new();
    for j in 0..nv {
        for i in 0..nu {
            faces.push(vec![p(i, j), p(i, j + 1), p(i + 1, j + 1), p(i + 1, j)]);
            corner_uvs.extend([t(i, j), t(i, j + 1), t(i + 1, j + 1), t(i + 1, j)]);
        }
    }
    let mut mesh = PolyMesh::from_faces(positions, &faces);
    mesh.corner_uvs = Some(corner_uvs);
    (mesh, uvs)
}

fn fixtures() -> Option<PathBuf> {
    if let Some(dir) = std::env::var_os("POLYFLAT_FIXTURES") {
        return Some(PathBuf::from(dir));
    }
    let mut dir = Some(Path::new(env!("CARGO_MANIFEST_DIR")));
    while let Some(d) = dir {
        let candidate = d.join("shared/fixtures");
        if candidate.is_dir() {
            return Some(candidate);
        }
        dir = d.parent();
    }
    None
}

/// Reads `v`, `vt` and `f` records (`v`, `v/vt`, `v/vt/vn`, `v//vn`; 1-based).
fn read_obj(path: &Path) -> Result<(PolyMesh, Vec<Point2<f64>>), Error> {
    let text = std::fs::read_to_string(path)?;
    let (mut positions, mut uvs, mut faces, mut corner_uvs) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for line in text.lines() {
        let mut it = line.split_whitespace();
        let nums = |it: std::str::SplitWhitespace| -> Vec<f64> {
            it.filter_map(|s| s.parse().ok()).collect()
        };
        match it.next() {
            Some("v") => {
                let c = nums(it);
                positions.push(Point3::new(c[0], c[1], c[2]));
            }
            Some("vt") => {
                let c = nums(it);
                uvs.push(Point2::new(c[0], c[1]));
            }
            Some("f") => {
                let mut face = Vec::new();
                for corner in it {
                    let mut parts = corner.split('/');
                    let v: u32 = parts.next().unwrap_or("").parse()?;
                    let t: u32 = parts.next().unwrap_or("").parse().unwrap_or(v);
                    face.push(v - 1);
                    corner_uvs.push(t - 1);
                }
                faces.push(face);
            }
            _ => {}
        }
    }
    let mut mesh = PolyMesh::from_faces(positions, &faces);
    mesh.corner_uvs = Some(corner_uvs);
    Ok((mesh, uvs))
}
