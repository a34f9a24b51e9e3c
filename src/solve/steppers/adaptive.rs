//! The adaptive stepper: Dormand-Prince 8(5,3) from ode_solvers on the real
//! state of any [`Equation`], in window time, stretch by stretch between the
//! plan's stops (envelope edges and sample times), handing every accepted
//! step to the observers.
//!
//! Owns: the autonomous wrapper around ode_solvers ([`Autonomous`],
//! [`integrate_autonomous`]), the dense re-run of a step for the peak
//! observer, and the step budget check. Must not: print, know what the state
//! means (the equation does), record anything itself (observers do), or
//! decide which stepper runs (that is [`crate::solve::solve`]).
//!
//! Allocation: states up to 36 real components (17 amplitude levels) run on
//! fixed-size vectors; per accepted step the stepper copies into buffers
//! allocated once per run. ode_solvers keeps its accepted states in a vector
//! that grows (amortised; dropped every [`chunk_steps`] steps), and a dense
//! re-run (only for steps whose interior may hold a new peak) allocates.
//!
//! Workaround for ode_solvers 0.6.2: its Dop853 node table has c12 = c13 = 0,
//! so stage 12 is evaluated at the step start instead of the step end and any
//! right-hand side that depends on the independent variable loses its order
//! (steps collapse and the solver aborts with a spurious stiffness error).
//! Every system here is therefore made autonomous: time is carried as the
//! last state component with d t / d t = 1 and the solver's own time argument
//! is ignored. `tests/physics/propagation_dop853.rs` fails if the workaround
//! is removed.
//! Its stiffness test also fires on long oscillatory runs, so it is switched
//! off (n_stiff = u32::MAX).

use super::Run;
use crate::hamiltonian::{drive_name, FrameHamiltonian};
use crate::model::Model;
use crate::solve::equation::Equation;
use crate::solve::observers::{Dense, Interior, Observer, Step};
use crate::solve::plan::{max_step, Plan};
use crate::solve::{SolveError, SolveOptions};
use nalgebra::{allocator::Allocator, Const, DefaultAllocator, Dim, Dyn, OVector};
use ode_solvers::dop_shared::IntegrationError;
use ode_solvers::{DVector, Dop853, OutputType, System};
use std::cell::Cell;
use std::f64::consts::TAU;

/// A right-hand side dy/dt = F(t, y) whose time is handed over from the state.
pub trait AutonomousRhs {
    /// Write F(t, y) into `dy` (same length as `y`). Must not allocate.
    fn eval(&self, t: f64, y: &[f64], dy: &mut [f64]);
    /// Called after every accepted step with the new time, state and derivative.
    fn accepted(&mut self, _t: f64, _y: &[f64], _dy: &[f64]) {}
}

/// ode_solvers system made autonomous: state = (y, t), d t / d x = 1; the
/// solver's independent variable x is ignored (see the module docs).
pub struct Autonomous<'a, R: AutonomousRhs> {
    rhs: &'a mut R,
    evaluations: &'a Cell<u64>,
    accepted: &'a Cell<u64>,
}

impl<R: AutonomousRhs, D: Dim> System<f64, OVector<f64, D>> for Autonomous<'_, R>
where
    DefaultAllocator: Allocator<D>,
{
    fn system(&self, _x: f64, y: &OVector<f64, D>, dy: &mut OVector<f64, D>) {
        let n = y.len() - 1;
        let t = y[n];
        self.rhs
            .eval(t, &y.as_slice()[..n], &mut dy.as_mut_slice()[..n]);
        dy[n] = 1.0;
        self.evaluations.set(self.evaluations.get() + 1);
    }

    fn solout(&mut self, _x: f64, y: &OVector<f64, D>, dy: &OVector<f64, D>) -> bool {
        let n = y.len() - 1;
        self.accepted.set(self.accepted.get() + 1);
        self.rhs
            .accepted(y[n], &y.as_slice()[..n], &dy.as_slice()[..n]);
        false
    }
}

