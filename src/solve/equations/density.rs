//! The Lindblad master equation for the density matrix in the frame:
//! d rho/dt = -i (H_eff rho - rho H_eff^dagger) + sum_j L_j rho L_j^dagger
//! - (extra coherence damping), H_eff = H - (i/2) sum_k Gamma_k |k><k|.
//!
//! Jump operators: decay branching sqrt(Gamma_e b_k) |k><e| feeds rho_kk
//! (the rest of Gamma_e leaves the scheme: the lost part); pure dephasing
//! sqrt(2 gamma_k) |k><k| and the laser linewidths' phase diffusion damp
//! the coherences only, at the rates `model::open::coherence_damping`
//! gives. The right-hand side walks the sparse coupling list: its cost is
//! N^2 + N x (number of terms) complex operations, no N^2 x N^2 matrix.
//!
//! Owns: the state layout (rho row-major as interleaved (re, im), then the
//! lost part and the spontaneous emissions of every level, Gamma_k times the
//! integral of rho_kk, each as a complex number with zero imaginary part, so
//! the whole state is the complex vector z of the generator), populations
//! rho_kk, trace, positivity defect, and the Liouvillian of a
//! piecewise-constant stretch for small N. Must not: step, record, or decide
//! which stepper runs.

use super::channels::{self, Channels};
use super::frame::ScaledFrame;
use crate::hamiltonian::FrameHamiltonian;
use crate::model::{open, InitialKind, Model};
use crate::solve::equation::{Equation, Generator};
use num_complex::Complex64;

/// Largest number of levels for which the exact stepper builds the
/// (N^2 + N + 1)-dimensional Liouvillian (its exponential costs that size
/// cubed).
pub const EXACT_MAX_LEVELS: usize = 8;

const I: Complex64 = Complex64 { re: 0.0, im: 1.0 };

/// A decaying level: (level, Gamma (1/s), branches (level, fraction), lost fraction).
type Decay = (usize, f64, Vec<(usize, f64)>, f64);

/// The density-matrix equation of one model in its frame.
pub struct DensityMatrix<'a> {
    frame: ScaledFrame<'a>,
    /// Extra coherence damping (dephasing and linewidths), scaled by T,
    /// row-major N x N.
    damping: Vec<f64>,
    /// Unscaled damping (1/s), for the generator.
    damping_per_s: Vec<f64>,
    /// Per decaying level: (level, Gamma (1/s), branches (level, fraction), lost fraction).
    decays: Vec<Decay>,
    /// The coherent decay channels in the frame (unscaled).
    channels: Channels,
}

impl<'a> DensityMatrix<'a> {
    /// The equation of `model` in the frame `fh`. The model's phase
    /// numbers exist (its builder checked them); should they not, no
    /// linewidth damping is applied and the caller's check reports it.
    pub fn new(model: &'a Model, fh: &'a FrameHamiltonian) -> Self {
        let frame = ScaledFrame::new(model, fh);
        let damping_per_s = match open::phase_numbers(model) {
            Ok(p) => open::coherence_damping(model, &p),
            Err(_) => vec![0.0; frame.n * frame.n],
        };
        let scale = frame.clock.scale;
        let decays = model
            .levels()
            .iter()
            .enumerate()
            .filter(|(_, l)| l.gamma > 0.0)
            .map(|(k, l)| (k, l.gamma, l.decays_to.clone(), model.lost_fraction(k)))
            .collect();
        DensityMatrix {
            damping: damping_per_s.iter().map(|r| r * scale).collect(),
            damping_per_s,
            channels: Channels::new(model, fh),
            frame,
            decays,
        }
    }

    /// The coherent channels' part of the right-hand side (scaled by T).
    fn add_channels(&self, y: &[f64], dy: &mut [f64]) {
        let n = self.frame.n;
        let scale = self.frame.clock.scale;
        for f in &self.channels.feeds {
            let z = f.c * scale * get(y, self.at(f.src.0, f.src.1));
            add(dy, self.at(f.dst.0, f.dst.1), z);
        }
        for c in &self.channels.cross {
            let k = -0.5 * scale * c.k;
            for m in 0..n {
                add(dy, self.at(c.e, m), k * get(y, self.at(c.f, m)));
                add(dy, self.at(m, c.f), k * get(y, self.at(m, c.e)));
            }
        }
    }

    #[inline]
    fn at(&self, j: usize, k: usize) -> usize {
        2 * (j * self.frame.n + k)
    }

