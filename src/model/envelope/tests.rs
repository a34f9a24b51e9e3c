//! Unit tests of the envelope shapes: closed forms against quadrature and
//! against their own definitions.

use super::*;
use approx::assert_relative_eq;

fn integrate(e: &Envelope) -> f64 {
    let (a, b) = e.support();
    let (a, b) = (a - 1.0, b + 1.0);
    let n = 200_000;
    let h = (b - a) / n as f64;
    // Trapezoid rule: exact for the piecewise-linear samples envelope
    // (its kinks fall on grid points), O(h^2) for the smooth shapes.
    let mut s = 0.5 * (e.value(a) + e.value(b));
    for i in 1..n {
        s += e.value(a + i as f64 * h);
    }
    s * h
}

/// One envelope of every shape.
fn every_shape() -> [Envelope; 6] {
    [
        Envelope::Rectangular {
            start: 1.0,
            duration: 2.0,
        },
        Envelope::Gaussian {
            center: 3.0,
            sigma: 0.7,
        },
        Envelope::Sech {
            center: -2.0,
            tau: 0.3,
        },
        Envelope::Sin2 {
            start: 1.0,
            duration: 2.0,
        },
        Envelope::Blackman {
            start: 0.5,
            duration: 3.0,
        },
        Envelope::Samples {
            times: vec![0.0, 1.0, 3.0, 4.0],
            values: vec![0.0, 1.0, 0.5, 0.0],
        },
    ]
}

// Closed-form areas checked against numerical quadrature
// (elementary integrals; common practice, no source). The rectangle's jumps
// cost the trapezoid rule its order: its area is the duration by definition.
#[test]
fn areas_match_quadrature() {
    for e in every_shape().iter().filter(|e| !e.is_piecewise_constant()) {
        assert_relative_eq!(e.area(), integrate(e), max_relative = 1e-6);
    }
}

// FWHM of a Gaussian's intensity: |f|^2 = 1/2 at t - tc = FWHM/2.
#[test]
fn gaussian_fwhm_is_of_intensity() {
    let fwhm = 2.5;
    let sigma = gaussian_sigma_from_intensity_fwhm(fwhm);
    let e = Envelope::Gaussian { center: 0.0, sigma };
    assert_relative_eq!(e.value(fwhm / 2.0).powi(2), 0.5, max_relative = 1e-12);
    assert_relative_eq!(e.length(), fwhm, max_relative = 1e-15);
}

// The sech length is its intensity FWHM: sech^2 = 1/2 at half of it
// (definition; common practice, no source), 1.763 tau.
#[test]
fn sech_length_is_the_intensity_fwhm() {
    let tau = 0.3;
    let e = Envelope::Sech { center: 1.0, tau };
    let w = e.length();
    assert_eq!(Some(w), e.intensity_fwhm());
    assert_relative_eq!(e.value(1.0 + w / 2.0).powi(2), 0.5, max_relative = 1e-12);
    assert_relative_eq!(w / tau, 1.7627, max_relative = 1e-4);
}

#[test]
fn sech_is_stable_far_out() {
    let e = Envelope::Sech {
        center: 0.0,
        tau: 1.0,
    };
    assert_relative_eq!(e.value(0.0), 1.0);
    assert!(e.value(1000.0).is_finite());
    assert!(e.value(e.support().1) < 1.01 * TAIL_CUTOFF);
}

// The collapsed sin2 / Blackman forms equal the sums of shifted
// rectangle transforms they came from (derivation check, no source).
#[test]
fn collapsed_forms_equal_sums_of_shifted_rectangles() {
    let d = 2.0;
    let a = 2.0 * PI / d;
    let r = |x: f64| d * sinc(x * d / 2.0);
    let (a0, a1, a2) = BLACKMAN;
    let sin2 = Envelope::Sin2 {
        start: 0.0,
        duration: d,
    };
    let blackman = Envelope::Blackman {
        start: 0.0,
        duration: d,
    };
    for &nu in &[0.0, 0.3, a, 1.5 * a, 2.0 * a, 2.2 * a, 7.3, -11.0, 40.0] {
        let sum = 0.5 * r(nu) + 0.25 * (r(nu + a) + r(nu - a));
        let s = sin2.spectrum(nu).unwrap();
        assert!((s - sum).abs() < 1e-13, "sin2 at {nu}: {s} vs {sum}");
        let bl = a0 * r(nu)
            + 0.5 * a1 * (r(nu + a) + r(nu - a))
            + 0.5 * a2 * (r(nu + 2.0 * a) + r(nu - 2.0 * a));
        let b = blackman.spectrum(nu).unwrap();
        assert!((b - bl).abs() < 1e-13, "blackman at {nu}: {b} vs {bl}");
    }
}

#[test]
fn stretch_keeps_the_centre_and_scales_the_length() {
    for e in &every_shape() {
        let s = e.stretched(2.5);
        assert_relative_eq!(s.center(), e.center(), max_relative = 1e-15);
        assert_relative_eq!(s.length(), 2.5 * e.length(), max_relative = 1e-14);
        assert_relative_eq!(s.area(), 2.5 * e.area(), max_relative = 1e-14);
    }
}
