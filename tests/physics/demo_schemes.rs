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
    let ids: Vec<&str> = m.levels().iter().map(|l| l.id.as_str()).collect();
    assert_eq!(ids, ["S_F1", "S_F2", "P_F0", "P_F1", "P_F2", "P_F3"]);
    let g = idx(&m, "S_F2");
    assert_eq!(m.targets(), vec![idx(&m, "P_F3")]);
    // Zero-field hyperfine energies E_F = A K/2 + B (3/2 K(K+1) - 2 I(I+1)
    // J(J+1)) / (4 I(2I-1) J(2J-1)), K = F(F+1) - I(I+1) - J(J+1)
    // (Arimondo, Inguscio, Violino, Rev. Mod. Phys. 49, 31 (1977)): with the
    // header's A = 86 MHz, B = 10 MHz the intervals F'=3-2, 2-1, 1-0 are
    // 3A + B = 268, 2A - B = 162, A - B = 76 MHz; S: 2A = 6200 MHz.
    let gap = |a: &str, b: &str| mhz(m.levels()[idx(&m, a)].omega - m.levels()[idx(&m, b)].omega);
    assert!((gap("P_F3", "P_F2") - 268.0).abs() < 1e-6);
    assert!((gap("P_F2", "P_F1") - 162.0).abs() < 1e-6);
    assert!((gap("P_F1", "P_F0") - 76.0).abs() < 1e-6);
    assert!((gap("S_F2", "S_F1") - 6200.0).abs() < 1e-6);
    // Selection rules: F = 2 reaches F' = 1, 2, 3, never F' = 0; F = 1
    // reaches F' = 0, 1, 2 (beyond the 1 GHz cutoff, 6.2 GHz away).
    let from = |lower: usize| -> Vec<(String, f64, bool, f64)> {
        m.drives()
            .iter()
            .filter(|d| m.couplings()[d.coupling].lower == lower)
            .map(|d| {
                let up = m.couplings()[d.coupling].upper;
                (
                    m.levels()[up].id.clone(),
                    mhz(m.detuning(d)),
                    m.drive_included(d),
                    d.rabi,
                )
            })
            .collect()
    };
    let f2 = from(g);
    let f1 = from(idx(&m, "S_F1"));
    let names = |v: &[(String, f64, bool, f64)]| v.iter().map(|x| x.0.clone()).collect::<Vec<_>>();
    assert_eq!(names(&f2), ["P_F1", "P_F2", "P_F3"]);
    assert_eq!(names(&f1), ["P_F0", "P_F1", "P_F2"]);
    assert!(f2.iter().all(|x| x.2) && f1.iter().all(|x| !x.2));
    // The field sits on P_F3, blue of P_F2 and P_F1 by 268 and 430 MHz.
    for ((_, det, _, _), want) in f2.iter().zip([430.0, 268.0, 0.0]) {
        assert!((det - want).abs() < 1e-3, "{det} vs {want}");
    }
    // Rabi frequencies scale as sqrt(S_FF'): for J = 1/2 -> 3/2, I = 3/2,
    // S_2F' = 1/20, 1/4, 7/10 for F' = 1, 2, 3 (D. A. Steck, alkali D-line
    // data, relative hyperfine transition strength factors).
    assert_relative_eq!(
        f2[1].3 / f2[2].3,
        (0.25_f64 / 0.7).sqrt(),
        max_relative = 1e-12
    );
    assert_relative_eq!(
        f2[0].3 / f2[2].3,
        (0.05_f64 / 0.7).sqrt(),
        max_relative = 1e-12
    );
    let main = m
        .drives()
        .iter()
        .find(|d| m.couplings()[d.coupling].upper == idx(&m, "P_F3"))
        .unwrap();
    assert_relative_eq!(m.pulse_area(main), PI, max_relative = 1e-12);
    assert_relative_eq!(m.tolerance_of(idx(&m, "P_F2")), 5e-4);
    assert_relative_eq!(m.tolerance_of(idx(&m, "S_F1")), 5e-4);
    // Lifetime 45 ns on every P level; P_F3 decays only to S_F2 (branching
    // (2F+1)(2J'+1){J J' 1; F' F I}^2 = 1 for F' = 3 -> F = 2).
    let p3 = idx(&m, "P_F3");
    assert_relative_eq!(m.levels()[p3].gamma, 1.0 / 45e-9, max_relative = 1e-12);
    let b = m.branches(p3);
    assert_eq!(b.len(), 1);
    assert_eq!(b[0].0, g);
    assert_relative_eq!(b[0].1, 1.0, max_relative = 1e-12);
    // Peak Omega/2pi about 130 MHz, as the header says.
    let peak = mhz(main.rabi);
    assert!((125.0..140.0).contains(&peak), "{peak}");
}

