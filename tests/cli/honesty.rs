//! Numerical honesty: a run whose norm error exceeds `pipeline::NORM_ERROR_LIMIT`
//! fails with a message instead of a table; non-finite values are errors
//! that name the stage; every report states the solver tolerances it used.
//! Schemes are invented, illustrative numbers.

use crate::cli_support::{bin, refused, scratch};
use levelplan::error::Error;
use levelplan::pipeline::{check_solution, vet_model, NORM_ERROR_LIMIT};
use levelplan::report::Provenance;
use levelplan::{estimate, scheme, solve};

/// A two-level system driven through about 2,000 Rabi cycles by a long
/// Gaussian pulse, integrated at the given tolerances.
fn many_cycles(rtol: &str) -> String {
    format!(
        "levels:\n  g: {{energy: 0 cm^-1}}\n  e: {{energy: 12000 cm^-1}}\ninitial: g\n\
         couplings:\n  - {{between: [g, e], dipole: 1}}\n\
         fields:\n  L:\n    tuned: {{to: [g, e], detuning: 30 MHz}}\n    \
         rabi: {{on: [g, e], value: 50 MHz}}\n    \
         envelope: {{shape: gaussian, center: 20 us, fwhm: 10 us}}\n\
         solver: {{method: adaptive, rtol: {rtol}, atol: {rtol}}}\n"
    )
}

#[test]
fn norm_error_above_the_limit_fails_the_run() {
    assert_eq!(NORM_ERROR_LIMIT, 1e-6);
    // At the default tolerances the run is sound...
    let m = scheme::parse(&many_cycles("1e-10"), "x").unwrap();
    let s = solve::solve(&m, &Default::default()).unwrap();
    assert!(s.norm_error < 1e-7, "{:e}", s.norm_error);
    assert!(check_solution(&s).is_ok());
    // ...at rtol = atol = 1e-3 the norm drifts by 6.8e-3 (measured) and no
    // table is written, by vet or by evolve.
    let text = many_cycles("1e-3");
    for cmd in [&["vet"][..], &["vet", "--format", "json"], &["evolve"]] {
        let (err, _) = refused(
            "norm",
            text.as_bytes(),
            cmd,
            1,
            &[
                "norm error",
                "exceeds the limit 1.0e-6",
                "tighten solver.rtol/atol",
            ],
        );
        assert!(!err.contains("NaN"), "{err}");
    }
    // The library says the same.
    let m = scheme::parse(&text, "x").unwrap();
    match vet_model(&m, Provenance::new("x", "0"), None) {
        Err(Error::NormError { norm_error, limit }) => {
            assert!(norm_error > 1e-4 && limit == 1e-6, "{norm_error}")
        }
        other => panic!("expected a norm error, got {other:?}"),
    }
}

/// A resonant pulse with an absurd Rabi frequency (allowed by the format: it
/// is a finite number).
fn absurd_rabi(method: &str) -> String {
    format!(
        "levels:\n  g: {{energy: 0 cm^-1}}\n  e: {{energy: 12000 cm^-1}}\ninitial: g\n\
         couplings:\n  - {{between: [g, e], dipole: 1}}\n\
         fields:\n  L:\n    tuned: {{to: [g, e], detuning: 0 MHz}}\n    \
         rabi: {{on: [g, e], value: 1e200 MHz}}\n    \
         envelope: {{shape: rectangular, start: 0 ns, duration: 10 ns}}\n\
         solver: {{method: {method}}}\n"
    )
}

#[test]
fn non_finite_values_are_errors_naming_the_stage() {
    // Propagation: the matrix exponential overflows.
    refused(
        "nonfinite",
        absurd_rabi("exact").as_bytes(),
        &["vet", "--format", "csv"],
        1,
        &["non-finite value in matrix exponential of the segment"],
    );
    // The adaptive propagator refuses it earlier, by its step budget.
    refused(
        "nonfinite-budget",
        absurd_rabi("adaptive").as_bytes(),
        &["vet"],
        1,
        &[
            "needs more than 5000000 steps",
            "Rabi frequency of field 'L'",
        ],
    );
    // Estimate: (Omega T / 2)^2 = (6e208 x 1e-8 / 2)^2 overflows.
    let m = scheme::parse(&absurd_rabi("exact"), "x").unwrap();
    let e = estimate::estimate(&m).unwrap_err();
    assert!(
        e.to_string()
            .contains("non-finite value in the perturbative estimate"),
        "{e}"
    );
    // A propagation result holding a NaN is refused before any report.
    let m = scheme::parse(&many_cycles("1e-10"), "x").unwrap();
    let mut s = solve::solve(&m, &Default::default()).unwrap();
    s.final_populations[1] = f64::NAN;
    let e = check_solution(&s).unwrap_err();
    assert_eq!(
        e.to_string(),
        "non-finite value in propagation; no result is reported"
    );
    assert_eq!(e.exit_code(), 1);
    // A report row holding an infinity is named by its level.
    let est = estimate::estimate(&m).unwrap();
    let s = solve::solve(&m, &Default::default()).unwrap();
    let mut rep = levelplan::report::vet(&m, Provenance::new("x", "0"), &s, &est, None).unwrap();
    assert_eq!(rep.first_non_finite(), None);
    rep.levels[1].peak_population = f64::INFINITY;
    assert_eq!(
        rep.first_non_finite().as_deref(),
        Some("the report row of level e")
    );
}

#[test]
fn every_report_states_the_tolerances_it_used() {
    // Tolerances chosen so they cannot be confused with the defaults.
    let text = many_cycles("1e-10").replace("rtol: 1e-10, atol: 1e-10", "rtol: 3e-11, atol: 7e-13");
    let dir = scratch("tolerances");
    let path = dir.join("s.yaml");
    std::fs::write(&path, &text).unwrap();
    let expect: [(&str, &[&str]); 5] = [
        ("text", &["rtol 3.0e-11", "atol 7.0e-13"]),
        ("markdown", &["rtol 3.0e-11", "atol 7.0e-13"]),
        ("latex", &["rtol 3.0e-11", "atol 7.0e-13"]),
        ("csv", &["rtol 3e-11", "atol 7e-13"]),
        ("json", &["\"rtol\": 3e-11", "\"atol\": 7e-13"]),
    ];
    for (fmt, needles) in expect {
        let o = bin()
            .args(["vet", "--format", fmt])
            .arg(&path)
            .output()
            .unwrap();
        assert!(matches!(o.status.code(), Some(0) | Some(3)));
        let out = String::from_utf8(o.stdout).unwrap();
        for n in needles {
            assert!(out.contains(n), "{fmt} lacks {n:?}:\n{out}");
        }
    }
    let o = bin()
        .args(["evolve", "--samples", "3"])
        .arg(&path)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    let head = String::from_utf8(o.stdout).unwrap();
    let first = head.lines().next().unwrap();
    assert!(
        first.starts_with('#') && first.contains("rtol 3e-11; atol 7e-13"),
        "{first}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}
