//! Hyperfine and Zeeman sublevels of one fine-structure manifold (J, I).
//!
//! Owns: the hyperfine Hamiltonian (magnetic dipole A, electric quadrupole B)
//! plus the Zeeman Hamiltonian of a static field along z, built in the
//! uncoupled basis |J m_J I m_I>, diagonalised exactly block by block in
//! m_F = m_J + m_I; the |F, m_F> label of every eigenstate and the sign of its
//! vector; the closed-form zero-field hyperfine energies.
//! Must not: know scheme strings or units, build a model, or do IO. Inputs
//! are SI with energies as angular frequencies (rad/s) and the field in tesla.
//!
//! Conventions (docs/physics.md, "Hyperfine and Zeeman structure"):
//!
//! * Angular momenta are doubled integers: `two_j = 2 J`, `two_m_f = 2 m_F`.
//! * H/hbar = A I.J + B [3 (I.J)^2 + (3/2) I.J - I(I+1) J(J+1)]
//!   / [2I(2I-1) J(2J-1)] + (mu_B B_z / hbar)(g_J m_J + g_I m_I), the B term
//!   only when I >= 1 and J >= 1 (D. A. Steck, "Rubidium 87 D Line Data").
//!   g_I carries the sign of that convention: for a positive nuclear moment
//!   it is negative (87Rb: g_I = -0.0009951414).
//! * Energies are relative to the manifold's centre of gravity (H is
//!   traceless, so no shift is applied).
//! * Labels: within an m_F block levels never cross, so the k-th lowest
//!   eigenvalue of the block is labelled with the k-th lowest zero-field F
//!   allowed in the block (F >= |m_F|). Zero-field energies closer than
//!   [`DEGENERACY_REL`] times the largest |E_F| of the block are ordered by F
//!   ascending; eigenvalues of a block closer than [`DEGENERACY_REL`] times its
//!   largest |eigenvalue| form a cluster whose basis is fixed by diagonalising
//!   I.J inside it; the cluster's labels go to those vectors in ascending F
//!   for ascending I.J (I.J = K/2 grows with F). So at zero field the vectors
//!   are the coupled states even when A = B = 0, and a constant offset that
//!   swamps the hyperfine splitting (g_J = g_I) keeps every F its own state.
//! * Phase: every vector has a positive overlap with the coupled state
//!   |F m_F> = sum <J m_J; I m_I | F m_F> |J m_J I m_I> (Clebsch-Gordan, J
//!   first, I second, Condon-Shortley). Where that overlap is below
//!   [`OVERLAP_FLOOR`] in magnitude, its largest component (the first in
//!   m_J-ascending order among equals) is made positive instead.
//! * Output order: F ascending, then m_F ascending; components in m_J
//!   ascending order, amplitudes of magnitude <= [`AMPLITUDE_FLOOR`] omitted.

use std::ops::Range;

use nalgebra::{DMatrix, DVector, SymmetricEigen};

use crate::atom::angular::clebsch_gordan;
use crate::units::{HBAR, MU_B};

/// Largest number of uncoupled states (2J+1)(2I+1) a manifold may have.
pub const MAX_STATES: i64 = 4096;
/// Relative gap under which two energies count as degenerate (labels, ties).
pub const DEGENERACY_REL: f64 = 1e-9;
/// Overlap with the coupled state under which the sign falls back to the
/// largest component.
pub const OVERLAP_FLOOR: f64 = 1e-9;
/// Amplitudes of magnitude at or below this are left out of a [`Sublevel`].
pub const AMPLITUDE_FLOOR: f64 = 1e-14;

/// One fine-structure manifold: J, I (doubled), hyperfine constants A and B
/// as angular frequencies (rad/s), and the g-factors of the Zeeman term.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Manifold {
    /// 2 J (>= 0).
    pub two_j: i32,
    /// 2 I (>= 0).
    pub two_i: i32,
    /// Magnetic dipole constant A (rad/s).
    pub a: f64,
    /// Electric quadrupole constant B (rad/s); ignored unless I, J >= 1.
    pub b: f64,
    /// Electronic g-factor g_J.
    pub g_j: f64,
    /// Nuclear g-factor g_I in the mu_B (not mu_N) convention of the module.
    pub g_i: f64,
}

/// One eigenstate of the manifold in a field, labelled by the low-field
/// |F, m_F> it connects to.
#[derive(Debug, Clone, PartialEq)]
pub struct Sublevel {
    /// 2 F of the zero-field level it connects to.
    pub two_f: i32,
    /// 2 m_F (exact: m_F is conserved by a field along z).
    pub two_m_f: i32,
    /// Energy / hbar (rad/s) relative to the manifold's centre of gravity.
    pub energy: f64,
    /// The vector in the uncoupled basis, m_J ascending, zeros omitted.
    pub components: Vec<Component>,
}

