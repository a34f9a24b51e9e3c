//! Physical constants and the "VALUE UNIT" quantities of scheme files.
//!
//! Owns: CODATA 2018 constants and the conversion of a quantity written with a
//! unit into SI (angular frequencies for anything written in Hz units).
//! Must not: know about YAML, levels or fields; it converts numbers only.

use std::f64::consts::PI;

/// Planck constant h (J s), exact in the 2019 SI (CODATA 2018).
pub const H: f64 = 6.626_070_15e-34;
/// Reduced Planck constant hbar = h / 2 pi (J s).
pub const HBAR: f64 = H / (2.0 * PI);
/// Speed of light in vacuum c (m/s), exact.
pub const C: f64 = 299_792_458.0;
/// Vacuum permittivity eps0 (F/m), CODATA 2018: 8.8541878128(13)e-12.
pub const EPS0: f64 = 8.854_187_812_8e-12;
/// Elementary charge e (C), exact.
pub const E_CHARGE: f64 = 1.602_176_634e-19;
/// Bohr radius a0 (m), CODATA 2018: 5.29177210903(80)e-11.
pub const A0: f64 = 5.291_772_109_03e-11;
/// Atomic unit of dipole moment e a0 (C m).
pub const EA0: f64 = E_CHARGE * A0;
/// Debye (C m): 1e-21 / c.
pub const DEBYE: f64 = 1e-21 / C;
/// Bohr magneton mu_B (J/T), CODATA 2018: 9.2740100783(28)e-24.
pub const MU_B: f64 = 9.274_010_078_3e-24;

/// A physical dimension a scheme value may be asked for. Each kind has its
/// own list of accepted units and converts to one SI quantity.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// Level energy, stored as an angular frequency E/hbar (rad/s).
    Energy,
    /// Time (s).
    Time,
    /// Cyclic frequency written in Hz units (detuning, Rabi frequency,
    /// linewidth, cutoff), stored as an angular frequency 2 pi nu (rad/s).
    Frequency,
    /// Carrier frequency of a field: Hz units or a wavenumber in cm^-1,
    /// stored as an angular frequency (rad/s).
    Carrier,
    /// Length (m): beam waist, vacuum wavelength.
    Length,
    /// Electric dipole moment (C m).
    Dipole,
    /// Rate (1/s), e.g. an Einstein A coefficient.
    Rate,
    /// Damping rate (1/s): written in s^-1 as is, or in Hz units as
    /// gamma / 2 pi (stored as 2 pi x value), e.g. a pure dephasing rate.
    Damping,
    /// Intensity (W/m^2).
    Intensity,
    /// Power (W).
    Power,
    /// Chirp beta (Hz/s), stored as d omega / dt = 2 pi beta (rad/s^2).
    Chirp,
    /// Angle (rad): "pi", "0.5 pi", "1.2 rad" or a bare number of radians.
    Angle,
    /// Magnetic flux density (T): "3 G", "0.3 mT".
    MagneticField,
}

const TWO_PI: f64 = 2.0 * PI;

mod tables;
use tables::*;

/// Order in which a unit of unknown purpose is classified for messages
/// ("found '5 ns' (a time)"). Energy comes after frequency so that "MHz"
/// reads as a frequency.
const CLASSIFY_ORDER: &[Kind] = &[
    Kind::Time,
    Kind::Frequency,
    Kind::Energy,
    Kind::Carrier,
    Kind::Length,
    Kind::Dipole,
    Kind::Rate,
    Kind::Intensity,
    Kind::Power,
    Kind::Chirp,
    Kind::Angle,
    Kind::MagneticField,
];

impl Kind {
    fn table(self) -> Table {
        match self {
            Kind::Energy => ENERGY_UNITS,
            Kind::Time => TIME_UNITS,
            Kind::Frequency => FREQUENCY_UNITS,
            Kind::Carrier => CARRIER_UNITS,
            Kind::Length => LENGTH_UNITS,
            Kind::Dipole => DIPOLE_UNITS,
            Kind::Rate => RATE_UNITS,
            Kind::Damping => DAMPING_UNITS,
            Kind::Intensity => INTENSITY_UNITS,
            Kind::Power => POWER_UNITS,
            Kind::Chirp => CHIRP_UNITS,
            Kind::Angle => ANGLE_UNITS,
            Kind::MagneticField => FIELD_UNITS,
        }
    }

