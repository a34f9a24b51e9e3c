//! The density-matrix dynamics of scheme contract v2 ("Open systems":
//! `decays_to`, `dephasing`, `fields.<id>.linewidth`, `initial: {mixture}`,
//! `readout`) against an outside reference, end to end through
//! `levelplan vet SCHEME --format json`.
//!
//! The references are files, not code: `scripts/open_reference.py` solved
//! each scheme of `tests/fixtures/open/` with qutip's `mesolve` and, as an
//! independent check, with a hand-built Liouvillian (numpy/scipy), and wrote
//! the results beside the schemes with the library versions and solver
//! tolerances it used (`metadata` in each JSON). The optical Bloch checks
//! (`obe_*.yaml`) compare with closed forms listed in `analytic.json` with
//! their sources; this file recomputes each closed form before using it.
//! No Python runs here. All schemes are invented and illustrative.
//!
//! Populations, lost population, settled populations and scattered photons
//! are compared at 1e-6 absolute.

use crate::fixture_support::{self, root};
use serde_json::Value;

const DIR: &str = "tests/fixtures/open";
const TOL: f64 = 1e-6;

/// The density-matrix fixtures: `<name>.yaml` with the reference `<name>.json`.
const FIXTURES: &[&str] = &[
    "a_two_level_steady",
    "b_lambda_pumping",
    "c_dephasing_partial_decay",
    "c_dephasing_partial_decay_settled",
    "d_laser_linewidth_gaussian",
    "e_ladder_mixture_cascade",
];

fn read_json(name: &str) -> Value {
    fixture_support::read_json(DIR, name)
}

/// `levelplan vet <scheme> --format json`: the report, or why there is none.
fn vet(scheme: &str) -> Result<Value, String> {
    fixture_support::vet_json(scheme).map_err(|(code, stderr)| {
        format!(
            "{scheme}: `levelplan vet` exited with {code:?} and wrote no report (0 or 3 \
             expected).\nstderr:\n{stderr}"
        )
    })
}

fn level<'a>(report: &'a Value, id: &str) -> Option<&'a Value> {
    report["levels"]
        .as_array()?
        .iter()
        .find(|l| l["id"].as_str() == Some(id))
}

/// Compares `got` (a JSON number, or missing) with `want` at `TOL`, and
/// records a readable failure.
fn compare(failures: &mut Vec<String>, what: &str, got: Option<&Value>, want: f64) {
    match got.and_then(Value::as_f64) {
        None => failures.push(format!(
            "{what}: missing from levelplan's JSON (reference {want:.12}); contract v2 adds it"
        )),
        Some(g) if (g - want).abs() > TOL || !g.is_finite() => failures.push(format!(
            "{what}: levelplan {g:.12}, reference {want:.12} (difference {:.3e} > {TOL:e})",
            g - want
        )),
        Some(_) => {}
    }
}

/// Compares every per-level value of `map` (fixture key) with
/// `levels[].<key>` of the report.
fn compare_levels(
    failures: &mut Vec<String>,
    name: &str,
    report: &Value,
    fx: &Value,
    keys: (&str, &str),
) {
    let (fixture_key, report_key) = keys;
    let Some(map) = fx[fixture_key].as_object() else {
        return;
    };
    for (id, want) in map {
        let want = want.as_f64().expect("reference numbers");
        let got = level(report, id).and_then(|l| l.get(report_key));
        // A level that does not decay scatters nothing; the contract does not
        // say whether it carries the key, so a missing zero is no failure.
        if got.is_none() && report_key == "scattered_photons" && want == 0.0 {
            continue;
        }
        compare(
            failures,
            &format!("{name}: level {id} {report_key}"),
            got,
            want,
        );
    }
}

fn compare_text(failures: &mut Vec<String>, what: &str, got: &Value, want: &str) {
    if got.as_str() != Some(want) {
        failures.push(format!("{what}: levelplan {got}, expected \"{want}\""));
    }
}

/// Runs one fixture and compares everything its reference holds.
fn check_fixture(name: &str) {
    let fx = read_json(&format!("{name}.json"));
    let scheme = format!("{DIR}/{name}.yaml");
    assert_eq!(
        fx["scheme"].as_str(),
        Some(&*format!("{name}.yaml")),
        "{name}: fixture names its scheme"
    );
    let report = vet(&scheme).unwrap_or_else(|e| panic!("{e}"));
    let failures = differences(name, &fx, &report);
    assert!(
        failures.is_empty(),
        "{name}: levelplan differs from the qutip reference ({DIR}/{name}.json, written by \
         scripts/open_reference.py):\n  {}",
        failures.join("\n  ")
    );
}

