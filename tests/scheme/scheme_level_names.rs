//! Generated levels named as maps (`{ manifold: S, F: 1, m_F: 0 }`), F
//! levels and manifolds as groups (`mixture:`, `tuned.to`), and scan paths
//! whose level part finds a key written in map form. Accepted forms give
//! the same model as the generated ids; refused ones say where and which
//! generated ids exist. Constants invented, illustrative.

use levelplan::scheme::{self, Diagnostic, Prepared};
use levelplan::Model;

/// Line numbers below refer to this scheme. F = 0, 1 in both manifolds
/// (J = 1/2, I = 1/2); the zero-field hyperfine energies are A K / 2 with
/// K = F(F+1) - I(I+1) - J(J+1): S F=1 at +25 MHz, F=0 at -75 MHz; P F=1
/// at +5 MHz, F=0 at -15 MHz (E. Arimondo, M. Inguscio, P. Violino, Rev.
/// Mod. Phys. 49, 31 (1977)).
const BASE: &str = r#"title: names (illustrative)
manifolds:
  S: { energy: "0 MHz", J: 1/2, I: 1/2, hyperfine: { A: "100 MHz" }, g_J: 2.0 }
  P: { energy: "400000 GHz", J: 1/2, I: 1/2, hyperfine: { A: "20 MHz" }, g_J: 0.6667 }
magnetic_field: "1 G"
couplings:
  - between: [S, P]
    reduced_dipole: "3 ea0"
fields:
  pump:
    tuned: { to: [S_F1_m0, P_F1_m+1], detuning: "0 MHz" }
    polarization: sigma+
    rabi: { on: [S_F1_m0, P_F1_m+1], value: "1 MHz" }
    envelope: { shape: rectangular, start: "0 ns", duration: "100 ns" }
initial: S_F1_m0
targets: [P_F1_m+1]
"#;

/// BASE with `from` replaced by `to` (which must occur exactly once).
fn with(from: &str, to: &str) -> String {
    assert_eq!(BASE.matches(from).count(), 1, "{from:?} must occur once");
    BASE.replacen(from, to, 1)
}

fn model(text: &str) -> Model {
    scheme::parse(text, "names.yaml").unwrap_or_else(|e| panic!("{e}\n{text}"))
}

/// The single diagnostic of a text with exactly one problem.
fn one(text: &str) -> Diagnostic {
    match scheme::parse(text, "names.yaml") {
        Ok(_) => panic!("expected an error for:\n{text}"),
        Err(e) => {
            assert_eq!(e.diagnostics.len(), 1, "one problem expected:\n{e}");
            e.diagnostics[0].clone()
        }
    }
}

fn check(d: &Diagnostic, line: usize, column: usize, path: &str, expected: &str, found: &str) {
    assert_eq!(
        (d.line, d.column),
        (Some(line), Some(column)),
        "position of {d:?}"
    );
    assert_eq!(d.path, path, "path of {d:?}");
    assert!(d.expected.contains(expected), "{d:?} lacks {expected:?}");
    assert!(d.found.contains(found), "{d:?} lacks {found:?}");
}

fn index(m: &Model, id: &str) -> usize {
    m.level_index(id).unwrap_or_else(|| panic!("no level {id}"))
}

#[test]
fn map_names_give_the_same_model_as_ids() {
    let by_id = model(BASE);
    let text = BASE
        .replace(
            "to: [S_F1_m0, P_F1_m+1]",
            "to: [{ manifold: S, F: 1, m_F: 0 }, { manifold: P, F: 1, m_F: 1 }]",
        )
        .replace(
            "on: [S_F1_m0, P_F1_m+1]",
            "on: [{ manifold: S, F: 1, m_F: 0 }, { manifold: P, F: 1, m_F: +1 }]",
        )
        .replace("initial: S_F1_m0", "initial: { manifold: S, F: 1, m_F: 0 }")
        .replace(
            "targets: [P_F1_m+1]",
            "targets: [{ manifold: P, F: \"1\", m_F: 1 }]",
        );
    let by_map = model(&text);
    assert_eq!(by_map.initial(), by_id.initial());
    assert_eq!(by_map.targets(), by_id.targets());
    assert_eq!(by_map.fields()[0].omega, by_id.fields()[0].omega);
    let rabi = |m: &Model| m.drives().iter().map(|d| d.rabi).collect::<Vec<_>>();
    assert_eq!(rabi(&by_map), rabi(&by_id));
}

