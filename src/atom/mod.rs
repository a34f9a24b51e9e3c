//! Atomic structure algebra: angular momentum and hyperfine-Zeeman
//! sublevels; pure numbers, no scheme strings, no model, no IO.
//!
//! Owns the exact angular-momentum coefficients ([`angular`]: Wigner 3j and
//! 6j symbols, Clebsch-Gordan coefficients, hyperfine relative strengths and
//! decay branching). It must not read schemes, build a `Model`, print, or
//! panic on any argument: selection-rule violations give zero and arguments
//! beyond the supported size give a typed error.

pub mod angular;
