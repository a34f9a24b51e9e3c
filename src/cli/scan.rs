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
use super::output::{open_direct, resolve, Patient, Target};
use super::partial::{open_partial, out_err, partial_path};
use super::{bounds, guard, lock};
use levelplan::error::{Error, EXIT_FAILED, EXIT_OK};
use levelplan::pipeline::check_tolerance;
use levelplan::pipeline::study::{self, row_from_report, Study};
use levelplan::render::scan as fmt;
use levelplan::render::scan_plot::scan_plot;
use levelplan::scan::{self as grid, Grid, ScanRow, Shard};
use std::fs;
use std::io::{BufWriter, IsTerminal, Write};
use std::ops::Range;
use std::path::{Path, PathBuf};
use std::time::Instant;

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

/// Where a scan's rows go.
pub enum Dest<'a> {
    /// stdout, or a device or FIFO written directly (no partial file, no
    /// resume); the name is for messages.
    Stream(Box<dyn Write + 'a>, PathBuf),
    /// A regular file (links followed): `.FILE.partial` row by row, renamed
    /// to FILE when complete, guarded by `.FILE.lock`.
    File(&'a Path),
}

/// How a plan runs.
#[derive(Debug, Clone, Copy, Default)]
pub struct RunOptions {
    /// Continue the rows of an existing partial file.
    pub resume: bool,
    /// Return the rows (for a plot; resumed rows included).
    pub keep: bool,
    /// Show a progress bar.
    pub progress: bool,
    /// Start no point after this moment (`--time-limit`).
    pub deadline: Option<Instant>,
}

/// How a plan ended.
#[derive(Debug)]
pub enum Outcome {
    /// Every row written; the rows if kept.
    Done(Vec<ScanRow>),
    /// The time limit passed: this many of the plan's rows are written
    /// (with a file, kept in the partial file for `--resume`).
    Stopped {
        written: usize,
        partial: Option<PathBuf>,
    },
}

/// The error that stops the hand-out of points at the time limit.
const TIME_LIMIT: &str = "--time-limit";

fn is_time_limit(e: &Error) -> bool {
    matches!(e, Error::BadArgument { what, .. } if what == TIME_LIMIT)
}

/// Run a plan: evaluate its points on `pool` with `eval`, write the head and
/// the rows in grid order to `dest`; stop cleanly at the deadline.
pub fn run_plan(
    plan: &Plan,
    pool: &rayon::ThreadPool,
    eval: &(dyn Fn(&[f64]) -> Result<ScanRow, Error> + Sync),
    dest: Dest,
    opts: RunOptions,
) -> Result<Outcome, Error> {
    let evaluate = |i: usize| {
        if bounds::past(opts.deadline) {
            return Err(bad(TIME_LIMIT, "reached"));
        }
        eval(&plan.grid.point(i))
    };
    let (w, name, start, mut kept, file_out) = match dest {
        Dest::Stream(mut w, name) => {
            w.write_all(plan.head.as_bytes()).map_err(out_err(&name))?;
            (w, name, plan.range.start, Vec::new(), None)
        }
        Dest::File(path) => {
            let lock_file = lock::lock_path(path)
                .ok_or_else(|| bad("--out", format!("{} is not a file name", path.display())))?;
            let lock = lock::acquire(&lock_file)?;
            let partial = partial_path(path)?;
            let (file, start, kept) = open_partial(&partial, plan, opts.resume, opts.keep)?;
            let sync = file.try_clone().map_err(out_err(&partial))?;
            let w: Box<dyn Write> = Box::new(file);
            (w, partial, start, kept, Some((path, sync, lock)))
        }
    };
    let err = out_err(&name);
    let mut w = BufWriter::new(w);
    let bar = progress_bar(opts.progress, plan.range.len(), start - plan.range.start);
    let mut written = start - plan.range.start;
    let run = grid::run_ordered(pool, start..plan.range.end, evaluate, |_, row| {
        w.write_all(fmt::row(&row, plan.open).as_bytes())
            .map_err(&err)?;
        // Each finished row reaches the file, so a kill loses at most the
        // points still running.
        w.flush().map_err(&err)?;
        written += 1;
        bar.inc(1);
        if opts.keep {
            kept.push(row);
        }
        Ok(())
    });
    bar.finish_and_clear();
    w.flush().map_err(&err)?;
    drop(w);
    let stopped = match run {
        Err(e) if is_time_limit(&e) => true,
        r => {
            r?;
            false
        }
    };
    // The lock is held until the partial file is renamed (or kept).
    if let Some((path, file, _lock)) = file_out {
        file.sync_all().map_err(&err)?;
        if stopped {
            return Ok(Outcome::Stopped {
                written,
                partial: Some(name.clone()),
            });
        }
        fs::rename(&name, path).map_err(out_err(path))?;
    } else if stopped {
        return Ok(Outcome::Stopped {
            written,
            partial: None,
        });
    }
    Ok(Outcome::Done(kept))
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
    let pool = grid::thread_pool(bounds::jobs(a.jobs.jobs))?;
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
    let target = a.out.as_deref().map(resolve).transpose()?;
    check_files(&a, target.as_ref())?;
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
    let dest = match &target {
        None => Dest::Stream(Box::new(std::io::stdout().lock()), "<stdout>".into()),
        Some(Target::Direct(p)) => Dest::Stream(Box::new(Patient(open_direct(p)?)), p.clone()),
        Some(Target::File(p)) => Dest::File(p),
    };
    let opts = RunOptions {
        resume: a.resume,
        keep: a.plot.is_some(),
        progress,
        deadline: bounds::deadline(a.time_limit.time_limit),
    };
    let rows = match run_plan(&plan, &pool, &eval, dest, opts)? {
        Outcome::Done(rows) => rows,
        Outcome::Stopped { written, partial } => {
            let limit = a.time_limit.time_limit.unwrap_or_default().as_secs_f64();
            let next = match partial {
                Some(p) => format!(
                    "they are kept in {}; run the same command with --resume to continue",
                    p.display()
                ),
                None => "a scan not written to a file (--out) cannot be continued".into(),
            };
            eprintln!(
                "levelplan: time limit of {limit} s reached: {written} of {} points written, {next}",
                plan.range.len()
            );
            return Ok(EXIT_FAILED);
        }
    };
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

/// The scan's files, checked before any is created: `--resume` needs a
/// regular output file; no output (nor the partial and lock files beside
/// it) is the scheme or another output.
fn check_files(a: &ScanArgs, target: Option<&Target>) -> Result<(), Error> {
    let (partial, lock_file) = match target {
        Some(Target::File(p)) => (Some(partial_path(p)?), lock::lock_path(p)),
        Some(Target::Direct(p)) if a.resume => {
            return Err(bad(
                "--resume",
                format!(
                    "{} is not a regular file (a device or FIFO): a scan written there cannot be continued",
                    p.display()
                ),
            ))
        }
        _ => (None, None),
    };
    guard::distinct(
        &[&a.scheme.scheme],
        &[
            ("--out", a.out.as_deref()),
            ("--plot", a.plot.as_deref()),
            ("--out (its partial file)", partial.as_deref()),
            ("--out (its lock file)", lock_file.as_deref()),
        ],
    )
}

#[cfg(test)]
#[path = "scan_tests.rs"]
mod tests;
