//! Manifolds: fine-structure levels that generate the scheme's sublevels,
//! and the bias magnetic field.
//!
//! Owns: the `manifolds:` map (energy of the centre of gravity, J, I,
//! hyperfine A and B, g_J, g_I, resolve, and lifetime or linewidth,
//! tolerance and label as for levels), `magnetic_field:`, the ids of the
//! generated levels (`<manifold>_F<F>_m<m_F>`, half-integers as `3/2` and
//! m_F always signed: `S_F2_m+1`, `S_F2_m0`, `P_F3/2_m-1/2`; with
//! `resolve: hyperfine`, `<manifold>_F<F>`), and appending those levels
//! after the ones of `levels:`, each carrying its [`LevelOrigin`] (manifold,
//! J, F, m_F, energy from the centre). Must not: compute energies (the
//! `atom::structure` module diagonalises) or couplings (`couplings.rs`).

use super::super::locate::KeyPath;
use super::super::raw::{RawLevel, RawManifold, RawScheme, Scalar};
use super::super::MAX_LEVELS;
use super::ctx::{Ctx, Sign};
use super::levels::{level, Levels};
use crate::atom::structure::{hyperfine_levels, sublevels, Manifold, Sublevel};
use crate::model::LevelOrigin;
use crate::units::Kind;

/// How a manifold is resolved into levels.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Resolve {
    /// One level per |F, m_F> eigenstate at the field.
    Sublevels,
    /// One level per F, no Zeeman structure.
    Hyperfine,
}

/// A manifold as far as it validated, with the levels it generated.
pub(super) struct ManifoldInfo {
    pub id: String,
    pub path: KeyPath,
    pub atom: Manifold,
    /// Energy of the centre of gravity (rad/s).
    pub centre: f64,
    /// Decay rate of every generated level (1/s).
    pub gamma: f64,
    pub resolve: Resolve,
    /// Index of the first generated level in the scheme's level list.
    pub first: usize,
    /// The sublevels (resolve: sublevels), in generated order.
    pub sublevels: Vec<Sublevel>,
    /// 2F of each generated level (resolve: hyperfine), in generated order.
    pub two_f: Vec<i32>,
}

/// The manifolds of a scheme and the bias field (T).
#[derive(Default)]
pub(super) struct Manifolds {
    pub list: Vec<ManifoldInfo>,
    pub field_tesla: f64,
    /// Ids of the manifolds that did not validate (each with its message).
    pub failed: Vec<String>,
}

impl Manifolds {
    /// The manifold with this id.
    pub fn get(&self, id: &str) -> Option<&ManifoldInfo> {
        self.list.iter().find(|m| m.id == id)
    }
}

/// A half-integer as written in an id: `2`, `3/2`.
pub fn half_text(two: i32) -> String {
    if two % 2 == 0 {
        format!("{}", two / 2)
    } else {
        format!("{two}/2")
    }
}

/// The id of a generated sublevel: `S_F2_m+1`, `S_F2_m0`, `P_F3/2_m-1/2`.
pub fn sublevel_id(manifold: &str, two_f: i32, two_m: i32) -> String {
    let sign = if two_m > 0 { "+" } else { "" };
    format!(
        "{manifold}_F{}_m{sign}{}",
        half_text(two_f),
        half_text(two_m)
    )
}

/// The id of a generated F level (resolve: hyperfine): `S_F2`.
pub fn hyperfine_id(manifold: &str, two_f: i32) -> String {
    format!("{manifold}_F{}", half_text(two_f))
}

/// Largest J or I accepted (the angular-momentum algebra is exact far
/// beyond; the level count is the practical limit).
const MAX_TWO_J: i32 = 40;

