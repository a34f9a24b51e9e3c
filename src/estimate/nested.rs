//! The second-order (two-step) estimate, for levels that no drive reaches
//! from an initial level at first order:
//! `c_k^(2)(T) = (-i)^2 sum_m integral dt V_km(t) integral^t dt' V_mn(t') c_n(0)`.
//!
//! Owns: the one-pass march that accumulates each intermediate level's
//! first-order amplitude `c_m^(1)(t)` and, simultaneously, the outer integral
//! of `V_km(t) c_m^(1)(t)`. On each panel every envelope is taken linear and
//! every phase linear between its end values; the panel's inner and outer
//! integrals (including the part of the inner integral that lies inside the
//! same panel, a triangle in (t', t)) are then done exactly
//! (`spectrum::triangle`), so no detuning needs to be resolved in time.
//! Panels are halved with Richardson extrapolation until two levels agree.
//!
//! Must not: call the propagators, print, or look at anything but the model
//! through the estimator's context.

use num_complex::Complex64 as C;

use super::spectrum::{phi012, segments, triangle, Richardson, ATOL_L1, MAX_PANELS_NESTED, RTOL};
use super::{terms, Ctx, EstimateError, Source};

/// One exponential term `coeff f(t) exp(i [nu u + kappa u^2])`, `u = t - t_c`,
/// of a drive's matrix element (coefficient includes `-i`, `Omega/2`, the
/// constant phase and, for inner terms, `c_n(0)`).
struct NTerm {
    field: usize,
    coeff: C,
    nu: f64,
    kappa: f64,
    /// Outer terms: index of the source they add to.
    slot: usize,
}

/// Second-order sources and the total amplitude of level `k`, or None when no
/// two-step path reaches it.
pub(crate) fn second_order(
    ctx: &Ctx<'_>,
    k: usize,
) -> Result<Option<(Vec<Source>, C)>, EstimateError> {
    let m = ctx.model;
    // Last steps: drives between k and a level m that is reached at first
    // order (and is not itself initially populated).
    let mut last: Vec<(usize, usize)> = Vec::new();
    for (i, d) in m.drives.iter().enumerate() {
        if d.rabi == 0.0 {
            continue;
        }
        let c = &m.couplings[d.coupling];
        let mid = if c.lower == k {
            c.upper
        } else if c.upper == k {
            c.lower
        } else {
            continue;
        };
        if ctx.p(mid) == 0.0 && ctx.first_order_drives(mid).next().is_some() {
            last.push((i, mid));
        }
    }
    if last.is_empty() {
        return Ok(None);
    }
    let mut mids: Vec<usize> = last.iter().map(|x| x.1).collect();
    mids.sort_unstable();
    mids.dedup();

    let mut sources = Vec::with_capacity(last.len());
    let mut total = C::new(0.0, 0.0);
    for &mid in &mids {
        let mut inner = Vec::new();
        for (i, n) in ctx.first_order_drives(mid) {
            let scale = C::new(0.0, -0.5 * ctx.rabi(i)) * ctx.amp0(n);
            push_terms(ctx, &mut inner, i, mid, scale, 0);
        }
        let mut outer = Vec::new();
        let mut slot_drive = Vec::new();
        for &(i, _) in last.iter().filter(|x| x.1 == mid) {
            let scale = C::new(0.0, -0.5 * ctx.rabi(i));
            push_terms(ctx, &mut outer, i, k, scale, slot_drive.len());
            slot_drive.push(i);
        }
        let amps = march(ctx, &inner, &outer, slot_drive.len())?;
        for (&i, &a) in slot_drive.iter().zip(&amps) {
            ctx.add_source(&mut sources, &mut total, i, mid, a, || {
                format!(
                    "second order of level '{}' through '{}'",
                    m.levels[k].id, m.levels[mid].id
                )
            })?;
        }
    }
    Ok(Some((sources, total)))
}

/// The exponential terms of drive `drive`'s matrix element into level `to`,
/// each times `scale`, pushed onto `out` under `slot`.
fn push_terms(ctx: &Ctx<'_>, out: &mut Vec<NTerm>, drive: usize, to: usize, scale: C, slot: usize) {
    let (ts, nt) = terms(ctx, drive, to);
    for t in &ts[..nt] {
        out.push(NTerm {
            field: ctx.model.drives[drive].field,
            coeff: scale * C::from_polar(1.0, t.theta_c),
            nu: t.nu,
            kappa: t.kappa,
            slot,
        });
    }
}

/// Node values of one term: envelope, phase, e^{i phase}.
#[derive(Clone, Copy, Default)]
struct Node {
    f: f64,
    cis: C,
}

/// Panel data of one term: linear coefficients of the amplitude and the
/// phase increment as `i delta`.
#[derive(Clone, Copy, Default)]
struct Panel {
    a0: C,
    a1: C,
    z: C,
    active: bool,
}

fn node(ctx: &Ctx<'_>, t: &NTerm, time: f64, side: i8) -> Node {
    let v = &ctx.views[t.field];
    let f = match side {
        -1 => v.value_left_of(time),
        1 => v.value_right_of(time),
        _ => v.value(time),
    };
    let u = time - v.tc;
    Node {
        f,
        cis: C::from_polar(1.0, t.nu * u + t.kappa * u * u),
    }
}

