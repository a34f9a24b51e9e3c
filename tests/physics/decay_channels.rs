//! Coherent decay channels (one jump operator summed over several level
//! pairs, as angular momentum generates them) against qutip's `mesolve`:
//! `tests/fixtures/channels/*.json`, written by
//! `scripts/channels_reference.py` (versions pinned and recorded in each
//! fixture). Two close upper levels e1, e2 driven from g1 decay to g1 and g2
//! through two channels; their coherence feeds the ground populations and
//! the cross terms of L^dagger L damp it. Window-end and settled
//! populations and the lost population agree at 1e-6, with the exact
//! (Liouvillian) and the adaptive stepper. Also: one-term channels give the
//! same result as `decays_to` branching. Invented, illustrative numbers.

use crate::fixture_support;
use crate::solve_support::{rect, tau, Builder};
use levelplan::model::{Jump, JumpTerm, Level, Method, Model};
use levelplan::solve::{solve, SolveOptions};
use serde_json::Value;

const TOL: f64 = 1e-6;

fn fixture(name: &str) -> Value {
    let fx = fixture_support::read_json("tests/fixtures/channels", &format!("{name}.json"));
    fixture_support::assert_pinned(name, &fx["metadata"]["versions"]);
    fx
}

fn num(v: &Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("{key}"))
}

fn pair(v: &Value, key: &str) -> (f64, f64) {
    let a = v[key].as_array().expect(key);
    (a[0].as_f64().expect(key), a[1].as_f64().expect(key))
}

fn channel(label: &str, lower: usize, amps: (f64, f64)) -> Jump {
    Jump {
        label: label.into(),
        terms: vec![
            JumpTerm {
                lower,
                upper: 2,
                amplitude: amps.0,
            },
            JumpTerm {
                lower,
                upper: 3,
                amplitude: amps.1,
            },
        ],
    }
}

/// The fixture's scheme: levels g1, g2, e1, e2 (indices 0..4).
fn model(fx: &Value, method: Method) -> Model {
    let gamma = num(fx, "gamma_per_s");
    let split = num(fx, "split_rad_per_s");
    let (r1, r2) = pair(fx, "rabi_rad_per_s");
    let t = num(fx, "duration_s");
    let omega0 = tau(384e12);
    let base = Builder::new()
        .level("g1", 0.0, 0.0)
        .level("g2", tau(100e6), 0.0)
        .level("e1", omega0, gamma)
        .level("e2", omega0 + split, gamma)
        .coupling("g1", "e1")
        .coupling("g1", "e2")
        .field_tuned("L", "g1", "e1", num(fx, "delta_rad_per_s"), rect(0.0, t))
        .drive("L", "g1", "e1", r1)
        .drive("L", "g1", "e2", r2)
        .initial("g1")
        .window(0.0, t)
        .method(method)
        .tolerances(1e-10, 1e-12)
        .build();
    base.to_builder()
        .jumps(vec![
            channel("to g1", 0, pair(fx, "a_per_sqrt_s")),
            channel("to g2", 1, pair(fx, "b_per_sqrt_s")),
        ])
        .build()
        .expect("model with channels")
}

fn check(name: &str) {
    let fx = fixture(name);
    let want = &fx["reference"];
    for method in [Method::Auto, Method::Adaptive] {
        let m = model(&fx, method);
        let s = solve(&m, &SolveOptions::default()).expect("solve");
        let mut bad = Vec::new();
        let mut cmp = |what: String, got: f64, want: f64| {
            if (got - want).abs() > TOL {
                bad.push(format!("{what}: levelplan {got:.9}, qutip {want:.9}"));
            }
        };
        let end = want["window_end_populations"].as_array().expect("pops");
        let settled = want["settled_populations"].as_array().expect("pops");
        let ours = s.settled_populations.clone().expect("settled");
        for k in 0..4 {
            let id = &m.levels()[k].id;
            cmp(
                format!("{id} at the window end"),
                s.window_end_populations[k],
                end[k].as_f64().expect("p"),
            );
            cmp(
                format!("{id} settled"),
                ours[k],
                settled[k].as_f64().expect("p"),
            );
        }
        cmp(
            "lost at the window end".into(),
            s.window_end_lost,
            num(want, "window_end_lost"),
        );
        cmp(
            "lost, settled".into(),
            s.settled_lost.expect("settled lost"),
            num(want, "settled_lost"),
        );
        assert!(
            bad.is_empty(),
            "{name} ({method:?}, ran {:?}) differs from qutip (scripts/channels_reference.py):\n{}",
            s.method,
            bad.join("\n")
        );
    }
}

#[test]
fn close_upper_levels_decay_coherently_as_qutip_finds() {
    check("close_upper_levels");
}

#[test]
fn coherent_channels_with_opposite_signs_as_qutip_finds() {
    check("strong_drive_opposite_signs");
}

/// One-term channels carry exactly what `decays_to` branching carries:
/// same populations, lost and settled populations (1e-12).
#[test]
fn one_term_channels_equal_branching() {
    let gamma = tau(6e6);
    let mk = |branching: bool| {
        let base = Builder::new()
            .level("g1", 0.0, 0.0)
            .level("g2", tau(100e6), 0.0)
            .level("e", tau(384e12), gamma)
            .coupling("g1", "e")
            .field_tuned("L", "g1", "e", tau(2e6), rect(0.0, 0.4e-6))
            .drive("L", "g1", "e", tau(5e6))
            .initial("g1")
            .window(0.0, 0.4e-6)
            .build();
        let mut levels: Vec<Level> = base.levels().to_vec();
        if branching {
            levels[2].decays_to = vec![(0, 0.5), (1, 0.3)];
            base.to_builder().levels(levels).build()
        } else {
            let term = |lower, f: f64| Jump {
                label: "one pair".into(),
                terms: vec![JumpTerm {
                    lower,
                    upper: 2,
                    amplitude: (f * gamma).sqrt(),
                }],
            };
            base.to_builder()
                .jumps(vec![term(0, 0.5), term(1, 0.3)])
                .build()
        }
        .expect("model")
    };
    let (a, b) = (
        solve(&mk(true), &SolveOptions::default()).expect("branching"),
        solve(&mk(false), &SolveOptions::default()).expect("channels"),
    );
    for k in 0..3 {
        assert!((a.final_populations[k] - b.final_populations[k]).abs() < 1e-12);
        let (x, y) = (
            a.settled_populations.as_ref().expect("a")[k],
            b.settled_populations.as_ref().expect("b")[k],
        );
        assert!((x - y).abs() < 1e-12, "settled {k}: {x} vs {y}");
    }
    assert!((a.lost - b.lost).abs() < 1e-12);
    assert!((a.settled_lost.expect("a") - b.settled_lost.expect("b")).abs() < 1e-12);
}
