//! Scans of generated structure: the bias field moving a Zeeman-shifted
//! line through a fixed laser, a beam's power and polarisation fractions
//! acting on every spherical component of one field, manifold constants
//! reached by scan paths, and a remedy acting on the whole beam. Each point
//! goes through `scheme::Prepared::with_overrides`, what `levelplan scan`
//! runs per grid point.

use levelplan::model::Model;
use levelplan::report::Provenance;
use levelplan::scheme::Prepared;
use levelplan::solve::{solve, SolveOptions};
use levelplan::{vet, VetOptions};

/// Rb-87 5S1/2 and 5P3/2 with published constants (D. A. Steck, "Rubidium
/// 87 D Line Data", rev. 2.3.3: A, B, g_J, g_I, the 780.241 nm line), used
/// here as check values only. The probe is tuned to the zero-field F = 2 ->
/// F' = 3 line (so it stays put while the field moves), sigma+ from the
/// stretched |2, +2>: the only line it drives is |2,+2> -> |3',+3'>, a
/// two-level system whose resonance is where the Zeeman shift equals the
/// detuning.
const RB87: &str = r#"title: Rb-87 D2 stretched line in a bias field (published constants, check values)
manifolds:
  S: { energy: "0 MHz", J: 1/2, I: 3/2, hyperfine: { A: "3417.341305452145 MHz" }, g_J: 2.00233113, g_I: -0.0009951414 }
  P: { energy: "384230484.4685 MHz", J: 3/2, I: 3/2, hyperfine: { A: "84.7185 MHz", B: "12.4965 MHz" }, g_J: 1.3362, g_I: -0.0009951414 }
magnetic_field: "0 G"
couplings:
  - between: [S, P]
    reduced_dipole: "4.227 ea0"
fields:
  probe:
    tuned: { to: [{ manifold: S, F: 2 }, { manifold: P, F: 3 }], detuning: "DETUNING" }
    polarization: sigma+
    rabi: { on: [{ manifold: S, F: 2, m_F: 2 }, { manifold: P, F: 3, m_F: 3 }], value: "2.5 MHz" }
    envelope: { shape: rectangular, start: "0 ns", duration: "200 ns" }
initial: { manifold: S, F: 2, m_F: 2 }
targets: [P_F3_m+3]
solver: { detuning_cutoff: "1 GHz" }
"#;

/// mu_B / h in MHz/G (CODATA 2018, 1.39962449361 MHz/G).
const MU_B_MHZ_PER_G: f64 = 1.399_624_493_61;

/// The Lande g_F (common practice; e.g. D. A. Steck, Rubidium 87 D Line
/// Data, eq. for g_F with the nuclear term).
fn lande_g_f(f: f64, j: f64, i: f64, g_j: f64, g_i: f64) -> f64 {
    let ff = f * (f + 1.0);
    let (jj, ii) = (j * (j + 1.0), i * (i + 1.0));
    g_j * (ff - ii + jj) / (2.0 * ff) + g_i * (ff + ii - jj) / (2.0 * ff)
}

fn target_population(p: &Prepared, field_gauss: f64) -> f64 {
    let m = p
        .with_overrides(&[("magnetic_field".to_string(), format!("{field_gauss} G"))])
        .expect("a valid point");
    let sol = solve(&m, &SolveOptions::default()).expect("solved");
    let k = m.level_index("P_F3_m+3").expect("generated");
    sol.final_populations[k]
}

/// Where the line's peak lies on a grid of fields (parabola through the
/// largest sample and its neighbours).
fn peak(p: &Prepared, lo: f64, hi: f64, n: usize) -> f64 {
    let xs: Vec<f64> = (0..n)
        .map(|k| lo + (hi - lo) * k as f64 / (n - 1) as f64)
        .collect();
    let ys: Vec<f64> = xs.iter().map(|&b| target_population(p, b)).collect();
    let k = (1..n - 1)
        .max_by(|&a, &b| ys[a].total_cmp(&ys[b]))
        .expect("an inner point");
    let h = xs[1] - xs[0];
    let (a, b, c) = (ys[k - 1], ys[k], ys[k + 1]);
    xs[k] + 0.5 * h * (a - c) / (a - 2.0 * b + c)
}

