//! The drift of the conserved quantity (norm plus lost part) over a run.
//!
//! Owns: the largest |norm(0) - norm(t) - lost(t)| over the ends of accepted
//! steps. Must not: step, or know how an equation defines its norm.

use super::{Dense, Observer, Step};
use crate::solve::equation::Equation;

/// Running largest norm drift.
#[derive(Debug, Clone, Copy, Default)]
pub struct NormDrift {
    norm0: f64,
    /// The largest drift so far.
    pub error: f64,
}

impl NormDrift {
    /// The drift of state `y`.
    pub fn drift<E: Equation + ?Sized>(&self, eq: &E, y: &[f64]) -> f64 {
        (self.norm0 - eq.norm(y) - eq.lost(y)).abs()
    }
}

impl<E: Equation + ?Sized> Observer<E> for NormDrift {
    fn start(&mut self, eq: &E, y: &[f64]) {
        self.norm0 = eq.norm(y);
        self.error = 0.0;
    }

    #[inline]
    fn step(&mut self, eq: &E, step: &Step<'_>, _dense: &mut dyn Dense) {
        let err = self.drift(eq, step.end);
        if err > self.error {
            self.error = err;
        }
    }

    fn sample(&mut self, _eq: &E, _t: f64, _y: &[f64]) {}
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::observers::{Interior, NoDense};

    /// One level with population y[0] and the lost part in y[1].
    struct Leaky;

    impl Equation for Leaky {
        fn dim(&self) -> usize {
            2
        }
        fn levels(&self) -> usize {
            1
        }
        fn initial_state(&self, y: &mut [f64]) {
            y.copy_from_slice(&[1.0, 0.0]);
        }
        fn enter_stretch(&mut self, _: f64, _: f64) {}
        fn rhs(&self, _: f64, y: &[f64], dy: &mut [f64]) {
            dy[0] = -y[0];
            dy[1] = y[0];
        }
        fn population(&self, y: &[f64], _: usize) -> f64 {
            y[0]
        }
        fn population_rate(&self, _: &[f64], dy: &[f64], _: usize) -> f64 {
            dy[0]
        }
        fn norm(&self, y: &[f64]) -> f64 {
            y[0]
        }
        fn lost(&self, y: &[f64]) -> f64 {
            y[1]
        }
    }

    // norm + lost = 1 is conserved: the drift is the defect of the worst end
    // state (elementary arithmetic).
    #[test]
    fn drift_is_the_largest_defect() {
        let mut n = NormDrift::default();
        n.start(&Leaky, &[1.0, 0.0]);
        let d = [0.0; 2];
        for (end, want) in [([0.5, 0.5], 0.0), ([0.4, 0.5], 0.1), ([0.3, 0.69], 0.1)] {
            let step = Step {
                h: 1.0,
                y0: &end,
                d0: &d,
                y1: &end,
                d1: &d,
                end: &end,
                interior: Interior::Trusted,
            };
            n.step(&Leaky, &step, &mut NoDense);
            assert!((n.error - want).abs() < 1e-15, "{} vs {want}", n.error);
        }
    }
}
