//! Flattening engine: minimises a distortion energy over one chart's UVs (DESIGN §2).
//!
//! The objective is `E(W) = Σ_f A_f ψ(J_f) + λ Σ_f ‖P_f D_f W_f‖²_F` over the polygon
//! faces themselves (no triangulation), with `J_f = (G2_f W_f)ᵀ` the face Jacobian of
//! de Goes, Butts & Desbrun (2020). Pieces:
//!
//! - [`energy`]: the densities ψ (`arap`, `symmetric-dirichlet`, `conformal`), one
//!   file each behind the [`energy::Energy`] trait;
//! - [`face_term`]: one face's term, gradient and projected Hessian;
//! - [`injectivity`]: flip tests and the flip-free step bound;
//! - private: chart checks and face tables, the sparse Newton system and its
//!   Cholesky factorization, the starting layouts (Tutte, least-squares conformal)
//!   and the solvers (projected Newton, L-BFGS, ARAP local–global).
//!
//! [`solve_chart`] is the entry point.

pub mod energy;
pub mod face_term;
pub mod injectivity;

mod assembly;
mod chart;
mod cholesky;
mod initial;
mod laplacian_system;
mod lbfgs;
mod local_global;
mod newton;
mod objective;
mod ordering;
mod preconditioned;
mod stopping;

use crate::error::{Error, Result};
use crate::mesh::PolyMesh;
use crate::progress::Progress;
use crate::settings::{EnergyKind, Settings, SolverKind};
use chart::Chart;
use nalgebra::Point2;
use objective::Objective;
pub use ordering::Ordering;
use serde::Serialize;
use std::time::Instant;
use stopping::{Outcome, StopRules};

/// What to minimise and how.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolveOptions {
    /// Distortion energy ψ.
    pub energy: EnergyKind,
    /// Optimiser; [`SolverKind::Auto`] picks the fastest for the energy.
    pub solver: SolverKind,
    /// Weight λ ≥ 0 of the projection penalty.
    pub projection_weight: f64,
    /// Iteration cap.
    pub max_iterations: usize,
    /// Stop when an iteration lowers the energy by at most `tolerance ×` its value
    /// above the isometric minimum `Σ_f A_f min ψ`, or when every gradient entry is at
    /// most `tolerance ×` the mean edge length.
    pub tolerance: f64,
    /// Chart id used in error messages.
    pub chart_id: usize,
    /// Fill-reducing ordering of the Newton system's factorization (the default is
    /// the fastest measured by `examples/bench_flatten.rs`).
    pub ordering: Ordering,
}

impl SolveOptions {
    /// The solver options of a job's settings, for chart `chart_id`.
    pub fn from_settings(settings: &Settings, chart_id: usize) -> Self {
        SolveOptions {
            energy: settings.energy,
            solver: settings.solver,
            projection_weight: settings.projection_weight,
            max_iterations: settings.max_iterations,
            tolerance: settings.tolerance,
            chart_id,
            ordering: Ordering::default(),
        }
    }
}

impl Default for SolveOptions {
    fn default() -> Self {
        SolveOptions::from_settings(&Settings::default(), 0)
    }
}

/// The starting layout.
#[derive(Debug, Clone, Copy)]
pub enum Start<'a> {
    /// Uniform-weight Tutte embedding (flip-free, convex faces).
    Tutte,
    /// Least-squares conformal map with two far-apart boundary pins.
    Conformal,
    /// Given per-vertex UVs (a warm start); one per chart vertex.
    Given(&'a [Point2<f64>]),
}

/// Which start a solution actually began from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum StartKind {
    /// Uniform-weight Tutte embedding.
    Tutte,
    /// Least-squares conformal map.
    Conformal,
    /// The given UVs.
    Given,
}

