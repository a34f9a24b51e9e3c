//! The `scan` command: check every option before any file is created, run
//! the grid points in parallel, write rows in grid order (progressively, to
//! a partial file renamed at the end), resume an interrupted scan, draw the
//! plot.
//!
//! Owns: the files and streams of a scan and the progress bar. Must not:
//! choose grid order or shards (`levelplan::scan` does), spell numbers
//! (`render::scan` does), or compute physics (each point is
//! [`Study::vet_point`]).
//!
//! Files: `--out FILE` is written as `.FILE.partial` in the same directory,
//! row by row, and renamed to FILE when the last row is in: a kill leaves no
//! FILE, and `--resume` continues from the rows in the partial file. The
//! partial file is removed only by completing the scan.

use super::args::ScanArgs;
use super::io::write_plot;
use super::partial::{open_partial, out_err, partial_path};
use levelplan::error::{Error, EXIT_OK};
use levelplan::pipeline::check_tolerance;
use levelplan::pipeline::study::{self, row_from_report, Study};
use levelplan::render::scan as fmt;
use levelplan::render::scan_plot::scan_plot;
use levelplan::scan::{self as grid, Grid, ScanRow, Shard};
use std::fs;
use std::io::{BufWriter, IsTerminal, Write};
use std::ops::Range;
use std::path::{Path, PathBuf};

fn bad(what: &str, message: impl Into<String>) -> Error {
    Error::BadArgument {
        what: what.to_string(),
        message: message.into(),
    }
}

/// Read a scheme file for many runs (scan points, tune), with the limits
/// every command applies.
pub fn read_study(path: &Path) -> Result<Study, Error> {
    let (text, source) = super::io::read_source(path)?;
    Ok(Study::new(text, source))
}

/// What a scan writes and where: the grid, the flat indices of this run
/// (all, or a shard), the head of the file, and the number of levels.
#[derive(Debug, Clone, PartialEq)]
pub struct Plan {
    pub grid: Grid,
    pub range: Range<usize>,
    pub head: String,
    pub n_levels: usize,
    /// The head names the open-system columns (`lost`,
    /// `scattered_photons`): every row ends in them.
    pub open: bool,
}

fn progress_bar(show: bool, len: usize, done: usize) -> indicatif::ProgressBar {
    if !show {
        return indicatif::ProgressBar::hidden();
    }
    let bar = indicatif::ProgressBar::new(len as u64);
    if let Ok(style) = indicatif::ProgressStyle::with_template(
        "{elapsed_precise} [{wide_bar}] {pos}/{len} points, {rate}, {eta} left",
    ) {
        let rate = |s: &indicatif::ProgressState, w: &mut dyn std::fmt::Write| {
            let _ = write!(w, "{:.1} points/s", s.per_sec());
        };
        bar.set_style(style.with_key("rate", rate).progress_chars("=> "));
    }
    bar.set_position(done as u64);
    bar
}

/// Run a plan: evaluate its points on `pool` with `eval`, write the head and
/// the rows in grid order to `out` (partial file + rename) or stdout, and
/// return the rows when `keep` (for a plot; resumed rows included).
pub fn run_plan(
    plan: &Plan,
    pool: &rayon::ThreadPool,
    eval: &(dyn Fn(&[f64]) -> Result<ScanRow, Error> + Sync),
    out: Option<&Path>,
    resume: bool,
    keep: bool,
    progress: bool,
) -> Result<Vec<ScanRow>, Error> {
    let evaluate = |i: usize| eval(&plan.grid.point(i));
    match out {
        None => {
            let stdout = std::io::stdout();
            let mut w = BufWriter::new(stdout.lock());
            let werr = |source| Error::Output {
                path: PathBuf::from("<stdout>"),
                source,
            };
            w.write_all(plan.head.as_bytes()).map_err(werr)?;
            let bar = progress_bar(progress, plan.range.len(), 0);
            let mut kept = Vec::new();
            grid::run_ordered(pool, plan.range.clone(), evaluate, |_, row| {
                w.write_all(fmt::row(&row, plan.open).as_bytes())
                    .map_err(werr)?;
                bar.inc(1);
                if keep {
                    kept.push(row);
                }
                Ok(())
            })?;
            w.flush().map_err(werr)?;
            bar.finish_and_clear();
            Ok(kept)
        }
        Some(path) => {
            let partial = partial_path(path)?;
            let (file, start, mut kept) = open_partial(&partial, plan, resume, keep)?;
            let err = out_err(&partial);
            let mut w = BufWriter::new(file);
            let bar = progress_bar(progress, plan.range.len(), start - plan.range.start);
            grid::run_ordered(pool, start..plan.range.end, evaluate, |_, row| {
                w.write_all(fmt::row(&row, plan.open).as_bytes())
                    .map_err(&err)?;
                // Each finished row reaches the file, so a kill loses at
                // most the points still running.
                w.flush().map_err(&err)?;
                bar.inc(1);
                if keep {
                    kept.push(row);
                }
                Ok(())
            })?;
            bar.finish_and_clear();
            let file = w.into_inner().map_err(|e| err(e.into_error()))?;
            file.sync_all().map_err(&err)?;
            drop(file);
            fs::rename(&partial, path).map_err(out_err(path))?;
            Ok(kept)
        }
    }
}

