//! The command line as typed: one argument struct per subcommand, the flags
//! several subcommands share defined once (their help with them).
//!
//! Owns: flag names, one-line help, defaults. Must not: check values beyond
//! their type (the library refuses bad values with its own messages; a
//! count that must be positive, `--step-budget`, is typed so by its parser)
//! or run anything.

use super::help;
use clap::{Args, Parser, Subcommand, ValueEnum};
use levelplan::render::{Format, Sublevels};
use std::path::PathBuf;

#[derive(Debug, Parser)]
#[command(
    name = "levelplan",
    version,
    about = "Plan laser excitation schemes: exact propagation (Schrodinger equation, or the Lindblad master equation for open systems) beside first-order estimates, leakage reports for proposals",
    after_help = help::top()
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The command line parsed, with each `scan --with` told which `--vary`
/// it follows (clap's derive keeps each option's values, not their order).
pub fn parse() -> Result<Cli, clap::Error> {
    use clap::{CommandFactory, FromArgMatches};
    let matches = Cli::command().try_get_matches()?;
    let mut cli = Cli::from_arg_matches(&matches)?;
    if let (Command::Scan(a), Some(m)) = (&mut cli.command, matches.subcommand_matches("scan")) {
        let varies: Vec<usize> = m
            .indices_of("vary")
            .map(Iterator::collect)
            .unwrap_or_default();
        a.with_after = m
            .indices_of("with")
            .map(|w| {
                w.map(|i| varies.iter().filter(|&&v| v < i).count())
                    .collect()
            })
            .unwrap_or_default();
    }
    Ok(cli)
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Dry run: levels (cm^-1, THz, lifetime), every drive (transition, wavelength,
    /// detuning, peak Rabi frequency, pulse area, left out or not) and field intensities.
    #[command(after_help = help::inspect())]
    Inspect(InspectArgs),
    /// The main job: exact propagation and the perturbative estimate side by side;
    /// flags spectators above tolerance, names the drives that feed them and a computed remedy.
    #[command(after_help = help::vet())]
    Vet(VetArgs),
    /// Populations of every level against time, as CSV (time_s,<level ids>) and optionally an SVG plot.
    #[command(after_help = help::evolve())]
    Evolve(EvolveArgs),
    /// Parameter scan: a full exact + perturbative run at every point of a grid of scheme
    /// values; CSV rows in grid order (one column per varied path with its unit, P(<level>)
    /// per level, max_spectator, flagged, est(<level>) per level), optionally a plot.
    #[command(after_help = help::scan())]
    Scan(ScanArgs),
    /// Calibrate one scheme value: the value that maximises a level's final population
    /// (pi-pulse power or duration, resonance position), or the smallest value at which
    /// every spectator is within tolerance and every target reaches --goal.
    #[command(after_help = help::tune())]
    Tune(TuneArgs),
    /// Join the part files of a sharded scan (`scan --shard K/N`) into the file the
    /// unsharded scan writes, byte for byte. Refuses parts of different scans, a missing
    /// or repeated shard, and a part cut short.
    #[command(after_help = help::merge())]
    Merge(MergeArgs),
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
    /// The stable keys of the contract (docs/output-format.md), full precision.
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

/// The scheme file every command but `merge` reads.
#[derive(Debug, Args)]
pub struct SchemeArg {
    /// Scheme file (YAML).
    pub scheme: PathBuf,
}

/// Where and how a report is written (`inspect`, `vet`).
#[derive(Debug, Args)]
pub struct ReportOutput {
    /// Output format.
    #[arg(long, value_enum, default_value_t = FormatArg::Text)]
    pub format: FormatArg,
    /// Write to this file (written whole or not at all) instead of stdout.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Colour text output.
    #[arg(long, value_enum, default_value_t = ColorArg::Auto)]
    pub color: ColorArg,
    /// Text, Markdown and LaTeX: every sublevel a manifold generates on its own row,
    /// instead of one row per manifold and F (total population, largest sublevel).
    /// CSV and JSON always list every level.
    #[arg(long)]
    pub sublevels: bool,
}

impl ReportOutput {
    /// How the readable formats show sublevels.
    pub fn sublevel_rows(&self) -> Sublevels {
        if self.sublevels {
            Sublevels::Each
        } else {
            Sublevels::Grouped
        }
    }
}

/// The spectator tolerance option.
#[derive(Debug, Args)]
pub struct ToleranceArg {
    /// Spectator tolerance: a final population (bare number in (0, 1], e.g. 1e-3) above
    /// which a spectator is flagged; overrides the scheme's default, per-level tolerances
    /// still apply.
    #[arg(long, value_name = "POPULATION")]
    pub tolerance: Option<f64>,
}

/// The worker-thread option.
#[derive(Debug, Args)]
pub struct JobsArg {
    /// Worker threads (default: one per core; more than the cores are capped at their
    /// number, with a note). The output does not depend on it.
    #[arg(long, value_name = "N")]
    pub jobs: Option<usize>,
}

/// The step budget of every propagation a command runs.
#[derive(Debug, Args)]
pub struct StepBudgetArg {
    /// Most steps (adaptive: accepted and rejected; exact: segments and peak sub-steps) one
    /// propagation may take (a whole number >= 1); a run that needs more stops with exit
    /// status 1, except that the exact propagator samples peak populations more coarsely
    /// instead (final populations stay exact). Raise it for a long window with a fast time
    /// scale.
    #[arg(
        long,
        value_name = "N",
        default_value_t = levelplan::solve::DEFAULT_STEP_BUDGET,
        value_parser = clap::value_parser!(u64).range(1..)
    )]
    pub step_budget: u64,
}