/// Wall-clock time per stage, in milliseconds.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct StageTimings {
    /// Checks, per-face precomputation, sparse pattern and symbolic analysis.
    pub setup_ms: f64,
    /// Of `setup_ms`: the Newton system's symbolic analysis (ordering included).
    pub analyse_ms: f64,
    /// Stored entries of the Newton system's Cholesky factor (0 for other solvers).
    pub factor_entries: usize,
    /// Computing the starting layout.
    pub start_ms: f64,
    /// Per-face energy, gradient and Hessian evaluation.
    pub evaluate_ms: f64,
    /// Gathering per-face terms into the global gradient and matrix.
    pub assemble_ms: f64,
    /// Numeric factorizations.
    pub factor_ms: f64,
    /// Number of numeric factorizations.
    pub factorizations: usize,
    /// Triangular solves.
    pub solve_ms: f64,
    /// Line searches (step bound and trial energies).
    pub line_search_ms: f64,
    /// The whole call.
    pub total_ms: f64,
}

/// A stage of a solve, for [`ChartSolution::spans`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stage {
    /// Checks and per-face precomputation.
    Setup,
    /// The starting layout (its own linear solve included).
    Start,
    /// The Newton system's pattern and symbolic analysis.
    Analysis,
    /// Per-face energy, gradient and Hessian evaluation.
    Evaluate,
    /// Gathering per-face terms into the global gradient and matrix.
    Assemble,
    /// One numeric factorization.
    Factor,
    /// Triangular solves.
    Solve,
    /// One line search.
    LineSearch,
}

/// When one stage ran, in milliseconds since the solve began.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StageSpan {
    /// Which stage.
    pub stage: Stage,
    /// Start, milliseconds since the call began.
    pub start_ms: f64,
    /// End, milliseconds since the call began.
    pub end_ms: f64,
}

/// The solved layout of one chart.
#[derive(Debug, Clone, PartialEq)]
pub struct ChartSolution {
    /// UV per chart vertex, scaled so the UV area equals the 3D area.
    pub uvs: Vec<Point2<f64>>,
    /// Energy of the start and after each iteration (before the final scaling).
    pub history: Vec<f64>,
    /// Milliseconds since the call began at which each `history` entry was reached.
    pub history_ms: Vec<f64>,
    /// Iterations taken.
    pub iterations: usize,
    /// The solver actually used.
    pub solver: SolverKind,
    /// The start actually used.
    pub start: StartKind,
    /// Faces flipped in the result (always 0 for barrier energies).
    pub flipped_faces: usize,
    /// Time per stage.
    pub timings: StageTimings,
    /// When each stage ran: set-up, start, and for Newton its analysis and every
    /// evaluation, assembly, factorization, solve and line search.
    pub spans: Vec<StageSpan>,
    /// Sentences about fallbacks taken (e.g. a rejected warm start).
    pub notes: Vec<String>,
}

/// The solver [`SolverKind::Auto`] starts with for `energy`, as measured by
/// `examples/bench_flatten.rs -- --crossover` (README, Performance): a solver whose
/// iterations are cheap because its matrix `L(λ)` is factored once (local–global for
/// `arap`, Laplacian-preconditioned L-BFGS for `symmetric-dirichlet`), for at most
/// [`CHEAP_BUDGET`] iterations; a chart it has not converged by then (or sooner,
/// when its rate of convergence says it would not, or when it stalls against the
/// flip bound) is finished by Newton from where it stopped. On smooth charts the
/// cheap solvers converge in 12–25 iterations, taking 0.44–1.04 of Newton's time
/// from 1 600 faces up, and per-face work, which a quad mesh halves, is a larger
/// share of their time than of Newton's. `conformal` is quadratic, so Newton
/// finishes in one step.
pub fn auto_solver(energy: EnergyKind) -> SolverKind {
    match energy {
        EnergyKind::Arap => SolverKind::LocalGlobal,
        EnergyKind::SymmetricDirichlet => SolverKind::LaplacianLbfgs,
        EnergyKind::Conformal => SolverKind::Newton,
    }
}

