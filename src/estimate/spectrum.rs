//! Envelope spectra: the Fourier integrals a first-order estimate is made of.
//!
//! Owns: the entry points to the closed-form transforms of the symmetric
//! envelope shapes (each written beside its shape in `model/envelope/`), the
//! Filon-type quadrature
//! for everything else (sampled envelopes, chirped fields, envelopes cut by the
//! window), and the small exact panel integrals (`phi` functions, the triangle
//! integrals) that the second-order march shares.
//!
//! Must not: know about levels, couplings or drives (that is `estimate`), call
//! the propagators, print, or allocate more than one small buffer per integral.
//!
//! Conventions: a spectrum is `F(nu) = integral f(t_c + u) exp(i nu u) du`, with
//! `t_c` the envelope centre, so for the symmetric shapes it is real and even in
//! `nu`. The quadrature integrates `f(t) exp(i [nu (t - t_c) + kappa (t - t_c)^2])`
//! over an interval of absolute time.

use num_complex::Complex64 as C;

use super::view::FieldView;
use super::EstimateError;
use crate::model::Envelope;

/// Closed-form spectrum `F(nu) = integral f(t_c + u) e^{i nu u} du` of a
/// symmetric envelope over all time; `None` for sampled envelopes (and for
/// parameters that give no finite value, e.g. a zero duration). Each shape's
/// transform is written in its own file under `model/envelope/`:
///
/// - rectangular, duration D: `D sinc(nu D / 2)`;
/// - Gaussian, amplitude sigma: `sigma sqrt(2 pi) exp(-nu^2 sigma^2 / 2)`;
/// - sech, tau: `pi tau sech(pi nu tau / 2)`;
/// - sin2, duration D: `-a^2 sin(nu D/2) / (nu (nu^2 - a^2))`, `a = 2 pi/D`;
/// - Blackman, duration D: `2 sin(nu D/2) N(nu) / (nu (nu^2 - a^2)(nu^2 - 4 a^2))`.
pub fn envelope_spectrum(env: &Envelope, nu: f64) -> Option<f64> {
    env.spectrum(nu).filter(|f| f.is_finite())
}

/// An upper bound on `|F(nu)|` that follows the *envelope* of an oscillating
/// line (the sines replaced by 1), capped by the area `integral f`. Exact
/// `|F|` for the non-oscillating shapes; `None` for samples.
pub fn envelope_spectrum_bound(env: &Envelope, nu: f64) -> Option<f64> {
    env.spectrum_bound(nu).filter(|b| b.is_finite())
}

/// `E_j(z) = integral_0^1 s^j e^{z s} ds` for j = 0, 1, 2: series for
/// |z| < 1, upward recurrence `E_j = (e^z - j E_{j-1}) / z` otherwise.
#[inline]
pub(crate) fn phi012(z: C) -> [C; 3] {
    if z.norm_sqr() < 1.0 {
        let mut out = [C::new(0.0, 0.0); 3];
        let mut term = C::new(1.0, 0.0);
        for n in 0..24 {
            let nf = f64::from(n);
            out[0] += term / (nf + 1.0);
            out[1] += term / (nf + 2.0);
            out[2] += term / (nf + 3.0);
            term = term * z / (nf + 1.0);
            if term.norm_sqr() < 1e-36 {
                break;
            }
        }
        out
    } else {
        let ez = z.exp();
        let e0 = (ez - 1.0) / z;
        let e1 = (ez - e0) / z;
        let e2 = (ez - 2.0 * e1) / z;
        [e0, e1, e2]
    }
}

/// The triangle integrals `T_ij(p, q) = integral_{0 <= s <= x <= 1} s^i x^j
/// e^{p s + q x} ds dx`, returned as `[T00, T10, T01, T11]`.
///
/// Three stable regimes: |p| large (inner integral in closed form, divided by
/// p), |q| large (order of integration swapped, divided by q), both small
/// (double Taylor series, `sum p^a q^b / (a! b! (a+i+1)(a+b+i+j+2))`).
pub(crate) fn triangle(p: C, q: C) -> [C; 4] {
    const SMALL: f64 = 0.5;
    if p.norm() >= SMALL {
        triangle_large_p(p, q)
    } else if q.norm() >= SMALL {
        triangle_large_q(p, q)
    } else {
        triangle_series(p, q)
    }
}

/// Inner integral in closed form: `T_0j = (E_j(p+q) - E_j(q)) / p`,
/// `T_1j = (E_{j+1}(p+q) - T_0j) / p`.
fn triangle_large_p(p: C, q: C) -> [C; 4] {
    let s = phi012(p + q);
    let eq = phi012(q);
    let t00 = (s[0] - eq[0]) / p;
    let t01 = (s[1] - eq[1]) / p;
    let t10 = (s[1] - t00) / p;
    let t11 = (s[2] - t01) / p;
    [t00, t10, t01, t11]
}

