//! The vet report against outside sources: attribution of a hyperfine leak,
//! the weak-field agreement of the first-order estimate with the exact
//! solution, and the closed forms it must reproduce.

use levelplan::pipeline::vet_model;
use levelplan::report::{Provenance, Role, VetReport};
use levelplan::scheme::parse;
use std::f64::consts::PI;

fn vet(text: &str) -> VetReport {
    let model = parse(text, "inline.yaml").unwrap_or_else(|e| panic!("{e}"));
    vet_model(&model, Provenance::new("inline.yaml", "0"), None).unwrap_or_else(|e| panic!("{e}"))
}

fn level<'a>(r: &'a VetReport, id: &str) -> &'a levelplan::report::LevelRow {
    r.levels.iter().find(|l| l.id == id).unwrap()
}

/// Rb-87 5S1/2 F=2 -> 5P3/2 F'=3 with the F'=2 and F'=1 neighbours.
/// Splittings F'=3 - F'=2 = 266.6500 MHz and F'=2 - F'=1 = 156.9470 MHz and the
/// F=2 -> F'=3 frequency 384.2281152 THz: D. A. Steck, "Rubidium 87 D Line
/// Data" (from memory). The relative dipoles 1 and 0.6 are illustrative
/// projections, not the tabulated Clebsch-Gordan factors.
fn rb87_text(duration_ns: f64, shape: &str) -> String {
    let rabi_mhz = 1e3 / (2.0 * duration_ns); // rectangular pi pulse: Omega T = pi
    let envelope = match shape {
        "rectangular" => {
            format!("{{ shape: rectangular, start: \"0 ns\", duration: \"{duration_ns} ns\" }}")
        }
        _ => unreachable!(),
    };
    format!(
        r#"
title: Rb-87 D2 hyperfine leak check
levels:
  F2:  {{ energy: "0 MHz" }}
  F3p: {{ energy: "384228115.2 MHz" }}
  F2p: {{ energy: "384227848.55 MHz" }}
  F1p: {{ energy: "384227691.603 MHz" }}
initial: F2
targets: [F3p]
tolerance: 1e-4
couplings:
  - {{ between: [F2, F3p], dipole: 1.0 }}
  - {{ between: [F2, F2p], dipole: 0.6 }}
  - {{ between: [F2, F1p], dipole: 0.2 }}
fields:
  probe:
    tuned: {{ to: [F2, F3p], detuning: "0 MHz" }}
    rabi: {{ on: [F2, F3p], value: "{rabi_mhz} MHz" }}
    envelope: {envelope}
"#
    )
}

#[test]
fn short_pi_pulse_leak_is_attributed_to_the_f2_prime_drive_at_266_65_mhz() {
    let r = vet(&rb87_text(20.0, "rectangular"));
    let f3 = level(&r, "F3p");
    assert_eq!(f3.role, Role::Target);
    let f2p = level(&r, "F2p");
    assert_eq!(f2p.role, Role::Spectator);
    assert!(
        f2p.flagged,
        "F'=2 should leak above 1e-4 with a 20 ns square pulse: {}",
        f2p.final_population
    );
    let top = &f2p.sources[0];
    assert_eq!(top.field, "probe");
    assert_eq!(top.from, "F2");
    let det_mhz = top.detuning / (2.0 * PI) / 1e6;
    assert!((det_mhz - 266.65).abs() < 1e-3, "detuning {det_mhz} MHz");
    // First-order rectangular closed form (sinc line): P = Omega^2 sin^2(Delta T/2)/Delta^2,
    // J. J. Sakurai, Modern Quantum Mechanics, sec. 5.6.
    let omega = 0.6 * PI / 20e-9;
    let delta = 2.0 * PI * 266.65e6;
    let p1 = omega * omega * (delta * 20e-9 / 2.0).sin().powi(2) / (delta * delta);
    assert!(
        (top.population - p1).abs() < 1e-6 * p1.max(1e-12) + 1e-12,
        "{} vs {p1}",
        top.population
    );
    // The remedy is computed and a smooth envelope suppresses the leak by orders of magnitude.
    let m = f2p
        .remedy
        .as_ref()
        .expect("a flagged leak carries a remedy");
    assert!(m.blackman_same_area < 1e-2 * f2p.final_population, "{m:?}");
    assert!(r.flagged >= 1);
}

/// Two-level detuned rectangular pulse: exact (I. I. Rabi, Phys. Rev. 51, 652 (1937))
/// against first order (Sakurai sec. 5.6). In the weak-field limit their relative
/// difference is of the order of the population itself: (P_exact - P1)/P1 / P1
/// stays constant over two decades of Rabi frequency (common practice, no source).
#[test]
fn weak_field_first_order_agrees_to_next_order() {
    let mut scaled = Vec::new();
    for rabi_khz in [10.0, 100.0, 1000.0] {
        let text = format!(
            r#"
levels:
  g: {{ energy: "0 cm^-1" }}
  e: {{ energy: "15000 cm^-1" }}
initial: g
targets: []
couplings:
  - {{ between: [g, e], dipole: "1 ea0" }}
fields:
  weak:
    tuned: {{ to: [g, e], detuning: "7.3 MHz" }}
    rabi: {{ on: [g, e], value: "{rabi_khz} kHz" }}
    envelope: {{ shape: rectangular, start: "0 us", duration: "1 us" }}
"#
        );
        let r = vet(&text);
        let e = level(&r, "e");
        let p1 = e.first_order.unwrap();
        let exact = e.final_population;
        let rel = (exact - p1).abs() / p1;
        scaled.push(rel / p1);
        // The exact value itself against the Rabi formula, at the model's own
        // detuning (omega_L - omega_ab carries ~0.5 rad/s of rounding from the
        // optical frequencies, which moves P by ~1e-9).
        let de = e.sources[0].detuning;
        assert!((de / (2.0 * PI) - 7.3e6).abs() < 1.0);
        let (om, t) = (2.0 * PI * rabi_khz * 1e3, 1e-6);
        let w = (om * om + de * de).sqrt();
        let rabi = om * om / (w * w) * (w * t / 2.0).sin().powi(2);
        assert!((exact - rabi).abs() < 1e-9, "{exact} vs {rabi}");
    }
    assert!(scaled[0] > 0.0);
    for s in &scaled[1..] {
        let ratio = s / scaled[0];
        assert!(
            (0.5..2.0).contains(&ratio),
            "relative difference does not scale with P: {scaled:?}"
        );
    }
}
