//! Every kind of bad scheme input gets one clear message naming the file,
//! line and column, the key, what was expected and what was found.

use levelplan::scheme::{self, Diagnostic, SchemeError};

/// A valid three-level scheme; line numbers below refer to it.
const BASE: &str = r#"title: base
levels:
  g:
    energy: "0 cm^-1"
  e:
    energy: "12578.95 cm^-1"
    lifetime: "26.2 ns"
  r:
    energy: "25000 cm^-1"
initial: g
targets: [e]
couplings:
  - between: [g, e]
    dipole: "2.5 ea0"
  - between: [e, r]
    dipole: "1.2 ea0"
fields:
  probe:
    tuned: { to: [g, e], detuning: "-20 MHz" }
    intensity: "10 W/cm^2"
    envelope:
      shape: rectangular
      start: "0 ns"
      duration: "50 ns"
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

fn check(d: &Diagnostic, line: usize, path: &str, expected: &str, found: &str) {
    assert_eq!(d.line, Some(line), "line of {d:?}");
    assert!(d.column.is_some(), "column of {d:?}");
    assert_eq!(d.path, path, "path of {d:?}");
    assert!(
        d.expected.contains(expected),
        "expected-part of {d:?} lacks {expected:?}"
    );
    assert!(
        d.found.contains(found),
        "found-part of {d:?} lacks {found:?}"
    );
}

#[test]
fn base_is_valid() {
    let m = scheme::parse(BASE, "scheme.yaml").unwrap();
    assert_eq!(m.levels().len(), 3);
    assert_eq!(m.drives().len(), 2);
}

#[test]
fn yaml_syntax_error() {
    let d = one(&with("targets: [e]", "targets: [e"));
    assert_eq!(d.line, Some(12), "{d:?}");
    assert!(d.column.is_some());
    assert_eq!(d.expected, "valid YAML");
    assert!(d.found.starts_with("a syntax error: "), "{d:?}");
    assert!(!d.found.contains(" at line "), "{d:?}");
}

#[test]
fn unknown_key_typo() {
    let d = one(&with("duration:", "durration:"));
    check(
        &d,
        24,
        "fields.probe.envelope.durration",
        "one of the keys shape, start, duration",
        "unknown key 'durration'",
    );
    assert_eq!(d.column, Some(7));
    let d = one(&with("title: base", "titel: base"));
    check(&d, 1, "titel", "levels", "unknown key 'titel'");
}

#[test]
fn missing_required_key() {
    let d = one(&with("    energy: \"25000 cm^-1\"\n", "    label: x\n"));
    check(
        &d,
        8,
        "levels.r.energy",
        "an energy (cm^-1",
        "the key is missing",
    );
    let d = one(&with("initial: g\n", ""));
    assert_eq!(d.path, "initial");
    assert!(d.found.contains("missing"), "{d:?}");
    let d = one(&with("      duration: \"50 ns\"\n", ""));
    check(
        &d,
        21,
        "fields.probe.envelope.duration",
        "a positive time",
        "missing",
    );
}

#[test]
fn quantity_without_unit() {
    let d = one(&with("\"12578.95 cm^-1\"", "12578.95"));
    check(
        &d,
        6,
        "levels.e.energy",
        "an energy (cm^-1, eV",
        "'12578.95' (a bare number without a unit)",
    );
    assert_eq!(d.column, Some(5));
}

#[test]
fn quantity_of_wrong_dimension() {
    let d = one(&with("\"12578.95 cm^-1\"", "\"5 ns\""));
    check(
        &d,
        6,
        "levels.e.energy",
        "an energy (cm^-1, eV, meV, Hz, kHz, MHz, GHz, THz, J)",
        "'5 ns' (a time)",
    );
    let d = one(&with("\"50 ns\"", "\"5 MHz\""));
    check(
        &d,
        24,
        "fields.probe.envelope.duration",
        "a time (s, ms, us, ns, ps, fs)",
        "'5 MHz' (a frequency)",
    );
    assert_eq!(
        d.render("scheme.yaml"),
        "scheme.yaml:24:7: fields.probe.envelope.duration: expected a time (s, ms, us, ns, ps, fs), found '5 MHz' (a frequency)"
    );
}

