//! Checker preview: a software render of the model from four directions with a
//! checker texture mapped through its UVs, so stretch, shear, size changes and seams
//! of the layout show on the surface.
//!
//! The image is `size`×`size`, a 2×2 grid of views (each `size/2` square):
//!
//! | top-left: camera on +z | top-right: camera on +x |
//! | --- | --- |
//! | bottom-left: camera on −z | bottom-right: three-quarter from above, camera on (+x, +0.9y, +z) |
//!
//! Each view is labelled with its camera direction ("from +z", …): which side of a
//! model is its front is not known, but y is taken as up (the common OBJ convention). Each view frames the
//! model's bounding sphere, uses a perspective camera with a 36° field of view, a
//! z-buffer, perspective-correct texture interpolation, Lambert shading from a light
//! above-left of the camera plus ambient light, and 2×2 supersampling. Polygons are
//! fan-triangulated around their centroid for rasterisation only. Rendering is
//! deterministic (same input, same bytes) and needs no GPU; the four views are drawn
//! in parallel.

mod checker;
mod raster;

pub use crate::atlas::write_png;
pub use checker::{CELLS, DARK_L, LIGHT_L};

use crate::atlas::{check_faces, color, font};
use crate::error::{Error, Result};
use crate::mesh::PolyMesh;
use crate::operators::face::vector_area;
use checker::Checker;
use image::RgbaImage;
use nalgebra::{Point2, Point3, Vector2, Vector3};
use raster::{ScreenVertex, Target};
use rayon::prelude::*;

/// Smallest preview size accepted, in pixels.
pub const MIN_SIZE: u32 = 64;
/// Largest preview size accepted, in pixels.
pub const MAX_SIZE: u32 = 8192;

/// Supersampling factor per axis.
const SUPERSAMPLE: usize = 2;
/// Half the field of view, in degrees.
const HALF_FOV_DEGREES: f64 = 18.0;
/// Fraction of the half field of view the bounding sphere fills.
const FILL: f64 = 0.92;
/// Corner normals average the normals of faces around the vertex that lie within
/// this angle of the corner's own face (so creases stay sharp).
const CREASE_DEGREES: f64 = 50.0;

/// One view of the grid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct View {
    /// Label drawn in the view's corner.
    pub label: &'static str,
    /// Direction from the model's centre to the camera (need not be unit length).
    pub direction: [f64; 3],
}

/// The four views, in grid order (row-major: top-left, top-right, bottom-left,
/// bottom-right).
pub const VIEWS: [View; 4] = [
    View {
        label: "from +z",
        direction: [0.0, 0.0, 1.0],
    },
    View {
        label: "from +x",
        direction: [1.0, 0.0, 0.0],
    },
    View {
        label: "from -z",
        direction: [0.0, 0.0, -1.0],
    },
    View {
        label: "from +x+y+z",
        direction: [1.0, 0.9, 1.0],
    },
];

/// Pixel rectangle `(x, y, width, height)` of view `index` (0–3) in a `size` image.
pub fn view_rect(size: u32, index: usize) -> (u32, u32, u32, u32) {
    let cell = size / 2;
    let (col, row) = ((index % 2) as u32, (index / 2 % 2) as u32);
    (col * cell, row * cell, cell, cell)
}

/// Renders the checker preview of `mesh` with texture coordinates `uvs` indexed per
/// face corner by `corner_uvs` (same layout as `mesh.face_vertices`), as a
/// `size`×`size` image (see the module docs for the layout).
///
/// Errors (one sentence naming the face or option) when `size` is outside
/// 64 … 8192, the mesh has no faces, an index is out of range, or a position or UV is
/// not finite.
pub fn render_preview(
    mesh: &PolyMesh,
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
    size: u32,
) -> Result<RgbaImage> {
    if !(MIN_SIZE..=MAX_SIZE).contains(&size) {
        return Err(Error::Image(format!(
            "preview: the size must be between {MIN_SIZE} and {MAX_SIZE} pixels, got {size}"
        )));
    }
    check_faces("preview", mesh, uvs, corner_uvs)?;
    if mesh.face_count() == 0 {
        return Err(Error::Image(
            "preview: the mesh has no faces to draw".into(),
        ));
    }
    let scene = Scene::new(mesh, uvs, corner_uvs)?;
    let cell = (size / 2) as usize;
    let checker = Checker::new();
    let views: Vec<Vec<[u8; 3]>> = VIEWS
        .par_iter()
        .map(|view| scene.render(view, cell, &checker))
        .collect();

    let mut img = RgbaImage::from_pixel(size, size, image::Rgba([28, 30, 34, 255]));
    let k = (size / 512).max(1);
    for (i, (pixels, view)) in views.iter().zip(VIEWS.iter()).enumerate() {
        let (x0, y0, w, _) = view_rect(size, i);
        for (j, rgb) in pixels.iter().enumerate() {
            let (x, y) = (x0 + (j % cell) as u32, y0 + (j / cell) as u32);
            if x < size && y < size {
                img.put_pixel(x, y, image::Rgba([rgb[0], rgb[1], rgb[2], 255]));
            }
        }
        let text = color::legend_text();
        let pad = i64::from(4 * k);
        font::layout(
            view.label,
            i64::from(x0) + pad,
            i64::from(y0) + pad,
            k,
            |x, y, s| {
                for yy in y..y + i64::from(s) {
                    for xx in x..x + i64::from(s) {
                        let inside =
                            xx >= i64::from(x0) && xx < i64::from(x0 + w) && yy < i64::from(size);
                        if inside && xx >= 0 && yy >= 0 {
                            img.put_pixel(
                                xx as u32,
                                yy as u32,
                                image::Rgba([text[0], text[1], text[2], 255]),
                            );
                        }
                    }
                }
            },
        );
    }
    // Separators between the views.
    let frame = image::Rgba([28, 30, 34, 255]);
    let mid = (size / 2) as i64;
    for t in 0..size {
        for d in [mid - 1, mid] {
            if let Ok(d) = u32::try_from(d) {
                img.put_pixel(d, t, frame);
                img.put_pixel(t, d, frame);
            }
        }
    }
    Ok(img)
}

