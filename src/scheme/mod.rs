//! Scheme files: YAML text to a validated [`crate::model::Model`].
//!
//! Owns: reading a scheme file ([`read_source`]: size limit, UTF-8, SHA-256
//! of its bytes; every subcommand reads schemes through it), turning it into
//! the model through the serde mirror ([`raw`]) and the validator
//! ([`validate`]), command-line style overrides of single numeric values
//! (on the raw scheme as a JSON value), and [`SchemeError`], which lists
//! every problem found with file, line, column, key path, what was expected
//! and what was found.
//! Must not: print, or know about solvers, estimates or output formats.
//! The YAML library is reached only through [`crate::yaml`].
//!
//! The format itself is documented in `docs/scheme-format.md`.

pub mod locate;
pub mod raw;
mod source;
mod validate;

use crate::model::Model;
use crate::yaml::{self, YamlError, YamlErrorKind};
use locate::{KeyPath, Locator};
use raw::RawScheme;
use serde_json::{Map, Value};
use std::fmt;

pub use source::{from_bytes, source_from_bytes, unreadable, READ_LIMIT};
pub use validate::valid_id;

/// Most levels a scheme may have.
pub const MAX_LEVELS: usize = 200;
/// Most fields a scheme may have.
pub const MAX_FIELDS: usize = 64;
/// Most couplings a scheme may have.
pub const MAX_COUPLINGS: usize = 5_000;
/// Most drives (field x coupling pairs) a scheme may have.
pub const MAX_DRIVES: usize = 10_000;
/// Most points of one `samples` envelope.
pub const MAX_SAMPLE_POINTS: usize = 100_000;
/// Largest magnitude of a time on the pulse axis (window, envelope starts,
/// centres, durations, widths, sample times), in seconds: 10^4 s (2.8 h),
/// far beyond any coherent excitation. Beyond it double-precision phases
/// omega t lose the accuracy the propagators promise (found by fuzzing: a
/// pulse of 2e60 s overflowed the step count). Lifetimes are not bounded.
pub const MAX_TIME_S: f64 = 1.0e4;
/// Most problems listed for one file; the rest are counted in a last line.
pub const MAX_DIAGNOSTICS: usize = 100;
/// Initial populations must sum to 1 within this.
pub const POPULATION_SUM_TOLERANCE: f64 = 1e-9;

/// Where a scheme came from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SchemeSource {
    /// The path as given.
    pub path: String,
    /// Hex SHA-256 of the file's bytes.
    pub sha256: String,
}

/// One problem in a scheme.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    /// 1-based line, where known.
    pub line: Option<usize>,
    /// 1-based column, where known.
    pub column: Option<usize>,
    /// Key path such as `fields.probe.envelope.duration` (empty for the
    /// file as a whole).
    pub path: String,
    /// What was expected there.
    pub expected: String,
    /// What was found.
    pub found: String,
}

impl Diagnostic {
    fn whole_file(expected: impl Into<String>, found: impl Into<String>) -> Self {
        Diagnostic {
            line: None,
            column: None,
            path: String::new(),
            expected: expected.into(),
            found: found.into(),
        }
    }

    /// One line: `file:line:col: path: expected X, found Y`.
    pub fn render(&self, file: &str) -> String {
        let mut s = String::from(file);
        if let Some(l) = self.line {
            s.push_str(&format!(":{l}"));
            if let Some(c) = self.column {
                s.push_str(&format!(":{c}"));
            }
        }
        s.push_str(": ");
        if !self.path.is_empty() {
            s.push_str(&self.path);
            s.push_str(": ");
        }
        s.push_str(&format!("expected {}, found {}", self.expected, self.found));
        s
    }
}

/// Everything wrong with one scheme file.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{}", render_all(.file, .diagnostics))]
pub struct SchemeError {
    /// The file name used in messages.
    pub file: String,
    /// At least one problem, in file order where lines are known.
    pub diagnostics: Vec<Diagnostic>,
}

fn render_all(file: &str, diags: &[Diagnostic]) -> String {
    diags
        .iter()
        .map(|d| d.render(file))
        .collect::<Vec<_>>()
        .join("\n")
}

impl SchemeError {
    pub(crate) fn one(file: &str, d: Diagnostic) -> Self {
        SchemeError {
            file: file.to_string(),
            diagnostics: vec![d],
        }
    }
}

/// Validate scheme text. `file_name` is used in messages only.
pub fn parse(text: &str, file_name: &str) -> Result<Model, SchemeError> {
    parse_with_overrides(text, file_name, &[])
}

