//! The reports: plain data assembled from the model, the exact solution and
//! the perturbative estimate. Every number a renderer shows is computed here.
//!
//! Owns: [`VetReport`], [`InspectReport`], roles, flags, reliability marks,
//! remedies, provenance and the laser-safety notes. Must not: format numbers,
//! choose units for display, print, or run a propagator (it receives the
//! [`Solution`] and the [`Estimate`] already made).

use crate::estimate::{self, Estimate, EstimateError, Order};
use crate::model::{Dipole, Model};
use crate::solve::{MethodUsed, Solution};
use crate::units::C;

/// Peak intensity (W/m^2) at and above which a field gets a laser-safety note:
/// 25 W/m^2 = 2.5 mW/cm^2, the order of the ocular maximum permissible
/// exposure for visible CW light over the 0.25 s aversion time in the laser
/// safety standards (IEC 60825-1, ANSI Z136.1; from memory). The note is a
/// reminder, not a hazard classification.
pub const SAFETY_INTENSITY: f64 = 25.0;

/// The estimate is marked unreliable above this population.
pub const UNRELIABLE_ABOVE: f64 = 0.1;
/// ...or when estimate and exact value differ by more than this factor.
pub const UNRELIABLE_FACTOR: f64 = 2.0;
/// Populations below this are compared by absolute value only when judging
/// reliability (both negligible).
pub const NEGLIGIBLE: f64 = 1e-12;

/// How a result was produced.
#[derive(Debug, Clone, PartialEq)]
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
#[derive(Debug, Clone, PartialEq)]
pub struct SolverFacts {
    pub method: MethodUsed,
    pub rtol: f64,
    pub atol: f64,
    /// rad/s
    pub detuning_cutoff: f64,
    pub steps: u64,
    pub evaluations: u64,
}

/// Role of a level in the scheme.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
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

/// One drive feeding a level, as the report shows it.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceRow {
    pub field: String,
    pub from: String,
    /// rad/s
    pub detuning: f64,
    /// rad/s
    pub rabi: f64,
    pub population: f64,
    /// Whether this drive is in the dynamics (false: beyond the cutoff).
    pub included: bool,
}

/// A computed remedy for a flagged leak.
#[derive(Debug, Clone, PartialEq)]
pub struct RemedyRow {
    pub field: String,
    pub present_shape: String,
    pub gaussian_same_area: f64,
    pub blackman_same_area: f64,
    /// s
    pub length_for_tolerance: Option<f64>,
    /// s, the present length parameter of that pulse, same definition as
    /// `length_for_tolerance` (duration, Gaussian and sech intensity FWHM,
    /// sample span)
    pub present_length: f64,
    /// s, the intensity FWHM matched by the Gaussian and Blackman replacements
    pub fwhm: f64,
    /// The same three remedies checked by exact propagation (filled by the
    /// app, which runs the propagator; None where not checked).
    pub exact_gaussian: Option<f64>,
    pub exact_blackman: Option<f64>,
    pub exact_at_length: Option<f64>,
}

/// One level's line of the vet report.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelRow {
    pub id: String,
    pub label: Option<String>,
    pub role: Role,
    pub final_population: f64,
    pub peak_population: f64,
    pub order: Order,
    pub first_order: Option<f64>,
    pub second_order: Option<f64>,
    /// final / estimate, where both are non-negligible.
    pub ratio: Option<f64>,
    pub tolerance: f64,
    pub flagged: bool,
    /// A target below the goal asked for (`vet --goal`).
    pub below_goal: bool,
    pub unreliable: bool,
    pub sources: Vec<SourceRow>,
    pub remedy: Option<RemedyRow>,
}

impl LevelRow {
    /// The estimate shown for this level, whatever its order.
    pub fn estimate(&self) -> Option<f64> {
        match self.order {
            Order::Second => self.second_order,
            _ => self.first_order,
        }
    }
}

/// A drive left out by the detuning cutoff.
#[derive(Debug, Clone, PartialEq)]
pub struct ExcludedRow {
    pub field: String,
    pub lower: String,
    pub upper: String,
    pub detuning: f64,
    pub rabi: f64,
    pub population: f64,
    /// rad/s
    pub light_shift: f64,
}

/// A laser-safety note about one field.
#[derive(Debug, Clone, PartialEq)]
pub struct SafetyNote {
    pub field: String,
    /// W/m^2; None when the scheme sets the field by Rabi frequency on a
    /// relative dipole, so its intensity is unknown.
    pub peak_intensity: Option<f64>,
}

