//! The command line: clap definitions of the subcommands and their options,
//! and the dispatch to [`crate::app`]. No physics and no IO here.
//!
//! Owns: argument names, help texts, defaults. Must not: read schemes or
//! compute anything; every command is one call into the app layer.

use crate::app::scan::{self, ScanOptions, TuneOptions};
use crate::app::{self, EvolveOptions, Sink};
use crate::error::Error;
use crate::render::Format;
use clap::{Parser, Subcommand, ValueEnum};
use std::io::IsTerminal;
use std::path::PathBuf;

const EXIT_CODES: &str = "Units: frequencies given in Hz are cyclic (Omega/2pi, Delta/2pi); detuning = laser - transition \
(positive = blue); Rabi frequencies at the envelope peak; Gaussian FWHM of the intensity; populations are |c|^2 \
in the bare basis. The scheme format, physics and worked examples: docs/scheme-format.md, docs/physics.md, \
docs/cookbook.md in the source repository.

Exit status: 0 every spectator within tolerance (or the command succeeded), \
3 at least one spectator above its tolerance or, with --goal, a target below the goal (vet), 2 bad input (scheme file or option), \
1 a run that could not vouch for its result (step budget, norm error, non-finite value) or could not write its output.

Laser safety: the numbers are for planning. Beam powers used in such schemes can cause eye and skin \
injury; follow your institution's laser-safety rules, its laser safety officer, and IEC 60825-1 / ANSI Z136.1. \
Results are model calculations; check them against measurement.";

const INSPECT_HELP: &str = "Examples:
  levelplan inspect level_schemes/hyperfine_manifold.yaml
  levelplan inspect level_schemes/hyperfine_manifold.yaml --format json --out drives.json

Units of the text, Markdown and LaTeX reports (with SI prefixes): energies in cm^-1 and Hz (E/h), lifetimes
in s, vacuum wavelengths in nm, frequencies, detunings and Rabi frequencies cyclic in Hz (detuning = laser -
transition, positive = blue), pulse areas in units of pi (Omega x integral of the envelope), peak intensities
in W/cm^2. CSV and JSON: full precision, the unit named in the column or key. Nothing is propagated.

Exit status: 0 printed, 2 bad input (scheme file or option), 1 output not written.

Laser safety: the numbers are for planning. Beam powers used in such schemes can cause eye and skin injury;
follow your institution's laser-safety rules, its laser safety officer, and IEC 60825-1 / ANSI Z136.1.";

const VET_HELP: &str = "Examples:
  levelplan vet level_schemes/hyperfine_manifold.yaml
  levelplan vet level_schemes/hyperfine_manifold.yaml --tolerance 1e-3 --format markdown --out table.md
  levelplan vet level_schemes/hyperfine_manifold.yaml --format latex      (booktabs tables for a proposal)

For every level: final and peak population (exact propagation), the perturbative estimate and its order
(1st, or 2nd where first order cannot reach the level), final/estimate, the tolerance and the status (LEAK:
spectator above its tolerance; est?: estimate above 0.1 or off the exact value by more than a factor 2).
Each leak lists the drives that feed it (field, source level, detuning and Rabi frequency, cyclic, in Hz with
SI prefixes) and a remedy (same pulse area with a Gaussian or Blackman envelope of the same intensity FWHM, or the
pulse length that brings the estimate below tolerance), each checked by exact propagation. Drives beyond the
detuning cutoff are listed with their estimate and light shift Omega^2/(4 Delta) (cyclic). Populations below
1e-3 are printed in scientific notation. Every output records the tool version, the scheme file and the
SHA-256 of its bytes, the solver method and tolerances.

Exit status: 0 every spectator within tolerance, 3 at least one above or (with --goal) a target
below the goal (the report is still printed),
2 bad input (scheme file or option), 1 a run that could not vouch for its result or output not written.

Laser safety: the numbers are for planning. Beam powers used in such schemes can cause eye and skin injury;
follow your institution's laser-safety rules, its laser safety officer, and IEC 60825-1 / ANSI Z136.1.
Results are model calculations; check them against measurement.";

const EVOLVE_HELP: &str = "Examples:
  levelplan evolve level_schemes/two_level_calibration.yaml --samples 401 --out run.csv --plot run.svg --log
  levelplan evolve level_schemes/two_level_calibration.yaml --samples 5      (CSV to stdout)

CSV: a leading '#' line (tool version, scheme file and SHA-256, solver method, rtol, atol), then the header
time_s,<level ids> and one row per sample: the absolute scheme time in seconds and every level's population
|c|^2 (bare basis), in full precision. The samples are evenly spaced over the window, both ends included; the
last row is the final state.

