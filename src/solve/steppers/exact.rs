//! The exact stepper for equations with a piecewise-constant generator: one
//! matrix exponential per stretch between the plan's stops, exact to
//! rounding whatever the frequencies.
//!
//! Owns: the stretch loop, the sub-steps that sample peaks (only while the
//! peak observer runs), and the lost quantity from the Van Loan block
//! exponential. Must not: print, know what the state means beyond the
//! generator's layout (see `equation.rs`), record anything itself, or decide
//! which stepper runs (that is [`crate::solve::solve`]).
//!
//! Each stretch of constant generator G is cut into n equal sub-steps of
//! length dt and propagated by U = exp(G dt) (nalgebra's scaling-and-squaring
//! Pade exponential). With a loss form q the same exponential call gives the
//! lost quantity exactly: the block matrix [[-G^dagger, diag(q)], [0, G]] dt
//! has exp = [[., F], [0, U]] and M = U^dagger F = integral_0^dt
//! e^{G^dagger s} diag(q) e^{G s} ds, so each sub-step loses z^dagger M z
//! (C. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)). The number of
//! sub-steps only sets how finely peaks are sampled (see [`PEAK_TOLERANCE`]);
//! the final state does not depend on it beyond rounding. Without the peak
//! observer every stretch is one sub-step.
//!
//! Allocation: buffers are allocated once per run; an exponential (once per
//! distinct generator and sub-step length) allocates, a sub-step does not.

use super::Run;
use crate::solve::equation::{Equation, Generator};
use crate::solve::observers::{Interior, NoDense, Observer, Step};
use crate::solve::plan::Plan;
use crate::solve::{SolveError, SolveOptions};
use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;

/// Target absolute accuracy of peak populations in the exact stepper.
/// Sub-steps are chosen so that the cubic Hermite interpolation of the
/// amplitudes between sub-steps, whose population error is about
/// a (W dt)^4 / 192 for a pair of levels exchanging population a at frequency
/// W, stays below it.
pub const PEAK_TOLERANCE: f64 = 1e-8;

const I: Complex64 = Complex64 { re: 0.0, im: 1.0 };
const ZERO: Complex64 = Complex64 { re: 0.0, im: 0.0 };

