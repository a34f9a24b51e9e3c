//! The perturbative estimator against published and textbook results.
//! Every scheme here is an invented, illustrative two- or three-level case.

use std::f64::consts::PI;

use crate::estimate_support::{rect, rel, tau, Builder};
use levelplan::estimate::{
    envelope_spectrum, envelope_spectrum_quadrature, estimate, EstimateError, Order,
};
use levelplan::model::{Envelope, Model, ModelError, Part};
use num_complex::Complex64 as C;

/// An optical transition frequency (rad/s), illustrative.
const W0: f64 = 2.0 * PI * 384.0e12;

fn two_level(detuning: f64, rabi: f64, env: Envelope) -> Model {
    Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned("L", "g", "e", detuning, env)
        .drive("L", "g", "e", rabi)
        .build()
}

/// The detuning of drive `i` as the model holds it: omega_L - omega_ab
/// carries the rounding of two optical frequencies (~0.5 rad/s), so formulas
/// are evaluated at the model's own Delta.
fn delta(m: &Model, i: usize) -> f64 {
    m.detuning(&m.drives()[i])
}

fn p_level(m: &Model, id: &str) -> f64 {
    let est = estimate(m).expect("estimate");
    let k = m.level_index(id).expect("level");
    est.levels[k].first_order.expect("first order")
}

// First-order rectangular result P = Omega^2 sin^2(Delta T/2) / Delta^2
// (standard first-order time-dependent perturbation theory, J. J. Sakurai,
// Modern Quantum Mechanics, sec. 5.6, constant perturbation switched on at 0).
#[test]
fn rectangular_pulse_gives_the_sinc_form() {
    let t = 1e-6;
    let omega = tau(50e3);
    for &d in &[0.0, tau(0.3e6), tau(-1.0e6), tau(13.7e6), tau(-1.0e9)] {
        let m = two_level(d, omega, rect(2e-6, t));
        let p = p_level(&m, "e");
        let d = delta(&m, 0);
        let expect = if d == 0.0 {
            (omega * t / 2.0).powi(2)
        } else {
            omega.powi(2) * (d * t / 2.0).sin().powi(2) / d.powi(2)
        };
        assert!(
            rel(p, expect) < 1e-10,
            "Delta/2pi = {} Hz: {p} vs {expect}",
            d / (2.0 * PI)
        );
    }
}

// Gaussian f = exp(-t^2 / (2 sigma^2)): P = (Omega/2)^2 2 pi sigma^2 exp(-Delta^2 sigma^2)
// (same source: Sakurai, sec. 5.6, first-order amplitude as the Fourier
// transform of the perturbation).
#[test]
fn gaussian_pulse_gives_the_gaussian_form() {
    let sigma = 100e-9;
    let omega = tau(0.2e6);
    for &d in &[0.0, tau(1e6), tau(-3e6), tau(8e6)] {
        let m = two_level(d, omega, Envelope::Gaussian { center: 0.0, sigma });
        let p = p_level(&m, "e");
        let d = delta(&m, 0);
        let expect =
            (omega / 2.0).powi(2) * 2.0 * PI * sigma * sigma * (-(d * sigma).powi(2)).exp();
        assert!(
            rel(p, expect) < 1e-10,
            "Delta/2pi = {} Hz: {p} vs {expect}",
            d / (2.0 * PI)
        );
    }
}

// Rosen-Zener: for Omega(t) = Omega0 sech(t/tau) the exact transition
// probability is P = sin^2(pi Omega0 tau / 2) sech^2(pi Delta tau / 2)
// (N. Rosen and C. Zener, Phys. Rev. 40, 502 (1932)). In the weak-field limit
// the first-order estimate is its leading term, so
// (P1 - P_RZ) / P_RZ = x^2/3 + O(x^4), x = pi Omega0 tau / 2 (from sin^2 x =
// x^2 (1 - x^2/3 + ...)): checked over two decades of Omega0.
#[test]
fn sech_pulse_is_the_weak_field_rosen_zener_limit() {
    let tau_p = 50e-9;
    for &d in &[0.0, tau(2e6), tau(-7e6)] {
        let mut prev = None;
        for &o in &[tau(0.4e6), tau(0.04e6), tau(0.004e6)] {
            let m = two_level(
                d,
                o,
                Envelope::Sech {
                    center: 0.0,
                    tau: tau_p,
                },
            );
            let p1 = p_level(&m, "e");
            let d = delta(&m, 0);
            let x = PI * o * tau_p / 2.0;
            let sech = 1.0 / (PI * d * tau_p / 2.0).cosh();
            let p_rz = x.sin().powi(2) * sech * sech;
            let excess = (p1 - p_rz) / p_rz;
            assert!(
                rel(excess, x * x / 3.0) < 0.01,
                "excess {excess} vs {}",
                x * x / 3.0
            );
            if let Some(e) = prev {
                // A decade in Omega0 is two decades in the excess.
                assert!(rel(e / excess, 100.0) < 0.01);
            }
            prev = Some(excess);
        }
    }
}

