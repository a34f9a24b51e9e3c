//! `docs/validation.md` cannot drift from the test suite.
//!
//! The table there has one row per physics check: `| check | source |
//! tolerance | test |`, the test written as `` `file::function` ``. This test
//! parses it and fails when
//! - a row names a file or a `#[test]` function that does not exist,
//! - a row has an empty cell (in particular an empty source),
//! - a `#[test]` function of the physics test files is neither in the table
//!   nor in `NOT_PHYSICS` below (each entry with its reason),
//! - an entry of `NOT_PHYSICS` no longer exists, or is also in the table.
//!
//! The physics test files: every module of the `physics` test binary
//! (`tests/physics/*.rs` but its `main.rs` and this file), and the unit tests
//! of `src/model/**`, `src/units/mod.rs`, `src/hamiltonian.rs`,
//! `src/report.rs`, `src/tune.rs`, `src/solve/*.rs`, `src/estimate/*.rs`,
//! and the atomic-structure tests under `src/atom/`.
//! New files matching these patterns are covered automatically.

use std::collections::BTreeSet;
use std::path::Path;

/// Tests in the physics files that check no physics, with the reason.
const NOT_PHYSICS: &[(&str, &str)] = &[
    (
        "src/atom/angular/tests/published.rs::conversion_survives_huge_numerators_and_denominators",
        "number conversion of exact values",
    ),
    (
        "src/atom/angular/tests/published.rs::d2_line_coefficients_are_fast",
        "speed of the coefficients",
    ),
    (
        "src/atom/angular/tests/rules.rs::any_i32_input_is_answered_without_panic",
        "error path",
    ),
    (
        "tests/physics/open_reference.rs::every_open_fixture_is_checked",
        "bookkeeping: every fixture file has a test",
    ),
    (
        "tests/physics/open_reference.rs::the_comparison_accepts_the_reference_and_catches_changes",
        "checks the comparison code, not the physics",
    ),
    (
        "tests/physics/propagation_budget.rs::step_budget_fails_fast_naming_the_drive",
        "error path: the step budget stops at once and names the drive",
    ),
    (
        "tests/physics/propagation_budget.rs::step_budget_is_enforced_during_the_run",
        "bookkeeping of the step budget",
    ),
    (
        "tests/physics/propagation_budget.rs::exact_method_names_why_it_does_not_apply",
        "error message",
    ),
    (
        "tests/physics/propagation_budget.rs::non_finite_input_is_an_error_not_a_nan",
        "error path",
    ),
    (
        "tests/physics/propagation_budget.rs::empty_window_is_refused_by_the_builder",
        "error path",
    ),
    (
        "tests/physics/propagation_dop853.rs::naive_dop853_with_time_dependent_rhs_is_wrong",
        "documents a defect of the ode_solvers dependency",
    ),
    (
        "tests/physics/estimate.rs::unreached_level_is_zero",
        "bookkeeping of the order column",
    ),
    (
        "tests/physics/estimate.rs::bad_models_are_errors_not_nan",
        "error path",
    ),
    (
        "tests/physics/estimate_remedy.rs::remedy_arguments_are_checked",
        "argument checks",
    ),
    (
        "src/estimate/rate_remedy.rs::the_remedy_is_none_where_the_field_cannot_cure_or_a_number_is_bad",
        "error paths and refusals of the decay-fed remedy",
    ),
    (
        "tests/physics/demo_schemes.rs::every_demo_parses_and_is_labelled_illustrative",
        "labels and safety notes of the demo files",
    ),
    (
        "tests/physics/demo_schemes.rs::complete_example_in_the_format_reference_parses",
        "the format reference's example parses",
    ),
    (
        "src/model/envelope/tests.rs::sech_is_stable_far_out",
        "numerical robustness (no overflow), no reference value",
    ),
    (
        "src/model/builder.rs::a_valid_model_builds_with_its_window_from_the_envelopes",
        "builder bookkeeping (defaults)",
    ),
    (
        "src/model/builder.rs::broken_invariants_are_typed_errors",
        "error path",
    ),
    (
        "src/model/builder.rs::solver_settings_and_envelope_scales_are_checked",
        "error path",
    ),
    ("src/units/mod.rs::splits_sign_exponent_and_unit", "parsing"),
    (
        "src/units/mod.rs::wrong_dimension_names_both",
        "error messages",
    ),
    (
        "src/solve/plan.rs::samples_end_exactly",
        "sample bookkeeping",
    ),
    (
        "src/tune.rs::maximum_at_the_range_end_is_marked",
        "search bookkeeping",
    ),
    (
        "src/tune.rs::errors_of_the_objective_come_back",
        "error path",
    ),
    (
        "src/tune.rs::bisection_finds_the_feasibility_boundary",
        "bisection on x >= sqrt 2, a numerical method without physics",
    ),
    ("src/tune.rs::coarse_grid_ends_exactly", "grid bookkeeping"),
    (
        "src/atom/structure/tests.rs::bad_inputs_are_errors_not_panics",
        "error path",
    ),
    (
        "src/atom/structure/tests.rs::d2_build_time",
        "timing note, no physics",
    ),
];

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Names of the `#[test]` functions of a Rust source file.
fn test_functions(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut rest = text;
    while let Some(i) = rest.find("#[test]") {
        rest = &rest[i + "#[test]".len()..];
        let Some(j) = rest.find("fn ") else { break };
        let name: String = rest[j + 3..]
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
            .collect();
        out.push(name);
        rest = &rest[j + 3..];
    }
    out
}

