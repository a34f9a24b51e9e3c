//! The vet report: every level's final and peak population beside its
//! perturbative estimate, the flags, reliability marks, the drives that feed
//! each level, remedies for leaks and the drives left out by the cutoff.
//!
//! Owns: [`VetReport`] and its rows, [`vet`], [`judge_targets`], the
//! reliability rule. Must not: run a propagator (the exact checks of the
//! remedies are filled in by the pipeline), format numbers.

use super::json_units;
use super::safety::{safety_notes, SafetyNote};
use super::{roles, Provenance, QuantumNumbers, Role, SolverFacts};
use crate::estimate::{self, Estimate, EstimateError, Order};
use crate::model::{Dynamics, InitialKind, Model, Readout};
use crate::solve::Solution;
use serde::ser::{SerializeStruct, Serializer};
use serde::Serialize;

// Struct fields are in the order of the JSON keys (serde_json keeps it).

/// The estimate is marked unreliable above this population.
pub const UNRELIABLE_ABOVE: f64 = 0.1;
/// ...or when estimate and exact value differ by more than this factor.
pub const UNRELIABLE_FACTOR: f64 = 2.0;
/// Populations below this are compared by absolute value only when judging
/// reliability (both negligible).
pub const NEGLIGIBLE: f64 = 1e-12;

/// One drive feeding a level, as the report shows it.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct SourceRow {
    pub field: String,
    pub from: String,
    /// rad/s
    pub detuning: f64,
    /// rad/s
    pub rabi: f64,
    /// This drive's part of the level's estimate.
    pub population: f64,
    /// The order of perturbation theory `population` comes from: the
    /// estimate order of the level it feeds.
    pub order: Order,
    /// Whether this drive is in the dynamics (false: beyond the cutoff).
    pub included: bool,
    /// How the population arrives: by the drive itself, or by decay of
    /// `via` after the drive excites it.
    pub channel: Channel,
    /// The decaying level of a decay source.
    pub via: Option<String>,
    /// Saturation parameter of the drive on `from -> via` (decay sources).
    pub saturation: Option<f64>,
}

/// How a source's population arrives.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum Channel {
    /// Coherently, by the drive (perturbation theory).
    Drive,
    /// By spontaneous emission from a level the drive excites (rate estimate).
    Decay,
}

/// Written by hand because the population's key depends on a value:
/// `second_order_population` for a second-order source,
/// `first_order_population` otherwise (derive only knows fixed names).
/// `order` itself is not a key (the level states it as `estimate_order`).
/// A decay source adds `via`, `channel` ("decay") and `saturation` after
/// the drive keys; a drive source has exactly the v1 keys.
impl Serialize for SourceRow {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let population_key = match self.order {
            Order::Second => "second_order_population",
            _ => "first_order_population",
        };
        let decay = self.channel == Channel::Decay;
        let mut m = s.serialize_struct("SourceRow", if decay { 9 } else { 6 })?;
        m.serialize_field("field", &self.field)?;
        m.serialize_field("from", &self.from)?;
        m.serialize_field("detuning_mhz", &json_units::Mhz(self.detuning))?;
        m.serialize_field("rabi_mhz", &json_units::Mhz(self.rabi))?;
        m.serialize_field(population_key, &self.population)?;
        m.serialize_field("in_dynamics", &self.included)?;
        if decay {
            m.serialize_field("via", &self.via)?;
            m.serialize_field("channel", "decay")?;
            m.serialize_field("saturation", &self.saturation)?;
        }
        m.end()
    }
}

// Same shape as the other report rows: one serde field per JSON key (docs/output-format.md).
/// A computed remedy for a flagged leak.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct RemedyRow {
    pub field: String,
    pub present_shape: String,
    /// s, the present length parameter of that pulse, same definition as
    /// `length_for_tolerance` (duration, Gaussian and sech intensity FWHM,
    /// sample span)
    #[serde(rename = "present_length_s")]
    pub present_length: f64,
    #[serde(rename = "gaussian_same_area_population")]
    pub gaussian_same_area: f64,
    #[serde(rename = "blackman_same_area_population")]
    pub blackman_same_area: f64,
    /// s
    #[serde(rename = "length_for_tolerance_s")]
    pub length_for_tolerance: Option<f64>,
    /// s, the intensity FWHM matched by the Gaussian and Blackman replacements
    #[serde(rename = "fwhm_s")]
    pub fwhm: f64,
    /// The same three remedies checked by exact propagation (filled by the
    /// pipeline, which runs the propagator; None where not checked).
    #[serde(rename = "exact_gaussian_population")]
    pub exact_gaussian: Option<f64>,
    #[serde(rename = "exact_blackman_population")]
    pub exact_blackman: Option<f64>,
    #[serde(rename = "exact_population_at_length")]
    pub exact_at_length: Option<f64>,
    /// The exact checks that could not be run (the changed scheme failed to
    /// propagate or was refused), each with its reason; their `exact_*`
    /// value stays None. No key when every check ran or none was asked for.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub not_checked: Vec<UncheckedRemedy>,
}