#[test]
fn unknown_unit_lists_accepted() {
    let d = one(&with("\"2.5 ea0\"", "\"2.5 bohr\""));
    check(
        &d,
        14,
        "couplings[0].dipole",
        "ea0, D, C m",
        "unknown unit 'bohr'",
    );
}

#[test]
fn negative_duration() {
    let d = one(&with("\"50 ns\"", "\"-50 ns\""));
    check(
        &d,
        24,
        "fields.probe.envelope.duration",
        "a positive time",
        "'-50 ns' (negative)",
    );
}

#[test]
fn zero_or_negative_lifetime() {
    let d = one(&with("\"26.2 ns\"", "\"0 ns\""));
    check(
        &d,
        7,
        "levels.e.lifetime",
        "a positive time",
        "'0 ns' (zero)",
    );
    let d = one(&with("\"26.2 ns\"", "\"-26.2 ns\""));
    check(&d, 7, "levels.e.lifetime", "a positive time", "negative");
}

#[test]
fn negative_intensity() {
    let d = one(&with("\"10 W/cm^2\"", "\"-10 W/cm^2\""));
    check(
        &d,
        20,
        "fields.probe.intensity",
        "a non-negative intensity",
        "'-10 W/cm^2' (negative)",
    );
}

#[test]
fn negative_or_missing_waist() {
    let d = one(&with(
        "intensity: \"10 W/cm^2\"",
        "power: \"5 mW\"\n    waist: \"-50 um\"",
    ));
    check(
        &d,
        21,
        "fields.probe.waist",
        "a positive length",
        "'-50 um' (negative)",
    );
    let d = one(&with("intensity: \"10 W/cm^2\"", "power: \"5 mW\""));
    check(&d, 18, "fields.probe.waist", "a positive length", "missing");
}

#[test]
fn non_finite_values() {
    let d = one(&with("\"26.2 ns\"", "\"1e999 ns\""));
    check(&d, 7, "levels.e.lifetime", "a time", "not a finite number");
    // YAML's own infinity and NaN are not numbers with units either.
    let d = one(&with("\"26.2 ns\"", ".inf"));
    check(&d, 7, "levels.e.lifetime", "a time", "'inf'");
    let d = one(&with("\"26.2 ns\"", ".nan"));
    check(&d, 7, "levels.e.lifetime", "a time", "'NaN'");
    let d = one(&with("targets: [e]", "targets: [e]\ntolerance: .nan"));
    check(&d, 12, "tolerance", "a population", "not a finite number");
}

#[test]
fn duplicate_level_id() {
    let d = one(&with("  r:\n", "  e:\n    energy: \"1 eV\"\n  r:\n"));
    check(
        &d,
        8,
        "levels.e",
        "a unique level id",
        "a second level 'e' (the first is on line 5)",
    );
    assert_eq!(d.column, Some(3));
}

#[test]
fn bad_level_id() {
    let d = one(&with("  r:\n    energy", "  r*:\n    energy").replace("[e, r]", "[e, \"r*\"]"));
    check(&d, 8, "levels.r*", "letters, digits", "'r*'");
}

#[test]
fn coupling_to_unknown_level() {
    let d = one(&with("between: [e, r]", "between: [e, x]"));
    check(
        &d,
        15,
        "couplings[1].between[1]",
        "a level id (g, e, r)",
        "'x' (no such level)",
    );
    assert_eq!(d.column, Some(18));
}

#[test]
fn coupling_same_level_twice() {
    let d = one(&with("between: [e, r]", "between: [e, e]"));
    check(
        &d,
        15,
        "couplings[1].between",
        "two different levels",
        "[e, e] (the same level twice)",
    );
}

