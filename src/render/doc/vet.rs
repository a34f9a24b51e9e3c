//! The layout of the vet report: the level table, leaks with the drives
//! that feed them, remedies, drives left out, the summary.
//!
//! Owns: which sections a vet report has and their wording, the cells of a
//! group of sublevels (`groups.rs` says which rows form one). Must not:
//! compute (every number comes from the report) or pick a format.

use super::groups::{self, Entry, Group, Sublevels};
use super::{
    initial_note, largest_cell, method_name, model_text, numfmt, order_name, provenance_meta,
    safety_section, table, window_meta, Align, Cell, Doc, Mark, Section, TWO_PI,
};
use crate::model::{Dynamics, Readout};
use crate::report::{Channel, LevelRow, RemedyCheck, RemedyRow, Role, SourceRow, VetReport};

fn status_cell(row: &LevelRow) -> Cell {
    let mut words = Vec::new();
    if row.flagged {
        words.push("LEAK");
    }
    if row.below_goal {
        words.push("SHORT");
    }
    if row.unreliable {
        words.push("est?");
    }
    let mark = if row.flagged || row.below_goal {
        Mark::Alert
    } else if row.unreliable {
        Mark::Caution
    } else {
        Mark::None
    };
    if words.is_empty() {
        let ok = match row.role {
            Role::Spectator => "ok",
            _ => "",
        };
        return Cell::text(ok).marked(if ok.is_empty() {
            Mark::None
        } else {
            Mark::Good
        });
    }
    Cell::text(&words.join(" ")).marked(mark)
}

/// The head lines of the vet report: provenance, method, tolerances, window.
fn vet_meta(r: &VetReport) -> Vec<(String, String)> {
    let mut meta = provenance_meta(
        &r.provenance.tool,
        &r.provenance.version,
        &r.provenance.scheme_file,
        &r.provenance.scheme_sha256,
    );
    meta.push(("method".into(), method_name(r.solver.method).into()));
    meta.push((
        "tolerances".into(),
        format!(
            "rtol {}, atol {}, detuning cutoff {}",
            numfmt::sci(r.solver.rtol, 2, "").plain(),
            numfmt::sci(r.solver.atol, 2, "").plain(),
            numfmt::frequency(r.solver.detuning_cutoff / TWO_PI, false).plain()
        ),
    ));
    meta.push(window_meta(r.window));
    meta.push((
        "spectator tolerance".into(),
        numfmt::population(r.tolerance).plain(),
    ));
    meta
}

/// The table of every level's populations; sublevels grouped by manifold
/// and F unless `mode` asks for each (a "largest sublevel" column then
/// follows "final").
fn levels_section(r: &VetReport, mode: Sublevels) -> Section {
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
                    cells.insert(3, Cell::dash());
                }
                cells
            }
            Entry::Group(g) => group_cells(&r.levels, g),
        })
        .collect();
    let mut headers = vec![
        "level",
        "role",
        "final",
        "peak",
        "estimate",
        "order",
        "final/est",
        "tolerance",
        "status",
    ];
    let mut align = vec![Left, Left, Right, Right, Right, Left, Right, Right, Left];
    if grouped.is_some() {
        headers.insert(3, "largest sublevel");
        align.insert(3, Left);
    }
    let levels = table(&headers, &align, rows);
    let mut notes = level_notes(r);
    if let Some(label) = &grouped {
        notes.push(group_note(label));
    }
    notes.extend(open_notes(r));
    Section {
        heading: "Populations at the end of the window".into(),
        table: Some(levels),
        notes,
    }
}

/// What a group row of the level table means, `label` the first group's.
fn group_note(label: &str) -> String {
    format!("grouped rows ({label}, ...): final and estimate summed over the m_F sublevels of one F level of a manifold, largest sublevel the one with the most final population; flags stay per sublevel (LEAK (n of m): n sublevels above their tolerance); peak, order and final/est per sublevel with every sublevel on its own row (--sublevels).")
}

