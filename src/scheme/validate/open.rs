//! The open-system keys: `levels.<id>.decays_to`, `levels.<id>.dephasing`,
//! `fields.<id>.linewidth`, `readout:` and `solver.dynamics`.
//!
//! Owns: reading those keys into numbers with their located messages
//! (branching fractions in (0, 1] summing to at most 1, decay only to lower
//! levels and only from a level with a lifetime or linewidth, rates with a
//! unit, a readout time inside the window, `dynamics: amplitudes` refused
//! beside an open key). Must not: compute the laser phase numbers or any
//! other physics (the model's `open` module does, and the builder refuses a
//! linewidth in an inconsistent drive loop).

use super::super::locate::KeyPath;
use super::super::raw::{RawScheme, Scalar};
use super::ctx::{Ctx, Sign};
use super::fields::FieldIds;
use super::levels::Levels;
use super::sum_text;
use crate::model::open::BRANCHING_SUM_TOLERANCE;
use crate::model::{Dynamics, InitialKind, Readout, Window};
use crate::units::Kind;

/// Decay branching and dephasing of every level, into `levels.list`.
pub(super) fn level_keys(raw: &RawScheme, ctx: &mut Ctx, levels: &mut Levels) {
    let lp = KeyPath::root().k("levels");
    let Some(raw_levels) = raw.levels.as_ref() else {
        return;
    };
    for (id, lvl) in &raw_levels.0 {
        let (Some(lvl), Some(i)) = (lvl.as_ref(), levels.index_of(&id.0)) else {
            continue;
        };
        let path = lp.k(&id.0);
        if let Some(g) = ctx.quantity(
            &path.k("dephasing"),
            &lvl.dephasing,
            Kind::Damping,
            Sign::NonNegative,
        ) {
            levels.list[i].dephasing = g;
        }
        if let Some(map) = &lvl.decays_to {
            let branches = decays_to(ctx, &path.k("decays_to"), i, map, levels);
            levels.list[i].decays_to = branches;
        }
    }
}

/// One level's `decays_to:` map.
fn decays_to(
    ctx: &mut Ctx,
    path: &KeyPath,
    from: usize,
    map: &super::super::raw::Ordered<Option<Scalar>>,
    levels: &Levels,
) -> Vec<(usize, f64)> {
    let here = &levels.list[from];
    if here.gamma <= 0.0 {
        ctx.push(
            path,
            format!(
                "decays_to on a level that decays: give '{}' a lifetime or linewidth",
                here.id
            ),
            "no decay rate",
        );
        return Vec::new();
    }
    let mut out: Vec<(usize, f64)> = Vec::new();
    let mut ok = true;
    for (id, fraction) in &map.0 {
        let p = path.k(&id.0);
        let Some(k) = levels.lookup(ctx, &p, id) else {
            ok = false;
            continue;
        };
        if out.iter().any(|b| b.0 == k) {
            ctx.push(&p, "each level once", format!("'{}' a second time", id.0));
            ok = false;
            continue;
        }
        if levels.energy_ok[k] && levels.energy_ok[from] && levels.list[k].omega >= here.omega {
            ctx.push(
                &p,
                format!("a level lower in energy than '{}'", here.id),
                format!("'{}', which is not lower", id.0),
            );
            ok = false;
            continue;
        }
        if fraction.is_none() {
            ctx.missing(&p, "a branching fraction (a bare number in (0, 1])");
            ok = false;
            continue;
        }
        match ctx.bare(
            &p,
            fraction,
            "a branching fraction",
            |v| v > 0.0 && v <= 1.0,
            "in (0, 1]",
        ) {
            Some(b) => out.push((k, b)),
            None => ok = false,
        }
    }
    let sum: f64 = out.iter().map(|b| b.1).sum();
    if ok && sum > 1.0 + BRANCHING_SUM_TOLERANCE {
        ctx.push(
            path,
            "branching fractions summing to at most 1 (the remainder leaves the scheme)",
            format!("a sum of {}", sum_text(sum)),
        );
    }
    out
}

/// The linewidth of every field (0 where not given), as an angular FWHM.
pub(super) fn linewidths(ctx: &mut Ctx, field_ids: &FieldIds) -> Vec<f64> {
    field_ids
        .entries
        .iter()
        .map(|(_, f, path)| {
            f.and_then(|f| {
                ctx.quantity(
                    &path.k("linewidth"),
                    &f.linewidth,
                    Kind::Frequency,
                    Sign::NonNegative,
                )
            })
            .unwrap_or(0.0)
        })
        .collect()
}

/// `readout:` (default: the window end).
pub(super) fn readout(raw: &RawScheme, ctx: &mut Ctx, window: Option<Window>) -> Readout {
    let path = KeyPath::root().k("readout");
    let Some(s) = &raw.readout else {
        return Readout::WindowEnd;
    };
    match s.text().trim() {
        "window_end" => return Readout::WindowEnd,
        "settled" => return Readout::Settled,
        _ => {}
    }
    let expected = "window_end, settled, or a time inside the window (e.g. \"2 us\")";
    let Scalar::Str(text) = s else {
        ctx.push(&path, expected, format!("'{}'", s.text()));
        return Readout::WindowEnd;
    };
    let Ok(t) = crate::units::parse_quantity(text, Kind::Time) else {
        ctx.push(&path, expected, format!("'{text}'"));
        return Readout::WindowEnd;
    };
    if let Some(w) = window {
        if !(t >= w.start && t <= w.end) {
            ctx.push(
                &path,
                format!(
                    "a readout time inside the window ({:e} s to {:e} s)",
                    w.start, w.end
                ),
                format!("'{text}', outside it"),
            );
        }
    }
    Readout::At(t)
}

/// `solver.dynamics` (default auto), refused as `amplitudes` beside an
/// open-system key.
pub(super) fn dynamics(
    raw: &RawScheme,
    ctx: &mut Ctx,
    open_keys: Option<&'static str>,
) -> Dynamics {
    let Some(s) = raw.solver.as_ref().and_then(|s| s.dynamics.as_ref()) else {
        return Dynamics::Auto;
    };
    let path = KeyPath::root().k("solver").k("dynamics");
    match s.text().as_str() {
        "auto" => Dynamics::Auto,
        "density_matrix" => Dynamics::DensityMatrix,
        "amplitudes" => {
            if let Some(what) = open_keys {
                ctx.push(
                    &path,
                    format!("density_matrix or auto: the scheme has {what}, which amplitudes cannot hold"),
                    "'amplitudes'",
                );
            }
            Dynamics::Amplitudes
        }
        other => {
            ctx.push(
                &path,
                "one of auto, amplitudes, density_matrix",
                format!("'{other}'"),
            );
            Dynamics::Auto
        }
    }
}

/// The first open-system key of a scheme, for messages; None without one.
pub(super) fn first_open_key(
    levels: &Levels,
    linewidths: &[f64],
    kind: InitialKind,
) -> Option<&'static str> {
    if levels.list.iter().any(|l| !l.decays_to.is_empty()) {
        Some("decays_to")
    } else if levels.list.iter().any(|l| l.dephasing > 0.0) {
        Some("dephasing")
    } else if linewidths.iter().any(|&w| w > 0.0) {
        Some("a field linewidth")
    } else if kind == InitialKind::Mixture {
        Some("an initial mixture")
    } else {
        None
    }
}
