//! A small builder of `Model` values for the estimator tests, ending in the
//! library's validated `ModelBuilder` (the scheme parser is written
//! separately; these tests do not depend on it).
//! Illustrative numbers only.

#![allow(dead_code)]

use std::f64::consts::PI;

use levelplan::model::{
    Coupling, Dipole, Drive, Envelope, Field, Level, Model, SolverSettings, Window,
};

/// 2 pi x value: cyclic to angular frequency.
pub fn tau(x: f64) -> f64 {
    2.0 * PI * x
}

/// The parts of a model, kept here until `build` hands them to the
/// library's `ModelBuilder`.
pub struct Builder {
    levels: Vec<Level>,
    couplings: Vec<Coupling>,
    fields: Vec<Field>,
    drives: Vec<Drive>,
    initial: Vec<f64>,
    solver: SolverSettings,
    window: Option<Window>,
}

impl Default for Builder {
    fn default() -> Self {
        Self::new()
    }
}

impl Builder {
    pub fn new() -> Self {
        Builder {
            levels: vec![],
            couplings: vec![],
            fields: vec![],
            drives: vec![],
            initial: vec![],
            solver: SolverSettings::default(),
            window: None,
        }
    }

    fn level_idx(&self, id: &str) -> usize {
        self.levels
            .iter()
            .position(|l| l.id == id)
            .unwrap_or_else(|| panic!("no level {id}"))
    }

    fn field_idx(&self, id: &str) -> usize {
        self.fields
            .iter()
            .position(|f| f.id == id)
            .unwrap_or_else(|| panic!("no field {id}"))
    }

    /// A level with energy E/hbar = omega (rad/s).
    pub fn level(mut self, id: &str, omega: f64) -> Self {
        self.levels.push(Level::new(id, omega));
        self.initial.push(0.0);
        self
    }

    /// Initial population of a level.
    pub fn initial(mut self, id: &str, p: f64) -> Self {
        let i = self.level_idx(id);
        self.initial[i] = p;
        self
    }

    /// A coupling (ordered by energy).
    pub fn coupling(mut self, a: &str, b: &str) -> Self {
        let (ia, ib) = (self.level_idx(a), self.level_idx(b));
        let (lower, upper) = if self.levels[ia].omega <= self.levels[ib].omega {
            (ia, ib)
        } else {
            (ib, ia)
        };
        self.couplings.push(Coupling {
            lower,
            upper,
            dipole: Dipole::Relative(1.0),
        });
        self
    }

    /// A field with carrier omega_L (rad/s), no chirp, phase 0, RWA.
    pub fn field(mut self, id: &str, omega: f64, envelope: Envelope) -> Self {
        self.fields.push(Field {
            id: id.into(),
            omega,
            envelope,
            chirp: 0.0,
            phase: 0.0,
            rwa: true,
            peak_intensity: None,
            linewidth: 0.0,
        });
        self
    }

    /// A field tuned by `detuning` (rad/s) from the a-b transition.
    pub fn tuned(self, id: &str, a: &str, b: &str, detuning: f64, envelope: Envelope) -> Self {
        let (ia, ib) = (self.level_idx(a), self.level_idx(b));
        let w = (self.levels[ia].omega - self.levels[ib].omega).abs();
        self.field(id, w + detuning, envelope)
    }

    pub fn phase(mut self, field: &str, phase: f64) -> Self {
        let i = self.field_idx(field);
        self.fields[i].phase = phase;
        self
    }

    pub fn chirp(mut self, field: &str, chirp: f64) -> Self {
        let i = self.field_idx(field);
        self.fields[i].chirp = chirp;
        self
    }

    pub fn no_rwa(mut self, field: &str) -> Self {
        let i = self.field_idx(field);
        self.fields[i].rwa = false;
        self
    }

    /// Field `field` drives the coupling between a and b with peak Rabi
    /// frequency `rabi` (rad/s).
    pub fn drive(mut self, field: &str, a: &str, b: &str, rabi: f64) -> Self {
        let f = self.field_idx(field);
        let (ia, ib) = (self.level_idx(a), self.level_idx(b));
        let c = self
            .couplings
            .iter()
            .position(|c| (c.lower == ia && c.upper == ib) || (c.lower == ib && c.upper == ia))
            .unwrap_or_else(|| panic!("no coupling {a}-{b}"));
        self.drives.push(Drive {
            field: f,
            coupling: c,
            rabi,
        });
        self
    }

    pub fn window(mut self, start: f64, end: f64) -> Self {
        self.window = Some(Window { start, end });
        self
    }

    pub fn cutoff(mut self, c: f64) -> Self {
        self.solver.detuning_cutoff = c;
        self
    }

    /// The model, checked by the library's builder (panics on a broken one:
    /// a mistake in the test); the default window spans every envelope's
    /// support, and the default tolerance is 1e-3.
    pub fn build(self) -> Model {
        let mut b = Model::builder()
            .levels(self.levels)
            .couplings(self.couplings)
            .fields(self.fields)
            .drives(self.drives)
            .initial(self.initial)
            .tolerance(1e-3)
            .solver(self.solver);
        if let Some(w) = self.window {
            b = b.window(w);
        }
        b.build()
            .unwrap_or_else(|e| panic!("test model refused: {e}"))
    }
}

/// Rectangular pulse on [start, start + duration).
pub fn rect(start: f64, duration: f64) -> Envelope {
    Envelope::Rectangular { start, duration }
}

/// Relative difference.
pub fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}