/// The cells of one level's row.
fn level_cells(l: &LevelRow) -> Vec<Cell> {
    let fin = Cell::num(numfmt::population(l.final_population)).marked(if l.flagged {
        Mark::Alert
    } else {
        Mark::None
    });
    vec![
        Cell::text(&l.id),
        Cell::text(l.role.as_str()),
        fin,
        Cell::num(numfmt::population(l.peak_population)),
        l.estimate()
            .map_or_else(Cell::dash, |e| Cell::num(numfmt::population(e))),
        Cell::text(order_name(l.order)),
        l.ratio
            .map_or_else(Cell::dash, |x| Cell::num(numfmt::ratio(x))),
        if l.role == Role::Spectator {
            Cell::num(numfmt::population(l.tolerance))
        } else {
            Cell::dash()
        },
        status_cell(l),
    ]
}

/// The cells of a group's row: total final population (marked when a
/// member leaks), the largest member, the summed estimate, the order and
/// the spectators' tolerance where the members share them, the status.
fn group_cells(levels: &[LevelRow], g: &Group) -> Vec<Cell> {
    let flagged = g.members.iter().filter(|&&k| levels[k].flagged).count();
    let total = g.sum(|k| levels[k].final_population);
    let big = &levels[g.largest(|k| levels[k].final_population)];
    let estimates: Vec<f64> = g
        .members
        .iter()
        .filter_map(|&k| levels[k].estimate())
        .collect();
    let tolerances: Vec<f64> = g
        .members
        .iter()
        .filter(|&&k| levels[k].role == Role::Spectator)
        .map(|&k| levels[k].tolerance)
        .collect();
    let tolerance = match tolerances.split_first() {
        Some((t, rest)) if rest.iter().all(|x| x == t) => Cell::num(numfmt::population(*t)),
        _ => Cell::dash(),
    };
    vec![
        Cell::text(&g.label()),
        Cell::text(&g.roles(|k| levels[k].role)),
        Cell::num(numfmt::population(total)).marked(if flagged > 0 {
            Mark::Alert
        } else {
            Mark::None
        }),
        largest_cell(&big.id, big.final_population),
        Cell::dash(),
        if estimates.is_empty() {
            Cell::dash()
        } else {
            Cell::num(numfmt::population(estimates.iter().sum()))
        },
        Cell::text(g.common(|k| order_name(levels[k].order)).unwrap_or("mixed")),
        Cell::dash(),
        tolerance,
        group_status(levels, g, flagged),
    ]
}

/// The status of a group: every word a member's status has (LEAK with how
/// many members leak), "ok" for a group of spectators within tolerance.
fn group_status(levels: &[LevelRow], g: &Group, flagged: usize) -> Cell {
    let any = |f: fn(&LevelRow) -> bool| g.members.iter().any(|&k| f(&levels[k]));
    let mut words = Vec::new();
    if flagged > 0 {
        words.push(format!("LEAK ({flagged} of {})", g.members.len()));
    }
    let short = any(|l| l.below_goal);
    if short {
        words.push("SHORT".into());
    }
    let unreliable = any(|l| l.unreliable);
    if unreliable {
        words.push("est?".into());
    }
    if words.is_empty() {
        return if g.common(|k| levels[k].role) == Some(Role::Spectator) {
            Cell::text("ok").marked(Mark::Good)
        } else {
            Cell::text("")
        };
    }
    let mark = if flagged > 0 || short {
        Mark::Alert
    } else {
        Mark::Caution
    };
    Cell::text(&words.join(" ")).marked(mark)
}

/// Notes on the open-system side of a run: where "final" is read, the
/// equation, the photons scattered, an initial superposition, and levels
/// whose window-end and settled populations differ beyond tolerance.
fn open_notes(r: &VetReport) -> Vec<String> {
    let mut notes = Vec::new();
    match r.readout {
        Readout::WindowEnd => {}
        Readout::Settled => notes.push(
            "readout settled: final is taken after the window, drives off, once every decay has run its course (rate equations, exact).".into(),
        ),
        Readout::At(t) => notes.push(format!(
            "readout at {}: final is taken there, inside the window.",
            numfmt::time(t).plain()
        )),
    }
    if r.dynamics == Dynamics::DensityMatrix {
        let photons = r.scattered_photons.unwrap_or(0.0);
        notes.push(format!(
            "dynamics: Lindblad master equation for the density matrix; {} spontaneous emissions per atom inside the window.",
            numfmt::sci(photons, 3, "").plain()
        ));
    }
    notes.extend(initial_note(r.initial_kind, r.initial_levels));
    for l in r.levels.iter().filter(|l| l.readout_sensitive) {
        let end = l.window_end_population.unwrap_or(l.final_population);
        notes.push(format!(
            "{}: {} at the window end but {} settled: the readout time matters for this level.",
            l.id,
            numfmt::population(end).plain(),
            numfmt::population(l.settled_population.unwrap_or(end)).plain()
        ));
    }
    notes
}

