//! The legend strip under the layout square.
//!
//! Layout in font pixels `k = max(1, R / 256)` (R = resolution): 4 margin, 8 title
//! row (metric name left; flipped-face swatch and count right), 3 gap, 10 colour
//! bar, 3 tick marks, 1 gap, 8 tick labels, 3 margin — 40k rows in all. The bar
//! spans the width less 10k on each side. Text is legible from R = 256 up.

use super::color::{self, ColorScale};
use super::font;
use super::layout::{fill_rect, hatch, hatch_period, stroke};
use tiny_skia::{PathBuilder, Pixmap, Rect};

/// Font pixel size of the legend at `resolution`.
fn legend_scale(resolution: u32) -> u32 {
    (resolution / 256).max(1)
}

/// Height in pixels of the legend strip below a `resolution`-pixel layout square:
/// `40 · max(1, resolution / 256)` (integer division), e.g. 40 at 256, 160 at 1024.
pub fn legend_height(resolution: u32) -> u32 {
    40 * legend_scale(resolution)
}

fn text(pm: &mut Pixmap, s: &str, x: f32, y: f32, k: u32) {
    font::draw(pm, s, x, y, k, color::legend_text());
}

/// Draws the legend for `scale` below the layout square, with the number of
/// flipped faces beside the hatching swatch.
pub(super) fn draw_legend(pm: &mut Pixmap, scale: &ColorScale, res: u32, flipped: usize) {
    let k = legend_scale(res);
    let kf = k as f32;
    let (w, top) = (res as f32, res as f32);
    fill_rect(
        pm,
        0.0,
        top,
        w,
        legend_height(res) as f32,
        color::legend_panel(),
    );

    let margin = 10.0 * kf;
    text(pm, scale.title, margin, top + 4.0 * kf, k);

    let label = format!("flipped: {flipped}");
    let label_x = w - margin - font::text_width(&label, k) as f32;
    text(pm, &label, label_x, top + 4.0 * kf, k);
    let side = 7.0 * kf;
    let swatch_x = label_x - 2.0 * kf - side;
    fill_rect(
        pm,
        swatch_x,
        top + 4.0 * kf,
        side,
        side,
        scale.color_at(0.0).to_srgb8(),
    );
    if let Some(rect) = Rect::from_xywh(swatch_x, top + 4.0 * kf, side, side) {
        let path = PathBuilder::from_rect(rect);
        if hatch_period(res) <= 7 * k {
            hatch(pm, &path, res);
        }
        stroke(pm, &path, color::marker(), 255, kf.min(2.0));
    }

    let (x0, x1) = (margin, w - margin);
    let bar_y = top + 15.0 * kf;
    let bar_w = (x1 - x0).max(1.0);
    let mut x = x0;
    while x < x1 {
        let p = f64::from((x + 0.5 - x0) / bar_w);
        fill_rect(pm, x, bar_y, 1.0, 10.0 * kf, scale.color_at(p).to_srgb8());
        x += 1.0;
    }
    for &(value, label) in &scale.ticks {
        let tx = (x0 + scale.position(value) as f32 * bar_w).round();
        let tick_x = (tx - (kf / 2.0).floor()).min(x1 - kf).max(x0);
        fill_rect(
            pm,
            tick_x,
            bar_y + 10.0 * kf,
            kf,
            3.0 * kf,
            color::legend_text(),
        );
        let tw = font::text_width(label, k) as f32;
        let lx = (tx - tw / 2.0).min(w - kf - tw).max(kf);
        text(pm, label, lx.round(), bar_y + 14.0 * kf, k);
    }
}