/// Validate scheme text after replacing single numeric values.
///
/// Each override is `(path, value)`: a dot path of keys (`fields.probe.tuned.detuning`,
/// `levels.e2.energy`, `solver.rtol`; sequence items by index,
/// `couplings.0.dipole` or `couplings[0].dipole`) and the value written as in
/// a scheme (`"-20 MHz"`, or a bare number where the key takes one). The
/// key must exist in the file, or be a numeric key the format knows whose
/// parent mapping exists or (for `window` and `solver`) can be created.
/// A value that is not numeric, a path to a mapping, list or text value, or
/// an unknown path is an error naming the path.
pub fn parse_with_overrides(
    text: &str,
    file_name: &str,
    overrides: &[(String, String)],
) -> Result<Model, SchemeError> {
    if overrides.is_empty() {
        let raw = read_raw(text, file_name)?;
        return validate_raw(&raw, text, file_name, Vec::new());
    }
    Prepared::new(text, file_name)?.with_overrides(overrides)
}

/// The serde mirror of scheme text (an empty file is an empty scheme).
fn read_raw(text: &str, file_name: &str) -> Result<RawScheme, SchemeError> {
    let raw: Option<RawScheme> = yaml::from_str(text).map_err(|e| yaml_error(file_name, e))?;
    Ok(raw.unwrap_or_default())
}

/// The raw scheme as a JSON value (file order kept, absent keys absent):
/// what overrides walk and replace.
fn raw_value(raw: &RawScheme, file_name: &str) -> Result<Value, SchemeError> {
    serde_json::to_value(raw).map_err(|e| {
        SchemeError::one(
            file_name,
            Diagnostic::whole_file("a scheme that can be varied", e.to_string()),
        )
    })
}

/// A scheme read and validated once, ready to be re-validated with overrides
/// many times (a scan): the YAML is parsed once, each point only replaces
/// values in the raw scheme (as a JSON value) and validates.
#[derive(Debug, Clone)]
pub struct Prepared {
    text: String,
    file: String,
    value: Value,
}

impl Prepared {
    /// Parse and validate `text` (it must be valid on its own).
    pub fn new(text: &str, file_name: &str) -> Result<Prepared, SchemeError> {
        let raw = read_raw(text, file_name)?;
        validate_raw(&raw, text, file_name, Vec::new())?;
        let value = raw_value(&raw, file_name)?;
        Ok(Prepared {
            text: text.to_string(),
            file: file_name.to_string(),
            value,
        })
    }

    /// The model with the given overrides (see [`parse_with_overrides`]).
    pub fn with_overrides(&self, overrides: &[(String, String)]) -> Result<Model, SchemeError> {
        let (text, file_name) = (self.text.as_str(), self.file.as_str());
        let mut value = self.value.clone();
        let mut diags = Vec::new();
        let mut overridden = Vec::new();
        for (path, new) in overrides {
            match apply_override(&mut value, path, new) {
                Ok(kp) => overridden.push(kp.to_string()),
                Err((kp, expected, found)) => {
                    let pos = Locator::new(text).locate(&kp);
                    diags.push(Diagnostic {
                        line: pos.map(|p| p.0),
                        column: pos.map(|p| p.1),
                        path: path.clone(),
                        expected,
                        found,
                    });
                }
            }
        }
        if !diags.is_empty() {
            return Err(SchemeError {
                file: file_name.to_string(),
                diagnostics: diags,
            });
        }
        let raw: RawScheme = serde_json::from_value(value).map_err(|e| {
            SchemeError::one(
                file_name,
                Diagnostic::whole_file("overrides of numeric values", e.to_string()),
            )
        })?;
        validate_raw(&raw, text, file_name, overridden)
    }
}

fn validate_raw(
    raw: &RawScheme,
    text: &str,
    file_name: &str,
    overridden: Vec<String>,
) -> Result<Model, SchemeError> {
    let mut ctx = validate::Ctx::new(text, overridden);
    let model = validate::validate(raw, &mut ctx);
    let suppressed = ctx.suppressed;
    let mut diags = ctx.diags;
    match model {
        Some(m) if diags.is_empty() => Ok(m),
        _ => {
            if diags.is_empty() {
                // Defensive: validation declined without saying why.
                diags.push(Diagnostic::whole_file(
                    "a valid scheme",
                    "an incomplete scheme",
                ));
            }
            diags.sort_by_key(|d| (d.line.unwrap_or(usize::MAX), d.column.unwrap_or(0)));
            if suppressed > 0 {
                diags.push(Diagnostic::whole_file(
                    format!("at most {MAX_DIAGNOSTICS} problems listed"),
                    format!("{suppressed} more problems, not shown"),
                ));
            }
            Err(SchemeError {
                file: file_name.to_string(),
                diagnostics: diags,
            })
        }
    }
}

