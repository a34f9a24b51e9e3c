//! Density-matrix benchmark (criterion): the 24-level D2-like scheme
//! `level_schemes/bench/d2_sublevels_24.yaml` (an invented alkali-like
//! species, illustrative numbers, written by `scripts/d2_benchmark.py`):
//! 8 ground and 16 excited hyperfine-Zeeman sublevels, one sigma+ laser of
//! 1 us, incoherent decay routes, a mixed initial state, the Lindblad
//! equation on the adaptive propagator. Cases: the library's whole `vet`
//! (parse, propagation with peaks, estimate, report; what the command does
//! without its file writes) and the propagation alone, with and without
//! peak tracking. `scripts/d2_benchmark.py` times the command itself against
//! qutip's mesolve; both are in docs/performance.md.
//!
//! Run: `cargo bench --bench open`.

use criterion::{criterion_group, criterion_main, Criterion};
use levelplan::model::Model;
use levelplan::report::Provenance;
use levelplan::solve::{solve, SolveOptions};
use levelplan::{scheme, vet, VetOptions};
use std::hint::black_box;
use std::time::Duration;

const SCHEME: &str = "level_schemes/bench/d2_sublevels_24.yaml";

fn read() -> Vec<u8> {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(SCHEME);
    std::fs::read(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Parse and vet, as `levelplan vet` does in-process.
fn vet_bytes(bytes: &[u8]) -> levelplan::report::VetReport {
    let (model, src) = scheme::from_bytes(bytes, SCHEME).expect("the benchmark scheme");
    let prov = Provenance::new(&src.path, &src.sha256);
    vet(&model, prov, &VetOptions::default()).expect("vet")
}

/// One line of statistics (printed once, before timing).
fn report(m: &Model, bytes: &[u8]) {
    let s = solve(m, &SolveOptions::default()).expect("solve");
    let rep = vet_bytes(bytes);
    eprintln!(
        "stats d2_sublevels_24: method {:?}, levels {}, drives {}, steps {}, evaluations {}, \
         norm error {:.1e}, flagged {}",
        s.method,
        m.levels().len(),
        m.drives().len(),
        s.steps,
        s.evaluations,
        s.norm_error,
        rep.flagged
    );
}

fn bench(c: &mut Criterion) {
    let bytes = read();
    let (model, _) = scheme::from_bytes(&bytes, SCHEME).expect("the benchmark scheme");
    report(&model, &bytes);
    let mut g = c.benchmark_group("d2_sublevels_24");
    g.bench_function("vet", |b| b.iter(|| vet_bytes(black_box(&bytes))));
    let opts = SolveOptions::default();
    g.bench_function("solve", |b| {
        b.iter(|| solve(black_box(&model), &opts).expect("solve"))
    });
    let no_peaks = SolveOptions {
        peaks: false,
        ..SolveOptions::default()
    };
    g.bench_function("solve_no_peaks", |b| {
        b.iter(|| solve(black_box(&model), &no_peaks).expect("solve"))
    });
    g.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default()
        .sample_size(10)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(5));
    targets = bench
}
criterion_main!(benches);
