//! Orchestration of the commands: load the scheme, run the stages in order,
//! hand the report to a renderer, and write the bytes to stdout or a file.
//!
//! Owns: the order of the stages and all file and stdout IO of the library.
//! Must not: parse command-line arguments (the CLI does), compute physics
//! (the stages do), or format numbers (the renderers do).

use crate::error::{Error, EXIT_OK, EXIT_TOLERANCE};
use crate::estimate;
use crate::model::{Envelope, Model};
use crate::output::write_atomic;
use crate::plot::{self, Curve, LinePlot};
use crate::render::{self, Format};
use crate::report::{self, Provenance, VetReport};
use crate::scheme;
use crate::solve::{self, Solution, SolveOptions};
use std::io::Write;
use std::path::{Path, PathBuf};

pub mod scan;

/// Largest accepted norm error |1 - sum P - lost| of a propagation; above it
/// a run fails instead of reporting.
pub const NORM_ERROR_LIMIT: f64 = 1e-6;

/// Where a command's main output goes.
#[derive(Debug, Clone, PartialEq)]
pub enum Sink {
    Stdout { color: bool },
    File(PathBuf),
}

fn emit(sink: &Sink, bytes: &[u8]) -> Result<(), Error> {
    match sink {
        Sink::Stdout { .. } => {
            let mut out = std::io::stdout().lock();
            out.write_all(bytes)
                .and_then(|_| out.flush())
                .map_err(|source| Error::Output {
                    path: PathBuf::from("<stdout>"),
                    source,
                })
        }
        Sink::File(p) => write_atomic(p, bytes),
    }
}

fn color(sink: &Sink) -> bool {
    matches!(sink, Sink::Stdout { color: true })
}

fn load(path: &Path) -> Result<(Model, Provenance), Error> {
    let (model, source) = scheme::load(path)?;
    Ok((model, Provenance::new(&source.path, &source.sha256)))
}

fn render_to_vec(f: impl FnOnce(&mut Vec<u8>) -> std::io::Result<()>) -> Result<Vec<u8>, Error> {
    let mut buf = Vec::new();
    f(&mut buf).map_err(|source| Error::Output {
        path: PathBuf::from("<buffer>"),
        source,
    })?;
    Ok(buf)
}

/// `inspect`: the dry run.
pub fn inspect(scheme_path: &Path, format: Format, sink: &Sink) -> Result<i32, Error> {
    let (model, prov) = load(scheme_path)?;
    let report = report::inspect(&model, prov);
    let exporter = render::exporter(format, color(sink));
    let bytes = render_to_vec(|w| exporter.inspect(&report, w))?;
    emit(sink, &bytes)?;
    Ok(EXIT_OK)
}

/// Check a propagation before anything is reported from it.
pub fn check_solution(sol: &Solution) -> Result<(), Error> {
    let finite = sol
        .final_populations
        .iter()
        .chain(&sol.peak_populations)
        .chain([&sol.lost, &sol.norm_error])
        .all(|x| x.is_finite());
    if !finite {
        return Err(Error::NonFinite {
            stage: "propagation".into(),
        });
    }
    if sol.norm_error > NORM_ERROR_LIMIT {
        return Err(Error::NormError {
            norm_error: sol.norm_error,
            limit: NORM_ERROR_LIMIT,
        });
    }
    Ok(())
}

/// Run both solvers on a model and assemble the vet report.
pub fn vet_model(
    model: &Model,
    prov: Provenance,
    tolerance: Option<f64>,
) -> Result<VetReport, Error> {
    let sol = solve::solve(model, &SolveOptions::default())?;
    check_solution(&sol)?;
    let est = estimate::estimate(model)?;
    let rep = report::vet(model, prov, &sol, &est, tolerance)?;
    if let Some(stage) = rep.first_non_finite() {
        return Err(Error::NonFinite { stage });
    }
    Ok(rep)
}

