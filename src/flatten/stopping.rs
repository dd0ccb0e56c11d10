//! Stopping rules and per-stage clocks shared by the solvers.

use super::Stage;
use std::time::{Duration, Instant};

/// When a solver stops (whichever comes first).
#[derive(Debug, Clone, Copy)]
pub(crate) struct StopRules {
    /// Iteration cap.
    pub max_iterations: usize,
    /// Stop when an iteration lowers the energy by at most `tolerance ×` its value.
    pub tolerance: f64,
    /// Stop when every gradient entry is at most this (length units): `tolerance ×`
    /// the mean edge length.
    pub gradient: f64,
}

impl StopRules {
    /// True when going from energy `before` to `after` is too small a decrease to go on.
    pub fn stalled(&self, before: f64, after: f64) -> bool {
        let decrease = before - after;
        decrease.is_nan() || decrease <= self.tolerance * before.abs()
    }

    /// Whether a linearly converging run with energies `history` (start first) is
    /// not on course to stall within `budget` iterations: the decreases over the last
    /// `window` iterations and over the `window` before give the rate ρ per
    /// iteration, and the decrease after `n` more iterations is about `ρⁿ` times the
    /// last; judged from the sixth iteration on (earlier rates are transient), and
    /// never when the rate is not in (0, 1). A window of one suits methods whose
    /// decreases shrink steadily (local–global); quasi-Newton decreases jump from one
    /// iteration to the next, so they are judged over a wider window.
    pub fn too_slow(&self, history: &[f64], budget: usize, window: usize) -> bool {
        let k = history.len().saturating_sub(1);
        let w = window.max(1);
        if k < 6.max(2 * w) {
            return false;
        }
        let (a, b, c) = (history[k - 2 * w], history[k - w], history[k]);
        let (d1, d2) = (a - b, b - c);
        let rate = (d2 / d1).powf(1.0 / w as f64);
        let last = history[k - 1] - c;
        if !(rate > 0.0 && rate < 1.0) || d2 <= 0.0 || last <= 0.0 {
            return false;
        }
        let more = ((self.tolerance * c.abs()) / last).ln() / rate.ln();
        k as f64 + more > budget as f64
    }

    /// True when the largest gradient entry `g_max` is small enough to stop.
    pub fn stationary(&self, g_max: f64) -> bool {
        g_max <= self.gradient
    }
}

/// Time spent per solver stage.
#[derive(Debug, Clone, Default)]
pub(crate) struct Clocks {
    /// Solver set-up: sparse pattern, symbolic analysis, constant matrices.
    pub setup: Duration,
    /// Per-face energy, gradient and Hessian evaluation.
    pub evaluate: Duration,
    /// Gathering per-face terms into the global gradient and matrix.
    pub assemble: Duration,
    /// Numeric factorizations.
    pub factor: Duration,
    /// Number of numeric factorizations (including retries with a larger shift).
    pub factorizations: usize,
    /// Triangular solves.
    pub solve: Duration,
    /// Line search (step bound and trial energies).
    pub line_search: Duration,
    /// When each stage ran (Newton only).
    pub spans: Vec<(Stage, Instant, Instant)>,
}

impl Clocks {
    /// Runs `f` as `stage`: adds its duration to the stage's clock and records when
    /// it ran.
    pub fn time<T>(&mut self, stage: Stage, f: impl FnOnce() -> T) -> T {
        let t = Instant::now();
        let out = f();
        let end = Instant::now();
        let clock = match stage {
            Stage::Evaluate => &mut self.evaluate,
            Stage::Assemble => &mut self.assemble,
            Stage::Factor => &mut self.factor,
            Stage::Solve => &mut self.solve,
            Stage::LineSearch => &mut self.line_search,
            Stage::Setup | Stage::Start | Stage::Analysis => &mut self.setup,
        };
        *clock += end - t;
        self.spans.push((stage, t, end));
        out
    }
}

/// Runs `f` and adds its duration to `clock`.
pub(crate) fn timed<T>(clock: &mut Duration, f: impl FnOnce() -> T) -> T {
    let t = Instant::now();
    let out = f();
    *clock += t.elapsed();
    out
}

