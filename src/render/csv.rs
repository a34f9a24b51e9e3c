//! CSV rendering: one row per level (vet) or per drive (inspect), numbers in
//! full precision with the unit in the column name, provenance in leading
//! `#` comment lines.
//!
//! Owns: the CSV spelling of the reports. Must not: compute physics beyond
//! the unit change named in each header.

use crate::report::{InspectReport, Provenance, VetReport};
use crate::solve::MethodUsed;
use std::io::{self, Write};

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

fn opt(x: Option<f64>) -> String {
    x.map_or_else(String::new, |v| format!("{v:e}"))
}

fn comment(p: &Provenance, w: &mut dyn Write) -> io::Result<()> {
    writeln!(
        w,
        "# {} {}; scheme {} sha256 {}",
        p.tool, p.version, p.scheme_file, p.scheme_sha256
    )
}

fn writer(w: &mut dyn Write) -> csv::Writer<&mut dyn Write> {
    csv::WriterBuilder::new().from_writer(w)
}

fn csv_err(e: csv::Error) -> io::Error {
    io::Error::other(e)
}

/// The vet report as CSV.
pub fn vet(r: &VetReport, w: &mut dyn Write) -> io::Result<()> {
    comment(&r.provenance, w)?;
    writeln!(
        w,
        "# method {}; rtol {:e}; atol {:e}; tolerance {:e}; lost {:e}; norm_error {:e}",
        match r.solver.method {
            MethodUsed::Exact => "exact",
            MethodUsed::Adaptive => "adaptive",
        },
        r.solver.rtol,
        r.solver.atol,
        r.tolerance,
        r.lost_population,
        r.norm_error
    )?;
    let mut c = writer(w);
    c.write_record([
        "level",
        "role",
        "final_population",
        "peak_population",
        "estimate",
        "estimate_order",
        "final_over_estimate",
        "tolerance",
        "flagged",
        "estimate_unreliable",
        "main_field",
        "main_from",
        "main_detuning_mhz",
        "main_rabi_mhz",
        "main_population",
    ])
    .map_err(csv_err)?;
    for l in &r.levels {
        let s = l.sources.first();
        c.write_record([
            l.id.clone(),
            l.role.as_str().to_string(),
            format!("{:e}", l.final_population),
            format!("{:e}", l.peak_population),
            opt(l.estimate()),
            format!("{:?}", l.order).to_lowercase(),
            opt(l.ratio),
            format!("{:e}", l.tolerance),
            l.flagged.to_string(),
            l.unreliable.to_string(),
            s.map_or_else(String::new, |s| s.field.clone()),
            s.map_or_else(String::new, |s| s.from.clone()),
            opt(s.map(|s| s.detuning / TWO_PI / 1e6)),
            opt(s.map(|s| s.rabi / TWO_PI / 1e6)),
            opt(s.map(|s| s.population)),
        ])
        .map_err(csv_err)?;
    }
    c.flush()
}

/// The inspect report as CSV (one row per drive).
pub fn inspect(r: &InspectReport, w: &mut dyn Write) -> io::Result<()> {
    comment(&r.provenance, w)?;
    let mut c = writer(w);
    c.write_record([
        "field",
        "lower",
        "upper",
        "transition_hz",
        "wavelength_nm",
        "detuning_mhz",
        "rabi_mhz",
        "pulse_area_rad",
        "included",
    ])
    .map_err(csv_err)?;
    for d in &r.drives {
        c.write_record([
            d.field.clone(),
            d.lower.clone(),
            d.upper.clone(),
            format!("{:e}", d.transition_hz),
            opt(d.wavelength.map(|x| x * 1e9)),
            format!("{:e}", d.detuning_hz / 1e6),
            format!("{:e}", d.rabi_hz / 1e6),
            format!("{:e}", d.area),
            d.included.to_string(),
        ])
        .map_err(csv_err)?;
    }
    c.flush()
}

#[cfg(test)]
mod tests {
    use crate::report::sample;

    fn csv_text(vet: bool) -> String {
        let mut b = Vec::new();
        if vet {
            super::vet(&sample::vet_report(), &mut b).unwrap();
        } else {
            super::inspect(&sample::inspect_report(), &mut b).unwrap();
        }
        String::from_utf8(b).unwrap()
    }

    #[test]
    fn vet_states_provenance_then_one_row_per_level() {
        let t = csv_text(true);
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(
            lines[..3],
            [
                "# levelplan 0.1.0; scheme demo.yaml sha256 ab12cd34ef56ab12cd34ef56",
                "# method exact; rtol 1e-10; atol 1e-12; tolerance 1e-3; lost 5e-2; norm_error 1e-15",
                "level,role,final_population,peak_population,estimate,estimate_order,final_over_estimate,tolerance,flagged,estimate_unreliable,main_field,main_from,main_detuning_mhz,main_rabi_mhz,main_population",
            ]
        );
        assert_eq!(
            lines[3],
            "g,initial,5e-1,1e0,,initial,,1e-3,false,false,,,,,"
        );
        assert_eq!(
            lines[5],
            "s,spectator,2e-3,3e-3,1.5e-3,second,1.3333333333333333e0,1e-3,true,false,\"probe, \"\"A\"\"\",e,1.5e2,5e0,1.5e-3"
        );
        assert_eq!(
            lines[6],
            "d,spectator,1.8e-3,1.9e-3,1.6e-3,first,1.125e0,1e-3,true,false,\"probe, \"\"A\"\"\",g,-2e1,5e0,1.6e-3"
        );
        assert_eq!(lines.len(), 7);
    }

    #[test]
    fn a_csv_reader_gets_every_field_back() {
        let t = csv_text(true);
        let mut r = csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .from_reader(t.as_bytes());
        let rows: Vec<csv::StringRecord> = r.records().map(Result::unwrap).collect();
        assert_eq!(rows.len(), 4);
        assert!(rows.iter().all(|row| row.len() == 15));
        assert_eq!(&rows[1][10], "probe, \"A\"");
        assert_eq!(rows[1][12].parse::<f64>().unwrap(), -20.0);
    }

    #[test]
    fn inspect_has_one_row_per_drive_in_si_named_units() {
        let t = csv_text(false);
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(
            lines[1..],
            [
                "field,lower,upper,transition_hz,wavelength_nm,detuning_mhz,rabi_mhz,pulse_area_rad,included",
                "probe,g,e,3.84e14,7.807e2,-2e1,5e0,3.141592653589793e0,true",
            ]
        );
    }
}
