//! The accepted unit spellings of each kind and their factors to SI.
//!
//! Owns: the tables. Must not: parse numbers (the parent module does).

use super::{C, DEBYE, EA0, E_CHARGE, HBAR, TWO_PI};
use std::f64::consts::PI;

/// Accepted spellings and their factors to SI, per kind. The first spelling
/// of each entry is the canonical one listed in messages.
pub(super) struct UnitDef {
    pub(super) names: &'static [&'static str],
    pub(super) factor: f64,
}

pub(super) const ENERGY_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["cm^-1", "cm-1", "1/cm"],
        factor: TWO_PI * C * 100.0,
    },
    UnitDef {
        names: &["eV"],
        factor: E_CHARGE / HBAR,
    },
    UnitDef {
        names: &["meV"],
        factor: 1e-3 * E_CHARGE / HBAR,
    },
    UnitDef {
        names: &["Hz"],
        factor: TWO_PI,
    },
    UnitDef {
        names: &["kHz"],
        factor: TWO_PI * 1e3,
    },
    UnitDef {
        names: &["MHz"],
        factor: TWO_PI * 1e6,
    },
    UnitDef {
        names: &["GHz"],
        factor: TWO_PI * 1e9,
    },
    UnitDef {
        names: &["THz"],
        factor: TWO_PI * 1e12,
    },
    UnitDef {
        names: &["J"],
        factor: 1.0 / HBAR,
    },
];

pub(super) const TIME_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["s"],
        factor: 1.0,
    },
    UnitDef {
        names: &["ms"],
        factor: 1e-3,
    },
    UnitDef {
        names: &["us"],
        factor: 1e-6,
    },
    UnitDef {
        names: &["ns"],
        factor: 1e-9,
    },
    UnitDef {
        names: &["ps"],
        factor: 1e-12,
    },
    UnitDef {
        names: &["fs"],
        factor: 1e-15,
    },
];

pub(super) const FREQUENCY_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["Hz"],
        factor: TWO_PI,
    },
    UnitDef {
        names: &["kHz"],
        factor: TWO_PI * 1e3,
    },
    UnitDef {
        names: &["MHz"],
        factor: TWO_PI * 1e6,
    },
    UnitDef {
        names: &["GHz"],
        factor: TWO_PI * 1e9,
    },
    UnitDef {
        names: &["THz"],
        factor: TWO_PI * 1e12,
    },
];

pub(super) const CARRIER_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["Hz"],
        factor: TWO_PI,
    },
    UnitDef {
        names: &["kHz"],
        factor: TWO_PI * 1e3,
    },
    UnitDef {
        names: &["MHz"],
        factor: TWO_PI * 1e6,
    },
    UnitDef {
        names: &["GHz"],
        factor: TWO_PI * 1e9,
    },
    UnitDef {
        names: &["THz"],
        factor: TWO_PI * 1e12,
    },
    UnitDef {
        names: &["PHz"],
        factor: TWO_PI * 1e15,
    },
    UnitDef {
        names: &["cm^-1", "cm-1", "1/cm"],
        factor: TWO_PI * C * 100.0,
    },
];

pub(super) const LENGTH_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["m"],
        factor: 1.0,
    },
    UnitDef {
        names: &["mm"],
        factor: 1e-3,
    },
    UnitDef {
        names: &["um"],
        factor: 1e-6,
    },
    UnitDef {
        names: &["nm"],
        factor: 1e-9,
    },
    UnitDef {
        names: &["pm"],
        factor: 1e-12,
    },
];

pub(super) const DIPOLE_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["ea0", "e a0", "a.u."],
        factor: EA0,
    },
    UnitDef {
        names: &["D", "Debye"],
        factor: DEBYE,
    },
    UnitDef {
        names: &["C m", "C*m", "C.m", "C·m", "Cm"],
        factor: 1.0,
    },
];

