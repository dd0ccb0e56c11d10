//! A small software rasteriser: perspective-correct triangles into a z-buffered
//! linear-light colour buffer.

use super::checker::Checker;

/// Share of light that is ambient; the rest is Lambert diffuse.
pub(super) const AMBIENT: f32 = 0.32;

/// One projected triangle corner.
#[derive(Debug, Clone, Copy)]
pub(super) struct ScreenVertex {
    /// Pixel coordinates (x right, y down), pixel centres at +0.5.
    pub x: f64,
    pub y: f64,
    /// Reciprocal of the camera-space depth (larger is nearer).
    pub inv_depth: f64,
    /// Texture coordinates.
    pub u: f64,
    pub v: f64,
    /// Cosine between the surface normal and the light direction (signed).
    pub light: f64,
}

/// Colour and depth buffers of one view.
pub(super) struct Target {
    pub width: usize,
    pub height: usize,
    /// Linear-light RGB per pixel, row-major from the top.
    pub color: Vec<[f32; 3]>,
    /// Reciprocal depth per pixel; 0 where nothing was drawn.
    pub depth: Vec<f64>,
}

impl Target {
    pub(super) fn new(width: usize, height: usize, background: impl Fn(usize) -> [f32; 3]) -> Self {
        let mut color = Vec::with_capacity(width * height);
        for y in 0..height {
            let c = background(y);
            color.extend(std::iter::repeat_n(c, width));
        }
        Target {
            width,
            height,
            color,
            depth: vec![0.0; width * height],
        }
    }

    /// Draws one triangle, keeping pixels nearer than what is there. `facing` is +1
    /// when the face's normal points to the camera and −1 when its back is seen
    /// (the light term then uses the flipped normal).
    pub(super) fn triangle(&mut self, v: [ScreenVertex; 3], facing: f64, checker: &Checker) {
        let [a, b, c] = v;
        let area = (b.x - a.x) * (c.y - a.y) - (b.y - a.y) * (c.x - a.x);
        if area.is_nan() || area.abs() <= 1e-12 {
            return;
        }
        let min_x = a.x.min(b.x).min(c.x).floor().max(0.0);
        let max_x = a.x.max(b.x).max(c.x).ceil().min(self.width as f64);
        let min_y = a.y.min(b.y).min(c.y).floor().max(0.0);
        let max_y = a.y.max(b.y).max(c.y).ceil().min(self.height as f64);
        if !(min_x < max_x && min_y < max_y) {
            return;
        }
        // Barycentric weights are affine in screen space: w_i(p) = g_i · p + h_i.
        let inv = 1.0 / area;
        let edge = |p: &ScreenVertex, q: &ScreenVertex| {
            // weight of the vertex opposite edge p→q
            let gx = (p.y - q.y) * inv;
            let gy = (q.x - p.x) * inv;
            let h = (p.x * q.y - p.y * q.x) * inv;
            (gx, gy, h)
        };
        let w = [edge(&b, &c), edge(&c, &a), edge(&a, &b)];
        // Perspective-correct attributes: interpolate attr/depth and 1/depth.
        let iz = [a.inv_depth, b.inv_depth, c.inv_depth];
        let au = [a.u * iz[0], b.u * iz[1], c.u * iz[2]];
        let av = [a.v * iz[0], b.v * iz[1], c.v * iz[2]];
        let al = [a.light * iz[0], b.light * iz[1], c.light * iz[2]];
        let dot =
            |ws: [f64; 3], attr: [f64; 3]| ws[0] * attr[0] + ws[1] * attr[1] + ws[2] * attr[2];
        let uv_at = |ws: [f64; 3]| {
            let z = dot(ws, iz);
            (dot(ws, au) / z, dot(ws, av) / z)
        };
        let dx = [w[0].0, w[1].0, w[2].0];
        let dy = [w[0].1, w[1].1, w[2].1];
        for py in min_y as usize..max_y as usize {
            let y = py as f64 + 0.5;
            let row = py * self.width;
            for px in min_x as usize..max_x as usize {
                let x = px as f64 + 0.5;
                let ws = [0, 1, 2].map(|i| w[i].0 * x + w[i].1 * y + w[i].2);
                if ws[0] < 0.0 || ws[1] < 0.0 || ws[2] < 0.0 {
                    continue;
                }
                let z = dot(ws, iz);
                let idx = row + px;
                let Some(depth) = self.depth.get_mut(idx) else {
                    continue;
                };
                if z <= *depth {
                    continue;
                }
                *depth = z;
                let (u, v) = (dot(ws, au) / z, dot(ws, av) / z);
                let (ux, vx) = uv_at([0, 1, 2].map(|i| ws[i] + dx[i]));
                let (uy, vy) = uv_at([0, 1, 2].map(|i| ws[i] + dy[i]));
                let du = (ux - u).abs() + (uy - u).abs();
                let dv = (vx - v).abs() + (vy - v).abs();
                let light = (facing * dot(ws, al) / z).max(0.0) as f32;
                let shade = AMBIENT + (1.0 - AMBIENT) * light;
                let tex = checker.sample(u, v, du, dv);
                if let Some(out) = self.color.get_mut(idx) {
                    *out = tex.map(|t| t * shade);
                }
            }
        }
    }
}
