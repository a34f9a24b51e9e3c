//! Pulse envelopes: one file per shape, one enum over them.
//!
//! Owns: [`Envelope`], the shape-independent helpers of the closed-form
//! transforms (`sinc`, the removable poles), and the dispatch from the enum to
//! the shape that owns each formula. Must not: know of units, the scheme
//! format, levels or drives.
//!
//! Design: every shape is a small struct in its own file (`rectangular.rs`,
//! `gaussian.rs`, `sech.rs`, `sin2.rs`, `blackman.rs`, `samples.rs`) that
//! implements the crate-private trait [`Shape`]: value, centre, area,
//! support, shortest feature, breakpoints, intensity FWHM, reported length,
//! total span, closed-form spectrum and its line bound, the stretched copy a
//! remedy proposes, and the check of its parameters. [`Envelope`] keeps its
//! public struct-like variants (the solver, the estimator, tests and schemes
//! match on them), and each of its methods only builds the shape's struct
//! from the variant's fields (`with_shape!`, static dispatch, no allocation)
//! and calls the trait. The pulses of finite support (rectangular, sin2,
//! Blackman) share one `Shape` impl (`finite.rs`, `Finite<P>`); their files
//! hold only the profile `P`. Adding a shape: one file, one variant, one arm
//! of `with_shape!`.

mod blackman;
mod finite;
mod gaussian;
mod rectangular;
mod samples;
mod sech;
mod sin2;

pub(crate) use blackman::fwhm_fraction as blackman_fwhm_fraction;
pub use blackman::BLACKMAN;
pub use gaussian::gaussian_sigma_from_intensity_fwhm;
pub use sech::sech_intensity_fwhm;

use std::f64::consts::PI;

/// Envelope value below which Gaussian/sech tails are treated as zero when the
/// default window is chosen.
pub const TAIL_CUTOFF: f64 = 1e-8;

/// A pulse envelope f(t), peaking at 1 (samples: as given).
#[derive(Debug, Clone, PartialEq)]
pub enum Envelope {
    /// f = 1 on [start, start + duration), 0 elsewhere.
    Rectangular { start: f64, duration: f64 },
    /// f = exp(-(t - center)^2 / (2 sigma^2)).
    Gaussian { center: f64, sigma: f64 },
    /// f = sech((t - center) / tau).
    Sech { center: f64, tau: f64 },
    /// f = sin^2(pi (t - start) / duration) on [start, start + duration].
    Sin2 { start: f64, duration: f64 },
    /// Blackman window 0.42 - 0.5 cos(2 pi x) + 0.08 cos(4 pi x), x = (t - start)/duration.
    Blackman { start: f64, duration: f64 },
    /// Linear interpolation between (times[i], values[i]); 0 outside.
    /// Times strictly increasing, at least two points.
    Samples { times: Vec<f64>, values: Vec<f64> },
}

/// What every envelope shape owns. Spectra follow the convention
/// `F(nu) = integral f(t_c + u) exp(i nu u) du`, `t_c` the centre.
pub(crate) trait Shape {
    /// The shape's name as written in schemes.
    const NAME: &'static str;
    /// f(t).
    fn value(&self, t: f64) -> f64;
    /// The centre t_c.
    fn center(&self) -> f64;
    /// Integral of f over all t (s).
    fn area(&self) -> f64;
    /// Interval outside which f is zero, or below [`TAIL_CUTOFF`].
    fn support(&self) -> (f64, f64);
    /// The shortest time scale of the shape (s).
    fn shortest_feature(&self) -> f64;
    /// Times at which f jumps or has a kink.
    fn breakpoints(&self) -> Vec<f64>;
    /// Full width at half maximum of the intensity |f|^2 (s).
    fn intensity_fwhm(&self) -> Option<f64>;
    /// The one length reported for this shape (s): the duration of finite
    /// analytic shapes, the intensity FWHM of Gaussian and sech, the sample
    /// span. A remedy's length for tolerance is this length of the
    /// stretched pulse.
    fn length(&self) -> f64;
    /// Total duration of a finite envelope; None for Gaussian and sech.
    fn span(&self) -> Option<f64>;
    /// Closed-form spectrum over all time (None: no closed form).
    fn spectrum(&self, nu: f64) -> Option<f64>;
    /// Upper bound on |F(nu)| following the envelope of an oscillating line,
    /// capped by the area (None: no closed form). By default, for a spectrum
    /// that does not oscillate: its modulus.
    fn spectrum_bound(&self, nu: f64) -> Option<f64> {
        self.spectrum(nu.abs())
            .filter(|f| f.is_finite())
            .map(f64::abs)
    }
    /// The same shape stretched in time by `s` about its centre.
    fn stretched(&self, s: f64) -> super::Envelope;
    /// Parameters finite, lengths positive, samples well formed.
    fn check(&self) -> Result<(), String>;
    /// Whether the closed-form spectrum oscillates in nu (finite analytic
    /// shapes: zeros of the line, bounded by [`Shape::spectrum_bound`]).
    fn has_oscillating_line(&self) -> bool {
        false
    }
}

