//! Every bad input of the atomic-structure keys (`manifolds:`,
//! `magnetic_field`, manifold couplings, `polarization`) gets one located
//! message: file, line and column, the key, what to write instead and
//! what was found.

use levelplan::scheme::{self, Diagnostic, SchemeError};

/// A valid scheme with two manifolds, a field and one polarised beam; line
/// numbers below refer to it.
const BASE: &str = r#"title: manifold base
manifolds:
  S:
    energy: "0 MHz"
    J: 1/2
    I: 3/2
    hyperfine: { A: "3100 MHz" }
    g_J: 2.0
  P:
    energy: "516.6844 THz"
    J: 3/2
    I: 3/2
    hyperfine: { A: "86 MHz", B: "10 MHz" }
    g_J: 1.33
    lifetime: "45 ns"
magnetic_field: "3 G"
couplings:
  - between: [S, P]
    from_lifetime: true
fields:
  pump:
    tuned: { to: [S_F2_m+2, P_F3_m+3], detuning: "0 MHz" }
    polarization: { sigma+: 0.97, pi: 0.02, sigma-: 0.01 }
    rabi: { on: [S_F2_m+2, P_F3_m+3], value: "3 MHz" }
    envelope: { shape: rectangular, start: "0 ns", duration: "100 ns" }
initial: S_F2_m+1
targets: [S_F2_m+2]
solver: { detuning_cutoff: "1 GHz" }
"#;

/// BASE with `from` replaced by `to` (which must occur exactly once).
fn with(from: &str, to: &str) -> String {
    assert_eq!(
        BASE.matches(from).count(),
        1,
        "{from:?} must occur once in BASE"
    );
    BASE.replacen(from, to, 1)
}

fn err(text: &str) -> SchemeError {
    match scheme::parse(text, "scheme.yaml") {
        Ok(_) => panic!("expected an error for:\n{text}"),
        Err(e) => e,
    }
}

/// The single diagnostic of a text that has exactly one problem.
fn one(text: &str) -> Diagnostic {
    let e = err(text);
    assert_eq!(e.diagnostics.len(), 1, "expected one problem, got:\n{e}");
    assert_eq!(e.file, "scheme.yaml");
    e.diagnostics[0].clone()
}

/// Line, column, key path, and the expected (what to write) and found
/// parts of a diagnostic; the rendered message names all of them.
fn check(d: &Diagnostic, line: usize, column: usize, path: &str, expected: &str, found: &str) {
    assert_eq!(
        (d.line, d.column),
        (Some(line), Some(column)),
        "position of {d:?}"
    );
    assert_eq!(d.path, path, "path of {d:?}");
    assert!(
        d.expected.contains(expected),
        "expected-part of {d:?} lacks {expected:?}"
    );
    assert!(
        d.found.contains(found),
        "found-part of {d:?} lacks {found:?}"
    );
    let shown = d.render("scheme.yaml");
    assert!(
        shown.starts_with(&format!("scheme.yaml:{line}:{column}: {path}: expected ")),
        "{shown}"
    );
    for part in [expected, found] {
        assert!(shown.contains(part), "{shown:?} lacks {part:?}");
    }
}

#[test]
fn base_is_valid() {
    let m = scheme::parse(BASE, "scheme.yaml").unwrap();
    assert_eq!(m.levels().len(), 24);
}

/// BASE with nuclear spin 1/2 on both manifolds (F = 0, 1 below, F' = 1, 2
/// above): the field, initial level and target renamed to levels that
/// exist, P's quadrupole constant `b` (None: no B).
fn spin_half(b: Option<&str>) -> String {
    let b = b.map(|b| format!(", B: \"{b}\"")).unwrap_or_default();
    with(
        "hyperfine: { A: \"86 MHz\", B: \"10 MHz\" }",
        &format!("hyperfine: {{ A: \"86 MHz\"{b} }}"),
    )
    .replace("I: 3/2", "I: 1/2")
    .replace("S_F2_m+2", "S_F1_m+1")
    .replace("P_F3_m+3", "P_F2_m+2")
    .replace("S_F2_m+1", "S_F1_m0")
}

