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
    m.levels()
        .iter()
        .all(|l| l.omega.is_finite() && l.gamma.is_finite())
        && m.couplings().iter().all(|c| c.dipole.value().is_finite())
        && m.fields().iter().all(|f| {
            f.omega.is_finite()
                && f.chirp.is_finite()
                && f.phase.is_finite()
                && f.peak_intensity.is_none_or(f64::is_finite)
                && f.envelope.area().is_finite()
        })
        && m.drives().iter().all(|d| d.rabi.is_finite())
        && m.initial().iter().all(|p| p.is_finite())
        && m.window().start.is_finite()
        && m.window().end.is_finite()
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
    assert_eq!(m.fields()[0].envelope, m.fields()[1].envelope);
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

// The YAML reader's deliberate readings, one test each; the list is in
// docs/scheme-format.md ("How the YAML is read").

/// A small valid two-level scheme; `DIPOLE` and the level id `e` are
/// replaced by the tests.
const SMALL: &str = "levels:\n  g: {energy: 0 eV}\n  e: {energy: 1 eV}\ninitial: g\n\
    couplings:\n  - {between: [g, e], dipole: DIPOLE}\nfields:\n  probe:\n    \
    tuned: {to: [g, e], detuning: 0 MHz}\n    intensity: 1 W/cm^2\n    \
    envelope: {shape: rectangular, start: 0 ns, duration: 100 ns}\n";

fn small(dipole: &str) -> String {
    SMALL.replace("DIPOLE", dipole)
}

/// The Rabi frequency of the one drive when the coupling is given by an
/// Einstein A coefficient and this upper-level degeneracy.
fn rabi_of(g_upper: &str) -> f64 {
    let text = small("1").replace(
        "dipole: 1",
        &format!("einstein_a: 1e6 s^-1, g_lower: 1, g_upper: {g_upper}"),
    );
    scheme::parse(&text, "x")
        .unwrap_or_else(|e| panic!("{e}"))
        .drives()[0]
        .rabi
}

/// SMALL with the level `e` renamed.
fn renamed(id: &str) -> String {
    small("\"1 ea0\"")
        .replace("  e:", &format!("  {id}:"))
        .replace("[g, e]", &format!("[g, {id}]"))
}

#[test]
fn yaml_1_1_booleans_are_text_so_such_ids_work() {
    // `yes`, `no`, `on`, `off`, `y`, `n` are booleans in YAML 1.1, text in
    // YAML 1.2 and here: a level may be called `n`.
    for id in ["n", "y", "yes", "no", "on", "off", "Y", "N"] {
        let m = scheme::parse(&renamed(id), "x").unwrap_or_else(|e| panic!("{id}: {e}"));
        assert_eq!(m.levels()[1].id, id);
    }
    // Where a boolean is wanted, only true/false are.
    let text = small("\"1 ea0\"").replace("    intensity:", "    rwa: yes\n    intensity:");
    let e = scheme::parse(&text, "x").unwrap_err();
    let d = &e.diagnostics[0];
    assert_eq!((d.line, d.column), (Some(10), Some(10)), "{e}");
    assert_eq!(d.path, "fields.probe.rwa");
    assert!(d.expected.contains("true or false"), "{e}");
    assert_eq!(d.found, "the string 'yes'");
}

#[test]
fn dot_inf_and_dot_nan_are_read_as_numbers_and_refused() {
    for (v, shown) in [(".inf", "'inf'"), ("-.Inf", "'-inf'"), (".nan", "'NaN'")] {
        let e = scheme::parse(&small(v), "x").unwrap_err();
        let d = &e.diagnostics[0];
        assert_eq!(
            (d.line, d.path.as_str()),
            (Some(6), "couplings[0].dipole"),
            "{e}"
        );
        assert!(d.found.contains(shown), "{v}: {e}");
        assert!(d.found.contains("not a finite number"), "{v}: {e}");
    }
}

