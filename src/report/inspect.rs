//! The inspect report: the planner's dry run, no dynamics. Levels, every
//! drive (transition, wavelength, detuning, Rabi frequency, pulse area,
//! left out or not) and every field.
//!
//! Owns: [`InspectReport`] and its rows. Must not:
//! propagate or estimate, format numbers.

use super::json_units;
use super::safety::{safety_notes, SafetyNote};
use super::{roles, Provenance, QuantumNumbers, Role};
use crate::model::{Dipole, InitialKind, Model};
use crate::units::C;
use serde::Serialize;

// Struct fields are in the order of the JSON keys (serde_json keeps it).

/// One level of the inspect report.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct InspectLevel {
    pub id: String,
    /// `manifold`, `J`, `F`, `m_F` of a generated level; no keys for a v1 level.
    #[serde(flatten)]
    pub quantum: Option<QuantumNumbers>,
    /// Energy / h, Hz (cyclic).
    pub energy_hz: f64,
    /// Energy in cm^-1.
    pub energy_cm: f64,
    pub label: Option<String>,
    /// Lifetime (s), None for a stable level.
    #[serde(rename = "lifetime_s")]
    pub lifetime: Option<f64>,
    pub role: Role,
    pub initial_population: f64,
    pub tolerance: f64,
    /// Energy / h relative to the centre of gravity of the level's
    /// manifold (Hz), for a generated level; the text formats show it
    /// instead of the absolute energy. Not in the JSON (`energy_hz` is).
    #[serde(skip)]
    pub centre_offset_hz: Option<f64>,
}

/// The centre of gravity of one manifold, for the text formats (not in
/// the JSON: each generated level carries its absolute `energy_hz`).
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct ManifoldCentre {
    pub id: String,
    pub j: f64,
    /// Energy / h of the centre (Hz).
    pub energy_hz: f64,
    /// The same in cm^-1.
    pub energy_cm: f64,
    /// How many levels the manifold generated.
    pub levels: usize,
}

/// One drive of the inspect report.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct InspectDrive {
    pub field: String,
    pub lower: String,
    pub upper: String,
    /// Transition frequency (Hz, cyclic).
    pub transition_hz: f64,
    /// Detuning / 2 pi (Hz).
    #[serde(rename = "detuning_mhz", serialize_with = "json_units::hz_as_mhz")]
    pub detuning_hz: f64,
    /// Peak Rabi frequency / 2 pi (Hz).
    #[serde(rename = "rabi_mhz", serialize_with = "json_units::hz_as_mhz")]
    pub rabi_hz: f64,
    pub included: bool,
    /// Vacuum wavelength of the transition (m); None for a zero splitting.
    #[serde(rename = "wavelength_nm", serialize_with = "json_units::nm_opt")]
    pub wavelength: Option<f64>,
    /// Pulse area (rad).
    #[serde(rename = "pulse_area_rad")]
    pub area: f64,
    /// Whether the coupling's dipole is a relative (bare) number.
    pub relative_dipole: bool,
}

// Same shape as the vet report rows: one serde field per JSON key (docs/output-format.md).
/// One field of the inspect report.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct InspectField {
    pub id: String,
    /// Carrier frequency (Hz, cyclic).
    pub frequency_hz: f64,
    /// Vacuum wavelength (m).
    #[serde(rename = "wavelength_nm", serialize_with = "json_units::nm")]
    pub wavelength: f64,
    /// Envelope shape name.
    #[serde(rename = "envelope")]
    pub shape: String,
    /// Duration measure (s): [`crate::model::Envelope::length`], the one definition
    /// remedies use too.
    #[serde(rename = "length_s")]
    pub length: f64,
    /// W/m^2
    #[serde(
        rename = "peak_intensity_w_per_cm2",
        serialize_with = "json_units::w_per_cm2_opt"
    )]
    pub peak_intensity: Option<f64>,
    /// Chirp beta (Hz/s).
    pub chirp_hz_per_s: f64,
    pub rwa: bool,
}

