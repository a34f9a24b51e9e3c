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

/// A kind's table: groups of entries, read in order (the groups shared by
/// several kinds are written once below).
pub(super) type Table = &'static [&'static [UnitDef]];

const fn unit(names: &'static [&'static str], factor: f64) -> UnitDef {
    UnitDef { names, factor }
}

/// Wavenumbers as angular frequencies.
const WAVENUMBER: &[UnitDef] = &[unit(&["cm^-1", "cm-1", "1/cm"], TWO_PI * C * 100.0)];

/// Cyclic frequencies from Hz to GHz (the factor carries 2 pi).
const HZ_TO_GHZ: &[UnitDef] = &[
    unit(&["Hz"], TWO_PI),
    unit(&["kHz"], TWO_PI * 1e3),
    unit(&["MHz"], TWO_PI * 1e6),
    unit(&["GHz"], TWO_PI * 1e9),
];

const THZ: &[UnitDef] = &[unit(&["THz"], TWO_PI * 1e12)];

/// Rates per second to per nanosecond.
const PER_S_TO_PER_NS: &[UnitDef] = &[
    unit(&["s^-1", "1/s", "s-1"], 1.0),
    unit(&["ms^-1", "1/ms", "ms-1"], 1e3),
    unit(&["us^-1", "1/us", "us-1"], 1e6),
    unit(&["ns^-1", "1/ns", "ns-1"], 1e9),
];

pub(super) const ENERGY_UNITS: Table = &[
    WAVENUMBER,
    &[
        unit(&["eV"], E_CHARGE / HBAR),
        unit(&["meV"], 1e-3 * E_CHARGE / HBAR),
    ],
    HZ_TO_GHZ,
    THZ,
    &[unit(&["J"], 1.0 / HBAR)],
];

// Same shape as LENGTH_UNITS: SI prefixes written out, so that every spelling can be read.
pub(super) const TIME_UNITS: Table = &[&[
    unit(&["s"], 1.0),
    unit(&["ms"], 1e-3),
    unit(&["us"], 1e-6),
    unit(&["ns"], 1e-9),
    unit(&["ps"], 1e-12),
    unit(&["fs"], 1e-15),
]];

pub(super) const FREQUENCY_UNITS: Table = &[HZ_TO_GHZ, THZ];

pub(super) const CARRIER_UNITS: Table =
    &[HZ_TO_GHZ, THZ, &[unit(&["PHz"], TWO_PI * 1e15)], WAVENUMBER];

pub(super) const LENGTH_UNITS: Table = &[&[
    unit(&["m"], 1.0),
    unit(&["mm"], 1e-3),
    unit(&["um"], 1e-6),
    unit(&["nm"], 1e-9),
    unit(&["pm"], 1e-12),
]];

pub(super) const DIPOLE_UNITS: Table = &[&[
    unit(&["ea0", "e a0", "a.u."], EA0),
    unit(&["D", "Debye"], DEBYE),
    unit(&["C m", "C*m", "C.m", "C·m", "Cm"], 1.0),
]];

pub(super) const RATE_UNITS: Table = &[PER_S_TO_PER_NS];

/// A damping rate: a rate in s^-1 (as written), or a cyclic frequency in Hz
/// units (gamma / 2 pi, so the factor carries 2 pi).
pub(super) const DAMPING_UNITS: Table = &[PER_S_TO_PER_NS, HZ_TO_GHZ];

pub(super) const INTENSITY_UNITS: Table = &[&[
    unit(&["W/cm^2", "W/cm2"], 1e4),
    unit(&["W/m^2", "W/m2"], 1.0),
    unit(&["uW/cm^2", "uW/cm2"], 1e-2),
    unit(&["mW/cm^2", "mW/cm2"], 10.0),
    unit(&["kW/cm^2", "kW/cm2"], 1e7),
    unit(&["MW/cm^2", "MW/cm2"], 1e10),
    unit(&["GW/cm^2", "GW/cm2"], 1e13),
    unit(&["TW/cm^2", "TW/cm2"], 1e16),
]];

pub(super) const POWER_UNITS: Table = &[&[
    unit(&["W"], 1.0),
    unit(&["mW"], 1e-3),
    unit(&["uW"], 1e-6),
    unit(&["nW"], 1e-9),
    unit(&["kW"], 1e3),
]];

pub(super) const CHIRP_UNITS: Table = &[&[
    unit(&["Hz/s"], TWO_PI),
    unit(&["kHz/us"], TWO_PI * 1e9),
    unit(&["MHz/us"], TWO_PI * 1e12),
    unit(&["MHz/ns"], TWO_PI * 1e15),
    unit(&["GHz/ns"], TWO_PI * 1e18),
    unit(&["GHz/ps"], TWO_PI * 1e21),
    unit(&["THz/ps"], TWO_PI * 1e24),
]];

pub(super) const ANGLE_UNITS: Table = &[&[unit(&["pi", "π"], PI), unit(&["rad"], 1.0)]];

/// Magnetic flux density: gauss and tesla (1 G = 1e-4 T).
pub(super) const FIELD_UNITS: Table = &[&[
    unit(&["G"], 1e-4),
    unit(&["mG"], 1e-7),
    unit(&["T"], 1.0),
    unit(&["mT"], 1e-3),
    unit(&["uT", "µT", "μT"], 1e-6),
]];
