//! Every input limit through the binary: refused with the documented exit
//! status (2 bad input, 1 a run that cannot vouch for its result; see
//! `src/error.rs`), a message naming the limit, quickly, and without leaving
//! or touching an output file. The limits and their values are listed in
//! `docs/reliability.md`. Schemes are invented, illustrative numbers.

use crate::cli_support::{bin, refused, scratch};
use std::time::Instant;

/// `n` levels, no fields.
fn levels(n: usize) -> String {
    let mut s = String::from("levels:\n");
    for k in 0..n {
        s.push_str(&format!("  l{k}: {{energy: \"{k} cm^-1\"}}\n"));
    }
    s.push_str("initial: l0\nwindow: {start: \"0 ns\", end: \"1 ns\"}\n");
    s
}

#[test]
fn level_count_limit() {
    let ok = bin()
        .args(["inspect", "--format", "json"])
        .arg({
            let d = scratch("200-levels");
            let p = d.join("s.yaml");
            std::fs::write(&p, levels(200)).unwrap();
            p
        })
        .output()
        .unwrap();
    assert_eq!(ok.status.code(), Some(0), "200 levels are allowed");
    refused(
        "levels",
        levels(201).as_bytes(),
        &["vet"],
        2,
        &["at most 200 levels", "201 levels"],
    );
}

#[test]
fn field_count_limit() {
    let mut s = String::from(
        "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1 eV}\ninitial: g\n\
         couplings:\n  - {between: [g, e], dipole: 1}\nfields:\n",
    );
    for k in 0..65 {
        s.push_str(&format!(
            "  f{k}:\n    tuned: {{to: [g, e], detuning: \"{k} MHz\"}}\n    \
             rabi: {{on: [g, e], value: 1 MHz}}\n    \
             envelope: {{shape: rectangular, start: 0 ns, duration: 10 ns}}\n"
        ));
    }
    refused(
        "fields",
        s.as_bytes(),
        &["inspect"],
        2,
        &["at most 64 fields", "65 fields"],
    );
}

/// `n` couplings among `levels` levels (every pair in turn), and `fields`
/// fields that drive all of them.
fn couplings(levels_n: usize, n: usize, fields: usize) -> String {
    let mut s = levels(levels_n).replace("window: {start: \"0 ns\", end: \"1 ns\"}\n", "");
    s.push_str("couplings:\n");
    let mut count = 0;
    'outer: for a in 0..levels_n {
        for b in a + 1..levels_n {
            if count == n {
                break 'outer;
            }
            s.push_str(&format!("  - {{between: [l{a}, l{b}], dipole: 1}}\n"));
            count += 1;
        }
    }
    assert_eq!(count, n, "not enough level pairs");
    if fields == 0 {
        s.push_str("window: {start: \"0 ns\", end: \"1 ns\"}\n");
    } else {
        s.push_str("fields:\n");
        for k in 0..fields {
            s.push_str(&format!(
                "  f{k}:\n    tuned: {{to: [l0, l1], detuning: \"{k} MHz\"}}\n    \
                 rabi: {{on: [l0, l1], value: 1 MHz}}\n    \
                 envelope: {{shape: rectangular, start: 0 ns, duration: 10 ns}}\n"
            ));
        }
    }
    s
}

#[test]
fn coupling_count_limit() {
    refused(
        "couplings",
        couplings(101, 5001, 0).as_bytes(),
        &["inspect"],
        2,
        &["at most 5000 couplings", "5001 couplings"],
    );
}

#[test]
fn drive_count_limit() {
    // 3 fields x 3400 couplings = 10200 drives; 3400 couplings are allowed.
    refused(
        "drives",
        couplings(84, 3400, 3).as_bytes(),
        &["vet"],
        2,
        &["at most 10000 drives", "10200 drives"],
    );
}

#[test]
fn file_size_limit() {
    let text = format!("title: \"{}\"\n", "x".repeat(1 << 20));
    let (_, s) = refused(
        "size",
        text.as_bytes(),
        &["inspect"],
        2,
        &["at most 1048576 bytes"],
    );
    assert!(s < 5.0, "took {s} s");
}

