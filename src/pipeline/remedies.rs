//! The exact check of each remedy the report proposes: the changed scheme
//! (Gaussian or Blackman envelope of the same intensity FWHM, or the pulse
//! lengthened to the estimate's length for tolerance) propagated again.
//!
//! A remedy is advice beside the result, so a check that cannot be run (the
//! changed scheme exceeds the step budget, is refused by the model's
//! builder, needs a method the scheme forbids, loses its norm) never aborts
//! the report: it is listed as not checked, with the reason.
//!
//! The checks together may do at most [`WORK_FACTOR`] times the work of
//! the main propagation (or [`WORK_FLOOR`], whichever is more; work counts
//! steps times the size of the state), so a large density matrix and a
//! remedy of a much longer pulse cannot turn a seconds-long report into
//! minutes: checks beyond that are listed as not checked, saying so.
//!
//! Owns: which changed models are propagated, their shared work budget, and
//! where their populations (or the reasons they are missing) go in the
//! report. Must not: propose remedies (the estimator does) or format.

use super::check_solution;
use crate::error::Error;
use crate::estimate;
use crate::model::Dynamics;
use crate::model::{Envelope, Model, ModelError};
use crate::report::{RemedyCheck, RemedyRow, UncheckedRemedy, VetReport};
use crate::solve::{self, SolveOptions};

/// The remedy checks of one report may do this many times the main run's work.
pub const WORK_FACTOR: f64 = 5.0;
/// ... or this much work (steps x state size), whichever is more: far above
/// what any check of a scheme of a few levels needs.
pub const WORK_FLOOR: f64 = 1e7;

/// The work budget the remedy checks share, in steps x state size.
struct Budget {
    /// Work per step: the size of the state (N for amplitudes, N^2 for a
    /// density matrix).
    per_step: f64,
    /// Steps the user allows one propagation.
    step_budget: u64,
    remaining: f64,
}

impl Budget {
    fn new(model: &Model, main_steps: u64, step_budget: u64) -> Budget {
        let n = model.levels().len() as f64;
        let per_step = match model.dynamics() {
            Dynamics::DensityMatrix => n * n,
            _ => n,
        };
        let total = (WORK_FACTOR * main_steps as f64 * per_step).max(WORK_FLOOR);
        Budget {
            per_step,
            step_budget,
            remaining: total,
        }
    }

    /// Why a check is not run, once the budget is spent.
    fn spent(&self) -> String {
        format!(
            "the remedy checks' shared budget ({WORK_FACTOR}x the main run's work, at least \
             {WORK_FLOOR:.0e} steps x state size) is spent; vet the changed scheme"
        )
    }

    /// The final population of level `k` in a changed model, within the
    /// remaining budget.
    fn final_population(
        &mut self,
        changed: Result<Model, ModelError>,
        k: usize,
    ) -> Result<f64, String> {
        let steps_left = (self.remaining / self.per_step).floor();
        if steps_left < 1.0 {
            return Err(self.spent());
        }
        let cap = (steps_left as u64).min(self.step_budget);
        let opts = SolveOptions {
            step_budget: cap,
            ..SolveOptions::default()
        };
        let model = changed.map_err(|e| Error::from(e).to_string())?;
        match solve::solve(&model, &opts) {
            Ok(sol) => {
                self.remaining -= sol.steps as f64 * self.per_step;
                check_solution(&sol).map_err(|e| e.to_string())?;
                Ok(sol.final_populations[k])
            }
            Err(solve::SolveError::StepBudget { .. }) if cap < self.step_budget => {
                self.remaining = 0.0;
                Err(self.spent())
            }
            Err(e) => Err(Error::from(e).to_string()),
        }
    }
}

/// Record the outcome of one check: its population, or why it is missing.
fn record(rm: &mut RemedyRow, check: RemedyCheck, outcome: Result<f64, String>) {
    let slot = match check {
        RemedyCheck::Gaussian => &mut rm.exact_gaussian,
        RemedyCheck::Blackman => &mut rm.exact_blackman,
        RemedyCheck::AtLength => &mut rm.exact_at_length,
    };
    match outcome {
        Ok(p) => *slot = Some(p),
        Err(e) => {
            *slot = None;
            rm.not_checked.push(UncheckedRemedy::new(check, e));
        }
    }
}

