//! The frame Hamiltonian in window time, shared by the equations.
//!
//! Owns: the scaled frame detunings, damping and coupling terms
//! (multiplied by the window length T, so that rates are per unit of window
//! time s = (t - t0) / T), the envelope pieces of the current stretch, and
//! the coupling of every term at a time; the piecewise-constant matrix
//! elements a generator is built from. Must not: know a state layout (the
//! equations do), step or record.

use crate::hamiltonian::FrameHamiltonian;
use crate::model::Model;
use crate::solve::equation::Clock;
use crate::solve::plan::Piece;
use num_complex::Complex64;
use std::cell::RefCell;

/// A term of the frame Hamiltonian in window time s = (t - t0) / T.
#[derive(Debug, Clone, Copy)]
pub(super) struct ScaledTerm {
    pub lower: usize,
    pub upper: usize,
    pub field: usize,
    /// Coupling times T.
    pub c: Complex64,
    /// Residual phase rho(s) = (rate + 0.5 sweep s) s, scaled; None: none.
    pub residual: Option<(f64, f64)>,
}

// Same shape as FrameHamiltonian: its window-time copy, other fields.
/// The frame Hamiltonian of one model, scaled to window time.
pub(super) struct ScaledFrame<'a> {
    pub model: &'a Model,
    pub fh: &'a FrameHamiltonian,
    pub n: usize,
    pub clock: Clock,
    pub det0: Vec<f64>,
    pub det_rate: Vec<f64>,
    pub half_gamma: Vec<f64>,
    pub terms: Vec<ScaledTerm>,
    used_fields: Vec<usize>,
    pieces: Vec<Piece<'a>>,
    env: RefCell<Vec<f64>>,
    /// Midpoint (s) of the current stretch.
    mid: f64,
}

impl<'a> ScaledFrame<'a> {
    /// The frame `fh` of `model` in window time.
    pub fn new(model: &'a Model, fh: &'a FrameHamiltonian) -> Self {
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
        ScaledFrame {
            model,
            fh,
            n: fh.dim(),
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

    /// Fix the envelope pieces for the stretch between two stops (s).
    pub fn enter_stretch(&mut self, start: f64, end: f64) {
        let mid = 0.5 * (start + end);
        self.mid = mid;
        for &f in &self.used_fields {
            self.pieces[f] = Piece::of(&self.model.fields[f].envelope, mid);
        }
    }

    /// The scaled frame detuning of level k at window time s.
    #[inline]
    pub fn detuning(&self, k: usize, s: f64) -> f64 {
        self.det0[k] + self.det_rate[k] * s
    }

    /// Call `f(lower, upper, g)` for every term that is on at window time s,
    /// g the scaled element on |upper><lower|.
    #[inline]
    pub fn for_each_coupling(&self, s: f64, mut f: impl FnMut(usize, usize, Complex64)) {
        let t = self.clock.absolute(s);
        let mut env = self.env.borrow_mut();
        for &fi in &self.used_fields {
            env[fi] = self.pieces[fi].eval(t);
        }
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
            f(term.lower, term.upper, g);
        }
    }

    /// The unscaled Hamiltonian of the current stretch (rad/s), for a
    /// generator: `diag(k)` = (detuning at the window start, Gamma_k / 2),
    /// then `f(lower, upper, element on |upper><lower|)` per term, with the
    /// envelopes at the stretch midpoint (a piecewise-constant frame
    /// Hamiltonian has no detuning rate).
    pub fn stretch_elements(
        &self,
        mut diag: impl FnMut(usize, f64, f64),
        mut f: impl FnMut(usize, usize, Complex64),
    ) {
        let mut env = self.env.borrow_mut();
        for t in &self.fh.terms {
            env[t.field] = Piece::of(&self.model.fields[t.field].envelope, self.mid).eval(self.mid);
        }
        for (k, l) in self.fh.levels.iter().enumerate() {
            diag(k, l.detuning_at(0.0), l.half_gamma);
        }
        for t in &self.fh.terms {
            f(t.lower, t.upper, t.coupling * env[t.field]);
        }
    }
}
