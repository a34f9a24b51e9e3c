//! Linked scan axes (`scan --vary ... --with ...`) and level-energy scans
//! end to end: linked values against a hand-computed pair, one column per
//! linked path, the scan hash, resume and merge, every refusal; a level
//! moved through a fixed laser against the Rabi formula, and the
//! `--tuned-follows` way back to a laser that follows its level.
//!
//! The schemes are invented and illustrative.

use crate::cli_support::table::Table;
use crate::cli_support::{bin_at_root as bin, ok, scratch};
use std::f64::consts::PI;
use std::fs;
use std::process::Output;

const LADDER: &str = "level_schemes/cookbook/velocity_ladder.yaml";
const LOWER: &str = "fields.lower.tuned.detuning";
const UPPER: &str = "fields.upper.tuned.detuning";
const TWO_LEVEL: &str = "tests/fixtures/two_level_scan.yaml";

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("the binary runs")
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// The run exits 2 and says `needle` on stderr.
fn refused(args: &[&str], needle: &str) {
    let o = run(args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert!(
        err.contains(needle),
        "{args:?}: expected '{needle}' in: {err}"
    );
}

/// The (populations) fields of a row: everything after the coordinates.
fn body(line: &str, n_coords: usize) -> String {
    line.splitn(n_coords + 1, ',').last().unwrap().to_string()
}

#[test]
fn linked_paths_step_with_their_axis_over_their_own_range() {
    // Velocity classes v = -10, -5, 0, 5, 10 m/s of the counter-propagating
    // ladder: the lower beam (800 nm, along +x) is seen at 500 MHz - v/800nm
    // = 500 - 1.25 v MHz, the upper (500 nm, along -x) at -500 MHz +
    // v/500nm = -500 + 2 v MHz (first-order Doppler shift, common practice,
    // no source). Hand-computed pairs:
    let want = [
        (512.5, -520.0),
        (506.25, -510.0),
        (500.0, -500.0),
        (493.75, -490.0),
        (487.5, -480.0),
    ];
    let vary = format!("{LOWER}=512.5MHz..487.5MHz:5");
    let with = format!("{UPPER}=-520MHz..-480MHz");
    let text = stdout(&ok(&["scan", LADDER, "--vary", &vary, "--with", &with]));
    let tab = Table::parse(&text);
    assert_eq!(
        tab.columns[..4],
        [
            "fields.lower.tuned.detuning [MHz]",
            "fields.upper.tuned.detuning [MHz]",
            "P(g)",
            "P(e)"
        ]
    );
    let (d1, d2) = (tab.values(&tab.columns[0]), tab.values(&tab.columns[1]));
    for (k, &(a, b)) in want.iter().enumerate() {
        assert!(
            (d1[k] - a).abs() < 1e-12 && (d2[k] - b).abs() < 1e-12,
            "row {k}: {} {}",
            d1[k],
            d2[k]
        );
    }
    assert!(text.contains("\n# with 1: fields.upper.tuned.detuning from -5.2e2 to -4.8e2 MHz\n"));
    // Each linked row is the scheme at that pair: the same bytes as a
    // one-point scan of both values given apart.
    let rows: Vec<&str> = text
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .collect();
    for (k, &(a, b)) in want.iter().enumerate() {
        let one = stdout(&ok(&[
            "scan",
            LADDER,
            "--vary",
            &format!("{LOWER}={a}MHz..{a}MHz:1"),
            "--vary",
            &format!("{UPPER}={b}MHz..{b}MHz:1"),
        ]));
        let line = one.lines().last().unwrap();
        assert_eq!(body(rows[k], 2), body(line, 2), "v class {k}");
    }
    // At rest the pair is a pi pulse on two-photon resonance (the scheme's
    // hand check); five m/s off, the two-photon detuning 0.75 MHz per m/s
    // takes most of it away.
    let pr = tab.values("P(r)");
    assert!(pr[2] > 0.999, "{}", pr[2]);
    assert!(pr[1] < 0.5 && pr[3] < 0.5, "{pr:?}");
    // A link may use another unit of the same dimension; the values are the
    // same physics.
    let ghz = stdout(&ok(&[
        "scan",
        LADDER,
        "--vary",
        &vary,
        "--with",
        &format!("{UPPER}=-0.52GHz..-0.48GHz"),
    ]));
    let g = Table::parse(&ghz);
    assert_eq!(g.columns[1], "fields.upper.tuned.detuning [GHz]");
    for (x, y) in g.values("P(r)").iter().zip(&pr) {
        assert!((x - y).abs() < 1e-9);
    }
}

#[test]
fn links_change_the_hash_and_old_partial_files_are_refused() {
    let d = scratch("links-resume");
    let vary = format!("{LOWER}=512.5MHz..487.5MHz:7");
    let with = format!("{UPPER}=-520MHz..-480MHz");
    let hash = |args: &[&str]| -> String {
        let mut all = vec!["scan", LADDER, "--vary", &vary];
        all.extend(args);
        let text = stdout(&ok(&all));
        text.lines()
            .find(|l| l.starts_with("# scan "))
            .unwrap()
            .to_string()
    };
    let plain = hash(&[]);
    let linked = hash(&["--with", &with]);
    let other = hash(&["--with", &format!("{UPPER}=-520MHz..-479MHz")]);
    assert_ne!(plain, linked);
    assert_ne!(linked, other);
    // A partial file of the scan without the link is not resumed by the
    // linked scan (nor the other way round): the message names the line.
    let out = d.join("scan.csv");
    let partial = d.join(".scan.csv.partial");
    let out_s = out.display().to_string();
    ok(&["scan", LADDER, "--vary", &vary, "--out", &out_s]);
    fs::rename(&out, &partial).unwrap();
    let o = run(&[
        "scan", LADDER, "--vary", &vary, "--with", &with, "--out", &out_s, "--resume",
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("different scan") && err.contains("# with 1:"),
        "{err}"
    );
    assert!(!out.exists());
    // A linked scan resumes from its own partial file to the same bytes.
    fs::remove_file(&partial).unwrap();
    ok(&[
        "scan", LADDER, "--vary", &vary, "--with", &with, "--out", &out_s,
    ]);
    let whole = fs::read_to_string(&out).unwrap();
    let cut = whole.len() - whole.lines().last().unwrap().len() / 2 - 1;
    fs::write(&partial, &whole[..cut]).unwrap();
    fs::remove_file(&out).unwrap();
    ok(&[
        "scan", LADDER, "--vary", &vary, "--with", &with, "--out", &out_s, "--resume",
    ]);
    assert_eq!(fs::read_to_string(&out).unwrap(), whole);
    // Shards of a linked scan merge to the same bytes, and the merged file
    // plots (its head is read back with the link).
    let mut parts = Vec::new();
    for k in ["1/2", "2/2"] {
        let p = d.join(format!("part{}.csv", &k[..1])).display().to_string();
        ok(&[
            "scan", LADDER, "--vary", &vary, "--with", &with, "--shard", k, "--out", &p,
        ]);
        parts.push(p);
    }
    let merged = d.join("merged.csv").display().to_string();
    let svg = d.join("merged.svg").display().to_string();
    ok(&[
        "merge", &parts[0], &parts[1], "--out", &merged, "--plot", &svg,
    ]);
    assert_eq!(fs::read_to_string(&merged).unwrap(), whole);
    assert!(fs::read_to_string(&svg).unwrap().starts_with("<svg"));
    let _ = fs::remove_dir_all(&d);
}

#[test]
fn bad_links_are_refused_with_exit_2() {
    let vary = format!("{LOWER}=512.5MHz..487.5MHz:5");
    let with = format!("{UPPER}=-520MHz..-480MHz");
    // A --with before any --vary.
    refused(
        &["scan", LADDER, "--with", &with, "--vary", &vary],
        "put it after its --vary",
    );
    // A range count other than its axis's.
    refused(
        &[
            "scan",
            LADDER,
            "--vary",
            &vary,
            "--with",
            &format!("{with}:4"),
        ],
        "the range has 4 points but the --vary fields.lower.tuned.detuning it steps with has 5",
    );
    // A path both varied and linked, or linked twice.
    refused(
        &[
            "scan",
            LADDER,
            "--vary",
            &vary,
            "--with",
            &format!("{LOWER}=1MHz..2MHz"),
        ],
        "both varied",
    );
    refused(
        &[
            "scan", LADDER, "--vary", &vary, "--with", &with, "--with", &with,
        ],
        "linked twice",
    );
    // Units: two on one range, one of the wrong dimension, one on a bare
    // number.
    refused(
        &[
            "scan",
            LADDER,
            "--vary",
            &vary,
            "--with",
            &format!("{UPPER}=-520MHz..-0.48GHz"),
        ],
        "different units",
    );
    refused(
        &[
            "scan",
            LADDER,
            "--vary",
            &vary,
            "--with",
            &format!("{UPPER}=-520ns..-480ns"),
        ],
        UPPER,
    );
    refused(
        &[
            "scan",
            LADDER,
            "--vary",
            &vary,
            "--with",
            "tolerance=1e-3MHz..2e-3MHz",
        ],
        "bare number",
    );
    // A path the scheme does not hold, and a ':log' of its own.
    refused(
        &[
            "scan",
            LADDER,
            "--vary",
            &vary,
            "--with",
            "fields.nope.tuned.detuning=1MHz..2MHz",
        ],
        "fields.nope",
    );
    refused(
        &[
            "scan",
            LADDER,
            "--vary",
            &vary,
            "--with",
            &format!("{with}:log"),
        ],
        "':log' belongs",
    );
    // tune searches one value.
    refused(
        &[
            "tune",
            LADDER,
            "--vary",
            &format!("{LOWER}=490MHz..510MHz"),
            "--with",
            &with,
            "--maximize",
            "r",
        ],
        "tune searches one value",
    );
}

/// Rabi formula for a rectangular pulse from the ground state:
/// P_e = Omega^2 / W^2 sin^2(W T / 2), W = sqrt(Omega^2 + Delta^2)
/// (standard two-level result, C. J. Foot, Atomic Physics, OUP 2005, from
/// memory); Delta, Omega in rad/s.
fn rabi(omega: f64, delta: f64, t: f64) -> f64 {
    let w = (omega * omega + delta * delta).sqrt();
    (omega / w).powi(2) * (0.5 * w * t).sin().powi(2)
}

#[test]
fn a_level_energy_scan_moves_the_level_through_a_fixed_laser() {
    // The two-level fixture: a resonant pi pulse, Omega/2pi = 5 MHz for
    // 100 ns, laser tuned to [g, e] at 0 MHz. Move e by +-25 MHz.
    let e0 = 24512.37; // cm^-1, the scheme's
    let c_cm = 299_792_458.0 * 100.0; // Hz per cm^-1 (c, CODATA 2018, exact)
    let span = 25e6 / c_cm;
    let vary = format!("levels.e.energy={}..{}:41", e0 - span, e0 + span);
    let tab = Table::parse(&stdout(&ok(&["scan", TWO_LEVEL, "--vary", &vary])));
    let x = tab.values("levels.e.energy [cm^-1]");
    let pe = tab.values("P(e)");
    let (omega, t) = (2.0 * PI * 5e6, 100e-9);
    for k in 0..x.len() {
        // The laser stays at the line of the scheme as written: its
        // detuning from the moved level is (E0 - E) c.
        let delta = 2.0 * PI * (e0 - x[k]) * c_cm;
        let want = rabi(omega, delta, t);
        assert!(
            (pe[k] - want).abs() < 1e-6,
            "E = {} cm^-1: {} vs {want}",
            x[k],
            pe[k]
        );
    }
    // A resonance: peaked where the level meets the laser, small away.
    let peak = (0..pe.len())
        .max_by(|&a, &b| pe[a].total_cmp(&pe[b]))
        .unwrap();
    assert_eq!(peak, 20);
    assert!(
        pe[20] > 1.0 - 1e-6 && pe[0] < 0.05 && pe[40] < 0.05,
        "{pe:?}"
    );
    // --tuned-follows: the laser follows the level, the population stays
    // at the pi pulse's everywhere (the behaviour before, kept on request).
    let follow = Table::parse(&stdout(&ok(&[
        "scan",
        TWO_LEVEL,
        "--vary",
        &vary,
        "--tuned-follows",
    ])));
    for p in follow.values("P(e)") {
        assert!((p - 1.0).abs() < 1e-6, "{p}");
    }
    // The detuning still moves the laser in a fixed-laser scan: both varied
    // together, the level's move is undone by an equal detuning.
    let both = Table::parse(&stdout(&ok(&[
        "scan",
        TWO_LEVEL,
        "--vary",
        &vary,
        "--with",
        "fields.probe.tuned.detuning=-25MHz..25MHz",
    ])));
    for p in both.values("P(e)") {
        assert!((p - 1.0).abs() < 1e-6, "{p}");
    }
}

#[test]
fn scans_that_move_no_level_ignore_tuned_follows() {
    // A scan of something else than levels (a detuning) gives the same
    // bytes with and without --tuned-follows: only level moves are fixed.
    let vary = format!("{LOWER}=490MHz..510MHz:5");
    let a = ok(&["scan", LADDER, "--vary", &vary]).stdout;
    let b = ok(&["scan", LADDER, "--vary", &vary, "--tuned-follows"]).stdout;
    assert_eq!(a, b);
}