/// Fill the `exact_*` populations of every remedy of the report, each run
/// with at most `step_budget` steps and all within the shared work budget;
/// a check that fails is listed in the remedy's `not_checked` instead.
pub(super) fn check(model: &Model, rep: &mut VetReport, step_budget: u64) {
    let mut budget = Budget::new(model, rep.solver.steps, step_budget);
    for (k, row) in rep.levels.iter_mut().enumerate() {
        let Some(rm) = row.remedy.as_mut() else {
            continue;
        };
        let Some(f) = model.fields.iter().position(|f| f.id == rm.field) else {
            continue;
        };
        let env = &model.fields[f].envelope;
        let center = env.center();
        let sigma = crate::model::gaussian_sigma_from_intensity_fwhm(rm.fwhm);
        let gaussian = model.with_field_envelope(f, Envelope::Gaussian { center, sigma }, 1.0);
        record(
            rm,
            RemedyCheck::Gaussian,
            budget.final_population(gaussian, k),
        );
        if let Some(frac) = estimate::intensity_fwhm(&Envelope::Blackman {
            start: 0.0,
            duration: 1.0,
        }) {
            let duration = rm.fwhm / frac;
            let blackman = Envelope::Blackman {
                start: center - 0.5 * duration,
                duration,
            };
            let changed = model.with_field_envelope(f, blackman, 1.0);
            record(
                rm,
                RemedyCheck::Blackman,
                budget.final_population(changed, k),
            );
        }
        if let Some(len) = rm.length_for_tolerance {
            let s = len / rm.present_length;
            if s.is_finite() && s > 0.0 {
                let changed = model.with_field_envelope(f, env.stretched(s), 1.0 / s);
                record(
                    rm,
                    RemedyCheck::AtLength,
                    budget.final_population(changed, k),
                );
            }
        }
    }
}

#[cfg(test)]
mod tests {
    //! The shared work budget of the remedy checks (a defect found in
    //! review: each check had the full step budget of its own, so the checks
    //! of a 24-sublevel density matrix took minutes after a 0.5 s main run).
    use super::*;

    /// A resonant Gaussian pulse on a two-level scheme (invented,
    /// illustrative numbers), solved by the adaptive stepper.
    fn model() -> Model {
        let text = r#"levels:
  g: {energy: "0 cm^-1"}
  e: {energy: "12000 cm^-1"}
initial: g
couplings:
  - {between: [g, e], dipole: 1}
fields:
  L:
    tuned: {to: [g, e], detuning: "5 MHz"}
    rabi: {on: [g, e], value: "10 MHz"}
    envelope: {shape: gaussian, center: "500 ns", fwhm: "200 ns"}
window: {start: "0 ns", end: "1000 ns"}
solver: {method: adaptive}
"#;
        crate::parse(text, "budget.yaml").expect("a valid scheme")
    }

    fn steps(model: &Model) -> u64 {
        solve::solve(model, &SolveOptions::default())
            .expect("propagation")
            .steps
    }

    // The work of a check is taken from the shared budget (steps x N).
    #[test]
    fn a_check_spends_its_steps_times_the_state_size() {
        let m = model();
        let direct = solve::solve(&m, &SolveOptions::default()).expect("propagation");
        let n = direct.steps;
        assert!(n > 20, "the pulse takes {n} steps");
        let mut b = Budget {
            per_step: 2.0,
            step_budget: 1_000_000,
            remaining: 1e9,
        };
        let p = b.final_population(Ok(m), 1).expect("checked");
        assert_eq!(p, direct.final_populations[1]);
        assert_eq!(b.remaining, 1e9 - 2.0 * n as f64);
    }

    // A check that would outrun the remaining budget is stopped by it and
    // reported as not checked for that reason; later checks are refused
    // without running.
    #[test]
    fn a_spent_budget_stops_the_checks_and_says_why() {
        let m = model();
        let n = steps(&m);
        let mut b = Budget {
            per_step: 2.0,
            step_budget: 1_000_000,
            remaining: 2.0 * (n / 2) as f64,
        };
        let e = b
            .final_population(Ok(m.clone()), 1)
            .expect_err("budget spent");
        assert!(e.contains("shared budget"), "{e}");
        assert_eq!(b.remaining, 0.0);
        let again = b.final_population(Ok(m), 1).expect_err("no budget left");
        assert_eq!(again, e);
    }

    // The user's step budget still bounds one check, and running into it
    // names the step budget, not the shared one.
    #[test]
    fn the_step_budget_still_bounds_one_check() {
        let m = model();
        let mut b = Budget {
            per_step: 2.0,
            step_budget: 5,
            remaining: 1e9,
        };
        let e = b.final_population(Ok(m), 1).expect_err("step budget");
        assert!(!e.contains("shared budget"), "{e}");
        assert_eq!(b.remaining, 1e9);
    }

    // Work per step: N for amplitudes, N^2 for a density matrix; the floor
    // applies to small schemes (a few-level scheme never meets the budget).
    #[test]
    fn the_budget_scales_with_the_main_run_and_the_state() {
        let m = model();
        let b = Budget::new(&m, 10, 1_000);
        assert_eq!(b.per_step, 2.0);
        assert_eq!(b.remaining, WORK_FLOOR);
        let b = Budget::new(&m, 10_000_000, 1_000);
        assert_eq!(b.remaining, WORK_FACTOR * 1e7 * 2.0);
    }
}
