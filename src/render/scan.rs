//! The spelling of scan results: the scan CSV (comment lines, column header,
//! rows in full precision) and its reading back for `--resume` and `merge`,
//! and the text summary of `tune`.
//!
//! Owns: every byte of a scan file. The same row always becomes the same
//! bytes (`{:e}`, shortest round-trip), which is what makes a scan
//! byte-identical on one thread or many, sharded or not. Must not: compute,
//! open files or print.

use crate::report::Provenance;
use crate::scan::{Axis, Link, ScanRow, Shard, Spacing, TuneGoal, TuneReport};
use std::fmt::Write as _;

/// Comment line carrying the scan hash.
pub const HASH_PREFIX: &str = "# scan ";
/// Comment line carrying the shard of a part file (absent in full scans).
pub const SHARD_PREFIX: &str = "# shard ";
/// Comment line carrying the number of grid points.
pub const GRID_PREFIX: &str = "# grid ";
/// Comment lines of the varied values.
pub const VARY_PREFIX: &str = "# vary ";
/// Comment lines of the linked paths (`--with`), after their axis's line.
pub const WITH_PREFIX: &str = "# with ";
/// Comment line of the tolerance.
pub const TOLERANCE_PREFIX: &str = "# tolerance ";

/// What the head of a scan file states.
#[derive(Debug, Clone)]
pub struct ScanHead<'a> {
    pub provenance: &'a Provenance,
    pub axes: &'a [Axis],
    /// The `--tolerance` override, if any.
    pub tolerance: Option<f64>,
    /// The scheme's default tolerance (stated when there is no override).
    pub default_tolerance: f64,
    pub points: usize,
    pub hash: &'a str,
    pub shard: Option<Shard>,
    pub level_ids: &'a [String],
    /// The scheme uses the open-system keys: the rows end in `lost` and
    /// `scattered_photons`.
    pub open: bool,
}

/// Name of an axis column: the path with its unit, e.g.
/// `fields.probe.tuned.detuning [MHz]`.
pub fn axis_label(a: &Axis) -> String {
    column_label(&a.path, &a.unit)
}

/// Name of a coordinate column: `PATH [UNIT]`, or PATH for a bare number.
pub fn column_label(path: &str, unit: &str) -> String {
    if unit.is_empty() {
        path.to_string()
    } else {
        format!("{path} [{unit}]")
    }
}

/// The two columns a scan of a scheme with open-system keys adds at the
/// end of every row.
pub const OPEN_COLUMNS: [&str; 2] = ["lost", "scattered_photons"];

/// Column names: one per axis and one per linked path (each after its
/// axis), `P(<id>)` per level, `max_spectator`,
/// `flagged`, `est(<id>)` per level, and with `open` [`OPEN_COLUMNS`].
pub fn columns(axes: &[Axis], level_ids: &[String], open: bool) -> Vec<String> {
    let mut c: Vec<String> = axes
        .iter()
        .flat_map(Axis::columns)
        .map(|(p, u)| column_label(p, u))
        .collect();
    c.extend(level_ids.iter().map(|id| format!("P({id})")));
    c.push("max_spectator".into());
    c.push("flagged".into());
    c.extend(level_ids.iter().map(|id| format!("est({id})")));
    if open {
        c.extend(OPEN_COLUMNS.map(String::from));
    }
    c
}

fn csv_line(fields: &[String]) -> String {
    // Quote like RFC 4180 where a name needs it (ids are free text).
    let quoted: Vec<String> = fields
        .iter()
        .map(|f| {
            if f.contains([',', '"', '\n', '\r']) {
                format!("\"{}\"", f.replace('"', "\"\""))
            } else {
                f.clone()
            }
        })
        .collect();
    quoted.join(",")
}

/// The head of a scan file: `#` comment lines and the column header, each
/// line ending in '\n'.
pub fn head(h: &ScanHead) -> String {
    let p = h.provenance;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# {} {} scan; scheme {} sha256 {}",
        p.tool, p.version, p.scheme_file, p.scheme_sha256
    );
    for (k, a) in h.axes.iter().enumerate() {
        let _ = writeln!(
            s,
            "{VARY_PREFIX}{}: {} from {:e} to {:e}{}{}, {} points, {}",
            k + 1,
            a.path,
            a.start,
            a.end,
            if a.unit.is_empty() { "" } else { " " },
            a.unit,
            a.count,
            a.spacing.as_str()
        );
        for l in &a.links {
            let _ = writeln!(
                s,
                "{WITH_PREFIX}{}: {} from {:e} to {:e}{}{}",
                k + 1,
                l.path,
                l.start,
                l.end,
                if l.unit.is_empty() { "" } else { " " },
                l.unit,
            );
        }
    }
    let (t, whence) = match h.tolerance {
        Some(t) => (t, "--tolerance"),
        None => (h.default_tolerance, "the scheme's default"),
    };
    let _ = writeln!(
        s,
        "{TOLERANCE_PREFIX}{t:e} ({whence}; per-level tolerances still apply)"
    );
    let _ = writeln!(
        s,
        "{GRID_PREFIX}{} points, row-major, the last --vary fastest",
        h.points
    );
    let _ = writeln!(s, "{HASH_PREFIX}{}", h.hash);
    if let Some(sh) = h.shard {
        let _ = writeln!(s, "{SHARD_PREFIX}{}/{}", sh.k, sh.n);
    }
    s.push_str(&csv_line(&columns(h.axes, h.level_ids, h.open)));
    s.push('\n');
    s
}

