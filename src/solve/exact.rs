//! The exact propagator for piecewise-constant frame Hamiltonians: one matrix
//! exponential per segment between envelope edges (and sample times), exact to
//! rounding whatever the detunings.
//!
//! Owns: the segment loop, the sub-steps that sample peak populations, and the
//! lost population from the Van Loan block exponential. Must not: print, or
//! decide which propagator runs (that is [`super::solve`]).
//!
//! Each segment of constant frame Hamiltonian H (non-Hermitian: -i Gamma/2 on
//! the diagonal) is cut into n equal sub-steps of length dt and propagated by
//! U = exp(-i H dt) (nalgebra's scaling-and-squaring Pade exponential). With
//! decay the same exponential call gives the lost population exactly: the
//! block matrix [[-i H^dagger, Gamma], [0, -i H]] dt has exp = [[U^dagger^-1..., F],
//! [0, U]] and M = U^dagger F = integral_0^dt e^{i H^dagger s} Gamma e^{-i H s} ds, so
//! each sub-step loses c^dagger M c (C. Van Loan, IEEE Trans. Autom. Control 23,
//! 395 (1978)). The number of sub-steps only sets how finely peaks are sampled
//! (see [`PEAK_TOLERANCE`]); the final state does not depend on it beyond
//! rounding.

use super::plan::{PeakTracker, Piece, Plan};
use super::{MethodUsed, Solution, SolveError, SolveOptions};
use crate::hamiltonian::FrameHamiltonian;
use crate::model::Model;
use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;

/// Target absolute accuracy of peak populations in the exact propagator.
/// Sub-steps are chosen so that the cubic Hermite interpolation of the
/// amplitudes between sub-steps, whose population error is about
/// a (W dt)^4 / 192 for a pair of levels exchanging population a at frequency
/// W, stays below it.
pub const PEAK_TOLERANCE: f64 = 1e-8;

const I: Complex64 = Complex64 { re: 0.0, im: 1.0 };

/// Frame Hamiltonian (dense) with the envelope values of one segment.
fn dense_h(fh: &FrameHamiltonian, env: &[f64], tau: f64) -> DMatrix<Complex64> {
    let n = fh.dim();
    let mut h = DMatrix::from_element(n, n, Complex64::new(0.0, 0.0));
    for (k, l) in fh.levels.iter().enumerate() {
        h[(k, k)] = Complex64::new(l.detuning_at(tau), -l.half_gamma);
    }
    for t in &fh.terms {
        let g = t.coupling * env[t.field];
        h[(t.upper, t.lower)] += g;
        h[(t.lower, t.upper)] += g.conj();
    }
    h
}

/// Largest sub-step (s) that samples the peaks of H to [`PEAK_TOLERANCE`].
fn substep_for(h: &DMatrix<Complex64>) -> f64 {
    let n = h.nrows();
    let rowsum: Vec<f64> = (0..n)
        .map(|i| (0..n).filter(|&j| j != i).map(|j| h[(i, j)].norm()).sum())
        .collect();
    let mut dt = f64::INFINITY;
    for i in 0..n {
        for j in (i + 1)..n {
            if h[(i, j)].norm() == 0.0 {
                continue;
            }
            let omega = 2.0 * rowsum[i].max(rowsum[j]);
            let delta = (h[(i, i)].re - h[(j, j)].re).abs();
            let w2 = omega * omega + delta * delta;
            let a = omega * omega / w2;
            let kappa = (192.0 * PEAK_TOLERANCE / a).powf(0.25);
            dt = dt.min(kappa / w2.sqrt());
        }
    }
    // Decay: the interpolant of an amplitude decaying as e^{-Gamma s / 2}
    // is off by about (Gamma dt / 2)^4 / 384 of it, also on a level that
    // nothing drives (otherwise a single sub-step).
    let kappa = (192.0 * PEAK_TOLERANCE).powf(0.25);
    for i in 0..n {
        let half_gamma = -h[(i, i)].im;
        if half_gamma > 0.0 {
            dt = dt.min(kappa / half_gamma);
        }
    }
    dt
}