/// A file that never ends is read only up to the limit.
#[cfg(target_os = "linux")]
#[test]
fn endless_input_is_read_only_up_to_the_limit() {
    let t = Instant::now();
    let o = bin().args(["inspect", "/dev/zero"]).output().unwrap();
    let s = t.elapsed().as_secs_f64();
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("at most 1048576 bytes"), "{err}");
    assert!(s < 5.0, "took {s} s");
}

#[test]
fn billion_laughs_is_refused_quickly() {
    let mut s = String::from("a0: &a0 [lol,lol,lol,lol,lol,lol,lol,lol,lol]\n");
    for i in 1..=9 {
        let p = i - 1;
        s.push_str(&format!(
            "a{i}: &a{i} [*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p}]\n"
        ));
    }
    let (_, secs) = refused(
        "laughs",
        s.as_bytes(),
        &["vet"],
        2,
        &["YAML nodes after alias expansion", "alias bomb"],
    );
    assert!(secs < 2.0, "took {secs} s");
}

#[test]
fn quadratic_alias_expansion_is_refused_quickly() {
    // One 2,000-element anchor replayed by 2,000 aliases: 4e6 nodes.
    let n = 2_000;
    let mut s = String::from("a: &a [");
    s.push_str(&"1,".repeat(n));
    s.push_str("1]\nb: [");
    s.push_str(&"*a,".repeat(n));
    s.push_str("*a]\n");
    let (_, secs) = refused(
        "quadratic",
        s.as_bytes(),
        &["inspect"],
        2,
        &["at most 1000000 YAML nodes", "more than 1000000 YAML nodes"],
    );
    assert!(secs < 2.0, "took {secs} s");
}

#[test]
fn nesting_depth_limit() {
    // Flow collections (refused by a linear pre-check) and block mappings
    // (refused by the YAML library), up to a 1 MiB file.
    let flow = |depth: usize| format!("title: {}1{}\n", "[".repeat(depth), "]".repeat(depth));
    let mut block = String::new();
    let mut d = 0;
    while block.len() < 1_000_000 {
        block.push_str(&format!("{}k{d}:\n", " ".repeat(d)));
        d += 1;
    }
    for (name, text) in [
        ("depth", flow(200)),
        ("depth-1MiB", flow(520_000)),
        ("depth-block", block),
    ] {
        let (_, secs) = refused(
            name,
            text.as_bytes(),
            &["inspect"],
            2,
            &["nesting at most 128 levels deep"],
        );
        assert!(secs < 2.0, "{name}: took {secs} s");
    }
}

/// The points limit of one `samples` envelope (100,000) cannot be reached
/// through a file: the shortest list of 100,001 points with strictly
/// increasing times ("[1 s,0]," ...) is longer than the 1 MiB file limit,
/// which refuses it first. If the file limit is ever raised, this test fails
/// and the points limit needs a test of its own.
#[test]
fn sample_points_limit_lies_behind_the_file_limit() {
    let n = levelplan::scheme::MAX_SAMPLE_POINTS + 1;
    let shortest: usize = (0..n).map(|k| format!("[{k} s,0],").len()).sum();
    assert!(
        shortest > levelplan::yaml::MAX_FILE_BYTES,
        "{shortest} bytes"
    );
}

#[test]
fn evolve_sample_limit() {
    let text = "levels:\n  g: {energy: 0 eV}\ninitial: g\nwindow: {start: 0 ns, end: 1 ns}\n";
    refused(
        "samples",
        text.as_bytes(),
        &["evolve", "--samples", "1000001"],
        2,
        &["--samples", "expected 2 to 1000000 samples, found 1000001"],
    );
}

/// A drive 900 GHz off resonance (inside the 1 THz cutoff) over 1 ms:
/// about 1e9 periods of the fastest frequency.
const FAR_DRIVE: &str = "levels:\n  g: {energy: 0 cm^-1}\n  e: {energy: 12000 cm^-1}\ninitial: g\n\
    couplings:\n  - {between: [g, e], dipole: 1}\n\
    fields:\n  far:\n    tuned: {to: [g, e], detuning: 900 GHz}\n    \
    rabi: {on: [g, e], value: 1 MHz}\n    \
    envelope: {shape: gaussian, center: 0.5 ms, fwhm: 0.2 ms}\n";

#[test]
fn step_budget_fails_fast_with_its_cause() {
    let (err, secs) = refused(
        "budget",
        FAR_DRIVE.as_bytes(),
        &["vet"],
        1,
        &[
            "needs more than 5000000 steps",
            "field 'far'",
            "shorten the window",
        ],
    );
    assert!(secs < 5.0, "took {secs} s: {err}");
}

