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
mod overrides;
pub mod raw;
mod source;
mod validate;

use crate::model::Model;
use crate::yaml::{self, YamlError, YamlErrorKind};
use locate::Locator;
use raw::RawScheme;
use serde_json::Value;
use std::fmt;

use overrides::apply_override;
pub use overrides::{level_names_in_path, numeric_value_at};
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
/// an unknown path is an error naming the path. An override under `levels`
/// or `manifolds` leaves every `tuned` carrier where the scheme as written
/// puts it ([`Prepared::with_tuned_follows`]).
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
    /// The transition frequency of every `tuned` carrier in the scheme as
    /// written (by the key path of its `tuned` mapping).
    lines: Vec<(String, f64)>,
    /// `tuned` carriers follow varied level energies (the carrier is
    /// recomputed from the overridden levels).
    tuned_follows: bool,
}

impl Prepared {
    /// Parse and validate `text` (it must be valid on its own).
    pub fn new(text: &str, file_name: &str) -> Result<Prepared, SchemeError> {
        let raw = read_raw(text, file_name)?;
        let (_, lines) = validate_raw_with(&raw, text, file_name, Vec::new(), None)?;
        let value = raw_value(&raw, file_name)?;
        Ok(Prepared {
            text: text.to_string(),
            file: file_name.to_string(),
            value,
            lines,
            tuned_follows: false,
        })
    }

    /// Whether a `tuned` carrier follows its levels when an override moves
    /// them. By default (false) an override of any path under `levels` or
    /// `manifolds` (energies, hyperfine constants, g-factors) leaves every
    /// `tuned` carrier at the transition frequency of the scheme as written
    /// plus its (possibly overridden) detuning, so a varied level energy
    /// moves the level through the laser. With `true`, the carrier is
    /// recomputed from the overridden levels (the laser follows the level).
    /// Other overrides (the magnetic field, a detuning) recompute the
    /// carrier from the levels either way.
    pub fn with_tuned_follows(mut self, follows: bool) -> Prepared {
        self.tuned_follows = follows;
        self
    }

    /// The model with the given overrides (see [`parse_with_overrides`] and
    /// [`Prepared::with_tuned_follows`]).
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
        let fixed = (!self.tuned_follows
            && overrides.iter().any(|(p, _)| overrides::moves_levels(p)))
        .then(|| self.lines.clone());
        validate_raw_with(&raw, text, file_name, overridden, fixed).map(|(m, _)| m)
    }
}

fn validate_raw(
    raw: &RawScheme,
    text: &str,
    file_name: &str,
    overridden: Vec<String>,
) -> Result<Model, SchemeError> {
    validate_raw_with(raw, text, file_name, overridden, None).map(|(m, _)| m)
}

/// [`validate_raw`] with the `tuned` lines fixed (`fixed`), returning the
/// lines the carriers were set from.
fn validate_raw_with(
    raw: &RawScheme,
    text: &str,
    file_name: &str,
    overridden: Vec<String>,
    fixed: Option<Vec<(String, f64)>>,
) -> Result<(Model, Vec<(String, f64)>), SchemeError> {
    let mut ctx = validate::Ctx::new(text, overridden);
    ctx.fixed_lines = fixed;
    let model = validate::validate(raw, &mut ctx);
    let lines = std::mem::take(&mut ctx.tuned_lines);
    let suppressed = ctx.suppressed;
    let mut diags = ctx.diags;
    match model {
        Some(m) if diags.is_empty() => Ok((m, lines)),
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
