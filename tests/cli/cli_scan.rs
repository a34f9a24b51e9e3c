//! The `scan`, `tune` and `merge` commands end to end through the binary:
//! physics of the scanned rows against the Rabi formula, byte identity for
//! any thread count and after sharding + merge, resume after a real kill,
//! tune on the pi pulse, and every bad input (exit 2, no file left).
//!
//! The demo schemes are invented and illustrative. The two-level demo is a
//! resonant rectangular pi pulse of field `probe` on [g, e] whose strength is
//! set by a Rabi frequency (or intensity), not by a pulse area.

use crate::cli_support::table::Table;
use crate::cli_support::{bin_at_root as bin, ok};
use serde_json::Value;
use std::f64::consts::PI;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

const TWO_LEVEL: &str = "tests/fixtures/two_level_scan.yaml";
const HYPERFINE: &str = "level_schemes/hyperfine_manifold.yaml";
const DETUNING: &str = "fields.probe.tuned.detuning";
const DURATION: &str = "fields.probe.envelope.duration";

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("the binary runs")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

struct TempDir(PathBuf);

impl TempDir {
    fn new(tag: &str) -> TempDir {
        static SERIAL: AtomicUsize = AtomicUsize::new(0);
        let n = SERIAL.fetch_add(1, Ordering::Relaxed);
        let d = std::env::temp_dir().join(format!(
            "levelplan-cli-scan-{tag}-{}-{n}",
            std::process::id()
        ));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).unwrap();
        TempDir(d)
    }
    fn path(&self, name: &str) -> PathBuf {
        self.0.join(name)
    }
    fn s(&self, name: &str) -> String {
        self.path(name).display().to_string()
    }
    /// Every file in the directory (hidden partial files included).
    fn files(&self) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(&self.0)
            .unwrap()
            .filter_map(|e| e.ok())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = fs::remove_dir_all(&self.0);
    }
}

fn inspect(scheme: &str) -> Value {
    let o = ok(&["inspect", scheme, "--format", "json"]);
    serde_json::from_slice(&o.stdout).expect("inspect JSON")
}

/// Peak Rabi frequency (rad/s) and pulse length (s) of the probe on [g, e].
fn probe(scheme: &str) -> (f64, f64) {
    let v = inspect(scheme);
    let drive = v["drives"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["field"] == "probe")
        .expect("a drive of probe");
    let omega = 2.0 * PI * drive["rabi_mhz"].as_f64().unwrap() * 1e6;
    let field = v["fields"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["id"] == "probe")
        .expect("field probe");
    let t = field["length_s"].as_f64().unwrap();
    (omega.abs(), t)
}

/// Rabi formula for a rectangular pulse from the ground state:
/// P_e = Omega^2 / W^2 sin^2(W T / 2), W = sqrt(Omega^2 + Delta^2)
/// (I. I. Rabi, Phys. Rev. 51, 652 (1937)); Delta, Omega in rad/s.
fn rabi(omega: f64, delta: f64, t: f64) -> f64 {
    let w = (omega * omega + delta * delta).sqrt();
    (omega / w).powi(2) * (0.5 * w * t).sin().powi(2)
}

