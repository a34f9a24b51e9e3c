//! The long help texts of the commands: examples, units, exit statuses and
//! the laser-safety note, which comes from the one definition the reports
//! print ([`levelplan::render::doc::SAFETY_TEXT`]).
//!
//! Owns: the wording of `--help` beyond the one-line flag descriptions
//! (those sit beside each flag in `args.rs`). Must not: parse or run anything.

use levelplan::render::doc::SAFETY_TEXT;

const CHECK: &str = "Results are model calculations; check them against measurement.";

fn with_safety(body: &str, check: bool) -> String {
    let tail = if check {
        format!(" {CHECK}")
    } else {
        String::new()
    };
    format!("{body}\n\n{SAFETY_TEXT}{tail}")
}

/// After the top-level help.
pub fn top() -> String {
    with_safety(
        "Units: frequencies given in Hz are cyclic (Omega/2pi, Delta/2pi); detuning = laser - transition \
(positive = blue); Rabi frequencies at the envelope peak; Gaussian FWHM of the intensity; populations are |c|^2 \
in the bare basis. The scheme format, physics and worked examples: docs/scheme-format.md, docs/physics.md, \
docs/cookbook.md in the source repository.

Exit status: 0 every spectator within tolerance (or the command succeeded), \
3 at least one spectator above its tolerance or, with --goal, a target below the goal (vet), 2 bad input (scheme file or option), \
1 a run that could not vouch for its result (step budget, norm error, non-finite value) or could not write its output.
The step budget (default 5000000 steps per propagation) is raised with --step-budget N.",
        true,
    )
}

pub fn inspect() -> String {
    with_safety(
        "Examples:
  levelplan inspect level_schemes/hyperfine_manifold.yaml
  levelplan inspect level_schemes/hyperfine_manifold.yaml --format json --out drives.json

Units of the text, Markdown and LaTeX reports (with SI prefixes): energies in cm^-1 and Hz (E/h), lifetimes
in s, vacuum wavelengths in nm, frequencies, detunings and Rabi frequencies cyclic in Hz (detuning = laser -
transition, positive = blue), pulse areas in units of pi (Omega x integral of the envelope), peak intensities
in W/cm^2. CSV and JSON: full precision, the unit named in the column or key. Nothing is propagated.

Exit status: 0 printed, 2 bad input (scheme file or option), 1 output not written.",
        false,
    )
}

pub fn vet() -> String {
    with_safety(
        "Examples:
  levelplan vet level_schemes/hyperfine_manifold.yaml
  levelplan vet level_schemes/hyperfine_manifold.yaml --tolerance 1e-3 --format markdown --out table.md
  levelplan vet level_schemes/hyperfine_manifold.yaml --format latex      (booktabs tables for a proposal)

For every level: final and peak population (exact propagation), the perturbative estimate and its order
(1st, or 2nd where first order cannot reach the level), final/estimate, the tolerance and the status (LEAK:
spectator above its tolerance; est?: estimate above 0.1 or off the exact value by more than a factor 2).
Each leak lists the drives that feed it (field, source level, detuning and Rabi frequency, cyclic, in Hz with
SI prefixes) and a remedy (same pulse area with a Gaussian or Blackman envelope of the same intensity FWHM, or the
pulse length that brings the estimate below tolerance), each checked by exact propagation; a check that
cannot be run (step budget, say) is shown as 'not checked' with the reason and does not change the exit
status. Drives beyond the detuning cutoff are listed with their estimate and light shift Omega^2/(4 Delta)
(cyclic). Populations below 1e-3 are printed in scientific notation. Every output records the tool version, the scheme file and the
SHA-256 of its bytes, the solver method and tolerances.

Exit status: 0 every spectator within tolerance, 3 at least one above or (with --goal) a target
below the goal (the report is still printed),
2 bad input (scheme file or option), 1 a run that could not vouch for its result or output not written.",
        true,
    )
}

pub fn evolve() -> String {
    with_safety(
        "Examples:
  levelplan evolve level_schemes/two_level_calibration.yaml --samples 401 --out run.csv --plot run.svg --log
  levelplan evolve level_schemes/two_level_calibration.yaml --samples 5      (CSV to stdout)

CSV: a leading '#' line (tool version, scheme file and SHA-256, solver method, rtol, atol), then the header
time_s,<level ids> and one row per sample: the absolute scheme time in seconds and every level's population
|c|^2 (bare basis), in full precision. The samples are evenly spaced over the window, both ends included; the
last row is the final state.

Exit status: 0 written, 2 bad input (scheme file or option), 1 a run that could not vouch for its result
(step budget, norm error, non-finite value) or output not written.",
        false,
    )
}

pub fn scan() -> String {
    with_safety(
        "Examples:
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
or the output could not be written.",
        false,
    )
}

pub fn tune() -> String {
    with_safety(
        "Examples:
  levelplan tune level_schemes/two_level_calibration.yaml --vary fields.probe.envelope.duration=20ns..200ns --maximize e
  levelplan tune level_schemes/two_level_calibration.yaml --vary fields.probe.envelope.duration=5ns..5000ns:41:log \\
      --shortest --goal 0.99

Prints the value with its uncertainty (the final bracket, which holds the maximum or the feasibility boundary),
the populations there, and the number of solves. --maximize assumes one maximum between the neighbours of the
best coarse point; --shortest takes the first feasible coarse point and bisects towards its predecessor
(a feasible window narrower than a coarse step can be missed).

Exit status: 0 found, 3 no value in the range meets the --shortest condition, 2 bad input, 1 a run failed.",
        false,
    )
}

pub fn merge() -> String {
    "Example:\n  levelplan merge part_1.csv part_2.csv part_3.csv part_4.csv --out spectrum.csv --plot spectrum.svg\n\nExit status: 0 merged, 2 bad or mismatched parts, 1 output not written.".to_string()
}
