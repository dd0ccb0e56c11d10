//! L-BFGS (Nocedal 1980, "Updating quasi-Newton matrices with limited storage", Math.
//! Comp. 35) through the argmin crate, with our own backtracking line search: its first
//! trial step stops short of the first flip of any face for barrier energies (Smith &
//! Schaefer 2015), then it halves until the Armijo condition holds.

use super::assembly::{gradient_gather, Dofs, Gather};
use super::objective::Objective;
use super::stopping::{Outcome, StopRules};
use crate::progress::Progress;
use argmin::core::observers::{Observe, ObserverMode};
use argmin::core::{
    CostFunction, Error as ArgminError, Executor, Gradient, IterState, LineSearch, Problem, Solver,
    State, TerminationReason, TerminationStatus, KV,
};
use argmin::solver::quasinewton::LBFGS;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::Instant;

/// Number of correction pairs kept (common practice, no published source).
const MEMORY: usize = 8;
/// Armijo sufficient-decrease constant (common practice, no published source).
const ARMIJO: f64 = 1e-4;
/// Fraction of the distance to the first flip taken as the first trial step.
const FLIP_MARGIN: f64 = 0.9;
/// Halvings before the line search gives up.
const MAX_HALVINGS: usize = 60;

type Param = Vec<f64>;
type LbfgsState = IterState<Param, Param, (), (), (), f64>;

/// The objective over the free unknowns, as argmin sees it.
struct ReducedProblem<'a, 'o, 'c, 'm> {
    objective: &'a Objective<'o, 'm>,
    dofs: &'a Dofs,
    gather: &'a Gather,
    /// UVs of every vertex; pinned vertices keep these values.
    base: &'a [[f64; 2]],
    progress: &'a dyn Progress,
    gradients: AtomicU64,
    evaluate_ns: AtomicU64,
    line_search_ns: AtomicU64,
    _chart: std::marker::PhantomData<&'c ()>,
}

impl ReducedProblem<'_, '_, '_, '_> {
    fn full(&self, x: &[f64]) -> Vec<[f64; 2]> {
        let mut uv = self.base.to_vec();
        self.dofs.scatter(x, &mut uv);
        uv
    }
}

impl CostFunction for ReducedProblem<'_, '_, '_, '_> {
    type Param = Param;
    type Output = f64;

    fn cost(&self, x: &Param) -> Result<f64, ArgminError> {
        let t = Instant::now();
        let e = self.objective.value(&self.full(x));
        self.line_search_ns
            .fetch_add(t.elapsed().as_nanos() as u64, Ordering::Relaxed);
        Ok(e)
    }
}

impl Gradient for ReducedProblem<'_, '_, '_, '_> {
    type Param = Param;
    type Gradient = Param;

    fn gradient(&self, x: &Param) -> Result<Param, ArgminError> {
        let t = Instant::now();
        let uv = self.full(x);
        let mut buf = vec![0.0; 2 * self.objective.chart.mesh.corner_count()];
        self.objective.evaluate(&uv, &mut buf, None);
        let mut g = vec![0.0; x.len()];
        self.gather.apply(&buf, &mut g);
        self.evaluate_ns
            .fetch_add(t.elapsed().as_nanos() as u64, Ordering::Relaxed);
        // One gradient per iteration (plus the initial one).
        let k = self.gradients.fetch_add(1, Ordering::Relaxed);
        if k > 0 {
            self.progress.advance(k);
        }
        Ok(g)
    }
}

/// Backtracking line search bounded by the first flip (see the module docs).
#[derive(Clone)]
struct FlipBoundedBacktracking<'a, 'o, 'm> {
    objective: &'a Objective<'o, 'm>,
    dofs: &'a Dofs,
    base: &'a [[f64; 2]],
    direction: Option<Param>,
    start: Option<(Param, f64, f64)>,
    alpha: f64,
    halvings: usize,
}

impl FlipBoundedBacktracking<'_, '_, '_> {
    fn trial(&self, x: &[f64], d: &[f64]) -> Param {
        x.iter().zip(d).map(|(x, d)| x + self.alpha * d).collect()
    }
}

impl LineSearch<Param, f64> for FlipBoundedBacktracking<'_, '_, '_> {
    fn search_direction(&mut self, direction: Param) {
        self.direction = Some(direction);
    }

    fn initial_step_length(&mut self, alpha: f64) -> Result<(), ArgminError> {
        self.alpha = alpha;
        Ok(())
    }
}

fn missing(what: &str) -> ArgminError {
    ArgminError::msg(format!("the line search has no {what}"))
}

