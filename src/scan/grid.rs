//! The grid of a scan (row-major: the last axis fastest), its size limit
//! and the hash that names a scan.
//!
//! Owns: flat index <-> coordinates, the overrides of a point, the scan hash.
//! Must not: evaluate points or read files.

use super::{bad, Axis, MAX_POINTS};
use crate::error::Error;
use sha2::{Digest, Sha256};

/// The number of points of a grid with these axis counts; refuses more than
/// [`MAX_POINTS`] unless `force`, and any product that overflows.
pub fn check_size(counts: impl IntoIterator<Item = usize>, force: bool) -> Result<usize, Error> {
    let total = counts
        .into_iter()
        .try_fold(1usize, |acc, n| acc.checked_mul(n))
        .ok_or_else(|| {
            bad(
                "--vary",
                "the grid has more points than this machine can count",
            )
        })?;
    if total > MAX_POINTS && !force {
        return Err(bad(
            "--vary",
            format!("the grid has {total} points, more than the limit of {MAX_POINTS}; pass --force to run it anyway"),
        ));
    }
    Ok(total)
}

/// A grid of points: the product of the axes, row-major with the last axis
/// varying fastest.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    pub axes: Vec<Axis>,
}

impl Grid {
    /// A grid of these axes; refuses more than [`MAX_POINTS`] points unless
    /// `force`, and any product that overflows.
    pub fn new(axes: Vec<Axis>, force: bool) -> Result<Grid, Error> {
        if axes.is_empty() {
            return Err(bad("--vary", "at least one --vary is needed"));
        }
        if let Some(a) = axes.iter().find(|a| a.count == 0) {
            return Err(bad(
                &format!("--vary {}", a.path),
                "COUNT must be at least 1",
            ));
        }
        check_size(axes.iter().map(|a| a.count), force)?;
        Ok(Grid { axes })
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.axes.iter().map(|a| a.count).product()
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Per-axis indices of the point with this flat index.
    pub fn indices(&self, mut index: usize) -> Vec<usize> {
        let mut out = vec![0; self.axes.len()];
        for (k, a) in self.axes.iter().enumerate().rev() {
            out[k] = index % a.count;
            index /= a.count;
        }
        out
    }

    /// The coordinates of a point, one per column (each axis's value, then
    /// its linked paths' values, in their units).
    pub fn point(&self, index: usize) -> Vec<f64> {
        self.indices(index)
            .iter()
            .zip(&self.axes)
            .flat_map(|(&i, a)| a.values(i))
            .collect()
    }

    /// The (path, unit) of every coordinate column, in the order of
    /// [`Grid::point`].
    pub fn columns(&self) -> Vec<(&str, &str)> {
        self.axes.iter().flat_map(Axis::columns).collect()
    }

    /// The (path, "<number> <unit>") overrides of a point, for the scheme parser.
    pub fn overrides(&self, coords: &[f64]) -> Vec<(String, String)> {
        self.columns()
            .into_iter()
            .zip(coords)
            .map(|((p, u), &v)| (p.to_string(), super::axis::override_text(u, v)))
            .collect()
    }
}

/// Lower-case hexadecimal of a digest.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// The identity of a scan: SHA-256 (hex) of the scheme bytes, the axes
/// (path, unit, start, end, count, spacing), their linked paths (path,
/// unit, start, end; hashed only when there are any, so a scan without
/// links keeps its hash) and the tolerance override.
/// Shards of one scan share it; it does not depend on threads or shard.
pub fn scan_hash(scheme_bytes: &[u8], axes: &[Axis], tolerance: Option<f64>) -> String {
    let mut h = Sha256::new();
    h.update(b"levelplan scan v1\0");
    h.update((scheme_bytes.len() as u64).to_le_bytes());
    h.update(scheme_bytes);
    h.update((axes.len() as u64).to_le_bytes());
    for a in axes {
        for s in [&a.path, &a.unit] {
            h.update((s.len() as u64).to_le_bytes());
            h.update(s.as_bytes());
        }
        h.update(a.start.to_bits().to_le_bytes());
        h.update(a.end.to_bits().to_le_bytes());
        h.update((a.count as u64).to_le_bytes());
        h.update([a.spacing as u8]);
    }
    if axes.iter().any(|a| !a.links.is_empty()) {
        h.update(b"links\0");
        for a in axes {
            h.update((a.links.len() as u64).to_le_bytes());
            for l in &a.links {
                for s in [&l.path, &l.unit] {
                    h.update((s.len() as u64).to_le_bytes());
                    h.update(s.as_bytes());
                }
                h.update(l.start.to_bits().to_le_bytes());
                h.update(l.end.to_bits().to_le_bytes());
            }
        }
    }
    match tolerance {
        None => h.update([0u8]),
        Some(t) => {
            h.update([1u8]);
            h.update(t.to_bits().to_le_bytes());
        }
    }
    hex(&h.finalize())
}
