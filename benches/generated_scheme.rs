//! A generated sublevel scheme against the same scheme typed by hand
//! (criterion): `level_schemes/bench/generated_d2_30ns.yaml` (`manifolds:`,
//! 24 sublevels at 3 G, sigma+ with a 2 % pi impurity, a 30 ns rectangular
//! pulse; invented constants) and `level_schemes/bench/hand_typed_d2_30ns.yaml`
//! (the same 24 levels, 46 dipoles and field written out by
//! `scripts/hand_typed_from_generated.py`; `tests/physics/manifold_hand_typed.rs`
//! checks they give the same populations). For each file:
//!
//! * `parse_validate`: bytes to a validated `Model` (`scheme::from_bytes`:
//!   UTF-8 and SHA-256, YAML, validation; for the generated file the
//!   hyperfine-Zeeman diagonalisation and the sublevel dipoles);
//! * `parse_vet`: the same and `pipeline::vet` with the command line's
//!   defaults (exact propagation with peaks, estimate, remedy checks): what
//!   `levelplan vet FILE` computes, without the rendering and the file read.
//!
//! Run: `cargo bench --bench generated_scheme` (see docs/performance.md).

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use levelplan::pipeline::{self, VetOptions};
use levelplan::report::Provenance;
use levelplan::scheme;
use std::hint::black_box;
use std::time::Duration;

const FILES: [(&str, &str); 2] = [
    ("generated", "level_schemes/bench/generated_d2_30ns.yaml"),
    ("hand_typed", "level_schemes/bench/hand_typed_d2_30ns.yaml"),
];

fn read(path: &str) -> Vec<u8> {
    std::fs::read(path).unwrap_or_else(|e| panic!("{path}: {e}"))
}

fn parse_vet(bytes: &[u8], path: &str) -> levelplan::report::VetReport {
    let (model, src) = scheme::from_bytes(bytes, path).expect("a valid scheme");
    let prov = Provenance::new(path, &src.sha256);
    pipeline::vet(&model, prov, &VetOptions::default()).expect("vet")
}

fn bench(c: &mut Criterion) {
    for (name, path) in FILES {
        let (m, _) = scheme::from_bytes(&read(path), path).expect("a valid scheme");
        eprintln!(
            "stats {name}: {} bytes, levels {}, couplings {}, drives {}",
            read(path).len(),
            m.levels().len(),
            m.couplings().len(),
            m.drives().len()
        );
    }
    let mut g = c.benchmark_group("parse_validate");
    for (name, path) in FILES {
        let bytes = read(path);
        g.bench_with_input(BenchmarkId::from_parameter(name), &bytes, |b, bytes| {
            b.iter(|| scheme::from_bytes(black_box(bytes), path).expect("a valid scheme"))
        });
    }
    g.finish();
    let mut g = c.benchmark_group("parse_vet");
    for (name, path) in FILES {
        let bytes = read(path);
        g.bench_with_input(BenchmarkId::from_parameter(name), &bytes, |b, bytes| {
            b.iter(|| parse_vet(black_box(bytes), path))
        });
    }
    g.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default()
        .sample_size(10)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(2));
    targets = bench
}
criterion_main!(benches);
