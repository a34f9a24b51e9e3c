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

use crate::error::Error;
use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::ops::Range;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc;

/// Largest grid a scan runs without `--force`.
pub const MAX_POINTS: usize = 10_000_000;

/// Default number of coarse-grid points of `tune`.
pub const DEFAULT_TUNE_POINTS: usize = 41;

fn bad(what: &str, message: impl Into<String>) -> Error {
    Error::BadArgument {
        what: what.to_string(),
        message: message.into(),
    }
}

/// How the values of an axis are spaced.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Spacing {
    Linear,
    /// Geometric spacing; START and END must be positive.
    Log,
}

impl Spacing {
    pub fn as_str(&self) -> &'static str {
        match self {
            Spacing::Linear => "linear",
            Spacing::Log => "log",
        }
    }
}

/// One `--vary` option as the user typed it, checked for form only:
/// `PATH=START..END[:COUNT][:log]`, START and END numbers with an optional
/// unit (`-50MHz`, `-50 MHz`); a unit written on one end applies to both.
#[derive(Debug, Clone, PartialEq)]
pub struct VarySpec {
    pub path: String,
    pub start: f64,
    pub end: f64,
    /// The unit written with START and/or END, if any.
    pub unit: Option<String>,
    pub count: Option<usize>,
    /// `:log` was written after the count.
    pub log: bool,
}

/// Split `text` into a leading decimal number and the rest (trimmed).
/// An exponent is taken only when `e`/`E` is followed by digits, so
/// `1ea0` is the number 1 with the unit `ea0`.
fn split_number(text: &str) -> Option<(f64, &str)> {
    let s = text.trim();
    let b = s.as_bytes();
    let mut i = 0;
    if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
        i += 1;
    }
    let mantissa_start = i;
    while i < b.len() && b[i].is_ascii_digit() {
        i += 1;
    }
    if i < b.len() && b[i] == b'.' {
        i += 1;
        while i < b.len() && b[i].is_ascii_digit() {
            i += 1;
        }
    }
    let mantissa = &s[mantissa_start..i];
    if mantissa.is_empty() || mantissa == "." {
        return None;
    }
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        let mut j = i + 1;
        if j < b.len() && (b[j] == b'+' || b[j] == b'-') {
            j += 1;
        }
        let digits = j;
        while j < b.len() && b[j].is_ascii_digit() {
            j += 1;
        }
        if j > digits {
            i = j;
        }
    }
    let value: f64 = s[..i].parse().ok()?;
    Some((value, s[i..].trim()))
}

impl VarySpec {
    /// Parse one `--vary` value. `count_required`: the scan needs `:COUNT`,
    /// tune makes it optional.
    pub fn parse(text: &str, count_required: bool) -> Result<VarySpec, Error> {
        let what = format!("--vary '{text}'");
        let form =
            "expected PATH=START..END:COUNT, e.g. fields.probe.tuned.detuning=-50MHz..50MHz:101";
        let (path, rest) = text
            .split_once('=')
            .ok_or_else(|| bad(&what, format!("no '=': {form}")))?;
        let path = path.trim();
        if path.is_empty() || path.split('.').any(|k| k.is_empty()) {
            return Err(bad(
                &what,
                format!("PATH must be keys joined by '.': {form}"),
            ));
        }
        if path.contains(|c: char| c.is_whitespace() || c == ',' || c == '"') {
            return Err(bad(&what, "PATH may not contain spaces, commas or quotes"));
        }
        let mut parts = rest.split(':');
        let range = parts.next().unwrap_or_default();
        let mut count = None;
        let mut log = false;
        for (k, p) in parts.enumerate() {
            let p = p.trim();
            if k == 0 && p != "log" {
                let n: i64 = p.parse().map_err(|_| {
                    bad(&what, format!("COUNT must be a whole number, found '{p}'"))
                })?;
                if n < 1 {
                    return Err(bad(&what, format!("COUNT must be at least 1, found {n}")));
                }
                count = Some(usize::try_from(n).map_err(|_| bad(&what, "COUNT is too large"))?);
            } else if p == "log" && !log {
                log = true;
            } else {
                return Err(bad(
                    &what,
                    format!("unexpected ':{p}' (only ':COUNT' and ':log' may follow the range)"),
                ));
            }
        }
        if count_required && count.is_none() {
            return Err(bad(&what, format!("no ':COUNT': {form}")));
        }
        let (a, b) = range
            .split_once("..")
            .ok_or_else(|| bad(&what, format!("no '..' between START and END: {form}")))?;
        fn endpoint<'s>(s: &'s str, name: &str, what: &str) -> Result<(f64, &'s str), Error> {
            split_number(s).ok_or_else(|| {
                bad(
                    what,
                    format!(
                        "{name} must be a number with an optional unit, found '{}'",
                        s.trim()
                    ),
                )
            })
        }
        let (start, ua) = endpoint(a, "START", &what)?;
        let (end, ub) = endpoint(b, "END", &what)?;
        if !start.is_finite() || !end.is_finite() {
            return Err(bad(&what, "START and END must be finite"));
        }
        let unit = match (ua.is_empty(), ub.is_empty()) {
            (true, true) => None,
            (false, true) => Some(ua.to_string()),
            (true, false) => Some(ub.to_string()),
            (false, false) if ua == ub => Some(ua.to_string()),
            _ => {
                return Err(bad(
                    &what,
                    format!("START and END are in different units ('{ua}' and '{ub}'); write both in one unit"),
                ))
            }
        };
        Ok(VarySpec {
            path: path.to_string(),
            start,
            end,
            unit,
            count,
            log,
        })
    }
}

