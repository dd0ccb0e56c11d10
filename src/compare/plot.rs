//! `convergence.png`: how each energy's solve approached its own final value.
//!
//! Energies have different units and minima (ARAP and conformal reach 0 only on a
//! developable chart, symmetric Dirichlet is at least 4 per unit area), so raw
//! values on one axis would compare nothing. Each history `E_0 … E_n` (the report's
//! `history`: total energy over charts before the first and after every iteration)
//! is drawn as its *relative excess* `(E_k − E_n) / (E_0 − E_n)`: 1 at the start, 0
//! once converged, on a log axis. The final point is exactly 0 and cannot sit on a
//! log axis, so values below the axis floor are drawn on the floor, whose tick reads
//! `≤1e-N`. The x axis runs to the slowest chart's iteration count; the legend
//! gives each energy's `E_0 → E_n`.
//!
//! Image: [`WIDTH`]×[`height`] pixels (the plot, then one legend row per energy
//! below the axis so no line hides behind it), the atlas legend's dark panel colours, lines
//! in the Okabe–Ito colour-blind-safe palette (Okabe & Ito 2008, "Color Universal
//! Design"), text in the built-in bitmap font.

use image::RgbaImage;
use tiny_skia::{Color, Paint, PathBuilder, Pixmap, Transform};

use crate::atlas::{color, font, to_image};
use crate::error::{Error, Result};

/// Image width in pixels.
pub const WIDTH: u32 = 1000;
/// Height in pixels of the plot and its axis labels, above the legend.
pub const PLOT_HEIGHT: u32 = 620;
/// Height in pixels of one legend row.
const LEGEND_ROW: u32 = 26;
/// Font pixel size.
const K: u32 = 2;
/// Lowest decade the y axis may reach.
const MIN_EXPONENT: i32 = -12;
/// Plot area: left, top, right and bottom edges in pixels.
const LEFT: f32 = 120.0;
const TOP: f32 = 60.0;
const RIGHT: f32 = WIDTH as f32 - 30.0;
const BOTTOM: f32 = PLOT_HEIGHT as f32 - 70.0;

/// Line colours, one per series in order (then repeating): Okabe–Ito orange, sky
/// blue, bluish green, yellow, vermillion, reddish purple, blue.
const PALETTE: [[u8; 3]; 7] = [
    [230, 159, 0],
    [86, 180, 233],
    [0, 158, 115],
    [240, 228, 66],
    [213, 94, 0],
    [204, 121, 167],
    [0, 114, 178],
];

/// One line: a label and an energy history.
#[derive(Debug, Clone)]
pub struct Series<'a> {
    /// Legend label (the energy's name).
    pub label: String,
    /// Energy before the first and after every iteration.
    pub history: &'a [f64],
}

/// Image height in pixels for `series` lines: the plot plus one legend row each.
pub fn height(series: usize) -> u32 {
    PLOT_HEIGHT + LEGEND_ROW * series as u32 + 12
}

/// `(E_k − E_n) / (E_0 − E_n)` for every `k`; all zeros when the energy did not
/// decrease (`E_0 ≤ E_n`) or a value is not finite.
pub fn relative_excess(history: &[f64]) -> Vec<f64> {
    let (Some(&first), Some(&last)) = (history.first(), history.last()) else {
        return Vec::new();
    };
    let span = first - last;
    if !(span > 0.0) || !span.is_finite() {
        return vec![0.0; history.len()];
    }
    history.iter().map(|&e| (e - last) / span).collect()
}

/// The y axis's decades `(lowest, highest)`: from the decade of the smallest
/// positive value (at least [`MIN_EXPONENT`], at most −1) up to that of the largest
/// (at least 0).
pub fn decades(series: &[Vec<f64>]) -> (i32, i32) {
    let positive = series.iter().flatten().copied().filter(|&v| v > 0.0);
    let (lo, hi) = positive.fold((f64::INFINITY, 0.0f64), |(lo, hi), v| {
        (lo.min(v), hi.max(v))
    });
    let low = if lo.is_finite() {
        (lo.log10().floor() as i32).clamp(MIN_EXPONENT, -1)
    } else {
        -1
    };
    let high = if hi > 1.0 {
        hi.log10().ceil() as i32
    } else {
        0
    };
    (low, high)
}

