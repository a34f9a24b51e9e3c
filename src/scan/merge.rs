//! Joining the part files of a sharded scan into the file the unsharded
//! scan writes, byte for byte.
//!
//! Owns: the checks that parts belong together (hash, head, shard set, row
//! counts, no cut row) and their order. Must not: read files (the caller
//! passes their texts and names).

use super::{bad, merge_order, Shard};
use crate::error::Error;
use crate::render::scan as fmt;
use std::path::PathBuf;

/// The merge itself, on the texts of the parts (named by `names`).
pub fn merge_texts(names: &[PathBuf], texts: &[String]) -> Result<Vec<u8>, Error> {
    let mut parsed = Vec::new();
    let mut shards = Vec::new();
    for (name, text) in names.iter().zip(texts) {
        let n = name.display();
        let p =
            fmt::split(text).map_err(|m| bad("merge", format!("{n} is not a scan file: {m}")))?;
        if p.hash().is_none() {
            return Err(bad(
                "merge",
                format!(
                    "{n} is not a scan file (no '{}' line)",
                    fmt::HASH_PREFIX.trim()
                ),
            ));
        }
        if !p.tail.is_empty() {
            return Err(bad(
                "merge",
                format!("{n} ends in a cut row: that shard did not finish"),
            ));
        }
        let sh = p.shard_text().ok_or_else(|| {
            bad(
                "merge",
                format!("{n} is a whole scan, not a shard part (no '# shard K/N' line)"),
            )
        })?;
        shards.push(Shard::parse(sh).map_err(|e| bad("merge", format!("{n}: {e}")))?);
        parsed.push(p);
    }
    let first = parsed
        .first()
        .ok_or_else(|| bad("merge", "no part files given"))?;
    for (name, p) in names.iter().zip(&parsed).skip(1) {
        if p.hash() != first.hash() {
            return Err(bad(
                "merge",
                format!(
                    "{} and {} are parts of different scans (scan hash {} and {})",
                    names[0].display(),
                    name.display(),
                    first.hash().unwrap_or_default(),
                    p.hash().unwrap_or_default()
                ),
            ));
        }
        let (a, b) = (first.common_comments(), p.common_comments());
        if a != b || p.header != first.header {
            let ja = format!("{}\n{}", a.join("\n"), first.header);
            let jb = format!("{}\n{}", b.join("\n"), p.header);
            let (line, x, y) = fmt::first_difference(&ja, &jb).unwrap_or((0, "", ""));
            return Err(bad(
                "merge",
                format!(
                    "{} and {} differ in their head (line {line}: '{x}' and '{y}')",
                    names[0].display(),
                    name.display()
                ),
            ));
        }
    }
    let order = merge_order(&shards)?;
    let total = first.grid_points().ok_or_else(|| {
        bad(
            "merge",
            format!("{} states no grid size", names[0].display()),
        )
    })?;
    let mut out = String::new();
    for c in first.common_comments() {
        out.push_str(c);
        out.push('\n');
    }
    out.push_str(first.header);
    out.push('\n');
    for &pos in &order {
        let want = shards[pos].range(total).len();
        let have = parsed[pos].rows.len();
        if have != want {
            return Err(bad(
                "merge",
                format!(
                    "{} (shard {}/{}) has {have} rows where {want} are expected",
                    names[pos].display(),
                    shards[pos].k,
                    shards[pos].n
                ),
            ));
        }
        for r in &parsed[pos].rows {
            out.push_str(r);
            out.push('\n');
        }
    }
    Ok(out.into_bytes())
}
