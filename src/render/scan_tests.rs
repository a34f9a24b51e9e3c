//! Unit tests of the scan spelling (`render::scan`) beyond those beside it:
//! quoting of column names and the tune summary without an answer. Kept
//! apart so that scan.rs stays within the file-size rule.
//!
//! Owns: tests only. Must not: test anything but `render::scan`'s public
//! functions.

use super::scan::*;
use crate::report::Provenance;
use crate::scan::{Axis, Spacing, TuneGoal, TuneReport};

fn axes() -> Vec<Axis> {
    vec![Axis {
        path: "fields.probe.tuned.detuning".into(),
        unit: "MHz".into(),
        start: -50.0,
        end: 50.0,
        count: 3,
        spacing: Spacing::Linear,
    }]
}

#[test]
fn head_quotes_ids_it_cannot_read_back_and_names_an_override() {
    // Scheme ids are letters, digits and _ ' + - only; should a wider id
    // reach the writer, it is quoted, and reading back refuses it
    // instead of misreading the columns.
    let prov = Provenance::new("demo.yaml", "ab12");
    let ids = vec!["g".to_string(), "e, \"F=2\"".to_string()];
    let ax = axes();
    let h = ScanHead {
        provenance: &prov,
        axes: &ax,
        tolerance: Some(1e-4),
        default_tolerance: 1e-3,
        points: 3,
        hash: "f00d",
        shard: None,
        level_ids: &ids,
    };
    let text = head(&h);
    assert!(text.starts_with("# levelplan 0.1.0 scan; scheme demo.yaml sha256 ab12\n"));
    assert!(text.contains("\n# tolerance 1e-4 (--tolerance; per-level tolerances still apply)\n"));
    assert!(!text.contains(SHARD_PREFIX), "a full scan states no shard");
    assert!(text.ends_with(
        "\nfields.probe.tuned.detuning [MHz],P(g),\"P(e, \"\"F=2\"\")\",max_spectator,flagged,est(g),\"est(e, \"\"F=2\"\")\"\n"
    ));
    assert_eq!(
        read_head(&split(&text).unwrap()).unwrap_err(),
        "quoted column names"
    );
}

#[test]
fn tune_summary_without_an_answer_says_what_to_change() {
    let r = TuneReport {
        provenance: Provenance::new("demo.yaml", "ab12"),
        axis: axes()[0].clone(),
        goal: TuneGoal::Shortest { goal: 0.9 },
        level_ids: vec!["g".into(), "e".into()],
        roles: vec![crate::report::Role::Initial, crate::report::Role::Target],
        coarse_points: 21,
        refine_solves: 0,
        found: None,
    };
    let t = tune_text(&r);
    let lines: Vec<&str> = t.lines().collect();
    assert_eq!(
        lines,
        [
            "demo.yaml tune of fields.probe.tuned.detuning over [-5.000000000e1 MHz, 5.000000000e1 MHz] (linear): smallest value with every spectator within tolerance and every target >= 0.9",
            "no value on the 21-point grid meets the condition; widen the range or relax --goal/--tolerance",
            "solves: 21 (21 on the coarse grid, 0 refining)",
        ]
    );
}
