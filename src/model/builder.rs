//! The validated way to build a [`Model`] in code.
//!
//! Owns: [`ModelBuilder`], [`ModelError`] and the invariants every model
//! keeps (finite numbers, indices in range, couplings ordered by energy,
//! populations summing to 1, targets not initially populated, one drive per
//! field and level pair, envelopes with a duration, a window that ends after
//! it starts, positive finite solver tolerances; the open-system parts in
//! `open.rs`): the only consistency checks of a model, which later stages
//! rely on. Scheme validation reports a file's problems with their place
//! first, then hands the parts here.
//!
//! Must not: know of strings with units, of the scheme format's limits
//! (level and drive counts, time magnitudes: those are the file format's),
//! of diagnostics or of files.

use std::collections::HashSet;

pub use super::part::Part;
use super::{
    Coupling, Drive, Field, InitialKind, Jump, Level, Model, Readout, SolverSettings, Window,
    DEFAULT_TOLERANCE,
};

/// Largest miss of 1 that the initial populations may sum to.
pub const POPULATION_SUM_TOLERANCE: f64 = 1e-9;

/// Why a model was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ModelError {
    /// A number (given or derived: support, area, detuning) is not finite.
    #[error("{at}: a number is not finite")]
    NonFinite { at: Part },
    /// Any other broken invariant.
    #[error("{at}: {reason}")]
    Invalid { at: Part, reason: String },
}

/// Builds a [`Model`] and checks it: `Model::builder().level(..)...build()`.
/// Without a window, the window spans the support of every envelope; the
/// tolerance and solver settings default as in a scheme file.
#[derive(Debug, Clone, Default)]
pub struct ModelBuilder {
    title: Option<String>,
    levels: Vec<Level>,
    couplings: Vec<Coupling>,
    fields: Vec<Field>,
    drives: Vec<Drive>,
    initial: Option<Vec<f64>>,
    initial_kind: InitialKind,
    readout: Readout,
    targets: Vec<usize>,
    tolerance: Option<f64>,
    window: Option<Window>,
    solver: SolverSettings,
    jumps: Vec<Jump>,
}

impl Model {
    /// An empty [`ModelBuilder`].
    pub fn builder() -> ModelBuilder {
        ModelBuilder::new()
    }

    /// A builder holding this model's parts, window and settings: the one
    /// way to a changed model, since `build` checks the changed parts again.
    pub fn to_builder(&self) -> ModelBuilder {
        ModelBuilder {
            title: self.title.clone(),
            levels: self.levels.clone(),
            couplings: self.couplings.clone(),
            fields: self.fields.clone(),
            drives: self.drives.clone(),
            initial: Some(self.initial.clone()),
            initial_kind: self.initial_kind,
            readout: self.readout,
            targets: self.targets.clone(),
            tolerance: Some(self.tolerance),
            window: Some(self.window),
            solver: self.solver,
            jumps: self.jumps.clone(),
        }
    }
}

impl ModelBuilder {
    pub fn new() -> Self {
        Self::default()
    }
    pub fn title(mut self, title: Option<String>) -> Self {
        self.title = title;
        self
    }
    /// One more level.
    pub fn level(mut self, level: Level) -> Self {
        self.levels.push(level);
        self
    }
    /// All levels, replacing any given before.
    pub fn levels(mut self, levels: Vec<Level>) -> Self {
        self.levels = levels;
        self
    }
    pub fn coupling(mut self, coupling: Coupling) -> Self {
        self.couplings.push(coupling);
        self
    }
    pub fn couplings(mut self, couplings: Vec<Coupling>) -> Self {
        self.couplings = couplings;
        self
    }
    pub fn field(mut self, field: Field) -> Self {
        self.fields.push(field);
        self
    }
    pub fn fields(mut self, fields: Vec<Field>) -> Self {
        self.fields = fields;
        self
    }
    pub fn drive(mut self, drive: Drive) -> Self {
        self.drives.push(drive);
        self
    }
    pub fn drives(mut self, drives: Vec<Drive>) -> Self {
        self.drives = drives;
        self
    }
    /// Initial population of every level, in level order.
    pub fn initial(mut self, populations: Vec<f64>) -> Self {
        self.initial = Some(populations);
        self
    }
    /// How the initial populations combine (default: coherently).
    pub fn initial_kind(mut self, kind: InitialKind) -> Self {
        self.initial_kind = kind;
        self
    }
    /// When final populations are judged (default: window end).
    pub fn readout(mut self, readout: Readout) -> Self {
        self.readout = readout;
        self
    }
    /// Indices of the target levels.
    pub fn targets(mut self, targets: Vec<usize>) -> Self {
        self.targets = targets;
        self
    }
    /// Default spectator tolerance (population).
    pub fn tolerance(mut self, tolerance: f64) -> Self {
        self.tolerance = Some(tolerance);
        self
    }
    pub fn window(mut self, window: Window) -> Self {
        self.window = Some(window);
        self
    }
    pub fn solver(mut self, solver: SolverSettings) -> Self {
        self.solver = solver;
        self
    }
    /// Coherent spontaneous-emission channels (checked in `open.rs`).
    pub fn jumps(mut self, jumps: Vec<Jump>) -> Self {
        self.jumps = jumps;
        self
    }

