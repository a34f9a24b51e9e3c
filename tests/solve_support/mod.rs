//! Test helper: builds validated-looking `Model` values directly in Rust, so the
//! propagation tests do not depend on the scheme parser. All numbers are
//! invented, illustrative values (SI, angular frequencies).
#![allow(dead_code)]

use levelplan::model::{
    Coupling, Dipole, Drive, Envelope, Field, Level, Method, Model, SolverSettings, Window,
    DEFAULT_TOLERANCE,
};
use std::f64::consts::PI;

/// 2 pi * x: cyclic to angular frequency.
pub fn tau(x: f64) -> f64 {
    2.0 * PI * x
}

pub struct Builder {
    m: Model,
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
                levels: Vec::new(),
                couplings: Vec::new(),
                fields: Vec::new(),
                drives: Vec::new(),
                initial: Vec::new(),
                targets: Vec::new(),
                tolerance: DEFAULT_TOLERANCE,
                window: Window {
                    start: 0.0,
                    end: 1.0,
                },
                solver: SolverSettings::default(),
            },
        }
    }

    /// A level with energy omega (rad/s) and decay rate gamma (1/s).
    pub fn level(mut self, id: &str, omega: f64, gamma: f64) -> Self {
        self.m.levels.push(Level {
            id: id.into(),
            label: None,
            omega,
            gamma,
            tolerance: None,
        });
        self.m.initial.push(0.0);
        self
    }

    fn idx(&self, id: &str) -> usize {
        self.m
            .level_index(id)
            .unwrap_or_else(|| panic!("no level {id}"))
    }

    /// A coupling (ordered by energy).
    pub fn coupling(mut self, a: &str, b: &str) -> Self {
        let (i, j) = (self.idx(a), self.idx(b));
        let (lower, upper) = if self.m.levels[i].omega <= self.m.levels[j].omega {
            (i, j)
        } else {
            (j, i)
        };
        self.m.couplings.push(Coupling {
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
        self.m.fields.push(Field {
            id: id.into(),
            omega: omega_l,
            envelope,
            chirp,
            phase,
            rwa,
            peak_intensity: None,
        });
        self
    }

    pub fn field(self, id: &str, omega_l: f64, envelope: Envelope) -> Self {
        self.field_full(id, omega_l, envelope, 0.0, 0.0, true)
    }

    /// A field tuned with detuning delta (rad/s) from the a-b transition.
    pub fn field_tuned(self, id: &str, a: &str, b: &str, delta: f64, envelope: Envelope) -> Self {
        let w = (self.m.levels[self.idx(a)].omega - self.m.levels[self.idx(b)].omega).abs();
        self.field(id, w + delta, envelope)
    }

    /// Field `f` drives the coupling a-b with signed peak Rabi frequency (rad/s).
    pub fn drive(mut self, f: &str, a: &str, b: &str, rabi: f64) -> Self {
        let (i, j) = (self.idx(a), self.idx(b));
        let coupling = self
            .m
            .couplings
            .iter()
            .position(|c| (c.lower == i && c.upper == j) || (c.lower == j && c.upper == i))
            .unwrap_or_else(|| panic!("no coupling {a}-{b}"));
        let field = self.m.fields.iter().position(|x| x.id == f).expect("field");
        self.m.drives.push(Drive {
            field,
            coupling,
            rabi,
        });
        self
    }

    pub fn initial(mut self, id: &str) -> Self {
        let i = self.idx(id);
        self.m.initial.iter_mut().for_each(|p| *p = 0.0);
        self.m.initial[i] = 1.0;
        self
    }

    pub fn window(mut self, start: f64, end: f64) -> Self {
        self.m.window = Window { start, end };
        self
    }

    pub fn method(mut self, m: Method) -> Self {
        self.m.solver.method = m;
        self
    }

    pub fn tolerances(mut self, rtol: f64, atol: f64) -> Self {
        self.m.solver.rtol = rtol;
        self.m.solver.atol = atol;
        self
    }

    pub fn cutoff(mut self, c: f64) -> Self {
        self.m.solver.detuning_cutoff = c;
        self
    }

    pub fn build(self) -> Model {
        self.m
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

/// Detuned Rabi formula, I. I. Rabi, Phys. Rev. 51, 652 (1937).
pub fn rabi_formula(rabi: f64, delta: f64, t: f64) -> f64 {
    let w2 = rabi * rabi + delta * delta;
    rabi * rabi / w2 * (0.5 * w2.sqrt() * t).sin().powi(2)
}