/// The wall-clock limit of a long command.
#[derive(Debug, Args)]
pub struct TimeLimitArg {
    /// Stop cleanly after this long (90s, 15m, 1.5h; a bare number is seconds) with exit
    /// status 1: a scan keeps the rows finished so far (with --out in .FILE.partial, which
    /// --resume continues); vet, evolve and tune write nothing.
    #[arg(long, value_name = "DURATION", value_parser = super::bounds::parse_duration)]
    pub time_limit: Option<std::time::Duration>,
}

/// Whether a `tuned` carrier follows a varied level energy.
#[derive(Debug, Args)]
pub struct TunedFollowsArg {
    /// Let every `tuned` laser follow its levels when a varied path is under `levels` or
    /// `manifolds` (its carrier recomputed at each point). Default: such a laser keeps
    /// the frequency of the scheme as written, so the level moves through it.
    #[arg(long)]
    pub tuned_follows: bool,
}

/// Logarithmic population axis of a 1-D scan plot.
#[derive(Debug, Args)]
pub struct LogYArg {
    /// Logarithmic population axis in a 1-D plot (floor 1e-12).
    #[arg(long)]
    pub log_y: bool,
}

#[derive(Debug, Args)]
pub struct InspectArgs {
    #[command(flatten)]
    pub scheme: SchemeArg,
    #[command(flatten)]
    pub output: ReportOutput,
}

#[derive(Debug, Args)]
pub struct VetArgs {
    #[command(flatten)]
    pub scheme: SchemeArg,
    #[command(flatten)]
    pub tolerance: ToleranceArg,
    /// Target goal: a final population (bare number in (0, 1], e.g. 0.95) every target
    /// must reach; a target below it is marked SHORT and, like a leak, gives exit status 3.
    /// Without it targets are reported, not judged.
    #[arg(long, value_name = "POPULATION")]
    pub goal: Option<f64>,
    #[command(flatten)]
    pub step_budget: StepBudgetArg,
    #[command(flatten)]
    pub time_limit: TimeLimitArg,
    #[command(flatten)]
    pub output: ReportOutput,
}

#[derive(Debug, Args)]
pub struct EvolveArgs {
    #[command(flatten)]
    pub scheme: SchemeArg,
    /// Number of evenly spaced time samples over the scheme's window, start and end
    /// included (2 to 1,000,000).
    #[arg(long, default_value_t = 201, value_name = "N")]
    pub samples: usize,
    // Same shape as scan's and merge's --out/--plot: apart, each help says what its files hold.
    /// Write the CSV (time in s, populations) to this file (written whole or not at all)
    /// instead of stdout.
    #[arg(long, value_name = "FILE.csv")]
    pub out: Option<PathBuf>,
    /// Also draw the populations against time (axis in s, ms, us, ns or ps) into this SVG
    /// file, with the tolerance as a dashed line.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Logarithmic population axis in the plot, floor 1e-12 (shows small spectator
    /// populations).
    #[arg(long)]
    pub log: bool,
    #[command(flatten)]
    pub step_budget: StepBudgetArg,
    #[command(flatten)]
    pub time_limit: TimeLimitArg,
}

