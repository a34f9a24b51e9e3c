//! The open-system columns of the `evolve` and `scan` CSVs through the
//! binary: `lost` and the cumulative `scattered_photons` for a scheme that
//! uses the open-system keys, agreeing with `vet --format json`; resume of
//! a scan with them; version-1 CSVs without them; and the note on a
//! version-1 initial map of several levels, the same in `vet` and
//! `inspect`.
//!
//! The schemes are invented and illustrative (tests/fixtures/open/).

use crate::cli_support::table::Table;
use crate::cli_support::{bin_at_root as bin, ok};
use serde_json::Value;
use std::fs;
use std::path::PathBuf;
use std::process::Output;

const LAMBDA: &str = "tests/fixtures/open/b_lambda_pumping.yaml";
const TWO_LEVEL: &str = "tests/fixtures/two_level_scan.yaml";

fn text(o: &Output) -> String {
    String::from_utf8(o.stdout.clone()).expect("UTF-8")
}

fn vet_json(scheme: &str) -> Value {
    let o = bin()
        .args(["vet", scheme, "--format", "json"])
        .output()
        .unwrap();
    serde_json::from_slice(&o.stdout).expect("vet JSON")
}

/// Header and numeric rows of a CSV after its `#` lines (an empty field,
/// no estimate, as NaN).
fn table(csv: &str) -> (Vec<String>, Vec<Vec<f64>>) {
    let t = Table::parse(csv);
    let rows = t
        .rows
        .into_iter()
        .map(|r| r.into_iter().map(|v| v.unwrap_or(f64::NAN)).collect())
        .collect();
    (t.columns, rows)
}