#[test]
fn detuning_scan_follows_the_rabi_formula() {
    let d = TempDir::new("spectrum");
    let (omega, t) = probe(TWO_LEVEL);
    // Sanity of the demo: a pi pulse (Omega T = pi), from the scheme itself.
    assert!(
        (omega * t - PI).abs() < 1e-6 * PI,
        "Omega T = {}",
        omega * t
    );
    let out = d.s("spectrum.csv");
    let svg = d.s("spectrum.svg");
    let span = 5.0 * omega / (2.0 * PI) / 1e6; // +- 5 Rabi frequencies, in MHz
    let vary = format!("{DETUNING}=-{span}MHz..{span}MHz:101");
    ok(&[
        "scan", TWO_LEVEL, "--vary", &vary, "--out", &out, "--plot", &svg, "--log-y",
    ]);
    let tab = Table::read(Path::new(&out));
    assert_eq!(
        tab.columns,
        [
            "fields.probe.tuned.detuning [MHz]",
            "P(g)",
            "P(e)",
            "max_spectator",
            "flagged",
            "est(g)",
            "est(e)"
        ]
    );
    assert_eq!(tab.rows.len(), 101);
    let x = tab.values("fields.probe.tuned.detuning [MHz]");
    assert_eq!((x[0], x[50], x[100]), (-span, 0.0, span));
    let (pg, pe) = (tab.values("P(g)"), tab.values("P(e)"));
    for k in 0..101 {
        let delta = 2.0 * PI * x[k] * 1e6;
        let want = rabi(omega, delta, t);
        assert!(
            (pe[k] - want).abs() < 1e-6,
            "Delta {} MHz: {} vs {want}",
            x[k],
            pe[k]
        );
        assert!((pg[k] + pe[k] - 1.0).abs() < 1e-6);
        // Two levels: no spectator, nothing flagged; no estimate for g.
        assert_eq!(tab.rows[k][tab.col("max_spectator")], Some(0.0));
        assert_eq!(tab.rows[k][tab.col("flagged")], Some(0.0));
        assert_eq!(tab.rows[k][tab.col("est(g)")], None);
    }
    // The comments state the scheme hash, the range and the scan hash.
    assert!(tab.comments.iter().any(|c| c.contains("sha256")));
    assert!(tab
        .comments
        .iter()
        .any(|c| c.starts_with("# vary 1: fields.probe.tuned.detuning")));
    assert!(tab
        .comments
        .iter()
        .any(|c| c.starts_with("# scan ") && c.len() == 7 + 64));
    let svg = fs::read_to_string(&svg).unwrap();
    assert!(svg.starts_with("<svg") && svg.contains("P(e)") && svg.contains("tolerance"));
    // Only the two files are left: no partial or temporary file.
    assert_eq!(d.files(), ["spectrum.csv", "spectrum.svg"]);
    // The unit may be written with a space; another unit of frequency gives
    // the same physics.
    let spaced = format!("{DETUNING}=-{span} MHz..{span} MHz:101");
    let o = ok(&["scan", TWO_LEVEL, "--vary", &spaced]);
    assert_eq!(o.stdout, fs::read(&out).unwrap());
    let ghz = format!("{DETUNING}=-{}GHz..{}GHz:101", span / 1e3, span / 1e3);
    let g = Table::parse(&stdout(&ok(&["scan", TWO_LEVEL, "--vary", &ghz])));
    assert_eq!(g.columns[0], "fields.probe.tuned.detuning [GHz]");
    for (a, b) in g.values("P(e)").iter().zip(&pe) {
        assert!((a - b).abs() < 1e-9);
    }
}

#[test]
fn two_dimensional_scan_is_row_major_and_draws_a_heat_map() {
    let d = TempDir::new("map");
    let (omega, t) = probe(TWO_LEVEL);
    let ns = t * 1e9;
    let span = 2.0 * omega / (2.0 * PI) / 1e6;
    let out = d.s("map.csv");
    let svg = d.s("map.svg");
    ok(&[
        "scan",
        TWO_LEVEL,
        "--vary",
        &format!("{DURATION}={}ns..{}ns:7", 0.5 * ns, 2.0 * ns),
        "--vary",
        &format!("{DETUNING}=-{span}MHz..{span}MHz:9"),
        "--out",
        &out,
        "--plot",
        &svg,
    ]);
    let tab = Table::read(Path::new(&out));
    assert_eq!(tab.rows.len(), 63);
    let dur = tab.values("fields.probe.envelope.duration [ns]");
    let det = tab.values("fields.probe.tuned.detuning [MHz]");
    let pe = tab.values("P(e)");
    for (k, row_pe) in pe.iter().enumerate() {
        // The last --vary (detuning) varies fastest.
        let (i, j) = (k / 9, k % 9);
        let want_dur = 0.5 * ns + (1.5 * ns) * i as f64 / 6.0;
        let want_det = -span + 2.0 * span * j as f64 / 8.0;
        assert!((dur[k] - want_dur).abs() < 1e-9 * ns, "row {k}");
        assert!((det[k] - want_det).abs() < 1e-9 * span, "row {k}");
        let want = rabi(omega, 2.0 * PI * det[k] * 1e6, dur[k] * 1e-9);
        assert!((row_pe - want).abs() < 1e-6, "row {k}: {row_pe} vs {want}");
    }
    let svg = fs::read_to_string(&svg).unwrap();
    assert!(svg.starts_with("<svg") && svg.contains("largest spectator population"));
}

