//! The checker texture of the preview.
//!
//! 16 × 16 cells over UV [0, 1]². Light cells shift hue along u (warm ivory at u = 0
//! to pale mint at u = 1) and dark cells along v (slate blue at v = 0 to plum at
//! v = 1), both at constant OKLab lightness, so besides the checker's size and
//! shear a viewer can read where in UV space a patch lies and which way it runs
//! (mirrored charts show the ramps reversed). Our own design.
//!
//! The texture is box-filtered over each pixel's UV footprint: the mean of a square
//! wave over an interval is the difference of its integral (a triangle wave) at the
//! ends divided by the width, and the checker is the product of a u-wave and a
//! v-wave, so its box-filtered mean is the product of the two means (common
//! practice for procedural textures, no published source). This keeps distant,
//! dense checkers grey instead of aliasing into moiré.

use crate::atlas::color::Oklab;

/// Checker cells along each UV axis over [0, 1].
pub const CELLS: f64 = 16.0;
/// OKLab lightness of light cells.
pub const LIGHT_L: f64 = 0.92;
/// OKLab lightness of dark cells.
pub const DARK_L: f64 = 0.50;

const RAMP: usize = 64;

/// Precomputed colour ramps (linear-light sRGB).
pub(super) struct Checker {
    light: [[f32; 3]; RAMP],
    dark: [[f32; 3]; RAMP],
}

impl Checker {
    pub(super) fn new() -> Self {
        let ramp = |f: &dyn Fn(f64) -> Oklab| {
            let mut out = [[0f32; 3]; RAMP];
            for (i, c) in out.iter_mut().enumerate() {
                let rgb = f(i as f64 / (RAMP - 1) as f64).to_srgb8();
                *c = rgb.map(|v| crate::atlas::color::srgb_to_linear(f64::from(v) / 255.0) as f32);
            }
            out
        };
        Checker {
            light: ramp(&|t| Oklab::from_lch(LIGHT_L, 0.045, 85.0 + 80.0 * t)),
            dark: ramp(&|t| Oklab::from_lch(DARK_L, 0.10, 250.0 + 80.0 * t)),
        }
    }

    /// Linear-light colour at (`u`, `v`) averaged over a UV footprint `du` × `dv`.
    pub(super) fn sample(&self, u: f64, v: f64, du: f64, dv: f64) -> [f32; 3] {
        let light_share =
            0.5 * (1.0 + wave_mean(u * CELLS, du * CELLS) * wave_mean(v * CELLS, dv * CELLS));
        let pick = |ramp: &[[f32; 3]; RAMP], t: f64| {
            let i = (t.clamp(0.0, 1.0) * (RAMP - 1) as f64).round() as usize;
            ramp[i.min(RAMP - 1)]
        };
        let (a, b) = (pick(&self.light, u), pick(&self.dark, v));
        let s = light_share as f32;
        [0, 1, 2].map(|k| a[k] * s + b[k] * (1.0 - s))
    }
}

/// Mean over `[x − w/2, x + w/2]` of the square wave that is +1 on `[2k, 2k+1)` and
/// −1 on `[2k+1, 2k+2)`.
fn wave_mean(x: f64, w: f64) -> f64 {
    if w.is_nan() || w <= 1e-6 {
        return if x.rem_euclid(2.0) < 1.0 { 1.0 } else { -1.0 };
    }
    (integral(x + 0.5 * w) - integral(x - 0.5 * w)) / w
}

/// Integral of the square wave from 0: a triangle wave between 0 and 1, period 2.
fn integral(x: f64) -> f64 {
    let p = x.rem_euclid(2.0);
    if p < 1.0 {
        p
    } else {
        2.0 - p
    }
}
