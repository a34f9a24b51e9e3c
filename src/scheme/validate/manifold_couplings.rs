//! Couplings between two manifolds: every electric-dipole transition
//! between their generated levels, and the spontaneous emission that goes
//! with it.
//!
//! Owns: `couplings: [{between: [manifold, manifold], reduced_dipole |
//! from_lifetime, fields}]`: the selection rules on J (|J - J'| <= 1, not
//! 0 -> 0), the same nucleus on both sides, the strength (a reduced dipole
//! with a unit, or `from_lifetime: true | fraction` from the upper
//! manifold's decay rate), how the upper manifold's decay rate is shared
//! among its lower manifolds (from_lifetime fractions first; the rest in
//! proportion to omega^3 (2J+1) |<J||er||J'>|^2), and turning the
//! sublevel elements of `atom::dipole` into couplings (with their
//! absorption component q) and coherent decay channels, or, for
//! `resolve: hyperfine`, F -> F' couplings with the isotropic strength
//! S_FF' |<J||er||J'>|^2 / 3 and branching by F. Must not: compute the
//! angular algebra itself (`atom`), or Rabi frequencies (`fields.rs`).

use super::super::locate::KeyPath;
use super::super::raw::{RawCoupling, Scalar};
use super::couplings::CouplingInfo;
use super::ctx::{Ctx, Sign};
use super::manifolds::{half_text, ManifoldInfo, Manifolds, Resolve};
use crate::atom::angular::{decay_branching_ff, relative_strength_ff};
use crate::atom::dipole::{channels, reduced_from_rate, transitions};
use crate::model::open::BRANCHING_SUM_TOLERANCE;
use crate::model::{Dipole, Jump, JumpTerm};
use crate::units::Kind;

/// How a manifold coupling sets its strength.
#[derive(Debug, Clone, Copy)]
enum Strength {
    /// |<J||er||J'>| (C m).
    Reduced(f64),
    /// The fraction of the upper manifold's decay that goes this way.
    FromLifetime(f64),
}

/// A manifold coupling as read, before the decay is shared out.
pub(super) struct Spec {
    source: usize,
    lower: usize,
    upper: usize,
    strength: Strength,
    fields: Vec<usize>,
}

/// What the manifold couplings generate besides couplings.
#[derive(Default)]
pub(super) struct Generated {
    pub jumps: Vec<Jump>,
    /// (level, branching (level, fraction)) for `resolve: hyperfine`.
    pub decays: Vec<(usize, Vec<(usize, f64)>)>,
}

/// Whether `between` names two manifolds (or one: then an error later).
pub(super) fn names_manifold(rc: &RawCoupling, manifolds: &Manifolds) -> bool {
    rc.between.as_ref().is_some_and(|b| {
        b.iter()
            .any(|id| manifolds.get(&id.0).is_some() || manifolds.failed.contains(&id.0))
    }) || rc.reduced_dipole.is_some()
        || rc.from_lifetime.is_some()
}

/// Read one manifold coupling (messages pushed on failure).
pub(super) fn read(
    ctx: &mut Ctx,
    rc: &RawCoupling,
    path: &KeyPath,
    source: usize,
    manifolds: &Manifolds,
    fields: Vec<usize>,
) -> Option<Spec> {
    let bp = path.k("between");
    let ids: Vec<&str> = rc
        .between
        .as_ref()
        .map(|b| b.iter().map(|i| i.0.as_str()).collect())
        .unwrap_or_default();
    let found: Vec<Option<usize>> = ids
        .iter()
        .map(|id| manifolds.list.iter().position(|m| m.id == *id))
        .collect();
    let [Some(a), Some(b)] = found[..] else {
        if ids
            .iter()
            .any(|id| manifolds.failed.iter().any(|f| f == id))
        {
            // The manifold's own message says what is wrong.
            return None;
        }
        let names: Vec<&str> = manifolds.list.iter().map(|m| m.id.as_str()).collect();
        ctx.push(
            &bp,
            format!(
                "two manifold ids [lower, upper] ({}) beside reduced_dipole or from_lifetime",
                names.join(", ")
            ),
            format!("[{}]", ids.join(", ")),
        );
        return None;
    };
    let (ma, mb) = (&manifolds.list[a], &manifolds.list[b]);
    let (lower, upper) = if mb.centre >= ma.centre {
        (a, b)
    } else {
        (b, a)
    };
    let (lo, up) = (&manifolds.list[lower], &manifolds.list[upper]);
    if !rules_hold(ctx, &bp, lo, up) {
        return None;
    }
    let strength = strength(ctx, rc, path, lo, up)?;
    let level_keys = [
        ("dipole", &rc.dipole),
        ("einstein_a", &rc.einstein_a),
        ("g_lower", &rc.g_lower),
        ("g_upper", &rc.g_upper),
    ];
    for (key, _) in level_keys.iter().filter(|(_, v)| v.is_some()) {
        ctx.push(
            &path.k(key),
            "reduced_dipole or from_lifetime on a coupling between manifolds",
            format!("{key} (a key of couplings between levels)"),
        );
    }
    Some(Spec {
        source,
        lower,
        upper,
        strength,
        fields,
    })
}