    /// The model, or its first problem.
    pub fn build(self) -> Result<Model, ModelError> {
        self.build_all().map_err(|mut e| e.swap_remove(0))
    }

    /// The model, or every problem found: first the numbers that are not
    /// finite (levels, couplings, fields, drives, window, in that order),
    /// then the other invariants.
    pub fn build_all(self) -> Result<Model, Vec<ModelError>> {
        let window = self.window.unwrap_or_else(|| {
            let (a, b) =
                self.fields
                    .iter()
                    .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), f| {
                        let (s, e) = f.envelope.support();
                        (a.min(s), b.max(e))
                    });
            Window { start: a, end: b }
        });
        let n = self.levels.len();
        let model = Model {
            title: self.title,
            levels: self.levels,
            couplings: self.couplings,
            fields: self.fields,
            drives: self.drives,
            initial: self.initial.unwrap_or_else(|| vec![0.0; n]),
            initial_kind: self.initial_kind,
            readout: self.readout,
            targets: self.targets,
            tolerance: self.tolerance.unwrap_or(DEFAULT_TOLERANCE),
            window,
            solver: self.solver,
            jumps: self.jumps,
        };
        let mut problems = non_finite(&model);
        if problems.is_empty() {
            invariants(&model, &mut problems);
        }
        if problems.is_empty() {
            super::open::check(&model, &mut problems);
        }
        if problems.is_empty() {
            Ok(model)
        } else {
            Err(problems)
        }
    }
}

/// Every number that is not finite, given or derived (extreme but finite
/// inputs can overflow in derived numbers). Indices must be in range for
/// the derived numbers; out-of-range ones are left to [`invariants`].
fn non_finite(m: &Model) -> Vec<ModelError> {
    let mut out = Vec::new();
    let mut bad = |at| out.push(ModelError::NonFinite { at });
    for (i, l) in m.levels.iter().enumerate() {
        let origin_ok = l.origin.as_ref().is_none_or(|o| o.offset.is_finite());
        if !(l.omega.is_finite() && l.gamma.is_finite() && l.dephasing.is_finite() && origin_ok) {
            bad(Part::Level(i));
        }
    }
    for (i, c) in m.couplings.iter().enumerate() {
        if !c.dipole.value().is_finite() {
            bad(Part::Coupling(i));
        }
    }
    for (i, f) in m.fields.iter().enumerate() {
        let env = &f.envelope;
        let (a, b) = env.support();
        let env_ok =
            a.is_finite() && b.is_finite() && env.area().is_finite() && env.center().is_finite();
        let ok = f.omega.is_finite()
            && f.chirp.is_finite()
            && f.phase.is_finite()
            && f.peak_intensity.is_none_or(|x| x.is_finite());
        if !env_ok {
            bad(Part::Envelope(i));
        } else if !ok {
            bad(Part::Field(i));
        }
    }
    for (k, d) in m.drives.iter().enumerate() {
        let in_range = d.field < m.fields.len()
            && d.coupling < m.couplings.len()
            && m.couplings[d.coupling].lower < m.levels.len()
            && m.couplings[d.coupling].upper < m.levels.len();
        if in_range && !(d.rabi.is_finite() && m.detuning(d).is_finite()) {
            bad(Part::Drive(k));
        }
    }
    if !(m.window.start.is_finite() && m.window.end.is_finite() && m.window.duration().is_finite())
    {
        bad(Part::Window);
    }
    let s = &m.solver;
    if !(s.rtol.is_finite() && s.atol.is_finite() && s.detuning_cutoff.is_finite()) {
        bad(Part::Solver);
    }
    out
}

fn invalid(out: &mut Vec<ModelError>, at: Part, reason: impl Into<String>) {
    out.push(ModelError::Invalid {
        at,
        reason: reason.into(),
    });
}

