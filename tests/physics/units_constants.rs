//! Constants and conversions checked against outside sources, through the
//! public scheme parser where a scheme can express the quantity.

use approx::assert_relative_eq;
use levelplan::model::Model;
use levelplan::scheme;
use levelplan::units::{self, Kind};
use std::f64::consts::PI;

fn parse(text: &str) -> Model {
    match scheme::parse(text, "test.yaml") {
        Ok(m) => m,
        Err(e) => panic!("{e}"),
    }
}

/// A two-level scheme g (0) - e with the given level energy of e, coupling
/// line and field lines.
fn two_level(energy_e: &str, coupling: &str, field: &str) -> String {
    format!(
        "levels:\n  g: {{energy: \"0 cm^-1\"}}\n  e: {{energy: \"{energy_e}\"}}\ninitial: g\n\
         couplings:\n  - between: [g, e]\n    {coupling}\n\
         fields:\n  L:\n{field}\n    envelope: {{shape: rectangular, start: 0 ns, duration: 100 ns}}\n"
    )
}

const TWO_PI: f64 = 2.0 * PI;

// CODATA 2018 recommended values (P. J. Mohr et al., CODATA 2018; NIST
// Reference on Constants, Units and Uncertainty). h, c, e are exact in the
// 2019 SI; hbar is exact but printed truncated.
#[test]
fn codata_2018_constants() {
    assert_eq!(units::H, 6.626_070_15e-34);
    assert_eq!(units::C, 299_792_458.0);
    assert_eq!(units::E_CHARGE, 1.602_176_634e-19);
    assert_eq!(units::EPS0, 8.854_187_812_8e-12);
    assert_eq!(units::A0, 5.291_772_109_03e-11);
    // hbar = 1.054 571 817... e-34 J s (CODATA 2018).
    assert_relative_eq!(units::HBAR, 1.054_571_817e-34, max_relative = 1e-9);
    // Atomic unit of electric dipole moment e a0 = 8.478 353 6255(13) e-30 C m
    // (CODATA 2018, from memory).
    assert_relative_eq!(units::EA0, 8.478_353_625_5e-30, max_relative = 1e-10);
    // Debye = 1e-21/c C m = 3.335 640 95e-30 C m (definition of the unit).
    assert_relative_eq!(units::DEBYE, 3.335_640_952e-30, max_relative = 1e-9);
}

// 1 cm^-1 corresponds to c x 100 m^-1 = 29.9792458 GHz exactly (SI
// definition of c).
#[test]
fn wavenumber_is_29_9792458_ghz() {
    let a = parse(&two_level(
        "1 cm^-1",
        "dipole: 1 D",
        "    frequency: 30 GHz\n    intensity: 1 W/m^2",
    ));
    let b = parse(&two_level(
        "29.9792458 GHz",
        "dipole: 1 D",
        "    frequency: 30 GHz\n    intensity: 1 W/m^2",
    ));
    assert_relative_eq!(
        a.levels()[1].omega,
        b.levels()[1].omega,
        max_relative = 1e-14
    );
    assert_relative_eq!(
        a.levels()[1].omega / TWO_PI,
        29.979_245_8e9,
        max_relative = 1e-14
    );
}

// 1 eV = 2.417 989 242 e14 Hz and 8065.543 937 cm^-1 (CODATA 2018 energy
// conversion table; both exact in the 2019 SI, printed truncated).
#[test]
fn electronvolt_conversions() {
    let w = units::parse_quantity("1 eV", Kind::Energy).unwrap();
    assert_relative_eq!(w / TWO_PI, 2.417_989_242e14, max_relative = 1e-9);
    assert_relative_eq!(
        units::wavenumber_cm_from_omega(w),
        8_065.543_937,
        max_relative = 1e-9
    );
    let w_mev = units::parse_quantity("1000 meV", Kind::Energy).unwrap();
    assert_relative_eq!(w_mev, w, max_relative = 1e-14);
    // E = h nu: 1 J is 1/h Hz.
    let wj = units::parse_quantity("1 J", Kind::Energy).unwrap();
    assert_relative_eq!(wj / TWO_PI, 1.0 / units::H, max_relative = 1e-14);
}