/// The notes under the level table; the decay note only where a level is
/// fed by decay.
fn level_notes(r: &VetReport) -> Vec<String> {
    let mut notes = vec![
        "final and peak: exact propagation; estimate: perturbation theory of the stated order from the initial populations; LEAK: spectator above its tolerance; est?: estimate above 0.1 or off the exact value by more than a factor 2.".into(),
    ];
    let decay_fed = r
        .levels
        .iter()
        .any(|l| l.sources.iter().any(|s| s.channel == Channel::Decay));
    if decay_fed {
        notes.push(
            "estimates include population arriving by decay (weak-drive scattering rate); est? also marks a saturated drive (s > 0.1), a depleted initial level (> 0.1) or a pulse not long against the line's coherence time.".into(),
        );
    }
    notes
}

/// The leaks with the drives that feed them, and the remedies.
fn leak_sections(r: &VetReport) -> Vec<Section> {
    use Align::*;
    let mut sections = Vec::new();
    // Leaks and the drives that feed them.
    let mut leak_rows = Vec::new();
    let mut remedies = Vec::new();
    for l in r.levels.iter().filter(|l| l.flagged) {
        for s in &l.sources {
            leak_rows.push(vec![
                Cell::text(&l.id).marked(Mark::Alert),
                Cell::text(&s.field),
                Cell::text(&source_from(s)),
                Cell::num(numfmt::frequency(s.detuning / TWO_PI, true)),
                Cell::num(numfmt::frequency(s.rabi / TWO_PI, false)),
                Cell::num(numfmt::population(s.population)),
                Cell::text(if s.included { "yes" } else { "no (cutoff)" }),
            ]);
        }
        if let Some(m) = &l.remedy {
            remedies.push(remedy_text(l, m));
        }
    }
    if !leak_rows.is_empty() {
        sections.push(Section {
            heading: "Leaks and the drives that feed them (largest first)".into(),
            table: Some(table(
                &[
                    "level",
                    "field",
                    "from",
                    "detuning",
                    "Rabi freq.",
                    "estimate",
                    "in dynamics",
                ],
                &[Left, Left, Left, Right, Right, Right, Left],
                leak_rows,
            )),
            notes: Vec::new(),
        });
        if !remedies.is_empty() {
            sections.push(Section {
                heading: "Remedies (first-order estimate, exact propagation in brackets)".into(),
                table: None,
                notes: remedies,
            });
        }
    }
    sections
}

/// The "from" cell of a source: the level, and for a decay source the
/// decaying level the drive excites ("g1, via e by decay").
fn source_from(s: &SourceRow) -> String {
    match (&s.channel, &s.via) {
        (Channel::Decay, Some(via)) => format!("{}, via {via} by decay", s.from),
        _ => s.from.clone(),
    }
}

