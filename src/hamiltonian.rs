//! Hamiltonian assembly and the generalised rotating frame.
//!
//! Owns: turning a validated [`Model`] into the sparse frame Hamiltonian the
//! propagators integrate: which drives are in the dynamics (detuning cutoff),
//! the frame phase of every level (a spanning tree of drives walked from the
//! most populated initial level, strongest drive first), the residual phases
//! that the frame cannot remove (loops, second fields on one transition,
//! counter-rotating terms), the fastest time scale of the problem and whether
//! the frame Hamiltonian is piecewise constant.
//!
//! Must not: propagate, print, or know about output formats. Everything here
//! is in SI with angular frequencies, hbar = 1 (energies are E/hbar).
//!
//! Conventions (hbar = 1, bare basis): the diagonal is omega_k - i gamma_k / 2;
//! each RWA drive adds (Omega/2) f(t) e^{-i phi(t)} on |b><a| and its conjugate,
//! with phi(t) = omega_L t + (chirp/2) (t - t_c)^2 + phase; a drive with
//! `rwa: false` also adds the counter-rotating term (Omega/2) f(t) e^{+i phi(t)}
//! on |b><a| and its conjugate.
//!
//! Frame: c_k(t) = e^{-i varphi_k(t)} a_k(t) with varphi_k a quadratic
//! polynomial in tau = t - t0 (t0 the window start). In the frame
//! i da_k/dt = (delta_k(tau) - i gamma_k / 2) a_k + sum_j H_kj e^{i(varphi_k - varphi_j)} a_j,
//! delta_k = omega_k - dvarphi_k/dt. Along every tree drive varphi_b - varphi_a = phi,
//! so that drive's element is the real number (Omega/2) f(t): no phase is
//! evaluated for it at run time. Populations |a_k|^2 = |c_k|^2.

use crate::model::Model;
use num_complex::Complex64;
use std::f64::consts::TAU;

/// A residual phase that stays explicit in the frame Hamiltonian:
/// the element on |b><a| is `coupling * f(t) * exp(-i (rate tau + sweep tau^2 / 2))`,
/// tau = t - t0.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResidualPhase {
    /// d rho / dt at tau = 0 (rad/s).
    pub rate: f64,
    /// d^2 rho / dt^2 (rad/s^2).
    pub sweep: f64,
}

impl ResidualPhase {
    /// rho(tau) without its constant part (the constant is in the coupling).
    #[inline]
    pub fn at(&self, tau: f64) -> f64 {
        (self.rate + 0.5 * self.sweep * tau) * tau
    }

    /// Instantaneous rate d rho / dt at tau (rad/s).
    #[inline]
    pub fn rate_at(&self, tau: f64) -> f64 {
        self.rate + self.sweep * tau
    }
}

/// Which part of a drive a term carries.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rotation {
    /// The rotating-wave term e^{-i phi} on |b><a|.
    CoRotating,
    /// The counter-rotating term e^{+i phi} on |b><a| (`rwa: false` only).
    CounterRotating,
}

/// One element pair (|b><a| and its conjugate) of the frame Hamiltonian.
#[derive(Debug, Clone, PartialEq)]
pub struct Term {
    /// Index into `Model::drives`.
    pub drive: usize,
    /// Index into `Model::fields` (its envelope multiplies the term).
    pub field: usize,
    /// Lower level a.
    pub lower: usize,
    /// Upper level b.
    pub upper: usize,
    /// (Omega/2) e^{-i rho_0}: the element on |b><a| at f = 1 and tau = 0 (rad/s).
    pub coupling: Complex64,
    pub rotation: Rotation,
    /// `None` where the frame removes the phase completely (tree drives, and
    /// residual phases that do not change over the window).
    pub residual: Option<ResidualPhase>,
    /// True for the drive on the spanning tree (co-rotating term only).
    pub on_tree: bool,
}

/// Frame data of one level.
#[derive(Debug, Clone, PartialEq)]
pub struct FrameLevel {
    /// Frame detuning delta_k = omega_k - dvarphi_k/dt at tau = 0 (rad/s).
    pub detuning: f64,
    /// d delta_k / dt (rad/s^2); non-zero only for levels reached through chirped drives.
    pub detuning_rate: f64,
    /// Gamma_k / 2 (1/s), amplitude damping.
    pub half_gamma: f64,
    /// varphi_k(t0) reduced to [0, 2 pi) (rad).
    pub phase0: f64,
    /// Root level of the tree this level belongs to.
    pub root: usize,
    /// The tree drive (index into `Model::drives`) through which the walk reached this level.
    pub via: Option<usize>,
}