    /// The accepted units, in the order they are listed.
    fn entries(self) -> impl Iterator<Item = &'static UnitDef> {
        self.table().iter().flat_map(|group| group.iter())
    }

    /// "an energy", "a time", ... as used in messages.
    pub fn description(self) -> &'static str {
        match self {
            Kind::Energy => "an energy",
            Kind::Time => "a time",
            Kind::Frequency => "a frequency",
            Kind::Carrier => "a frequency",
            Kind::Length => "a length",
            Kind::Dipole => "a dipole moment",
            Kind::Rate | Kind::Damping => "a rate",
            Kind::Intensity => "an intensity",
            Kind::Power => "a power",
            Kind::Chirp => "a chirp rate",
            Kind::Angle => "an angle",
            Kind::MagneticField => "a magnetic field",
        }
    }

    /// The bare noun: "energy", "time", ... for phrases like "a positive time".
    pub fn noun(self) -> &'static str {
        match self {
            Kind::Energy => "energy",
            Kind::Time => "time",
            Kind::Frequency | Kind::Carrier => "frequency",
            Kind::Length => "length",
            Kind::Dipole => "dipole moment",
            Kind::Rate | Kind::Damping => "rate",
            Kind::Intensity => "intensity",
            Kind::Power => "power",
            Kind::Chirp => "chirp rate",
            Kind::Angle => "angle",
            Kind::MagneticField => "magnetic field",
        }
    }

    /// "(s, ms, us, ns, ps, fs)": the accepted units in parentheses.
    pub fn unit_list(self) -> String {
        let mut units = self.units().join(", ");
        if self.bare_allowed() {
            units.push_str(", or a bare number of radians");
        }
        format!("({units})")
    }

    /// Canonical spellings of the accepted units, in the order they are listed.
    pub fn units(self) -> Vec<&'static str> {
        self.entries()
            .filter_map(|u| u.names.first().copied())
            .collect()
    }

    /// Whether a bare number (no unit) is accepted: only for angles (radians).
    pub fn bare_allowed(self) -> bool {
        matches!(self, Kind::Angle)
    }

    /// "an energy (cm^-1, eV, meV, Hz, kHz, MHz, GHz, THz, J)".
    pub fn expected(self) -> String {
        format!("{} {}", self.description(), self.unit_list())
    }

    /// Factor to SI of a unit spelling, if this kind accepts it.
    fn factor_of(self, unit: &str) -> Option<f64> {
        self.entries()
            .find(|u| u.names.contains(&unit))
            .map(|u| u.factor)
    }
}

/// A value that could not be read as the quantity asked for. `expected`
/// and `found` are phrases for "expected X, found Y" messages.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("expected {expected}, found {found}")]
pub struct UnitError {
    /// What was asked for, with the accepted units.
    pub expected: String,
    /// What the text holds, quoted, with a short reason.
    pub found: String,
}

/// Length of the numeric prefix of `s` (optional sign, digits, optional
/// fraction, optional exponent). Returns 0 when `s` does not start with a
/// number.
pub(crate) fn numeric_prefix_len(s: &str) -> usize {
    let b = s.as_bytes();
    let mut i = 0;
    if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
        i += 1;
    }
    let int_start = i;
    while i < b.len() && b[i].is_ascii_digit() {
        i += 1;
    }
    let mut digits = i - int_start;
    if i < b.len() && b[i] == b'.' {
        let frac_start = i + 1;
        let mut j = frac_start;
        while j < b.len() && b[j].is_ascii_digit() {
            j += 1;
        }
        digits += j - frac_start;
        if digits > 0 {
            i = j;
        }
    }
    if digits == 0 {
        return 0;
    }
    exponent_end(b, i)
}

/// Where an exponent (`e` or `E`, an optional sign, at least one digit)
/// starting at byte `i` of `b` ends; `i` when none starts there.
fn exponent_end(b: &[u8], i: usize) -> usize {
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        let mut j = i + 1;
        if j < b.len() && (b[j] == b'+' || b[j] == b'-') {
            j += 1;
        }
        let exp_start = j;
        while j < b.len() && b[j].is_ascii_digit() {
            j += 1;
        }
        if j > exp_start {
            return j;
        }
    }
    i
}