/// Check every remedy of the report by exact propagation of the changed
/// scheme (the estimator's numbers are first order; these are not). Run by
/// `vet` only: a scan point does not need remedies checked.
fn check_remedies(model: &Model, rep: &mut VetReport) -> Result<(), Error> {
    for (k, row) in rep.levels.iter_mut().enumerate() {
        let Some(rm) = row.remedy.as_mut() else {
            continue;
        };
        let Some(f) = model.fields.iter().position(|f| f.id == rm.field) else {
            continue;
        };
        let env = &model.fields[f].envelope;
        let center = env.center();
        let run = |m: Model| -> Result<f64, Error> {
            let sol = solve::solve(&m, &SolveOptions::default())?;
            check_solution(&sol)?;
            Ok(sol.final_populations[k])
        };
        let sigma = crate::model::gaussian_sigma_from_intensity_fwhm(rm.fwhm);
        rm.exact_gaussian = Some(run(model.with_field_envelope(
            f,
            Envelope::Gaussian { center, sigma },
            1.0,
        ))?);
        if let Some(frac) = estimate::intensity_fwhm(&Envelope::Blackman {
            start: 0.0,
            duration: 1.0,
        }) {
            let duration = rm.fwhm / frac;
            rm.exact_blackman = Some(run(model.with_field_envelope(
                f,
                Envelope::Blackman {
                    start: center - 0.5 * duration,
                    duration,
                },
                1.0,
            ))?);
        }
        if let Some(len) = rm.length_for_tolerance {
            let s = len / rm.present_length;
            if s.is_finite() && s > 0.0 {
                rm.exact_at_length = Some(run(model.with_field_envelope(
                    f,
                    env.stretched(s),
                    1.0 / s,
                ))?);
            }
        }
    }
    Ok(())
}

/// Refuse a `--tolerance` outside (0, 1].
pub fn check_tolerance(tolerance: Option<f64>) -> Result<(), Error> {
    match tolerance {
        Some(t) if !(t.is_finite() && t > 0.0 && t <= 1.0) => Err(Error::BadArgument {
            what: "--tolerance".into(),
            message: format!("expected a population in (0, 1], found {t}"),
        }),
        _ => Ok(()),
    }
}

/// `vet`: the main job. Returns 0 when every spectator is within tolerance, 3 otherwise.
pub fn vet(
    scheme_path: &Path,
    tolerance: Option<f64>,
    goal: Option<f64>,
    format: Format,
    sink: &Sink,
) -> Result<i32, Error> {
    check_tolerance(tolerance)?;
    if let Some(g) = goal {
        if !(g.is_finite() && g > 0.0 && g <= 1.0) {
            return Err(Error::BadArgument {
                what: "--goal".into(),
                message: format!("expected a population in (0, 1], found {g}"),
            });
        }
    }
    let (model, prov) = load(scheme_path)?;
    let mut rep = vet_model(&model, prov, tolerance)?;
    check_remedies(&model, &mut rep)?;
    if let Some(g) = goal {
        report::judge_targets(&mut rep, g);
    }
    if let Some(stage) = rep.first_non_finite() {
        return Err(Error::NonFinite { stage });
    }
    let exporter = render::exporter(format, color(sink));
    let bytes = render_to_vec(|w| exporter.vet(&rep, w))?;
    emit(sink, &bytes)?;
    Ok(if rep.flagged > 0 || rep.targets_short > 0 {
        EXIT_TOLERANCE
    } else {
        EXIT_OK
    })
}

/// Largest number of samples `evolve` accepts.
pub const MAX_SAMPLES: usize = 1_000_000;

/// Largest number of population values (samples x levels) `evolve` writes:
/// a CSV of at most about 250 MB, held in memory once as numbers and once as
/// text.
pub const MAX_EVOLVE_VALUES: usize = 10_000_000;

