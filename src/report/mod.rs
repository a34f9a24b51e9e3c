//! The reports: plain data assembled from the model, the exact solution and
//! the perturbative estimate. Every number a renderer shows is computed here.
//!
//! Owns: [`VetReport`], [`InspectReport`], roles, flags, reliability marks,
//! remedies, provenance and the laser-safety notes, and their serialised
//! form (the JSON keys of the contract, `docs/output-format.md`). Must not:
//! format numbers, choose units for display, print, or run a propagator (it
//! receives the [`Solution`](crate::solve::Solution) and the
//! [`Estimate`](crate::estimate::Estimate) already made).
//!
//! Numbers are SI with angular frequencies inside every report type; the
//! serialised keys name their unit (`_mhz`, `_nm`, `_w_per_cm2`, `_s`) and
//! the conversion happens only in [`json_units`]. The public report structs
//! are `#[non_exhaustive]`: code outside the crate reads them and receives
//! them from [`vet`] and [`inspect`], it does not build them, so a new field
//! (a new JSON key) breaks nobody.

mod inspect;
mod json_units;
mod provenance;
mod safety;
#[cfg(test)]
pub(crate) mod sample;
mod vet;

pub use inspect::{
    inspect, InspectDrive, InspectField, InspectLevel, InspectReport, ManifoldCentre,
};
pub use provenance::{Provenance, SolverFacts};
pub use safety::{safety_notes, SafetyNote, SAFETY_INTENSITY};
pub use vet::{
    judge_targets, vet, Channel, ExcludedRow, LevelRow, RemedyCheck, RemedyRow, SourceRow,
    UncheckedRemedy, VetReport, NEGLIGIBLE, UNRELIABLE_ABOVE, UNRELIABLE_FACTOR,
};

use crate::model::{Level, Model};
use serde::Serialize;

/// The quantum numbers of a level a manifold generated, as its JSON keys
/// carry them: `manifold`, `J`, `F` and, for a Zeeman sublevel, `m_F`
/// (whole numbers as integers, half-integers as 1.5). A report row holds
/// `None` for a level written by hand, and then has none of these keys.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct QuantumNumbers {
    pub manifold: String,
    #[serde(rename = "J", serialize_with = "json_units::half")]
    pub j: f64,
    #[serde(rename = "F", serialize_with = "json_units::half")]
    pub f: f64,
    /// None for a whole F level (`resolve: hyperfine`): no key then.
    #[serde(
        rename = "m_F",
        serialize_with = "json_units::half_opt",
        skip_serializing_if = "Option::is_none"
    )]
    pub m_f: Option<f64>,
}

impl QuantumNumbers {
    /// The quantum numbers of a generated level; None for a v1 level.
    pub fn of(level: &Level) -> Option<QuantumNumbers> {
        let o = level.origin.as_ref()?;
        let half = |two: i32| f64::from(two) / 2.0;
        Some(QuantumNumbers {
            manifold: o.manifold.clone(),
            j: half(o.two_j),
            f: half(o.two_f),
            m_f: o.two_m_f.map(half),
        })
    }

    /// A hand-made set (for callers that build report rows in tests).
    pub fn new(manifold: &str, j: f64, f: f64, m_f: Option<f64>) -> QuantumNumbers {
        QuantumNumbers {
            manifold: manifold.to_string(),
            j,
            f,
            m_f,
        }
    }
}

/// Role of a level in the scheme. Serialised as [`Role::as_str`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Role {
    Initial,
    Target,
    Spectator,
}

impl Role {
    pub fn as_str(&self) -> &'static str {
        match self {
            Role::Initial => "initial",
            Role::Target => "target",
            Role::Spectator => "spectator",
        }
    }
}

/// Role of every level.
pub fn roles(model: &Model) -> Vec<Role> {
    (0..model.levels.len())
        .map(|k| {
            if model.initial[k] > 0.0 {
                Role::Initial
            } else if model.targets.contains(&k) {
                Role::Target
            } else {
                Role::Spectator
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roles_serialise_as_their_names() {
        for r in [Role::Initial, Role::Target, Role::Spectator] {
            assert_eq!(serde_json::to_value(r).unwrap(), r.as_str());
        }
    }
}