/// Normalise a unit spelling: micro signs to "u", runs of whitespace to one
/// space, surrounding whitespace removed.
fn normalise_unit(unit: &str) -> String {
    let replaced: String = unit
        .chars()
        .map(|c| {
            if c == '\u{b5}' || c == '\u{3bc}' {
                'u'
            } else {
                c
            }
        })
        .collect();
    replaced.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Split "VALUE UNIT" into the number as written and the (normalised) unit,
/// which is empty for a bare number. `None` when the text does not start with
/// a number. "pi" alone reads as (1, "pi"), "-pi" as (-1, "pi").
pub fn split_quantity(text: &str) -> Option<(f64, String)> {
    let s = text.trim();
    let n = numeric_prefix_len(s);
    if n == 0 {
        let (sign, rest) = match s.strip_prefix('-') {
            Some(r) => (-1.0, r),
            None => (1.0, s.strip_prefix('+').unwrap_or(s)),
        };
        let unit = normalise_unit(rest);
        if unit == "pi" || unit == "π" {
            return Some((sign, "pi".to_string()));
        }
        return None;
    }
    let value: f64 = s[..n].parse().ok()?;
    Some((value, normalise_unit(&s[n..])))
}

/// What a unit spelling measures, for messages: "a time", or `None` if no
/// kind knows it.
pub fn classify_unit(unit: &str) -> Option<Kind> {
    CLASSIFY_ORDER
        .iter()
        .copied()
        .find(|k| k.factor_of(unit).is_some())
}

/// Read `text` ("VALUE UNIT") as a quantity of `kind`, converted to SI (and
/// to an angular frequency for anything written in Hz units or cm^-1).
/// Fails with a message for a missing or unknown unit, a unit of another
/// dimension, or a non-finite number. Signs are kept; range checks are the
/// caller's.
pub fn parse_quantity(text: &str, kind: Kind) -> Result<f64, UnitError> {
    let shown = text.trim();
    let err = |why: String| UnitError {
        expected: kind.expected(),
        found: why,
    };
    if shown.is_empty() {
        return Err(err("an empty value".to_string()));
    }
    let Some((value, unit)) = split_quantity(shown) else {
        return Err(err(format!("'{shown}' (not a number followed by a unit)")));
    };
    if !value.is_finite() {
        return Err(err(format!("'{shown}' (not a finite number)")));
    }
    if unit.is_empty() {
        if kind.bare_allowed() {
            return Ok(value);
        }
        return Err(err(format!("'{shown}' (a bare number without a unit)")));
    }
    let Some(factor) = kind.factor_of(&unit) else {
        return Err(match classify_unit(&unit) {
            Some(other) => err(format!("'{shown}' ({})", other.description())),
            None => err(format!("'{shown}' (unknown unit '{unit}')")),
        });
    };
    let si = value * factor;
    if !si.is_finite() {
        return Err(err(format!("'{shown}' (out of range)")));
    }
    Ok(si)
}

/// Read a bare number (no unit), e.g. a tolerance or a solver tolerance.
/// `what` names the quantity in messages ("a population").
pub fn parse_bare(text: &str, what: &str) -> Result<f64, UnitError> {
    let shown = text.trim();
    let err = |why: String| UnitError {
        expected: format!("{what} (a bare number)"),
        found: why,
    };
    match split_quantity(shown) {
        Some((v, unit)) if unit.is_empty() => {
            if v.is_finite() {
                Ok(v)
            } else {
                Err(err(format!("'{shown}' (not a finite number)")))
            }
        }
        Some((_, unit)) => Err(err(format!("'{shown}' (a number with unit '{unit}')"))),
        None => Err(err(format!("'{shown}' (not a number)"))),
    }
}

/// Angular frequency of light of vacuum wavelength `lambda` (m): 2 pi c / lambda.
pub fn omega_from_wavelength(lambda: f64) -> f64 {
    TWO_PI * C / lambda
}

/// Vacuum wavelength (m) of light of angular frequency `omega` (rad/s).
pub fn wavelength_from_omega(omega: f64) -> f64 {
    TWO_PI * C / omega
}

/// Cyclic frequency nu = omega / 2 pi (Hz).
pub fn hz_from_omega(omega: f64) -> f64 {
    omega / TWO_PI
}

/// Wavenumber (cm^-1) of an angular frequency: omega / (2 pi c) / 100.
pub fn wavenumber_cm_from_omega(omega: f64) -> f64 {
    omega / (TWO_PI * C * 100.0)
}

/// Peak field amplitude E0 (V/m) of a peak intensity I (W/m^2): I = c eps0 E0^2 / 2.
pub fn field_amplitude_from_intensity(intensity: f64) -> f64 {
    (2.0 * intensity / (C * EPS0)).sqrt()
}

/// Peak intensity (W/m^2) of a field amplitude E0 (V/m).
pub fn intensity_from_field_amplitude(e0: f64) -> f64 {
    0.5 * C * EPS0 * e0 * e0
}

/// Peak (on-axis) intensity of a Gaussian beam of power `power` (W) and
/// 1/e^2 intensity radius `waist` (m): 2 P / (pi w^2).
pub fn gaussian_beam_peak_intensity(power: f64, waist: f64) -> f64 {
    2.0 * power / (PI * waist * waist)
}

/// Magnitude of the transition dipole (C m) from an Einstein A coefficient
/// (1/s) at angular frequency `omega`, with degeneracies g_lower, g_upper:
/// |d|^2 = 3 pi eps0 hbar c^3 A g_upper / (omega^3 g_lower).
///
/// Convention: D. A. Steck, "Rubidium 87 D Line Data" (the decay rate
/// written with the reduced matrix element, Gamma = omega^3 / (3 pi eps0
/// hbar c^3) (2J+1)/(2J'+1) |<J||er||J'>|^2, with g = 2J+1). For g_lower =
/// g_upper = 1 this is the two-level relation A = omega^3 |d|^2 / (3 pi eps0
/// hbar c^3).
pub fn dipole_from_einstein_a(a: f64, omega: f64, g_lower: f64, g_upper: f64) -> f64 {
    (3.0 * PI * EPS0 * HBAR * C.powi(3) * a * g_upper / (omega.powi(3) * g_lower)).sqrt()
}

/// Inverse of [`dipole_from_einstein_a`]: A (1/s) from |d| (C m).
pub fn einstein_a_from_dipole(d: f64, omega: f64, g_lower: f64, g_upper: f64) -> f64 {
    omega.powi(3) * d * d * g_lower / (3.0 * PI * EPS0 * HBAR * C.powi(3) * g_upper)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn splits_sign_exponent_and_unit() {
        assert_eq!(split_quantity("+26.2 ns"), Some((26.2, "ns".into())));
        assert_eq!(split_quantity("-20 MHz"), Some((-20.0, "MHz".into())));
        assert_eq!(
            split_quantity("1.5e-3  C   m"),
            Some((1.5e-3, "C m".into()))
        );
        assert_eq!(split_quantity("2e"), Some((2.0, "e".into())));
        assert_eq!(split_quantity(".5 pi"), Some((0.5, "pi".into())));
        assert_eq!(split_quantity("pi"), Some((1.0, "pi".into())));
        assert_eq!(split_quantity("-pi"), Some((-1.0, "pi".into())));
        assert_eq!(split_quantity("5 µs"), Some((5.0, "us".into())));
        assert_eq!(split_quantity("inf MHz"), None);
        assert_eq!(split_quantity("MHz"), None);
        assert_eq!(split_quantity("."), None);
    }

    #[test]
    fn converts_cyclic_to_angular() {
        assert_relative_eq!(
            parse_quantity("5 MHz", Kind::Frequency).unwrap(),
            2.0 * PI * 5e6
        );
        assert_relative_eq!(parse_quantity("5 µs", Kind::Time).unwrap(), 5e-6);
        assert_relative_eq!(parse_quantity("0.5 pi", Kind::Angle).unwrap(), 0.5 * PI);
        assert_relative_eq!(parse_quantity("1.2", Kind::Angle).unwrap(), 1.2);
        assert_relative_eq!(
            parse_quantity("10 MHz/us", Kind::Chirp).unwrap(),
            2.0 * PI * 1e13
        );
    }

    #[test]
    fn wrong_dimension_names_both() {
        let e = parse_quantity("5 ns", Kind::Energy).unwrap_err();
        assert_eq!(e.found, "'5 ns' (a time)");
        assert!(e.expected.starts_with("an energy (cm^-1, eV, meV"));
        let e = parse_quantity("5 furlong", Kind::Time).unwrap_err();
        assert_eq!(e.found, "'5 furlong' (unknown unit 'furlong')");
        assert_eq!(e.expected, "a time (s, ms, us, ns, ps, fs)");
        let e = parse_quantity("5", Kind::Time).unwrap_err();
        assert!(e.found.contains("without a unit"));
        let e = parse_quantity("1e999 MHz", Kind::Frequency).unwrap_err();
        assert!(e.found.contains("not a finite number"));
        let e = parse_quantity("1e300 THz/ps", Kind::Chirp).unwrap_err();
        assert!(e.found.contains("out of range"));
    }
}
