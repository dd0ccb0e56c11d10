//! Colour scales of the distortion atlas: OKLab conversion, lightness order,
//! symmetry of the diverging scale.

use polyflat::atlas::{ColorScale, Oklab, ScaleKind};
use polyflat::settings::AtlasMetric;

fn lightness(rgb: [u8; 3]) -> f64 {
    Oklab::from_srgb8(rgb).l
}

#[test]
fn oklab_matches_published_values() {
    // White is L = 1, a = b = 0 by construction of OKLab (Ottosson 2020); tolerance
    // covers the 10-digit matrices.
    let white = Oklab::from_srgb8([255, 255, 255]);
    assert!((white.l - 1.0).abs() < 1e-4, "white L {}", white.l);
    assert!(white.a.abs() < 1e-4 && white.b.abs() < 1e-4);
    // sRGB red is oklab(0.62796 0.22486 0.12585) (CSS Color 4 sample values, from memory).
    let red = Oklab::from_srgb8([255, 0, 0]);
    assert!((red.l - 0.62796).abs() < 1e-3, "red L {}", red.l);
    assert!((red.a - 0.22486).abs() < 1e-3, "red a {}", red.a);
    assert!((red.b - 0.12585).abs() < 1e-3, "red b {}", red.b);
    // Round trip through 8-bit sRGB is exact for in-gamut colours.
    let c = Oklab::from_lch(0.6, 0.1, 40.0);
    let back = Oklab::from_srgb8(c.to_srgb8());
    assert!((back.l - 0.6).abs() < 3e-3 && (back.chroma() - 0.1).abs() < 5e-3);
}

#[test]
fn gamut_mapping_keeps_lightness() {
    // A chroma far outside sRGB is reduced until it fits; lightness stays (within the
    // 8-bit rounding of about 0.003).
    let wild = Oklab::from_lch(0.7, 0.5, 150.0);
    let rgb = wild.to_srgb8();
    assert!((lightness(rgb) - 0.7).abs() < 4e-3, "L {}", lightness(rgb));
}

#[test]
fn sequential_scales_darken_monotonically() {
    // Design (color.rs): L = 0.97 − 0.67 t, so 101 samples step by −0.0067 in L,
    // more than the 8-bit rounding (≈ 0.003): every step must go down.
    for metric in [AtlasMetric::Angle, AtlasMetric::Stretch] {
        let scale = ColorScale::for_metric(metric);
        assert_eq!(scale.kind, ScaleKind::Sequential);
        let ls: Vec<f64> = (0..=100)
            .map(|i| lightness(scale.color(scale.lo + (scale.hi - scale.lo) * i as f64 / 100.0)))
            .collect();
        for w in ls.windows(2) {
            assert!(w[1] < w[0], "{metric}: lightness rises {} → {}", w[0], w[1]);
        }
        assert!(
            (ls[0] - 0.97).abs() < 4e-3,
            "{metric}: ideal end L {}",
            ls[0]
        );
        assert!(
            (ls[100] - 0.30).abs() < 4e-3,
            "{metric}: worst end L {}",
            ls[100]
        );
    }
}

#[test]
fn fixed_ranges_clamp_and_mark_the_ends() {
    let angle = ColorScale::for_metric(AtlasMetric::Angle);
    assert_eq!((angle.lo, angle.hi), (1.0, 3.0));
    assert_eq!(angle.color(7.5), angle.color(3.0));
    assert_eq!(angle.color(f64::NAN), angle.color(3.0));
    assert_eq!(angle.ticks.last().map(|t| t.1), Some("≥3"));
    let stretch = ColorScale::for_metric(AtlasMetric::Stretch);
    assert_eq!((stretch.lo, stretch.hi), (1.0, 2.0));
    assert_eq!(stretch.ticks.last().map(|t| t.1), Some("≥2"));
    let area = ColorScale::for_metric(AtlasMetric::Area);
    assert!((area.hi - 4f64.ln()).abs() < 1e-12 && (area.lo + 4f64.ln()).abs() < 1e-12);
    assert_eq!(area.color(-10.0), area.color(area.lo));
    assert_eq!(area.ticks.first().map(|t| t.1), Some("≤1/4"));
    // Position is linear in the value: 2 is the middle of 1 … 3.
    assert!((angle.position(2.0) - 0.5).abs() < 1e-12);
    assert!((area.position(0.0) - 0.5).abs() < 1e-12);
}

#[test]
fn diverging_scale_is_symmetric_with_a_neutral_middle() {
    let scale = ColorScale::for_metric(AtlasMetric::Area);
    assert_eq!(scale.kind, ScaleKind::Diverging);
    let mid = Oklab::from_srgb8(scale.color(0.0));
    // Design: L 0.95, chroma 0 at the middle (8-bit rounding allows ≈ 0.003).
    assert!((mid.l - 0.95).abs() < 4e-3, "middle L {}", mid.l);
    assert!(mid.chroma() < 4e-3, "middle chroma {}", mid.chroma());
    let mut last_l = mid.l;
    for i in 1..=50 {
        let x = scale.hi * i as f64 / 50.0;
        let grow = Oklab::from_srgb8(scale.color(x));
        let shrink = Oklab::from_srgb8(scale.color(-x));
        // Lightness and chroma depend on |x| only; 8-bit rounding ≈ 0.003 in L and
        // up to ≈ 0.006 in chroma.
        assert!(
            (grow.l - shrink.l).abs() < 5e-3,
            "L {} vs {} at ±{x}",
            grow.l,
            shrink.l
        );
        assert!(
            (grow.chroma() - shrink.chroma()).abs() < 8e-3,
            "chroma {} vs {} at ±{x}",
            grow.chroma(),
            shrink.chroma()
        );
        // Grow is warm (b > 0), shrink is cool (b < 0).
        assert!(grow.b > 0.0 && shrink.b < 0.0);
        // Both halves darken away from the middle (L step 0.011 per sample).
        assert!(grow.l < last_l, "grow half not darkening at {x}");
        last_l = grow.l;
    }
}
