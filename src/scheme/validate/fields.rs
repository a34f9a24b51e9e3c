//! Fields: ids, carriers, strengths, chirp and phase, and the Rabi
//! frequency of every drive.
//!
//! Owns: the `fields:` map except the envelope (`envelopes.rs`): exactly one
//! carrier (frequency, wavelength, or tuned to a coupled pair), exactly one
//! strength (intensity, power with waist, rabi or area on a coupling), chirp,
//! phase, rwa; then each drive's Rabi frequency and each field's peak
//! intensity through the physics in `model::field` and `units`. Must not:
//! write a physics formula itself.

use std::collections::HashMap;

use super::super::locate::KeyPath;
use super::super::raw::{format_number, Id, RawField, RawScheme};
use super::super::MAX_FIELDS;
use super::couplings::CouplingInfo;
use super::ctx::{Ctx, Sign};
use super::envelopes::envelope;
use super::levels::Levels;
use super::{first_valid_id, given};
use crate::model::{
    intensity_from_rabi, rabi_by_dipole_ratio, rabi_from_area, rabi_from_intensity, Dipole, Drive,
    Envelope,
};
use crate::units::{self, Kind};

/// The field ids in file order, with the raw entries to validate later.
pub(super) struct FieldIds<'r> {
    /// (id, entry, key path); a field written without a body has no entry.
    pub entries: Vec<(String, Option<&'r RawField>, KeyPath)>,
    pub index: HashMap<String, usize>,
    pub ids: Vec<String>,
}

/// How a field sets its strength.
pub(super) enum Strength {
    Intensity {
        value: f64,
        by: &'static str,
    },
    /// Peak Omega on the coupling between the given levels.
    Rabi {
        pair: (usize, usize),
        omega: f64,
    },
    /// Pulse area (rad) on the coupling between the given levels.
    Area {
        pair: (usize, usize),
        area: f64,
    },
}

// Same shape as yaml.rs YamlError: plain fields of a different record.
/// A field as far as it validated.
pub(super) struct FieldInfo {
    pub id: String,
    pub omega: Option<f64>,
    pub envelope: Option<Envelope>,
    pub strength: Option<Strength>,
    pub chirp: f64,
    pub phase: f64,
    pub rwa: bool,
    /// Intensity fractions (sigma-, pi, sigma+), when given.
    pub polarization: Option<[f64; 3]>,
}

// Same steps as the level list of levels.rs (count limit, first valid id): other records.
/// The field ids (needed by the couplings' field lists before the fields
/// themselves are validated); None when there are too many fields.
pub(super) fn field_ids<'r>(raw: &'r RawScheme, ctx: &mut Ctx) -> Option<FieldIds<'r>> {
    let fp = KeyPath::root().k("fields");
    let raw_fields: &[(Id, Option<RawField>)] =
        raw.fields.as_ref().map(|o| &o.0[..]).unwrap_or(&[]);
    if !ctx.within(&fp, raw_fields.len(), MAX_FIELDS, "fields", "fields") {
        return None;
    }
    let mut out = FieldIds {
        entries: Vec::new(),
        index: HashMap::new(),
        ids: Vec::new(),
    };
    let mut seen: HashMap<String, usize> = HashMap::new();
    for (id, f) in raw_fields {
        let id = &id.0;
        let path = fp.k(id);
        if !first_valid_id(ctx, &mut seen, &path, id, "field") {
            continue;
        }
        out.index.insert(id.clone(), out.entries.len());
        out.entries.push((id.clone(), f.as_ref(), path));
    }
    out.ids = out.entries.iter().map(|f| f.0.clone()).collect();
    Some(out)
}

/// One field: carrier, envelope, strength, chirp, phase, rwa.
pub(super) fn field(
    ctx: &mut Ctx,
    id: &str,
    f: &RawField,
    path: &KeyPath,
    levels: &Levels,
    couplings: &[Option<CouplingInfo>],
) -> FieldInfo {
    let omega = carrier(ctx, f, path, levels, couplings);
    let envelope = match &f.envelope {
        None => {
            ctx.missing(&path.k("envelope"), "an envelope {shape: ..., ...}");
            None
        }
        Some(e) => envelope(ctx, e, &path.k("envelope")),
    };
    let strength = strength(ctx, f, path, levels);
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
        polarization: super::polarization::polarization(ctx, f, path),
    }
}