/// The physics test files, as paths relative to the repository root.
fn physics_files() -> Vec<String> {
    let mut files = Vec::new();
    let list = |dir: &str| -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(root().join(dir))
            .unwrap_or_else(|e| panic!("{dir}: {e}"))
            .filter_map(|e| e.ok())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".rs"))
            .collect();
        v.sort();
        v
    };
    for name in list("tests/physics") {
        if name != "main.rs" && name != "validation_table.rs" {
            files.push(format!("tests/physics/{name}"));
        }
    }
    for f in [
        "src/units/mod.rs",
        "src/hamiltonian.rs",
        "src/report.rs",
        "src/tune.rs",
    ] {
        if root().join(f).is_file() {
            files.push(f.to_string());
        }
    }
    for dir in [
        "src/model",
        "src/model/envelope",
        "src/solve",
        "src/estimate",
        "src/atom/angular",
        "src/atom/angular/tests",
        "src/atom/dipole",
        "src/atom/structure",
    ] {
        for name in list(dir) {
            files.push(format!("{dir}/{name}"));
        }
    }
    files
}

/// One row of the table: its cells (check, source, tolerance, test) and the
/// test split into file and function.
struct Row {
    line: usize,
    cells: Vec<String>,
    file: String,
    function: String,
}

fn parse_table(doc: &str) -> Vec<Row> {
    let lines: Vec<&str> = doc.lines().collect();
    let header = lines
        .iter()
        .position(|l| l.trim() == "| check | source | tolerance | test |")
        .expect("the table header `| check | source | tolerance | test |`");
    assert!(
        lines[header + 1].trim_start().starts_with("|---"),
        "no separator line under the table header"
    );
    let mut rows = Vec::new();
    for (k, l) in lines.iter().enumerate().skip(header + 2) {
        let l = l.trim();
        if !l.starts_with('|') {
            break;
        }
        let line = k + 1;
        let inner = l
            .strip_prefix('|')
            .and_then(|s| s.strip_suffix('|'))
            .unwrap_or_else(|| panic!("line {line}: a row must start and end with '|'"));
        let cells: Vec<String> = inner.split('|').map(|c| c.trim().to_string()).collect();
        assert_eq!(
            cells.len(),
            4,
            "line {line}: expected 4 cells (check, source, tolerance, test), found {}; \
             write abs(x) rather than a '|' inside a cell",
            cells.len()
        );
        let test = cells[3]
            .strip_prefix('`')
            .and_then(|s| s.strip_suffix('`'))
            .unwrap_or_else(|| panic!("line {line}: the test cell must be `file::function`"));
        let (file, function) = test
            .split_once("::")
            .map(|(f, n)| (f.to_string(), n.to_string()))
            .unwrap_or_else(|| panic!("line {line}: '{test}' is not file::function"));
        rows.push(Row {
            line,
            cells,
            file,
            function,
        });
    }
    rows
}

#[test]
fn test_functions_are_found() {
    let src =
        "#[test]\nfn a() {}\n// fn not_a_test\n#[test]\n#[ignore]\nfn b_2() {}\nfn helper() {}\n";
    assert_eq!(test_functions(src), ["a", "b_2"]);
}

#[test]
fn validation_table_matches_the_test_suite() {
    let doc =
        std::fs::read_to_string(root().join("docs/validation.md")).expect("docs/validation.md");
    let rows = parse_table(&doc);
    // The suite has about seventy physics checks; far fewer means the table
    // was cut or the parser broke.
    assert!(rows.len() >= 60, "only {} rows", rows.len());

    let mut problems = Vec::new();
    let mut named = BTreeSet::new();
    for r in &rows {
        for (cell, what) in r.cells.iter().zip(["check", "source", "tolerance", "test"]) {
            let c = cell.trim_matches(|ch: char| ch == '-' || ch == '?' || ch.is_whitespace());
            if c.is_empty() || c.eq_ignore_ascii_case("todo") {
                problems.push(format!("line {}: the {what} cell is empty", r.line));
            }
        }
        let path = root().join(&r.file);
        match std::fs::read_to_string(&path) {
            Err(_) => problems.push(format!("line {}: no file {}", r.line, r.file)),
            Ok(text) => {
                if !test_functions(&text).contains(&r.function) {
                    problems.push(format!(
                        "line {}: {} has no #[test] fn {}",
                        r.line, r.file, r.function
                    ));
                }
            }
        }
        named.insert(format!("{}::{}", r.file, r.function));
    }

    let allowed: BTreeSet<String> = NOT_PHYSICS.iter().map(|(t, _)| t.to_string()).collect();
    let mut covered = BTreeSet::new();
    for f in physics_files() {
        let text = std::fs::read_to_string(root().join(&f)).unwrap();
        for name in test_functions(&text) {
            let id = format!("{f}::{name}");
            if !named.contains(&id) && !allowed.contains(&id) {
                problems.push(format!(
                    "{id} is a test of a physics file but not in docs/validation.md \
                     (add a row) nor in NOT_PHYSICS (add it there with the reason)"
                ));
            }
            covered.insert(id);
        }
    }
    for (id, reason) in NOT_PHYSICS {
        assert!(!reason.trim().is_empty(), "{id}: give the reason");
        if !covered.contains(*id) {
            problems.push(format!("NOT_PHYSICS names {id}, which no longer exists"));
        }
        if named.contains(*id) {
            problems.push(format!("{id} is both in the table and in NOT_PHYSICS"));
        }
    }
    assert!(
        problems.is_empty(),
        "docs/validation.md is out of step with the suite:\n{}",
        problems.join("\n")
    );
}