#[test]
fn magnetic_field_scan_moves_the_zeeman_shifted_line_as_g_f_m_f_mu_b_b() {
    // Linear Zeeman shift of the line: (g_F' m_F' - g_F m_F) mu_B B, exact
    // for these two stretched states (each alone in its m_F block).
    let g2 = lande_g_f(2.0, 0.5, 1.5, 2.002_331_13, -0.000_995_141_4);
    let g3 = lande_g_f(3.0, 1.5, 1.5, 1.3362, -0.000_995_141_4);
    let slope = (3.0 * g3 - 2.0 * g2) * MU_B_MHZ_PER_G; // MHz/G
    for detuning_mhz in [7.0, 14.0] {
        let p = Prepared::new(
            &RB87.replace("DETUNING", &format!("{detuning_mhz} MHz")),
            "rb87.yaml",
        )
        .expect("valid");
        let predicted = detuning_mhz / slope;
        // Coarse: the whole 0..15 G range, the line found where predicted.
        let coarse = peak(&p, 0.0, 15.0, 61);
        assert!(
            (coarse - predicted).abs() < 0.25,
            "coarse peak {coarse} G, predicted {predicted} G"
        );
        // Fine: +-0.2 G around the coarse peak.
        let fine = peak(&p, coarse - 0.2, coarse + 0.2, 41);
        assert!(
            (fine - predicted).abs() < 1e-5,
            "detuning {detuning_mhz} MHz: peak at {fine} G, linear Zeeman shift predicts {predicted} G"
        );
        eprintln!(
            "detuning {detuning_mhz} MHz: peak {fine:.7} G, predicted {predicted:.7} G, \
             difference {:.2e} G (slope {slope:.9} MHz/G)",
            fine - predicted
        );
        // On resonance the 2.5 MHz, 200 ns pulse is a pi pulse (Rabi formula).
        let top = target_population(&p, predicted);
        assert!(top > 0.999, "population at the resonance {top}");
    }
}

/// An invented J = 1/2 -> 1/2, I = 1/2 pair, one sigma+ beam with a pi and
/// sigma- impurity, its strength given as an intensity. Illustrative.
const IMPURE: &str = r#"title: one beam with a polarisation impurity (illustrative)
manifolds:
  S: { energy: "0 MHz", J: 1/2, I: 1/2, hyperfine: { A: "100 MHz" }, g_J: 2.0 }
  P: { energy: "400000 GHz", J: 1/2, I: 1/2, hyperfine: { A: "20 MHz" }, g_J: 0.6667 }
magnetic_field: "2 G"
couplings:
  - between: [S, P]
    reduced_dipole: "3 ea0"
fields:
  pump:
    tuned: { to: [{ manifold: S, F: 1 }, { manifold: P, F: 1 }], detuning: "0 MHz" }
    polarization: { sigma+: 0.9, pi: 0.06, sigma-: 0.04 }
    intensity: "1 mW/cm^2"
    envelope: { shape: rectangular, start: "0 ns", duration: "100 ns" }
initial: { mixture: { { manifold: S, F: 1 }: 1 } }
"#;

/// 2 m_F from a generated id (`S_F1_m+1` -> 2).
fn two_m(id: &str) -> i32 {
    let m = id.rsplit("_m").next().expect("a sublevel id");
    match m.split_once('/') {
        Some((n, _)) => n.parse().expect("2m"),
        None => 2 * m.parse::<i32>().expect("m"),
    }
}

/// The Rabi frequency of every drive of the model, by sublevel pair, with
/// the photon's q = m_upper - m_lower.
fn drives(m: &Model) -> Vec<(String, i32, f64)> {
    m.drives()
        .iter()
        .map(|d| {
            let c = &m.couplings()[d.coupling];
            let (lo, up) = (&m.levels()[c.lower].id, &m.levels()[c.upper].id);
            let q = (two_m(up) - two_m(lo)) / 2;
            (format!("{lo}->{up}"), q, d.rabi)
        })
        .collect()
}

#[test]
fn power_scan_moves_every_spherical_component_of_one_beam() {
    let p = Prepared::new(IMPURE, "impure.yaml").expect("valid");
    let at = |value: &str| {
        p.with_overrides(&[("fields.pump.intensity".into(), value.into())])
            .expect("a valid point")
    };
    let (low, high) = (drives(&at("1 mW/cm^2")), drives(&at("4 mW/cm^2")));
    let qs: Vec<i32> = low.iter().map(|d| d.1).collect();
    for q in [-1, 0, 1] {
        assert!(qs.contains(&q), "no drive with q = {q}: {qs:?}");
    }
    assert_eq!(low.len(), high.len());
    // Four times the intensity: twice every Rabi frequency (Omega ~ sqrt(I)),
    // sigma+, pi and sigma- alike (common practice, no source).
    for (l, h) in low.iter().zip(&high) {
        assert_eq!(l.0, h.0);
        assert!(
            (h.2 / l.2 - 2.0).abs() < 1e-12,
            "{} (q = {}): {} -> {}",
            l.0,
            l.1,
            l.2,
            h.2
        );
    }
}