/// Draws the plot of `series`. Errors when there is no series.
pub fn render(series: &[Series]) -> Result<RgbaImage> {
    if series.is_empty() {
        return Err(Error::Image(
            "convergence plot: there is no energy history to draw".to_string(),
        ));
    }
    let mut pm = Pixmap::new(WIDTH, height(series.len()))
        .ok_or_else(|| Error::Image("convergence plot: cannot allocate the image".to_string()))?;
    let [r, g, b] = color::legend_panel();
    pm.fill(Color::from_rgba8(r, g, b, 255));
    let text = color::legend_text();

    let values: Vec<Vec<f64>> = series.iter().map(|s| relative_excess(s.history)).collect();
    let (low, high) = decades(&values);
    let last_x = values
        .iter()
        .map(|v| v.len().saturating_sub(1))
        .max()
        .unwrap_or(0)
        .max(1);
    let px = |k: usize| LEFT + (RIGHT - LEFT) * k as f32 / last_x as f32;
    let py = |v: f64| {
        let e = if v > 0.0 {
            v.log10().max(f64::from(low))
        } else {
            f64::from(low)
        };
        let t = (e - f64::from(low)) / f64::from(high - low);
        BOTTOM - (BOTTOM - TOP) * t as f32
    };

    font::draw(
        &mut pm,
        "energy left to lose: (E(k) - E(end)) / (E(0) - E(end)), log scale",
        LEFT - 60.0,
        18.0,
        K,
        text,
    );
    let step = ((high - low) as usize).div_ceil(8).max(1);
    for e in (low..=high).rev().step_by(step) {
        let y = py(10f64.powi(e));
        line(&mut pm, LEFT, y, RIGHT, y, color::grid_line(), 1.0);
        let label = match e {
            0 => "1".to_string(),
            _ if e == low => format!("≤1e{e}"),
            _ => format!("1e{e}"),
        };
        let w = font::text_width(&label, K) as f32;
        font::draw(&mut pm, &label, LEFT - 10.0 - w, y - 7.0, K, text);
    }
    let xstep = nice_step(last_x);
    for k in (0..=last_x).step_by(xstep) {
        let x = px(k);
        line(&mut pm, x, BOTTOM, x, BOTTOM + 6.0, text, 2.0);
        let label = k.to_string();
        let w = font::text_width(&label, K) as f32;
        font::draw(&mut pm, &label, x - w / 2.0, BOTTOM + 12.0, K, text);
    }
    let xl = "iteration (sum over charts, a stopped chart keeps its last energy)";
    let w = font::text_width(xl, K) as f32;
    font::draw(
        &mut pm,
        xl,
        (LEFT + RIGHT - w) / 2.0,
        BOTTOM + 38.0,
        K,
        text,
    );
    line(&mut pm, LEFT, TOP, LEFT, BOTTOM, text, 2.0);
    line(&mut pm, LEFT, BOTTOM, RIGHT, BOTTOM, text, 2.0);

    for (i, v) in values.iter().enumerate() {
        let rgb = PALETTE[i % PALETTE.len()];
        let mut pb = PathBuilder::new();
        for (k, &y) in v.iter().enumerate() {
            if k == 0 {
                pb.move_to(px(k), py(y));
            } else {
                pb.line_to(px(k), py(y));
            }
        }
        if let Some(path) = pb.finish() {
            stroke(&mut pm, &path, rgb, 3.0);
        }
        let dots = v.len() <= 60;
        for (k, &y) in v.iter().enumerate() {
            if dots || k + 1 == v.len() {
                dot(&mut pm, px(k), py(y), rgb);
            }
        }
    }
    draw_legend(&mut pm, series, text);
    Ok(to_image(&pm))
}