#[test]
fn evolve_output_size_limits() {
    // 200 levels x 50,001 samples = 10,000,200 values > 10,000,000.
    let text = levels(200);
    refused(
        "values",
        text.as_bytes(),
        &["evolve", "--samples", "50001"],
        2,
        &[
            "--samples",
            "50001 samples x 200 levels = 10000200 population values",
            "at most 50000 samples",
        ],
    );
    // The plot: 200 levels x 5,001 samples = 1,000,200 points > 1,000,000.
    let dir = scratch("plot");
    let scheme = dir.join("s.yaml");
    std::fs::write(&scheme, &text).unwrap();
    let svg = dir.join("p.svg");
    let csv = dir.join("p.csv");
    let t = Instant::now();
    let o = bin()
        .args(["evolve", "--samples", "5001", "--out"])
        .arg(&csv)
        .arg("--plot")
        .arg(&svg)
        .arg(&scheme)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("--plot") && err.contains("at most 5000 samples with --plot"),
        "{err}"
    );
    assert!(!svg.exists() && !csv.exists());
    assert!(
        t.elapsed().as_secs_f64() < 5.0,
        "refused before propagating"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Times on the pulse axis are bounded by `scheme::MAX_TIME_S` (1e4 s);
/// lifetimes are not. Found by fuzzing (`vet_small`): a pulse of 2e60 s
/// overflowed the exact propagator's sub-step count.
#[test]
fn pulse_axis_time_limit() {
    let scheme = |duration: &str, lifetime: &str| {
        format!(
            "levels:\n  g: {{energy: 0 eV}}\n  e: {{energy: 1 eV, lifetime: \"{lifetime}\"}}\n\
             initial: g\ncouplings:\n  - {{between: [g, e], dipole: 1}}\nfields:\n  p:\n    \
             tuned: {{to: [g, e], detuning: 0 MHz}}\n    rabi: {{on: [g, e], value: 1 Hz}}\n    \
             envelope: {{shape: rectangular, start: 0 s, duration: \"{duration}\"}}\n"
        )
    };
    let d = scratch("time-limit-ok");
    let p = d.join("s.yaml");
    std::fs::write(&p, scheme("1e4 s", "1e9 s")).unwrap();
    let ok = bin().args(["inspect"]).arg(&p).output().unwrap();
    assert_eq!(
        ok.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    refused(
        "time-limit",
        scheme("1.0001e4 s", "1 s").as_bytes(),
        &["vet"],
        2,
        &[
            "fields.p.envelope.duration",
            "at most 1e4 s",
            "'1.0001e4 s'",
        ],
    );
    let huge = format!("2{} ns", "0".repeat(69));
    let t = Instant::now();
    refused(
        "time-limit-huge",
        scheme(&huge, "1 s").as_bytes(),
        &["vet"],
        2,
        &["at most 1e4 s"],
    );
    assert!(t.elapsed().as_secs_f64() < 5.0);
}

fn scan_fixture() -> String {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/two_level_scan.yaml")
        .to_string_lossy()
        .into_owned()
}

/// Regression: `merge /dev/zero` read without end. A part that is not a
/// regular file is refused before reading, and so is a part larger than
/// 1 GiB (a sparse file here: nothing is written to disk).
#[test]
fn merge_refuses_devices_and_parts_above_one_gib() {
    let t = Instant::now();
    let o = bin().args(["merge", "/dev/zero"]).output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("not a regular file"), "{err}");
    let dir = scratch("merge-cap");
    let huge = dir.join("huge.csv");
    let f = std::fs::File::create(&huge).unwrap();
    f.set_len((1 << 30) + 1).unwrap();
    let o = bin().arg("merge").arg(&huge).output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("larger than 1073741824 bytes (1 GiB)"),
        "{err}"
    );
    assert!(t.elapsed().as_secs_f64() < 5.0, "{:?}", t.elapsed());
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Regression: `--jobs 100000` started threads until the test timed out.
/// More jobs than cores are capped with a note; `--jobs 0` stays an error.
#[test]
fn jobs_beyond_the_cores_are_capped_with_a_note() {
    let fixture = scan_fixture();
    let vary = "fields.probe.tuned.detuning=-20MHz..20MHz:5";
    let t = Instant::now();
    let o = bin()
        .args(["scan", &fixture, "--vary", vary, "--jobs", "100000"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{err}");
    assert!(err.contains("--jobs 100000 capped at"), "{err}");
    assert!(t.elapsed().as_secs_f64() < 20.0, "{:?}", t.elapsed());
    let plain = bin()
        .args(["scan", &fixture, "--vary", vary, "--jobs", "1"])
        .output()
        .unwrap();
    assert_eq!(o.stdout, plain.stdout);
    let o = bin()
        .args([
            "tune",
            &fixture,
            "--vary",
            "fields.probe.tuned.detuning=-20MHz..20MHz",
        ])
        .args(["--maximize", "e", "--jobs", "100000"])
        .output()
        .unwrap();
    assert!(String::from_utf8_lossy(&o.stderr).contains("capped at"));
    let o = bin()
        .args(["scan", &fixture, "--vary", vary, "--jobs", "0"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
}

/// `--time-limit`: a scan stops starting points at the limit, keeps the
/// rows it finished in the partial file (exit 1, the message says how many
/// and how to continue) and `--resume` continues from them; `tune`, `vet`
/// and `evolve` end with exit 1 and write nothing. Bad durations are
/// refused (exit 2).
#[test]
fn a_time_limit_ends_a_long_run_cleanly() {
    let fixture = scan_fixture();
    let dir = scratch("time-limit-run");
    let out = dir.join("long.csv");
    let partial = dir.join(".long.csv.partial");
    let vary = "fields.probe.tuned.detuning=-20MHz..20MHz:2000000";
    let run = |extra: &[&str]| {
        let t = Instant::now();
        let o = bin()
            .args(["scan", &fixture, "--vary", vary, "--jobs", "1", "--out"])
            .arg(&out)
            .args(["--time-limit", "1.5s"])
            .args(extra)
            .output()
            .unwrap();
        (o, t.elapsed().as_secs_f64())
    };
    let (o, secs) = run(&[]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(secs < 10.0, "{secs} s");
    assert!(err.contains("time limit of 1.5 s reached"), "{err}");
    assert!(err.contains("--resume"), "{err}");
    let lines = |p: &std::path::Path| std::fs::read_to_string(p).unwrap().lines().count();
    let first = lines(&partial);
    assert!(!out.exists());
    assert!(!dir.join(".long.csv.lock").exists());
    let (o, _) = run(&["--resume"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(lines(&partial) > first);
    // To stdout: the rows so far, then exit 1.
    let o = bin()
        .args(["scan", &fixture, "--vary", vary, "--time-limit", "1"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("cannot be continued"));
    assert!(String::from_utf8_lossy(&o.stdout).lines().count() > 20);
    // tune: a coarse grid of 2,000,000 points outlasts 1 s.
    let t = Instant::now();
    let o = bin()
        .args(["tune", &fixture, "--maximize", "e", "--time-limit", "1s"])
        .args([
            "--vary",
            "fields.probe.tuned.detuning=-20MHz..20MHz:2000000",
        ])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("before tune finished"), "{err}");
    assert!(t.elapsed().as_secs_f64() < 10.0);
    // vet and evolve: a drive 900 GHz off resonance over 1 ms with an
    // unbounded step budget runs for minutes; the limit ends it, no file.
    let far = dir.join("far.yaml");
    std::fs::write(&far, FAR_DRIVE).unwrap();
    for cmd in ["vet", "evolve"] {
        let target = dir.join("far.out");
        let t = Instant::now();
        let o = bin()
            .arg(cmd)
            .arg(&far)
            .args([
                "--step-budget",
                "1000000000000",
                "--time-limit",
                "1s",
                "--out",
            ])
            .arg(&target)
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(1), "{cmd}: {err}");
        assert!(err.contains(&format!("before {cmd} finished")), "{err}");
        assert!(t.elapsed().as_secs_f64() < 10.0, "{cmd}: {:?}", t.elapsed());
        assert!(!target.exists());
    }
    for bad in ["0", "-3s", "soon"] {
        let o = bin()
            .args(["scan", &fixture, "--vary", vary, "--time-limit", bad])
            .output()
            .unwrap();
        assert_eq!(o.status.code(), Some(2), "{bad}");
    }
    std::fs::remove_dir_all(&dir).unwrap();
}
