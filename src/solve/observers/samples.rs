//! The population samples a run asks for (`evolve`).
//!
//! Owns: recording (t, populations) at the sample stops the stepper reports.
//! Must not: choose sample times (the plan does) or step.

use super::{Dense, Observer, Step};
use crate::solve::equation::Equation;

/// Recorded samples: (absolute time in s, populations).
#[derive(Debug, Clone, Default)]
pub struct Samples {
    levels: usize,
    pub taken: Vec<(f64, Vec<f64>)>,
}

impl Samples {
    /// Room for `count` samples of `levels` populations.
    pub fn new(levels: usize, count: usize) -> Samples {
        Samples {
            levels,
            taken: Vec::with_capacity(count),
        }
    }
}

impl<E: Equation + ?Sized> Observer<E> for Samples {
    fn start(&mut self, _eq: &E, _y: &[f64]) {}

    fn step(&mut self, _eq: &E, _step: &Step<'_>, _dense: &mut dyn Dense) {}

    fn sample(&mut self, eq: &E, t: f64, y: &[f64]) {
        let mut p = vec![0.0; self.levels];
        eq.populations(y, &mut p);
        self.taken.push((t, p));
    }
}