fn panel(ctx: &Ctx<'_>, t: &NTerm, n0: &Node, n1: &Node, t0: f64, t1: f64) -> Panel {
    if n0.f == 0.0 && n1.f == 0.0 {
        return Panel::default();
    }
    let tc = ctx.views[t.field].tc;
    let h = t1 - t0;
    let delta = t.nu * h + t.kappa * h * (t1 + t0 - 2.0 * tc);
    let c0 = t.coeff * n0.cis;
    Panel {
        a0: c0 * n0.f,
        a1: c0 * (n1.f - n0.f),
        z: C::new(0.0, delta),
        active: true,
    }
}

/// The march: amplitudes of the outer slots at the end of the window.
fn march(
    ctx: &Ctx<'_>,
    inner: &[NTerm],
    outer: &[NTerm],
    nslots: usize,
) -> Result<Vec<C>, EstimateError> {
    let zeros = vec![C::new(0.0, 0.0); nslots];
    if inner.is_empty() || outer.is_empty() {
        return Ok(zeros);
    }
    let support = |ts: &[NTerm]| {
        ts.iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), t| {
                let (sa, sb) = ctx.views[t.field].support();
                (a.min(sa), b.max(sb))
            })
    };
    let (mut lo, _) = support(inner);
    let (_, mut hi) = support(outer);
    if let Some(w) = ctx.window {
        lo = lo.max(w.start);
        hi = hi.min(w.end);
    }
    if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) {
        return Ok(zeros);
    }
    let views: Vec<_> = inner
        .iter()
        .chain(outer)
        .map(|t| (&ctx.views[t.field], t.kappa))
        .collect();
    let mut segs = Vec::new();
    segments(&views, lo, hi, &mut segs);
    let base: usize = segs.iter().map(|s| s.2).sum();

    let mut nodes_in = vec![Node::default(); inner.len()];
    let mut nodes_out = vec![Node::default(); outer.len()];
    let mut pin = vec![Panel::default(); inner.len()];
    let mut rich = Richardson::new();
    let mut level = 0u32;
    loop {
        let mult = 1usize << level;
        let mut acc = zeros.clone();
        let mut cm = C::new(0.0, 0.0);
        let (mut l1_in, mut l1_out) = (0.0, 0.0);
        for &(a, b, n) in &segs {
            let n = n * mult;
            let hseg = (b - a) / n as f64;
            for (nd, t) in nodes_in.iter_mut().zip(inner) {
                *nd = node(ctx, t, a, 1);
            }
            for (nd, t) in nodes_out.iter_mut().zip(outer) {
                *nd = node(ctx, t, a, 1);
            }
            let mut t0 = a;
            for i in 1..=n {
                let (t1, side) = if i == n {
                    (b, -1)
                } else {
                    (a + i as f64 * hseg, 0)
                };
                let h = t1 - t0;
                let mut dcm = C::new(0.0, 0.0);
                for ((nd, t), pj) in nodes_in.iter_mut().zip(inner).zip(pin.iter_mut()) {
                    let n1 = node(ctx, t, t1, side);
                    *pj = panel(ctx, t, nd, &n1, t0, t1);
                    if pj.active {
                        let e = phi012(pj.z);
                        dcm += (pj.a0 * e[0] + pj.a1 * e[1]) * h;
                        l1_in += 0.5 * h * t.coeff.norm() * (nd.f.abs() + n1.f.abs());
                    }
                    *nd = n1;
                }
                for (nd, t) in nodes_out.iter_mut().zip(outer) {
                    let n1 = node(ctx, t, t1, side);
                    let q = panel(ctx, t, nd, &n1, t0, t1);
                    let f_sum = nd.f.abs() + n1.f.abs();
                    *nd = n1;
                    if !q.active {
                        continue;
                    }
                    l1_out += 0.5 * h * t.coeff.norm() * f_sum;
                    let e = phi012(q.z);
                    let mut inc = cm * (q.a0 * e[0] + q.a1 * e[1]) * h;
                    let mut tri_sum = C::new(0.0, 0.0);
                    for pj in pin.iter().filter(|p| p.active) {
                        let tr = triangle(pj.z, q.z);
                        tri_sum += q.a0 * (pj.a0 * tr[0] + pj.a1 * tr[1])
                            + q.a1 * (pj.a0 * tr[2] + pj.a1 * tr[3]);
                    }
                    inc += tri_sum * h * h;
                    acc[t.slot] += inc;
                }
                cm += dcm;
                t0 = t1;
            }
        }
        if acc.iter().any(|a| !(a.re.is_finite() && a.im.is_finite())) {
            return Err(EstimateError::NonFinite("second-order march".into()));
        }
        let (best, change) = rich.push(acc);
        if let Some(ch) = change {
            let scale = best.iter().map(|a| a.norm()).fold(0.0, f64::max);
            // |c_k| <= (integral |V_km|)(integral |V_mn|) sets the rounding
            // floor; the context may ask for less (amplitudes it ignores).
            if ch <= RTOL * scale + (ATOL_L1 * l1_in * l1_out).max(ctx.amp_floor) {
                return Ok(best);
            }
        }
        level += 1;
        if base.saturating_mul(1 << level) > MAX_PANELS_NESTED || level > 16 {
            return Ok(best);
        }
    }
}
