//! Generated sublevels through the binary: text, Markdown and LaTeX group
//! them by manifold and F (one row per group, its total and its largest
//! sublevel), `--sublevels` shows each, JSON always lists every level with
//! its manifold, J, F and m_F as numbers; `inspect` gives generated
//! energies from their manifold's centre in MHz.

use super::cli_support::bin_at_root;

/// Weak pi light on an unpolarised S F = 1 at 2 G (illustrative constants;
/// S and P of J = 1/2 and 3/2, I = 1/2): 4 + 8 sublevels, two of P_F1 leak.
const PI_SCHEME: &str = "tests/fixtures/manifolds/b_pi_unpolarised.yaml";
/// The same kind of line with `resolve: hyperfine` (F levels, no m_F).
const F_SCHEME: &str = "tests/fixtures/manifolds/c_hyperfine_levels.yaml";

/// Run the binary; returns stdout and the exit status.
fn run(args: &[&str]) -> (String, i32) {
    let o = bin_at_root().args(args).output().expect("the binary runs");
    let code = o.status.code().expect("an exit status");
    assert!(
        code == 0 || code == 3,
        "levelplan {}: status {code}\n{}",
        args.join(" "),
        String::from_utf8_lossy(&o.stderr)
    );
    (String::from_utf8(o.stdout).unwrap(), code)
}

/// The first cells of a text table's rows: the lines after its heading,
/// header and rule, up to the first note (a line with ": ") or blank line.
fn table_ids(text: &str, heading: &str) -> Vec<String> {
    let lines: Vec<&str> = text.lines().collect();
    let at = lines.iter().position(|l| *l == heading).expect(heading);
    lines[at + 3..]
        .iter()
        .take_while(|l| !l.is_empty() && !l.contains(": "))
        .map(|l| l.trim_start().split("  ").next().unwrap().to_string())
        .collect()
}

fn row<'a>(text: &'a str, first_cell: &str) -> Vec<&'a str> {
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with(&format!("{first_cell}  ")))
        .unwrap_or_else(|| panic!("a row {first_cell} in\n{text}"));
    line.split("  ")
        .map(str::trim)
        .filter(|c| !c.is_empty())
        .collect()
}

const POPULATIONS: &str = "Populations at the end of the window";

#[test]
fn vet_groups_sublevels_and_expands_them_on_request() {
    let (grouped, code) = run(&["vet", PI_SCHEME, "--color", "never"]);
    assert_eq!(code, 3, "two P_F1 sublevels leak");
    assert_eq!(
        table_ids(&grouped, POPULATIONS),
        [
            "S_F0_m0",
            "S_F1 (3 sublevels)",
            "P_F1 (3 sublevels)",
            "P_F2 (5 sublevels)"
        ],
        "{grouped}"
    );
    let (each, code_each) = run(&["vet", PI_SCHEME, "--color", "never", "--sublevels"]);
    assert_eq!(code_each, code, "the flag changes the layout only");
    let ids = table_ids(&each, POPULATIONS);
    assert_eq!(ids.len(), 12, "{each}");
    assert_eq!(ids[0..4], ["S_F0_m0", "S_F1_m-1", "S_F1_m0", "S_F1_m+1"]);
    assert!(!each.contains("sublevels)") && !each.contains("largest sublevel"));

    // The group row agrees with the JSON of its members.
    let (json, _) = run(&["vet", PI_SCHEME, "--format", "json"]);
    let finals: Vec<(String, f64, bool)> = json_levels(&json)
        .into_iter()
        .filter(|l| l.id.starts_with("P_F1_"))
        .map(|l| (l.id, l.final_population, l.flagged))
        .collect();
    assert_eq!(finals.len(), 3);
    let total: f64 = finals.iter().map(|f| f.1).sum();
    let largest = finals.iter().max_by(|a, b| a.1.total_cmp(&b.1)).unwrap();
    let flagged = finals.iter().filter(|f| f.2).count();
    assert_eq!(flagged, 2);
    let cells = row(&grouped, "P_F1 (3 sublevels)");
    assert_eq!(cells[1], "spectator");
    assert_eq!(cells[2], format!("{total:.4}"));
    assert_eq!(cells[3], format!("{} {:.4}", largest.0, largest.1));
    assert_eq!(cells.last().unwrap(), &"LEAK (2 of 3) est?");
    assert!(row(&each, "P_F1_m+1").contains(&"LEAK est?"));
}

