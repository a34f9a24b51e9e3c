//! The rectangular pulse: f = 1 on [start, start + duration), 0 elsewhere.
//!
//! Owns: every formula of this one shape (value, centre, area, support,
//! lengths, spectrum, stretch, parameter check). Must not: know of other
//! shapes, of units or of the scheme format.

use super::{cap_line, sinc, Envelope, Shape};

/// Parameters of a rectangular pulse (s).
#[derive(Clone, Copy)]
pub(crate) struct Rectangular {
    pub start: f64,
    pub duration: f64,
}

impl Shape for Rectangular {
    const NAME: &'static str = "rectangular";

    #[inline]
    fn value(&self, t: f64) -> f64 {
        if t >= self.start && t < self.start + self.duration {
            1.0
        } else {
            0.0
        }
    }

    fn center(&self) -> f64 {
        self.start + 0.5 * self.duration
    }

    fn area(&self) -> f64 {
        self.duration
    }

    fn support(&self) -> (f64, f64) {
        (self.start, self.start + self.duration)
    }

    fn shortest_feature(&self) -> f64 {
        self.duration
    }

    fn breakpoints(&self) -> Vec<f64> {
        vec![self.start, self.start + self.duration]
    }

    /// The intensity is 1 over the whole pulse: the FWHM is the duration.
    fn intensity_fwhm(&self) -> Option<f64> {
        Some(self.duration)
    }

    fn length(&self) -> f64 {
        self.duration
    }

    fn span(&self) -> Option<f64> {
        Some(self.duration)
    }

    /// `D sinc(nu D / 2)`.
    fn spectrum(&self, nu: f64) -> Option<f64> {
        Some(self.duration * sinc(nu * self.duration / 2.0))
    }

    /// `2 / |nu|`, capped by the area.
    fn spectrum_bound(&self, nu: f64) -> Option<f64> {
        let nu = nu.abs();
        Some(cap_line(2.0 / nu, self.area().abs()))
    }

    fn stretched(&self, s: f64) -> Envelope {
        let (start, duration) = super::stretched_span(self.start, self.duration, self.center(), s);
        Envelope::Rectangular { start, duration }
    }

    fn has_oscillating_line(&self) -> bool {
        true
    }

    fn check(&self) -> Result<(), String> {
        super::check_span(self.start, self.duration)
    }
}