pub(super) const RATE_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["s^-1", "1/s", "s-1"],
        factor: 1.0,
    },
    UnitDef {
        names: &["ms^-1", "1/ms", "ms-1"],
        factor: 1e3,
    },
    UnitDef {
        names: &["us^-1", "1/us", "us-1"],
        factor: 1e6,
    },
    UnitDef {
        names: &["ns^-1", "1/ns", "ns-1"],
        factor: 1e9,
    },
];

/// A damping rate: a rate in s^-1 (as written), or a cyclic frequency in Hz
/// units (gamma / 2 pi, so the factor carries 2 pi).
pub(super) const DAMPING_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["s^-1", "1/s", "s-1"],
        factor: 1.0,
    },
    UnitDef {
        names: &["ms^-1", "1/ms", "ms-1"],
        factor: 1e3,
    },
    UnitDef {
        names: &["us^-1", "1/us", "us-1"],
        factor: 1e6,
    },
    UnitDef {
        names: &["ns^-1", "1/ns", "ns-1"],
        factor: 1e9,
    },
    UnitDef {
        names: &["Hz"],
        factor: TWO_PI,
    },
    UnitDef {
        names: &["kHz"],
        factor: TWO_PI * 1e3,
    },
    UnitDef {
        names: &["MHz"],
        factor: TWO_PI * 1e6,
    },
    UnitDef {
        names: &["GHz"],
        factor: TWO_PI * 1e9,
    },
];

pub(super) const INTENSITY_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["W/cm^2", "W/cm2"],
        factor: 1e4,
    },
    UnitDef {
        names: &["W/m^2", "W/m2"],
        factor: 1.0,
    },
    UnitDef {
        names: &["uW/cm^2", "uW/cm2"],
        factor: 1e-2,
    },
    UnitDef {
        names: &["mW/cm^2", "mW/cm2"],
        factor: 10.0,
    },
    UnitDef {
        names: &["kW/cm^2", "kW/cm2"],
        factor: 1e7,
    },
    UnitDef {
        names: &["MW/cm^2", "MW/cm2"],
        factor: 1e10,
    },
    UnitDef {
        names: &["GW/cm^2", "GW/cm2"],
        factor: 1e13,
    },
    UnitDef {
        names: &["TW/cm^2", "TW/cm2"],
        factor: 1e16,
    },
];

pub(super) const POWER_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["W"],
        factor: 1.0,
    },
    UnitDef {
        names: &["mW"],
        factor: 1e-3,
    },
    UnitDef {
        names: &["uW"],
        factor: 1e-6,
    },
    UnitDef {
        names: &["nW"],
        factor: 1e-9,
    },
    UnitDef {
        names: &["kW"],
        factor: 1e3,
    },
];

pub(super) const CHIRP_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["Hz/s"],
        factor: TWO_PI,
    },
    UnitDef {
        names: &["kHz/us"],
        factor: TWO_PI * 1e9,
    },
    UnitDef {
        names: &["MHz/us"],
        factor: TWO_PI * 1e12,
    },
    UnitDef {
        names: &["MHz/ns"],
        factor: TWO_PI * 1e15,
    },
    UnitDef {
        names: &["GHz/ns"],
        factor: TWO_PI * 1e18,
    },
    UnitDef {
        names: &["GHz/ps"],
        factor: TWO_PI * 1e21,
    },
    UnitDef {
        names: &["THz/ps"],
        factor: TWO_PI * 1e24,
    },
];

pub(super) const ANGLE_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["pi", "π"],
        factor: PI,
    },
    UnitDef {
        names: &["rad"],
        factor: 1.0,
    },
];

/// Magnetic flux density: tesla and gauss (1 G = 1e-4 T).
pub(super) const FIELD_UNITS: &[UnitDef] = &[
    UnitDef {
        names: &["G"],
        factor: 1e-4,
    },
    UnitDef {
        names: &["mG"],
        factor: 1e-7,
    },
    UnitDef {
        names: &["T"],
        factor: 1.0,
    },
    UnitDef {
        names: &["mT"],
        factor: 1e-3,
    },
    UnitDef {
        names: &["uT", "µT", "μT"],
        factor: 1e-6,
    },
];