/// Amplitudes and derivatives of one sub-step end in the interaction
/// picture of the diagonal frame detunings, b_k = e^{i w_k s} c_k (s from
/// the sub-step start; `turn` = e^{i w_k dt} at its end, None at its start):
/// |b_k| = |c_k|, and b_k does not rotate with the frame detuning of level k,
/// which the peak interpolant could not follow over a long sub-step.
fn interleave_still(
    c: &DVector<Complex64>,
    dc: &DVector<Complex64>,
    spin: &[f64],
    turn: Option<&[Complex64]>,
    y: &mut [f64],
    d: &mut [f64],
) {
    for k in 0..c.len() {
        let r = turn.map_or(Complex64::new(1.0, 0.0), |t| t[k]);
        let b = c[k] * r;
        let db = (dc[k] + I * spin[k] * c[k]) * r;
        y[2 * k] = b.re;
        y[2 * k + 1] = b.im;
        d[2 * k] = db.re;
        d[2 * k + 1] = db.im;
    }
}

/// U = exp(-i H dt) and, with decay, M = integral_0^dt e^{i H^dagger s} Gamma e^{-i H s} ds.
fn propagators(
    h: &DMatrix<Complex64>,
    gamma: &[f64],
    dt: f64,
) -> (DMatrix<Complex64>, Option<DMatrix<Complex64>>) {
    let n = h.nrows();
    let minus_i_h_dt = h.map(|z| -I * z * dt);
    if gamma.iter().all(|&g| g == 0.0) {
        return (minus_i_h_dt.exp(), None);
    }
    let mut block = DMatrix::from_element(2 * n, 2 * n, Complex64::new(0.0, 0.0));
    let adj = h.adjoint();
    for r in 0..n {
        for c in 0..n {
            block[(r, c)] = -I * adj[(r, c)] * dt;
            block[(n + r, n + c)] = minus_i_h_dt[(r, c)];
        }
        block[(r, n + r)] = Complex64::new(gamma[r] * dt, 0.0);
    }
    let e = block.exp();
    let u = e.view((n, n), (n, n)).into_owned();
    let f = e.view((0, n), (n, n)).into_owned();
    let m = u.adjoint() * f;
    (u, Some(m))
}

fn all_finite(m: &DMatrix<Complex64>) -> bool {
    m.iter().all(|z| z.re.is_finite() && z.im.is_finite())
}

fn interleave(c: &DVector<Complex64>, out: &mut [f64]) {
    for (k, z) in c.iter().enumerate() {
        out[2 * k] = z.re;
        out[2 * k + 1] = z.im;
    }
}

struct Segment {
    a: f64,
    b: f64,
    env: Vec<f64>,
    dt_max: f64,
}

