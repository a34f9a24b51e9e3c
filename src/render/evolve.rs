//! The bytes of `evolve`: the CSV of populations against time and the spec
//! of its SVG plot.
//!
//! Owns: the CSV's comment line, header and number spelling (full precision,
//! `{:e}`), the time axis unit of the plot. Must not: propagate or write files.

use crate::pipeline::Evolution;
use crate::plot::{self, Curve, LinePlot, PlotError};
use crate::report::Provenance;

/// The CSV: a `#` line (tool, scheme, SHA-256, method, tolerances), the
/// header `time_s,<level ids>`, one row per sample. A scheme that uses the
/// open-system keys adds two columns after the levels: `lost` and
/// `scattered_photons` (cumulative from the window start); any other
/// scheme's CSV is the version-1 file, byte for byte.
pub fn csv(prov: &Provenance, level_ids: &[String], evo: &Evolution) -> String {
    let mut csv = format!(
        "# {} {}; scheme {} sha256 {}; method {:?}; rtol {:e}; atol {:e}\n",
        prov.tool,
        prov.version,
        prov.scheme_file,
        prov.scheme_sha256,
        evo.method,
        evo.rtol,
        evo.atol
    );
    csv.push_str("time_s");
    for id in level_ids {
        csv.push(',');
        csv.push_str(id);
    }
    if evo.open.is_some() {
        csv.push_str(",lost,scattered_photons");
    }
    csv.push('\n');
    for (i, (t, pops)) in evo.samples.iter().enumerate() {
        csv.push_str(&format!("{t:e}"));
        for p in pops {
            csv.push_str(&format!(",{p:e}"));
        }
        if let Some((lost, photons)) = evo.open.as_ref().and_then(|o| o.get(i)) {
            csv.push_str(&format!(",{lost:e},{photons:e}"));
        }
        csv.push('\n');
    }
    csv
}

/// What the plot of an evolution shows besides the samples.
#[derive(Debug, Clone, PartialEq)]
pub struct EvolvePlot<'a> {
    pub title: Option<&'a str>,
    pub level_ids: &'a [String],
    /// The window (s), for the unit of the time axis.
    pub window: (f64, f64),
    pub tolerance: f64,
    pub log: bool,
}

/// The SVG of populations against time, the tolerance as a dashed line.
pub fn svg(spec: &EvolvePlot, evo: &Evolution) -> Result<String, PlotError> {
    let curves = spec
        .level_ids
        .iter()
        .enumerate()
        .map(|(k, id)| Curve {
            name: id.clone(),
            points: evo.samples.iter().map(|(t, p)| (*t, p[k])).collect(),
            dashed: false,
            color: k,
        })
        .collect();
    let (scale, unit) = time_axis(spec.window.1.abs().max(spec.window.0.abs()));
    plot::line_svg(&LinePlot {
        title: spec.title.unwrap_or("Populations").to_string(),
        x_label: format!("time ({unit})"),
        x_scale: scale,
        log_x: false,
        y_label: "population".into(),
        curves,
        log_y: spec.log,
        log_floor: 1e-12,
        tolerance: Some(spec.tolerance),
    })
}

/// Scale and unit of a time axis reaching `t` seconds.
fn time_axis(t: f64) -> (f64, &'static str) {
    if t >= 1.0 {
        (1.0, "s")
    } else if t >= 1e-3 {
        (1e3, "ms")
    } else if t >= 1e-6 {
        (1e6, "us")
    } else if t >= 1e-9 {
        (1e9, "ns")
    } else {
        (1e12, "ps")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::MethodUsed;

    fn evolution() -> Evolution {
        Evolution {
            samples: vec![(0.0, vec![1.0, 0.0]), (1e-6, vec![0.25, 0.75])],
            open: None,
            method: MethodUsed::Exact,
            rtol: 1e-10,
            atol: 1e-12,
        }
    }

    #[test]
    fn csv_has_provenance_header_and_full_precision_rows() {
        let prov = Provenance::new("two.yaml", "abc");
        let ids = vec!["g".to_string(), "e".to_string()];
        let text = csv(&prov, &ids, &evolution());
        let lines: Vec<&str> = text.lines().collect();
        assert!(lines[0].starts_with("# levelplan "), "{}", lines[0]);
        assert!(lines[0]
            .ends_with("; scheme two.yaml sha256 abc; method Exact; rtol 1e-10; atol 1e-12"));
        assert_eq!(lines[1], "time_s,g,e");
        assert_eq!(lines[2], "0e0,1e0,0e0");
        assert_eq!(lines[3], "1e-6,2.5e-1,7.5e-1");
        assert_eq!(lines.len(), 4);
    }

    #[test]
    fn csv_of_an_open_scheme_adds_lost_and_scattered_photons() {
        let prov = Provenance::new("open.yaml", "abc");
        let ids = vec!["g".to_string(), "e".to_string()];
        let mut evo = evolution();
        evo.samples[1].1 = vec![0.25, 0.5];
        evo.open = Some(vec![(0.0, 0.0), (0.25, 1.5)]);
        let text = csv(&prov, &ids, &evo);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[1], "time_s,g,e,lost,scattered_photons");
        assert_eq!(lines[2], "0e0,1e0,0e0,0e0,0e0");
        assert_eq!(lines[3], "1e-6,2.5e-1,5e-1,2.5e-1,1.5e0");
        assert_eq!(lines.len(), 4);
    }

    #[test]
    fn time_axis_picks_the_largest_fitting_unit() {
        assert_eq!(time_axis(2.0), (1.0, "s"));
        assert_eq!(time_axis(5e-6), (1e6, "us"));
        assert_eq!(time_axis(1e-13), (1e12, "ps"));
    }
}
