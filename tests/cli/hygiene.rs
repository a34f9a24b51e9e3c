//! Message and output hygiene: nothing a scheme holds reaches a terminal
//! raw, breaks a LaTeX or Markdown document, or floods a message.
//! Schemes are invented, illustrative numbers.

use crate::cli_support::{bin, scratch};

/// The calibration demo with its title and the label of `e` replaced.
fn with_title_and_label(title: &str, label: &str) -> String {
    let demo = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("level_schemes/two_level_calibration.yaml"),
    )
    .unwrap();
    demo.replace(
        "title: \"Zq+ 408 nm pi-pulse calibration (invented)\"",
        &format!("title: \"{title}\""),
    )
    .replace(
        "label: \"narrow upper level\"",
        &format!("label: \"{label}\""),
    )
}

fn run(dir: &str, text: &str, args: &[&str]) -> std::process::Output {
    let d = scratch(dir);
    let p = d.join("s.yaml");
    std::fs::write(&p, text).unwrap();
    bin().args(args).arg(&p).output().unwrap()
}

/// Regression: an escape sequence or a bell in a title or label reached
/// the terminal raw, and a line break in the title ended the LaTeX comment
/// line (text outside any environment) and the Markdown heading.
#[test]
fn titles_and_labels_cannot_inject_control_characters_or_lines() {
    // YAML double-quoted escapes: \e is ESC, \a is BEL, \n a line break.
    let text = with_title_and_label(
        "red \\e[31mtitle\\a\\nsecond line \\\\end{document}",
        "upper\\nlevel \\e[2J",
    );
    for format in ["text", "markdown", "latex"] {
        for cmd in ["vet", "inspect"] {
            let out = run("hygiene-title", &text, &[cmd, "--format", format]);
            assert!(
                matches!(out.status.code(), Some(0 | 3)),
                "{cmd} {format}: {}",
                String::from_utf8_lossy(&out.stderr)
            );
            let s = String::from_utf8(out.stdout).unwrap();
            assert!(
                !s.chars().any(|c| c.is_control() && c != '\n'),
                "{cmd} {format} shows a control character:\n{s}"
            );
            let first = s.lines().next().unwrap();
            assert!(
                first.contains("red (0x1b)[31mtitle(0x07) second line"),
                "{cmd} {format}: title on one line: {first}"
            );
            if format == "latex" {
                assert!(first.starts_with('%'), "{first}");
                assert!(
                    s.lines().all(|l| !l.starts_with("second line")),
                    "no line starts outside the comment:\n{s}"
                );
            }
        }
    }
}

/// Regression: a 900 kB level id came back whole in the error message.
#[test]
fn a_huge_id_in_a_message_is_cut_to_its_start_and_length() {
    let text = with_title_and_label("t", "l")
        .replace("initial: g", &format!("initial: {}", "Z".repeat(900_000)));
    let out = run("hygiene-long", &text, &["vet"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.len() < 2000, "{} bytes of message", err.len());
    assert!(err.contains("characters in all)"), "{err}");
    assert!(err.contains("initial"), "{err}");
}
