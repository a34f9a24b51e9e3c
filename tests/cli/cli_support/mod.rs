//! Test helper for the binary end to end: run it, and check that a refused
//! run leaves no output file and does not touch an existing one.
#![allow(dead_code)]

pub mod table;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::time::Instant;

pub fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_levelplan"))
}

/// The binary, run from the repository root (the tests' paths are
/// relative to it).
pub fn bin_at_root() -> Command {
    let mut c = bin();
    c.current_dir(env!("CARGO_MANIFEST_DIR"));
    c
}

/// Run the binary from the repository root and require exit status 0.
pub fn ok(args: &[&str]) -> Output {
    let o = bin_at_root().args(args).output().expect("the binary runs");
    assert_eq!(
        o.status.code(),
        Some(0),
        "levelplan {}\nstderr: {}",
        args.join(" "),
        String::from_utf8_lossy(&o.stderr)
    );
    o
}

pub fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!(
        "levelplan-cli-support-{}-{name}",
        std::process::id()
    ));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Files in a directory other than the given ones (a leftover temporary
/// file would show here).
pub fn others(dir: &Path, keep: &[&Path]) -> Vec<PathBuf> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| !keep.iter().any(|k| k == p))
        .collect()
}

/// Run `args` on a scheme text written to a scratch file, once writing to
/// a new output file and once over an existing one; check the exit status,
/// that stderr contains every `needles`, that no new file appears and that
/// the existing output is unchanged. Returns stderr and the run time (s).
pub fn refused(
    name: &str,
    text: &[u8],
    cmd: &[&str],
    code: i32,
    needles: &[&str],
) -> (String, f64) {
    let dir = scratch(name);
    let scheme = dir.join("scheme.yaml");
    std::fs::write(&scheme, text).unwrap();
    let fresh = dir.join("new-output");
    let existing = dir.join("existing-output");
    std::fs::write(&existing, b"an earlier result\n").unwrap();
    let mut stderr = String::new();
    let mut seconds: f64 = 0.0;
    for out in [&fresh, &existing] {
        let mut args: Vec<&str> = cmd.to_vec();
        args.push(scheme.to_str().unwrap());
        args.extend(["--out", out.to_str().unwrap()]);
        let t = Instant::now();
        let o: Output = bin().args(&args).output().expect("the binary runs");
        seconds = seconds.max(t.elapsed().as_secs_f64());
        stderr = String::from_utf8_lossy(&o.stderr).into_owned();
        assert_eq!(o.status.code(), Some(code), "{name}: {args:?}\n{stderr}");
        for n in needles {
            assert!(stderr.contains(n), "{name}: stderr lacks {n:?}:\n{stderr}");
        }
        assert!(o.stdout.is_empty(), "{name}: something on stdout");
    }
    assert!(!fresh.exists(), "{name}: a failed run created its output");
    assert_eq!(
        std::fs::read(&existing).unwrap(),
        b"an earlier result\n",
        "{name}: a failed run touched an existing output"
    );
    assert!(
        others(&dir, &[&scheme, &existing]).is_empty(),
        "{name}: leftover files {:?}",
        others(&dir, &[&scheme, &existing])
    );
    std::fs::remove_dir_all(&dir).unwrap();
    (stderr, seconds)
}
