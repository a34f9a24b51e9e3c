//! The Schrodinger equation for the frame amplitudes, with decay out of the
//! system: i da/dt = H(t) a, H non-Hermitian (-i Gamma_k / 2 on the diagonal).
//!
//! Owns: the state layout (interleaved (re, im) frame amplitudes of the N
//! levels, then the population lost to decay: 2N + 1 components), the
//! right-hand side in window time, populations |a_k|^2 and their Hermite
//! interpolant from the amplitudes, and the generator -i H of a
//! piecewise-constant stretch with the loss form Gamma. Must not: step,
//! record, or decide which stepper runs.

use crate::hamiltonian::FrameHamiltonian;
use crate::model::Model;
use crate::solve::equation::{Clock, Equation, Generator};
use crate::solve::plan::Piece;
use num_complex::Complex64;
use std::cell::RefCell;

const I: Complex64 = Complex64 { re: 0.0, im: 1.0 };

/// A term of the frame Hamiltonian in window time s = (t - t0) / T.
#[derive(Debug, Clone, Copy)]
struct ScaledTerm {
    lower: usize,
    upper: usize,
    field: usize,
    /// Coupling times T.
    c: Complex64,
    /// Residual phase rho(s) = (rate + 0.5 sweep s) s, scaled; None: none.
    residual: Option<(f64, f64)>,
}

/// The amplitude equation of one model in its frame.
pub struct Amplitudes<'a> {
    model: &'a Model,
    fh: &'a FrameHamiltonian,
    n: usize,
    clock: Clock,
    det0: Vec<f64>,
    det_rate: Vec<f64>,
    half_gamma: Vec<f64>,
    terms: Vec<ScaledTerm>,
    used_fields: Vec<usize>,
    pieces: Vec<Piece<'a>>,
    env: RefCell<Vec<f64>>,
    /// Midpoint (s) of the current stretch.
    mid: f64,
}

impl<'a> Amplitudes<'a> {
    /// The equation of `model` in the frame `fh` (window time from `fh`).
    pub fn new(model: &'a Model, fh: &'a FrameHamiltonian) -> Self {
        let n = fh.dim();
        let scale = fh.duration;
        let terms: Vec<ScaledTerm> = fh
            .terms
            .iter()
            .map(|t| ScaledTerm {
                lower: t.lower,
                upper: t.upper,
                field: t.field,
                c: t.coupling * scale,
                residual: t
                    .residual
                    .map(|r| (r.rate * scale, r.sweep * scale * scale)),
            })
            .collect();
        let mut used_fields: Vec<usize> = terms.iter().map(|t| t.field).collect();
        used_fields.sort_unstable();
        used_fields.dedup();
        Amplitudes {
            model,
            fh,
            n,
            clock: Clock { t0: fh.t0, scale },
            det0: fh.levels.iter().map(|l| l.detuning * scale).collect(),
            det_rate: fh
                .levels
                .iter()
                .map(|l| l.detuning_rate * scale * scale)
                .collect(),
            half_gamma: fh.levels.iter().map(|l| l.half_gamma * scale).collect(),
            terms,
            used_fields,
            pieces: model.fields.iter().map(|_| Piece::Zero).collect(),
            env: RefCell::new(vec![0.0; model.fields.len()]),
            mid: fh.t0,
        }
    }
}

