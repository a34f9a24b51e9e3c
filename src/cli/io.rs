//! The terminal and the files of a command: where the main output goes
//! (stdout or a file written whole), reading a scheme file.
//!
//! Owns: every byte the binary writes to stdout and every file it reads or
//! writes. Must not: format reports (renderers do) or compute.

use super::output::write_atomic;
use levelplan::error::Error;
use levelplan::model::Model;
use levelplan::report::Provenance;
use levelplan::scheme;
use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};

/// Where a command's main output goes.
#[derive(Debug, Clone, PartialEq)]
pub enum Sink {
    Stdout { color: bool },
    File(PathBuf),
}

impl Sink {
    /// stdout (coloured as asked, `auto`: only on a terminal) or a file.
    pub fn new(out: Option<PathBuf>, color: super::args::ColorArg) -> Sink {
        use super::args::ColorArg;
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

    /// Whether text output may carry colour escapes.
    pub fn color(&self) -> bool {
        matches!(self, Sink::Stdout { color: true })
    }

    /// Write the bytes: to stdout, or atomically to the file.
    pub fn emit(&self, bytes: &[u8]) -> Result<(), Error> {
        match self {
            Sink::Stdout { .. } => {
                let mut out = std::io::stdout().lock();
                out.write_all(bytes)
                    .and_then(|_| out.flush())
                    .map_err(|source| Error::Output {
                        path: PathBuf::from("<stdout>"),
                        source,
                    })
            }
            Sink::File(p) => write_atomic(p, bytes),
        }
    }
}

/// Read and validate a scheme file; its provenance (name, SHA-256).
pub fn load(path: &Path) -> Result<(Model, Provenance), Error> {
    let (model, source) = scheme::load(path)?;
    Ok((model, Provenance::new(&source.path, &source.sha256)))
}

/// Render into memory first, so a failing renderer writes nothing.
pub fn render_to_vec(
    f: impl FnOnce(&mut Vec<u8>) -> std::io::Result<()>,
) -> Result<Vec<u8>, Error> {
    let mut buf = Vec::new();
    f(&mut buf).map_err(|source| Error::Output {
        path: PathBuf::from("<buffer>"),
        source,
    })?;
    Ok(buf)
}

/// Write an SVG (or the plot's error) to `path`.
pub fn write_plot(
    path: &Path,
    svg: Result<String, levelplan::plot::PlotError>,
) -> Result<(), Error> {
    let svg = svg.map_err(|e| Error::Output {
        path: path.to_path_buf(),
        source: std::io::Error::other(e),
    })?;
    write_atomic(path, svg.as_bytes())
}