/// Order swapped, outer integral in closed form:
/// `T_i0 = (e^q E_i(p) - E_i(p+q)) / q`, `T_i1 = (e^q E_i(p) - E_{i+1}(p+q) - T_i0) / q`.
fn triangle_large_q(p: C, q: C) -> [C; 4] {
    let s = phi012(p + q);
    let ep = phi012(p);
    let exq = q.exp();
    let t00 = (exq * ep[0] - s[0]) / q;
    let t10 = (exq * ep[1] - s[1]) / q;
    let t01 = (exq * ep[0] - s[1] - t00) / q;
    let t11 = (exq * ep[1] - s[2] - t10) / q;
    [t00, t10, t01, t11]
}

/// Double Taylor series; for |p|, |q| < 1/2 the terms of total degree n are
/// bounded by 1/n!, and n <= 18 leaves less than 1e-16.
fn triangle_series(p: C, q: C) -> [C; 4] {
    const N: usize = 19;
    let mut pa = [C::new(1.0, 0.0); N];
    let mut qb = [C::new(1.0, 0.0); N];
    for a in 1..N {
        pa[a] = pa[a - 1] * p / a as f64;
        qb[a] = qb[a - 1] * q / a as f64;
    }
    let mut t = [C::new(0.0, 0.0); 4];
    for (a, pa_a) in pa.iter().enumerate() {
        for (b, qb_b) in qb.iter().enumerate().take(N - a) {
            let w = pa_a * qb_b;
            let (af, bf) = (a as f64, b as f64);
            t[0] += w / ((af + 1.0) * (af + bf + 2.0));
            t[1] += w / ((af + 2.0) * (af + bf + 3.0));
            t[2] += w / ((af + 1.0) * (af + bf + 3.0));
            t[3] += w / ((af + 2.0) * (af + bf + 4.0));
        }
    }
    t
}

/// Largest number of panels in one refinement level of a first-order integral.
const MAX_PANELS: usize = 1 << 20;
/// Largest number of panels in one refinement level of a second-order march.
pub(crate) const MAX_PANELS_NESTED: usize = 1 << 17;
/// Relative convergence target of the refinement.
pub(crate) const RTOL: f64 = 1e-10;
/// Absolute convergence floor, relative to the L1 norm of the integrand.
pub(crate) const ATOL_L1: f64 = 1e-14;
/// Deepest Richardson column.
const RICHARDSON_COLUMNS: usize = 4;

