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
use std::io::{IsTerminal, Read, Write};
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

/// A scheme file's bytes: at most [`scheme::READ_LIMIT`] of them, so a huge
/// file (or one that never ends, like a device) is refused without reading it
/// all.
fn read_bytes(path: &Path) -> Result<(Vec<u8>, String), Error> {
    let name = path.display().to_string();
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(scheme::READ_LIMIT).read_to_end(&mut bytes))
        .map_err(|e| scheme::unreadable(&name, &e))?;
    Ok((bytes, name))
}

/// Read a scheme file as text with its provenance (size limit, UTF-8,
/// SHA-256): the one way every command reads a scheme.
pub fn read_source(path: &Path) -> Result<(String, scheme::SchemeSource), Error> {
    let (bytes, name) = read_bytes(path)?;
    Ok(scheme::source_from_bytes(&bytes, &name)?)
}

/// Read and validate a scheme file; its provenance (name, SHA-256).
pub fn load(path: &Path) -> Result<(Model, Provenance), Error> {
    let (bytes, name) = read_bytes(path)?;
    let (model, source) = scheme::from_bytes(&bytes, &name)?;
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