#[test]
fn polarisation_fraction_scan_rescales_the_other_components() {
    let p = Prepared::new(IMPURE, "impure.yaml").expect("valid");
    let base = drives(&p.with_overrides(&[]).expect("valid"));
    let m = p
        .with_overrides(&[("fields.pump.polarization.pi".into(), "0.2".into())])
        .expect("a valid point");
    let changed = drives(&m);
    // pi: 0.06 -> 0.2; sigma+ and sigma- share the remaining 0.8 in their
    // proportion 0.9 : 0.04. Omega_q ~ sqrt(p_q) (the scheme's polarisation
    // rule; common practice, no source).
    let want = |q: i32| match q {
        0 => (0.2_f64 / 0.06).sqrt(),
        _ => (0.8_f64 / 0.94).sqrt(),
    };
    for (b, c) in base.iter().zip(&changed) {
        assert!(
            (c.2 / b.2 - want(b.1)).abs() < 1e-12,
            "{} (q = {}): ratio {}",
            b.0,
            b.1,
            c.2 / b.2
        );
    }
    // A pure polarisation becomes a map: pi from 0 takes its share from sigma+.
    let pure = IMPURE.replace("{ sigma+: 0.9, pi: 0.06, sigma-: 0.04 }", "sigma+");
    let p = Prepared::new(&pure, "pure.yaml").expect("valid");
    let m = p
        .with_overrides(&[("fields.pump.polarization.pi".into(), "0.1".into())])
        .expect("a valid point");
    assert!(drives(&m).iter().any(|d| d.1 == 0 && d.2 != 0.0));
    assert!(drives(&m).iter().all(|d| d.1 != -1 || d.2 == 0.0));
    // ... but sigma+ below 1 has nothing to hand its share to.
    let e = p
        .with_overrides(&[("fields.pump.polarization.sigma+".into(), "0.9".into())])
        .expect_err("refused");
    let d = &e.diagnostics[0];
    assert_eq!(d.line, Some(12), "{d:?}");
    assert!(d.expected.contains("other polarisation fractions"), "{d:?}");
}

#[test]
fn manifold_constants_are_scan_paths() {
    let p = Prepared::new(IMPURE, "impure.yaml").expect("valid");
    let level = |m: &Model, id: &str| {
        let k = m.level_index(id).expect("generated");
        m.levels()[k].clone()
    };
    let two_pi = 2.0 * std::f64::consts::PI;
    // At zero field the F = 1 / F = 0 splitting of J = I = 1/2 is A
    // (A K / 2 with K = 1/2 and -3/2; E. Arimondo, M. Inguscio, P.
    // Violino, Rev. Mod. Phys. 49, 31 (1977)).
    for a in ["100 MHz", "250 MHz"] {
        let m = p
            .with_overrides(&[
                ("magnetic_field".into(), "0 G".into()),
                ("manifolds.S.hyperfine.A".into(), a.into()),
            ])
            .expect("valid");
        let split = level(&m, "S_F1_m0").omega - level(&m, "S_F0_m0").omega;
        let want = two_pi * a.trim_end_matches(" MHz").parse::<f64>().unwrap() * 1e6;
        assert!((split - want).abs() < 1e-9 * want, "{a}: {split}");
    }
    // g_J, the centre of gravity, a lifetime the file leaves out, and B
    // where the manifold writes no hyperfine B (refused for J = 1/2, the
    // path itself is reached).
    let m = p
        .with_overrides(&[
            ("manifolds.S.g_J".into(), "1.0".into()),
            ("manifolds.P.energy".into(), "400001 GHz".into()),
            ("manifolds.P.lifetime".into(), "25 ns".into()),
        ])
        .expect("valid");
    let zeeman = |m: &Model| level(m, "S_F1_m+1").omega - level(m, "S_F1_m-1").omega;
    let m0 = p.with_overrides(&[]).expect("valid");
    assert!((zeeman(&m) / zeeman(&m0) - 0.5).abs() < 1e-3, "g_J halved");
    assert!((level(&m, "P_F1_m0").gamma - 1.0 / 25e-9).abs() < 1e-3);
    assert!((level(&m, "P_F1_m0").omega - level(&m0, "P_F1_m0").omega - two_pi * 1e9).abs() < 1e3);
    let e = p
        .with_overrides(&[("manifolds.S.hyperfine.B".into(), "1 MHz".into())])
        .expect_err("B needs J >= 1");
    assert!(e.to_string().contains("no quadrupole constant B"), "{e}");
}