/// Largest number of points (samples x levels) `evolve --plot` draws: an SVG
/// of about 8 MB per million points.
pub const MAX_PLOT_POINTS: usize = 1_000_000;

/// Options of `evolve`.
#[derive(Debug, Clone, PartialEq)]
pub struct EvolveOptions {
    pub samples: usize,
    pub csv: Sink,
    pub plot: Option<PathBuf>,
    pub log: bool,
}

/// `evolve`: populations of every level against time.
pub fn evolve(scheme_path: &Path, opts: &EvolveOptions) -> Result<i32, Error> {
    if opts.samples < 2 || opts.samples > MAX_SAMPLES {
        return Err(Error::BadArgument {
            what: "--samples".into(),
            message: format!(
                "expected 2 to {MAX_SAMPLES} samples, found {}",
                opts.samples
            ),
        });
    }
    let (model, prov) = load(scheme_path)?;
    let values = opts.samples.saturating_mul(model.levels.len());
    if values > MAX_EVOLVE_VALUES {
        return Err(Error::BadArgument {
            what: "--samples".into(),
            message: format!(
                "{} samples x {} levels = {values} population values, more than the limit of \
                 {MAX_EVOLVE_VALUES}; use at most {} samples for this scheme",
                opts.samples,
                model.levels.len(),
                MAX_EVOLVE_VALUES / model.levels.len().max(1)
            ),
        });
    }
    if opts.plot.is_some() && values > MAX_PLOT_POINTS {
        return Err(Error::BadArgument {
            what: "--plot".into(),
            message: format!(
                "{} samples x {} levels = {values} points, more than the plot limit of \
                 {MAX_PLOT_POINTS}; use at most {} samples with --plot",
                opts.samples,
                model.levels.len(),
                MAX_PLOT_POINTS / model.levels.len().max(1)
            ),
        });
    }
    let sol = solve::solve(
        &model,
        &SolveOptions {
            samples: opts.samples,
            ..SolveOptions::default()
        },
    )?;
    check_solution(&sol)?;
    let mut csv = format!(
        "# {} {}; scheme {} sha256 {}; method {:?}; rtol {:e}; atol {:e}\n",
        prov.tool,
        prov.version,
        prov.scheme_file,
        prov.scheme_sha256,
        sol.method,
        sol.rtol,
        sol.atol
    );
    csv.push_str("time_s");
    for l in &model.levels {
        csv.push(',');
        csv.push_str(&l.id);
    }
    csv.push('\n');
    for (t, pops) in &sol.samples {
        if !t.is_finite() || pops.iter().any(|p| !p.is_finite()) {
            return Err(Error::NonFinite {
                stage: "time samples".into(),
            });
        }
        csv.push_str(&format!("{t:e}"));
        for p in pops {
            csv.push_str(&format!(",{p:e}"));
        }
        csv.push('\n');
    }
    if let Some(path) = &opts.plot {
        let curves = model
            .levels
            .iter()
            .enumerate()
            .map(|(k, l)| Curve {
                name: l.id.clone(),
                points: sol.samples.iter().map(|(t, p)| (*t, p[k])).collect(),
                dashed: false,
                color: k,
            })
            .collect();
        let (scale, unit) = time_axis(model.window.end.abs().max(model.window.start.abs()));
        let svg = plot::line_svg(&LinePlot {
            title: model.title.clone().unwrap_or_else(|| "Populations".into()),
            x_label: format!("time ({unit})"),
            x_scale: scale,
            log_x: false,
            y_label: "population".into(),
            curves,
            log_y: opts.log,
            log_floor: 1e-12,
            tolerance: Some(model.tolerance),
        })
        .map_err(|e| Error::Output {
            path: path.clone(),
            source: std::io::Error::other(e),
        })?;
        write_atomic(path, svg.as_bytes())?;
    }
    emit(&opts.csv, csv.as_bytes())?;
    Ok(EXIT_OK)
}

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
