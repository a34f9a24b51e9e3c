//! The library's top-level error: what went wrong, in which stage, and the
//! exit status the command line gives it.
//!
//! Owns: [`Error`] and the mapping to exit codes (2 bad input, 1 a run that
//! could not vouch for its result or could not write its output). Must not:
//! print; the CLI prints the message once.

use std::path::PathBuf;

/// Exit status: every spectator within tolerance.
pub const EXIT_OK: i32 = 0;
/// Exit status: a run failed (step budget, non-finite value, output not written).
pub const EXIT_FAILED: i32 = 1;
/// Exit status: bad input (scheme file, command-line value).
pub const EXIT_BAD_INPUT: i32 = 2;
/// Exit status: at least one spectator above its tolerance.
pub const EXIT_TOLERANCE: i32 = 3;

#[derive(Debug, thiserror::Error)]
pub enum Error {
    #[error(transparent)]
    Scheme(#[from] crate::scheme::SchemeError),
    #[error("{0}")]
    Solve(#[from] crate::solve::SolveError),
    #[error("{0}")]
    Estimate(#[from] crate::estimate::EstimateError),
    /// A model the library derives (a remedy's changed pulse) that its
    /// builder refuses; a scheme's own problems are `Scheme` errors.
    #[error("a changed model was refused: {0}")]
    Model(#[from] crate::model::ModelError),
    #[error("{what}: {message}")]
    BadArgument { what: String, message: String },
    #[error("could not write {path}: {source}")]
    Output {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("non-finite value in {stage}; no result is reported")]
    NonFinite { stage: String },
    #[error("norm error {norm_error:.3e} exceeds the limit {limit:.1e}: the propagation cannot be trusted; tighten solver.rtol/atol")]
    NormError { norm_error: f64, limit: f64 },
    #[error("the density matrix lost positivity by {defect:.3e} (limit {limit:.1e}): the propagation cannot be trusted; tighten solver.rtol/atol")]
    PositivityError { defect: f64, limit: f64 },
    #[error("could not read {path}: {source}")]
    Input {
        path: PathBuf,
        source: std::io::Error,
    },
    /// A failure at one point of a scan or tune, with the point's values.
    #[error("at {at}: {source}")]
    AtPoint { at: String, source: Box<Error> },
}

impl Error {
    /// Whether the error is a write to a closed pipe (`levelplan ... | head`):
    /// the reader has what it wanted, which is no failure.
    pub fn is_broken_pipe(&self) -> bool {
        match self {
            Error::Output { source, .. } => source.kind() == std::io::ErrorKind::BrokenPipe,
            Error::AtPoint { source, .. } => source.is_broken_pipe(),
            _ => false,
        }
    }

    /// The message as it may be shown on a terminal: control characters
    /// other than the line breaks between messages as `(0xNN)`, and any
    /// run of more than [`LONG_RUN`] characters without a space (a huge id
    /// or value pasted into a scheme) cut to its start and its length; a
    /// line still longer than [`LONG_LINE`] keeps its start and end.
    pub fn shown(&self) -> String {
        shown(&self.to_string())
    }

    /// The process exit status for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Scheme(_) | Error::BadArgument { .. } | Error::Input { .. } => EXIT_BAD_INPUT,
            Error::AtPoint { source, .. } => source.exit_code(),
            _ => EXIT_FAILED,
        }
    }
}

/// Longest run of non-space characters a message shows whole.
pub const LONG_RUN: usize = 160;

/// `msg` made safe and short for a terminal (see [`Error::shown`]).
pub fn shown(msg: &str) -> String {
    let mut out = String::with_capacity(msg.len().min(4096));
    let mut run = String::new();
    let flush = |run: &mut String, out: &mut String| {
        let n = run.chars().count();
        if n > LONG_RUN {
            let head: String = run.chars().take(60).collect();
            out.push_str(&format!("{head}... ({n} characters in all)"));
        } else {
            out.push_str(run);
        }
        run.clear();
    };
    for ch in msg.chars() {
        if ch == ' ' || ch == '\n' {
            flush(&mut run, &mut out);
            out.push(ch);
        } else if ch.is_control() {
            run.push_str(&format!("(0x{:02x})", ch as u32));
        } else {
            run.push(ch);
        }
    }
    flush(&mut run, &mut out);
    out.split('\n')
        .map(capped_line)
        .collect::<Vec<_>>()
        .join("\n")
}

/// Longest message line shown whole.
pub const LONG_LINE: usize = 1200;

/// A line of at most [`LONG_LINE`] characters as it is; a longer one (a
/// long value with spaces, quoted back in a message) as its first 800 and
/// last 200 characters around what was left out.
fn capped_line(line: &str) -> String {
    let n = line.chars().count();
    if n <= LONG_LINE {
        return line.to_string();
    }
    let head: String = line.chars().take(800).collect();
    let tail: String = line.chars().skip(n - 200).collect();
    format!("{head} [... {} characters left out ...] {tail}", n - 1000)
}

#[cfg(test)]
mod shown_tests {
    use super::shown;

    /// Regression: a 900 kB level id came back whole in the message, and an
    /// escape byte from a scheme reached the terminal raw.
    #[test]
    fn long_runs_are_cut_and_control_characters_shown() {
        let id = "Z".repeat(900_000);
        let m = shown(&format!(
            "s.yaml:27:10: initial: found '{id}' (no such level)"
        ));
        assert!(m.len() < 200, "{} bytes", m.len());
        assert!(m.contains("'ZZZZ"), "{m}");
        assert!(m.contains("(900002 characters in all)"), "{m}");
        assert!(m.ends_with(" (no such level)"), "{m}");
        assert_eq!(shown("a\u{1b}[31mb\u{7}\nnext"), "a(0x1b)[31mb(0x07)\nnext");
        let spaced = format!("found the string '{}'", "1e-8,1e0 ".repeat(20_000));
        let m = shown(&format!("{spaced}\nsecond line"));
        assert!(m.len() < 1200, "{} bytes", m.len());
        assert!(m.contains("characters left out"), "{m}");
        assert!(m.ends_with("'\nsecond line"), "{m}");
        let plain = "s.yaml:3:1: levels: expected a map, found a list";
        assert_eq!(shown(plain), plain);
    }
}
