//! Propagation behind one entry point [`solve`], in three parts that do not
//! know each other's insides:
//!
//! - an **equation** (`equation.rs`, the trait; `equations/`, one file per
//!   equation: the Schrodinger amplitudes, the Lindblad density matrix) supplies the state, the
//!   right-hand side, populations, norm and lost part, and for
//!   piecewise-constant stretches the generator;
//! - a **stepper** (`steppers/`: adaptive Dormand-Prince 8(5,3), exact
//!   matrix exponentials) advances any equation over the plan's stops
//!   (`plan.rs`: envelope edges and sample times);
//! - **observers** (`observers/`: samples, peaks, norm drift) record what the
//!   run asks for after every accepted step and at sample times.
//!
//! Adding an equation touches no stepper and no observer. Peaks are tracked
//! only where [`SolveOptions::peaks`] asks for them (the exact stepper then
//! sub-steps stretches to sample them).
//!
//! Owns: the method and equation choice, the readout (`readout.rs`: the
//! populations at the readout time, settled after the window, scattered
//! photons), the [`Solution`] (bare-basis populations, peaks,
//! loss, norm error, method and statistics). Must not: print, read files, or
//! know about the perturbative estimator or any output format.
//!
//! INTERFACE FROZEN: fields may be added, none renamed or removed.

pub mod equation;
pub mod equations;
pub mod observers;
mod plan;
pub mod steppers;

pub use steppers::adaptive;
pub use steppers::exact::PEAK_TOLERANCE;

mod readout;

use equation::Equation;
use equations::amplitudes::Amplitudes;
use equations::density::{DensityMatrix, EXACT_MAX_LEVELS};
use observers::ObserverSet;

use crate::hamiltonian::{AssemblyError, FrameHamiltonian};
use crate::model::{Dynamics, Method, Model};

/// Which propagator produced a solution.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MethodUsed {
    Exact,
    Adaptive,
}

/// Options of one run that are not part of the scheme.
#[derive(Debug, Clone, PartialEq)]
pub struct SolveOptions {
    /// Number of evenly spaced time samples of the populations to record,
    /// including the window start and end (0 = none).
    pub samples: usize,
    /// Maximum number of steps (adaptive) or segments (exact) before the run
    /// stops with [`SolveError::StepBudget`].
    pub step_budget: u64,
    /// Track peak populations (default true). Without, no peak observer runs,
    /// the exact stepper takes one matrix exponential per stretch instead of
    /// sub-stepping, and [`Solution::peak_populations`] holds the final
    /// populations (for scans and tune, whose outputs show no peaks).
    pub peaks: bool,
}

/// Documented default step budget.
pub const DEFAULT_STEP_BUDGET: u64 = 5_000_000;

impl Default for SolveOptions {
    fn default() -> Self {
        SolveOptions {
            samples: 0,
            step_budget: DEFAULT_STEP_BUDGET,
            peaks: true,
        }
    }
}

