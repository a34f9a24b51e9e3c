//! Parameter scans: the `--vary` specifications, the grid and its order, the
//! shards of a grid, the identity (hash) of a scan, and the ordered parallel
//! evaluation of grid points.
//!
//! Owns: which points a scan visits and in which order, which of them a shard
//! computes, and the rule that rows reach their sink in grid order whatever
//! the number of threads. Must not: read or write files, format numbers,
//! print, or know what a point's evaluation computes (the app passes it in
//! as a closure, so the grid, shard and merge logic is testable without
//! physics).
//!
//! Grid order is row-major: the LAST `--vary` varies fastest, the first
//! slowest (like nested loops written in the order of the options).

mod axis;
mod grid;
pub mod merge;
mod parallel;
mod shard;
#[cfg(test)]
mod tests;

pub use axis::{Axis, Link, Spacing, VarySpec};
pub use grid::{check_size, hex, scan_hash, Grid};
pub use parallel::{run_ordered, thread_pool};
pub use shard::{merge_order, Shard};

use crate::error::Error;

/// Largest grid a scan runs without `--force`.
pub const MAX_POINTS: usize = 10_000_000;

/// Default number of coarse-grid points of `tune`.
pub const DEFAULT_TUNE_POINTS: usize = 41;

pub(crate) fn bad(what: &str, message: impl Into<String>) -> Error {
    Error::BadArgument {
        what: what.to_string(),
        message: message.into(),
    }
}

/// One computed grid point: the varied values (in their axes' units), the
/// final population of every level, the largest spectator population, the
/// number of flagged spectators, the perturbative estimate of every
/// level (None for an initially populated level), the population lost at
/// the readout and the photons scattered inside the window per atom (None
/// where unknown: a row read back from a file without those columns).
#[derive(Debug, Clone, PartialEq)]
pub struct ScanRow {
    pub coords: Vec<f64>,
    pub populations: Vec<f64>,
    pub max_spectator: f64,
    pub flagged: usize,
    pub estimates: Vec<Option<f64>>,
    pub lost: Option<f64>,
    pub scattered_photons: Option<f64>,
}

impl ScanRow {
    /// The row as a file with (`open`) or without the open-system columns
    /// holds it: without them the lost population and the photons are
    /// unknown, as in a row read back from such a file.
    pub fn as_written(mut self, open: bool) -> ScanRow {
        if !open {
            self.lost = None;
            self.scattered_photons = None;
        }
        self
    }
}

/// What `tune` looks for.
#[derive(Debug, Clone, PartialEq)]
pub enum TuneGoal {
    /// The largest final population of this level (index into the levels).
    Maximize { level: usize },
    /// The smallest value at which every spectator is within tolerance and
    /// every target reaches `goal`.
    Shortest { goal: f64 },
}

/// Where `tune` ended: the value (in the axis unit), the bracket that holds
/// the optimum or the feasibility boundary, and the computed point there.
#[derive(Debug, Clone, PartialEq)]
pub struct TuneFound {
    pub value: f64,
    pub lo: f64,
    pub hi: f64,
    /// The best coarse point was at an end of the range.
    pub at_edge: bool,
    pub row: ScanRow,
}

/// The result of a `tune` run, plain data for the renderer.
#[derive(Debug, Clone, PartialEq)]
pub struct TuneReport {
    pub provenance: crate::report::Provenance,
    pub axis: Axis,
    pub goal: TuneGoal,
    pub level_ids: Vec<String>,
    pub roles: Vec<crate::report::Role>,
    /// Solves on the coarse grid and during refinement.
    pub coarse_points: usize,
    pub refine_solves: usize,
    /// None: no coarse point met the condition (`Shortest`).
    pub found: Option<TuneFound>,
}