/// One amplitude of a [`Sublevel`] on |J m_J I m_I>.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Component {
    /// 2 m_J.
    pub two_m_j: i32,
    /// 2 m_I.
    pub two_m_i: i32,
    /// Real amplitude.
    pub amplitude: f64,
}

/// A zero-field hyperfine level F and its energy / hbar (rad/s) relative to
/// the centre of gravity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HyperfineLevel {
    /// 2 F.
    pub two_f: i32,
    /// Energy / hbar (rad/s).
    pub energy: f64,
}

/// Why a manifold's sublevels could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum StructureError {
    /// 2J or 2I is negative.
    #[error("angular momenta must be >= 0, found 2J = {two_j}, 2I = {two_i}")]
    NegativeMomentum { two_j: i32, two_i: i32 },
    /// (2J+1)(2I+1) is above [`MAX_STATES`].
    #[error("{states} uncoupled states, at most {limit} are supported")]
    TooManyStates { states: i64, limit: i64 },
    /// An input number is NaN or infinite.
    #[error("{what} must be finite, found {value}")]
    NonFinite { what: &'static str, value: f64 },
    /// Finite inputs whose energies overflow f64.
    #[error("the energies of the manifold overflow (A, B, g or the field too large)")]
    Overflow,
    /// The eigen-solver did not converge on the block of this 2 m_F.
    #[error("the eigen-solver did not converge for 2 m_F = {two_m_f}")]
    NoConvergence { two_m_f: i32 },
}

/// The hyperfine levels at zero field, F ascending, from the closed form
/// E_F = A K/2 + B [(3/2) K(K+1) - 2I(I+1)J(J+1)] / [4I(2I-1)J(2J-1)],
/// K = F(F+1) - I(I+1) - J(J+1) (E. Arimondo, M. Inguscio and P. Violino,
/// Rev. Mod. Phys. 49, 31 (1977)); the B term only when I >= 1 and J >= 1.
///
/// # Errors
/// Negative or too large momenta, non-finite constants, overflow.
pub fn hyperfine_levels(m: &Manifold) -> Result<Vec<HyperfineLevel>, StructureError> {
    check(m, 0.0)?;
    let levels: Vec<HyperfineLevel> = f_values(m.two_j, m.two_i, 0)
        .map(|two_f| HyperfineLevel {
            two_f,
            energy: closed_form(m, two_f),
        })
        .collect();
    if levels.iter().all(|l| l.energy.is_finite()) {
        Ok(levels)
    } else {
        Err(StructureError::Overflow)
    }
}

/// Every hyperfine-Zeeman sublevel of the manifold in a field of
/// `field_tesla` along z, F ascending then m_F ascending (module docs).
///
/// Preconditions the caller's validation enforces: J and I multiples of 1/2
/// given doubled, g-factors and constants from the same convention. Any
/// finite input gives a result or an error, never a panic.
///
/// # Errors
/// Negative or too large momenta, non-finite inputs, overflow of the
/// energies, or an eigen-solver that does not converge.
pub fn sublevels(m: &Manifold, field_tesla: f64) -> Result<Vec<Sublevel>, StructureError> {
    check(m, field_tesla)?;
    let top = m.two_j + m.two_i;
    let mut all = Vec::new();
    for two_m_f in (-top..=top).step_by(2) {
        all.extend(block_sublevels(m, field_tesla, two_m_f)?);
    }
    all.sort_by_key(|s| (s.two_f, s.two_m_f));
    Ok(all)
}

fn check(m: &Manifold, field: f64) -> Result<(), StructureError> {
    if m.two_j < 0 || m.two_i < 0 {
        return Err(StructureError::NegativeMomentum {
            two_j: m.two_j,
            two_i: m.two_i,
        });
    }
    let states = (i64::from(m.two_j) + 1) * (i64::from(m.two_i) + 1);
    if states > MAX_STATES {
        return Err(StructureError::TooManyStates {
            states,
            limit: MAX_STATES,
        });
    }
    let inputs = [
        ("A", m.a),
        ("B", m.b),
        ("g_J", m.g_j),
        ("g_I", m.g_i),
        ("the field", field),
    ];
    match inputs.iter().find(|(_, v)| !v.is_finite()) {
        Some(&(what, value)) => Err(StructureError::NonFinite { what, value }),
        None => Ok(()),
    }
}

/// The doubled F values allowed with |m_F| = |two_m_f| / 2, ascending.
fn f_values(two_j: i32, two_i: i32, two_m_f: i32) -> impl Iterator<Item = i32> {
    let low = (two_j - two_i).abs().max(two_m_f.abs());
    (low..=two_j + two_i).step_by(2)
}

