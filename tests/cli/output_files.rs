//! Output files are written whole or not at all: a failed or interrupted run
//! never leaves a partial file and never replaces an existing output; a
//! successful run replaces it entirely. (`output::write_atomic`: temporary
//! file in the same directory, then rename.)

use crate::cli_support::{bin, others, refused, scratch};
use std::path::Path;
use std::time::{Duration, Instant};

fn demo(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("level_schemes")
        .join(name)
        .to_string_lossy()
        .into_owned()
}

#[test]
fn a_bad_scheme_leaves_an_existing_output_unchanged() {
    for cmd in [&["vet"][..], &["inspect"], &["evolve"]] {
        refused(
            "bad-scheme",
            b"levels:\n  g: {energy: 0 eV\n",
            cmd,
            2,
            &["scheme.yaml:", "expected valid YAML"],
        );
    }
}

#[test]
fn an_unwritable_target_is_an_error_and_leaves_nothing() {
    let dir = scratch("unwritable");
    // A directory where the file should go: the rename fails, the directory
    // and its contents stay, the temporary file is removed.
    let target = dir.join("report.md");
    std::fs::create_dir(&target).unwrap();
    std::fs::write(target.join("inside"), b"kept").unwrap();
    let o = bin()
        .args(["vet", &demo("two_level_calibration.yaml"), "--out"])
        .arg(&target)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("could not write") && err.contains("report.md"),
        "{err}"
    );
    assert_eq!(std::fs::read(target.join("inside")).unwrap(), b"kept");
    assert!(
        others(&dir, &[&target]).is_empty(),
        "{:?}",
        others(&dir, &[&target])
    );
    // A missing directory.
    let o = bin()
        .args(["inspect", &demo("two_level_calibration.yaml"), "--out"])
        .arg(dir.join("missing/report.txt"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("could not write"));
    std::fs::remove_dir_all(&dir).unwrap();
}

#[cfg(target_os = "linux")]
#[test]
fn a_full_stdout_is_an_error() {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .unwrap();
    let o = bin()
        .args(["vet", &demo("two_level_calibration.yaml")])
        .stdout(full)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("could not write <stdout>"), "{err}");
}

#[test]
fn a_successful_run_replaces_the_whole_file() {
    let dir = scratch("replace");
    let target = dir.join("table.csv");
    std::fs::write(&target, "x".repeat(1_000_000)).unwrap();
    let o = bin()
        .args([
            "vet",
            &demo("two_level_calibration.yaml"),
            "--format",
            "csv",
            "--out",
        ])
        .arg(&target)
        .output()
        .unwrap();
    assert!(matches!(o.status.code(), Some(0) | Some(3)));
    let direct = bin()
        .args([
            "vet",
            &demo("two_level_calibration.yaml"),
            "--format",
            "csv",
        ])
        .output()
        .unwrap();
    assert_eq!(std::fs::read(&target).unwrap(), direct.stdout);
    assert!(others(&dir, &[&target]).is_empty());
    std::fs::remove_dir_all(&dir).unwrap();
}

/// 200 levels and no fields: `evolve` with many samples takes seconds (one
/// segment per sample, 200 x 200 matrices).
fn slow_scheme() -> String {
    let mut s = String::from("levels:\n");
    for k in 0..200 {
        s.push_str(&format!("  l{k}: {{energy: \"{k} cm^-1\"}}\n"));
    }
    s.push_str("initial: l0\nwindow: {start: \"0 ns\", end: \"1 ns\"}\n");
    s
}

#[test]
fn an_interrupted_run_leaves_no_partial_file() {
    let dir = scratch("interrupted");
    let scheme = dir.join("s.yaml");
    std::fs::write(&scheme, slow_scheme()).unwrap();
    let fresh = dir.join("new.csv");
    let existing = dir.join("old.csv");
    let plot = dir.join("old.svg");
    std::fs::write(&existing, b"an earlier result\n").unwrap();
    std::fs::write(&plot, b"<svg/>").unwrap();
    // The same command with few samples finishes and writes its files, so
    // the interrupted one would have written them too.
    let o = bin()
        .args(["evolve", "--samples", "3", "--out"])
        .arg(&fresh)
        .arg(&scheme)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    assert!(fresh.exists());
    std::fs::remove_file(&fresh).unwrap();
    for (out, svg) in [(&fresh, None), (&existing, Some(&plot))] {
        let mut cmd = bin();
        cmd.args(["evolve", "--samples", "4000", "--out"])
            .arg(out)
            .arg(&scheme);
        if let Some(p) = svg {
            cmd.arg("--plot").arg(p);
        }
        let mut child = cmd.spawn().unwrap();
        let t = Instant::now();
        std::thread::sleep(Duration::from_millis(700));
        assert!(
            child.try_wait().unwrap().is_none(),
            "the run ended before it could be interrupted"
        );
        child.kill().unwrap();
        child.wait().unwrap();
        assert!(t.elapsed() < Duration::from_secs(10));
    }
    assert!(!fresh.exists(), "an interrupted run created its output");
    assert_eq!(std::fs::read(&existing).unwrap(), b"an earlier result\n");
    assert_eq!(std::fs::read(&plot).unwrap(), b"<svg/>");
    assert!(
        others(&dir, &[&scheme, &existing, &plot]).is_empty(),
        "{:?}",
        others(&dir, &[&scheme, &existing, &plot])
    );
    std::fs::remove_dir_all(&dir).unwrap();
}