impl FrameLevel {
    /// delta_k(tau) (rad/s).
    #[inline]
    pub fn detuning_at(&self, tau: f64) -> f64 {
        self.detuning + self.detuning_rate * tau
    }
}

// Same shape as Estimate, Solution and ScaledFrame: each stage's plain data, other fields.
/// The frame Hamiltonian of a model: a sparse list of terms plus a diagonal.
#[derive(Debug, Clone, PartialEq)]
pub struct FrameHamiltonian {
    /// Reference time t0 (the window start), tau = t - t0.
    pub t0: f64,
    /// Window duration (s).
    pub duration: f64,
    pub levels: Vec<FrameLevel>,
    pub terms: Vec<Term>,
    /// Indices into `Model::drives` in the dynamics.
    pub included: Vec<usize>,
    /// Indices into `Model::drives` left out by the detuning cutoff.
    pub excluded: Vec<usize>,
    /// Tree drives (indices into `Model::drives`) in the order the walk took them.
    pub tree: Vec<usize>,
}

/// Why assembly failed: a computed number (a frame coupling or detuning)
/// is not finite. The model's own numbers and indices are not checked
/// here: a [`Model`] exists only through its builder, which checked them.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum AssemblyError {
    #[error("non-finite value: {0}")]
    NonFinite(String),
}

/// Residual phases whose total change over the window is below this (rad)
/// are treated as constant (they come from rounding of large frequencies).
pub const CONSTANT_PHASE_THRESHOLD: f64 = 1e-9;

/// The fastest time scale of a frame Hamiltonian and what sets it.
#[derive(Debug, Clone, PartialEq)]
pub struct FastestScale {
    /// Angular frequency (rad/s).
    pub rate: f64,
    /// Human-readable cause naming the drive (field id and coupling levels) or level.
    pub cause: String,
}

/// Name of a drive for messages: "field 'f' on a-b".
pub fn drive_name(model: &Model, drive: usize) -> String {
    let d = &model.drives[drive];
    let c = &model.couplings[d.coupling];
    format!(
        "field '{}' on {}-{}",
        model.fields[d.field].id, model.levels[c.lower].id, model.levels[c.upper].id
    )
}

/// Phase of a drive's field as a polynomial around t0: (phi(t0) mod 2 pi,
/// dphi/dt at t0, d^2 phi/dt^2).
fn field_phase_poly(model: &Model, field: usize, t0: f64) -> (f64, f64, f64) {
    let f = &model.fields[field];
    let tc = f.envelope.center();
    let p0 = f.phase_at(t0).rem_euclid(TAU);
    (p0, f.omega + f.chirp * (t0 - tc), f.chirp)
}

/// The rotating frame of every level, grown along a spanning forest of the
/// included drives: roots in order of initial population (largest first),
/// then Prim's walk taking the strongest drive to an unvisited level. Each
/// level's frame phase is varphi = A + B' tau + C tau^2/2 with the detuning
/// omega - B' kept directly (small numbers only).
struct Forest {
    phase0: Vec<f64>,
    detuning: Vec<f64>,
    /// C_k.
    curvature: Vec<f64>,
    root_of: Vec<usize>,
    via: Vec<Option<usize>>,
    /// Drives on the tree, in the order they were taken.
    tree: Vec<usize>,
    on_tree: Vec<bool>,
}

impl Forest {
    fn grow(model: &Model, included: &[usize], t0: f64) -> Forest {
        let n = model.levels.len();
        let mut roots: Vec<usize> = (0..n).collect();
        roots.sort_by(|&a, &b| {
            model.initial[b]
                .total_cmp(&model.initial[a])
                .then(a.cmp(&b))
        });
        let mut visited = vec![false; n];
        let mut fr = Forest {
            phase0: vec![0.0f64; n],
            detuning: vec![0.0f64; n],
            curvature: vec![0.0f64; n],
            root_of: (0..n).collect::<Vec<_>>(),
            via: vec![None; n],
            tree: Vec::new(),
            on_tree: vec![false; model.drives.len()],
        };
        for &root in &roots {
            if visited[root] {
                continue;
            }
            visited[root] = true;
            // Strongest included drive with exactly one visited end, until none.
            while let Some(i) = strongest_edge(model, included, &visited) {
                let d = &model.drives[i];
                let c = &model.couplings[d.coupling];
                let f = &model.fields[d.field];
                let (p0, _, chirp) = field_phase_poly(model, d.field, t0);
                let shift = model.detuning(d) + f.chirp * (t0 - f.envelope.center());
                // The new level b is reached from the visited level a.
                let (a, b, sign) = if visited[c.lower] {
                    (c.lower, c.upper, 1.0)
                } else {
                    (c.upper, c.lower, -1.0)
                };
                fr.phase0[b] = (fr.phase0[a] + sign * p0).rem_euclid(TAU);
                fr.detuning[b] = fr.detuning[a] - sign * shift;
                fr.curvature[b] = fr.curvature[a] + sign * chirp;
                fr.root_of[b] = fr.root_of[a];
                fr.via[b] = Some(i);
                visited[b] = true;
                fr.on_tree[i] = true;
                fr.tree.push(i);
            }
        }
        fr
    }
}

