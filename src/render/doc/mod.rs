//! The shared document core of the human-readable formats: a report laid out
//! as metadata lines, sections, tables and notes, with every number already
//! spelled for reading. Text, Markdown and LaTeX each render a [`Doc`].
//!
//! Owns: the layout of the vet and inspect reports (which columns, which
//! units). Must not: compute physics (every number comes from the report) or
//! write anything.

mod vet;

pub use vet::vet_doc;

use super::numfmt::{self, Num};
use crate::estimate::Order;
use crate::model::InitialKind;
use crate::report::{InspectReport, SafetyNote};
use crate::solve::MethodUsed;

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

/// The laser-safety caution every report carries when a field is intense or
/// of unknown intensity.
pub const SAFETY_TEXT: &str = "Laser safety: these numbers are for planning only. Beam powers used in such schemes can cause eye and skin injury; follow your institution's laser-safety rules and its laser safety officer, and the applicable standards (IEC 60825-1, ANSI Z136.1).";

/// Plain statement of what the numbers are.
pub const MODEL_TEXT: &str = "Results are model calculations (Schrodinger equation with the stated approximations); check them against measurement.";

/// The note under the levels of `vet` and `inspect` when the initial state
/// is the version-1 map with more than one populated level: how it is
/// taken, and how to write a mixture instead. None otherwise.
pub fn initial_note(kind: InitialKind, populated: usize) -> Option<String> {
    (kind == InitialKind::Coherent && populated > 1).then(|| {
        "initial: the populations are taken as a coherent superposition (amplitudes sqrt(p), phase 0); write initial: {mixture: {...}} for an incoherent mixture.".into()
    })
}

/// How a cell should catch the eye.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mark {
    None,
    /// A leak above tolerance.
    Alert,
    /// An unreliable estimate, a caution.
    Caution,
    /// Within tolerance / target reached.
    Good,
}

/// Column alignment.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Align {
    Left,
    Right,
}

/// One table cell in two spellings.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    pub plain: String,
    pub latex: String,
    pub mark: Mark,
}

impl Cell {
    pub fn text(s: &str) -> Self {
        Cell {
            plain: s.to_string(),
            latex: latex_escape(s),
            mark: Mark::None,
        }
    }
    pub fn num(n: Num) -> Self {
        Cell {
            plain: n.plain(),
            latex: n.latex(),
            mark: Mark::None,
        }
    }
    pub fn dash() -> Self {
        Cell {
            plain: "-".into(),
            latex: "--".into(),
            mark: Mark::None,
        }
    }
    pub fn marked(mut self, mark: Mark) -> Self {
        self.mark = mark;
        self
    }
}

/// A table: headers, alignment per column, rows of cells.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    pub headers: Vec<String>,
    pub align: Vec<Align>,
    pub rows: Vec<Vec<Cell>>,
}

/// A section: heading, optional table, notes (plain sentences).
#[derive(Debug, Clone, PartialEq)]
pub struct Section {
    pub heading: String,
    pub table: Option<Table>,
    pub notes: Vec<String>,
}

/// A whole document.
#[derive(Debug, Clone, PartialEq)]
pub struct Doc {
    pub title: String,
    pub meta: Vec<(String, String)>,
    pub sections: Vec<Section>,
}

/// Escape text for LaTeX.
pub fn latex_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '\\' => out.push_str("\\textbackslash{}"),
            '_' | '%' | '&' | '#' | '$' | '{' | '}' => {
                out.push('\\');
                out.push(ch);
            }
            '^' => out.push_str("\\^{}"),
            '~' => out.push_str("\\~{}"),
            _ => out.push(ch),
        }
    }
    out
}

fn table(headers: &[&str], align: &[Align], rows: Vec<Vec<Cell>>) -> Table {
    Table {
        headers: headers.iter().map(|s| s.to_string()).collect(),
        align: align.to_vec(),
        rows,
    }
}

fn method_name(m: MethodUsed) -> &'static str {
    match m {
        MethodUsed::Exact => "exact (one matrix exponential per piecewise-constant segment)",
        MethodUsed::Adaptive => "adaptive (Dormand-Prince 8(5,3), autonomous form)",
    }
}

fn order_name(o: Order) -> &'static str {
    match o {
        Order::Initial => "-",
        Order::Unreached => "none",
        Order::First => "1st",
        Order::Second => "2nd",
    }
}

fn short_hash(h: &str) -> &str {
    h.get(..12).unwrap_or(h)
}

/// The meta line of a report's time window.
fn window_meta(window: (f64, f64)) -> (String, String) {
    (
        "window".into(),
        format!(
            "{} to {}",
            numfmt::time(window.0).plain(),
            numfmt::time(window.1).plain()
        ),
    )
}

fn provenance_meta(tool: &str, version: &str, file: &str, hash: &str) -> Vec<(String, String)> {
    vec![
        ("tool".into(), format!("{tool} {version}")),
        (
            "scheme".into(),
            format!("{file} (sha256 {})", short_hash(hash)),
        ),
    ]
}

fn safety_section(notes: &[SafetyNote]) -> Option<Section> {
    if notes.is_empty() {
        return None;
    }
    let mut lines: Vec<String> = notes
        .iter()
        .map(|n| match n.peak_intensity {
            Some(i) => format!(
                "field {}: peak intensity {}",
                n.field,
                numfmt::intensity(i).plain()
            ),
            None => format!("field {}: intensity not known (set by Rabi frequency or area on a relative dipole)", n.field),
        })
        .collect();
    lines.push(SAFETY_TEXT.to_string());
    Some(Section {
        heading: "Caution".into(),
        table: None,
        notes: lines,
    })
}

/// Lay out the inspect report.
pub fn inspect_doc(r: &InspectReport) -> Doc {
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
    let levels = r
        .levels
        .iter()
        .map(|l| {
            vec![
                Cell::text(&l.id),
                Cell::text(l.label.as_deref().unwrap_or("")),
                Cell::num(numfmt::wavenumber(l.energy_cm)),
                Cell::num(numfmt::frequency(l.energy_hz, false)),
                l.lifetime
                    .map_or_else(Cell::dash, |t| Cell::num(numfmt::time(t))),
                Cell::text(l.role.as_str()),
                if l.initial_population > 0.0 {
                    Cell::num(numfmt::population(l.initial_population))
                } else {
                    Cell::dash()
                },
            ]
        })
        .collect();
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
    let mut sections = vec![
        Section {
            heading: "Levels".into(),
            table: Some(table(
                &["level", "label", "energy", "energy/h", "lifetime", "role", "initial"],
                &[Left, Left, Right, Right, Right, Left, Right],
                levels,
            )),
            notes: initial_note(r.initial_kind, r.initial_levels)
                .into_iter()
                .collect(),
        },
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
    ];
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