#[test]
fn j_and_i_must_be_non_negative_multiples_of_one_half() {
    let expected = "a non-negative multiple of 1/2";
    for (written, found) in [
        ("J: 1/3", "'1/3'"),
        ("J: 0.7", "'0.7'"),
        ("J: -1/2", "'-1/2'"),
        ("J: half", "'half'"),
        ("J: 41/2", "'41/2'"),
    ] {
        let d = one(&with("J: 1/2", written));
        check(&d, 5, 5, "manifolds.S.J", expected, found);
        assert!(
            d.expected.contains("\"3/2\""),
            "says how to write it: {d:?}"
        );
    }
    let d = one(&with(
        "I: 3/2\n    hyperfine: { A: \"3100",
        "I: 1.25\n    hyperfine: { A: \"3100",
    ));
    check(&d, 6, 5, "manifolds.S.I", expected, "'1.25'");
    let d = one(&with("    J: 1/2\n", ""));
    check(
        &d,
        3,
        3,
        "manifolds.S.J",
        "J: a non-negative multiple of 1/2",
        "missing",
    );
}

#[test]
fn quadrupole_constant_needs_i_and_j_of_at_least_one() {
    // J = 1/2 on S.
    let d = one(&with(
        "hyperfine: { A: \"3100 MHz\" }",
        "hyperfine: { A: \"3100 MHz\", B: \"5 MHz\" }",
    ));
    check(
        &d,
        7,
        33,
        "manifolds.S.hyperfine.B",
        "no quadrupole constant B unless I >= 1 and J >= 1",
        "B with J = 1/2, I = 3/2",
    );
    // I = 1/2 (J = 3/2) on P; without B the same scheme is valid.
    assert!(scheme::parse(&spin_half(None), "scheme.yaml").is_ok());
    let d = one(&spin_half(Some("10 MHz")));
    check(
        &d,
        13,
        31,
        "manifolds.P.hyperfine.B",
        "unless I >= 1 and J >= 1",
        "B with J = 3/2, I = 1/2",
    );
    // B = 0 is no quadrupole constant.
    assert!(scheme::parse(&spin_half(Some("0 MHz")), "scheme.yaml").is_ok());
}

#[test]
fn g_j_is_required_with_a_field() {
    let d = one(&with("    g_J: 1.33\n", ""));
    check(
        &d,
        9,
        3,
        "manifolds.P.g_J",
        "g_J (a bare number), since magnetic_field is not zero",
        "missing",
    );
    // Without the field g_J is not needed.
    let zero = with("    g_J: 1.33\n", "").replace("\"3 G\"", "\"0 G\"");
    assert!(scheme::parse(&zero, "scheme.yaml").is_ok());
}

#[test]
fn polarization_fractions_must_sum_to_one() {
    let d = one(&with("sigma-: 0.01 }", "sigma-: 0.02 }"));
    check(
        &d,
        23,
        5,
        "fields.pump.polarization",
        "intensity fractions summing to 1",
        "a sum of 1.01",
    );
    let d = one(&with("sigma-: 0.01 }", "sigma-: 0.01, circular: 0.0 }"));
    check(
        &d,
        23,
        59,
        "fields.pump.polarization.circular",
        "sigma+, pi or sigma-",
        "'circular'",
    );
}

#[test]
fn a_field_driving_a_manifold_coupling_needs_a_polarization() {
    let d = one(&with(
        "    polarization: { sigma+: 0.97, pi: 0.02, sigma-: 0.01 }\n",
        "",
    ));
    check(
        &d,
        21,
        3,
        "fields.pump.polarization",
        "a polarization (sigma+, sigma-, pi or {sigma+: p, pi: p, sigma-: p}), since 'pump' drives the manifold coupling couplings[0]",
        "missing",
    );
}

#[test]
fn a_rabi_reference_needs_the_component_its_transition_takes() {
    // pi light cannot drive the sigma+ line the Rabi frequency is given on.
    let d = one(&with(
        "polarization: { sigma+: 0.97, pi: 0.02, sigma-: 0.01 }",
        "polarization: pi",
    ));
    check(
        &d,
        24,
        13,
        "fields.pump.rabi.on",
        "a coupling that field 'pump' drives",
        "its polarization has no sigma+ component",
    );
}

