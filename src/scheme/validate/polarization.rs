//! A field's polarisation relative to the quantisation axis (the bias
//! magnetic field, along z).
//!
//! Owns: `fields.<id>.polarization`: `sigma+`, `sigma-`, `pi` (also σ+, σ−,
//! π), or a map of those to intensity fractions summing to 1, read into
//! the fractions (p_-1, p_0, p_+1). Must not: compute Rabi frequencies
//! (the drives take sqrt(p_q) as the factor on a sublevel dipole).

use super::super::locate::KeyPath;
use super::super::raw::{InitialValue, RawField};
use super::ctx::Ctx;
use super::sum_text;

const EXPECTED: &str = "sigma+, sigma-, pi, or a map of those to intensity fractions summing to 1";

/// The component index (0: sigma-, 1: pi, 2: sigma+) of a name.
pub(crate) fn component(name: &str) -> Option<usize> {
    match name.trim() {
        "sigma-" | "σ-" | "σ−" => Some(0),
        "pi" | "π" => Some(1),
        "sigma+" | "σ+" => Some(2),
        _ => None,
    }
}

/// The intensity fractions (sigma-, pi, sigma+), or None (absent, or a
/// message pushed).
pub(super) fn polarization(ctx: &mut Ctx, f: &RawField, path: &KeyPath) -> Option<[f64; 3]> {
    let pp = path.k("polarization");
    match f.polarization.as_ref()? {
        InitialValue::Population(None) => {
            ctx.missing(&pp, EXPECTED);
            None
        }
        InitialValue::Population(Some(s)) => {
            let text = s.text();
            let Some(k) = component(&text) else {
                ctx.push(&pp, EXPECTED, format!("'{text}'"));
                return None;
            };
            let mut p = [0.0; 3];
            p[k] = 1.0;
            Some(p)
        }
        InitialValue::Map(map) => {
            let mut p = [0.0; 3];
            let mut ok = true;
            for (name, value) in &map.0 {
                let kp = pp.k(&name.0);
                let Some(k) = component(&name.0) else {
                    ctx.push(&kp, "sigma+, pi or sigma-", format!("'{}'", name.0));
                    ok = false;
                    continue;
                };
                match ctx.population(&kp, value) {
                    Some(x) => p[k] += x,
                    None => {
                        if value.is_none() {
                            ctx.missing(&kp, "an intensity fraction between 0 and 1");
                        }
                        ok = false;
                    }
                }
            }
            let sum: f64 = p.iter().sum();
            if ok && (sum - 1.0).abs() > 1e-9 {
                ctx.push(
                    &pp,
                    "intensity fractions summing to 1",
                    format!("a sum of {}", sum_text(sum)),
                );
                ok = false;
            }
            ok.then_some(p)
        }
    }
}
