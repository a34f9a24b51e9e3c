//! The Gaussian pulse: f = exp(-(t - center)^2 / (2 sigma^2)), sigma of the
//! amplitude.
//!
//! Owns: every formula of this one shape (value, centre, area, support,
//! lengths, spectrum, stretch, parameter check) and the conversion from the
//! scheme's intensity FWHM. Must not: know of other shapes, of units or of
//! the scheme format.

use std::f64::consts::PI;

use super::{Envelope, Shape, TAIL_CUTOFF};

/// Parameters of a Gaussian pulse (s).
#[derive(Clone, Copy)]
pub(crate) struct Gaussian {
    pub center: f64,
    pub sigma: f64,
}

/// sigma = FWHM / (2 sqrt(2 ln 2)) for the *amplitude*; the scheme's FWHM is
/// of the intensity |f|^2, whose sigma is sigma/sqrt(2), so
/// sigma_amplitude = FWHM_intensity / (2 sqrt(ln 2)).
pub fn gaussian_sigma_from_intensity_fwhm(fwhm: f64) -> f64 {
    fwhm / (2.0 * (2.0f64.ln()).sqrt())
}

// Same shape as sech.rs: the other smooth shape, each method its own formula.
impl Shape for Gaussian {
    const NAME: &'static str = "gaussian";

    #[inline]
    fn value(&self, t: f64) -> f64 {
        let x = (t - self.center) / self.sigma;
        (-0.5 * x * x).exp()
    }

    fn center(&self) -> f64 {
        self.center
    }

    fn area(&self) -> f64 {
        self.sigma * (2.0 * PI).sqrt()
    }

    /// Where f falls below [`TAIL_CUTOFF`].
    fn support(&self) -> (f64, f64) {
        let half = self.sigma * (-2.0 * TAIL_CUTOFF.ln()).sqrt();
        (self.center - half, self.center + half)
    }

    fn shortest_feature(&self) -> f64 {
        self.sigma
    }

    fn breakpoints(&self) -> Vec<f64> {
        Vec::new()
    }

    /// `exp(-x^2) = 1/2` at `x = sqrt(ln 2)`: `2 sqrt(ln 2) sigma`.
    fn intensity_fwhm(&self) -> Option<f64> {
        Some(2.0 * 2f64.ln().sqrt() * self.sigma)
    }

    /// The intensity FWHM, as the scheme's `fwhm` key.
    fn length(&self) -> f64 {
        2.0 * 2f64.ln().sqrt() * self.sigma
    }

    fn span(&self) -> Option<f64> {
        None
    }

    /// `sigma sqrt(2 pi) exp(-nu^2 sigma^2 / 2)`.
    fn spectrum(&self, nu: f64) -> Option<f64> {
        let x = nu * self.sigma;
        Some(self.sigma * (2.0 * PI).sqrt() * (-0.5 * x * x).exp())
    }

    fn stretched(&self, s: f64) -> Envelope {
        Envelope::Gaussian {
            center: self.center,
            sigma: self.sigma * s,
        }
    }

    fn check(&self) -> Result<(), String> {
        super::finite(self.center, "center")?;
        super::positive(self.sigma, "sigma")
    }
}
