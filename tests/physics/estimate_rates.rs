//! The rate-equation estimate of decay-fed populations against the exact
//! density-matrix solution: weak-field optical pumping in a Lambda, the
//! attribution of the pumped population to its decay path in the JSON, and
//! the reliability mark of a saturated drive.
//!
//! The scheme is invented and illustrative (a Lambda with an upper level of
//! 25 ns lifetime decaying half to each ground level).

use levelplan::pipeline::vet_model;
use levelplan::render::{exporter, Format};
use levelplan::report::{Channel, Provenance, VetReport};
use levelplan::scheme::parse;
use std::f64::consts::PI;

const LIFETIME: f64 = 25e-9;
const DETUNING_HZ: f64 = -40e6;

fn lambda_text(rabi_mhz: f64, duration_us: f64) -> String {
    broadened_text(rabi_mhz, duration_us, "", "")
}

/// The Lambda with extra keys on e and on the probe (dephasing, linewidth).
fn broadened_text(rabi_mhz: f64, duration_us: f64, e_extra: &str, probe_extra: &str) -> String {
    format!(
        r#"
title: weak-field optical pumping in a Lambda (illustrative numbers)
levels:
  g1: {{ energy: "0 MHz" }}
  g2: {{ energy: "6800 MHz" }}
  e:  {{ energy: "384000000 MHz", lifetime: "25 ns", decays_to: {{ g1: 0.5, g2: 0.5 }}{e_extra} }}
initial: g1
tolerance: 1e-2
couplings:
  - {{ between: [g1, e], dipole: 1.0 }}
fields:
  probe:
    tuned: {{ to: [g1, e], detuning: "-40 MHz" }}
    rabi: {{ on: [g1, e], value: "{rabi_mhz} MHz" }}
    envelope: {{ shape: rectangular, start: "0 us", duration: "{duration_us} us" }}{probe_extra}
"#
    )
}

fn export(r: &VetReport, format: Format) -> std::io::Result<Vec<u8>> {
    let mut out = Vec::new();
    exporter(format, false).vet(r, &mut out)?;
    Ok(out)
}

fn vet(text: &str) -> VetReport {
    let model = parse(text, "inline.yaml").unwrap_or_else(|e| panic!("{e}"));
    vet_model(&model, Provenance::new("inline.yaml", "0"), None).unwrap_or_else(|e| panic!("{e}"))
}

fn level<'a>(r: &'a VetReport, id: &str) -> &'a levelplan::report::LevelRow {
    r.levels.iter().find(|l| l.id == id).unwrap()
}

/// The weak-drive two-level scattering rate
/// `R = (Omega^2 / Gamma) / (1 + (2 Delta / Gamma)^2)` (Foot, Atomic Physics
/// (2005), the section on the scattering rate of a two-level atom, from
/// memory), times the pulse length T (a square pulse: integral f^2 = T) and
/// the branching fraction 1/2 into g2.
fn pumped_by_formula(rabi_mhz: f64, duration_us: f64) -> f64 {
    let omega = 2.0 * PI * rabi_mhz * 1e6;
    let gamma = 1.0 / LIFETIME;
    let delta = 2.0 * PI * DETUNING_HZ;
    let rate = (omega * omega / gamma) / (1.0 + (2.0 * delta / gamma).powi(2));
    rate * duration_us * 1e-6 * 0.5
}

/// A weak probe: about 3e-4 pumped into g2 in 1 us, saturation ~1e-5.
const WEAK_RABI_MHZ: f64 = 0.35;

#[test]
fn weak_pumping_estimate_is_the_scattering_rate_formula() {
    for t in [1.0, 2.0] {
        let r = vet(&lambda_text(WEAK_RABI_MHZ, t));
        let g2 = level(&r, "g2");
        let want = pumped_by_formula(WEAK_RABI_MHZ, t);
        let est = g2.first_order.unwrap();
        // 1e-8: the detuning is the difference of two optical energies
        // (3.8e14 Hz) in double precision, good to ~1e-9 relative.
        assert!(
            (est - want).abs() <= 1e-8 * want,
            "T = {t} us: estimate {est:e} vs formula {want:e}"
        );
        assert!(!g2.unreliable, "a weak drive is a reliable rate estimate");
    }
}

