//! The validated, unit-free model of a scheme.
//!
//! Owns: the plain data every later stage works from (levels, couplings, fields,
//! drives, window, solver settings) and the envelope mathematics (value, area,
//! centre, support). Everything here is SI with *angular* frequencies
//! (rad/s), energies as angular frequencies E/hbar, times in seconds.
//!
//! Must not: know about YAML, strings with units, files, or output formats.
//! Only `scheme` builds a [`Model`]; it is immutable afterwards except through
//! the explicit setters the scan module uses, which re-run no validation and
//! therefore only change plain numbers.

use std::f64::consts::PI;

/// Envelope value below which Gaussian/sech tails are treated as zero when the
/// default window is chosen.
pub const TAIL_CUTOFF: f64 = 1e-8;

/// A validated scheme: SI numbers only.
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    /// Free text title from the scheme, if any.
    pub title: Option<String>,
    /// Levels in file order.
    pub levels: Vec<Level>,
    /// Dipole couplings in file order.
    pub couplings: Vec<Coupling>,
    /// Fields in file order.
    pub fields: Vec<Field>,
    /// Every (field, coupling) pair the field drives, in field order then
    /// coupling order. Includes drives that a later stage may leave out by
    /// the detuning cutoff.
    pub drives: Vec<Drive>,
    /// Initial population of each level (same length as `levels`, sums to 1).
    /// Initial amplitudes are `sqrt(p)` with phase 0.
    pub initial: Vec<f64>,
    /// Indices of target levels.
    pub targets: Vec<usize>,
    /// Default spectator tolerance (population).
    pub tolerance: f64,
    /// Time window of the dynamics.
    pub window: Window,
    /// Solver settings.
    pub solver: SolverSettings,
}

/// One level.
#[derive(Debug, Clone, PartialEq)]
pub struct Level {
    pub id: String,
    pub label: Option<String>,
    /// Energy as an angular frequency, E/hbar (rad/s).
    pub omega: f64,
    /// Population decay rate Gamma (1/s); 0 for a stable level.
    pub gamma: f64,
    /// Per-level leakage tolerance (population), overriding the default.
    pub tolerance: Option<f64>,
}

/// Strength of a coupling's dipole.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Dipole {
    /// Projection of the transition dipole on the field polarisation, C m (signed).
    Absolute(f64),
    /// A bare relative strength; only usable with fields set by Rabi frequency or area.
    Relative(f64),
}

impl Dipole {
    /// The signed number, whatever its kind.
    pub fn value(&self) -> f64 {
        match self {
            Dipole::Absolute(v) | Dipole::Relative(v) => *v,
        }
    }
}

/// A dipole coupling between two levels.
#[derive(Debug, Clone, PartialEq)]
pub struct Coupling {
    /// Index of the lower level (lower energy; file order breaks ties).
    pub lower: usize,
    /// Index of the upper level.
    pub upper: usize,
    pub dipole: Dipole,
}

/// A laser field.
#[derive(Debug, Clone, PartialEq)]
pub struct Field {
    pub id: String,
    /// Carrier angular frequency omega_L (rad/s) at the envelope centre.
    pub omega: f64,
    pub envelope: Envelope,
    /// Chirp as d(omega)/dt (rad/s^2), i.e. 2 pi beta with beta in Hz/s.
    /// Instantaneous frequency omega + chirp (t - t_c).
    pub chirp: f64,
    /// Constant phase (rad).
    pub phase: f64,
    /// Rotating-wave approximation on (true) or counter-rotating term kept (false).
    pub rwa: bool,
    /// Peak intensity I = c eps0 E0^2 / 2 (W/m^2), when it is known (set from
    /// intensity or power, or from a Rabi frequency on an absolute dipole).
    pub peak_intensity: Option<f64>,
}

impl Field {
    /// Total phase phi(t) = omega_L t + (chirp/2) (t - t_c)^2 + phase.
    #[inline]
    pub fn phase_at(&self, t: f64) -> f64 {
        let dt = t - self.envelope.center();
        self.omega * t + 0.5 * self.chirp * dt * dt + self.phase
    }
}

/// One field acting on one coupling.
#[derive(Debug, Clone, PartialEq)]
pub struct Drive {
    /// Index into `Model::fields`.
    pub field: usize,
    /// Index into `Model::couplings`.
    pub coupling: usize,
    /// Peak Rabi frequency Omega = d E0 / hbar (rad/s), signed like the dipole.
    pub rabi: f64,
}

/// The time window of the dynamics.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Window {
    pub start: f64,
    pub end: f64,
}

