//! Rectangular-pulse checks of both propagators against the detuned Rabi
//! formula, P_e = Omega^2/(Omega^2+Delta^2) sin^2(sqrt(Omega^2+Delta^2) T/2)
//! (I. I. Rabi, Phys. Rev. 51, 652 (1937); any quantum-optics textbook).
//! Numbers are invented, illustrative values.

use crate::solve_support::*;
use levelplan::model::Method;
use levelplan::solve::{solve, MethodUsed, SolveOptions};

const OMEGA0: f64 = 2.0 * std::f64::consts::PI * 431.2e12; // invented optical transition

fn cases() -> Vec<(f64, f64, f64)> {
    // (Omega, Delta, T)
    vec![
        (tau(5e6), 0.0, 1.0e-7),
        (tau(5e6), tau(3e6), 1.0e-6),
        (tau(2e6), tau(-7.5e6), 2.3e-6),
        (tau(40e6), tau(1e9), 0.7e-6),
    ]
}

// Source: detuned Rabi formula (I. I. Rabi, Phys. Rev. 51, 652 (1937)), to 1e-9 with exact.
#[test]
fn exact_matches_detuned_rabi_formula() {
    for (rabi, delta, t) in cases() {
        let m = two_level(OMEGA0, rabi, delta, t);
        let s = solve(&m, &SolveOptions::default()).expect("solve");
        assert_eq!(s.method, MethodUsed::Exact);
        // The detuning the model carries (omega_L = omega_0 + Delta rounds at
        // the 0.5 rad/s level for optical carriers).
        let delta = m.detuning(&m.drives()[0]);
        let p = rabi_formula(rabi, delta, t);
        assert!(
            (s.final_populations[1] - p).abs() < 1e-9,
            "{} vs {p}",
            s.final_populations[1]
        );
        eprintln!("exact err {:e}", s.final_populations[1] - p);
        assert!((s.final_populations[0] - (1.0 - p)).abs() < 1e-9);
        assert!(s.norm_error < 1e-10, "norm error {}", s.norm_error);
        assert_eq!(s.lost, 0.0);
    }
}

// Source: same formula, to 1e-7 with the adaptive propagator at the default tolerances.
#[test]
fn adaptive_matches_detuned_rabi_formula() {
    for (rabi, delta, t) in cases() {
        let m = with_method(&two_level(OMEGA0, rabi, delta, t), Method::Adaptive);
        let s = solve(&m, &SolveOptions::default()).expect("solve");
        assert_eq!(s.method, MethodUsed::Adaptive);
        let delta = m.detuning(&m.drives()[0]);
        let p = rabi_formula(rabi, delta, t);
        eprintln!(
            "adaptive err {:e} steps {} evals {}",
            s.final_populations[1] - p,
            s.steps,
            s.evaluations
        );
        assert!(
            (s.final_populations[1] - p).abs() < 1e-7,
            "{} vs {p}",
            s.final_populations[1]
        );
        assert!(s.norm_error < 1e-8, "norm error {}", s.norm_error);
    }
}

// Source: the peak of the detuned Rabi oscillation is Omega^2/(Omega^2+Delta^2)
// (same formula, sin^2 = 1); the pulses here last several generalised periods.
#[test]
fn peak_population_is_the_rabi_amplitude() {
    for method in [Method::Exact, Method::Adaptive] {
        for (rabi, delta, t) in cases().into_iter().skip(1) {
            let m = with_method(&two_level(OMEGA0, rabi, delta, t), method);
            let s = solve(&m, &SolveOptions::default()).expect("solve");
            let delta = m.detuning(&m.drives()[0]);
            let amp = rabi * rabi / (rabi * rabi + delta * delta);
            eprintln!(
                "{method:?} peak err {:e} steps {}",
                s.peak_populations[1] - amp,
                s.steps
            );
            assert!(
                (s.peak_populations[1] - amp).abs() < 1e-7 * amp.max(1e-3),
                "{method:?}: {} vs {amp}",
                s.peak_populations[1]
            );
            assert!((s.peak_populations[0] - 1.0).abs() < 1e-12);
        }
    }
}