#[test]
fn block_style_map_name_in_a_list() {
    let m = model(&with(
        "targets: [P_F1_m+1]",
        "targets:\n  - manifold: P\n    F: 1\n    m_F: 1\n",
    ));
    assert_eq!(m.targets(), &[index(&m, "P_F1_m+1")]);
}

#[test]
fn mixture_groups_spread_equally() {
    let m = model(&with(
        "initial: S_F1_m0",
        "initial: { mixture: { { manifold: S, F: 1 }: 1 } }",
    ));
    for id in ["S_F1_m-1", "S_F1_m0", "S_F1_m+1"] {
        assert!(
            (m.initial()[index(&m, id)] - 1.0 / 3.0).abs() < 1e-15,
            "{id}"
        );
    }
    assert_eq!(m.initial()[index(&m, "S_F0_m0")], 0.0);

    let m = model(&with(
        "initial: S_F1_m0",
        "initial:\n  mixture:\n    { manifold: S }: 1\n",
    ));
    for id in ["S_F0_m0", "S_F1_m-1", "S_F1_m0", "S_F1_m+1"] {
        assert_eq!(m.initial()[index(&m, id)], 0.25, "{id}");
    }

    let m = model(&with(
        "initial: S_F1_m0",
        "initial: { mixture: { { manifold: S, F: 0 }: 0.4, S_F1: 0.6 } }",
    ));
    assert!((m.initial()[index(&m, "S_F0_m0")] - 0.4).abs() < 1e-15);
    assert!((m.initial()[index(&m, "S_F1_m-1")] - 0.2).abs() < 1e-15);
}

#[test]
fn tuned_to_manifolds_and_f_levels_uses_zero_field_energies() {
    let two_pi = 2.0 * std::f64::consts::PI;
    let m = model(&with(
        "to: [S_F1_m0, P_F1_m+1], detuning: \"0 MHz\"",
        "to: [S, P], detuning: \"-3 MHz\"",
    ));
    let want = two_pi * (400_000e9 - 3e6);
    assert!((m.fields()[0].omega - want).abs() <= 1e-12 * want);

    let m = model(&with(
        "to: [S_F1_m0, P_F1_m+1], detuning: \"0 MHz\"",
        "to: [{ manifold: S, F: 1 }, { manifold: P, F: 1 }], detuning: \"0 MHz\"",
    ));
    // P F=1 (+5 MHz) minus S F=1 (+25 MHz): the field-free line, not the
    // Zeeman-shifted sublevels of the 1 G field.
    let want = two_pi * (400_000e9 + 5e6 - 25e6);
    assert!(
        (m.fields()[0].omega - want).abs() <= 1e-9 * two_pi * 1e6,
        "{} vs {want}",
        m.fields()[0].omega
    );
}

#[test]
fn tuned_to_f_levels_under_resolve_hyperfine() {
    let text = BASE
        .replace("magnetic_field: \"1 G\"\n", "")
        .replace(", g_J: 2.0 }", ", resolve: hyperfine }")
        .replace(", g_J: 0.6667 }", ", resolve: hyperfine }")
        .replace("polarization: sigma+", "polarization: pi")
        .replace(
            "to: [S_F1_m0, P_F1_m+1]",
            "to: [{ manifold: S, F: 0 }, { manifold: P, F: 1 }]",
        )
        .replace(
            "on: [S_F1_m0, P_F1_m+1]",
            "on: [S_F0, { manifold: P, F: 1 }]",
        )
        .replace("initial: S_F1_m0", "initial: { manifold: S, F: 0 }")
        .replace("targets: [P_F1_m+1]", "targets: [P_F1]");
    let m = model(&text);
    let two_pi = 2.0 * std::f64::consts::PI;
    let want = two_pi * (400_000e9 + 5e6 + 75e6);
    assert!((m.fields()[0].omega - want).abs() <= 1e-9 * two_pi * 1e6);
    assert_eq!(m.initial()[index(&m, "S_F0")], 1.0);
}

#[test]
fn scan_path_level_part_finds_a_map_key() {
    let text = with(
        "initial: S_F1_m0",
        "initial:\n  mixture:\n    { manifold: S, F: 1, m_F: 0 }: 0.5\n    { manifold: S, F: 1, m_F: 1 }: 0.5\n",
    );
    let p = Prepared::new(&text, "names.yaml").expect("valid");
    let m = p
        .with_overrides(&[
            ("initial.mixture.S_F1_m0".to_string(), "0.3".to_string()),
            ("initial.mixture.S_F1_m+1".to_string(), "0.7".to_string()),
        ])
        .expect("overridden");
    assert_eq!(m.initial()[index(&m, "S_F1_m0")], 0.3);
    assert_eq!(m.initial()[index(&m, "S_F1_m+1")], 0.7);
}

