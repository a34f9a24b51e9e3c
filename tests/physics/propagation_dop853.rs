//! Regression test of the ode_solvers 0.6.2 Dop853 workaround.
//!
//! ode_solvers 0.6.2's Dop853 node table has c12 = c13 = 0 (they should be 1:
//! E. Hairer, S. P. Norsett and G. Wanner, "Solving Ordinary Differential
//! Equations I", 2nd ed., Springer 1993, DOP853 coefficients), so a right-hand
//! side that depends on the independent variable is evaluated at the wrong
//! time in stage 12 and the method loses its order. levelplan makes every
//! system autonomous (time carried in the state). If the workaround is
//! removed, the first test fails; if ode_solvers is fixed, the second one
//! does and the workaround may go.

use levelplan::solve::adaptive::{integrate_autonomous, AdaptiveSettings, AutonomousRhs};
use ode_solvers::{DVector, Dop853, OutputType, System};

struct Poly;

impl AutonomousRhs for Poly {
    fn eval(&self, t: f64, _y: &[f64], dy: &mut [f64]) {
        dy[0] = 7.0 * t.powi(6);
    }
}

struct NaivePoly;

impl System<f64, DVector<f64>> for NaivePoly {
    fn system(&self, x: f64, _y: &DVector<f64>, dy: &mut DVector<f64>) {
        dy[0] = 7.0 * x.powi(6);
    }
}

// Source: y' = 7 t^6, y(0) = 0 has y(1) = 1 exactly (elementary calculus).
#[test]
fn autonomous_wrapper_integrates_time_dependent_rhs() {
    let settings = AdaptiveSettings {
        rtol: 1e-10,
        atol: 1e-12,
        h_max: 1.0,
        h_init: 0.0,
        step_limit: 100_000,
    };
    let run = integrate_autonomous(&mut Poly, 0.0, 1.0, &[0.0], &settings).expect("integrates");
    assert!((run.y[0] - 1.0).abs() < 1e-10, "y(1) = {}", run.y[0]);
    assert!(run.steps < 1000, "steps {}", run.steps);
}

// Documents the upstream bug: used directly, Dop853 with a t-dependent
// right-hand side is far less accurate than its tolerance, or aborts.
#[test]
fn naive_dop853_with_time_dependent_rhs_is_wrong() {
    let mut stepper = Dop853::from_param(
        NaivePoly,
        0.0,
        1.0,
        1.0,
        DVector::from_element(1, 0.0),
        1e-10,
        1e-12,
        0.9,
        0.0,
        0.333,
        6.0,
        1.0,
        0.0,
        20_000,
        u32::MAX,
        OutputType::Sparse,
    );
    match stepper.integrate() {
        Err(e) => eprintln!("naive: {e}"),
        Ok(stats) => {
            let y = stepper.y_out().last().expect("output")[0];
            eprintln!("naive: y(1) = {y}, {} steps", stats.accepted_steps);
            assert!(
                (y - 1.0).abs() > 1e-8 || stats.accepted_steps > 5000,
                "naive y(1) = {y}: bug fixed upstream?"
            );
        }
    }
}