impl Window {
    pub fn duration(&self) -> f64 {
        self.end - self.start
    }
}

/// Which propagator to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// Exact where the frame Hamiltonian is piecewise constant, else adaptive.
    Auto,
    Adaptive,
    Exact,
}

/// Solver settings (validated).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolverSettings {
    pub rtol: f64,
    pub atol: f64,
    pub method: Method,
    /// Drives with |detuning| above this (rad/s) are left out of the dynamics.
    pub detuning_cutoff: f64,
}

/// Default relative tolerance of the adaptive propagator.
pub const DEFAULT_RTOL: f64 = 1e-10;
/// Default absolute tolerance of the adaptive propagator.
pub const DEFAULT_ATOL: f64 = 1e-12;
/// Default detuning cutoff, 1 THz cyclic, as an angular frequency.
pub const DEFAULT_DETUNING_CUTOFF: f64 = 2.0 * PI * 1e12;
/// Default spectator tolerance.
pub const DEFAULT_TOLERANCE: f64 = 1e-3;

impl Default for SolverSettings {
    fn default() -> Self {
        SolverSettings {
            rtol: DEFAULT_RTOL,
            atol: DEFAULT_ATOL,
            method: Method::Auto,
            detuning_cutoff: DEFAULT_DETUNING_CUTOFF,
        }
    }
}

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

/// Blackman window coefficients (a0, a1, a2).
pub const BLACKMAN: (f64, f64, f64) = (0.42, 0.5, 0.08);

/// sigma = FWHM / (2 sqrt(2 ln 2)) for the *amplitude*; the scheme's FWHM is
/// of the intensity |f|^2, whose sigma is sigma/sqrt(2), so
/// sigma_amplitude = FWHM_intensity / (2 sqrt(ln 2)).
pub fn gaussian_sigma_from_intensity_fwhm(fwhm: f64) -> f64 {
    fwhm / (2.0 * (2.0f64.ln()).sqrt())
}

impl Envelope {
    /// f(t).
    #[inline]
    pub fn value(&self, t: f64) -> f64 {
        match self {
            Envelope::Rectangular { start, duration } => {
                if t >= *start && t < start + duration {
                    1.0
                } else {
                    0.0
                }
            }
            Envelope::Gaussian { center, sigma } => {
                let x = (t - center) / sigma;
                (-0.5 * x * x).exp()
            }
            Envelope::Sech { center, tau } => {
                let x = ((t - center) / tau).abs();
                // sech x = 2 e^{-x} / (1 + e^{-2x}), stable for large x.
                let e = (-x).exp();
                2.0 * e / (1.0 + e * e)
            }
            Envelope::Sin2 { start, duration } => {
                let x = (t - start) / duration;
                if (0.0..=1.0).contains(&x) {
                    let s = (PI * x).sin();
                    s * s
                } else {
                    0.0
                }
            }
            Envelope::Blackman { start, duration } => {
                let x = (t - start) / duration;
                if (0.0..=1.0).contains(&x) {
                    let (a0, a1, a2) = BLACKMAN;
                    a0 - a1 * (2.0 * PI * x).cos() + a2 * (4.0 * PI * x).cos()
                } else {
                    0.0
                }
            }
            Envelope::Samples { times, values } => sample_interp(times, values, t),
        }
    }

    /// The envelope centre t_c (samples: midpoint of first and last sample time).
    pub fn center(&self) -> f64 {
        match self {
            Envelope::Rectangular { start, duration }
            | Envelope::Sin2 { start, duration }
            | Envelope::Blackman { start, duration } => start + 0.5 * duration,
            Envelope::Gaussian { center, .. } | Envelope::Sech { center, .. } => *center,
            Envelope::Samples { times, .. } => match (times.first(), times.last()) {
                (Some(a), Some(b)) => 0.5 * (a + b),
                _ => 0.0,
            },
        }
    }

    /// Integral of f over all t (s). Pulse area = Omega * this.
    pub fn area(&self) -> f64 {
        match self {
            Envelope::Rectangular { duration, .. } => *duration,
            Envelope::Gaussian { sigma, .. } => sigma * (2.0 * PI).sqrt(),
            Envelope::Sech { tau, .. } => PI * tau,
            Envelope::Sin2 { duration, .. } => 0.5 * duration,
            Envelope::Blackman { duration, .. } => BLACKMAN.0 * duration,
            Envelope::Samples { times, values } => times
                .windows(2)
                .zip(values.windows(2))
                .map(|(t, v)| 0.5 * (t[1] - t[0]) * (v[0] + v[1]))
                .sum(),
        }
    }

