//! The JSON contract byte for byte: `vet` and `inspect --format json` of every
//! demo scheme, the test fixtures and a few option variants, against files
//! written by the binary before the reports derived `Serialize`.
//!
//! JSON keys are added, never renamed (docs/output-format.md): a failure here
//! means a key, its order, its unit or a number changed. If a change is
//! deliberate (a new key, a physics correction), regenerate the files with
//! `LEVELPLAN_BLESS_JSON=1 cargo test --release --test cli json_golden::` and
//! say so in the commit message.

use std::path::Path;
use std::process::Command;

const GOLDEN: &str = "tests/fixtures/json_golden";

/// (golden file, arguments before `--format json`, expected exit status).
/// Scheme paths are relative to the crate root: they are part of the
/// provenance the JSON records.
const CASES: &[(&str, &[&str], i32)] = &[
    (
        "hyperfine_manifold.vet.json",
        &["vet", "level_schemes/hyperfine_manifold.yaml"],
        3,
    ),
    (
        "hyperfine_manifold.inspect.json",
        &["inspect", "level_schemes/hyperfine_manifold.yaml"],
        0,
    ),
    (
        "sigma_pumping.vet.json",
        &["vet", "level_schemes/sigma_pumping.yaml"],
        3,
    ),
    (
        "sigma_pumping.inspect.json",
        &["inspect", "level_schemes/sigma_pumping.yaml"],
        0,
    ),
    (
        "ladder_two_step.vet.json",
        &["vet", "level_schemes/ladder_two_step.yaml"],
        0,
    ),
    (
        "ladder_two_step.inspect.json",
        &["inspect", "level_schemes/ladder_two_step.yaml"],
        0,
    ),
    (
        "lambda_raman.vet.json",
        &["vet", "level_schemes/lambda_raman.yaml"],
        0,
    ),
    (
        "lambda_raman.inspect.json",
        &["inspect", "level_schemes/lambda_raman.yaml"],
        0,
    ),
    (
        "lambda_raman.vet_tolerance_goal.json",
        &[
            "vet",
            "level_schemes/lambda_raman.yaml",
            "--tolerance",
            "1e-6",
            "--goal",
            "0.99",
        ],
        0,
    ),
    (
        "two_level_calibration.vet.json",
        &["vet", "level_schemes/two_level_calibration.yaml"],
        0,
    ),
    (
        "two_level_calibration.inspect.json",
        &["inspect", "level_schemes/two_level_calibration.yaml"],
        0,
    ),
    (
        "lambda_pumping.vet.json",
        &["vet", "level_schemes/lambda_pumping.yaml"],
        3,
    ),
    (
        "lambda_pumping.inspect.json",
        &["inspect", "level_schemes/lambda_pumping.yaml"],
        0,
    ),
    (
        "fixture_two_level_scan.vet.json",
        &["vet", "tests/fixtures/two_level_scan.yaml"],
        0,
    ),
    (
        "fixture_two_level_scan.inspect.json",
        &["inspect", "tests/fixtures/two_level_scan.yaml"],
        0,
    ),
    (
        "edge.vet.json",
        &["vet", "tests/fixtures/json_golden/edge.yaml"],
        0,
    ),
    (
        "edge.inspect.json",
        &["inspect", "tests/fixtures/json_golden/edge.yaml"],
        0,
    ),
    (
        "edge.vet_tolerance_goal.json",
        &[
            "vet",
            "tests/fixtures/json_golden/edge.yaml",
            "--tolerance",
            "1e-17",
            "--goal",
            "0.5",
        ],
        3,
    ),
];

/// The cookbook schemes: (name, vet exit status).
const COOKBOOK: &[(&str, i32)] = &[
    ("fast_pi_blackman", 0),
    ("fast_pi_gaussian", 0),
    ("fast_pi_rectangular", 3),
    ("ladder_compensated", 0),
    ("ladder_far_detuned", 0),
    ("ladder_first_plan", 0),
    ("raman_balanced", 0),
    ("raman_cross_legs", 0),
    ("raman_own_legs", 0),
    ("raman_retuned", 0),
    ("sigma_pumping_pure", 0),
    ("velocity_ladder", 0),
];

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Runs the binary and compares stdout with the golden file; returns a
/// description of the first difference, if any.
fn check(golden: &str, args: &[&str], code: i32) -> Option<String> {
    let out = Command::new(env!("CARGO_BIN_EXE_levelplan"))
        .current_dir(root())
        .args(args)
        .args(["--format", "json"])
        .output()
        .expect("the binary runs");
    let stderr = String::from_utf8_lossy(&out.stderr);
    if out.status.code() != Some(code) {
        return Some(format!(
            "{args:?}: exit status {:?}, expected {code}\n{stderr}",
            out.status.code()
        ));
    }
    let path = root().join(GOLDEN).join(golden);
    if std::env::var_os("LEVELPLAN_BLESS_JSON").is_some() {
        std::fs::write(&path, &out.stdout).expect("golden file written");
        return None;
    }
    let want = std::fs::read(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    if want == out.stdout {
        return None;
    }
    let got = String::from_utf8_lossy(&out.stdout);
    let want = String::from_utf8_lossy(&want);
    let line = want
        .lines()
        .zip(got.lines())
        .position(|(a, b)| a != b)
        .unwrap_or_else(|| want.lines().count().min(got.lines().count()));
    Some(format!(
        "{golden} ({args:?}) differs at line {}:\n  expected: {:?}\n  got:      {:?}",
        line + 1,
        want.lines().nth(line).unwrap_or("<end>"),
        got.lines().nth(line).unwrap_or("<end>"),
    ))
}

#[test]
fn json_output_matches_the_golden_files() {
    let mut failures = Vec::new();
    for (golden, args, code) in CASES {
        failures.extend(check(golden, args, *code));
    }
    for (name, code) in COOKBOOK {
        let scheme = format!("level_schemes/cookbook/{name}.yaml");
        for (cmd, code) in [("vet", *code), ("inspect", 0)] {
            let golden = format!("cookbook_{name}.{cmd}.json");
            failures.extend(check(&golden, &[cmd, &scheme], code));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
}

/// Every scheme shipped in level_schemes/ has its golden files, so a new
/// demo cannot slip past the contract.
#[test]
fn every_demo_scheme_has_golden_files() {
    let mut missing = Vec::new();
    for (dir, prefix) in [
        ("level_schemes", ""),
        ("level_schemes/cookbook", "cookbook_"),
    ] {
        for e in std::fs::read_dir(root().join(dir)).expect("demo directory") {
            let p = e.expect("directory entry").path();
            if p.extension().is_some_and(|x| x == "yaml") {
                let stem = p.file_stem().and_then(|s| s.to_str()).expect("utf-8 name");
                for cmd in ["vet", "inspect"] {
                    let g = root()
                        .join(GOLDEN)
                        .join(format!("{prefix}{stem}.{cmd}.json"));
                    if !g.exists() {
                        missing.push(g.display().to_string());
                    }
                }
            }
        }
    }
    assert!(missing.is_empty(), "no golden file: {missing:?}");
}