/// x (x + 1) for x = two_x / 2.
fn xx1(two_x: i32) -> f64 {
    let x = f64::from(two_x) / 2.0;
    x * (x + 1.0)
}

fn has_quadrupole(m: &Manifold) -> bool {
    m.two_i >= 2 && m.two_j >= 2
}

/// 2I(2I-1) J(2J-1), the quadrupole denominator of the Hamiltonian.
fn quadrupole_den(m: &Manifold) -> f64 {
    let (i, j) = (f64::from(m.two_i) / 2.0, f64::from(m.two_j) / 2.0);
    2.0 * i * (2.0 * i - 1.0) * j * (2.0 * j - 1.0)
}

fn closed_form(m: &Manifold, two_f: i32) -> f64 {
    let ij = xx1(m.two_i) * xx1(m.two_j);
    let k = xx1(two_f) - xx1(m.two_i) - xx1(m.two_j);
    let mut e = m.a * k / 2.0;
    if has_quadrupole(m) {
        e += m.b * (1.5 * k * (k + 1.0) - 2.0 * ij) / (2.0 * quadrupole_den(m));
    }
    e
}

/// The uncoupled states (2 m_J, 2 m_I) of one m_F block, m_J ascending.
fn block_states(two_j: i32, two_i: i32, two_m_f: i32) -> Vec<(i32, i32)> {
    (-two_j..=two_j)
        .step_by(2)
        .map(|two_m_j| (two_m_j, two_m_f - two_m_j))
        .filter(|&(_, two_m_i)| two_m_i.abs() <= two_i)
        .collect()
}

/// I.J on one block: I_z J_z + (I_+ J_- + I_- J_+)/2. Consecutive states
/// differ by m_J + 1, m_I - 1, so the matrix is tridiagonal.
fn i_dot_j(m: &Manifold, states: &[(i32, i32)]) -> DMatrix<f64> {
    let n = states.len();
    let mut x = DMatrix::zeros(n, n);
    for (k, &(tmj, tmi)) in states.iter().enumerate() {
        x[(k, k)] = f64::from(tmj) * f64::from(tmi) / 4.0;
        if k + 1 < n {
            // <m_J+1, m_I-1| J_+ I_- |m_J, m_I> / 2, all in doubled units.
            let up_j = f64::from(m.two_j * (m.two_j + 2) - tmj * (tmj + 2));
            let down_i = f64::from(m.two_i * (m.two_i + 2) - tmi * (tmi - 2));
            let v = (up_j * down_i).sqrt() / 8.0;
            x[(k, k + 1)] = v;
            x[(k + 1, k)] = v;
        }
    }
    x
}

/// H / hbar on one block (rad/s).
fn block_hamiltonian(
    m: &Manifold,
    field: f64,
    states: &[(i32, i32)],
    x: &DMatrix<f64>,
) -> DMatrix<f64> {
    let mut h = x * m.a;
    if has_quadrupole(m) {
        let n = states.len();
        let ij = xx1(m.two_i) * xx1(m.two_j);
        let q = x * x * 3.0 + x * 1.5 - DMatrix::identity(n, n) * ij;
        h += q * (m.b / quadrupole_den(m));
    }
    let larmor = MU_B * field / HBAR;
    for (k, &(tmj, tmi)) in states.iter().enumerate() {
        h[(k, k)] += larmor * (m.g_j * f64::from(tmj) + m.g_i * f64::from(tmi)) / 2.0;
    }
    h
}

/// Groups of consecutive entries of an ascending list whose neighbours are
/// within `DEGENERACY_REL` of the largest magnitude (chained).
fn clusters(sorted: &[f64]) -> Vec<Range<usize>> {
    let scale = sorted.iter().fold(0.0_f64, |s, v| s.max(v.abs()));
    let tol = DEGENERACY_REL * scale;
    let mut out = Vec::new();
    let mut start = 0;
    for k in 1..=sorted.len() {
        if k == sorted.len() || sorted[k] - sorted[k - 1] > tol {
            out.push(start..k);
            start = k;
        }
    }
    out
}

/// The F labels of one block in the order of its ascending eigenvalues.
fn block_labels(m: &Manifold, two_m_f: i32) -> Vec<i32> {
    let mut fs: Vec<(f64, i32)> = f_values(m.two_j, m.two_i, two_m_f)
        .map(|two_f| (closed_form(m, two_f), two_f))
        .collect();
    fs.sort_by(|p, q| p.0.total_cmp(&q.0).then(p.1.cmp(&q.1)));
    let energies: Vec<f64> = fs.iter().map(|p| p.0).collect();
    let mut labels = Vec::with_capacity(fs.len());
    for range in clusters(&energies) {
        let mut group: Vec<i32> = fs[range].iter().map(|p| p.1).collect();
        group.sort_unstable();
        labels.extend(group);
    }
    labels
}

