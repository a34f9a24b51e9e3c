//! Initial populations, targets and the default tolerance.
//!
//! Owns: `initial:` (one level id, a map of populations summing to 1, or
//! `mixture:` / `superposition:` holding such a map; in `mixture:` a
//! manifold or F level spreads its population equally over its levels),
//! `targets:` (known levels, each once, not initially populated) and the
//! default spectator `tolerance:`. Must not: know of fields or couplings.

use super::super::locate::KeyPath;
use super::super::raw::{
    level_name_text, Id, Initial, InitialValue, Ordered, RawScheme, Scalar, LEVEL_NAME_KEYS,
};
use super::ctx::Ctx;
use super::levels::Levels;
use super::names::Named;
use super::sum_text;
use crate::model::{InitialKind, DEFAULT_TOLERANCE, POPULATION_SUM_TOLERANCE};

/// The initial population of every level (0 where not given) and how they
/// combine: the v1 forms (one id, or a map of populations: coherent), or
/// `mixture:` / `superposition:` holding such a map.
pub(super) fn initial(raw: &RawScheme, ctx: &mut Ctx, levels: &Levels) -> (Vec<f64>, InitialKind) {
    let ip = KeyPath::root().k("initial");
    let mut initial = vec![0.0; levels.list.len()];
    let expected = "a level id, a map of level id: population, or mixture: / superposition: \
                    holding such a map";
    match &raw.initial {
        None => ctx.missing(&ip, expected),
        Some(Initial::One(id)) => {
            if let Some(i) = levels.lookup(ctx, &ip, id) {
                initial[i] = 1.0;
            }
        }
        Some(Initial::Map(m)) => {
            if let Some(id) = map_name(ctx, &ip, m, levels) {
                if let Some(i) = levels.lookup(ctx, &ip, &id) {
                    initial[i] = 1.0;
                }
                return (initial, InitialKind::Coherent);
            }
            if let Some((kind, inner, path)) = explicit_form(ctx, &ip, m) {
                if let Some(inner) = inner {
                    let groups = kind == InitialKind::Mixture;
                    populations(ctx, &path, inner, levels, &mut initial, groups);
                }
                return (initial, kind);
            }
            let mut plain: Vec<(Id, Option<Scalar>)> = Vec::new();
            for (id, v) in &m.0 {
                match v {
                    InitialValue::Population(p) => plain.push((id.clone(), p.clone())),
                    InitialValue::Map(_) => ctx.push(
                        &ip.k(&id.0),
                        "a population (a bare number between 0 and 1); a nested map \
                         belongs under mixture: or superposition:",
                        "a map",
                    ),
                }
            }
            populations(ctx, &ip, &Ordered(plain), levels, &mut initial, false);
        }
    }
    (initial, InitialKind::Coherent)
}

/// A map of level id: population as written.
type PopulationMap = Ordered<Option<Scalar>>;

/// `mixture: {...}` or `superposition: {...}` as the only entry of the
/// `initial:` map: its kind, its map (None where it is not a map, with a
/// message) and its key path. None where the map is the v1 form.
fn explicit_form<'m>(
    ctx: &mut Ctx,
    ip: &KeyPath,
    m: &'m Ordered<InitialValue>,
) -> Option<(InitialKind, Option<&'m PopulationMap>, KeyPath)> {
    let is_form = |id: &Id, v: &InitialValue| {
        matches!(v, InitialValue::Map(_)) && matches!(id.0.as_str(), "mixture" | "superposition")
    };
    let (id, value) = m.0.iter().find(|(id, v)| is_form(id, v))?;
    let kind = if id.0 == "mixture" {
        InitialKind::Mixture
    } else {
        InitialKind::Superposition
    };
    let path = ip.k(&id.0);
    if m.0.len() > 1 {
        ctx.push(
            ip,
            format!("{} as the only entry of initial", id.0),
            format!("{} entries", m.0.len()),
        );
        return Some((kind, None, path));
    }
    match value {
        InitialValue::Map(inner) => Some((kind, Some(inner), path)),
        InitialValue::Population(_) => Some((kind, None, path)),
    }
}

