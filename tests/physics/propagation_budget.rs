//! Step budget, errors and bookkeeping of the propagators.
//! Numbers are invented, illustrative values.

use crate::solve_support::*;
use levelplan::model::{Envelope, Method, ModelError, Part, Window};
use levelplan::solve::{solve, MethodUsed, SolveError, SolveOptions};
use std::time::Instant;

const W_E: f64 = 2.0 * std::f64::consts::PI * 355.9e12; // invented

// An optical drive without the RWA over a microsecond needs ~1e9 periods of
// 2 omega_L: the run stops at once with a message naming the drive
// (field id and coupling levels) and the period (pi / omega_L).
#[test]
fn step_budget_fails_fast_naming_the_drive() {
    let m = Builder::new()
        .level("g", 0.0, 0.0)
        .level("e", W_E, 0.0)
        .coupling("g", "e")
        .field_full("probe", W_E, rect(0.0, 1e-6), 0.0, 0.0, false)
        .drive("probe", "g", "e", tau(5e6))
        .initial("g")
        .window(0.0, 1e-6)
        .build();
    let start = Instant::now();
    let err = solve(&m, &SolveOptions::default()).expect_err("must fail");
    assert!(
        start.elapsed().as_secs_f64() < 0.5,
        "took {:?}",
        start.elapsed()
    );
    match &err {
        SolveError::StepBudget {
            budget,
            period_s,
            cause,
        } => {
            assert_eq!(*budget, levelplan::solve::DEFAULT_STEP_BUDGET);
            // Counter-rotating term rotates at omega_L + omega_0 = 2 omega_L.
            let period = 2.0 * std::f64::consts::PI / (2.0 * W_E);
            assert!((period_s / period - 1.0).abs() < 1e-6, "{period_s}");
            assert!(
                cause.contains("'probe'")
                    && cause.contains("g-e")
                    && cause.contains("counter-rotating"),
                "{cause}"
            );
        }
        other => panic!("expected StepBudget, got {other:?}"),
    }
    let msg = err.to_string();
    assert!(
        msg.contains("detuning_cutoff") && msg.contains("'probe' on g-e"),
        "{msg}"
    );
}

// The budget is also enforced while running (the estimate before the run is
// deliberately optimistic): ten Rabi periods are estimated at about 85 steps but take about 170.
#[test]
fn step_budget_is_enforced_during_the_run() {
    let m = with_method(&two_level(W_E, tau(10e6), tau(2e6), 1e-6), Method::Adaptive);
    let ok = solve(&m, &SolveOptions::default()).expect("runs");
    assert!(ok.steps > 100, "steps {}", ok.steps);
    let err = solve(
        &m,
        &SolveOptions {
            samples: 0,
            step_budget: 90,
            ..SolveOptions::default()
        },
    )
    .expect_err("must fail");
    match err {
        SolveError::StepBudget { budget, cause, .. } => {
            assert_eq!(budget, 90);
            assert!(
                cause.contains("'L' on g-e") && cause.contains("stopped at t ="),
                "{cause}"
            );
        }
        other => panic!("expected StepBudget, got {other:?}"),
    }
}

#[test]
fn exact_method_names_why_it_does_not_apply() {
    let env = Envelope::Gaussian {
        center: 0.0,
        sigma: 10e-9,
    };
    let m = Builder::new()
        .level("g", 0.0, 0.0)
        .level("e", W_E, 0.0)
        .coupling("g", "e")
        .field("pump", W_E, env)
        .drive("pump", "g", "e", tau(5e6))
        .initial("g")
        .window(-60e-9, 60e-9)
        .method(Method::Exact)
        .build();
    match solve(&m, &SolveOptions::default()) {
        Err(SolveError::ExactNotApplicable { reason }) => {
            assert!(
                reason.contains("'pump'") && reason.contains("gaussian"),
                "{reason}"
            )
        }
        other => panic!("expected ExactNotApplicable, got {other:?}"),
    }
    // Chirped rectangular pulse: not piecewise constant either.
    let m2 = Builder::new()
        .level("g", 0.0, 0.0)
        .level("e", W_E, 0.0)
        .coupling("g", "e")
        .field_full("sweep", W_E, rect(0.0, 1e-7), 1e15, 0.0, true)
        .drive("sweep", "g", "e", tau(5e6))
        .initial("g")
        .window(0.0, 1e-7)
        .method(Method::Exact)
        .build();
    match solve(&m2, &SolveOptions::default()) {
        Err(SolveError::ExactNotApplicable { reason }) => {
            assert!(reason.contains("chirped"), "{reason}")
        }
        other => panic!("expected ExactNotApplicable, got {other:?}"),
    }
}