/// The remedy sentence of a flagged level: each exact check in brackets,
/// or the reason it could not be run.
fn remedy_text(l: &LevelRow, m: &RemedyRow) -> String {
    let exact = |x: Option<f64>, check: RemedyCheck| match x {
        Some(v) => format!(" (exact {})", numfmt::population(v).plain()),
        None => m
            .not_checked
            .iter()
            .find(|u| u.check == check)
            .map_or_else(String::new, |u| format!(" (not checked: {})", u.reason)),
    };
    let length = match m.length_for_tolerance {
        Some(t) => format!(
            "a {} pulse of {} (now {}) gives {}{}",
            m.present_shape,
            numfmt::time(t).plain(),
            numfmt::time(m.present_length).plain(),
            numfmt::population(l.tolerance).plain(),
            exact(m.exact_at_length, RemedyCheck::AtLength)
        ),
        None => format!(
            "no {} pulse length within 1e4 of the present one reaches {}",
            m.present_shape,
            numfmt::population(l.tolerance).plain()
        ),
    };
    format!(
        "{}: keeping the pulse area of field {}, a gaussian envelope of the same intensity FWHM ({}) gives {}{}, a blackman envelope {}{}; {}.",
        l.id,
        m.field,
        numfmt::time(m.fwhm).plain(),
        numfmt::population(m.gaussian_same_area).plain(),
        exact(m.exact_gaussian, RemedyCheck::Gaussian),
        numfmt::population(m.blackman_same_area).plain(),
        exact(m.exact_blackman, RemedyCheck::Blackman),
        length
    )
}

/// The drives left out by the detuning cutoff, if any.
fn excluded_section(r: &VetReport) -> Option<Section> {
    use Align::*;
    if r.excluded.is_empty() {
        return None;
    }
    // Same first cells as the inspect drive rows (doc/mod.rs): other columns follow.
    let rows = r
        .excluded
        .iter()
        .map(|x| {
            vec![
                Cell::text(&x.field),
                Cell::text(&format!("{} - {}", x.lower, x.upper)),
                Cell::num(numfmt::frequency(x.detuning / TWO_PI, true)),
                Cell::num(numfmt::frequency(x.rabi / TWO_PI, false)),
                Cell::num(numfmt::population(x.population)),
                Cell::num(numfmt::frequency(x.light_shift / TWO_PI, true)),
            ]
        })
        .collect();
    Some(Section {
            heading: "Drives left out of the dynamics by the detuning cutoff".into(),
            table: Some(table(
                &["field", "transition", "detuning", "Rabi freq.", "estimate", "light shift"],
                &[Left, Left, Right, Right, Right, Right],
                rows,
            )),
            notes: vec!["Their populations are first-order estimates; light shift Omega^2/(4 Delta) (cyclic) on the lower level.".into()],
        })
}

/// Targets, loss, norm error and the verdicts.
fn summary_section(r: &VetReport) -> Section {
    let targets: Vec<String> = r
        .levels
        .iter()
        .filter(|l| l.role == Role::Target)
        .map(|l| {
            format!(
                "{} {}",
                l.id,
                numfmt::population(l.final_population).plain()
            )
        })
        .collect();
    let mut totals = Vec::new();
    if !targets.is_empty() {
        totals.push(format!("target population: {}", targets.join(", ")));
    }
    totals.push(format!(
        "lost to decay: {}; norm error: {}",
        numfmt::population(r.lost_population).plain(),
        numfmt::sci(r.norm_error, 2, "").plain()
    ));
    totals.push(if r.flagged == 0 {
        "verdict: every spectator within tolerance".into()
    } else {
        format!("verdict: {} spectator(s) above tolerance", r.flagged)
    });
    if let Some(g) = r.goal {
        totals.push(if r.targets_short == 0 {
            format!(
                "goal: every target reaches {}",
                numfmt::population(g).plain()
            )
        } else {
            format!(
                "goal: {} target(s) below {} (SHORT)",
                r.targets_short,
                numfmt::population(g).plain()
            )
        });
    }
    Section {
        heading: "Summary".into(),
        table: None,
        notes: totals,
    }
}

/// Lay out the vet report; `mode`: sublevels grouped or each on its row.
pub fn vet_doc(r: &VetReport, mode: Sublevels) -> Doc {
    let mut sections = vec![levels_section(r, mode)];
    sections.extend(leak_sections(r));
    sections.extend(excluded_section(r));
    sections.push(summary_section(r));
    if let Some(s) = safety_section(&r.safety) {
        sections.push(s);
    }
    sections.push(Section {
        heading: String::new(),
        table: None,
        notes: vec![model_text(r.dynamics).into()],
    });
    Doc {
        title: match &r.title {
            Some(t) => format!("Leakage report: {t}"),
            None => "Leakage report".into(),
        },
        meta: vet_meta(r),
        sections,
    }
}
