//! The open-system parts of a model: spontaneous-emission branching, pure
//! dephasing, laser linewidths, the readout time, and the derived numbers
//! the density-matrix equation needs from them.
//!
//! Owns: the consistency checks of those parts (run by the builder), the
//! laser phase numbers n_kL of every level from the drive graph
//! ([`PhaseNumbers`]), the coherence damping rates they imply
//! ([`coherence_damping`]) and the settled readout ([`settle`]).
//! Must not: know of strings with units, of scheme locations, or propagate.
//!
//! Phase-diffusion model of a laser linewidth (Lorentzian line of angular
//! FWHM w_L, a phase doing a Wiener walk): in the rotating frame in which
//! every drive is static, level k carries the laser phases n_kL phi_L, and
//! the coherence rho_jk decays at (1/2) sum_L (n_jL - n_kL)^2 w_L, i.e.
//! pi (n_jL - n_kL)^2 FWHM_L with the FWHM in Hz.

use super::builder::ModelError;
use super::{Dynamics, InitialKind, Model, Part, Readout};

/// Largest amount by which branching fractions may sum above 1.
pub const BRANCHING_SUM_TOLERANCE: f64 = 1e-9;

/// Integer laser phase numbers n_kL of every level for the fields with a
/// linewidth, from the drive graph.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseNumbers {
    /// Indices of the fields with a linewidth (the columns).
    pub fields: Vec<usize>,
    /// n[k][c]: the phase number of level k for field `fields[c]`.
    pub n: Vec<Vec<i64>>,
}

/// Why no consistent phase numbers exist: the field and a reason.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseConflict {
    pub field: usize,
    pub reason: String,
}

/// The phase numbers of `m`'s levels for every field with a linewidth, from
/// the drives in the dynamics: along a drive of field L from a to b,
/// n_b = n_a + e_L (e_L zero for a field without a linewidth). A field with
/// a linewidth must have `rwa: true`, and every loop of drives must agree.
pub fn phase_numbers(m: &Model) -> Result<PhaseNumbers, PhaseConflict> {
    let fields: Vec<usize> = (0..m.fields.len())
        .filter(|&f| m.fields[f].linewidth > 0.0)
        .collect();
    let cols = fields.len();
    let n_levels = m.levels.len();
    let mut n: Vec<Option<Vec<i64>>> = vec![None; n_levels];
    let edges: Vec<(usize, usize, usize)> = m
        .drives
        .iter()
        .filter(|d| m.drive_included(d))
        .map(|d| {
            let c = &m.couplings[d.coupling];
            (c.lower, c.upper, d.field)
        })
        .collect();
    for &(_, _, f) in &edges {
        if m.fields[f].linewidth > 0.0 && !m.fields[f].rwa {
            return Err(PhaseConflict {
                field: f,
                reason: "a linewidth needs the rotating-wave approximation (rwa: true)".into(),
            });
        }
    }
    let step = |f: usize| -> Vec<i64> { (0..cols).map(|c| i64::from(fields[c] == f)).collect() };
    for root in 0..n_levels {
        if n[root].is_some() {
            continue;
        }
        n[root] = Some(vec![0; cols]);
        let mut stack = vec![root];
        while let Some(k) = stack.pop() {
            let nk = n[k].clone().unwrap_or_default();
            for &(a, b, f) in &edges {
                let (other, sign) = if a == k {
                    (b, 1)
                } else if b == k {
                    (a, -1)
                } else {
                    continue;
                };
                let e = step(f);
                let want: Vec<i64> = nk.iter().zip(&e).map(|(x, s)| x + sign * s).collect();
                match &n[other] {
                    None => {
                        n[other] = Some(want);
                        stack.push(other);
                    }
                    Some(have) if *have != want => {
                        let field = loop_field(&fields, have, &want).unwrap_or(f);
                        return Err(PhaseConflict {
                            field,
                            reason: format!(
                                "field '{}' with a linewidth lies in a loop of drives with no \
                                 consistent laser phases (two fields on one transition, or a \
                                 closed loop), where the phase-diffusion model does not apply",
                                m.fields[field].id
                            ),
                        });
                    }
                    Some(_) => {}
                }
            }
        }
    }
    Ok(PhaseNumbers {
        fields,
        n: n.into_iter().map(Option::unwrap_or_default).collect(),
    })
}

/// The first field with a linewidth whose phase numbers disagree.
fn loop_field(fields: &[usize], have: &[i64], want: &[i64]) -> Option<usize> {
    have.iter()
        .zip(want)
        .position(|(a, b)| a != b)
        .map(|c| fields[c])
}

/// Extra decay rate (1/s) of every coherence rho_jk, row-major N x N (zero
/// on the diagonal): pure dephasing gamma_j + gamma_k plus the laser
/// linewidths' (1/2) sum_L (n_jL - n_kL)^2 w_L. Callers pass phase numbers
/// from [`phase_numbers`] (the builder checked that they exist).
pub fn coherence_damping(m: &Model, phases: &PhaseNumbers) -> Vec<f64> {
    let n = m.levels.len();
    let mut out = vec![0.0; n * n];
    for j in 0..n {
        for k in 0..n {
            if j == k {
                continue;
            }
            let mut r = m.levels[j].dephasing + m.levels[k].dephasing;
            for (c, &f) in phases.fields.iter().enumerate() {
                let dn = (phases.n[j][c] - phases.n[k][c]) as f64;
                r += 0.5 * dn * dn * m.fields[f].linewidth;
            }
            out[j * n + k] = r;
        }
    }
    out
}

