//! Colour arithmetic in OKLab and the atlas colour scales.
//!
//! OKLab is the perceptual colour space of B. Ottosson (2020), "A perceptual color
//! space for image processing"; its lightness `L` is close to perceived lightness, so
//! a scale whose `L` changes monotonically reads as "more" in one direction. The
//! scales here are our own: curves in OKLCh (lightness, chroma, hue) chosen so every
//! sample lies inside the sRGB gamut (a chroma-reducing gamut map guards the rest
//! without touching `L`).

use crate::settings::AtlasMetric;

/// An OKLab colour: `l` lightness in [0, 1], `a` green–red, `b` blue–yellow.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Oklab {
    /// Perceived lightness, 0 black … 1 white.
    pub l: f64,
    /// Green (negative) to red (positive) axis.
    pub a: f64,
    /// Blue (negative) to yellow (positive) axis.
    pub b: f64,
}

impl Oklab {
    /// A colour from lightness, chroma and hue in degrees (OKLCh).
    pub fn from_lch(l: f64, chroma: f64, hue_degrees: f64) -> Self {
        let h = hue_degrees.to_radians();
        Oklab {
            l,
            a: chroma * h.cos(),
            b: chroma * h.sin(),
        }
    }

    /// Chroma `sqrt(a² + b²)` (0 is grey).
    pub fn chroma(self) -> f64 {
        self.a.hypot(self.b)
    }

    /// Linear-light sRGB components (may fall outside [0, 1] when out of gamut).
    pub fn to_linear_srgb(self) -> [f64; 3] {
        let l_ = self.l + 0.396_337_777_4 * self.a + 0.215_803_757_3 * self.b;
        let m_ = self.l - 0.105_561_345_8 * self.a - 0.063_854_172_8 * self.b;
        let s_ = self.l - 0.089_484_177_5 * self.a - 1.291_485_548_0 * self.b;
        let (l, m, s) = (l_ * l_ * l_, m_ * m_ * m_, s_ * s_ * s_);
        [
            4.076_741_662_1 * l - 3.307_711_591_3 * m + 0.230_969_929_2 * s,
            -1.268_438_004_6 * l + 2.609_757_401_1 * m - 0.341_319_396_5 * s,
            -0.004_196_086_3 * l - 0.703_418_614_7 * m + 1.707_614_701_0 * s,
        ]
    }

    /// The colour of linear-light sRGB components.
    pub fn from_linear_srgb([r, g, b]: [f64; 3]) -> Self {
        let l = 0.412_221_470_8 * r + 0.536_332_536_3 * g + 0.051_445_992_9 * b;
        let m = 0.211_903_498_2 * r + 0.680_699_545_1 * g + 0.107_396_956_6 * b;
        let s = 0.088_302_461_9 * r + 0.281_718_837_6 * g + 0.629_978_700_5 * b;
        let (l_, m_, s_) = (l.cbrt(), m.cbrt(), s.cbrt());
        Oklab {
            l: 0.210_454_255_3 * l_ + 0.793_617_785_0 * m_ - 0.004_072_046_8 * s_,
            a: 1.977_998_495_1 * l_ - 2.428_592_205_0 * m_ + 0.450_593_709_9 * s_,
            b: 0.025_904_037_1 * l_ + 0.782_771_766_2 * m_ - 0.808_675_766_0 * s_,
        }
    }

    /// The colour of an 8-bit sRGB triple.
    pub fn from_srgb8(rgb: [u8; 3]) -> Self {
        Oklab::from_linear_srgb(rgb.map(|c| srgb_to_linear(f64::from(c) / 255.0)))
    }