/// Everything in which a vet report differs from a fixture's reference.
fn differences(name: &str, fx: &Value, report: &Value) -> Vec<String> {
    let mut failures = Vec::new();
    if let Some(d) = fx["dynamics"].as_str() {
        compare_text(
            &mut failures,
            &format!("{name}: dynamics"),
            &report["dynamics"],
            d,
        );
    }
    if let Some(r) = fx["readout"].as_str() {
        compare_text(
            &mut failures,
            &format!("{name}: readout"),
            &report["readout"],
            r,
        );
    }
    compare_levels(
        &mut failures,
        name,
        report,
        fx,
        ("final_population", "final_population"),
    );
    compare_levels(
        &mut failures,
        name,
        report,
        fx,
        ("settled_population", "settled_population"),
    );
    compare_levels(
        &mut failures,
        name,
        report,
        fx,
        ("scattered_photons_per_level", "scattered_photons"),
    );
    for key in ["lost_population", "scattered_photons"] {
        if let Some(want) = fx[key].as_f64() {
            compare(
                &mut failures,
                &format!("{name}: {key}"),
                report.get(key),
                want,
            );
        }
    }
    failures
}

#[test]
fn two_level_approach_to_the_steady_state() {
    check_fixture("a_two_level_steady");
}

#[test]
fn lambda_optical_pumping_with_branching() {
    check_fixture("b_lambda_pumping");
}

#[test]
fn pure_dephasing_and_a_partly_lost_decay() {
    check_fixture("c_dephasing_partial_decay");
}

/// The same scheme judged with `readout: settled`: final populations and the
/// lost population after the decay has run its course, photons still
/// counted inside the window.
#[test]
fn settled_readout_after_a_partly_lost_decay() {
    check_fixture("c_dephasing_partial_decay_settled");
}

#[test]
fn laser_linewidth_under_a_gaussian_pulse() {
    check_fixture("d_laser_linewidth_gaussian");
}

#[test]
fn ladder_from_a_mixture_with_a_decay_cascade() {
    check_fixture("e_ladder_mixture_cascade");
}

// ---------------------------------------------------------------------------
// Optical Bloch closed forms (analytic.json)

/// Steady state of the driven, damped two-level system with extra dephasing
/// gamma_phi of the coherence, rates in units of Gamma:
/// rho_ee = (Omega^2 g / 2) / (Delta^2 + g^2 + Omega^2 g), g = 1/2 + gamma_phi.
/// At gamma_phi = 0 this is (s/2) / (1 + s + 4 Delta^2), s = 2 Omega^2
/// (R. Loudon, The Quantum Theory of Light, 3rd ed., OUP 2000, sec. 2.8;
/// with dephasing: L. Allen and J. H. Eberly, Optical Resonance and Two-Level
/// Atoms, Wiley 1975; both from memory).
fn obe_steady_state(omega: f64, delta: f64, gamma_phi: f64) -> f64 {
    let g = 0.5 + gamma_phi;
    let x = omega * omega * g;
    (x / 2.0) / (delta * delta + g * g + x)
}

/// Resonant transient from the ground state, Gamma = 1 (H. C. Torrey,
/// Phys. Rev. 76, 1059 (1949); from memory; exact for Omega > 1/4, as
/// scripts/open_reference.py verifies symbolically).
fn torrey(omega: f64, gamma_t: f64) -> f64 {
    let lambda = (omega * omega - 1.0 / 16.0).sqrt();
    let pre = (omega * omega / 2.0) / (0.5 + omega * omega);
    pre * (1.0
        - (-0.75 * gamma_t).exp()
            * ((lambda * gamma_t).cos() + 0.75 / lambda * (lambda * gamma_t).sin()))
}

/// The closed form of one analytic.json check, recomputed here.
fn closed_form(c: &Value) -> f64 {
    let num = |k: &str| {
        c[k].as_f64()
            .unwrap_or_else(|| panic!("analytic.json: {k} in {c}"))
    };
    match c["kind"].as_str() {
        Some("steady_state") => obe_steady_state(
            num("omega_over_gamma"),
            num("delta_over_gamma"),
            num("gamma_phi_over_gamma"),
        ),
        Some("torrey_transient") => torrey(num("omega_over_gamma"), num("gamma_t")),
        other => panic!("analytic.json: unknown kind {other:?}"),
    }
}