/// Eigenpairs of one block, eigenvalues ascending, and the clusters of
/// degenerate ones, each resolved by I.J ascending (module docs).
type Pairs = (Vec<(f64, DVector<f64>)>, Vec<Range<usize>>);

fn eigenpairs(h: DMatrix<f64>, x: &DMatrix<f64>, two_m_f: i32) -> Result<Pairs, StructureError> {
    let eig = SymmetricEigen::try_new(h.clone(), f64::EPSILON, 100_000)
        .ok_or(StructureError::NoConvergence { two_m_f })?;
    let mut order: Vec<usize> = (0..eig.eigenvalues.len()).collect();
    order.sort_by(|&p, &q| eig.eigenvalues[p].total_cmp(&eig.eigenvalues[q]));
    let values: Vec<f64> = order.iter().map(|&k| eig.eigenvalues[k]).collect();
    let groups = clusters(&values);
    let mut pairs = Vec::with_capacity(values.len());
    for range in groups.iter().cloned() {
        if range.len() == 1 {
            let k = order[range.start];
            pairs.push((values[range.start], eig.eigenvectors.column(k).into_owned()));
            continue;
        }
        let cols: Vec<usize> = order[range].to_vec();
        let v = eig.eigenvectors.select_columns(&cols);
        let inner = v.transpose() * x * &v;
        let sub = SymmetricEigen::try_new(inner, f64::EPSILON, 100_000)
            .ok_or(StructureError::NoConvergence { two_m_f })?;
        let mut sub_order: Vec<usize> = (0..cols.len()).collect();
        sub_order.sort_by(|&p, &q| sub.eigenvalues[p].total_cmp(&sub.eigenvalues[q]));
        for k in sub_order {
            let w = &v * sub.eigenvectors.column(k);
            let energy = w.dot(&(&h * &w));
            pairs.push((energy, w));
        }
    }
    Ok((pairs, groups.into_iter().filter(|r| r.len() > 1).collect()))
}

/// The coupled state |F m_F> on the states of its block.
fn coupled_vector(m: &Manifold, two_f: i32, two_m_f: i32, states: &[(i32, i32)]) -> DVector<f64> {
    DVector::from_iterator(
        states.len(),
        states
            .iter()
            .map(|&(tmj, tmi)| clebsch_gordan(m.two_j, tmj, m.two_i, tmi, two_f, two_m_f)),
    )
}

/// Flips `v` to the phase convention of the module docs.
fn fix_sign(v: &mut DVector<f64>, coupled: &DVector<f64>) {
    let overlap = v.dot(coupled);
    let negative = if overlap.abs() >= OVERLAP_FLOOR {
        overlap < 0.0
    } else {
        let big = v.iter().fold(0.0_f64, |s, c| s.max(c.abs()));
        v.iter()
            .find(|c| c.abs() >= big - 1e-12)
            .is_some_and(|c| *c < 0.0)
    };
    if negative {
        v.neg_mut();
    }
}

fn block_sublevels(
    m: &Manifold,
    field: f64,
    two_m_f: i32,
) -> Result<Vec<Sublevel>, StructureError> {
    let states = block_states(m.two_j, m.two_i, two_m_f);
    let x = i_dot_j(m, &states);
    let h = block_hamiltonian(m, field, &states, &x);
    if h.iter().any(|v| !v.is_finite()) {
        return Err(StructureError::Overflow);
    }
    let (pairs, groups) = eigenpairs(h, &x, two_m_f)?;
    let mut labels = block_labels(m, two_m_f);
    // Inside a degenerate cluster the vectors come in ascending I.J, and
    // I.J = K/2 grows with F: the cluster's labels go in ascending F.
    for range in groups {
        labels[range].sort_unstable();
    }
    let mut out = Vec::with_capacity(pairs.len());
    for ((energy, mut v), two_f) in pairs.into_iter().zip(labels) {
        if !energy.is_finite() || v.iter().any(|c| !c.is_finite()) {
            return Err(StructureError::Overflow);
        }
        fix_sign(&mut v, &coupled_vector(m, two_f, two_m_f, &states));
        let components = states
            .iter()
            .zip(v.iter())
            .filter(|(_, c)| c.abs() > AMPLITUDE_FLOOR)
            .map(|(&(two_m_j, two_m_i), &amplitude)| Component {
                two_m_j,
                two_m_i,
                amplitude,
            })
            .collect();
        out.push(Sublevel {
            two_f,
            two_m_f,
            energy,
            components,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests;