/// Largest sub-step (s) that samples the peaks of z' = G z to
/// [`PEAK_TOLERANCE`]: for every coupled pair, the two-level Rabi frequency
/// from the couplings and the difference of the diagonal rotations; for every
/// decaying component its decay.
fn substep_for(g: &DMatrix<Complex64>) -> f64 {
    let n = g.nrows();
    let rowsum: Vec<f64> = (0..n)
        .map(|i| (0..n).filter(|&j| j != i).map(|j| g[(i, j)].norm()).sum())
        .collect();
    let mut dt = f64::INFINITY;
    for i in 0..n {
        for j in (i + 1)..n {
            if g[(i, j)].norm() == 0.0 {
                continue;
            }
            let omega = 2.0 * rowsum[i].max(rowsum[j]);
            // Rotation frequencies -Im G_jj.
            let delta = ((-g[(i, i)].im) - (-g[(j, j)].im)).abs();
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
        let half_gamma = -g[(i, i)].re;
        if half_gamma > 0.0 {
            dt = dt.min(kappa / half_gamma);
        }
    }
    dt
}

/// U = exp(G dt) and, with a loss form, M = integral_0^dt e^{G^dagger s} diag(q) e^{G s} ds.
fn propagators(gen: &Generator, dt: f64) -> (DMatrix<Complex64>, Option<DMatrix<Complex64>>) {
    let g = &gen.matrix;
    let n = g.nrows();
    let g_dt = g.map(|z| z * dt);
    if gen.loss.iter().all(|&q| q == 0.0) {
        return (g_dt.exp(), None);
    }
    let mut block = DMatrix::from_element(2 * n, 2 * n, ZERO);
    for r in 0..n {
        for c in 0..n {
            block[(r, c)] = -g[(c, r)].conj() * dt;
            block[(n + r, n + c)] = g_dt[(r, c)];
        }
        block[(r, n + r)] = Complex64::new(gen.loss[r] * dt, 0.0);
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

/// Work buffers of one run (allocated once).
struct Buffers {
    c: DVector<Complex64>,
    c1: DVector<Complex64>,
    dc: DVector<Complex64>,
    dc1: DVector<Complex64>,
    mc: DVector<Complex64>,
    spin: Vec<f64>,
    turn: Vec<Complex64>,
    y0: Vec<f64>,
    d0: Vec<f64>,
    y1: Vec<f64>,
    d1: Vec<f64>,
    end: Vec<f64>,
}

/// A state and its derivative in the frame without each component's own
/// rotation, b_j = e^{i w_j s} z_j with w_j = -Im G_jj (s from the sub-step
/// start; `turn` = e^{i w_j dt} at its end, None at its start): |b_j| = |z_j|,
/// and b_j does not rotate with its own frequency, which the peak
/// interpolant could not follow over a long sub-step. The lost component, if
/// any, follows unchanged with its rate.
fn still(
    c: &DVector<Complex64>,
    dc: &DVector<Complex64>,
    spin: &[f64],
    turn: Option<&[Complex64]>,
    lost: Option<(f64, f64)>,
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
    if let Some((l, rate)) = lost {
        y[2 * c.len()] = l;
        d[2 * c.len()] = rate;
    }
}

/// Rate of the lost quantity, sum q_j |z_j|^2.
fn loss_rate(q: &[f64], c: &DVector<Complex64>) -> f64 {
    q.iter().zip(c.iter()).map(|(q, z)| q * z.norm_sqr()).sum()
}

/// The generator of stop interval i, or an error where the equation has none.
fn generator_of<E: Equation>(
    eq: &mut E,
    plan: &Plan,
    i: usize,
    out: &mut Generator,
) -> Result<(), SolveError> {
    eq.enter_stretch(plan.stops[i], plan.stops[i + 1]);
    if eq.generator(out) {
        Ok(())
    } else {
        Err(SolveError::ExactNotApplicable {
            reason: "the equation has no constant generator on a stretch".into(),
        })
    }
}

/// How one segment is cut: first `fine` sub-steps at the peak sampling
/// step (peaks interpolated), then `coarse` sub-steps of equal length up to
/// the segment's end (peaks recorded at their ends only).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Cut {
    fine: u64,
    fine_dt: f64,
    coarse: u64,
}

/// Peak sampling steps at the start of every segment that keep their
/// length when the step budget stretches the rest: several periods of the
/// fastest oscillation (the sampling step is about 1/170 of a period),
/// where the first maxima of a constant drive are reached.
const FINE_START: f64 = 1024.0;

/// Sub-step counts of every stretch: none (one sub-step each) without peaks;
/// otherwise the peak sampling step. Where the budget would be exceeded,
/// each segment keeps its first [`FINE_START`] sampling steps (at most half
/// the budget in all) and the rest is stretched uniformly; the final state
/// stays exact. The flag says whether any segment was stretched.
fn substeps<E: Equation>(
    eq: &mut E,
    plan: &Plan,
    opts: &SolveOptions,
    peaks: bool,
    gen: &mut Generator,
) -> Result<(Vec<Cut>, bool), SolveError> {
    let nseg = plan.segments();
    if nseg as u64 > opts.step_budget {
        let span = plan.stops[nseg] - plan.stops[0];
        return Err(SolveError::StepBudget {
            budget: opts.step_budget,
            period_s: span / nseg.max(1) as f64,
            cause: format!("{nseg} segments between envelope edges and sample times"),
        });
    }
    let whole = |n: u64, len: f64| Cut {
        fine: n,
        fine_dt: len / n as f64,
        coarse: 0,
    };
    let lens: Vec<f64> = plan.stops.windows(2).map(|w| w[1] - w[0]).collect();
    if !peaks {
        return Ok((lens.iter().map(|&l| whole(1, l)).collect(), false));
    }
    let mut dt_max = Vec::with_capacity(nseg);
    for i in 0..nseg {
        generator_of(eq, plan, i, gen)?;
        dt_max.push(substep_for(&gen.matrix));
    }
    // Counted in f64: a segment may ask for more sub-steps than u64 holds
    // (found by fuzzing `vet_small`: a 2e60 s pulse overflowed the sum).
    let count = |stretch: f64| -> f64 {
        lens.iter()
            .zip(&dt_max)
            .map(|(len, dt)| {
                if dt.is_finite() {
                    (len / (dt * stretch)).ceil().max(1.0)
                } else {
                    1.0
                }
            })
            .sum()
    };
    let budget = opts.step_budget as f64;
    if count(1.0) <= budget {
        let cuts = lens
            .iter()
            .zip(&dt_max)
            .map(|(&len, dt)| {
                let n = if dt.is_finite() {
                    ((len / dt).ceil() as u64).max(1)
                } else {
                    1
                };
                whole(n, len)
            })
            .collect();
        return Ok((cuts, false));
    }
    // The fine starts: FINE_START sampling steps each, scaled down to half
    // the budget in all.
    let mut fine: Vec<f64> = lens
        .iter()
        .zip(&dt_max)
        .map(|(len, dt)| {
            if dt.is_finite() {
                (len / dt).floor().min(FINE_START)
            } else {
                0.0
            }
        })
        .collect();
    let fine_total: f64 = fine.iter().sum();
    if fine_total > 0.5 * budget {
        let scale = 0.5 * budget / fine_total;
        fine.iter_mut().for_each(|f| *f = (*f * scale).floor());
    }
    let rest: Vec<f64> = lens
        .iter()
        .zip(&dt_max)
        .zip(&fine)
        .map(|((len, dt), f)| if *f > 0.0 { len - f * dt } else { *len })
        .collect();
    let budget = budget - fine.iter().sum::<f64>();
    let count = |stretch: f64| -> f64 {
        rest.iter()
            .zip(&dt_max)
            .map(|(len, dt)| {
                if dt.is_finite() && *len > 0.0 {
                    (len / (dt * stretch)).ceil().max(1.0)
                } else {
                    1.0
                }
            })
            .sum()
    };
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
    let cuts = lens
        .iter()
        .zip(&rest)
        .zip(dt_max.iter().zip(&fine))
        .map(|((&len, &r), (&dt, &f))| {
            if f == 0.0 || !dt.is_finite() {
                let n = if dt.is_finite() {
                    ((len / (dt * stretch)).ceil() as u64).max(1)
                } else {
                    1
                };
                return whole(n, len);
            }
            let coarse = if r > 0.0 {
                ((r / (dt * stretch)).ceil() as u64).max(1)
            } else {
                0
            };
            Cut {
                fine: f as u64,
                fine_dt: dt,
                coarse,
            }
        })
        .collect();
    Ok((cuts, true))
}

/// U and M of the current generator per sub-step length, and how many
/// exponentials were taken.
#[derive(Default)]
struct Exponentials {
    cache: Vec<(f64, DMatrix<Complex64>, Option<DMatrix<Complex64>>)>,
    taken: u64,
}

impl Exponentials {
    /// Index of (U, M) for sub-step dt of `gen` on the segment [sa, sb].
    fn index(&mut self, gen: &Generator, dt: f64, sa: f64, sb: f64) -> Result<usize, SolveError> {
        if let Some(p) = self
            .cache
            .iter()
            .position(|(d, _, _)| (d - dt).abs() <= 1e-12 * dt)
        {
            return Ok(p);
        }
        let (u, mm) = propagators(gen, dt);
        self.taken += 1;
        if !all_finite(&u) || mm.as_ref().is_some_and(|mm| !all_finite(mm)) {
            return Err(SolveError::NonFinite {
                stage: format!("matrix exponential of the segment {sa:.6e} s to {sb:.6e} s"),
            });
        }
        self.cache.push((dt, u, mm));
        Ok(self.cache.len() - 1)
    }
}

/// One sub-step z -> U z (lost += z^dagger M z), handed to the observers in
/// the frame of [`still`]; afterwards `b.c` and `b.dc` hold the new state.
#[allow(clippy::too_many_arguments)]
fn sub_step<E: Equation, O: Observer<E>>(
    eq: &E,
    obs: &mut O,
    b: &mut Buffers,
    gen: &Generator,
    (u, mm): (&DMatrix<Complex64>, Option<&DMatrix<Complex64>>),
    dt: f64,
    with_lost: bool,
    lost: &mut f64,
    interior: Interior,
) {
    let m = b.c.len();
    let lost0 = *lost;
    if let Some(mm) = mm {
        mm.mul_to(&b.c, &mut b.mc);
        *lost += b.c.dotc(&b.mc).re;
    }
    u.mul_to(&b.c, &mut b.c1);
    gen.matrix.mul_to(&b.c1, &mut b.dc1);
    let lost_at = |l: f64, c: &DVector<Complex64>| with_lost.then(|| (l, loss_rate(&gen.loss, c)));
    still(
        &b.c,
        &b.dc,
        &b.spin,
        None,
        lost_at(lost0, &b.c),
        &mut b.y0,
        &mut b.d0,
    );
    let end_lost = lost_at(*lost, &b.c1);
    still(
        &b.c1,
        &b.dc1,
        &b.spin,
        Some(&b.turn),
        end_lost,
        &mut b.y1,
        &mut b.d1,
    );
    for (k, z) in b.c1.iter().enumerate() {
        b.end[2 * k] = z.re;
        b.end[2 * k + 1] = z.im;
    }
    if with_lost {
        b.end[2 * m] = *lost;
    }
    let step = Step {
        h: dt,
        y0: &b.y0,
        d0: &b.d0,
        y1: &b.y1,
        d1: &b.d1,
        end: &b.end,
        interior,
    };
    obs.step(eq, &step, &mut NoDense);
    std::mem::swap(&mut b.c, &mut b.c1);
    std::mem::swap(&mut b.dc, &mut b.dc1);
}

/// Run the exact stepper over the plan (the caller has checked that it
/// applies): `y` holds the initial state and receives the final one. With
/// `peaks` the stretches are sub-stepped for the peak observer.
pub(crate) fn propagate<E: Equation, O: Observer<E>>(
    eq: &mut E,
    obs: &mut O,
    y: &mut [f64],
    plan: &Plan,
    opts: &SolveOptions,
    peaks: bool,
) -> Result<Run, SolveError> {
    let m = eq.generator_dim();
    let dim = y.len();
    if m == 0 || dim < 2 * m || dim > 2 * m + 1 {
        return Err(SolveError::ExactNotApplicable {
            reason: format!("a state of {dim} components does not fit a generator of size {m}"),
        });
    }
    let with_lost = dim == 2 * m + 1;
    let mut gen = Generator::zeros(m);
    let mut next = Generator::zeros(m);
    let (cuts, stretched) = substeps(eq, plan, opts, peaks, &mut gen)?;
    let zeros = DVector::from_element(m, ZERO);
    let mut b = Buffers {
        c: DVector::from_fn(m, |k, _| Complex64::new(y[2 * k], y[2 * k + 1])),
        c1: zeros.clone(),
        dc: zeros.clone(),
        dc1: zeros.clone(),
        mc: zeros,
        spin: vec![0.0; m],
        turn: vec![ZERO; m],
        y0: vec![0.0; dim],
        d0: vec![0.0; dim],
        y1: vec![0.0; dim],
        d1: vec![0.0; dim],
        end: y.to_vec(),
    };
    let mut lost = if with_lost { y[2 * m] } else { 0.0 };
    obs.start(eq, y);
    if let Some(Some(_)) = plan.sample_at.first() {
        obs.sample(eq, plan.stops[0], y);
    }
    let mut steps = 0u64;
    let mut exps = Exponentials::default();
    for (i, cut) in cuts.iter().enumerate() {
        let (sa, sb) = (plan.stops[i], plan.stops[i + 1]);
        generator_of(eq, plan, i, &mut next)?;
        if i == 0 || next != gen {
            std::mem::swap(&mut gen, &mut next);
            exps.cache.clear();
        }
        let fine_end = if cut.coarse == 0 {
            sb
        } else {
            sa + cut.fine as f64 * cut.fine_dt
        };
        let coarse_dt = (sb - fine_end) / cut.coarse.max(1) as f64;
        let parts = [
            (
                cut.fine,
                (fine_end - sa) / cut.fine.max(1) as f64,
                Interior::Trusted,
            ),
            (cut.coarse, coarse_dt, Interior::EndsOnly),
        ];
        for (count, dt, interior) in parts {
            if count == 0 {
                continue;
            }
            let idx = exps.index(&gen, dt, sa, sb)?;
            let (_, u, mm) = &exps.cache[idx];
            for k in 0..m {
                b.spin[k] = -gen.matrix[(k, k)].im;
                b.turn[k] = Complex64::from_polar(1.0, b.spin[k] * dt);
            }
            gen.matrix.mul_to(&b.c, &mut b.dc);
            for _ in 0..count {
                sub_step(
                    &*eq,
                    obs,
                    &mut b,
                    &gen,
                    (u, mm.as_ref()),
                    dt,
                    with_lost,
                    &mut lost,
                    interior,
                );
            }
            steps += count;
        }
        if !b.c.iter().all(|z| z.re.is_finite() && z.im.is_finite()) || !lost.is_finite() {
            return Err(SolveError::NonFinite {
                stage: format!("exact propagation of the segment {sa:.6e} s to {sb:.6e} s"),
            });
        }
        if let Some(Some(_)) = plan.sample_at.get(i + 1) {
            obs.sample(eq, sb, &b.end);
        }
    }
    y.copy_from_slice(&b.end);
    Ok(Run {
        steps,
        evaluations: exps.taken,
        peaks_at_ends_only: stretched,
    })
}
