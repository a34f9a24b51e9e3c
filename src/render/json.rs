//! JSON rendering with the stable keys of the scheme contract (version 1).
//! Keys are added, never renamed; output types are written here for the
//! output, model types do not derive Serialize.
//!
//! Owns: the JSON spelling of the reports. Must not: compute physics; the
//! only arithmetic is the documented unit change to MHz named in each key.

use crate::estimate::Order;
use crate::report::{InspectReport, Provenance, SolverFacts, VetReport};
use crate::solve::MethodUsed;
use serde_json::{json, Map, Value};
use std::io::{self, Write};

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

fn mhz(omega: f64) -> f64 {
    omega / TWO_PI / 1e6
}

fn provenance(p: &Provenance) -> Value {
    json!({
        "tool": p.tool,
        "version": p.version,
        "scheme_file": p.scheme_file,
        "scheme_sha256": p.scheme_sha256,
    })
}

fn solver(s: &SolverFacts) -> Value {
    json!({
        "method": match s.method { MethodUsed::Exact => "exact", MethodUsed::Adaptive => "adaptive" },
        "rtol": s.rtol,
        "atol": s.atol,
        "detuning_cutoff_mhz": mhz(s.detuning_cutoff),
        "steps": s.steps,
        "evaluations": s.evaluations,
    })
}

fn order_key(o: Order) -> &'static str {
    match o {
        Order::Initial => "initial",
        Order::Unreached => "none",
        Order::First => "first",
        Order::Second => "second",
    }
}

/// The vet report as JSON.
pub fn vet_value(r: &VetReport) -> Value {
    let levels: Vec<Value> = r
        .levels
        .iter()
        .map(|l| {
            let pop_key = if l.order == Order::Second {
                "second_order_population"
            } else {
                "first_order_population"
            };
            let sources: Vec<Value> = l
                .sources
                .iter()
                .map(|s| {
                    let mut m = Map::new();
                    m.insert("field".into(), json!(s.field));
                    m.insert("from".into(), json!(s.from));
                    m.insert("detuning_mhz".into(), json!(mhz(s.detuning)));
                    m.insert("rabi_mhz".into(), json!(mhz(s.rabi)));
                    m.insert(pop_key.into(), json!(s.population));
                    m.insert("in_dynamics".into(), json!(s.included));
                    Value::Object(m)
                })
                .collect();
            let mut m = Map::new();
            m.insert("id".into(), json!(l.id));
            m.insert("role".into(), json!(l.role.as_str()));
            m.insert("final_population".into(), json!(l.final_population));
            m.insert("peak_population".into(), json!(l.peak_population));
            m.insert("first_order_population".into(), json!(l.first_order));
            if let (Order::Second, Some(p)) = (l.order, l.second_order) {
                m.insert("second_order_population".into(), json!(p));
            }
            m.insert("flagged".into(), json!(l.flagged));
            m.insert("below_goal".into(), json!(l.below_goal));
            m.insert("sources".into(), Value::Array(sources));
            m.insert("label".into(), json!(l.label));
            m.insert("estimate_order".into(), json!(order_key(l.order)));
            m.insert("final_over_estimate".into(), json!(l.ratio));
            m.insert("tolerance".into(), json!(l.tolerance));
            m.insert("estimate_unreliable".into(), json!(l.unreliable));
            if let Some(rm) = &l.remedy {
                m.insert(
                    "remedy".into(),
                    json!({
                        "field": rm.field,
                        "present_shape": rm.present_shape,
                        "present_length_s": rm.present_length,
                        "gaussian_same_area_population": rm.gaussian_same_area,
                        "blackman_same_area_population": rm.blackman_same_area,
                        "length_for_tolerance_s": rm.length_for_tolerance,
                        "fwhm_s": rm.fwhm,
                        "exact_gaussian_population": rm.exact_gaussian,
                        "exact_blackman_population": rm.exact_blackman,
                        "exact_population_at_length": rm.exact_at_length,
                    }),
                );
            }
            Value::Object(m)
        })
        .collect();
    let excluded: Vec<Value> = r
        .excluded
        .iter()
        .map(|x| {
            json!({
                "field": x.field,
                "lower": x.lower,
                "upper": x.upper,
                "detuning_mhz": mhz(x.detuning),
                "rabi_mhz": mhz(x.rabi),
                "first_order_population": x.population,
                "light_shift_mhz": mhz(x.light_shift),
            })
        })
        .collect();
    let safety: Vec<Value> = r
        .safety
        .iter()
        .map(|s| json!({"field": s.field, "peak_intensity_w_per_cm2": s.peak_intensity.map(|i| i * 1e-4)}))
        .collect();
    json!({
        "tolerance": r.tolerance,
        "norm_error": r.norm_error,
        "lost_population": r.lost_population,
        "levels": levels,
        "flagged_count": r.flagged,
        "goal": r.goal,
        "targets_below_goal": r.targets_short,
        "max_spectator_population": r.max_spectator,
        "excluded_drives": excluded,
        "window_s": [r.window.0, r.window.1],
        "solver": solver(&r.solver),
        "provenance": provenance(&r.provenance),
        "title": r.title,
        "laser_safety": safety,
    })
}

/// The inspect report as JSON.
pub fn inspect_value(r: &InspectReport) -> Value {
    let levels: Vec<Value> = r
        .levels
        .iter()
        .map(|l| {
            json!({
                "id": l.id,
                "energy_hz": l.energy_hz,
                "energy_cm": l.energy_cm,
                "label": l.label,
                "lifetime_s": l.lifetime,
                "role": l.role.as_str(),
                "initial_population": l.initial_population,
                "tolerance": l.tolerance,
            })
        })
        .collect();
    let drives: Vec<Value> = r
        .drives
        .iter()
        .map(|d| {
            json!({
                "field": d.field,
                "lower": d.lower,
                "upper": d.upper,
                "transition_hz": d.transition_hz,
                "detuning_mhz": d.detuning_hz / 1e6,
                "rabi_mhz": d.rabi_hz / 1e6,
                "included": d.included,
                "wavelength_nm": d.wavelength.map(|w| w * 1e9),
                "pulse_area_rad": d.area,
                "relative_dipole": d.relative_dipole,
            })
        })
        .collect();
    let fields: Vec<Value> = r
        .fields
        .iter()
        .map(|f| {
            json!({
                "id": f.id,
                "frequency_hz": f.frequency_hz,
                "wavelength_nm": f.wavelength * 1e9,
                "envelope": f.shape,
                "length_s": f.length,
                "peak_intensity_w_per_cm2": f.peak_intensity.map(|i| i * 1e-4),
                "chirp_hz_per_s": f.chirp_hz_per_s,
                "rwa": f.rwa,
            })
        })
        .collect();
    json!({
        "levels": levels,
        "drives": drives,
        "fields": fields,
        "window_s": [r.window.0, r.window.1],
        "tolerance": r.tolerance,
        "detuning_cutoff_mhz": mhz(r.detuning_cutoff),
        "provenance": provenance(&r.provenance),
        "title": r.title,
    })
}

pub fn write_value(v: &Value, w: &mut dyn Write) -> io::Result<()> {
    serde_json::to_writer_pretty(&mut *w, v).map_err(io::Error::other)?;
    writeln!(w)
}