/// The carrier: exactly one of frequency, wavelength, tuned.
fn carrier(
    ctx: &mut Ctx,
    f: &RawField,
    path: &KeyPath,
    levels: &Levels,
    couplings: &[Option<CouplingInfo>],
) -> Option<f64> {
    let keys = given(&[
        ("frequency", f.frequency.is_some()),
        ("wavelength", f.wavelength.is_some()),
        ("tuned", f.tuned.is_some()),
    ]);
    match keys.len() {
        0 => ctx.missing(
            &path.k("frequency"),
            "exactly one of frequency, wavelength, tuned: {to: [a, b], detuning}",
        ),
        1 => {
            if f.frequency.is_some() {
                return ctx.quantity(
                    &path.k("frequency"),
                    &f.frequency,
                    Kind::Carrier,
                    Sign::Positive,
                );
            } else if f.wavelength.is_some() {
                return ctx
                    .quantity(
                        &path.k("wavelength"),
                        &f.wavelength,
                        Kind::Length,
                        Sign::Positive,
                    )
                    .map(units::omega_from_wavelength);
            } else if let Some(t) = &f.tuned {
                return tuned(ctx, t, &path.k("tuned"), levels, couplings);
            }
        }
        _ => ctx.push(
            &path.k(keys[1]),
            "exactly one of frequency, wavelength, tuned",
            keys.join(" and "),
        ),
    }
    None
}

/// A carrier tuned by a detuning from the transition of a coupled pair.
fn tuned(
    ctx: &mut Ctx,
    t: &super::super::raw::RawTuned,
    tp: &KeyPath,
    levels: &Levels,
    couplings: &[Option<CouplingInfo>],
) -> Option<f64> {
    let pr = levels.tuning_pair(ctx, &tp.k("to"), &t.to);
    let det = ctx.req_quantity(&tp.k("detuning"), &t.detuning, Kind::Frequency, Sign::Any);
    let (a, b) = pr?;
    let (ma, mb) = (levels.members(a), levels.members(b));
    let joined = couplings.iter().flatten().any(|c| {
        (ma.contains(&c.lower) && mb.contains(&c.upper))
            || (mb.contains(&c.lower) && ma.contains(&c.upper))
    });
    if !joined && couplings.iter().any(Option::is_none) {
        // A coupling that did not validate may be the one meant; its own
        // message says why.
        return None;
    }
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
        return None;
    }
    let (Some(det), Some(ea), Some(eb)) = (det, levels.tuning_energy(a), levels.tuning_energy(b))
    else {
        return None;
    };
    // In a scan that moves levels, the scheme as written sets the line.
    let w_ab = ctx.tuned_line(tp.to_string(), (ea - eb).abs());
    let w = w_ab + det;
    if w > 0.0 && w.is_finite() {
        return Some(w);
    }
    let txt = t.detuning.as_ref().map(|x| x.text()).unwrap_or_default();
    ctx.push(
        &tp.k("detuning"),
        "a detuning leaving a positive carrier frequency",
        format!(
            "'{txt}' (the carrier would be {} Hz)",
            format_number(units::hz_from_omega(w))
        ),
    );
    None
}

