//! Electric-dipole matrix elements between the sublevels of two manifolds,
//! and the spontaneous-emission channels they imply.
//!
//! Convention (D. A. Steck, alkali D-line data; the scheme contract's
//! normative form), lower manifold J on the left:
//! <J m_J| e r_q |J' m_J'> = <J||er||J'> <J' m_J' 1 q | J m_J>,
//! with the nuclear projection m_I unchanged. A sublevel is a superposition
//! of |J m_J I m_I> (`structure::Sublevel`), so its matrix elements are the
//! sums of these over its components: exact in any field, Zeeman to
//! Paschen-Back. Spherical components e_{+1} = -(x + i y)/sqrt 2,
//! e_{-1} = (x - i y)/sqrt 2, e_0 = z; a field of polarisation
//! eps = sum_q sqrt(p_q) e_q couples g to e with d . eps whose absorption
//! element <e| d_q |g> = (-1)^q <g| d_{-q} |e> is nonzero for q = m_e - m_g
//! (sigma+ raises m in absorption).
//!
//! Decay: Gamma(J' -> J) = omega^3 (2J+1) |<J||er||J'>|^2 /
//! (3 pi eps0 hbar c^3 (2J'+1)); one channel per photon polarisation q,
//! L_q = sqrt(Gamma_branch (2J'+1)/(2J+1)) sum_{g,e} (<g|e r_q|e> / <J||er||J'>) |g><e|,
//! summed coherently over the sublevel pairs (separate channels per pair
//! would get the ground-state coherences wrong).
//!
//! Owns: those elements and channels as plain numbers over indices into the
//! two sublevel lists. Must not: know scheme strings, levels of a model or
//! fields (the caller maps indices and applies polarisations).

use super::angular::clebsch_gordan;
use super::structure::Sublevel;
use crate::units::{C, EPS0, HBAR};
use std::f64::consts::PI;

/// A nonzero dipole element between a lower and an upper sublevel.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Transition {
    /// Index into the lower manifold's sublevels.
    pub lower: usize,
    /// Index into the upper manifold's sublevels.
    pub upper: usize,
    /// Spherical component of the absorption, q = m_F(upper) - m_F(lower)
    /// (+1: sigma+, 0: pi, -1: sigma-).
    pub q: i32,
    /// <lower| e r_{-q} |upper> / <J||er||J'> (dimensionless, signed).
    pub emission: f64,
    /// <upper| e r_q |lower> / <J||er||J'> = (-1)^q `emission`: the element
    /// the field's component sqrt(p_q) multiplies in the Rabi frequency.
    pub absorption: f64,
}

/// Below this |element| a pair is treated as not coupled (the elements are
/// sums of products of O(1) numbers; rounding leaves ~1e-16).
const ZERO: f64 = 1e-12;

/// The coefficients <J' m_J'; 1 -q | J m_J> of one line, each evaluated
/// once, on first use: a sublevel pair sums over its components, so the
/// same few values (6 nonzero ones for J = 1/2 -> 3/2) recur hundreds of
/// times, and the exact evaluation costs microseconds per call
/// (docs/performance.md, "Generated against hand-typed sublevels").
struct CgTable {
    two_j: i32,
    two_jp: i32,
    values: Vec<Option<f64>>,
}

impl CgTable {
    fn new(two_j: i32, two_jp: i32) -> CgTable {
        let count = |two: i32| usize::try_from(two + 1).unwrap_or(0);
        CgTable {
            two_j,
            two_jp,
            values: vec![None; count(two_jp) * 3 * count(two_j)],
        }
    }

    /// Where <J' m_J'; 1 -q | J m_J> is kept, if the arguments are in range.
    fn index(&self, two_m_jp: i32, two_q: i32, two_m_j: i32) -> Option<usize> {
        let slot = |two_m: i32, two: i32| -> Option<usize> {
            let k = two_m + two;
            (k % 2 == 0 && (0..=2 * two).contains(&k))
                .then(|| usize::try_from(k / 2).ok())
                .flatten()
        };
        let a = slot(two_m_jp, self.two_jp)?;
        let b = slot(two_q, 2)?;
        let c = slot(two_m_j, self.two_j)?;
        let width = usize::try_from(self.two_j + 1).ok()?;
        Some((a * 3 + b) * width + c)
    }

