//! Invariances of the propagation and agreement of the two propagators.
//! Numbers are invented, illustrative values.

use crate::solve_support::*;
use levelplan::model::{Envelope, Method, Model};
use levelplan::solve::{solve, MethodUsed, SolveError, SolveOptions};

const W_E: f64 = 2.0 * std::f64::consts::PI * 402.7e12; // invented
const W_R: f64 = 2.0 * std::f64::consts::PI * 781.3e12; // invented

/// Ladder g - e - r with a spectator s near e, Gaussian pulses.
fn ladder(shift_t: f64, offset: f64) -> Model {
    let sigma = 40e-9;
    let p1 = Envelope::Gaussian {
        center: 200e-9 + shift_t,
        sigma,
    };
    let p2 = Envelope::Gaussian {
        center: 260e-9 + shift_t,
        sigma: 1.3 * sigma,
    };
    let (a, _) = p1.support();
    let (_, b) = p2.support();
    Builder::new()
        .level("g", offset, 0.0)
        .level("e", W_E + offset, 1.0 / 80e-9)
        .level("s", W_E + tau(120e6) + offset, 1.0 / 50e-9)
        .level("r", W_R + offset, 0.0)
        .coupling("g", "e")
        .coupling("g", "s")
        .coupling("e", "r")
        .field("A", W_E + tau(-15e6), p1)
        .field("B", W_R - W_E + tau(25e6), p2)
        .drive("A", "g", "e", tau(18e6))
        .drive("A", "g", "s", tau(-11e6))
        .drive("B", "e", "r", tau(22e6))
        .initial("g")
        .window(a, b)
        .build()
}

fn pops(m: &Model) -> levelplan::solve::Solution {
    solve(m, &SolveOptions::default()).expect("solve")
}

fn assert_close(a: &[f64], b: &[f64], tol: f64, what: &str) {
    for (x, y) in a.iter().zip(b) {
        assert!((x - y).abs() < tol, "{what}: {a:?} vs {b:?}");
    }
}

// Source: a common energy offset is a global phase (quantum mechanics; any
// textbook). Populations agree to 1e-8.
#[test]
fn common_energy_offset_leaves_populations() {
    let a = pops(&ladder(0.0, 0.0));
    let b = pops(&ladder(0.0, tau(37.5e12)));
    assert_eq!(a.method, MethodUsed::Adaptive);
    assert!(
        a.final_populations[3] > 0.02,
        "the scheme must do something: {:?}",
        a.final_populations
    );
    assert_close(&a.final_populations, &b.final_populations, 1e-8, "final");
    assert_close(&a.peak_populations, &b.peak_populations, 1e-8, "peak");
    assert!((a.lost - b.lost).abs() < 1e-8);
    // Exact propagator: rectangular two-level with decay.
    let mk = |off: f64| {
        Builder::new()
            .level("g", off, 0.0)
            .level("e", W_E + off, 1e7)
            .coupling("g", "e")
            .field("L", W_E + tau(1e6), rect(0.0, 300e-9))
            .drive("L", "g", "e", tau(7e6))
            .initial("g")
            .window(0.0, 300e-9)
            .build()
    };
    let (x, y) = (pops(&mk(0.0)), pops(&mk(tau(12e12))));
    assert_eq!(x.method, MethodUsed::Exact);
    assert_close(
        &x.final_populations,
        &y.final_populations,
        1e-8,
        "exact final",
    );
}

// Source: time-translation invariance of a scheme without closed loops (the
// absolute carrier phases only change unobservable level phases). To 1e-8.
#[test]
fn common_time_shift_leaves_populations() {
    let a = pops(&ladder(0.0, 0.0));
    let b = pops(&ladder(3.7e-6, 0.0));
    assert_close(&a.final_populations, &b.final_populations, 1e-8, "final");
    assert_close(&a.peak_populations, &b.peak_populations, 1e-8, "peak");
}

/// Four levels, two rectangular fields overlapping in time, decay, a close
/// spectator and a field that drives two couplings.
fn rect_scheme(method: Method) -> Model {
    Builder::new()
        .level("g", 0.0, 0.0)
        .level("e", W_E, 1.0 / 120e-9)
        .level("s", W_E + tau(45e6), 1.0 / 60e-9)
        .level("r", W_R, 2e5)
        .coupling("g", "e")
        .coupling("g", "s")
        .coupling("e", "r")
        .field("A", W_E + tau(8e6), rect(10e-9, 400e-9))
        .field("B", W_R - W_E + tau(-3e6), rect(150e-9, 500e-9))
        .drive("A", "g", "e", tau(12e6))
        .drive("A", "g", "s", tau(9e6))
        .drive("B", "e", "r", tau(15e6))
        .initial("g")
        .window(0.0, 700e-9)
        .method(method)
        .build()
}

// Exact and adaptive propagators agree on the same piecewise-constant scheme
// to 1e-8 (two independent methods for one equation; common practice, no source).
#[test]
fn exact_and_adaptive_agree() {
    let opts = SolveOptions {
        samples: 71,
        ..Default::default()
    };
    let e = solve(&rect_scheme(Method::Auto), &opts).expect("exact");
    let a = solve(&rect_scheme(Method::Adaptive), &opts).expect("adaptive");
    assert_eq!(e.method, MethodUsed::Exact);
    assert_eq!(a.method, MethodUsed::Adaptive);
    eprintln!(
        "exact {:?} lost {}\nadapt {:?} lost {}",
        e.final_populations, e.lost, a.final_populations, a.lost
    );
    assert_close(&e.final_populations, &a.final_populations, 1e-8, "final");
    assert_close(&e.peak_populations, &a.peak_populations, 1e-8, "peak");
    assert!((e.lost - a.lost).abs() < 1e-8);
    assert!(e.lost > 0.05);
    for (x, y) in e.samples.iter().zip(&a.samples) {
        assert_eq!(x.0, y.0);
        assert_close(&x.1, &y.1, 1e-8, "sample");
    }
    assert!(
        e.norm_error < 1e-10 && a.norm_error < 1e-8,
        "{} {}",
        e.norm_error,
        a.norm_error
    );
}