/// Closed form and quadrature of one envelope at one nu.
fn compare(env: &Envelope, nu: f64, interval: (f64, f64)) -> f64 {
    let f = envelope_spectrum(env, nu).expect("closed form");
    let q = envelope_spectrum_quadrature(env, nu, 0.0, interval).expect("quadrature");
    // For symmetric envelopes the spectrum about the centre is real.
    (q - C::new(f, 0.0)).norm() / f.abs()
}

// The quadrature reproduces every closed form, near resonance and in the far
// wings (the closed forms are elementary Fourier integrals: common practice,
// no source; the sin2/Blackman forms are derived in `envelope_spectrum`).
#[test]
fn quadrature_matches_every_closed_form() {
    let d = 1e-6;
    let a = 2.0 * PI / d;
    let cases: Vec<(Envelope, Vec<f64>)> = vec![
        (
            rect(-0.3e-6, d),
            vec![0.0, 0.7 * a, 3.3 * a, 150.3 * a, 1e4 * a + 0.5],
        ),
        (
            Envelope::Gaussian {
                center: 0.2e-6,
                sigma: 0.2e-6,
            },
            vec![0.0, 1.0 / 0.2e-6, 3.0 / 0.2e-6, 5.0 / 0.2e-6],
        ),
        (
            Envelope::Sech {
                center: 0.0,
                tau: 0.1e-6,
            },
            vec![0.0, 1.0 / 0.1e-6, 4.0 / 0.1e-6, 8.0 / 0.1e-6],
        ),
        (
            Envelope::Sin2 {
                start: 0.0,
                duration: d,
            },
            vec![0.0, a, 1.5 * a, 5.5 * a, 30.5 * a, 200.5 * a],
        ),
        (
            Envelope::Blackman {
                start: 0.0,
                duration: d,
            },
            vec![0.0, a, 2.0 * a, 2.5 * a, 7.5 * a, 30.5 * a, 200.5 * a],
        ),
    ];
    for (env, nus) in cases {
        let (s, e) = env.support();
        // The smooth infinite shapes are integrated far beyond their 1e-8
        // support, so that the tails do not limit the comparison.
        let w = e - s;
        let interval = match env {
            Envelope::Gaussian { .. } | Envelope::Sech { .. } => (s - w, e + w),
            _ => (s, e),
        };
        for &nu in &nus {
            for sign in [1.0, -1.0] {
                let r = compare(&env, sign * nu, interval);
                // Deep wings (|F| ~ 1e-8 of the area, sin2 and Blackman at
                // 200 a) sit at the rounding floor of the phase sums.
                let deep = matches!(env, Envelope::Sin2 { .. } | Envelope::Blackman { .. })
                    && nu > 100.0 * a;
                let allowed = if deep { 1e-7 } else { 1e-8 };
                assert!(
                    r < allowed,
                    "{} at nu = {}: relative error {r}",
                    env.shape_name(),
                    sign * nu
                );
            }
        }
    }
}

