//! From the serde mirror to the validated model.
//!
//! Owns: every semantic rule of the scheme format (units and dimensions,
//! ranges, ids and references, exactly-one-of choices, field strengths and
//! Rabi frequencies, defaults of window and solver). It collects every
//! problem it finds instead of stopping at the first.
//! Must not: read files, parse YAML, or print.

use super::locate::{KeyPath, Locator};
use super::raw::{Id, Initial, RawEnvelope, RawField, RawScheme, Scalar};
use super::{
    Diagnostic, MAX_COUPLINGS, MAX_DIAGNOSTICS, MAX_DRIVES, MAX_FIELDS, MAX_LEVELS,
    MAX_SAMPLE_POINTS, MAX_TIME_S, POPULATION_SUM_TOLERANCE,
};
use crate::model::{
    gaussian_sigma_from_intensity_fwhm, Coupling, Dipole, Drive, Envelope, Field, Level, Method,
    Model, SolverSettings, Window, DEFAULT_TOLERANCE,
};
use crate::units::{self, Kind, HBAR};
use std::collections::HashMap;

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
}

/// Sign rule for a quantity.
#[derive(Clone, Copy, PartialEq)]
enum Sign {
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
        }
    }

    fn push_at(
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

    fn push(&mut self, path: &KeyPath, expected: impl Into<String>, found: impl Into<String>) {
        if self.diags.len() >= MAX_DIAGNOSTICS {
            // Locating costs a pass over the text; do not pay it for
            // messages that will not be shown.
            self.suppressed += 1;
            return;
        }
        let pos = self.loc().locate(path);
        self.push_at(path, pos, expected, found);
    }

    fn loc(&self) -> &Locator<'a> {
        self.loc_cell.get_or_init(|| Locator::new(self.text))
    }

    fn line_of(&self, path: &KeyPath) -> Option<usize> {
        self.loc().locate(path).map(|x| x.0)
    }

    fn missing(&mut self, path: &KeyPath, expected: impl Into<String>) {
        self.push(path, expected, "nothing (the key is missing)");
    }

    /// A quantity with a unit (or an angle), with a sign rule. `None` when
    /// absent (no message) or wrong (message pushed).
    fn quantity(
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

    /// A required quantity: pushes a message when missing.
    fn req_quantity(
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

    /// A required time on the pulse axis: at most [`MAX_TIME_S`] in
    /// magnitude.
    fn axis_time(&mut self, path: &KeyPath, s: &Option<Scalar>, sign: Sign) -> Option<f64> {
        let v = self.req_quantity(path, s, Kind::Time, sign)?;
        if v.abs() > MAX_TIME_S {
            let text = s.as_ref().map(|x| x.text()).unwrap_or_default();
            self.push(
                path,
                format!(
                    "a time of at most {MAX_TIME_S:.0e} s in magnitude ({:.1} hours)",
                    MAX_TIME_S / 3600.0
                ),
                format!("'{}'", text.trim()),
            );
            return None;
        }
        Some(v)
    }

    /// A bare number (no unit) within [lo, hi] (inclusive unless stated).
    fn bare(
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

pub use crate::model::valid_id;

const ID_RULE: &str = "an id made of letters, digits, _ ' + or -";

/// A population sum for messages: 12 significant digits, so that 0.7 + 0.2
/// reads 0.9 while a miss of 1e-9 still shows.
fn sum_text(x: f64) -> String {
    let s = format!("{x:.12}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// A short list of ids for messages.
fn id_list(ids: &[String]) -> String {
    const MAX: usize = 12;
    let mut v: Vec<&str> = ids.iter().take(MAX).map(|s| s.as_str()).collect();
    if ids.len() > MAX {
        v.push("...");
    }
    v.join(", ")
}

/// A coupling as far as it validated.
struct CouplingInfo {
    lower: usize,
    upper: usize,
    dipole: Option<Dipole>,
    dipole_text: String,
    /// Field indices that drive it.
    fields: Vec<usize>,
}

/// How a field sets its strength.
enum Strength {
    Intensity {
        value: f64,
        by: &'static str,
    },
    /// Peak Omega on the coupling between the given levels.
    Rabi {
        pair: (usize, usize),
        omega: f64,
        key: &'static str,
    },
    /// Pulse area (rad) on the coupling between the given levels.
    Area {
        pair: (usize, usize),
        area: f64,
    },
}

struct FieldInfo {
    id: String,
    omega: Option<f64>,
    envelope: Option<Envelope>,
    strength: Option<Strength>,
    chirp: f64,
    phase: f64,
    rwa: bool,
}

/// Validate a mirror into a model, collecting every problem in `ctx`.
pub(crate) fn validate(raw: &RawScheme, ctx: &mut Ctx) -> Option<Model> {
    let root = KeyPath::root();

    // ---- levels
    let lp = root.k("levels");
    let raw_levels: &[(Id, Option<super::raw::RawLevel>)] =
        raw.levels.as_ref().map(|o| &o.0[..]).unwrap_or(&[]);
    if raw_levels.is_empty() {
        let found = if raw.levels.is_none() {
            "nothing (the key is missing)"
        } else {
            "an empty level list"
        };
        ctx.push(
            &lp,
            "at least one level (a map of id: {energy: ...})",
            found,
        );
        return None;
    }
    if raw_levels.len() > MAX_LEVELS {
        ctx.push(
            &lp,
            format!("at most {MAX_LEVELS} levels"),
            format!("{} levels", raw_levels.len()),
        );
        return None;
    }
    let mut levels: Vec<Level> = Vec::new();
    // Whether each level's energy is known (derived checks skip the others).
    let mut energy_ok: Vec<bool> = Vec::new();
    let mut level_index: HashMap<String, usize> = HashMap::new();
    let mut seen_count: HashMap<String, usize> = HashMap::new();
    for (id, lvl) in raw_levels {
        let id = &id.0;
        let path = lp.k(id);
        let occ = seen_count.entry(id.clone()).or_insert(0);
        *occ += 1;
        if *occ > 1 {
            let first = ctx.line_of(&path);
            let pos = ctx.loc().locate_occurrence(&path, *occ - 1);
            let where_ = first
                .map(|l| format!(" (the first is on line {l})"))
                .unwrap_or_default();
            ctx.push_at(
                &path,
                pos,
                "a unique level id",
                format!("a second level '{id}'{where_}"),
            );
            continue;
        }
        if !valid_id(id) {
            ctx.push(&path, format!("a level id: {ID_RULE}"), format!("'{id}'"));
        }
        let mut level = Level {
            id: id.clone(),
            label: None,
            omega: 0.0,
            gamma: 0.0,
            tolerance: None,
        };
        let mut ok = false;
        match lvl {
            None => ctx.missing(&path.k("energy"), Kind::Energy.expected()),
            Some(l) => {
                if let Some(e) =
                    ctx.req_quantity(&path.k("energy"), &l.energy, Kind::Energy, Sign::Any)
                {
                    level.omega = e;
                    ok = true;
                }
                if l.lifetime.is_some() && l.linewidth.is_some() {
                    ctx.push(
                        &path.k("linewidth"),
                        "either lifetime or linewidth, not both",
                        "both",
                    );
                } else if let Some(tau) =
                    ctx.quantity(&path.k("lifetime"), &l.lifetime, Kind::Time, Sign::Positive)
                {
                    level.gamma = 1.0 / tau;
                } else if let Some(g) = ctx.quantity(
                    &path.k("linewidth"),
                    &l.linewidth,
                    Kind::Frequency,
                    Sign::NonNegative,
                ) {
                    // Gamma/2pi written in Hz units: the parser already gives 2 pi x value.
                    level.gamma = g;
                }
                level.tolerance = ctx.bare(
                    &path.k("tolerance"),
                    &l.tolerance,
                    "a population",
                    |v| (0.0..=1.0).contains(&v),
                    "between 0 and 1",
                );
                level.label = l.label.as_ref().map(|s| s.text());
            }
        }
        level_index.insert(id.clone(), levels.len());
        levels.push(level);
        energy_ok.push(ok);
    }
    let level_ids: Vec<String> = levels.iter().map(|l| l.id.clone()).collect();

    // A level reference inside a list: index or a message.
    let lookup = |ctx: &mut Ctx, path: &KeyPath, id: &Id| -> Option<usize> {
        match level_index.get(&id.0) {
            Some(&i) => Some(i),
            None => {
                ctx.push(
                    path,
                    format!("a level id ({})", id_list(&level_ids)),
                    format!("'{}' (no such level)", id.0),
                );
                None
            }
        }
    };
    // A pair [a, b] of two distinct known levels.
    let pair = |ctx: &mut Ctx, path: &KeyPath, ids: &Option<Vec<Id>>| {
        let Some(ids) = ids else {
            ctx.missing(path, "a pair of level ids [a, b]");
            return None;
        };
        if ids.len() != 2 {
            ctx.push(
                path,
                "a pair of level ids [a, b]",
                format!("a list of {} ids", ids.len()),
            );
            return None;
        }
        let a = lookup(ctx, &path.i(0), &ids[0]);
        let b = lookup(ctx, &path.i(1), &ids[1]);
        let (a, b) = (a?, b?);
        if a == b {
            ctx.push(
                path,
                "two different levels",
                format!("[{0}, {0}] (the same level twice)", ids[0].0),
            );
            return None;
        }
        Some((a, b))
    };

    // ---- field ids (needed by coupling field lists)
    let fp = root.k("fields");
    let raw_fields: &[(Id, Option<RawField>)] =
        raw.fields.as_ref().map(|o| &o.0[..]).unwrap_or(&[]);
    if raw_fields.len() > MAX_FIELDS {
        ctx.push(
            &fp,
            format!("at most {MAX_FIELDS} fields"),
            format!("{} fields", raw_fields.len()),
        );
        return None;
    }
    let mut field_index: HashMap<String, usize> = HashMap::new();
    let mut field_entries: Vec<(String, &RawField, KeyPath)> = Vec::new();
    let empty_field = RawField::default();
    let mut fseen: HashMap<String, usize> = HashMap::new();
    for (id, f) in raw_fields {
        let id = &id.0;
        let path = fp.k(id);
        let occ = fseen.entry(id.clone()).or_insert(0);
        *occ += 1;
        if *occ > 1 {
            let first = ctx.line_of(&path);
            let pos = ctx.loc().locate_occurrence(&path, *occ - 1);
            let where_ = first
                .map(|l| format!(" (the first is on line {l})"))
                .unwrap_or_default();
            ctx.push_at(
                &path,
                pos,
                "a unique field id",
                format!("a second field '{id}'{where_}"),
            );
            continue;
        }
        if !valid_id(id) {
            ctx.push(&path, format!("a field id: {ID_RULE}"), format!("'{id}'"));
        }
        field_index.insert(id.clone(), field_entries.len());
        field_entries.push((id.clone(), f.as_ref().unwrap_or(&empty_field), path));
    }
    let field_ids: Vec<String> = field_entries.iter().map(|f| f.0.clone()).collect();

    // ---- couplings
    let cp = root.k("couplings");
    let raw_couplings = raw.couplings.as_deref().unwrap_or(&[]);
    if raw_couplings.len() > MAX_COUPLINGS {
        ctx.push(
            &cp,
            format!("at most {MAX_COUPLINGS} couplings"),
            format!("{} couplings", raw_couplings.len()),
        );
        return None;
    }
    let mut couplings: Vec<Option<CouplingInfo>> = Vec::new();
    for (ci, rc) in raw_couplings.iter().enumerate() {
        let path = cp.i(ci);
        let pr = pair(ctx, &path.k("between"), &rc.between);
        let (lower, upper) = match pr {
            Some((a, b)) => {
                // Lower energy first; equal energies keep the file order of levels.
                if levels[b].omega < levels[a].omega
                    || (levels[b].omega == levels[a].omega && b < a)
                {
                    (b, a)
                } else {
                    (a, b)
                }
            }
            None => (usize::MAX, usize::MAX),
        };
        let ok_pair = pr.is_some();
        // Which fields drive it.
        let mut fields = Vec::new();
        match &rc.fields {
            None => fields = (0..field_entries.len()).collect(),
            Some(list) => {
                for (k, fid) in list.iter().enumerate() {
                    match field_index.get(&fid.0) {
                        Some(&fi) if fields.contains(&fi) => ctx.push(
                            &path.k("fields").i(k),
                            "each field id once",
                            format!("'{}' a second time", fid.0),
                        ),
                        Some(&fi) => fields.push(fi),
                        None => ctx.push(
                            &path.k("fields").i(k),
                            format!("a field id ({})", id_list(&field_ids)),
                            format!("'{}' (no such field)", fid.0),
                        ),
                    }
                }
            }
        }
        // Dipole or Einstein A.
        let mut dipole = None;
        let mut dipole_text = String::new();
        match (&rc.dipole, &rc.einstein_a) {
            (Some(_), Some(_)) => ctx.push(
                &path.k("einstein_a"),
                "either dipole or einstein_a, not both",
                "both",
            ),
            (None, None) => ctx.missing(
                &path.k("dipole"),
                "a dipole (ea0, D, C m, or a bare relative strength), or einstein_a with g_lower and g_upper",
            ),
            (Some(d), None) => {
                dipole_text = d.text();
                let dpath = path.k("dipole");
                let bare = match d {
                    Scalar::Num(x) => Some(*x),
                    Scalar::Str(t) => match units::split_quantity(t) {
                        Some((x, u)) if u.is_empty() => Some(x),
                        _ => None,
                    },
                    Scalar::Bool(_) => None,
                };
                match bare {
                    Some(x) if x.is_finite() => dipole = Some(Dipole::Relative(x)),
                    Some(_) => ctx.push(
                        &dpath,
                        "a finite dipole",
                        format!("'{dipole_text}' (not a finite number)"),
                    ),
                    None => {
                        if let Some(v) = ctx.quantity(&dpath, &rc.dipole, Kind::Dipole, Sign::Any) {
                            dipole = Some(Dipole::Absolute(v));
                        }
                    }
                }
            }
            (None, Some(_)) => {
                let apath = path.k("einstein_a");
                let a = ctx.quantity(&apath, &rc.einstein_a, Kind::Rate, Sign::Positive);
                let mut g = |key: &str, s: &Option<Scalar>| -> Option<f64> {
                    let gp = path.k(key);
                    if s.is_none() {
                        ctx.missing(&gp, "a degeneracy 2J+1 (a bare positive integer)");
                        return None;
                    }
                    ctx.bare(
                        &gp,
                        s,
                        "a degeneracy 2J+1",
                        |v| v >= 1.0 && v.fract() == 0.0 && v <= 1e6,
                        "(a positive integer)",
                    )
                };
                let gl = g("g_lower", &rc.g_lower);
                let gu = g("g_upper", &rc.g_upper);
                let energies = ok_pair && energy_ok[lower] && energy_ok[upper];
                if let (Some(a), Some(gl), Some(gu), true) = (a, gl, gu, energies) {
                    let w = levels[upper].omega - levels[lower].omega;
                    if w > 0.0 {
                        let d = units::dipole_from_einstein_a(a, w, gl, gu);
                        dipole_text = format!("{} C m (from einstein_a)", super::raw::format_number(d));
                        dipole = Some(Dipole::Absolute(d));
                    } else {
                        ctx.push(
                            &apath,
                            "a transition between levels of different energy (einstein_a needs omega > 0)",
                            "two levels of equal energy",
                        );
                    }
                }
            }
        }
        if rc.einstein_a.is_none() {
            for (key, s) in [("g_lower", &rc.g_lower), ("g_upper", &rc.g_upper)] {
                if s.is_some() {
                    ctx.push(
                        &path.k(key),
                        "g_lower and g_upper only together with einstein_a",
                        format!("{key} beside a dipole"),
                    );
                }
            }
        }
        couplings.push(ok_pair.then_some(CouplingInfo {
            lower,
            upper,
            dipole,
            dipole_text,
            fields,
        }));
    }

    // ---- fields
    let mut fields_info: Vec<FieldInfo> = Vec::new();
    for (id, f, path) in &field_entries {
        let known = Known {
            couplings: &couplings,
            levels: &levels,
            energy_ok: &energy_ok,
        };
        fields_info.push(validate_field(ctx, id, f, path, &known, &pair));
    }

    // ---- drives: field order, then coupling order
    let mut drives: Vec<Drive> = Vec::new();
    let mut drive_count = 0usize;
    for (fi, finfo) in fields_info.iter().enumerate() {
        let mut seen_pairs: HashMap<(usize, usize), usize> = HashMap::new();
        for (ci, c) in couplings.iter().enumerate() {
            let Some(c) = c else { continue };
            if !c.fields.contains(&fi) {
                continue;
            }
            drive_count += 1;
            if let Some(&first) = seen_pairs.get(&(c.lower, c.upper)) {
                ctx.push(
                    &cp.i(ci).k("between"),
                    format!(
                        "one coupling per level pair for field '{}' (give each coupling a `fields:` list)",
                        finfo.id
                    ),
                    format!(
                        "a second coupling between {} and {} that '{}' drives (the first is couplings[{first}])",
                        levels[c.lower].id, levels[c.upper].id, finfo.id
                    ),
                );
                continue;
            }
            seen_pairs.insert((c.lower, c.upper), ci);
            drives.push(Drive {
                field: fi,
                coupling: ci,
                rabi: 0.0,
            });
        }
    }
    if drive_count > MAX_DRIVES {
        ctx.push(
            &cp,
            format!("at most {MAX_DRIVES} drives (field x coupling pairs)"),
            format!("{drive_count} drives"),
        );
        return None;
    }

    // ---- strengths: Rabi frequency of every drive, peak intensities
    let mut peak_intensity: Vec<Option<f64>> = vec![None; fields_info.len()];
    for (fi, finfo) in fields_info.iter().enumerate() {
        let fpath = &field_entries[fi].2;
        let my: Vec<usize> = (0..drives.len())
            .filter(|&k| drives[k].field == fi)
            .collect();
        let Some(strength) = &finfo.strength else {
            continue;
        };
        match strength {
            Strength::Intensity { value, by } => {
                let e0 = units::field_amplitude_from_intensity(*value);
                peak_intensity[fi] = Some(*value);
                for &k in &my {
                    let ci = drives[k].coupling;
                    let Some(c) = &couplings[ci] else { continue };
                    match c.dipole {
                        Some(Dipole::Absolute(d)) => drives[k].rabi = d * e0 / HBAR,
                        Some(Dipole::Relative(_)) => ctx.push(
                            &cp.i(ci).k("dipole"),
                            format!(
                                "a dipole with a unit (ea0, D, C m), since field '{}' sets its strength by {by}",
                                finfo.id
                            ),
                            format!("'{}' (a bare relative strength)", c.dipole_text),
                        ),
                        None => {}
                    }
                }
            }
            Strength::Rabi { pair: (a, b), .. } | Strength::Area { pair: (a, b), .. } => {
                let key = match strength {
                    Strength::Rabi { key, .. } => *key,
                    _ => "area",
                };
                let (lo, hi) = (*a.min(b), *a.max(b));
                let reference = my.iter().copied().find(|&k| {
                    couplings[drives[k].coupling]
                        .as_ref()
                        .is_some_and(|c| c.lower.min(c.upper) == lo && c.lower.max(c.upper) == hi)
                });
                let Some(rk) = reference else {
                    let exists = couplings
                        .iter()
                        .flatten()
                        .any(|c| c.lower.min(c.upper) == lo && c.lower.max(c.upper) == hi);
                    let why = if exists {
                        format!("its `fields:` list leaves '{}' out", finfo.id)
                    } else {
                        "no coupling joins them".to_string()
                    };
                    ctx.push(
                        &fpath.k(key).k("on"),
                        format!("a coupling that field '{}' drives", finfo.id),
                        format!("[{}, {}] ({why})", levels[*a].id, levels[*b].id),
                    );
                    continue;
                };
                let rci = drives[rk].coupling;
                let Some(rc) = &couplings[rci] else { continue };
                let Some(dref) = rc.dipole else { continue };
                if dref.value() == 0.0 {
                    ctx.push(
                        &cp.i(rci).k("dipole"),
                        format!(
                            "a nonzero dipole (field '{}' sets its {key} on this coupling)",
                            finfo.id
                        ),
                        format!("'{}'", rc.dipole_text),
                    );
                    continue;
                }
                let omega_ref = match strength {
                    Strength::Rabi { omega, .. } => *omega,
                    Strength::Area { area, .. } => match &finfo.envelope {
                        Some(env) => {
                            let s = env.area();
                            if !(s > 0.0 && s.is_finite()) {
                                ctx.push(
                                    &fpath.k("envelope"),
                                    "an envelope with a positive integral (area sets Omega = area / integral of f)",
                                    format!("an integral of {}", super::raw::format_number(s)),
                                );
                                continue;
                            }
                            area / s
                        }
                        None => continue,
                    },
                    Strength::Intensity { .. } => continue,
                };
                if !omega_ref.is_finite() {
                    ctx.push(
                        &fpath.k(key),
                        "a finite Rabi frequency",
                        "an out-of-range value",
                    );
                    continue;
                }
                let ref_abs = matches!(dref, Dipole::Absolute(_));
                for &k in &my {
                    let ci = drives[k].coupling;
                    let Some(c) = &couplings[ci] else { continue };
                    let Some(d) = c.dipole else { continue };
                    if matches!(d, Dipole::Absolute(_)) != ref_abs {
                        let (want, is) = if ref_abs {
                            (
                                "a dipole with a unit (ea0, D, C m)",
                                "a bare relative strength",
                            )
                        } else {
                            ("a bare relative dipole", "a dipole with a unit")
                        };
                        ctx.push(
                            &cp.i(ci).k("dipole"),
                            format!(
                                "{want} like couplings[{rci}], since field '{}' scales its Rabi frequencies by the dipole ratio",
                                finfo.id
                            ),
                            format!("'{}' ({is})", c.dipole_text),
                        );
                        continue;
                    }
                    drives[k].rabi = omega_ref * d.value() / dref.value();
                }
                if let Dipole::Absolute(d) = dref {
                    let e0 = HBAR * omega_ref.abs() / d.abs();
                    peak_intensity[fi] = Some(units::intensity_from_field_amplitude(e0));
                }
            }
        }
        for &k in &my {
            if !drives[k].rabi.is_finite() {
                ctx.push(
                    fpath,
                    "a field strength giving finite Rabi frequencies",
                    "an out-of-range value",
                );
                break;
            }
        }
    }

    // ---- initial populations
    let ip = root.k("initial");
    let mut initial = vec![0.0; levels.len()];
    match &raw.initial {
        None => ctx.missing(&ip, "a level id, or a map of level id: population"),
        Some(Initial::One(id)) => {
            if let Some(i) = lookup(ctx, &ip, id) {
                initial[i] = 1.0;
            }
        }
        Some(Initial::Map(m)) => {
            if m.0.is_empty() {
                ctx.push(
                    &ip,
                    "a level id, or a map of level id: population",
                    "an empty map",
                );
            }
            let mut ok = true;
            let mut seen: Vec<usize> = Vec::new();
            for (id, p) in &m.0 {
                let path = ip.k(&id.0);
                let Some(i) = lookup(ctx, &path, id) else {
                    ok = false;
                    continue;
                };
                if seen.contains(&i) {
                    ctx.push(
                        &path,
                        "each level once",
                        format!("'{}' a second time", id.0),
                    );
                    ok = false;
                    continue;
                }
                seen.push(i);
                if p.is_none() {
                    ctx.missing(&path, "a population (a bare number between 0 and 1)");
                    ok = false;
                    continue;
                }
                match ctx.bare(
                    &path,
                    p,
                    "a population",
                    |v| (0.0..=1.0).contains(&v),
                    "between 0 and 1",
                ) {
                    Some(v) => initial[i] = v,
                    None => ok = false,
                }
            }
            let sum: f64 = initial.iter().sum();
            if ok && !m.0.is_empty() && (sum - 1.0).abs() > POPULATION_SUM_TOLERANCE {
                ctx.push(
                    &ip,
                    "initial populations summing to 1 (within 1e-9)",
                    format!("a sum of {}", sum_text(sum)),
                );
            }
        }
    }

    // ---- targets
    let tp = root.k("targets");
    let mut targets: Vec<usize> = Vec::new();
    for (k, id) in raw.targets.as_deref().unwrap_or(&[]).iter().enumerate() {
        let path = tp.i(k);
        let Some(i) = lookup(ctx, &path, id) else {
            continue;
        };
        if targets.contains(&i) {
            ctx.push(
                &path,
                "each target once",
                format!("'{}' a second time", id.0),
            );
        } else if initial[i] > 0.0 {
            ctx.push(
                &path,
                "a target level that is not initially populated",
                format!("'{}', which is initially populated", id.0),
            );
        } else {
            targets.push(i);
        }
    }

    // ---- default tolerance
    let tolerance = ctx
        .bare(
            &root.k("tolerance"),
            &raw.tolerance,
            "a population",
            |v| (0.0..=1.0).contains(&v),
            "between 0 and 1",
        )
        .unwrap_or(DEFAULT_TOLERANCE);

    // ---- window
    let wp = root.k("window");
    let window = match &raw.window {
        Some(w) => {
            let s = ctx.axis_time(&wp.k("start"), &w.start, Sign::Any);
            let e = ctx.axis_time(&wp.k("end"), &w.end, Sign::Any);
            match (s, e) {
                (Some(s), Some(e)) if e > s => Some(Window { start: s, end: e }),
                (Some(_), Some(_)) => {
                    let txt = w.end.as_ref().map(|x| x.text()).unwrap_or_default();
                    ctx.push(
                        &wp.k("end"),
                        "an end time after the start",
                        format!("'{txt}'"),
                    );
                    None
                }
                _ => None,
            }
        }
        None => {
            if field_entries.is_empty() {
                ctx.missing(
                    &wp,
                    "a window {start: T, end: T} (a scheme without fields has no pulse to span)",
                );
                None
            } else {
                let mut span: Option<(f64, f64)> = None;
                for f in &fields_info {
                    if let Some(env) = &f.envelope {
                        let (a, b) = env.support();
                        span = Some(match span {
                            None => (a, b),
                            Some((x, y)) => (x.min(a), y.max(b)),
                        });
                    }
                }
                span.map(|(a, b)| Window { start: a, end: b })
            }
        }
    };

    // ---- solver
    let sp = root.k("solver");
    let mut solver = SolverSettings::default();
    if let Some(s) = &raw.solver {
        let pos = |v: f64| v > 0.0;
        if let Some(v) = ctx.bare(
            &sp.k("rtol"),
            &s.rtol,
            "a relative tolerance",
            pos,
            "(positive)",
        ) {
            solver.rtol = v;
        }
        if let Some(v) = ctx.bare(
            &sp.k("atol"),
            &s.atol,
            "an absolute tolerance",
            pos,
            "(positive)",
        ) {
            solver.atol = v;
        }
        if let Some(m) = &s.method {
            match m.text().as_str() {
                "auto" => solver.method = Method::Auto,
                "adaptive" => solver.method = Method::Adaptive,
                "exact" => solver.method = Method::Exact,
                other => ctx.push(
                    &sp.k("method"),
                    "one of auto, adaptive, exact",
                    format!("'{other}'"),
                ),
            }
        }
        if let Some(v) = ctx.quantity(
            &sp.k("detuning_cutoff"),
            &s.detuning_cutoff,
            Kind::Frequency,
            Sign::Positive,
        ) {
            solver.detuning_cutoff = v;
        }
    }

    if !ctx.diags.is_empty() {
        return None;
    }
    let window = window?;
    let fields: Vec<Field> = fields_info
        .into_iter()
        .zip(peak_intensity)
        .map(|(f, pi)| {
            Some(Field {
                id: f.id,
                omega: f.omega?,
                envelope: f.envelope?,
                chirp: f.chirp,
                phase: f.phase,
                rwa: f.rwa,
                peak_intensity: pi,
            })
        })
        .collect::<Option<Vec<_>>>()?;
    let couplings: Vec<Coupling> = couplings
        .into_iter()
        .map(|c| {
            let c = c?;
            Some(Coupling {
                lower: c.lower,
                upper: c.upper,
                dipole: c.dipole?,
            })
        })
        .collect::<Option<Vec<_>>>()?;
    let model = Model {
        title: raw.title.as_ref().map(|t| t.text()),
        levels,
        couplings,
        fields,
        drives,
        initial,
        targets,
        tolerance,
        window,
        solver,
    };
    check_finite(ctx, &model);
    ctx.diags.is_empty().then_some(model)
}

/// Extreme but finite inputs (a wavelength of 1e-300 m, a lifetime of
/// 1e-320 s) can overflow in derived numbers. No later stage may see a
/// non-finite number, so refuse them here, naming where they arose.
fn check_finite(ctx: &mut Ctx, m: &Model) {
    let root = KeyPath::root();
    let bad = "an out-of-range value (a derived number overflows)";
    let want = "values whose derived numbers stay finite";
    for l in &m.levels {
        if !(l.omega.is_finite() && l.gamma.is_finite()) {
            ctx.push(&root.k("levels").k(&l.id), want, bad);
        }
    }
    for (i, c) in m.couplings.iter().enumerate() {
        if !c.dipole.value().is_finite() {
            ctx.push(&root.k("couplings").i(i), want, bad);
        }
    }
    for f in &m.fields {
        let env = &f.envelope;
        let (a, b) = env.support();
        let env_ok =
            a.is_finite() && b.is_finite() && env.area().is_finite() && env.center().is_finite();
        let ok = f.omega.is_finite()
            && f.chirp.is_finite()
            && f.phase.is_finite()
            && f.peak_intensity.is_none_or(|x| x.is_finite());
        if !env_ok {
            ctx.push(&root.k("fields").k(&f.id).k("envelope"), want, bad);
        } else if !ok {
            ctx.push(&root.k("fields").k(&f.id), want, bad);
        }
    }
    for d in &m.drives {
        if !(d.rabi.is_finite() && m.detuning(d).is_finite()) {
            ctx.push(&root.k("fields").k(&m.fields[d.field].id), want, bad);
        }
    }
    if !(m.window.start.is_finite() && m.window.end.is_finite() && m.window.duration().is_finite())
    {
        ctx.push(&root.k("window"), want, bad);
    }
}

type PairFn<'p> = dyn Fn(&mut Ctx, &KeyPath, &Option<Vec<Id>>) -> Option<(usize, usize)> + 'p;

/// What a field's validation needs to know of levels and couplings.
#[derive(Clone, Copy)]
struct Known<'k> {
    couplings: &'k [Option<CouplingInfo>],
    levels: &'k [Level],
    energy_ok: &'k [bool],
}

/// One field: carrier, envelope, strength, chirp, phase, rwa.
fn validate_field(
    ctx: &mut Ctx,
    id: &str,
    f: &RawField,
    path: &KeyPath,
    known: &Known,
    pair: &PairFn,
) -> FieldInfo {
    let Known {
        couplings,
        levels,
        energy_ok,
    } = *known;
    // Carrier: exactly one of frequency, wavelength, tuned.
    let given: Vec<&str> = [
        ("frequency", f.frequency.is_some()),
        ("wavelength", f.wavelength.is_some()),
        ("tuned", f.tuned.is_some()),
    ]
    .iter()
    .filter(|x| x.1)
    .map(|x| x.0)
    .collect();
    let mut omega = None;
    match given.len() {
        0 => ctx.missing(
            &path.k("frequency"),
            "exactly one of frequency, wavelength, tuned: {to: [a, b], detuning}",
        ),
        1 => {
            if f.frequency.is_some() {
                omega = ctx.quantity(
                    &path.k("frequency"),
                    &f.frequency,
                    Kind::Carrier,
                    Sign::Positive,
                );
            } else if f.wavelength.is_some() {
                omega = ctx
                    .quantity(
                        &path.k("wavelength"),
                        &f.wavelength,
                        Kind::Length,
                        Sign::Positive,
                    )
                    .map(units::omega_from_wavelength);
            } else if let Some(t) = &f.tuned {
                let tp = path.k("tuned");
                let pr = pair(ctx, &tp.k("to"), &t.to);
                let det =
                    ctx.req_quantity(&tp.k("detuning"), &t.detuning, Kind::Frequency, Sign::Any);
                if let Some((a, b)) = pr {
                    let joined = couplings
                        .iter()
                        .flatten()
                        .any(|c| (c.lower == a && c.upper == b) || (c.lower == b && c.upper == a));
                    if !joined {
                        let ids = t.to.as_deref().unwrap_or(&[]);
                        ctx.push(
                            &tp.k("to"),
                            "a pair of levels joined by a coupling",
                            format!(
                                "[{}, {}] (no coupling between them)",
                                ids.first().map(|x| x.0.as_str()).unwrap_or(""),
                                ids.get(1).map(|x| x.0.as_str()).unwrap_or("")
                            ),
                        );
                    } else if let (Some(det), true) = (det, energy_ok[a] && energy_ok[b]) {
                        let w_ab = (levels[a].omega - levels[b].omega).abs();
                        let w = w_ab + det;
                        if w > 0.0 && w.is_finite() {
                            omega = Some(w);
                        } else {
                            let txt = t.detuning.as_ref().map(|x| x.text()).unwrap_or_default();
                            ctx.push(
                                &tp.k("detuning"),
                                "a detuning leaving a positive carrier frequency",
                                format!(
                                    "'{txt}' (the carrier would be {} Hz)",
                                    super::raw::format_number(units::hz_from_omega(w))
                                ),
                            );
                        }
                    }
                }
            }
        }
        _ => ctx.push(
            &path.k(given[1]),
            "exactly one of frequency, wavelength, tuned",
            given.join(" and "),
        ),
    }

    let envelope = match &f.envelope {
        None => {
            ctx.missing(&path.k("envelope"), "an envelope {shape: ..., ...}");
            None
        }
        Some(e) => validate_envelope(ctx, e, &path.k("envelope")),
    };

    // Strength: exactly one of intensity, power (+ waist), rabi, area.
    let given: Vec<&str> = [
        ("intensity", f.intensity.is_some()),
        ("power", f.power.is_some()),
        ("rabi", f.rabi.is_some()),
        ("area", f.area.is_some()),
    ]
    .iter()
    .filter(|x| x.1)
    .map(|x| x.0)
    .collect();
    if f.waist.is_some() && f.power.is_none() {
        ctx.push(
            &path.k("waist"),
            "waist only together with power",
            "waist without power",
        );
    }
    let mut strength = None;
    match given.len() {
        0 => ctx.missing(
            &path.k("intensity"),
            "exactly one of intensity, power (with waist), rabi: {on, value}, area: {on, value}",
        ),
        1 => match given[0] {
            "intensity" => {
                strength = ctx
                    .quantity(
                        &path.k("intensity"),
                        &f.intensity,
                        Kind::Intensity,
                        Sign::NonNegative,
                    )
                    .map(|v| Strength::Intensity {
                        value: v,
                        by: "intensity",
                    });
            }
            "power" => {
                let p = ctx.quantity(&path.k("power"), &f.power, Kind::Power, Sign::NonNegative);
                let w = ctx.req_quantity(&path.k("waist"), &f.waist, Kind::Length, Sign::Positive);
                if let (Some(p), Some(w)) = (p, w) {
                    strength = Some(Strength::Intensity {
                        value: units::gaussian_beam_peak_intensity(p, w),
                        by: "power",
                    });
                }
            }
            key => {
                let ov = if key == "rabi" { &f.rabi } else { &f.area };
                if let Some(ov) = ov {
                    let kp = path.k(key);
                    let pr = pair(ctx, &kp.k("on"), &ov.on);
                    let v = if key == "rabi" {
                        ctx.req_quantity(&kp.k("value"), &ov.value, Kind::Frequency, Sign::Any)
                    } else {
                        ctx.req_quantity(&kp.k("value"), &ov.value, Kind::Angle, Sign::Any)
                    };
                    if let (Some(pr), Some(v)) = (pr, v) {
                        strength = Some(if key == "rabi" {
                            Strength::Rabi {
                                pair: pr,
                                omega: v,
                                key: "rabi",
                            }
                        } else {
                            Strength::Area { pair: pr, area: v }
                        });
                    }
                }
            }
        },
        _ => ctx.push(
            &path.k(given[1]),
            "exactly one of intensity, power, rabi, area",
            given.join(" and "),
        ),
    }

    let chirp = ctx
        .quantity(&path.k("chirp"), &f.chirp, Kind::Chirp, Sign::Any)
        .unwrap_or(0.0);
    let phase = ctx
        .quantity(&path.k("phase"), &f.phase, Kind::Angle, Sign::Any)
        .unwrap_or(0.0);
    FieldInfo {
        id: id.to_string(),
        omega,
        envelope,
        strength,
        chirp,
        phase,
        rwa: f.rwa.unwrap_or(true),
    }
}

const SHAPES: &str = "rectangular, gaussian, sech, sin2, blackman, samples";

/// One envelope.
fn validate_envelope(ctx: &mut Ctx, e: &RawEnvelope, path: &KeyPath) -> Option<Envelope> {
    let Some(shape) = &e.shape else {
        ctx.missing(&path.k("shape"), format!("a shape: one of {SHAPES}"));
        return None;
    };
    let shape = shape.text();
    let (allowed, takes): (&[&str], &str) = match shape.as_str() {
        "rectangular" | "sin2" | "blackman" => (&["start", "duration"], "start and duration"),
        "gaussian" => (
            &["center", "fwhm", "sigma"],
            "center and one of fwhm, sigma",
        ),
        "sech" => (&["center", "tau"], "center and tau"),
        "samples" => (&["points"], "points"),
        other => {
            ctx.push(
                &path.k("shape"),
                format!("a shape: one of {SHAPES}"),
                format!("'{other}'"),
            );
            return None;
        }
    };
    let present = [
        ("start", e.start.is_some()),
        ("duration", e.duration.is_some()),
        ("center", e.center.is_some()),
        ("fwhm", e.fwhm.is_some()),
        ("sigma", e.sigma.is_some()),
        ("tau", e.tau.is_some()),
        ("points", e.points.is_some()),
    ];
    let mut ok = true;
    for (k, p) in present {
        if p && !allowed.contains(&k) {
            ctx.push(
                &path.k(k),
                format!("only the keys of shape '{shape}': {takes}"),
                format!("'{k}', which {shape} does not take"),
            );
            ok = false;
        }
    }
    let time = |ctx: &mut Ctx, k: &str, s: &Option<Scalar>| ctx.axis_time(&path.k(k), s, Sign::Any);
    let dur =
        |ctx: &mut Ctx, k: &str, s: &Option<Scalar>| ctx.axis_time(&path.k(k), s, Sign::Positive);
    let env = match shape.as_str() {
        "rectangular" | "sin2" | "blackman" => {
            let start = time(ctx, "start", &e.start);
            let duration = dur(ctx, "duration", &e.duration);
            let (start, duration) = (start?, duration?);
            match shape.as_str() {
                "rectangular" => Envelope::Rectangular { start, duration },
                "sin2" => Envelope::Sin2 { start, duration },
                _ => Envelope::Blackman { start, duration },
            }
        }
        "gaussian" => {
            let center = time(ctx, "center", &e.center);
            let sigma = match (&e.fwhm, &e.sigma) {
                (Some(_), Some(_)) => {
                    ctx.push(&path.k("sigma"), "one of fwhm, sigma, not both", "both");
                    None
                }
                (None, None) => {
                    ctx.missing(&path.k("fwhm"), "a positive time (fwhm or sigma)");
                    None
                }
                (Some(_), None) => {
                    dur(ctx, "fwhm", &e.fwhm).map(gaussian_sigma_from_intensity_fwhm)
                }
                (None, Some(_)) => dur(ctx, "sigma", &e.sigma),
            };
            Envelope::Gaussian {
                center: center?,
                sigma: sigma?,
            }
        }
        "sech" => {
            let center = time(ctx, "center", &e.center);
            let tau = dur(ctx, "tau", &e.tau);
            Envelope::Sech {
                center: center?,
                tau: tau?,
            }
        }
        _ => {
            let pp = path.k("points");
            let Some(points) = &e.points else {
                ctx.missing(&pp, "a list of at least two [time, value] points");
                return None;
            };
            if points.len() < 2 {
                ctx.push(
                    &pp,
                    "a list of at least two [time, value] points",
                    format!("{} point(s)", points.len()),
                );
                return None;
            }
            if points.len() > MAX_SAMPLE_POINTS {
                ctx.push(
                    &pp,
                    format!("at most {MAX_SAMPLE_POINTS} points"),
                    format!("{} points", points.len()),
                );
                return None;
            }
            let mut times = Vec::with_capacity(points.len());
            let mut values = Vec::with_capacity(points.len());
            let mut good = true;
            for (k, pt) in points.iter().enumerate() {
                let ptp = pp.i(k);
                if pt.len() != 2 {
                    ctx.push(
                        &ptp,
                        "a point [time, value]",
                        format!("a list of {} items", pt.len()),
                    );
                    good = false;
                    continue;
                }
                let t = ctx.axis_time(&ptp.i(0), &pt[0], Sign::Any);
                let v = match &pt[1] {
                    None => {
                        ctx.missing(&ptp.i(1), "an envelope value (a bare number >= 0)");
                        None
                    }
                    s => ctx.bare(&ptp.i(1), s, "an envelope value", |v| v >= 0.0, "(>= 0)"),
                };
                match (t, v) {
                    (Some(t), Some(v)) => {
                        if let Some(&prev) = times.last() {
                            if t <= prev {
                                let txt = pt[0].as_ref().map(|x| x.text()).unwrap_or_default();
                                ctx.push(
                                    &ptp.i(0),
                                    "sample times in strictly increasing order",
                                    format!("'{txt}', not after the previous time"),
                                );
                                good = false;
                            }
                        }
                        times.push(t);
                        values.push(v);
                    }
                    _ => good = false,
                }
            }
            if !good {
                return None;
            }
            Envelope::Samples { times, values }
        }
    };
    ok.then_some(env)
}
