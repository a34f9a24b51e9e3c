//! The coherent spontaneous-emission channels of a model
//! ([`crate::model::Jump`]) in the rotating frame: what the density-matrix
//! equation adds for them, and the settled populations they lead to.
//!
//! A channel L = sum_t a_t |g_t><e_t| adds L rho L^dagger (feeds: rho_{g g'}
//! grows with a_t a_u rho_{e e'}) and -(1/2){L^dagger L, rho}; the diagonal
//! of L^dagger L is part of each level's decay rate (already in the
//! equation's H_eff), its off-diagonal elements (two upper levels decaying
//! to one lower level with one polarisation) are the cross terms here.
//!
//! Frame: level k carries the phase varphi_k(t) of the rotating frame. A
//! feed from (e, e') to (g, g') rotates at the rate of
//! (varphi_g - varphi_e) - (varphi_g' - varphi_e'), which is zero when both
//! transitions are in the frame of the same lasers; then it is kept with its
//! constant phase. Otherwise it rotates at a difference of laser
//! frequencies (a hyperfine splitting, typically far above the decay rate)
//! and is left out: the secular approximation, stated in docs/physics.md.
//! The same rule applies to the cross terms.
//!
//! Owns: building those lists from a model and its frame, and the exact
//! settled state (drives off, every decay run to its end) by one linear
//! solve over the coherences of the decaying levels. Must not: step, know
//! the state layout beyond (row, column) pairs, or record.

use crate::hamiltonian::FrameHamiltonian;
use crate::model::Model;
use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;

/// Relative tolerance below which two frame rotation rates are the same
/// (they are sums of laser and level frequencies: equal up to rounding).
const SAME_RATE: f64 = 1e-12;

/// A feed: rho[dst] grows with coefficient times rho[src] ((row, column) pairs).
#[derive(Debug, Clone, Copy)]
pub(super) struct Feed {
    pub dst: (usize, usize),
    pub src: (usize, usize),
    pub c: Complex64,
}

/// An off-diagonal element of L^dagger L summed over the channels:
/// (upper e, upper e', element), e != e'.
#[derive(Debug, Clone, Copy)]
pub(super) struct Cross {
    pub e: usize,
    pub f: usize,
    pub k: Complex64,
}

/// The channels of one model in its frame (unscaled rates, 1/s).
#[derive(Debug, Clone, Default)]
pub(super) struct Channels {
    pub feeds: Vec<Feed>,
    pub cross: Vec<Cross>,
}

/// Rotation rate and phase of the frame of every level.
fn frame_phases(model: &Model, fh: &FrameHamiltonian) -> Vec<(f64, f64, f64)> {
    model
        .levels()
        .iter()
        .zip(&fh.levels)
        .map(|(l, f)| (l.omega - f.detuning, f.detuning_rate, f.phase0))
        .collect()
}

fn same(a: f64, b: f64) -> bool {
    (a - b).abs() <= SAME_RATE * a.abs().max(b.abs())
}

impl Channels {
    /// The feeds and cross terms of `model`'s channels in the frame `fh`.
    pub fn new(model: &Model, fh: &FrameHamiltonian) -> Channels {
        let ph = frame_phases(model, fh);
        // The rate of varphi_j - varphi_k, its sweep, and its phase.
        let diff = |j: usize, k: usize| (ph[j].0 - ph[k].0, ph[j].1 - ph[k].1, ph[j].2 - ph[k].2);
        let mut out = Channels::default();
        for jump in model.jumps() {
            // Each term's frame rotation, once: terms^2 pairs read them.
            let rot: Vec<(f64, f64, f64)> =
                jump.terms.iter().map(|t| diff(t.lower, t.upper)).collect();
            for (t, &(r1, s1, p1)) in jump.terms.iter().zip(&rot) {
                for (u, &(r2, s2, p2)) in jump.terms.iter().zip(&rot) {
                    if same(r1, r2) && same(s1, s2) {
                        let c = Complex64::from_polar(t.amplitude * u.amplitude, p1 - p2);
                        out.feeds.push(Feed {
                            dst: (t.lower, u.lower),
                            src: (t.upper, u.upper),
                            c,
                        });
                    }
                    let (e, f) = (t.upper, u.upper);
                    if t.lower == u.lower
                        && e != f
                        && same(ph[e].0, ph[f].0)
                        && same(ph[e].1, ph[f].1)
                    {
                        let k = Complex64::from_polar(t.amplitude * u.amplitude, ph[e].2 - ph[f].2);
                        out.cross.push(Cross { e, f, k });
                    }
                }
            }
        }
        out
    }