// Same shape as FrameHamiltonian: each stage's plain data, other fields.
/// Result of one propagation. Populations are |c_k|^2 (amplitudes) or
/// rho_kk (density matrix) in the bare basis.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    pub method: MethodUsed,
    /// The equation that ran (never `Auto`).
    pub dynamics: Dynamics,
    /// Population of each level at the readout (model order): the window
    /// end unless the model's readout says otherwise.
    pub final_populations: Vec<f64>,
    /// Population of each level at the window end (the same as
    /// `final_populations` with the default readout).
    pub window_end_populations: Vec<f64>,
    /// Populations after the window once every decay has run its course,
    /// drives off (rate equations, exact); None where no level decays.
    pub settled_populations: Option<Vec<f64>>,
    /// The population lost at that point (window-end loss plus the lost
    /// share of the decays after it).
    pub settled_lost: Option<f64>,
    /// Spontaneous emissions of each level inside the window per atom,
    /// Gamma_k times the integral of rho_kk (density-matrix runs only).
    pub scattered_photons: Option<Vec<f64>>,
    /// Largest positivity defect of the state over the run (0 for
    /// amplitudes).
    pub positivity_error: f64,
    /// Largest population of each level during the window; the final
    /// populations where `SolveOptions::peaks` is false.
    pub peak_populations: Vec<f64>,
    /// Population lost by decay at the readout, 1 - sum P predicted by the
    /// decay terms.
    pub lost: f64,
    /// Population lost by decay at the window end.
    pub window_end_lost: f64,
    /// |1 - sum P - lost| over the run.
    pub norm_error: f64,
    /// Accepted steps (adaptive) or segments/sub-steps (exact; one per
    /// segment without peaks).
    pub steps: u64,
    /// Right-hand side evaluations (adaptive) or matrix exponentials (exact).
    pub evaluations: u64,
    /// Tolerances used (adaptive; the exact propagator reports the scheme's too).
    pub rtol: f64,
    pub atol: f64,
    /// Indices into `Model::drives` left out of the dynamics by the detuning cutoff.
    pub excluded_drives: Vec<usize>,
    /// Time samples: (t, populations) when `SolveOptions::samples > 0`.
    pub samples: Vec<(f64, Vec<f64>)>,
    /// Per sample, in the order of `samples`: the population lost from the
    /// scheme so far (the equation's lost part, as `window_end_lost`).
    pub sample_lost: Vec<f64>,
    /// Per sample, in the order of `samples`: the spontaneous emissions per
    /// atom from the window start to the sample, all levels together
    /// (cumulative, so non-decreasing); empty where the equation does not
    /// count them.
    pub sample_emitted: Vec<f64>,
    /// Spontaneous emissions per atom inside the window, all levels: the
    /// sum of `scattered_photons` in a density-matrix run; in an amplitude
    /// run, where every decay leaves the scheme, the window-end lost part.
    pub emitted: Option<f64>,
}

/// Why a propagation failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SolveError {
    #[error("the run needs more than {budget} steps: the fastest time scale is {period_s:.3e} s, set by {cause}; shorten the window, lower solver.detuning_cutoff to leave that drive out, or raise the budget (--step-budget N on the command line, SolveOptions::step_budget in the library)")]
    StepBudget {
        budget: u64,
        period_s: f64,
        cause: String,
    },
    #[error("method 'exact' needs a piecewise-constant frame Hamiltonian, but {reason}; use method 'adaptive' or 'auto'")]
    ExactNotApplicable { reason: String },
    #[error("non-finite value in {stage}")]
    NonFinite { stage: String },
    #[error("integrator failed: {0}")]
    Integrator(String),
}

