//! The validated, unit-free model of a scheme.
//!
//! Owns: the plain data every later stage works from (levels, couplings, fields,
//! drives, window, solver settings), the envelope shapes (`envelope/`, one
//! file per shape), the field physics (`field.rs`: Rabi frequencies from
//! intensity, area and dipole) and the validated builder (`builder.rs`).
//! Everything here is SI with *angular* frequencies (rad/s), energies as
//! angular frequencies E/hbar, times in seconds.
//!
//! Must not: know about YAML, strings with units, files, or output formats.
//! A [`Model`] is built only by [`ModelBuilder`] (scheme validation ends in
//! it); its fields are private to the crate, read through accessors, and
//! the builder's checks are the only consistency checks: later stages rely
//! on them instead of checking again. The crate's derived models
//! ([`Model::with_field_envelope`]) keep the same invariants.

mod builder;
pub mod envelope;
mod field;
pub mod open;
mod part;

pub use builder::{ModelBuilder, ModelError, Part, POPULATION_SUM_TOLERANCE};
pub use envelope::{
    gaussian_sigma_from_intensity_fwhm, sech_intensity_fwhm, Envelope, BLACKMAN, TAIL_CUTOFF,
};
pub use field::{
    intensity_from_rabi, rabi_by_dipole_ratio, rabi_from_area, rabi_from_intensity, Field,
};

use std::f64::consts::PI;

/// A validated scheme: SI numbers only.
///
/// A `Model` exists only through [`ModelBuilder`] (which scheme validation
/// ends in), so every model has passed the builder's checks; its fields are
/// private to the crate and read through the accessors below. The crate's
/// own derived models ([`Model::with_field_envelope`]) keep those invariants.
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    /// Free text title from the scheme, if any.
    pub(crate) title: Option<String>,
    /// Levels in file order.
    pub(crate) levels: Vec<Level>,
    /// Dipole couplings in file order.
    pub(crate) couplings: Vec<Coupling>,
    /// Fields in file order.
    pub(crate) fields: Vec<Field>,
    /// Every (field, coupling) pair the field drives, in field order then
    /// coupling order. Includes drives that a later stage may leave out by
    /// the detuning cutoff.
    pub(crate) drives: Vec<Drive>,
    /// Initial population of each level (same length as `levels`, sums to 1).
    pub(crate) initial: Vec<f64>,
    /// How the initial populations combine: coherently (amplitudes
    /// `sqrt(p)` with phase 0, the v1 meaning) or as a mixture.
    pub(crate) initial_kind: InitialKind,
    /// When final populations, flags and targets are judged.
    pub(crate) readout: Readout,
    /// Indices of target levels.
    pub(crate) targets: Vec<usize>,
    /// Default spectator tolerance (population).
    pub(crate) tolerance: f64,
    /// Time window of the dynamics.
    pub(crate) window: Window,
    /// Solver settings.
    pub(crate) solver: SolverSettings,
    /// Coherent spontaneous-emission channels (generated from angular
    /// momentum; one per polarisation and pair of manifolds).
    pub(crate) jumps: Vec<Jump>,
}

/// A coherent spontaneous-emission channel, the jump operator
/// L = sum_t a_t |lower_t><upper_t| of the Lindblad equation (a_t in
/// s^-1/2). Its terms share one photon polarisation, so the amplitudes of
/// different pairs add coherently: sum_t a_t^2 over the terms leaving a
/// level is the part of that level's decay rate the channel carries.
#[derive(Debug, Clone, PartialEq)]
pub struct Jump {
    /// What the channel is, for reports (e.g. "P -> S, q = +1").
    pub label: String,
    pub terms: Vec<JumpTerm>,
}

/// One term a |lower><upper| of a [`Jump`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct JumpTerm {
    pub lower: usize,
    pub upper: usize,
    /// Amplitude (s^-1/2), signed.
    pub amplitude: f64,
}

/// One level.
#[derive(Debug, Clone, PartialEq)]
pub struct Level {
    pub id: String,
    pub label: Option<String>,
    /// Energy as an angular frequency, E/hbar (rad/s).
    pub omega: f64,
    /// Population decay rate Gamma (1/s); 0 for a stable level.
    pub gamma: f64,
    /// Per-level leakage tolerance (population), overriding the default.
    pub tolerance: Option<f64>,
    /// Spontaneous-emission branching: (lower level, fraction of `gamma`).
    /// Fractions lie in (0, 1] and sum to at most 1; the remainder leaves
    /// the scheme ("lost"). Empty: all of the decay is lost (v1).
    pub decays_to: Vec<(usize, f64)>,
    /// Pure dephasing rate gamma (1/s): coherences rho_jk with j or k this
    /// level decay at gamma_j + gamma_k (jump operator sqrt(2 gamma)|k><k|).
    pub dephasing: f64,
    /// For a level a manifold generated: which manifold and its quantum
    /// numbers. None for a level written by hand (v1).
    pub origin: Option<LevelOrigin>,
}

