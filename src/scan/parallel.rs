//! Ordered parallel evaluation: points on a thread pool, results handed to
//! one sink in index order, whatever the number of threads.
//!
//! Owns: the thread pool, the guided claims, the order of results.
//! Must not: know what a point computes (a closure).

use super::bad;
use crate::error::Error;
use std::collections::BTreeMap;
use std::ops::Range;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc;

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
pub(super) const MAX_CLAIM: usize = 16;

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
pub(super) fn claim(next: &AtomicUsize, end: usize, workers: usize) -> Option<Range<usize>> {
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
