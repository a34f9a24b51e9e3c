//! The samples a run asks for (`evolve`).
//!
//! Owns: recording (t, populations), the population lost so far and the
//! spontaneous emissions so far at the sample stops the stepper reports
//! (read through [`Equation`]: adding an equation changes nothing here).
//! Must not: choose sample times (the plan does) or step.

use super::{Dense, Observer, Step};
use crate::solve::equation::Equation;

/// Recorded samples: (absolute time in s, populations), and beside each
/// the lost part and the emissions.
#[derive(Debug, Clone, Default)]
pub struct Samples {
    levels: usize,
    pub taken: Vec<(f64, Vec<f64>)>,
    /// Per sample, in the order of `taken`: the population lost from the
    /// scheme so far ([`Equation::lost`]) and the spontaneous emissions per
    /// atom since the window start, all levels ([`Equation::emitted`];
    /// None where the equation does not count them).
    pub open: Vec<(f64, Option<f64>)>,
}

impl Samples {
    /// Room for `count` samples of `levels` populations.
    pub fn new(levels: usize, count: usize) -> Samples {
        Samples {
            levels,
            taken: Vec::with_capacity(count),
            open: Vec::with_capacity(count),
        }
    }

    /// Take sample `i` out (a record made only for the readout).
    pub fn remove(&mut self, i: usize) -> (f64, Vec<f64>) {
        self.open.remove(i);
        self.taken.remove(i)
    }
}

impl<E: Equation + ?Sized> Observer<E> for Samples {
    fn start(&mut self, _eq: &E, _y: &[f64]) {}

    fn step(&mut self, _eq: &E, _step: &Step<'_>, _dense: &mut dyn Dense) {}

    fn sample(&mut self, eq: &E, t: f64, y: &[f64]) {
        let mut p = vec![0.0; self.levels];
        eq.populations(y, &mut p);
        self.taken.push((t, p));
        self.open.push((eq.lost(y), eq.emitted(y)));
    }
}