/// The strongest included drive with exactly one visited end.
fn strongest_edge(model: &Model, included: &[usize], visited: &[bool]) -> Option<usize> {
    let mut best: Option<usize> = None;
    for &i in included {
        let c = &model.couplings[model.drives[i].coupling];
        if visited[c.lower] != visited[c.upper]
            && best.is_none_or(|b| model.drives[i].rabi.abs() > model.drives[b].rabi.abs())
        {
            best = Some(i);
        }
    }
    best
}

/// The terms of the included drives in the frame of the forest.
fn drive_terms(
    model: &Model,
    included: &[usize],
    fr: &Forest,
    t0: f64,
    duration: f64,
) -> Vec<Term> {
    let mut terms = Vec::new();
    for &i in included {
        let d = &model.drives[i];
        let c = &model.couplings[d.coupling];
        let (a, b) = (c.lower, c.upper);
        let f = &model.fields[d.field];
        let (p0, p1, p2) = field_phase_poly(model, d.field, t0);
        let shift = model.detuning(d) + f.chirp * (t0 - f.envelope.center());
        let dphase0 = fr.phase0[b] - fr.phase0[a];
        let dcurv = fr.curvature[b] - fr.curvature[a];
        let ddet = fr.detuning[b] - fr.detuning[a];
        let half = 0.5 * d.rabi;
        // One term of this drive from its phase (rho0, rate, sweep).
        let term = |(rho0, rate, sweep): (f64, f64, f64), rotation| {
            make_term(
                i, d.field, a, b, half, rho0, rate, sweep, duration, rotation,
            )
        };
        // Co-rotating: rho = phi - (varphi_b - varphi_a).
        if fr.on_tree[i] {
            terms.push(Term {
                drive: i,
                field: d.field,
                lower: a,
                upper: b,
                coupling: Complex64::new(half, 0.0),
                rotation: Rotation::CoRotating,
                residual: None,
                on_tree: true,
            });
        } else {
            terms.push(term(
                (p0 - dphase0, shift + ddet, p2 - dcurv),
                Rotation::CoRotating,
            ));
        }
        if !f.rwa {
            // Counter-rotating: rho = -phi - (varphi_b - varphi_a);
            // d/dt (varphi_b - varphi_a) = omega_ab - (delta_b - delta_a).
            let omega_ab = model.transition_omega(d.coupling);
            terms.push(term(
                (-p0 - dphase0, -p1 - omega_ab + ddet, -p2 - dcurv),
                Rotation::CounterRotating,
            ));
        }
    }
    terms
}

/// Refuse a frame with a non-finite coupling or detuning.
fn check_frame(model: &Model, terms: &[Term], levels: &[FrameLevel]) -> Result<(), AssemblyError> {
    for t in terms {
        if !(t.coupling.re.is_finite() && t.coupling.im.is_finite()) {
            return Err(AssemblyError::NonFinite(format!(
                "frame coupling of {}",
                drive_name(model, t.drive)
            )));
        }
    }
    for (k, l) in levels.iter().enumerate() {
        if !(l.detuning.is_finite() && l.detuning_rate.is_finite() && l.phase0.is_finite()) {
            return Err(AssemblyError::NonFinite(format!(
                "frame detuning of level '{}'",
                model.levels[k].id
            )));
        }
    }
    Ok(())
}

impl FrameHamiltonian {
    /// Assemble the frame Hamiltonian of a model.
    pub fn build(model: &Model) -> Result<Self, AssemblyError> {
        let n = model.levels.len();
        let t0 = model.window.start;
        let duration = model.window.duration();
        let (included, excluded): (Vec<usize>, Vec<usize>) =
            (0..model.drives.len()).partition(|&i| model.drive_included(&model.drives[i]));
        let fr = Forest::grow(model, &included, t0);
        let levels: Vec<FrameLevel> = (0..n)
            .map(|k| FrameLevel {
                detuning: fr.detuning[k],
                detuning_rate: -fr.curvature[k],
                half_gamma: 0.5 * model.levels[k].gamma,
                phase0: fr.phase0[k],
                root: fr.root_of[k],
                via: fr.via[k],
            })
            .collect();
        let terms = drive_terms(model, &included, &fr, t0, duration);
        check_frame(model, &terms, &levels)?;
        Ok(FrameHamiltonian {
            t0,
            duration,
            levels,
            terms,
            included,
            excluded,
            tree: fr.tree,
        })
    }

