//! A laser field and the physics that turns its strength into Rabi
//! frequencies.
//!
//! Owns: [`Field`], the peak Rabi frequency of a dipole in a field of given
//! peak intensity and its inverse, the Rabi frequency a pulse area asks for,
//! and the scaling of Rabi frequencies by the dipole ratio. Must not: know of
//! strings, units as text, the scheme format or diagnostics.

use super::Envelope;
use crate::units::{field_amplitude_from_intensity, intensity_from_field_amplitude, HBAR};

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
    /// FWHM of the laser's Lorentzian line as an angular frequency
    /// (2 pi x FWHM in Hz; 0 for a line narrow enough to ignore). Enters the
    /// density-matrix equation through the phase-diffusion model
    /// ([`crate::model::PhaseNumbers`]).
    pub linewidth: f64,
}

impl Field {
    /// Total phase phi(t) = omega_L t + (chirp/2) (t - t_c)^2 + phase.
    #[inline]
    pub fn phase_at(&self, t: f64) -> f64 {
        let dt = t - self.envelope.center();
        self.omega * t + 0.5 * self.chirp * dt * dt + self.phase
    }
}

/// Peak Rabi frequency Omega = d E0 / hbar (rad/s, signed like `dipole`) of a
/// dipole `dipole` (C m) in a field of peak intensity `intensity` (W/m^2),
/// E0 = sqrt(2 I / (c eps0)).
pub fn rabi_from_intensity(dipole: f64, intensity: f64) -> f64 {
    let e0 = field_amplitude_from_intensity(intensity);
    dipole * e0 / HBAR
}

/// Peak intensity (W/m^2) at which a dipole `dipole` (C m) has the peak Rabi
/// frequency `rabi` (rad/s): the inverse of [`rabi_from_intensity`] (signs
/// dropped).
pub fn intensity_from_rabi(rabi: f64, dipole: f64) -> f64 {
    let e0 = HBAR * rabi.abs() / dipole.abs();
    intensity_from_field_amplitude(e0)
}

/// Peak Rabi frequency (rad/s) that gives pulse area `area` (rad) with an
/// envelope of integral `envelope_integral` (s): Omega = area / integral f dt.
pub fn rabi_from_area(area: f64, envelope_integral: f64) -> f64 {
    area / envelope_integral
}

/// Rabi frequency of a coupling of dipole `dipole` in the same field as a
/// reference coupling of dipole `reference` with Rabi frequency
/// `reference_rabi`: Omega scales with the dipole.
pub fn rabi_by_dipole_ratio(reference_rabi: f64, dipole: f64, reference: f64) -> f64 {
    reference_rabi * dipole / reference
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // Rb-87 D2 line, sigma+ cycling transition: d = 2.989 ea0 = 2.534e-29 C m
    // and a saturation intensity 1.669 mW/cm^2 at which Omega = Gamma / sqrt 2
    // with Gamma = 2 pi 6.0666 MHz, i.e. Omega = 2 pi 4.290 MHz (D. A. Steck,
    // "Rubidium 87 D Line Data", Table 7; from memory).
    #[test]
    fn rabi_frequency_at_saturation_rb87_d2() {
        let d = 2.534e-29;
        let i_sat = 16.69; // W/m^2
        let omega = rabi_from_intensity(d, i_sat);
        assert_relative_eq!(
            omega,
            2.0 * std::f64::consts::PI * 4.290e6,
            max_relative = 2e-3
        );
        assert_relative_eq!(intensity_from_rabi(omega, d), i_sat, max_relative = 1e-12);
        assert_relative_eq!(rabi_from_intensity(-d, i_sat), -omega, max_relative = 1e-15);
    }

    // A pi pulse of a rectangle of duration T needs Omega = pi / T
    // (definition of the pulse area; common practice, no source).
    #[test]
    fn pi_pulse_rabi_frequency() {
        let t = 2e-6;
        assert_relative_eq!(
            rabi_from_area(std::f64::consts::PI, t),
            std::f64::consts::PI / t
        );
        assert_relative_eq!(rabi_by_dipole_ratio(3.0, 2.0, 4.0), 1.5);
    }
}
