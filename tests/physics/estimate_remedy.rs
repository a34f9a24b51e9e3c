//! Computed remedies for leaks, checked against the closed forms they must
//! reproduce. Illustrative, invented schemes.

use std::f64::consts::PI;

use crate::estimate_support::{rect, rel, tau, Builder};
use levelplan::estimate::{estimate, intensity_fwhm, remedy, EstimateError, LengthRule};
use levelplan::model::{Envelope, Model, Window};

const W0: f64 = 2.0 * PI * 384.0e12;

/// g -> e driven by a pi pulse of envelope `env` (area pi on g-e), spectator
/// s at `ds` above e, driven by the same field with half the Rabi frequency.
fn leaky(env: Envelope, ds: f64) -> Model {
    let area = env.area();
    let omega = PI / area;
    Builder::new()
        .level("g", 0.0)
        .level("e", W0)
        .level("s", W0 + ds)
        .initial("g", 1.0)
        .coupling("g", "e")
        .coupling("g", "s")
        .tuned("L", "g", "e", 0.0, env)
        .drive("L", "g", "e", omega)
        .drive("L", "g", "s", 0.5 * omega)
        .build()
}

/// Spectrum of an envelope about its centre by a fine Simpson rule
/// (independent of the library's transforms).
fn simpson_spectrum(env: &Envelope, nu: f64) -> f64 {
    let (a, b) = env.support();
    let tc = env.center();
    let n = 200_000;
    let h = (b - a) / n as f64;
    let mut s = 0.0;
    for i in 0..=n {
        let t = a + i as f64 * h;
        let w = if i == 0 || i == n {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        };
        s += w * env.value(t) * (nu * (t - tc)).cos();
    }
    s * h / 3.0
}

// Rectangular leak. The first-order line is Omega^2 sin^2(Delta T/2)/Delta^2
// (Sakurai, Modern Quantum Mechanics, sec. 5.6); its envelope at fixed area
// A = Omega T is A^2/(Delta T)^2, so the length that brings it to the
// tolerance is T* = A / (|Delta| sqrt(tol)). The Gaussian of equal intensity
// FWHM and area gives (A/2)^2 exp(-Delta^2 sigma^2) (same source); the
// Blackman figures are checked against a direct Simpson integral.
#[test]
fn rectangular_leak_remedy_is_computed() {
    let t = 110e-9;
    let ds = tau(10e6);
    let m = leaky(rect(0.0, t), ds);
    let tol = 1e-4;
    let est = estimate(&m).unwrap();
    let ps = est.levels[2].first_order.unwrap();
    assert!(ps > tol, "the spectator should leak: {ps}");
    let r = remedy(&m, 2, tol).unwrap().expect("a remedy");
    assert_eq!(r.drive, 1);
    assert_eq!(r.length_rule, LengthRule::LineEnvelope);
    let d = m.detuning(&m.drives()[1]);
    let area = 0.5 * PI; // half the Rabi frequency of the pi pulse
    let t_star = area / (d.abs() * tol.sqrt());
    let got = r.length_for_tolerance.expect("a length");
    assert!(rel(got, t_star) < 1e-8, "{got} vs {t_star}");
    assert!(rel(r.stretch.unwrap(), t_star / t) < 1e-8);
    assert_eq!(r.present_length, t);
    assert_eq!(r.fwhm, t);

    let sigma = t / (2.0 * 2f64.ln().sqrt());
    let g = (area / 2.0).powi(2) * (-(d * sigma).powi(2)).exp();
    assert!(
        rel(r.gaussian_same_area, g) < 1e-9,
        "{} vs {g}",
        r.gaussian_same_area
    );

    let d_b = t / intensity_fwhm(&Envelope::Blackman {
        start: 0.0,
        duration: 1.0,
    })
    .unwrap();
    let b_env = Envelope::Blackman {
        start: 0.0,
        duration: d_b,
    };
    let o_b = area / (0.42 * d_b);
    let b = (o_b / 2.0 * simpson_spectrum(&b_env, d)).powi(2);
    assert!(
        rel(r.blackman_same_area, b) < 1e-6,
        "{} vs {b}",
        r.blackman_same_area
    );
    let span_env = Envelope::Blackman {
        start: 0.0,
        duration: t,
    };
    let o_s = area / (0.42 * t);
    let bs = (o_s / 2.0 * simpson_spectrum(&span_env, d)).powi(2);
    assert!(rel(r.blackman_same_span.unwrap(), bs) < 1e-6);

    // The pulse lengthened to T* at the same areas is below tolerance.
    let long = leaky(rect(0.0, got), ds);
    let p_long = estimate(&long).unwrap().levels[2].first_order.unwrap();
    assert!(p_long <= tol * (1.0 + 1e-9), "{p_long}");
    // Too strict a tolerance: no length within 1e4 works.
    assert_eq!(
        remedy(&m, 2, 1e-40).unwrap().unwrap().length_for_tolerance,
        None
    );
}