/// A read-only autonomous view of an equation (no step hook), counting its
/// evaluations.
struct EvalOnly<'a, E: Equation> {
    eq: &'a E,
    evaluations: &'a Cell<u64>,
}

impl<E: Equation> System<f64, DVector<f64>> for EvalOnly<'_, E> {
    fn system(&self, _x: f64, y: &DVector<f64>, dy: &mut DVector<f64>) {
        let n = y.len() - 1;
        let t = y[n];
        self.evaluations.set(self.evaluations.get() + 1);
        self.eq
            .rhs(t, &y.as_slice()[..n], &mut dy.as_mut_slice()[..n]);
        dy[n] = 1.0;
    }
}

/// Settings of one [`integrate_autonomous`] call.
#[derive(Debug, Clone, Copy)]
pub struct AdaptiveSettings {
    pub rtol: f64,
    pub atol: f64,
    /// Largest step.
    pub h_max: f64,
    /// First step (0: chosen by the solver).
    pub h_init: f64,
    /// Accepted plus rejected steps allowed in this call.
    pub step_limit: u64,
}

/// Result of one [`integrate_autonomous`] call.
#[derive(Debug, Clone)]
pub struct AutonomousRun {
    /// State at the end time.
    pub y: Vec<f64>,
    /// Accepted steps.
    pub steps: u64,
    /// Right-hand side evaluations.
    pub evaluations: u64,
    /// Length of the last full step (a good first step for a continuation).
    pub last_step: f64,
}

/// Why [`integrate_autonomous`] stopped early.
#[derive(Debug, Clone, PartialEq)]
pub enum RunError {
    /// The step limit was reached at time `t`.
    StepLimit { t: f64, steps: u64 },
    /// The integrator failed.
    Failed(String),
}

/// Steps per solver call before the stored output is dropped and the solver
/// restarts from its last state (ode_solvers keeps every accepted state).
pub fn chunk_steps(dim: usize) -> u64 {
    (2_000_000 / (dim as u64 + 1)).clamp(1_000, 100_000)
}

/// Integrate dy/dt = F(t, y) from t0 to t1 with Dop853, time carried in the
/// state (the workaround described in the module docs).
///
/// Small systems run on fixed-size vectors (no heap allocation in the
/// solver's stage arithmetic); larger ones on heap vectors.
pub fn integrate_autonomous<R: AutonomousRhs>(
    rhs: &mut R,
    t0: f64,
    t1: f64,
    y0: &[f64],
    settings: &AdaptiveSettings,
) -> Result<AutonomousRun, RunError> {
    macro_rules! by_dimension {
        ($($k:literal)*) => {
            match y0.len() + 1 {
                $($k => integrate_in(rhs, t0, t1, y0, settings, Const::<$k>),)*
                m => integrate_in(rhs, t0, t1, y0, settings, Dyn(m)),
            }
        };
    }
    // State (+ time) up to 36 components: 2N real amplitudes + lost
    // population for N = 1..=17 levels.
    by_dimension!(2 3 4 5 6 7 8 9 10 11 12 13 14 15 16 17 18 19 20 21 22 23 24 25 26 27 28 29 30 31 32 33 34 35 36)
}

