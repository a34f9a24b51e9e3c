//! The `--vary` specifications and the axes they give: spacing, values,
//! units as the scheme writes them.
//!
//! Owns: the text form PATH=START..END:COUNT[:log] and an axis's values.
//! Must not: know the scheme's meaning of a path, or the grid order.

use super::bad;
use crate::error::Error;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Spacing {
    Linear,
    /// Geometric spacing; START and END must be positive.
    Log,
}

impl Spacing {
    pub fn as_str(&self) -> &'static str {
        match self {
            Spacing::Linear => "linear",
            Spacing::Log => "log",
        }
    }
}

/// One `--vary` option as the user typed it, checked for form only:
/// `PATH=START..END[:COUNT][:log]`, START and END numbers with an optional
/// unit (`-50MHz`, `-50 MHz`); a unit written on one end applies to both.
#[derive(Debug, Clone, PartialEq)]
pub struct VarySpec {
    pub path: String,
    pub start: f64,
    pub end: f64,
    /// The unit written with START and/or END, if any.
    pub unit: Option<String>,
    pub count: Option<usize>,
    /// `:log` was written after the count.
    pub log: bool,
}

/// Split `text` into a leading decimal number and the rest (trimmed).
/// An exponent is taken only when `e`/`E` is followed by digits, so
/// `1ea0` is the number 1 with the unit `ea0`.
fn split_number(text: &str) -> Option<(f64, &str)> {
    let s = text.trim();
    let i = crate::units::numeric_prefix_len(s);
    if i == 0 {
        return None;
    }
    let value: f64 = s[..i].parse().ok()?;
    Some((value, s[i..].trim()))
}

impl VarySpec {
    /// Parse one `--vary` value. `count_required`: the scan needs `:COUNT`,
    /// tune makes it optional.
    pub fn parse(text: &str, count_required: bool) -> Result<VarySpec, Error> {
        VarySpec::parse_as("--vary", text, count_required)
    }

    /// Parse one `--with` value (`PATH=START..END[:COUNT]`): a path that
    /// steps with the `--vary` before it. Its COUNT, if written, must equal
    /// that axis's ([`Axis::link`] checks).
    pub fn parse_link(text: &str) -> Result<VarySpec, Error> {
        VarySpec::parse_as("--with", text, false)
    }

    fn parse_as(flag: &str, text: &str, count_required: bool) -> Result<VarySpec, Error> {
        let what = format!("{flag} '{text}'");
        let form =
            "expected PATH=START..END:COUNT, e.g. fields.probe.tuned.detuning=-50MHz..50MHz:101";
        let (path, rest) = text
            .split_once('=')
            .ok_or_else(|| bad(&what, format!("no '=': {form}")))?;
        let path = path.trim();
        if path.is_empty() || path.split('.').any(|k| k.is_empty()) {
            return Err(bad(
                &what,
                format!("PATH must be keys joined by '.': {form}"),
            ));
        }
        if path.contains(|c: char| c.is_whitespace() || c == ',' || c == '"') {
            return Err(bad(&what, "PATH may not contain spaces, commas or quotes"));
        }
        let mut parts = rest.split(':');
        let range = parts.next().unwrap_or_default();
        let mut count = None;
        let mut log = false;
        for (k, p) in parts.enumerate() {
            let p = p.trim();
            if k == 0 && p != "log" {
                let n: i64 = p.parse().map_err(|_| {
                    bad(&what, format!("COUNT must be a whole number, found '{p}'"))
                })?;
                if n < 1 {
                    return Err(bad(&what, format!("COUNT must be at least 1, found {n}")));
                }
                count = Some(usize::try_from(n).map_err(|_| bad(&what, "COUNT is too large"))?);
            } else if p == "log" && !log {
                log = true;
            } else {
                return Err(bad(
                    &what,
                    format!("unexpected ':{p}' (only ':COUNT' and ':log' may follow the range)"),
                ));
            }
        }
        if count_required && count.is_none() {
            return Err(bad(&what, format!("no ':COUNT': {form}")));
        }
        let (a, b) = range
            .split_once("..")
            .ok_or_else(|| bad(&what, format!("no '..' between START and END: {form}")))?;
        fn endpoint<'s>(s: &'s str, name: &str, what: &str) -> Result<(f64, &'s str), Error> {
            split_number(s).ok_or_else(|| {
                bad(
                    what,
                    format!(
                        "{name} must be a number with an optional unit, found '{}'",
                        s.trim()
                    ),
                )
            })
        }
        let (start, ua) = endpoint(a, "START", &what)?;
        let (end, ub) = endpoint(b, "END", &what)?;
        if !start.is_finite() || !end.is_finite() {
            return Err(bad(&what, "START and END must be finite"));
        }
        let unit = match (ua.is_empty(), ub.is_empty()) {
            (true, true) => None,
            (false, true) => Some(ua.to_string()),
            (true, false) => Some(ub.to_string()),
            (false, false) if ua == ub => Some(ua.to_string()),
            _ => {
                return Err(bad(
                    &what,
                    format!("START and END are in different units ('{ua}' and '{ub}'); write both in one unit"),
                ))
            }
        };
        Ok(VarySpec {
            path: path.to_string(),
            start,
            end,
            unit,
            count,
            log,
        })
    }
}