#[test]
fn numbers_beyond_double_range_are_infinite_and_refused() {
    // `1e400` overflows a double: read as infinity (the former reader kept
    // it as the text "1e400"), refused like `.inf`.
    let e = scheme::parse(&small("1e400"), "x").unwrap_err();
    let d = &e.diagnostics[0];
    assert_eq!(
        (d.line, d.path.as_str()),
        (Some(6), "couplings[0].dipole"),
        "{e}"
    );
    assert!(d.found.contains("not a finite number"), "{e}");
    // Within range, exponent notation is a number.
    assert_eq!(rabi_of("1e1"), rabi_of("10"));
}

#[test]
fn leading_zeros_are_decimal_and_ids_keep_them() {
    // `017` is octal 15 in YAML 1.1 and 17 in YAML 1.2; here it is read
    // as written: as a number 17, and as an id "017".
    assert_eq!(rabi_of("017"), rabi_of("17"));
    let m = scheme::parse(&renamed("017"), "x").unwrap();
    assert_eq!(m.levels()[1].id, "017");
}

#[test]
fn explicit_bases_are_numbers() {
    // YAML 1.2 spellings of other bases.
    assert_eq!(rabi_of("0x1F"), rabi_of("31"));
    assert_eq!(rabi_of("0o17"), rabi_of("15"));
}

#[test]
fn underscores_in_numbers_are_text() {
    // `1_000` is 1000 in YAML 1.1, text in YAML 1.2 and here: refused
    // where a number is wanted, with its place.
    let e = scheme::parse(&small("1_000"), "x").unwrap_err();
    let d = &e.diagnostics[0];
    assert_eq!(
        (d.line, d.path.as_str()),
        (Some(6), "couplings[0].dipole"),
        "{e}"
    );
    assert!(d.found.contains("'1_000'"), "{e}");
}

#[test]
fn merge_keys_are_ordinary_keys() {
    // YAML 1.1 merge keys (`<<: *x`) are not applied: `<<` is an unknown key.
    let text = small("\"1 ea0\"").replace(
        "    envelope: {shape: rectangular, start: 0 ns, duration: 100 ns}",
        "    envelope: {<<: {shape: rectangular}, start: 0 ns, duration: 100 ns}",
    );
    let e = scheme::parse(&text, "x").unwrap_err();
    let d = &e.diagnostics[0];
    assert_eq!(d.line, Some(11), "{e}");
    assert_eq!(d.path, "fields.probe.envelope.<<");
    assert_eq!(d.found, "unknown key '<<'");
}

/// Regression: a scheme saved with a UTF-8 byte-order mark (editors on some
/// systems write one) reads like the same text without it.
#[test]
fn a_utf8_byte_order_mark_is_accepted() {
    let text = small("\"1 ea0\"");
    let plain = levelplan::scheme::from_bytes(text.as_bytes(), "s.yaml").unwrap();
    let mut bom = vec![0xef, 0xbb, 0xbf];
    bom.extend_from_slice(text.as_bytes());
    let (m, _) = levelplan::scheme::from_bytes(&bom, "s.yaml").unwrap();
    assert_eq!(
        format!("{:?}", m.levels()),
        format!("{:?}", plain.0.levels())
    );
}

/// Regression: a UTF-16 file was refused as "a byte that is not UTF-8
/// (0xff) at offset 0"; it is now named, with what to do.
#[test]
fn utf16_and_utf32_files_are_named() {
    let text = small("\"1 ea0\"");
    let utf16le: Vec<u8> = [0xff, 0xfe]
        .into_iter()
        .chain(text.encode_utf16().flat_map(u16::to_le_bytes))
        .collect();
    let utf16be_no_bom: Vec<u8> = text.encode_utf16().flat_map(u16::to_be_bytes).collect();
    let utf32le: Vec<u8> = text
        .chars()
        .flat_map(|c| (c as u32).to_le_bytes())
        .collect();
    for (bytes, name) in [
        (utf16le, "UTF-16 (little-endian)"),
        (utf16be_no_bom, "UTF-16 (big-endian)"),
        (utf32le, "UTF-32 (little-endian)"),
    ] {
        let e = levelplan::scheme::from_bytes(&bytes, "s.yaml").unwrap_err();
        let m = e.to_string();
        assert!(
            m.contains(&format!("found a {name} file (save it as UTF-8)")),
            "{m}"
        );
    }
}
