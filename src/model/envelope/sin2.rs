//! The sin^2 pulse: f = sin^2(pi (t - start) / duration) on [start, start + duration].
//!
//! Owns: every formula of this one shape (value, centre, area, support,
//! lengths, spectrum, stretch, parameter check). Must not: know of other
//! shapes, of units or of the scheme format.

use std::f64::consts::PI;

use super::{cap_line, sine_over_poles, Envelope, Shape};

/// Parameters of a sin^2 pulse (s).
#[derive(Clone, Copy)]
pub(crate) struct Sin2 {
    pub start: f64,
    pub duration: f64,
}

impl Shape for Sin2 {
    const NAME: &'static str = "sin2";

    #[inline]
    fn value(&self, t: f64) -> f64 {
        let x = (t - self.start) / self.duration;
        if (0.0..=1.0).contains(&x) {
            let s = (PI * x).sin();
            s * s
        } else {
            0.0
        }
    }

    fn center(&self) -> f64 {
        self.start + 0.5 * self.duration
    }

    fn area(&self) -> f64 {
        0.5 * self.duration
    }

    fn support(&self) -> (f64, f64) {
        (self.start, self.start + self.duration)
    }

    fn shortest_feature(&self) -> f64 {
        self.duration / 4.0
    }

    fn breakpoints(&self) -> Vec<f64> {
        vec![self.start, self.start + self.duration]
    }

    /// sin^4(pi x) = 1/2 at x = asin(2^{-1/4}) / pi: `D (1 - 2 asin(2^{-1/4}) / pi)`.
    fn intensity_fwhm(&self) -> Option<f64> {
        Some(self.duration * (1.0 - 2.0 * (2f64.powf(-0.25)).asin() / PI))
    }

    fn length(&self) -> f64 {
        self.duration
    }

    fn span(&self) -> Option<f64> {
        Some(self.duration)
    }

    /// `f = 1/2 + cos(a u)/2` on `|u| < D/2`, `a = 2 pi/D`: a sum of three
    /// shifted rectangle transforms that collapses to
    /// `-a^2 sin(nu D/2) / (nu (nu^2 - a^2))`.
    fn spectrum(&self, nu: f64) -> Option<f64> {
        let a = 2.0 * PI / self.duration;
        Some(sine_over_poles(nu, self.duration, &[0, 1, -1], -a * a))
    }

    /// `a^2 / (|nu| |nu^2 - a^2|)`, capped by the area.
    fn spectrum_bound(&self, nu: f64) -> Option<f64> {
        let nu = nu.abs();
        let a = 2.0 * PI / self.duration;
        Some(cap_line(
            a * a / (nu * (nu * nu - a * a).abs()),
            self.area().abs(),
        ))
    }

    fn stretched(&self, s: f64) -> Envelope {
        let (start, duration) = super::stretched_span(self.start, self.duration, self.center(), s);
        Envelope::Sin2 { start, duration }
    }

    fn has_oscillating_line(&self) -> bool {
        true
    }

    fn check(&self) -> Result<(), String> {
        super::check_span(self.start, self.duration)
    }
}