impl VarySpec {
    /// The spacing of this range with `--log` (all axes) or `:log` (this
    /// one); log spacing needs positive START and END.
    pub fn spacing(&self, log: bool) -> Result<Spacing, Error> {
        if !(log || self.log) {
            return Ok(Spacing::Linear);
        }
        if !(self.start > 0.0 && self.end > 0.0) {
            return Err(bad(
                &format!("--vary {}", self.path),
                format!(
                    "log spacing needs positive START and END, found {} and {}",
                    self.start, self.end
                ),
            ));
        }
        Ok(Spacing::Log)
    }
}

/// One varied value of the scheme: a path, the unit its numbers are written
/// in (empty for a bare number), and the values it takes; with it, the
/// paths linked to it (`--with`), each stepping with the same index over
/// its own range.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    pub path: String,
    pub unit: String,
    pub start: f64,
    pub end: f64,
    pub count: usize,
    pub spacing: Spacing,
    /// Linked paths in the order of their `--with` options.
    pub links: Vec<Link>,
}

/// A path moved together with an axis (`--with PATH=START..END`): at the
/// axis's i-th point it takes the i-th value of its own range, spaced as
/// the axis is (so START with the axis's START, END with its END).
#[derive(Debug, Clone, PartialEq)]
pub struct Link {
    pub path: String,
    pub unit: String,
    pub start: f64,
    pub end: f64,
}

/// The value at fraction `t` of [start, end] (0 = START, 1 = END).
fn at_fraction(start: f64, end: f64, spacing: Spacing, t: f64) -> f64 {
    if t <= 0.0 {
        return start;
    }
    if t >= 1.0 {
        return end;
    }
    match spacing {
        Spacing::Linear => start + (end - start) * t,
        Spacing::Log => start * (end / start).powf(t),
    }
}

/// The i-th of `count` values from start to end (the first is START, the
/// last END exactly; a single point sits at START).
fn nth(start: f64, end: f64, count: usize, spacing: Spacing, i: usize) -> f64 {
    if count <= 1 || i == 0 {
        return start;
    }
    if i + 1 >= count {
        return end;
    }
    at_fraction(start, end, spacing, i as f64 / (count - 1) as f64)
}

/// The unit of a range: the one written with it, or the scheme's at the
/// path; a unit on a path the scheme writes as a bare number is refused.
fn range_unit(what: &str, written: &Option<String>, scheme_unit: &str) -> Result<String, Error> {
    match (written, scheme_unit.is_empty()) {
        (Some(u), true) => Err(bad(
            what,
            format!("the scheme writes a bare number at this path, but the range carries the unit '{u}'"),
        )),
        (Some(u), false) => Ok(u.clone()),
        (None, _) => Ok(scheme_unit.to_string()),
    }
}

