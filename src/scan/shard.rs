//! Shards of a grid: contiguous blocks of the grid order, the K-th of N,
//! and the order that joins them again.
//!
//! Owns: which flat indices a shard computes. Must not: read part files.

use super::bad;
use crate::error::Error;
use std::ops::Range;

/// The K-th of N parts of a grid (K 1-based, as Slurm's array task ids).
/// Shards are contiguous blocks of the grid order, so merging is
/// concatenation in K order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    pub k: usize,
    pub n: usize,
}

impl Shard {
    /// Parse `K/N` with 1 <= K <= N.
    pub fn parse(text: &str) -> Result<Shard, Error> {
        let what = format!("--shard '{text}'");
        let (k, n) = text
            .split_once('/')
            .ok_or_else(|| bad(&what, "expected K/N, e.g. 3/16 (K counts from 1)"))?;
        let num = |s: &str, name: &str| {
            s.trim().parse::<usize>().map_err(|_| {
                bad(
                    &what,
                    format!(
                        "{name} must be a positive whole number, found '{}'",
                        s.trim()
                    ),
                )
            })
        };
        let (k, n) = (num(k, "K")?, num(n, "N")?);
        if n == 0 {
            return Err(bad(&what, "N must be at least 1"));
        }
        if k == 0 || k > n {
            return Err(bad(
                &what,
                format!("K must be between 1 and N = {n} (K counts from 1), found {k}"),
            ));
        }
        Ok(Shard { k, n })
    }

    /// The flat indices this shard computes out of `total` points:
    /// [floor((K-1) total / N), floor(K total / N)). The N shards cover the
    /// grid exactly once; sizes differ by at most one.
    pub fn range(&self, total: usize) -> Range<usize> {
        let cut = |k: usize| ((k as u128 * total as u128) / self.n as u128) as usize;
        cut(self.k - 1)..cut(self.k)
    }
}

/// The order in which to concatenate parts: checks that the shards share one
/// N and that every K from 1 to N is present exactly once. Returns the
/// position in `shards` of part 1, part 2, ...
pub fn merge_order(shards: &[Shard]) -> Result<Vec<usize>, Error> {
    let first = shards
        .first()
        .ok_or_else(|| bad("merge", "no part files given"))?;
    let n = first.n;
    if let Some(s) = shards.iter().find(|s| s.n != n) {
        return Err(bad(
            "merge",
            format!(
                "parts of different splits: shard {}/{} beside shard {}/{}",
                s.k, s.n, first.k, n
            ),
        ));
    }
    let mut slot: Vec<Option<usize>> = vec![None; n];
    for (pos, s) in shards.iter().enumerate() {
        if slot[s.k - 1].is_some() {
            return Err(bad("merge", format!("shard {}/{n} is given twice", s.k)));
        }
        slot[s.k - 1] = Some(pos);
    }
    let missing: Vec<String> = slot
        .iter()
        .enumerate()
        .filter(|(_, p)| p.is_none())
        .map(|(k, _)| (k + 1).to_string())
        .collect();
    if !missing.is_empty() {
        return Err(bad(
            "merge",
            format!("shard(s) {} of {n} missing", missing.join(", ")),
        ));
    }
    Ok(slot.into_iter().flatten().collect())
}