impl VarySpec {
    /// The spacing of this range with `--log` (all axes) or `:log` (this
    /// one); log spacing needs positive START and END.
    pub fn spacing(&self, log: bool) -> Result<Spacing, Error> {
        if !(log || self.log) {
            return Ok(Spacing::Linear);
        }
        if !(self.start > 0.0 && self.end > 0.0) {
            return Err(bad(
                &format!("--vary {}", self.path),
                format!(
                    "log spacing needs positive START and END, found {} and {}",
                    self.start, self.end
                ),
            ));
        }
        Ok(Spacing::Log)
    }
}

/// One varied value of the scheme: a path, the unit its numbers are written
/// in (empty for a bare number), and the values it takes.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    pub path: String,
    pub unit: String,
    pub start: f64,
    pub end: f64,
    pub count: usize,
    pub spacing: Spacing,
}

impl Axis {
    /// Build an axis from a spec, the unit the scheme writes at that path
    /// (used when the spec gives none), and the spacing. `count` overrides
    /// the spec's count (tune's default).
    pub fn new(spec: &VarySpec, scheme_unit: &str, log: bool, count: usize) -> Result<Axis, Error> {
        let what = format!("--vary {}", spec.path);
        let unit = match (&spec.unit, scheme_unit.is_empty()) {
            (Some(u), true) => {
                return Err(bad(
                    &what,
                    format!("the scheme writes a bare number at this path, but the range carries the unit '{u}'"),
                ))
            }
            (Some(u), false) => u.clone(),
            (None, _) => scheme_unit.to_string(),
        };
        let spacing = spec.spacing(log)?;
        if count == 0 {
            return Err(bad(&what, "COUNT must be at least 1"));
        }
        Ok(Axis {
            path: spec.path.clone(),
            unit,
            start: spec.start,
            end: spec.end,
            count,
            spacing,
        })
    }

    /// The value at fraction `t` of the range (0 = START, 1 = END), linear
    /// or geometric.
    pub fn at_fraction(&self, t: f64) -> f64 {
        if t <= 0.0 {
            return self.start;
        }
        if t >= 1.0 {
            return self.end;
        }
        match self.spacing {
            Spacing::Linear => self.start + (self.end - self.start) * t,
            Spacing::Log => self.start * (self.end / self.start).powf(t),
        }
    }

    /// The i-th value (0-based); the first is START, the last END exactly.
    /// A single-point axis sits at START.
    pub fn value(&self, i: usize) -> f64 {
        if self.count <= 1 || i == 0 {
            return self.start;
        }
        if i + 1 >= self.count {
            return self.end;
        }
        self.at_fraction(i as f64 / (self.count - 1) as f64)
    }