impl Axis {
    /// Build an axis from a spec, the unit the scheme writes at that path
    /// (used when the spec gives none), and the spacing. `count` overrides
    /// the spec's count (tune's default).
    pub fn new(spec: &VarySpec, scheme_unit: &str, log: bool, count: usize) -> Result<Axis, Error> {
        let what = format!("--vary {}", spec.path);
        let unit = range_unit(&what, &spec.unit, scheme_unit)?;
        let spacing = spec.spacing(log)?;
        if count == 0 {
            return Err(bad(&what, "COUNT must be at least 1"));
        }
        Ok(Axis {
            path: spec.path.clone(),
            unit,
            start: spec.start,
            end: spec.end,
            count,
            spacing,
            links: Vec::new(),
        })
    }

    /// Link a `--with` spec to this axis, with the unit the scheme writes
    /// at its path. Refused: a COUNT other than the axis's, a `:log` of its
    /// own (a link is spaced as its axis), a unit on a bare-number path,
    /// and on a log axis an end that is not positive.
    pub fn link(&mut self, spec: &VarySpec, scheme_unit: &str) -> Result<(), Error> {
        let what = format!("--with {}", spec.path);
        if let Some(n) = spec.count.filter(|&n| n != self.count) {
            return Err(bad(
                &what,
                format!(
                    "the range has {n} points but the --vary {} it steps with has {}; a linked path takes the same number of points (write no COUNT to take it)",
                    self.path, self.count
                ),
            ));
        }
        if spec.log {
            return Err(bad(
                &what,
                format!(
                    "a linked path is spaced as its --vary {} ({}); ':log' belongs on that --vary",
                    self.path,
                    self.spacing.as_str()
                ),
            ));
        }
        let unit = range_unit(&what, &spec.unit, scheme_unit)?;
        if self.spacing == Spacing::Log && !(spec.start > 0.0 && spec.end > 0.0) {
            return Err(bad(
                &what,
                format!(
                    "the --vary {} it steps with is log-spaced, which needs positive START and END, found {} and {}",
                    self.path, spec.start, spec.end
                ),
            ));
        }
        self.links.push(Link {
            path: spec.path.clone(),
            unit,
            start: spec.start,
            end: spec.end,
        });
        Ok(())
    }

    /// The value at fraction `t` of the range (0 = START, 1 = END), linear
    /// or geometric.
    pub fn at_fraction(&self, t: f64) -> f64 {
        at_fraction(self.start, self.end, self.spacing, t)
    }

    /// The i-th value (0-based); the first is START, the last END exactly.
    /// A single-point axis sits at START.
    pub fn value(&self, i: usize) -> f64 {
        nth(self.start, self.end, self.count, self.spacing, i)
    }

    /// The values of the i-th point: the axis's, then each linked path's
    /// (the i-th value of its own range), in column order.
    pub fn values(&self, i: usize) -> impl Iterator<Item = f64> + '_ {
        std::iter::once(self.value(i)).chain(
            self.links
                .iter()
                .map(move |l| nth(l.start, l.end, self.count, self.spacing, i)),
        )
    }

    /// The (path, unit) of each column: the axis's, then its links'.
    pub fn columns(&self) -> impl Iterator<Item = (&str, &str)> {
        std::iter::once((self.path.as_str(), self.unit.as_str())).chain(
            self.links
                .iter()
                .map(|l| (l.path.as_str(), l.unit.as_str())),
        )
    }

    /// The paths this axis moves: its own and its links'.
    pub fn paths(&self) -> impl Iterator<Item = &str> {
        self.columns().map(|(p, _)| p)
    }

    /// The override value as the scheme writes it: "<number> <unit>", or the
    /// bare number for a key without unit. The number round-trips exactly.
    pub fn override_text(&self, v: f64) -> String {
        override_text(&self.unit, v)
    }
}

/// "<number> <unit>", or the bare number without a unit; the number
/// round-trips exactly.
pub fn override_text(unit: &str, v: f64) -> String {
    if unit.is_empty() {
        format!("{v}")
    } else {
        format!("{v} {unit}")
    }
}
