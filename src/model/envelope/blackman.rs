//! The Blackman window: f = a0 - a1 cos(2 pi x) + a2 cos(4 pi x),
//! x = (t - start) / duration in [0, 1], with (a0, a1, a2) = [`BLACKMAN`].
//!
//! Owns: every formula of this one profile (value, area, shortest feature,
//! FWHM, spectrum); what all pulses of finite support share is in
//! `finite.rs`. Must not: know of other shapes, of units or of the scheme
//! format.

use std::f64::consts::PI;

use super::finite::{Finite, Profile};
use super::{cap_line, sine_over_poles, Envelope};

/// Blackman window coefficients (a0, a1, a2).
pub const BLACKMAN: (f64, f64, f64) = (0.42, 0.5, 0.08);

/// The Blackman profile.
pub(crate) struct Blackman;

/// Coefficients of the transform numerator
/// `N(nu) = c4 nu^4 + c2 a^2 nu^2 + c0 a^4` (see the spectrum of [`Blackman`]).
fn numerator() -> (f64, f64, f64) {
    let (a0, a1, a2) = BLACKMAN;
    let mut c4 = a0 - a1 + a2;
    // For the standard coefficients (0.42, 0.5, 0.08) c4 is exactly 0: the
    // window and its first derivative vanish at the ends. Keep that exact.
    if c4.abs() < 1e-12 {
        c4 = 0.0;
    }
    (c4, -5.0 * a0 + 4.0 * a1 - a2, 4.0 * a0)
}

/// Fraction of the total duration of a Blackman window over which its
/// intensity exceeds half its peak (about 0.2876), by bisection.
pub(crate) fn fwhm_fraction() -> f64 {
    let (a0, a1, a2) = BLACKMAN;
    let f = |x: f64| a0 - a1 * (2.0 * PI * x).cos() + a2 * (4.0 * PI * x).cos();
    let target = std::f64::consts::FRAC_1_SQRT_2;
    let (mut lo, mut hi) = (0.0, 0.5);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if f(mid) < target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    1.0 - 2.0 * 0.5 * (lo + hi)
}

// Same header as rectangular.rs and sin2.rs (NAME, variant, value): one Profile impl each.
impl Profile for Blackman {
    const NAME: &'static str = "blackman";

    fn variant(start: f64, duration: f64) -> Envelope {
        Envelope::Blackman { start, duration }
    }

    #[inline]
    fn value(p: &Finite<Self>, t: f64) -> f64 {
        let x = (t - p.start) / p.duration;
        if (0.0..=1.0).contains(&x) {
            let (a0, a1, a2) = BLACKMAN;
            a0 - a1 * (2.0 * PI * x).cos() + a2 * (4.0 * PI * x).cos()
        } else {
            0.0
        }
    }

    fn area(p: &Finite<Self>) -> f64 {
        BLACKMAN.0 * p.duration
    }

    fn shortest_feature(p: &Finite<Self>) -> f64 {
        p.duration / 4.0
    }

    /// About `0.2876 D` ([`fwhm_fraction`]).
    fn intensity_fwhm(p: &Finite<Self>) -> Option<f64> {
        Some(p.duration * fwhm_fraction())
    }

    /// `f = a0 + a1 cos(a u) + a2 cos(2 a u)` on `|u| < D/2`: five shifted
    /// rectangle transforms collapsing to
    /// `2 sin(nu D/2) N(nu) / (nu (nu^2 - a^2)(nu^2 - 4 a^2))` with
    /// `N = (a0 - a1 + a2) nu^4 + (-5 a0 + 4 a1 - a2) a^2 nu^2 + 4 a0 a^4`.
    fn spectrum(p: &Finite<Self>, nu: f64) -> Option<f64> {
        let a = 2.0 * PI / p.duration;
        let (c4, c2, c0) = numerator();
        let n = c4 * nu.powi(4) + c2 * a * a * nu * nu + c0 * a.powi(4);
        Some(sine_over_poles(nu, p.duration, &[0, 1, -1, 2, -2], 2.0 * n))
    }

    /// The collapsed form with the sine replaced by 1, capped by the area.
    fn spectrum_bound(p: &Finite<Self>, nu: f64) -> Option<f64> {
        let nu = nu.abs();
        let a = 2.0 * PI / p.duration;
        let (c4, c2, c0) = numerator();
        let n = c4 * nu.powi(4) + c2 * a * a * nu * nu + c0 * a.powi(4);
        let line = 2.0 * n.abs() / (nu * (nu * nu - a * a).abs() * (nu * nu - 4.0 * a * a).abs());
        Some(cap_line(line, Self::area(p).abs()))
    }
}