/// Segments `(a, b, panels)` of `[lo, hi]`: cut at every breakpoint of the
/// given views (edges, sample times, support ends), each cut into enough
/// panels to resolve the envelopes active there and the phase curvature
/// `kappa` (|kappa| h^2 / 4 <= 0.1 rad, the largest deviation of the phase
/// from its chord on a panel). Outside the support of a Gaussian or sech
/// (where it is below 1e-8 and falling) the panels grow geometrically with
/// the distance from the support, so a long interval costs only a few more.
pub(crate) fn segments(
    views: &[(&FieldView<'_>, f64)],
    lo: f64,
    hi: f64,
    out: &mut Vec<(f64, f64, usize)>,
) {
    out.clear();
    let mut cuts: Vec<f64> = vec![lo, hi];
    for (v, _) in views {
        v.breakpoints(|t| {
            if t > lo && t < hi {
                cuts.push(t);
            }
        });
        if v.is_smooth_infinite() {
            let (sa, sb) = v.support();
            let hw = 0.5 * (sb - sa);
            for k in 1..60 {
                let d = hw * (2f64.powi(k) - 1.0);
                let (below, above) = (sa - d, sb + d);
                if below > lo && below < hi {
                    cuts.push(below);
                }
                if above > lo && above < hi {
                    cuts.push(above);
                }
                if below <= lo && above >= hi {
                    break;
                }
            }
        }
    }
    cuts.sort_by(f64::total_cmp);
    cuts.dedup();
    for w in cuts.windows(2) {
        let (a, b) = (w[0], w[1]);
        let len = b - a;
        if len.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
            continue;
        }
        let mut h = f64::INFINITY;
        for (v, kappa) in views {
            let (sa, sb) = v.support();
            if sb <= a || sa >= b {
                // Finite shapes are exactly zero here; the smooth infinite
                // ones are below 1e-8 of their peak.
                if v.is_smooth_infinite() {
                    let dist = if b <= sa { sa - b } else { a - sb };
                    h = h.min(v.panel_width().max(dist));
                }
                continue;
            }
            h = h.min(v.panel_width());
            if *kappa != 0.0 {
                h = h.min((0.4 / kappa.abs()).sqrt());
            }
        }
        let n = (len / h).ceil();
        let n = if n.is_finite() && n >= 1.0 {
            n.min(MAX_PANELS as f64) as usize
        } else {
            1
        };
        out.push((a, b, n));
    }
}

/// Richardson (Romberg) extrapolation of a sequence of refinements that halve
/// the panel width, for vectors of complex values whose error expands in h^2.
pub(crate) struct Richardson {
    prev: Vec<Vec<C>>,
    best_prev: Option<Vec<C>>,
    level: usize,
}

impl Richardson {
    pub(crate) fn new() -> Self {
        Richardson {
            prev: Vec::new(),
            best_prev: None,
            level: 0,
        }
    }

    /// Feed the values of the next level; returns the current best values and
    /// the size of the last change (max norm), `None` on the first level.
    pub(crate) fn push(&mut self, values: Vec<C>) -> (Vec<C>, Option<f64>) {
        let cols = self.level.min(RICHARDSON_COLUMNS);
        let mut row: Vec<Vec<C>> = Vec::with_capacity(cols + 1);
        row.push(values);
        for j in 1..=cols {
            let factor = 4f64.powi(j as i32) - 1.0;
            let v: Vec<C> = row[j - 1]
                .iter()
                .zip(&self.prev[j - 1])
                .map(|(a, b)| a + (a - b) / factor)
                .collect();
            row.push(v);
        }
        let best = row[cols].clone();
        let change = self.best_prev.as_ref().map(|bp| {
            best.iter()
                .zip(bp)
                .map(|(a, b)| (a - b).norm())
                .fold(0.0, f64::max)
        });
        self.prev = row;
        self.best_prev = Some(best.clone());
        self.level += 1;
        (best, change)
    }
}

/// Filon-type quadrature of `integral_lo^hi f(t) exp(i [nu u + kappa u^2]) dt`,
/// `u = t - t_c`, for one field view. On each panel f is taken linear and the
/// phase linear between its end values, and that product is integrated
/// exactly, so any detuning is handled without resolving its oscillation;
/// panels are chosen from the envelope features and the phase curvature, then
/// halved with Richardson extrapolation until two levels agree to
/// `RTOL` relative (floor `ATOL_L1` times `integral |f|`, or `abs_floor` if
/// larger).
pub(crate) fn filon(
    view: &FieldView<'_>,
    lo: f64,
    hi: f64,
    nu: f64,
    kappa: f64,
    abs_floor: f64,
) -> Result<C, EstimateError> {
    if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) {
        return Ok(C::new(0.0, 0.0));
    }
    let tc = view.tc;
    let mut segs = Vec::new();
    segments(&[(view, kappa)], lo, hi, &mut segs);
    let base: usize = segs.iter().map(|s| s.2).sum();
    let mut rich = Richardson::new();
    let mut level = 0u32;
    loop {
        let mult = 1usize << level;
        let mut sum = C::new(0.0, 0.0);
        let mut l1 = 0.0;
        for &(a, b, n) in &segs {
            let n = n * mult;
            let h = (b - a) / n as f64;
            let mut t0 = a;
            let mut f0 = view.value(a);
            for i in 1..=n {
                let t1 = if i == n { b } else { a + i as f64 * h };
                // A panel is closed on the left and right by its nodes; the
                // envelope is evaluated just inside segment ends so that a
                // jump at a breakpoint is seen from the correct side.
                let f1 = if i == n {
                    view.value_left_of(b)
                } else {
                    view.value(t1)
                };
                let f0_in = if i == 1 { view.value_right_of(a) } else { f0 };
                let hh = t1 - t0;
                let dth = nu * hh + kappa * hh * (t1 + t0 - 2.0 * tc);
                if f0_in != 0.0 || f1 != 0.0 {
                    let u0 = t0 - tc;
                    let e = phi012(C::new(0.0, dth));
                    let cis0 = C::from_polar(1.0, nu * u0 + kappa * u0 * u0);
                    sum += cis0 * (e[0] * f0_in + e[1] * (f1 - f0_in)) * hh;
                    l1 += 0.5 * hh * (f0_in.abs() + f1.abs());
                }
                t0 = t1;
                f0 = f1;
            }
        }
        if !sum.re.is_finite() || !sum.im.is_finite() {
            return Err(EstimateError::NonFinite("envelope quadrature".into()));
        }
        let (best, change) = rich.push(vec![sum]);
        let value = best[0];
        if let Some(ch) = change {
            if ch <= RTOL * value.norm() + (ATOL_L1 * l1).max(abs_floor) {
                return Ok(value);
            }
        }
        level += 1;
        if base.saturating_mul(1 << level) > MAX_PANELS || level > 20 {
            return Ok(value);
        }
    }
}

