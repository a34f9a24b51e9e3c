//! Couplings and drives.
//!
//! Owns: the `couplings:` list (the level pair, ordered by energy; which
//! fields drive it; a dipole with or without a unit, or an Einstein A with
//! degeneracies, converted by `units`), and the drives: every (field,
//! coupling) pair, in field order then coupling order, one per level pair
//! and field. Must not: compute Rabi frequencies (`fields.rs`).

use std::collections::HashMap;

use super::super::locate::KeyPath;
use super::super::raw::{format_number, RawCoupling, RawScheme, Scalar};
use super::super::{MAX_COUPLINGS, MAX_DRIVES};
use super::ctx::{Ctx, Sign};
use super::fields::FieldIds;
use super::id_list;
use super::levels::Levels;
use super::manifold_couplings::{self, Generated};
use super::manifolds::Manifolds;
use crate::model::{Dipole, Drive};
use crate::units::{self, Kind};

/// A coupling as far as it validated.
pub(super) struct CouplingInfo {
    pub lower: usize,
    pub upper: usize,
    pub dipole: Option<Dipole>,
    /// The dipole as written (or as derived from einstein_a), for messages.
    pub dipole_text: String,
    /// Field indices that drive it.
    pub fields: Vec<usize>,
    /// Index of the `couplings:` entry it comes from (a coupling between
    /// manifolds makes many).
    pub source: usize,
    /// For a coupling between sublevels: the spherical component of its
    /// absorption, q = m_F' - m_F (the field's polarisation selects it).
    pub q: Option<i32>,
}

/// Every coupling (None where its level pair, or a coupling between
/// manifolds, did not validate), those
/// between manifolds expanded into their sublevel couplings after the
/// others, and what those generate besides; None when there are too many
/// couplings.
pub(super) fn couplings(
    raw: &RawScheme,
    ctx: &mut Ctx,
    levels: &Levels,
    fields: &FieldIds,
    manifolds: &Manifolds,
) -> Option<(Vec<Option<CouplingInfo>>, Generated)> {
    let cp = KeyPath::root().k("couplings");
    let raw_couplings = raw.couplings.as_deref().unwrap_or(&[]);
    if !ctx.within(
        &cp,
        raw_couplings.len(),
        MAX_COUPLINGS,
        "couplings",
        "couplings",
    ) {
        return None;
    }
    let mut out = Vec::with_capacity(raw_couplings.len());
    let mut specs = Vec::new();
    for (ci, rc) in raw_couplings.iter().enumerate() {
        let path = cp.i(ci);
        if manifold_couplings::names_manifold(rc, manifolds) {
            let list = driven_by(ctx, rc, &path, fields);
            match manifold_couplings::read(ctx, rc, &path, ci, manifolds, list) {
                Some(s) => specs.push(s),
                // A placeholder: references to the pairs it would have
                // joined are not reported again.
                None => out.push(None),
            }
        } else {
            out.push(coupling(ctx, rc, &path, ci, levels, fields));
        }
    }
    let generated = manifold_couplings::generate(ctx, &specs, manifolds, &mut out);
    ctx.within(
        &cp,
        out.len(),
        MAX_COUPLINGS,
        "couplings",
        "generated couplings",
    )
    .then_some((out, generated))
}

fn coupling(
    ctx: &mut Ctx,
    rc: &RawCoupling,
    path: &KeyPath,
    source: usize,
    levels: &Levels,
    fields: &FieldIds,
) -> Option<CouplingInfo> {
    let pr = levels.pair(ctx, &path.k("between"), &rc.between);
    let (lower, upper) = match pr {
        Some((a, b)) => {
            let l = &levels.list;
            // Lower energy first; equal energies keep the file order of levels.
            if l[b].omega < l[a].omega || (l[b].omega == l[a].omega && b < a) {
                (b, a)
            } else {
                (a, b)
            }
        }
        None => (usize::MAX, usize::MAX),
    };
    let field_list = driven_by(ctx, rc, path, fields);
    let energies = pr.is_some() && levels.energy_ok[lower] && levels.energy_ok[upper];
    let omega = energies.then(|| levels.list[upper].omega - levels.list[lower].omega);
    let (dipole, dipole_text) = dipole(ctx, rc, path, omega);
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
    pr.is_some().then_some(CouplingInfo {
        lower,
        upper,
        dipole,
        dipole_text,
        fields: field_list,
        source,
        q: None,
    })
}

/// The fields that drive a coupling: its `fields:` list, or every field.
fn driven_by(ctx: &mut Ctx, rc: &RawCoupling, path: &KeyPath, fields: &FieldIds) -> Vec<usize> {
    let Some(list) = &rc.fields else {
        return (0..fields.entries.len()).collect();
    };
    let mut out = Vec::new();
    for (k, fid) in list.iter().enumerate() {
        match fields.index.get(&fid.0) {
            Some(&fi) if out.contains(&fi) => ctx.push(
                &path.k("fields").i(k),
                "each field id once",
                format!("'{}' a second time", fid.0),
            ),
            Some(&fi) => out.push(fi),
            None => ctx.push(
                &path.k("fields").i(k),
                format!("a field id ({})", id_list(&fields.ids)),
                format!("'{}' (no such field)", fid.0),
            ),
        }
    }
    out
}

