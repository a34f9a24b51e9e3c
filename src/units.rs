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
pub const EPS0: f64 = 8.854_187_8128e-12;
/// Elementary charge e (C), exact.
pub const E_CHARGE: f64 = 1.602_176_634e-19;
/// Bohr radius a0 (m), CODATA 2018: 5.29177210903(80)e-11.
pub const A0: f64 = 5.291_772_109_03e-11;
/// Atomic unit of dipole moment e a0 (C m).
pub const EA0: f64 = E_CHARGE * A0;
/// Debye (C m): 1e-21 / c.
pub const DEBYE: f64 = 1e-21 / C;