// A chirped Gaussian has a closed-form spectrum: integral exp(-A u^2 + B u) du
// = sqrt(pi / A) exp(B^2 / (4A)), Re A > 0 (the standard Gaussian integral,
// from memory), here A = 1/(2 sigma^2) - i kappa, B = i nu.
#[test]
fn chirped_quadrature_matches_the_gaussian_integral() {
    let sigma = 0.3e-6;
    let env = Envelope::Gaussian {
        center: 1e-6,
        sigma,
    };
    let (s, e) = env.support();
    let w = e - s;
    for &ks in &[0.5, 2.0, -6.0] {
        let kappa = ks / (sigma * sigma);
        for &ns in &[0.0, 1.0, -4.0, 6.0] {
            let nu = ns / sigma;
            let q = envelope_spectrum_quadrature(&env, nu, kappa, (s - w, e + w)).unwrap();
            let a = C::new(0.5 / (sigma * sigma), -kappa);
            let b = C::new(0.0, nu);
            let exact = (C::new(PI, 0.0) / a).sqrt() * (b * b / (4.0 * a)).exp();
            let r = (q - exact).norm() / exact.norm();
            assert!(r < 1e-8, "kappa sigma^2 = {ks}, nu sigma = {ns}: {r}");
        }
    }
}

// A sampled symmetric trapezoid (FWHM a, linear ramps of length r) is the
// convolution of a rectangle of width a with one of width r / r, so its
// spectrum is a sinc(nu a / 2) sinc(nu r / 2) (convolution theorem; common
// practice, no source). Sampled envelopes are piecewise linear, so the
// quadrature is exact up to rounding.
#[test]
fn sampled_trapezoid_matches_its_closed_form() {
    let (a, r) = (1e-6, 0.2e-6);
    let env = Envelope::Samples {
        times: vec![-(a + r) / 2.0, -(a - r) / 2.0, (a - r) / 2.0, (a + r) / 2.0],
        values: vec![0.0, 1.0, 1.0, 0.0],
    };
    let sinc = |x: f64| if x == 0.0 { 1.0 } else { x.sin() / x };
    for &nu in &[0.0, 3e6, -2.7e7, 4.4e8, 1e12 + 1.0] {
        let q = envelope_spectrum_quadrature(&env, nu, 0.0, env.support()).unwrap();
        let exact = a * sinc(nu * a / 2.0) * sinc(nu * r / 2.0);
        assert!(
            (q - C::new(exact, 0.0)).norm() <= 1e-9 * exact.abs() + 1e-22,
            "nu {nu}: {q} vs {exact}"
        );
    }
}

// A window shorter than the pulse truncates the integral: a 2T rectangle seen
// through a window of length T gives the sinc form of length T (Sakurai 5.6).
#[test]
fn window_truncates_the_pulse() {
    let t = 1e-6;
    let omega = tau(30e3);
    let d = tau(2.3e6);
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned("L", "g", "e", d, rect(0.0, 2.0 * t))
        .drive("L", "g", "e", omega)
        .window(0.0, t)
        .build();
    let p = p_level(&m, "e");
    let d = delta(&m, 0);
    let expect = omega.powi(2) * (d * t / 2.0).sin().powi(2) / d.powi(2);
    assert!(rel(p, expect) < 1e-10, "{p} vs {expect}");
    // A Gaussian cut at its centre: half the resonant amplitude.
    let sigma = 0.2e-6;
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned(
            "L",
            "g",
            "e",
            0.0,
            Envelope::Gaussian { center: 0.0, sigma },
        )
        .drive("L", "g", "e", omega)
        .window(-2e-6, 0.0)
        .build();
    let p = p_level(&m, "e");
    let expect = (omega / 2.0 * sigma * (2.0 * PI).sqrt() / 2.0).powi(2);
    assert!(rel(p, expect) < 1e-8, "{p} vs {expect}");
}

// Emission (initial upper level) gives the same population; the source
// reports the drive's Delta = omega_L - omega_ab whatever the direction.
#[test]
fn emission_and_absorption_agree_and_report_delta() {
    let d = tau(-4.2e6);
    let omega = tau(100e3);
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("e", 1.0)
        .coupling("g", "e")
        .tuned("L", "g", "e", d, rect(0.0, 1e-6))
        .drive("L", "g", "e", omega)
        .build();
    let est = estimate(&m).unwrap();
    let d = delta(&m, 0);
    let g = &est.levels[0];
    assert_eq!(g.order, Order::First);
    assert_eq!(est.levels[1].order, Order::Initial);
    assert_eq!(est.levels[1].first_order, None);
    let expect = omega.powi(2) * (d * 1e-6 / 2.0).sin().powi(2) / d.powi(2);
    assert!(rel(g.first_order.unwrap(), expect) < 1e-10);
    let s = &g.sources[0];
    assert_eq!((s.drive, s.from), (0, 1));
    assert!(rel(s.detuning, d) < 1e-9);
    assert_eq!(s.rabi, omega);
}