Exit status: 0 written, 2 bad input (scheme file or option), 1 a run that could not vouch for its result
(step budget, norm error, non-finite value) or output not written.

Laser safety: the numbers are for planning. Beam powers used in such schemes can cause eye and skin injury;
follow your institution's laser-safety rules, its laser safety officer, and IEC 60825-1 / ANSI Z136.1.";

#[derive(Debug, Parser)]
#[command(
    name = "levelplan",
    version,
    about = "Plan laser excitation schemes: exact Schrodinger propagation beside first-order estimates, leakage reports for proposals",
    after_help = EXIT_CODES
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// Output format of a report.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FormatArg {
    /// Aligned tables for the terminal (colour only with --color or on a terminal).
    Text,
    /// Markdown tables to paste into a document.
    Markdown,
    /// LaTeX tables (booktabs: \usepackage{booktabs}) for a proposal.
    Latex,
    /// One row per level (vet) or drive (inspect), full precision, units in the column names.
    Csv,
    /// The stable keys of the contract (docs/scheme-format.md), full precision.
    Json,
}

impl From<FormatArg> for Format {
    fn from(f: FormatArg) -> Format {
        match f {
            FormatArg::Text => Format::Text,
            FormatArg::Markdown => Format::Markdown,
            FormatArg::Latex => Format::Latex,
            FormatArg::Csv => Format::Csv,
            FormatArg::Json => Format::Json,
        }
    }
}