/// Electric-dipole selection rules on J, one nucleus, one resolution.
fn rules_hold(ctx: &mut Ctx, bp: &KeyPath, lo: &ManifoldInfo, up: &ManifoldInfo) -> bool {
    let (j, jp) = (lo.atom.two_j, up.atom.two_j);
    let why = if lo.centre == up.centre {
        Some("two manifolds at the same energy".to_string())
    } else if (j - jp).abs() > 2 {
        Some(format!(
            "J = {} -> J' = {} (|J - J'| > 1)",
            half_text(j),
            half_text(jp)
        ))
    } else if j == 0 && jp == 0 {
        Some("J = 0 -> J' = 0".to_string())
    } else if lo.atom.two_i != up.atom.two_i {
        Some("two different nuclear spins I".to_string())
    } else if lo.resolve != up.resolve {
        Some("one manifold resolved by sublevels, the other by hyperfine levels".to_string())
    } else {
        None
    };
    if let Some(why) = why {
        ctx.push(
            bp,
            "two manifolds an electric-dipole transition joins (|J - J'| <= 1, not 0 -> 0, \
             same I, same resolve)",
            why,
        );
        return false;
    }
    true
}

/// reduced_dipole (with a unit) or from_lifetime (true or a fraction).
fn strength(
    ctx: &mut Ctx,
    rc: &RawCoupling,
    path: &KeyPath,
    lo: &ManifoldInfo,
    up: &ManifoldInfo,
) -> Option<Strength> {
    match (&rc.reduced_dipole, &rc.from_lifetime) {
        (Some(_), Some(_)) => {
            ctx.push(
                &path.k("from_lifetime"),
                "either reduced_dipole or from_lifetime, not both",
                "both",
            );
            None
        }
        (None, None) => {
            ctx.missing(
                &path.k("reduced_dipole"),
                "reduced_dipole (e.g. \"4.2 ea0\") or from_lifetime: true",
            );
            None
        }
        (Some(_), None) => ctx
            .req_quantity(
                &path.k("reduced_dipole"),
                &rc.reduced_dipole,
                Kind::Dipole,
                Sign::Positive,
            )
            .map(Strength::Reduced),
        (None, Some(s)) => {
            let fp = path.k("from_lifetime");
            let fraction = match s {
                Scalar::Bool(true) => Some(1.0),
                Scalar::Bool(false) => {
                    ctx.push(&fp, "true, or a fraction in (0, 1]", "false");
                    None
                }
                _ => ctx.bare(
                    &fp,
                    &Some(s.clone()),
                    "a fraction of the upper manifold's decay",
                    |v| v > 0.0 && v <= 1.0,
                    "in (0, 1]",
                ),
            }?;
            if up.gamma <= 0.0 {
                let found = if lo.gamma > 0.0 {
                    format!(
                        "'{}' without one; the lifetime is on the lower manifold '{}' (move it to \
                         '{}', or give reduced_dipole instead)",
                        up.id, lo.id, up.id
                    )
                } else {
                    format!("'{}' without one (or give reduced_dipole instead)", up.id)
                };
                ctx.push(
                    &fp,
                    format!(
                        "a lifetime or linewidth on the upper manifold '{}' (from_lifetime takes \
                         the dipole from its decay)",
                        up.id
                    ),
                    found,
                );
                return None;
            }
            Some(Strength::FromLifetime(fraction))
        }
    }
}

/// The couplings and decay of every spec, appended to `out`.
pub(super) fn generate(
    ctx: &mut Ctx,
    specs: &[Spec],
    manifolds: &Manifolds,
    out: &mut Vec<Option<CouplingInfo>>,
) -> Generated {
    let rates = shared_rates(ctx, specs, manifolds);
    let mut gen = Generated::default();
    for (spec, (reduced, rate)) in specs.iter().zip(rates) {
        let (lo, up) = (&manifolds.list[spec.lower], &manifolds.list[spec.upper]);
        match lo.resolve {
            Resolve::Sublevels => sublevel_couplings(spec, lo, up, reduced, rate, out, &mut gen),
            Resolve::Hyperfine => hyperfine_couplings(spec, lo, up, reduced, rate, out, &mut gen),
        }
    }
    gen
}