fn check_analytic(kind: &str) {
    let doc = read_json("analytic.json");
    let checks: Vec<&Value> = doc["levelplan_checks"]
        .as_array()
        .expect("levelplan_checks")
        .iter()
        .filter(|c| c["kind"].as_str() == Some(kind))
        .collect();
    assert!(
        checks.len() >= 2,
        "analytic.json has {} {kind} checks",
        checks.len()
    );
    let mut failures = Vec::new();
    for c in checks {
        let scheme = c["scheme"].as_str().expect("scheme");
        let id = c["level"].as_str().expect("level");
        let want = c["final_population"].as_f64().expect("final_population");
        let source = c["source"].as_str().expect("source");
        let recomputed = closed_form(c);
        assert!(
            (recomputed - want).abs() < 1e-12,
            "{scheme}: analytic.json holds {want}, the closed form gives {recomputed}"
        );
        let report = match vet(&format!("{DIR}/{scheme}")) {
            Ok(r) => r,
            Err(e) => {
                failures.push(e);
                continue;
            }
        };
        if let Some(t) = c["t_s"].as_f64().filter(|_| c["readout"] == "time") {
            // A readout time is reported as a number of seconds.
            let got = report["readout"].as_f64();
            if got.is_none_or(|g| (g - t).abs() > 1e-9 * t) {
                failures.push(format!(
                    "{scheme}: readout {}, expected the time {t:e} s",
                    report["readout"]
                ));
            }
        }
        let got = level(&report, id).and_then(|l| l.get("final_population"));
        compare(
            &mut failures,
            &format!("{scheme}: level {id} final_population [{source}]"),
            got,
            want,
        );
    }
    assert!(
        failures.is_empty(),
        "optical Bloch closed forms ({kind}):\n  {}",
        failures.join("\n  ")
    );
}

#[test]
fn long_square_pulses_reach_the_optical_bloch_steady_state() {
    check_analytic("steady_state");
}

#[test]
fn resonant_transient_follows_torrey() {
    check_analytic("torrey_transient");
}

// ---------------------------------------------------------------------------
// The fixtures themselves (these pass without the solver: they guard the
// files against hand edits and stale generations).

/// Settled populations from the window-end ones through the fixture's own
/// model (decay branching, highest level first): the reference agrees.
fn settle(fx: &Value) -> Vec<(String, f64)> {
    let levels = fx["model"]["levels"].as_array().expect("model.levels");
    let mut pop: Vec<(String, f64)> = levels
        .iter()
        .map(|l| {
            let id = l["id"].as_str().expect("id").to_owned();
            let p = fx["final_population"][&id]
                .as_f64()
                .expect("final population");
            (id, p)
        })
        .collect();
    let mut order: Vec<&Value> = levels.iter().collect();
    order.sort_by(|a, b| {
        b["energy_hz"]
            .as_f64()
            .partial_cmp(&a["energy_hz"].as_f64())
            .expect("finite energies")
    });
    for l in order {
        if l["gamma_per_s"].as_f64().expect("gamma") <= 0.0 {
            continue;
        }
        let i = pop.iter().position(|(k, _)| l["id"] == **k).expect("level");
        let x = std::mem::take(&mut pop[i].1);
        for (k, b) in l["decays_to"].as_object().expect("decays_to") {
            let j = pop
                .iter()
                .position(|(id, _)| id == k)
                .expect("branch level");
            pop[j].1 += x * b.as_f64().expect("fraction");
        }
    }
    pop
}