/// When to colour text output.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ColorArg {
    /// Only when stdout is a terminal.
    Auto,
    /// Always (ANSI escapes, also into a pipe).
    Always,
    /// Never: plain text, the flags stay readable.
    Never,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Dry run: levels (cm^-1, THz, lifetime), every drive (transition, wavelength,
    /// detuning, peak Rabi frequency, pulse area, left out or not) and field intensities.
    #[command(after_help = INSPECT_HELP)]
    Inspect {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// Output format.
        #[arg(long, value_enum, default_value_t = FormatArg::Text)]
        format: FormatArg,
        /// Write to this file (written whole or not at all) instead of stdout.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Colour text output.
        #[arg(long, value_enum, default_value_t = ColorArg::Auto)]
        color: ColorArg,
    },
    /// The main job: exact propagation and the perturbative estimate side by side;
    /// flags spectators above tolerance, names the drives that feed them and a computed remedy.
    #[command(after_help = VET_HELP)]
    Vet {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// Spectator tolerance: a final population (bare number in (0, 1], e.g. 1e-3) above
        /// which a spectator is flagged; overrides the scheme's default, per-level tolerances
        /// still apply.
        #[arg(long, value_name = "POPULATION")]
        tolerance: Option<f64>,
        /// Target goal: a final population (bare number in (0, 1], e.g. 0.95) every target
        /// must reach; a target below it is marked SHORT and, like a leak, gives exit status 3.
        /// Without it targets are reported, not judged.
        #[arg(long, value_name = "POPULATION")]
        goal: Option<f64>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = FormatArg::Text)]
        format: FormatArg,
        /// Write to this file (written whole or not at all) instead of stdout.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Colour text output.
        #[arg(long, value_enum, default_value_t = ColorArg::Auto)]
        color: ColorArg,
    },
    /// Populations of every level against time, as CSV (time_s,<level ids>) and optionally an SVG plot.
    #[command(after_help = EVOLVE_HELP)]
    Evolve {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// Number of evenly spaced time samples over the scheme's window, start and end
        /// included (2 to 1,000,000).
        #[arg(long, default_value_t = 201, value_name = "N")]
        samples: usize,
        /// Write the CSV (time in s, populations) to this file (written whole or not at all)
        /// instead of stdout.
        #[arg(long, value_name = "FILE.csv")]
        out: Option<PathBuf>,
        /// Also draw the populations against time (axis in s, ms, us, ns or ps) into this SVG
        /// file, with the tolerance as a dashed line.
        #[arg(long, value_name = "FILE.svg")]
        plot: Option<PathBuf>,
        /// Logarithmic population axis in the plot, floor 1e-12 (shows small spectator
        /// populations).
        #[arg(long)]
        log: bool,
    },
    /// Parameter scan: a full exact + perturbative run at every point of a grid of scheme
    /// values; CSV rows in grid order (one column per varied path with its unit, P(<level>)
    /// per level, max_spectator, flagged, est(<level>) per level), optionally a plot.
    #[command(after_help = SCAN_HELP)]
    Scan {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// PATH=START..END:COUNT[:log]. PATH is the dot path of a number in the scheme
        /// (fields.probe.tuned.detuning, fields.probe.envelope.duration, levels.e2.energy);
        /// START and END carry a unit of the same dimension as the scheme's value there
        /// ("-50MHz" or "-50 MHz"; no unit: the scheme's unit). COUNT >= 1 points, END
        /// included. Repeat for a grid: the first --vary varies slowest, the last fastest.
        #[arg(long = "vary", value_name = "PATH=START..END:COUNT", required = true)]
        vary: Vec<String>,
        /// Logarithmic spacing on every axis (START and END positive); per axis: ":log".
        #[arg(long)]
        log: bool,
        /// Spectator tolerance (population in (0, 1]) for the flagged and max_spectator
        /// columns and the plot; per-level tolerances still apply. Default: the scheme's.
        #[arg(long, value_name = "POPULATION")]
        tolerance: Option<f64>,
        /// Write the CSV here (progressively to .FILE.partial, renamed when complete)
        /// instead of stdout.
        #[arg(long, value_name = "FILE.csv")]
        out: Option<PathBuf>,
        /// Draw an SVG: 1-D, every level's final population (estimate dashed, tolerance line);
        /// 2-D, heat map of the largest spectator population with the tolerance outline
        /// (first --vary on x).
        #[arg(long, value_name = "FILE.svg")]
        plot: Option<PathBuf>,
        /// Logarithmic population axis in a 1-D plot (floor 1e-12).
        #[arg(long)]
        log_y: bool,
        /// Worker threads (default: one per core). The output does not depend on it.
        #[arg(long, value_name = "N")]
        jobs: Option<usize>,
        /// Compute only the K-th of N contiguous parts of the grid (K from 1 to N, e.g. a
        /// Slurm array task id); join the parts with `levelplan merge`.
        #[arg(long, value_name = "K/N")]
        shard: Option<String>,
        /// Continue an interrupted scan from the rows in .FILE.partial (needs --out; same
        /// scheme and options).
        #[arg(long)]
        resume: bool,
        /// Run grids larger than 10^7 points.
        #[arg(long)]
        force: bool,
    },
    /// Calibrate one scheme value: the value that maximises a level's final population
    /// (pi-pulse power or duration, resonance position), or the smallest value at which
    /// every spectator is within tolerance and every target reaches --goal.
    #[command(after_help = TUNE_HELP)]
    Tune {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// PATH=LO..HI[:COUNT][:log]: the value to tune, its range (units as for scan),
        /// and the number of coarse-grid points (default 41, at least 3).
        #[arg(long, value_name = "PATH=LO..HI")]
        vary: String,
        /// Maximise the final population of this level (its id in the scheme).
        #[arg(
            long,
            value_name = "LEVEL",
            conflicts_with = "shortest",
            required_unless_present = "shortest"
        )]
        maximize: Option<String>,
        /// Find the smallest value with every spectator within tolerance and every target
        /// at or above --goal.
        #[arg(long)]
        shortest: bool,
        /// Final population every target must reach with --shortest (bare number in (0, 1]).
        #[arg(
            long,
            value_name = "POPULATION",
            default_value_t = 0.99,
            requires = "shortest"
        )]
        goal: f64,
        /// Spectator tolerance (population in (0, 1]); default: the scheme's.
        #[arg(long, value_name = "POPULATION")]
        tolerance: Option<f64>,
        /// Refine until the bracket is narrower than this fraction of the range
        /// (of log10 of the value with --log).
        #[arg(long, value_name = "FRACTION", default_value_t = crate::tune::DEFAULT_XTOL)]
        xtol: f64,
        /// Logarithmic spacing of the coarse grid and the search (LO and HI positive).
        #[arg(long)]
        log: bool,
        /// Worker threads for the coarse grid (default: one per core).
        #[arg(long, value_name = "N")]
        jobs: Option<usize>,
    },
    /// Join the part files of a sharded scan (`scan --shard K/N`) into the file the
    /// unsharded scan writes, byte for byte. Refuses parts of different scans, a missing
    /// or repeated shard, and a part cut short.
    #[command(
        after_help = "Example:\n  levelplan merge part_1.csv part_2.csv part_3.csv part_4.csv --out spectrum.csv --plot spectrum.svg\n\nExit status: 0 merged, 2 bad or mismatched parts, 1 output not written."
    )]
    Merge {
        /// Part files, in any order.
        #[arg(required = true, value_name = "PART.csv")]
        parts: Vec<PathBuf>,
        /// Write the merged CSV here (atomically) instead of stdout.
        #[arg(long, value_name = "FILE.csv")]
        out: Option<PathBuf>,
        /// Also draw the merged scan as `scan --plot` does (1-D and 2-D scans).
        #[arg(long, value_name = "FILE.svg")]
        plot: Option<PathBuf>,
        /// Logarithmic population axis in a 1-D plot.
        #[arg(long)]
        log_y: bool,
    },
}

