//! Renderers: one small exporter per output format behind one trait.
//!
//! Owns: the choice of format and the [`Exporter`] trait. Adding a format is
//! one file, one [`Format`] variant and one arm in [`exporter`]. Must not:
//! compute physics — renderers take finished reports and write bytes to a
//! `&mut dyn Write`; they never open files.

pub mod csv;
pub mod doc;
pub mod evolve;
pub mod json;
pub mod latex;
pub mod markdown;
pub mod numfmt;
pub mod scan;
pub mod scan_plot;
pub mod text;

pub use doc::Sublevels;

use crate::report::{InspectReport, VetReport};
use std::io::{self, Write};

/// Output formats of the reports.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Text,
    Markdown,
    Latex,
    Csv,
    Json,
}

/// One exporter per format.
pub trait Exporter {
    fn vet(&self, report: &VetReport, w: &mut dyn Write) -> io::Result<()>;
    fn inspect(&self, report: &InspectReport, w: &mut dyn Write) -> io::Result<()>;
}

struct TextExporter {
    color: bool,
    sublevels: Sublevels,
}
struct MarkdownExporter {
    sublevels: Sublevels,
}
struct LatexExporter {
    sublevels: Sublevels,
}
struct CsvExporter;
struct JsonExporter;

impl Exporter for TextExporter {
    fn vet(&self, r: &VetReport, w: &mut dyn Write) -> io::Result<()> {
        text::write(&doc::vet_doc(r, self.sublevels), self.color, w)
    }
    fn inspect(&self, r: &InspectReport, w: &mut dyn Write) -> io::Result<()> {
        text::write(&doc::inspect_doc(r, self.sublevels), self.color, w)
    }
}

impl Exporter for MarkdownExporter {
    fn vet(&self, r: &VetReport, w: &mut dyn Write) -> io::Result<()> {
        markdown::write(&doc::vet_doc(r, self.sublevels), w)
    }
    fn inspect(&self, r: &InspectReport, w: &mut dyn Write) -> io::Result<()> {
        markdown::write(&doc::inspect_doc(r, self.sublevels), w)
    }
}

impl Exporter for LatexExporter {
    fn vet(&self, r: &VetReport, w: &mut dyn Write) -> io::Result<()> {
        latex::write(&doc::vet_doc(r, self.sublevels), w)
    }
    fn inspect(&self, r: &InspectReport, w: &mut dyn Write) -> io::Result<()> {
        latex::write(&doc::inspect_doc(r, self.sublevels), w)
    }
}

impl Exporter for CsvExporter {
    fn vet(&self, r: &VetReport, w: &mut dyn Write) -> io::Result<()> {
        csv::vet(r, w)
    }
    fn inspect(&self, r: &InspectReport, w: &mut dyn Write) -> io::Result<()> {
        csv::inspect(r, w)
    }
}

impl Exporter for JsonExporter {
    fn vet(&self, r: &VetReport, w: &mut dyn Write) -> io::Result<()> {
        json::write(r, w)
    }
    fn inspect(&self, r: &InspectReport, w: &mut dyn Write) -> io::Result<()> {
        json::write(r, w)
    }
}

/// The exporter of a format; `color` only affects text. Sublevels are
/// grouped by manifold and F in text, Markdown and LaTeX
/// ([`exporter_with`] shows each).
pub fn exporter(format: Format, color: bool) -> Box<dyn Exporter> {
    exporter_with(format, color, Sublevels::Grouped)
}

/// The exporter of a format; `color` only affects text, `sublevels` only
/// text, Markdown and LaTeX (CSV and JSON list every level).
pub fn exporter_with(format: Format, color: bool, sublevels: Sublevels) -> Box<dyn Exporter> {
    match format {
        Format::Text => Box::new(TextExporter { color, sublevels }),
        Format::Markdown => Box::new(MarkdownExporter { sublevels }),
        Format::Latex => Box::new(LatexExporter { sublevels }),
        Format::Csv => Box::new(CsvExporter),
        Format::Json => Box::new(JsonExporter),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample;

    #[test]
    fn every_format_writes_both_reports_and_only_text_colours() {
        for format in [
            Format::Text,
            Format::Markdown,
            Format::Latex,
            Format::Csv,
            Format::Json,
        ] {
            for color in [false, true] {
                let e = exporter(format, color);
                let (mut v, mut i) = (Vec::new(), Vec::new());
                e.vet(&sample::vet_report(), &mut v).unwrap();
                e.inspect(&sample::inspect_report(), &mut i).unwrap();
                assert!(v.ends_with(b"\n") && i.ends_with(b"\n"), "{format:?}");
                let escapes = v.contains(&0x1b);
                assert_eq!(escapes, color && format == Format::Text, "{format:?}");
            }
        }
    }

    #[test]
    fn a_remedy_not_checked_is_shown_with_its_reason() {
        let r = sample::vet_report_with_unchecked_remedy();
        let render = |format| {
            let mut b = Vec::new();
            exporter(format, false).vet(&r, &mut b).unwrap();
            String::from_utf8(b).unwrap()
        };
        let text = render(Format::Text);
        assert!(
            text.contains(
                "a blackman envelope 2.00e-10 (not checked: the run needs more than 10 steps; \
                 raise SolveOptions::step_budget); a rectangular pulse"
            ),
            "{text}"
        );
        assert!(text.contains("(exact 1.10e-9)"), "the other checks stay");
        assert!(render(Format::Markdown).contains(
            "(not checked: the run needs more than 10 steps; raise SolveOptions::step_budget)"
        ));
        assert!(render(Format::Latex).contains(
            "(not checked: the run needs more than 10 steps; raise SolveOptions::step\\_budget)"
        ));
        let plain = {
            let mut b = Vec::new();
            exporter(Format::Text, false)
                .vet(&sample::vet_report(), &mut b)
                .unwrap();
            String::from_utf8(b).unwrap()
        };
        assert!(!plain.contains("not checked"), "only where a check failed");
    }
}
