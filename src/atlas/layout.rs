//! Drawing the UV layout: background, face fills, polygon edges, chart outlines and
//! flipped-face hatching, all anti-aliased by tiny-skia.

use super::color::{self, ColorScale};
use super::AtlasInput;
use nalgebra::Point2;
use std::collections::BTreeMap;
use tiny_skia::{
    FillRule, FilterQuality, LineJoin, Paint, Path, PathBuilder, Pattern, Pixmap,
    PremultipliedColorU8, Rect, SpreadMode, Stroke, Transform,
};

/// Faces smaller than this (mean edge length in pixels) get no polygon edges: the
/// lines would cover the colours.
const MIN_FACE_PX_FOR_EDGES: f64 = 7.0;

/// Draws the layout square (rows `0 .. res`) of the atlas.
pub(super) fn draw_layout(pm: &mut Pixmap, input: &AtlasInput, scale: &ColorScale, res: u32) {
    let r = res as f32;
    let unit = r / 1024.0;
    draw_background(pm, res);
    let mesh = input.mesh;
    let to_px = |p: &Point2<f64>| {
        (
            (p.x * f64::from(res)) as f32,
            ((1.0 - p.y) * f64::from(res)) as f32,
        )
    };
    let corner_px = |c: usize| -> (f32, f32) {
        input
            .corner_uvs
            .get(c)
            .and_then(|&t| input.uvs.get(t as usize))
            .map_or((0.0, 0.0), to_px)
    };
    let add_face = |pb: &mut PathBuilder, f: usize| {
        let mut corners = mesh.face_range(f).map(corner_px);
        if let Some((x, y)) = corners.next() {
            pb.move_to(x, y);
            for (x, y) in corners {
                pb.line_to(x, y);
            }
            pb.close();
        }
    };

    // Fills, batched by colour: one path per distinct colour, so shared edges inside
    // a batch leave no anti-aliasing seam. A hard-edged pass first covers every pixel
    // centre exactly once; the anti-aliased pass then smooths the edges.
    let mut batches: BTreeMap<[u8; 3], PathBuilder> = BTreeMap::new();
    let mut flipped = PathBuilder::new();
    let mut area_px = 0.0;
    for f in 0..mesh.face_count() {
        let value = input.face_values.get(f).copied().unwrap_or(f64::NAN);
        add_face(batches.entry(scale.color(value)).or_default(), f);
        if input.flipped.get(f).copied().unwrap_or(false) {
            add_face(&mut flipped, f);
        }
        area_px += polygon_area(mesh.face_range(f).map(corner_px));
    }
    for (rgb, pb) in batches {
        if let Some(path) = pb.finish() {
            fill(pm, &path, rgb, false);
            fill(pm, &path, rgb, true);
        }
    }

    let (interior, boundary) = classify_edges(input);
    let segments = |list: &[Segment]| {
        let mut pb = PathBuilder::new();
        for &(a, b) in list {
            let (pa, pb_) = (corner_px(a), corner_px(b));
            pb.move_to(pa.0, pa.1);
            pb.line_to(pb_.0, pb_.1);
        }
        pb.finish()
    };
    let faces = mesh.face_count().max(1) as f64;
    if (area_px / faces).sqrt() >= MIN_FACE_PX_FOR_EDGES {
        if let Some(path) = segments(&interior) {
            stroke(pm, &path, color::outline(), 64, (0.8 * unit).max(0.6));
        }
    }
    let flipped = flipped.finish();
    if let Some(path) = &flipped {
        hatch(pm, path, res);
    }
    if let Some(path) = segments(&boundary) {
        stroke(pm, &path, color::outline(), 255, (1.6 * unit).max(1.0));
    }
    if let Some(path) = &flipped {
        stroke(pm, path, color::marker(), 255, (1.4 * unit).max(1.0));
    }
}

/// Fills the layout square with the background and the 1/8-UV guide lines.
fn draw_background(pm: &mut Pixmap, res: u32) {
    let r = res as f32;
    fill_rect(pm, 0.0, 0.0, r, r, color::background());
    let w = (r / 1024.0).round().max(1.0);
    for i in 1..8 {
        let x = (r * i as f32 / 8.0).round();
        fill_rect(pm, x, 0.0, w, r, color::grid_line());
        fill_rect(pm, 0.0, x, r, w, color::grid_line());
    }
}

/// Fills the axis-aligned rectangle (pixel units) with an opaque colour, no
/// anti-aliasing.
pub(super) fn fill_rect(pm: &mut Pixmap, x: f32, y: f32, w: f32, h: f32, rgb: [u8; 3]) {
    if let Some(rect) = Rect::from_xywh(x, y, w, h) {
        let mut paint = Paint::default();
        paint.set_color_rgba8(rgb[0], rgb[1], rgb[2], 255);
        paint.anti_alias = false;
        pm.fill_rect(rect, &paint, Transform::identity(), None);
    }
}

fn fill(pm: &mut Pixmap, path: &Path, rgb: [u8; 3], anti_alias: bool) {
    let mut paint = Paint::default();
    paint.set_color_rgba8(rgb[0], rgb[1], rgb[2], 255);
    paint.anti_alias = anti_alias;
    pm.fill_path(path, &paint, FillRule::Winding, Transform::identity(), None);
}