    /// Number of levels.
    pub fn dim(&self) -> usize {
        self.levels.len()
    }

    /// Frame amplitudes at t0 from the model's initial populations (bare
    /// amplitudes sqrt(p) with phase 0): a_k = e^{i varphi_k(t0)} sqrt(p_k).
    pub fn initial_amplitudes(&self, model: &Model) -> Vec<Complex64> {
        self.levels
            .iter()
            .zip(&model.initial)
            .map(|(l, p)| Complex64::from_polar(p.max(0.0).sqrt(), l.phase0))
            .collect()
    }

    /// Why the frame Hamiltonian is not piecewise constant, or `None` where it is
    /// (every included drive rectangular, RWA, unchirped, with no time-dependent residual phase).
    pub fn piecewise_constant_obstacle(&self, model: &Model) -> Option<String> {
        for t in &self.terms {
            let f = &model.fields[t.field];
            let name = drive_name(model, t.drive);
            if !f.envelope.is_piecewise_constant() {
                return Some(format!("{name} has a {} envelope", f.envelope.shape_name()));
            }
            if f.chirp != 0.0 {
                return Some(format!("{name} is chirped"));
            }
            if !f.rwa {
                return Some(format!(
                    "{name} keeps the counter-rotating term (rwa: false)"
                ));
            }
            if let Some(r) = t.residual {
                return Some(format!(
                    "{name} keeps a residual phase rotating at {:.3e} rad/s in the frame (it closes a loop or shares its transition with another field)",
                    r.rate
                ));
            }
        }
        None
    }

    /// Largest angular frequency of the frame Hamiltonian over the window:
    /// diagonal detunings, residual phase rates (counter-rotating 2 omega_L
    /// included), Rabi frequencies and half decay rates, with what sets it.
    /// `None` where nothing evolves.
    pub fn fastest_scale(&self, model: &Model) -> Option<FastestScale> {
        let mut best: Option<FastestScale> = None;
        let mut consider = |rate: f64, cause: &dyn Fn() -> String| {
            let rate = rate.abs();
            if rate > 0.0 && best.as_ref().is_none_or(|b| rate > b.rate) {
                best = Some(FastestScale {
                    rate,
                    cause: cause(),
                });
            }
        };
        let ends = [0.0, self.duration];
        for (k, l) in self.levels.iter().enumerate() {
            for &tau in &ends {
                consider(l.detuning_at(tau), &|| match l.via {
                    Some(d) => format!(
                        "the frame detuning of level '{}' reached by {}",
                        model.levels[k].id,
                        drive_name(model, d)
                    ),
                    None => format!("the frame detuning of level '{}'", model.levels[k].id),
                });
            }
            consider(l.half_gamma, &|| {
                format!("the decay of level '{}'", model.levels[k].id)
            });
        }
        for t in &self.terms {
            consider(2.0 * t.coupling.norm(), &|| {
                format!("the Rabi frequency of {}", drive_name(model, t.drive))
            });
            if let Some(r) = t.residual {
                for &tau in &ends {
                    consider(r.rate_at(tau), &|| match t.rotation {
                        Rotation::CounterRotating => format!(
                            "the counter-rotating term of {} (rwa: false)",
                            drive_name(model, t.drive)
                        ),
                        Rotation::CoRotating => {
                            format!("the residual phase of {}", drive_name(model, t.drive))
                        }
                    });
                }
            }
        }
        best
    }
}

#[allow(clippy::too_many_arguments)]
fn make_term(
    drive: usize,
    field: usize,
    lower: usize,
    upper: usize,
    half: f64,
    rho0: f64,
    rate: f64,
    sweep: f64,
    duration: f64,
    rotation: Rotation,
) -> Term {
    let drift = rate.abs() * duration + 0.5 * sweep.abs() * duration * duration;
    let residual = if drift < CONSTANT_PHASE_THRESHOLD {
        None
    } else {
        Some(ResidualPhase { rate, sweep })
    };
    Term {
        drive,
        field,
        lower,
        upper,
        coupling: Complex64::from_polar(1.0, -rho0.rem_euclid(TAU)) * half,
        rotation,
        residual,
        on_tree: false,
    }
}
