//! How a result was produced: the tool, the scheme file and its hash, the
//! solver and its tolerances. Every report carries them.
//!
//! Owns: [`Provenance`] and [`SolverFacts`]. Must not: hash files or read
//! them (the app hands over the path and the SHA-256 it computed).

use super::json_units;
use crate::solve::MethodUsed;
use serde::Serialize;

/// How a result was produced.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct Provenance {
    pub tool: String,
    pub version: String,
    pub scheme_file: String,
    pub scheme_sha256: String,
}

impl Provenance {
    pub fn new(scheme_file: &str, scheme_sha256: &str) -> Self {
        Provenance {
            tool: env!("CARGO_PKG_NAME").to_string(),
            version: env!("CARGO_PKG_VERSION").to_string(),
            scheme_file: scheme_file.to_string(),
            scheme_sha256: scheme_sha256.to_string(),
        }
    }
}

/// Solver facts every result states.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct SolverFacts {
    #[serde(serialize_with = "json_units::method")]
    pub method: MethodUsed,
    pub rtol: f64,
    pub atol: f64,
    /// rad/s
    #[serde(rename = "detuning_cutoff_mhz", serialize_with = "json_units::mhz")]
    pub detuning_cutoff: f64,
    pub steps: u64,
    pub evaluations: u64,
    /// Peaks recorded only at the ends of sub-steps the step budget
    /// stretched: lower bounds (absent when false).
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub peaks_lower_bounds: bool,
}
