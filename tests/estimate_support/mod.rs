//! A small builder of `Model` values for the estimator tests (the scheme
//! parser is written separately; these tests do not depend on it).
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

pub struct Builder {
    m: Model,
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
            m: Model {
                title: None,
                levels: vec![],
                couplings: vec![],
                fields: vec![],
                drives: vec![],
                initial: vec![],
                targets: vec![],
                tolerance: 1e-3,
                window: Window {
                    start: 0.0,
                    end: 0.0,
                },
                solver: SolverSettings::default(),
            },
            window: None,
        }
    }

    fn level_idx(&self, id: &str) -> usize {
        self.m
            .level_index(id)
            .unwrap_or_else(|| panic!("no level {id}"))
    }

    fn field_idx(&self, id: &str) -> usize {
        self.m
            .fields
            .iter()
            .position(|f| f.id == id)
            .unwrap_or_else(|| panic!("no field {id}"))
    }

    /// A level with energy E/hbar = omega (rad/s).
    pub fn level(mut self, id: &str, omega: f64) -> Self {
        self.m.levels.push(Level {
            id: id.into(),
            label: None,
            omega,
            gamma: 0.0,
            tolerance: None,
        });
        self.m.initial.push(0.0);
        self
    }

    /// Initial population of a level.
    pub fn initial(mut self, id: &str, p: f64) -> Self {
        let i = self.level_idx(id);
        self.m.initial[i] = p;
        self
    }

    /// A coupling (ordered by energy).
    pub fn coupling(mut self, a: &str, b: &str) -> Self {
        let (ia, ib) = (self.level_idx(a), self.level_idx(b));
        let (lower, upper) = if self.m.levels[ia].omega <= self.m.levels[ib].omega {
            (ia, ib)
        } else {
            (ib, ia)
        };
        self.m.couplings.push(Coupling {
            lower,
            upper,
            dipole: Dipole::Relative(1.0),
        });
        self
    }

    /// A field with carrier omega_L (rad/s), no chirp, phase 0, RWA.
    pub fn field(mut self, id: &str, omega: f64, envelope: Envelope) -> Self {
        self.m.fields.push(Field {
            id: id.into(),
            omega,
            envelope,
            chirp: 0.0,
            phase: 0.0,
            rwa: true,
            peak_intensity: None,
        });
        self
    }

    /// A field tuned by `detuning` (rad/s) from the a-b transition.
    pub fn tuned(self, id: &str, a: &str, b: &str, detuning: f64, envelope: Envelope) -> Self {
        let (ia, ib) = (self.level_idx(a), self.level_idx(b));
        let w = (self.m.levels[ia].omega - self.m.levels[ib].omega).abs();
        self.field(id, w + detuning, envelope)
    }

    pub fn phase(mut self, field: &str, phase: f64) -> Self {
        let i = self.field_idx(field);
        self.m.fields[i].phase = phase;
        self
    }

    pub fn chirp(mut self, field: &str, chirp: f64) -> Self {
        let i = self.field_idx(field);
        self.m.fields[i].chirp = chirp;
        self
    }

    pub fn no_rwa(mut self, field: &str) -> Self {
        let i = self.field_idx(field);
        self.m.fields[i].rwa = false;
        self
    }

    /// Field `field` drives the coupling between a and b with peak Rabi
    /// frequency `rabi` (rad/s).
    pub fn drive(mut self, field: &str, a: &str, b: &str, rabi: f64) -> Self {
        let f = self.field_idx(field);
        let (ia, ib) = (self.level_idx(a), self.level_idx(b));
        let c = self
            .m
            .couplings
            .iter()
            .position(|c| (c.lower == ia && c.upper == ib) || (c.lower == ib && c.upper == ia))
            .unwrap_or_else(|| panic!("no coupling {a}-{b}"));
        self.m.drives.push(Drive {
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
        self.m.solver.detuning_cutoff = c;
        self
    }

    /// The model; the default window spans every envelope's support.
    pub fn build(mut self) -> Model {
        self.m.window = self.window.unwrap_or_else(|| {
            let (a, b) =
                self.m
                    .fields
                    .iter()
                    .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), f| {
                        let (s, e) = f.envelope.support();
                        (a.min(s), b.max(e))
                    });
            Window { start: a, end: b }
        });
        self.m
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
