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

#[cfg(test)]
mod tests {
    use crate::render::doc::{vet_doc, Align, Cell, Doc, Section, Table, SAFETY_TEXT};
    use crate::report::sample;

    fn markdown(doc: &Doc) -> String {
        let mut b = Vec::new();
        super::write(doc, &mut b).unwrap();
        String::from_utf8(b).unwrap()
    }

    // Same shape as text.rs's vet test: each format checks its own bytes.
    #[test]
    fn vet_is_a_heading_a_list_and_pipe_tables() {
        let t = markdown(&vet_doc(&sample::vet_report()));
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines[0], "### Leakage report: Test & scheme_1 at 50% #2");
        assert_eq!(lines[2], "- tool: levelplan 0.1.0");
        let head = lines
            .iter()
            .position(|l| *l == "#### Populations at the end of the window")
            .unwrap();
        assert_eq!(
            &lines[head + 2..head + 5],
            [
                "| level | role | final | peak | estimate | order | final/est | tolerance | status |",
                "|:---|:---|---:|---:|---:|:---|---:|---:|:---|",
                "| g | initial | 0.5000 | 1.0000 | - | - | - | - |  |",
            ]
        );
        assert!(lines.contains(
            &"| s | spectator | **0.0020** | 0.0030 | 0.0015 | 2nd | 1.33 | 0.0010 | **LEAK** |"
        ));
        assert!(lines.contains(&"#### Caution"));
        assert!(lines.contains(&SAFETY_TEXT));
    }

    #[test]
    fn pipes_in_cells_and_metadata_are_escaped() {
        let doc = Doc {
            title: "t".into(),
            meta: vec![("scheme".into(), "a|b.yaml".into())],
            sections: vec![Section {
                heading: "S".into(),
                table: Some(Table {
                    headers: vec!["x".into()],
                    align: vec![Align::Right],
                    rows: vec![vec![Cell::text("p|q")]],
                }),
                notes: vec![],
            }],
        };
        let t = markdown(&doc);
        assert!(t.contains("- scheme: a\\|b.yaml\n"), "{t}");
        assert!(t.contains("|---:|\n| p\\|q |\n"), "{t}");
    }
}
