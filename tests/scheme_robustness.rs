//! The parser answers every input with a model or a clean error: random
//! mutations of the demo schemes and extreme values never panic, and a
//! returned model holds only finite numbers.

use levelplan::model::Model;
use levelplan::scheme;
use std::path::Path;

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

fn all_finite(m: &Model) -> bool {
    m.levels
        .iter()
        .all(|l| l.omega.is_finite() && l.gamma.is_finite())
        && m.couplings.iter().all(|c| c.dipole.value().is_finite())
        && m.fields.iter().all(|f| {
            f.omega.is_finite()
                && f.chirp.is_finite()
                && f.phase.is_finite()
                && f.peak_intensity.is_none_or(f64::is_finite)
                && f.envelope.area().is_finite()
        })
        && m.drives.iter().all(|d| d.rabi.is_finite())
        && m.initial.iter().all(|p| p.is_finite())
        && m.window.start.is_finite()
        && m.window.end.is_finite()
}

fn demos() -> Vec<String> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("level_schemes");
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .map(|p| std::fs::read_to_string(p).unwrap())
        .collect();
    v.sort();
    v
}

const PIECES: &[&str] = &[
    "",
    " ",
    "\n",
    ":",
    "- ",
    "[",
    "]",
    "{",
    "}",
    ",",
    "\"",
    "'",
    "#",
    "&a ",
    "*a",
    "0",
    "-1",
    "1e999",
    "1e-320",
    "nan",
    ".inf",
    "pi",
    " ns",
    " MHz",
    " ea0",
    " cm^-1",
    " W/cm^2",
    "µ",
    "é",
    "\t",
    "~",
    "null",
    "true",
    "shape: samples",
    "energy: ",
    "  ",
    "    ",
];

#[test]
fn random_mutations_never_panic() {
    let mut rng = Lcg(0x5eed);
    let texts = demos();
    let mut ok = 0;
    let mut err = 0;
    for case in 0..4000 {
        let base = &texts[case % texts.len()];
        let mut t: Vec<char> = base.chars().collect();
        for _ in 0..1 + rng.below(4) {
            let at = rng.below(t.len() + 1);
            let len = rng.below(6).min(t.len() - at.min(t.len()));
            let piece: Vec<char> = PIECES[rng.below(PIECES.len())].chars().collect();
            t.splice(at..at + len, piece);
        }
        let text: String = t.into_iter().collect();
        match scheme::parse(&text, "fuzz.yaml") {
            Ok(m) => {
                assert!(all_finite(&m), "non-finite model from:\n{text}");
                ok += 1;
            }
            Err(e) => {
                assert!(!e.diagnostics.is_empty());
                let shown = e.to_string();
                assert!(!shown.is_empty() && !shown.contains("NaN Hz"));
                err += 1;
            }
        }
    }
    // Both outcomes occur, so the mutations are neither all fatal nor all harmless.
    assert!(ok > 100 && err > 100, "ok {ok}, err {err}");
}

#[test]
fn extreme_values_are_refused_not_propagated() {
    let base = "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1 eV, lifetime: 10 ns}\ninitial: g\n\
        couplings:\n  - {between: [g, e], dipole: 1 ea0}\n\
        fields:\n  L:\n    wavelength: 1000 nm\n    intensity: 1 W/cm^2\n\
        \x20   envelope: {shape: gaussian, center: 0 s, sigma: 1 ns}\n";
    assert!(scheme::parse(base, "x").is_ok());
    let cases = [
        (
            "wavelength: 1000 nm",
            "wavelength: 1e-320 m",
            "fields.L",
            "out-of-range",
        ),
        (
            "lifetime: 10 ns",
            "lifetime: 1e-320 s",
            "levels.e",
            "out-of-range",
        ),
        // Refused by the pulse-axis time limit (scheme::MAX_TIME_S) before
        // the envelope is built.
        (
            "sigma: 1 ns",
            "sigma: 1e308 s",
            "fields.L.envelope.sigma",
            "'1e308 s'",
        ),
        (
            "intensity: 1 W/cm^2",
            "power: 1e300 W\n    waist: 1e-300 m",
            "fields.L",
            "out-of-range",
        ),
    ];
    for (from, to, path, found) in cases {
        let text = base.replace(from, to);
        let e = scheme::parse(&text, "x").unwrap_err();
        assert!(
            e.diagnostics
                .iter()
                .any(|d| d.path == path && d.found.contains(found)),
            "{to}: {e}"
        );
    }
}