/// J and F non-negative, m_F one of -F, -F+1, ..., F.
fn origin_ok(o: &super::LevelOrigin) -> bool {
    o.two_j >= 0
        && o.two_f >= 0
        && o.two_m_f
            .is_none_or(|m| m.abs() <= o.two_f && (o.two_f - m) % 2 == 0)
}

/// Everything but finiteness.
fn invariants(m: &Model, out: &mut Vec<ModelError>) {
    let population = |p: f64| (0.0..=1.0).contains(&p);
    let mut ids = HashSet::new();
    for (i, l) in m.levels.iter().enumerate() {
        if !super::valid_id(&l.id) || !ids.insert(l.id.as_str()) {
            invalid(
                out,
                Part::Level(i),
                format!("'{}' is not a unique valid id", l.id),
            );
        }
        if l.gamma < 0.0 {
            invalid(out, Part::Level(i), "a negative decay rate");
        }
        if l.tolerance.is_some_and(|t| !population(t)) {
            invalid(out, Part::Level(i), "a tolerance outside [0, 1]");
        }
        if l.origin.as_ref().is_some_and(|o| !origin_ok(o)) {
            invalid(
                out,
                Part::Level(i),
                "quantum numbers with J, F >= 0 and m_F in -F..F in steps of 1",
            );
        }
    }
    couplings(m, out);
    let mut ids = HashSet::new();
    for (i, f) in m.fields.iter().enumerate() {
        if !super::valid_id(&f.id) || !ids.insert(f.id.as_str()) {
            invalid(
                out,
                Part::Field(i),
                format!("'{}' is not a unique valid id", f.id),
            );
        }
        if f.omega <= 0.0 {
            invalid(
                out,
                Part::Field(i),
                "a carrier frequency that is not positive",
            );
        }
        if f.peak_intensity.is_some_and(|x| x < 0.0) {
            invalid(out, Part::Field(i), "a negative peak intensity");
        }
        if let Err(reason) = f.envelope.check() {
            invalid(out, Part::Envelope(i), reason);
        } else if !envelope_has_scale(&f.envelope) {
            invalid(out, Part::Envelope(i), "no finite, nonzero time scale");
        } else if let super::Envelope::Samples { values, .. } = &f.envelope {
            if values.iter().any(|v| *v < 0.0) {
                invalid(out, Part::Envelope(i), "a negative sample value");
            }
        }
    }
    drives(m, out);
    populations(m, out);
    if !population(m.tolerance) {
        invalid(out, Part::Tolerance, "a tolerance outside [0, 1]");
    }
    if m.window.end <= m.window.start {
        invalid(out, Part::Window, "an end time not after the start");
    }
    let s = &m.solver;
    if !(s.rtol > 0.0 && s.atol > 0.0 && s.detuning_cutoff > 0.0) {
        invalid(out, Part::Solver, "tolerances and cutoff must be positive");
    }
}

/// Whether a checked envelope has a finite, positive shortest feature and a
/// finite peak value (a duration so small it underflows has neither).
fn envelope_has_scale(e: &super::Envelope) -> bool {
    let s = e.shortest_feature();
    s.is_finite() && s > 0.0 && e.value(e.center()).is_finite()
}

fn couplings(m: &Model, out: &mut Vec<ModelError>) {
    let n = m.levels.len();
    for (i, c) in m.couplings.iter().enumerate() {
        if c.lower >= n || c.upper >= n || c.lower == c.upper {
            invalid(out, Part::Coupling(i), "two different existing levels");
        } else if m.levels[c.lower].omega > m.levels[c.upper].omega {
            invalid(
                out,
                Part::Coupling(i),
                "its lower level lies above its upper one",
            );
        }
    }
}

fn drives(m: &Model, out: &mut Vec<ModelError>) {
    let mut pairs = HashSet::new();
    for (k, d) in m.drives.iter().enumerate() {
        let Some(c) = m.couplings.get(d.coupling) else {
            invalid(out, Part::Drive(k), "no such coupling");
            continue;
        };
        if d.field >= m.fields.len() {
            invalid(out, Part::Drive(k), "no such field");
        } else if !pairs.insert((d.field, c.lower, c.upper)) {
            invalid(
                out,
                Part::Drive(k),
                "a second drive of one level pair by one field",
            );
        }
    }
}

