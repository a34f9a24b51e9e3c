//! Bounds on what one run may take: worker threads (at most the cores),
//! wall-clock time (`--time-limit`), and the size of a scan part `merge`
//! reads.
//!
//! Owns: these limits and their notes on stderr. Must not: evaluate points
//! or format rows.

use levelplan::error::{Error, EXIT_FAILED};
use std::io::Read;
use std::path::Path;
use std::time::{Duration, Instant};

/// Largest scan part `merge` reads: 1 GiB. A 10^7-point scan (the largest
/// without `--force`) of the two-level test scheme writes about 0.9 GB
/// (91 bytes a row, measured); a scan with longer rows is split into more
/// shards.
pub const PART_LIMIT: u64 = 1 << 30;

/// The number of worker threads to start: `--jobs N` capped at the cores
/// this process may use, with a one-line note when capped. `--jobs 0` is
/// left for the thread pool to refuse.
pub fn jobs(asked: Option<usize>) -> Option<usize> {
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    match asked {
        Some(n) if n > cores => {
            eprintln!(
                "levelplan: note: --jobs {n} capped at {cores}, the cores available to this process"
            );
            Some(cores)
        }
        other => other,
    }
}

/// Parse a `--time-limit` value: a number with a unit `s`, `m`, `h`
/// (`90s`, `15m`, `1.5h`); a bare number is seconds.
pub fn parse_duration(text: &str) -> Result<Duration, String> {
    let t = text.trim();
    let (num, scale) = if let Some(n) = t.strip_suffix('h') {
        (n, 3600.0)
    } else if let Some(n) = t.strip_suffix('m') {
        (n, 60.0)
    } else if let Some(n) = t.strip_suffix('s') {
        (n, 1.0)
    } else {
        (t, 1.0)
    };
    let v: f64 = num
        .trim()
        .parse()
        .map_err(|_| format!("expected a duration such as 90s, 15m or 1.5h, found '{text}'"))?;
    let secs = v * scale;
    if !(secs > 0.0 && secs <= 1e9) {
        return Err(format!(
            "expected a positive duration of at most 10^9 s, found '{text}'"
        ));
    }
    Ok(Duration::from_secs_f64(secs))
}

/// The moment a run started with `--time-limit` must stop.
pub fn deadline(limit: Option<Duration>) -> Option<Instant> {
    limit.map(|d| Instant::now() + d)
}

/// Whether the deadline has passed.
pub fn past(deadline: Option<Instant>) -> bool {
    deadline.is_some_and(|d| Instant::now() >= d)
}

/// Run `work` under a wall-clock limit: without one, on this thread; with
/// one, on a worker thread, giving up (None) when the limit passes first.
/// The caller then ends the run, and the process exit stops the worker,
/// which writes no file (the callers write only after `work` returns).
pub fn within<T: Send + 'static>(
    limit: Option<Duration>,
    work: impl FnOnce() -> T + Send + 'static,
) -> Option<T> {
    let Some(limit) = limit else {
        return Some(work());
    };
    let (tx, rx) = std::sync::mpsc::channel();
    let worker = std::thread::spawn(move || {
        let _ = tx.send(work());
    });
    match rx.recv_timeout(limit) {
        Ok(v) => Some(v),
        Err(std::sync::mpsc::RecvTimeoutError::Timeout) => None,
        // The worker ended without a result: it panicked; pass that on.
        Err(std::sync::mpsc::RecvTimeoutError::Disconnected) => match worker.join() {
            Err(panic) => std::panic::resume_unwind(panic),
            Ok(()) => None,
        },
    }
}

/// Say that `--time-limit` ended `command` before it finished; the exit
/// status (1: no result to vouch for).
pub fn ran_out(limit: Option<Duration>, command: &str) -> i32 {
    eprintln!(
        "levelplan: time limit of {} s reached before {command} finished; no result is written",
        limit.unwrap_or_default().as_secs_f64()
    );
    EXIT_FAILED
}

/// Read one part file for `merge`: a regular file (links followed) of at
/// most [`PART_LIMIT`] bytes, as UTF-8 text. A device or FIFO (`/dev/zero`
/// never ends) and a larger file are refused (exit 2) before reading.
pub fn read_part(p: &Path) -> Result<String, Error> {
    let input = |source| Error::Input {
        path: p.to_path_buf(),
        source,
    };
    let refuse = |m: String| input(std::io::Error::other(m));
    let meta = std::fs::metadata(p).map_err(input)?;
    if !meta.is_file() {
        return Err(refuse(
            "not a regular file (a device, FIFO or directory); merge reads the part files a scan wrote".into(),
        ));
    }
    let too_big = || {
        refuse(format!(
            "larger than {PART_LIMIT} bytes (1 GiB), the most merge reads of one part"
        ))
    };
    if meta.len() > PART_LIMIT {
        return Err(too_big());
    }
    let mut bytes = Vec::new();
    std::fs::File::open(p)
        .and_then(|f| f.take(PART_LIMIT + 1).read_to_end(&mut bytes))
        .map_err(input)?;
    if bytes.len() as u64 > PART_LIMIT {
        return Err(too_big());
    }
    String::from_utf8(bytes).map_err(|_| Error::BadArgument {
        what: "merge".into(),
        message: format!("{} is not UTF-8 text", p.display()),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durations() {
        assert_eq!(parse_duration("90s"), Ok(Duration::from_secs(90)));
        assert_eq!(parse_duration("15m"), Ok(Duration::from_secs(900)));
        assert_eq!(parse_duration("1.5h"), Ok(Duration::from_secs(5400)));
        assert_eq!(parse_duration("2"), Ok(Duration::from_secs(2)));
        for bad in ["", "0", "-1s", "soon", "nan", "inf", "1e20"] {
            assert!(parse_duration(bad).is_err(), "{bad}");
        }
    }
}