#[test]
fn field_tuned_to_undefined_coupling() {
    let d = one(&with("to: [g, e]", "to: [g, r]"));
    check(
        &d,
        19,
        "fields.probe.tuned.to",
        "a pair of levels joined by a coupling",
        "[g, r] (no coupling between them)",
    );
}

#[test]
fn rabi_on_coupling_not_driven() {
    // No coupling g-r at all.
    let d = one(&with(
        "intensity: \"10 W/cm^2\"",
        "rabi: { on: [g, r], value: \"5 MHz\" }",
    ));
    check(
        &d,
        20,
        "fields.probe.rabi.on",
        "a coupling that field 'probe' drives",
        "no coupling joins them",
    );
    // A coupling that exists but whose fields list leaves the field out.
    let text = with(
        "intensity: \"10 W/cm^2\"",
        "area: { on: [r, e], value: \"pi\" }",
    )
    .replace(
        "    dipole: \"1.2 ea0\"\n",
        "    dipole: \"1.2 ea0\"\n    fields: []\n",
    );
    let d = one(&text);
    check(
        &d,
        21,
        "fields.probe.area.on",
        "a coupling that field 'probe' drives",
        "leaves 'probe' out",
    );
}

#[test]
fn bare_dipole_with_intensity_or_power() {
    let d = one(&with("\"1.2 ea0\"", "0.7"));
    check(
        &d,
        16,
        "couplings[1].dipole",
        "a dipole with a unit (ea0, D, C m), since field 'probe' sets its strength by intensity",
        "'0.7' (a bare relative strength)",
    );
    let text = with("\"1.2 ea0\"", "0.7").replace(
        "intensity: \"10 W/cm^2\"",
        "power: \"5 mW\"\n    waist: \"50 um\"",
    );
    let d = one(&text);
    check(
        &d,
        16,
        "couplings[1].dipole",
        "by power",
        "bare relative strength",
    );
}

#[test]
fn bare_and_absolute_dipoles_mixed_under_rabi() {
    let text = with("\"1.2 ea0\"", "0.7").replace(
        "intensity: \"10 W/cm^2\"",
        "rabi: { on: [g, e], value: \"5 MHz\" }",
    );
    let d = one(&text);
    check(
        &d,
        16,
        "couplings[1].dipole",
        "like couplings[0]",
        "'0.7' (a bare relative strength)",
    );
}

#[test]
fn initial_populations_must_sum_to_one() {
    let d =
        one(&with("initial: g", "initial: {g: 0.5, e: 0.4}")
            .replace("targets: [e]", "targets: [r]"));
    check(
        &d,
        10,
        "initial",
        "summing to 1 (within 1e-9)",
        "a sum of 0.9",
    );
    // Within 1e-9 is accepted.
    let ok = with("initial: g", "initial: {g: 0.5, e: 0.5000000001}")
        .replace("targets: [e]", "targets: [r]");
    assert!(scheme::parse(&ok, "s.yaml").is_ok());
}

#[test]
fn target_that_is_initial() {
    let d = one(&with("targets: [e]", "targets: [e, g]"));
    check(
        &d,
        11,
        "targets[1]",
        "not initially populated",
        "'g', which is initially populated",
    );
}

#[test]
fn empty_level_list() {
    let text = "levels: {}\ninitial: g\nwindow: {start: 0 s, end: 1 s}\n";
    let d = one(text);
    check(&d, 1, "levels", "at least one level", "an empty level list");
}

#[test]
fn file_that_does_not_exist() {
    let e = scheme::unreadable(
        "/nonexistent/dir/scheme.yaml",
        &std::io::Error::from(std::io::ErrorKind::NotFound),
    );
    assert_eq!(e.file, "/nonexistent/dir/scheme.yaml");
    assert_eq!(e.diagnostics.len(), 1);
    let d = &e.diagnostics[0];
    assert_eq!(d.expected, "a readable scheme file");
    assert!(d.found.starts_with("no such file"), "{d:?}");
    assert!(e
        .to_string()
        .starts_with("/nonexistent/dir/scheme.yaml: expected a readable scheme file"));
}