/// The coordinate fields of a row, each followed by ',' (a row starts with
/// exactly these bytes).
pub fn coords_prefix(coords: &[f64]) -> String {
    let mut s = String::new();
    for c in coords {
        let _ = write!(s, "{c:e},");
    }
    s
}

fn optional(s: &mut String, v: Option<f64>) {
    match v {
        Some(v) => {
            let _ = write!(s, ",{v:e}");
        }
        None => s.push(','),
    }
}

/// One data row, ending in '\n'; with `open` (the head's) the lost
/// population and the scattered photons end it. An absent value is an
/// empty field.
pub fn row(r: &ScanRow, open: bool) -> String {
    let mut s = coords_prefix(&r.coords);
    for p in &r.populations {
        let _ = write!(s, "{p:e},");
    }
    let _ = write!(s, "{:e},{}", r.max_spectator, r.flagged);
    for e in &r.estimates {
        optional(&mut s, *e);
    }
    if open {
        optional(&mut s, r.lost);
        optional(&mut s, r.scattered_photons);
    }
    s.push('\n');
    s
}

/// Read a data row back (without its '\n'); `n_axes`: the coordinate
/// columns (axes and linked paths); `open`: the head names [`OPEN_COLUMNS`].
pub fn parse_row(
    line: &str,
    n_axes: usize,
    n_levels: usize,
    open: bool,
) -> Result<ScanRow, String> {
    let fields: Vec<&str> = line.split(',').collect();
    let extra = if open { OPEN_COLUMNS.len() } else { 0 };
    let want = n_axes + 2 * n_levels + 2 + extra;
    if fields.len() != want {
        return Err(format!("{} fields where {want} are expected", fields.len()));
    }
    let num = |s: &str| -> Result<f64, String> {
        s.parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| format!("'{s}' is not a finite number"))
    };
    let coords = fields[..n_axes]
        .iter()
        .map(|s| num(s))
        .collect::<Result<_, _>>()?;
    let populations = fields[n_axes..n_axes + n_levels]
        .iter()
        .map(|s| num(s))
        .collect::<Result<_, _>>()?;
    let max_spectator = num(fields[n_axes + n_levels])?;
    let flagged_text = fields[n_axes + n_levels + 1];
    let flagged = flagged_text
        .parse::<usize>()
        .map_err(|_| format!("'{flagged_text}' is not a count"))?;
    let opt = |s: &&str| -> Result<Option<f64>, String> {
        if s.is_empty() {
            Ok(None)
        } else {
            num(s).map(Some)
        }
    };
    let rest = &fields[n_axes + n_levels + 2..];
    let estimates = rest[..n_levels].iter().map(opt).collect::<Result<_, _>>()?;
    let (lost, scattered_photons) = match &rest[n_levels..] {
        [l, p] => (opt(l)?, opt(p)?),
        _ => (None, None),
    };
    Ok(ScanRow {
        coords,
        populations,
        max_spectator,
        flagged,
        estimates,
        lost,
        scattered_photons,
    })
}

/// A scan file cut into its parts.
#[derive(Debug, Clone, PartialEq)]
pub struct ScanText<'a> {
    /// Leading `#` lines, without their '\n'.
    pub comments: Vec<&'a str>,
    /// The column header line, without '\n'.
    pub header: &'a str,
    /// Complete data lines (each ended by '\n' in the file), without '\n'.
    pub rows: Vec<&'a str>,
    /// Byte offset just after the header line.
    pub body_start: usize,
    /// Bytes after the last '\n' (a row cut short by a kill), if any.
    pub tail: &'a str,
}

