//! The shared document core of the human-readable formats: a report laid out
//! as metadata lines, sections, tables and notes, with every number already
//! spelled for reading. Text, Markdown and LaTeX each render a [`Doc`].
//!
//! Owns: the layout of the vet and inspect reports (which columns, which
//! units). Must not: compute physics (every number comes from the report) or
//! write anything.

use super::numfmt::{self, Num};
use crate::estimate::Order;
use crate::report::{InspectReport, LevelRow, RemedyRow, Role, SafetyNote, VetReport};
use crate::solve::MethodUsed;

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

/// The laser-safety caution every report carries when a field is intense or
/// of unknown intensity.
pub const SAFETY_TEXT: &str = "Laser safety: these numbers are for planning only. Beam powers used in such schemes can cause eye and skin injury; follow your institution's laser-safety rules and its laser safety officer, and the applicable standards (IEC 60825-1, ANSI Z136.1).";

/// Plain statement of what the numbers are.
pub const MODEL_TEXT: &str = "Results are model calculations (Schrodinger equation with the stated approximations); check them against measurement.";

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
    meta.push((
        "window".into(),
        format!(
            "{} to {}",
            numfmt::time(r.window.0).plain(),
            numfmt::time(r.window.1).plain()
        ),
    ));
    meta.push((
        "spectator tolerance".into(),
        numfmt::population(r.tolerance).plain(),
    ));
    meta
}

/// The table of every level's populations.
fn levels_section(r: &VetReport) -> Section {
    use Align::*;
    let rows = r
        .levels
        .iter()
        .map(|l| {
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
        })
        .collect();
    let levels = table(
        &[
            "level",
            "role",
            "final",
            "peak",
            "estimate",
            "order",
            "final/est",
            "tolerance",
            "status",
        ],
        &[Left, Left, Right, Right, Right, Left, Right, Right, Left],
        rows,
    );
    Section {
        heading: "Populations at the end of the window".into(),
        table: Some(levels),
        notes: vec![
            "final and peak: exact propagation; estimate: perturbation theory of the stated order from the initial populations; LEAK: spectator above its tolerance; est?: estimate above 0.1 or off the exact value by more than a factor 2.".into(),
        ],
    }
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
                Cell::text(&s.from),
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

/// The remedy sentence of a flagged level.
fn remedy_text(l: &LevelRow, m: &RemedyRow) -> String {
    let exact = |x: Option<f64>| {
        x.map_or_else(String::new, |v| {
            format!(" (exact {})", numfmt::population(v).plain())
        })
    };
    let length = match m.length_for_tolerance {
        Some(t) => format!(
            "a {} pulse of {} (now {}) gives {}{}",
            m.present_shape,
            numfmt::time(t).plain(),
            numfmt::time(m.present_length).plain(),
            numfmt::population(l.tolerance).plain(),
            exact(m.exact_at_length)
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
        exact(m.exact_gaussian),
        numfmt::population(m.blackman_same_area).plain(),
        exact(m.exact_blackman),
        length
    )
}

/// The drives left out by the detuning cutoff, if any.
fn excluded_section(r: &VetReport) -> Option<Section> {
    use Align::*;
    if r.excluded.is_empty() {
        return None;
    }
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

/// Lay out the vet report.
pub fn vet_doc(r: &VetReport) -> Doc {
    let mut sections = vec![levels_section(r)];
    sections.extend(leak_sections(r));
    sections.extend(excluded_section(r));
    sections.push(summary_section(r));
    if let Some(s) = safety_section(&r.safety) {
        sections.push(s);
    }
    sections.push(Section {
        heading: String::new(),
        table: None,
        notes: vec![MODEL_TEXT.into()],
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

/// Lay out the inspect report.
pub fn inspect_doc(r: &InspectReport) -> Doc {
    use Align::*;
    let mut meta = provenance_meta(
        &r.provenance.tool,
        &r.provenance.version,
        &r.provenance.scheme_file,
        &r.provenance.scheme_sha256,
    );
    meta.push((
        "window".into(),
        format!(
            "{} to {}",
            numfmt::time(r.window.0).plain(),
            numfmt::time(r.window.1).plain()
        ),
    ));
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
    let mut sections = vec![
        Section {
            heading: "Levels".into(),
            table: Some(table(
                &["level", "label", "energy", "energy/h", "lifetime", "role", "initial"],
                &[Left, Left, Right, Right, Right, Left, Right],
                levels,
            )),
            notes: Vec::new(),
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
