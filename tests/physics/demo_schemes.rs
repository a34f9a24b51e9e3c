//! Every shipped demo scheme parses, and a few derived numbers are what its
//! header comment says.

use approx::assert_relative_eq;
use levelplan::model::{Dipole, Model};
use levelplan::scheme;
use std::f64::consts::PI;
use std::path::{Path, PathBuf};

const TWO_PI: f64 = 2.0 * PI;

fn dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("level_schemes")
}

/// The model and source of a scheme file, read as the command line reads it.
fn read(p: &Path) -> (Model, scheme::SchemeSource) {
    let bytes = std::fs::read(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
    scheme::from_bytes(&bytes, &p.display().to_string()).unwrap_or_else(|e| panic!("{e}"))
}

fn load(name: &str) -> Model {
    read(&dir().join(name)).0
}

fn idx(m: &Model, id: &str) -> usize {
    m.level_index(id).unwrap_or_else(|| panic!("no level {id}"))
}

fn mhz(x: f64) -> f64 {
    x / TWO_PI / 1e6
}

#[test]
fn every_demo_parses_and_is_labelled_illustrative() {
    let mut n = 0;
    for entry in std::fs::read_dir(dir()).unwrap() {
        let p = entry.unwrap().path();
        if p.extension().and_then(|e| e.to_str()) != Some("yaml") {
            continue;
        }
        let (m, src) = read(&p);
        assert!(
            !m.levels().is_empty() && !m.fields().is_empty(),
            "{}",
            p.display()
        );
        assert_eq!(src.sha256.len(), 64);
        let text = std::fs::read_to_string(&p).unwrap();
        assert!(
            text.starts_with("# Illustrative, invented scenario"),
            "{} lacks the illustrative header",
            p.display()
        );
        assert!(
            text.contains("IEC 60825-1"),
            "{} lacks the safety note",
            p.display()
        );
        n += 1;
    }
    assert!(n >= 4, "only {n} demo schemes");
}

#[test]
fn calibration_is_a_resonant_rectangular_pi_pulse() {
    let m = load("two_level_calibration.yaml");
    assert_eq!(m.drives().len(), 1);
    let d = &m.drives()[0];
    // Omega/2pi = 5 MHz for 100 ns: area pi.
    assert_relative_eq!(m.pulse_area(d), PI, max_relative = 1e-12);
    assert_eq!(m.detuning(d), 0.0);
    assert!(m
        .fields()
        .iter()
        .all(|f| f.envelope.is_piecewise_constant()));
    assert_eq!(m.solver().method, levelplan::model::Method::Exact);
    // 24512.37 cm^-1 is 407.96 nm in vacuum.
    let lambda = levelplan::units::wavelength_from_omega(m.transition_omega(0));
    assert_relative_eq!(lambda, 1e-2 / 24_512.37, max_relative = 1e-12);
    // lifetime 2.4 us
    assert_relative_eq!(
        m.levels()[idx(&m, "e")].gamma,
        1.0 / 2.4e-6,
        max_relative = 1e-12
    );
    // An absolute dipole: the intensity of the pi pulse is known.
    assert!(m.fields()[0].peak_intensity.is_some());
}

#[test]
fn hyperfine_spectators_and_tolerances() {
    let m = load("hyperfine_manifold.yaml");
    let g = idx(&m, "g");
    assert_eq!(m.targets(), vec![idx(&m, "e3")]);
    assert_eq!(m.drives().len(), 4);
    // Detunings of the one field from each g -> ek line (MHz).
    // The field sits on e3, the highest level: blue of e0..e2.
    let expect = [("e0", 496.0), ("e1", 424.0), ("e2", 267.0), ("e3", 0.0)];
    for (k, (id, det)) in expect.iter().enumerate() {
        let d = &m.drives()[k];
        assert_eq!(m.couplings()[d.coupling].lower, g);
        assert_eq!(m.couplings()[d.coupling].upper, idx(&m, id));
        assert!(
            (mhz(m.detuning(d)) - det).abs() < 1e-3,
            "{id}: {}",
            mhz(m.detuning(d))
        );
    }
    // pi on g -> e3; the others scale by their dipoles (e1 is negative).
    assert_relative_eq!(m.pulse_area(&m.drives()[3]), PI, max_relative = 1e-12);
    assert_relative_eq!(
        m.drives()[1].rabi / m.drives()[3].rabi,
        -1.1 / 2.4,
        max_relative = 1e-12
    );
    assert_relative_eq!(m.tolerance_of(idx(&m, "e2")), 5e-4);
    assert_relative_eq!(m.tolerance_of(idx(&m, "e0")), 1e-3);
    // Peak Omega/2pi about 130 MHz, as the header says.
    let peak = mhz(m.drives()[3].rabi);
    assert!((125.0..140.0).contains(&peak), "{peak}");
}

#[test]
fn ladder_is_on_two_photon_resonance_with_far_drives_cut() {
    let m = load("ladder_two_step.yaml");
    let (g, u) = (idx(&m, "g"), idx(&m, "u"));
    // omega_1 + omega_2 = omega_u - omega_g.
    let sum = m.fields()[0].omega + m.fields()[1].omega;
    assert!(((sum - (m.levels()[u].omega - m.levels()[g].omega)) / TWO_PI).abs() < 1.0);
    // 5 coupling entries; m2-u only by the second field: 4 x 2 + 1 drives.
    assert_eq!(m.drives().len(), 9);
    let cut: Vec<(String, String, String)> = m
        .drives()
        .iter()
        .filter(|d| !m.drive_included(d))
        .map(|d| {
            let c = &m.couplings()[d.coupling];
            (
                m.fields()[d.field].id.clone(),
                m.levels()[c.lower].id.clone(),
                m.levels()[c.upper].id.clone(),
            )
        })
        .collect();
    let s = |a: &str, b: &str, c: &str| (a.to_string(), b.to_string(), c.to_string());
    assert_eq!(
        cut,
        vec![
            s("first", "m", "u"),
            s("first", "m", "u2"),
            s("second", "g", "m"),
            s("second", "g", "m2")
        ]
    );
    // Intermediate lifetime 5 ns; first-step Rabi frequency from 200 mW/cm^2
    // on 3.0 ea0: Omega/2pi = 47.1 MHz (Omega = d E0 / hbar).
    assert_relative_eq!(m.levels()[idx(&m, "m")].gamma, 2e8, max_relative = 1e-12);
    assert_relative_eq!(mhz(m.drives()[0].rabi), 47.1, max_relative = 2e-3);
    // 3 mW in a 100 um waist: 19.1 W/cm^2.
    assert_relative_eq!(
        m.fields()[1].peak_intensity.unwrap() / 1e4,
        19.099,
        max_relative = 1e-4
    );
    // Default window covers both envelopes.
    assert!(m.window().start < 0.0 && m.window().end > 100e-9);
}

#[test]
fn lambda_legs_and_raman_area() {
    let m = load("lambda_raman.yaml");
    let (g1, g2, e) = (idx(&m, "g1"), idx(&m, "g2"), idx(&m, "e"));
    assert_eq!(m.drives().len(), 2, "each field drives only its own leg");
    for d in m.drives() {
        assert_relative_eq!(mhz(m.detuning(d)), -2000.0, max_relative = 1e-9);
        assert_relative_eq!(mhz(d.rabi.abs()), 40.0, max_relative = 1e-12);
        assert!(matches!(
            m.couplings()[d.coupling].dipole,
            Dipole::Relative(_)
        ));
        assert_eq!(m.couplings()[d.coupling].upper, e);
    }
    // Two-photon resonance: omega_pump - omega_stokes = omega_g2 - omega_g1.
    let diff = m.fields()[0].omega - m.fields()[1].omega;
    let resid = ((diff - (m.levels()[g2].omega - m.levels()[g1].omega)) / TWO_PI).abs();
    assert!(resid < 1.0, "{resid} Hz");
    // Raman area: Omega_p Omega_s / (2 Delta) x 3/8 T = pi (to 0.1 %).
    let (op, os) = (m.drives()[0].rabi.abs(), m.drives()[1].rabi.abs());
    let delta = m.detuning(&m.drives()[0]).abs();
    let t = m.fields()[0].envelope.area() * 2.0;
    assert_relative_eq!(op * os / (2.0 * delta) * 0.375 * t, PI, max_relative = 1e-3);
    // Relative dipoles: no intensity is known.
    assert!(m.fields().iter().all(|f| f.peak_intensity.is_none()));
}

#[test]
fn lambda_variant_without_field_lists_drives_both_legs() {
    let text = std::fs::read_to_string(dir().join("lambda_raman.yaml")).unwrap();
    let variant = text
        .replace("    fields: [pump]\n", "")
        .replace("    fields: [stokes]\n", "");
    let m = scheme::parse(&variant, "variant.yaml").unwrap();
    assert_eq!(m.drives().len(), 4);
    let dets: Vec<f64> = m
        .drives()
        .iter()
        .map(|d| (mhz(m.detuning(d)) * 10.0).round() / 10.0)
        .collect();
    // pump: g1-e -2 GHz, g2-e +3.1 GHz; stokes: g1-e -7.1 GHz, g2-e -2 GHz.
    assert_eq!(dets, vec![-2000.0, 3100.0, -7100.0, -2000.0]);
    assert!(m.drives().iter().all(|d| m.drive_included(d)));
}

#[test]
fn complete_example_in_the_format_reference_parses() {
    let doc = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/scheme-format.md"),
    )
    .unwrap();
    let start = doc.find("```yaml\n").unwrap() + "```yaml\n".len();
    let end = start + doc[start..].find("```").unwrap();
    let m = scheme::parse(&doc[start..end], "scheme-format.md").unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(m.levels().len(), 2);
    assert_relative_eq!(mhz(m.detuning(&m.drives()[0])), -20.0, max_relative = 1e-6);
    assert!(doc.contains("IEC 60825-1"));
}