/// Legend rows below the plot: a line swatch per series, its label and first →
/// last energy.
fn draw_legend(pm: &mut Pixmap, series: &[Series], text: [u8; 3]) {
    for (i, s) in series.iter().enumerate() {
        let (first, last) = (
            s.history.first().copied().unwrap_or(0.0),
            s.history.last().copied().unwrap_or(0.0),
        );
        let row = format!(
            "{}: energy {} -> {}",
            s.label,
            significant(first),
            significant(last)
        );
        let y = (PLOT_HEIGHT + LEGEND_ROW * i as u32) as f32;
        let rgb = PALETTE[i % PALETTE.len()];
        line(pm, LEFT, y + 8.0, LEFT + 34.0, y + 8.0, rgb, 3.0);
        dot(pm, LEFT + 17.0, y + 8.0, rgb);
        font::draw(pm, &row, LEFT + 46.0, y + 1.0, K, text);
    }
}

/// A tick step of 1, 2 or 5 × 10^m giving at most 10 ticks over `0 ..= last`.
fn nice_step(last: usize) -> usize {
    let mut step = 1;
    loop {
        for m in [1, 2, 5] {
            if last / (step * m) <= 10 {
                return step * m;
            }
        }
        step *= 10;
    }
}

/// `x` with four significant digits, in exponent form outside 0.001 … 99999.
fn significant(x: f64) -> String {
    let a = x.abs();
    if a == 0.0 {
        "0".to_string()
    } else if (1e-3..1e5).contains(&a) {
        let decimals = (3 - a.log10().floor() as i32).max(0) as usize;
        format!("{x:.decimals$}")
    } else {
        format!("{x:.3e}")
    }
}

fn stroke(pm: &mut Pixmap, path: &tiny_skia::Path, rgb: [u8; 3], width: f32) {
    crate::atlas::stroke(pm, path, rgb, 255, width);
}

fn line(pm: &mut Pixmap, x0: f32, y0: f32, x1: f32, y1: f32, rgb: [u8; 3], width: f32) {
    let mut pb = PathBuilder::new();
    pb.move_to(x0, y0);
    pb.line_to(x1, y1);
    if let Some(path) = pb.finish() {
        stroke(pm, &path, rgb, width);
    }
}

fn dot(pm: &mut Pixmap, x: f32, y: f32, rgb: [u8; 3]) {
    if let Some(path) = PathBuilder::from_circle(x, y, 4.0) {
        let mut paint = Paint::default();
        paint.set_color_rgba8(rgb[0], rgb[1], rgb[2], 255);
        paint.anti_alias = true;
        pm.fill_path(
            &path,
            &paint,
            tiny_skia::FillRule::Winding,
            Transform::identity(),
            None,
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn relative_excess_runs_from_one_to_zero() {
        let v = relative_excess(&[10.0, 6.0, 5.0, 4.0]);
        let expected = [1.0, 2.0 / 6.0, 1.0 / 6.0, 0.0];
        for (a, b) in v.iter().zip(expected) {
            assert!((a - b).abs() < 1e-15, "{v:?}");
        }
        assert_eq!(relative_excess(&[3.0]), vec![0.0]);
        assert_eq!(relative_excess(&[3.0, 3.5]), vec![0.0, 0.0]);
        assert!(relative_excess(&[]).is_empty());
    }

    #[test]
    fn decades_cover_the_smallest_positive_value_within_limits() {
        assert_eq!(decades(&[vec![1.0, 0.03, 0.0]]), (-2, 0));
        assert_eq!(decades(&[vec![1.0, 1e-20, 0.0]]), (MIN_EXPONENT, 0));
        assert_eq!(decades(&[vec![0.0]]), (-1, 0));
        assert_eq!(decades(&[vec![1.0, 0.5], vec![1.0, 2e-7]]), (-7, 0));
    }

    #[test]
    fn ticks_and_numbers_read_well() {
        assert_eq!(nice_step(1), 1);
        assert_eq!(nice_step(10), 1);
        assert_eq!(nice_step(11), 2);
        assert_eq!(nice_step(45), 5);
        assert_eq!(nice_step(200), 20);
        assert_eq!(significant(12.3456), "12.35");
        assert_eq!(significant(0.0), "0");
        assert_eq!(significant(123456.0), "1.235e5");
    }
}