/// The strength: exactly one of intensity, power (+ waist), rabi, area.
fn strength(ctx: &mut Ctx, f: &RawField, path: &KeyPath, levels: &Levels) -> Option<Strength> {
    let keys = given(&[
        ("intensity", f.intensity.is_some()),
        ("power", f.power.is_some()),
        ("rabi", f.rabi.is_some()),
        ("area", f.area.is_some()),
    ]);
    if f.waist.is_some() && f.power.is_none() {
        ctx.push(
            &path.k("waist"),
            "waist only together with power",
            "waist without power",
        );
    }
    match keys.len() {
        0 => {
            ctx.missing(
                &path.k("intensity"),
                "exactly one of intensity, power (with waist), rabi: {on, value}, area: {on, value}",
            );
            None
        }
        1 => match keys[0] {
            "intensity" => ctx
                .quantity(
                    &path.k("intensity"),
                    &f.intensity,
                    Kind::Intensity,
                    Sign::NonNegative,
                )
                .map(|v| Strength::Intensity {
                    value: v,
                    by: "intensity",
                }),
            "power" => {
                let p = ctx.quantity(&path.k("power"), &f.power, Kind::Power, Sign::NonNegative);
                let w = ctx.req_quantity(&path.k("waist"), &f.waist, Kind::Length, Sign::Positive);
                Some(Strength::Intensity {
                    value: units::gaussian_beam_peak_intensity(p?, w?),
                    by: "power",
                })
            }
            key => {
                let ov = if key == "rabi" { &f.rabi } else { &f.area };
                let ov = ov.as_ref()?;
                let kp = path.k(key);
                let pr = levels.pair(ctx, &kp.k("on"), &ov.on);
                let kind = if key == "rabi" {
                    Kind::Frequency
                } else {
                    Kind::Angle
                };
                let v = ctx.req_quantity(&kp.k("value"), &ov.value, kind, Sign::Any);
                let (pair, v) = (pr?, v?);
                Some(if key == "rabi" {
                    Strength::Rabi { pair, omega: v }
                } else {
                    Strength::Area { pair, area: v }
                })
            }
        },
        _ => {
            ctx.push(
                &path.k(keys[1]),
                "exactly one of intensity, power, rabi, area",
                keys.join(" and "),
            );
            None
        }
    }
}

/// What the strengths of all fields act on.
pub(super) struct Strengths<'s> {
    pub fields: &'s [FieldInfo],
    pub paths: Vec<&'s KeyPath>,
    pub couplings: &'s [Option<CouplingInfo>],
    pub levels: &'s Levels,
    /// Per drive: the factor the field's polarisation puts on the dipole.
    pub projection: &'s [f64],
}

