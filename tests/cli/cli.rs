//! The binary end to end: every demo scheme through every command and
//! format, exit statuses, and files written whole or not at all.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_levelplan"))
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("the binary runs")
}

fn demos() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> =
        std::fs::read_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("level_schemes"))
            .expect("level_schemes/ exists")
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
            .collect();
    v.sort();
    v
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("levelplan-cli-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn there_are_at_least_four_demos() {
    assert!(demos().len() >= 4, "found {:?}", demos());
}

#[test]
fn inspect_every_demo_in_every_format() {
    for demo in demos() {
        let d = demo.to_str().unwrap();
        for fmt in ["text", "markdown", "latex", "csv", "json"] {
            let out = run(&["inspect", d, "--format", fmt]);
            assert_eq!(
                out.status.code(),
                Some(0),
                "{d} {fmt}: {}",
                String::from_utf8_lossy(&out.stderr)
            );
            let s = String::from_utf8(out.stdout).unwrap();
            assert!(!s.is_empty());
            assert!(!s.contains("NaN") && !s.contains("inf"), "{d} {fmt}");
        }
        let out = run(&["inspect", d, "--format", "json"]);
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        for l in v["levels"].as_array().unwrap() {
            assert!(l["id"].is_string() && l["energy_hz"].is_number());
        }
        for dr in v["drives"].as_array().unwrap() {
            for k in [
                "field",
                "lower",
                "upper",
                "transition_hz",
                "detuning_mhz",
                "rabi_mhz",
                "included",
            ] {
                assert!(!dr[k].is_null(), "{d}: drive key {k} missing");
            }
        }
    }
}

#[test]
fn vet_every_demo_in_every_format() {
    for demo in demos() {
        let d = demo.to_str().unwrap();
        let mut codes = Vec::new();
        for fmt in ["text", "markdown", "latex", "csv", "json"] {
            let out = run(&["vet", d, "--format", fmt]);
            let code = out.status.code();
            assert!(
                matches!(code, Some(0) | Some(3)),
                "{d} {fmt}: {:?} {}",
                code,
                String::from_utf8_lossy(&out.stderr)
            );
            codes.push(code);
            let s = String::from_utf8(out.stdout).unwrap();
            assert!(!s.contains("NaN"), "{d} {fmt}");
            assert!(s.contains("levelplan"), "{d} {fmt}: provenance missing");
        }
        assert!(
            codes.windows(2).all(|w| w[0] == w[1]),
            "{d}: exit status depends on the format"
        );
        let out = run(&["vet", d, "--format", "json"]);
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        for k in ["tolerance", "norm_error", "lost_population", "levels"] {
            assert!(!v[k].is_null(), "{d}: key {k}");
        }
        let mut flagged = 0;
        for l in v["levels"].as_array().unwrap() {
            for k in [
                "id",
                "role",
                "final_population",
                "peak_population",
                "flagged",
                "sources",
            ] {
                assert!(!l[k].is_null(), "{d}: level key {k}");
            }
            let role = l["role"].as_str().unwrap();
            assert!(["initial", "target", "spectator"].contains(&role));
            if role == "initial" {
                assert!(l["first_order_population"].is_null());
            } else {
                assert!(l["first_order_population"].is_number());
            }
            if l["flagged"].as_bool().unwrap() {
                flagged += 1;
                assert_eq!(role, "spectator");
                let tol = l["tolerance"].as_f64().unwrap();
                assert!(l["final_population"].as_f64().unwrap() > tol);
            }
        }
        assert_eq!(codes[0], Some(if flagged > 0 { 3 } else { 0 }), "{d}");
    }
}