    /// 8-bit sRGB, reducing chroma (keeping lightness and hue) until the colour is
    /// inside the gamut.
    pub fn to_srgb8(self) -> [u8; 3] {
        let in_gamut = |c: Oklab| {
            c.to_linear_srgb()
                .iter()
                .all(|&v| (-1e-7..=1.0 + 1e-7).contains(&v))
        };
        let mut colour = self;
        if !in_gamut(colour) {
            let (mut lo, mut hi) = (0.0, 1.0);
            for _ in 0..32 {
                let mid = 0.5 * (lo + hi);
                let trial = Oklab {
                    l: self.l,
                    a: self.a * mid,
                    b: self.b * mid,
                };
                if in_gamut(trial) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            colour = Oklab {
                l: self.l,
                a: self.a * lo,
                b: self.b * lo,
            };
        }
        colour
            .to_linear_srgb()
            .map(|v| (linear_to_srgb(v.clamp(0.0, 1.0)) * 255.0).round() as u8)
    }
}

/// sRGB transfer function, encoded value in [0, 1] → linear light (IEC 61966-2-1).
pub fn srgb_to_linear(c: f64) -> f64 {
    if c <= 0.040_45 {
        c / 12.92
    } else {
        ((c + 0.055) / 1.055).powf(2.4)
    }
}

/// Inverse sRGB transfer function, linear light in [0, 1] → encoded value.
pub fn linear_to_srgb(c: f64) -> f64 {
    if c <= 0.003_130_8 {
        c * 12.92
    } else {
        1.055 * c.powf(1.0 / 2.4) - 0.055
    }
}

/// Colour of flipped-face hatching and outlines: a saturated green that neither
/// scale uses (OKLCh 0.78, 0.19, 150°).
pub fn marker() -> [u8; 3] {
    Oklab::from_lch(0.78, 0.19, 150.0).to_srgb8()
}

/// Face colours take one of `STEPS + 1` evenly spaced bar positions (an even
/// count of steps, so the diverging scale keeps its exact neutral middle).
pub const STEPS: f64 = 256.0;

/// How a metric's values are laid along the colour bar.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ScaleKind {
    /// One direction of badness: light (ideal) → dark (worst).
    Sequential,
    /// Two directions around a neutral middle: shrink (blue) ← 0 → grow (orange).
    Diverging,
}

/// A metric's colour scale: value range, colours and legend ticks.
#[derive(Debug, Clone, PartialEq)]
pub struct ColorScale {
    /// Legend title.
    pub title: &'static str,
    /// Sequential or diverging.
    pub kind: ScaleKind,
    /// Value at the left end of the bar; lower values are clamped to it.
    pub lo: f64,
    /// Value at the right end of the bar; higher values are clamped to it.
    pub hi: f64,
    /// Tick values (metric units) and their labels, left to right.
    pub ticks: Vec<(f64, &'static str)>,
}

impl ColorScale {
    /// The fixed scale of `metric`.
    ///
    /// - `angle` (`σ1/σ2`): linear, 1 … 3; values ≥ 3 share the end colour.
    /// - `stretch` (L2 stretch, Sander et al. 2001): linear, 1 … 2.
    /// - `area` (signed `ln(σ1'σ2')`): linear in the logarithm, ±ln 4, so the ticks
    ///   read as area ratios ¼, ½, 1, 2, 4.
    pub fn for_metric(metric: AtlasMetric) -> Self {
        match metric {
            AtlasMetric::Angle => ColorScale {
                title: "angle distortion σ1/σ2",
                kind: ScaleKind::Sequential,
                lo: 1.0,
                hi: 3.0,
                ticks: vec![
                    (1.0, "1"),
                    (1.5, "1.5"),
                    (2.0, "2"),
                    (2.5, "2.5"),
                    (3.0, "≥3"),
                ],
            },
            AtlasMetric::Stretch => ColorScale {
                title: "L2 stretch",
                kind: ScaleKind::Sequential,
                lo: 1.0,
                hi: 2.0,
                ticks: vec![
                    (1.0, "1"),
                    (1.25, "1.25"),
                    (1.5, "1.5"),
                    (1.75, "1.75"),
                    (2.0, "≥2"),
                ],
            },
            AtlasMetric::Area => {
                let (l2, l4) = (2f64.ln(), 4f64.ln());
                ColorScale {
                    title: "area ratio uv/surface",
                    kind: ScaleKind::Diverging,
                    lo: -l4,
                    hi: l4,
                    ticks: vec![
                        (-l4, "≤1/4"),
                        (-l2, "1/2"),
                        (0.0, "1"),
                        (l2, "2"),
                        (l4, "≥4"),
                    ],
                }
            }
        }
    }

