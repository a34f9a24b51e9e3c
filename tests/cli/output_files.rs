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

/// The scan fixture copied into `dir` (a scheme the tests may overwrite by
/// mistake without harm).
fn scan_scheme(dir: &Path) -> std::path::PathBuf {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let s = dir.join("s.yaml");
    std::fs::copy(root.join("tests/fixtures/two_level_scan.yaml"), &s).unwrap();
    s
}

const VARY: &str = "fields.probe.tuned.detuning=-20MHz..20MHz:3";

/// Regression: `evolve s.yaml --out s.yaml` exited 0 and replaced the
/// scheme by its CSV. Every output flag of every command is refused (exit
/// 2) when it names an input, by another spelling, a symbolic link or a
/// hard link; the input stays byte for byte.
#[test]
fn an_output_that_is_an_input_is_refused() {
    let dir = scratch("same-file");
    let s = scan_scheme(&dir);
    let before = std::fs::read(&s).unwrap();
    let sym = dir.join("sym.yaml");
    let hard = dir.join("hard.yaml");
    #[cfg(unix)]
    std::os::unix::fs::symlink(&s, &sym).unwrap();
    #[cfg(not(unix))]
    std::fs::copy(&s, &sym).unwrap();
    std::fs::hard_link(&s, &hard).unwrap();
    let dotted = dir.join(".").join("s.yaml");
    let (ss, sy, hd, dt) = (
        s.to_str().unwrap(),
        sym.to_str().unwrap(),
        hard.to_str().unwrap(),
        dotted.to_str().unwrap(),
    );
    let mut cases: Vec<Vec<&str>> = Vec::new();
    for out in [ss, sy, hd, dt] {
        cases.push(vec!["inspect", ss, "--out", out]);
        cases.push(vec!["vet", ss, "--out", out]);
        cases.push(vec!["evolve", ss, "--out", out]);
        cases.push(vec!["evolve", ss, "--plot", out]);
        cases.push(vec!["scan", ss, "--vary", VARY, "--out", out]);
        cases.push(vec!["scan", ss, "--vary", VARY, "--plot", out]);
        cases.push(vec!["merge", ss, "--out", out]);
        cases.push(vec!["merge", ss, "--plot", out]);
    }
    for args in &cases {
        let o = bin().args(args).output().unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains("would destroy the input"), "{args:?}: {err}");
        assert_eq!(std::fs::read(&s).unwrap(), before, "{args:?}");
    }
    // Two outputs that are one file.
    let csv = dir.join("o.csv");
    let o = bin()
        .args(["evolve", ss, "--out"])
        .arg(&csv)
        .arg("--plot")
        .arg(dir.join("./o.csv"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("also the output of --out"));
    assert!(!csv.exists());
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Regression: `--out /dev/null` exited 2 (the rename over a device
/// failed; as root it would have replaced the device by a file). A device
/// is written in place and stays a device.
#[cfg(unix)]
#[test]
fn a_device_output_is_written_in_place() {
    use std::os::unix::fs::FileTypeExt;
    let dir = scratch("device");
    let s = scan_scheme(&dir);
    let ss = s.to_str().unwrap();
    for args in [
        vec!["vet", ss, "--out", "/dev/null"],
        vec!["evolve", ss, "--out", "/dev/null", "--plot", "/dev/null"],
        vec!["scan", ss, "--vary", VARY, "--out", "/dev/null"],
    ] {
        let o = bin().args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(matches!(o.status.code(), Some(0 | 3)), "{args:?}: {err}");
        assert!(o.stdout.is_empty(), "{args:?}");
    }
    let t = std::fs::metadata("/dev/null").unwrap().file_type();
    assert!(t.is_char_device());
    // A scan into a device cannot be resumed.
    let o = bin()
        .args(["scan", ss, "--vary", VARY, "--out", "/dev/null", "--resume"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(others(&dir, &[&s]).is_empty(), "{:?}", others(&dir, &[&s]));
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Regression: an output that is a symbolic link (`link.csv -> real.csv`)
/// exited 2. It is written through: the link stays, the file it names
/// gets the bytes (atomically, in that file's directory); a dangling
/// link's target is created.
#[cfg(unix)]
#[test]
fn a_symlinked_output_is_written_through() {
    let dir = scratch("symlink-out");
    let s = scan_scheme(&dir);
    let ss = s.to_str().unwrap();
    let sub = dir.join("sub");
    std::fs::create_dir(&sub).unwrap();
    let real = sub.join("real.csv");
    std::fs::write(&real, b"an earlier result\n").unwrap();
    let link = dir.join("link.csv");
    std::os::unix::fs::symlink("sub/real.csv", &link).unwrap();
    let expected = bin().args(["evolve", ss]).output().unwrap().stdout;
    assert!(!expected.is_empty());
    let o = bin()
        .args(["evolve", ss, "--out"])
        .arg(&link)
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(std::fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    assert_eq!(std::fs::read(&real).unwrap(), expected);
    // A dangling link: the file it names is created; a scan too.
    let dangling = dir.join("dangling.csv");
    std::os::unix::fs::symlink("sub/new.csv", &dangling).unwrap();
    let o = bin()
        .args(["scan", ss, "--vary", VARY, "--out"])
        .arg(&dangling)
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(std::fs::symlink_metadata(&dangling)
        .unwrap()
        .file_type()
        .is_symlink());
    let text = std::fs::read_to_string(sub.join("new.csv")).unwrap();
    assert!(text.contains("fields.probe.tuned.detuning"), "{text}");
    assert!(others(&sub, &[&real, &sub.join("new.csv")]).is_empty());
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Regression: an output FIFO with no reader blocked for ever. The write
/// waits about 2 s for a reader, then is refused (exit 1); with a reader
/// the bytes go through the FIFO, which stays a FIFO.
#[cfg(target_os = "linux")]
#[test]
fn a_fifo_without_a_reader_is_refused_in_seconds() {
    use std::os::unix::fs::FileTypeExt;
    let dir = scratch("fifo");
    let s = scan_scheme(&dir);
    let fifo = dir.join("pipe.csv");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(made.success());
    let t = Instant::now();
    let o = bin()
        .arg("evolve")
        .arg(&s)
        .arg("--out")
        .arg(&fifo)
        .output()
        .unwrap();
    let took = t.elapsed();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("no process reads this FIFO"), "{err}");
    assert!(took < Duration::from_secs(10), "{took:?}");
    // With a reader.
    let reader_path = fifo.clone();
    let reader = std::thread::spawn(move || std::fs::read(reader_path).unwrap());
    let o = bin()
        .arg("evolve")
        .arg(&s)
        .arg("--out")
        .arg(&fifo)
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let got = reader.join().unwrap();
    let expected = bin().arg("evolve").arg(&s).output().unwrap().stdout;
    assert_eq!(got, expected);
    assert!(std::fs::metadata(&fifo).unwrap().file_type().is_fifo());
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Data rows (lines not starting with '#', past the column line) in a
/// scan file, 0 if there is none.
fn rows_in(path: &Path) -> usize {
    std::fs::read_to_string(path)
        .map(|t| t.lines().filter(|l| !l.starts_with('#')).count())
        .unwrap_or(0)
        .saturating_sub(1)
}

/// Regression: two `scan --resume` on one partial file both ran and
/// appended to it. A lock `.FILE.lock` holding the pid refuses the second
/// (exit 1, naming the holder); the lock of a killed run is taken over
/// with a note, and every run removes its lock when it ends.
#[test]
fn a_second_writer_of_a_scan_is_refused_with_the_holders_pid() {
    let dir = scratch("lock");
    let s = scan_scheme(&dir);
    let out = dir.join("big.csv");
    let partial = dir.join(".big.csv.partial");
    let lock = dir.join(".big.csv.lock");
    let vary = "fields.probe.tuned.detuning=-20MHz..20MHz:2000000";
    let scan = |extra: &[&str]| {
        let mut c = bin();
        c.arg("scan")
            .arg(&s)
            .args(["--vary", vary, "--jobs", "1", "--out"])
            .arg(&out)
            .args(extra);
        c
    };
    let mut first = scan(&[])
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let t = Instant::now();
    while rows_in(&partial) < 5 {
        assert!(first.try_wait().unwrap().is_none(), "the scan ended early");
        assert!(t.elapsed() < Duration::from_secs(60), "no rows in 60 s");
        std::thread::sleep(Duration::from_millis(5));
    }
    assert_eq!(
        std::fs::read_to_string(&lock).unwrap().trim(),
        first.id().to_string()
    );
    let o = scan(&["--resume"]).output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(
        err.contains(&format!("another levelplan (process {})", first.id())),
        "{err}"
    );
    assert!(first.try_wait().unwrap().is_none());
    first.kill().unwrap(); // SIGKILL: the lock stays behind
    first.wait().unwrap();
    assert!(lock.exists());
    let rows = rows_in(&partial);
    let o = scan(&["--resume", "--time-limit", "1s"]).output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("taking over"), "{err}");
    assert!(err.contains("time limit of 1 s reached"), "{err}");
    assert!(rows_in(&partial) > rows);
    assert!(!lock.exists());
    assert!(!out.exists());
    std::fs::remove_dir_all(&dir).unwrap();
}
