//! What the reference-fixture checks share: the library versions the
//! scripts pin, reading a fixture file, and running `levelplan vet --format
//! json` on a scheme. Owns no check and no tolerance; each test file states
//! its own source and tolerance.

use serde_json::Value;
use std::path::Path;
use std::process::Command;

/// Versions the reference scripts pin and record in every fixture
/// (scripts/open_reference.py, channels_reference.py, manifold_reference.py).
pub const PINNED: &[(&str, &str)] = &[
    ("qutip", "5.3.1"),
    ("numpy", "2.4.6"),
    ("scipy", "1.17.1"),
    ("sympy", "1.14.0"),
];

/// The crate root: schemes and fixtures are named relative to it.
pub fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// The JSON file `dir/name` under the crate root (panics with the path).
pub fn read_json(dir: &str, name: &str) -> Value {
    let path = root().join(dir).join(name);
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// `levelplan vet <scheme> --format json` run from the crate root: the
/// report when the exit code is 0 or 3, else the code and stderr.
pub fn vet_json(scheme: &str) -> Result<Value, (Option<i32>, String)> {
    let out = Command::new(env!("CARGO_BIN_EXE_levelplan"))
        .current_dir(root())
        .args(["vet", scheme, "--format", "json"])
        .output()
        .expect("the binary runs");
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    if !matches!(out.status.code(), Some(0 | 3)) {
        return Err((out.status.code(), stderr));
    }
    serde_json::from_slice(&out.stdout)
        .map_err(|e| (out.status.code(), format!("report is not JSON: {e}")))
}

/// A fixture's recorded `versions` (an object library -> version) name the
/// reference library and agree with the pins for every pinned library they list
/// (the Python interpreter's version is recorded, not pinned).
pub fn assert_pinned(name: &str, versions: &Value) {
    let recorded = versions
        .as_object()
        .unwrap_or_else(|| panic!("{name}: no versions recorded"));
    assert!(
        recorded.contains_key("qutip"),
        "{name}: qutip version not recorded"
    );
    for (lib, pin) in PINNED {
        if let Some(v) = recorded.get(*lib) {
            assert_eq!(
                v.as_str(),
                Some(*pin),
                "{name}: {lib} recorded {v}, pinned {pin}"
            );
        }
    }
}
