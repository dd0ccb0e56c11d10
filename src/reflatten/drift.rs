//! Drift: how far each face corner's UV moved from the previous layout, in texels.
//!
//! A corner's drift is `|uv_new − uv_previous| × resolution` (the texture is
//! `resolution` texels on a side, so one UV unit is `resolution` texels). Corners of
//! new faces have no previous UV and no drift. Percentiles use the nearest-rank
//! definition (the smallest value with at least p % of the values at or below it).

use serde::{Deserialize, Serialize};

/// Summary of a set of corner drifts, in texels.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DriftSummary {
    /// Corners measured.
    pub corners: usize,
    /// Mean drift.
    pub mean: f64,
    /// Median (50th percentile, nearest rank).
    pub median: f64,
    /// 95th percentile (nearest rank).
    pub p95: f64,
    /// Largest drift.
    pub max: f64,
}

/// Summarises `values` (texels); all zero when empty.
pub fn summarize(values: &[f64]) -> DriftSummary {
    let mut sorted: Vec<f64> = values.iter().copied().filter(|v| v.is_finite()).collect();
    sorted.sort_unstable_by(f64::total_cmp);
    let n = sorted.len();
    if n == 0 {
        return DriftSummary {
            corners: 0,
            mean: 0.0,
            median: 0.0,
            p95: 0.0,
            max: 0.0,
        };
    }
    let rank = |p: f64| sorted[((p * n as f64).ceil() as usize).clamp(1, n) - 1];
    DriftSummary {
        corners: n,
        mean: sorted.iter().sum::<f64>() / n as f64,
        median: rank(0.5),
        p95: rank(0.95),
        max: sorted[n - 1],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nearest_rank_percentiles() {
        // Expected by hand: 20 values 1..=20; median rank ceil(10) = 10, p95 rank 19.
        let v: Vec<f64> = (1..=20).map(f64::from).collect();
        let s = summarize(&v);
        assert_eq!((s.corners, s.median, s.p95, s.max), (20, 10.0, 19.0, 20.0));
        assert!((s.mean - 10.5).abs() < 1e-12);
        assert_eq!(summarize(&[]).corners, 0);
    }
}