#[test]
fn decays_to_a_map_name() {
    let text = with(
        "manifolds:\n",
        "levels:\n  x: { energy: \"1000 GHz\", lifetime: \"1 us\", decays_to: { { manifold: S, F: 1, m_F: 0 }: 1 } }\nmanifolds:\n",
    );
    model(&text);
    let bad = with(
        "manifolds:\n",
        "levels:\n  x: { energy: \"1000 GHz\", lifetime: \"1 us\", decays_to: { { manifold: S, F: 2, m_F: 0 }: 1 } }\nmanifolds:\n",
    );
    let d = one(&bad);
    assert!(
        d.expected.contains("a level of manifold S: F = 0, 1"),
        "{d:?}"
    );
    assert_eq!(d.line, Some(3), "{d:?}");
}

#[test]
fn refuses_a_missing_sublevel_listing_the_generated_ids() {
    let d = one(&with(
        "targets: [P_F1_m+1]",
        "targets: [{ manifold: P, F: 2, m_F: 1 }]",
    ));
    check(
        &d,
        16,
        11,
        "targets[0]",
        "a level of manifold P: F = 0, 1, m_F from -F to F (ids P_F0_m0 ... P_F1_m+1)",
        "'{manifold: P, F: 2, m_F: 1}' (no such level)",
    );
    let d = one(&with("targets: [P_F1_m+1]", "targets: [P_F2_m+1]"));
    check(
        &d,
        16,
        11,
        "targets[0]",
        "a level of manifold P: F = 0, 1",
        "'P_F2_m+1' (no such level)",
    );
}

#[test]
fn refuses_an_unknown_manifold() {
    let d = one(&with(
        "targets: [P_F1_m+1]",
        "targets: [{ manifold: Q, F: 1, m_F: 1 }]",
    ));
    check(
        &d,
        16,
        11,
        "targets[0]",
        "a manifold id (S, P)",
        "no manifold 'Q'",
    );
}

#[test]
fn refuses_impossible_quantum_numbers() {
    let d = one(&with(
        "targets: [P_F1_m+1]",
        "targets: [{ manifold: P, F: 1, m_F: 2 }]",
    ));
    check(
        &d,
        16,
        11,
        "targets[0]",
        "a generated level { manifold: S, F: 2, m_F: 2 }",
        "m_F must be one of -F, -F+1, ..., F for F = 1",
    );
    let d = one(&with(
        "targets: [P_F1_m+1]",
        "targets: [{ manifold: P, m_F: 1 }]",
    ));
    check(
        &d,
        16,
        11,
        "targets[0]",
        "a generated level",
        "m_F without F",
    );
}

#[test]
fn refuses_a_group_where_one_level_is_needed() {
    let d = one(&with("initial: S_F1_m0", "initial: { manifold: S, F: 1 }"));
    check(
        &d,
        15,
        1,
        "initial",
        "one level (a group of generated levels only in mixture: or tuned.to)",
        "which names 3 levels",
    );
    let d = one(&with(
        "on: [S_F1_m0, P_F1_m+1]",
        "on: [S_F1_m0, { manifold: P }]",
    ));
    check(
        &d,
        13,
        27,
        "fields.pump.rabi.on[1]",
        "one level",
        "which names 4 levels",
    );
}

#[test]
fn refuses_a_level_twice_in_a_mixture_through_its_group() {
    let d = one(&with(
        "initial: S_F1_m0",
        "initial: { mixture: { S_F1_m0: 0.5, { manifold: S, F: 1 }: 0.5 } }",
    ));
    assert_eq!(d.expected, "each level once", "{d:?}");
    assert_eq!(d.line, Some(15), "{d:?}");
}

#[test]
fn refuses_tuning_between_overlapping_groups() {
    let d = one(&with(
        "to: [S_F1_m0, P_F1_m+1]",
        "to: [S, { manifold: S, F: 1 }]",
    ));
    check(
        &d,
        11,
        14,
        "fields.pump.tuned.to",
        "two different levels, F levels or manifolds",
        "they share levels",
    );
}