#[test]
fn aliases_may_repeat_an_envelope() {
    let text = "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1 eV}\ninitial: g\n\
        couplings:\n  - {between: [g, e], dipole: 1}\n\
        fields:\n  A:\n    frequency: 241 THz\n    rabi: {on: [g, e], value: 1 MHz}\n\
        \x20   envelope: &pulse {shape: sin2, start: 0 ns, duration: 50 ns}\n\
        \x20 B:\n    frequency: 242 THz\n    rabi: {on: [g, e], value: 2 MHz}\n    envelope: *pulse\n";
    let m = scheme::parse(text, "x").unwrap();
    assert_eq!(m.fields[0].envelope, m.fields[1].envelope);
}

#[test]
fn many_problems_are_capped_and_fast() {
    let mut text = String::from(
        "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1 eV}\ninitial: g\n\
         couplings:\n  - {between: [g, e], dipole: 1}\n\
         fields:\n  L:\n    frequency: 241 THz\n    rabi: {on: [g, e], value: 1 MHz}\n\
         \x20   envelope:\n      shape: samples\n      points:\n",
    );
    let n = 40_000;
    for k in 0..n {
        text.push_str(&format!("        - [{k} ns, -1]\n"));
    }
    assert!(text.len() < levelplan::yaml::MAX_FILE_BYTES);
    let t = std::time::Instant::now();
    let e = scheme::parse(&text, "x").unwrap_err();
    let dt = t.elapsed().as_secs_f64();
    assert_eq!(e.diagnostics.len(), scheme::MAX_DIAGNOSTICS + 1);
    let last = e.diagnostics.last().unwrap();
    assert_eq!(
        last.found,
        format!("{} more problems, not shown", n - scheme::MAX_DIAGNOSTICS)
    );
    assert_eq!(e.diagnostics[0].line, Some(14));
    assert!(dt < 5.0, "took {dt} s");
}

/// Differential check of the YAML flow-depth pre-check against the YAML
/// library, on texts built from the pieces that decide where a flow
/// collection can start (block indicators, plain and quoted scalars,
/// comments, block scalars, document markers, every line break the library
/// knows) around runs of 130 brackets: whatever the pre-check refuses, the
/// library must refuse too. The fuzzer's `scheme_parse` target asserts the
/// same (it found the two false refusals in `docs/reliability.md`); this
/// keeps a fast version of it in the suite.
#[test]
fn flow_depth_pre_check_never_refuses_what_the_library_reads() {
    let deep_open = "[".repeat(130);
    let deep_map = "{".repeat(130);
    let pieces: &[&str] = &[
        "- ", "? ", ": ", ":", "-", "?", "key: ", "k:", "x", "x y", "it's", "[", "]", "{", "}",
        ", ", ",", "\"q[\"", "'a''b['", "# c", " #", "#", "\n", "\n  ", "\n    ", "\r", "\r\n",
        "\u{85}", "\u{2028}", "|", ">-", "&a ", "*a", "!!str ", "---", "--- ", "...", " ", "\t",
        &deep_open, &deep_map,
    ];
    let mut rng = Lcg(0x5eed_f10e);
    let (mut refused, mut agreed) = (0, 0);
    for _ in 0..20_000 {
        let n = 2 + rng.below(10);
        let text: String = (0..n).map(|_| pieces[rng.below(pieces.len())]).collect();
        if levelplan::yaml::check_flow_depth(&text).is_err() {
            refused += 1;
            assert!(
                levelplan::yaml::count_nodes(&text).is_err(),
                "the pre-check refuses a text the YAML library reads: {text:?}"
            );
        } else {
            agreed += 1;
        }
    }
    // Both outcomes occur, so the check is not vacuous.
    assert!(
        refused > 1_000 && agreed > 1_000,
        "refused {refused}, passed {agreed}"
    );
}
