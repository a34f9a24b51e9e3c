//! Where validation's diagnostics go, and the readers of single values.
//!
//! Owns: [`Ctx`] (the collected diagnostics, the cap on how many are listed,
//! the key locator built only when a problem is reported, the "from an
//! override" note), and reading one quantity with a unit, a bare number or a
//! sign rule into a number or a diagnostic. Must not: know which key means
//! what (that is the concern modules), or compute physics.

use super::super::locate::{KeyPath, Locator};
use super::super::raw::Scalar;
use super::super::{Diagnostic, MAX_DIAGNOSTICS};
use crate::units::{self, Kind};

/// Where diagnostics go, with the text to locate keys in.
pub(crate) struct Ctx<'a> {
    /// The text, and its key locator built only when a problem is reported
    /// (a valid scheme, e.g. every point of a scan, never pays for it).
    text: &'a str,
    loc_cell: std::cell::OnceCell<Locator<'a>>,
    pub(crate) diags: Vec<Diagnostic>,
    /// Rendered key paths whose values came from overrides.
    overridden: Vec<String>,
    /// Problems found beyond [`MAX_DIAGNOSTICS`], counted but not listed.
    pub(crate) suppressed: usize,
    /// The transition frequency (rad/s) each `tuned` carrier was set from,
    /// by the key path of its `tuned` mapping, as validation met them.
    pub(crate) tuned_lines: Vec<(String, f64)>,
    /// When set, a `tuned` carrier takes its transition frequency from
    /// here (the scheme as written) instead of the levels it is given:
    /// a scan that moves level energies moves them through the laser.
    pub(crate) fixed_lines: Option<Vec<(String, f64)>>,
}

/// Sign rule for a quantity.
#[derive(Clone, Copy, PartialEq)]
pub(super) enum Sign {
    Any,
    Positive,
    NonNegative,
}

impl<'a> Ctx<'a> {
    pub(crate) fn new(text: &'a str, overridden: Vec<String>) -> Self {
        Ctx {
            text,
            loc_cell: std::cell::OnceCell::new(),
            diags: Vec::new(),
            overridden,
            suppressed: 0,
            tuned_lines: Vec::new(),
            fixed_lines: None,
        }
    }

    /// The transition frequency of the `tuned` carrier at `key`: the fixed
    /// one when set (and known for this key), else `own`; recorded.
    pub(super) fn tuned_line(&mut self, key: String, own: f64) -> f64 {
        let w = self
            .fixed_lines
            .as_ref()
            .and_then(|f| f.iter().find(|(k, _)| *k == key))
            .map_or(own, |&(_, w)| w);
        self.tuned_lines.push((key, w));
        w
    }

    pub(super) fn push_at(
        &mut self,
        path: &KeyPath,
        pos: Option<(usize, usize)>,
        expected: impl Into<String>,
        found: impl Into<String>,
    ) {
        if self.diags.len() >= MAX_DIAGNOSTICS {
            self.suppressed += 1;
            return;
        }
        let p = path.to_string();
        let mut found = found.into();
        if self.overridden.contains(&p) {
            found.push_str(" (from an override)");
        }
        self.diags.push(Diagnostic {
            line: pos.map(|x| x.0),
            column: pos.map(|x| x.1),
            path: p,
            expected: expected.into(),
            found,
        });
    }

    pub(super) fn push(
        &mut self,
        path: &KeyPath,
        expected: impl Into<String>,
        found: impl Into<String>,
    ) {
        if self.diags.len() >= MAX_DIAGNOSTICS {
            // Locating costs a pass over the text; do not pay it for
            // messages that will not be shown.
            self.suppressed += 1;
            return;
        }
        let pos = self.loc().locate(path);
        self.push_at(path, pos, expected, found);
    }

