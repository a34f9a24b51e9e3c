//! The rectangular pulse: f = 1 on [start, start + duration), 0 elsewhere.
//!
//! Owns: every formula of this one profile (value, area, FWHM, spectrum);
//! what all pulses of finite support share is in `finite.rs`. Must not:
//! know of other shapes, of units or of the scheme format.

use super::finite::{Finite, Profile};
use super::{cap_line, sinc, Envelope};

/// The rectangular profile.
pub(crate) struct Rectangular;

// Same header as sin2.rs and blackman.rs (NAME, variant, value): one Profile impl each.
impl Profile for Rectangular {
    const NAME: &'static str = "rectangular";

    fn variant(start: f64, duration: f64) -> Envelope {
        Envelope::Rectangular { start, duration }
    }

    #[inline]
    fn value(p: &Finite<Self>, t: f64) -> f64 {
        if t >= p.start && t < p.start + p.duration {
            1.0
        } else {
            0.0
        }
    }

    fn area(p: &Finite<Self>) -> f64 {
        p.duration
    }

    fn shortest_feature(p: &Finite<Self>) -> f64 {
        p.duration
    }

    /// The intensity is 1 over the whole pulse: the FWHM is the duration.
    fn intensity_fwhm(p: &Finite<Self>) -> Option<f64> {
        Some(p.duration)
    }

    /// `D sinc(nu D / 2)`.
    fn spectrum(p: &Finite<Self>, nu: f64) -> Option<f64> {
        Some(p.duration * sinc(nu * p.duration / 2.0))
    }

    /// `2 / |nu|`, capped by the area.
    fn spectrum_bound(p: &Finite<Self>, nu: f64) -> Option<f64> {
        let nu = nu.abs();
        Some(cap_line(2.0 / nu, Self::area(p).abs()))
    }
}