/// `initial: { manifold: S, F: 2, m_F: 2 }`: the map is one level's name
/// (when no level is called `manifold`), as its text form.
fn map_name(ctx: &mut Ctx, ip: &KeyPath, m: &Ordered<InitialValue>, levels: &Levels) -> Option<Id> {
    let is_name =
        m.0.iter().any(|(k, _)| k.0 == "manifold") && levels.index_of("manifold").is_none();
    if !is_name {
        return None;
    }
    let mut parts: [Option<String>; 3] = [None, None, None];
    for (k, v) in &m.0 {
        let slot = LEVEL_NAME_KEYS.iter().position(|x| *x == k.0);
        match (slot, v) {
            (Some(slot), InitialValue::Population(Some(v))) => parts[slot] = Some(v.text()),
            _ => ctx.push(
                &ip.k(&k.0),
                "a level name of the keys manifold, F, m_F (each a single value)",
                format!("'{}'", k.0),
            ),
        }
    }
    Some(Id(level_name_text(&parts)))
}

/// A map of level id: population at `ip`, summing to 1, into `initial`.
/// With `groups` (a mixture), a key naming a group of generated levels (a
/// manifold, an F level) spreads its population equally over them.
fn populations(
    ctx: &mut Ctx,
    ip: &KeyPath,
    m: &Ordered<Option<Scalar>>,
    levels: &Levels,
    initial: &mut [f64],
    groups: bool,
) {
    if m.0.is_empty() {
        ctx.push(ip, "a map of level id: population", "an empty map");
    }
    let mut ok = true;
    let mut seen: Vec<usize> = Vec::new();
    for (id, p) in &m.0 {
        let path = ip.k(&id.0);
        let members = match levels.named(id) {
            Ok(n @ Named::Group(_)) if groups => levels.members(n),
            _ => match levels.lookup(ctx, &path, id) {
                Some(i) => vec![i],
                None => {
                    ok = false;
                    continue;
                }
            },
        };
        if members
            .iter()
            .any(|&i| repeated(ctx, &seen, i, &path, "each level once", id))
        {
            ok = false;
            continue;
        }
        seen.extend(&members);
        if p.is_none() {
            ctx.missing(&path, "a population (a bare number between 0 and 1)");
            ok = false;
            continue;
        }
        match ctx.population(&path, p) {
            Some(v) => {
                for &i in &members {
                    initial[i] = v / members.len() as f64;
                }
            }
            None => ok = false,
        }
    }
    let sum: f64 = initial.iter().sum();
    if ok && !m.0.is_empty() && (sum - 1.0).abs() > POPULATION_SUM_TOLERANCE {
        ctx.push(
            ip,
            "initial populations summing to 1 (within 1e-9)",
            format!("a sum of {}", sum_text(sum)),
        );
    }
}

/// The target levels: known, each once, not initially populated.
pub(super) fn targets(
    raw: &RawScheme,
    ctx: &mut Ctx,
    levels: &Levels,
    initial: &[f64],
) -> Vec<usize> {
    let tp = KeyPath::root().k("targets");
    let mut targets: Vec<usize> = Vec::new();
    for (k, id) in raw.targets.as_deref().unwrap_or(&[]).iter().enumerate() {
        let path = tp.i(k);
        let Some(i) = levels.lookup(ctx, &path, id) else {
            continue;
        };
        if repeated(ctx, &targets, i, &path, "each target once", id) {
            continue;
        }
        if initial[i] > 0.0 {
            ctx.push(
                &path,
                "a target level that is not initially populated",
                format!("'{}', which is initially populated", id.0),
            );
        } else {
            targets.push(i);
        }
    }
    targets
}

/// Whether level `i` is among those already `seen`; if so, says so at `path`.
fn repeated(
    ctx: &mut Ctx,
    seen: &[usize],
    i: usize,
    path: &KeyPath,
    expected: &str,
    id: &Id,
) -> bool {
    let again = seen.contains(&i);
    if again {
        ctx.push(path, expected, format!("'{}' a second time", id.0));
    }
    again
}

/// The default spectator tolerance.
pub(super) fn tolerance(raw: &RawScheme, ctx: &mut Ctx) -> f64 {
    ctx.population(&KeyPath::root().k("tolerance"), &raw.tolerance)
        .unwrap_or(DEFAULT_TOLERANCE)
}
