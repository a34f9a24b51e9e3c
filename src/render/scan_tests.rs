//! Unit tests of the scan spelling (`render::scan`), kept in their own file
//! so that scan.rs stays within the file-size rule: heads and their reading
//! back (quoting, the open-system columns), rows round trip, splitting a
//! cut file, and the tune summary.
//!
//! Owns: tests only. Must not: test anything but `render::scan`.

use super::*;
use crate::scan::TuneFound;

fn axes() -> Vec<Axis> {
    vec![Axis {
        path: "fields.probe.tuned.detuning".into(),
        unit: "MHz".into(),
        start: -50.0,
        end: 50.0,
        count: 3,
        spacing: Spacing::Linear,
        links: Vec::new(),
    }]
}

/// The head of a 3-point scan of demo.yaml over [`axes`] with these level
/// ids, shard and tolerance override.
fn head_of(ids: &[String], shard: Option<Shard>, tolerance: Option<f64>, open: bool) -> String {
    let prov = Provenance::new("demo.yaml", "ab12");
    let ax = axes();
    head(&ScanHead {
        provenance: &prov,
        axes: &ax,
        tolerance,
        default_tolerance: 1e-3,
        points: 3,
        hash: "f00d",
        shard,
        level_ids: ids,
        open,
    })
}

fn ge() -> Vec<String> {
    vec!["g".to_string(), "e".to_string()]
}

#[test]
fn head_names_columns_with_units_and_states_the_scan() {
    let ids = ge();
    let text = head_of(&ids, Some(Shard { k: 2, n: 4 }), None, false);
    assert!(text.ends_with(
        "\nfields.probe.tuned.detuning [MHz],P(g),P(e),max_spectator,flagged,est(g),est(e)\n"
    ));
    assert!(text.contains(
        "\n# vary 1: fields.probe.tuned.detuning from -5e1 to 5e1 MHz, 3 points, linear\n"
    ));
    let parsed = split(&text).unwrap();
    assert_eq!(parsed.shard_text(), Some("2/4"));
    assert_eq!(parsed.hash(), Some("f00d"));
    assert_eq!(parsed.grid_points(), Some(3));
    assert!(parsed.rows.is_empty() && parsed.tail.is_empty());
    assert_eq!(parsed.body_start, text.len());
    assert_eq!(parsed.common_comments().len(), parsed.comments.len() - 1);
    assert!(text
        .contains("\n# tolerance 1e-3 (the scheme's default; per-level tolerances still apply)\n"));
    // The head reads back to what it states.
    let info = read_head(&parsed).unwrap();
    assert_eq!(info.axes, axes());
    assert_eq!(info.level_ids, ids);
    assert_eq!(info.tolerance, 1e-3);
    assert_eq!(info.scheme_file, "demo.yaml");
    assert!(!info.open);
}

#[test]
fn open_head_ends_in_lost_and_scattered_photons_and_reads_back() {
    let ids = ge();
    let closed = head_of(&ids, None, None, false);
    let open = head_of(&ids, None, None, true);
    // Only the column line differs.
    assert_eq!(
        first_difference(&closed, &open).map(|d| d.0),
        Some(closed.lines().count())
    );
    assert!(open.ends_with(
        "\nfields.probe.tuned.detuning [MHz],P(g),P(e),max_spectator,flagged,est(g),est(e),lost,scattered_photons\n"
    ));
    let info = read_head(&split(&open).unwrap()).unwrap();
    assert!(info.open);
    assert_eq!(info.level_ids, ids);
    // A header with anything else after the estimates is refused.
    let odd = open.replace(",lost,scattered_photons\n", ",lost\n");
    assert!(read_head(&split(&odd).unwrap())
        .unwrap_err()
        .starts_with("unexpected column header"));
}

fn sample_row() -> ScanRow {
    ScanRow {
        coords: vec![-49.0, 1.0 / 3.0],
        populations: vec![0.1 + 0.2, 1e-300],
        max_spectator: 2.5e-7,
        flagged: 3,
        estimates: vec![None, Some(std::f64::consts::PI)],
        lost: None,
        scattered_photons: None,
    }
}

#[test]
fn rows_round_trip_exactly() {
    let r = sample_row();
    let line = row(&r, false);
    assert_eq!(
        line,
        "-4.9e1,3.333333333333333e-1,3.0000000000000004e-1,1e-300,2.5e-7,3,,3.141592653589793e0\n"
    );
    assert_eq!(parse_row(line.trim_end(), 2, 2, false).unwrap(), r);
    assert!(line.starts_with(&coords_prefix(&r.coords)));
    assert!(parse_row("1,2,3", 2, 2, false).is_err());
    assert!(parse_row("1,x,1,1,0,0,,1", 2, 2, false).is_err());
    assert!(parse_row("1,NaN,1,1,0,0,,1", 2, 2, false).is_err());
    // A row of a closed head leaves out what it knows of the open columns.
    let known = ScanRow {
        lost: Some(0.5),
        scattered_photons: Some(2.0),
        ..r.clone()
    };
    assert_eq!(row(&known, false), line);
}

