//! Generated levels carry where they come from: manifold, J, F, m_F and
//! the energy from the manifold's centre; hand-written levels carry
//! nothing; the model builder refuses impossible quantum numbers.

use levelplan::model::{Level, LevelOrigin, ModelError};
use levelplan::scheme;

/// J = 1/2 with I = 3/2 (F = 1, 2 as sublevels at 1 G) and J = 1/2 with
/// I = 1/2 resolved by F, beside a hand-written level (illustrative
/// constants, no species).
const SCHEME: &str = r#"
levels:
  x: { energy: "100 THz" }
manifolds:
  S: { energy: "0 MHz", J: 1/2, I: 3/2, hyperfine: { A: "100 MHz" }, g_J: 2.0 }
magnetic_field: "1 G"
initial: x
window: { start: "0 s", end: "1 us" }
"#;

#[test]
fn generated_levels_carry_manifold_quantum_numbers_and_offset() {
    let m = scheme::parse(SCHEME, "origin.yaml").expect("a model");
    let levels = m.levels();
    assert_eq!(levels.len(), 1 + 3 + 5);
    assert_eq!(levels[0].origin, None, "a hand-written level has no origin");
    let o: Vec<(&str, i32, i32, Option<i32>)> = levels[1..]
        .iter()
        .map(|l| {
            let o = l.origin.as_ref().expect("generated");
            (o.manifold.as_str(), o.two_j, o.two_f, o.two_m_f)
        })
        .collect();
    assert_eq!(o[0], ("S", 1, 2, Some(-2)));
    assert_eq!(o[3], ("S", 1, 4, Some(-4)));
    assert_eq!(o[7], ("S", 1, 4, Some(4)));
    for l in &levels[1..] {
        let off = l.origin.as_ref().unwrap().offset;
        assert_eq!(l.omega, off, "the centre is at 0: energy = offset");
    }
    // F = 2, m_F = 0 of J = 1/2, I = 3/2 at 1 G, g_I = 0: the Breit-Rabi
    // formula -dE/(2(2I+1)) + (dE/2) sqrt(1 + x^2), dE = 2A, x = g_J mu_B B / dE
    // (G. Breit and I. I. Rabi, Phys. Rev. 38, 2082 (1931); mu_B/h from
    // CODATA 2018): 75 MHz (+3A/4 at zero field) plus about 10 kHz.
    let f2_m0 = &levels[1 + 3 + 2];
    assert_eq!(f2_m0.origin.as_ref().unwrap().two_m_f, Some(0));
    let mhz = f2_m0.origin.as_ref().unwrap().offset / (2.0 * std::f64::consts::PI) / 1e6;
    let x: f64 = 2.0 * 13_996.244_936_1 * 1e-4 / 200.0;
    let breit_rabi = -200.0 / 8.0 + 100.0 * (1.0 + x * x).sqrt();
    assert!((mhz - breit_rabi).abs() < 1e-6, "{mhz} vs {breit_rabi}");
    assert!(mhz - 75.0 > 0.009, "the field shifts it: {mhz}");
}

#[test]
fn resolve_hyperfine_levels_have_no_m_f() {
    let text = SCHEME
        .replace("g_J: 2.0 }", "resolve: hyperfine }")
        .replace("magnetic_field: \"1 G\"\n", "");
    let m = scheme::parse(&text, "origin.yaml").expect("a model");
    let got: Vec<(i32, Option<i32>)> = m.levels()[1..]
        .iter()
        .map(|l| {
            let o = l.origin.as_ref().unwrap();
            (o.two_f, o.two_m_f)
        })
        .collect();
    assert_eq!(got, [(2, None), (4, None)]);
}

#[test]
fn the_builder_refuses_impossible_quantum_numbers() {
    let m = scheme::parse(SCHEME, "origin.yaml").unwrap();
    let with = |origin: LevelOrigin| {
        let mut levels: Vec<Level> = m.levels().to_vec();
        levels[1].origin = Some(origin);
        m.to_builder().levels(levels).build()
    };
    let good = m.levels()[1].origin.clone().unwrap();
    assert!(with(good.clone()).is_ok());
    for bad in [
        LevelOrigin {
            two_m_f: Some(4),
            ..good.clone()
        },
        LevelOrigin {
            two_m_f: Some(1),
            ..good.clone()
        },
        LevelOrigin {
            two_f: -2,
            two_m_f: None,
            ..good.clone()
        },
    ] {
        let error = with(bad).expect_err("refused");
        assert!(
            matches!(&error, ModelError::Invalid { reason, .. } if reason.contains("m_F in -F..F")),
            "{error:?}"
        );
    }
    let error = with(LevelOrigin {
        offset: f64::NAN,
        ..good
    })
    .expect_err("refused");
    assert!(matches!(error, ModelError::NonFinite { .. }), "{error:?}");
}
