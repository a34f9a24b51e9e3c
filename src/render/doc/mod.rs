//! The shared document core of the human-readable formats: a report laid out
//! as metadata lines, sections, tables and notes, with every number already
//! spelled for reading. Text, Markdown and LaTeX each render a [`Doc`].
//!
//! Owns: the layout of the vet and inspect reports (which columns, which
//! units; `vet.rs`, `inspect.rs`), and how sublevels are grouped into rows
//! (`groups.rs`). Must not: compute physics (every number comes from the report) or
//! write anything.

mod groups;
mod inspect;
mod vet;

pub use groups::Sublevels;
pub use inspect::inspect_doc;
pub use vet::vet_doc;

use super::numfmt::{self, Num};
use crate::estimate::Order;
use crate::model::{Dynamics, InitialKind};
use crate::report::SafetyNote;
use crate::solve::MethodUsed;

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

/// The laser-safety caution every report carries when a field is intense or
/// of unknown intensity.
pub const SAFETY_TEXT: &str = "Laser safety: these numbers are for planning only. Beam powers used in such schemes can cause eye and skin injury; follow your institution's laser-safety rules and its laser safety officer, and the applicable standards (IEC 60825-1, ANSI Z136.1).";

/// Plain statement of what the numbers are, for a run of the amplitudes
/// (the version-1 wording; its bytes are in the goldens).
pub const MODEL_TEXT: &str = "Results are model calculations (Schrodinger equation with the stated approximations); check them against measurement.";

/// The same statement for a run of the density matrix.
pub const MODEL_TEXT_DENSITY: &str = "Results are model calculations (Lindblad master equation for the density matrix, with the stated approximations); check them against measurement.";

/// The statement naming the equation the run solved.
pub fn model_text(dynamics: Dynamics) -> &'static str {
    match dynamics {
        Dynamics::DensityMatrix => MODEL_TEXT_DENSITY,
        Dynamics::Amplitudes | Dynamics::Auto => MODEL_TEXT,
    }
}

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

/// A "largest sublevel" cell: the sublevel's id and its population, or
/// "-" when no sublevel of the group holds any (none is largest then).
fn largest_cell(id: &str, population: f64) -> Cell {
    if population <= 0.0 {
        return Cell {
            plain: "-".into(),
            latex: "--".into(),
            mark: Mark::None,
        };
    }
    let p = numfmt::population(population);
    Cell {
        plain: format!("{id} {}", p.plain()),
        latex: format!("{} {}", latex_escape(id), p.latex()),
        mark: Mark::None,
    }
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

#[cfg(test)]
mod tests {
    use super::largest_cell;

    /// Regression: an empty group named its first sublevel as "largest"
    /// with population 0; it now shows a dash.
    #[test]
    fn an_empty_group_has_no_largest_sublevel() {
        assert_eq!(largest_cell("P_F1_m-1", 0.0).plain, "-");
        let c = largest_cell("S_F1_m+1", 2.35e-4);
        assert!(c.plain.starts_with("S_F1_m+1 "), "{}", c.plain);
    }
}