/// Iterations `auto` allows its first solver (local–global, Laplacian-preconditioned
/// L-BFGS) before it hands over to Newton (sooner when its rate says it would not
/// stall within them): smooth charts converge in 12–28 (`bench_flatten --
/// --crossover`), so a chart still going after 40 is one where the cheap solver is
/// slow.
pub const CHEAP_BUDGET: usize = 40;

/// Flattens one chart: a disk, or a genus-0 surface with holes, whose faces have any
/// arity ≥ 3 and need not be planar.
///
/// Starts from `start`, minimises `opts.energy` with the chosen solver, then scales
/// the layout so that its UV area equals the chart's 3D area (DESIGN §2 Scale). For
/// barrier energies (symmetric Dirichlet) the result has no flipped face; a start
/// with flipped faces is replaced by the Tutte embedding (said in `notes`).
///
/// Errors (`Error::Solve`, one sentence naming the face or vertex): a chart that is
/// not a disk or genus-0 with holes, a degenerate face, a warm start of the wrong
/// length or with non-finite values, invalid options, a solver failure.
pub fn solve_chart(
    chart: &PolyMesh,
    opts: &SolveOptions,
    start: Start,
    progress: &dyn Progress,
) -> Result<ChartSolution> {
    let began = Instant::now();
    let fail = |message: String| Error::Solve {
        chart: opts.chart_id,
        message,
    };
    check_options(opts).map_err(fail)?;
    let prepared = Chart::new(chart, opts.projection_weight).map_err(fail)?;
    let energy = energy::energy(opts.energy);
    let objective = Objective::new(&prepared, energy);
    let mut notes = Vec::new();
    let mut timings = StageTimings {
        setup_ms: ms(began.elapsed()),
        ..StageTimings::default()
    };

    let start_clock = Instant::now();
    let mut spans = vec![(Stage::Setup, began, start_clock)];
    let (mut uv, mut start_kind) = match start {
        Start::Tutte => (initial::tutte(&prepared).map_err(fail)?, StartKind::Tutte),
        Start::Conformal => (
            initial::least_squares_conformal(&prepared, opts.ordering).map_err(fail)?,
            StartKind::Conformal,
        ),
        Start::Given(given) => (given_start(chart, given).map_err(fail)?, StartKind::Given),
    };
    scale_to_area(&prepared, &mut uv).map_err(fail)?;
    if energy.is_barrier() {
        let flipped = objective.flipped_faces(&uv);
        if flipped > 0 {
            if start_kind == StartKind::Tutte {
                return Err(fail(format!(
                    "the Tutte embedding flips {flipped} faces, so {} cannot start",
                    opts.energy
                )));
            }
            notes.push(format!(
                "the {} start flips {flipped} faces, which {} cannot start from; started from the Tutte embedding instead",
                start_name(start_kind),
                opts.energy
            ));
            uv = initial::tutte(&prepared).map_err(fail)?;
            scale_to_area(&prepared, &mut uv).map_err(fail)?;
            start_kind = StartKind::Tutte;
            let flipped = objective.flipped_faces(&uv);
            if flipped > 0 {
                return Err(fail(format!(
                    "the Tutte embedding flips {flipped} faces, so {} cannot start",
                    opts.energy
                )));
            }
        }
    }
    timings.start_ms = ms(start_clock.elapsed());
    spans.push((Stage::Start, start_clock, Instant::now()));

    let mut solver = match opts.solver {
        SolverKind::Auto => auto_solver(opts.energy),
        s => s,
    };
    if solver == SolverKind::LocalGlobal && opts.energy != EnergyKind::Arap {
        let chosen = SolverKind::Newton;
        notes.push(format!(
            "the {} solver works only with arap; used {chosen} for {}",
            SolverKind::LocalGlobal,
            opts.energy
        ));
        solver = chosen;
    }
    let pins: Vec<u32> = match opts.energy {
        EnergyKind::Conformal => initial::far_pins(&prepared).to_vec(),
        _ => vec![prepared.loops[0][0]],
    };
    let shift = opts.energy != EnergyKind::Conformal;
    let outcome = if opts.solver == SolverKind::Auto && solver != SolverKind::Newton {
        let (outcome, finished) = run_with_handoff(
            &objective,
            solver,
            &pins,
            opts,
            &mut uv,
            (&mut timings, &mut notes),
            progress,
        )
        .map_err(fail)?;
        solver = finished;
        outcome
    } else {
        run_solver(
            &objective,
            solver,
            &pins,
            shift,
            opts,
            &mut uv,
            &mut timings,
            progress,
        )
        .map_err(fail)?
    };
    scale_to_area(&prepared, &mut uv).map_err(fail)?;
    blocked_note(solver, &outcome, &mut notes);
    let run = Run {
        outcome,
        solver,
        start: start_kind,
        notes,
        timings,
        began,
        spans,
    };
    Ok(solution(&objective, uv, run))
}