/// The inspect report: the planner's dry run, no dynamics.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct InspectReport {
    pub levels: Vec<InspectLevel>,
    pub drives: Vec<InspectDrive>,
    pub fields: Vec<InspectField>,
    /// Start and end of the time window (s).
    #[serde(rename = "window_s")]
    pub window: (f64, f64),
    pub tolerance: f64,
    /// rad/s
    #[serde(rename = "detuning_cutoff_mhz", serialize_with = "json_units::mhz")]
    pub detuning_cutoff: f64,
    pub provenance: Provenance,
    pub title: Option<String>,
    /// Not in the JSON of version 1 (the text formats show it); adding it
    /// would be a new key, allowed by the contract.
    #[serde(skip)]
    pub safety: Vec<SafetyNote>,
    /// How the initial populations combine, and how many levels are
    /// populated (the text says how a version-1 map of several is taken).
    /// Not in the JSON.
    #[serde(skip)]
    pub initial_kind: InitialKind,
    #[serde(skip)]
    pub initial_levels: usize,
    /// The manifolds' centres, in the order their levels come. Not in the
    /// JSON.
    #[serde(skip)]
    pub manifolds: Vec<ManifoldCentre>,
}

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

/// Assemble the inspect report.
pub fn inspect(model: &Model, provenance: Provenance) -> InspectReport {
    let roles = roles(model);
    let levels = model
        .levels
        .iter()
        .enumerate()
        .map(|(k, l)| {
            let hz = l.omega / TWO_PI;
            InspectLevel {
                id: l.id.clone(),
                quantum: QuantumNumbers::of(l),
                centre_offset_hz: l.origin.as_ref().map(|o| o.offset / TWO_PI),
                label: l.label.clone(),
                energy_hz: hz,
                energy_cm: hz / C / 100.0,
                lifetime: (l.gamma > 0.0).then(|| 1.0 / l.gamma),
                role: roles[k],
                initial_population: model.initial[k],
                tolerance: model.tolerance_of(k),
            }
        })
        .collect();
    let drives = model
        .drives
        .iter()
        .map(|d| {
            let c = &model.couplings[d.coupling];
            let hz = model.transition_omega(d.coupling) / TWO_PI;
            InspectDrive {
                field: model.fields[d.field].id.clone(),
                lower: model.levels[c.lower].id.clone(),
                upper: model.levels[c.upper].id.clone(),
                transition_hz: hz,
                wavelength: (hz > 0.0).then(|| C / hz),
                detuning_hz: model.detuning(d) / TWO_PI,
                rabi_hz: d.rabi / TWO_PI,
                area: model.pulse_area(d),
                included: model.drive_included(d),
                relative_dipole: matches!(c.dipole, Dipole::Relative(_)),
            }
        })
        .collect();
    let fields = model
        .fields
        .iter()
        .map(|f| {
            let hz = f.omega / TWO_PI;
            InspectField {
                id: f.id.clone(),
                frequency_hz: hz,
                wavelength: C / hz,
                shape: f.envelope.shape_name().to_string(),
                length: f.envelope.length(),
                peak_intensity: f.peak_intensity,
                chirp_hz_per_s: f.chirp / TWO_PI,
                rwa: f.rwa,
            }
        })
        .collect();
    InspectReport {
        title: model.title.clone(),
        provenance,
        levels,
        drives,
        fields,
        window: (model.window.start, model.window.end),
        tolerance: model.tolerance,
        detuning_cutoff: model.solver.detuning_cutoff,
        safety: safety_notes(model),
        initial_kind: model.initial_kind(),
        initial_levels: model.initial().iter().filter(|p| **p > 0.0).count(),
        manifolds: manifold_centres(model),
    }
}

/// Each manifold's centre once, from its levels (energy minus the offset
/// the structure gave it).
fn manifold_centres(model: &Model) -> Vec<ManifoldCentre> {
    let mut out: Vec<ManifoldCentre> = Vec::new();
    for l in &model.levels {
        let Some(o) = &l.origin else { continue };
        if let Some(m) = out.iter_mut().find(|m| m.id == o.manifold) {
            m.levels += 1;
            continue;
        }
        let hz = (l.omega - o.offset) / TWO_PI;
        out.push(ManifoldCentre {
            id: o.manifold.clone(),
            j: f64::from(o.two_j) / 2.0,
            energy_hz: hz,
            energy_cm: hz / C / 100.0,
            levels: 1,
        });
    }
    out
}