/// J or I: a non-negative multiple of 1/2, written as a number (1.5) or as
/// "n/2"; returned doubled.
fn half_integer(ctx: &mut Ctx, path: &KeyPath, s: &Option<Scalar>, what: &str) -> Option<i32> {
    let s = s.as_ref()?;
    let text = s.text();
    let value = match s {
        Scalar::Num(x) => Some(*x),
        Scalar::Str(t) => match t.trim().split_once('/') {
            Some((n, "2")) => n.trim().parse::<f64>().ok().map(|n| n / 2.0),
            Some(_) => None,
            None => t.trim().parse::<f64>().ok(),
        },
        Scalar::Bool(_) => None,
    };
    let two = value.map(|v| 2.0 * v);
    match two {
        Some(t) if t.is_finite() && t >= 0.0 && t.fract() == 0.0 && t <= f64::from(MAX_TWO_J) => {
            Some(t as i32)
        }
        _ => {
            ctx.push(
                path,
                format!(
                    "{what}: a non-negative multiple of 1/2 up to {} (a number like 1.5 or \"3/2\")",
                    MAX_TWO_J / 2
                ),
                format!("'{text}'"),
            );
            None
        }
    }
}

/// `magnetic_field:` in tesla (0 when absent).
fn magnetic_field(raw: &RawScheme, ctx: &mut Ctx) -> f64 {
    let path = KeyPath::root().k("magnetic_field");
    ctx.quantity(
        &path,
        &raw.magnetic_field,
        Kind::MagneticField,
        Sign::NonNegative,
    )
    .unwrap_or(0.0)
}

/// Every manifold, its levels appended to `levels`.
pub(super) fn manifolds(raw: &RawScheme, ctx: &mut Ctx, levels: &mut Levels) -> Manifolds {
    let mut out = Manifolds {
        list: Vec::new(),
        field_tesla: magnetic_field(raw, ctx),
        failed: Vec::new(),
    };
    let mp = KeyPath::root().k("manifolds");
    let Some(map) = raw.manifolds.as_ref() else {
        if out.field_tesla != 0.0 {
            ctx.push(
                &KeyPath::root().k("magnetic_field"),
                "a magnetic field only beside `manifolds:` (it acts on their sublevels)",
                "no manifolds",
            );
        }
        return out;
    };
    for (id, m) in &map.0 {
        let path = mp.k(&id.0);
        if levels.index_of(&id.0).is_some() || out.get(&id.0).is_some() {
            ctx.push(
                &path,
                "a manifold id that is not also a level or another manifold",
                format!("'{}' twice", id.0),
            );
            continue;
        }
        if !super::valid_id(&id.0) {
            ctx.push(
                &path,
                format!("a manifold id: {}", super::ID_RULE),
                format!("'{}'", id.0),
            );
            continue;
        }
        let info = match m.as_ref() {
            Some(m) => manifold(ctx, &id.0, m, &path, out.field_tesla, levels),
            None => {
                ctx.missing(&path.k("J"), "J: a non-negative multiple of 1/2");
                None
            }
        };
        match info {
            Some(info) => out.list.push(info),
            None => {
                levels.withhold(&id.0);
                out.failed.push(id.0.clone());
            }
        }
    }
    ctx.within(
        &mp,
        levels.list.len(),
        MAX_LEVELS,
        "levels",
        "generated and written levels",
    );
    out
}

/// The constants of one manifold, or None (messages pushed).
fn constants(ctx: &mut Ctx, m: &RawManifold, path: &KeyPath, field: f64) -> Option<Manifold> {
    let two_j = half_integer(ctx, &path.k("J"), &m.j, "J");
    if m.j.is_none() {
        ctx.missing(&path.k("J"), "J: a non-negative multiple of 1/2");
    }
    let two_i = if m.i.is_some() {
        half_integer(ctx, &path.k("I"), &m.i, "I")
    } else {
        Some(0)
    };
    let hf = m.hyperfine.clone().unwrap_or_default();
    let hp = path.k("hyperfine");
    let a = ctx.quantity(&hp.k("A"), &hf.a, Kind::Frequency, Sign::Any);
    let b = ctx.quantity(&hp.k("B"), &hf.b, Kind::Frequency, Sign::Any);
    let g = |ctx: &mut Ctx, key: &str, s: &Option<Scalar>| {
        ctx.bare(&path.k(key), s, key, |v| v.is_finite(), "finite")
    };
    let g_j = g(ctx, "g_J", &m.g_j);
    let g_i = g(ctx, "g_I", &m.g_i).unwrap_or(0.0);
    let (two_j, two_i) = (two_j?, two_i?);
    if b.is_some_and(|b| b != 0.0) && (two_j < 2 || two_i < 2) {
        ctx.push(
            &hp.k("B"),
            "no quadrupole constant B unless I >= 1 and J >= 1",
            format!("B with J = {}, I = {}", half_text(two_j), half_text(two_i)),
        );
    }
    if m.g_j.is_none() && field != 0.0 {
        ctx.missing(
            &path.k("g_J"),
            "g_J (a bare number), since magnetic_field is not zero",
        );
        return None;
    }
    Some(Manifold {
        two_j,
        two_i,
        a: a.unwrap_or(0.0),
        b: b.unwrap_or(0.0),
        g_j: g_j.unwrap_or(0.0),
        g_i,
    })
}

