//! The layout of the inspect report: the manifolds' centres, the levels
//! (generated ones by their energy from their manifold's centre, sublevels
//! grouped by manifold and F unless asked for each), the drives, the fields.
//!
//! Owns: which sections an inspect report has and their wording. Must not:
//! compute (every number comes from the report) or pick a format.

use super::groups::{self, Entry, Group, Sublevels};
use super::{
    initial_note, largest_cell, numfmt, provenance_meta, safety_section, table, window_meta, Align,
    Cell, Doc, Mark, Section, TWO_PI,
};
use crate::report::{InspectLevel, InspectReport, ManifoldCentre};

/// The energy cells (cm^-1, E/h) of a level: a generated level's energy
/// from its manifold's centre in MHz ("+2563.006 MHz from S centre", no
/// wavenumber); a v1 level's absolute energy.
fn energy_cells(l: &InspectLevel) -> [Cell; 2] {
    match (l.centre_offset_hz, &l.quantum) {
        (Some(hz), Some(q)) => [Cell::dash(), from_centre(&[hz], &q.manifold)],
        _ => [
            Cell::num(numfmt::wavenumber(l.energy_cm)),
            Cell::num(numfmt::frequency(l.energy_hz, false)),
        ],
    }
}

/// "+2563.006 MHz from S centre", or the span of several offsets
/// "-4271.677 to -4269.565 MHz from S centre".
fn from_centre(hz: &[f64], manifold: &str) -> Cell {
    let lo = hz.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = hz.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let tail = format!(" from {manifold} centre");
    let (a, b) = (numfmt::offset_mhz(lo), numfmt::offset_mhz(hi));
    let (plain, latex) = if a == b {
        (a.plain(), a.latex())
    } else {
        (
            format!("{} to {}", a.mantissa, b.plain()),
            format!("{} to {}", a.mantissa.replace('-', "$-$"), b.latex()),
        )
    };
    Cell {
        plain: format!("{plain}{tail}"),
        latex: format!("{latex}{}", super::latex_escape(&tail)),
        mark: Mark::None,
    }
}

/// The cells of one level's row.
fn level_cells(l: &InspectLevel) -> Vec<Cell> {
    let [energy, energy_h] = energy_cells(l);
    vec![
        Cell::text(&l.id),
        Cell::text(l.label.as_deref().unwrap_or("")),
        energy,
        energy_h,
        l.lifetime
            .map_or_else(Cell::dash, |t| Cell::num(numfmt::time(t))),
        Cell::text(l.role.as_str()),
        initial_cell(l.initial_population),
    ]
}

fn initial_cell(p: f64) -> Cell {
    if p > 0.0 {
        Cell::num(numfmt::population(p))
    } else {
        Cell::dash()
    }
}

/// The cells of a group's row: the span of its energies from the centre,
/// the label and lifetime the members share, their roles, the total
/// initial population and the member with the most of it.
fn group_cells(levels: &[InspectLevel], g: &Group) -> Vec<Cell> {
    let offsets: Vec<f64> = g
        .members
        .iter()
        .filter_map(|&k| levels[k].centre_offset_hz)
        .collect();
    let big = &levels[g.largest(|k| levels[k].initial_population)];
    vec![
        Cell::text(&g.label()),
        Cell::text(
            &g.common(|k| levels[k].label.clone())
                .flatten()
                .unwrap_or_default(),
        ),
        Cell::dash(),
        from_centre(&offsets, &g.manifold),
        g.common(|k| levels[k].lifetime)
            .flatten()
            .map_or_else(Cell::dash, |t| Cell::num(numfmt::time(t))),
        Cell::text(&g.roles(|k| levels[k].role)),
        initial_cell(g.sum(|k| levels[k].initial_population)),
        if big.initial_population > 0.0 {
            largest_cell(&big.id, big.initial_population)
        } else {
            Cell::dash()
        },
    ]
}

/// The manifolds' centres, when the scheme has manifolds.
fn manifolds_section(centres: &[ManifoldCentre]) -> Option<Section> {
    use Align::*;
    if centres.is_empty() {
        return None;
    }
    let rows = centres
        .iter()
        .map(|m| {
            vec![
                Cell::text(&m.id),
                Cell::text(&groups::half_text(m.j)),
                Cell::num(numfmt::wavenumber(m.energy_cm)),
                Cell::num(numfmt::frequency(m.energy_hz, false)),
                Cell::text(&m.levels.to_string()),
            ]
        })
        .collect();
    Some(Section {
        heading: "Manifolds (centres of gravity)".into(),
        table: Some(table(
            &["manifold", "J", "energy", "energy/h", "levels"],
            &[Left, Left, Right, Right, Right],
            rows,
        )),
        notes: vec!["The energies of generated levels are given from their manifold's centre (hyperfine and Zeeman structure at the scheme's magnetic field).".into()],
    })
}

