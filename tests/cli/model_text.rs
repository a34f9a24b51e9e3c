//! The closing statement of a report names the equation the run solved:
//! the Schrodinger equation for amplitudes, the Lindblad master equation
//! for a density matrix, in every human-readable format, for every demo
//! (the JSON's `dynamics` says which was solved).

use crate::cli_support::bin_at_root;

const SCHRODINGER: &str = "Results are model calculations (Schrodinger equation";
const LINDBLAD: &str =
    "Results are model calculations (Lindblad master equation for the density matrix";

/// stdout of `levelplan vet SCHEME ARGS` (exit status 0 or 3).
fn vet(scheme: &str, args: &[&str]) -> String {
    let o = bin_at_root()
        .arg("vet")
        .arg(scheme)
        .args(args)
        .output()
        .expect("the binary runs");
    assert!(
        matches!(o.status.code(), Some(0 | 3)),
        "{scheme}: {:?}\n{}",
        o.status.code(),
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout).expect("UTF-8")
}

#[test]
fn vet_names_the_equation_it_solved() {
    let mut seen = (0, 0);
    for scheme in [
        "level_schemes/two_level_calibration.yaml",
        "level_schemes/lambda_raman.yaml",
        "level_schemes/lambda_pumping.yaml",
        "level_schemes/hyperfine_manifold.yaml",
    ] {
        let json: serde_json::Value =
            serde_json::from_str(&vet(scheme, &["--format", "json"])).expect("JSON");
        let (want, other) = match json["dynamics"].as_str() {
            Some("amplitudes") => {
                seen.0 += 1;
                (SCHRODINGER, LINDBLAD)
            }
            Some("density_matrix") => {
                seen.1 += 1;
                (LINDBLAD, SCHRODINGER)
            }
            d => panic!("{scheme}: dynamics {d:?}"),
        };
        for format in ["text", "markdown", "latex"] {
            let out = vet(scheme, &["--format", format, "--color", "never"]);
            assert!(out.contains(want), "{scheme} ({format}) lacks {want:?}");
            assert!(!out.contains(other), "{scheme} ({format}) says {other:?}");
        }
    }
    assert!(
        seen.0 >= 2 && seen.1 >= 2,
        "both equations exercised: {seen:?}"
    );
}

#[test]
fn help_names_both_equations() {
    let o = bin_at_root()
        .arg("--help")
        .output()
        .expect("the binary runs");
    let help = String::from_utf8(o.stdout).expect("UTF-8");
    assert!(
        help.contains("Schrodinger equation") && help.contains("Lindblad master equation"),
        "{help}"
    );
}