/// Propagate the model over its window with the method its settings ask for.
///
/// `method: auto` runs the exact propagator where the frame Hamiltonian is
/// piecewise constant (and, for a density matrix, the model has at most
/// [`EXACT_MAX_LEVELS`] levels) and the adaptive one otherwise; `exact`
/// fails with [`SolveError::ExactNotApplicable`] where it does not apply.
/// The equation is the model's [`Model::dynamics`]. Populations are
/// bare-basis whatever frame the solver uses.
pub fn solve(model: &Model, opts: &SolveOptions) -> Result<Solution, SolveError> {
    let fh = FrameHamiltonian::build(model).map_err(|e| match e {
        AssemblyError::NonFinite(what) => SolveError::NonFinite {
            stage: format!("Hamiltonian assembly ({what})"),
        },
    })?;
    let dynamics = model.dynamics();
    let mut obstacle = fh.piecewise_constant_obstacle(model);
    if dynamics == Dynamics::DensityMatrix && obstacle.is_none() && fh.dim() > EXACT_MAX_LEVELS {
        obstacle = Some(format!(
            "a density matrix of {} levels is beyond the exact propagator's {EXACT_MAX_LEVELS}",
            fh.dim()
        ));
    }
    let method = match (model.solver.method, &obstacle) {
        (Method::Exact, Some(reason)) => {
            return Err(SolveError::ExactNotApplicable {
                reason: reason.clone(),
            })
        }
        (Method::Exact, None) | (Method::Auto, None) => MethodUsed::Exact,
        (Method::Adaptive, _) | (Method::Auto, Some(_)) => MethodUsed::Adaptive,
    };
    let plan = plan::Plan::new(model, &fh, opts.samples, readout::time(model));
    // The window ends after it starts (the model's builder checked it).
    let solution = if dynamics == Dynamics::DensityMatrix {
        let mut eq = DensityMatrix::new(model, &fh);
        let mut sol = run(&mut eq, model, &fh, &plan, method, opts)?;
        sol.dynamics = Dynamics::DensityMatrix;
        sol
    } else {
        let mut eq = Amplitudes::new(model, &fh);
        run(&mut eq, model, &fh, &plan, method, opts)?
    };
    let finite = solution
        .final_populations
        .iter()
        .chain(&solution.peak_populations)
        .chain(solution.settled_populations.iter().flatten())
        .chain(solution.scattered_photons.iter().flatten())
        .all(|p| p.is_finite())
        && solution.lost.is_finite()
        && solution.norm_error.is_finite()
        && solution.positivity_error.is_finite()
        && solution.emitted.is_none_or(f64::is_finite)
        && solution
            .samples
            .iter()
            .all(|(t, p)| t.is_finite() && p.iter().all(|x| x.is_finite()))
        && solution
            .sample_lost
            .iter()
            .chain(&solution.sample_emitted)
            .all(|x| x.is_finite());
    if !finite {
        return Err(SolveError::NonFinite {
            stage: "the solution".into(),
        });
    }
    Ok(solution)
}

/// Advance `eq` with the chosen stepper and the observers `opts` asks for.
fn run<E: Equation>(
    eq: &mut E,
    model: &Model,
    fh: &FrameHamiltonian,
    plan: &plan::Plan,
    method: MethodUsed,
    opts: &SolveOptions,
) -> Result<Solution, SolveError> {
    let mut y = vec![0.0; eq.dim()];
    eq.initial_state(&mut y);
    // Room for the readout's own record where no sample is asked for there.
    let extra = usize::from(plan.readout.is_some_and(|r| !r.1));
    let mut obs = ObserverSet::new(eq.levels(), plan.samples + extra, opts.peaks);
    let stats = match method {
        MethodUsed::Exact => {
            steppers::exact::propagate(eq, &mut obs, &mut y, plan, opts, opts.peaks)?
        }
        MethodUsed::Adaptive => {
            steppers::adaptive::propagate(eq, &mut obs, &mut y, model, fh, plan, opts)?
        }
    };
    let mut end = vec![0.0; eq.levels()];
    eq.populations(&y, &mut end);
    let peak_populations = match obs.peaks {
        Some(p) => p.peaks.iter().zip(&end).map(|(p, f)| p.max(*f)).collect(),
        None => end.clone(),
    };
    let positivity_error = obs.positivity.error.max(readout::final_defect(eq, &y));
    let r = readout::Readout::take(model, eq, &y, plan, &mut obs.samples);
    let sample_lost = obs.samples.open.iter().map(|o| o.0).collect();
    let sample_emitted = obs.samples.open.iter().map_while(|o| o.1).collect();
    Ok(Solution {
        method,
        dynamics: Dynamics::Amplitudes,
        final_populations: r.populations,
        window_end_populations: end,
        settled_populations: r.settled,
        settled_lost: r.settled_lost,
        scattered_photons: r.scattered,
        positivity_error,
        peak_populations,
        lost: r.lost,
        window_end_lost: eq.lost(&y),
        norm_error: obs.norm.error.max(obs.norm.drift(eq, &y)),
        steps: stats.steps,
        evaluations: stats.evaluations,
        rtol: model.solver.rtol,
        atol: model.solver.atol,
        excluded_drives: fh.excluded.clone(),
        samples: obs.samples.taken,
        sample_lost,
        sample_emitted,
        emitted: eq.emitted(&y),
    })
}

#[cfg(test)]
mod tests;