#[test]
fn sigma_pumping_generates_sublevels_impurity_and_decay() {
    let m = load("sigma_pumping.yaml");
    // 8 ground and 16 upper sublevels of I = 3/2 with J = 1/2 and 3/2.
    assert_eq!(m.levels().len(), 24);
    assert_eq!(m.initial()[idx(&m, "S_F2_m+1")], 1.0);
    assert_eq!(m.targets(), vec![idx(&m, "S_F2_m+2")]);
    // Every sublevel pair with |Delta m_F| <= 1 is coupled at 3 G: 68
    // (counted by hand from the m_F ladders; 54 of them allowed at zero field).
    assert_eq!(m.couplings().len(), 68);
    // One field, all three polarisation components present: one drive per
    // coupling.
    assert_eq!(m.fields().len(), 1);
    assert_eq!(m.drives().len(), 68);
    // The tuned line is resonant at the field, 5 MHz on it.
    let (a, b) = (idx(&m, "S_F2_m+2"), idx(&m, "P_F3_m+3"));
    let main = m
        .drives()
        .iter()
        .find(|d| m.couplings()[d.coupling].lower == a && m.couplings()[d.coupling].upper == b)
        .unwrap();
    assert!(mhz(m.detuning(main)).abs() < 1e-9);
    assert_relative_eq!(mhz(main.rabi), 5.0, max_relative = 1e-12);
    // The pi impurity on |2,+1> -> |3',+1'>: by the Wigner-Eckart theorem
    // the ratio of its element to the stretched line's is
    // <2 1; 1 0|3 1> / <2 2; 1 1|3 3> = sqrt(8/15) (standard Clebsch-Gordan
    // tables, e.g. the Particle Data Group's), times sqrt(0.02 / 0.97) for
    // the intensity fractions: exact at zero field, within the F-mixing of
    // 3 G (mu_B B / 268 MHz ~ 2 %) at the demo's field.
    let want = (8.0_f64 / 15.0).sqrt() * (0.02_f64 / 0.97).sqrt();
    let text = std::fs::read_to_string(dir().join("sigma_pumping.yaml")).unwrap();
    let zero = scheme::parse(&text.replace("\"3 G\"", "\"0 G\""), "zero.yaml").unwrap();
    for (model, tol) in [(&m, 2e-2), (&zero, 1e-12)] {
        let rabi = |lo: &str, up: &str| {
            let (a, b) = (idx(model, lo), idx(model, up));
            model
                .drives()
                .iter()
                .find(|x| {
                    let c = &model.couplings()[x.coupling];
                    c.lower == a && c.upper == b
                })
                .unwrap()
                .rabi
        };
        let ratio = (rabi("S_F2_m+1", "P_F3_m+1") / rabi("S_F2_m+2", "P_F3_m+3")).abs();
        assert_relative_eq!(ratio, want, max_relative = tol);
    }
    // Decay generated as coherent channels, three photon polarisations.
    assert_eq!(m.jumps().len(), 3);
    let top = idx(&m, "P_F3_m+3");
    assert_relative_eq!(m.levels()[top].gamma, 1.0 / 45e-9, max_relative = 1e-12);
    // The stretched upper state decays only to the stretched ground state.
    let br = m.branches(top);
    assert_eq!(br.len(), 1);
    assert_eq!(br[0].0, a);
    assert_relative_eq!(br[0].1, 1.0, max_relative = 1e-9);
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

/// vet of a shipped scheme (the library's pipeline, as the CLI runs it).
fn vet_file(rel: &str) -> levelplan::report::VetReport {
    let p = Path::new(env!("CARGO_MANIFEST_DIR")).join(rel);
    let (model, src) = read(&p);
    let prov = levelplan::report::Provenance::new(rel, &src.sha256);
    levelplan::pipeline::vet_model(&model, prov, None).unwrap_or_else(|e| panic!("{e}"))
}

fn row<'a>(r: &'a levelplan::report::VetReport, id: &str) -> &'a levelplan::report::LevelRow {
    r.levels.iter().find(|l| l.id == id).unwrap()
}