/// Where a generated level comes from: its manifold, J, F and (for a
/// Zeeman sublevel) m_F, and its energy relative to the manifold's centre
/// of gravity. Angular momenta are doubled (`two_f = 3` is F = 3/2).
#[derive(Debug, Clone, PartialEq)]
pub struct LevelOrigin {
    /// The manifold's id in the scheme.
    pub manifold: String,
    /// 2 J of the manifold.
    pub two_j: i32,
    /// 2 F of the zero-field level the state connects to.
    pub two_f: i32,
    /// 2 m_F of a sublevel; None for a whole F level (resolve: hyperfine).
    pub two_m_f: Option<i32>,
    /// Energy / hbar relative to the manifold's centre of gravity (rad/s),
    /// as the structure computed it: the level's `omega` minus the centre.
    pub offset: f64,
}

impl Level {
    /// A stable level with no label, tolerance, decay or dephasing.
    pub fn new(id: impl Into<String>, omega: f64) -> Level {
        Level {
            id: id.into(),
            label: None,
            omega,
            gamma: 0.0,
            tolerance: None,
            decays_to: Vec::new(),
            dephasing: 0.0,
            origin: None,
        }
    }

    /// Fraction of the decay that leaves the scheme (1 - sum of branches),
    /// not counting coherent channels ([`Model::lost_fraction`] does).
    pub fn lost_fraction(&self) -> f64 {
        (1.0 - self.decays_to.iter().map(|d| d.1).sum::<f64>()).max(0.0)
    }
}

/// Strength of a coupling's dipole.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Dipole {
    /// Projection of the transition dipole on the field polarisation, C m (signed).
    Absolute(f64),
    /// A bare relative strength; only usable with fields set by Rabi frequency or area.
    Relative(f64),
}

impl Dipole {
    /// The signed number, whatever its kind.
    pub fn value(&self) -> f64 {
        match self {
            Dipole::Absolute(v) | Dipole::Relative(v) => *v,
        }
    }
}

/// A dipole coupling between two levels.
#[derive(Debug, Clone, PartialEq)]
pub struct Coupling {
    /// Index of the lower level (lower energy; file order breaks ties).
    pub lower: usize,
    /// Index of the upper level.
    pub upper: usize,
    pub dipole: Dipole,
}

/// One field acting on one coupling.
#[derive(Debug, Clone, PartialEq)]
pub struct Drive {
    /// Index into `Model::fields`.
    pub field: usize,
    /// Index into `Model::couplings`.
    pub coupling: usize,
    /// Peak Rabi frequency Omega = d E0 / hbar (rad/s), signed like the dipole.
    pub rabi: f64,
}

/// The time window of the dynamics.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Window {
    pub start: f64,
    pub end: f64,
}

impl Window {
    pub fn duration(&self) -> f64 {
        self.end - self.start
    }
}

/// How the initial populations of several levels combine.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum InitialKind {
    /// One level, or the v1 map of populations: a coherent superposition,
    /// amplitudes sqrt(p) with phase 0.
    #[default]
    Coherent,
    /// The same superposition, written explicitly (`superposition:`).
    Superposition,
    /// An incoherent mixture: a diagonal density matrix (`mixture:`).
    Mixture,
}

/// When final populations, flags, targets and goals are judged.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum Readout {
    /// At the window end (v1).
    #[default]
    WindowEnd,
    /// After the window, drives off, once every decay has run its course.
    Settled,
    /// At an absolute time (s) inside the window, ends included.
    At(f64),
}

/// Which equation of motion runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Dynamics {
    /// Amplitudes unless the scheme has an open-system key (decay
    /// branching, dephasing, a laser linewidth, a mixture).
    #[default]
    Auto,
    /// The Schrodinger equation for amplitudes (decay only as loss).
    Amplitudes,
    /// The Lindblad master equation for the density matrix.
    DensityMatrix,
}