const SCAN_HELP: &str = "Examples:
  levelplan scan level_schemes/two_level_calibration.yaml \\
      --vary fields.probe.tuned.detuning=-50MHz..50MHz:101 --out spectrum.csv --plot spectrum.svg --log-y
  levelplan scan level_schemes/two_level_calibration.yaml \\
      --vary fields.probe.envelope.duration=50ns..5000ns:31:log --vary fields.probe.tuned.detuning=-20MHz..20MHz:41 \\
      --out map.csv --plot map.svg
  levelplan scan SCHEME --vary ... --shard 3/16 --out part_3.csv   (then: levelplan merge part_*.csv --out all.csv)

Rows are in grid order and byte-identical for any --jobs and after merge. Leading '#' lines state the tool
version, the scheme's SHA-256, every --vary, the tolerance and the scan hash. A grid is limited to 10^7 points
without --force. Interrupting (Ctrl-C, kill) leaves no FILE; --resume continues it.

Exit status: 0 written, 2 bad input (path, unit, COUNT, shard, grid size; no file is created), 1 a point failed
or the output could not be written.

Laser safety: the numbers are for planning. Beam powers used in such schemes can cause eye and skin injury;
follow your institution's laser-safety rules, its laser safety officer, and IEC 60825-1 / ANSI Z136.1.";

const TUNE_HELP: &str = "Examples:
  levelplan tune level_schemes/two_level_calibration.yaml --vary fields.probe.envelope.duration=20ns..200ns --maximize e
  levelplan tune level_schemes/two_level_calibration.yaml --vary fields.probe.envelope.duration=5ns..5000ns:41:log \\
      --shortest --goal 0.99

Prints the value with its uncertainty (the final bracket, which holds the maximum or the feasibility boundary),
the populations there, and the number of solves. --maximize assumes one maximum between the neighbours of the
best coarse point; --shortest takes the first feasible coarse point and bisects towards its predecessor
(a feasible window narrower than a coarse step can be missed).

Exit status: 0 found, 3 no value in the range meets the --shortest condition, 2 bad input, 1 a run failed.";

fn sink(out: Option<PathBuf>, color: ColorArg) -> Sink {
    match out {
        Some(p) => Sink::File(p),
        None => Sink::Stdout {
            color: match color {
                ColorArg::Always => true,
                ColorArg::Never => false,
                ColorArg::Auto => std::io::stdout().is_terminal(),
            },
        },
    }
}

/// Run a parsed command line; the result is the exit status.
pub fn run(cli: Cli) -> Result<i32, Error> {
    match cli.command {
        Command::Inspect {
            scheme,
            format,
            out,
            color,
        } => app::inspect(&scheme, format.into(), &sink(out, color)),
        Command::Vet {
            scheme,
            tolerance,
            goal,
            format,
            out,
            color,
        } => app::vet(&scheme, tolerance, goal, format.into(), &sink(out, color)),
        Command::Evolve {
            scheme,
            samples,
            out,
            plot,
            log,
        } => app::evolve(
            &scheme,
            &EvolveOptions {
                samples,
                csv: sink(out, ColorArg::Never),
                plot,
                log,
            },
        ),
        Command::Scan {
            scheme,
            vary,
            log,
            tolerance,
            out,
            plot,
            log_y,
            jobs,
            shard,
            resume,
            force,
        } => scan::scan(&ScanOptions {
            scheme,
            vary,
            log,
            tolerance,
            out,
            plot,
            log_y,
            jobs,
            shard,
            resume,
            force,
            progress: std::io::stderr().is_terminal(),
        }),
        Command::Tune {
            scheme,
            vary,
            maximize,
            shortest,
            goal,
            tolerance,
            xtol,
            log,
            jobs,
        } => scan::tune(&TuneOptions {
            scheme,
            vary,
            log,
            maximize,
            shortest,
            goal,
            tolerance,
            xtol,
            jobs,
        }),
        Command::Merge {
            parts,
            out,
            plot,
            log_y,
        } => scan::merge(&parts, &sink(out, ColorArg::Never), plot.as_deref(), log_y),
    }
}