// Gaussian leak: P = (A/2)^2 exp(-Delta^2 sigma^2) at fixed area A (Sakurai
// 5.6) falls monotonically, so the length is exact: sigma* =
// sqrt(ln((A/2)^2 / tol)) / |Delta|, reported as the intensity FWHM.
#[test]
fn gaussian_leak_length_is_exact() {
    let sigma = 40e-9;
    let m = leaky(Envelope::Gaussian { center: 0.0, sigma }, tau(8e6));
    let tol = 1e-6;
    let d = m.detuning(&m.drives()[1]);
    let area = 0.5 * PI;
    let p = estimate(&m).unwrap().levels[2].first_order.unwrap();
    assert!(rel(p, (area / 2.0).powi(2) * (-(d * sigma).powi(2)).exp()) < 1e-10);
    assert!(p > tol);
    let r = remedy(&m, 2, tol).unwrap().unwrap();
    assert_eq!(r.length_rule, LengthRule::Exact);
    let s_star = ((area / 2.0).powi(2) / tol).ln().sqrt() / d.abs();
    let fwhm_star = 2.0 * 2f64.ln().sqrt() * s_star;
    let got = r.length_for_tolerance.unwrap();
    assert!(rel(got, fwhm_star) < 1e-6, "{got} vs {fwhm_star}");
    // Same FWHM and area as a Gaussian: the same pulse.
    assert!(rel(r.gaussian_same_area, p) < 1e-12);
    assert_eq!(r.blackman_same_span, None);
}

// Second-order leak in a Lambda (the two-photon line of the rectangles): the
// length search uses the estimate itself; at the length found the level is
// below tolerance.
#[test]
fn second_order_leak_remedy_holds() {
    let w3 = tau(6.8e9);
    let t = 2e-6;
    let d = tau(60e6);
    let build = |tb: f64| {
        let area_b = tau(1e6) * t;
        Builder::new()
            .level("g1", 0.0)
            .level("g3", w3)
            .level("e2", W0)
            .initial("g1", 1.0)
            .coupling("g1", "e2")
            .coupling("g3", "e2")
            .tuned("A", "g1", "e2", d, rect(0.0, t))
            .tuned(
                "B",
                "g3",
                "e2",
                d + tau(0.4e6),
                rect(t / 2.0 - tb / 2.0, tb),
            )
            .drive("A", "g1", "e2", tau(1e6))
            .drive("B", "g3", "e2", area_b / tb)
            .build()
    };
    let m = build(t);
    let tol = 1e-6;
    let p = estimate(&m).unwrap().levels[1].second_order.unwrap();
    assert!(p > tol, "{p}");
    let r = remedy(&m, 1, tol).unwrap().unwrap();
    assert_eq!(r.drive, 1);
    assert_eq!(r.length_rule, LengthRule::Exact);
    let len = r.length_for_tolerance.unwrap();
    assert!(len > t);
    let stretched = build(len);
    // The remedy is taken over all time: widen the window to the new pulse.
    let w = stretched.window();
    let stretched = stretched
        .to_builder()
        .window(Window {
            start: w.start.min(t / 2.0 - len / 2.0),
            end: w.end.max(t / 2.0 + len / 2.0),
        })
        .build()
        .unwrap();
    let p_long = estimate(&stretched).unwrap().levels[1]
        .second_order
        .unwrap();
    assert!(p_long <= tol * 1.001, "{p_long}");
}

