//! The sin^2 pulse: f = sin^2(pi (t - start) / duration) on [start, start + duration].
//!
//! Owns: every formula of this one profile (value, area, shortest feature,
//! FWHM, spectrum); what all pulses of finite support share is in
//! `finite.rs`. Must not: know of other shapes, of units or of the scheme
//! format.

use std::f64::consts::PI;

use super::finite::{Finite, Profile};
use super::{cap_line, sine_over_poles, Envelope};

/// The sin^2 profile.
pub(crate) struct Sin2;

// Same header as rectangular.rs and blackman.rs (NAME, variant, value): one Profile impl each.
impl Profile for Sin2 {
    const NAME: &'static str = "sin2";

    fn variant(start: f64, duration: f64) -> Envelope {
        Envelope::Sin2 { start, duration }
    }

    #[inline]
    fn value(p: &Finite<Self>, t: f64) -> f64 {
        let x = (t - p.start) / p.duration;
        if (0.0..=1.0).contains(&x) {
            let s = (PI * x).sin();
            s * s
        } else {
            0.0
        }
    }

    fn area(p: &Finite<Self>) -> f64 {
        0.5 * p.duration
    }

    fn shortest_feature(p: &Finite<Self>) -> f64 {
        p.duration / 4.0
    }

    /// sin^4(pi x) = 1/2 at x = asin(2^{-1/4}) / pi: `D (1 - 2 asin(2^{-1/4}) / pi)`.
    fn intensity_fwhm(p: &Finite<Self>) -> Option<f64> {
        Some(p.duration * (1.0 - 2.0 * (2f64.powf(-0.25)).asin() / PI))
    }

    /// `f = 1/2 + cos(a u)/2` on `|u| < D/2`, `a = 2 pi/D`: a sum of three
    /// shifted rectangle transforms that collapses to
    /// `-a^2 sin(nu D/2) / (nu (nu^2 - a^2))`.
    fn spectrum(p: &Finite<Self>, nu: f64) -> Option<f64> {
        let a = 2.0 * PI / p.duration;
        Some(sine_over_poles(nu, p.duration, &[0, 1, -1], -a * a))
    }

    /// `a^2 / (|nu| |nu^2 - a^2|)`, capped by the area.
    fn spectrum_bound(p: &Finite<Self>, nu: f64) -> Option<f64> {
        let nu = nu.abs();
        let a = 2.0 * PI / p.duration;
        Some(cap_line(
            a * a / (nu * (nu * nu - a * a).abs()),
            Self::area(p).abs(),
        ))
    }
}
