//! A scheme whose 24 sublevels `manifolds:` generates against the same
//! levels typed by hand: the two must be one Hamiltonian, so every final
//! population agrees.
//!
//! `level_schemes/bench/generated_d2_30ns.yaml` (invented constants, 3 G,
//! sigma+ with a 2 % pi impurity, 30 ns rectangular pulse, no decay) and
//! `level_schemes/bench/hand_typed_d2_30ns.yaml`, which
//! `scripts/hand_typed_from_generated.py` wrote from the generated scheme's
//! `inspect --format json`: every level's energy, one coupling per driven
//! pair with the dipole its polarisation component sees, the same carrier,
//! intensity and envelope. The benchmark `benches/generated_scheme.rs` times
//! the same two files.
//!
//! Tolerance 1e-9 absolute on every final population. The two files differ
//! only by the roundings of their numbers: the hand-typed one holds the
//! shortest decimals that read back to the generated doubles, and reading
//! them through the units ("Hz", "ea0") rounds once more, about 1e-16
//! relative. The largest effect is on the energies: one ulp of 516 THz
//! (3.2e15 rad/s) is about 0.5 rad/s, a phase of 1.5e-8 rad over 30 ns,
//! which moves a population by at most that much times its amplitude
//! (measured: 1e-20). A wrong dipole moves populations by far more: 1 % on
//! the weak pi line of the initial sublevel moves one by about 1e-4
//! (`the_comparison_catches_one_dipole_one_percent_off`).

use levelplan::model::Model;
use levelplan::pipeline::vet_model;
use levelplan::report::{Provenance, VetReport};
use levelplan::scheme;
use std::path::Path;

const GENERATED: &str = "level_schemes/bench/generated_d2_30ns.yaml";
const HAND_TYPED: &str = "level_schemes/bench/hand_typed_d2_30ns.yaml";
const TOL: f64 = 1e-9;

fn text(rel: &str) -> String {
    let p = Path::new(env!("CARGO_MANIFEST_DIR")).join(rel);
    std::fs::read_to_string(&p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

fn model(text: &str, name: &str) -> Model {
    scheme::parse(text, name).unwrap_or_else(|e| panic!("{e}"))
}

fn vet(m: &Model, name: &str) -> VetReport {
    vet_model(m, Provenance::new(name, ""), None).unwrap_or_else(|e| panic!("{name}: {e}"))
}

/// Every way in which the hand-typed report differs from the generated one
/// beyond `TOL`: level ids and order, final populations, lost population.
fn differences(generated: &VetReport, hand: &VetReport) -> Vec<String> {
    let mut out = Vec::new();
    let ids = |r: &VetReport| r.levels.iter().map(|l| l.id.clone()).collect::<Vec<_>>();
    if ids(generated) != ids(hand) {
        out.push(format!(
            "levels {:?} against {:?}",
            ids(generated),
            ids(hand)
        ));
        return out;
    }
    for (g, h) in generated.levels.iter().zip(&hand.levels) {
        let d = (g.final_population - h.final_population).abs();
        if d.is_nan() || d > TOL {
            out.push(format!(
                "{}: generated {:.12e}, hand-typed {:.12e}",
                g.id, g.final_population, h.final_population
            ));
        }
    }
    let lost = (generated.lost_population - hand.lost_population).abs();
    if lost.is_nan() || lost > TOL {
        out.push(format!(
            "lost: generated {}, hand-typed {}",
            generated.lost_population, hand.lost_population
        ));
    }
    out
}

/// Both spellings of one Hamiltonian give the same populations (common
/// practice, no source: the generated levels, dipoles and carrier written
/// out as numbers). The hand-typed file must have been written from the
/// current generated file (its header carries that file's SHA-256).
#[test]
fn generated_sublevels_equal_the_same_levels_typed_by_hand() {
    let bytes = text(GENERATED);
    let (gen_model, source) =
        scheme::from_bytes(bytes.as_bytes(), GENERATED).unwrap_or_else(|e| panic!("{e}"));
    let hand_text = text(HAND_TYPED);
    assert!(
        hand_text.contains(&format!("# generated_sha256: {}", source.sha256)),
        "{HAND_TYPED} was not written from the current {GENERATED}: rerun \
         scripts/hand_typed_from_generated.py"
    );
    let hand_model = model(&hand_text, HAND_TYPED);
    assert_eq!(gen_model.levels().len(), 24);
    assert_eq!(hand_model.levels().len(), 24);
    assert_eq!(gen_model.drives().len(), hand_model.drives().len());
    let (g, h) = (vet(&gen_model, GENERATED), vet(&hand_model, HAND_TYPED));
    let diffs = differences(&g, &h);
    assert!(
        diffs.is_empty(),
        "the hand-typed scheme differs from the generated one:\n  {}",
        diffs.join("\n  ")
    );
    // Not a comparison of empty levels: the pulse moves nearly everything.
    let target = g.levels.iter().find(|l| l.id == "P_F3_m+3").unwrap();
    assert!(target.final_population > 0.9, "{}", target.final_population);
}

/// The comparison bites: one dipole of the hand-typed file 1 % off (the
/// pi-impurity line of the initial sublevel) is caught.
#[test]
fn the_comparison_catches_one_dipole_one_percent_off() {
    let hand_text = text(HAND_TYPED);
    let pair = "  - between: [S_F2_m+2, P_F3_m+2]\n    dipole: \"";
    let start = hand_text.find(pair).expect("the pi line of S_F2_m+2") + pair.len();
    let end = start + hand_text[start..].find(' ').expect("a dipole value");
    let dipole: f64 = hand_text[start..end].parse().expect("a number");
    let wrong = format!(
        "{}{:?}{}",
        &hand_text[..start],
        dipole * 1.01,
        &hand_text[end..]
    );
    let g = vet(&model(&text(GENERATED), GENERATED), GENERATED);
    let right = vet(&model(&hand_text, HAND_TYPED), HAND_TYPED);
    let off = vet(&model(&wrong, HAND_TYPED), HAND_TYPED);
    assert!(differences(&g, &right).is_empty());
    let diffs = differences(&g, &off);
    assert!(!diffs.is_empty(), "a 1 % dipole error went unnoticed");
    assert!(diffs.iter().any(|d| d.starts_with("P_F3_m+2")), "{diffs:?}");
}