fn populations(m: &Model, out: &mut Vec<ModelError>) {
    let n = m.levels.len();
    if m.initial.len() != n {
        let reason = format!("{} initial populations for {n} levels", m.initial.len());
        invalid(out, Part::Initial, reason);
        return;
    }
    if m.initial.iter().any(|p| !(0.0..=1.0).contains(p)) {
        invalid(out, Part::Initial, "a population outside [0, 1]");
    }
    let sum: f64 = m.initial.iter().sum();
    if (sum - 1.0).abs() > POPULATION_SUM_TOLERANCE {
        invalid(
            out,
            Part::Initial,
            format!("populations summing to {sum}, not 1"),
        );
    }
    let mut seen = HashSet::new();
    for (k, &t) in m.targets.iter().enumerate() {
        if t >= n || !seen.insert(t) || m.initial[t] > 0.0 {
            invalid(
                out,
                Part::Target(k),
                "an existing level, once, not initially populated",
            );
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Dipole, Envelope};

    fn two_level() -> ModelBuilder {
        let level = |id: &str, omega| Level::new(id, omega);
        Model::builder()
            .level(level("g", 0.0))
            .level(level("e", 1e9))
            .coupling(Coupling {
                lower: 0,
                upper: 1,
                dipole: Dipole::Relative(1.0),
            })
            .field(Field {
                id: "L".into(),
                omega: 1e9,
                envelope: Envelope::Rectangular {
                    start: 0.0,
                    duration: 1e-6,
                },
                chirp: 0.0,
                phase: 0.0,
                rwa: true,
                peak_intensity: None,
                linewidth: 0.0,
            })
            .drive(Drive {
                field: 0,
                coupling: 0,
                rabi: 1e6,
            })
            .initial(vec![1.0, 0.0])
    }

    #[test]
    fn a_valid_model_builds_with_its_window_from_the_envelopes() {
        let m = two_level().build().unwrap();
        assert_eq!(
            m.window,
            Window {
                start: 0.0,
                end: 1e-6
            }
        );
        assert_eq!(m.tolerance, DEFAULT_TOLERANCE);
    }

    // The checks the propagators and the estimator no longer repeat: finite
    // solver settings, and an envelope whose shortest feature does not
    // underflow to 0 (a Blackman pulse of the smallest subnormal duration).
    #[test]
    fn solver_settings_and_envelope_scales_are_checked() {
        let solver = SolverSettings {
            rtol: f64::INFINITY,
            ..SolverSettings::default()
        };
        let e = two_level().solver(solver).build().unwrap_err();
        assert_eq!(e, ModelError::NonFinite { at: Part::Solver });
        let m = two_level().build().unwrap();
        let mut fields = m.fields().to_vec();
        fields[0].envelope = Envelope::Blackman {
            start: 0.0,
            duration: 5e-324,
        };
        let e = m
            .to_builder()
            .fields(fields)
            .window(m.window())
            .build()
            .unwrap_err();
        assert!(
            matches!(
                e,
                ModelError::Invalid {
                    at: Part::Envelope(0),
                    ..
                }
            ),
            "{e}"
        );
        assert_eq!(m.to_builder().build(), Ok(m));
    }

    #[test]
    fn broken_invariants_are_typed_errors() {
        let e = two_level().initial(vec![0.5, 0.0]).build().unwrap_err();
        assert!(
            matches!(
                e,
                ModelError::Invalid {
                    at: Part::Initial,
                    ..
                }
            ),
            "{e}"
        );
        let e = two_level().targets(vec![0]).build().unwrap_err();
        assert!(
            matches!(
                e,
                ModelError::Invalid {
                    at: Part::Target(0),
                    ..
                }
            ),
            "{e}"
        );
        let e = two_level()
            .drive(Drive {
                field: 0,
                coupling: 0,
                rabi: 1.0,
            })
            .build()
            .unwrap_err();
        assert!(
            matches!(
                e,
                ModelError::Invalid {
                    at: Part::Drive(1),
                    ..
                }
            ),
            "{e}"
        );
        let e = two_level()
            .drives(vec![Drive {
                field: 0,
                coupling: 0,
                rabi: f64::INFINITY,
            }])
            .build()
            .unwrap_err();
        assert_eq!(e, ModelError::NonFinite { at: Part::Drive(0) });
        let e = two_level()
            .window(Window {
                start: 1.0,
                end: 0.0,
            })
            .build()
            .unwrap_err();
        assert!(
            matches!(
                e,
                ModelError::Invalid {
                    at: Part::Window,
                    ..
                }
            ),
            "{e}"
        );
    }
}
