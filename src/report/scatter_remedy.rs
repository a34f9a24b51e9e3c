//! The remedy row of a leak fed by spontaneous emission (optical pumping):
//! the field to turn down, shorten or detune and by how much, beside the
//! exact populations of the changed schemes (filled in by the pipeline).
//!
//! Owns: [`ScatterRemedyRow`], [`ScatterCheck`], [`UncheckedScatterRemedy`]
//! and the row's construction from the estimator's
//! [`ScatterRemedy`](crate::estimate::ScatterRemedy). Must not: run a
//! propagator, format numbers.

use super::json_units;
use crate::estimate::ScatterRemedy;
use crate::model::Model;
use serde::Serialize;

// Same shape as the other report rows: one serde field per JSON key (docs/output-format.md).
/// How a decay-fed leak could be brought to its tolerance (weak-drive rate
/// estimate), and the exact check of each change.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct ScatterRemedyRow {
    /// The field whose drives feed most of the leak.
    pub field: String,
    /// The initially populated level that field excites, and the decaying
    /// level the population comes through (its largest source).
    pub from: String,
    pub via: String,
    /// Detuning of that drive now (rad/s).
    #[serde(rename = "detuning_mhz", serialize_with = "json_units::mhz")]
    pub detuning: f64,
    /// The part of the level's estimate fed through the field.
    #[serde(rename = "fed_by_field_population")]
    pub fed_by_field: f64,
    /// Factor on the field's intensity, or on its pulse length at the same
    /// peak Rabi frequency, that brings the estimate to the tolerance.
    pub factor_for_tolerance: f64,
    /// The drive's detuning (rad/s) at which the estimate meets the
    /// tolerance, with the carrier moved away from the line; None when no
    /// shift within 1e5 line widths does.
    #[serde(
        rename = "detuning_for_tolerance_mhz",
        serialize_with = "json_units::mhz_opt"
    )]
    pub detuning_for_tolerance: Option<f64>,
    /// The level's population in the changed schemes, by exact propagation.
    #[serde(rename = "exact_population_at_intensity")]
    pub exact_at_intensity: Option<f64>,
    #[serde(rename = "exact_population_at_length")]
    pub exact_at_length: Option<f64>,
    #[serde(rename = "exact_population_at_detuning")]
    pub exact_at_detuning: Option<f64>,
    /// The exact checks that could not be run, each with its reason.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub not_checked: Vec<UncheckedScatterRemedy>,
}

/// Which change of a decay-fed leak's remedy an exact check concerns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum ScatterCheck {
    /// The field's intensity times the factor.
    Intensity,
    /// The field's pulse length times the factor, same peak Rabi frequency.
    Length,
    /// The field's carrier moved to the detuning for tolerance.
    Detuning,
}

impl ScatterCheck {
    /// The name of the check as the JSON value spells it.
    pub fn as_str(self) -> &'static str {
        match self {
            ScatterCheck::Intensity => "intensity",
            ScatterCheck::Length => "length",
            ScatterCheck::Detuning => "detuning",
        }
    }
}

/// An exact check of a decay-fed leak's remedy that could not be run.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct UncheckedScatterRemedy {
    pub check: ScatterCheck,
    /// Why, as the CLI would print it.
    pub reason: String,
}

impl ScatterRemedyRow {
    /// The row of the estimator's remedy, exact checks not yet run.
    pub(super) fn new(model: &Model, r: &ScatterRemedy) -> Self {
        ScatterRemedyRow {
            field: model.fields[r.field].id.clone(),
            from: model.levels[r.from].id.clone(),
            via: model.levels[r.via].id.clone(),
            detuning: r.detuning,
            fed_by_field: r.fed_by_field,
            factor_for_tolerance: r.factor,
            detuning_for_tolerance: r.carrier_shift.map(|d| r.detuning + d),
            exact_at_intensity: None,
            exact_at_length: None,
            exact_at_detuning: None,
            not_checked: Vec::new(),
        }
    }

    /// Every number of the row, for the report's finiteness check.
    pub(super) fn numbers(&self) -> impl Iterator<Item = f64> + '_ {
        [self.detuning, self.fed_by_field, self.factor_for_tolerance]
            .into_iter()
            .chain(self.detuning_for_tolerance)
            .chain(self.exact_at_intensity)
            .chain(self.exact_at_length)
            .chain(self.exact_at_detuning)
    }

    /// Record the outcome of one exact check.
    pub fn record(&mut self, check: ScatterCheck, outcome: Result<f64, String>) {
        let slot = match check {
            ScatterCheck::Intensity => &mut self.exact_at_intensity,
            ScatterCheck::Length => &mut self.exact_at_length,
            ScatterCheck::Detuning => &mut self.exact_at_detuning,
        };
        let outcome = outcome.and_then(|p| {
            if p.is_finite() {
                Ok(p)
            } else {
                Err("the changed scheme's population is not finite".to_string())
            }
        });
        match outcome {
            Ok(p) => *slot = Some(p),
            Err(reason) => {
                *slot = None;
                self.not_checked
                    .push(UncheckedScatterRemedy { check, reason });
            }
        }
    }
}
