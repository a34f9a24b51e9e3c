//! Markdown rendering: pipe tables ready to paste into a proposal.
//!
//! Owns: the Markdown spelling of a [`Doc`]. Must not: compute or round numbers.

use super::doc::{Align, Doc, Mark};
use std::io::{self, Write};

fn cell(s: &str, mark: Mark) -> String {
    let s = s.replace('|', "\\|");
    match mark {
        Mark::Alert => format!("**{s}**"),
        _ => s,
    }
}

/// Render a document as Markdown.
pub fn write(doc: &Doc, w: &mut dyn Write) -> io::Result<()> {
    writeln!(w, "### {}", doc.title)?;
    writeln!(w)?;
    for (k, v) in &doc.meta {
        writeln!(w, "- {k}: {}", v.replace('|', "\\|"))?;
    }
    for s in &doc.sections {
        writeln!(w)?;
        if !s.heading.is_empty() {
            writeln!(w, "#### {}", s.heading)?;
            writeln!(w)?;
        }
        if let Some(t) = &s.table {
            writeln!(w, "| {} |", t.headers.join(" | "))?;
            let rule: Vec<&str> = t
                .align
                .iter()
                .map(|a| match a {
                    Align::Left => ":---",
                    Align::Right => "---:",
                })
                .collect();
            writeln!(w, "|{}|", rule.join("|"))?;
            for row in &t.rows {
                let cells: Vec<String> = row.iter().map(|c| cell(&c.plain, c.mark)).collect();
                writeln!(w, "| {} |", cells.join(" | "))?;
            }
            if !s.notes.is_empty() {
                writeln!(w)?;
            }
        }
        for n in &s.notes {
            writeln!(w, "{n}")?;
            writeln!(w)?;
        }
    }
    Ok(())
}
