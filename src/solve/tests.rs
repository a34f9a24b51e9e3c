//! The separation of equations, steppers and observers: an equation defined
//! here, unknown to every stepper and observer, runs on both steppers.

use super::equation::{Equation, Generator};
use super::*;
use crate::model::{Level, Model, Window};
use num_complex::Complex64;

/// Population flowing from level a to level b at rate k (1/s):
/// p_a' = -k p_a, p_b' = k p_a. State (p_a, 0, p_b, 0): a complex vector
/// with zero imaginary parts, so that the generator applies; nothing is lost.
struct Transfer {
    k: f64,
    /// Window length (s): the right-hand side is per unit of window time.
    scale: f64,
}

impl Equation for Transfer {
    fn dim(&self) -> usize {
        4
    }
    fn levels(&self) -> usize {
        2
    }
    fn initial_state(&self, y: &mut [f64]) {
        y.copy_from_slice(&[1.0, 0.0, 0.0, 0.0]);
    }
    fn enter_stretch(&mut self, _start: f64, _end: f64) {}
    fn rhs(&self, _s: f64, y: &[f64], dy: &mut [f64]) {
        let r = self.k * self.scale;
        dy[0] = -r * y[0];
        dy[1] = -r * y[1];
        dy[2] = r * y[0];
        dy[3] = r * y[1];
    }
    fn population(&self, y: &[f64], k: usize) -> f64 {
        y[2 * k]
    }
    fn population_rate(&self, _y: &[f64], dy: &[f64], k: usize) -> f64 {
        dy[2 * k]
    }
    fn norm(&self, y: &[f64]) -> f64 {
        y[0] + y[2]
    }
    fn lost(&self, _y: &[f64]) -> f64 {
        0.0
    }
    fn generator(&self, out: &mut Generator) -> bool {
        *out = Generator::zeros(2);
        out.matrix[(0, 0)] = Complex64::new(-self.k, 0.0);
        out.matrix[(1, 0)] = Complex64::new(self.k, 0.0);
        true
    }
    fn generator_dim(&self) -> usize {
        2
    }
}

/// A model that only sets the window [0, t] (two undriven levels).
fn window_model(t: f64) -> Model {
    let level = |id: &str| Level::new(id, 0.0);
    Model::builder()
        .levels(vec![level("a"), level("b")])
        .initial(vec![1.0, 0.0])
        .window(Window { start: 0.0, end: t })
        .build()
        .expect("a valid model")
}

// p_a(t) = e^{-k t}, p_b = 1 - p_a (elementary calculus), on both steppers,
// with and without peaks, samples included; peaks: p_a at the start, p_b at
// the end.
#[test]
fn an_equation_defined_outside_runs_on_both_steppers() {
    let (k, t) = (3.0e6, 1.0e-6);
    let model = window_model(t);
    let fh = FrameHamiltonian::build(&model).expect("frame");
    let plan = plan::Plan::new(&model, &fh, 5, None);
    for method in [MethodUsed::Exact, MethodUsed::Adaptive] {
        for peaks in [true, false] {
            let opts = SolveOptions {
                samples: 5,
                peaks,
                ..SolveOptions::default()
            };
            let mut eq = Transfer { k, scale: t };
            let s = run(&mut eq, &model, &fh, &plan, method, &opts).expect("runs");
            let tol = if method == MethodUsed::Exact {
                1e-13
            } else {
                1e-9
            };
            let pa = (-k * t).exp();
            assert!(
                (s.final_populations[0] - pa).abs() < tol,
                "{method:?}: {s:?}"
            );
            assert!((s.final_populations[1] - (1.0 - pa)).abs() < tol, "{s:?}");
            assert_eq!(s.samples.len(), 5);
            for (ts, p) in &s.samples {
                assert!((p[0] - (-k * ts).exp()).abs() < tol, "{ts}: {p:?}");
            }
            assert!(s.norm_error < tol, "{s:?}");
            if peaks {
                assert!((s.peak_populations[0] - 1.0).abs() < tol, "{s:?}");
            } else {
                assert_eq!(s.peak_populations, s.final_populations);
            }
            assert!((s.peak_populations[1] - (1.0 - pa)).abs() < tol, "{s:?}");
        }
    }
}