    /// The override value as the scheme writes it: "<number> <unit>", or the
    /// bare number for a key without unit. The number round-trips exactly.
    pub fn override_text(&self, v: f64) -> String {
        if self.unit.is_empty() {
            format!("{v}")
        } else {
            format!("{v} {}", self.unit)
        }
    }
}

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

    /// The coordinates (one value per axis, in the axis's unit) of a point.
    pub fn point(&self, index: usize) -> Vec<f64> {
        self.indices(index)
            .iter()
            .zip(&self.axes)
            .map(|(&i, a)| a.value(i))
            .collect()
    }

    /// The (path, "<number> <unit>") overrides of a point, for the scheme parser.
    pub fn overrides(&self, coords: &[f64]) -> Vec<(String, String)> {
        self.axes
            .iter()
            .zip(coords)
            .map(|(a, &v)| (a.path.clone(), a.override_text(v)))
            .collect()
    }
}

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

/// Lower-case hexadecimal of a digest.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// The identity of a scan: SHA-256 (hex) of the scheme bytes, the axes
/// (path, unit, start, end, count, spacing) and the tolerance override.
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
    match tolerance {
        None => h.update([0u8]),
        Some(t) => {
            h.update([1u8]);
            h.update(t.to_bits().to_le_bytes());
        }
    }
    hex(&h.finalize())
}

/// One computed grid point: the varied values (in their axes' units), the
/// final population of every level, the largest spectator population, the
/// number of flagged spectators, and the perturbative estimate of every
/// level (None for an initially populated level).
#[derive(Debug, Clone, PartialEq)]
pub struct ScanRow {
    pub coords: Vec<f64>,
    pub populations: Vec<f64>,
    pub max_spectator: f64,
    pub flagged: usize,
    pub estimates: Vec<Option<f64>>,
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

/// A thread pool of `jobs` threads (None: one per available core).
pub fn thread_pool(jobs: Option<usize>) -> Result<rayon::ThreadPool, Error> {
    let n = match jobs {
        Some(0) => return Err(bad("--jobs", "at least 1 thread is needed")),
        Some(n) => n,
        None => std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1),
    };
    rayon::ThreadPoolBuilder::new()
        .num_threads(n)
        .build()
        .map_err(|e| bad("--jobs", format!("could not start {n} threads: {e}")))
}

/// Most points a worker claims at once (see [`run_ordered`]).
const MAX_CLAIM: usize = 16;

/// Evaluate `eval(i)` for every flat index in `range` on the pool's threads
/// and hand each result to `sink` in index order, on the calling thread.
///
/// Indices are handed out in increasing order, in claims that shrink as the
/// range runs out (guided scheduling: a claim is the remaining count over
/// eight times the thread count, between 1 and [`MAX_CLAIM`]). A worker sends
/// a whole claim at once, so the calling thread is woken once per claim
/// rather than once per point: on a virtual machine each cross-core wake-up
/// costs tens of microseconds, comparable to a small point's solve. The last
/// claims are single points, so the threads finish together. At most about
/// one claim per thread waits for an earlier one: `sink` can append to a
/// file as the scan goes. The first error (of `eval` or `sink`) stops the
/// hand-out; the points already running finish, nothing later reaches the
/// sink, and the error is returned.
pub fn run_ordered<R, F, S>(
    pool: &rayon::ThreadPool,
    range: Range<usize>,
    eval: F,
    mut sink: S,
) -> Result<(), Error>
where
    R: Send,
    F: Fn(usize) -> Result<R, Error> + Sync,
    S: FnMut(usize, R) -> Result<(), Error>,
{
    if range.is_empty() {
        return Ok(());
    }
    let next = AtomicUsize::new(range.start);
    let stop = AtomicBool::new(false);
    let end = range.end;
    type Batch<R> = Vec<(usize, Result<R, Error>)>;
    let (tx, rx) = mpsc::channel::<Batch<R>>();
    let workers = pool.current_num_threads().max(1).min(range.len());
    let (next, stop, eval) = (&next, &stop, &eval);
    let mut result = Ok(());
    std::thread::scope(|scope| {
        scope.spawn(move || {
            pool.scope(|s| {
                for _ in 0..workers {
                    let tx = tx.clone();
                    s.spawn(move |_| {
                        while !stop.load(Ordering::Relaxed) {
                            let Some(claim) = claim(next, end, workers) else {
                                break;
                            };
                            let mut batch = Vec::with_capacity(claim.len());
                            for i in claim {
                                let r = eval(i);
                                let failed = r.is_err();
                                batch.push((i, r));
                                if failed {
                                    stop.store(true, Ordering::Relaxed);
                                    break;
                                }
                                if stop.load(Ordering::Relaxed) {
                                    break;
                                }
                            }
                            if tx.send(batch).is_err() {
                                break;
                            }
                        }
                    });
                }
            });
            drop(tx);
        });
        let mut pending: BTreeMap<usize, R> = BTreeMap::new();
        let mut want = range.start;
        for (i, r) in rx.iter().flatten() {
            if result.is_err() {
                continue;
            }
            match r {
                Err(e) => {
                    stop.store(true, Ordering::Relaxed);
                    result = Err(e);
                }
                Ok(row) => {
                    pending.insert(i, row);
                    while let Some(row) = pending.remove(&want) {
                        if let Err(e) = sink(want, row) {
                            stop.store(true, Ordering::Relaxed);
                            result = Err(e);
                            break;
                        }
                        want += 1;
                    }
                }
            }
        }
    });
    result
}

