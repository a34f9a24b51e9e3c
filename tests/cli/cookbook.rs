//! `docs/cookbook.md` shows real output, and this test keeps it so.
//!
//! Convention: every fenced block that opens with "```console" and whose
//! first line is `$ levelplan ARGS` is a command; the rest of the block is the
//! exact standard output it must print. The command is run from the
//! repository root with the binary built for this test. A trailing
//! `# exit status N` on the command line gives the expected exit status
//! (default 0); standard error must be empty.
//!
//! Files the commands write: the value of `--out` and `--plot` is replaced by
//! a path with the same file name in a temporary directory. A plot the
//! cookbook shows (a path under `docs/img/`) must be byte for byte the file
//! committed there.
//!
//! Normalisation, applied to both sides before comparing (and nothing else is
//! normalised):
//! 1. `levelplan X.Y.Z` (the tool version in provenance lines) becomes
//!    `levelplan <version>`, so a version bump does not invalidate the
//!    cookbook. The SHA-256 of the scheme is not normalised: it is the hash
//!    of the scheme file's bytes, and it changes exactly when the file does.
//! 2. Numbers written with 8 or more significant digits (the CSV rows of
//!    `evolve` and `scan`, the values `tune` reports) are compared to 1e-9
//!    relative (1e-300 absolute), each against the number in the same place:
//!    their last digits depend on the platform's mathematical library. The
//!    text around them, and every number with fewer digits (all the numbers
//!    of the reports and tables), must match exactly.
//!
//! Scheme excerpts: every "```yaml" block must be found in the scheme file
//! named last before it (`level_schemes/cookbook/NAME.yaml`, or a demo
//! `level_schemes/NAME.yaml`): its lines,
//! in order, are lines of that file (an excerpt may skip lines between them).
//!
//! To regenerate after a deliberate change, run
//! `COOKBOOK_BLESS=1 cargo test --release --test cli cookbook::`: it rewrites
//! the blocks of `docs/cookbook.md` and the plots under `docs/img/` with the new
//! output. Read the diff: the prose around the blocks quotes numbers too.

use std::path::{Path, PathBuf};
use std::process::Command;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// One command block of the cookbook.
#[derive(Debug)]
struct Block {
    /// Byte range of the expected output in the document.
    expected_range: (usize, usize),
    command_line: String,
    args: Vec<String>,
    exit_status: i32,
    expected: String,
}

/// Shell-like splitting: whitespace separates words, single or double quotes
/// group (no escapes inside single quotes; `\"` and `\\` inside double ones).
fn split_words(line: &str) -> Vec<String> {
    let mut words = Vec::new();
    let mut cur = String::new();
    let mut in_word = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\'' => {
                in_word = true;
                for d in chars.by_ref() {
                    if d == '\'' {
                        break;
                    }
                    cur.push(d);
                }
            }
            '"' => {
                in_word = true;
                while let Some(d) = chars.next() {
                    match d {
                        '"' => break,
                        '\\' => {
                            if let Some(e) = chars.next() {
                                cur.push(e);
                            }
                        }
                        _ => cur.push(d),
                    }
                }
            }
            c if c.is_whitespace() => {
                if in_word {
                    words.push(std::mem::take(&mut cur));
                    in_word = false;
                }
            }
            c => {
                in_word = true;
                cur.push(c);
            }
        }
    }
    if in_word {
        words.push(cur);
    }
    words
}

fn parse_blocks(doc: &str) -> Vec<Block> {
    const OPEN: &str = "```console\n";
    let mut blocks = Vec::new();
    let mut from = 0;
    while let Some(i) = doc[from..].find(OPEN) {
        let start = from + i + OPEN.len();
        let len = doc[start..]
            .find("\n```")
            .map(|j| j + 1)
            .unwrap_or_else(|| panic!("unclosed console block at byte {start}"));
        let body = &doc[start..start + len];
        from = start + len + 3;
        let (first, rest) = body.split_once('\n').unwrap_or((body, ""));
        let Some(cmd) = first.strip_prefix("$ levelplan ") else {
            continue;
        };
        let (cmd, exit_status) = match cmd.split_once("# exit status ") {
            Some((c, s)) => (
                c.trim_end(),
                s.trim()
                    .parse()
                    .unwrap_or_else(|_| panic!("bad exit status in '{first}'")),
            ),
            None => (cmd.trim_end(), 0),
        };
        let rest_start = start + first.len() + usize::from(body.len() > first.len());
        blocks.push(Block {
            expected_range: (rest_start, start + len),
            command_line: cmd.to_string(),
            args: split_words(cmd),
            exit_status,
            expected: rest.to_string(),
        });
    }
    blocks
}