#[test]
fn couplings_obey_the_selection_rules_on_j() {
    // |J - J'| = 2.
    let d = one(&with(
        "J: 3/2\n    I: 3/2\n    hyperfine: { A: \"86",
        "J: 5/2\n    I: 3/2\n    hyperfine: { A: \"86",
    ));
    check(
        &d,
        18,
        5,
        "couplings[0].between",
        "two manifolds an electric-dipole transition joins (|J - J'| <= 1, not 0 -> 0",
        "J = 1/2 -> J' = 5/2 (|J - J'| > 1)",
    );
    // J = 0 -> J' = 0 (F = 3/2 on both sides).
    let zero = with("J: 1/2", "J: 0")
        .replace(
            "J: 3/2\n    I: 3/2\n    hyperfine: { A: \"86 MHz\", B: \"10 MHz\" }",
            "J: 0\n    I: 3/2\n    hyperfine: { A: \"86 MHz\" }",
        )
        .replace("S_F2_m+2", "S_F3/2_m+1/2")
        .replace("P_F3_m+3", "P_F3/2_m+3/2")
        .replace("S_F2_m+1", "S_F3/2_m-1/2");
    let d = one(&zero);
    check(
        &d,
        18,
        5,
        "couplings[0].between",
        "not 0 -> 0",
        "J = 0 -> J' = 0",
    );
}

#[test]
fn from_lifetime_needs_a_lifetime_on_the_upper_manifold() {
    let d = one(&with("    lifetime: \"45 ns\"\n", ""));
    check(
        &d,
        18,
        5,
        "couplings[0].from_lifetime",
        "a lifetime or linewidth on the upper manifold 'P'",
        "'P' without one (or give reduced_dipole instead)",
    );
    // Written on the lower manifold instead: the message says so.
    let lower = with("    lifetime: \"45 ns\"\n", "")
        .replace("    g_J: 2.0\n", "    g_J: 2.0\n    lifetime: \"45 ns\"\n");
    let d = one(&lower);
    check(
        &d,
        19,
        5,
        "couplings[0].from_lifetime",
        "a lifetime or linewidth on the upper manifold 'P'",
        "the lifetime is on the lower manifold 'S' (move it to 'P', or give reduced_dipole instead)",
    );
}

#[test]
fn resolve_hyperfine_is_refused_with_a_field() {
    let d = one(&with(
        "    g_J: 2.0\n",
        "    g_J: 2.0\n    resolve: hyperfine\n",
    ));
    check(
        &d,
        9,
        5,
        "manifolds.S.resolve",
        "resolve: sublevels, since magnetic_field is not zero",
        "resolve: hyperfine",
    );
}

#[test]
fn a_failed_manifold_is_reported_once() {
    // Neither the coupling nor the ids of its levels repeat the cause.
    let e = err(&with("J: 1/2", "J: 1/3"));
    assert_eq!(e.diagnostics.len(), 1, "{e}");
    // A level id that no manifold would generate is still reported.
    let e = err(&with("J: 1/2", "J: 1/3").replace("initial: S_F2_m+1", "initial: Q_F2_m+1"));
    assert_eq!(e.diagnostics.len(), 2, "{e}");
    check(
        &e.diagnostics[1],
        26,
        1,
        "initial",
        "a level id",
        "'Q_F2_m+1' (no such level)",
    );
}

/// Regression (found merging map-form names with the once-only rule): a
/// map-form name, an F level or a manifold of a failed manifold, in
/// `initial`, a mixture or `tuned.to`, adds no 'no such level' message.
#[test]
fn names_in_map_form_of_a_failed_manifold_are_not_reported_again() {
    let bad = with("J: 1/2", "J: 1/3");
    for (from, to) in [
        (
            "initial: S_F2_m+1",
            "initial: { manifold: S, F: 2, m_F: 1 }",
        ),
        (
            "initial: S_F2_m+1",
            "initial: { mixture: { { manifold: S, F: 2 }: 1 } }",
        ),
        (
            "initial: S_F2_m+1",
            "initial: { mixture: { S_F1: 0.5, S_F2_m+1: 0.5 } }",
        ),
        ("to: [S_F2_m+2, P_F3_m+3]", "to: [S, P]"),
        (
            "to: [S_F2_m+2, P_F3_m+3]",
            "to: [{ manifold: S, F: 2 }, { manifold: P, F: 3 }]",
        ),
    ] {
        assert_eq!(bad.matches(from).count(), 1, "{from}");
        let e = err(&bad.replacen(from, to, 1));
        assert_eq!(e.diagnostics.len(), 1, "{to}:\n{e}");
        assert_eq!(e.diagnostics[0].path, "manifolds.S.J", "{to}:\n{e}");
    }
}