#[test]
fn file_that_is_not_utf8() {
    let mut bytes = b"title: caf".to_vec();
    bytes.push(0xe9); // e-acute in Latin-1
    bytes.extend_from_slice(b"\nlevels: {}\n");
    let e = scheme::from_bytes(&bytes, "latin1.yaml").unwrap_err();
    let d = &e.diagnostics[0];
    assert_eq!((d.line, d.column), (Some(1), Some(11)));
    assert_eq!(d.expected, "UTF-8 text");
    assert!(d.found.contains("0xe9"), "{d:?}");
}

#[test]
fn every_problem_is_reported_in_file_order() {
    let text = with("\"12578.95 cm^-1\"", "\"5 ns\"")
        .replace("\"50 ns\"", "\"5 MHz\"")
        .replace("targets: [e]", "targets: [e, q]");
    let e = err(&text);
    let lines: Vec<Option<usize>> = e.diagnostics.iter().map(|d| d.line).collect();
    assert_eq!(lines, vec![Some(6), Some(11), Some(24)], "{e}");
    let shown = e.to_string();
    assert_eq!(shown.lines().count(), 3);
    assert!(shown.lines().all(|l| l.starts_with("scheme.yaml:")));
}

#[test]
fn lifetime_and_linewidth_together() {
    let d = one(&with(
        "lifetime: \"26.2 ns\"",
        "lifetime: \"26.2 ns\"\n    linewidth: \"6 MHz\"",
    ));
    check(
        &d,
        8,
        "levels.e.linewidth",
        "either lifetime or linewidth",
        "both",
    );
}

#[test]
fn two_carriers_or_two_strengths() {
    let d = one(&with(
        "intensity: \"10 W/cm^2\"",
        "intensity: \"10 W/cm^2\"\n    frequency: \"384 THz\"",
    ));
    check(
        &d,
        19,
        "fields.probe.tuned",
        "exactly one of frequency, wavelength, tuned",
        "frequency and tuned",
    );
    let d = one(&with(
        "intensity: \"10 W/cm^2\"",
        "intensity: \"10 W/cm^2\"\n    area: {on: [g, e], value: pi}",
    ));
    check(
        &d,
        21,
        "fields.probe.area",
        "exactly one of intensity, power, rabi, area",
        "intensity and area",
    );
}

#[test]
fn envelope_key_that_the_shape_does_not_take() {
    let d = one(&with("shape: rectangular", "shape: gaussian")
        .replace("start:", "center:")
        .replace("duration:", "fwhm:")
        .replace(
            "      fwhm: \"50 ns\"",
            "      fwhm: \"50 ns\"\n      tau: \"3 ns\"",
        ));
    check(
        &d,
        25,
        "fields.probe.envelope.tau",
        "only the keys of shape 'gaussian'",
        "'tau'",
    );
    let d = one(&with("shape: rectangular", "shape: square"));
    check(
        &d,
        22,
        "fields.probe.envelope.shape",
        "one of rectangular, gaussian, sech, sin2, blackman, samples",
        "'square'",
    );
}

#[test]
fn samples_envelope_rules() {
    let env = |pts: &str| {
        with(
            "      shape: rectangular\n      start: \"0 ns\"\n      duration: \"50 ns\"\n",
            &format!("      shape: samples\n      points: {pts}\n"),
        )
    };
    assert!(scheme::parse(&env("[[0 ns, 0], [10 ns, 1], [20 ns, 0]]"), "s").is_ok());
    let d = one(&env("[[0 ns, 1]]"));
    check(
        &d,
        23,
        "fields.probe.envelope.points",
        "at least two",
        "1 point(s)",
    );
    let d = one(&env("[[0 ns, 0], [10 ns, 1], [10 ns, 0]]"));
    check(
        &d,
        23,
        "fields.probe.envelope.points[2][0]",
        "strictly increasing",
        "'10 ns'",
    );
    let d = one(&env("[[0 ns, 0], [10 ns, -1]]"));
    check(
        &d,
        23,
        "fields.probe.envelope.points[1][1]",
        "an envelope value",
        "'-1'",
    );
    let d = one(&env("[[0 ns, 0], [10 ns, .inf]]"));
    check(
        &d,
        23,
        "fields.probe.envelope.points[1][1]",
        "an envelope value",
        "not a finite number",
    );
    let d = one(&env("[[0 ns, 0], [10 ns]]"));
    check(
        &d,
        23,
        "fields.probe.envelope.points[1]",
        "a point [time, value]",
        "a list of 1 items",
    );
    let d = one(&env("[[0, 0], [10 ns, 1]]"));
    check(
        &d,
        23,
        "fields.probe.envelope.points[0][0]",
        "a time",
        "without a unit",
    );
}