/// Which propagator to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// Exact where the frame Hamiltonian is piecewise constant, else adaptive.
    Auto,
    Adaptive,
    Exact,
}

/// Solver settings (validated).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolverSettings {
    pub rtol: f64,
    pub atol: f64,
    pub method: Method,
    /// Which equation of motion runs.
    pub dynamics: Dynamics,
    /// Drives with |detuning| above this (rad/s) are left out of the dynamics.
    pub detuning_cutoff: f64,
}

/// Default relative tolerance of the adaptive propagator.
pub const DEFAULT_RTOL: f64 = 1e-10;
/// Default absolute tolerance of the adaptive propagator.
pub const DEFAULT_ATOL: f64 = 1e-12;
/// Default detuning cutoff, 1 THz cyclic, as an angular frequency.
pub const DEFAULT_DETUNING_CUTOFF: f64 = 2.0 * PI * 1e12;
/// Default spectator tolerance.
pub const DEFAULT_TOLERANCE: f64 = 1e-3;

impl Default for SolverSettings {
    fn default() -> Self {
        SolverSettings {
            rtol: DEFAULT_RTOL,
            atol: DEFAULT_ATOL,
            method: Method::Auto,
            dynamics: Dynamics::Auto,
            detuning_cutoff: DEFAULT_DETUNING_CUTOFF,
        }
    }
}

impl Model {
    /// Free text title from the scheme, if any.
    pub fn title(&self) -> Option<&str> {
        self.title.as_deref()
    }
    /// Levels in file order.
    pub fn levels(&self) -> &[Level] {
        &self.levels
    }
    /// Dipole couplings in file order.
    pub fn couplings(&self) -> &[Coupling] {
        &self.couplings
    }
    /// Fields in file order.
    pub fn fields(&self) -> &[Field] {
        &self.fields
    }
    /// Every (field, coupling) pair a field drives, in field order then
    /// coupling order, including drives beyond the detuning cutoff.
    pub fn drives(&self) -> &[Drive] {
        &self.drives
    }
    /// Initial population of each level (one per level, summing to 1).
    pub fn initial(&self) -> &[f64] {
        &self.initial
    }
    /// How the initial populations combine (coherent or a mixture).
    pub fn initial_kind(&self) -> InitialKind {
        self.initial_kind
    }
    /// When final populations are judged.
    pub fn readout(&self) -> Readout {
        self.readout
    }
    /// Coherent spontaneous-emission channels.
    pub fn jumps(&self) -> &[Jump] {
        &self.jumps
    }
    /// Fraction of level k's decay that leaves the scheme: what neither its
    /// branching nor the coherent channels carry (0 for a stable level).
    pub fn lost_fraction(&self, k: usize) -> f64 {
        let l = &self.levels[k];
        if l.gamma <= 0.0 {
            return 0.0;
        }
        (l.lost_fraction() - self.channel_rate(k) / l.gamma).max(0.0)
    }
    /// Where level k's decay goes, as fractions of its rate: its branching
    /// and the coherent channels' population flow (sum_t a_t^2 per lower
    /// level), one entry per lower level, in level order.
    pub fn branches(&self, k: usize) -> Vec<(usize, f64)> {
        let l = &self.levels[k];
        if l.gamma <= 0.0 {
            return Vec::new();
        }
        let mut by_level = vec![0.0; self.levels.len()];
        for &(j, b) in &l.decays_to {
            by_level[j] += b;
        }
        for t in self.jumps.iter().flat_map(|j| &j.terms) {
            if t.upper == k {
                by_level[t.lower] += t.amplitude * t.amplitude / l.gamma;
            }
        }
        by_level
            .into_iter()
            .enumerate()
            .filter(|(_, b)| *b > 0.0)
            .collect()
    }
    /// Decay rate (1/s) of level k carried by the coherent channels.
    pub fn channel_rate(&self, k: usize) -> f64 {
        self.jumps
            .iter()
            .flat_map(|j| &j.terms)
            .filter(|t| t.upper == k)
            .map(|t| t.amplitude * t.amplitude)
            .sum()
    }
    /// Whether the scheme uses an open-system key: decay branching,
    /// dephasing, a laser linewidth, a mixture or coherent decay channels.
    pub fn has_open_keys(&self) -> bool {
        self.initial_kind == InitialKind::Mixture
            || !self.jumps.is_empty()
            || self
                .levels
                .iter()
                .any(|l| !l.decays_to.is_empty() || l.dephasing > 0.0)
            || self.fields.iter().any(|f| f.linewidth > 0.0)
    }
    /// Whether the scheme uses any key of the open-system contract: an open
    /// key ([`Model::has_open_keys`]), `initial: {superposition: ...}`, a
    /// `readout` other than the window end, or `dynamics: density_matrix`.
    /// Outputs add their open-system columns (lost population, scattered
    /// photons) exactly then, so that a version-1 scheme's outputs keep
    /// their bytes.
    pub fn uses_open_system(&self) -> bool {
        self.has_open_keys()
            || self.initial_kind == InitialKind::Superposition
            || self.readout != Readout::WindowEnd
            || self.solver.dynamics == Dynamics::DensityMatrix
    }
    /// The equation that runs: `solver.dynamics`, with `auto` resolved.
    pub fn dynamics(&self) -> Dynamics {
        match self.solver.dynamics {
            Dynamics::Auto if self.has_open_keys() => Dynamics::DensityMatrix,
            Dynamics::Auto => Dynamics::Amplitudes,
            d => d,
        }
    }
    /// Indices of target levels.
    pub fn targets(&self) -> &[usize] {
        &self.targets
    }
    /// Default spectator tolerance (population).
    pub fn tolerance(&self) -> f64 {
        self.tolerance
    }
    /// Time window of the dynamics.
    pub fn window(&self) -> Window {
        self.window
    }
    /// Solver settings.
    pub fn solver(&self) -> SolverSettings {
        self.solver
    }

