//! Propagation behind one entry point [`solve`], in three parts that do not
//! know each other's insides:
//!
//! - an **equation** (`equation.rs`, the trait; `equations/`, one file per
//!   equation: today the Schrodinger amplitudes) supplies the state, the
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
//! Owns: the method choice, the [`Solution`] (bare-basis populations, peaks,
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

use equation::Equation;
use equations::amplitudes::Amplitudes;
use observers::ObserverSet;

use crate::hamiltonian::{AssemblyError, FrameHamiltonian};
use crate::model::{Method, Model};

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

/// Result of one propagation. Populations are |c_k|^2 in the bare basis.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    pub method: MethodUsed,
    /// Final population of each level (model order).
    pub final_populations: Vec<f64>,
    /// Largest population of each level during the window; the final
    /// populations where `SolveOptions::peaks` is false.
    pub peak_populations: Vec<f64>,
    /// Population lost by decay, 1 - sum |c|^2 predicted by the decay terms.
    pub lost: f64,
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
/// piecewise constant and the adaptive one otherwise; `exact` fails with
/// [`SolveError::ExactNotApplicable`] where it does not apply. Populations are
/// bare-basis |c_k|^2 whatever frame the solver uses.
pub fn solve(model: &Model, opts: &SolveOptions) -> Result<Solution, SolveError> {
    let fh = FrameHamiltonian::build(model).map_err(|e| match e {
        AssemblyError::NonFinite(what) => SolveError::NonFinite {
            stage: format!("Hamiltonian assembly ({what})"),
        },
    })?;
    let obstacle = fh.piecewise_constant_obstacle(model);
    let method = match (model.solver.method, &obstacle) {
        (Method::Exact, Some(reason)) => {
            return Err(SolveError::ExactNotApplicable {
                reason: reason.clone(),
            })
        }
        (Method::Exact, None) | (Method::Auto, None) => MethodUsed::Exact,
        (Method::Adaptive, _) | (Method::Auto, Some(_)) => MethodUsed::Adaptive,
    };
    let plan = plan::Plan::new(model, &fh, opts.samples);
    // The window ends after it starts (the model's builder checked it).
    let mut eq = Amplitudes::new(model, &fh);
    let solution = run(&mut eq, model, &fh, &plan, method, opts)?;
    let finite = solution
        .final_populations
        .iter()
        .chain(&solution.peak_populations)
        .all(|p| p.is_finite())
        && solution.lost.is_finite()
        && solution.norm_error.is_finite()
        && solution
            .samples
            .iter()
            .all(|(t, p)| t.is_finite() && p.iter().all(|x| x.is_finite()));
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
    let mut obs = ObserverSet::new(eq.levels(), plan.samples, opts.peaks);
    let stats = match method {
        MethodUsed::Exact => {
            steppers::exact::propagate(eq, &mut obs, &mut y, plan, opts, opts.peaks)?
        }
        MethodUsed::Adaptive => {
            steppers::adaptive::propagate(eq, &mut obs, &mut y, model, fh, plan, opts)?
        }
    };
    let mut final_populations = vec![0.0; eq.levels()];
    eq.populations(&y, &mut final_populations);
    let peak_populations = match obs.peaks {
        Some(p) => p
            .peaks
            .iter()
            .zip(&final_populations)
            .map(|(p, f)| p.max(*f))
            .collect(),
        None => final_populations.clone(),
    };
    Ok(Solution {
        method,
        final_populations,
        peak_populations,
        lost: eq.lost(&y),
        norm_error: obs.norm.error.max(obs.norm.drift(eq, &y)),
        steps: stats.steps,
        evaluations: stats.evaluations,
        rtol: model.solver.rtol,
        atol: model.solver.atol,
        excluded_drives: fh.excluded.clone(),
        samples: obs.samples.taken,
    })
}

#[cfg(test)]
mod tests;