fn scratch(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("levelplan-open-csv-{tag}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn evolve_csv_of_an_open_scheme_ends_in_the_vet_values() {
    let csv = text(&ok(&["evolve", LAMBDA, "--samples", "101"]));
    let (header, rows) = table(&csv);
    assert_eq!(
        header,
        ["time_s", "g1", "g2", "e", "lost", "scattered_photons"]
    );
    assert_eq!(rows.len(), 101);
    let v = vet_json(LAMBDA);
    assert_eq!(v["dynamics"], "density_matrix");
    let last = rows.last().unwrap();
    let lost = v["lost_population"].as_f64().unwrap();
    let photons = v["scattered_photons"].as_f64().unwrap();
    assert!(photons > 0.1, "the pump scatters: {photons}");
    assert!((last[4] - lost).abs() <= 1e-9, "{} vs {lost}", last[4]);
    assert!(
        (last[5] - photons).abs() <= 1e-9,
        "{} vs {photons}",
        last[5]
    );
    // The photons are counted from the window start and only grow.
    assert_eq!(rows[0][5], 0.0);
    for w in rows.windows(2) {
        assert!(w[1][5] >= w[0][5], "{} after {}", w[1][5], w[0][5]);
    }
    // Every decay here lands in g1 or g2: nothing leaves the scheme, and
    // lost is 1 - the sum of the populations (to the run's norm error).
    // g2 is not driven and receives half of every emission from e, so at
    // every sample the photons so far are 2 P(g2) (the branching fractions
    // of the fixture; common practice, no source).
    for r in &rows {
        assert!((r[5] - 2.0 * r[2]).abs() <= 1e-9, "{r:?}");
        assert!(r[4].abs() <= 1e-9, "lost {}", r[4]);
        assert!((1.0 - r[1] - r[2] - r[3] - r[4]).abs() <= 1e-8, "{r:?}");
    }
}

/// A two-level scheme whose upper level decays out of the scheme, read out
/// after the window: an open-system key (`readout`) on the amplitude
/// equation, where every decay is one photon and one atom lost.
const LEAKY: &str = r#"
title: "leaky two-level, read out settled (invented)"
levels:
  g: { energy: "0 THz" }
  e: { energy: "400 THz", lifetime: "50 ns" }
initial: g
targets: [e]
couplings:
  - between: [g, e]
    dipole: 1.0
    fields: [probe]
fields:
  probe:
    tuned: { to: [g, e], detuning: "0 MHz" }
    rabi: { on: [g, e], value: "5 MHz" }
    envelope: { shape: rectangular, start: "0 us", duration: "0.4 us" }
window: { start: "0 us", end: "0.4 us" }
readout: settled
solver: { rtol: 1e-10, atol: 1e-12 }
"#;

#[test]
fn evolve_csv_of_an_amplitude_run_with_an_open_key_counts_its_losses_as_photons() {
    let d = scratch("leaky");
    let scheme = d.join("leaky.yaml");
    fs::write(&scheme, LEAKY).unwrap();
    let s = scheme.to_str().unwrap();
    let v = vet_json(s);
    assert_eq!(v["dynamics"], "amplitudes");
    let (header, rows) = table(&text(&ok(&["evolve", s, "--samples", "41"])));
    assert_eq!(header, ["time_s", "g", "e", "lost", "scattered_photons"]);
    for r in &rows {
        assert_eq!(r[3], r[4], "amplitudes: each loss is one emission");
        assert!((1.0 - r[1] - r[2] - r[3]).abs() <= 1e-8, "{r:?}");
    }
    let last = rows.last().unwrap();
    assert!(last[3] > 0.1, "e decays during the pulse: {}", last[3]);
    // The settled loss adds what e still holds at the window end.
    let settled = v["lost_population"].as_f64().unwrap();
    assert!((settled - (last[3] + last[2])).abs() <= 1e-9, "{settled}");
    fs::remove_dir_all(&d).unwrap();
}

#[test]
fn version_1_csvs_have_no_open_columns() {
    let (header, _) = table(&text(&ok(&["evolve", TWO_LEVEL, "--samples", "3"])));
    assert_eq!(header, ["time_s", "g", "e"]);
    let scan = text(&ok(&[
        "scan",
        TWO_LEVEL,
        "--vary",
        "fields.probe.tuned.detuning=-1..1:3",
    ]));
    let (header, _) = table(&scan);
    assert_eq!(header.last().map(String::as_str), Some("est(e)"));
}

#[test]
fn scan_of_an_open_scheme_carries_lost_and_photons_and_resumes() {
    let d = scratch("scan");
    let out = d.join("lambda.csv");
    let out_s = out.to_str().unwrap().to_string();
    let vary = "fields.pump.tuned.detuning=-6..0:3";
    ok(&["scan", LAMBDA, "--vary", vary, "--out", &out_s]);
    let full = fs::read_to_string(&out).unwrap();
    let (header, rows) = table(&full);
    let n = header.len();
    assert_eq!(&header[n - 2..], ["lost", "scattered_photons"]);
    assert_eq!(rows.len(), 3);
    // The point at -3 MHz is the fixture itself: its vet values.
    let v = vet_json(LAMBDA);
    let at = rows.iter().find(|r| (r[0] + 3.0).abs() < 1e-12).unwrap();
    let lost = v["lost_population"].as_f64().unwrap();
    let photons = v["scattered_photons"].as_f64().unwrap();
    assert!((at[n - 2] - lost).abs() <= 1e-9, "{} vs {lost}", at[n - 2]);
    assert!(
        (at[n - 1] - photons).abs() <= 1e-9,
        "{} vs {photons}",
        at[n - 1]
    );
    // Closer to resonance, more photons.
    assert!(rows[2][n - 1] > rows[0][n - 1], "{rows:?}");
    // A scan killed after two rows and a half resumes to the same bytes.
    let partial = d.join(".lambda.csv.partial");
    let body: usize = full.lines().take_while(|l| l.starts_with('#')).count() + 3;
    let keep: usize = full.lines().take(body).map(|l| l.len() + 1).sum::<usize>() + 7;
    fs::write(&partial, &full[..keep]).unwrap();
    fs::remove_file(&out).unwrap();
    ok(&["scan", LAMBDA, "--vary", vary, "--out", &out_s, "--resume"]);
    assert_eq!(fs::read_to_string(&out).unwrap(), full);
    assert!(!partial.exists());
    fs::remove_dir_all(&d).unwrap();
}

/// A version-1 scheme with two initially populated levels.
const TWO_INITIAL: &str = r#"
levels:
  a: { energy: "0 THz" }
  b: { energy: "1 GHz" }
  e: { energy: "400 THz" }
initial: { a: 0.5, b: 0.5 }
targets: [e]
couplings:
  - between: [a, e]
    dipole: 1.0
    fields: [probe]
fields:
  probe:
    tuned: { to: [a, e], detuning: "0 MHz" }
    rabi: { on: [a, e], value: "1 MHz" }
    envelope: { shape: rectangular, start: "0 us", duration: "0.5 us" }
window: { start: "0 us", end: "0.5 us" }
"#;

#[test]
fn vet_and_inspect_say_how_a_version_1_initial_map_is_taken() {
    let d = scratch("initial");
    let scheme = d.join("two_initial.yaml");
    fs::write(&scheme, TWO_INITIAL).unwrap();
    let s = scheme.to_str().unwrap();
    let note = "initial: the populations are taken as a coherent superposition (amplitudes sqrt(p), phase 0); write initial: {mixture: {...}} for an incoherent mixture.";
    let vet = text(&bin().args(["vet", s]).output().unwrap());
    let inspect = text(&ok(&["inspect", s]));
    assert!(vet.contains(note), "{vet}");
    assert!(inspect.contains(note), "{inspect}");
    // Not in the JSON, and not for a single initial level or a mixture.
    assert!(!text(&ok(&["inspect", s, "--format", "json"])).contains("superposition"));
    let single = TWO_INITIAL.replace("{ a: 0.5, b: 0.5 }", "a");
    let mixture = TWO_INITIAL.replace("{ a: 0.5, b: 0.5 }", "{ mixture: { a: 0.5, b: 0.5 } }");
    for other in [single, mixture] {
        fs::write(&scheme, other).unwrap();
        assert!(!text(&ok(&["inspect", s])).contains("initial:"));
    }
    fs::remove_dir_all(&d).unwrap();
}

#[test]
fn evolve_csv_with_a_readout_inside_the_window_keeps_its_samples_and_columns() {
    // The readout time (397.9 ns) is not one of the 11 sample times: the
    // record made for it is taken out of the samples with its lost and
    // photon values, and the CSV has exactly the samples asked for.
    let scheme = "tests/fixtures/open/obe_torrey_readout.yaml";
    let (header, rows) = table(&text(&ok(&["evolve", scheme, "--samples", "11"])));
    assert_eq!(&header[header.len() - 2..], ["lost", "scattered_photons"]);
    assert_eq!(rows.len(), 11);
    let n = header.len();
    for (i, r) in rows.iter().enumerate() {
        assert!((r[0] - i as f64 * 1e-7).abs() <= 1e-15, "{r:?}");
        assert!(r[n - 1] >= 0.0 && r[n - 2] >= 0.0, "{r:?}");
    }
    for w in rows.windows(2) {
        assert!(w[1][n - 1] >= w[0][n - 1], "{:?} after {:?}", w[1], w[0]);
    }
    // Photons cover the whole window whatever the readout.
    let photons = vet_json(scheme)["scattered_photons"].as_f64().unwrap();
    assert!((rows[10][n - 1] - photons).abs() <= 1e-9, "{photons}");
}

#[test]
fn evolve_csv_lost_is_what_leaves_through_an_open_decay() {
    // Part of the decay of e leaves the scheme: lost grows, and at the
    // window end it is vet's lost_population (readout at the window end).
    let scheme = "tests/fixtures/open/c_dephasing_partial_decay.yaml";
    let (header, rows) = table(&text(&ok(&["evolve", scheme, "--samples", "41"])));
    let n = header.len();
    let lost = vet_json(scheme)["lost_population"].as_f64().unwrap();
    assert!(lost > 1e-3, "the fixture loses population: {lost}");
    assert!(
        (rows[40][n - 2] - lost).abs() <= 1e-9,
        "{} vs {lost}",
        rows[40][n - 2]
    );
    for r in &rows {
        let sum: f64 = r[1..n - 2].iter().sum();
        assert!((1.0 - sum - r[n - 2]).abs() <= 1e-8, "{r:?}");
        // Each atom lost emitted a photon on its way out.
        assert!(r[n - 1] >= r[n - 2] - 1e-12, "{r:?}");
    }
}
