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

    /// The process exit status for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Scheme(_) | Error::BadArgument { .. } | Error::Input { .. } => EXIT_BAD_INPUT,
            Error::AtPoint { source, .. } => source.exit_code(),
            _ => EXIT_FAILED,
        }
    }
}