// Contributions add coherently with their absolute-time phases: two equal
// weak pulses separated by tau give 4 P1 cos^2(Delta tau / 2), the weak-field
// Ramsey fringe (N. F. Ramsey, Phys. Rev. 78, 695 (1950)); each source still
// reports its own P1. Opposite field phases cancel.
#[test]
fn sources_add_coherently_with_absolute_time_phases() {
    let (t, sep) = (0.2e-6, 1.3e-6);
    let omega = tau(20e3);
    let d = tau(0.37e6);
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned("A", "g", "e", d, rect(0.0, t))
        .tuned("B", "g", "e", d, rect(sep, t))
        .drive("A", "g", "e", omega)
        .drive("B", "g", "e", omega)
        .build();
    let d = delta(&m, 0);
    let p1 = omega.powi(2) * (d * t / 2.0).sin().powi(2) / d.powi(2);
    let est = estimate(&m).unwrap();
    let e = &est.levels[1];
    assert_eq!(e.sources.len(), 2);
    for s in &e.sources {
        assert!(rel(s.population, p1) < 1e-10);
    }
    let fringe = 4.0 * p1 * (d * sep / 2.0).cos().powi(2);
    assert!(
        rel(e.first_order.unwrap(), fringe) < 1e-9,
        "{} vs {fringe}",
        e.first_order.unwrap()
    );
    // Phase pi on B at the same times as A: complete cancellation.
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned("A", "g", "e", d, rect(0.0, t))
        .tuned("B", "g", "e", d, rect(0.0, t))
        .phase("B", PI)
        .drive("A", "g", "e", omega)
        .drive("B", "g", "e", omega)
        .build();
    let p = p_level(&m, "e");
    assert!(p < 1e-12 * p1, "{p}");
}

/// Lambda: g1, g3 ground-like (g3 2pi x 6.8 GHz above g1), e2 excited; field
/// A on g1-e2 detuned by `d1`, field B on g3-e2 by `d2`, both with envelope
/// `env`, peak Rabi frequencies `o1`, `o2`.
fn lambda(d1: f64, d2: f64, o1: f64, o2: f64, env: Envelope) -> Model {
    let w3 = tau(6.8e9);
    Builder::new()
        .level("g1", 0.0)
        .level("g3", w3)
        .level("e2", W0)
        .initial("g1", 1.0)
        .coupling("g1", "e2")
        .coupling("g3", "e2")
        .tuned("A", "g1", "e2", d1, env.clone())
        .tuned("B", "g3", "e2", d2, env)
        .drive("A", "g1", "e2", o1)
        .drive("B", "g3", "e2", o2)
        .build()
}

// Exact second-order amplitude for two rectangles switched on together
// (direct integration of the second-order term, Sakurai sec. 5.6):
// c3 = -i (O1 O2 / (4 D1)) [ (e^{i (D2 - D1) T} - 1) / (i (D2 - D1)) - (e^{i D2 T} - 1) / (i D2) ].
#[test]
fn second_order_march_is_exact_for_rectangles() {
    let t = 2e-6;
    let (o1, o2) = (tau(0.5e6), tau(0.3e6));
    for &(d1, d2) in &[
        (tau(40e6), tau(40e6)),
        (tau(40e6), tau(40.3e6)),
        (tau(-3e6), tau(-2.2e6)),
    ] {
        let m = lambda(d1, d2, o1, o2, rect(0.0, t));
        let (d1, d2) = (delta(&m, 0), delta(&m, 1));
        let est = estimate(&m).unwrap();
        let l3 = &est.levels[1];
        assert_eq!(l3.order, Order::Second);
        assert_eq!(l3.first_order, Some(0.0));
        let i = C::new(0.0, 1.0);
        let e = |x: f64| {
            if x == 0.0 {
                C::new(t, 0.0)
            } else {
                ((i * x * t).exp() - 1.0) / (i * x)
            }
        };
        let c3 = -i * (o1 * o2 / (4.0 * d1)) * (e(d2 - d1) - e(d2));
        let p = l3.second_order.unwrap();
        assert!(rel(p, c3.norm_sqr()) < 1e-9, "{p} vs {}", c3.norm_sqr());
        assert_eq!(l3.sources.len(), 1);
        assert_eq!((l3.sources[0].drive, l3.sources[0].from), (1, 2));
    }
}