/// `scan`: every point of the grid (or of one shard), CSV in grid order,
/// optionally a plot. Exit status 0 when every row is written.
pub fn scan(a: ScanArgs) -> Result<i32, Error> {
    let tolerance = a.tolerance.tolerance;
    let progress = std::io::stderr().is_terminal();
    // Everything that can be refused is refused before a file is touched.
    check_tolerance(tolerance)?;
    let specs = study::parse_specs(&a.vary, true, a.log)?;
    let with: Vec<(String, usize)> = a
        .with
        .iter()
        .cloned()
        .zip(a.with_after.iter().copied())
        .collect();
    let links = study::parse_links(&with)?;
    grid::check_size(specs.iter().map(|s| s.count.unwrap_or(1)), a.force)?;
    let shard = a.shard.as_deref().map(Shard::parse).transpose()?;
    let pool = grid::thread_pool(a.jobs.jobs)?;
    if a.resume && a.out.is_none() {
        return Err(bad(
            "--resume",
            "needs --out: a scan to stdout cannot be continued",
        ));
    }
    if a.plot.is_some() {
        if shard.is_some() {
            return Err(bad(
                "--plot",
                "a shard holds only part of the grid; plot the merged scan",
            ));
        }
        if specs.len() > 2 {
            return Err(bad("--plot", "plots are drawn for 1-D and 2-D scans only"));
        }
    }
    if let Some(out) = &a.out {
        partial_path(out)?;
    }
    let s = read_study(&a.scheme.scheme)?
        .with_step_budget(a.step_budget.step_budget)
        .with_tuned_follows(a.tuned.tuned_follows);
    let mut axes = s.axes(&specs, a.log, 1)?;
    s.link(&mut axes, &links)?;
    let grid = Grid::new(axes, a.force)?;
    let (model, open) = s.preflight_open(&grid)?;
    let prov = s.provenance();
    let level_ids: Vec<String> = model.levels().iter().map(|l| l.id.clone()).collect();
    let n_levels = level_ids.len();
    let hash = grid::scan_hash(s.text().as_bytes(), &grid.axes, tolerance);
    let head = fmt::head(&fmt::ScanHead {
        provenance: &prov,
        axes: &grid.axes,
        tolerance,
        default_tolerance: model.tolerance(),
        points: grid.len(),
        hash: &hash,
        shard,
        level_ids: &level_ids,
        open,
    });
    let range = shard.map_or(0..grid.len(), |sh| sh.range(grid.len()));
    let plan = Plan {
        grid,
        range,
        head,
        n_levels,
        open,
    };
    let eval = |coords: &[f64]| -> Result<ScanRow, Error> {
        let rep = s.vet_point(&plan.grid, tolerance, n_levels, coords)?;
        // The rows kept for the plot are those the file holds, whether
        // computed now or read back by --resume.
        Ok(row_from_report(coords, &rep).as_written(plan.open))
    };
    let rows = run_plan(
        &plan,
        &pool,
        &eval,
        a.out.as_deref(),
        a.resume,
        a.plot.is_some(),
        progress,
    )?;
    if let Some(path) = &a.plot {
        let title = model
            .title()
            .map(str::to_owned)
            .unwrap_or_else(|| format!("Scan of {}", s.file()));
        let tolerance = tolerance.unwrap_or(model.tolerance());
        let svg = scan_plot(
            title,
            &plan.grid,
            &level_ids,
            &rows,
            tolerance,
            a.log_y.log_y,
        );
        write_plot(path, svg)?;
    }
    Ok(EXIT_OK)
}

#[cfg(test)]
#[path = "scan_tests.rs"]
mod tests;