impl<O> Solver<O, LbfgsState> for FlipBoundedBacktracking<'_, '_, '_>
where
    O: CostFunction<Param = Param, Output = f64> + Gradient<Param = Param, Gradient = Param>,
{
    fn name(&self) -> &str {
        "flip-bounded backtracking"
    }

    fn init(
        &mut self,
        problem: &mut Problem<O>,
        mut state: LbfgsState,
    ) -> Result<(LbfgsState, Option<KV>), ArgminError> {
        let x = state.take_param().ok_or_else(|| missing("start point"))?;
        let d = self
            .direction
            .as_ref()
            .ok_or_else(|| missing("direction"))?;
        let cost = match state.get_cost() {
            c if c.is_finite() => c,
            _ => problem.cost(&x)?,
        };
        let grad = match state.take_gradient() {
            Some(g) => g,
            None => problem.gradient(&x)?,
        };
        let slope: f64 = grad.iter().zip(d).map(|(g, d)| g * d).sum();
        self.alpha = 1.0;
        if self.objective.energy.is_barrier() {
            let mut uv = self.base.to_vec();
            self.dofs.scatter(&x, &mut uv);
            let mut duv = vec![[0.0; 2]; uv.len()];
            self.dofs.scatter(d, &mut duv);
            self.alpha = self
                .alpha
                .min(FLIP_MARGIN * self.objective.first_flip(&uv, &duv));
        }
        self.halvings = 0;
        let trial = self.trial(&x, d);
        let c = problem.cost(&trial)?;
        self.start = Some((x, cost, slope));
        Ok((state.param(trial).cost(c), None))
    }

    fn next_iter(
        &mut self,
        problem: &mut Problem<O>,
        state: LbfgsState,
    ) -> Result<(LbfgsState, Option<KV>), ArgminError> {
        let (x, cost, _) = self.start.as_ref().ok_or_else(|| missing("start point"))?;
        self.halvings += 1;
        if self.halvings > MAX_HALVINGS {
            // No decrease is possible in floating point: stay where we are.
            return Ok((state.param(x.clone()).cost(*cost), None));
        }
        self.alpha *= 0.5;
        let d = self
            .direction
            .as_ref()
            .ok_or_else(|| missing("direction"))?;
        let trial = self.trial(x, d);
        let c = problem.cost(&trial)?;
        Ok((state.param(trial).cost(c), None))
    }

    fn terminate(&mut self, state: &LbfgsState) -> TerminationStatus {
        let Some((_, cost, slope)) = self.start.as_ref() else {
            return TerminationStatus::Terminated(TerminationReason::SolverExit(
                "no start point".into(),
            ));
        };
        if self.halvings > MAX_HALVINGS || state.get_cost() <= cost + ARMIJO * self.alpha * slope {
            TerminationStatus::Terminated(TerminationReason::SolverConverged)
        } else {
            TerminationStatus::NotTerminated
        }
    }
}

/// Records the energy after every iteration, and when it was reached.
struct History(Arc<Mutex<Vec<(f64, Instant)>>>);

impl Observe<LbfgsState> for History {
    fn observe_iter(&mut self, state: &LbfgsState, _kv: &KV) -> Result<(), ArgminError> {
        if let Ok(mut h) = self.0.lock() {
            h.push((state.get_cost(), Instant::now()));
        }
        Ok(())
    }
}

/// Minimises `objective` from `uv` (updated in place) with the vertices `pins` held
/// fixed, until a stop rule holds.
pub(crate) fn run(
    objective: &Objective,
    pins: &[u32],
    uv: &mut [[f64; 2]],
    stop: &StopRules,
    progress: &dyn Progress,
) -> Result<Outcome, String> {
    let chart = objective.chart;
    let dofs = Dofs::new(chart.vertex_count(), pins);
    let gather = gradient_gather(chart, &dofs)?;
    let base = uv.to_vec();
    let x0 = dofs.gather(uv);
    let e0 = objective.value(uv);
    if !e0.is_finite() {
        return Err(
            "the energy is not finite at the start; a face is flipped or degenerate".into(),
        );
    }
    let mut out = Outcome::default();
    out.record(e0);
    if x0.is_empty() || stop.max_iterations == 0 {
        return Ok(out);
    }
    let problem = ReducedProblem {
        objective,
        dofs: &dofs,
        gather: &gather,
        base: &base,
        progress,
        gradients: AtomicU64::new(0),
        evaluate_ns: AtomicU64::new(0),
        line_search_ns: AtomicU64::new(0),
        _chart: std::marker::PhantomData,
    };
    let line_search = FlipBoundedBacktracking {
        objective,
        dofs: &dofs,
        base: &base,
        direction: None,
        start: None,
        alpha: 1.0,
        halvings: 0,
    };
    let solver = LBFGS::new(line_search, MEMORY)
        .with_tolerance_grad(stop.gradient)
        .and_then(|s| s.with_tolerance_cost(stop.tolerance * stop.area))
        .map_err(|e| format!("L-BFGS set-up failed: {e}"))?;
    let history = Arc::new(Mutex::new(Vec::new()));
    let result = Executor::new(problem, solver)
        .configure(|s| s.param(x0).cost(e0).max_iters(stop.max_iterations as u64))
        .add_observer(History(history.clone()), ObserverMode::Always)
        .ctrlc(false)
        .timer(false)
        .run()
        .map_err(|e| format!("L-BFGS failed: {e}"))?;
    let mut state = result.state;
    let x = state
        .take_best_param()
        .or_else(|| state.take_param())
        .ok_or("L-BFGS returned no layout")?;
    dofs.scatter(&x, uv);
    if let Some(problem) = result.problem.problem.as_ref() {
        out.clocks.evaluate =
            std::time::Duration::from_nanos(problem.evaluate_ns.load(Ordering::Relaxed));
        out.clocks.line_search =
            std::time::Duration::from_nanos(problem.line_search_ns.load(Ordering::Relaxed));
    }
    out.iterations = state.get_iter() as usize;
    if let Ok(h) = history.lock() {
        for &(e, at) in h.iter() {
            out.history.push(e);
            out.reached.push(at);
        }
    }
    Ok(out)
}
