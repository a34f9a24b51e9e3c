//! LaTeX rendering: booktabs tables (\toprule, \midrule, \bottomrule) ready to
//! paste into a proposal; needs `\usepackage{booktabs}`.
//!
//! Owns: the LaTeX spelling of a [`Doc`]. Must not: compute or round numbers.

use super::doc::{latex_escape, Align, Doc, Mark};
use std::io::{self, Write};

/// Render a document as LaTeX fragments.
pub fn write(doc: &Doc, w: &mut dyn Write) -> io::Result<()> {
    writeln!(
        w,
        "% {} -- requires \\usepackage{{booktabs}}",
        latex_escape(&doc.title)
    )?;
    for (k, v) in &doc.meta {
        writeln!(w, "% {k}: {v}")?;
    }
    for s in &doc.sections {
        writeln!(w)?;
        if let Some(t) = &s.table {
            let spec: String = t
                .align
                .iter()
                .map(|a| match a {
                    Align::Left => 'l',
                    Align::Right => 'r',
                })
                .collect();
            writeln!(w, "\\begin{{table}}[htbp]")?;
            writeln!(w, "  \\centering")?;
            writeln!(w, "  \\caption{{{}}}", latex_escape(&s.heading))?;
            writeln!(w, "  \\begin{{tabular}}{{{spec}}}")?;
            writeln!(w, "    \\toprule")?;
            let head: Vec<String> = t.headers.iter().map(|h| latex_escape(h)).collect();
            writeln!(w, "    {} \\\\", head.join(" & "))?;
            writeln!(w, "    \\midrule")?;
            for row in &t.rows {
                let cells: Vec<String> = row
                    .iter()
                    .map(|c| match c.mark {
                        Mark::Alert => format!("\\textbf{{{}}}", c.latex),
                        _ => c.latex.clone(),
                    })
                    .collect();
                writeln!(w, "    {} \\\\", cells.join(" & "))?;
            }
            writeln!(w, "    \\bottomrule")?;
            writeln!(w, "  \\end{{tabular}}")?;
            writeln!(w, "\\end{{table}}")?;
            for n in &s.notes {
                writeln!(w, "% {}", n)?;
            }
        } else {
            if !s.heading.is_empty() {
                writeln!(w, "\\paragraph{{{}}}", latex_escape(&s.heading))?;
            }
            for n in &s.notes {
                writeln!(w, "{}\\par", latex_escape(n))?;
            }
        }
    }
    Ok(())
}