    /// Where `value` sits along the bar, 0 (left) … 1 (right), clamped. A value that
    /// is not a number (a degenerate face) is treated as the worst: the right end.
    pub fn position(&self, value: f64) -> f64 {
        if value.is_nan() {
            return 1.0;
        }
        ((value - self.lo) / (self.hi - self.lo)).clamp(0.0, 1.0)
    }

    /// The colour at bar position `p` in [0, 1] (clamped).
    pub fn color_at(&self, p: f64) -> Oklab {
        let p = if p.is_nan() { 1.0 } else { p.clamp(0.0, 1.0) };
        match self.kind {
            ScaleKind::Sequential => sequential(p),
            ScaleKind::Diverging => diverging(2.0 * p - 1.0),
        }
    }

    /// The 8-bit sRGB colour of a face with metric `value`: the colour at its bar
    /// position rounded to one of [`STEPS`]` + 1` evenly spaced steps (finer than
    /// 8-bit colour resolves along the scale; it lets the atlas fill faces in a
    /// few hundred batches).
    pub fn color(&self, value: f64) -> [u8; 3] {
        let step = (self.position(value) * STEPS).round() / STEPS;
        self.color_at(step).to_srgb8()
    }
}

/// Sequential curve, `t` in [0, 1]: cream (L 0.97) through amber and raspberry to
/// deep aubergine (L 0.30). Lightness falls linearly; hue turns from 100° to −50°;
/// chroma rises from 0.035 to a plateau near 0.12.
fn sequential(t: f64) -> Oklab {
    Oklab::from_lch(
        0.97 - 0.67 * t,
        0.035 + 0.23 * t * (1.0 - 0.62 * t),
        100.0 - 150.0 * t,
    )
}

/// Diverging curve, `s` in [−1, 1]: neutral light grey (L 0.95) at 0, blue (255°)
/// towards −1, orange (55°) towards +1; lightness and chroma depend on `|s|` only, so
/// the two halves are equally strong.
fn diverging(s: f64) -> Oklab {
    let m = s.abs();
    let hue = if s < 0.0 { 255.0 } else { 55.0 };
    Oklab::from_lch(0.95 - 0.55 * m, 0.30 * m * (1.0 - 0.68 * m), hue)
}

/// Empty texture space (OKLab L 0.26, a hint of blue).
pub fn background() -> [u8; 3] {
    Oklab {
        l: 0.26,
        a: -0.004,
        b: -0.012,
    }
    .to_srgb8()
}

/// Guide lines every 1/8 of UV across empty space (OKLab L 0.31).
pub fn grid_line() -> [u8; 3] {
    Oklab {
        l: 0.31,
        a: -0.004,
        b: -0.012,
    }
    .to_srgb8()
}

/// Chart outlines (OKLab L 0.16, near black).
pub fn outline() -> [u8; 3] {
    Oklab {
        l: 0.16,
        a: 0.0,
        b: -0.006,
    }
    .to_srgb8()
}

/// The legend strip's panel (OKLab L 0.20).
pub fn legend_panel() -> [u8; 3] {
    Oklab {
        l: 0.20,
        a: -0.003,
        b: -0.010,
    }
    .to_srgb8()
}

/// Legend text and tick marks (OKLab L 0.92).
pub fn legend_text() -> [u8; 3] {
    Oklab {
        l: 0.92,
        a: 0.0,
        b: 0.004,
    }
    .to_srgb8()
}
