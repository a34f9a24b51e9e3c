//! The weak-drive rate-equation estimate of populations that arrive by
//! spontaneous emission: the open-system partner of the first-order
//! estimate.
//!
//! Owns: [`DecaySource`], the scattering rate and saturation parameter of a
//! drive into a decaying level, the integral of f(t)^2 over the window, and
//! the reliability rule of these estimates. Must not: call the propagators,
//! follow cascades of decays (one absorption, one emission), print, or know
//! about output formats.
//!
//! # What is computed
//!
//! For each drive (field L on a coupling) with one end `a` initially
//! populated and the other end `e` decaying (`gamma_e > 0`) with a non-empty
//! `decays_to`, the weak-drive (rate-equation) scattering rate at the
//! envelope peak is
//!
//! `R = (Omega^2 / G) / (1 + (2 Delta / G)^2) = Omega^2 G / (G^2 + 4 Delta^2)`
//!
//! with Omega the drive's peak Rabi frequency, Delta its detuning at the
//! envelope centre (rad/s) and G the homogeneous FWHM (rad/s) of the a-e
//! line: `G = gamma_e + gamma_a + 2 (dephasing_a + dephasing_e) + w_L`,
//! `w_L` the field's angular linewidth FWHM. G is twice the decay rate of
//! the coherence rho_ae in the density-matrix equation, so the formula is
//! the steady state of that equation at weak drive (for G = gamma_e the
//! textbook two-level rate; the laser line, a Lorentzian, convolved with the
//! atomic one, keeps the area and adds the widths). Approximation: the
//! extra widths broaden the Lorentzian at fixed area; chirp and the
//! counter-rotating term are ignored (Delta at the envelope centre).
//! The expected number of scattered photons is
//! `N = p_a R integral_window f(t)^2 dt` (`p_a` the initial population of
//! `a`, for a mixture and for the coherent map alike: interference between
//! two initial levels feeding the same `e` is not estimated), and the
//! population pumped into each `k` of `decays_to` is `N b_k`.
//!
//! Saturation parameter `s = 2 R / gamma_e` (= `2 Omega^2 / Gamma^2 /
//! (1 + (2 Delta / Gamma)^2)` when G = Gamma). The estimate is marked not
//! reliable when `s > 0.1`, when the population leaving `a` through `e`,
//! `N (1 - b_{e->a})`, exceeds 0.1 (depletion), or when `G integral f^2 dt
//! < 10` (the pulse is not long against the line's coherence time: the
//! switching transients, of relative size ~1/(G T), are not in the rate).

use super::view::FieldView;
use super::{finite, Ctx, EstimateError};
use crate::model::Window;

/// Saturation parameter above which a decay-fed estimate is not reliable.
pub const SATURATION_LIMIT: f64 = 0.1;
/// Population leaving the initial level above which it is not reliable.
pub const DEPLETION_LIMIT: f64 = 0.1;
/// Smallest `G * integral f^2 dt` (line width times effective pulse length)
/// for a reliable rate estimate.
pub const MIN_WIDTH_TIMES_LENGTH: f64 = 10.0;

/// Population that arrives in a level by spontaneous emission from a level
/// one drive excites: absorption (or stimulated emission) `from -> via` by
/// `drive`, then decay `via -> this level`.
#[derive(Debug, Clone, PartialEq)]
pub struct DecaySource {
    /// Index into `Model::drives`.
    pub drive: usize,
    /// The initially populated level the drive takes population from.
    pub from: usize,
    /// The decaying level (the drive's other end).
    pub via: usize,
    /// Detuning of the drive, `omega_L - omega_ab` (rad/s), envelope centre.
    pub detuning: f64,
    /// Peak Rabi frequency (rad/s).
    pub rabi: f64,
    /// Homogeneous FWHM of the line used in the rate (rad/s).
    pub width: f64,
    /// Scattering rate at the envelope peak, R (1/s).
    pub rate: f64,
    /// Saturation parameter `2 R / gamma_via`.
    pub saturation: f64,
    /// Expected scattered photons through `via` from this drive, N.
    pub scattered: f64,
    /// The population pumped into this level: `N b`.
    pub population: f64,
    /// Within the validity limits above.
    pub reliable: bool,
}

