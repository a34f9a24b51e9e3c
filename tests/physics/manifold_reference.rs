//! The dynamics levelplan generates from `manifolds:` (sublevels, couplings
//! between manifolds, polarisation, coherent decay channels) against an
//! outside reference, end to end through `levelplan vet SCHEME --format json`.
//!
//! `scripts/manifold_reference.py` built each scheme's sublevel model
//! independently of levelplan (hyperfine + Zeeman diagonalised with numpy,
//! dipole elements from sympy's Clebsch-Gordan coefficients, polarisation
//! projection, the laser's rotating frame, three coherent jump operators per
//! photon polarisation), solved it with qutip's `mesolve`, and wrote the
//! schemes and results to `tests/fixtures/manifolds/` with the library
//! versions it used. No Python runs here. All constants are invented and
//! illustrative. Every level's window-end and settled population and the
//! lost population are compared at 1e-6 absolute.

use crate::fixture_support;
use serde_json::Value;

const DIR: &str = "tests/fixtures/manifolds";
const TOL: f64 = 1e-6;
const FIXTURES: &[&str] = &[
    "a_sigma_plus_impure",
    "b_pi_unpolarised",
    "c_hyperfine_levels",
];

fn read_json(name: &str) -> Value {
    fixture_support::read_json(DIR, name)
}

fn vet(scheme: &str) -> Value {
    fixture_support::vet_json(scheme)
        .unwrap_or_else(|(code, stderr)| panic!("{scheme}: exit {code:?}\n{stderr}"))
}

/// Everything in which a report differs from a fixture's reference.
fn differences(name: &str, fx: &Value, report: &Value) -> Vec<String> {
    let mut failures = Vec::new();
    let levels = report["levels"].as_array().cloned().unwrap_or_default();
    let mut check = |what: String, got: Option<f64>, want: f64| match got {
        Some(g) if g.is_finite() && (g - want).abs() <= TOL => {}
        g => failures.push(format!("{what}: levelplan {g:?}, reference {want:.12}")),
    };
    for key in ["final_population", "settled_population"] {
        let map = fx[key].as_object().expect("reference populations");
        for (id, want) in map {
            let got = levels
                .iter()
                .find(|l| l["id"].as_str() == Some(id))
                .and_then(|l| l[key].as_f64());
            check(
                format!("{name}: {id} {key}"),
                got,
                want.as_f64().expect("number"),
            );
        }
    }
    check(
        format!("{name}: lost_population"),
        report["lost_population"].as_f64(),
        fx["lost_population"].as_f64().expect("lost"),
    );
    if levels.len() != fx["final_population"].as_object().map_or(0, |m| m.len()) {
        failures.push(format!("{name}: {} levels generated", levels.len()));
    }
    failures
}

fn check_fixture(name: &str) {
    let fx = read_json(&format!("{name}.json"));
    let report = vet(&format!("{DIR}/{name}.yaml"));
    let failures = differences(name, &fx, &report);
    assert!(
        failures.is_empty(),
        "{name}: levelplan differs from {DIR}/{name}.json (scripts/manifold_reference.py):\n  {}",
        failures.join("\n  ")
    );
}

/// A sigma+ pulse with a 3 % impurity (pi 0.02, sigma- 0.01) at 3 G from one
/// ground sublevel of an invented J = 1/2 -> 3/2, I = 1/2 line; every level in
/// one laser frame, so the secular rule drops nothing.
#[test]
fn impure_sigma_plus_pulse_at_three_gauss() {
    check_fixture("a_sigma_plus_impure");
}

/// Weak pi light on an unpolarised F = 1 (mixture over its sublevels) at 2 G,
/// 80 % of the upper decay back to the ground manifold, 20 % lost; the
/// terms the secular rule drops join m_F blocks whose coherences stay zero.
#[test]
fn weak_pi_light_on_an_unpolarised_level() {
    check_fixture("b_pi_unpolarised");
}

/// `resolve: hyperfine` at zero field against the F-level model built in the
/// script: F -> F' couplings with the isotropic strength S_FF'/3 and decay
/// branched by F, S and the branching from sympy's 6j symbols (D. A. Steck,
/// alkali D-line data, relative hyperfine strength factors); 10 % of the
/// decay lost.
#[test]
fn hyperfine_resolved_levels_match_the_f_level_model() {
    check_fixture("c_hyperfine_levels");
}

/// The fixtures record their versions and keep their trace; the comparison
/// catches a change of 2e-6 in any compared number.
#[test]
fn manifold_fixtures_are_consistent_and_the_comparison_bites() {
    for name in FIXTURES {
        let fx = read_json(&format!("{name}.json"));
        fixture_support::assert_pinned(name, &fx["metadata"]["versions"]);
        let sum = |k: &str| -> f64 {
            fx[k]
                .as_object()
                .expect(k)
                .values()
                .filter_map(Value::as_f64)
                .sum()
        };
        let lost = fx["lost_population"].as_f64().expect("lost");
        let settled_lost = fx["settled_lost_population"].as_f64().expect("lost");
        assert!(
            (sum("final_population") + lost - 1.0).abs() < 1e-9,
            "{name}"
        );
        assert!(
            (sum("settled_population") + settled_lost - 1.0).abs() < 1e-9,
            "{name}"
        );
        let ids: Vec<String> = fx["final_population"]
            .as_object()
            .expect("map")
            .keys()
            .cloned()
            .collect();
        let good = serde_json::json!({
            "lost_population": lost,
            "levels": ids.iter().map(|id| serde_json::json!({
                "id": id,
                "final_population": fx["final_population"][id],
                "settled_population": fx["settled_population"][id],
            })).collect::<Vec<_>>(),
        });
        assert!(differences(name, &fx, &good).is_empty(), "{name}");
        for i in 0..ids.len() {
            for key in ["final_population", "settled_population"] {
                let mut bad = good.clone();
                let v = bad["levels"][i][key].as_f64().expect("number");
                bad["levels"][i][key] = serde_json::json!(v + 2e-6);
                assert_eq!(differences(name, &fx, &bad).len(), 1, "{name} {key} {i}");
            }
        }
    }
}