/// Minimises `opts.energy` over one chart from the given per-vertex UVs `start`,
/// holding the chart vertices `held` fixed where `start` puts them (a local
/// re-flattening: the rest of the chart adapts, the held part does not move).
///
/// Unlike [`solve_chart`] the result is not rescaled: give `start` at the scale the
/// energy should see (UV area about the 3D area). With no held vertex this is a
/// warm-started solve with one pin. Local–global is replaced by Newton (it holds a
/// single pin only); `auto` means Newton; the other solvers are used as chosen.
///
/// Errors as [`solve_chart`], and when a held index is past the chart's vertices or,
/// for a barrier energy, when `start` flips a face (the caller decides what else to
/// try; there is no silent fallback, which would move held vertices).
pub fn solve_chart_held(
    chart: &PolyMesh,
    opts: &SolveOptions,
    start: &[Point2<f64>],
    held: &[u32],
    progress: &dyn Progress,
) -> Result<ChartSolution> {
    let began = Instant::now();
    let fail = |message: String| Error::Solve {
        chart: opts.chart_id,
        message,
    };
    check_options(opts).map_err(fail)?;
    let prepared = Chart::new(chart, opts.projection_weight).map_err(fail)?;
    let energy = energy::energy(opts.energy);
    let objective = Objective::new(&prepared, energy);
    let mut uv = given_start(chart, start).map_err(fail)?;
    if let Some(&v) = held.iter().find(|&&v| v as usize >= uv.len()) {
        return Err(fail(format!(
            "held vertex {} is past the chart's {} vertices",
            v as u64 + 1,
            uv.len()
        )));
    }
    if energy.is_barrier() {
        let flipped = objective.flipped_faces(&uv);
        if flipped > 0 {
            return Err(fail(format!(
                "the given start flips {flipped} faces, so {} cannot start from it",
                opts.energy
            )));
        }
    }
    let setup_end = Instant::now();
    let mut timings = StageTimings {
        setup_ms: ms(setup_end - began),
        ..StageTimings::default()
    };
    let mut notes = Vec::new();
    let solver = match opts.solver {
        SolverKind::Lbfgs => SolverKind::Lbfgs,
        SolverKind::LaplacianLbfgs => SolverKind::LaplacianLbfgs,
        SolverKind::LocalGlobal => {
            notes.push(format!(
                "the {} solver holds one vertex only; used {} to hold {}",
                SolverKind::LocalGlobal,
                SolverKind::Newton,
                held.len()
            ));
            SolverKind::Newton
        }
        _ => SolverKind::Newton,
    };
    let pins: Vec<u32> = if held.is_empty() {
        vec![prepared.loops[0][0]]
    } else {
        held.to_vec()
    };
    // Two held vertices fix the rotation; below that a small shift keeps Newton's
    // system definite.
    let shift = pins.len() < 2;
    let outcome = run_solver(
        &objective,
        solver,
        &pins,
        shift,
        opts,
        &mut uv,
        &mut timings,
        progress,
    )
    .map_err(fail)?;
    blocked_note(solver, &outcome, &mut notes);
    let run = Run {
        outcome,
        solver,
        start: StartKind::Given,
        notes,
        timings,
        began,
        spans: vec![(Stage::Setup, began, setup_end)],
    };
    Ok(solution(&objective, uv, run))
}

