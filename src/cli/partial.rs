//! The partial file of a scan written to `--out FILE`: `.FILE.partial`
//! beside it, created with the head, continued by `--resume` after checking
//! that it is this scan's, cut back to its last whole row.
//!
//! Owns: the partial file's name, creation and resumption. Must not: spell
//! rows (`render::scan` does) or evaluate points.

use super::scan::Plan;
use levelplan::error::Error;
use levelplan::render::scan as fmt;
use levelplan::scan::ScanRow;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

fn bad(what: &str, message: impl Into<String>) -> Error {
    Error::BadArgument {
        what: what.to_string(),
        message: message.into(),
    }
}

/// The partial file of an output: `.<name>.partial` beside it.
pub fn partial_path(out: &Path) -> Result<PathBuf, Error> {
    let name = out
        .file_name()
        .ok_or_else(|| bad("--out", format!("{} is not a file name", out.display())))?;
    let partial = format!(".{}.partial", name.to_string_lossy());
    Ok(match out.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.join(partial),
        _ => PathBuf::from(partial),
    })
}

pub fn out_err(path: &Path) -> impl Fn(std::io::Error) -> Error + '_ {
    move |source| Error::Output {
        path: path.to_path_buf(),
        source,
    }
}

/// Open the partial file: continue it (`resume`) after checking that it is
/// this scan's, or create it with the head. Returns the file positioned at
/// its end, the first index still to compute, and (if `keep`) the rows read.
pub fn open_partial(
    partial: &Path,
    plan: &Plan,
    resume: bool,
    keep: bool,
) -> Result<(fs::File, usize, Vec<ScanRow>), Error> {
    let what = "--resume";
    if !partial.exists() {
        let mut f = fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(partial)
            .map_err(out_err(partial))?;
        f.write_all(plan.head.as_bytes())
            .map_err(out_err(partial))?;
        return Ok((f, plan.range.start, Vec::new()));
    }
    if !resume {
        return Err(bad(
            "--out",
            format!(
                "{} holds an interrupted scan: pass --resume to continue it, or delete it to start afresh",
                partial.display()
            ),
        ));
    }
    let bytes = fs::read(partial).map_err(|source| Error::Input {
        path: partial.to_path_buf(),
        source,
    })?;
    let damaged = |m: String| {
        bad(
            what,
            format!(
                "{} is damaged ({m}); delete it to start afresh",
                partial.display()
            ),
        )
    };
    let text = String::from_utf8(bytes).map_err(|_| damaged("not UTF-8 text".into()))?;
    if !text.starts_with(&plan.head) {
        let (n, ours, theirs) = fmt::first_difference(&plan.head, &text).unwrap_or((
            0,
            "<the head>",
            "<a shorter head>",
        ));
        return Err(bad(
            what,
            format!(
                "{} belongs to a different scan (line {n}: this run writes '{ours}', the file has '{theirs}'); rerun with the same scheme and options, or delete it",
                partial.display()
            ),
        ));
    }
    let parsed = fmt::split(&text).map_err(damaged)?;
    if parsed.rows.len() > plan.range.len() {
        return Err(damaged(format!(
            "{} rows where this scan has {}",
            parsed.rows.len(),
            plan.range.len()
        )));
    }
    let n_axes = plan.grid.columns().len();
    let mut kept = Vec::new();
    let mut valid = parsed.body_start;
    for (j, line) in parsed.rows.iter().enumerate() {
        let index = plan.range.start + j;
        if !line.starts_with(&fmt::coords_prefix(&plan.grid.point(index))) {
            return Err(damaged(format!("row {} is not grid point {index}", j + 1)));
        }
        let row = fmt::parse_row(line, n_axes, plan.n_levels, plan.open)
            .map_err(|m| damaged(format!("row {}: {m}", j + 1)))?;
        if keep {
            kept.push(row);
        }
        valid += line.len() + 1;
    }
    // A row cut short by the kill is dropped and computed again.
    let mut f = fs::OpenOptions::new()
        .write(true)
        .open(partial)
        .map_err(out_err(partial))?;
    f.set_len(valid as u64).map_err(out_err(partial))?;
    f = fs::OpenOptions::new()
        .append(true)
        .open(partial)
        .map_err(out_err(partial))?;
    Ok((f, plan.range.start + parsed.rows.len(), kept))
}
