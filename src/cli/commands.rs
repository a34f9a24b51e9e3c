//! The commands that read one scheme and write one output: `inspect`,
//! `vet`, `evolve`, `tune`, and `merge` of scan parts.
//!
//! Owns: for each command, which library calls run in which order and where
//! their bytes go. Must not: compute (the library does) or spell numbers
//! (renderers do).

use super::args::{EvolveArgs, InspectArgs, MergeArgs, TuneArgs, VetArgs};
use super::bounds;
use super::guard::distinct;
use super::io::{load, render_to_vec, write_plot, Sink};
use levelplan::error::{Error, EXIT_OK, EXIT_TOLERANCE};
use levelplan::pipeline::{self, study, VetOptions};
use levelplan::render::{self, evolve as evolve_fmt, scan as scan_fmt, scan_plot};
use levelplan::scan;

/// `inspect`: the dry run.
pub fn inspect(a: InspectArgs) -> Result<i32, Error> {
    distinct(&[&a.scheme.scheme], &[("--out", a.output.out.as_deref())])?;
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
    distinct(&[&a.scheme.scheme], &[("--out", a.output.out.as_deref())])?;
    let (model, prov) = load(&a.scheme.scheme)?;
    let limit = a.time_limit.time_limit;
    let Some(rep) = bounds::within(limit, move || pipeline::vet(&model, prov, &opts)) else {
        return Ok(bounds::ran_out(limit, "vet"));
    };
    let rep = rep?;
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
    distinct(
        &[&a.scheme.scheme],
        &[("--out", a.out.as_deref()), ("--plot", a.plot.as_deref())],
    )?;
    let (model, prov) = load(&a.scheme.scheme)?;
    pipeline::evolve::check_samples(a.samples, model.levels().len(), a.plot.is_some())?;
    let model = std::sync::Arc::new(model);
    let (m, samples, budget) = (model.clone(), a.samples, a.step_budget.step_budget);
    let limit = a.time_limit.time_limit;
    let Some(evo) = bounds::within(limit, move || {
        pipeline::evolve_with_budget(&m, samples, budget)
    }) else {
        return Ok(bounds::ran_out(limit, "evolve"));
    };
    let evo = evo?;
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
    let pool = scan::thread_pool(bounds::jobs(a.jobs.jobs))?;
    let study = super::scan::read_study(&a.scheme.scheme)?
        .with_step_budget(a.step_budget.step_budget)
        .with_tuned_follows(a.tuned.tuned_follows);
    let limit = a.time_limit.time_limit;
    match bounds::within(limit, move || study::tune(&study, &req, &pool)) {
        Some(report) => tune_found(&report?),
        None => Ok(bounds::ran_out(limit, "tune")),
    }
}

/// Print a tune report; exit status 0 when a value was found.
fn tune_found(report: &scan::TuneReport) -> Result<i32, Error> {
    Sink::Stdout { color: false }.emit(scan_fmt::tune_text(report).as_bytes())?;
    Ok(if report.found.is_some() {
        EXIT_OK
    } else {
        EXIT_TOLERANCE
    })
}

/// `merge`: join the part files of a sharded scan; optionally plot.
pub fn merge(a: MergeArgs) -> Result<i32, Error> {
    let parts: Vec<&std::path::Path> = a.parts.iter().map(|p| p.as_path()).collect();
    distinct(
        &parts,
        &[("--out", a.out.as_deref()), ("--plot", a.plot.as_deref())],
    )?;
    let texts = a
        .parts
        .iter()
        .map(|p| bounds::read_part(p))
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