#[test]
fn hyperfine_scan_reports_its_largest_spectator() {
    // The first field of the demo and its spectators, from the dry run.
    let v = inspect(HYPERFINE);
    let field = v["fields"][0]["id"].as_str().unwrap().to_string();
    let spectators: Vec<String> = v["levels"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|l| l["role"] == "spectator")
        .map(|l| l["id"].as_str().unwrap().to_string())
        .collect();
    assert!(spectators.len() >= 2, "the demo has several spectators");
    let o = ok(&[
        "scan",
        HYPERFINE,
        "--vary",
        &format!("fields.{field}.tuned.detuning=-30MHz..30MHz:13"),
        "--jobs",
        "2",
    ]);
    let tab = Table::parse(&stdout(&o));
    assert_eq!(tab.rows.len(), 13);
    let maxs = tab.values("max_spectator");
    for (k, m) in maxs.iter().enumerate() {
        let largest = spectators
            .iter()
            .map(|s| tab.values(&format!("P({s})"))[k])
            .fold(0.0, f64::max);
        assert_eq!(*m, largest, "row {k}");
        let total: f64 = tab
            .columns
            .iter()
            .filter(|c| c.starts_with("P("))
            .map(|c| tab.values(c)[k])
            .sum();
        // Populations sum to at most 1 (decay may remove some).
        assert!(total <= 1.0 + 1e-6 && total > 0.0, "row {k}: {total}");
    }
}

