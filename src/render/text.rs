//! Plain-text rendering for the terminal: aligned columns, flags readable
//! without colour, ANSI colour only when asked (the CLI asks on a TTY).
//!
//! Owns: the terminal spelling of a [`Doc`]. Must not: compute or round numbers.

use super::doc::{Align, Doc, Mark, Table};
use std::io::{self, Write};

fn paint(s: &str, mark: Mark, color: bool) -> String {
    if !color {
        return s.to_string();
    }
    let code = match mark {
        Mark::None => return s.to_string(),
        Mark::Alert => "1;31",
        Mark::Caution => "33",
        Mark::Good => "32",
    };
    format!("\x1b[{code}m{s}\x1b[0m")
}

fn write_table(t: &Table, color: bool, w: &mut dyn Write) -> io::Result<()> {
    let n = t.headers.len();
    let mut width: Vec<usize> = t.headers.iter().map(|h| h.chars().count()).collect();
    for row in &t.rows {
        for (i, c) in row.iter().enumerate().take(n) {
            width[i] = width[i].max(c.plain.chars().count());
        }
    }
    let pad = |s: &str, i: usize| -> String {
        let fill = width[i].saturating_sub(s.chars().count());
        match t.align.get(i).copied().unwrap_or(Align::Left) {
            Align::Left => format!("{s}{}", " ".repeat(fill)),
            Align::Right => format!("{}{s}", " ".repeat(fill)),
        }
    };
    let header: Vec<String> = (0..n).map(|i| pad(&t.headers[i], i)).collect();
    writeln!(w, "  {}", header.join("  ").trim_end())?;
    let rule: Vec<String> = width.iter().map(|&k| "-".repeat(k)).collect();
    writeln!(w, "  {}", rule.join("  "))?;
    for row in &t.rows {
        let cells: Vec<String> = row
            .iter()
            .enumerate()
            .take(n)
            .map(|(i, c)| paint(&pad(&c.plain, i), c.mark, color))
            .collect();
        writeln!(w, "  {}", cells.join("  ").trim_end())?;
    }
    Ok(())
}

/// Render a document as aligned text.
pub fn write(doc: &Doc, color: bool, w: &mut dyn Write) -> io::Result<()> {
    writeln!(w, "{}", doc.title)?;
    let key_width = doc.meta.iter().map(|(k, _)| k.len()).max().unwrap_or(0);
    for (k, v) in &doc.meta {
        writeln!(w, "  {k:<key_width$}  {v}")?;
    }
    for s in &doc.sections {
        writeln!(w)?;
        if !s.heading.is_empty() {
            writeln!(w, "{}", s.heading)?;
        }
        if let Some(t) = &s.table {
            write_table(t, color, w)?;
        }
        for n in &s.notes {
            writeln!(w, "  {n}")?;
        }
    }
    Ok(())
}
