//! The exact check of each remedy the report proposes: the changed scheme
//! (Gaussian or Blackman envelope of the same intensity FWHM, or the pulse
//! lengthened to the estimate's length for tolerance) propagated again.
//!
//! A remedy is advice beside the result, so a check that cannot be run (the
//! changed scheme exceeds the step budget, is refused by the model's
//! builder, needs a method the scheme forbids, loses its norm) never aborts
//! the report: it is listed as not checked, with the reason.
//!
//! Owns: which changed models are propagated and where their populations (or
//! the reasons they are missing) go in the report. Must not: propose
//! remedies (the estimator does) or format.

use super::check_solution;
use crate::error::Error;
use crate::estimate;
use crate::model::{Envelope, Model, ModelError};
use crate::report::{RemedyCheck, RemedyRow, UncheckedRemedy, VetReport};
use crate::solve::{self, SolveOptions};

/// The final population of level `k` in a changed model.
fn final_population(
    changed: Result<Model, ModelError>,
    k: usize,
    step_budget: u64,
) -> Result<f64, Error> {
    let opts = SolveOptions {
        step_budget,
        ..SolveOptions::default()
    };
    let sol = solve::solve(&changed?, &opts)?;
    check_solution(&sol)?;
    Ok(sol.final_populations[k])
}

/// Record the outcome of one check: its population, or why it is missing.
fn record(rm: &mut RemedyRow, check: RemedyCheck, outcome: Result<f64, Error>) {
    let slot = match check {
        RemedyCheck::Gaussian => &mut rm.exact_gaussian,
        RemedyCheck::Blackman => &mut rm.exact_blackman,
        RemedyCheck::AtLength => &mut rm.exact_at_length,
    };
    match outcome {
        Ok(p) => *slot = Some(p),
        Err(e) => {
            *slot = None;
            rm.not_checked
                .push(UncheckedRemedy::new(check, e.to_string()));
        }
    }
}

/// Fill the `exact_*` populations of every remedy of the report, each run
/// with `step_budget`; a check that fails is listed in the remedy's
/// `not_checked` instead.
pub(super) fn check(model: &Model, rep: &mut VetReport, step_budget: u64) {
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
            final_population(gaussian, k, step_budget),
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
                final_population(changed, k, step_budget),
            );
        }
        if let Some(len) = rm.length_for_tolerance {
            let s = len / rm.present_length;
            if s.is_finite() && s > 0.0 {
                let changed = model.with_field_envelope(f, env.stretched(s), 1.0 / s);
                record(
                    rm,
                    RemedyCheck::AtLength,
                    final_population(changed, k, step_budget),
                );
            }
        }
    }
}