/// For each spec: the reduced dipole (C m) and the decay rate (1/s) that
/// goes its way.
fn shared_rates(ctx: &mut Ctx, specs: &[Spec], manifolds: &Manifolds) -> Vec<(f64, f64)> {
    let omega = |s: &Spec| manifolds.list[s.upper].centre - manifolds.list[s.lower].centre;
    let mut out = vec![(0.0, 0.0); specs.len()];
    for (u, up) in manifolds.list.iter().enumerate() {
        let mine: Vec<usize> = (0..specs.len()).filter(|&k| specs[k].upper == u).collect();
        let fixed: f64 = mine
            .iter()
            .map(|&k| match specs[k].strength {
                Strength::FromLifetime(f) => f,
                Strength::Reduced(_) => 0.0,
            })
            .sum();
        if fixed > 1.0 + BRANCHING_SUM_TOLERANCE {
            ctx.push(
                &up.path,
                "from_lifetime fractions of its lower couplings summing to at most 1",
                format!("a sum of {fixed}"),
            );
        }
        let weight = |k: usize| match specs[k].strength {
            Strength::Reduced(d) => {
                let lo = &manifolds.list[specs[k].lower];
                omega(&specs[k]).powi(3) * f64::from(lo.atom.two_j + 1) * d * d
            }
            Strength::FromLifetime(_) => 0.0,
        };
        let total: f64 = mine.iter().map(|&k| weight(k)).sum();
        let rest = (1.0 - fixed).max(0.0) * up.gamma;
        for &k in &mine {
            let (two_j, two_jp) = (manifolds.list[specs[k].lower].atom.two_j, up.atom.two_j);
            out[k] = match specs[k].strength {
                Strength::FromLifetime(f) => {
                    let rate = f * up.gamma;
                    (
                        reduced_from_rate(omega(&specs[k]), two_j, two_jp, rate),
                        rate,
                    )
                }
                Strength::Reduced(d) if total > 0.0 => (d, rest * weight(k) / total),
                Strength::Reduced(d) => (d, 0.0),
            };
        }
    }
    out
}

fn sublevel_couplings(
    spec: &Spec,
    lo: &ManifoldInfo,
    up: &ManifoldInfo,
    reduced: f64,
    rate: f64,
    out: &mut Vec<Option<CouplingInfo>>,
    gen: &mut Generated,
) {
    let (two_j, two_jp) = (lo.atom.two_j, up.atom.two_j);
    let list = transitions(two_j, &lo.sublevels, two_jp, &up.sublevels);
    for t in &list {
        out.push(Some(CouplingInfo {
            lower: lo.first + t.lower,
            upper: up.first + t.upper,
            dipole: Some(Dipole::Absolute(reduced * t.absorption)),
            dipole_text: format!("{:.6} x <J||er||J'>", t.absorption),
            fields: spec.fields.clone(),
            source: spec.source,
            q: Some(t.q),
        }));
    }
    if rate <= 0.0 {
        return;
    }
    for (slot, terms) in channels(two_j, two_jp, &list, rate).into_iter().enumerate() {
        if terms.is_empty() {
            continue;
        }
        let q = ["-1", "0", "+1"][slot];
        gen.jumps.push(Jump {
            label: format!("{} -> {}, photon q = {q}", up.id, lo.id),
            terms: terms
                .iter()
                .map(|c| JumpTerm {
                    lower: lo.first + c.lower,
                    upper: up.first + c.upper,
                    amplitude: c.amplitude,
                })
                .collect(),
        });
    }
}

fn hyperfine_couplings(
    spec: &Spec,
    lo: &ManifoldInfo,
    up: &ManifoldInfo,
    reduced: f64,
    rate: f64,
    out: &mut Vec<Option<CouplingInfo>>,
    gen: &mut Generated,
) {
    let (two_j, two_jp, two_i) = (lo.atom.two_j, up.atom.two_j, lo.atom.two_i);
    for (b, &two_fp) in up.two_f.iter().enumerate() {
        let mut branches = Vec::new();
        for (a, &two_f) in lo.two_f.iter().enumerate() {
            let s = relative_strength_ff(two_j, two_jp, two_i, two_f, two_fp);
            if s.is_finite() && s > 0.0 {
                out.push(Some(CouplingInfo {
                    lower: lo.first + a,
                    upper: up.first + b,
                    dipole: Some(Dipole::Absolute(reduced * (s / 3.0).sqrt())),
                    dipole_text: format!("sqrt({s:.6} / 3) x <J||er||J'>"),
                    fields: spec.fields.clone(),
                    source: spec.source,
                    q: None,
                }));
            }
            let br = decay_branching_ff(two_j, two_jp, two_i, two_f, two_fp);
            if rate > 0.0 && br.is_finite() && br > 0.0 {
                branches.push((lo.first + a, br * rate / up.gamma));
            }
        }
        if !branches.is_empty() {
            gen.decays.push((up.first + b, branches));
        }
    }
}