#[test]
fn markdown_and_latex_group_too() {
    let (md, _) = run(&["vet", PI_SCHEME, "--format", "markdown"]);
    assert!(md.contains("| level | role | final | largest sublevel | peak |"));
    assert!(
        md.contains("\n| P_F1 (3 sublevels) | spectator | **"),
        "{md}"
    );
    let (md_each, _) = run(&["vet", PI_SCHEME, "--format", "markdown", "--sublevels"]);
    assert!(md_each.contains("\n| P_F1_m0 | spectator | "));
    assert!(!md_each.contains("(3 sublevels)"));
    let (tex, _) = run(&["vet", PI_SCHEME, "--format", "latex"]);
    assert!(
        tex.contains("\n    P\\_F2 (5 sublevels) & spectator & "),
        "{tex}"
    );
    let (tex_each, _) = run(&["vet", PI_SCHEME, "--format", "latex", "--sublevels"]);
    assert!(tex_each.contains("\n    P\\_F2\\_m+2 & spectator & "));
}

#[test]
fn json_and_csv_list_every_level_whatever_the_flag() {
    for format in ["json", "csv"] {
        let (a, _) = run(&["vet", PI_SCHEME, "--format", format]);
        let (b, _) = run(&["vet", PI_SCHEME, "--format", format, "--sublevels"]);
        assert_eq!(a, b, "{format}");
    }
    let (json, _) = run(&["vet", PI_SCHEME, "--format", "json"]);
    assert_eq!(json_levels(&json).len(), 12);
    // Half-integers as numbers with their fraction, whole numbers as integers.
    assert!(
        json.contains(
            "\"id\": \"P_F2_m-2\",\n      \"manifold\": \"P\",\n      \"J\": 1.5,\n      \"F\": 2,\n      \"m_F\": -2,\n      \"role\": \"spectator\","
        ),
        "{json}"
    );
    assert!(json.contains(
        "\"id\": \"S_F0_m0\",\n      \"manifold\": \"S\",\n      \"J\": 0.5,\n      \"F\": 0,\n      \"m_F\": 0,\n"
    ));
    let (inspect, _) = run(&["inspect", PI_SCHEME, "--format", "json"]);
    assert!(inspect.contains(
        "\"id\": \"P_F1_m+1\",\n      \"manifold\": \"P\",\n      \"J\": 1.5,\n      \"F\": 1,\n      \"m_F\": 1,\n      \"energy_hz\": "
    ));
    // resolve: hyperfine: F levels, no m_F key.
    let (f_json, _) = run(&["vet", F_SCHEME, "--format", "json"]);
    assert!(f_json.contains(
        "\"id\": \"S_F1\",\n      \"manifold\": \"S\",\n      \"J\": 0.5,\n      \"F\": 1,\n      \"role\": "
    ));
    assert!(!f_json.contains("m_F"));
}