fn integrate_in<R: AutonomousRhs, D: Dim>(
    rhs: &mut R,
    t0: f64,
    t1: f64,
    y0: &[f64],
    settings: &AdaptiveSettings,
    dim: D,
) -> Result<AutonomousRun, RunError>
where
    DefaultAllocator: Allocator<D>,
{
    let n = y0.len();
    let mut y: Vec<f64> = y0.to_vec();
    let mut t = t0;
    let mut h = settings.h_init;
    let mut steps = 0u64;
    let mut evaluations = 0u64;
    let mut attempts = 0u64;
    let chunk = chunk_steps(n);
    if t1 <= t0 {
        return Ok(AutonomousRun {
            y,
            steps,
            evaluations,
            last_step: h,
        });
    }
    loop {
        let left = settings.step_limit.saturating_sub(attempts);
        if left == 0 {
            return Err(RunError::StepLimit { t, steps });
        }
        let n_max = left.min(chunk);
        let mut state = OVector::<f64, D>::from_element_generic(dim, Const::<1>, 0.0);
        state.as_mut_slice()[..n].copy_from_slice(&y);
        state[n] = t;
        let evals = Cell::new(0u64);
        let acc = Cell::new(0u64);
        let system = Autonomous {
            rhs: &mut *rhs,
            evaluations: &evals,
            accepted: &acc,
        };
        let mut stepper = Dop853::from_param(
            system,
            t,
            t1,
            t1 - t,
            state,
            settings.rtol,
            settings.atol,
            0.9,
            0.0,
            0.333,
            6.0,
            settings.h_max,
            h.min(settings.h_max),
            n_max as u32,
            u32::MAX,
            OutputType::Sparse,
        );
        let outcome = stepper.integrate();
        let xs = stepper.x_out();
        let ys = stepper.y_out();
        let (last_x, last_y) = match (xs.last(), ys.last()) {
            (Some(x), Some(v)) => (*x, v.as_slice()),
            _ => return Err(RunError::Failed("integrator produced no output".into())),
        };
        if xs.len() >= 3 {
            h = xs[xs.len() - 2] - xs[xs.len() - 3];
        } else if xs.len() == 2 {
            h = xs[1] - xs[0];
        }
        y.copy_from_slice(&last_y[..n]);
        drop(stepper);
        evaluations += evals.get();
        steps += acc.get();
        match outcome {
            Ok(_) => {
                return Ok(AutonomousRun {
                    y,
                    steps,
                    evaluations,
                    last_step: h,
                });
            }
            Err(IntegrationError::MaxNumStepReached { .. }) => {
                attempts += n_max;
                t = last_x;
                if attempts >= settings.step_limit {
                    return Err(RunError::StepLimit { t, steps });
                }
            }
            Err(e) => return Err(RunError::Failed(e.to_string())),
        }
    }
}

/// Steps per period of the fastest frequency that Dop853 needs at least at
/// relative tolerance rtol, used to fail fast before running: Dop853's local
/// error scales as (omega h)^9, and at rtol = 1e-10 it takes about 17 steps per
/// period of the fastest frequency (measured on the detuned Rabi checks: 92
/// steps for 5 Rabi periods, 12117 steps for 700 detuning periods); the
/// estimate is halved so that only runs clearly beyond the budget fail early.
pub(crate) fn steps_per_period(rtol: f64) -> f64 {
    let measured_at_1e10 = 17.0;
    let r = rtol.clamp(1e-14, 1e-2);
    0.5 * measured_at_1e10 * (1e-10 / r).powf(1.0 / 9.0)
}

/// Fail before running where the run certainly needs more than the budget.
pub(crate) fn check_budget(
    model: &Model,
    fh: &FrameHamiltonian,
    plan: &Plan,
    budget: u64,
) -> Result<(), SolveError> {
    let duration = fh.duration;
    let mut est = 0.0;
    let mut period = f64::INFINITY;
    let mut cause = String::new();
    if let Some(fast) = fh.fastest_scale(model) {
        period = TAU / fast.rate;
        est = duration / period * steps_per_period(model.solver.rtol);
        cause = fast.cause;
    }
    // Envelope-limited steps.
    let mut env_steps = 0.0;
    let mut shortest = f64::INFINITY;
    for w in plan.stops.windows(2) {
        let h = max_step(model, fh, w[0], w[1]);
        if h > 0.0 {
            env_steps += ((w[1] - w[0]) / h).ceil();
            shortest = shortest.min(h);
        }
    }
    if env_steps > est {
        est = env_steps;
        period = shortest;
        cause = "the largest step allowed by the shortest envelope feature (a tenth of it)".into();
        for t in &fh.terms {
            let e = &model.fields[t.field].envelope;
            if (crate::solve::plan::MAX_STEP_PER_FEATURE * e.shortest_feature() - shortest).abs()
                <= 1e-12 * shortest
            {
                cause = format!(
                    "the shortest envelope feature of {} ({} envelope; the step is at most a tenth of it)",
                    drive_name(model, t.drive),
                    e.shape_name()
                );
                break;
            }
        }
    }
    if est > budget as f64 {
        return Err(SolveError::StepBudget {
            budget,
            period_s: period,
            cause,
        });
    }
    Ok(())
}