impl ScanText<'_> {
    /// The shard named in the comments, if any (text after the prefix).
    pub fn shard_text(&self) -> Option<&str> {
        self.comments
            .iter()
            .find_map(|c| c.strip_prefix(SHARD_PREFIX))
    }

    /// The comment lines other than the shard line.
    pub fn common_comments(&self) -> Vec<&str> {
        self.comments
            .iter()
            .copied()
            .filter(|c| !c.starts_with(SHARD_PREFIX))
            .collect()
    }

    /// The number of grid points the comments state.
    pub fn grid_points(&self) -> Option<usize> {
        self.comments
            .iter()
            .find_map(|c| c.strip_prefix(GRID_PREFIX))
            .and_then(|r| r.split_whitespace().next())
            .and_then(|n| n.parse().ok())
    }

    /// The scan hash the comments state.
    pub fn hash(&self) -> Option<&str> {
        self.comments
            .iter()
            .find_map(|c| c.strip_prefix(HASH_PREFIX))
    }
}

/// What a scan file's head states, read back (to plot a merged scan).
#[derive(Debug, Clone, PartialEq)]
pub struct HeadInfo {
    pub scheme_file: String,
    pub axes: Vec<Axis>,
    pub tolerance: f64,
    pub level_ids: Vec<String>,
    /// The header ends in [`OPEN_COLUMNS`].
    pub open: bool,
}

fn read_vary(line: &str) -> Option<Axis> {
    let (_, rest) = line.strip_prefix(VARY_PREFIX)?.split_once(": ")?;
    let mut tail = rest.rsplitn(3, ", ");
    let spacing = match tail.next()? {
        "linear" => Spacing::Linear,
        "log" => Spacing::Log,
        _ => return None,
    };
    let count = tail
        .next()?
        .strip_suffix(" points")?
        .parse()
        .ok()
        .filter(|&n: &usize| n > 0)?;
    let l = read_range(tail.next()?)?;
    Some(Axis {
        path: l.path,
        unit: l.unit,
        start: l.start,
        end: l.end,
        count,
        spacing,
        links: Vec::new(),
    })
}

/// "PATH from START to END[ UNIT]" read back.
fn read_range(text: &str) -> Option<Link> {
    let (path, range) = text.split_once(" from ")?;
    let (start, end_unit) = range.split_once(" to ")?;
    let (end, unit) = end_unit.split_once(' ').unwrap_or((end_unit, ""));
    Some(Link {
        path: path.to_string(),
        unit: unit.to_string(),
        start: start.parse().ok()?,
        end: end.parse().ok()?,
    })
}

/// The axes of the `# vary` lines with the `# with` lines attached.
fn read_axes(comments: &[&str]) -> Result<Vec<Axis>, String> {
    let mut axes: Vec<Axis> = Vec::new();
    for c in comments {
        if c.starts_with(VARY_PREFIX) {
            axes.push(read_vary(c).ok_or_else(|| format!("cannot read '{c}'"))?);
        } else if let Some(rest) = c.strip_prefix(WITH_PREFIX) {
            let link = rest
                .split_once(": ")
                .and_then(|(k, r)| Some((k.parse::<usize>().ok()?, read_range(r)?)))
                .filter(|(k, _)| *k == axes.len() && *k > 0);
            let (_, link) = link.ok_or_else(|| format!("cannot read '{c}'"))?;
            if let Some(a) = axes.last_mut() {
                a.links.push(link);
            }
        }
    }
    Ok(axes)
}

/// Read the axes, tolerance, level ids and scheme file back from a head.
pub fn read_head(t: &ScanText) -> Result<HeadInfo, String> {
    let scheme_file = t
        .comments
        .first()
        .and_then(|c| c.split_once("; scheme "))
        .and_then(|(_, r)| r.rsplit_once(" sha256 "))
        .map(|(f, _)| f.to_string())
        .ok_or("no scheme line")?;
    let axes = read_axes(&t.comments)?;
    let n_columns: usize = axes.iter().map(|a| 1 + a.links.len()).sum();
    let tolerance = t
        .comments
        .iter()
        .find_map(|c| c.strip_prefix(TOLERANCE_PREFIX))
        .and_then(|r| r.split_whitespace().next())
        .and_then(|v| v.parse::<f64>().ok())
        .ok_or("no tolerance line")?;
    if t.header.contains('"') {
        return Err("quoted column names".into());
    }
    let level_ids = t
        .header
        .split(',')
        .skip(n_columns)
        .take_while(|c| *c != "max_spectator")
        .map(|c| {
            c.strip_prefix("P(")
                .and_then(|c| c.strip_suffix(')'))
                .map(String::from)
                .ok_or_else(|| format!("unexpected column '{c}'"))
        })
        .collect::<Result<Vec<_>, _>>()?;
    if axes.is_empty() || level_ids.is_empty() {
        return Err("no varied value or no level".into());
    }
    let header: Vec<&str> = t.header.split(',').collect();
    let open = if header == columns(&axes, &level_ids, true) {
        true
    } else if header == columns(&axes, &level_ids, false) {
        false
    } else {
        return Err(format!("unexpected column header '{}'", t.header));
    };
    Ok(HeadInfo {
        scheme_file,
        axes,
        tolerance,
        level_ids,
        open,
    })
}

