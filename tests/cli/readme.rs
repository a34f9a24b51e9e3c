//! The README shows real output: its vet report is re-run and compared.

use std::process::Command;

#[test]
fn readme_vet_report_is_current() {
    let root = env!("CARGO_MANIFEST_DIR");
    let readme = std::fs::read_to_string(format!("{root}/README.md")).unwrap();
    let section = readme
        .split("## What a report looks like")
        .nth(1)
        .expect("section present");
    let block = section
        .split("```text\n")
        .nth(1)
        .unwrap()
        .split("```")
        .next()
        .unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_levelplan"))
        .current_dir(root)
        .args([
            "vet",
            "level_schemes/hyperfine_manifold.yaml",
            "--color",
            "never",
        ])
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(3),
        "the README says the demo exits with 3"
    );
    assert_eq!(
        String::from_utf8(out.stdout).unwrap(),
        block,
        "README report is stale: re-run the command and paste its output"
    );
}