/// Run `$body` with `$s` bound to the shape struct of `$env`.
macro_rules! with_shape {
    ($env:expr, $s:ident => $body:expr) => {
        match $env {
            Envelope::Rectangular { start, duration } => {
                let $s = finite::Finite::<rectangular::Rectangular>::new(*start, *duration);
                $body
            }
            Envelope::Gaussian { center, sigma } => {
                let $s = gaussian::Gaussian {
                    center: *center,
                    sigma: *sigma,
                };
                $body
            }
            Envelope::Sech { center, tau } => {
                let $s = sech::Sech {
                    center: *center,
                    tau: *tau,
                };
                $body
            }
            Envelope::Sin2 { start, duration } => {
                let $s = finite::Finite::<sin2::Sin2>::new(*start, *duration);
                $body
            }
            Envelope::Blackman { start, duration } => {
                let $s = finite::Finite::<blackman::Blackman>::new(*start, *duration);
                $body
            }
            Envelope::Samples { times, values } => {
                let $s = samples::Samples { times, values };
                $body
            }
        }
    };
}

/// The name of a shape struct's type, for the `with_shape!` arms.
fn name_of<S: Shape>(_: &S) -> &'static str {
    S::NAME
}

impl Envelope {
    /// f(t).
    #[inline]
    pub fn value(&self, t: f64) -> f64 {
        with_shape!(self, s => s.value(t))
    }

    /// The envelope centre t_c (samples: midpoint of first and last sample time).
    pub fn center(&self) -> f64 {
        with_shape!(self, s => s.center())
    }

    /// Integral of f over all t (s). Pulse area = Omega * this.
    pub fn area(&self) -> f64 {
        with_shape!(self, s => s.area())
    }

    /// Interval outside which f is zero, or below [`TAIL_CUTOFF`] for
    /// Gaussian and sech envelopes.
    pub fn support(&self) -> (f64, f64) {
        with_shape!(self, s => s.support())
    }

    /// The shortest time scale of the envelope's shape (s): a propagator's
    /// maximum step is tied to it so that no pulse is stepped over.
    pub fn shortest_feature(&self) -> f64 {
        with_shape!(self, s => s.shortest_feature())
    }

    /// True where f is piecewise constant in time (rectangular).
    pub fn is_piecewise_constant(&self) -> bool {
        matches!(self, Envelope::Rectangular { .. })
    }

    /// Times at which f jumps or has a kink (edges of finite envelopes, sample
    /// times); empty for Gaussian and sech.
    pub fn breakpoints(&self) -> Vec<f64> {
        with_shape!(self, s => s.breakpoints())
    }