// Rb-87 D2 line: frequency 384.230 484 468 5 THz, vacuum wavelength
// 780.241 209 686 nm (D. A. Steck, "Rubidium 87 D Line Data", Table 3;
// from memory).
#[test]
fn wavelength_to_frequency_rb87_d2() {
    let text = two_level(
        "384.2304844685 THz",
        "dipole: \"2.989 ea0\"",
        "    wavelength: \"780.241209686 nm\"\n    intensity: \"1 mW/cm^2\"",
    );
    let m = parse(&text);
    assert_relative_eq!(
        m.fields()[0].omega / TWO_PI,
        384.230_484_468_5e12,
        max_relative = 2e-11
    );
    // Detuning of the field from the line: below 10 kHz.
    assert!((m.detuning(&m.drives()[0]) / TWO_PI).abs() < 1e4);
}

// Rb-87 D2 cycling transition |F=2, mF=2> -> |F'=3, mF'=3> with sigma+
// light: dipole 2.989 ea0, saturation intensity 1.669 mW/cm^2, natural
// linewidth Gamma = 2 pi x 6.0666 MHz; at I = Isat, Omega = Gamma / sqrt(2),
// i.e. Omega/2pi = 4.290 MHz (D. A. Steck, "Rubidium 87 D Line Data",
// Table 7 and the definition of Isat).
#[test]
fn rabi_frequency_from_intensity_rb87_d2() {
    let text = two_level(
        "384.2304844685 THz",
        "dipole: \"2.989 ea0\"",
        "    tuned: {to: [g, e], detuning: 0 MHz}\n    intensity: \"1.669 mW/cm^2\"",
    );
    let m = parse(&text);
    let rabi_mhz = m.drives()[0].rabi / TWO_PI / 1e6;
    assert_relative_eq!(rabi_mhz, 4.290, max_relative = 2e-3);
    assert_relative_eq!(rabi_mhz, 6.0666 / 2f64.sqrt(), max_relative = 2e-3);
    assert_relative_eq!(
        m.fields()[0].peak_intensity.unwrap(),
        16.69,
        max_relative = 1e-12
    );
    // The same dipole in C m (Steck: 2.53398e-29 C m, from memory) and in Debye.
    let d_cm = units::parse_quantity("2.989 ea0", Kind::Dipole).unwrap();
    assert_relative_eq!(d_cm, 2.534e-29, max_relative = 5e-4);
    let d_debye = units::parse_quantity("7.597 D", Kind::Dipole).unwrap();
    assert_relative_eq!(d_debye, d_cm, max_relative = 1e-3);
}

// A Rabi frequency given on an absolute dipole fixes the intensity: the
// inverse of the check above (same source).
#[test]
fn intensity_from_rabi_frequency_rb87_d2() {
    let text = two_level(
        "384.2304844685 THz",
        "dipole: \"2.989 ea0\"",
        "    tuned: {to: [g, e], detuning: 0 MHz}\n    rabi: {on: [g, e], value: \"4.290 MHz\"}",
    );
    let m = parse(&text);
    let i_mw_cm2 = m.fields()[0].peak_intensity.unwrap() / 10.0;
    assert_relative_eq!(i_mw_cm2, 1.669, max_relative = 4e-3);
}

// Peak intensity of a Gaussian beam 2P/(pi w^2): 10 mW at w = 1 mm is
// 636.6 mW/cm^2 (standard Gaussian-beam result, e.g. A. E. Siegman,
// "Lasers", ch. 17; common practice).
#[test]
fn gaussian_beam_peak_intensity() {
    let text = two_level(
        "384.2304844685 THz",
        "dipole: \"2.989 ea0\"",
        "    tuned: {to: [g, e], detuning: 0 MHz}\n    power: \"10 mW\"\n    waist: \"1 mm\"",
    );
    let m = parse(&text);
    let i_mw_cm2 = m.fields()[0].peak_intensity.unwrap() / 10.0;
    assert_relative_eq!(i_mw_cm2, 636.6, max_relative = 1e-4);
    let d = units::parse_quantity("2.989 ea0", Kind::Dipole).unwrap();
    let e0 = units::field_amplitude_from_intensity(m.fields()[0].peak_intensity.unwrap());
    assert_relative_eq!(
        m.drives()[0].rabi,
        d * e0 / units::HBAR,
        max_relative = 1e-12
    );
}