#[test]
fn solver_settings() {
    let s = |x: &str| with("targets: [e]", &format!("targets: [e]\nsolver: {x}"));
    let m = scheme::parse(
        &s("{rtol: 1e-8, atol: 1e-11, method: exact, detuning_cutoff: 200 GHz}"),
        "s",
    )
    .unwrap();
    assert_eq!(m.solver().rtol, 1e-8);
    assert_eq!(m.solver().method, levelplan::model::Method::Exact);
    let d = one(&s("{rtol: -1e-8}"));
    check(
        &d,
        12,
        "solver.rtol",
        "a relative tolerance (positive)",
        "'-1e-8'",
    );
    let d = one(&s("{rtol: 0}"));
    check(&d, 12, "solver.rtol", "(positive)", "'0'");
    let d = one(&s("{atol: .inf}"));
    check(
        &d,
        12,
        "solver.atol",
        "an absolute tolerance",
        "not a finite number",
    );
    let d = one(&s("{method: rk4}"));
    check(
        &d,
        12,
        "solver.method",
        "one of auto, adaptive, exact",
        "'rk4'",
    );
    let d = one(&s("{detuning_cutoff: 0 Hz}"));
    check(
        &d,
        12,
        "solver.detuning_cutoff",
        "a positive frequency",
        "zero",
    );
}

#[test]
fn window_rules() {
    let d = one(&with(
        "targets: [e]",
        "targets: [e]\nwindow: {start: 10 ns, end: 5 ns}",
    ));
    check(
        &d,
        12,
        "window.end",
        "an end time after the start",
        "'5 ns'",
    );
    // No fields: a window is required.
    let text = "levels:\n  g: {energy: 0 eV}\ninitial: g\n";
    let d = one(text);
    // A missing top-level key has no line to point at.
    assert_eq!((d.line, d.path.as_str()), (None, "window"));
    assert!(d.expected.contains("a window {start: T, end: T}"), "{d:?}");
    assert!(d.found.contains("missing"), "{d:?}");
}

#[test]
fn einstein_a_needs_degeneracies() {
    let d = one(&with(
        "dipole: \"2.5 ea0\"",
        "einstein_a: \"3.8e7 s^-1\"\n    g_lower: 2",
    ));
    check(
        &d,
        13,
        "couplings[0].g_upper",
        "a degeneracy 2J+1",
        "missing",
    );
    let d = one(&with(
        "dipole: \"2.5 ea0\"",
        "einstein_a: \"3.8e7 s^-1\"\n    g_lower: 2\n    g_upper: 2.5",
    ));
    check(
        &d,
        16,
        "couplings[0].g_upper",
        "a positive integer",
        "'2.5'",
    );
    let d = one(&with(
        "dipole: \"2.5 ea0\"",
        "einstein_a: \"3.8e7 Hz\"\n    g_lower: 1\n    g_upper: 1",
    ));
    check(
        &d,
        14,
        "couplings[0].einstein_a",
        "a rate (s^-1",
        "'3.8e7 Hz' (a frequency)",
    );
}

#[test]
fn field_listed_on_coupling_must_exist() {
    let d = one(&with(
        "    dipole: \"1.2 ea0\"\n",
        "    dipole: \"1.2 ea0\"\n    fields: [probe, pump]\n",
    ));
    check(
        &d,
        17,
        "couplings[1].fields[1]",
        "a field id (probe)",
        "'pump' (no such field)",
    );
}

