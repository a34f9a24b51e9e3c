//! The exact check of each remedy the report proposes: the changed scheme
//! (Gaussian or Blackman envelope of the same intensity FWHM, or the pulse
//! lengthened to the estimate's length for tolerance) propagated again.
//!
//! Owns: which changed models are propagated and where their populations go
//! in the report. Must not: propose remedies (the estimator does) or format.

use super::check_solution;
use crate::error::Error;
use crate::estimate;
use crate::model::{Envelope, Model};
use crate::report::VetReport;
use crate::solve::{self, SolveOptions};

/// The final population of level `k` in a changed model.
fn final_population(m: &Model, k: usize) -> Result<f64, Error> {
    let sol = solve::solve(m, &SolveOptions::default())?;
    check_solution(&sol)?;
    Ok(sol.final_populations[k])
}

/// Fill the `exact_*` populations of every remedy of the report.
pub(super) fn check(model: &Model, rep: &mut VetReport) -> Result<(), Error> {
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
        rm.exact_gaussian = Some(final_population(
            &model.with_field_envelope(f, Envelope::Gaussian { center, sigma }, 1.0)?,
            k,
        )?);
        if let Some(frac) = estimate::intensity_fwhm(&Envelope::Blackman {
            start: 0.0,
            duration: 1.0,
        }) {
            let duration = rm.fwhm / frac;
            let blackman = Envelope::Blackman {
                start: center - 0.5 * duration,
                duration,
            };
            rm.exact_blackman = Some(final_population(
                &model.with_field_envelope(f, blackman, 1.0)?,
                k,
            )?);
        }
        if let Some(len) = rm.length_for_tolerance {
            let s = len / rm.present_length;
            if s.is_finite() && s > 0.0 {
                rm.exact_at_length = Some(final_population(
                    &model.with_field_envelope(f, env.stretched(s), 1.0 / s)?,
                    k,
                )?);
            }
        }
    }
    Ok(())
}
