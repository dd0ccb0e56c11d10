//! The distortion atlas: a PNG of the packed UV layout with every face filled by
//! its distortion, chart outlines, flipped faces hatched, and a legend below.
//!
//! Image layout (`resolution` = R pixels):
//!
//! - rows `0 .. R`: the UV unit square, u to the right, v up (UV (0, 0) is the
//!   bottom-left pixel corner). Empty texture space is dark grey with a lighter line
//!   every 1/8 of UV; geometry outside [0, 1]² is cut off.
//! - rows `R .. R + legend_height(R)`: the legend strip (metric name, colour bar
//!   with labelled ticks, the flipped-face swatch with the count of flipped faces).
//!
//! So the PNG is R wide and `R + legend_height(R)` tall.

mod check;
pub mod color;
pub mod font;
mod layout;
mod legend;
mod png;

pub(crate) use check::check_faces;
pub use color::{ColorScale, Oklab, ScaleKind};
pub(crate) use layout::stroke;
pub use legend::legend_height;
pub use png::{png_bytes, write_png};

use crate::error::{Error, Result};
use crate::mesh::PolyMesh;
use crate::settings::AtlasMetric;
use image::RgbaImage;
use nalgebra::Point2;
use tiny_skia::Pixmap;

/// Smallest atlas resolution accepted, in pixels.
pub const MIN_RESOLUTION: u32 = 16;
/// Largest atlas resolution accepted, in pixels (a 16384² RGBA image is 1 GiB).
pub const MAX_RESOLUTION: u32 = 16384;

/// Everything the atlas draws, as plain data (indices are 0-based).
#[derive(Debug, Clone, Copy)]
pub struct AtlasInput<'a> {
    /// The mesh (only its face layout is used).
    pub mesh: &'a PolyMesh,
    /// Packed UV positions, unit square = the texture.
    pub uvs: &'a [Point2<f64>],
    /// Per face corner, the index into `uvs` (same layout as `mesh.face_vertices`).
    pub corner_uvs: &'a [u32],
    /// Per face, the value of `metric`: `σ1/σ2` for angle, the signed `ln(σ1'σ2')`
    /// for area (negative: smaller in UV than on the surface), L2 stretch for stretch.
    pub face_values: &'a [f64],
    /// Which metric `face_values` holds (chooses the colour scale and legend).
    pub metric: AtlasMetric,
    /// Per face, whether it is flipped (drawn hatched with a green outline).
    pub flipped: &'a [bool],
    /// Per face, its chart id (edges between different charts are outlined).
    pub face_chart: &'a [u32],
}

/// Draws the distortion atlas of `input` at `resolution`×`resolution` pixels plus the
/// legend strip below (`legend_height(resolution)` rows).
///
/// Errors (one sentence naming the face or option) when the resolution is outside
/// 16 … 16384 or when the per-face and per-corner arrays disagree with the mesh.
pub fn render_atlas(input: &AtlasInput, resolution: u32) -> Result<RgbaImage> {
    if !(MIN_RESOLUTION..=MAX_RESOLUTION).contains(&resolution) {
        return Err(Error::Image(format!(
            "atlas: --resolution must be between {MIN_RESOLUTION} and {MAX_RESOLUTION} pixels, got {resolution}"
        )));
    }
    let mesh = input.mesh;
    check_faces("atlas", mesh, input.uvs, input.corner_uvs)?;
    check::check_per_face("atlas", "face_values", input.face_values.len(), mesh)?;
    check::check_per_face("atlas", "flipped", input.flipped.len(), mesh)?;
    check::check_per_face("atlas", "face_chart", input.face_chart.len(), mesh)?;

    let height = resolution + legend_height(resolution);
    let mut pixmap = Pixmap::new(resolution, height).ok_or_else(|| {
        Error::Image(format!(
            "atlas: cannot allocate a {resolution}×{height} image"
        ))
    })?;
    let scale = ColorScale::for_metric(input.metric);
    layout::draw_layout(&mut pixmap, input, &scale, resolution);
    let flipped = input.flipped.iter().filter(|&&f| f).count();
    legend::draw_legend(&mut pixmap, &scale, resolution, flipped);
    Ok(to_image(&pixmap))
}

/// Converts a (premultiplied) pixmap into a straight-alpha RGBA image.
pub fn to_image(pixmap: &Pixmap) -> RgbaImage {
    let mut img = RgbaImage::new(pixmap.width(), pixmap.height());
    for (dst, src) in img.pixels_mut().zip(pixmap.pixels()) {
        let c = src.demultiply();
        dst.0 = [c.red(), c.green(), c.blue(), c.alpha()];
    }
    img
}
