//! Initial populations, targets and the default tolerance.
//!
//! Owns: `initial:` (one level id, or a map of populations summing to 1),
//! `targets:` (known levels, each once, not initially populated) and the
//! default spectator `tolerance:`. Must not: know of fields or couplings.

use super::super::locate::KeyPath;
use super::super::raw::{Initial, RawScheme};
use super::ctx::Ctx;
use super::levels::Levels;
use super::sum_text;
use crate::model::{DEFAULT_TOLERANCE, POPULATION_SUM_TOLERANCE};

/// The initial population of every level (0 where not given).
pub(super) fn initial(raw: &RawScheme, ctx: &mut Ctx, levels: &Levels) -> Vec<f64> {
    let ip = KeyPath::root().k("initial");
    let mut initial = vec![0.0; levels.list.len()];
    match &raw.initial {
        None => ctx.missing(&ip, "a level id, or a map of level id: population"),
        Some(Initial::One(id)) => {
            if let Some(i) = levels.lookup(ctx, &ip, id) {
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
                let Some(i) = levels.lookup(ctx, &path, id) else {
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
                match ctx.population(&path, p) {
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
    initial
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
    targets
}

/// The default spectator tolerance.
pub(super) fn tolerance(raw: &RawScheme, ctx: &mut Ctx) -> f64 {
    ctx.population(&KeyPath::root().k("tolerance"), &raw.tolerance)
        .unwrap_or(DEFAULT_TOLERANCE)
}
