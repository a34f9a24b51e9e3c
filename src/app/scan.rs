//! The `scan`, `tune` and `merge` commands: read the scheme, check every
//! option before any file is created, run the grid points in parallel, write
//! rows in grid order (progressively, to a partial file renamed at the end),
//! resume an interrupted scan, join the parts of a sharded scan, draw plots.
//!
//! Owns: the files and streams of these commands and the order of their
//! stages. Must not: parse command-line text (the CLI does), choose grid
//! order or shards (`scan` does), spell numbers (`render::scan` does), or
//! compute physics (each point is `scheme::parse_with_overrides` then
//! [`super::vet_model`]).
//!
//! Files: `--out FILE` is written as `.FILE.partial` in the same directory,
//! row by row, and renamed to FILE when the last row is in: a kill leaves no
//! FILE, and `--resume` continues from the rows in the partial file. The
//! partial file is removed only by completing the scan.

use super::{check_tolerance, emit, vet_model, Sink};
use crate::error::{Error, EXIT_OK, EXIT_TOLERANCE};
use crate::model::Model;
use crate::output::write_atomic;
use crate::plot::{self, Curve, HeatMap, LinePlot};
use crate::render::scan as fmt;
use crate::report::{self, Provenance, Role, VetReport};
use crate::scan::{
    self as grid, Axis, Grid, ScanRow, Shard, Spacing, TuneFound, TuneGoal, TuneReport, VarySpec,
};
use crate::scheme;
use crate::tune;
use std::fs;
use std::io::{BufWriter, Write};
use std::ops::Range;
use std::path::{Path, PathBuf};

/// Floor of logarithmic population axes and colour scales.
pub const LOG_FLOOR: f64 = 1e-12;

fn bad(what: &str, message: impl Into<String>) -> Error {
    Error::BadArgument {
        what: what.to_string(),
        message: message.into(),
    }
}

/// Options of `scan`, as typed (the CLI does no checking).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ScanOptions {
    pub scheme: PathBuf,
    /// `PATH=START..END:COUNT[:log]`, one per axis.
    pub vary: Vec<String>,
    /// Log spacing on every axis.
    pub log: bool,
    pub tolerance: Option<f64>,
    /// CSV file; None: stdout.
    pub out: Option<PathBuf>,
    pub plot: Option<PathBuf>,
    /// Logarithmic population axis of a 1-D plot.
    pub log_y: bool,
    pub jobs: Option<usize>,
    /// `K/N`.
    pub shard: Option<String>,
    pub resume: bool,
    pub force: bool,
    /// Draw a progress bar on stderr.
    pub progress: bool,
}

/// Options of `tune`, as typed.
#[derive(Debug, Clone, PartialEq)]
pub struct TuneOptions {
    pub scheme: PathBuf,
    /// `PATH=LO..HI[:COUNT][:log]`.
    pub vary: String,
    pub log: bool,
    /// Level id to maximise; None with `shortest`.
    pub maximize: Option<String>,
    pub shortest: bool,
    pub goal: f64,
    pub tolerance: Option<f64>,
    /// Refinement tolerance, a fraction of the range.
    pub xtol: f64,
    pub jobs: Option<usize>,
}

/// A scheme read as text, with what its results must state about it.
struct SchemeText {
    text: String,
    file: String,
    sha256: String,
    /// The scheme parsed once for every grid point (built on first use).
    prepared: std::sync::OnceLock<scheme::Prepared>,
}

impl SchemeText {
    fn read(path: &Path) -> Result<SchemeText, Error> {
        let (text, source) = scheme::read_source(path)?;
        Ok(SchemeText {
            text,
            file: source.path,
            sha256: source.sha256,
            prepared: std::sync::OnceLock::new(),
        })
    }

    fn provenance(&self) -> Provenance {
        Provenance::new(&self.file, &self.sha256)
    }

    /// Axes of the specs: each PATH must hold a number in the scheme; its
    /// unit is the default of the range.
    fn axes(
        &self,
        specs: &[VarySpec],
        log: bool,
        default_count: usize,
    ) -> Result<Vec<Axis>, Error> {
        let mut axes: Vec<Axis> = Vec::new();
        for s in specs {
            if axes.iter().any(|a| a.path == s.path) {
                return Err(bad("--vary", format!("{} is varied twice", s.path)));
            }
            let (_, unit) = scheme::numeric_value_at(&self.text, &self.file, &s.path)
                .map_err(|e| bad(&format!("--vary {}", s.path), e.to_string()))?;
            axes.push(Axis::new(s, &unit, log, s.count.unwrap_or(default_count))?);
        }
        Ok(axes)
    }

