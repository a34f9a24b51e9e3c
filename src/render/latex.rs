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

#[cfg(test)]
mod tests {
    use crate::render::doc::{inspect_doc, vet_doc, Sublevels, SAFETY_TEXT};
    use crate::report::sample;

    fn vet_latex() -> String {
        let mut b = Vec::new();
        super::write(&vet_doc(&sample::vet_report(), Sublevels::Grouped), &mut b).unwrap();
        String::from_utf8(b).unwrap()
    }

    #[test]
    fn title_and_notes_are_escaped() {
        let t = vet_latex();
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(
            lines[0],
            "% Leakage report: Test \\& scheme\\_1 at 50\\% \\#2 -- requires \\usepackage{booktabs}"
        );
        assert!(lines.contains(&"field probe, \"A\": peak intensity 1.000 W/cm\\^{}2\\par"));
        assert!(lines.contains(&"\\paragraph{Caution}"));
        let caution = lines
            .iter()
            .position(|l| *l == "\\paragraph{Caution}")
            .unwrap();
        assert_eq!(lines[caution + 3], format!("{SAFETY_TEXT}\\par"));
    }

    #[test]
    fn tables_are_booktabs_with_bold_leaks_and_typeset_powers() {
        let t = vet_latex();
        assert_eq!(t.matches("\\begin{table}[htbp]").count(), 3);
        assert_eq!(t.matches("\\end{table}").count(), 3);
        assert_eq!(
            t.matches("\\toprule").count(),
            t.matches("\\bottomrule").count()
        );
        assert!(t.contains(
            "  \\caption{Populations at the end of the window}\n  \\begin{tabular}{llrrrlrrl}\n    \\toprule\n    level & role & final & peak & estimate & order & final/est & tolerance & status \\\\\n    \\midrule\n"
        ));
        assert!(t.contains(
            "    s & spectator & \\textbf{0.0020} & 0.0030 & 0.0015 & 2nd & 1.33 & 0.0010 & \\textbf{LEAK} \\\\\n"
        ));
        assert!(t.contains(
            "    kick & g - s & +2.000~THz & 1.000~MHz & $1.00\\times10^{-14}$ & +0.1250~Hz \\\\\n"
        ));
        // An absent number is an en dash, not a hyphen.
        assert!(t.contains("    g & initial & 0.5000 & 1.0000 & -- &"));
    }

    #[test]
    fn inspect_typesets_units_in_math_mode() {
        let mut b = Vec::new();
        super::write(
            &inspect_doc(&sample::inspect_report(), Sublevels::Grouped),
            &mut b,
        )
        .unwrap();
        let t = String::from_utf8(b).unwrap();
        assert!(
            t.contains(
                "    e &  & 12808.8000~cm$^{-1}$ & 384.0~THz & 26.00~ns & target & -- \\\\\n"
            ),
            "{t}"
        );
        assert!(t.contains(" & 1.000~W/cm$^2$ & "), "{t}");
        assert!(t.ends_with(&format!("{SAFETY_TEXT}\\par\n")), "{t}");
    }

    #[test]
    fn grouped_sublevels_are_one_row_each_f_level() {
        let r = sample::vet_report_with_sublevels();
        let render = |mode| {
            let mut b = Vec::new();
            super::write(&vet_doc(&r, mode), &mut b).unwrap();
            String::from_utf8(b).unwrap()
        };
        let t = render(Sublevels::Grouped);
        assert!(t.contains("  \\begin{tabular}{llrlrrlrrl}\n"), "{t}");
        assert!(t.contains(
            "    P\\_F1 (3 sublevels) & spectator & \\textbf{0.0026} & P\\_F1\\_m0 0.0020 & -- & 0.0045 & 2nd & -- & 0.0010 & \\textbf{LEAK (1 of 3)} \\\\\n"
        ), "{t}");
        assert!(t.contains(
            "    P\\_F0\\_m0 & spectator & $3.00\\times10^{-4}$ & -- & $6.00\\times10^{-4}$ & 0.0015 & 2nd & 0.200 & 0.0010 & ok \\\\\n"
        ));
        let each = render(Sublevels::Each);
        assert!(each.contains(
            "    P\\_F1\\_m-1 & spectator & $1.00\\times10^{-4}$ & $2.00\\times10^{-4}$ & 0.0015 & 2nd & 0.0667 & 0.0010 & ok \\\\\n"
        ), "{each}");
        assert!(!each.contains("sublevels)"));
    }

    #[test]
    fn inspect_sublevel_energies_from_the_centre() {
        let mut b = Vec::new();
        let r = sample::inspect_report_with_sublevels();
        super::write(&inspect_doc(&r, Sublevels::Grouped), &mut b).unwrap();
        let t = String::from_utf8(b).unwrap();
        assert!(t.contains(
            "    S\\_F1 (3 sublevels) & ground & -- & +2562.006 to +2564.006~MHz from S centre & -- & initial & 1.0000 & S\\_F1\\_m0 0.5000 \\\\\n"
        ), "{t}");
        assert!(t.contains(
            "    S\\_F0\\_m0 & ground & -- & $-$4271.677~MHz from S centre & -- & spectator & -- & -- \\\\\n"
        ), "{t}");
    }
}