/// Every decay source, as `(level fed, source)`, levels in any order.
pub(crate) fn decay_sources(ctx: &Ctx<'_>) -> Result<Vec<(usize, DecaySource)>, EstimateError> {
    let m = ctx.model;
    let mut out = Vec::new();
    for (i, d) in m.drives.iter().enumerate() {
        if d.rabi == 0.0 {
            continue;
        }
        let c = &m.couplings[d.coupling];
        for (from, via) in [(c.lower, c.upper), (c.upper, c.lower)] {
            let e = &m.levels[via];
            let branches = m.branches(via);
            if ctx.p(from) <= 0.0 || e.gamma <= 0.0 || branches.is_empty() {
                continue;
            }
            let a = &m.levels[from];
            let field = &m.fields[d.field];
            let width = e.gamma + a.gamma + 2.0 * (a.dephasing + e.dephasing) + field.linewidth;
            let rabi = ctx.rabi(i);
            let detuning = m.detuning(d);
            let rate = scattering_rate(rabi, detuning, width);
            let saturation = 2.0 * rate / e.gamma;
            let length = intensity_integral(&ctx.views[d.field], ctx.window);
            let what = || {
                format!(
                    "decay-fed estimate via '{}' from '{}' by field '{}'",
                    e.id, a.id, field.id
                )
            };
            let scattered = finite(ctx.p(from) * rate * length, what)?;
            finite(saturation, what)?;
            let back: f64 = branches
                .iter()
                .filter(|(k, _)| *k == from)
                .map(|(_, b)| b)
                .sum();
            let reliable = saturation <= SATURATION_LIMIT
                && scattered * (1.0 - back) <= DEPLETION_LIMIT
                && width * length >= MIN_WIDTH_TIMES_LENGTH;
            for &(k, b) in &branches {
                if ctx.p(k) > 0.0 {
                    continue;
                }
                out.push((
                    k,
                    DecaySource {
                        drive: i,
                        from,
                        via,
                        detuning,
                        rabi,
                        width,
                        rate,
                        saturation,
                        scattered,
                        population: scattered * b,
                        reliable,
                    },
                ));
            }
        }
    }
    Ok(out)
}

/// Weak-drive scattering rate `Omega^2 G / (G^2 + 4 Delta^2)` (1/s) for a
/// line of FWHM G (rad/s).
pub fn scattering_rate(rabi: f64, detuning: f64, width: f64) -> f64 {
    rabi * rabi * width / (width * width + 4.0 * detuning * detuning)
}

