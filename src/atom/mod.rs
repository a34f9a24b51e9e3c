//! Atomic structure algebra: angular momentum and hyperfine-Zeeman sublevels.
//!
//! Owns: pure numbers of angular-momentum coupling ([`angular`]) and the
//! hyperfine and Zeeman sublevels of one fine-structure manifold
//! ([`structure`]), in SI with energies as angular frequencies (rad/s).
//! Must not: read scheme strings or units, build a model, or do any IO.

pub mod angular;
pub mod structure;