/// Relax populations after the window, drives off: every decaying level
/// empties through its branching (upper levels first, so cascades are
/// followed to the end), exactly. Returns the population that leaves the
/// scheme on the way.
pub fn settle(m: &Model, populations: &mut [f64]) -> f64 {
    let mut order: Vec<usize> = (0..m.levels.len()).collect();
    order.sort_by(|&a, &b| m.levels[b].omega.total_cmp(&m.levels[a].omega));
    let mut lost = 0.0;
    for e in order {
        let level = &m.levels[e];
        if level.gamma <= 0.0 {
            continue;
        }
        let p = populations[e];
        populations[e] = 0.0;
        for &(k, b) in &level.decays_to {
            populations[k] += b * p;
        }
        lost += level.lost_fraction() * p;
    }
    lost
}

fn invalid(out: &mut Vec<ModelError>, at: Part, reason: impl Into<String>) {
    out.push(ModelError::Invalid {
        at,
        reason: reason.into(),
    });
}

/// The coherent channels: terms between existing levels, downwards, finite
/// amplitudes, and no level losing more through its branching and channels
/// than its decay rate.
fn check_jumps(m: &Model, out: &mut Vec<ModelError>) {
    let n = m.levels.len();
    for (i, j) in m.jumps.iter().enumerate() {
        for t in &j.terms {
            if t.lower >= n || t.upper >= n || m.levels[t.lower].omega >= m.levels[t.upper].omega {
                invalid(
                    out,
                    Part::Jump(i),
                    "a term that does not go to a lower level",
                );
                return;
            }
            if !t.amplitude.is_finite() {
                invalid(out, Part::Jump(i), "an amplitude that is not finite");
                return;
            }
        }
    }
    for (k, l) in m.levels.iter().enumerate() {
        let carried = m.channel_rate(k);
        if carried == 0.0 {
            continue;
        }
        let room = l.gamma * (1.0 - l.decays_to.iter().map(|d| d.1).sum::<f64>());
        if carried > room * (1.0 + BRANCHING_SUM_TOLERANCE) + f64::MIN_POSITIVE {
            invalid(
                out,
                Part::Level(k),
                format!(
                    "decay channels carrying {carried:e} /s where its decay rate leaves {room:e} /s"
                ),
            );
        }
    }
}

/// The builder's checks of the open-system parts.
pub(super) fn check(m: &Model, out: &mut Vec<ModelError>) {
    check_jumps(m, out);
    let n = m.levels.len();
    for (i, l) in m.levels.iter().enumerate() {
        if !(l.dephasing.is_finite() && l.dephasing >= 0.0) {
            invalid(
                out,
                Part::Level(i),
                "a dephasing rate that is not finite and >= 0",
            );
        }
        if l.decays_to.is_empty() {
            continue;
        }
        if l.gamma <= 0.0 {
            invalid(out, Part::Level(i), "decay branching without a decay rate");
        }
        let mut sum = 0.0;
        for &(k, b) in &l.decays_to {
            if k >= n || m.levels[k].omega >= l.omega {
                invalid(out, Part::Level(i), "decay to a level that is not lower");
            }
            if !(b > 0.0 && b <= 1.0) {
                invalid(out, Part::Level(i), "a branching fraction outside (0, 1]");
            }
            sum += b;
        }
        if sum > 1.0 + BRANCHING_SUM_TOLERANCE {
            invalid(
                out,
                Part::Level(i),
                format!("branching fractions summing to {sum} > 1"),
            );
        }
    }
    for (i, f) in m.fields.iter().enumerate() {
        if !(f.linewidth.is_finite() && f.linewidth >= 0.0) {
            invalid(
                out,
                Part::Field(i),
                "a linewidth that is not finite and >= 0",
            );
        }
    }
    if m.fields.iter().any(|f| f.linewidth > 0.0)
        && m.drives.iter().all(|d| d.field < m.fields.len())
    {
        if let Err(c) = phase_numbers(m) {
            invalid(out, Part::Linewidth(c.field), c.reason);
        }
    }
    if let Readout::At(t) = m.readout {
        if !(t >= m.window.start && t <= m.window.end) {
            invalid(out, Part::Readout, "a readout time outside the window");
        }
    }
    if m.solver.dynamics == Dynamics::Amplitudes && m.has_open_keys() {
        let why = if m.initial_kind == InitialKind::Mixture {
            "an initial mixture"
        } else {
            "open-system keys (decays_to, dephasing or a field linewidth)"
        };
        invalid(
            out,
            Part::Solver,
            format!("dynamics 'amplitudes' cannot hold {why}; use density_matrix or auto"),
        );
    }
}