    pub(super) fn loc(&self) -> &Locator<'a> {
        self.loc_cell.get_or_init(|| Locator::new(self.text))
    }

    pub(super) fn line_of(&self, path: &KeyPath) -> Option<usize> {
        self.loc().locate(path).map(|x| x.0)
    }

    pub(super) fn missing(&mut self, path: &KeyPath, expected: impl Into<String>) {
        self.push(path, expected, "nothing (the key is missing)");
    }

    /// A quantity with a unit (or an angle), with a sign rule. `None` when
    /// absent (no message) or wrong (message pushed).
    pub(super) fn quantity(
        &mut self,
        path: &KeyPath,
        s: &Option<Scalar>,
        kind: Kind,
        sign: Sign,
    ) -> Option<f64> {
        let s = s.as_ref()?;
        let text = s.text();
        let r = match s {
            Scalar::Str(t) => units::parse_quantity(t, kind),
            Scalar::Num(x) if kind.bare_allowed() => {
                if x.is_finite() {
                    Ok(*x)
                } else {
                    units::parse_quantity(&text, kind)
                }
            }
            Scalar::Num(_) => units::parse_quantity(&text, kind),
            Scalar::Bool(_) => Err(units::UnitError {
                expected: kind.expected(),
                found: format!("'{text}' (a boolean)"),
            }),
        };
        match r {
            Err(e) => {
                self.push(path, e.expected, e.found);
                None
            }
            Ok(v) => self.check_sign(path, v, &text, kind, sign),
        }
    }

    fn check_sign(
        &mut self,
        path: &KeyPath,
        v: f64,
        text: &str,
        kind: Kind,
        sign: Sign,
    ) -> Option<f64> {
        let bad = match sign {
            Sign::Any => None,
            Sign::Positive if v <= 0.0 => Some("positive"),
            Sign::NonNegative if v < 0.0 => Some("non-negative"),
            _ => None,
        };
        match bad {
            Some(adj) => {
                let why = if v == 0.0 { "zero" } else { "negative" };
                self.push(
                    path,
                    format!("a {adj} {} {}", kind.noun(), kind.unit_list()),
                    format!("'{}' ({why})", text.trim()),
                );
                None
            }
            None => Some(v),
        }
    }

    // Same signature as `quantity`, which it calls: the required form of it.
    /// A required quantity: pushes a message when missing.
    pub(super) fn req_quantity(
        &mut self,
        path: &KeyPath,
        s: &Option<Scalar>,
        kind: Kind,
        sign: Sign,
    ) -> Option<f64> {
        if s.is_none() {
            let adj = match sign {
                Sign::Any => String::new(),
                Sign::Positive => "positive ".into(),
                Sign::NonNegative => "non-negative ".into(),
            };
            let article = if adj.is_empty() {
                kind.description().to_string()
            } else {
                format!("a {adj}{}", kind.noun())
            };
            self.missing(path, format!("{article} {}", kind.unit_list()));
            return None;
        }
        self.quantity(path, s, kind, sign)
    }

    /// A bare number (no unit) within [lo, hi] (inclusive unless stated).
    pub(super) fn bare(
        &mut self,
        path: &KeyPath,
        s: &Option<Scalar>,
        what: &str,
        check: impl Fn(f64) -> bool,
        range_text: &str,
    ) -> Option<f64> {
        let s = s.as_ref()?;
        let text = s.text();
        let r = match s {
            Scalar::Num(x) if x.is_finite() => Ok(*x),
            Scalar::Num(_) => Err(units::UnitError {
                expected: format!("{what} (a bare number)"),
                found: format!("'{text}' (not a finite number)"),
            }),
            Scalar::Bool(_) => Err(units::UnitError {
                expected: format!("{what} (a bare number)"),
                found: format!("'{text}' (a boolean)"),
            }),
            _ => units::parse_bare(&text, what),
        };
        match r {
            Err(e) => {
                self.push(path, e.expected, e.found);
                None
            }
            Ok(v) if !check(v) => {
                self.push(path, format!("{what} {range_text}"), format!("'{text}'"));
                None
            }
            Ok(v) => Some(v),
        }
    }
}

impl Ctx<'_> {
    /// A population: a bare number between 0 and 1.
    pub(super) fn population(&mut self, path: &KeyPath, s: &Option<Scalar>) -> Option<f64> {
        self.bare(
            path,
            s,
            "a population",
            |v| (0.0..=1.0).contains(&v),
            "between 0 and 1",
        )
    }
}
