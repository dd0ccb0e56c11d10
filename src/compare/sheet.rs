//! `comparison.png`: the energies' distortion atlases side by side, each under a
//! title strip with the energy's name and its headline numbers.
//!
//! Layout (W = the widest atlas, `k = max(1, W / 256)` font pixels): a title strip
//! of [`strip_height`] rows above every atlas, atlases left to right in the order
//! given with a gutter of `GUTTER · k` pixels between them, all top-aligned. So the
//! image is `Σ widths + (n − 1) · GUTTER · k` wide and `strip + tallest atlas` tall.

use image::RgbaImage;
use tiny_skia::{IntSize, Pixmap, PixmapPaint, Transform};

use crate::atlas::{color, font, to_image};
use crate::error::{Error, Result};
use crate::report::Global;

/// Gutter between atlases, in font pixels.
pub const GUTTER: u32 = 4;

/// One atlas with its title.
#[derive(Debug, Clone)]
pub struct Panel<'a> {
    /// Large title (the energy's name).
    pub title: String,
    /// One line of numbers under the title.
    pub subtitle: String,
    /// The atlas.
    pub image: &'a RgbaImage,
}

/// The numbers a panel's subtitle shows: L2 stretch, mean angle distortion and
/// flipped faces, as the table prints them.
pub fn subtitle(global: &Global) -> String {
    let m = &global.metrics;
    format!(
        "stretch {:.5}, angle {:.4}, flipped {}",
        m.stretch_l2, m.angle_distortion_mean, m.flipped_faces
    )
}

fn font_scale(width: u32) -> u32 {
    (width / 256).max(1)
}

fn title_scale(k: u32) -> u32 {
    (k * 3 / 2).max(2)
}

/// Height in pixels of the title strip for atlases `width` pixels wide.
pub fn strip_height(width: u32) -> u32 {
    let k = font_scale(width);
    4 * k + font::GLYPH_H * title_scale(k) + 3 * k + font::GLYPH_H * k + 4 * k
}

/// Draws the sheet. Errors when there is no panel or the image would be too large.
pub fn render(panels: &[Panel]) -> Result<RgbaImage> {
    let widest = panels
        .iter()
        .map(|p| p.image.width())
        .max()
        .ok_or_else(|| Error::Image("comparison sheet: there is no atlas to show".to_string()))?;
    let k = font_scale(widest);
    let gutter = GUTTER * k;
    let strip = strip_height(widest);
    let width: u32 =
        panels.iter().map(|p| p.image.width()).sum::<u32>() + gutter * (panels.len() as u32 - 1);
    let height = strip + panels.iter().map(|p| p.image.height()).max().unwrap_or(0);
    let mut pm = Pixmap::new(width, height).ok_or_else(|| {
        Error::Image(format!(
            "comparison sheet: cannot allocate a {width}×{height} image"
        ))
    })?;
    let [r, g, b] = color::outline();
    pm.fill(tiny_skia::Color::from_rgba8(r, g, b, 255));

    let mut x = 0;
    for panel in panels {
        let w = panel.image.width();
        draw_strip(&mut pm, panel, x, w, k, strip);
        let atlas = IntSize::from_wh(w, panel.image.height())
            .and_then(|size| Pixmap::from_vec(premultiplied(panel.image), size))
            .ok_or_else(|| Error::Image("comparison sheet: an atlas is empty".to_string()))?;
        pm.draw_pixmap(
            x as i32,
            strip as i32,
            atlas.as_ref(),
            &PixmapPaint::default(),
            Transform::identity(),
            None,
        );
        x += w + gutter;
    }
    Ok(to_image(&pm))
}

/// The title strip (`strip` pixels tall) above an atlas `w` pixels wide whose left
/// edge is at `x`.
fn draw_strip(pm: &mut Pixmap, panel: &Panel, x: u32, w: u32, k: u32, strip: u32) {
    let [r, g, b] = color::legend_panel();
    let mut paint = tiny_skia::Paint::default();
    paint.set_color_rgba8(r, g, b, 255);
    if let Some(rect) = tiny_skia::Rect::from_xywh(x as f32, 0.0, w as f32, strip as f32) {
        pm.fill_rect(rect, &paint, Transform::identity(), None);
    }
    let text = color::legend_text();
    let ts = title_scale(k);
    let margin = (x + 4 * k) as f32;
    font::draw(pm, &panel.title, margin, (4 * k) as f32, ts, text);
    let sub_y = 4 * k + font::GLYPH_H * ts + 3 * k;
    font::draw(pm, &panel.subtitle, margin, sub_y as f32, k, text);
}

/// The image's pixels premultiplied by alpha, as tiny-skia stores them.
fn premultiplied(img: &RgbaImage) -> Vec<u8> {
    img.pixels()
        .flat_map(|p| {
            let [r, g, b, a] = p.0;
            let m = |c: u8| ((u16::from(c) * u16::from(a) + 127) / 255) as u8;
            [m(r), m(g), m(b), a]
        })
        .collect()
}