/// Gauss-Legendre nodes and weights on [-1, 1], five points (exact for
/// polynomials up to degree 9).
const GL5: [(f64, f64); 5] = [
    (0.0, 0.568_888_888_888_888_9),
    (-0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (-0.906_179_845_938_664, 0.236_926_885_056_189_1),
    (0.906_179_845_938_664, 0.236_926_885_056_189_1),
];

/// `integral f(t)^2 dt` over the window (all time when the context has
/// none): five-point Gauss-Legendre on panels between the envelope's
/// breakpoints, no wider than its linear panel width, halved until two
/// passes agree to 1e-12 relative (exact at once for rectangles and sampled
/// envelopes, whose f^2 is piecewise quadratic).
pub(crate) fn intensity_integral(view: &FieldView<'_>, window: Option<Window>) -> f64 {
    let (sa, sb) = view.support();
    let (lo, hi) = match window {
        None => (sa, sb),
        Some(w) => (sa.max(w.start), sb.min(w.end)),
    };
    if hi <= lo {
        return 0.0;
    }
    let mut cuts = vec![lo, hi];
    view.breakpoints(|t| {
        if t > lo && t < hi {
            cuts.push(t);
        }
    });
    cuts.sort_by(f64::total_cmp);
    cuts.dedup();
    let width = view.panel_width();
    let pass = |split: f64| -> f64 {
        let mut sum = 0.0;
        for w in cuts.windows(2) {
            let (a, b) = (w[0], w[1]);
            let n = if width.is_finite() {
                ((b - a) / (width / split)).ceil().clamp(1.0, 1e6)
            } else {
                split
            };
            // n is integral, positive and at most 1e6.
            let pieces = n as usize;
            let h = (b - a) / n;
            for j in 0..pieces {
                let mid = a + h * (j as f64 + 0.5);
                for (x, wt) in GL5 {
                    let f = view.value(mid + 0.5 * h * x);
                    sum += 0.5 * h * wt * f * f;
                }
            }
        }
        sum
    };
    let mut split = 1.0;
    let mut last = pass(split);
    for _ in 0..8 {
        split *= 2.0;
        let next = pass(split);
        let done = (next - last).abs() <= 1e-12 * next.abs();
        last = next;
        if done {
            break;
        }
    }
    last
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Envelope, BLACKMAN};

    fn integral(env: &Envelope) -> f64 {
        let (sa, sb) = env.support();
        let d = sb - sa;
        // A window well beyond the support: the whole pulse.
        let window = Window {
            start: sa - d,
            end: sb + d,
        };
        intensity_integral(&FieldView::bare(env), Some(window))
    }

    /// Closed forms of integral f^2 (common practice, no source: each is an
    /// elementary integral of the shape's definition).
    #[test]
    fn intensity_integral_matches_closed_forms() {
        let d = 2e-6;
        let cases = [
            (
                Envelope::Rectangular {
                    start: 1e-6,
                    duration: d,
                },
                d,
            ),
            (
                Envelope::Gaussian {
                    center: 0.0,
                    sigma: 3e-7,
                },
                3e-7 * std::f64::consts::PI.sqrt(),
            ),
            (
                Envelope::Sech {
                    center: 0.0,
                    tau: 2e-7,
                },
                2.0 * 2e-7,
            ),
            (
                Envelope::Sin2 {
                    start: 0.0,
                    duration: d,
                },
                3.0 * d / 8.0,
            ),
            (
                Envelope::Blackman {
                    start: 0.0,
                    duration: d,
                },
                d * (BLACKMAN.0.powi(2) + BLACKMAN.1.powi(2) / 2.0 + BLACKMAN.2.powi(2) / 2.0),
            ),
            (
                Envelope::Samples {
                    times: vec![0.0, 1e-6, 3e-6],
                    values: vec![0.0, 1.0, 0.5],
                },
                // integral of (t/1us)^2 over 1 us, then of a line from 1 to 0.5 over 2 us
                1e-6 / 3.0 + 2e-6 * (1.0 + 0.5 + 0.25) / 3.0,
            ),
        ];
        for (env, want) in cases {
            let got = integral(&env);
            // Gaussian and sech: the support is cut at the 1e-8 tail (f^2 1e-16).
            assert!(
                (got - want).abs() <= 1e-9 * want,
                "{}: {got} vs {want}",
                env.shape_name()
            );
        }
    }

    /// The two-level weak-drive rate (Foot, Atomic Physics (2005), the
    /// scattering rate of a two-level atom, from memory):
    /// on resonance Omega^2 / Gamma, at Delta = Gamma/2 half of it.
    #[test]
    fn scattering_rate_is_the_lorentzian() {
        let (om, g) = (1e6, 3e7);
        assert!((scattering_rate(om, 0.0, g) - om * om / g).abs() < 1e-12 * om * om / g);
        assert!((scattering_rate(om, g / 2.0, g) - 0.5 * om * om / g).abs() < 1e-12 * om * om / g);
    }
}