/// Strokes `path` anti-aliased in `rgb` at opacity `alpha`, `width` pixels wide,
/// with round joins.
pub(crate) fn stroke(pm: &mut Pixmap, path: &Path, rgb: [u8; 3], alpha: u8, width: f32) {
    let mut paint = Paint::default();
    paint.set_color_rgba8(rgb[0], rgb[1], rgb[2], alpha);
    paint.anti_alias = true;
    let stroke = Stroke {
        width,
        line_join: LineJoin::Round,
        ..Stroke::default()
    };
    pm.stroke_path(path, &paint, &stroke, Transform::identity(), None);
}

/// Period in pixels of the flipped-face hatching at `res`.
pub(super) fn hatch_period(res: u32) -> u32 {
    (res / 128).max(6)
}

/// Covers `path` with diagonal marker-coloured stripes (gaps let the fill show).
pub(super) fn hatch(pm: &mut Pixmap, path: &Path, res: u32) {
    let Some(tile) = hatch_tile(hatch_period(res)) else {
        return;
    };
    let paint = Paint {
        shader: Pattern::new(
            tile.as_ref(),
            SpreadMode::Repeat,
            FilterQuality::Nearest,
            1.0,
            Transform::identity(),
        ),
        anti_alias: true,
        ..Paint::default()
    };
    pm.fill_path(path, &paint, FillRule::Winding, Transform::identity(), None);
}

/// A `period`² tile with one "/" stripe of width 0.4·period, anti-aliased by 4×4
/// supersampling; tiles seamlessly because it depends on `(x + y) mod period`.
fn hatch_tile(period: u32) -> Option<Pixmap> {
    let mut tile = Pixmap::new(period, period)?;
    let p = period as f32;
    let band = 0.4 * p * std::f32::consts::SQRT_2;
    let [r, g, b] = color::marker();
    for (i, px) in tile.pixels_mut().iter_mut().enumerate() {
        let (x, y) = ((i as u32 % period) as f32, (i as u32 / period) as f32);
        let mut hits = 0u32;
        for sy in 0..4 {
            for sx in 0..4 {
                let d = (x + (sx as f32 + 0.5) / 4.0 + y + (sy as f32 + 0.5) / 4.0).rem_euclid(p);
                hits += u32::from(d < band);
            }
        }
        let a = (hits * 255 / 16) as u8;
        let pre = |c: u8| (u32::from(c) * u32::from(a) / 255) as u8;
        *px = PremultipliedColorU8::from_rgba(pre(r), pre(g), pre(b), a)
            .unwrap_or(PremultipliedColorU8::TRANSPARENT);
    }
    Some(tile)
}

/// Absolute shoelace area of a polygon given as pixel points.
fn polygon_area(points: impl Iterator<Item = (f32, f32)>) -> f64 {
    let pts: Vec<(f64, f64)> = points.map(|(x, y)| (f64::from(x), f64::from(y))).collect();
    let twice: f64 = pts
        .iter()
        .zip(pts.iter().cycle().skip(1))
        .map(|(a, b)| a.0 * b.1 - b.0 * a.1)
        .sum();
    0.5 * twice.abs()
}

/// An edge as the pair of global corner indices (start, end) of one face side.
type Segment = (usize, usize);

/// Splits the mesh's edges, as pairs of global corner indices (start, end), into
/// interior edges (two faces of one chart meeting with the same UV corners; listed
/// once) and chart-boundary edges (mesh boundary, UV seam, chart change or
/// non-manifold; listed once per side).
fn classify_edges(input: &AtlasInput) -> (Vec<Segment>, Vec<Segment>) {
    struct Side {
        key: (u32, u32),
        face: usize,
        uv: (u32, u32),
        corners: (usize, usize),
    }
    let mesh = input.mesh;
    let uv_of = |c: usize| input.corner_uvs.get(c).copied().unwrap_or(u32::MAX);
    let vertex_of = |c: usize| mesh.face_vertices.get(c).copied().unwrap_or(u32::MAX);
    let mut sides = Vec::with_capacity(mesh.corner_count());
    for f in 0..mesh.face_count() {
        let range = mesh.face_range(f);
        let n = range.len();
        for i in 0..n {
            let (a, b) = (range.start + i, range.start + (i + 1) % n);
            let (va, vb) = (vertex_of(a), vertex_of(b));
            let (ua, ub) = (uv_of(a), uv_of(b));
            let (key, uv) = if va <= vb {
                ((va, vb), (ua, ub))
            } else {
                ((vb, va), (ub, ua))
            };
            sides.push(Side {
                key,
                face: f,
                uv,
                corners: (a, b),
            });
        }
    }
    sides.sort_unstable_by_key(|s| (s.key, s.face, s.corners));
    let chart = |f: usize| input.face_chart.get(f).copied();
    let (mut interior, mut boundary) = (Vec::new(), Vec::new());
    for group in sides.chunk_by(|a, b| a.key == b.key) {
        match group {
            [s, t] if s.uv == t.uv && chart(s.face) == chart(t.face) => interior.push(s.corners),
            _ => boundary.extend(group.iter().map(|s| s.corners)),
        }
    }
    (interior, boundary)
}