#[test]
fn missing_scheme_is_bad_input_and_writes_nothing() {
    let dir = scratch("missing");
    let target = dir.join("report.md");
    let out = run(&[
        "vet",
        "no/such/scheme.yaml",
        "--format",
        "markdown",
        "--out",
        target.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("no/such/scheme.yaml"), "{err}");
    assert!(err.contains("expected a readable scheme file"), "{err}");
    assert!(err.contains("no such file"), "{err}");
    assert!(!target.exists());
}

#[test]
fn bad_option_values_are_bad_input() {
    let demo = demos()[0].clone();
    let out = run(&["vet", demo.to_str().unwrap(), "--tolerance", "-1"]);
    assert_eq!(out.status.code(), Some(2));
    let out = run(&["vet", demo.to_str().unwrap(), "--format", "docx"]);
    assert_eq!(out.status.code(), Some(2));
    let out = run(&["evolve", demo.to_str().unwrap(), "--samples", "1"]);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn vet_out_file_matches_stdout() {
    let demo = demos()[0].clone();
    let dir = scratch("out");
    let target = dir.join("table.tex");
    let a = run(&[
        "vet",
        demo.to_str().unwrap(),
        "--format",
        "latex",
        "--out",
        target.to_str().unwrap(),
    ]);
    assert!(matches!(a.status.code(), Some(0) | Some(3)));
    assert!(a.stdout.is_empty());
    let b = run(&["vet", demo.to_str().unwrap(), "--format", "latex"]);
    assert_eq!(std::fs::read(&target).unwrap(), b.stdout);
    let s = String::from_utf8(b.stdout).unwrap();
    assert!(s.contains("\\toprule") && s.contains("\\bottomrule"));
}

#[test]
fn evolve_ends_exactly_at_the_window_end_with_the_vet_populations() {
    for demo in demos() {
        let d = demo.to_str().unwrap();
        let dir = scratch("evolve");
        let csv = dir.join("run.csv");
        let svg = dir.join("run.svg");
        let out = run(&[
            "evolve",
            d,
            "--samples",
            "51",
            "--out",
            csv.to_str().unwrap(),
            "--plot",
            svg.to_str().unwrap(),
            "--log",
        ]);
        assert_eq!(
            out.status.code(),
            Some(0),
            "{d}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let text = std::fs::read_to_string(&csv).unwrap();
        let rows: Vec<&str> = text.lines().filter(|l| !l.starts_with('#')).collect();
        assert!(rows[0].starts_with("time_s,"));
        assert_eq!(rows.len(), 52);
        let svg_text = std::fs::read_to_string(&svg).unwrap();
        assert!(svg_text.starts_with("<svg") && svg_text.contains("tolerance"));

        let insp: serde_json::Value =
            serde_json::from_slice(&run(&["inspect", d, "--format", "json"]).stdout).unwrap();
        let end = insp["window_s"][1].as_f64().unwrap();
        let last: Vec<f64> = rows[51].split(',').map(|x| x.parse().unwrap()).collect();
        assert_eq!(last[0], end, "{d}: last row is not the window end");

        let vet: serde_json::Value =
            serde_json::from_slice(&run(&["vet", d, "--format", "json"]).stdout).unwrap();
        for (k, l) in vet["levels"].as_array().unwrap().iter().enumerate() {
            // evolve ends at the window end; vet judges at the readout and
            // then also gives the window-end population.
            let p = l
                .get("window_end_population")
                .unwrap_or(&l["final_population"])
                .as_f64()
                .unwrap();
            assert!(
                (p - last[k + 1]).abs() < 1e-7,
                "{d}: level {k}: vet {p} vs evolve {}",
                last[k + 1]
            );
        }
    }
}

#[test]
fn help_lists_exit_statuses_and_safety() {
    let out = run(&["vet", "--help"]);
    let s = String::from_utf8(out.stdout).unwrap();
    assert!(s.contains("Exit status") && s.contains("Example"));
    let out = run(&["--help"]);
    let s = String::from_utf8(out.stdout).unwrap();
    assert!(s.contains("IEC 60825-1"));
}

#[test]
fn goal_judges_targets_and_sets_the_exit_status() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let demo = root.join("level_schemes/lambda_raman.yaml");
    let d = demo.to_str().unwrap();
    let json = |goal: &str| -> (Option<i32>, serde_json::Value) {
        let out = run(&["vet", d, "--format", "json", "--goal", goal]);
        (
            out.status.code(),
            serde_json::from_slice(&out.stdout).unwrap(),
        )
    };
    let (_, free) = json("0.5");
    let p = free["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["role"] == "target")
        .unwrap()["final_population"]
        .as_f64()
        .unwrap();
    // Just below and just above the target's own final population.
    let (code, v) = json(&format!("{}", p * 0.999));
    assert_eq!(code, Some(0));
    assert_eq!(v["targets_below_goal"], 0);
    let (code, v) = json(&format!("{}", (p * 1.001).min(1.0)));
    assert_eq!(code, Some(3));
    assert_eq!(v["targets_below_goal"], 1);
    let out = run(&["vet", d, "--goal", "1.5"]);
    assert_eq!(out.status.code(), Some(2));
}

/// Regression: `levelplan evolve ... 2>&1 | head -c 100` ended with a panic
/// and status 101 when the reader closed the pipe. A closed stdout (and a
/// closed stderr) now end the run quietly with status 0.
#[test]
fn closed_pipe_ends_quietly() {
    use std::io::Read;
    use std::process::Stdio;
    for close_stderr_too in [false, true] {
        let mut child = bin()
            .args([
                "evolve",
                "level_schemes/two_level_calibration.yaml",
                "--samples",
                "200000",
            ])
            .stdout(Stdio::piped())
            .stderr(if close_stderr_too {
                Stdio::piped()
            } else {
                Stdio::inherit()
            })
            .spawn()
            .unwrap();
        let mut head = [0u8; 100];
        child
            .stdout
            .as_mut()
            .unwrap()
            .read_exact(&mut head)
            .unwrap();
        drop(child.stdout.take());
        drop(child.stderr.take());
        let status = child.wait().unwrap();
        assert_eq!(status.code(), Some(0), "closed pipe gave {status:?}");
        assert!(head.starts_with(b"# levelplan"));
    }
}

/// An invented rectangular pi pulse whose neighbour n leaks (as in
/// `level_schemes/cookbook/fast_pi_rectangular.yaml`), written to a file.
fn leaky_pi_scheme(dir: &Path) -> PathBuf {
    let p = dir.join("leaky_pi.yaml");
    std::fs::write(
        &p,
        "levels:\n  g: {energy: 0 cm^-1}\n  n: {energy: 507.290000 THz}\n  \
         e: {energy: 507.290150 THz}\ninitial: g\ntargets: [e]\ntolerance: 1e-3\n\
         couplings:\n  - {between: [g, e], dipole: 2.2 ea0}\n  - {between: [g, n], dipole: 1.5 ea0}\n\
         fields:\n  probe:\n    tuned: {to: [g, e], detuning: 0 MHz}\n    \
         area: {on: [g, e], value: pi}\n    \
         envelope: {shape: rectangular, start: 2 ns, duration: 8 ns}\n\
         window: {start: 0 ns, end: 12 ns}\n",
    )
    .unwrap();
    p
}

#[test]
fn step_budget_flag_reaches_every_propagating_command() {
    let d = scratch("step-budget");
    let s = leaky_pi_scheme(&d);
    let s = s.to_str().unwrap();
    let vary = "fields.probe.tuned.detuning=-1MHz..1MHz:3";
    let cases: [&[&str]; 4] = [
        &["vet", s],
        &["evolve", s, "--samples", "5"],
        &["scan", s, "--vary", vary],
        &["tune", s, "--vary", vary, "--maximize", "e"],
    ];
    for args in cases {
        // The main run has 3 segments: a budget of 1 refuses it.
        let out = run(&[args, &["--step-budget", "1"]].concat());
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{args:?}: {err}");
        assert!(err.contains("needs more than 1 steps"), "{args:?}: {err}");
        assert!(err.contains("--step-budget"), "{args:?}: {err}");
        assert!(out.stdout.is_empty() || args[0] == "scan", "{args:?}");
        let out = run(&[args, &["--step-budget", "100000000"]].concat());
        let want = if args[0] == "vet" { 3 } else { 0 };
        assert_eq!(out.status.code(), Some(want), "{args:?}");
        for bad in ["0", "ten", "1.5"] {
            let out = run(&[args, &["--step-budget", bad]].concat());
            let err = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{args:?} {bad}: {err}");
            assert!(err.contains("--step-budget"), "{args:?} {bad}: {err}");
        }
    }
}

#[test]
fn a_remedy_not_checked_keeps_the_report_and_its_exit_status() {
    let d = scratch("remedy-unchecked");
    let s = leaky_pi_scheme(&d);
    let s = s.to_str().unwrap();
    // 10 steps hold the exact main run, not the adaptive Gaussian remedy.
    let out = run(&["vet", s, "--step-budget", "10"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(3),
        "the leak decides: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        text.contains("(not checked: the run needs more than 10 steps"),
        "{text}"
    );
    assert!(text.contains("verdict: 1 spectator(s) above tolerance"));
    let full = run(&["vet", s]);
    assert_eq!(full.status.code(), Some(3));
    assert!(!String::from_utf8_lossy(&full.stdout).contains("not checked"));
    let out = run(&["vet", s, "--step-budget", "10", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let unchecked = &v["levels"][1]["remedy"]["not_checked"];
    assert_eq!(unchecked[0]["check"], "gaussian");
    assert_eq!(unchecked[1]["check"], "blackman");
    assert!(v["levels"][1]["remedy"]["exact_population_at_length"].is_number());
}