/// Checks the options every solve needs.
fn check_options(opts: &SolveOptions) -> std::result::Result<(), String> {
    if !(opts.projection_weight.is_finite() && opts.projection_weight >= 0.0) {
        return Err(format!(
            "the projection weight must be a finite number ≥ 0, got {}",
            opts.projection_weight
        ));
    }
    if !(opts.tolerance.is_finite() && opts.tolerance >= 0.0) {
        return Err(format!(
            "the tolerance must be a finite number ≥ 0, got {}",
            opts.tolerance
        ));
    }
    Ok(())
}

/// A given warm start as solver UVs: one finite UV per chart vertex.
fn given_start(
    chart: &PolyMesh,
    given: &[Point2<f64>],
) -> std::result::Result<Vec<[f64; 2]>, String> {
    if given.len() != chart.vertex_count() {
        return Err(format!(
            "the warm start has {} UVs but the chart has {} vertices",
            given.len(),
            chart.vertex_count()
        ));
    }
    if let Some(v) = given
        .iter()
        .position(|p| !(p.x.is_finite() && p.y.is_finite()))
    {
        return Err(format!(
            "the warm start's UV of vertex {} is not finite",
            v + 1
        ));
    }
    Ok(given.iter().map(|p| [p.x, p.y]).collect())
}

/// Runs `solver` from `uv` (updated in place) with `pins` held, adding its set-up
/// time to `timings`.
#[allow(clippy::too_many_arguments)]
fn run_solver(
    objective: &Objective,
    solver: SolverKind,
    pins: &[u32],
    shift: bool,
    opts: &SolveOptions,
    uv: &mut [[f64; 2]],
    timings: &mut StageTimings,
    progress: &dyn Progress,
) -> std::result::Result<Outcome, String> {
    let stop = StopRules {
        max_iterations: opts.max_iterations,
        tolerance: opts.tolerance,
        gradient: opts.tolerance * objective.chart.mean_edge,
    };
    progress.begin("flatten", opts.max_iterations as u64);
    let setup_clock = Instant::now();
    let outcome = match solver {
        SolverKind::LocalGlobal => local_global::run(objective, pins[0], uv, &stop, None, progress),
        SolverKind::Lbfgs => lbfgs::run(objective, pins, uv, &stop, progress),
        SolverKind::LaplacianLbfgs => {
            preconditioned::run(objective, pins, uv, &stop, None, progress)
        }
        _ => newton::Newton::new(objective, pins, shift, opts.ordering).and_then(|mut n| {
            timings.setup_ms += ms(setup_clock.elapsed());
            let (analysis_began, analysis_ended) = n.analysis_span();
            timings.analyse_ms += ms(analysis_ended - analysis_began);
            timings.factor_entries = n.factor_entries();
            n.run(uv, &stop, progress).map(|mut o| {
                o.clocks
                    .spans
                    .push((Stage::Analysis, setup_clock, analysis_ended));
                o
            })
        }),
    };
    progress.end();
    outcome
}

