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
        let what = format!("--vary '{text}'");
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
/// in (empty for a bare number), and the values it takes.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    pub path: String,
    pub unit: String,
    pub start: f64,
    pub end: f64,
    pub count: usize,
    pub spacing: Spacing,
}

impl Axis {
    /// Build an axis from a spec, the unit the scheme writes at that path
    /// (used when the spec gives none), and the spacing. `count` overrides
    /// the spec's count (tune's default).
    pub fn new(spec: &VarySpec, scheme_unit: &str, log: bool, count: usize) -> Result<Axis, Error> {
        let what = format!("--vary {}", spec.path);
        let unit = match (&spec.unit, scheme_unit.is_empty()) {
            (Some(u), true) => {
                return Err(bad(
                    &what,
                    format!("the scheme writes a bare number at this path, but the range carries the unit '{u}'"),
                ))
            }
            (Some(u), false) => u.clone(),
            (None, _) => scheme_unit.to_string(),
        };
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
        })
    }

    /// The value at fraction `t` of the range (0 = START, 1 = END), linear
    /// or geometric.
    pub fn at_fraction(&self, t: f64) -> f64 {
        if t <= 0.0 {
            return self.start;
        }
        if t >= 1.0 {
            return self.end;
        }
        match self.spacing {
            Spacing::Linear => self.start + (self.end - self.start) * t,
            Spacing::Log => self.start * (self.end / self.start).powf(t),
        }
    }

    /// The i-th value (0-based); the first is START, the last END exactly.
    /// A single-point axis sits at START.
    pub fn value(&self, i: usize) -> f64 {
        if self.count <= 1 || i == 0 {
            return self.start;
        }
        if i + 1 >= self.count {
            return self.end;
        }
        self.at_fraction(i as f64 / (self.count - 1) as f64)
    }

    /// The override value as the scheme writes it: "<number> <unit>", or the
    /// bare number for a key without unit. The number round-trips exactly.
    pub fn override_text(&self, v: f64) -> String {
        if self.unit.is_empty() {
            format!("{v}")
        } else {
            format!("{v} {}", self.unit)
        }
    }
}