/// One manifold: its constants, its levels appended to `levels`.
fn manifold(
    ctx: &mut Ctx,
    id: &str,
    m: &RawManifold,
    path: &KeyPath,
    field: f64,
    levels: &mut Levels,
) -> Option<ManifoldInfo> {
    let shared = RawLevel {
        energy: m.energy.clone(),
        lifetime: m.lifetime.clone(),
        linewidth: m.linewidth.clone(),
        tolerance: m.tolerance.clone(),
        label: m.label.clone(),
        ..RawLevel::default()
    };
    let (template, energy_ok) = level(ctx, id, Some(&shared), path);
    let resolve = match m.resolve.as_ref().map(Scalar::text).as_deref() {
        None | Some("sublevels") => Resolve::Sublevels,
        Some("hyperfine") => Resolve::Hyperfine,
        Some(other) => {
            ctx.push(
                &path.k("resolve"),
                "sublevels or hyperfine",
                format!("'{other}'"),
            );
            return None;
        }
    };
    if resolve == Resolve::Hyperfine && field != 0.0 {
        ctx.push(
            &path.k("resolve"),
            "resolve: sublevels, since magnetic_field is not zero (Zeeman structure needs sublevels)",
            "resolve: hyperfine",
        );
        return None;
    }
    let atom = constants(ctx, m, path, field)?;
    let mut info = ManifoldInfo {
        id: id.to_string(),
        path: path.clone(),
        atom,
        centre: template.omega,
        gamma: template.gamma,
        resolve,
        first: levels.list.len(),
        sublevels: Vec::new(),
        two_f: Vec::new(),
    };
    let mut generated = Vec::new();
    let origin = |two_f, two_m_f, offset| LevelOrigin {
        manifold: id.to_string(),
        two_j: atom.two_j,
        two_f,
        two_m_f,
        offset,
    };
    match resolve {
        Resolve::Sublevels => {
            let subs = structure_result(ctx, path, sublevels(&info.atom, field))?;
            for s in &subs {
                let gid = sublevel_id(id, s.two_f, s.two_m_f);
                generated.push((gid, origin(s.two_f, Some(s.two_m_f), s.energy)));
            }
            info.sublevels = subs;
        }
        Resolve::Hyperfine => {
            let hf = structure_result(ctx, path, hyperfine_levels(&info.atom))?;
            for h in &hf {
                generated.push((hyperfine_id(id, h.two_f), origin(h.two_f, None, h.energy)));
                info.two_f.push(h.two_f);
            }
        }
    }
    for (gid, origin) in generated {
        if levels.index_of(&gid).is_some() {
            ctx.push(
                path,
                "generated level ids that no level of `levels:` uses",
                format!("'{gid}' is also written under levels:"),
            );
            return None;
        }
        let mut l = template.clone();
        l.id = gid;
        l.omega = template.omega + origin.offset;
        l.origin = Some(origin);
        levels.push(l, energy_ok);
    }
    super::names::register(levels, &info, energy_ok);
    Some(info)
}

fn structure_result<T, E: std::fmt::Display>(
    ctx: &mut Ctx,
    path: &KeyPath,
    r: Result<T, E>,
) -> Option<T> {
    r.map_err(|e| {
        ctx.push(
            path,
            "constants whose hyperfine and Zeeman structure can be computed",
            e.to_string(),
        )
    })
    .ok()
}