#[test]
fn fixtures_are_consistent_and_record_their_versions() {
    for name in FIXTURES {
        let fx = read_json(&format!("{name}.json"));
        fixture_support::assert_pinned(name, &fx["metadata"]["versions"]);
        let sum = |key: &str| -> f64 {
            fx[key]
                .as_object()
                .expect(key)
                .values()
                .map(|v| v.as_f64().expect("number"))
                .sum()
        };
        let lost = fx["lost_population"].as_f64().expect("lost");
        assert!(
            (sum("final_population") + lost - 1.0).abs() < 1e-9,
            "{name}: trace at the window end"
        );
        let settled_lost = fx["settled_lost_population"]
            .as_f64()
            .expect("settled lost");
        assert!(
            (sum("settled_population") + settled_lost - 1.0).abs() < 1e-9,
            "{name}: trace settled"
        );
        for (id, p) in settle(&fx) {
            let want = fx["settled_population"][&id].as_f64().expect("settled");
            assert!(
                (p - want).abs() < 1e-12,
                "{name}: settled {id} {p} vs {want}"
            );
        }
        let photons: f64 = fx["scattered_photons_per_level"]
            .as_object()
            .expect("photons")
            .values()
            .map(|v| v.as_f64().expect("number"))
            .sum();
        assert!(
            (photons - fx["scattered_photons"].as_f64().expect("photons")).abs() < 1e-12,
            "{name}: photon sum"
        );
        let check = &fx["metadata"]["independent_check"];
        assert!(
            check["max_abs_population_difference"]
                .as_f64()
                .expect("diff")
                < 1e-9,
            "{name}: qutip vs numpy"
        );
    }
}

/// Every file in tests/fixtures/open is used by a test here, so no reference
/// is silently skipped.
#[test]
fn every_open_fixture_is_checked() {
    let doc = read_json("analytic.json");
    let mut used: Vec<String> = vec!["analytic.json".into()];
    for n in FIXTURES {
        used.push(format!("{n}.yaml"));
        used.push(format!("{n}.json"));
    }
    for c in doc["levelplan_checks"]
        .as_array()
        .expect("levelplan_checks")
    {
        used.push(c["scheme"].as_str().expect("scheme").to_owned());
    }
    for e in std::fs::read_dir(root().join(DIR)).expect("fixture directory") {
        let name = e.expect("entry").file_name().to_string_lossy().into_owned();
        assert!(
            used.contains(&name),
            "{DIR}/{name} is checked by no test in tests/open_reference.rs"
        );
    }
    for name in &used {
        assert!(
            root().join(DIR).join(name).exists(),
            "{DIR}/{name} is missing"
        );
    }
}

/// A report shaped as the contract says (vet --format json, v2 keys), built
/// from a fixture's own numbers.
fn report_from(fx: &Value) -> Value {
    let ids: Vec<&String> = fx["final_population"]
        .as_object()
        .expect("final_population")
        .keys()
        .collect();
    let levels: Vec<Value> = ids
        .iter()
        .map(|id| {
            serde_json::json!({
                "id": id,
                "final_population": fx["final_population"][id.as_str()],
                "settled_population": fx["settled_population"][id.as_str()],
                "scattered_photons": fx["scattered_photons_per_level"][id.as_str()],
            })
        })
        .collect();
    serde_json::json!({
        "dynamics": fx["dynamics"],
        "readout": fx["readout"],
        "lost_population": fx["lost_population"],
        "scattered_photons": fx["scattered_photons"],
        "levels": levels,
    })
}

/// The comparison itself: a report equal to the reference passes, one that
/// is off by 2e-6 in any compared number, misses a key or names another
/// dynamics fails.
#[test]
fn the_comparison_accepts_the_reference_and_catches_changes() {
    for name in FIXTURES {
        let fx = read_json(&format!("{name}.json"));
        let good = report_from(&fx);
        assert_eq!(differences(name, &fx, &good), Vec::<String>::new());
        let n_levels = good["levels"].as_array().expect("levels").len();
        for key in [
            "final_population",
            "settled_population",
            "scattered_photons",
        ] {
            for i in 0..n_levels {
                let mut bad = good.clone();
                let v = &mut bad["levels"][i][key];
                *v = serde_json::json!(v.as_f64().expect("number") + 2e-6);
                assert_eq!(differences(name, &fx, &bad).len(), 1, "{name}: {key} {i}");
            }
        }
        for key in ["lost_population", "scattered_photons"] {
            let mut bad = good.clone();
            bad[key] = serde_json::json!(bad[key].as_f64().expect("number") - 2e-6);
            assert_eq!(differences(name, &fx, &bad).len(), 1, "{name}: {key}");
            bad.as_object_mut().expect("object").remove(key);
            assert_eq!(differences(name, &fx, &bad).len(), 1, "{name}: no {key}");
        }
        let mut bad = good.clone();
        bad["dynamics"] = serde_json::json!("amplitudes");
        assert_eq!(differences(name, &fx, &bad).len(), 1, "{name}: dynamics");
    }
}