#[test]
fn remedy_at_length_stretches_the_whole_beam() {
    // The impure sigma+ fixture: the check of "lengthen the pulse" must be
    // the same scheme with every component of the one beam stretched (the
    // duration times s, the Rabi frequency over s, the window widened), as
    // written by hand here.
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/manifolds/a_sigma_plus_impure.yaml"
    );
    let text = std::fs::read_to_string(path).expect("fixture");
    let model = levelplan::parse(&text, "a.yaml").expect("valid");
    let rep = vet(
        &model,
        Provenance::new("a.yaml", "-"),
        &VetOptions::default(),
    )
    .expect("vet");
    let (k, rm) = rep
        .levels
        .iter()
        .enumerate()
        .find_map(|(k, l)| {
            let r = l.remedy.as_ref()?;
            (r.length_for_tolerance? > 1.5 * r.present_length && r.exact_at_length.is_some())
                .then_some((k, r.clone()))
        })
        .expect("a remedy that lengthens the pulse, checked");
    assert_eq!(rm.field, "laser");
    let s = rm.length_for_tolerance.unwrap() / rm.present_length;
    let (start, duration) = (150e-9 * 0.5 * (1.0 - s), 150e-9 * s);
    let end = (start + duration).max(200e-9);
    let by_hand = text
        .replace(
            "value: \"6.0 MHz\"",
            &format!("value: \"{:e} MHz\"", 6.0 / s),
        )
        .replace(
            "{ shape: rectangular, start: \"0 ns\", duration: \"150.0 ns\" }",
            &format!(
                "{{ shape: rectangular, start: \"{start:e} s\", duration: \"{duration:e} s\" }}"
            ),
        )
        .replace(
            "window: { start: \"0 ns\", end: \"200.0 ns\" }",
            &format!("window: {{ start: \"{start:e} s\", end: \"{end:e} s\" }}"),
        );
    assert_ne!(by_hand, text);
    let m = levelplan::parse(&by_hand, "b.yaml").expect("valid");
    let sol = solve(&m, &SolveOptions::default()).expect("solved");
    let got = rm.exact_at_length.unwrap();
    let want = sol.final_populations[k];
    eprintln!(
        "remedy at length: check {got:.12}, by hand {want:.12}, difference {:.1e}, stretch {s:.6}",
        got - want
    );
    assert!(
        (got - want).abs() < 1e-7,
        "{}: remedy check {got}, the stretched beam by hand {want}",
        rep.levels[k].id
    );
}

#[test]
fn tune_finds_the_zeeman_resonance_of_a_level_named_as_a_map() {
    use levelplan::pipeline::study::{tune, Study, TuneRequest};
    use levelplan::scheme::SchemeSource;
    let text = RB87.replace("DETUNING", "14 MHz");
    let study = Study::new(
        text,
        SchemeSource {
            path: "rb87.yaml".into(),
            sha256: "-".into(),
        },
    );
    let req = TuneRequest {
        vary: "magnetic_field=8G..12G:41".into(),
        log: false,
        maximize: Some("{manifold: P, F: 3, m_F: 3}".into()),
        shortest: false,
        goal: 0.99,
        tolerance: None,
        xtol: 1e-6,
    };
    let pool = levelplan::scan::thread_pool(Some(1)).expect("pool");
    let rep = tune(&study, &req, &pool).expect("tuned");
    let found = rep.found.expect("a maximum");
    // The same linear Zeeman prediction as the scan test above (Steck's
    // Rb-87 constants, Lande g_F with the nuclear term).
    let g2 = lande_g_f(2.0, 0.5, 1.5, 2.002_331_13, -0.000_995_141_4);
    let g3 = lande_g_f(3.0, 1.5, 1.5, 1.3362, -0.000_995_141_4);
    let predicted = 14.0 / ((3.0 * g3 - 2.0 * g2) * MU_B_MHZ_PER_G);
    eprintln!("tune: {} G, predicted {predicted} G", found.value);
    assert!(
        (found.value - predicted).abs() < 1e-3,
        "tune found {} G, the linear Zeeman shift predicts {predicted} G",
        found.value
    );
}
