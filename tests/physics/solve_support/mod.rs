//! Test helper: builds `Model` values directly in Rust through the library's
//! validated `ModelBuilder`, so the propagation tests do not depend on the
//! scheme parser. All numbers are
//! invented, illustrative values (SI, angular frequencies).
#![allow(dead_code)]

use levelplan::model::{
    Coupling, Dipole, Drive, Envelope, Field, Level, Method, Model, SolverSettings, Window,
};
use std::f64::consts::PI;

/// 2 pi * x: cyclic to angular frequency.
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
    window: Window,
    solver: SolverSettings,
}

impl Default for Builder {
    fn default() -> Self {
        Self::new()
    }
}

impl Builder {
    pub fn new() -> Self {
        Builder {
            levels: Vec::new(),
            couplings: Vec::new(),
            fields: Vec::new(),
            drives: Vec::new(),
            initial: Vec::new(),
            window: Window {
                start: 0.0,
                end: 1.0,
            },
            solver: SolverSettings::default(),
        }
    }

    /// A level with energy omega (rad/s) and decay rate gamma (1/s).
    pub fn level(mut self, id: &str, omega: f64, gamma: f64) -> Self {
        self.levels.push(Level {
            gamma,
            ..Level::new(id, omega)
        });
        self.initial.push(0.0);
        self
    }

    fn idx(&self, id: &str) -> usize {
        self.levels
            .iter()
            .position(|l| l.id == id)
            .unwrap_or_else(|| panic!("no level {id}"))
    }

    /// A coupling (ordered by energy).
    pub fn coupling(mut self, a: &str, b: &str) -> Self {
        let (i, j) = (self.idx(a), self.idx(b));
        let (lower, upper) = if self.levels[i].omega <= self.levels[j].omega {
            (i, j)
        } else {
            (j, i)
        };
        self.couplings.push(Coupling {
            lower,
            upper,
            dipole: Dipole::Relative(1.0),
        });
        self
    }

    /// A field with carrier omega_l (rad/s), chirp (rad/s^2), phase and rwa flag.
    pub fn field_full(
        mut self,
        id: &str,
        omega_l: f64,
        envelope: Envelope,
        chirp: f64,
        phase: f64,
        rwa: bool,
    ) -> Self {
        self.fields.push(Field {
            id: id.into(),
            omega: omega_l,
            envelope,
            chirp,
            phase,
            rwa,
            peak_intensity: None,
            linewidth: 0.0,
        });
        self
    }

    pub fn field(self, id: &str, omega_l: f64, envelope: Envelope) -> Self {
        self.field_full(id, omega_l, envelope, 0.0, 0.0, true)
    }

    /// A field tuned with detuning delta (rad/s) from the a-b transition.
    pub fn field_tuned(self, id: &str, a: &str, b: &str, delta: f64, envelope: Envelope) -> Self {
        let w = (self.levels[self.idx(a)].omega - self.levels[self.idx(b)].omega).abs();
        self.field(id, w + delta, envelope)
    }

    /// Field `f` drives the coupling a-b with signed peak Rabi frequency (rad/s).
    pub fn drive(mut self, f: &str, a: &str, b: &str, rabi: f64) -> Self {
        let (i, j) = (self.idx(a), self.idx(b));
        let coupling = self
            .couplings
            .iter()
            .position(|c| (c.lower == i && c.upper == j) || (c.lower == j && c.upper == i))
            .unwrap_or_else(|| panic!("no coupling {a}-{b}"));
        let field = self.fields.iter().position(|x| x.id == f).expect("field");
        self.drives.push(Drive {
            field,
            coupling,
            rabi,
        });
        self
    }

    pub fn initial(mut self, id: &str) -> Self {
        let i = self.idx(id);
        self.initial.iter_mut().for_each(|p| *p = 0.0);
        self.initial[i] = 1.0;
        self
    }

    pub fn window(mut self, start: f64, end: f64) -> Self {
        self.window = Window { start, end };
        self
    }

    pub fn method(mut self, m: Method) -> Self {
        self.solver.method = m;
        self
    }

    pub fn tolerances(mut self, rtol: f64, atol: f64) -> Self {
        self.solver.rtol = rtol;
        self.solver.atol = atol;
        self
    }

    pub fn cutoff(mut self, c: f64) -> Self {
        self.solver.detuning_cutoff = c;
        self
    }

    /// The model, checked by the library's builder (panics on a broken one:
    /// a mistake in the test).
    pub fn build(self) -> Model {
        Model::builder()
            .levels(self.levels)
            .couplings(self.couplings)
            .fields(self.fields)
            .drives(self.drives)
            .initial(self.initial)
            .window(self.window)
            .solver(self.solver)
            .build()
            .unwrap_or_else(|e| panic!("test model refused: {e}"))
    }
}

/// Rectangular envelope.
pub fn rect(start: f64, duration: f64) -> Envelope {
    Envelope::Rectangular { start, duration }
}

/// Two-level model: g at 0, e at omega0, field detuned by delta, rectangular
/// pulse of duration t from 0, Rabi frequency omega.
pub fn two_level(omega0: f64, rabi: f64, delta: f64, t: f64) -> Model {
    Builder::new()
        .level("g", 0.0, 0.0)
        .level("e", omega0, 0.0)
        .coupling("g", "e")
        .field_tuned("L", "g", "e", delta, rect(0.0, t))
        .drive("L", "g", "e", rabi)
        .initial("g")
        .window(0.0, t)
        .build()
}

/// The same model with another propagation method, through the library's
/// builder (a model cannot be changed in place).
pub fn with_method(m: &Model, method: Method) -> Model {
    m.to_builder()
        .solver(SolverSettings {
            method,
            ..m.solver()
        })
        .build()
        .unwrap_or_else(|e| panic!("test model refused: {e}"))
}

/// The same model over another window, through the library's builder.
pub fn with_window(m: &Model, start: f64, end: f64) -> Model {
    m.to_builder()
        .window(Window { start, end })
        .build()
        .unwrap_or_else(|e| panic!("test model refused: {e}"))
}

/// Detuned Rabi formula, I. I. Rabi, Phys. Rev. 51, 652 (1937).
pub fn rabi_formula(rabi: f64, delta: f64, t: f64) -> f64 {
    let w2 = rabi * rabi + delta * delta;
    rabi * rabi / w2 * (0.5 * w2.sqrt() * t).sin().powi(2)
}