    /// <J' m_J'; 1 -q | J m_J> (arguments doubled).
    fn get(&mut self, two_m_jp: i32, two_q: i32, two_m_j: i32) -> f64 {
        let compute = || clebsch_gordan(self.two_jp, two_m_jp, 2, -two_q, self.two_j, two_m_j);
        match self.index(two_m_jp, two_q, two_m_j) {
            Some(k) if k < self.values.len() => *self.values[k].get_or_insert_with(compute),
            _ => compute(),
        }
    }
}

/// Every dipole-allowed transition between the sublevels of a lower
/// manifold (angular momentum two_j/2) and an upper one (two_jp/2).
pub fn transitions(
    two_j: i32,
    lower: &[Sublevel],
    two_jp: i32,
    upper: &[Sublevel],
) -> Vec<Transition> {
    let mut table = CgTable::new(two_j, two_jp);
    let mut out = Vec::new();
    for (gi, g) in lower.iter().enumerate() {
        for (ei, e) in upper.iter().enumerate() {
            let two_q = e.two_m_f - g.two_m_f;
            if two_q.abs() > 2 {
                continue;
            }
            // <g| r_{-q} |e>: m_g = m_e - q.
            let mut sum = 0.0;
            for cg in &g.components {
                for ce in &e.components {
                    if cg.two_m_i != ce.two_m_i {
                        continue;
                    }
                    let w = table.get(ce.two_m_j, two_q, cg.two_m_j);
                    sum += cg.amplitude * ce.amplitude * w;
                }
            }
            if sum.abs() > ZERO {
                let q = two_q / 2;
                let sign = if q % 2 == 0 { 1.0 } else { -1.0 };
                out.push(Transition {
                    lower: gi,
                    upper: ei,
                    q,
                    emission: sum,
                    absorption: sign * sum,
                });
            }
        }
    }
    out
}

/// Decay rate (1/s) of J' -> J from the reduced dipole (C m) and the
/// transition angular frequency (rad/s).
pub fn decay_rate(omega: f64, two_j: i32, two_jp: i32, reduced: f64) -> f64 {
    let (g, gp) = (f64::from(two_j + 1), f64::from(two_jp + 1));
    omega.powi(3) * g * reduced * reduced / (3.0 * PI * EPS0 * HBAR * C.powi(3) * gp)
}

/// |<J||er||J'>| (C m) from the decay rate J' -> J (1/s): the inverse of
/// [`decay_rate`].
pub fn reduced_from_rate(omega: f64, two_j: i32, two_jp: i32, rate: f64) -> f64 {
    (rate / decay_rate(omega, two_j, two_jp, 1.0)).sqrt()
}

/// One term of a decay channel: amplitude (s^-1/2) on |lower><upper|.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChannelTerm {
    pub lower: usize,
    pub upper: usize,
    pub amplitude: f64,
}

/// The three decay channels (photon polarisation q = -1, 0, +1, in that
/// order) of an upper manifold into a lower one, carrying the decay rate
/// `branch_rate` (1/s) out of every upper sublevel.
pub fn channels(
    two_j: i32,
    two_jp: i32,
    transitions: &[Transition],
    branch_rate: f64,
) -> [Vec<ChannelTerm>; 3] {
    let scale = (branch_rate * f64::from(two_jp + 1) / f64::from(two_j + 1)).sqrt();
    let mut out: [Vec<ChannelTerm>; 3] = Default::default();
    for t in transitions {
        // Emission |e> -> |g> with photon polarisation -q of the absorption.
        let slot = (1 - t.q) as usize;
        out[slot].push(ChannelTerm {
            lower: t.lower,
            upper: t.upper,
            amplitude: scale * t.emission,
        });
    }
    out
}

#[cfg(test)]
mod tests;