/// Points per step of the dense output used to locate peaks.
const DENSE_POINTS: usize = 32;

/// An equation and its observers as an [`AutonomousRhs`]: every accepted
/// step is handed to the observers with the previous step end.
struct Observed<'a, E: Equation, O: Observer<E>> {
    eq: &'a mut E,
    obs: &'a mut O,
    /// Evaluations outside the integrator's steps (stretch starts, dense re-runs).
    evaluations: Cell<u64>,
    rtol: f64,
    atol: f64,
    prev_s: f64,
    prev_y: Vec<f64>,
    prev_dy: Vec<f64>,
    non_finite: bool,
}

impl<E: Equation, O: Observer<E>> Observed<'_, E, O> {
    /// Enter the stretch [a, b] (absolute s) starting from state y at window time s.
    fn enter_stretch(&mut self, a: f64, b: f64, s: f64, y: &[f64]) {
        self.eq.enter_stretch(a, b);
        self.prev_s = s;
        self.prev_y.copy_from_slice(y);
        self.evaluations.set(self.evaluations.get() + 1);
        self.eq.rhs(s, y, &mut self.prev_dy);
    }
}

impl<E: Equation, O: Observer<E>> AutonomousRhs for Observed<'_, E, O> {
    #[inline]
    fn eval(&self, s: f64, y: &[f64], dy: &mut [f64]) {
        // Counted by the integrator ([`AutonomousRun::evaluations`]).
        self.eq.rhs(s, y, dy);
    }

    fn accepted(&mut self, s: f64, y: &[f64], dy: &[f64]) {
        if !y.iter().all(|v| v.is_finite()) {
            self.non_finite = true;
            return;
        }
        let h = s - self.prev_s;
        let step = Step {
            h,
            y0: &self.prev_y,
            d0: &self.prev_dy,
            y1: y,
            d1: dy,
            end: y,
            interior: Interior::Refine,
        };
        let mut dense = Redo {
            eq: &*self.eq,
            evaluations: &self.evaluations,
            s0: self.prev_s,
            y0: &self.prev_y,
            h,
            rtol: self.rtol,
            atol: self.atol,
            states: None,
        };
        self.obs.step(&*self.eq, &step, &mut dense);
        self.prev_s = s;
        self.prev_y.copy_from_slice(y);
        self.prev_dy.copy_from_slice(dy);
    }
}

/// The last accepted step redone on demand in one Dop853 step with its
/// 7th-order dense output at DENSE_POINTS + 1 evenly spaced points.
struct Redo<'a, E: Equation> {
    eq: &'a E,
    evaluations: &'a Cell<u64>,
    s0: f64,
    y0: &'a [f64],
    h: f64,
    rtol: f64,
    atol: f64,
    /// None: not computed yet; Some(None): failed.
    states: Option<Option<Vec<DVector<f64>>>>,
}

impl<E: Equation> Redo<'_, E> {
    fn compute(&self) -> Option<Vec<DVector<f64>>> {
        let n = self.y0.len();
        let mut state = DVector::from_element(n + 1, 0.0);
        state.as_mut_slice()[..n].copy_from_slice(self.y0);
        state[n] = self.s0;
        let system = EvalOnly {
            eq: self.eq,
            evaluations: self.evaluations,
        };
        let h = self.h;
        let mut stepper = Dop853::from_param(
            system,
            self.s0,
            self.s0 + h,
            h / DENSE_POINTS as f64,
            state,
            self.rtol,
            self.atol,
            0.9,
            0.0,
            0.333,
            6.0,
            h,
            h,
            64,
            u32::MAX,
            OutputType::Dense,
        );
        stepper.integrate().ok()?;
        let ys = stepper.y_out().clone();
        (ys.len() >= 3 && ys.iter().all(|y| y.iter().all(|v| v.is_finite()))).then_some(ys)
    }
}