/// What a solver run produced besides the UVs.
#[derive(Debug, Clone, Default)]
pub(crate) struct Outcome {
    /// Energy before the first iteration and after each one.
    pub history: Vec<f64>,
    /// When each `history` entry was reached.
    pub reached: Vec<Instant>,
    /// Iterations taken.
    pub iterations: usize,
    /// Time per stage.
    pub clocks: Clocks,
    /// The run stopped on a step that the flip bound shortened (a face about to
    /// flip): a stall there is not convergence.
    pub cut_short: bool,
}

impl Outcome {
    /// This run and then `next`, which started where this one stopped (its first
    /// energy, the same as this run's last, is not repeated).
    pub fn followed_by(mut self, next: Outcome) -> Outcome {
        self.history.extend(next.history.into_iter().skip(1));
        self.reached.extend(next.reached.into_iter().skip(1));
        self.iterations += next.iterations;
        self.cut_short = next.cut_short;
        let (a, b) = (&mut self.clocks, next.clocks);
        a.setup += b.setup;
        a.evaluate += b.evaluate;
        a.assemble += b.assemble;
        a.factor += b.factor;
        a.factorizations += b.factorizations;
        a.solve += b.solve;
        a.line_search += b.line_search;
        a.spans.extend(b.spans);
        self
    }

    /// Records the energy reached now.
    pub fn record(&mut self, energy: f64) {
        self.history.push(energy);
        self.reached.push(Instant::now());
    }
}

#[cfg(test)]
mod tests {
    use super::StopRules;

    /// Energies `1 + ρ^k`, k = 0..=n: decreases shrink by exactly ρ.
    fn geometric(rate: f64, n: i32) -> Vec<f64> {
        (0..=n).map(|k| 1.0 + rate.powi(k)).collect()
    }

    #[test]
    fn too_slow_predicts_from_the_rate_of_linear_convergence() {
        let stop = StopRules {
            max_iterations: 100,
            tolerance: 1e-9,
            gradient: 0.0,
        };
        // Rate 0.3: the decrease falls below 1e-9 of the energy about 12 iterations
        // after the sixth (ln(1e-9 · e₆ / d₆) / ln 0.3 = 11.9), within 40.
        assert!(!stop.too_slow(&geometric(0.3, 6), 40, 1));
        // Rate 0.8: about 80 more (79.6), past 40 but within 100.
        assert!(stop.too_slow(&geometric(0.8, 6), 40, 1));
        assert!(!stop.too_slow(&geometric(0.8, 6), 100, 1));
        // Not judged before the sixth iteration, nor when the energy stops falling.
        assert!(!stop.too_slow(&geometric(0.8, 5), 10, 1));
        assert!(!stop.too_slow(&[3.0, 2.0, 1.5, 1.25, 1.2, 1.2, 1.2], 10, 1));
    }

    #[test]
    fn a_wider_window_judges_uneven_decreases_by_their_trend() {
        let stop = StopRules {
            max_iterations: 100,
            tolerance: 1e-9,
            gradient: 0.0,
        };
        // Decreases 1, 0.1, 0.1, 0.01, 0.01, 0.001, 0.001 (energies above 1): over
        // one iteration the last rate is 1, which says nothing; over two it is
        // 0.1 per two iterations (√0.1 = 0.32 per iteration), so the last decrease
        // (1e-3) falls below 1e-9 of the energy (1) in ln(1e-6) / ln(0.32) = 12 more
        // iterations: 19 in all.
        let decreases = [1.0, 0.1, 0.1, 0.01, 0.01, 0.001, 0.001];
        let mut history = vec![1.0 + decreases.iter().sum::<f64>()];
        for d in decreases {
            history.push(history[history.len() - 1] - d);
        }
        assert!(!stop.too_slow(&history, 40, 2));
        assert!(stop.too_slow(&history, 18, 2));
        // Not judged before two whole windows have passed.
        assert!(!stop.too_slow(&history, 1, 4));
    }
}
