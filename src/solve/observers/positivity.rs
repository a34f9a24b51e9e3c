//! The positivity of the state over a run (a density matrix must stay
//! positive semidefinite; amplitudes always are).
//!
//! Owns: the largest [`Equation::positivity_defect`] over the start and the
//! ends of accepted steps. Must not: step, or know how an equation measures
//! its defect.

use super::{Dense, Observer, Step};
use crate::solve::equation::Equation;

/// Running largest positivity defect.
#[derive(Debug, Clone, Copy, Default)]
pub struct Positivity {
    /// The largest defect so far.
    pub error: f64,
}

impl<E: Equation + ?Sized> Observer<E> for Positivity {
    fn start(&mut self, eq: &E, y: &[f64]) {
        self.error = eq.positivity_defect(y, false);
    }

    #[inline]
    fn step(&mut self, eq: &E, step: &Step<'_>, _dense: &mut dyn Dense) {
        let d = eq.positivity_defect(step.end, false);
        if d > self.error {
            self.error = d;
        }
    }

    fn sample(&mut self, _eq: &E, _t: f64, _y: &[f64]) {}
}
