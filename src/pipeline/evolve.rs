//! `evolve`: the populations of every level at evenly spaced times over the
//! scheme's window, with the limits that keep the output bounded.
//!
//! Owns: the sample-count limits and the [`Evolution`] data. Must not:
//! spell the CSV or draw the plot (renderers do), or write files.

use super::check_solution;
use crate::error::Error;
use crate::model::Model;
use crate::solve::{self, MethodUsed, SolveOptions, DEFAULT_STEP_BUDGET};

/// Largest number of samples `evolve` accepts.
pub const MAX_SAMPLES: usize = 1_000_000;

/// Largest number of population values (samples x levels) `evolve` writes:
/// a CSV of at most about 250 MB, held in memory once as numbers and once as
/// text.
pub const MAX_EVOLVE_VALUES: usize = 10_000_000;

/// Largest number of points (samples x levels) `evolve --plot` draws: an SVG
/// of about 8 MB per million points.
pub const MAX_PLOT_POINTS: usize = 1_000_000;

/// Populations against time, with the method that produced them.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Evolution {
    /// (absolute scheme time in s, population of every level in model order).
    pub samples: Vec<(f64, Vec<f64>)>,
    /// Per sample, for a scheme that uses the open-system keys
    /// ([`Model::uses_open_system`]; None otherwise): the population lost
    /// from the scheme so far and the photons per atom scattered from the
    /// window start up to the sample, all levels (cumulative).
    pub open: Option<Vec<(f64, f64)>>,
    pub method: MethodUsed,
    pub rtol: f64,
    pub atol: f64,
}

fn bad(what: &str, message: String) -> Error {
    Error::BadArgument {
        what: what.into(),
        message,
    }
}

/// Refuse sample counts outside the limits before anything runs. `plot`:
/// the samples will also be drawn.
pub fn check_samples(samples: usize, n_levels: usize, plot: bool) -> Result<(), Error> {
    if !(2..=MAX_SAMPLES).contains(&samples) {
        return Err(bad(
            "--samples",
            format!("expected 2 to {MAX_SAMPLES} samples, found {samples}"),
        ));
    }
    let values = samples.saturating_mul(n_levels);
    if values > MAX_EVOLVE_VALUES {
        return Err(bad(
            "--samples",
            format!(
                "{samples} samples x {n_levels} levels = {values} population values, more than the limit of \
                 {MAX_EVOLVE_VALUES}; use at most {} samples for this scheme",
                MAX_EVOLVE_VALUES / n_levels.max(1)
            ),
        ));
    }
    if plot && values > MAX_PLOT_POINTS {
        return Err(bad(
            "--plot",
            format!(
                "{samples} samples x {n_levels} levels = {values} points, more than the plot limit of \
                 {MAX_PLOT_POINTS}; use at most {} samples with --plot",
                MAX_PLOT_POINTS / n_levels.max(1)
            ),
        ));
    }
    Ok(())
}

/// Propagate the model and record `samples` evenly spaced samples of the
/// populations over its window, both ends included (and, for a scheme that
/// uses the open-system keys, the lost population and the cumulative
/// scattered photons at each).
pub fn evolve(model: &Model, samples: usize) -> Result<Evolution, Error> {
    evolve_with_budget(model, samples, DEFAULT_STEP_BUDGET)
}

/// [`evolve`] with this step budget ([`SolveOptions::step_budget`]).
pub fn evolve_with_budget(
    model: &Model,
    samples: usize,
    step_budget: u64,
) -> Result<Evolution, Error> {
    check_samples(samples, model.levels.len(), false)?;
    let sol = solve::solve(
        model,
        &SolveOptions {
            samples,
            // The samples are what is shown; peaks between them are not.
            peaks: false,
            step_budget,
        },
    )?;
    check_solution(&sol)?;
    if sol
        .samples
        .iter()
        .any(|(t, pops)| !t.is_finite() || pops.iter().any(|p| !p.is_finite()))
    {
        return Err(Error::NonFinite {
            stage: "time samples".into(),
        });
    }
    let open = if model.uses_open_system() {
        if sol.sample_lost.len() != sol.samples.len()
            || sol.sample_emitted.len() != sol.samples.len()
        {
            // Both equations count emissions; one that did not would be
            // refused here rather than written with a column missing.
            return Err(Error::NonFinite {
                stage: "the lost population and scattered photons of the time samples".into(),
            });
        }
        Some(
            sol.sample_lost
                .into_iter()
                .zip(sol.sample_emitted)
                .collect(),
        )
    } else {
        None
    };
    Ok(Evolution {
        samples: sol.samples,
        open,
        method: sol.method,
        rtol: sol.rtol,
        atol: sol.atol,
    })
}
