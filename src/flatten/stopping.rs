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
}

impl Outcome {
    /// Records the energy reached now.
    pub fn record(&mut self, energy: f64) {
        self.history.push(energy);
        self.reached.push(Instant::now());
    }
}