/// The vet report.
#[derive(Debug, Clone, PartialEq)]
pub struct VetReport {
    pub title: Option<String>,
    pub provenance: Provenance,
    pub solver: SolverFacts,
    pub tolerance: f64,
    pub window: (f64, f64),
    pub levels: Vec<LevelRow>,
    pub excluded: Vec<ExcludedRow>,
    pub lost_population: f64,
    pub norm_error: f64,
    pub flagged: usize,
    /// Target goal asked for (`vet --goal`), if any.
    pub goal: Option<f64>,
    /// Targets whose final population is below the goal.
    pub targets_short: usize,
    /// Largest final population among spectators (0 if none).
    pub max_spectator: f64,
    pub safety: Vec<SafetyNote>,
}

impl VetReport {
    /// The first non-finite number in the report, named by where it sits.
    pub fn first_non_finite(&self) -> Option<String> {
        let top = [
            ("lost population", self.lost_population),
            ("norm error", self.norm_error),
        ];
        if let Some((name, _)) = top.iter().find(|(_, v)| !v.is_finite()) {
            return Some(name.to_string());
        }
        for l in &self.levels {
            let mut vals = vec![l.final_population, l.peak_population];
            vals.extend(l.first_order);
            vals.extend(l.second_order);
            vals.extend(l.ratio);
            vals.extend(
                l.sources
                    .iter()
                    .flat_map(|s| [s.detuning, s.rabi, s.population]),
            );
            if let Some(r) = &l.remedy {
                vals.extend([r.gaussian_same_area, r.blackman_same_area, r.present_length]);
                vals.extend(r.length_for_tolerance);
                vals.extend(r.exact_gaussian);
                vals.extend(r.exact_blackman);
                vals.extend(r.exact_at_length);
            }
            if vals.iter().any(|v| !v.is_finite()) {
                return Some(format!("the report row of level {}", l.id));
            }
        }
        self.excluded
            .iter()
            .find(|x| {
                ![x.detuning, x.rabi, x.population, x.light_shift]
                    .iter()
                    .all(|v| v.is_finite())
            })
            .map(|x| format!("the left-out drive {} on {}-{}", x.field, x.lower, x.upper))
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

fn source_rows(model: &Model, sources: &[estimate::Source]) -> Vec<SourceRow> {
    sources
        .iter()
        .map(|s| {
            let d = &model.drives[s.drive];
            SourceRow {
                field: model.fields[d.field].id.clone(),
                from: model.levels[s.from].id.clone(),
                detuning: s.detuning,
                rabi: s.rabi,
                population: s.population,
                included: model.drive_included(d),
            }
        })
        .collect()
}

fn unreliable(estimate: Option<f64>, exact: f64) -> bool {
    match estimate {
        None => false,
        Some(e) => {
            if e > UNRELIABLE_ABOVE {
                return true;
            }
            if e < NEGLIGIBLE && exact < NEGLIGIBLE {
                return false;
            }
            let (hi, lo) = if e > exact { (e, exact) } else { (exact, e) };
            hi > UNRELIABLE_FACTOR * lo
        }
    }
}

fn remedy_row(model: &Model, r: &estimate::Remedy) -> RemedyRow {
    let d = &model.drives[r.drive];
    let env = &model.fields[d.field].envelope;
    RemedyRow {
        field: model.fields[d.field].id.clone(),
        present_shape: env.shape_name().to_string(),
        gaussian_same_area: r.gaussian_same_area,
        blackman_same_area: r.blackman_same_area,
        length_for_tolerance: r.length_for_tolerance,
        present_length: r.present_length,
        fwhm: r.fwhm,
        exact_gaussian: None,
        exact_blackman: None,
        exact_at_length: None,
    }
}

/// The duration measure of an envelope used in remedies: the duration of
/// finite pulses, the intensity FWHM of Gaussian and sech pulses, the sample span.
pub fn envelope_length(env: &crate::model::Envelope) -> f64 {
    env.length()
}

/// Assemble the vet report. `tolerance_override` replaces the scheme's
/// default tolerance (per-level tolerances still win).
pub fn vet(
    model: &Model,
    provenance: Provenance,
    solution: &Solution,
    estimate: &Estimate,
    tolerance_override: Option<f64>,
) -> Result<VetReport, EstimateError> {
    let roles = roles(model);
    let tolerance = tolerance_override.unwrap_or(model.tolerance);
    let mut levels = Vec::with_capacity(model.levels.len());
    let mut flagged = 0;
    let mut max_spectator: f64 = 0.0;
    for (k, level) in model.levels.iter().enumerate() {
        let est = &estimate.levels[k];
        let tol = level.tolerance.unwrap_or(tolerance);
        let fin = solution.final_populations[k];
        let role = roles[k];
        let is_flagged = role == Role::Spectator && fin > tol;
        if role == Role::Spectator {
            max_spectator = max_spectator.max(fin);
        }
        let shown = match est.order {
            Order::Second => est.second_order,
            _ => est.first_order,
        };
        let ratio = match shown {
            Some(e) if e > NEGLIGIBLE && fin > NEGLIGIBLE => Some(fin / e),
            _ => None,
        };
        let remedy = if is_flagged {
            estimate::remedy(model, k, tol)?.map(|r| remedy_row(model, &r))
        } else {
            None
        };
        if is_flagged {
            flagged += 1;
        }
        levels.push(LevelRow {
            id: level.id.clone(),
            label: level.label.clone(),
            role,
            final_population: fin,
            peak_population: solution.peak_populations[k],
            order: est.order,
            first_order: est.first_order,
            second_order: est.second_order,
            ratio,
            tolerance: tol,
            flagged: is_flagged,
            below_goal: false,
            unreliable: role != Role::Initial && unreliable(shown, fin),
            sources: source_rows(model, &est.sources),
            remedy,
        });
    }
    let excluded = estimate
        .excluded
        .iter()
        .map(|x| {
            let d = &model.drives[x.drive];
            let c = &model.couplings[d.coupling];
            ExcludedRow {
                field: model.fields[d.field].id.clone(),
                lower: model.levels[c.lower].id.clone(),
                upper: model.levels[c.upper].id.clone(),
                detuning: model.detuning(d),
                rabi: d.rabi,
                population: x.population,
                light_shift: x.light_shift,
            }
        })
        .collect();
    Ok(VetReport {
        title: model.title.clone(),
        provenance,
        solver: SolverFacts {
            method: solution.method,
            rtol: solution.rtol,
            atol: solution.atol,
            detuning_cutoff: model.solver.detuning_cutoff,
            steps: solution.steps,
            evaluations: solution.evaluations,
        },
        tolerance,
        window: (model.window.start, model.window.end),
        levels,
        excluded,
        lost_population: solution.lost,
        norm_error: solution.norm_error,
        flagged,
        max_spectator,
        goal: None,
        targets_short: 0,
        safety: safety_notes(model),
    })
}

/// Judge every target against a goal population: a target below it is
/// marked and counted (the CLI then exits with status 3, as for a leak).
pub fn judge_targets(report: &mut VetReport, goal: f64) {
    report.goal = Some(goal);
    report.targets_short = 0;
    for l in report.levels.iter_mut() {
        l.below_goal = l.role == Role::Target && l.final_population < goal;
        if l.below_goal {
            report.targets_short += 1;
        }
    }
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

/// One level of the inspect report.
#[derive(Debug, Clone, PartialEq)]
pub struct InspectLevel {
    pub id: String,
    pub label: Option<String>,
    /// Energy / h, Hz (cyclic).
    pub energy_hz: f64,
    /// Energy in cm^-1.
    pub energy_cm: f64,
    /// Lifetime (s), None for a stable level.
    pub lifetime: Option<f64>,
    pub role: Role,
    pub initial_population: f64,
    pub tolerance: f64,
}

/// One drive of the inspect report.
#[derive(Debug, Clone, PartialEq)]
pub struct InspectDrive {
    pub field: String,
    pub lower: String,
    pub upper: String,
    /// Transition frequency (Hz, cyclic).
    pub transition_hz: f64,
    /// Vacuum wavelength of the transition (m); None for a zero splitting.
    pub wavelength: Option<f64>,
    /// Detuning / 2 pi (Hz).
    pub detuning_hz: f64,
    /// Peak Rabi frequency / 2 pi (Hz).
    pub rabi_hz: f64,
    /// Pulse area (rad).
    pub area: f64,
    pub included: bool,
    /// Whether the coupling's dipole is a relative (bare) number.
    pub relative_dipole: bool,
}

/// One field of the inspect report.
#[derive(Debug, Clone, PartialEq)]
pub struct InspectField {
    pub id: String,
    /// Carrier frequency (Hz, cyclic).
    pub frequency_hz: f64,
    /// Vacuum wavelength (m).
    pub wavelength: f64,
    pub shape: String,
    /// Duration measure (s): see [`envelope_length`].
    pub length: f64,
    /// W/m^2
    pub peak_intensity: Option<f64>,
    /// Chirp beta (Hz/s).
    pub chirp_hz_per_s: f64,
    pub rwa: bool,
}

/// The inspect report: the planner's dry run, no dynamics.
#[derive(Debug, Clone, PartialEq)]
pub struct InspectReport {
    pub title: Option<String>,
    pub provenance: Provenance,
    pub levels: Vec<InspectLevel>,
    pub drives: Vec<InspectDrive>,
    pub fields: Vec<InspectField>,
    pub window: (f64, f64),
    pub tolerance: f64,
    /// rad/s
    pub detuning_cutoff: f64,
    pub safety: Vec<SafetyNote>,
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
                length: envelope_length(&f.envelope),
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
    }
}