/// The hyperfine demo flags the right levels for the right reason: P_F2 by
/// the drive from S_F2 268 MHz off resonance (the pulse spectrum), S_F1 by
/// the decay of P_F2 (F' = 2 -> F = 1 has branching 1/2 for I = 3/2,
/// J = 1/2 -> 3/2: D. A. Steck, alkali D-line data), and nothing reaches
/// P_F0 (no F = 2 -> F' = 0 line, S_F1 empty at the start).
#[test]
fn hyperfine_demo_flags_the_neighbour_and_its_decay() {
    let r = vet_file("level_schemes/hyperfine_manifold.yaml");
    let flagged: Vec<&str> = r
        .levels
        .iter()
        .filter(|l| l.flagged)
        .map(|l| l.id.as_str())
        .collect();
    assert_eq!(flagged, ["S_F1", "P_F2"]);
    assert_eq!(levelplan::pipeline::vet_status(&r), 3);
    let p2 = row(&r, "P_F2");
    let first = &p2.sources[0];
    assert_eq!(first.from, "S_F2");
    assert!((first.detuning / TWO_PI / 1e6 - 268.0).abs() < 1e-3);
    assert!(p2.final_population > 2.0 * p2.tolerance);
    let s1 = row(&r, "S_F1");
    assert_eq!(s1.sources[0].via.as_deref(), Some("P_F2"));
    assert_eq!(row(&r, "P_F0").final_population, 0.0);
}

/// sigma+ light from |2,+1> can only raise m_F, and the decay of
/// |3', +2'> returns to m_F = +1, +2: with pure sigma+ no m_F <= 0 sublevel
/// is ever populated (m_F is conserved exactly along the field; Delta m =
/// +1 in absorption: the dipole selection rules, Edmonds ch. 5). The pi
/// and sigma- impurity reaches |2, 0>, above the 1e-3 tolerance, through
/// the decay of |3', +1'> (common practice, no source).
#[test]
fn sigma_pumping_impurity_is_what_breaks_the_tolerance() {
    let impure = vet_file("level_schemes/sigma_pumping.yaml");
    let pure = vet_file("level_schemes/cookbook/sigma_pumping_pure.yaml");
    let flagged = |r: &levelplan::report::VetReport| -> Vec<String> {
        r.levels
            .iter()
            .filter(|l| l.flagged)
            .map(|l| l.id.clone())
            .collect()
    };
    assert_eq!(flagged(&impure), ["S_F2_m0"]);
    assert!(flagged(&pure).is_empty());
    for id in ["S_F2_m0", "S_F2_m-1", "S_F2_m-2"] {
        assert_eq!(row(&pure, id).final_population, 0.0, "{id}");
    }
    let m0 = row(&impure, "S_F2_m0");
    assert!(m0.final_population > 1e-3, "{}", m0.final_population);
    assert_eq!(m0.sources[0].via.as_deref(), Some("P_F3_m+1"));
    // The target gets most of the population either way.
    for r in [&impure, &pure] {
        assert!(row(r, "S_F2_m+2").final_population > 0.9);
    }
}