#[test]
fn one_coupling_per_pair_and_field() {
    let text = with("  - between: [e, r]", "  - between: [e, g]");
    let d = one(&text);
    check(
        &d,
        15,
        "couplings[1].between",
        "one coupling per level pair for field 'probe'",
        "a second coupling between g and e",
    );
    // With disjoint fields lists the same pair may appear twice.
    let ok = text
        .replace(
            "    dipole: \"2.5 ea0\"\n",
            "    dipole: \"2.5 ea0\"\n    fields: [probe]\n",
        )
        .replace(
            "    dipole: \"1.2 ea0\"\n",
            "    dipole: \"1.2 ea0\"\n    fields: []\n",
        );
    assert!(scheme::parse(&ok, "s").is_ok());
}

#[test]
fn wrong_yaml_type() {
    let d = one(&with("targets: [e]", "targets: e"));
    assert_eq!(d.line, Some(11));
    assert_eq!(d.path, "targets");
    assert!(d.expected.contains("a list"), "{d:?}");
    assert!(d.found.contains("string"), "{d:?}");
    let d = one(&with("rectangular", "[rectangular]"));
    assert_eq!(d.path, "fields.probe.envelope.shape");
    assert!(d.expected.contains("a single value"), "{d:?}");
}

#[test]
fn alias_bomb_and_size_limits() {
    let mut bomb = String::from("a0: &a0 [lol,lol,lol,lol,lol,lol,lol,lol,lol]\n");
    for i in 1..=9 {
        let p = i - 1;
        bomb.push_str(&format!(
            "a{i}: &a{i} [*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p}]\n"
        ));
    }
    let t = std::time::Instant::now();
    let d = one(&bomb);
    // Refused in well under a second on an idle machine (0.46 s measured
    // with the two cores loaded); an expansion that were not stopped would
    // take minutes. The bound is loose so a busy CI machine does not fail it.
    assert!(t.elapsed().as_secs_f64() < 5.0);
    assert!(
        d.expected.contains("YAML nodes after alias expansion"),
        "{d:?}"
    );
    let big = format!(
        "title: \"{}\"\n",
        "x".repeat(levelplan::yaml::MAX_FILE_BYTES)
    );
    let d = one(&big);
    assert!(d.expected.contains("at most 1048576 bytes"), "{d:?}");
}

#[test]
fn override_errors_name_the_path() {
    let o = |p: &str, v: &str| {
        scheme::parse_with_overrides(BASE, "scheme.yaml", &[(p.to_string(), v.to_string())])
    };
    let e = o("fields.probe.tuned.detunning", "5 MHz").unwrap_err();
    let d = &e.diagnostics[0];
    assert_eq!(d.path, "fields.probe.tuned.detunning");
    assert!(
        d.found
            .contains("'detunning' (no such key under 'fields.probe.tuned')"),
        "{d:?}"
    );
    assert!(d.expected.contains("to, detuning"), "{d:?}");
    let e = o("fields.probe.envelope.shape", "3").unwrap_err();
    assert!(
        e.diagnostics[0]
            .found
            .contains("'rectangular' (not a number)"),
        "{e}"
    );
    let e = o("fields.probe", "3").unwrap_err();
    assert!(e.diagnostics[0].found.contains("a mapping"), "{e}");
    let e = o("fields.probe.tuned.detuning", "fast").unwrap_err();
    assert!(
        e.diagnostics[0].expected.contains("numeric override value"),
        "{e}"
    );
    // A value of the wrong dimension is caught by validation and marked.
    let e = o("fields.probe.tuned.detuning", "30 ns").unwrap_err();
    let d = &e.diagnostics[0];
    assert_eq!(d.line, Some(19));
    assert_eq!(d.found, "'30 ns' (a time) (from an override)");
}

