//! Benchmark of a 1001-point detuning scan of the hyperfine demo (Gaussian
//! pulses) on 1 and 2 threads, for docs/performance.md. Each iteration is a
//! full `levelplan scan` into a temporary file.
//!
//! Run: `cargo bench --bench scan`. The scanned value can be changed with
//! `LEVELPLAN_BENCH_VARY` (default below) and the scheme with
//! `LEVELPLAN_BENCH_SCHEME`.

use criterion::{criterion_group, criterion_main, Criterion};
use levelplan::app::scan::{scan, ScanOptions};
use std::path::PathBuf;
use std::time::Duration;

const DEFAULT_SCHEME: &str = "level_schemes/hyperfine_manifold.yaml";
const DEFAULT_VARY: &str = "fields.probe.tuned.detuning=-50MHz..50MHz:1001";

fn bench_scan(c: &mut Criterion) {
    let scheme = std::env::var("LEVELPLAN_BENCH_SCHEME").unwrap_or_else(|_| DEFAULT_SCHEME.into());
    let vary = std::env::var("LEVELPLAN_BENCH_VARY").unwrap_or_else(|_| DEFAULT_VARY.into());
    let dir = std::env::temp_dir().join(format!("levelplan-bench-{}", std::process::id()));
    if std::fs::create_dir_all(&dir).is_err() {
        eprintln!("cannot create {}", dir.display());
        return;
    }
    let mut group = c.benchmark_group("scan_1001_points");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(30));
    for jobs in [1usize, 2] {
        let opts = ScanOptions {
            scheme: PathBuf::from(&scheme),
            vary: vec![vary.clone()],
            out: Some(dir.join(format!("bench_{jobs}.csv"))),
            jobs: Some(jobs),
            ..ScanOptions::default()
        };
        group.bench_function(format!("jobs_{jobs}"), |b| {
            b.iter(|| {
                if let Err(e) = scan(&opts) {
                    panic!("scan failed: {e}");
                }
            })
        });
    }
    group.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, bench_scan);
criterion_main!(benches);