/// Run the exact propagator (the caller has checked that it applies).
pub(crate) fn propagate(
    model: &Model,
    fh: &FrameHamiltonian,
    plan: &Plan,
    opts: &SolveOptions,
) -> Result<Solution, SolveError> {
    let n = fh.dim();
    let nf = model.fields.len();
    let gamma: Vec<f64> = fh.levels.iter().map(|l| 2.0 * l.half_gamma).collect();

    // Pass 1: envelope values and sub-step sizes of every segment.
    let mut segs = Vec::with_capacity(plan.segments());
    for w in plan.stops.windows(2) {
        let mid = 0.5 * (w[0] + w[1]);
        let mut env = vec![0.0; nf];
        for t in &fh.terms {
            env[t.field] = Piece::of(&model.fields[t.field].envelope, mid).eval(mid);
        }
        let h = dense_h(fh, &env, 0.0);
        segs.push(Segment {
            a: w[0],
            b: w[1],
            env,
            dt_max: substep_for(&h),
        });
    }
    if segs.len() as u64 > opts.step_budget {
        return Err(SolveError::StepBudget {
            budget: opts.step_budget,
            period_s: fh.duration / segs.len().max(1) as f64,
            cause: format!(
                "{} segments between envelope edges and sample times",
                segs.len()
            ),
        });
    }
    // Counted in f64: a segment may ask for more sub-steps than u64 holds
    // (found by fuzzing `vet_small`: a 2e60 s pulse overflowed the sum).
    let count = |stretch: f64| -> f64 {
        segs.iter()
            .map(|s| {
                let len = s.b - s.a;
                if s.dt_max.is_finite() {
                    (len / (s.dt_max * stretch)).ceil().max(1.0)
                } else {
                    1.0
                }
            })
            .sum()
    };
    // Peaks are sampled more coarsely where the budget would be exceeded
    // (the final state stays exact).
    let budget = opts.step_budget as f64;
    let mut stretch = 1.0;
    let mut total = count(stretch);
    while total > budget {
        if !total.is_finite() {
            return Err(SolveError::NonFinite {
                stage: "sub-step count of the exact propagator".into(),
            });
        }
        stretch *= 2.0 * total / budget;
        total = count(stretch);
    }

    // Pass 2: propagate.
    let a0 = fh.initial_amplitudes(model);
    let mut c = DVector::from_vec(a0);
    let norm0: f64 = c.iter().map(|z| z.norm_sqr()).sum();
    let mut lost = 0.0;
    let mut norm_error: f64 = 0.0;
    let mut tracker = PeakTracker::new(n, true);
    let mut y0 = vec![0.0; 2 * n];
    let mut d0 = vec![0.0; 2 * n];
    let mut y1 = vec![0.0; 2 * n];
    let mut d1 = vec![0.0; 2 * n];
    interleave(&c, &mut y0);
    tracker.point(&y0);
    let populations =
        |c: &DVector<Complex64>| -> Vec<f64> { c.iter().map(|z| z.norm_sqr()).collect() };
    let mut samples = Vec::with_capacity(plan.samples);
    if let Some(Some(_)) = plan.sample_at.first() {
        samples.push((plan.stops[0], populations(&c)));
    }
    let mut steps = 0u64;
    let mut exponentials = 0u64;
    // Cache of (dt, U, M) for the current Hamiltonian.
    let mut cache: Vec<(f64, DMatrix<Complex64>, Option<DMatrix<Complex64>>)> = Vec::new();
    let mut cache_env: Option<Vec<f64>> = None;
    let mut h = DMatrix::from_element(n, n, Complex64::new(0.0, 0.0));
    for (i, seg) in segs.iter().enumerate() {
        if cache_env.as_ref() != Some(&seg.env) {
            cache.clear();
            h = dense_h(fh, &seg.env, 0.0);
            cache_env = Some(seg.env.clone());
        }
        let len = seg.b - seg.a;
        let nsub = if seg.dt_max.is_finite() {
            ((len / (seg.dt_max * stretch)).ceil() as u64).max(1)
        } else {
            1
        };
        let dt = len / nsub as f64;
        let pos = cache
            .iter()
            .position(|(d, _, _)| (d - dt).abs() <= 1e-12 * dt);
        let idx = match pos {
            Some(p) => p,
            None => {
                let (u, m) = propagators(&h, &gamma, dt);
                exponentials += 1;
                if !all_finite(&u) || m.as_ref().is_some_and(|m| !all_finite(m)) {
                    return Err(SolveError::NonFinite {
                        stage: format!(
                            "matrix exponential of the segment {:.6e} s to {:.6e} s",
                            seg.a, seg.b
                        ),
                    });
                }
                cache.push((dt, u, m));
                cache.len() - 1
            }
        };
        let (_, u, m) = &cache[idx];
        let minus_i_h = h.map(|z| -I * z);
        let spin: Vec<f64> = (0..n).map(|k| h[(k, k)].re).collect();
        let turn: Vec<Complex64> = spin
            .iter()
            .map(|w| Complex64::from_polar(1.0, w * dt))
            .collect();
        let mut dc = &minus_i_h * &c;
        for _ in 0..nsub {
            if let Some(m) = m {
                let mc = m * &c;
                lost += c.dotc(&mc).re;
            }
            let c1 = u * &c;
            let dc1 = &minus_i_h * &c1;
            interleave_still(&c, &dc, &spin, None, &mut y0, &mut d0);
            interleave_still(&c1, &dc1, &spin, Some(&turn), &mut y1, &mut d1);
            tracker.step(&y0, &d0, &y1, &d1, dt);
            tracker.point(&y1);
            c = c1;
            dc = dc1;
            let norm: f64 = c.iter().map(|z| z.norm_sqr()).sum();
            norm_error = norm_error.max((norm0 - norm - lost).abs());
        }
        steps += nsub;
        if !c.iter().all(|z| z.re.is_finite() && z.im.is_finite()) || !lost.is_finite() {
            return Err(SolveError::NonFinite {
                stage: format!(
                    "exact propagation of the segment {:.6e} s to {:.6e} s",
                    seg.a, seg.b
                ),
            });
        }
        if let Some(Some(_)) = plan.sample_at.get(i + 1) {
            samples.push((seg.b, populations(&c)));
        }
    }
    let final_populations = populations(&c);
    let mut peaks = tracker.peaks;
    for (p, f) in peaks.iter_mut().zip(&final_populations) {
        *p = p.max(*f);
    }
    Ok(Solution {
        method: MethodUsed::Exact,
        final_populations,
        peak_populations: peaks,
        lost,
        norm_error,
        steps,
        evaluations: exponentials,
        rtol: model.solver.rtol,
        atol: model.solver.atol,
        excluded_drives: fh.excluded.clone(),
        samples,
    })
}