/// `auto` for arap and symmetric Dirichlet: the `first` solver (local–global or the
/// Laplacian-preconditioned L-BFGS) for at most [`CHEAP_BUDGET`] iterations, then, if
/// it has not converged (or stalled against the flip bound, or cannot run), Newton
/// from where it stopped with the iterations left. Returns both runs as one and the
/// solver that finished.
fn run_with_handoff(
    objective: &Objective,
    first: SolverKind,
    pins: &[u32],
    opts: &SolveOptions,
    uv: &mut [[f64; 2]],
    (timings, notes): (&mut StageTimings, &mut Vec<String>),
    progress: &dyn Progress,
) -> std::result::Result<(Outcome, SolverKind), String> {
    let budget = opts.max_iterations.min(CHEAP_BUDGET);
    let stop = StopRules {
        max_iterations: budget,
        tolerance: opts.tolerance,
        gradient: opts.tolerance * objective.chart.mean_edge,
    };
    let start = uv.to_vec();
    progress.begin("flatten", opts.max_iterations as u64);
    // With no iterations left for Newton, the first solver runs to its own end.
    let handoff = (budget < opts.max_iterations).then_some(budget);
    let run = if first == SolverKind::LocalGlobal {
        local_global::run(objective, pins[0], uv, &stop, handoff, progress)
    } else {
        preconditioned::run(objective, pins, uv, &stop, handoff, progress)
    };
    progress.end();
    let first = match run {
        Ok(o) if (converged(&o, &stop) && !o.cut_short) || budget == opts.max_iterations => {
            return Ok((o, first));
        }
        Ok(o) => Some(o),
        Err(e) => {
            notes.push(format!(
                "{first} could not run ({e}); {} flattened the chart from its start",
                SolverKind::Newton
            ));
            uv.copy_from_slice(&start);
            None
        }
    };
    let used = first.as_ref().map_or(0, |o| o.iterations);
    let rest_opts = SolveOptions {
        max_iterations: opts.max_iterations - used,
        ..*opts
    };
    let rest = run_solver(
        objective,
        SolverKind::Newton,
        pins,
        true,
        &rest_opts,
        uv,
        timings,
        progress,
    )?;
    let outcome = match first {
        Some(first) => first.followed_by(rest),
        None => rest,
    };
    Ok((outcome, SolverKind::Newton))
}

/// Says so in `notes` when the finishing solver stopped on a step its line search had
/// to shorten against the flip bound: that stall is not convergence.
fn blocked_note(solver: SolverKind, outcome: &Outcome, notes: &mut Vec<String>) {
    if outcome.cut_short {
        notes.push(format!(
            "{solver} stopped against the flip bound before the energy converged; {} or {} finish such charts",
            SolverKind::Auto,
            SolverKind::Newton
        ));
    }
}

/// Whether a run stopped because its last iteration stalled.
fn converged(outcome: &Outcome, stop: &StopRules) -> bool {
    match outcome.history[..] {
        [.., before, after] => stop.stalled(before, after),
        _ => true,
    }
}

/// One numeric factorization of a chart's Newton matrix, as measured by
/// [`factorization_benchmark`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FactorizationFigures {
    /// Symbolic analysis (ordering included), milliseconds.
    pub analyse_ms: f64,
    /// Stored entries of the factor.
    pub factor_entries: usize,
    /// Multiply-adds of one numeric factorization (`Σ_j c_j²`, `c_j` the stored
    /// entries of column `j`).
    pub factor_flops: f64,
    /// The shortest of the timed numeric factorizations, milliseconds.
    pub factor_ms: f64,
}

/// For benchmarks: analyses the Newton system of `opts.energy` on `chart` (one pin)
/// with `opts.ordering`, assembles its Hessian at the least-squares conformal map and
/// times `repeats` numeric factorizations of it.
///
/// Errors as [`solve_chart`], and when the Hessian is not positive definite.
pub fn factorization_benchmark(
    chart: &PolyMesh,
    opts: &SolveOptions,
    repeats: usize,
) -> Result<FactorizationFigures> {
    let fail = |message: String| Error::Solve {
        chart: opts.chart_id,
        message,
    };
    let prepared = Chart::new(chart, opts.projection_weight).map_err(fail)?;
    let objective = Objective::new(&prepared, energy::energy(opts.energy));
    let mut uv = initial::least_squares_conformal(&prepared, opts.ordering).map_err(fail)?;
    scale_to_area(&prepared, &mut uv).map_err(fail)?;
    let pins = [prepared.loops[0][0]];
    let mut newton = newton::Newton::new(&objective, &pins, true, opts.ordering).map_err(fail)?;
    let factor = newton
        .time_factorization(&uv, repeats)
        .ok_or_else(|| fail("the Newton matrix is not positive definite".into()))?;
    let (analysis_began, analysis_ended) = newton.analysis_span();
    Ok(FactorizationFigures {
        analyse_ms: ms(analysis_ended - analysis_began),
        factor_entries: newton.factor_entries(),
        factor_flops: newton.factor_flops(),
        factor_ms: ms(factor),
    })
}