/// Rabi frequency of every drive, and the peak intensity of every field
/// where it is known.
pub(super) fn strengths(ctx: &mut Ctx, s: &Strengths, drives: &mut [Drive]) -> Vec<Option<f64>> {
    let mut peak_intensity: Vec<Option<f64>> = vec![None; s.fields.len()];
    for (fi, finfo) in s.fields.iter().enumerate() {
        let fpath = s.paths[fi];
        let my: Vec<usize> = (0..drives.len())
            .filter(|&k| drives[k].field == fi)
            .collect();
        let Some(strength) = &finfo.strength else {
            continue;
        };
        peak_intensity[fi] = match strength {
            Strength::Intensity { value, by } => {
                by_intensity(ctx, s, finfo, *value, by, &my, drives);
                Some(*value)
            }
            _ => by_reference(ctx, s, fi, strength, &my, drives),
        };
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
    peak_intensity
}

/// A field set by intensity or power: Omega = d E0 / hbar on every
/// coupling it drives, which must have a dipole with a unit.
fn by_intensity(
    ctx: &mut Ctx,
    s: &Strengths,
    finfo: &FieldInfo,
    value: f64,
    by: &str,
    my: &[usize],
    drives: &mut [Drive],
) {
    let cp = KeyPath::root().k("couplings");
    for &k in my {
        let ci = drives[k].coupling;
        let Some(c) = &s.couplings[ci] else { continue };
        match c.dipole {
            Some(Dipole::Absolute(d)) => {
                drives[k].rabi = rabi_from_intensity(d * s.projection[k], value);
            }
            Some(Dipole::Relative(_)) => ctx.push(
                &cp.i(c.source).k("dipole"),
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

/// The drive of field `fi` on the coupling between `pair`, if the field
/// drives one; otherwise a message.
fn reference_drive(
    ctx: &mut Ctx,
    s: &Strengths,
    fi: usize,
    key: &str,
    pair: (usize, usize),
    my: &[usize],
    drives: &[Drive],
) -> Option<usize> {
    let (a, b) = pair;
    let (lo, hi) = (a.min(b), a.max(b));
    let joins = |c: &CouplingInfo| c.lower.min(c.upper) == lo && c.lower.max(c.upper) == hi;
    let found = my
        .iter()
        .copied()
        .find(|&k| s.couplings[drives[k].coupling].as_ref().is_some_and(joins));
    if found.is_none() {
        let id = &s.fields[fi].id;
        let joining = s.couplings.iter().flatten().find(|c| joins(c));
        let polarization = s.fields[fi].polarization;
        let why = match (joining, joining.and_then(|c| c.q)) {
            // Its own message (a polarization missing or not valid, a
            // coupling that did not validate) says why.
            (Some(_), Some(_)) if polarization.is_none() => return None,
            (None, _) if s.couplings.iter().any(Option::is_none) => return None,
            (Some(_), Some(q)) if polarization.is_some_and(|p| p[(q + 1) as usize] == 0.0) => {
                format!(
                    "its polarization has no {} component, which this transition needs",
                    ["sigma-", "pi", "sigma+"][(q + 1) as usize]
                )
            }
            (Some(_), _) => format!("its `fields:` list leaves '{id}' out"),
            (None, _) => "no coupling joins them".to_string(),
        };
        ctx.push(
            &s.paths[fi].k(key).k("on"),
            format!("a coupling that field '{id}' drives"),
            format!("[{}, {}] ({why})", s.levels.list[a].id, s.levels.list[b].id),
        );
    }
    found
}

/// A field set by a Rabi frequency or a pulse area on one coupling: that
/// coupling's Omega, and the others' scaled by the dipole ratio. Returns the
/// peak intensity when the reference dipole has a unit.
fn by_reference(
    ctx: &mut Ctx,
    s: &Strengths,
    fi: usize,
    strength: &Strength,
    my: &[usize],
    drives: &mut [Drive],
) -> Option<f64> {
    let finfo = &s.fields[fi];
    let fpath = s.paths[fi];
    let cp = KeyPath::root().k("couplings");
    let (key, pair) = match strength {
        Strength::Rabi { pair, .. } => ("rabi", *pair),
        Strength::Area { pair, .. } => ("area", *pair),
        Strength::Intensity { .. } => return None,
    };
    let rk = reference_drive(ctx, s, fi, key, pair, my, drives)?;
    let rci = drives[rk].coupling;
    let rc = s.couplings[rci].as_ref()?;
    let dref = rc.dipole?;
    let pref = s.projection[rk];
    if dref.value() == 0.0 {
        ctx.push(
            &cp.i(rc.source).k("dipole"),
            format!(
                "a nonzero dipole (field '{}' sets its {key} on this coupling)",
                finfo.id
            ),
            format!("'{}'", rc.dipole_text),
        );
        return None;
    }
    let omega_ref = match strength {
        Strength::Rabi { omega, .. } => *omega,
        Strength::Area { area, .. } => {
            let env = finfo.envelope.as_ref()?;
            let integral = env.area();
            if !(integral > 0.0 && integral.is_finite()) {
                ctx.push(
                    &fpath.k("envelope"),
                    "an envelope with a positive integral (area sets Omega = area / integral of f)",
                    format!("an integral of {}", format_number(integral)),
                );
                return None;
            }
            rabi_from_area(*area, integral)
        }
        Strength::Intensity { .. } => return None,
    };
    if !omega_ref.is_finite() {
        ctx.push(
            &fpath.k(key),
            "a finite Rabi frequency",
            "an out-of-range value",
        );
        return None;
    }
    // Same ctx.push shape as the zero-dipole message above: each names its own key and text.
    let ref_abs = matches!(dref, Dipole::Absolute(_));
    for &k in my {
        let ci = drives[k].coupling;
        let Some(c) = &s.couplings[ci] else { continue };
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
                &cp.i(c.source).k("dipole"),
                format!(
                    "{want} like couplings[{}], since field '{}' scales its Rabi frequencies by the dipole ratio",
                    rc.source,
                    finfo.id
                ),
                format!("'{}' ({is})", c.dipole_text),
            );
            continue;
        }
        drives[k].rabi =
            rabi_by_dipole_ratio(omega_ref, d.value() * s.projection[k], dref.value() * pref);
    }
    match dref {
        Dipole::Absolute(d) => Some(intensity_from_rabi(omega_ref, d * pref)),
        Dipole::Relative(_) => None,
    }
}
