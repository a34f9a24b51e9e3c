//! The equations levelplan propagates, one file each.
//!
//! Owns: building an [`super::equation::Equation`] from the model and its
//! frame Hamiltonian. Must not: step or record (steppers and observers do).
//! A new equation (a density matrix, say) is one new file here implementing
//! the trait; no stepper or observer changes.

pub mod amplitudes;
