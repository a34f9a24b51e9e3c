//! A field as the estimator sees it: its envelope, possibly replaced by
//! another shape or stretched in time about the centre, and a factor on every
//! Rabi frequency of the field. The remedy search works through these views so
//! that it never copies or edits the model.
//!
//! Must not: change the model, call the propagators, print.

use std::borrow::Cow;

use super::spectrum::envelope_spectrum;
use crate::model::{Envelope, Field};

/// One field, seen through an optional reshaping.
#[derive(Debug, Clone)]
pub(crate) struct FieldView<'a> {
    /// Envelope shape (the field's own, or a replacement centred at `tc`).
    pub env: Cow<'a, Envelope>,
    /// Centre of the original envelope: chirp reference and stretch centre.
    pub tc: f64,
    /// Time stretch s: the view's envelope is `env((t - tc)/s + tc)`.
    pub stretch: f64,
    /// Factor on the Rabi frequency of every drive of the field.
    pub rabi_factor: f64,
    /// Chirp d omega / dt (rad/s^2).
    pub chirp: f64,
    /// Carrier omega_L (rad/s).
    pub omega: f64,
    /// Constant phase (rad).
    pub phase: f64,
    pub rwa: bool,
}

impl<'a> FieldView<'a> {
    /// The field as it is.
    pub(crate) fn of(field: &'a Field) -> Self {
        FieldView {
            env: Cow::Borrowed(&field.envelope),
            tc: field.envelope.center(),
            stretch: 1.0,
            rabi_factor: 1.0,
            chirp: field.chirp,
            omega: field.omega,
            phase: field.phase,
            rwa: field.rwa,
        }
    }

    /// An envelope alone (no carrier, no chirp), for spectra.
    pub(crate) fn bare(env: &'a Envelope) -> Self {
        FieldView {
            env: Cow::Borrowed(env),
            tc: env.center(),
            stretch: 1.0,
            rabi_factor: 1.0,
            chirp: 0.0,
            omega: 0.0,
            phase: 0.0,
            rwa: true,
        }
    }

    /// Time in the coordinates of `env`.
    #[inline]
    fn inner(&self, t: f64) -> f64 {
        if self.stretch == 1.0 {
            t
        } else {
            self.tc + (t - self.tc) / self.stretch
        }
    }

    /// Time in the view's coordinates of a time of `env`.
    #[inline]
    fn outer(&self, t: f64) -> f64 {
        if self.stretch == 1.0 {
            t
        } else {
            self.tc + (t - self.tc) * self.stretch
        }
    }

    /// f(t).
    #[inline]
    pub(crate) fn value(&self, t: f64) -> f64 {
        self.env.value(self.inner(t))
    }

    /// lim f(t') for t' -> t from below (differs from `value` only at jumps).
    pub(crate) fn value_left_of(&self, t: f64) -> f64 {
        let x = self.inner(t);
        match self.env.as_ref() {
            Envelope::Rectangular { start, duration } => {
                if x > *start && x <= start + duration {
                    1.0
                } else {
                    0.0
                }
            }
            Envelope::Samples { times, .. } => match (times.first(), times.last()) {
                (Some(&a), Some(&b)) if x > a && x <= b => self.env.value(x),
                _ => 0.0,
            },
            e => e.value(x),
        }
    }

    /// lim f(t') for t' -> t from above.
    pub(crate) fn value_right_of(&self, t: f64) -> f64 {
        let x = self.inner(t);
        match self.env.as_ref() {
            Envelope::Rectangular { start, duration } => {
                if x >= *start && x < start + duration {
                    1.0
                } else {
                    0.0
                }
            }
            Envelope::Samples { times, .. } => match (times.first(), times.last()) {
                (Some(&a), Some(&b)) if x >= a && x < b => self.env.value(x),
                _ => 0.0,
            },
            e => e.value(x),
        }
    }

    /// Where f is not (negligibly) zero.
    pub(crate) fn support(&self) -> (f64, f64) {
        let (a, b) = self.env.support();
        (self.outer(a), self.outer(b))
    }

    /// Integral of f over all time.
    pub(crate) fn area(&self) -> f64 {
        self.env.area() * self.stretch
    }

    /// Calls `g` with every time at which f jumps or has a kink, and with the
    /// ends of the support of the smooth infinite shapes.
    pub(crate) fn breakpoints(&self, mut g: impl FnMut(f64)) {
        match self.env.as_ref() {
            Envelope::Rectangular { start, duration }
            | Envelope::Sin2 { start, duration }
            | Envelope::Blackman { start, duration } => {
                g(self.outer(*start));
                g(self.outer(start + duration));
            }
            Envelope::Gaussian { .. } | Envelope::Sech { .. } => {
                let (a, b) = self.support();
                g(a);
                g(b);
            }
            Envelope::Samples { times, .. } => {
                for &t in times {
                    g(self.outer(t));
                }
            }
        }
    }

    /// Gaussian or sech: smooth, and non-zero at every time.
    pub(crate) fn is_smooth_infinite(&self) -> bool {
        matches!(
            self.env.as_ref(),
            Envelope::Gaussian { .. } | Envelope::Sech { .. }
        )
    }

    /// Largest panel over which f is well represented by a straight line
    /// (infinite where f is exactly linear between breakpoints).
    pub(crate) fn panel_width(&self) -> f64 {
        let w = match self.env.as_ref() {
            Envelope::Rectangular { .. } | Envelope::Samples { .. } => f64::INFINITY,
            Envelope::Gaussian { sigma, .. } => 0.5 * sigma,
            Envelope::Sech { tau, .. } => 0.5 * tau,
            Envelope::Sin2 { duration, .. } | Envelope::Blackman { duration, .. } => {
                duration / 16.0
            }
        };
        w * self.stretch
    }

    /// Closed-form spectrum of the (stretched) envelope, `s F(s nu)`, when the
    /// field is unchirped and the shape has one.
    pub(crate) fn spectrum(&self, nu: f64) -> Option<f64> {
        if self.chirp != 0.0 {
            return None;
        }
        envelope_spectrum(&self.env, nu * self.stretch).map(|f| f * self.stretch)
    }
}