/// The rate against the exact solution: the difference between a 2 us and
/// a 1 us pulse cancels the switching transients (relative size ~1/(Gamma T)
/// each, which the rate does not hold), leaving the pumping rate itself.
/// Depletion of g1 (~0.75 R T, 4e-4 here) is the remaining difference.
#[test]
fn weak_pumping_rate_matches_the_density_matrix_to_1e_3() {
    let (r1, r2) = (
        vet(&lambda_text(WEAK_RABI_MHZ, 1.0)),
        vet(&lambda_text(WEAK_RABI_MHZ, 2.0)),
    );
    let (e1, e2) = (level(&r1, "g2"), level(&r2, "g2"));
    let exact_slope = e2.final_population - e1.final_population;
    let est_slope = e2.first_order.unwrap() - e1.first_order.unwrap();
    let rel = exact_slope / est_slope - 1.0;
    println!(
        "g2 after 1 us: exact {:e}, estimate {:e}; after 2 us: exact {:e}, estimate {:e}; \
         per-us pumping exact {exact_slope:e} estimate {est_slope:e} (relative {rel:e})",
        e1.final_population,
        e1.first_order.unwrap(),
        e2.final_population,
        e2.first_order.unwrap()
    );
    assert!(rel.abs() < 1e-3, "relative difference {rel:e}");
    // One pulse alone: within the switching transients, ~1/(Gamma T).
    let gamma_t = 1e-6 / LIFETIME;
    let rel1 = e1.final_population / e1.first_order.unwrap() - 1.0;
    assert!(
        rel1.abs() < 2.0 / gamma_t,
        "1 us pulse: relative {rel1:e} beyond 2/(Gamma T)"
    );
}

#[test]
fn pumped_population_is_attributed_to_decay_via_e_in_the_json() {
    let r = vet(&lambda_text(WEAK_RABI_MHZ, 1.0));
    let g2 = level(&r, "g2");
    assert_eq!(g2.sources.len(), 1);
    assert_eq!(g2.sources[0].channel, Channel::Decay);
    let json = String::from_utf8(export(&r, Format::Json).unwrap()).unwrap();
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let g2 = v["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["id"] == "g2")
        .unwrap();
    let s = &g2["sources"][0];
    assert_eq!(s["via"], "e");
    assert_eq!(s["channel"], "decay");
    assert_eq!(s["field"], "probe");
    assert_eq!(s["from"], "g1");
    assert!((s["detuning_mhz"].as_f64().unwrap() - DETUNING_HZ / 1e6).abs() < 1e-6);
    let p = s["first_order_population"].as_f64().unwrap();
    assert!((p - pumped_by_formula(WEAK_RABI_MHZ, 1.0)).abs() < 1e-8 * p);
    // The drive source on e keeps the v1 keys only.
    let e = v["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["id"] == "e")
        .unwrap();
    let keys: Vec<&String> = e["sources"][0].as_object().unwrap().keys().collect();
    assert!(
        !keys.iter().any(|k| *k == "via" || *k == "channel"),
        "{keys:?}"
    );
}

#[test]
fn saturated_pumping_is_marked_unreliable() {
    // Omega/2pi = 30 MHz at 40 MHz detuning on a 6.4 MHz line: s ~ 0.27.
    let text = lambda_text(30.0, 1.0);
    let model = parse(&text, "inline.yaml").unwrap();
    let est = levelplan::estimate::estimate(&model).unwrap();
    let g2_index = model.level_index("g2").unwrap();
    let d = &est.levels[g2_index].decay_sources[0];
    assert!(d.saturation > 0.1 && !d.reliable, "{d:?}");
    let r = vet(&text);
    let g2 = level(&r, "g2");
    assert!(g2.sources[0].saturation.unwrap() > 0.1);
    assert!(g2.unreliable);
    let text = String::from_utf8(export(&r, Format::Text).unwrap()).unwrap();
    assert!(text.contains("est?"), "{text}");
    assert!(text.contains("g1, via e by decay"), "{text}");
}

/// A laser linewidth and a pure dephasing broaden the line at fixed area:
/// G = Gamma + 2 dephasing + w_L in the Lorentzian (the weak-drive steady
/// state of the density-matrix equation; common practice, no source). The
/// exact pumping rate (2 us minus 1 us, transients cancelled) agrees.
#[test]
fn dephasing_and_linewidth_broaden_the_rate() {
    let e_extra = r#", dephasing: "5e6 s^-1""#;
    let probe_extra = "\n    linewidth: \"2 MHz\"";
    let rabi = 0.35;
    let (r1, r2) = (
        vet(&broadened_text(rabi, 1.0, e_extra, probe_extra)),
        vet(&broadened_text(rabi, 2.0, e_extra, probe_extra)),
    );
    let (e1, e2) = (level(&r1, "g2"), level(&r2, "g2"));
    let omega = 2.0 * PI * rabi * 1e6;
    let width = 1.0 / LIFETIME + 2.0 * 5e6 + 2.0 * PI * 2e6;
    let delta = 2.0 * PI * DETUNING_HZ;
    let want = (omega * omega / width) / (1.0 + (2.0 * delta / width).powi(2)) * 1e-6 * 0.5;
    let est = e1.first_order.unwrap();
    assert!((est - want).abs() <= 1e-8 * want, "{est:e} vs {want:e}");
    let exact_slope = e2.final_population - e1.final_population;
    let est_slope = e2.first_order.unwrap() - est;
    let rel = exact_slope / est_slope - 1.0;
    println!(
        "broadened: per-us pumping exact {exact_slope:e} estimate {est_slope:e} (relative {rel:e})"
    );
    assert!(rel.abs() < 2e-3, "relative difference {rel:e}");
}