#[test]
fn remedy_arguments_are_checked() {
    let m = leaky(rect(0.0, 100e-9), tau(10e6));
    assert_eq!(remedy(&m, 0, 1e-3).unwrap(), None); // initial level
    assert!(matches!(
        remedy(&m, 9, 1e-3),
        Err(EstimateError::InvalidArgument(_))
    ));
    assert!(matches!(
        remedy(&m, 2, f64::NAN),
        Err(EstimateError::InvalidArgument(_))
    ));
    assert!(matches!(
        remedy(&m, 2, 0.0),
        Err(EstimateError::InvalidArgument(_))
    ));
}

// Intensity FWHM of each shape (definitions; common practice, no source):
// |f|^2 = 1/2 at the half-width.
#[test]
fn intensity_fwhm_is_where_the_intensity_halves() {
    let shapes = [
        Envelope::Rectangular {
            start: 0.0,
            duration: 2.0,
        },
        Envelope::Gaussian {
            center: 0.0,
            sigma: 0.7,
        },
        Envelope::Sech {
            center: 0.0,
            tau: 0.3,
        },
        Envelope::Sin2 {
            start: -1.0,
            duration: 2.0,
        },
        Envelope::Blackman {
            start: -1.5,
            duration: 3.0,
        },
        Envelope::Samples {
            times: vec![-1.0, 0.0, 1.0],
            values: vec![0.0, 1.0, 0.0],
        },
    ];
    for e in &shapes {
        let w = intensity_fwhm(e).unwrap();
        let tc = e.center();
        if !matches!(e, Envelope::Rectangular { .. }) {
            let half = e.value(tc + w / 2.0).powi(2);
            assert!((half - 0.5).abs() < 1e-9, "{}: {half}", e.shape_name());
        }
    }
    // Triangle of half-width 1: |f| = 1/sqrt 2 at 1 - 1/sqrt 2.
    let w = intensity_fwhm(&shapes[5]).unwrap();
    assert!(rel(w, 2.0 * (1.0 - 0.5f64.sqrt())) < 1e-12);
}

// One length per pulse: for a sech pulse, inspect's field length and vet's
// present length of the remedy are the same number, the intensity FWHM
// 2 acosh(sqrt 2) tau (sech^2 = 1/2 at half of it; definition, common
// practice, no source), and the length for tolerance is that length of the
// stretched pulse.
#[test]
fn inspect_and_vet_report_one_sech_length() {
    use levelplan::report::{inspect, Provenance};
    let tau_p = 1e-6;
    let env = Envelope::Sech {
        center: 0.0,
        tau: tau_p,
    };
    let m = leaky(env, 1e6);
    let prov = Provenance::new("test", "0");
    let shown = inspect(&m, prov.clone()).fields[0].length;
    let rep = levelplan::pipeline::vet_model(&m, prov, None).unwrap();
    let rm = rep.levels[2]
        .remedy
        .as_ref()
        .expect("a flagged leak has a remedy");
    assert_eq!(rm.present_length, shown);
    assert!(rel(shown, 2.0 * 2f64.sqrt().acosh() * tau_p) < 1e-15);
    let e = Envelope::Sech {
        center: 0.0,
        tau: tau_p,
    };
    assert!((e.value(shown / 2.0).powi(2) - 0.5).abs() < 1e-12);
    let r = remedy(&m, 2, m.tolerance()).unwrap().unwrap();
    let stretch = r.stretch.expect("a stretch");
    let len = r.length_for_tolerance.expect("a length");
    assert!(rel(len, e.stretched(stretch).length()) < 1e-12);
}