// Einstein A to dipole on the Rb-87 D2 line: A = Gamma = 3.8117e7 s^-1 at
// 384.2304844685 THz gives 2.989 ea0 for g_lower = g_upper = 1 (two-level
// relation A = omega^3 d^2 / (3 pi eps0 hbar c^3)), and with g_lower = 2
// (J = 1/2), g_upper = 4 (J' = 3/2) the reduced matrix element
// <J=1/2||er||J'=3/2> = 4.227 ea0 (D. A. Steck, "Rubidium 87 D Line Data",
// Table 7 and eq. for Gamma in terms of the reduced element; from memory).
#[test]
fn einstein_a_to_dipole_rb87_d2() {
    let ea = |gl: u32, gu: u32| {
        let text = two_level(
            "384.2304844685 THz",
            &format!("einstein_a: \"3.8117e7 s^-1\"\n    g_lower: {gl}\n    g_upper: {gu}"),
            "    tuned: {to: [g, e], detuning: 0 MHz}\n    intensity: \"1 mW/cm^2\"",
        );
        parse(&text).couplings()[0].dipole.value() / units::EA0
    };
    assert_relative_eq!(ea(1, 1), 2.989, max_relative = 2e-4);
    assert_relative_eq!(ea(2, 4), 4.227, max_relative = 2e-4);
    // Round trip through the inverse relation.
    let w = TWO_PI * 384.230_484_468_5e12;
    let d = units::dipole_from_einstein_a(3.8117e7, w, 2.0, 4.0);
    assert_relative_eq!(
        units::einstein_a_from_dipole(d, w, 2.0, 4.0),
        3.8117e7,
        max_relative = 1e-12
    );
}

// Lifetime and linewidth of the Rb-87 5P3/2 level: tau = 26.2348 ns,
// Gamma = 2 pi x 6.0666 MHz = 3.8117e7 s^-1 (D. A. Steck, "Rubidium 87 D
// Line Data", Table 3; from memory).
#[test]
fn lifetime_and_linewidth_agree_rb87() {
    let by_tau = parse(
        "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1.589 eV, lifetime: 26.2348 ns}\ninitial: g\nwindow: {start: 0 s, end: 1 us}\n",
    );
    let by_width = parse(
        "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1.589 eV, linewidth: 6.0666 MHz}\ninitial: g\nwindow: {start: 0 s, end: 1 us}\n",
    );
    assert_relative_eq!(by_tau.levels()[1].gamma, 3.8117e7, max_relative = 1e-4);
    assert_relative_eq!(by_width.levels()[1].gamma, 3.8117e7, max_relative = 1e-4);
    assert_relative_eq!(
        by_tau.levels()[1].gamma,
        by_width.levels()[1].gamma,
        max_relative = 2e-4
    );
}

// A resonant rectangular pulse of Omega/2pi = 5 MHz and 100 ns has area
// Omega T = pi (definition of pulse area; common practice, no source).
#[test]
fn rectangular_pulse_area_from_rabi() {
    let m = parse(&two_level(
        "1 eV",
        "dipole: 1",
        "    tuned: {to: [g, e], detuning: 0 MHz}\n    rabi: {on: [g, e], value: 5 MHz}",
    ));
    assert_relative_eq!(m.pulse_area(&m.drives()[0]), PI, max_relative = 1e-12);
    // Bare relative dipole: no intensity can be known.
    assert_eq!(m.fields()[0].peak_intensity, None);
}