/// Quadrature of an envelope's spectrum with a quadratic phase:
/// `integral_{interval} f(t) exp(i [nu (t - t_c) + kappa (t - t_c)^2]) dt`,
/// `t_c` the envelope centre, by the Filon-type rule of this module (see
/// `filon`). Public so that callers and tests can compare it with
/// [`envelope_spectrum`].
pub fn envelope_spectrum_quadrature(
    env: &Envelope,
    nu: f64,
    kappa: f64,
    interval: (f64, f64),
) -> Result<C, EstimateError> {
    env.check().map_err(EstimateError::InvalidArgument)?;
    if !(nu.is_finite() && kappa.is_finite() && interval.0.is_finite() && interval.1.is_finite()) {
        return Err(EstimateError::InvalidArgument(format!(
            "spectrum quadrature needs finite numbers (nu {nu}, kappa {kappa}, interval {interval:?})"
        )));
    }
    let view = FieldView::bare(env);
    filon(&view, interval.0, interval.1, nu, kappa, 0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute-force triangle integrals by a fine 2-D midpoint rule.
    fn triangle_brute(p: C, q: C) -> [C; 4] {
        let n = 1500;
        let h = 1.0 / n as f64;
        let mut t = [C::new(0.0, 0.0); 4];
        for ix in 0..n {
            let x = (ix as f64 + 0.5) * h;
            // inner integral over s in [0, x] by Simpson with 200 intervals
            let m = 200;
            let hs = x / m as f64;
            let mut inner = [C::new(0.0, 0.0); 2];
            for is in 0..=m {
                let s = is as f64 * hs;
                let w = if is == 0 || is == m {
                    1.0
                } else if is % 2 == 1 {
                    4.0
                } else {
                    2.0
                };
                let e = (p * s).exp() * w * hs / 3.0;
                inner[0] += e;
                inner[1] += e * s;
            }
            let ex = (q * x).exp() * h;
            t[0] += inner[0] * ex;
            t[1] += inner[1] * ex;
            t[2] += inner[0] * ex * x;
            t[3] += inner[1] * ex * x;
        }
        t
    }

    /// Every one of the four triangle integrals within `tol` of the other's.
    fn assert_close(a: &[C; 4], b: &[C; 4], tol: f64, case: &str) {
        for i in 0..4 {
            assert!(
                (a[i] - b[i]).norm() < tol,
                "{case} i={i}: {} vs {}",
                a[i],
                b[i]
            );
        }
    }

    // The three regimes of `triangle` agree with brute force (elementary
    // integrals; common practice, no source).
    #[test]
    fn triangle_regimes_match_brute_force() {
        let cases = [
            (C::new(0.0, 0.1), C::new(0.0, -0.2)),
            (C::new(0.0, 0.3), C::new(0.0, 0.45)),
            (C::new(0.0, 3.0), C::new(0.0, -2.9)),
            (C::new(0.0, -7.0), C::new(0.0, 0.2)),
            (C::new(0.0, 0.2), C::new(0.0, 5.0)),
            (C::new(0.0, 0.7), C::new(0.0, -0.6)),
        ];
        for (p, q) in cases {
            let a = triangle(p, q);
            let b = triangle_brute(p, q);
            assert_close(&a, &b, 2e-6, &format!("p={p} q={q}"));
        }
    }

    // The three regimes agree with each other where they meet (|p|, |q| near
    // 1/2), so the switch between them is seamless.
    #[test]
    fn triangle_regimes_agree_at_the_switches() {
        for &(p, q) in &[
            (0.5, 0.3),
            (0.3, 0.5),
            (0.5, -0.49),
            (-0.49, 0.5),
            (0.45, 0.45),
        ] {
            let (p, q) = (C::new(0.0, p), C::new(0.0, q));
            let a = triangle_large_p(p, q);
            let b = triangle_large_q(p, q);
            let c = triangle_series(p, q);
            assert_close(&a, &c, 1e-14, &format!("large p, {p} {q}"));
            assert_close(&b, &c, 1e-14, &format!("large q, {p} {q}"));
        }
    }

    #[test]
    fn phi_series_and_recurrence_agree() {
        for &y in &[0.999_999, 1.000_001] {
            let a = phi012(C::new(0.0, y));
            // E_0(iy) = (e^{iy} - 1) / (iy)
            let z = C::new(0.0, y);
            let e0 = (z.exp() - 1.0) / z;
            assert!((a[0] - e0).norm() < 1e-14);
            let e1 = (z.exp() - e0) / z;
            assert!((a[1] - e1).norm() < 1e-13);
        }
    }
}