/// Which of a remedy's three changed schemes an exact check concerns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum RemedyCheck {
    /// The Gaussian envelope of the same area and intensity FWHM.
    Gaussian,
    /// The Blackman envelope of the same area and intensity FWHM.
    Blackman,
    /// The present shape lengthened to `length_for_tolerance`.
    AtLength,
}

impl RemedyCheck {
    /// The name of the check as the JSON value spells it.
    pub fn as_str(self) -> &'static str {
        match self {
            RemedyCheck::Gaussian => "gaussian",
            RemedyCheck::Blackman => "blackman",
            RemedyCheck::AtLength => "at_length",
        }
    }
}

/// A remedy's exact check that could not be run, and why. The report is
/// still given: a remedy is advice beside the result, never the result.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct UncheckedRemedy {
    pub check: RemedyCheck,
    /// The error of the changed scheme's run, as the CLI would print it.
    pub reason: String,
}

impl UncheckedRemedy {
    /// The check `check` was not run because of `reason`.
    pub fn new(check: RemedyCheck, reason: impl Into<String>) -> Self {
        UncheckedRemedy {
            check,
            reason: reason.into(),
        }
    }
}

// Same shape as the other report rows: one serde field per JSON key (docs/output-format.md).
/// One level's line of the vet report.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct LevelRow {
    pub id: String,
    /// `manifold`, `J`, `F`, `m_F` of a generated level; no keys for a v1 level.
    #[serde(flatten)]
    pub quantum: Option<QuantumNumbers>,
    pub role: Role,
    pub final_population: f64,
    pub peak_population: f64,
    #[serde(rename = "first_order_population")]
    pub first_order: Option<f64>,
    /// `Some` exactly when `order` is [`Order::Second`]; no key otherwise.
    #[serde(
        rename = "second_order_population",
        skip_serializing_if = "Option::is_none"
    )]
    pub second_order: Option<f64>,
    pub flagged: bool,
    /// A target below the goal asked for (`vet --goal`).
    pub below_goal: bool,
    pub sources: Vec<SourceRow>,
    pub label: Option<String>,
    #[serde(rename = "estimate_order", serialize_with = "json_units::order")]
    pub order: Order,
    /// final / estimate, where both are non-negligible.
    #[serde(rename = "final_over_estimate")]
    pub ratio: Option<f64>,
    pub tolerance: f64,
    #[serde(rename = "estimate_unreliable")]
    pub unreliable: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub remedy: Option<RemedyRow>,
    /// Population after the window once every decay has run its course
    /// (present whenever a level of the scheme decays).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub settled_population: Option<f64>,
    /// Population at the window end, where the readout is elsewhere.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub window_end_population: Option<f64>,
    /// Spontaneous emissions from this level inside the window per atom
    /// (density-matrix runs).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub scattered_photons: Option<f64>,
    /// The window-end and settled populations of this target or spectator
    /// differ by more than its tolerance: where the readout is taken matters.
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub readout_sensitive: bool,
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
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct ExcludedRow {
    pub field: String,
    pub lower: String,
    pub upper: String,
    /// rad/s
    #[serde(rename = "detuning_mhz", serialize_with = "json_units::mhz")]
    pub detuning: f64,
    /// rad/s
    #[serde(rename = "rabi_mhz", serialize_with = "json_units::mhz")]
    pub rabi: f64,
    #[serde(rename = "first_order_population")]
    pub population: f64,
    /// rad/s
    #[serde(rename = "light_shift_mhz", serialize_with = "json_units::mhz")]
    pub light_shift: f64,
}