    /// Index (in real components) of the lost part.
    #[inline]
    fn lost_index(&self) -> usize {
        2 * self.frame.n * self.frame.n
    }
}

#[inline]
fn get(y: &[f64], i: usize) -> Complex64 {
    Complex64::new(y[i], y[i + 1])
}

#[inline]
fn add(dy: &mut [f64], i: usize, z: Complex64) {
    dy[i] += z.re;
    dy[i + 1] += z.im;
}

impl Equation for DensityMatrix<'_> {
    fn dim(&self) -> usize {
        2 * (self.frame.n * self.frame.n + 1 + self.frame.n)
    }

    fn levels(&self) -> usize {
        self.frame.n
    }

    fn initial_state(&self, y: &mut [f64]) {
        y.fill(0.0);
        let fr = &self.frame;
        if fr.model.initial_kind() == InitialKind::Mixture {
            for (k, p) in fr.model.initial().iter().enumerate() {
                y[self.at(k, k)] = *p;
            }
            return;
        }
        let a = fr.fh.initial_amplitudes(fr.model);
        for j in 0..fr.n {
            for k in 0..fr.n {
                let r = a[j] * a[k].conj();
                let i = self.at(j, k);
                y[i] = r.re;
                y[i + 1] = r.im;
            }
        }
    }

    fn enter_stretch(&mut self, start: f64, end: f64) {
        self.frame.enter_stretch(start, end);
    }

    fn rhs(&self, s: f64, y: &[f64], dy: &mut [f64]) {
        let fr = &self.frame;
        let n = fr.n;
        for j in 0..n {
            let dj = fr.detuning(j, s);
            for k in 0..n {
                let i = self.at(j, k);
                let w = dj - fr.detuning(k, s);
                let g = fr.half_gamma[j] + fr.half_gamma[k] + self.damping[j * n + k];
                let (x, v) = (y[i], y[i + 1]);
                dy[i] = w * v - g * x;
                dy[i + 1] = -w * x - g * v;
            }
        }
        let base = self.lost_index();
        dy[base..].fill(0.0);
        let scale = fr.clock.scale;
        for (e, gamma, branches, lost) in &self.decays {
            let rate = gamma * scale * y[self.at(*e, *e)];
            for &(k, b) in branches {
                dy[self.at(k, k)] += b * rate;
            }
            dy[base] += lost * rate;
            dy[base + 2 + 2 * e] = rate;
        }
        self.add_channels(y, dy);
        fr.for_each_coupling(s, |a, b, g| {
            let (mig, migc, ig, igc) = (-I * g, -I * g.conj(), I * g, I * g.conj());
            for m in 0..n {
                add(dy, self.at(b, m), mig * get(y, self.at(a, m)));
                add(dy, self.at(a, m), migc * get(y, self.at(b, m)));
                add(dy, self.at(m, a), ig * get(y, self.at(m, b)));
                add(dy, self.at(m, b), igc * get(y, self.at(m, a)));
            }
        });
    }

    #[inline]
    fn population(&self, y: &[f64], k: usize) -> f64 {
        y[self.at(k, k)]
    }

    #[inline]
    fn population_rate(&self, _y: &[f64], dy: &[f64], k: usize) -> f64 {
        dy[self.at(k, k)]
    }

    fn norm(&self, y: &[f64]) -> f64 {
        (0..self.frame.n).map(|k| y[self.at(k, k)]).sum()
    }

    fn lost(&self, y: &[f64]) -> f64 {
        y[self.lost_index()]
    }

    fn positivity_defect(&self, y: &[f64], thorough: bool) -> f64 {
        let cheap = positivity_defect(y, self.frame.n);
        if thorough {
            cheap.max(smallest_eigenvalue_defect(y, self.frame.n))
        } else {
            cheap
        }
    }

    fn settled(&self, y: &[f64], out: &mut [f64]) -> Option<f64> {
        if self.channels.is_empty() {
            return None;
        }
        let n = self.frame.n;
        let rho: Vec<Complex64> = (0..n * n).map(|i| get(y, 2 * i)).collect();
        let more = channels::settle(
            self.frame.model,
            &self.channels,
            &self.damping_per_s,
            &rho,
            out,
        )?;
        Some(self.lost(y) + more)
    }

    fn scattered_photons(&self, y: &[f64], out: &mut [f64]) -> bool {
        let base = self.lost_index() + 2;
        for (k, e) in out.iter_mut().enumerate() {
            *e = y[base + 2 * k];
        }
        true
    }

    fn emitted(&self, y: &[f64]) -> Option<f64> {
        let base = self.lost_index() + 2;
        Some((0..self.frame.n).map(|k| y[base + 2 * k]).sum())
    }

    /// The Liouvillian of the current stretch acting on z = (rho row-major,
    /// lost, emissions), for N up to [`EXACT_MAX_LEVELS`].
    fn generator(&self, out: &mut Generator) -> bool {
        let n = self.frame.n;
        if n > EXACT_MAX_LEVELS {
            return false;
        }
        let m = self.generator_dim();
        if out.matrix.nrows() != m || out.matrix.ncols() != m || out.loss.len() != m {
            *out = Generator::zeros(m);
        }
        let g = &mut out.matrix;
        g.fill(Complex64::new(0.0, 0.0));
        out.loss.fill(0.0);
        let idx = |j: usize, k: usize| j * n + k;
        let mut diag = vec![(0.0, 0.0); n];
        let mut elems = Vec::new();
        self.frame.stretch_elements(
            |k, d, hg| diag[k] = (d, hg),
            |a, b, h| elems.push((a, b, h)),
        );
        for j in 0..n {
            for k in 0..n {
                let w = diag[j].0 - diag[k].0;
                let damp = diag[j].1 + diag[k].1 + self.damping_per_s[idx(j, k)];
                g[(idx(j, k), idx(j, k))] = Complex64::new(-damp, -w);
            }
        }
        for (a, b, h) in elems {
            for l in 0..n {
                g[(idx(b, l), idx(a, l))] += -I * h;
                g[(idx(a, l), idx(b, l))] += -I * h.conj();
                g[(idx(l, a), idx(l, b))] += I * h;
                g[(idx(l, b), idx(l, a))] += I * h.conj();
            }
        }
        let lost = n * n;
        for (e, gamma, branches, lost_fraction) in &self.decays {
            let from = idx(*e, *e);
            for &(k, b) in branches {
                g[(idx(k, k), from)] += gamma * b;
            }
            g[(lost, from)] += gamma * lost_fraction;
            g[(lost + 1 + e, from)] += *gamma;
        }
        for f in &self.channels.feeds {
            g[(idx(f.dst.0, f.dst.1), idx(f.src.0, f.src.1))] += f.c;
        }
        for c in &self.channels.cross {
            for l in 0..n {
                g[(idx(c.e, l), idx(c.f, l))] -= 0.5 * c.k;
                g[(idx(l, c.f), idx(l, c.e))] -= 0.5 * c.k;
            }
        }
        true
    }

    fn generator_dim(&self) -> usize {
        let n = self.frame.n;
        if n > EXACT_MAX_LEVELS {
            0
        } else {
            n * n + 1 + n
        }
    }
}