// Source: fields add linearly in the dipole coupling (common practice, no
// source): two fields of one frequency on one transition with equal Rabi
// frequencies act as one field of twice the Rabi frequency when in phase and
// cancel when in antiphase. Exercises the residual (constant) phase of the
// second field.
#[test]
fn two_fields_on_one_transition_interfere() {
    let rabi = tau(3e6);
    let t = 200e-9;
    for (phase, expect) in [(0.0, (rabi * t).sin().powi(2)), (std::f64::consts::PI, 0.0)] {
        for method in [Method::Auto, Method::Adaptive] {
            let m = Builder::new()
                .level("g", 0.0, 0.0)
                .level("e", W_E, 0.0)
                .coupling("g", "e")
                .field("A", W_E, rect(0.0, t))
                .field_full("B", W_E, rect(0.0, t), 0.0, phase, true)
                .drive("A", "g", "e", rabi)
                .drive("B", "g", "e", rabi)
                .initial("g")
                .window(0.0, t)
                .method(method)
                .build();
            let s = pops(&m);
            assert!(
                (s.final_populations[1] - expect).abs() < 1e-8,
                "{method:?} phase {phase}: {}",
                s.final_populations[1]
            );
        }
    }
}

// A second field detuned from the first on the same transition keeps a
// residual phase: exact does not apply and says why; auto runs adaptive.
// With equal Rabi frequencies and frequencies omega0 +- d, the pair is one
// field at omega0 with envelope 2 cos(d t) (trigonometric identity), whose
// resonant pulse area 2 Omega sin(d T)/d gives P = sin^2(Omega sin(d T)/d)
// (area theorem for a resonant real envelope; common practice, no source).
#[test]
fn bichromatic_pair_needs_the_adaptive_propagator() {
    let rabi = tau(4e6);
    let d = tau(1.5e6);
    let t = 300e-9;
    let mk = |method| {
        Builder::new()
            .level("g", 0.0, 0.0)
            .level("e", W_E, 0.0)
            .coupling("g", "e")
            .field("A", W_E + d, rect(0.0, t))
            .field("B", W_E - d, rect(0.0, t))
            .drive("A", "g", "e", rabi)
            .drive("B", "g", "e", rabi)
            .initial("g")
            .window(0.0, t)
            .method(method)
            .build()
    };
    match solve(&mk(Method::Exact), &SolveOptions::default()) {
        Err(SolveError::ExactNotApplicable { reason }) => {
            assert!(
                reason.contains("residual phase") && reason.contains("'B'"),
                "{reason}"
            )
        }
        other => panic!("expected ExactNotApplicable, got {other:?}"),
    }
    let s = pops(&mk(Method::Auto));
    assert_eq!(s.method, MethodUsed::Adaptive);
    let p = (rabi * (d * t).sin() / d).sin().powi(2);
    assert!(
        (s.final_populations[1] - p).abs() < 1e-7,
        "{} vs {p}",
        s.final_populations[1]
    );
}

// Switching peak tracking off (as scans and tune do) changes no final
// population, lost population or sample: the adaptive stepper takes the same
// steps, the exact one a single exponential per stretch instead of
// sub-steps, which agrees to rounding (U(T) = U(T/n)^n; common practice, no
// source). 1e-12 abs, or twice the norm drift the sub-steps accumulate
// where that is larger; peaks then report the final populations.
#[test]
fn peaks_off_changes_no_final_population() {
    let cases = [
        rect_scheme(Method::Auto),
        rect_scheme(Method::Adaptive),
        ladder(0.0, 0.0),
        two_level(W_E, tau(5e6), tau(1e6), 1e-6),
        two_level(W_E, tau(40e6), tau(-3e6), 2e-6),
    ];
    for (i, m) in cases.iter().enumerate() {
        for samples in [0, 17] {
            let on = SolveOptions {
                samples,
                ..Default::default()
            };
            let off = SolveOptions {
                peaks: false,
                ..on.clone()
            };
            let (a, b) = (solve(m, &on).expect("on"), solve(m, &off).expect("off"));
            let worst = a
                .final_populations
                .iter()
                .zip(&b.final_populations)
                .map(|(x, y)| (x - y).abs())
                .fold((a.lost - b.lost).abs(), f64::max);
            eprintln!(
                "case {i} ({:?}), {samples} samples: largest difference {worst:e}, steps {} -> {}, norm error {:e} -> {:e}",
                a.method, a.steps, b.steps, a.norm_error, b.norm_error
            );
            // Many sub-steps accumulate rounding of their own (case 4: 80 Rabi
            // periods in 13523 sub-steps drift by 1.8e-12 in the norm): the
            // difference stays within that drift.
            let tol = 1e-12_f64.max(2.0 * a.norm_error);
            assert!(worst < tol, "case {i}: {a:?}\n{b:?}");
            assert_eq!(b.peak_populations, b.final_populations);
            if a.method == MethodUsed::Adaptive {
                assert_eq!(a.final_populations, b.final_populations);
                assert_eq!(a.steps, b.steps);
            } else {
                assert!(b.steps <= a.steps);
            }
            assert_eq!(a.samples.len(), b.samples.len());
            for (x, y) in a.samples.iter().zip(&b.samples) {
                assert_eq!(x.0, y.0);
                assert_close(&x.1, &y.1, 1e-12, "sample");
            }
        }
    }
}