/// The vet report.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct VetReport {
    pub tolerance: f64,
    pub norm_error: f64,
    pub lost_population: f64,
    pub levels: Vec<LevelRow>,
    #[serde(rename = "flagged_count")]
    pub flagged: usize,
    /// Target goal asked for (`vet --goal`), if any.
    pub goal: Option<f64>,
    /// Targets whose final population is below the goal.
    #[serde(rename = "targets_below_goal")]
    pub targets_short: usize,
    /// Largest final population among spectators (0 if none).
    #[serde(rename = "max_spectator_population")]
    pub max_spectator: f64,
    #[serde(rename = "excluded_drives")]
    pub excluded: Vec<ExcludedRow>,
    /// Start and end of the time window (s).
    #[serde(rename = "window_s")]
    pub window: (f64, f64),
    pub solver: SolverFacts,
    pub provenance: Provenance,
    pub title: Option<String>,
    #[serde(rename = "laser_safety")]
    pub safety: Vec<SafetyNote>,
    /// When final populations are judged.
    #[serde(serialize_with = "json_units::readout")]
    pub readout: Readout,
    /// The equation that ran.
    #[serde(serialize_with = "json_units::dynamics")]
    pub dynamics: Dynamics,
    /// How the initial populations combine.
    #[serde(rename = "initial_state", serialize_with = "json_units::initial_kind")]
    pub initial_kind: InitialKind,
    /// Whether the initial state has more than one populated level (the
    /// text says how it was taken).
    #[serde(skip)]
    pub initial_levels: usize,
    /// Expected spontaneous emissions per atom inside the window (present
    /// in every density-matrix run).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub scattered_photons: Option<f64>,
    /// Whether the scheme uses the open-system keys
    /// ([`Model::uses_open_system`]): its scan rows then carry the lost
    /// population and the scattered photons. Not in the JSON.
    #[serde(skip)]
    pub open_system: bool,
    /// Spontaneous emissions per atom inside the window, all levels, in
    /// every run ([`crate::solve::Solution::emitted`]); not in the JSON,
    /// whose `scattered_photons` is the density-matrix value.
    #[serde(skip)]
    pub emitted: Option<f64>,
}

impl VetReport {
    /// The first non-finite number in the report, named by where it sits.
    pub fn first_non_finite(&self) -> Option<String> {
        let top = [
            ("lost population", self.lost_population),
            ("norm error", self.norm_error),
            ("scattered photons", self.scattered_photons.unwrap_or(0.0)),
            ("emitted photons", self.emitted.unwrap_or(0.0)),
        ];
        if let Some((name, _)) = top.iter().find(|(_, v)| !v.is_finite()) {
            return Some(name.to_string());
        }
        for l in &self.levels {
            let mut vals = vec![l.final_population, l.peak_population];
            vals.extend(l.settled_population);
            vals.extend(l.window_end_population);
            vals.extend(l.scattered_photons);
            vals.extend(l.first_order);
            vals.extend(l.second_order);
            vals.extend(l.ratio);
            vals.extend(
                l.sources
                    .iter()
                    .flat_map(|s| [s.detuning, s.rabi, s.population]),
            );
            vals.extend(l.sources.iter().filter_map(|s| s.saturation));
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

/// The drive sources, then the decay sources, together largest first (a
/// stable sort: drive sources keep their order among themselves).
fn source_rows(model: &Model, est: &estimate::LevelEstimate) -> Vec<SourceRow> {
    let order = est.order;
    let row = |drive: usize, from: usize, detuning: f64, rabi: f64, population: f64| {
        let d = &model.drives[drive];
        SourceRow {
            field: model.fields[d.field].id.clone(),
            from: model.levels[from].id.clone(),
            detuning,
            rabi,
            population,
            order,
            included: model.drive_included(d),
            channel: Channel::Drive,
            via: None,
            saturation: None,
        }
    };
    let mut rows: Vec<SourceRow> = est
        .sources
        .iter()
        .map(|s| row(s.drive, s.from, s.detuning, s.rabi, s.population))
        .collect();
    if est.decay_sources.is_empty() {
        return rows;
    }
    rows.extend(est.decay_sources.iter().map(|s| SourceRow {
        channel: Channel::Decay,
        via: Some(model.levels[s.via].id.clone()),
        saturation: Some(s.saturation),
        ..row(s.drive, s.from, s.detuning, s.rabi, s.population)
    }));
    rows.sort_by(|a, b| b.population.total_cmp(&a.population));
    rows
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
        not_checked: Vec::new(),
    }
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
        let settled = solution.settled_populations.as_ref().map(|p| p[k]);
        let end = solution.window_end_populations[k];
        // Amplitude runs (v1) lose every decay from the scheme: their
        // settled populations say nothing a planner reads off, so only
        // density-matrix runs are judged for it.
        let readout_sensitive = solution.dynamics == Dynamics::DensityMatrix
            && matches!(role, Role::Spectator | Role::Target)
            && settled.is_some_and(|p| (p - end).abs() > tol);
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
            quantum: QuantumNumbers::of(level),
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
            unreliable: role != Role::Initial && (unreliable(shown, fin) || !est.decay_reliable()),
            sources: source_rows(model, est),
            remedy,
            settled_population: settled,
            window_end_population: (model.readout() != Readout::WindowEnd).then_some(end),
            scattered_photons: solution.scattered_photons.as_ref().map(|p| p[k]),
            readout_sensitive,
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
        readout: model.readout(),
        dynamics: solution.dynamics,
        initial_kind: model.initial_kind(),
        initial_levels: model.initial().iter().filter(|p| **p > 0.0).count(),
        scattered_photons: solution.scattered_photons.as_ref().map(|p| p.iter().sum()),
        open_system: model.uses_open_system(),
        emitted: solution.emitted,
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
