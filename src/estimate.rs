//! The perturbative estimator: first-order (and, where first order cannot
//! reach a level, second-order) time-dependent perturbation theory from the
//! initial populations, per drive, so every estimate is a sum of named parts.
//!
//! Owns: [`Estimate`]. Must not: call the propagators (the two meet only in
//! the report), print, or know about output formats.
//!
//! INTERFACE FROZEN: fields may be added, none renamed or removed.

use crate::model::Model;

/// Order of perturbation theory an estimate comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Order {
    /// The level is initially populated: no estimate.
    Initial,
    /// No drive reaches it at first or second order: estimate 0.
    Unreached,
    First,
    Second,
}

/// One drive's contribution to a level's estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct Source {
    /// Index into `Model::drives`.
    pub drive: usize,
    /// Level the amplitude comes from (an initial level at first order, the
    /// intermediate level at second order).
    pub from: usize,
    /// Detuning of the drive on this transition as seen from `from` (rad/s),
    /// omega_L -/+ omega_transition, at the envelope centre.
    pub detuning: f64,
    /// Peak Rabi frequency (rad/s).
    pub rabi: f64,
    /// This contribution alone, |c^(n)|^2.
    pub population: f64,
}

/// The estimate of one level.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelEstimate {
    pub order: Order,
    /// |c_k^(1)(T)|^2 (all first-order parts summed coherently); None for initial levels.
    pub first_order: Option<f64>,
    /// |c_k^(2)(T)|^2 where first order is 0 and second order is not.
    pub second_order: Option<f64>,
    /// Contributions, largest first.
    pub sources: Vec<Source>,
}

/// A drive left out of the dynamics by the detuning cutoff.
#[derive(Debug, Clone, PartialEq)]
pub struct ExcludedDrive {
    /// Index into `Model::drives`.
    pub drive: usize,
    /// First-order population it would transfer (from the initial levels).
    pub population: f64,
    /// Light (AC Stark) shift it causes on the lower level, rad/s
    /// (Omega^2 / (4 Delta) at the peak; sign: shift of the lower level's energy).
    pub light_shift: f64,
}

/// A computed remedy for one leaking level.
#[derive(Debug, Clone, PartialEq)]
pub struct Remedy {
    /// Drive that dominates the leak (index into `Model::drives`).
    pub drive: usize,
    /// First-order estimate with the same pulse area but a Gaussian envelope
    /// of the same duration measure (documented in the doc of `remedy`).
    pub gaussian_same_area: f64,
    /// Same with a Blackman envelope.
    pub blackman_same_area: f64,
    /// Pulse length (s) at the same area and shape at which the estimate falls
    /// below the tolerance, if one exists within a factor 1e4 of the present one.
    pub length_for_tolerance: Option<f64>,
}

/// The estimate of every level.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// One entry per level, model order.
    pub levels: Vec<LevelEstimate>,
    /// Drives beyond the detuning cutoff.
    pub excluded: Vec<ExcludedDrive>,
}

/// Why an estimate failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EstimateError {
    #[error("non-finite value in the perturbative estimate ({0})")]
    NonFinite(String),
}

/// First- and second-order estimate of every level.
pub fn estimate(model: &Model) -> Result<Estimate, EstimateError> {
    let _ = model;
    Err(EstimateError::NonFinite("not built yet".into()))
}

/// Remedy for a leak into `level` at `tolerance`.
pub fn remedy(model: &Model, level: usize, tolerance: f64) -> Result<Option<Remedy>, EstimateError> {
    let _ = (model, level, tolerance);
    Ok(None)
}