// Area on a Gaussian: Omega * sigma sqrt(2 pi) = area, and the FWHM is of
// the intensity |f|^2 (the format's convention; integral of a Gaussian).
#[test]
fn gaussian_area_and_fwhm() {
    let text = "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1 eV}\ninitial: g\n\
        couplings:\n  - {between: [g, e], dipole: 1}\n\
        fields:\n  L:\n    tuned: {to: [g, e], detuning: 0 Hz}\n    area: {on: [e, g], value: 0.5 pi}\n\
        \x20   envelope: {shape: gaussian, center: 40 ns, fwhm: 10 ns}\n";
    let m = parse(text);
    assert_relative_eq!(m.pulse_area(&m.drives()[0]), 0.5 * PI, max_relative = 1e-12);
    let env = &m.fields()[0].envelope;
    assert_relative_eq!(env.value(40e-9 + 5e-9).powi(2), 0.5, max_relative = 1e-12);
    // Default window spans the envelope down to f = 1e-8.
    assert!(env.value(m.window().start) <= 1.0001e-8 && env.value(m.window().end) <= 1.0001e-8);
    assert!(m.window().start < 40e-9 - 30e-9 && m.window().end > 40e-9 + 30e-9);
}

// Detuning sign convention: Delta = omega_L - omega_ab, negative = red
// (normative in the scheme format).
#[test]
fn detuning_sign_and_cyclic_units() {
    let m = parse(&two_level(
        "12578.95 cm^-1",
        "dipole: \"2.5 ea0\"",
        "    tuned: {to: [e, g], detuning: \"-20 MHz\"}\n    intensity: \"1 W/cm^2\"\n    chirp: \"10 MHz/us\"",
    ));
    assert_relative_eq!(
        m.detuning(&m.drives()[0]),
        -TWO_PI * 20e6,
        max_relative = 1e-6
    );
    assert!(m.fields()[0].omega < m.transition_omega(0));
    // Chirp 10 MHz/us = 1e13 Hz/s, stored as 2 pi beta.
    assert_relative_eq!(m.fields()[0].chirp, TWO_PI * 1e13, max_relative = 1e-14);
}

// Rabi frequencies of one field scale with the dipoles of the couplings it
// drives (Omega = d E0 / hbar; common practice, no source).
#[test]
fn rabi_scales_with_dipole_ratio() {
    let text = "levels:\n  g: {energy: 0 eV}\n  a: {energy: 1 eV}\n  b: {energy: 1.00001 eV}\ninitial: g\n\
        couplings:\n  - {between: [g, a], dipole: \"2 ea0\"}\n  - {between: [g, b], dipole: \"-0.5 ea0\"}\n\
        fields:\n  L:\n    tuned: {to: [g, a], detuning: 0 Hz}\n    rabi: {on: [g, a], value: 8 MHz}\n\
        \x20   envelope: {shape: sin2, start: 0 ns, duration: 1 us}\n";
    let m = parse(text);
    assert_relative_eq!(m.drives()[0].rabi, TWO_PI * 8e6, max_relative = 1e-12);
    assert_relative_eq!(m.drives()[1].rabi, -TWO_PI * 2e6, max_relative = 1e-12);
    // The field's intensity follows from the reference coupling.
    let e0 = units::HBAR * TWO_PI * 8e6 / (2.0 * units::EA0);
    assert_relative_eq!(
        m.fields()[0].peak_intensity.unwrap(),
        units::intensity_from_field_amplitude(e0),
        max_relative = 1e-12
    );
}

// Unit spellings that mean the same thing.
#[test]
fn unit_aliases() {
    let us = units::parse_quantity("3 us", Kind::Time).unwrap();
    assert_eq!(units::parse_quantity("3 µs", Kind::Time).unwrap(), us);
    assert_eq!(units::parse_quantity("3 μs", Kind::Time).unwrap(), us);
    assert_relative_eq!(
        units::parse_quantity("1 W/cm^2", Kind::Intensity).unwrap(),
        units::parse_quantity("1e4 W/m^2", Kind::Intensity).unwrap()
    );
    assert_relative_eq!(
        units::parse_quantity("2.1e-29 C m", Kind::Dipole).unwrap(),
        2.1e-29
    );
}