/// The level table; sublevels grouped unless `mode` asks for each (an
/// "largest sublevel" column then follows "initial").
fn levels_section(r: &InspectReport, mode: Sublevels) -> Section {
    use Align::*;
    let quantum: Vec<_> = r.levels.iter().map(|l| l.quantum.as_ref()).collect();
    let entries = groups::entries(&quantum, mode);
    let grouped = groups::first_group(&entries).map(Group::label);
    let rows = entries
        .iter()
        .map(|e| match e {
            Entry::One(k) => {
                let mut cells = level_cells(&r.levels[*k]);
                if grouped.is_some() {
                    cells.push(Cell::dash());
                }
                cells
            }
            Entry::Group(g) => group_cells(&r.levels, g),
        })
        .collect();
    let mut headers = vec![
        "level", "label", "energy", "energy/h", "lifetime", "role", "initial",
    ];
    let mut align = vec![Left, Left, Right, Right, Right, Left, Right];
    let mut notes: Vec<String> = initial_note(r.initial_kind, r.initial_levels)
        .into_iter()
        .collect();
    if let Some(label) = &grouped {
        headers.push("largest sublevel");
        align.push(Left);
        notes.push(format!("grouped rows ({label}, ...): the m_F sublevels of one F level of a manifold, the span of their energies, their total initial population and the sublevel with the most of it; every sublevel on its own row with --sublevels."));
    }
    Section {
        heading: "Levels".into(),
        table: Some(table(&headers, &align, rows)),
        notes,
    }
}

/// Lay out the inspect report; `mode`: sublevels grouped or each on its row.
pub fn inspect_doc(r: &InspectReport, mode: Sublevels) -> Doc {
    use Align::*;
    let mut meta = provenance_meta(
        &r.provenance.tool,
        &r.provenance.version,
        &r.provenance.scheme_file,
        &r.provenance.scheme_sha256,
    );
    meta.push(window_meta(r.window));
    meta.push((
        "detuning cutoff".into(),
        numfmt::frequency(r.detuning_cutoff / TWO_PI, false).plain(),
    ));
    // Same first cells as doc/vet.rs excluded drives: the two tables go on with other columns.
    let drives = r
        .drives
        .iter()
        .map(|d| {
            vec![
                Cell::text(&d.field),
                Cell::text(&format!("{} - {}", d.lower, d.upper)),
                Cell::num(numfmt::frequency(d.transition_hz, false)),
                d.wavelength
                    .map_or_else(Cell::dash, |w| Cell::num(numfmt::wavelength(w))),
                Cell::num(numfmt::frequency(d.detuning_hz, true)),
                Cell::num(numfmt::frequency(d.rabi_hz, false)),
                Cell::num(numfmt::area_in_pi(d.area)),
                if d.included {
                    Cell::text("yes")
                } else {
                    Cell::text("no (cutoff)").marked(Mark::Caution)
                },
            ]
        })
        .collect();
    let fields = r
        .fields
        .iter()
        .map(|f| {
            vec![
                Cell::text(&f.id),
                Cell::num(numfmt::frequency(f.frequency_hz, false)),
                Cell::num(numfmt::wavelength(f.wavelength)),
                Cell::text(&f.shape),
                Cell::num(numfmt::time(f.length)),
                f.peak_intensity.map_or_else(
                    || Cell::text("unknown"),
                    |i| Cell::num(numfmt::intensity(i)),
                ),
                if f.chirp_hz_per_s == 0.0 {
                    Cell::dash()
                } else {
                    Cell::num(numfmt::sci(f.chirp_hz_per_s, 3, "Hz/s"))
                },
                Cell::text(if f.rwa { "yes" } else { "no" }),
            ]
        })
        .collect();
    // Same shape per section (heading, table, notes): each is one literal of its own data.
    let mut sections: Vec<Section> = manifolds_section(&r.manifolds).into_iter().collect();
    sections.extend([
        levels_section(r, mode),
        Section {
            heading: "Drives (field x coupling)".into(),
            table: Some(table(
                &["field", "transition", "frequency", "wavelength", "detuning", "Rabi freq.", "area", "in dynamics"],
                &[Left, Left, Right, Right, Right, Right, Right, Left],
                drives,
            )),
            notes: vec!["Rabi frequency Omega/2pi at the envelope peak; pulse area Omega x integral of the envelope; detuning = laser - transition (positive = blue).".into()],
        },
        Section {
            heading: "Fields".into(),
            table: Some(table(
                &["field", "frequency", "wavelength", "envelope", "length", "peak intensity", "chirp", "RWA"],
                &[Left, Right, Right, Left, Right, Right, Right, Left],
                fields,
            )),
            notes: vec!["length: duration of finite pulses, intensity FWHM of gaussian and sech pulses.".into()],
        },
    ]);
    if let Some(s) = safety_section(&r.safety) {
        sections.push(s);
    }
    Doc {
        title: match &r.title {
            Some(t) => format!("Scheme: {t}"),
            None => "Scheme".into(),
        },
        meta,
        sections,
    }
}