/// Breit-Rabi energy of |F = I + 1/2 - (1 - upper), m> of a J = 1/2
/// manifold relative to its centre (MHz): -dE/(2(2I+1)) + g_I mu_B B m
/// +- (dE/2) sqrt(1 + 4 m x/(2I+1) + x^2), x = (g_J - g_I) mu_B B / dE,
/// dE = A (I + 1/2) (G. Breit and I. I. Rabi, Phys. Rev. 38, 2082 (1931),
/// in the form of D. A. Steck, "Rubidium 87 D Line Data"; mu_B/h from
/// CODATA 2018).
fn breit_rabi_mhz(a: f64, i: f64, g_j: f64, g_i: f64, gauss: f64, m: f64, upper: bool) -> f64 {
    let mu_b_b = 13_996.244_936_1 * gauss * 1e-4; // MHz
    let de = a * (i + 0.5);
    let x = (g_j - g_i) * mu_b_b / de;
    let root = (1.0 + 4.0 * m * x / (2.0 * i + 1.0) + x * x).sqrt();
    let sign = if upper { 1.0 } else { -1.0 };
    -de / (2.0 * (2.0 * i + 1.0)) + g_i * mu_b_b * m + sign * de / 2.0 * root
}

#[test]
fn inspect_gives_sublevel_energies_from_the_manifold_centre() {
    let (grouped, _) = run(&["inspect", PI_SCHEME, "--color", "never"]);
    let (each, _) = run(&["inspect", PI_SCHEME, "--color", "never", "--sublevels"]);
    // S of the scheme: A = 80 MHz, I = 1/2, g_J = 2.0, g_I = -0.0005, 2 G.
    let s = |m: f64, upper: bool| breit_rabi_mhz(80.0, 0.5, 2.0, -0.0005, 2.0, m, upper);
    for (id, m, upper) in [
        ("S_F1_m-1", -1.0, true),
        ("S_F1_m0", 0.0, true),
        ("S_F1_m+1", 1.0, true),
        ("S_F0_m0", 0.0, false),
    ] {
        let cells = row(&each, id);
        assert_eq!(cells[1], "-", "no absolute wavenumber: {cells:?}");
        assert_eq!(cells[2], format!("{:+.3} MHz from S centre", s(m, upper)));
    }
    let span = format!(
        "{:+.3} to {:+.3} MHz from S centre",
        s(-1.0, true),
        s(1.0, true)
    );
    let cells = row(&grouped, "S_F1 (3 sublevels)");
    assert_eq!(cells[2], span, "{cells:?}");
    // The mixture is 0.3333333333333333, 0.3333333333333334, 0.3333333333333333.
    assert_eq!(cells.last().unwrap(), &"S_F1_m0 0.3333");
    let centres = row(&grouped, "P");
    assert_eq!(centres, ["P", "3/2", "13065.7056 cm^-1", "391.7 THz", "8"]);
    let ids = table_ids(&each, "Levels");
    assert_eq!(ids.len(), 12);
    for id in &ids {
        let cells = row(&each, id);
        assert!(
            !cells
                .iter()
                .any(|c| c.contains("THz") || c.contains("cm^-1")),
            "{cells:?}"
        );
    }
}

/// One level of a vet JSON report: its id, final population and flag,
/// read without a JSON library (the test binary has none): the fields are
/// in the documented order, one per line.
struct JsonLevel {
    id: String,
    final_population: f64,
    flagged: bool,
}

fn json_levels(json: &str) -> Vec<JsonLevel> {
    let value = |line: &str| -> String {
        line.split_once(": ")
            .unwrap()
            .1
            .trim_end_matches(',')
            .to_string()
    };
    let mut out = Vec::new();
    let mut current: Option<JsonLevel> = None;
    for line in json.lines() {
        match line.strip_prefix("      ") {
            Some(l) if l.starts_with("\"id\": ") => {
                out.extend(current.take());
                current = Some(JsonLevel {
                    id: value(l).trim_matches('"').to_string(),
                    final_population: f64::NAN,
                    flagged: false,
                });
            }
            Some(l) if l.starts_with("\"final_population\": ") => {
                current.as_mut().unwrap().final_population = value(l).parse().unwrap();
            }
            Some(l) if l.starts_with("\"flagged\": ") => {
                current.as_mut().unwrap().flagged = value(l) == "true";
            }
            _ => {}
        }
    }
    out.extend(current);
    out
}
