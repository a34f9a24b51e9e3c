//! The command line: clap definitions of the subcommands and their options,
//! and the dispatch to [`crate::app`]. No physics and no IO here.
//!
//! Owns: argument names, help texts, defaults. Must not: read schemes or
//! compute anything; every command is one call into the app layer.

use crate::app::{self, EvolveOptions, Sink};
use crate::error::Error;
use crate::render::Format;
use clap::{Parser, Subcommand, ValueEnum};
use std::io::IsTerminal;
use std::path::PathBuf;

const EXIT_CODES: &str = "Exit status: 0 every spectator within tolerance (or the command succeeded), \
3 at least one spectator above its tolerance (vet), 2 bad input (scheme file or option), \
1 a run that could not vouch for its result (step budget, norm error, non-finite value) or could not write its output.

Laser safety: the numbers are for planning. Beam powers used in such schemes can cause eye and skin \
injury; follow your institution's laser-safety rules, its laser safety officer, and IEC 60825-1 / ANSI Z136.1.";

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
    Text,
    Markdown,
    Latex,
    Csv,
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
    Always,
    Never,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Dry run: levels (cm^-1, THz, lifetime), every drive (transition, wavelength,
    /// detuning, peak Rabi frequency, pulse area, left out or not) and field intensities.
    #[command(
        after_help = "Example:\n  levelplan inspect level_schemes/hyperfine_manifold.yaml --format json"
    )]
    Inspect {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// Output format.
        #[arg(long, value_enum, default_value_t = FormatArg::Text)]
        format: FormatArg,
        /// Write to this file (atomically) instead of stdout.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Colour text output.
        #[arg(long, value_enum, default_value_t = ColorArg::Auto)]
        color: ColorArg,
    },
    /// The main job: exact propagation and the perturbative estimate side by side;
    /// flags spectators above tolerance, names the drives that feed them and a computed remedy.
    #[command(
        after_help = "Example:\n  levelplan vet level_schemes/hyperfine_manifold.yaml --tolerance 1e-3 --format markdown --out table.md\n\nExit status: 0 every spectator within tolerance, 3 at least one above, 2 bad input, 1 run failed."
    )]
    Vet {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// Spectator tolerance (population, a bare number in (0, 1]); overrides the scheme's
        /// default, per-level tolerances still apply.
        #[arg(long, value_name = "POPULATION")]
        tolerance: Option<f64>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = FormatArg::Text)]
        format: FormatArg,
        /// Write to this file (atomically) instead of stdout.
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Colour text output.
        #[arg(long, value_enum, default_value_t = ColorArg::Auto)]
        color: ColorArg,
    },
    /// Populations of every level against time, as CSV (time_s,<level ids>) and optionally an SVG plot.
    #[command(
        after_help = "Example:\n  levelplan evolve level_schemes/two_level_calibration.yaml --samples 401 --out run.csv --plot run.svg --log"
    )]
    Evolve {
        /// Scheme file (YAML).
        scheme: PathBuf,
        /// Number of evenly spaced time samples, window start and end included.
        #[arg(long, default_value_t = 201, value_name = "N")]
        samples: usize,
        /// Write the CSV to this file (atomically) instead of stdout.
        #[arg(long, value_name = "FILE.csv")]
        out: Option<PathBuf>,
        /// Also draw the populations into this SVG file.
        #[arg(long, value_name = "FILE.svg")]
        plot: Option<PathBuf>,
        /// Logarithmic population axis in the plot (shows small spectator populations).
        #[arg(long)]
        log: bool,
    },
}

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
            format,
            out,
            color,
        } => app::vet(&scheme, tolerance, format.into(), &sink(out, color)),
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
    }
}