/// What a solver run left besides the UVs.
struct Run {
    outcome: Outcome,
    solver: SolverKind,
    start: StartKind,
    notes: Vec<String>,
    timings: StageTimings,
    began: Instant,
    /// Set-up and start spans (the solver adds its own).
    spans: Vec<(Stage, Instant, Instant)>,
}

/// The [`ChartSolution`] of a finished run.
fn solution(objective: &Objective, uv: Vec<[f64; 2]>, run: Run) -> ChartSolution {
    let Run {
        outcome,
        solver,
        start,
        notes,
        mut timings,
        began,
        mut spans,
    } = run;
    let flipped_faces = objective.flipped_faces(&uv);
    // The solvers work above the energy's floor Σ_f A_f min ψ; report E itself.
    let floor = objective.chart.area * objective.energy.minimum();
    let c = outcome.clocks;
    spans.extend(c.spans);
    spans.sort_by_key(|s| s.1);
    timings.evaluate_ms = ms(c.evaluate);
    timings.assemble_ms = ms(c.assemble);
    timings.setup_ms += ms(c.setup);
    timings.factor_ms = ms(c.factor);
    timings.factorizations = c.factorizations;
    timings.solve_ms = ms(c.solve);
    timings.line_search_ms = ms(c.line_search);
    timings.total_ms = ms(began.elapsed());
    ChartSolution {
        uvs: uv.iter().map(|p| Point2::new(p[0], p[1])).collect(),
        history_ms: outcome
            .reached
            .iter()
            .map(|t| ms(t.duration_since(began)))
            .collect(),
        history: outcome.history.iter().map(|e| e + floor).collect(),
        iterations: outcome.iterations,
        solver,
        start,
        flipped_faces,
        timings,
        spans: spans
            .iter()
            .map(|&(stage, a, b)| StageSpan {
                stage,
                start_ms: ms(a.duration_since(began)),
                end_ms: ms(b.duration_since(began)),
            })
            .collect(),
        notes,
    }
}

fn start_name(kind: StartKind) -> &'static str {
    match kind {
        StartKind::Tutte => "Tutte",
        StartKind::Conformal => "conformal",
        StartKind::Given => "given",
    }
}

fn ms(d: std::time::Duration) -> f64 {
    d.as_secs_f64() * 1e3
}

/// Signed UV area of the chart: the sum of its UV polygons' shoelace areas.
fn uv_area(chart: &Chart, uv: &[[f64; 2]]) -> f64 {
    (0..chart.face_count())
        .map(|f| {
            let face = chart.face(f);
            let n = face.len();
            0.5 * (0..n)
                .map(|i| {
                    let p = uv[face[i] as usize];
                    let q = uv[face[(i + 1) % n] as usize];
                    p[0] * q[1] - p[1] * q[0]
                })
                .sum::<f64>()
        })
        .sum()
}

/// Scales `uv` about its centroid so that its UV area equals the chart's 3D area.
fn scale_to_area(chart: &Chart, uv: &mut [[f64; 2]]) -> std::result::Result<(), String> {
    let area = uv_area(chart, uv).abs();
    if !(area > 0.0 && area.is_finite()) {
        return Err("the layout has no area (every face collapsed or is not finite)".into());
    }
    let s = (chart.area / area).sqrt();
    let k = 1.0 / uv.len() as f64;
    let c = uv
        .iter()
        .fold([0.0, 0.0], |c, p| [c[0] + p[0] * k, c[1] + p[1] * k]);
    for p in uv.iter_mut() {
        *p = [c[0] + s * (p[0] - c[0]), c[1] + s * (p[1] - c[1])];
    }
    Ok(())
}