#[test]
fn refuses_m_f_under_resolve_hyperfine() {
    let text = BASE
        .replace("magnetic_field: \"1 G\"\n", "")
        .replace(", g_J: 2.0 }", ", resolve: hyperfine }")
        .replace(", g_J: 0.6667 }", ", resolve: hyperfine }")
        .replace("polarization: sigma+", "polarization: pi")
        .replace("to: [S_F1_m0, P_F1_m+1]", "to: [S_F0, P_F1]")
        .replace("on: [S_F1_m0, P_F1_m+1]", "on: [S_F0, P_F1]")
        .replace("initial: S_F1_m0", "initial: S_F0")
        .replace(
            "targets: [P_F1_m+1]",
            "targets: [{ manifold: P, F: 1, m_F: 0 }]",
        );
    let d = one(&text);
    check(
        &d,
        15,
        11,
        "targets[0]",
        "a level of manifold P (resolve: hyperfine): F = 0, 1 (ids P_F0 ... P_F1)",
        "no m_F under resolve: hyperfine",
    );
}

#[test]
fn refuses_an_unknown_key_in_a_map_name() {
    match scheme::parse(
        &with("targets: [P_F1_m+1]", "targets: [{ manifold: P, J: 1 }]"),
        "names.yaml",
    ) {
        Ok(_) => panic!("accepted an unknown key"),
        Err(e) => {
            let d = &e.diagnostics[0];
            assert_eq!(d.line, Some(16), "{d:?}");
            assert!(d.column.is_some(), "{d:?}");
            let text = e.to_string();
            assert!(text.contains('J'), "{text}");
        }
    }
}

#[test]
fn refuses_a_block_style_map_key_at_its_own_line() {
    let d = one(&with(
        "initial: S_F1_m0",
        "initial:\n  mixture:\n    S_F1_m0: 0.5\n    { manifold: S, F: 1, m_F: 3 }: 0.5",
    ));
    check(
        &d,
        18,
        5,
        "initial.mixture.{manifold: S, F: 1, m_F: 3}",
        "a generated level",
        "m_F must be one of -F, -F+1, ..., F for F = 1",
    );
}

#[test]
fn a_vary_path_may_write_its_level_part_as_a_map() {
    use levelplan::pipeline::study::parse_specs;
    let specs = parse_specs(
        &["initial.mixture.{manifold: S, F: 1, m_F: +1}=0.2..0.8:4".to_string()],
        true,
        false,
    )
    .expect("parsed");
    assert_eq!(specs[0].path, "initial.mixture.S_F1_m+1");
    assert_eq!(specs[0].count, Some(4));
    let e = parse_specs(
        &["initial.mixture.{manifold: S, F: 1, m_F: 2}=0..1:2".to_string()],
        true,
        false,
    )
    .expect_err("refused");
    assert!(e.to_string().contains("m_F must be one of"), "{e}");
    // The rewritten path then reaches a key written either way.
    let text = with(
        "initial: S_F1_m0",
        "initial:\n  mixture:\n    { manifold: S, F: 1, m_F: 0 }: 0.5\n    S_F1_m+1: 0.5\n",
    );
    let p = Prepared::new(&text, "names.yaml").expect("valid");
    let m = p
        .with_overrides(&[
            (specs[0].path.clone(), "0.25".to_string()),
            ("initial.mixture.S_F1_m0".to_string(), "0.75".to_string()),
        ])
        .expect("overridden");
    assert_eq!(m.initial()[index(&m, "S_F1_m+1")], 0.25);
    assert_eq!(m.initial()[index(&m, "S_F1_m0")], 0.75);
}

#[test]
fn an_f_zero_level_is_one_level() {
    let m = model(&with(
        "initial: S_F1_m0",
        "initial: { superposition: { { manifold: S, F: 0 }: 0.5, S_F1_m0: 0.5 } }",
    ));
    assert_eq!(m.initial()[index(&m, "S_F0_m0")], 0.5);
    let m = model(&with("initial: S_F1_m0", "initial: S_F0"));
    assert_eq!(m.initial()[index(&m, "S_F0_m0")], 1.0);
}

#[test]
fn refuses_other_keys_in_an_initial_level_name() {
    let d = one(&with(
        "initial: S_F1_m0",
        "initial: { manifold: S, F: 1, m_F: 0, J: 1 }",
    ));
    check(
        &d,
        15,
        39,
        "initial.J",
        "a level name of the keys manifold, F, m_F",
        "'J'",
    );
}

#[test]
fn refuses_a_map_as_a_manifold_id() {
    let e = scheme::parse(
        &with("  S: { energy", "  { manifold: S }: { energy"),
        "names.yaml",
    )
    .expect_err("refused");
    let d = &e.diagnostics[0];
    check(
        d,
        3,
        3,
        "manifolds.{manifold: S}",
        "a manifold id: an id made of letters",
        "'{manifold: S}'",
    );
}
