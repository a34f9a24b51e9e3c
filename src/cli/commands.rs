//! The commands that read one scheme and write one output: `inspect`,
//! `vet`, `evolve`, `tune`, and `merge` of scan parts.
//!
//! Owns: for each command, which library calls run in which order and where
//! their bytes go. Must not: compute (the library does) or spell numbers
//! (renderers do).

use super::args::{EvolveArgs, InspectArgs, MergeArgs, TuneArgs, VetArgs};
use super::io::{load, render_to_vec, write_plot, Sink};
use levelplan::error::{Error, EXIT_OK, EXIT_TOLERANCE};
use levelplan::pipeline::{self, study, VetOptions};
use levelplan::render::{self, evolve as evolve_fmt, scan as scan_fmt, scan_plot};
use levelplan::scan;
use std::fs;

/// `inspect`: the dry run.
pub fn inspect(a: InspectArgs) -> Result<i32, Error> {
    let (model, prov) = load(&a.scheme.scheme)?;
    let report = pipeline::inspect(&model, prov);
    let rows = a.output.sublevel_rows();
    let sink = Sink::new(a.output.out, a.output.color);
    let exporter = render::exporter_with(a.output.format.into(), sink.color(), rows);
    let bytes = render_to_vec(|w| exporter.inspect(&report, w))?;
    sink.emit(&bytes)?;
    Ok(EXIT_OK)
}

/// `vet`: the main job; exit status 3 for a leak or a target short of its goal.
pub fn vet(a: VetArgs) -> Result<i32, Error> {
    let opts = VetOptions::default()
        .with_tolerance(a.tolerance.tolerance)
        .with_goal(a.goal)
        .with_step_budget(a.step_budget.step_budget);
    pipeline::check_tolerance(opts.tolerance)?;
    pipeline::check_population("--goal", opts.goal)?;
    let (model, prov) = load(&a.scheme.scheme)?;
    let rep = pipeline::vet(&model, prov, &opts)?;
    let rows = a.output.sublevel_rows();
    let sink = Sink::new(a.output.out, a.output.color);
    let exporter = render::exporter_with(a.output.format.into(), sink.color(), rows);
    let bytes = render_to_vec(|w| exporter.vet(&rep, w))?;
    sink.emit(&bytes)?;
    Ok(pipeline::vet_status(&rep))
}

/// `evolve`: populations against time as CSV, optionally an SVG.
pub fn evolve(a: EvolveArgs) -> Result<i32, Error> {
    pipeline::evolve::check_samples(a.samples, 0, false)?;
    let (model, prov) = load(&a.scheme.scheme)?;
    pipeline::evolve::check_samples(a.samples, model.levels().len(), a.plot.is_some())?;
    let evo = pipeline::evolve_with_budget(&model, a.samples, a.step_budget.step_budget)?;
    let ids: Vec<String> = model.levels().iter().map(|l| l.id.clone()).collect();
    let csv = evolve_fmt::csv(&prov, &ids, &evo);
    if let Some(path) = &a.plot {
        let spec = evolve_fmt::EvolvePlot {
            title: model.title(),
            level_ids: &ids,
            window: (model.window().start, model.window().end),
            tolerance: model.tolerance(),
            log: a.log,
        };
        write_plot(path, evolve_fmt::svg(&spec, &evo))?;
    }
    let sink = match a.out {
        Some(p) => Sink::File(p),
        None => Sink::Stdout { color: false },
    };
    sink.emit(csv.as_bytes())?;
    Ok(EXIT_OK)
}

/// `tune`: the value that maximises a population or the smallest feasible one.
pub fn tune(a: TuneArgs) -> Result<i32, Error> {
    if let Some(w) = a.with.first() {
        return Err(Error::BadArgument {
            what: format!("--with '{w}'"),
            message: "tune searches one value and takes no linked path; scan the linked axis (scan --vary ... --with ...) and read the best row".into(),
        });
    }
    let req = study::TuneRequest {
        vary: a.vary,
        log: a.log,
        maximize: a.maximize,
        shortest: a.shortest,
        goal: a.goal,
        tolerance: a.tolerance.tolerance,
        xtol: a.xtol,
    };
    req.check()?;
    let pool = scan::thread_pool(a.jobs.jobs)?;
    let study = super::scan::read_study(&a.scheme.scheme)?
        .with_step_budget(a.step_budget.step_budget)
        .with_tuned_follows(a.tuned.tuned_follows);
    let report = study::tune(&study, &req, &pool)?;
    Sink::Stdout { color: false }.emit(scan_fmt::tune_text(&report).as_bytes())?;
    Ok(if report.found.is_some() {
        EXIT_OK
    } else {
        EXIT_TOLERANCE
    })
}

/// `merge`: join the part files of a sharded scan; optionally plot.
pub fn merge(a: MergeArgs) -> Result<i32, Error> {
    let texts = a
        .parts
        .iter()
        .map(|p| {
            fs::read(p)
                .map_err(|source| Error::Input {
                    path: p.clone(),
                    source,
                })
                .and_then(|b| {
                    String::from_utf8(b).map_err(|_| Error::BadArgument {
                        what: "merge".into(),
                        message: format!("{} is not UTF-8 text", p.display()),
                    })
                })
        })
        .collect::<Result<Vec<String>, Error>>()?;
    let bytes = scan::merge::merge_texts(&a.parts, &texts)?;
    let svg = match &a.plot {
        Some(_) => Some(scan_plot::plot_scan_text(
            &String::from_utf8_lossy(&bytes),
            a.log_y.log_y,
        )?),
        None => None,
    };
    let sink = match a.out {
        Some(p) => Sink::File(p),
        None => Sink::Stdout { color: false },
    };
    sink.emit(&bytes)?;
    if let (Some(path), Some(svg)) = (&a.plot, svg) {
        write_plot(path, svg)?;
    }
    Ok(EXIT_OK)
}
