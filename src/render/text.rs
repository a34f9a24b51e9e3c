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

#[cfg(test)]
mod tests {
    use crate::render::doc::{inspect_doc, vet_doc, Sublevels, SAFETY_TEXT};
    use crate::report::sample;

    fn vet_text(color: bool) -> String {
        let mut b = Vec::new();
        super::write(
            &vet_doc(&sample::vet_report(), Sublevels::Grouped),
            color,
            &mut b,
        )
        .unwrap();
        String::from_utf8(b).unwrap()
    }

    // Same shape as markdown.rs's vet test: each format checks its own bytes.
    #[test]
    fn vet_table_is_aligned_and_flags_read_without_colour() {
        let t = vet_text(false);
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines[0], "Leakage report: Test & scheme_1 at 50% #2");
        assert!(lines.contains(&"  scheme               demo.yaml (sha256 ab12cd34ef56)"));
        let head = lines
            .iter()
            .position(|l| *l == "Populations at the end of the window")
            .unwrap();
        assert_eq!(
            &lines[head + 1..head + 6],
            [
                "  level  role        final    peak  estimate  order  final/est  tolerance  status",
                "  -----  ---------  ------  ------  --------  -----  ---------  ---------  ------",
                "  g      initial    0.5000  1.0000         -  -              -          -",
                "  e      target     0.4500  0.6000    0.5000  1st        0.900          -",
                "  s      spectator  0.0020  0.0030    0.0015  2nd         1.33     0.0010  LEAK",
            ]
        );
        assert!(
            lines.contains(&"  s      probe, \"A\"  e     +150.0 MHz   5.000 MHz    0.0015  yes")
        );
        assert!(!t.contains('\x1b'), "no escape codes without colour");
    }

    #[test]
    fn vet_ends_with_the_laser_safety_caution() {
        let t = vet_text(false);
        let caution = t.split("\nCaution\n").nth(1).expect("a Caution section");
        let lines: Vec<&str> = caution.lines().collect();
        assert_eq!(
            lines[0],
            "  field probe, \"A\": peak intensity 1.000 W/cm^2"
        );
        assert_eq!(
            lines[1],
            "  field kick: intensity not known (set by Rabi frequency or area on a relative dipole)"
        );
        assert_eq!(lines[2], format!("  {SAFETY_TEXT}"));
    }

    #[test]
    fn colour_marks_the_leak_only_when_asked() {
        let t = vet_text(true);
        let row = t
            .lines()
            .find(|l| l.starts_with("  s      spectator"))
            .unwrap();
        assert!(row.contains("\x1b[1;31m0.0020\x1b[0m"), "{row:?}");
        assert!(row.ends_with("\x1b[1;31mLEAK  \x1b[0m"), "{row:?}");
    }

    #[test]
    fn inspect_lists_levels_and_drives() {
        let mut b = Vec::new();
        super::write(
            &inspect_doc(&sample::inspect_report(), Sublevels::Grouped),
            false,
            &mut b,
        )
        .unwrap();
        let t = String::from_utf8(b).unwrap();
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines[0], "Scheme");
        assert!(lines
            .contains(&"  e              12808.8000 cm^-1  384.0 THz  26.00 ns  target         -"));
        assert!(lines.contains(
            &"  probe  g - e       384.0 THz  780.7000 nm  -20.00 MHz   5.000 MHz  1.000 pi  yes"
        ));
        assert_eq!(
            lines.last().copied(),
            Some(format!("  {SAFETY_TEXT}").as_str())
        );
    }

    fn squashed(t: &str) -> Vec<String> {
        t.lines()
            .map(|l| l.split_whitespace().collect::<Vec<_>>().join(" "))
            .collect()
    }

    fn text_of(doc: &crate::render::doc::Doc, color: bool) -> String {
        let mut b = Vec::new();
        super::write(doc, color, &mut b).unwrap();
        String::from_utf8(b).unwrap()
    }

    #[test]
    fn vet_groups_sublevels_by_manifold_and_f() {
        let r = sample::vet_report_with_sublevels();
        let t = text_of(&vet_doc(&r, Sublevels::Grouped), false);
        let lines = squashed(&t);
        let head = lines
            .iter()
            .position(|l| l == "Populations at the end of the window")
            .unwrap();
        assert_eq!(
            &lines[head + 1..head + 6],
            [
                "level role final largest sublevel peak estimate order final/est tolerance status",
                "------------------ --------- ------- ---------------- ------- -------- ----- --------- --------- -------------",
                "g initial 0.5000 - 1.0000 - - - -",
                "P_F1 (3 sublevels) spectator 0.0026 P_F1_m0 0.0020 - 0.0045 2nd - 0.0010 LEAK (1 of 3)",
                "P_F0_m0 spectator 3.00e-4 - 6.00e-4 0.0015 2nd 0.200 0.0010 ok",
            ]
        );
        assert!(lines[head + 6].starts_with("final and peak"), "three rows");
        assert!(t.contains("grouped rows (P_F1 (3 sublevels), ...): final and estimate summed"));
        assert!(
            lines
                .iter()
                .any(|l| l.starts_with("P_F1_m0 probe, \"A\" e")),
            "the leak table keeps the sublevel"
        );
        let c = text_of(&vet_doc(&r, Sublevels::Grouped), true);
        let row = c.lines().find(|l| l.contains("(3 sublevels)")).unwrap();
        assert!(row.contains("\x1b[1;31m 0.0026\x1b[0m"), "{row:?}");
        assert!(row.contains("\x1b[1;31mLEAK (1 of 3)\x1b[0m"), "{row:?}");
    }

    #[test]
    fn vet_shows_each_sublevel_when_asked() {
        let r = sample::vet_report_with_sublevels();
        let t = text_of(&vet_doc(&r, Sublevels::Each), false);
        let lines = squashed(&t);
        let head = lines
            .iter()
            .position(|l| l == "Populations at the end of the window")
            .unwrap();
        assert_eq!(
            lines[head + 1],
            "level role final peak estimate order final/est tolerance status"
        );
        assert_eq!(
            &lines[head + 4..head + 7],
            [
                "P_F1_m-1 spectator 1.00e-4 2.00e-4 0.0015 2nd 0.0667 0.0010 ok",
                "P_F1_m0 spectator 0.0020 0.0040 0.0015 2nd 1.33 0.0010 LEAK",
                "P_F1_m+1 spectator 5.00e-4 0.0010 0.0015 2nd 0.333 0.0010 ok",
            ]
        );
        assert!(!t.contains("sublevels)"), "no group row, no group note");
    }

    #[test]
    fn inspect_gives_generated_energies_from_the_manifold_centre() {
        let r = sample::inspect_report_with_sublevels();
        let lines = squashed(&text_of(&inspect_doc(&r, Sublevels::Grouped), false));
        let at = |heading: &str| lines.iter().position(|l| l == heading).unwrap();
        let m = at("Manifolds (centres of gravity)");
        assert_eq!(lines[m + 1], "manifold J energy energy/h levels");
        assert_eq!(lines[m + 3], "S 1/2 0.0333564095 cm^-1 1.000 GHz 4");
        let l = at("Levels");
        assert_eq!(
            &lines[l + 1..l + 6],
            [
                "level label energy energy/h lifetime role initial largest sublevel",
                "------------------ ------ ---------------- ---------------------------------------- -------- --------- ------- ----------------",
                "aux 12808.8000 cm^-1 384.0 THz 26.00 ns spectator - -",
                "S_F1 (3 sublevels) ground - +2562.006 to +2564.006 MHz from S centre - initial 1.0000 S_F1_m0 0.5000",
                "S_F0_m0 ground - -4271.677 MHz from S centre - spectator - -",
            ]
        );
        let each = squashed(&text_of(&inspect_doc(&r, Sublevels::Each), false));
        assert!(
            each.contains(&"S_F1_m0 ground - +2563.006 MHz from S centre - initial 0.5000".into())
        );
        assert!(!each.iter().any(|l| l.contains("largest sublevel")));
    }
}