impl Equation for Amplitudes<'_> {
    fn dim(&self) -> usize {
        2 * self.n + 1
    }

    fn levels(&self) -> usize {
        self.n
    }

    fn initial_state(&self, y: &mut [f64]) {
        y.fill(0.0);
        for (k, a) in self.fh.initial_amplitudes(self.model).iter().enumerate() {
            y[2 * k] = a.re;
            y[2 * k + 1] = a.im;
        }
    }

    fn enter_stretch(&mut self, start: f64, end: f64) {
        let mid = 0.5 * (start + end);
        self.mid = mid;
        for &f in &self.used_fields {
            self.pieces[f] = Piece::of(&self.model.fields[f].envelope, mid);
        }
    }

    fn rhs(&self, s: f64, y: &[f64], dy: &mut [f64]) {
        let t = self.clock.absolute(s);
        let mut env = self.env.borrow_mut();
        for &f in &self.used_fields {
            env[f] = self.pieces[f].eval(t);
        }
        let mut lost = 0.0;
        for k in 0..self.n {
            let (x, v) = (y[2 * k], y[2 * k + 1]);
            let d = self.det0[k] + self.det_rate[k] * s;
            let g = self.half_gamma[k];
            // -i d a - g a
            dy[2 * k] = d * v - g * x;
            dy[2 * k + 1] = -d * x - g * v;
            lost += 2.0 * g * (x * x + v * v);
        }
        dy[2 * self.n] = lost;
        for term in &self.terms {
            let e = env[term.field];
            if e == 0.0 {
                continue;
            }
            let mut g = term.c * e;
            if let Some((rate, sweep)) = term.residual {
                let (sn, cs) = ((rate + 0.5 * sweep * s) * s).sin_cos();
                g *= Complex64::new(cs, -sn);
            }
            let (a, b) = (term.lower, term.upper);
            let (xa, ya, xb, yb) = (y[2 * a], y[2 * a + 1], y[2 * b], y[2 * b + 1]);
            // da_b/ds += -i g a_a ; da_a/ds += -i conj(g) a_b
            dy[2 * b] += g.re * ya + g.im * xa;
            dy[2 * b + 1] -= g.re * xa - g.im * ya;
            dy[2 * a] += g.re * yb - g.im * xb;
            dy[2 * a + 1] -= g.re * xb + g.im * yb;
        }
    }

    #[inline]
    fn population(&self, y: &[f64], k: usize) -> f64 {
        y[2 * k] * y[2 * k] + y[2 * k + 1] * y[2 * k + 1]
    }

    #[inline]
    fn population_rate(&self, y: &[f64], dy: &[f64], k: usize) -> f64 {
        2.0 * (y[2 * k] * dy[2 * k] + y[2 * k + 1] * dy[2 * k + 1])
    }

    /// Hermite interpolation of the amplitude, then its square.
    #[inline(always)]
    fn interpolated_population(
        &self,
        k: usize,
        y0: &[f64],
        d0: &[f64],
        y1: &[f64],
        d1: &[f64],
        h: f64,
        c: &[f64; 4],
    ) -> f64 {
        let (r, i) = (2 * k, 2 * k + 1);
        let re = c[0] * y0[r] + c[1] * h * d0[r] + c[2] * y1[r] + c[3] * h * d1[r];
        let im = c[0] * y0[i] + c[1] * h * d0[i] + c[2] * y1[i] + c[3] * h * d1[i];
        re * re + im * im
    }

    fn norm(&self, y: &[f64]) -> f64 {
        y[..2 * self.n].iter().map(|v| v * v).sum()
    }

    fn lost(&self, y: &[f64]) -> f64 {
        y[2 * self.n]
    }

    /// -i H of the current stretch (envelopes at its midpoint; the frame
    /// detunings at the window start: a piecewise-constant frame Hamiltonian
    /// has no detuning rate), and q = Gamma.
    fn generator(&self, out: &mut Generator) -> bool {
        let n = self.n;
        if out.matrix.nrows() != n || out.matrix.ncols() != n || out.loss.len() != n {
            *out = Generator::zeros(n);
        }
        let (h, loss) = (&mut out.matrix, &mut out.loss);
        let mut env = self.env.borrow_mut();
        for t in &self.fh.terms {
            env[t.field] = Piece::of(&self.model.fields[t.field].envelope, self.mid).eval(self.mid);
        }
        h.fill(Complex64::new(0.0, 0.0));
        for (k, l) in self.fh.levels.iter().enumerate() {
            h[(k, k)] = Complex64::new(l.detuning_at(0.0), -l.half_gamma);
            loss[k] = 2.0 * l.half_gamma;
        }
        for t in &self.fh.terms {
            let g = t.coupling * env[t.field];
            h[(t.upper, t.lower)] += g;
            h[(t.lower, t.upper)] += g.conj();
        }
        for z in h.iter_mut() {
            *z = -I * *z;
        }
        true
    }

    fn generator_dim(&self) -> usize {
        self.n
    }
}
