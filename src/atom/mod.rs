//! Atomic structure algebra: angular momentum, hyperfine-Zeeman sublevels
//! and the dipole elements between them; pure numbers in SI, energies as
//! angular frequencies (rad/s).
//!
//! Owns: the exact angular-momentum coefficients ([`angular`]: Wigner 3j
//! and 6j symbols, Clebsch-Gordan coefficients, hyperfine relative
//! strengths and decay branching), the sublevels of one fine-structure
//! manifold in a magnetic field ([`structure`]) and the electric-dipole
//! elements and decay channels between two manifolds ([`dipole`]).
//! Must not: read scheme strings or units, build a model, print, do any IO,
//! or panic on any argument (selection-rule violations give zero; arguments
//! beyond the supported size give a typed error).

pub mod angular;
pub mod dipole;
#[cfg(test)]
mod rb87;
pub mod structure;