/// Geometry prepared once for all views.
struct Scene<'a> {
    mesh: &'a PolyMesh,
    uvs: &'a [Point2<f64>],
    corner_uvs: &'a [u32],
    /// Unit normal per face corner (crease-aware average).
    corner_normals: Vec<Vector3<f64>>,
    /// Unit normal per face (zero for degenerate faces).
    face_normals: Vec<Vector3<f64>>,
    centre: Point3<f64>,
    radius: f64,
}

impl<'a> Scene<'a> {
    fn new(mesh: &'a PolyMesh, uvs: &'a [Point2<f64>], corner_uvs: &'a [u32]) -> Result<Self> {
        let mut lo = Vector3::repeat(f64::INFINITY);
        let mut hi = Vector3::repeat(f64::NEG_INFINITY);
        for (f, face) in mesh.faces().enumerate() {
            for &v in face {
                let p = mesh
                    .positions
                    .get(v as usize)
                    .copied()
                    .unwrap_or_else(Point3::origin);
                if !(p.x.is_finite() && p.y.is_finite() && p.z.is_finite()) {
                    return Err(Error::Image(format!(
                        "preview: {} uses vertex {} whose position is not a finite number",
                        mesh.face_label(f),
                        u64::from(v) + 1
                    )));
                }
                lo = lo.inf(&p.coords);
                hi = hi.sup(&p.coords);
            }
        }
        let centre = Point3::from((lo + hi) * 0.5);
        let radius = mesh
            .face_vertices
            .iter()
            .filter_map(|&v| mesh.positions.get(v as usize))
            .map(|p| (p - centre).norm())
            .fold(0.0, f64::max);
        let radius = if radius > 0.0 { radius } else { 1.0 };

        let face_normals: Vec<Vector3<f64>> = (0..mesh.face_count())
            .map(|f| {
                let a = vector_area(&mesh.face_corners(f));
                let n = a.norm();
                if n > 0.0 {
                    a / n
                } else {
                    Vector3::zeros()
                }
            })
            .collect();
        // Faces around each vertex (compressed rows).
        let mut start = vec![0usize; mesh.positions.len() + 1];
        for &v in &mesh.face_vertices {
            if let Some(s) = start.get_mut(v as usize + 1) {
                *s += 1;
            }
        }
        for i in 1..start.len() {
            start[i] += start[i - 1];
        }
        let mut fill = start.clone();
        let mut around = vec![0usize; mesh.face_vertices.len()];
        for f in 0..mesh.face_count() {
            for &v in mesh.face(f) {
                if let Some(slot) = fill.get_mut(v as usize) {
                    if let Some(a) = around.get_mut(*slot) {
                        *a = f;
                    }
                    *slot += 1;
                }
            }
        }
        let cos_crease = CREASE_DEGREES.to_radians().cos();
        let mut corner_normals = vec![Vector3::zeros(); mesh.face_vertices.len()];
        for f in 0..mesh.face_count() {
            let own = face_normals[f];
            for c in mesh.face_range(f) {
                let v = mesh
                    .face_vertices
                    .get(c)
                    .map_or(usize::MAX, |&v| v as usize);
                let (s, e) = (
                    start.get(v).copied().unwrap_or(0),
                    start.get(v + 1).copied().unwrap_or(0),
                );
                let mut sum = Vector3::zeros();
                for &g in around.get(s..e).unwrap_or(&[]) {
                    let n = face_normals[g];
                    if n.dot(&own) >= cos_crease {
                        sum += n;
                    }
                }
                let len = sum.norm();
                corner_normals[c] = if len > 0.0 { sum / len } else { own };
            }
        }
        Ok(Scene {
            mesh,
            uvs,
            corner_uvs,
            corner_normals,
            face_normals,
            centre,
            radius,
        })
    }