// Adiabatic elimination of the far-detuned excited state gives an effective
// two-level coupling Omega_eff = Omega1 Omega2 / (2 Delta) between g1 and g3
// (E. Brion, L. H. Pedersen, K. Molmer, J. Phys. A 40, 1033 (2007)); in the
// weak limit and on two-photon resonance P3 = (Omega_eff T / 2)^2, and with a
// two-photon detuning delta = D1 - D2 the sinc form Omega_eff^2 sin^2(delta T/2)/delta^2.
// Light shifts are of higher order in the fields and are not part of the
// second-order amplitude.
#[test]
fn second_order_matches_adiabatic_elimination_rectangular() {
    let t = 10e-6;
    let d = tau(100e6);
    let (o1, o2) = (tau(1e6), tau(1.3e6));
    let oeff = o1 * o2 / (2.0 * d);
    let p = estimate(&lambda(d, d, o1, o2, rect(0.0, t)))
        .unwrap()
        .levels[1]
        .second_order
        .unwrap();
    let expect = (oeff * t / 2.0).powi(2);
    assert!(rel(p, expect) < 0.01, "{p} vs {expect}");
    let delta = tau(30e3);
    let p = estimate(&lambda(d, d - delta, o1, o2, rect(0.0, t)))
        .unwrap()
        .levels[1]
        .second_order
        .unwrap();
    let expect = oeff.powi(2) * (delta * t / 2.0).sin().powi(2) / delta.powi(2);
    assert!(rel(p, expect) < 0.02, "{p} vs {expect}");
}

// The same with Gaussian pulses: Omega_eff(t) = Omega1 Omega2 f(t)^2 / (2 Delta),
// f^2 a Gaussian of sigma / sqrt 2, and the effective two-level first-order
// result (Omega_eff/2)^2 2 pi s^2 exp(-delta^2 s^2), s = sigma / sqrt 2
// (Brion et al. 2007 for the elimination, Sakurai 5.6 for the first order).
#[test]
fn second_order_matches_adiabatic_elimination_gaussian() {
    let sigma = 2e-6;
    let d = tau(-150e6);
    let (o1, o2) = (tau(1.5e6), tau(0.8e6));
    let oeff = o1 * o2 / (2.0 * d);
    let s = sigma / 2f64.sqrt();
    for &delta in &[0.0, tau(50e3), tau(-120e3)] {
        let env = Envelope::Gaussian { center: 0.0, sigma };
        let m = lambda(d, d - delta, o1, o2, env);
        let est = estimate(&m).unwrap();
        let p = est.levels[1].second_order.unwrap();
        let expect = (oeff / 2.0).powi(2) * 2.0 * PI * s * s * (-(delta * s).powi(2)).exp();
        assert!(rel(p, expect) < 0.02, "delta {delta}: {p} vs {expect}");
    }
}

// Two intermediate levels, one a distance Delta above the one-photon
// resonance and one Delta below: adiabatic elimination sums the paths,
// Omega_eff = sum_m Omega1m Omega2m / (2 Delta_m) (Brion, Pedersen, Molmer,
// J. Phys. A 40, 1033 (2007), several eliminated levels), so equal dipole
// products cancel and opposite ones double the single-path amplitude. This
// checks that second-order paths add coherently with their phases.
#[test]
fn second_order_paths_through_two_levels_interfere() {
    let t = 10e-6;
    let d = tau(100e6);
    let o = tau(1e6);
    let oeff = o * o / (2.0 * d);
    let single = (oeff * t / 2.0).powi(2);
    for &(sign, factor) in &[(1.0, 0.0), (-1.0, 4.0)] {
        let m = Builder::new()
            .level("g1", 0.0)
            .level("g3", tau(6.8e9))
            .level("e", W0)
            .level("e'", W0 + 2.0 * d)
            .initial("g1", 1.0)
            .coupling("g1", "e")
            .coupling("g3", "e")
            .coupling("g1", "e'")
            .coupling("g3", "e'")
            .tuned("A", "g1", "e", d, rect(0.0, t))
            .tuned("B", "g3", "e", d, rect(0.0, t))
            .drive("A", "g1", "e", o)
            .drive("B", "g3", "e", o)
            .drive("A", "g1", "e'", o)
            .drive("B", "g3", "e'", sign * o)
            .build();
        let est = estimate(&m).unwrap();
        let l3 = &est.levels[1];
        assert_eq!(l3.order, Order::Second);
        assert_eq!(l3.sources.len(), 2);
        for s in &l3.sources {
            assert!(
                rel(s.population, single) < 0.01,
                "{} vs {single}",
                s.population
            );
        }
        let p = l3.second_order.unwrap();
        if factor == 0.0 {
            assert!(p < 1e-3 * single, "{p} vs {single}");
        } else {
            assert!(rel(p, factor * single) < 0.01, "{p} vs {}", factor * single);
        }
    }
}

