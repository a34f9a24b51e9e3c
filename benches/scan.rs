//! Benchmark of a 1001-point detuning scan of the former hyperfine demo (Gaussian
//! pulses) on 1 and 2 threads, for docs/performance.md. Each iteration is
//! the library's whole scan: every point parsed, propagated, estimated and
//! spelt as a CSV row in grid order (into memory; the CLI adds only the
//! file writes).
//!
//! Run: `cargo bench --bench scan`. The scanned value can be changed with
//! `LEVELPLAN_BENCH_VARY` (default below) and the scheme with
//! `LEVELPLAN_BENCH_SCHEME`.

use criterion::{criterion_group, criterion_main, Criterion};
use levelplan::pipeline::study::{parse_specs, row_from_report, Study};
use levelplan::render::scan as fmt;
use levelplan::scan::{run_ordered, thread_pool, Grid};
use levelplan::scheme::SchemeSource;
use std::time::Duration;

const DEFAULT_SCHEME: &str = "tests/fixtures/hyperfine_levels_v1.yaml";
const DEFAULT_VARY: &str = "fields.probe.tuned.detuning=-50MHz..50MHz:1001";

/// The CSV body of the scan (rows in grid order).
fn scan(
    study: &Study,
    grid: &Grid,
    (n_levels, open): (usize, bool),
    pool: &rayon::ThreadPool,
) -> String {
    let mut out = String::new();
    let eval = |i: usize| {
        let coords = grid.point(i);
        let rep = study.vet_point(grid, None, n_levels, &coords)?;
        Ok(row_from_report(&coords, &rep))
    };
    let sink = |_, row| {
        out.push_str(&fmt::row(&row, open));
        Ok(())
    };
    if let Err(e) = run_ordered(pool, 0..grid.len(), eval, sink) {
        panic!("scan failed: {e}");
    }
    out
}

fn bench_scan(c: &mut Criterion) {
    let scheme = std::env::var("LEVELPLAN_BENCH_SCHEME").unwrap_or_else(|_| DEFAULT_SCHEME.into());
    let vary = std::env::var("LEVELPLAN_BENCH_VARY").unwrap_or_else(|_| DEFAULT_VARY.into());
    let text = std::fs::read_to_string(&scheme).expect("the benchmark's scheme file");
    let study = Study::new(
        text,
        SchemeSource {
            path: scheme.clone(),
            sha256: String::new(),
        },
    );
    let specs = parse_specs(&[vary], true, false).expect("a valid --vary");
    let grid = Grid::new(study.axes(&specs, false, 1).expect("axes"), false).expect("grid");
    let (model, open) = study.preflight_open(&grid).expect("preflight");
    let n_levels = model.levels().len();
    let mut group = c.benchmark_group("scan_1001_points");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(30));
    for jobs in [1usize, 2] {
        let pool = thread_pool(Some(jobs)).expect("threads");
        group.bench_function(format!("jobs_{jobs}"), |b| {
            b.iter(|| scan(&study, &grid, (n_levels, open), &pool))
        });
    }
    group.finish();
}

criterion_group!(benches, bench_scan);
criterion_main!(benches);
