//! The equations levelplan propagates, one file each.
//!
//! Owns: building an [`super::equation::Equation`] from the model and its
//! frame Hamiltonian. Must not: step or record (steppers and observers do).
//! A new equation is one new file here implementing the trait; no stepper
//! or observer changes. Today: `amplitudes` (Schrodinger, decay as loss),
//! `density` (Lindblad master equation); `frame` is the frame Hamiltonian
//! in window time both read.

pub mod amplitudes;
mod channels;
pub mod density;
mod frame;