impl<E: Equation> Dense for Redo<'_, E> {
    fn states(&mut self) -> Option<&[DVector<f64>]> {
        if self.states.is_none() {
            self.states = Some(self.compute());
        }
        self.states.as_ref().and_then(|s| s.as_deref())
    }
}

/// Run the adaptive stepper over the plan: `y` holds the initial state and
/// receives the final one.
pub(crate) fn propagate<E: Equation, O: Observer<E>>(
    eq: &mut E,
    obs: &mut O,
    y: &mut [f64],
    model: &Model,
    fh: &FrameHamiltonian,
    plan: &Plan,
    opts: &SolveOptions,
) -> Result<Run, SolveError> {
    check_budget(model, fh, plan, opts.step_budget)?;
    let t0 = fh.t0;
    let scale = fh.duration;
    let dim = y.len();
    let mut sys = Observed {
        eq,
        obs,
        evaluations: Cell::new(0),
        rtol: model.solver.rtol,
        atol: model.solver.atol,
        prev_s: 0.0,
        prev_y: vec![0.0; dim],
        prev_dy: vec![0.0; dim],
        non_finite: false,
    };
    sys.obs.start(&*sys.eq, y);
    if let Some(Some(_)) = plan.sample_at.first() {
        sys.obs.sample(&*sys.eq, plan.stops[0], y);
    }
    let mut steps = 0u64;
    let mut evaluations = 0u64;
    let mut h: f64 = 0.0;
    let last = plan.stops.len() - 1;
    let to_s = |i: usize| {
        if i == last {
            1.0
        } else {
            (plan.stops[i] - t0) / scale
        }
    };
    for i in 0..plan.segments() {
        let (ta, tb) = (plan.stops[i], plan.stops[i + 1]);
        let (sa, sb) = (to_s(i), to_s(i + 1));
        sys.enter_stretch(ta, tb, sa, y);
        let h_max = max_step(model, fh, ta, tb) / scale;
        let settings = AdaptiveSettings {
            rtol: model.solver.rtol,
            atol: model.solver.atol,
            h_max: h_max.max(f64::MIN_POSITIVE),
            h_init: if h > 0.0 { h.min(h_max) } else { 0.0 },
            step_limit: opts.step_budget.saturating_sub(steps),
        };
        let run = match integrate_autonomous(&mut sys, sa, sb, y, &settings) {
            Ok(r) => r,
            Err(RunError::StepLimit { t, .. }) => {
                let t_abs = t0 + t * scale;
                let (period, cause) = match fh.fastest_scale(model) {
                    Some(f) => (TAU / f.rate, f.cause),
                    None => (h_max * scale, "the envelope step limit".into()),
                };
                return Err(SolveError::StepBudget {
                    budget: opts.step_budget,
                    period_s: period,
                    cause: format!("{cause} (stopped at t = {t_abs:.6e} s)"),
                });
            }
            Err(RunError::Failed(msg)) => {
                return Err(SolveError::Integrator(format!(
                    "{msg} (segment {ta:.6e} s to {tb:.6e} s)"
                )))
            }
        };
        if sys.non_finite || !run.y.iter().all(|v| v.is_finite()) {
            return Err(SolveError::NonFinite {
                stage: format!("adaptive propagation between {ta:.6e} s and {tb:.6e} s"),
            });
        }
        steps += run.steps;
        evaluations += run.evaluations;
        h = run.last_step;
        y.copy_from_slice(&run.y);
        if let Some(Some(_)) = plan.sample_at.get(i + 1) {
            sys.obs.sample(&*sys.eq, tb, y);
        }
    }
    Ok(Run {
        steps,
        evaluations: evaluations + sys.evaluations.get(),
        peaks_at_ends_only: false,
    })
}