    /// Renders `view` into a `cell`² sRGB buffer (row-major from the top).
    fn render(&self, view: &View, cell: usize, checker: &Checker) -> Vec<[u8; 3]> {
        let n = cell * SUPERSAMPLE;
        let dir = Vector3::from(view.direction).normalize();
        let up = Vector3::y();
        let right = {
            let r = up.cross(&dir);
            if r.norm() > 1e-9 {
                r.normalize()
            } else {
                Vector3::x()
            }
        };
        let cam_up = dir.cross(&right);
        let half = HALF_FOV_DEGREES.to_radians();
        let distance = self.radius / (FILL * half).sin();
        let eye = self.centre + dir * distance;
        let focal = 0.5 * n as f64 / half.tan();
        let light = (-0.45 * right + 0.60 * cam_up + 0.66 * dir).normalize();

        let project = |p: &Point3<f64>, uv: Point2<f64>, normal: &Vector3<f64>| {
            let d = p - eye;
            let depth = (-d.dot(&dir)).max(1e-9 * distance);
            ScreenVertex {
                x: 0.5 * n as f64 + focal * d.dot(&right) / depth,
                y: 0.5 * n as f64 - focal * d.dot(&cam_up) / depth,
                inv_depth: 1.0 / depth,
                u: uv.x,
                v: uv.y,
                light: normal.dot(&light),
            }
        };

        let mut target = Target::new(n, n, |y| background(y as f64 / n as f64));
        let mesh = self.mesh;
        for f in 0..mesh.face_count() {
            let range = mesh.face_range(f);
            let points: Vec<(Point3<f64>, Point2<f64>, Vector3<f64>)> = range
                .filter_map(|c| {
                    let p = mesh.positions.get(*mesh.face_vertices.get(c)? as usize)?;
                    let uv = self.uvs.get(*self.corner_uvs.get(c)? as usize)?;
                    Some((*p, *uv, *self.corner_normals.get(c)?))
                })
                .collect();
            let k = points.len() as f64;
            let centroid = points.iter().map(|p| p.0.coords).sum::<Vector3<f64>>() / k;
            let uv_mean = points.iter().map(|p| p.1.coords).sum::<Vector2<f64>>() / k;
            let corners: Vec<ScreenVertex> =
                points.iter().map(|(p, uv, n)| project(p, *uv, n)).collect();
            let normal = self
                .face_normals
                .get(f)
                .copied()
                .unwrap_or_else(Vector3::zeros);
            let centre = project(&Point3::from(centroid), Point2::from(uv_mean), &normal);
            let facing = if normal.dot(&(eye - Point3::from(centroid))) >= 0.0 {
                1.0
            } else {
                -1.0
            };
            for i in 0..corners.len() {
                let next = (i + 1) % corners.len();
                target.triangle([centre, corners[i], corners[next]], facing, checker);
            }
        }
        downsample(&target, cell)
    }
}

/// Background of a view at relative height `t` (0 top, 1 bottom): a soft vertical
/// gradient of cool dark grey, OKLab L 0.40 → 0.30 (linear light).
fn background(t: f64) -> [f32; 3] {
    let c = color::Oklab {
        l: 0.40 - 0.10 * t,
        a: -0.004,
        b: -0.014,
    };
    c.to_linear_srgb().map(|v| v.clamp(0.0, 1.0) as f32)
}

/// Box-filters the supersampled target to `cell`² pixels and encodes sRGB.
fn downsample(target: &Target, cell: usize) -> Vec<[u8; 3]> {
    let s = SUPERSAMPLE;
    let weight = 1.0 / (s * s) as f32;
    let mut out = Vec::with_capacity(cell * cell);
    for y in 0..cell {
        for x in 0..cell {
            let mut acc = [0f32; 3];
            for sy in 0..s {
                let row = (y * s + sy) * target.width;
                for sx in 0..s {
                    if let Some(c) = target.color.get(row + x * s + sx) {
                        for k in 0..3 {
                            acc[k] += c[k] * weight;
                        }
                    }
                }
            }
            out.push(acc.map(|v| {
                (color::linear_to_srgb(f64::from(v).clamp(0.0, 1.0)) * 255.0).round() as u8
            }));
        }
    }
    out
}