#[test]
fn open_rows_round_trip_exactly_and_need_their_columns() {
    let r = ScanRow {
        lost: Some(1.0 / 7.0),
        scattered_photons: Some(12.5),
        ..sample_row()
    };
    let line = row(&r, true);
    assert!(line.ends_with(",,3.141592653589793e0,1.4285714285714285e-1,1.25e1\n"));
    assert_eq!(parse_row(line.trim_end(), 2, 2, true).unwrap(), r);
    // Unknown values are empty fields and read back as unknown.
    let blank = sample_row();
    let line = row(&blank, true);
    assert!(line.ends_with(",3.141592653589793e0,,\n"), "{line}");
    assert_eq!(parse_row(line.trim_end(), 2, 2, true).unwrap(), blank);
    // The column count follows the head.
    assert!(parse_row(row(&r, false).trim_end(), 2, 2, true).is_err());
    assert!(parse_row(row(&r, true).trim_end(), 2, 2, false).is_err());
    assert!(parse_row(&line.trim_end().replace(",,", ",x,"), 2, 2, true).is_err());
}

#[test]
fn split_keeps_a_cut_row_apart() {
    let text = "# a\nx,y\n1,2\n3,4\n5,";
    let s = split(text).unwrap();
    assert_eq!(s.rows, vec!["1,2", "3,4"]);
    assert_eq!(s.tail, "5,");
    assert_eq!(s.body_start, "# a\nx,y\n".len());
    assert!(split("# only comments\n").is_err());
    assert_eq!(first_difference("a\nb\n", "a\nc\n"), Some((2, "b", "c")));
    assert_eq!(first_difference("a\n", "a\n"), None);
}

#[test]
fn head_quotes_ids_it_cannot_read_back_and_names_an_override() {
    // Scheme ids are letters, digits and _ ' + - only; should a wider id
    // reach the writer, it is quoted, and reading back refuses it
    // instead of misreading the columns.
    let ids = vec!["g".to_string(), "e, \"F=2\"".to_string()];
    let text = head_of(&ids, None, Some(1e-4), false);
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

fn tune_report(found: Option<TuneFound>) -> TuneReport {
    TuneReport {
        provenance: Provenance::new("demo.yaml", "ab12"),
        axis: axes()[0].clone(),
        goal: TuneGoal::Maximize { level: 1 },
        level_ids: ge(),
        roles: vec![crate::report::Role::Initial, crate::report::Role::Target],
        coarse_points: 41,
        refine_solves: 14,
        found,
    }
}

#[test]
fn tune_summary_states_value_bracket_and_solves() {
    let r = tune_report(Some(TuneFound {
        value: 0.25,
        lo: 0.0,
        hi: 1.0,
        at_edge: false,
        row: ScanRow {
            coords: vec![0.25],
            populations: vec![0.0, 1.0],
            max_spectator: 0.0,
            flagged: 0,
            estimates: vec![None, Some(1.2)],
            lost: Some(0.0),
            scattered_photons: Some(0.0),
        },
    }));
    let t = tune_text(&r);
    assert!(t.contains("maximise P(e)"), "{t}");
    assert!(
        t.contains("value: 2.500000000e-1 MHz +- 7.5e-1 MHz (bracket [0.000000000e0 MHz, 1.000000000e0 MHz])"),
        "{t}"
    );
    assert!(
        t.contains("P(e) = 1.0000000000e0  [target]  (estimate 1.200000e0)"),
        "{t}"
    );
    assert!(
        t.contains("solves: 55 (41 on the coarse grid, 14 refining)"),
        "{t}"
    );
}

#[test]
fn tune_summary_without_an_answer_says_what_to_change() {
    let r = TuneReport {
        goal: TuneGoal::Shortest { goal: 0.9 },
        coarse_points: 21,
        refine_solves: 0,
        ..tune_report(None)
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

#[test]
fn linked_paths_have_their_columns_and_read_back() {
    let mut ax = axes();
    ax[0].links.push(crate::scan::Link {
        path: "fields.pump.tuned.detuning".into(),
        unit: "GHz".into(),
        start: 1.0,
        end: -1.0,
    });
    let prov = Provenance::new("demo.yaml", "ab12");
    let ids = ge();
    let text = head(&ScanHead {
        provenance: &prov,
        axes: &ax,
        tolerance: None,
        default_tolerance: 1e-3,
        points: 3,
        hash: "00",
        shard: None,
        level_ids: &ids,
        open: false,
    });
    assert!(text.contains("\n# with 1: fields.pump.tuned.detuning from 1e0 to -1e0 GHz\n"));
    assert!(
        text.contains("fields.probe.tuned.detuning [MHz],fields.pump.tuned.detuning [GHz],P(g)")
    );
    let info = read_head(&split(&text).unwrap()).unwrap();
    assert_eq!(info.axes, ax);
    assert_eq!(info.level_ids, ids);
}