/// How far the Hermitian part of the state's density matrix is from
/// positive semidefinite: the largest of -rho_kk and
/// |rho_jk| - sqrt(rho_jj rho_kk) over the diagonal and every 2x2 principal
/// minor (necessary conditions, cheap enough for every step), 0 when all
/// hold.
pub fn positivity_defect(y: &[f64], n: usize) -> f64 {
    let at = |j: usize, k: usize| 2 * (j * n + k);
    let mut worst: f64 = 0.0;
    for j in 0..n {
        let pj = y[at(j, j)];
        worst = worst.max(-pj);
        for k in (j + 1)..n {
            let pk = y[at(k, k)];
            let c = get(y, at(j, k)).norm();
            worst = worst.max(c - (pj.max(0.0) * pk.max(0.0)).sqrt());
        }
    }
    worst
}

/// -(smallest eigenvalue) of the Hermitian part of the state's density
/// matrix, or 0 when it is positive semidefinite.
fn smallest_eigenvalue_defect(y: &[f64], n: usize) -> f64 {
    let rho = nalgebra::DMatrix::from_fn(n, n, |j, k| {
        let a = get(y, 2 * (j * n + k));
        let b = get(y, 2 * (k * n + j)).conj();
        (a + b) * 0.5
    });
    let smallest = rho
        .symmetric_eigenvalues()
        .iter()
        .fold(f64::INFINITY, |m, &v| m.min(v));
    if smallest.is_finite() {
        (-smallest).max(0.0)
    } else {
        f64::INFINITY
    }
}
