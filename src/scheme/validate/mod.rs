//! From the serde mirror to the validated model, one concern per module.
//!
//! Owns: every semantic rule of the scheme format (units and dimensions,
//! ranges, ids and references, exactly-one-of choices, defaults of window
//! and solver), each written once, and the order in which the concerns run:
//! levels (`levels.rs`), field ids, couplings and drives (`couplings.rs`),
//! fields and their strengths (`fields.rs`, envelopes in `envelopes.rs`),
//! initial populations, targets and tolerance (`initial.rs`), window and
//! solver (`window.rs`); the format's limits and the overflow check
//! (`limits.rs`); diagnostics and value readers (`ctx.rs`). It collects
//! every problem it finds instead of stopping at the first, then hands the
//! parts to `model::ModelBuilder`, whose checks every model passes.
//! Must not: read files, parse YAML, print, or compute physics (Rabi
//! frequencies and intensities are `model::field`'s and `units`').

mod couplings;
mod ctx;
mod envelopes;
mod fields;
mod initial;
mod levels;
mod limits;
mod manifold_couplings;
mod manifolds;
mod names;
mod open;
mod polarization;
mod window;

use std::collections::HashMap;

use super::locate::KeyPath;
use super::raw::RawScheme;
use crate::model::{Coupling, Field, Model};

pub use crate::model::valid_id;
pub(crate) use ctx::Ctx;
pub(crate) use names::{generated_id, map_name_id};
pub(crate) use polarization::component as polarization_component;

const ID_RULE: &str = "an id made of letters, digits, _ ' + - or /";

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

/// The keys of an exactly-one-of choice that are present, in order.
fn given<'k>(keys: &[(&'k str, bool)]) -> Vec<&'k str> {
    keys.iter().filter(|x| x.1).map(|x| x.0).collect()
}

/// The first occurrence of a level or field id (`noun`): true, with a
/// message if the id is not valid; false, with a message naming the first,
/// for a repeated one.
fn first_valid_id(
    ctx: &mut Ctx,
    seen: &mut HashMap<String, usize>,
    path: &KeyPath,
    id: &str,
    noun: &str,
) -> bool {
    let occ = seen.entry(id.to_string()).or_insert(0);
    *occ += 1;
    if *occ > 1 {
        let first = ctx.line_of(path);
        let pos = ctx.loc().locate_occurrence(path, *occ - 1);
        let where_ = first
            .map(|l| format!(" (the first is on line {l})"))
            .unwrap_or_default();
        ctx.push_at(
            path,
            pos,
            format!("a unique {noun} id"),
            format!("a second {noun} '{id}'{where_}"),
        );
        return false;
    }
    if !valid_id(id) {
        ctx.push(path, format!("a {noun} id: {ID_RULE}"), format!("'{id}'"));
    }
    true
}

/// Validate a mirror into a model, collecting every problem in `ctx`.
pub(crate) fn validate(raw: &RawScheme, ctx: &mut Ctx) -> Option<Model> {
    let mut levels = levels::levels(raw, ctx)?;
    let manifolds = manifolds::manifolds(raw, ctx, &mut levels);
    open::level_keys(raw, ctx, &mut levels);
    let field_ids = fields::field_ids(raw, ctx)?;
    let (couplings, generated) = couplings::couplings(raw, ctx, &levels, &field_ids, &manifolds)?;
    for (k, branches) in generated.decays {
        levels.list[k].decays_to = branches;
    }
    let empty_field = super::raw::RawField::default();
    let infos: Vec<fields::FieldInfo> = field_ids
        .entries
        .iter()
        .map(|(id, f, path)| {
            let f = f.unwrap_or(&empty_field);
            fields::field(ctx, id, f, path, &levels, &couplings)
        })
        .collect();
    let polarizations: Vec<Option<[f64; 3]>> = infos.iter().map(|f| f.polarization).collect();
    let written: Vec<bool> = field_ids
        .entries
        .iter()
        .map(|(_, f, _)| f.is_some_and(|f| f.polarization.is_some()))
        .collect();
    let (mut drives, projection) = couplings::drives(
        ctx,
        &field_ids.ids,
        &polarizations,
        &written,
        &couplings,
        &levels,
    )?;
    let strengths = fields::Strengths {
        fields: &infos,
        paths: field_ids.entries.iter().map(|e| &e.2).collect(),
        couplings: &couplings,
        levels: &levels,
        projection: &projection,
    };
    let peak_intensity = fields::strengths(ctx, &strengths, &mut drives);
    let (initial, initial_kind) = initial::initial(raw, ctx, &levels);
    let linewidths = open::linewidths(ctx, &field_ids);
    let targets = initial::targets(raw, ctx, &levels, &initial);
    let tolerance = initial::tolerance(raw, ctx);
    let window = window::window(raw, ctx, !field_ids.entries.is_empty(), &infos);
    let mut solver = window::solver(raw, ctx);
    let readout = open::readout(raw, ctx, window);
    let open_key = open::first_open_key(&levels, &linewidths, initial_kind);
    solver.dynamics = open::dynamics(raw, ctx, open_key);

    if !ctx.diags.is_empty() {
        return None;
    }
    let window = window?;
    let fields: Vec<Field> = infos
        .into_iter()
        .zip(peak_intensity)
        .zip(linewidths)
        .map(|((f, pi), linewidth)| {
            Some(Field {
                id: f.id,
                omega: f.omega?,
                envelope: f.envelope?,
                chirp: f.chirp,
                phase: f.phase,
                rwa: f.rwa,
                peak_intensity: pi,
                linewidth,
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
    let names = limits::Names {
        levels: levels.ids().to_vec(),
        fields: field_ids.ids,
        drive_fields: drives.iter().map(|d| d.field).collect(),
    };
    let built = Model::builder()
        .title(raw.title.as_ref().map(|t| t.text()))
        .levels(levels.list)
        .couplings(couplings)
        .fields(fields)
        .drives(drives)
        .initial(initial)
        .initial_kind(initial_kind)
        .readout(readout)
        .targets(targets)
        .tolerance(tolerance)
        .window(window)
        .solver(solver)
        .jumps(generated.jumps)
        .build_all();
    match built {
        Ok(model) => Some(model),
        Err(problems) => {
            limits::report_refusals(ctx, &names, &problems);
            None
        }
    }
}