/// The dipole (with a unit, or a bare relative strength) or one derived
/// from einstein_a at the transition frequency `omega` (None when the level
/// energies are unknown), and its text for messages.
fn dipole(
    ctx: &mut Ctx,
    rc: &RawCoupling,
    path: &KeyPath,
    omega: Option<f64>,
) -> (Option<Dipole>, String) {
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
            let text = d.text();
            let dpath = path.k("dipole");
            let bare = match d {
                Scalar::Num(x) => Some(*x),
                Scalar::Str(t) => match units::split_quantity(t) {
                    Some((x, u)) if u.is_empty() => Some(x),
                    _ => None,
                },
                Scalar::Bool(_) => None,
            };
            let dipole = match bare {
                Some(x) if x.is_finite() => Some(Dipole::Relative(x)),
                Some(_) => {
                    ctx.push(
                        &dpath,
                        "a finite dipole",
                        format!("'{text}' (not a finite number)"),
                    );
                    None
                }
                None => ctx
                    .quantity(&dpath, &rc.dipole, Kind::Dipole, Sign::Any)
                    .map(Dipole::Absolute),
            };
            return (dipole, text);
        }
        (None, Some(_)) => return einstein_a(ctx, rc, path, omega),
    }
    (None, String::new())
}

/// A dipole from an Einstein A coefficient and the degeneracies.
fn einstein_a(
    ctx: &mut Ctx,
    rc: &RawCoupling,
    path: &KeyPath,
    omega: Option<f64>,
) -> (Option<Dipole>, String) {
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
    let (Some(a), Some(gl), Some(gu), Some(w)) = (a, gl, gu, omega) else {
        return (None, String::new());
    };
    if w > 0.0 {
        let d = units::dipole_from_einstein_a(a, w, gl, gu);
        let text = format!("{} C m (from einstein_a)", format_number(d));
        return (Some(Dipole::Absolute(d)), text);
    }
    ctx.push(
        &apath,
        "a transition between levels of different energy (einstein_a needs omega > 0)",
        "two levels of equal energy",
    );
    (None, String::new())
}

/// The drives, in field order then coupling order (Rabi frequencies 0 until
/// `fields::strengths` sets them), each with the factor its field's
/// polarisation puts on its dipole (sqrt of the intensity fraction of the
/// component q of a sublevel coupling; 1 otherwise; a component the field
/// does not have drives nothing); None when there are too many.
pub(super) fn drives(
    ctx: &mut Ctx,
    field_ids: &[String],
    polarizations: &[Option<[f64; 3]>],
    polarization_written: &[bool],
    couplings: &[Option<CouplingInfo>],
    levels: &Levels,
) -> Option<(Vec<Drive>, Vec<f64>)> {
    let cp = KeyPath::root().k("couplings");
    let mut drives: Vec<Drive> = Vec::new();
    let mut projection = Vec::new();
    let mut drive_count = 0usize;
    for (fi, fid) in field_ids.iter().enumerate() {
        let mut seen_pairs: HashMap<(usize, usize), usize> = HashMap::new();
        let mut told = false;
        for (ci, c) in couplings.iter().enumerate() {
            let Some(c) = c else { continue };
            if !c.fields.contains(&fi) {
                continue;
            }
            let factor = match (c.q, polarizations.get(fi).copied().flatten()) {
                (None, _) => 1.0,
                (Some(q), Some(p)) => p[(q + 1) as usize].sqrt(),
                (Some(_), None) => {
                    // A polarization written but not valid has its message.
                    let written = polarization_written.get(fi).copied().unwrap_or(false);
                    if !told && !written {
                        ctx.missing(
                            &KeyPath::root().k("fields").k(fid).k("polarization"),
                            format!(
                                "a polarization (sigma+, sigma-, pi or {{sigma+: p, pi: p, sigma-: p}}), \
                                 since '{fid}' drives the manifold coupling couplings[{}]",
                                c.source
                            ),
                        );
                        told = true;
                    }
                    continue;
                }
            };
            if factor == 0.0 {
                continue;
            }
            drive_count += 1;
            if let Some(&first) = seen_pairs.get(&(c.lower, c.upper)) {
                let (lo, up) = (&levels.list[c.lower].id, &levels.list[c.upper].id);
                ctx.push(
                    &cp.i(c.source).k("between"),
                    format!(
                        "one coupling per level pair for field '{fid}' (give each coupling a `fields:` list)"
                    ),
                    format!(
                        "a second coupling between {lo} and {up} that '{fid}' drives (the first is couplings[{first}])"
                    ),
                );
                continue;
            }
            seen_pairs.insert((c.lower, c.upper), c.source);
            drives.push(Drive {
                field: fi,
                coupling: ci,
                rabi: 0.0,
            });
            projection.push(factor);
        }
    }
    let limit = "drives (field x coupling pairs)";
    ctx.within(&cp, drive_count, MAX_DRIVES, limit, "drives")
        .then_some((drives, projection))
}
