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
    use crate::render::doc::{
        inspect_doc, vet_doc, Align, Cell, Doc, Section, Sublevels, Table, SAFETY_TEXT,
    };
    use crate::report::sample;

    fn markdown(doc: &Doc) -> String {
        let mut b = Vec::new();
        super::write(doc, &mut b).unwrap();
        String::from_utf8(b).unwrap()
    }

    // Same shape as text.rs's vet test: each format checks its own bytes.
    #[test]
    fn vet_is_a_heading_a_list_and_pipe_tables() {
        let t = markdown(&vet_doc(&sample::vet_report(), Sublevels::Grouped));
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

    #[test]
    fn vet_groups_sublevels_and_expands_them_when_asked() {
        let r = sample::vet_report_with_sublevels();
        let t = markdown(&vet_doc(&r, Sublevels::Grouped));
        assert!(t.contains(
            "| level | role | final | largest sublevel | peak | estimate | order | final/est | tolerance | status |\n\
             |:---|:---|---:|:---|---:|---:|:---|---:|---:|:---|\n\
             | g | initial | 0.5000 | - | 1.0000 | - | - | - | - |  |\n\
             | P_F1 (3 sublevels) | spectator | **0.0026** | P_F1_m0 0.0020 | - | 0.0045 | 2nd | - | 0.0010 | **LEAK (1 of 3)** |\n\
             | P_F0_m0 | spectator | 3.00e-4 | - | 6.00e-4 | 0.0015 | 2nd | 0.200 | 0.0010 | ok |\n"
        ), "{t}");
        let each = markdown(&vet_doc(&r, Sublevels::Each));
        assert!(each.contains(
            "| P_F1_m0 | spectator | **0.0020** | 0.0040 | 0.0015 | 2nd | 1.33 | 0.0010 | **LEAK** |\n"
        ));
        assert!(!each.contains("largest sublevel") && !each.contains("(3 sublevels)"));
    }

    #[test]
    fn inspect_groups_sublevels_with_energies_from_the_centre() {
        let r = sample::inspect_report_with_sublevels();
        let t = markdown(&inspect_doc(&r, Sublevels::Grouped));
        assert!(t.contains(
            "| S_F1 (3 sublevels) | ground | - | +2562.006 to +2564.006 MHz from S centre | - | initial | 1.0000 | S_F1_m0 0.5000 |\n"
        ), "{t}");
        let each = markdown(&inspect_doc(&r, Sublevels::Each));
        assert!(
            each.contains(
                "| S_F1_m-1 | ground | - | +2562.006 MHz from S centre | - | initial | 0.2000 |\n"
            ),
            "{each}"
        );
    }
}