    /// Short name of the shape as written in schemes.
    pub fn shape_name(&self) -> &'static str {
        with_shape!(self, s => name_of(&s))
    }

    /// Full width at half maximum of the intensity `|f|^2` (s): duration for
    /// a rectangle, `2 sqrt(ln 2) sigma` for a Gaussian, `2 acosh(sqrt 2) tau`
    /// for sech, `D (1 - 2 asin(2^{-1/4}) / pi)` for sin2, about `0.2876 D`
    /// for Blackman; for samples, between the outermost crossings of
    /// `max|f|/sqrt 2`. None for an all-zero or malformed sampled envelope.
    pub fn intensity_fwhm(&self) -> Option<f64> {
        with_shape!(self, s => s.intensity_fwhm())
    }

    /// The one length of the pulse that every report shows (s): duration of
    /// rectangular, sin2 and Blackman pulses, intensity FWHM of Gaussian and
    /// sech pulses, sample span (docs/physics.md, "FWHM").
    pub fn length(&self) -> f64 {
        with_shape!(self, s => s.length())
    }

    /// Total duration of a finite envelope; None for Gaussian and sech.
    pub fn span(&self) -> Option<f64> {
        with_shape!(self, s => s.span())
    }

    /// Closed-form spectrum `F(nu) = integral f(t_c + u) e^{i nu u} du` over
    /// all time; None for samples. Not filtered for finiteness (see
    /// `estimate::envelope_spectrum`).
    pub fn spectrum(&self, nu: f64) -> Option<f64> {
        with_shape!(self, s => s.spectrum(nu))
    }

    /// Upper bound on `|F(nu)|` following the envelope of an oscillating
    /// line, capped by the area; exact `|F|` for Gaussian and sech; None for
    /// samples.
    pub fn spectrum_bound(&self, nu: f64) -> Option<f64> {
        with_shape!(self, s => s.spectrum_bound(nu))
    }

    /// The same shape stretched in time by `s` about its centre (s > 0): how
    /// a remedy lengthens a pulse.
    pub fn stretched(&self, s: f64) -> Envelope {
        with_shape!(self, shape => shape.stretched(s))
    }

    /// Whether the closed-form spectrum oscillates (rectangular, sin2,
    /// Blackman): a remedy then bounds the line by its envelope
    /// ([`Envelope::spectrum_bound`]) rather than landing in one of its zeros.
    pub fn has_oscillating_line(&self) -> bool {
        with_shape!(self, s => s.has_oscillating_line())
    }

    /// Parameters finite, durations and widths positive, samples: at least
    /// two finite points with strictly increasing times. The message names
    /// the parameter.
    pub fn check(&self) -> Result<(), String> {
        with_shape!(self, s => s.check())
    }
}

/// `Ok` for a finite number, else a message naming it.
fn finite(x: f64, what: &str) -> Result<(), String> {
    if x.is_finite() {
        Ok(())
    } else {
        Err(format!("{what} must be finite, got {x}"))
    }
}

/// `Ok` for a positive finite number, else a message naming it.
fn positive(x: f64, what: &str) -> Result<(), String> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(format!("{what} must be positive and finite, got {x}"))
    }
}

/// sin(x)/x, accurate through x = 0.
#[inline]
pub(crate) fn sinc(x: f64) -> f64 {
    if x.abs() < 1e-4 {
        1.0 - x * x / 6.0
    } else {
        x.sin() / x
    }
}

/// `sin(nu D / 2) / (nu - m a)` with `a = 2 pi / D`, stable at `nu = m a`
/// (there `nu D / 2 = m pi`, so the ratio is `(-1)^m (D/2) sinc((nu - m a) D/2)`).
#[inline]
fn sin_over_pole(nu: f64, d: f64, m: i32) -> f64 {
    let a = 2.0 * PI / d;
    let x = (nu - f64::from(m) * a) * d / 2.0;
    let sign = if m.rem_euclid(2) == 0 { 1.0 } else { -1.0 };
    sign * 0.5 * d * sinc(x)
}

/// `numerator * sin(nu D/2) / prod_m (nu - m a)` over the poles `m` in
/// `poles`, pairing the sine with the pole nearest to `nu` so that the
/// removable singularities cost no precision.
#[inline]
fn sine_over_poles(nu: f64, d: f64, poles: &[i32], numerator: f64) -> f64 {
    let a = 2.0 * PI / d;
    let nearest = (nu / a).round();
    let lo = f64::from(*poles.iter().min().unwrap_or(&0));
    let hi = f64::from(*poles.iter().max().unwrap_or(&0));
    // The clamp keeps the value integral and inside the pole set.
    let j = nearest.clamp(lo, hi) as i32;
    let mut value = numerator * sin_over_pole(nu, d, j);
    for &m in poles {
        if m != j {
            value /= nu - f64::from(m) * a;
        }
    }
    value
}

/// A line envelope capped by the area; at a pole of the line envelope (or
/// nu = 0) the line is inf or NaN and the area bound holds there.
fn cap_line(line: f64, area: f64) -> f64 {
    if line.is_finite() {
        line.min(area)
    } else {
        area
    }
}

#[cfg(test)]
mod tests;