/// Rule 1: `levelplan 1.2.3` (any version) -> `levelplan <version>`.
fn normalise_version(s: &str) -> String {
    const KEY: &str = "levelplan ";
    let mut out = String::with_capacity(s.len());
    let mut rest = s;
    while let Some(i) = rest.find(KEY) {
        out.push_str(&rest[..i + KEY.len()]);
        rest = &rest[i + KEY.len()..];
        let n = rest
            .find(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-'))
            .unwrap_or(rest.len());
        let word = &rest[..n];
        let parts: Vec<&str> = word.split('-').next().unwrap_or("").split('.').collect();
        if parts.len() == 3 && parts.iter().all(|p| p.parse::<u32>().is_ok()) {
            out.push_str("<version>");
            rest = &rest[n..];
        }
    }
    out.push_str(rest);
    out
}

/// Splits a line into its text with every full-precision number (8 or more
/// significant digits, not part of a word) replaced by `#`, and those numbers.
fn skeleton(line: &str) -> (String, Vec<f64>) {
    let b = line.as_bytes();
    let mut text = String::with_capacity(line.len());
    let mut numbers = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let prev_is_word =
            i > 0 && (b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_' || b[i - 1] == b'.');
        let starts = b[i].is_ascii_digit()
            || ((b[i] == b'-' || b[i] == b'+' || b[i] == b'.')
                && b.get(i + 1)
                    .is_some_and(|c| c.is_ascii_digit() || *c == b'.'));
        if !starts || prev_is_word {
            let ch = line[i..].chars().next().unwrap_or(' ');
            text.push(ch);
            i += ch.len_utf8();
            continue;
        }
        let mut j = i;
        if b[j] == b'-' || b[j] == b'+' {
            j += 1;
        }
        let mut digits = String::new();
        while j < b.len() && (b[j].is_ascii_digit() || b[j] == b'.') {
            if b[j].is_ascii_digit() {
                digits.push(b[j] as char);
            }
            j += 1;
        }
        if j < b.len() && (b[j] == b'e' || b[j] == b'E') {
            let mut k = j + 1;
            if k < b.len() && (b[k] == b'-' || b[k] == b'+') {
                k += 1;
            }
            if k < b.len() && b[k].is_ascii_digit() {
                while k < b.len() && b[k].is_ascii_digit() {
                    k += 1;
                }
                j = k;
            }
        }
        let significant = digits.trim_start_matches('0').len();
        let word_follows = j < b.len() && (b[j].is_ascii_alphanumeric() || b[j] == b'_');
        match line[i..j].parse::<f64>() {
            Ok(x) if significant >= 8 && !word_follows => {
                text.push('#');
                numbers.push(x);
            }
            _ => text.push_str(&line[i..j]),
        }
        i = j;
    }
    (text, numbers)
}

/// Compare expected and actual output under the two rules; None if equal,
/// else a description of the first difference.
fn compare(expected: &str, actual: &str) -> Option<String> {
    let (e, a) = (normalise_version(expected), normalise_version(actual));
    let el: Vec<&str> = e.split('\n').collect();
    let al: Vec<&str> = a.split('\n').collect();
    if el.len() != al.len() {
        return Some(format!("{} lines expected, {} printed", el.len(), al.len()));
    }
    for (i, (x, y)) in el.iter().zip(&al).enumerate() {
        if x == y {
            continue;
        }
        let (sx, nx) = skeleton(x);
        let (sy, ny) = skeleton(y);
        let same = sx == sy
            && nx.len() == ny.len()
            && nx
                .iter()
                .zip(&ny)
                .all(|(p, q)| (p - q).abs() <= 1e-9 * p.abs().max(q.abs()) + 1e-300);
        if !same {
            return Some(format!("line {}:\n  expected: {x}\n  printed:  {y}", i + 1));
        }
    }
    None
}

struct Run {
    stdout: String,
    stderr: String,
    status: Option<i32>,
    /// (path in the document, path written) of every plot under docs/img/.
    plots: Vec<(String, PathBuf)>,
}

fn run(block: &Block, scratch: &Path) -> Run {
    let mut args = block.args.clone();
    let mut plots = Vec::new();
    let mut i = 0;
    while i < args.len() {
        if args[i] == "--out" || args[i] == "--plot" {
            let Some(value) = args.get(i + 1).cloned() else {
                panic!("'{}' has no value in '{}'", args[i], block.command_line);
            };
            let name = Path::new(&value)
                .file_name()
                .unwrap_or_else(|| panic!("no file name in '{value}'"));
            let target = scratch.join(name);
            if args[i] == "--plot" && value.starts_with("docs/img/") {
                plots.push((value.clone(), target.clone()));
            }
            args[i + 1] = target.to_string_lossy().into_owned();
            i += 1;
        }
        i += 1;
    }
    let out = Command::new(env!("CARGO_BIN_EXE_levelplan"))
        .current_dir(root())
        .args(&args)
        .output()
        .expect("the binary runs");
    Run {
        stdout: String::from_utf8(out.stdout).expect("UTF-8 output"),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        status: out.status.code(),
        plots,
    }
}

/// Run every block, on as many threads as the machine has cores (at most
/// 4); the results come back in document order.
fn run_all(blocks: &[Block], scratch: &Path) -> Vec<Run> {
    use std::sync::atomic::{AtomicUsize, Ordering};
    use std::sync::Mutex;
    let threads = std::thread::available_parallelism()
        .map(|n| n.get())
        .unwrap_or(1)
        .clamp(1, 4);
    let next = AtomicUsize::new(0);
    let results: Mutex<Vec<Option<Run>>> = Mutex::new((0..blocks.len()).map(|_| None).collect());
    std::thread::scope(|s| {
        for _ in 0..threads {
            s.spawn(|| loop {
                let i = next.fetch_add(1, Ordering::SeqCst);
                let Some(b) = blocks.get(i) else { break };
                let r = run(b, scratch);
                results.lock().expect("no poisoned lock")[i] = Some(r);
            });
        }
    });
    results
        .into_inner()
        .expect("no poisoned lock")
        .into_iter()
        .map(|r| r.expect("every block ran"))
        .collect()
}

fn scratch_dir() -> PathBuf {
    let d = std::env::temp_dir().join(format!("levelplan-cookbook-{}", std::process::id()));
    std::fs::create_dir_all(&d).expect("temporary directory");
    d
}

#[test]
fn split_words_handles_quotes() {
    assert_eq!(
        split_words(r#"vet a.yaml --set 'x.y = "1 GHz"' "b c""#),
        vec!["vet", "a.yaml", "--set", "x.y = \"1 GHz\"", "b c"]
    );
    assert_eq!(split_words("  "), Vec::<String>::new());
}

#[test]
fn normalisation_rules_do_what_the_header_says() {
    assert_eq!(
        normalise_version("  tool   levelplan 0.1.0\n# levelplan 12.3.4; x"),
        "  tool   levelplan <version>\n# levelplan <version>; x"
    );
    // Not a version: untouched.
    assert_eq!(normalise_version("levelplan vet"), "levelplan vet");
    // Full-precision numbers: equal to 1e-9 relative.
    assert_eq!(
        compare("1.2345678901e-3,2.5,,0\n", "1.2345678902e-3,2.5,,0\n"),
        None
    );
    assert_eq!(
        compare("value: -1.001000690e0 GHz\n", "value: -1.001000691e0 GHz\n"),
        None
    );
    assert!(compare("1.2345678901e-3,2.5\n", "1.2345688901e-3,2.5\n").is_some());
    // Short numbers, words and hashes: exact.
    assert!(compare("1e-3,2.5\n", "1.0001e-3,2.5\n").is_some());
    assert!(compare("a 0.0013\n", "a 0.0014\n").is_some());
    assert!(compare("sha256 12345678901a\n", "sha256 12345678902a\n").is_some());
    assert!(compare("x 1.2345678901e-3\n", "y 1.2345678901e-3\n").is_some());
    assert!(compare("a\n", "a\nb\n").is_some());
}

#[test]
fn cookbook_output_is_current() {
    let path = root().join("docs/cookbook.md");
    let doc = std::fs::read_to_string(&path).expect("docs/cookbook.md");
    let blocks = parse_blocks(&doc);
    // The three sessions run about twenty commands; fewer means the
    // convention broke and the test would check nothing.
    assert!(
        blocks.len() >= 15,
        "only {} console blocks found",
        blocks.len()
    );
    let bless = std::env::var_os("COOKBOOK_BLESS").is_some();
    let scratch = scratch_dir();
    let mut failures = Vec::new();
    let mut new_doc = String::new();
    let mut copied = 0;
    // Files the commands write must not collide: they share one directory.
    let mut names = std::collections::BTreeSet::new();
    for b in &blocks {
        for w in b.args.windows(2) {
            if w[0] == "--out" || w[0] == "--plot" {
                let name = Path::new(&w[1]).file_name().map(|n| n.to_os_string());
                assert!(
                    names.insert(name),
                    "two commands of the cookbook write {}",
                    w[1]
                );
            }
        }
    }
    let runs = run_all(&blocks, &scratch);
    for (b, r) in blocks.iter().zip(runs) {
        if r.status != Some(b.exit_status) {
            failures.push(format!(
                "$ levelplan {}: exit status {:?}, the cookbook says {}\n{}",
                b.command_line, r.status, b.exit_status, r.stderr
            ));
        }
        if !r.stderr.is_empty() {
            failures.push(format!(
                "$ levelplan {}: printed to stderr:\n{}",
                b.command_line, r.stderr
            ));
        }
        if bless {
            new_doc.push_str(&doc[copied..b.expected_range.0]);
            new_doc.push_str(&r.stdout);
            copied = b.expected_range.1;
        } else if let Some(diff) = compare(&b.expected, &r.stdout) {
            failures.push(format!(
                "$ levelplan {}: output differs from the cookbook, {diff}",
                b.command_line
            ));
        }
        for (shown, written) in &r.plots {
            let committed = root().join(shown);
            let new = std::fs::read(written).expect("the plot was written");
            if bless {
                std::fs::write(&committed, &new).expect("write the plot");
            } else {
                match std::fs::read(&committed) {
                    Ok(old) if old == new => {}
                    Ok(_) => failures.push(format!(
                        "{shown} differs from what `levelplan {}` draws now",
                        b.command_line
                    )),
                    Err(e) => failures.push(format!("{shown}: {e}")),
                }
            }
        }
    }
    if bless {
        new_doc.push_str(&doc[copied..]);
        std::fs::write(&path, new_doc).expect("rewrite the cookbook");
    }
    let _ = std::fs::remove_dir_all(&scratch);
    assert!(
        failures.is_empty(),
        "{} problem(s); re-run with COOKBOOK_BLESS=1 after a deliberate change:\n\n{}",
        failures.len(),
        failures.join("\n\n")
    );
}

/// Every scheme of the cookbook is used by a command, labelled illustrative
/// and carries the laser-safety note; every image the cookbook shows is drawn
/// by one of its commands.
#[test]
fn cookbook_schemes_and_images_are_accounted_for() {
    let doc = std::fs::read_to_string(root().join("docs/cookbook.md")).expect("docs/cookbook.md");
    let blocks = parse_blocks(&doc);
    let dir = root().join("level_schemes/cookbook");
    let mut schemes: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("level_schemes/cookbook exists")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .collect();
    schemes.sort();
    assert!(schemes.len() >= 6, "{schemes:?}");
    for p in &schemes {
        let rel = format!(
            "level_schemes/cookbook/{}",
            p.file_name().unwrap().to_string_lossy()
        );
        assert!(
            blocks.iter().any(|b| b.args.iter().any(|a| a == &rel)),
            "{rel} is not used by any command of the cookbook"
        );
        let text = std::fs::read_to_string(p).unwrap();
        assert!(
            text.starts_with("# Illustrative, invented scenario"),
            "{rel} lacks the illustrative header"
        );
        assert!(text.contains("IEC 60825-1"), "{rel} lacks the safety note");
    }
    assert!(doc.contains("IEC 60825-1") && doc.contains("ANSI Z136.1"));
    let mut shown = 0;
    for piece in doc.split("](img/").skip(1) {
        let name = piece.split(')').next().unwrap();
        let rel = format!("docs/img/{name}");
        assert!(root().join(&rel).is_file(), "{rel} is shown but missing");
        assert!(
            blocks
                .iter()
                .any(|b| b.args.windows(2).any(|w| w[0] == "--plot" && w[1] == rel)),
            "{rel} is shown but no command of the cookbook draws it"
        );
        shown += 1;
    }
    assert!(shown >= 3, "only {shown} plots shown");
}

/// Every YAML excerpt of the cookbook is taken from the scheme file named last
/// before it: its lines appear in that file, in order.
#[test]
fn cookbook_yaml_excerpts_match_the_scheme_files() {
    let doc = std::fs::read_to_string(root().join("docs/cookbook.md")).expect("docs/cookbook.md");
    const OPEN: &str = "```yaml\n";
    const DIR: &str = "level_schemes/";
    let mut checked = 0;
    let mut from = 0;
    while let Some(i) = doc[from..].find(OPEN) {
        let start = from + i + OPEN.len();
        let end = start
            + doc[start..]
                .find("```")
                .unwrap_or_else(|| panic!("unclosed yaml block at byte {start}"));
        from = end + 3;
        let before = &doc[..start];
        let at = before.rfind(DIR).unwrap_or_else(|| {
            panic!("no scheme file named before the yaml block at byte {start}")
        });
        let name_end = at
            + before[at..]
                .find(".yaml")
                .unwrap_or_else(|| panic!("unterminated scheme name at byte {at}"))
            + ".yaml".len();
        let file = &before[at..name_end];
        let text =
            std::fs::read_to_string(root().join(file)).unwrap_or_else(|e| panic!("{file}: {e}"));
        let mut lines = text.lines();
        for want in doc[start..end].lines() {
            assert!(
                lines.any(|l| l == want),
                "the yaml excerpt at byte {start} of docs/cookbook.md is not in {file}: line '{want}' missing or out of order"
            );
        }
        checked += 1;
    }
    assert!(checked >= 7, "only {checked} yaml excerpts checked");
}