    /// The model at a point of the grid.
    fn model_at(&self, grid: &Grid, coords: &[f64]) -> Result<Model, Error> {
        let prepared = match self.prepared.get() {
            Some(p) => p,
            None => {
                let p = scheme::Prepared::new(&self.text, &self.file)?;
                self.prepared.get_or_init(|| p)
            }
        };
        Ok(prepared.with_overrides(&grid.overrides(coords))?)
    }

    /// Parse the scheme at the first and last grid point (every START and
    /// END), so a wrong path, a non-numeric value or a unit of the wrong
    /// dimension is bad input before anything runs. Returns the first model.
    fn preflight(&self, grid: &Grid) -> Result<Model, Error> {
        let mut first = None;
        for index in [0, grid.len() - 1] {
            let coords = grid.point(index);
            let m = self.model_at(grid, &coords).map_err(|e| {
                bad(
                    "--vary",
                    format!("the scheme does not take {}: {e}", describe(grid, &coords)),
                )
            })?;
            first.get_or_insert(m);
        }
        first.ok_or_else(|| bad("--vary", "empty grid"))
    }
}

/// "path = value unit, ..." of a point, for messages.
fn describe(grid: &Grid, coords: &[f64]) -> String {
    grid.overrides(coords)
        .iter()
        .map(|(p, v)| format!("{p} = {v}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The row of a point from its report.
pub fn row_from_report(coords: &[f64], rep: &VetReport) -> ScanRow {
    ScanRow {
        coords: coords.to_vec(),
        populations: rep.levels.iter().map(|l| l.final_population).collect(),
        max_spectator: rep.max_spectator,
        flagged: rep.flagged,
        estimates: rep.levels.iter().map(|l| l.estimate()).collect(),
    }
}

/// One full run (exact + perturbative) at a point, errors marked with it.
fn vet_point(
    s: &SchemeText,
    grid: &Grid,
    prov: &Provenance,
    tolerance: Option<f64>,
    n_levels: usize,
    coords: &[f64],
) -> Result<VetReport, Error> {
    let run = || -> Result<VetReport, Error> {
        let model = s.model_at(grid, coords)?;
        let rep = vet_model(&model, prov.clone(), tolerance)?;
        if rep.levels.len() != n_levels {
            return Err(bad(
                "--vary",
                "the number of levels changed across the grid",
            ));
        }
        Ok(rep)
    };
    run().map_err(|e| Error::AtPoint {
        at: describe(grid, coords),
        source: Box::new(e),
    })
}

/// What a scan writes and where: the grid, the flat indices of this run
/// (all, or a shard), the head of the file, and the number of levels.
#[derive(Debug, Clone, PartialEq)]
pub struct Plan {
    pub grid: Grid,
    pub range: Range<usize>,
    pub head: String,
    pub n_levels: usize,
}

/// The partial file of an output: `.<name>.partial` beside it.
pub fn partial_path(out: &Path) -> Result<PathBuf, Error> {
    let name = out
        .file_name()
        .ok_or_else(|| bad("--out", format!("{} is not a file name", out.display())))?;
    let partial = format!(".{}.partial", name.to_string_lossy());
    Ok(match out.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.join(partial),
        _ => PathBuf::from(partial),
    })
}

fn out_err(path: &Path) -> impl Fn(std::io::Error) -> Error + '_ {
    move |source| Error::Output {
        path: path.to_path_buf(),
        source,
    }
}

/// Open the partial file: continue it (`resume`) after checking that it is
/// this scan's, or create it with the head. Returns the file positioned at
/// its end, the first index still to compute, and (if `keep`) the rows read.
fn open_partial(
    partial: &Path,
    plan: &Plan,
    resume: bool,
    keep: bool,
) -> Result<(fs::File, usize, Vec<ScanRow>), Error> {
    let what = "--resume";
    if !partial.exists() {
        let mut f = fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(partial)
            .map_err(out_err(partial))?;
        f.write_all(plan.head.as_bytes())
            .map_err(out_err(partial))?;
        return Ok((f, plan.range.start, Vec::new()));
    }
    if !resume {
        return Err(bad(
            "--out",
            format!(
                "{} holds an interrupted scan: pass --resume to continue it, or delete it to start afresh",
                partial.display()
            ),
        ));
    }
    let bytes = fs::read(partial).map_err(|source| Error::Input {
        path: partial.to_path_buf(),
        source,
    })?;
    let damaged = |m: String| {
        bad(
            what,
            format!(
                "{} is damaged ({m}); delete it to start afresh",
                partial.display()
            ),
        )
    };
    let text = String::from_utf8(bytes).map_err(|_| damaged("not UTF-8 text".into()))?;
    if !text.starts_with(&plan.head) {
        let (n, ours, theirs) = fmt::first_difference(&plan.head, &text).unwrap_or((
            0,
            "<the head>",
            "<a shorter head>",
        ));
        return Err(bad(
            what,
            format!(
                "{} belongs to a different scan (line {n}: this run writes '{ours}', the file has '{theirs}'); rerun with the same scheme and options, or delete it",
                partial.display()
            ),
        ));
    }
    let parsed = fmt::split(&text).map_err(damaged)?;
    if parsed.rows.len() > plan.range.len() {
        return Err(damaged(format!(
            "{} rows where this scan has {}",
            parsed.rows.len(),
            plan.range.len()
        )));
    }
    let n_axes = plan.grid.axes.len();
    let mut kept = Vec::new();
    let mut valid = parsed.body_start;
    for (j, line) in parsed.rows.iter().enumerate() {
        let index = plan.range.start + j;
        if !line.starts_with(&fmt::coords_prefix(&plan.grid.point(index))) {
            return Err(damaged(format!("row {} is not grid point {index}", j + 1)));
        }
        let row = fmt::parse_row(line, n_axes, plan.n_levels)
            .map_err(|m| damaged(format!("row {}: {m}", j + 1)))?;
        if keep {
            kept.push(row);
        }
        valid += line.len() + 1;
    }
    // A row cut short by the kill is dropped and computed again.
    let mut f = fs::OpenOptions::new()
        .write(true)
        .open(partial)
        .map_err(out_err(partial))?;
    f.set_len(valid as u64).map_err(out_err(partial))?;
    f = fs::OpenOptions::new()
        .append(true)
        .open(partial)
        .map_err(out_err(partial))?;
    Ok((f, plan.range.start + parsed.rows.len(), kept))
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
                w.write_all(fmt::row(&row).as_bytes()).map_err(werr)?;
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
                w.write_all(fmt::row(&row).as_bytes()).map_err(&err)?;
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

/// Parse the `--vary` texts and check what needs no scheme (form, COUNT,
/// positivity of log ranges).
fn parse_specs(texts: &[String], count_required: bool, log: bool) -> Result<Vec<VarySpec>, Error> {
    if texts.is_empty() {
        return Err(bad(
            "--vary",
            "at least one --vary PATH=START..END:COUNT is needed",
        ));
    }
    let specs = texts
        .iter()
        .map(|t| VarySpec::parse(t, count_required))
        .collect::<Result<Vec<_>, _>>()?;
    for s in &specs {
        s.spacing(log)?;
    }
    Ok(specs)
}

/// `scan`: every point of the grid (or of one shard), CSV in grid order,
/// optionally a plot. Exit status 0 when every row is written.
pub fn scan(opts: &ScanOptions) -> Result<i32, Error> {
    // Everything that can be refused is refused before a file is touched.
    check_tolerance(opts.tolerance)?;
    let specs = parse_specs(&opts.vary, true, opts.log)?;
    grid::check_size(specs.iter().map(|s| s.count.unwrap_or(1)), opts.force)?;
    let shard = opts.shard.as_deref().map(Shard::parse).transpose()?;
    let pool = grid::thread_pool(opts.jobs)?;
    if opts.resume && opts.out.is_none() {
        return Err(bad(
            "--resume",
            "needs --out: a scan to stdout cannot be continued",
        ));
    }
    if opts.plot.is_some() {
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
    if let Some(out) = &opts.out {
        partial_path(out)?;
    }
    let s = SchemeText::read(&opts.scheme)?;
    let axes = s.axes(&specs, opts.log, 1)?;
    let grid = Grid::new(axes, opts.force)?;
    let model = s.preflight(&grid)?;
    let prov = s.provenance();
    let level_ids: Vec<String> = model.levels.iter().map(|l| l.id.clone()).collect();
    let n_levels = level_ids.len();
    let hash = grid::scan_hash(s.text.as_bytes(), &grid.axes, opts.tolerance);
    let head = fmt::head(&fmt::ScanHead {
        provenance: &prov,
        axes: &grid.axes,
        tolerance: opts.tolerance,
        default_tolerance: model.tolerance,
        points: grid.len(),
        hash: &hash,
        shard,
        level_ids: &level_ids,
    });
    let range = shard.map_or(0..grid.len(), |sh| sh.range(grid.len()));
    let plan = Plan {
        grid,
        range,
        head,
        n_levels,
    };
    let eval = |coords: &[f64]| -> Result<ScanRow, Error> {
        let rep = vet_point(&s, &plan.grid, &prov, opts.tolerance, n_levels, coords)?;
        Ok(row_from_report(coords, &rep))
    };
    let rows = run_plan(
        &plan,
        &pool,
        &eval,
        opts.out.as_deref(),
        opts.resume,
        opts.plot.is_some(),
        opts.progress,
    )?;
    if let Some(path) = &opts.plot {
        let title = model
            .title
            .clone()
            .unwrap_or_else(|| format!("Scan of {}", s.file));
        let tolerance = opts.tolerance.unwrap_or(model.tolerance);
        let svg = scan_plot(title, &plan.grid, &level_ids, &rows, tolerance, opts.log_y);
        write_plot(path, svg)?;
    }
    Ok(EXIT_OK)
}

/// The SVG of a 1-D scan (populations and dashed estimates against the
/// varied value) or a 2-D scan (heat map of the largest spectator
/// population with the tolerance outline).
pub fn scan_plot(
    title: String,
    grid: &Grid,
    level_ids: &[String],
    rows: &[ScanRow],
    tolerance: f64,
    log_y: bool,
) -> Result<String, plot::PlotError> {
    match grid.axes.as_slice() {
        [a] => {
            let mut curves = Vec::new();
            for (k, id) in level_ids.iter().enumerate() {
                curves.push(Curve {
                    name: format!("P({id})"),
                    points: rows
                        .iter()
                        .map(|r| (r.coords[0], r.populations[k]))
                        .collect(),
                    dashed: false,
                    color: k,
                });
                let est: Vec<(f64, f64)> = rows
                    .iter()
                    .filter_map(|r| r.estimates[k].map(|e| (r.coords[0], e)))
                    .collect();
                if !est.is_empty() {
                    curves.push(Curve {
                        name: format!("est({id})"),
                        points: est,
                        dashed: true,
                        color: k,
                    });
                }
            }
            plot::line_svg(&LinePlot {
                title,
                x_label: fmt::axis_label(a),
                x_scale: 1.0,
                log_x: a.spacing == Spacing::Log,
                y_label: "final population".into(),
                curves,
                log_y,
                log_floor: LOG_FLOOR,
                tolerance: Some(tolerance),
            })
        }
        [a, b] => plot::heatmap_svg(&HeatMap {
            title,
            x_label: fmt::axis_label(a),
            y_label: fmt::axis_label(b),
            xs: (0..a.count).map(|i| a.value(i)).collect(),
            ys: (0..b.count).map(|i| b.value(i)).collect(),
            log_x: a.spacing == Spacing::Log,
            log_y: b.spacing == Spacing::Log,
            values: rows.iter().map(|r| r.max_spectator).collect(),
            value_label: "largest spectator population".into(),
            floor: LOG_FLOOR,
            tolerance: Some(tolerance),
        }),
        _ => Err(plot::PlotError::new(
            "plots are drawn for 1-D and 2-D scans only",
        )),
    }
}

fn write_plot(path: &Path, svg: Result<String, plot::PlotError>) -> Result<(), Error> {
    let svg = svg.map_err(|e| Error::Output {
        path: path.to_path_buf(),
        source: std::io::Error::other(e),
    })?;
    write_atomic(path, svg.as_bytes())
}

/// The plot of a whole scan file (a merged scan): axes, tolerance and
/// levels from its head, rows from its body.
pub fn plot_scan_text(text: &str, log_y: bool) -> Result<Result<String, plot::PlotError>, Error> {
    let cannot = |m: String| bad("--plot", format!("cannot plot this scan: {m}"));
    let t = fmt::split(text).map_err(cannot)?;
    let info = fmt::read_head(&t).map_err(cannot)?;
    if info.axes.len() > 2 {
        return Err(bad("--plot", "plots are drawn for 1-D and 2-D scans only"));
    }
    let grid = Grid::new(info.axes, true)?;
    let rows = t
        .rows
        .iter()
        .map(|l| fmt::parse_row(l, grid.axes.len(), info.level_ids.len()))
        .collect::<Result<Vec<_>, _>>()
        .map_err(cannot)?;
    Ok(scan_plot(
        format!("Scan of {}", info.scheme_file),
        &grid,
        &info.level_ids,
        &rows,
        info.tolerance,
        log_y,
    ))
}

/// `merge`: join the part files of a sharded scan into the file the
/// unsharded scan writes, byte for byte; optionally plot the result.
pub fn merge(
    parts: &[PathBuf],
    sink: &Sink,
    plot: Option<&Path>,
    log_y: bool,
) -> Result<i32, Error> {
    let texts = parts
        .iter()
        .map(|p| {
            fs::read(p)
                .map_err(|source| Error::Input {
                    path: p.clone(),
                    source,
                })
                .and_then(|b| {
                    String::from_utf8(b)
                        .map_err(|_| bad("merge", format!("{} is not UTF-8 text", p.display())))
                })
        })
        .collect::<Result<Vec<String>, Error>>()?;
    let bytes = merge_texts(parts, &texts)?;
    let svg = match plot {
        Some(_) => Some(plot_scan_text(&String::from_utf8_lossy(&bytes), log_y)?),
        None => None,
    };
    emit(sink, &bytes)?;
    if let (Some(path), Some(svg)) = (plot, svg) {
        write_plot(path, svg)?;
    }
    Ok(EXIT_OK)
}

/// The merge itself, on the texts of the parts (named by `names`).
pub fn merge_texts(names: &[PathBuf], texts: &[String]) -> Result<Vec<u8>, Error> {
    let mut parsed = Vec::new();
    let mut shards = Vec::new();
    for (name, text) in names.iter().zip(texts) {
        let n = name.display();
        let p =
            fmt::split(text).map_err(|m| bad("merge", format!("{n} is not a scan file: {m}")))?;
        if p.hash().is_none() {
            return Err(bad(
                "merge",
                format!(
                    "{n} is not a scan file (no '{}' line)",
                    fmt::HASH_PREFIX.trim()
                ),
            ));
        }
        if !p.tail.is_empty() {
            return Err(bad(
                "merge",
                format!("{n} ends in a cut row: that shard did not finish"),
            ));
        }
        let sh = p.shard_text().ok_or_else(|| {
            bad(
                "merge",
                format!("{n} is a whole scan, not a shard part (no '# shard K/N' line)"),
            )
        })?;
        shards.push(Shard::parse(sh).map_err(|e| bad("merge", format!("{n}: {e}")))?);
        parsed.push(p);
    }
    let first = parsed
        .first()
        .ok_or_else(|| bad("merge", "no part files given"))?;
    for (name, p) in names.iter().zip(&parsed).skip(1) {
        if p.hash() != first.hash() {
            return Err(bad(
                "merge",
                format!(
                    "{} and {} are parts of different scans (scan hash {} and {})",
                    names[0].display(),
                    name.display(),
                    first.hash().unwrap_or_default(),
                    p.hash().unwrap_or_default()
                ),
            ));
        }
        let (a, b) = (first.common_comments(), p.common_comments());
        if a != b || p.header != first.header {
            let ja = format!("{}\n{}", a.join("\n"), first.header);
            let jb = format!("{}\n{}", b.join("\n"), p.header);
            let (line, x, y) = fmt::first_difference(&ja, &jb).unwrap_or((0, "", ""));
            return Err(bad(
                "merge",
                format!(
                    "{} and {} differ in their head (line {line}: '{x}' and '{y}')",
                    names[0].display(),
                    name.display()
                ),
            ));
        }
    }
    let order = grid::merge_order(&shards)?;
    let total = first.grid_points().ok_or_else(|| {
        bad(
            "merge",
            format!("{} states no grid size", names[0].display()),
        )
    })?;
    let mut out = String::new();
    for c in first.common_comments() {
        out.push_str(c);
        out.push('\n');
    }
    out.push_str(first.header);
    out.push('\n');
    for &pos in &order {
        let want = shards[pos].range(total).len();
        let have = parsed[pos].rows.len();
        if have != want {
            return Err(bad(
                "merge",
                format!(
                    "{} (shard {}/{}) has {have} rows where {want} are expected",
                    names[pos].display(),
                    shards[pos].k,
                    shards[pos].n
                ),
            ));
        }
        for r in &parsed[pos].rows {
            out.push_str(r);
            out.push('\n');
        }
    }
    Ok(out.into_bytes())
}

/// `tune`: a coarse grid (in parallel), then golden-section search for
/// the maximum of a level's population, or bisection for the smallest
/// value that meets the goal. Prints the value, its bracket, the
/// populations there and the number of solves. Exit status 0, or 3 when no
/// value of the range meets the `--shortest` condition.
pub fn tune(opts: &TuneOptions) -> Result<i32, Error> {
    check_tolerance(opts.tolerance)?;
    if !(opts.goal.is_finite() && opts.goal > 0.0 && opts.goal <= 1.0) {
        return Err(bad(
            "--goal",
            format!("expected a population in (0, 1], found {}", opts.goal),
        ));
    }
    if !(opts.xtol.is_finite() && opts.xtol > 0.0 && opts.xtol < 1.0) {
        return Err(bad(
            "--xtol",
            format!(
                "expected a fraction of the range in (0, 1), found {}",
                opts.xtol
            ),
        ));
    }
    let spec = parse_specs(std::slice::from_ref(&opts.vary), false, opts.log)?.remove(0);
    if spec.count.is_some_and(|n| n < 3) {
        return Err(bad("--vary", "tune needs at least 3 coarse points"));
    }
    if spec.start >= spec.end {
        return Err(bad(
            "--vary",
            format!("tune needs LO < HI, found {} and {}", spec.start, spec.end),
        ));
    }
    let pool = grid::thread_pool(opts.jobs)?;
    let s = SchemeText::read(&opts.scheme)?;
    let axes = s.axes(
        std::slice::from_ref(&spec),
        opts.log,
        grid::DEFAULT_TUNE_POINTS,
    )?;
    let grid = Grid::new(axes, false)?;
    let model = s.preflight(&grid)?;
    let axis = grid.axes[0].clone();
    let prov = s.provenance();
    let level_ids: Vec<String> = model.levels.iter().map(|l| l.id.clone()).collect();
    let n_levels = level_ids.len();
    let goal = match &opts.maximize {
        Some(id) => TuneGoal::Maximize {
            level: level_ids.iter().position(|l| l == id).ok_or_else(|| {
                bad(
                    "--maximize",
                    format!(
                        "no level '{id}' in the scheme (levels: {})",
                        level_ids.join(", ")
                    ),
                )
            })?,
        },
        None if opts.shortest => TuneGoal::Shortest { goal: opts.goal },
        None => return Err(bad("tune", "give --maximize LEVEL or --shortest")),
    };
    // Score of a point: the level's population, or 1/0 for feasibility.
    let score = |rep: &VetReport| -> f64 {
        match goal {
            TuneGoal::Maximize { level } => rep.levels[level].final_population,
            TuneGoal::Shortest { goal } => {
                let ok = rep.flagged == 0
                    && rep
                        .levels
                        .iter()
                        .filter(|l| l.role == Role::Target)
                        .all(|l| l.final_population >= goal);
                if ok {
                    1.0
                } else {
                    0.0
                }
            }
        }
    };
    let at = |t: f64| -> Result<(f64, ScanRow), Error> {
        let coords = [axis.at_fraction(t)];
        let rep = vet_point(&s, &grid, &prov, opts.tolerance, n_levels, &coords)?;
        Ok((score(&rep), row_from_report(&coords, &rep)))
    };
    let ts = tune::coarse(axis.count);
    let mut coarse = Vec::with_capacity(ts.len());
    grid::run_ordered(
        &pool,
        0..ts.len(),
        |i| at(ts[i]),
        |_, r| {
            coarse.push(r);
            Ok(())
        },
    )?;
    let refined = match goal {
        TuneGoal::Maximize { .. } => tune::maximize(&ts, &coarse, opts.xtol, at),
        TuneGoal::Shortest { .. } => {
            let ok: Vec<(bool, ScanRow)> =
                coarse.iter().map(|(v, r)| (*v > 0.5, r.clone())).collect();
            tune::smallest_feasible(&ts, &ok, opts.xtol, |t| at(t).map(|(v, r)| (v > 0.5, r)))
        }
    }
    .transpose()?;
    let found = refined.as_ref().map(|r| TuneFound {
        value: axis.at_fraction(r.t),
        lo: axis.at_fraction(r.lo),
        hi: axis.at_fraction(r.hi),
        at_edge: r.at_edge,
        row: r.data.clone(),
    });
    let report = TuneReport {
        provenance: prov.clone(),
        axis: axis.clone(),
        goal,
        level_ids,
        roles: report::roles(&model),
        coarse_points: ts.len(),
        refine_solves: refined.as_ref().map_or(0, |r| r.evaluations),
        found,
    };
    emit(
        &Sink::Stdout { color: false },
        fmt::tune_text(&report).as_bytes(),
    )?;
    Ok(if report.found.is_some() {
        EXIT_OK
    } else {
        EXIT_TOLERANCE
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A fake evaluation with two levels and an analytic row, so the file
    /// logic is tested without the physics: P(e) = x^2 / (1 + x^2).
    fn fake(coords: &[f64]) -> Result<ScanRow, Error> {
        let x: f64 = coords.iter().sum();
        let pe = x * x / (1.0 + x * x);
        Ok(ScanRow {
            coords: coords.to_vec(),
            populations: vec![1.0 - pe, pe],
            max_spectator: pe / 3.0,
            flagged: usize::from(pe > 0.5),
            estimates: vec![None, Some(x * x)],
        })
    }

    fn axis(path: &str, start: f64, end: f64, count: usize) -> Axis {
        Axis {
            path: path.into(),
            unit: "MHz".into(),
            start,
            end,
            count,
            spacing: Spacing::Linear,
        }
    }

    fn plan(shard: Option<Shard>) -> Plan {
        let grid = Grid::new(
            vec![axis("a.x", -2.0, 2.0, 7), axis("a.y", 0.0, 1.0, 5)],
            false,
        )
        .unwrap();
        let prov = Provenance::new("fake.yaml", "00");
        let ids = vec!["g".to_string(), "e".to_string()];
        let hash = grid::scan_hash(b"fake", &grid.axes, None);
        let head = fmt::head(&fmt::ScanHead {
            provenance: &prov,
            axes: &grid.axes,
            tolerance: None,
            default_tolerance: 1e-3,
            points: grid.len(),
            hash: &hash,
            shard,
            level_ids: &ids,
        });
        let range = shard.map_or(0..grid.len(), |s| s.range(grid.len()));
        Plan {
            grid,
            range,
            head,
            n_levels: 2,
        }
    }

    struct TempDir(PathBuf);
    impl TempDir {
        fn new(tag: &str) -> TempDir {
            let d =
                std::env::temp_dir().join(format!("levelplan-scan-{tag}-{}", std::process::id()));
            let _ = fs::remove_dir_all(&d);
            fs::create_dir_all(&d).unwrap();
            TempDir(d)
        }
    }
    impl Drop for TempDir {
        fn drop(&mut self) {
            let _ = fs::remove_dir_all(&self.0);
        }
    }

    fn run(p: &Plan, jobs: usize, out: &Path, resume: bool) -> Result<Vec<ScanRow>, Error> {
        let pool = grid::thread_pool(Some(jobs)).unwrap();
        run_plan(p, &pool, &fake, Some(out), resume, true, false)
    }

    #[test]
    fn output_is_byte_identical_on_one_thread_or_many() {
        let d = TempDir::new("threads");
        let p = plan(None);
        let rows = run(&p, 1, &d.0.join("one.csv"), false).unwrap();
        run(&p, 3, &d.0.join("three.csv"), false).unwrap();
        let one = fs::read(d.0.join("one.csv")).unwrap();
        assert_eq!(one, fs::read(d.0.join("three.csv")).unwrap());
        assert_eq!(rows.len(), 35);
        // Grid order: the last --vary fastest.
        assert_eq!(rows[1].coords, vec![-2.0, 0.25]);
        assert_eq!(rows[5].coords, vec![-2.0 + 4.0 / 6.0, 0.0]);
        let text = String::from_utf8(one).unwrap();
        assert_eq!(text.lines().filter(|l| !l.starts_with('#')).count(), 36);
        assert!(!partial_path(&d.0.join("one.csv")).unwrap().exists());
    }

    #[test]
    fn merged_shards_equal_the_unsharded_scan() {
        let d = TempDir::new("shards");
        let whole = d.0.join("whole.csv");
        run(&plan(None), 2, &whole, false).unwrap();
        for n in [1usize, 3, 4, 35, 40] {
            let mut names = Vec::new();
            let mut texts = Vec::new();
            // Given in reverse order: merge sorts by K.
            for k in (1..=n).rev() {
                let part = d.0.join(format!("part_{k}_of_{n}.csv"));
                run(&plan(Some(Shard { k, n })), 2, &part, false).unwrap();
                texts.push(fs::read_to_string(&part).unwrap());
                names.push(part);
            }
            let merged = merge_texts(&names, &texts).unwrap();
            assert_eq!(merged, fs::read(&whole).unwrap(), "n = {n}");
            // The merged file plots (a 2-D heat map of 7 x 5 cells).
            let svg = plot_scan_text(&String::from_utf8(merged).unwrap(), false)
                .unwrap()
                .unwrap();
            assert!(svg.matches("<rect").count() >= 35 + 100);
            // A missing shard is refused.
            if n > 1 {
                let e = merge_texts(&names[1..], &texts[1..]).unwrap_err();
                assert!(e.to_string().contains("missing"), "{e}");
            }
        }
    }

    #[test]
    fn merge_refuses_parts_of_different_scans_and_cut_parts() {
        let d = TempDir::new("mismatch");
        let a = d.0.join("a.csv");
        let b = d.0.join("b.csv");
        run(&plan(Some(Shard { k: 1, n: 2 })), 1, &a, false).unwrap();
        run(&plan(Some(Shard { k: 2, n: 2 })), 1, &b, false).unwrap();
        let ta = fs::read_to_string(&a).unwrap();
        let tb = fs::read_to_string(&b).unwrap();
        let names = vec![a.clone(), b.clone()];
        assert!(merge_texts(&names, &[ta.clone(), tb.clone()]).is_ok());
        let other = tb.replace(fmt::split(&tb).unwrap().hash().unwrap(), &"1".repeat(64));
        let e = merge_texts(&names, &[ta.clone(), other]).unwrap_err();
        assert!(e.to_string().contains("different scans"), "{e}");
        assert_eq!(e.exit_code(), crate::error::EXIT_BAD_INPUT);
        let cut = tb[..tb.len() - 3].to_string();
        assert!(merge_texts(&names, &[ta.clone(), cut])
            .unwrap_err()
            .to_string()
            .contains("cut row"));
        let short = {
            let mut lines: Vec<&str> = tb.lines().collect();
            lines.pop();
            lines.join("\n") + "\n"
        };
        assert!(merge_texts(&names, &[ta.clone(), short])
            .unwrap_err()
            .to_string()
            .contains("rows where"));
        let whole = d.0.join("whole.csv");
        run(&plan(None), 1, &whole, false).unwrap();
        let tw = fs::read_to_string(&whole).unwrap();
        assert!(merge_texts(&[whole], &[tw])
            .unwrap_err()
            .to_string()
            .contains("not a shard part"));
    }

    #[test]
    fn resume_after_a_cut_equals_an_uninterrupted_run() {
        let d = TempDir::new("resume");
        let whole = d.0.join("whole.csv");
        let p = plan(None);
        let all_rows = run(&p, 2, &whole, false).unwrap();
        let full = fs::read_to_string(&whole).unwrap();
        // Simulate a kill: the partial file holds the head, 11 rows and half
        // of the 12th.
        let out = d.0.join("cut.csv");
        let partial = partial_path(&out).unwrap();
        let body_start = fmt::split(&full).unwrap().body_start;
        let eleven: usize = full[body_start..]
            .lines()
            .take(11)
            .map(|l| l.len() + 1)
            .sum();
        let cut_at = body_start + eleven + 9;
        fs::write(&partial, &full[..cut_at]).unwrap();
        // Without --resume the partial file is not overwritten.
        let e = run(&p, 2, &out, false).unwrap_err();
        assert!(e.to_string().contains("--resume"), "{e}");
        assert_eq!(fs::read_to_string(&partial).unwrap(), &full[..cut_at]);
        assert!(!out.exists());
        // With it, the scan continues and the result is byte-identical;
        // the rows returned (for a plot) include those read back.
        let rows = run(&p, 3, &out, true).unwrap();
        assert_eq!(fs::read_to_string(&out).unwrap(), full);
        assert_eq!(rows, all_rows);
        assert!(!partial.exists());
    }

    #[test]
    fn resume_refuses_a_partial_file_of_another_scan() {
        let d = TempDir::new("resume-other");
        let out = d.0.join("x.csv");
        let partial = partial_path(&out).unwrap();
        let other = plan(Some(Shard { k: 1, n: 2 }));
        fs::write(&partial, &other.head).unwrap();
        let e = run(&plan(None), 1, &out, true).unwrap_err();
        assert!(e.to_string().contains("different scan"), "{e}");
        assert_eq!(e.exit_code(), crate::error::EXIT_BAD_INPUT);
        // A damaged row is refused too.
        let p = plan(None);
        fs::write(&partial, format!("{}9e9,1,2\n", p.head)).unwrap();
        let e = run(&p, 1, &out, true).unwrap_err();
        assert!(e.to_string().contains("damaged"), "{e}");
        assert!(!out.exists());
    }

    #[test]
    fn a_failing_point_leaves_no_output_file() {
        let d = TempDir::new("fail");
        let out = d.0.join("f.csv");
        let p = plan(None);
        let pool = grid::thread_pool(Some(2)).unwrap();
        let failing = |c: &[f64]| {
            if c[0] > 0.0 {
                Err(bad("point", "fails"))
            } else {
                fake(c)
            }
        };
        assert!(run_plan(&p, &pool, &failing, Some(&out), false, false, false).is_err());
        assert!(!out.exists());
        // The rows before the failure are kept for inspection.
        assert!(partial_path(&out).unwrap().exists());
    }

    #[test]
    fn partial_path_sits_beside_the_output() {
        assert_eq!(
            partial_path(Path::new("a/b.csv")).unwrap(),
            PathBuf::from("a/.b.csv.partial")
        );
        assert_eq!(
            partial_path(Path::new("b.csv")).unwrap(),
            PathBuf::from(".b.csv.partial")
        );
        assert!(partial_path(Path::new("/")).is_err());
    }
}
