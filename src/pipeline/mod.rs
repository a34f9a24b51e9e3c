//! The library's front door: from a validated [`Model`] to the reports of
//! each command (`inspect`, `vet`, `evolve`, the points of `scan` and
//! `tune`), the stages run in their one order.
//!
//! Owns: the order of the stages, the checks a propagation must pass before
//! anything is reported from it, the exact re-check of remedies, and the
//! option checks shared by every caller (the CLI, tests, bindings).
//! Must not: read or write files, touch a terminal, parse command lines or
//! format numbers; callers do that with the plain data returned here.

pub mod evolve;
mod remedies;
pub mod study;

pub use evolve::{
    evolve, evolve_with_budget, Evolution, MAX_EVOLVE_VALUES, MAX_PLOT_POINTS, MAX_SAMPLES,
};

use crate::error::Error;
use crate::estimate;
use crate::model::Model;
use crate::report::{self, InspectReport, Provenance, VetReport};
use crate::solve::{self, Solution, SolveOptions, DEFAULT_STEP_BUDGET};

/// Largest accepted norm error |1 - sum P - lost| of a propagation, and
/// positivity defect of a density matrix; above it a run fails instead of
/// reporting.
pub const NORM_ERROR_LIMIT: f64 = 1e-6;

/// Check a propagation before anything is reported from it.
pub fn check_solution(sol: &Solution) -> Result<(), Error> {
    let finite = sol
        .final_populations
        .iter()
        .chain(&sol.peak_populations)
        .chain([&sol.lost, &sol.norm_error])
        .all(|x| x.is_finite());
    if !finite {
        return Err(Error::NonFinite {
            stage: "propagation".into(),
        });
    }
    if sol.norm_error > NORM_ERROR_LIMIT {
        return Err(Error::NormError {
            norm_error: sol.norm_error,
            limit: NORM_ERROR_LIMIT,
        });
    }
    if sol.positivity_error > NORM_ERROR_LIMIT {
        return Err(Error::PositivityError {
            defect: sol.positivity_error,
            limit: NORM_ERROR_LIMIT,
        });
    }
    Ok(())
}

/// Refuse a population option (`--tolerance`, `--goal`) outside (0, 1].
pub fn check_population(what: &str, value: Option<f64>) -> Result<(), Error> {
    match value {
        Some(t) if !(t.is_finite() && t > 0.0 && t <= 1.0) => Err(Error::BadArgument {
            what: what.into(),
            message: format!("expected a population in (0, 1], found {t}"),
        }),
        _ => Ok(()),
    }
}

/// Refuse a `--tolerance` outside (0, 1].
pub fn check_tolerance(tolerance: Option<f64>) -> Result<(), Error> {
    check_population("--tolerance", tolerance)
}

/// What `vet` is asked for beyond the scheme.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct VetOptions {
    /// Spectator tolerance overriding the scheme's default (per-level
    /// tolerances still apply).
    pub tolerance: Option<f64>,
    /// Population every target must reach (targets below it are marked).
    pub goal: Option<f64>,
    /// Check each remedy by exact propagation of the changed scheme.
    pub check_remedies: bool,
    /// Step budget of every propagation (the main run and each remedy
    /// check), [`SolveOptions::step_budget`].
    pub step_budget: u64,
}

impl Default for VetOptions {
    fn default() -> Self {
        VetOptions {
            tolerance: None,
            goal: None,
            check_remedies: true,
            step_budget: DEFAULT_STEP_BUDGET,
        }
    }
}

impl VetOptions {
    /// The defaults with this tolerance.
    pub fn with_tolerance(mut self, tolerance: Option<f64>) -> Self {
        self.tolerance = tolerance;
        self
    }

    // Same shape as the ModelBuilder setters: one consuming setter per option.
    /// The defaults with this goal.
    pub fn with_goal(mut self, goal: Option<f64>) -> Self {
        self.goal = goal;
        self
    }

    /// Whether remedies are checked by exact propagation.
    pub fn with_remedy_checks(mut self, check: bool) -> Self {
        self.check_remedies = check;
        self
    }

    /// The step budget of every propagation of the run.
    pub fn with_step_budget(mut self, step_budget: u64) -> Self {
        self.step_budget = step_budget;
        self
    }
}

/// `inspect`: the dry run, nothing propagated.
pub fn inspect(model: &Model, provenance: Provenance) -> InspectReport {
    report::inspect(model, provenance)
}

/// Propagate and estimate one model and assemble its report (no remedy
/// checks, no goal), peak populations tracked.
pub fn vet_model(
    model: &Model,
    prov: Provenance,
    tolerance: Option<f64>,
) -> Result<VetReport, Error> {
    vet_model_with(model, prov, tolerance, true, DEFAULT_STEP_BUDGET)
}

/// [`vet_model`] with or without peak tracking: the points of a scan and of
/// `tune` show no peaks, so they skip that work (each level's peak
/// population is then its final one). `step_budget`:
/// [`SolveOptions::step_budget`].
pub(crate) fn vet_model_with(
    model: &Model,
    prov: Provenance,
    tolerance: Option<f64>,
    peaks: bool,
    step_budget: u64,
) -> Result<VetReport, Error> {
    let sol = solve::solve(
        model,
        &SolveOptions {
            peaks,
            step_budget,
            ..SolveOptions::default()
        },
    )?;
    check_solution(&sol)?;
    let est = estimate::estimate(model)?;
    let rep = report::vet(model, prov, &sol, &est, tolerance)?;
    if let Some(stage) = rep.first_non_finite() {
        return Err(Error::NonFinite { stage });
    }
    Ok(rep)
}

/// `vet`: the main job. The exact propagation beside the estimate, every
/// remedy checked exactly (unless switched off), targets judged against
/// the goal. The report's `flagged` and `targets_short` give the verdict.
/// A remedy whose check fails is reported as not checked (with the reason)
/// and does not fail the run: only the main propagation can.
pub fn vet(model: &Model, prov: Provenance, opts: &VetOptions) -> Result<VetReport, Error> {
    check_tolerance(opts.tolerance)?;
    check_population("--goal", opts.goal)?;
    let mut rep = vet_model_with(model, prov, opts.tolerance, true, opts.step_budget)?;
    if opts.check_remedies {
        remedies::check(model, &mut rep, opts.step_budget);
    }
    if let Some(g) = opts.goal {
        report::judge_targets(&mut rep, g);
    }
    if let Some(stage) = rep.first_non_finite() {
        return Err(Error::NonFinite { stage });
    }
    Ok(rep)
}

/// The exit status a vet report asks for: 0 within tolerance, 3 a leak or a
/// target short of its goal. Remedies not checked do not change it.
pub fn vet_status(rep: &VetReport) -> i32 {
    if rep.flagged > 0 || rep.targets_short > 0 {
        crate::error::EXIT_TOLERANCE
    } else {
        crate::error::EXIT_OK
    }
}