/// The value at a key path as written: the number and its unit (empty for
/// a bare number; "pi" for "0.5 pi"). For headers of scans.
pub fn numeric_value_at(
    text: &str,
    file_name: &str,
    path: &str,
) -> Result<(f64, String), SchemeError> {
    let value = raw_value(&read_raw(text, file_name)?, file_name)?;
    let fail = |kp: &KeyPath, expected: String, found: String| {
        let pos = Locator::new(text).locate(kp);
        SchemeError::one(
            file_name,
            Diagnostic {
                line: pos.map(|p| p.0),
                column: pos.map(|p| p.1),
                path: path.to_string(),
                expected,
                found,
            },
        )
    };
    let segs = split_path(path).map_err(|e| fail(&KeyPath::root(), e.0, e.1))?;
    let (node, kp) = match walk(&value, &segs) {
        Ok(x) => x,
        Err((kp, exp, found)) => return Err(fail(&kp, exp, found)),
    };
    match numeric_of(node) {
        Some(x) => Ok(x),
        None => Err(fail(
            &kp,
            "a path to a numeric value".into(),
            format!("{} (not a number)", describe(node)),
        )),
    }
}

/// Split "a.b[2].c" / "a.b.2.c" into segments (indices stay text until the
/// node they index is known).
fn split_path(path: &str) -> Result<Vec<String>, (String, String)> {
    let mut out = Vec::new();
    for part in path.split('.') {
        let mut rest = part;
        // key[1][2]
        let key_end = rest.find('[').unwrap_or(rest.len());
        if key_end > 0 {
            out.push(rest[..key_end].to_string());
        }
        rest = &rest[key_end..];
        while let Some(r) = rest.strip_prefix('[') {
            let Some(close) = r.find(']') else {
                return Err((
                    "a key path like fields.probe.tuned.detuning".into(),
                    format!("'{path}'"),
                ));
            };
            out.push(r[..close].to_string());
            rest = &r[close + 1..];
        }
        if !rest.is_empty() || (key_end == 0 && part.is_empty()) {
            return Err((
                "a key path like fields.probe.tuned.detuning".into(),
                format!("'{path}'"),
            ));
        }
    }
    Ok(out)
}

type WalkErr = (KeyPath, String, String);

fn describe(v: &Value) -> String {
    match v {
        Value::Object(_) => "a mapping".into(),
        Value::Array(_) => "a list".into(),
        Value::String(s) => format!("'{s}'"),
        Value::Number(n) => format!("'{}'", n.as_f64().map_or(n.to_string(), raw::format_number)),
        Value::Bool(b) => format!("'{b}'"),
        Value::Null => "an empty value".into(),
    }
}

/// Follow a path through a value tree.
fn walk<'v>(root: &'v Value, segs: &[String]) -> Result<(&'v Value, KeyPath), WalkErr> {
    let mut node = root;
    let mut kp = KeyPath::root();
    for s in segs {
        match node {
            Value::Object(m) => match m.get(s.as_str()) {
                Some(v) => {
                    node = v;
                    kp = kp.k(s);
                }
                None => {
                    let keys: Vec<&str> = m.keys().map(String::as_str).collect();
                    return Err((
                        kp.clone(),
                        format!("one of the keys here ({})", keys.join(", ")),
                        format!(
                            "'{s}' (no such key under '{}')",
                            if kp.0.is_empty() {
                                "the top level".to_string()
                            } else {
                                kp.to_string()
                            }
                        ),
                    ));
                }
            },
            Value::Array(v) => match s.parse::<usize>() {
                Ok(i) if i < v.len() => {
                    node = &v[i];
                    kp = kp.i(i);
                }
                _ => {
                    return Err((
                        kp.clone(),
                        format!("an index 0..{} into the list {kp}", v.len()),
                        format!("'{s}'"),
                    ))
                }
            },
            other => {
                return Err((
                    kp.clone(),
                    format!("a mapping or list at '{kp}' to follow '{s}' into"),
                    describe(other),
                ))
            }
        }
    }
    Ok((node, kp))
}

/// Number and unit of a scalar, if it is numeric.
fn numeric_of(v: &Value) -> Option<(f64, String)> {
    match v {
        Value::Number(n) => n.as_f64().map(|x| (x, String::new())),
        Value::String(s) => crate::units::split_quantity(s),
        _ => None,
    }
}