// A NaN Rabi frequency or an endless window cannot reach the propagators:
// a model exists only through the builder, which refuses both with a typed
// error (this test used to break a built model to exercise the solver's own
// defence). Non-finite *computed* numbers are still the solver's to refuse.
#[test]
fn non_finite_input_is_an_error_not_a_nan() {
    let m = two_level(W_E, tau(1e6), 0.0, 1e-7);
    let mut drives = m.drives().to_vec();
    drives[0].rabi = f64::NAN;
    assert_eq!(
        m.to_builder().drives(drives).build(),
        Err(ModelError::NonFinite { at: Part::Drive(0) })
    );
    let window = Window {
        end: f64::INFINITY,
        ..m.window()
    };
    assert_eq!(
        m.to_builder().window(window).build(),
        Err(ModelError::NonFinite { at: Part::Window })
    );
}

// A drive beyond the detuning cutoff is left out of the dynamics and listed.
// Source for the kept drive: detuned Rabi formula (I. I. Rabi, Phys. Rev. 51,
// 652 (1937)); the left-out drive would otherwise shift and mix the levels.
#[test]
fn drives_beyond_the_cutoff_are_left_out_and_listed() {
    let t = 400e-9;
    let m = Builder::new()
        .level("g", 0.0, 0.0)
        .level("e", W_E, 0.0)
        .level("x", W_E + tau(3e12), 0.0)
        .coupling("g", "e")
        .coupling("g", "x")
        .field_tuned("L", "g", "e", tau(1e6), rect(0.0, t))
        .drive("L", "g", "e", tau(3e6))
        .drive("L", "g", "x", tau(900e6))
        .initial("g")
        .window(0.0, t)
        .cutoff(tau(1e12))
        .build();
    let s = solve(&m, &SolveOptions::default()).expect("solve");
    assert_eq!(s.excluded_drives, vec![1]);
    assert_eq!(s.method, MethodUsed::Exact);
    assert_eq!(s.final_populations[2], 0.0);
    let p = rabi_formula(tau(3e6), m.detuning(&m.drives()[0]), t);
    assert!((s.final_populations[1] - p).abs() < 1e-9);
}

// Samples: evenly spaced from the window start to exactly its end; the last
// sample is the final state (both propagators).
#[test]
fn samples_span_the_window_and_end_on_the_final_state() {
    for method in [Method::Exact, Method::Adaptive] {
        let m = two_level(W_E, tau(4e6), tau(1e6), 0.77e-6);
        let m = with_method(&with_window(&m, -0.1e-6, 0.77e-6), method);
        let s = solve(
            &m,
            &SolveOptions {
                samples: 37,
                ..Default::default()
            },
        )
        .expect("solve");
        assert_eq!(s.samples.len(), 37);
        assert_eq!(s.samples[0].0, -0.1e-6);
        assert_eq!(s.samples[0].1, vec![1.0, 0.0]);
        assert_eq!(s.samples[36].0, 0.77e-6);
        assert_eq!(s.samples[36].1, s.final_populations);
        let dt = 0.87e-6 / 36.0;
        for (i, (t, p)) in s.samples.iter().enumerate() {
            assert!((t - (-0.1e-6 + i as f64 * dt)).abs() < 1e-18);
            // Source: detuned Rabi formula (I. I. Rabi, Phys. Rev. 51, 652 (1937)).
            let expect = rabi_formula(tau(4e6), m.detuning(&m.drives()[0]), t.max(0.0));
            assert!(
                (p[1] - expect).abs() < 1e-7,
                "{method:?} t={t}: {} vs {expect}",
                p[1]
            );
        }
    }
}

// A window of zero length cannot exist: the builder refuses a window that
// does not end after it starts, with a typed error (this test used to
// shorten a built model's window to zero and propagate it).
#[test]
fn empty_window_is_refused_by_the_builder() {
    let m = two_level(W_E, tau(4e6), 0.0, 1e-7);
    let start = m.window().start;
    assert!(matches!(
        m.to_builder().window(Window { start, end: start }).build(),
        Err(ModelError::Invalid {
            at: Part::Window,
            ..
        })
    ));
}