#[test]
fn overrides_replace_and_create_values() {
    let m = scheme::parse_with_overrides(
        BASE,
        "s.yaml",
        &[
            ("fields.probe.tuned.detuning".into(), "+30 MHz".into()),
            ("levels.r.energy".into(), "3.1 eV".into()),
            ("solver.rtol".into(), "1e-6".into()),
            ("couplings[1].dipole".into(), "-2 ea0".into()),
            ("fields.probe.envelope.duration".into(), "20 ns".into()),
        ],
    )
    .unwrap();
    let two_pi = 2.0 * std::f64::consts::PI;
    let det = m.detuning(&m.drives()[0]) / two_pi;
    assert!((det - 30e6).abs() < 1e-3 * 30e6, "{det}");
    assert_eq!(m.solver().rtol, 1e-6);
    assert_eq!(m.fields()[0].envelope.area(), 20e-9);
    assert!(m.drives()[1].rabi < 0.0);
    let (v, unit) =
        scheme::numeric_value_at(BASE, "s.yaml", "fields.probe.tuned.detuning").unwrap();
    assert_eq!((v, unit.as_str()), (-20.0, "MHz"));
    let (v, unit) = scheme::numeric_value_at(BASE, "s.yaml", "couplings[0].dipole").unwrap();
    assert_eq!((v, unit.as_str()), (2.5, "ea0"));
    assert!(scheme::numeric_value_at(BASE, "s.yaml", "solver.rtol").is_err());
}

/// Every budget of the YAML reader is refused with a located message, and
/// quickly.
#[test]
fn yaml_budgets_are_refused_with_their_place() {
    let timed = |text: &str| {
        let t = std::time::Instant::now();
        let d = one(text);
        let secs = t.elapsed().as_secs_f64();
        assert!(secs < 2.0, "took {secs} s: {d:?}");
        assert!(d.line.is_some() && d.column.is_some(), "{d:?}");
        d
    };
    // Depth: flow and block nesting, 129 levels.
    let d = timed(&format!(
        "title: x\nlevels: {}1{}\n",
        "[".repeat(129),
        "]".repeat(129)
    ));
    assert_eq!((d.line, d.column), (Some(2), Some(137)), "{d:?}");
    assert_eq!(d.expected, "nesting at most 128 levels deep");
    let mut block = String::from("levels:\n");
    for k in 0..130 {
        block.push_str(&format!("{}k{k}:\n", " ".repeat(k + 1)));
    }
    let d = timed(&block);
    assert_eq!(d.expected, "nesting at most 128 levels deep");
    // Nodes: one anchored list of 2,000 replayed by 1,000 aliases (2e6).
    let text = format!(
        "levels:\n  g: {{energy: 0 eV, label: &a [{}1]}}\ntargets: [{}*a]\n",
        "1,".repeat(2_000),
        "*a,".repeat(1_000)
    );
    let d = timed(&text);
    assert_eq!(d.line, Some(3), "{d:?}");
    assert!(
        d.expected
            .contains("at most 1000000 YAML nodes after alias expansion"),
        "{d:?}"
    );
    assert!(d.found.contains("alias bomb"), "{d:?}");
    // Aliases: the nine-level "billion laughs" file, refused where the
    // expansion passes the node budget.
    let mut bomb = String::from("a0: &a0 [lol,lol,lol,lol,lol,lol,lol,lol,lol]\n");
    for i in 1..=9 {
        let p = i - 1;
        bomb.push_str(&format!(
            "a{i}: &a{i} [*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p}]\n"
        ));
    }
    let d = timed(&bomb);
    assert!(d.line >= Some(7), "{d:?}");
    assert!(d.found.contains("alias bomb"), "{d:?}");
    // Scalar text: a 100 kB string replayed by 50 aliases (5 MB).
    let text = format!(
        "title: &t \"{}\"\ntargets: [{}*t]\n",
        "x".repeat(100_000),
        "*t,".repeat(50)
    );
    let d = timed(&text);
    assert_eq!(d.line, Some(2), "{d:?}");
    assert!(
        d.expected
            .contains("at most 4194304 bytes of text after alias expansion"),
        "{d:?}"
    );
}