#[test]
fn any_thread_count_and_merged_shards_give_the_same_bytes() {
    let d = TempDir::new("shards");
    let vary = format!("{DETUNING}=-20MHz..20MHz:23");
    let one = d.s("one.csv");
    let two = d.s("two.csv");
    ok(&[
        "scan", TWO_LEVEL, "--vary", &vary, "--jobs", "1", "--out", &one,
    ]);
    ok(&[
        "scan", TWO_LEVEL, "--vary", &vary, "--jobs", "2", "--out", &two,
    ]);
    let whole = fs::read(&one).unwrap();
    assert_eq!(whole, fs::read(&two).unwrap());
    // Four shards as four separate processes, as a job array runs them.
    let mut parts = Vec::new();
    for k in 1..=4 {
        let part = d.s(&format!("part_{k}.csv"));
        ok(&[
            "scan",
            TWO_LEVEL,
            "--vary",
            &vary,
            "--shard",
            &format!("{k}/4"),
            "--out",
            &part,
        ]);
        let text = fs::read_to_string(&part).unwrap();
        assert!(text.contains(&format!("\n# shard {k}/4\n")));
        parts.push(part);
    }
    let merged = d.s("merged.csv");
    let mut args = vec!["merge"];
    args.extend(parts.iter().rev().map(String::as_str));
    let svg = d.s("merged.svg");
    args.extend(["--out", &merged, "--plot", &svg, "--log-y"]);
    ok(&args);
    assert_eq!(fs::read(&merged).unwrap(), whole);
    let svg = fs::read_to_string(&svg).unwrap();
    assert!(svg.contains("P(e)") && svg.contains("est(e)") && svg.contains("tolerance"));
    // A missing part is refused, nothing written.
    let o = run(&[
        "merge",
        &parts[0],
        &parts[1],
        &parts[3],
        "--out",
        &d.s("bad.csv"),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("3 of 4 missing"), "{}", stderr(&o));
    assert!(!d.path("bad.csv").exists());
}

#[test]
fn merge_refuses_parts_of_different_scans() {
    let d = TempDir::new("merge-mismatch");
    let a = d.s("a.csv");
    let b = d.s("b.csv");
    ok(&[
        "scan",
        TWO_LEVEL,
        "--vary",
        &format!("{DETUNING}=-20MHz..20MHz:5"),
        "--shard",
        "1/2",
        "--out",
        &a,
    ]);
    ok(&[
        "scan",
        TWO_LEVEL,
        "--vary",
        &format!("{DETUNING}=-20MHz..20MHz:6"),
        "--shard",
        "2/2",
        "--out",
        &b,
    ]);
    let o = run(&["merge", &a, &b, "--out", &d.s("m.csv")]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("different scans"), "{}", stderr(&o));
    assert!(!d.path("m.csv").exists());
}

#[test]
fn merge_rejects_hand_made_parts_without_running_physics() {
    // Two parts whose scan hashes differ, written by hand.
    let d = TempDir::new("merge-hand");
    let head = |hash: &str, k: usize| {
        format!(
            "# levelplan 0.1.0 scan; scheme s.yaml sha256 00\n# grid 2 points, row-major, the last --vary fastest\n# scan {hash}\n# shard {k}/2\nx [MHz],P(g),max_spectator,flagged,est(g)\n"
        )
    };
    let a = d.path("a.csv");
    let b = d.path("b.csv");
    fs::write(&a, head(&"a".repeat(64), 1) + "0e0,1e0,0e0,0,\n").unwrap();
    fs::write(&b, head(&"b".repeat(64), 2) + "1e0,1e0,0e0,0,\n").unwrap();
    let (sa, sb) = (a.display().to_string(), b.display().to_string());
    let o = run(&["merge", &sa, &sb, "--out", &d.s("m.csv")]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("different scans"));
    assert!(!d.path("m.csv").exists());
    // Same hash: merged in K order whatever the order given.
    fs::write(&b, head(&"a".repeat(64), 2) + "1e0,1e0,0e0,0,\n").unwrap();
    let o = ok(&["merge", &sb, &sa]);
    assert_eq!(
        stdout(&o),
        "# levelplan 0.1.0 scan; scheme s.yaml sha256 00\n# grid 2 points, row-major, the last --vary fastest\n# scan aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa\nx [MHz],P(g),max_spectator,flagged,est(g)\n0e0,1e0,0e0,0,\n1e0,1e0,0e0,0,\n"
    );
    // Shard repeated, or a part cut short, is refused.
    let o = run(&["merge", &sa, &sa]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("twice"));
    fs::write(&b, head(&"a".repeat(64), 2) + "1e0,1e0,0e").unwrap();
    let o = run(&["merge", &sa, &sb]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("cut row"), "{}", stderr(&o));
}

/// Number of data rows in a (partial) scan file.
fn data_rows(path: &Path) -> usize {
    fs::read_to_string(path)
        .map(|t| {
            let lines = t.split_inclusive('\n').filter(|l| l.ends_with('\n'));
            lines
                .filter(|l| !l.starts_with('#'))
                .count()
                .saturating_sub(1)
        })
        .unwrap_or(0)
}

#[test]
fn a_killed_scan_resumes_to_the_same_bytes() {
    let d = TempDir::new("kill");
    // Size the scan to take about two seconds on one thread here: the time
    // per point from two scans of different length (start-up cancels).
    let probe_out = d.s("probe.csv");
    let time = |n: usize| {
        let started = Instant::now();
        let vary = format!("{DETUNING}=-20MHz..20MHz:{n}");
        ok(&[
            "scan", TWO_LEVEL, "--vary", &vary, "--jobs", "1", "--out", &probe_out,
        ]);
        started.elapsed().as_secs_f64()
    };
    let per_point = ((time(200) - time(20)) / 180.0).max(1e-6);
    let count = ((2.0 / per_point) as usize).clamp(200, 200_000);
    let vary = format!("{DETUNING}=-20MHz..20MHz:{count}");
    let reference = d.s("reference.csv");
    ok(&[
        "scan", TWO_LEVEL, "--vary", &vary, "--jobs", "2", "--out", &reference,
    ]);

    let out = d.path("killed.csv");
    let partial = d.path(".killed.csv.partial");
    let out_s = out.display().to_string();
    let mut child = bin()
        .args([
            "scan", TWO_LEVEL, "--vary", &vary, "--jobs", "1", "--out", &out_s,
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let deadline = Instant::now() + Duration::from_secs(60);
    while data_rows(&partial) < 10 {
        assert!(
            child.try_wait().unwrap().is_none(),
            "the scan ended before it could be killed"
        );
        assert!(Instant::now() < deadline, "no rows after 60 s");
        std::thread::sleep(Duration::from_millis(2));
    }
    child.kill().unwrap(); // SIGKILL: no chance to clean up
    child.wait().unwrap();
    let done = data_rows(&partial);
    assert!(
        done >= 10 && done < count,
        "{done} of {count} rows before the kill"
    );
    // A kill leaves no output file, only the partial one.
    assert!(!out.exists());
    // Without --resume the partial file is neither used nor overwritten.
    let o = run(&["scan", TWO_LEVEL, "--vary", &vary, "--out", &out_s]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--resume"));
    ok(&[
        "scan", TWO_LEVEL, "--vary", &vary, "--jobs", "2", "--out", &out_s, "--resume",
    ]);
    assert_eq!(fs::read(&out).unwrap(), fs::read(&reference).unwrap());
    assert!(!partial.exists());
    // Resuming with other options is refused.
    fs::write(&partial, fs::read(&reference).unwrap()).unwrap();
    let other = format!("{DETUNING}=-20MHz..21MHz:{count}");
    let o = run(&[
        "scan", TWO_LEVEL, "--vary", &other, "--out", &out_s, "--resume",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("different scan"), "{}", stderr(&o));
}

/// "value: X UNIT +- U (bracket [LO UNIT, HI UNIT])" from tune's output.
fn tune_value(text: &str) -> (f64, f64, f64, f64) {
    let line = text
        .lines()
        .find(|l| l.starts_with("value: "))
        .unwrap_or_else(|| panic!("no value line in:\n{text}"));
    let num = |s: &str| -> f64 { s.trim().split(' ').next().unwrap().parse().unwrap() };
    let rest = &line["value: ".len()..];
    let (v, rest) = rest.split_once("+-").unwrap();
    let (u, rest) = rest.split_once("(bracket [").unwrap();
    let (lo, hi) = rest.trim_end_matches("])").split_once(',').unwrap();
    (num(v), num(u), num(lo), num(hi))
}

fn population(text: &str, level: &str) -> f64 {
    let tag = format!("P({level}) = ");
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with(&tag))
        .unwrap();
    line.trim_start()[tag.len()..]
        .split(' ')
        .next()
        .unwrap()
        .parse()
        .unwrap()
}

fn solves(text: &str) -> usize {
    let line = text.lines().find(|l| l.starts_with("solves: ")).unwrap();
    line["solves: ".len()..]
        .split(' ')
        .next()
        .unwrap()
        .parse()
        .unwrap()
}

#[test]
fn tune_finds_the_pi_pulse_duration_and_the_resonance() {
    let (omega, t) = probe(TWO_LEVEL);
    // Duration: P(e) = sin^2(Omega T / 2) is largest at Omega T = pi
    // (Rabi formula, I. I. Rabi, Phys. Rev. 51, 652 (1937)).
    let ns = t * 1e9;
    let vary = format!("{DURATION}={}ns..{}ns", 0.5 * ns, 1.4 * ns);
    let o = ok(&["tune", TWO_LEVEL, "--vary", &vary, "--maximize", "e"]);
    let text = stdout(&o);
    let (v, u, lo, hi) = tune_value(&text);
    let t_pi = PI / omega * 1e9;
    let slack = 1e-8 * t_pi; // printed to 10 figures
    assert!(
        lo - slack <= t_pi && t_pi <= hi + slack,
        "pi pulse {t_pi} ns outside [{lo}, {hi}]\n{text}"
    );
    assert!(
        (v - t_pi).abs() <= u + slack,
        "{v} +- {u} vs {t_pi}\n{text}"
    );
    // The documented tolerance: bracket within 1e-4 of the range.
    assert!(hi - lo <= 1e-4 * 0.9 * ns * 1.001, "bracket {}", hi - lo);
    assert!(population(&text, "e") > 1.0 - 1e-6, "{text}");
    // 41 coarse points and about 15 golden-section steps.
    let n = solves(&text);
    assert!((50..=60).contains(&n), "{n} solves");

    // Detuning: on resonance the pi pulse transfers everything; the Rabi
    // formula is symmetric in Delta, so the maximum is at Delta = 0.
    let span = 3.0 * omega / (2.0 * PI) / 1e6;
    let vary = format!("{DETUNING}=-{span}MHz..{}MHz:41", 1.3 * span);
    let o = ok(&["tune", TWO_LEVEL, "--vary", &vary, "--maximize", "e"]);
    let text = stdout(&o);
    let (v, u, lo, hi) = tune_value(&text);
    assert!(
        lo <= 0.0 && 0.0 <= hi,
        "resonance outside [{lo}, {hi}]\n{text}"
    );
    assert!(v.abs() <= u, "{v} +- {u}");
    assert!(population(&text, "e") > 1.0 - 1e-6);
}

#[test]
fn tune_shortest_finds_where_the_target_reaches_the_goal() {
    let (omega, t) = probe(TWO_LEVEL);
    // P(e) = sin^2(Omega T / 2) >= 0.99 first at T = 2 asin(sqrt(0.99)) / Omega
    // (Rabi formula, resonant); no spectators in the two-level scheme.
    let want = 2.0 * 0.99f64.sqrt().asin() / omega * 1e9;
    let ns = t * 1e9;
    let vary = format!("{DURATION}={}ns..{}ns:41", 0.3 * ns, 1.5 * ns);
    let o = ok(&[
        "tune",
        TWO_LEVEL,
        "--vary",
        &vary,
        "--shortest",
        "--goal",
        "0.99",
    ]);
    let text = stdout(&o);
    let (v, _, lo, hi) = tune_value(&text);
    let slack = 1e-8 * want; // printed to 10 figures
    assert!(
        lo - slack <= want && want <= hi + slack,
        "{want} outside [{lo}, {hi}]\n{text}"
    );
    assert!((v - hi).abs() <= slack, "the feasible end is reported");
    assert!(population(&text, "e") >= 0.99);
    // Below the goal everywhere: exit 3 with a message.
    let vary = format!("{DURATION}={}ns..{}ns:11", 0.1 * ns, 0.3 * ns);
    let o = run(&["tune", TWO_LEVEL, "--vary", &vary, "--shortest"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    assert!(stdout(&o).contains("no value"));
}

/// Each bad input: exit 2, a message naming the problem, no file created.
fn refused(args: &[&str], needle: &str) {
    let d = TempDir::new("bad");
    let out = d.s("out.csv");
    let svg = d.s("out.svg");
    let mut all: Vec<&str> = args.to_vec();
    if args[0] == "scan" {
        all.extend(["--out", &out, "--plot", &svg]);
    }
    let o = run(&all);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
    assert!(
        stderr(&o).contains(needle),
        "{args:?}: expected '{needle}' in: {}",
        stderr(&o)
    );
    assert!(d.files().is_empty(), "{args:?} left {:?}", d.files());
}

#[test]
fn bad_options_are_refused_before_any_physics() {
    let v = format!("{DETUNING}=-5MHz..5MHz:3");
    refused(
        &[
            "scan",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5MHz..5MHz:0"),
        ],
        "COUNT must be at least 1",
    );
    refused(
        &[
            "scan",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5MHz..5MHz"),
        ],
        "COUNT",
    );
    refused(
        &[
            "scan",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5MHz..5GHz:3"),
        ],
        "different units",
    );
    refused(
        &["scan", TWO_LEVEL, "--vary", &v, "--shard", "0/4"],
        "K must be between 1 and N",
    );
    refused(
        &["scan", TWO_LEVEL, "--vary", &v, "--shard", "5/4"],
        "K must be between 1 and N",
    );
    refused(
        &["scan", TWO_LEVEL, "--vary", &v, "--shard", "2-4"],
        "expected K/N",
    );
    refused(
        &[
            "scan",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5MHz..5MHz:4000"),
            "--vary",
            &format!("{DURATION}=1ns..2ns:4000"),
        ],
        "--force",
    );
    refused(&["scan", TWO_LEVEL, "--vary", &v, "--jobs", "0"], "--jobs");
    refused(
        &["scan", TWO_LEVEL, "--vary", &v, "--tolerance", "2"],
        "--tolerance",
    );
    refused(
        &[
            "scan",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5MHz..5MHz:3:log"),
        ],
        "positive",
    );
    refused(
        &["scan", "no/such/scheme.yaml", "--vary", &v],
        "no/such/scheme.yaml",
    );
}

#[test]
fn bad_paths_and_units_are_refused() {
    // A path that does not exist, one that is not a number, a unit of the
    // wrong dimension: exit 2, nothing written.
    refused(
        &[
            "scan",
            TWO_LEVEL,
            "--vary",
            "fields.probe.no_such_key=1..2:3",
        ],
        "fields.probe.no_such_key",
    );
    refused(
        &["scan", TWO_LEVEL, "--vary", "fields.probe.envelope=1..2:3"],
        "fields.probe.envelope",
    );
    refused(
        &[
            "scan",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5ns..5ns:3"),
        ],
        DETUNING,
    );
    refused(
        &[
            "tune",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5ns..5ns"),
            "--maximize",
            "e",
        ],
        DETUNING,
    );
    refused(
        &[
            "tune",
            TWO_LEVEL,
            "--vary",
            &format!("{DETUNING}=-5MHz..5MHz"),
            "--maximize",
            "nope",
        ],
        "no level 'nope'",
    );
}

#[test]
fn help_of_the_new_commands_states_syntax_units_and_examples() {
    let scan = stdout(&ok(&["scan", "--help"]));
    for s in [
        "--vary",
        "PATH=START..END:COUNT",
        "MHz",
        "--shard",
        "K/N",
        "--resume",
        "--jobs",
        "--plot",
        "--log-y",
        "--force",
        "--with",
        "PATH=START..END",
        "--tuned-follows",
        "Example",
        "IEC 60825-1",
    ] {
        assert!(scan.contains(s), "scan --help lacks {s}");
    }
    let tune = stdout(&ok(&["tune", "--help"]));
    for s in [
        "--maximize",
        "--shortest",
        "--goal",
        "0.99",
        "--xtol",
        "Example",
        "solves",
    ] {
        assert!(tune.contains(s), "tune --help lacks {s}");
    }
    let merge = stdout(&ok(&["merge", "--help"]));
    assert!(merge.contains("--out") && merge.contains("Example"));
    // tune needs exactly one aim.
    let o = run(&["tune", TWO_LEVEL, "--vary", "a.b=1..2"]);
    assert_eq!(o.status.code(), Some(2));
    let o = run(&[
        "tune",
        TWO_LEVEL,
        "--vary",
        "a.b=1..2",
        "--maximize",
        "e",
        "--shortest",
    ]);
    assert_eq!(o.status.code(), Some(2));
}

/// The fenced bash block of docs/cluster.md that contains `marker`.
fn doc_script(doc: &str, marker: &str) -> String {
    doc.split("```bash\n")
        .skip(1)
        .filter_map(|b| b.split("```").next())
        .find(|b| b.contains(marker))
        .unwrap_or_else(|| panic!("no bash block with {marker} in docs/cluster.md"))
        .to_string()
}

#[test]
fn cluster_doc_scripts_run_as_a_job_array_here() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let doc = fs::read_to_string(root.join("docs/cluster.md")).unwrap();
    // Taken verbatim, with the grid shrunk from 1001 x 2001 to 5 x 7 points.
    let array = doc_script(&doc, "#SBATCH --array=");
    let merge = doc_script(&doc, "levelplan merge");
    let shrink = |s: &str| s.replace(":1001:log", ":5:log").replace(":2001", ":7");
    let array = shrink(&array);
    assert!(!array.contains(":1001") && !array.contains(":2001"));
    let n: usize = array
        .split("#SBATCH --array=1-")
        .nth(1)
        .and_then(|r| r.split_whitespace().next())
        .and_then(|n| n.parse().ok())
        .expect("--array=1-N");
    assert!(
        array.contains(&format!("N={n}")),
        "N must equal the array size"
    );

    let d = TempDir::new("cluster");
    // The doc's scripts name the shipped calibration demo.
    const DEMO: &str = "level_schemes/two_level_calibration.yaml";
    assert!(array.contains(DEMO));
    fs::create_dir_all(d.path("level_schemes")).unwrap();
    fs::copy(root.join(DEMO), d.path(DEMO)).unwrap();
    fs::create_dir_all(d.path("bin")).unwrap();
    std::os::unix::fs::symlink(env!("CARGO_BIN_EXE_levelplan"), d.path("bin/levelplan")).unwrap();
    fs::write(d.path("scan_array.sbatch"), &array).unwrap();
    fs::write(d.path("merge.sbatch"), &merge).unwrap();
    let path = format!(
        "{}:{}",
        d.path("bin").display(),
        std::env::var("PATH").unwrap_or_default()
    );
    let bash = |script: &str, task: Option<usize>| {
        let mut c = Command::new("bash");
        c.arg(script).current_dir(&d.0).env("PATH", &path);
        if let Some(k) = task {
            c.env("SLURM_ARRAY_TASK_ID", k.to_string())
                .env("SLURM_CPUS_PER_TASK", "1");
        }
        let o = c.output().unwrap();
        assert!(o.status.success(), "{script} {task:?}: {}", stderr(&o));
    };
    // The array tasks in a scrambled order, each its own process.
    for k in (1..=n)
        .rev()
        .step_by(2)
        .chain((1..=n).rev().skip(1).step_by(2))
    {
        bash("scan_array.sbatch", Some(k));
    }
    bash("merge.sbatch", None);
    let whole = ok(&[
        "scan",
        DEMO,
        "--vary",
        "fields.probe.envelope.duration=10ns..1000ns:5:log",
        "--vary",
        "fields.probe.tuned.detuning=-100MHz..100MHz:7",
    ]);
    assert_eq!(fs::read(d.path("scan.csv")).unwrap(), whole.stdout);
    let svg = fs::read_to_string(d.path("scan.svg")).unwrap();
    assert!(svg.contains("largest spectator population"));
    assert_eq!(Table::read(&d.path("scan.csv")).rows.len(), 35);
}