/// Cut a scan file into comments, header and complete rows.
pub fn split(text: &str) -> Result<ScanText<'_>, String> {
    let mut comments = Vec::new();
    let mut pos = 0;
    loop {
        let rest = &text[pos..];
        let Some(nl) = rest.find('\n') else {
            return Err("no column header line".into());
        };
        let line = &rest[..nl];
        pos += nl + 1;
        if line.starts_with('#') {
            comments.push(line);
        } else {
            let body = &text[pos..];
            let (complete, tail) = match body.rfind('\n') {
                Some(i) => (&body[..i], &body[i + 1..]),
                None => ("", body),
            };
            let rows = if complete.is_empty() && !body.starts_with('\n') {
                Vec::new()
            } else {
                complete.split('\n').collect()
            };
            return Ok(ScanText {
                comments,
                header: line,
                rows,
                body_start: pos,
                tail,
            });
        }
    }
}

/// The first line where two heads differ, for a message: (line number
/// 1-based, left, right).
pub fn first_difference<'a>(a: &'a str, b: &'a str) -> Option<(usize, &'a str, &'a str)> {
    let mut la = a.lines();
    let mut lb = b.lines();
    let mut n = 0;
    loop {
        n += 1;
        match (la.next(), lb.next()) {
            (None, None) => return None,
            (x, y) if x == y => continue,
            (x, y) => return Some((n, x.unwrap_or("<nothing>"), y.unwrap_or("<nothing>"))),
        }
    }
}

fn with_unit(number: String, unit: &str) -> String {
    if unit.is_empty() {
        number
    } else {
        format!("{number} {unit}")
    }
}

fn value_with_unit(v: f64, unit: &str) -> String {
    with_unit(format!("{v:.9e}"), unit)
}

/// The text summary of a tune run.
pub fn tune_text(r: &TuneReport) -> String {
    let a = &r.axis;
    let mut s = String::new();
    let aim = match &r.goal {
        TuneGoal::Maximize { level } => format!("maximise P({})", r.level_ids[*level]),
        TuneGoal::Shortest { goal } => format!(
            "smallest value with every spectator within tolerance and every target >= {goal}"
        ),
    };
    let _ = writeln!(
        s,
        "{} tune of {} over [{}, {}] ({}): {aim}",
        r.provenance.scheme_file,
        a.path,
        value_with_unit(a.start, &a.unit),
        value_with_unit(a.end, &a.unit),
        a.spacing.as_str()
    );
    match &r.found {
        None => {
            let _ = writeln!(
                s,
                "no value on the {}-point grid meets the condition; widen the range or relax --goal/--tolerance",
                r.coarse_points
            );
        }
        Some(f) => {
            let half = (f.value - f.lo).abs().max((f.hi - f.value).abs());
            let _ = writeln!(
                s,
                "value: {} +- {} (bracket [{}, {}])",
                value_with_unit(f.value, &a.unit),
                with_unit(format!("{half:.1e}"), &a.unit),
                value_with_unit(f.lo, &a.unit),
                value_with_unit(f.hi, &a.unit)
            );
            if f.at_edge {
                let _ = writeln!(
                    s,
                    "note: the best coarse point is at an end of the range; the answer may lie at or beyond it"
                );
            }
            let _ = writeln!(s, "populations there:");
            for (k, id) in r.level_ids.iter().enumerate() {
                let est = match f.row.estimates.get(k).copied().flatten() {
                    Some(e) => format!("  (estimate {e:.6e})"),
                    None => String::new(),
                };
                let _ = writeln!(
                    s,
                    "  P({id}) = {:.10e}  [{}]{est}",
                    f.row.populations.get(k).copied().unwrap_or(0.0),
                    r.roles.get(k).map_or("", |ro| ro.as_str())
                );
            }
            let _ = writeln!(
                s,
                "largest spectator population {:.6e}; {} spectator(s) above tolerance",
                f.row.max_spectator, f.row.flagged
            );
        }
    }
    let _ = writeln!(
        s,
        "solves: {} ({} on the coarse grid, {} refining)",
        r.coarse_points + r.refine_solves,
        r.coarse_points,
        r.refine_solves
    );
    s
}

#[cfg(test)]
#[path = "scan_tests.rs"]
mod tests;