    /// Interval outside which f is zero, or below [`TAIL_CUTOFF`] for
    /// Gaussian and sech envelopes.
    pub fn support(&self) -> (f64, f64) {
        match self {
            Envelope::Rectangular { start, duration }
            | Envelope::Sin2 { start, duration }
            | Envelope::Blackman { start, duration } => (*start, start + duration),
            Envelope::Gaussian { center, sigma } => {
                let half = sigma * (-2.0 * TAIL_CUTOFF.ln()).sqrt();
                (center - half, center + half)
            }
            Envelope::Sech { center, tau } => {
                // sech x < 2 e^{-x} = TAIL_CUTOFF  =>  x = ln(2 / TAIL_CUTOFF)
                let half = tau * (2.0 / TAIL_CUTOFF).ln();
                (center - half, center + half)
            }
            Envelope::Samples { times, .. } => match (times.first(), times.last()) {
                (Some(a), Some(b)) => (*a, *b),
                _ => (0.0, 0.0),
            },
        }
    }

    /// The shortest time scale of the envelope's shape (s): a propagator's
    /// maximum step is tied to it so that no pulse is stepped over.
    pub fn shortest_feature(&self) -> f64 {
        match self {
            Envelope::Rectangular { duration, .. } => *duration,
            Envelope::Gaussian { sigma, .. } => *sigma,
            Envelope::Sech { tau, .. } => *tau,
            Envelope::Sin2 { duration, .. } | Envelope::Blackman { duration, .. } => duration / 4.0,
            Envelope::Samples { times, .. } => times
                .windows(2)
                .map(|w| w[1] - w[0])
                .fold(f64::INFINITY, f64::min),
        }
    }

    /// True where f is piecewise constant in time (rectangular).
    pub fn is_piecewise_constant(&self) -> bool {
        matches!(self, Envelope::Rectangular { .. })
    }

    /// Times at which f jumps or has a kink (edges of finite envelopes, sample
    /// times); empty for Gaussian and sech.
    pub fn breakpoints(&self) -> Vec<f64> {
        match self {
            Envelope::Rectangular { start, duration }
            | Envelope::Sin2 { start, duration }
            | Envelope::Blackman { start, duration } => vec![*start, start + duration],
            Envelope::Gaussian { .. } | Envelope::Sech { .. } => Vec::new(),
            Envelope::Samples { times, .. } => times.clone(),
        }
    }

    /// Short name of the shape as written in schemes.
    pub fn shape_name(&self) -> &'static str {
        match self {
            Envelope::Rectangular { .. } => "rectangular",
            Envelope::Gaussian { .. } => "gaussian",
            Envelope::Sech { .. } => "sech",
            Envelope::Sin2 { .. } => "sin2",
            Envelope::Blackman { .. } => "blackman",
            Envelope::Samples { .. } => "samples",
        }
    }
}

impl Envelope {
    /// The same shape stretched in time by `s` about its centre (s > 0).
    pub fn stretched(&self, s: f64) -> Envelope {
        let c = self.center();
        let at = |t: f64| c + s * (t - c);
        match self {
            Envelope::Rectangular { start, duration } => Envelope::Rectangular {
                start: at(*start),
                duration: duration * s,
            },
            Envelope::Sin2 { start, duration } => Envelope::Sin2 {
                start: at(*start),
                duration: duration * s,
            },
            Envelope::Blackman { start, duration } => Envelope::Blackman {
                start: at(*start),
                duration: duration * s,
            },
            Envelope::Gaussian { center, sigma } => Envelope::Gaussian {
                center: *center,
                sigma: sigma * s,
            },
            Envelope::Sech { center, tau } => Envelope::Sech {
                center: *center,
                tau: tau * s,
            },
            Envelope::Samples { times, values } => Envelope::Samples {
                times: times.iter().map(|&t| at(t)).collect(),
                values: values.clone(),
            },
        }
    }
}

/// Linear interpolation of sampled values, 0 outside [first, last].
#[inline]
fn sample_interp(times: &[f64], values: &[f64], t: f64) -> f64 {
    let n = times.len().min(values.len());
    if n < 2 || t < times[0] || t > times[n - 1] {
        return 0.0;
    }
    // Index of the first sample time > t (binary search), at least 1.
    let i = times[..n].partition_point(|&x| x <= t).clamp(1, n - 1);
    let (t0, t1) = (times[i - 1], times[i]);
    let (v0, v1) = (values[i - 1], values[i]);
    let w = if t1 > t0 { (t - t0) / (t1 - t0) } else { 0.0 };
    v0 + w * (v1 - v0)
}

