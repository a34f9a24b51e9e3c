//! The pulses of finite support `[start, start + duration]` (rectangular,
//! sin2, Blackman): what they share, written once.
//!
//! Owns: [`Finite`], a span with a profile, the trait [`Profile`] each of
//! those shapes implements (value, area, shortest feature, FWHM, spectrum
//! and its line bound, its `Envelope` variant), and the one [`Shape`] impl
//! over them (centre, support, edges as breakpoints, the duration as length
//! and span, the stretch about the centre, the check, an oscillating line).
//! Must not: know any one profile's formulas.

use std::marker::PhantomData;

use super::{Envelope, Shape};

/// A pulse on `[start, start + duration]` (s) with the profile `P`.
pub(crate) struct Finite<P> {
    pub start: f64,
    pub duration: f64,
    profile: PhantomData<P>,
}

impl<P> Finite<P> {
    pub(crate) fn new(start: f64, duration: f64) -> Self {
        Finite {
            start,
            duration,
            profile: PhantomData,
        }
    }
}

/// What sets one pulse of finite support apart from another. Spectra follow
/// the convention of [`Shape`].
pub(crate) trait Profile: Sized {
    /// The shape's name as written in schemes.
    const NAME: &'static str;
    /// The `Envelope` variant of this profile on a span.
    fn variant(start: f64, duration: f64) -> Envelope;
    /// f(t).
    fn value(p: &Finite<Self>, t: f64) -> f64;
    /// Integral of f over all t (s).
    fn area(p: &Finite<Self>) -> f64;
    /// The shortest time scale of the shape (s).
    fn shortest_feature(p: &Finite<Self>) -> f64;
    /// Full width at half maximum of the intensity |f|^2 (s).
    fn intensity_fwhm(p: &Finite<Self>) -> Option<f64>;
    /// Closed-form spectrum over all time.
    fn spectrum(p: &Finite<Self>, nu: f64) -> Option<f64>;
    /// Upper bound on |F(nu)| following the envelope of the line, capped by
    /// the area.
    fn spectrum_bound(p: &Finite<Self>, nu: f64) -> Option<f64>;
}

impl<P: Profile> Shape for Finite<P> {
    const NAME: &'static str = P::NAME;

    #[inline]
    fn value(&self, t: f64) -> f64 {
        P::value(self, t)
    }

    fn center(&self) -> f64 {
        self.start + 0.5 * self.duration
    }

    fn area(&self) -> f64 {
        P::area(self)
    }

    fn support(&self) -> (f64, f64) {
        (self.start, self.start + self.duration)
    }

    fn shortest_feature(&self) -> f64 {
        P::shortest_feature(self)
    }

    fn breakpoints(&self) -> Vec<f64> {
        vec![self.start, self.start + self.duration]
    }

    fn intensity_fwhm(&self) -> Option<f64> {
        P::intensity_fwhm(self)
    }

    /// The duration.
    fn length(&self) -> f64 {
        self.duration
    }

    fn span(&self) -> Option<f64> {
        Some(self.duration)
    }

    fn spectrum(&self, nu: f64) -> Option<f64> {
        P::spectrum(self, nu)
    }

    fn spectrum_bound(&self, nu: f64) -> Option<f64> {
        P::spectrum_bound(self, nu)
    }

    /// The start and duration stretched by `s` about the centre `c` (the
    /// remedies' longer pulse of the same shape).
    fn stretched(&self, s: f64) -> Envelope {
        let c = self.center();
        P::variant(c + s * (self.start - c), self.duration * s)
    }

    /// A finite start, a positive finite duration.
    fn check(&self) -> Result<(), String> {
        super::finite(self.start, "start")?;
        super::positive(self.duration, "duration")
    }

    fn has_oscillating_line(&self) -> bool {
        true
    }
}