    /// Transition angular frequency of a coupling, omega_upper - omega_lower (>= 0).
    pub fn transition_omega(&self, coupling: usize) -> f64 {
        let c = &self.couplings[coupling];
        self.levels[c.upper].omega - self.levels[c.lower].omega
    }

    /// Detuning Delta = omega_L - omega_ab of a drive (rad/s), at the envelope centre.
    pub fn detuning(&self, drive: &Drive) -> f64 {
        self.fields[drive.field].omega - self.transition_omega(drive.coupling)
    }

    /// Pulse area Omega * integral f dt of a drive (rad).
    pub fn pulse_area(&self, drive: &Drive) -> f64 {
        drive.rabi * self.fields[drive.field].envelope.area()
    }

    /// Whether a drive is in the dynamics: |detuning| <= detuning cutoff.
    /// Drives beyond the cutoff are left out of the propagation and listed
    /// in reports with their perturbative estimate.
    pub fn drive_included(&self, drive: &Drive) -> bool {
        self.detuning(drive).abs() <= self.solver.detuning_cutoff
    }

    /// Tolerance of a level (its own or the default).
    pub fn tolerance_of(&self, level: usize) -> f64 {
        self.levels[level].tolerance.unwrap_or(self.tolerance)
    }

    /// A copy with field `field`'s envelope replaced by `env` and its chirp
    /// multiplied by `chirp_scale`; every drive of that field keeps its pulse
    /// area (its Rabi frequency is rescaled), and the window is widened to
    /// hold the new envelope. Used to check remedies by exact propagation.
    /// The copy is built again through [`ModelBuilder`], so it keeps every
    /// invariant or is refused (a new envelope that is not valid, a rescaled
    /// Rabi frequency that overflows).
    pub fn with_field_envelope(
        &self,
        field: usize,
        env: Envelope,
        chirp_scale: f64,
    ) -> Result<Model, ModelError> {
        let mut m = self.clone();
        let old = m.fields[field].envelope.area();
        let new = env.area();
        let factor = if new != 0.0 { old / new } else { 0.0 };
        let (a, b) = env.support();
        m.window.start = m.window.start.min(a);
        m.window.end = m.window.end.max(b);
        m.fields[field].envelope = env;
        m.fields[field].chirp *= chirp_scale;
        if let Some(i) = m.fields[field].peak_intensity.as_mut() {
            *i *= factor * factor;
        }
        for d in m.drives.iter_mut().filter(|d| d.field == field) {
            d.rabi *= factor;
        }
        m.to_builder().build()
    }

    /// Index of a level by id.
    pub fn level_index(&self, id: &str) -> Option<usize> {
        self.levels.iter().position(|l| l.id == id)
    }
}

/// Level and field ids: one or more of letters, digits, `_`, `'`, `+`,
/// `-`, `/` (the slash spells half-integers in generated ids: `P_F3/2_m+1/2`).
pub fn valid_id(id: &str) -> bool {
    !id.is_empty()
        && id
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '_' | '\'' | '+' | '-' | '/'))
}