/// Claim the next indices below `end` for one worker (guided scheduling),
/// or None when none are left.
fn claim(next: &AtomicUsize, end: usize, workers: usize) -> Option<Range<usize>> {
    let mut start = next.load(Ordering::Relaxed);
    loop {
        if start >= end {
            return None;
        }
        let size = ((end - start) / (8 * workers)).clamp(1, MAX_CLAIM);
        match next.compare_exchange_weak(start, start + size, Ordering::Relaxed, Ordering::Relaxed)
        {
            Ok(_) => return Some(start..start + size),
            Err(now) => start = now,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(s: &str) -> VarySpec {
        VarySpec::parse(s, true).unwrap()
    }

    fn axis(s: &str) -> Axis {
        let v = spec(s);
        let n = v.count.unwrap();
        Axis::new(&v, "MHz", false, n).unwrap()
    }

    #[test]
    fn vary_accepts_units_with_and_without_space() {
        let a = spec("fields.probe.tuned.detuning=-50MHz..50MHz:101");
        let b = spec("fields.probe.tuned.detuning=-50 MHz..50 MHz:101");
        assert_eq!(a, b);
        assert_eq!(a.path, "fields.probe.tuned.detuning");
        assert_eq!((a.start, a.end, a.count), (-50.0, 50.0, Some(101)));
        assert_eq!(a.unit.as_deref(), Some("MHz"));
        // A unit on one end applies to both; none at all is allowed.
        assert_eq!(spec("x.y=1..2 ns:3").unit.as_deref(), Some("ns"));
        assert_eq!(spec("x.y=1e-3..2.5e-3:3").unit, None);
        assert_eq!(spec("x.y=1e-3..2.5e-3:3").end, 2.5e-3);
        // 'e' followed by a letter starts the unit, not an exponent.
        let d = spec("couplings.0.dipole=1ea0..2ea0:2");
        assert_eq!((d.start, d.unit.as_deref()), (1.0, Some("ea0")));
        assert_eq!(spec("a.b=1..2 cm^-1:2").unit.as_deref(), Some("cm^-1"));
        assert!(spec("a.b=1ns..1000ns:7:log").log);
        assert_eq!(VarySpec::parse("a.b=1..2", false).unwrap().count, None);
    }

    #[test]
    fn vary_rejects_malformed_specs() {
        for bad_spec in [
            "a.b=1..2:0",
            "a.b=1..2:-3",
            "a.b=1..2:x",
            "a.b=1..2",
            "a.b=1:5",
            "=1..2:3",
            "a..b=1..2:3",
            "a.b",
            "a.b=x..2:3",
            "a.b=1MHz..2GHz:3",
            "a.b=1..2:3:lin",
            "a b=1..2:3",
        ] {
            let e = VarySpec::parse(bad_spec, true).unwrap_err();
            assert_eq!(e.exit_code(), crate::error::EXIT_BAD_INPUT, "{bad_spec}");
        }
        let msg = VarySpec::parse("a.b=1..2:0", true).unwrap_err().to_string();
        assert!(msg.contains("at least 1"), "{msg}");
    }

    #[test]
    fn axis_unit_rules_and_log_positivity() {
        let v = spec("levels.e.tolerance=1e-4..1e-2:3");
        // Bare key: no unit allowed, none added.
        assert_eq!(Axis::new(&v, "", false, 3).unwrap().unit, "");
        let withunit = spec("levels.e.tolerance=1..2 MHz:3");
        assert!(Axis::new(&withunit, "", false, 3).is_err());
        // No unit written: the scheme's unit is used.
        assert_eq!(
            Axis::new(&spec("a.b=1..2:3"), "ns", false, 3).unwrap().unit,
            "ns"
        );
        assert!(Axis::new(&spec("a.b=-1..2:3"), "ns", true, 3).is_err());
        assert!(Axis::new(&spec("a.b=0..2:3"), "ns", true, 3).is_err());
    }

    #[test]
    fn linear_and_log_values_hit_the_ends_exactly() {
        let a = axis("a.b=-50..50:101");
        assert_eq!(a.value(0), -50.0);
        assert_eq!(a.value(50), 0.0);
        assert_eq!(a.value(100), 50.0);
        approx::assert_relative_eq!(a.value(1), -49.0, max_relative = 1e-15);
        let v = spec("a.b=1..1000:4");
        let l = Axis::new(&v, "ns", true, 4).unwrap();
        let vals: Vec<f64> = (0..4).map(|i| l.value(i)).collect();
        assert_eq!(vals[0], 1.0);
        assert_eq!(vals[3], 1000.0);
        approx::assert_relative_eq!(vals[1], 10.0, max_relative = 1e-14);
        approx::assert_relative_eq!(vals[2], 100.0, max_relative = 1e-14);
        // A single point sits at START.
        assert_eq!(axis("a.b=3..7:1").value(0), 3.0);
    }

    #[test]
    fn grid_is_row_major_with_the_last_axis_fastest() {
        let g = Grid::new(vec![axis("a.x=0..1:2"), axis("a.y=10..30:3")], false).unwrap();
        assert_eq!(g.len(), 6);
        let pts: Vec<Vec<f64>> = (0..6).map(|i| g.point(i)).collect();
        assert_eq!(
            pts,
            vec![
                vec![0.0, 10.0],
                vec![0.0, 20.0],
                vec![0.0, 30.0],
                vec![1.0, 10.0],
                vec![1.0, 20.0],
                vec![1.0, 30.0],
            ]
        );
        assert_eq!(
            g.overrides(&pts[4]),
            vec![
                ("a.x".to_string(), "1 MHz".to_string()),
                ("a.y".to_string(), "20 MHz".to_string())
            ]
        );
    }

    #[test]
    fn grid_limit_needs_force() {
        let big = || vec![axis("a.x=0..1:10000"), axis("a.y=0..1:1001")];
        let e = Grid::new(big(), false).unwrap_err();
        assert!(e.to_string().contains("--force"), "{e}");
        assert_eq!(Grid::new(big(), true).unwrap().len(), 10_010_000);
        // Exactly the limit passes.
        let ok = vec![axis("a.x=0..1:10000"), axis("a.y=0..1:1000")];
        assert_eq!(Grid::new(ok, false).unwrap().len(), MAX_POINTS);
    }

    #[test]
    fn shard_spec_parses_and_rejects() {
        assert_eq!(Shard::parse("3/16").unwrap(), Shard { k: 3, n: 16 });
        assert_eq!(Shard::parse("1/1").unwrap(), Shard { k: 1, n: 1 });
        for s in [
            "0/4", "5/4", "1/0", "1-4", "a/4", "2/x", "/4", "-1/4", "1.5/4",
        ] {
            let e = Shard::parse(s).unwrap_err();
            assert_eq!(e.exit_code(), crate::error::EXIT_BAD_INPUT, "{s}");
        }
    }

    #[test]
    fn shards_cover_every_point_exactly_once() {
        for total in [0usize, 1, 7, 100, 101, 1000] {
            for n in 1..=13 {
                let mut next = 0;
                for k in 1..=n {
                    let r = Shard { k, n }.range(total);
                    assert_eq!(r.start, next, "total {total} n {n} k {k}");
                    assert!(r.len() <= total / n + 1);
                    next = r.end;
                }
                assert_eq!(next, total);
            }
        }
    }

    #[test]
    fn merge_order_needs_every_shard_once() {
        let s = |k, n| Shard { k, n };
        assert_eq!(
            merge_order(&[s(3, 3), s(1, 3), s(2, 3)]).unwrap(),
            vec![1, 2, 0]
        );
        assert!(merge_order(&[s(1, 3), s(3, 3)])
            .unwrap_err()
            .to_string()
            .contains("2 of 3 missing"));
        assert!(merge_order(&[s(1, 2), s(1, 2), s(2, 2)])
            .unwrap_err()
            .to_string()
            .contains("twice"));
        assert!(merge_order(&[s(1, 2), s(2, 3)]).is_err());
        assert!(merge_order(&[]).is_err());
    }

    #[test]
    fn scan_hash_tracks_scheme_axes_and_tolerance() {
        let axes = vec![axis("a.b=-1..1:3")];
        let h = scan_hash(b"scheme", &axes, None);
        assert_eq!(h.len(), 64);
        assert_eq!(h, scan_hash(b"scheme", &axes, None));
        assert_ne!(h, scan_hash(b"scheme ", &axes, None));
        assert_ne!(h, scan_hash(b"scheme", &[axis("a.b=-1..1:4")], None));
        assert_ne!(h, scan_hash(b"scheme", &axes, Some(1e-3)));
    }

    /// A fake evaluation whose cost varies from point to point, so threads
    /// finish out of order.
    fn slow_square(i: usize) -> Result<u64, Error> {
        let spin = (i * 7919) % 13;
        std::thread::sleep(std::time::Duration::from_micros(50 * spin as u64));
        Ok((i * i) as u64)
    }

    #[test]
    fn rows_reach_the_sink_in_grid_order_on_any_thread_count() {
        for jobs in [1, 2, 4] {
            let pool = thread_pool(Some(jobs)).unwrap();
            let mut seen = Vec::new();
            run_ordered(&pool, 5..205, slow_square, |i, v| {
                seen.push((i, v));
                Ok(())
            })
            .unwrap();
            let want: Vec<(usize, u64)> = (5..205).map(|i| (i, (i * i) as u64)).collect();
            assert_eq!(seen, want, "jobs {jobs}");
        }
    }

    #[test]
    fn claims_cover_the_range_once_and_shrink_to_single_points() {
        let next = AtomicUsize::new(3);
        let mut claims = Vec::new();
        while let Some(c) = claim(&next, 1004, 2) {
            claims.push(c);
        }
        let flat: Vec<usize> = claims.iter().flat_map(|c| c.clone()).collect();
        assert_eq!(flat, (3..1004).collect::<Vec<_>>());
        assert_eq!(claims[0].len(), MAX_CLAIM);
        assert!(claims.windows(2).all(|w| w[1].len() <= w[0].len()));
        // The last 16 points (remaining < 8 * workers) go one at a time.
        assert!(claims.iter().rev().take(16).all(|c| c.len() == 1));
        assert!(claims.len() < 1001 / 4, "{} claims", claims.len());
    }

    #[test]
    fn an_error_stops_the_scan_and_nothing_after_it_is_written() {
        let pool = thread_pool(Some(3)).unwrap();
        let mut seen = Vec::new();
        let r = run_ordered(
            &pool,
            0..500,
            |i| {
                if i == 40 {
                    Err(bad("point", "fails"))
                } else {
                    slow_square(i)
                }
            },
            |i, _| {
                seen.push(i);
                Ok(())
            },
        );
        assert!(r.is_err());
        assert!(seen.iter().all(|&i| i < 40));
        assert_eq!(seen, (0..seen.len()).collect::<Vec<_>>());
        // A failing sink stops it too.
        let r = run_ordered(&pool, 0..500, slow_square, |i, _| {
            if i == 10 {
                Err(bad("sink", "full"))
            } else {
                Ok(())
            }
        });
        assert!(r.unwrap_err().to_string().contains("full"));
        assert!(thread_pool(Some(0)).is_err());
    }
}
