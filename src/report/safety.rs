//! Laser-safety notes: which fields are intense enough, or of unknown
//! intensity, for the report to carry the caution.
//!
//! Owns: [`SafetyNote`], [`SAFETY_INTENSITY`] and the choice of fields.
//! Must not: word the caution (the renderers do) or classify hazards.

use super::json_units;
use crate::model::Model;
use serde::Serialize;

/// Peak intensity (W/m^2) at and above which a field gets a laser-safety note:
/// 25 W/m^2 = 2.5 mW/cm^2, the order of the ocular maximum permissible
/// exposure for visible CW light over the 0.25 s aversion time in the laser
/// safety standards (IEC 60825-1, ANSI Z136.1; from memory). The note is a
/// reminder, not a hazard classification.
pub const SAFETY_INTENSITY: f64 = 25.0;

/// A laser-safety note about one field.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct SafetyNote {
    pub field: String,
    /// W/m^2; None when the scheme sets the field by Rabi frequency on a
    /// relative dipole, so its intensity is unknown.
    #[serde(
        rename = "peak_intensity_w_per_cm2",
        serialize_with = "json_units::w_per_cm2_opt"
    )]
    pub peak_intensity: Option<f64>,
}

/// Fields whose peak intensity reaches [`SAFETY_INTENSITY`] or is unknown.
pub fn safety_notes(model: &Model) -> Vec<SafetyNote> {
    model
        .fields
        .iter()
        .filter(|f| f.peak_intensity.is_none_or(|i| i >= SAFETY_INTENSITY))
        .map(|f| SafetyNote {
            field: f.id.clone(),
            peak_intensity: f.peak_intensity,
        })
        .collect()
}