#[derive(Debug, Args)]
pub struct ScanArgs {
    #[command(flatten)]
    pub scheme: SchemeArg,
    /// PATH=START..END:COUNT[:log]. PATH is the dot path of a number in the scheme
    /// (fields.probe.tuned.detuning, fields.probe.envelope.duration, levels.e2.energy);
    /// START and END carry a unit of the same dimension as the scheme's value there
    /// ("-50MHz" or "-50 MHz"; no unit: the scheme's unit). COUNT >= 1 points, END
    /// included. Repeat for a grid: the first --vary varies slowest, the last fastest.
    #[arg(long = "vary", value_name = "PATH=START..END:COUNT", required = true)]
    pub vary: Vec<String>,
    /// PATH=START..END: move this path together with the --vary written before it (a
    /// linked axis): at that axis's i-th point it takes the i-th of as many values from
    /// START to END, spaced as the axis. Its own CSV column. Repeatable.
    #[arg(long = "with", value_name = "PATH=START..END")]
    pub with: Vec<String>,
    /// For each --with, the number of --vary options written before it (filled from
    /// the command line's order by `place_links`).
    #[arg(skip)]
    pub with_after: Vec<usize>,
    #[command(flatten)]
    pub tuned: TunedFollowsArg,
    /// Logarithmic spacing on every axis (START and END positive); per axis: ":log".
    #[arg(long)]
    pub log: bool,
    #[command(flatten)]
    pub tolerance: ToleranceArg,
    // Same shape as evolve's --out/--plot: apart, each help says what its files hold.
    /// Write the CSV here (progressively to .FILE.partial, renamed when complete)
    /// instead of stdout.
    #[arg(long, value_name = "FILE.csv")]
    pub out: Option<PathBuf>,
    /// Draw an SVG: 1-D, every level's final population (estimate dashed, tolerance line);
    /// 2-D, heat map of the largest spectator population with the tolerance outline
    /// (first --vary on x).
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    #[command(flatten)]
    pub log_y: LogYArg,
    #[command(flatten)]
    pub jobs: JobsArg,
    #[command(flatten)]
    pub step_budget: StepBudgetArg,
    #[command(flatten)]
    pub time_limit: TimeLimitArg,
    /// Compute only the K-th of N contiguous parts of the grid (K from 1 to N, e.g. a
    /// Slurm array task id); join the parts with `levelplan merge`.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<String>,
    /// Continue an interrupted scan from the rows in .FILE.partial (needs --out; same
    /// scheme and options).
    #[arg(long)]
    pub resume: bool,
    /// Run grids larger than 10^7 points.
    #[arg(long)]
    pub force: bool,
}

#[derive(Debug, Args)]
pub struct TuneArgs {
    #[command(flatten)]
    pub scheme: SchemeArg,
    /// PATH=LO..HI[:COUNT][:log]: the value to tune, its range (units as for scan),
    /// and the number of coarse-grid points (default 41, at least 3).
    #[arg(long, value_name = "PATH=LO..HI")]
    pub vary: String,
    /// Linked paths are for scan; tune refuses them (it searches one value).
    #[arg(long = "with", value_name = "PATH=LO..HI", hide = true)]
    pub with: Vec<String>,
    #[command(flatten)]
    pub tuned: TunedFollowsArg,
    /// Maximise the final population of this level (its id in the scheme).
    #[arg(
        long,
        value_name = "LEVEL",
        conflicts_with = "shortest",
        required_unless_present = "shortest"
    )]
    pub maximize: Option<String>,
    /// Find the smallest value with every spectator within tolerance and every target
    /// at or above --goal.
    #[arg(long)]
    pub shortest: bool,
    /// Final population every target must reach with --shortest (bare number in (0, 1]).
    #[arg(
        long,
        value_name = "POPULATION",
        default_value_t = 0.99,
        requires = "shortest"
    )]
    pub goal: f64,
    #[command(flatten)]
    pub tolerance: ToleranceArg,
    /// Refine until the bracket is narrower than this fraction of the range
    /// (of log10 of the value with --log).
    #[arg(long, value_name = "FRACTION", default_value_t = levelplan::tune::DEFAULT_XTOL)]
    pub xtol: f64,
    /// Logarithmic spacing of the coarse grid and the search (LO and HI positive).
    #[arg(long)]
    pub log: bool,
    #[command(flatten)]
    pub jobs: JobsArg,
    #[command(flatten)]
    pub step_budget: StepBudgetArg,
    #[command(flatten)]
    pub time_limit: TimeLimitArg,
}

#[derive(Debug, Args)]
pub struct MergeArgs {
    /// Part files, in any order.
    #[arg(required = true, value_name = "PART.csv")]
    pub parts: Vec<PathBuf>,
    // Same shape as evolve's and scan's --out/--plot: apart, each help says what its files hold.
    /// Write the merged CSV here (atomically) instead of stdout.
    #[arg(long, value_name = "FILE.csv")]
    pub out: Option<PathBuf>,
    /// Also draw the merged scan as `scan --plot` does (1-D and 2-D scans).
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    #[command(flatten)]
    pub log_y: LogYArg,
}