// A level no drive reaches is Unreached with first order 0.
#[test]
fn unreached_level_is_zero() {
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .level("x", 2.0 * W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned("L", "g", "e", 0.0, rect(0.0, 1e-6))
        .drive("L", "g", "e", tau(1e5))
        .build();
    let est = estimate(&m).unwrap();
    assert_eq!(est.levels[2].order, Order::Unreached);
    assert_eq!(est.levels[2].first_order, Some(0.0));
    assert_eq!(est.levels[2].second_order, None);
}

// A drive beyond the detuning cutoff is listed with its first-order
// population and its light shift Omega^2 / (4 Delta) on the lower level:
// red detuning lowers the ground state (far-detuned AC Stark shift, R. Grimm,
// M. Weidemuller, Yu. B. Ovchinnikov, Adv. At. Mol. Opt. Phys. 42, 95 (2000),
// eq. (10) with both rotating and counter-rotating terms).
#[test]
fn excluded_drive_has_population_and_light_shift() {
    let sigma = 5e-9;
    let d = tau(-5e12);
    let omega = tau(3e9);
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned(
            "trap",
            "g",
            "e",
            d,
            Envelope::Gaussian { center: 0.0, sigma },
        )
        .drive("trap", "g", "e", omega)
        .build();
    let est = estimate(&m).unwrap();
    assert_eq!(est.excluded.len(), 1);
    let x = &est.excluded[0];
    assert_eq!(x.drive, 0);
    let shift = omega * omega / (4.0 * d);
    assert!(shift < 0.0);
    assert!(rel(x.light_shift, shift) < 1e-12);
    let full = omega * omega / 4.0 * (1.0 / d - 1.0 / (2.0 * W0 + d));
    assert!(rel(x.light_shift_with_counter_rotating, full) < 1e-12);
    // Gaussian first order at Delta sigma = 157: exp(-2.5e4) underflows to 0.
    let expect = (omega / 2.0).powi(2) * 2.0 * PI * sigma * sigma * (-(d * sigma).powi(2)).exp();
    assert!((x.population - expect).abs() <= 1e-300);
    // The excluded drive still counts in the level's estimate.
    assert_eq!(est.levels[1].order, Order::First);
    assert_eq!(est.levels[1].sources.len(), 1);
    // A rectangle at the same detuning: the sinc form, not zero.
    let t = 1e-9;
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned("trap", "g", "e", d, rect(0.0, t))
        .drive("trap", "g", "e", omega)
        .build();
    let x = &estimate(&m).unwrap().excluded[0];
    let d = delta(&m, 0);
    let expect = omega.powi(2) * (d * t / 2.0).sin().powi(2) / d.powi(2);
    assert!(rel(x.population, expect) < 1e-9);
}

// Rb-87 D2 line, 5P3/2 hyperfine splittings F'=3 - F'=2 = 266.650 MHz and
// F'=2 - F'=1 = 156.947 MHz (D. A. Steck, "Rubidium 87 D Line Data", from
// memory). A short rectangular pi pulse resonant with F=2 -> F'=3 leaks into
// F'=2; the estimate attributes it to the F=2 -> F'=2 drive at
// Delta = +266.65 MHz (the field is blue of that line), with the sinc form.
// Relative dipole strengths are illustrative.
#[test]
fn hyperfine_leak_is_attributed_to_the_right_drive() {
    let w3 = tau(384.230_484_468_5e12 + 193.740_7e6);
    let w2 = w3 - tau(266.650e6);
    let w1 = w2 - tau(156.947e6);
    let t = 40e-9;
    let omega = PI / t;
    let m = Builder::new()
        .level("F2", 0.0)
        .level("F'1", w1)
        .level("F'2", w2)
        .level("F'3", w3)
        .initial("F2", 1.0)
        .coupling("F2", "F'3")
        .coupling("F2", "F'2")
        .coupling("F2", "F'1")
        .field("probe", w3, rect(0.0, t))
        .drive("probe", "F2", "F'3", omega)
        .drive("probe", "F2", "F'2", 0.6 * omega)
        .drive("probe", "F2", "F'1", 0.25 * omega)
        .build();
    let est = estimate(&m).unwrap();
    let f2 = &est.levels[2];
    assert_eq!(f2.sources.len(), 1);
    let s = &f2.sources[0];
    assert_eq!(s.drive, 1);
    assert!(
        (s.detuning / (2.0 * PI) - 266.650e6).abs() < 1.0,
        "{}",
        s.detuning / (2.0 * PI)
    );
    let o = 0.6 * omega;
    let expect = o * o * (s.detuning * t / 2.0).sin().powi(2) / s.detuning.powi(2);
    assert!(rel(s.population, expect) < 1e-9);
    let f1 = &est.levels[1].sources[0];
    assert!((f1.detuning / (2.0 * PI) - 423.597e6).abs() < 1.0);
}

// With rwa = false the counter-rotating term adds coherently; for a
// rectangle it is the sinc form at omega_L + omega_0 (Sakurai 5.6 applied to
// the e^{+i omega t} part of a harmonic perturbation). With a low carrier
// (radio-frequency-like, illustrative) it is visible.
#[test]
fn counter_rotating_term_is_added_when_rwa_is_off() {
    let w0 = tau(10e6);
    let d = tau(-1e6);
    let t = 3.3e-6;
    let omega = tau(10e3);
    let m = Builder::new()
        .level("g", 0.0)
        .level("e", w0)
        .initial("g", 1.0)
        .coupling("g", "e")
        .tuned("rf", "g", "e", d, rect(0.0, t))
        .no_rwa("rf")
        .drive("rf", "g", "e", omega)
        .build();
    let p = p_level(&m, "e");
    let d = delta(&m, 0);
    let i = C::new(0.0, 1.0);
    let e = |x: f64| ((i * x * t).exp() - 1.0) / (i * x);
    // c_e = -i (Omega/2) [ int e^{-i Delta t} + int e^{i (omega_L + omega_0) t} ]
    let c = -i * (omega / 2.0) * (e(-d) + e(w0 + d + w0));
    assert!(rel(p, c.norm_sqr()) < 1e-9, "{p} vs {}", c.norm_sqr());
    let rwa_only = omega.powi(2) * (d * t / 2.0).sin().powi(2) / d.powi(2);
    assert!(rel(p, rwa_only) > 1e-3);
}

// Bad numbers give a typed error, never NaN or a panic. A bad input cannot
// reach the estimator any more: a model exists only through the builder,
// which refuses it with a typed error (these cases used to be the
// estimator's own defence against a model broken after building). A
// computed number that overflows (a Rabi frequency of 1e300 rad/s gives a
// non-finite amplitude) is still the estimator's to refuse.
#[test]
fn bad_models_are_errors_not_nan() {
    let m = two_level(0.0, tau(1e5), rect(0.0, 1e-6));
    let mut fields = m.fields().to_vec();
    fields[0].envelope = Envelope::Gaussian {
        center: 0.0,
        sigma: 0.0,
    };
    assert!(matches!(
        m.to_builder().fields(fields).build(),
        Err(ModelError::Invalid {
            at: Part::Envelope(0),
            ..
        })
    ));
    let mut drives = m.drives().to_vec();
    drives[0].rabi = f64::INFINITY;
    assert_eq!(
        m.to_builder().drives(drives).build(),
        Err(ModelError::NonFinite { at: Part::Drive(0) })
    );
    assert!(matches!(
        m.to_builder().initial(vec![1.0]).build(),
        Err(ModelError::Invalid {
            at: Part::Initial,
            ..
        })
    ));
    let m = two_level(0.0, 1e300, rect(0.0, 1e-6));
    assert!(matches!(estimate(&m), Err(EstimateError::NonFinite(_))));
}