    /// Whether there is nothing to add.
    pub fn is_empty(&self) -> bool {
        self.feeds.is_empty() && self.cross.is_empty()
    }
}

/// The settled populations of a density matrix `rho` (row-major N x N, the
/// frame's) after the window with the drives off, and the population lost
/// on the way: rho relaxes under the decay rates, dephasing `damping`
/// (row-major, 1/s), branching (`decays_to`) and the channels. Exact: the
/// time integrals X_kl of the coherences between decaying levels solve one
/// linear system (0 - rho_kl(0) = A X), and every stable level receives
/// what flows into it. `None` if that system is singular.
pub(super) fn settle(
    model: &Model,
    channels: &Channels,
    damping: &[f64],
    rho: &[Complex64],
    out: &mut [f64],
) -> Option<f64> {
    let levels = model.levels();
    let n = levels.len();
    let decaying: Vec<usize> = (0..n).filter(|&k| levels[k].gamma > 0.0).collect();
    // Pairs of decaying levels whose coherence can feed a population.
    let mut index = vec![usize::MAX; n * n];
    let mut pairs = Vec::new();
    for &k in &decaying {
        for &l in &decaying {
            index[k * n + l] = pairs.len();
            pairs.push((k, l));
        }
    }
    let m = pairs.len();
    let mut a = DMatrix::<Complex64>::zeros(m, m);
    let mut b = DVector::<Complex64>::zeros(m);
    for (i, &(k, l)) in pairs.iter().enumerate() {
        let w = levels[k].omega - levels[l].omega;
        let g = 0.5 * (levels[k].gamma + levels[l].gamma) + damping[k * n + l];
        a[(i, i)] = Complex64::new(-g, -w);
        b[i] = -rho[k * n + l];
    }
    for c in &channels.cross {
        for &m2 in &decaying {
            // (K rho)_{e m2} = K_{e f} rho_{f m2}; (rho K)_{m2 f} = rho_{m2 e} K_{e f}.
            a[(index[c.e * n + m2], index[c.f * n + m2])] -= 0.5 * c.k;
            a[(index[m2 * n + c.f], index[m2 * n + c.e])] -= 0.5 * c.k;
        }
    }
    for f in &channels.feeds {
        let dst = index[f.dst.0 * n + f.dst.1];
        if dst != usize::MAX {
            a[(dst, index[f.src.0 * n + f.src.1])] += f.c;
        }
    }
    for &e in &decaying {
        for &(k, frac) in &levels[e].decays_to {
            if levels[k].gamma > 0.0 {
                a[(index[k * n + k], index[e * n + e])] += levels[e].gamma * frac;
            }
        }
    }
    let x = a.lu().solve(&b)?;
    let integral = |k: usize, l: usize| x[index[k * n + l]];
    for (k, p) in out.iter_mut().enumerate() {
        *p = if levels[k].gamma > 0.0 {
            0.0
        } else {
            rho[k * n + k].re
        };
    }
    for f in &channels.feeds {
        if f.dst.0 == f.dst.1 && levels[f.dst.0].gamma <= 0.0 {
            out[f.dst.0] += (f.c * integral(f.src.0, f.src.1)).re;
        }
    }
    let mut lost = 0.0;
    for &e in &decaying {
        let x_ee = integral(e, e).re;
        for &(k, frac) in &levels[e].decays_to {
            if levels[k].gamma <= 0.0 {
                out[k] += levels[e].gamma * frac * x_ee;
            }
        }
        lost += levels[e].gamma * model.lost_fraction(e) * x_ee;
    }
    Some(lost)
}