/// Numeric keys the format knows, by the shape of their path, so that an
/// override may set one the file leaves out (e.g. `solver.rtol`).
fn known_numeric_key(segs: &[String]) -> bool {
    let s: Vec<&str> = segs.iter().map(|x| x.as_str()).collect();
    matches!(
        s.as_slice(),
        ["tolerance"]
            | [
                "levels",
                _,
                "energy" | "lifetime" | "linewidth" | "tolerance"
            ]
            | [
                "fields",
                _,
                "frequency" | "wavelength" | "intensity" | "power" | "waist" | "chirp" | "phase"
            ]
            | ["fields", _, "tuned", "detuning"]
            | ["fields", _, "rabi" | "area", "value"]
            | [
                "fields",
                _,
                "envelope",
                "start" | "duration" | "center" | "fwhm" | "sigma" | "tau"
            ]
            | [
                "couplings",
                _,
                "dipole" | "einstein_a" | "g_lower" | "g_upper"
            ]
            | ["window", "start" | "end"]
            | ["solver", "rtol" | "atol" | "detuning_cutoff"]
            | ["initial", _]
    )
}

/// Replace the value at `path` by `new`; the key path on success.
fn apply_override(root: &mut Value, path: &str, new: &str) -> Result<KeyPath, WalkErr> {
    let segs = split_path(path).map_err(|(e, f)| (KeyPath::root(), e, f))?;
    if segs.is_empty() {
        return Err((KeyPath::root(), "a key path".into(), "an empty path".into()));
    }
    let Some((new_v, _)) = crate::units::split_quantity(new) else {
        return Err((
            KeyPath::root(),
            "a numeric override value (a number, with a unit where the key takes one)".into(),
            format!("'{new}' for {path}"),
        ));
    };
    let replacement = match crate::units::split_quantity(new) {
        Some((_, u)) if u.is_empty() => serde_json::Number::from_f64(new_v)
            .map_or_else(|| Value::String(new.trim().to_string()), Value::Number),
        _ => Value::String(new.trim().to_string()),
    };
    let (parent_segs, last) = segs.split_at(segs.len() - 1);
    let last = &last[0];
    // Where the key is absent but known, create it (and a missing window or
    // solver mapping).
    let exists = walk(root, &segs).is_ok();
    if !exists && known_numeric_key(&segs) {
        if parent_segs.len() == 1 && (parent_segs[0] == "window" || parent_segs[0] == "solver") {
            if let Value::Object(m) = root {
                if !m.contains_key(&parent_segs[0]) {
                    m.insert(parent_segs[0].clone(), Value::Object(Map::new()));
                }
            }
        }
        if let Ok((Value::Object(_), _)) = walk(root, parent_segs) {
            let parent = walk_mut(root, parent_segs);
            if let Some(Value::Object(m)) = parent {
                m.insert(last.clone(), replacement);
                let (_, kp) = walk(root, &segs)?;
                return Ok(kp);
            }
        }
    }
    let (node, kp) = walk(root, &segs)?;
    if numeric_of(node).is_none() {
        return Err((
            kp,
            "a path to a numeric value".into(),
            format!("{} (not a number)", describe(node)),
        ));
    }
    if let Some(slot) = walk_mut(root, &segs) {
        *slot = replacement;
    }
    Ok(kp)
}

fn walk_mut<'v>(root: &'v mut Value, segs: &[String]) -> Option<&'v mut Value> {
    let mut node = root;
    for s in segs {
        node = match node {
            Value::Object(m) => m.get_mut(s.as_str())?,
            Value::Array(v) => v.get_mut(s.parse::<usize>().ok()?)?,
            _ => return None,
        };
    }
    Some(node)
}

/// A YAML-stage error as a diagnostic.
fn yaml_error(file: &str, e: YamlError) -> SchemeError {
    let expected = match e.kind {
        YamlErrorKind::TooLarge => {
            format!("a scheme of at most {} bytes (1 MiB)", yaml::MAX_FILE_BYTES)
        }
        _ => e.expected,
    };
    SchemeError::one(
        file,
        Diagnostic {
            line: e.line,
            column: e.column,
            path: e.path.unwrap_or_default(),
            expected,
            found: e.found,
        },
    )
}

impl fmt::Display for SchemeSource {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        write!(f, "{} (sha256 {})", self.path, self.sha256)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splits_paths() {
        assert_eq!(
            split_path("couplings[1].dipole").unwrap(),
            vec!["couplings", "1", "dipole"]
        );
        assert_eq!(split_path("a.b.2.c").unwrap(), vec!["a", "b", "2", "c"]);
        assert!(split_path("a..b").is_err());
        assert!(split_path("a[1").is_err());
    }
}
