//! The Schrodinger equation for the frame amplitudes, with decay out of the
//! system: i da/dt = H(t) a, H non-Hermitian (-i Gamma_k / 2 on the diagonal).
//!
//! Owns: the state layout (interleaved (re, im) frame amplitudes of the N
//! levels, then the population lost to decay: 2N + 1 components), the
//! right-hand side in window time, populations |a_k|^2 and their Hermite
//! interpolant from the amplitudes, and the generator -i H of a
//! piecewise-constant stretch with the loss form Gamma. Must not: step,
//! record, or decide which stepper runs.

use super::frame::ScaledFrame;
use crate::hamiltonian::FrameHamiltonian;
use crate::model::Model;
use crate::solve::equation::{Equation, Generator};
use num_complex::Complex64;

const I: Complex64 = Complex64 { re: 0.0, im: 1.0 };

/// The amplitude equation of one model in its frame.
pub struct Amplitudes<'a> {
    frame: ScaledFrame<'a>,
}

impl<'a> Amplitudes<'a> {
    /// The equation of `model` in the frame `fh` (window time from `fh`).
    pub fn new(model: &'a Model, fh: &'a FrameHamiltonian) -> Self {
        Amplitudes {
            frame: ScaledFrame::new(model, fh),
        }
    }
}

impl Equation for Amplitudes<'_> {
    fn dim(&self) -> usize {
        2 * self.frame.n + 1
    }

    fn levels(&self) -> usize {
        self.frame.n
    }

    fn initial_state(&self, y: &mut [f64]) {
        y.fill(0.0);
        let fr = &self.frame;
        for (k, a) in fr.fh.initial_amplitudes(fr.model).iter().enumerate() {
            y[2 * k] = a.re;
            y[2 * k + 1] = a.im;
        }
    }

    fn enter_stretch(&mut self, start: f64, end: f64) {
        self.frame.enter_stretch(start, end);
    }

    fn rhs(&self, s: f64, y: &[f64], dy: &mut [f64]) {
        let fr = &self.frame;
        let mut lost = 0.0;
        for k in 0..fr.n {
            let (x, v) = (y[2 * k], y[2 * k + 1]);
            let d = fr.detuning(k, s);
            let g = fr.half_gamma[k];
            // -i d a - g a
            dy[2 * k] = d * v - g * x;
            dy[2 * k + 1] = -d * x - g * v;
            lost += 2.0 * g * (x * x + v * v);
        }
        dy[2 * fr.n] = lost;
        fr.for_each_coupling(s, |a, b, g| {
            let (xa, ya, xb, yb) = (y[2 * a], y[2 * a + 1], y[2 * b], y[2 * b + 1]);
            // da_b/ds += -i g a_a ; da_a/ds += -i conj(g) a_b
            dy[2 * b] += g.re * ya + g.im * xa;
            dy[2 * b + 1] -= g.re * xa - g.im * ya;
            dy[2 * a] += g.re * yb - g.im * xb;
            dy[2 * a + 1] -= g.re * xb + g.im * yb;
        });
    }

    #[inline]
    fn population(&self, y: &[f64], k: usize) -> f64 {
        y[2 * k] * y[2 * k] + y[2 * k + 1] * y[2 * k + 1]
    }

    #[inline]
    fn population_rate(&self, y: &[f64], dy: &[f64], k: usize) -> f64 {
        2.0 * (y[2 * k] * dy[2 * k] + y[2 * k + 1] * dy[2 * k + 1])
    }

    // Same signature as the default in equation.rs (and peaks/tests.rs): an override repeats it.
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
        y[..2 * self.frame.n].iter().map(|v| v * v).sum()
    }

    fn lost(&self, y: &[f64]) -> f64 {
        y[2 * self.frame.n]
    }

    /// Every decay of this equation leaves the scheme by spontaneous
    /// emission (no decay route feeds a level), so the lost part counts
    /// the emissions: sum_k Gamma_k x integral |a_k|^2 dt.
    fn emitted(&self, y: &[f64]) -> Option<f64> {
        Some(self.lost(y))
    }

    /// -i H of the current stretch (envelopes at its midpoint; the frame
    /// detunings at the window start: a piecewise-constant frame Hamiltonian
    /// has no detuning rate), and q = Gamma.
    fn generator(&self, out: &mut Generator) -> bool {
        let n = self.frame.n;
        if out.matrix.nrows() != n || out.matrix.ncols() != n || out.loss.len() != n {
            *out = Generator::zeros(n);
        }
        let (h, loss) = (&mut out.matrix, &mut out.loss);
        h.fill(Complex64::new(0.0, 0.0));
        let mut diag = vec![(0.0, 0.0); n];
        let mut elems = Vec::with_capacity(self.frame.terms.len());
        self.frame.stretch_elements(
            |k, d, hg| diag[k] = (d, hg),
            |a, b, g| elems.push((a, b, g)),
        );
        for (k, &(d, hg)) in diag.iter().enumerate() {
            h[(k, k)] = Complex64::new(d, -hg);
            loss[k] = 2.0 * hg;
        }
        for (a, b, g) in elems {
            h[(b, a)] += g;
            h[(a, b)] += g.conj();
        }
        for z in h.iter_mut() {
            *z = -I * *z;
        }
        true
    }

    fn generator_dim(&self) -> usize {
        self.frame.n
    }
}
