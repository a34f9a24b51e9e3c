//! The hyperbolic-secant pulse: f = sech((t - center) / tau).
//!
//! Owns: every formula of this one shape (value, centre, area, support,
//! lengths, spectrum, stretch, parameter check). Must not: know of other
//! shapes, of units or of the scheme format.
//!
//! Its length, wherever one is reported (inspect's `length_s`, a remedy's
//! present length and length for tolerance), is the intensity FWHM
//! `2 acosh(sqrt 2) tau` (about 1.763 tau), the same definition as the
//! Gaussian's `fwhm`; `tau` is only the parameter of the formula
//! (docs/physics.md, "FWHM").

use std::f64::consts::PI;

use super::{Envelope, Shape, TAIL_CUTOFF};

/// Parameters of a sech pulse (s).
#[derive(Clone, Copy)]
pub(crate) struct Sech {
    pub center: f64,
    pub tau: f64,
}

/// sech(x) = 2 e^{-|x|} / (1 + e^{-2|x|}), without overflow for large |x|.
#[inline]
pub(crate) fn sech(x: f64) -> f64 {
    let e = (-x.abs()).exp();
    2.0 * e / (1.0 + e * e)
}

/// `sech^2(x) = 1/2` at `x = acosh(sqrt 2)`: the intensity FWHM is
/// `2 acosh(sqrt 2) tau`.
pub fn sech_intensity_fwhm(tau: f64) -> f64 {
    2.0 * 2f64.sqrt().acosh() * tau
}

// Same shape as gaussian.rs: the other smooth shape, each method its own formula.
impl Shape for Sech {
    const NAME: &'static str = "sech";

    #[inline]
    fn value(&self, t: f64) -> f64 {
        sech((t - self.center) / self.tau)
    }

    fn center(&self) -> f64 {
        self.center
    }

    fn area(&self) -> f64 {
        PI * self.tau
    }

    /// Where f falls below [`TAIL_CUTOFF`]:
    /// sech x < 2 e^{-x} = TAIL_CUTOFF  =>  x = ln(2 / TAIL_CUTOFF).
    fn support(&self) -> (f64, f64) {
        let half = self.tau * (2.0 / TAIL_CUTOFF).ln();
        (self.center - half, self.center + half)
    }

    fn shortest_feature(&self) -> f64 {
        self.tau
    }

    fn breakpoints(&self) -> Vec<f64> {
        Vec::new()
    }

    fn intensity_fwhm(&self) -> Option<f64> {
        Some(sech_intensity_fwhm(self.tau))
    }

    /// The intensity FWHM (see the module documentation).
    fn length(&self) -> f64 {
        sech_intensity_fwhm(self.tau)
    }

    fn span(&self) -> Option<f64> {
        None
    }

    /// `pi tau sech(pi nu tau / 2)`.
    fn spectrum(&self, nu: f64) -> Option<f64> {
        Some(PI * self.tau * sech(PI * nu * self.tau / 2.0))
    }

    fn stretched(&self, s: f64) -> Envelope {
        Envelope::Sech {
            center: self.center,
            tau: self.tau * s,
        }
    }

    fn check(&self) -> Result<(), String> {
        super::finite(self.center, "center")?;
        super::positive(self.tau, "tau")
    }
}