impl Model {
    /// Transition angular frequency of a coupling, omega_upper - omega_lower (>= 0).
    pub fn transition_omega(&self, coupling: usize) -> f64 {
        let c = &self.couplings[coupling];
        self.levels[c.upper].omega - self.levels[c.lower].omega
    }

    /// Detuning Delta = omega_L - omega_ab of a drive (rad/s), at the envelope centre.
    pub fn detuning(&self, drive: &Drive) -> f64 {
        self.fields[drive.field].omega - self.transition_omega(drive.coupling)
    }

    /// Pulse area Omega * integral f dt of a drive (rad).
    pub fn pulse_area(&self, drive: &Drive) -> f64 {
        drive.rabi * self.fields[drive.field].envelope.area()
    }

    /// Whether a drive is in the dynamics: |detuning| <= detuning cutoff.
    /// Drives beyond the cutoff are left out of the propagation and listed
    /// in reports with their perturbative estimate.
    pub fn drive_included(&self, drive: &Drive) -> bool {
        self.detuning(drive).abs() <= self.solver.detuning_cutoff
    }

    /// Tolerance of a level (its own or the default).
    pub fn tolerance_of(&self, level: usize) -> f64 {
        self.levels[level].tolerance.unwrap_or(self.tolerance)
    }

    /// A copy with field `field`'s envelope replaced by `env` and its chirp
    /// multiplied by `chirp_scale`; every drive of that field keeps its pulse
    /// area (its Rabi frequency is rescaled), and the window is widened to
    /// hold the new envelope. Used to check remedies by exact propagation.
    pub fn with_field_envelope(&self, field: usize, env: Envelope, chirp_scale: f64) -> Model {
        let mut m = self.clone();
        let old = m.fields[field].envelope.area();
        let new = env.area();
        let factor = if new != 0.0 { old / new } else { 0.0 };
        let (a, b) = env.support();
        m.window.start = m.window.start.min(a);
        m.window.end = m.window.end.max(b);
        m.fields[field].envelope = env;
        m.fields[field].chirp *= chirp_scale;
        if let Some(i) = m.fields[field].peak_intensity.as_mut() {
            *i *= factor * factor;
        }
        for d in m.drives.iter_mut().filter(|d| d.field == field) {
            d.rabi *= factor;
        }
        m
    }

    /// Index of a level by id.
    pub fn level_index(&self, id: &str) -> Option<usize> {
        self.levels.iter().position(|l| l.id == id)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn integrate(e: &Envelope) -> f64 {
        let (a, b) = e.support();
        let (a, b) = (a - 1.0, b + 1.0);
        let n = 200_000;
        let h = (b - a) / n as f64;
        // Trapezoid rule: exact for the piecewise-linear samples envelope
        // (its kinks fall on grid points), O(h^2) for the smooth shapes.
        let mut s = 0.5 * (e.value(a) + e.value(b));
        for i in 1..n {
            s += e.value(a + i as f64 * h);
        }
        s * h
    }

    // Closed-form areas checked against numerical quadrature
    // (elementary integrals; common practice, no source).
    #[test]
    fn areas_match_quadrature() {
        let shapes = [
            Envelope::Gaussian {
                center: 3.0,
                sigma: 0.7,
            },
            Envelope::Sech {
                center: -2.0,
                tau: 0.3,
            },
            Envelope::Sin2 {
                start: 1.0,
                duration: 2.0,
            },
            Envelope::Blackman {
                start: 0.5,
                duration: 3.0,
            },
            Envelope::Samples {
                times: vec![0.0, 1.0, 3.0, 4.0],
                values: vec![0.0, 1.0, 0.5, 0.0],
            },
        ];
        for e in &shapes {
            assert_relative_eq!(e.area(), integrate(e), max_relative = 1e-6);
        }
    }

    // FWHM of a Gaussian's intensity: |f|^2 = 1/2 at t - tc = FWHM/2.
    #[test]
    fn gaussian_fwhm_is_of_intensity() {
        let fwhm = 2.5;
        let sigma = gaussian_sigma_from_intensity_fwhm(fwhm);
        let e = Envelope::Gaussian { center: 0.0, sigma };
        assert_relative_eq!(e.value(fwhm / 2.0).powi(2), 0.5, max_relative = 1e-12);
    }

    #[test]
    fn sech_is_stable_far_out() {
        let e = Envelope::Sech {
            center: 0.0,
            tau: 1.0,
        };
        assert_relative_eq!(e.value(0.0), 1.0);
        assert!(e.value(1000.0).is_finite());
        assert!(e.value(e.support().1) < 1.01 * TAIL_CUTOFF);
    }
}
