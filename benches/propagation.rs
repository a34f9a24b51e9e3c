//! Propagation benchmarks (criterion): a two-level rectangular pulse (exact),
//! a hyperfine-like manifold with Gaussian pulses (adaptive), and ladders of
//! N = 5, 10, 20, 50, 100 levels with nearest-neighbour couplings, both with
//! Gaussian pulses (adaptive) and rectangular pulses (exact), so the growth
//! of cost with N is visible; the first two cases also without peak tracking
//! (`SolveOptions::peaks = false`, as scans and tune run). Invented,
//! illustrative numbers.
//!
//! Run: `cargo bench --bench propagation` (see docs/performance.md).

#[path = "../tests/physics/solve_support/mod.rs"]
mod solve_support;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use levelplan::model::{Envelope, Model};
use levelplan::solve::{solve, SolveOptions};
use solve_support::*;
use std::hint::black_box;
use std::time::Duration;

const W_OPT: f64 = 2.0 * std::f64::consts::PI * 384.0e12; // invented optical transition

/// Two-level resonant-ish rectangular pulse, 5 Rabi periods.
fn two_level_rect() -> Model {
    two_level(W_OPT, tau(5e6), tau(1e6), 1e-6)
}

/// Hyperfine-like manifold: two ground levels 6.1 GHz apart, three excited
/// levels 70-270 MHz apart; a Gaussian pump and a Gaussian repump.
fn hyperfine_gaussian() -> Model {
    let pump = Envelope::Gaussian {
        center: 0.0,
        sigma: 200e-9,
    };
    let repump = Envelope::Gaussian {
        center: 150e-9,
        sigma: 200e-9,
    };
    let (a, b) = (pump.support().0, repump.support().1);
    Builder::new()
        .level("g1", 0.0, 0.0)
        .level("g2", tau(6.1e9), 0.0)
        .level("e0", W_OPT, 1.0 / 26e-9)
        .level("e1", W_OPT + tau(72e6), 1.0 / 26e-9)
        .level("e2", W_OPT + tau(229e6), 1.0 / 26e-9)
        .coupling("g2", "e1")
        .coupling("g2", "e2")
        .coupling("g1", "e0")
        .coupling("g1", "e1")
        .field("pump", W_OPT + tau(229e6) - tau(6.1e9) - tau(10e6), pump)
        .field("repump", W_OPT + tau(72e6) + tau(5e6), repump)
        .drive("pump", "g2", "e2", tau(8e6))
        .drive("pump", "g2", "e1", tau(-3.5e6))
        .drive("repump", "g1", "e1", tau(4e6))
        .drive("repump", "g1", "e0", tau(6e6))
        .initial("g2")
        .window(a, b)
        .build()
}

/// Ladder of n levels, each step driven resonantly by its own field.
fn ladder(n: usize, gaussian: bool) -> Model {
    let mut b = Builder::new();
    let step = tau(350e12);
    for k in 0..n {
        b = b.level(
            &format!("l{k}"),
            step * k as f64 + tau(1e9) * (k * k) as f64,
            0.0,
        );
    }
    let env = if gaussian {
        Envelope::Gaussian {
            center: 0.0,
            sigma: 100e-9,
        }
    } else {
        rect(-250e-9, 500e-9)
    };
    let (a, z) = env.support();
    for k in 0..n - 1 {
        let (lo, hi) = (format!("l{k}"), format!("l{}", k + 1));
        let f = format!("f{k}");
        b = b
            .coupling(&lo, &hi)
            .field_tuned(&f, &lo, &hi, tau(1e6), env.clone())
            .drive(&f, &lo, &hi, tau(10e6));
    }
    b.initial("l0").window(a, z).build()
}

/// One line of statistics per case (printed once, before timing).
fn report(name: &str, m: &Model) {
    let s = solve(m, &SolveOptions::default()).expect("solve");
    eprintln!(
        "stats {name}: method {:?}, levels {}, drives {}, steps {}, evaluations {}, norm error {:.1e}",
        s.method,
        m.levels().len(),
        m.drives().len(),
        s.steps,
        s.evaluations,
        s.norm_error
    );
}

fn bench(c: &mut Criterion) {
    let opts = SolveOptions::default();
    report("two_level_rectangular_exact", &two_level_rect());
    report("hyperfine_gaussian_adaptive", &hyperfine_gaussian());
    for n in [5usize, 10, 20, 50, 100] {
        report(&format!("ladder_gaussian_adaptive/{n}"), &ladder(n, true));
        report(&format!("ladder_rectangular_exact/{n}"), &ladder(n, false));
    }
    let m = two_level_rect();
    c.bench_function("two_level_rectangular_exact", |bch| {
        bch.iter(|| solve(black_box(&m), &opts).expect("solve"))
    });
    let no_peaks = SolveOptions {
        peaks: false,
        ..SolveOptions::default()
    };
    c.bench_function("two_level_rectangular_exact_no_peaks", |bch| {
        bch.iter(|| solve(black_box(&m), &no_peaks).expect("solve"))
    });
    let m = hyperfine_gaussian();
    c.bench_function("hyperfine_gaussian_adaptive", |bch| {
        bch.iter(|| solve(black_box(&m), &opts).expect("solve"))
    });
    c.bench_function("hyperfine_gaussian_adaptive_no_peaks", |bch| {
        bch.iter(|| solve(black_box(&m), &no_peaks).expect("solve"))
    });
    let mut g = c.benchmark_group("ladder_gaussian_adaptive");
    for n in [5usize, 10, 20, 50, 100] {
        let m = ladder(n, true);
        g.bench_with_input(BenchmarkId::from_parameter(n), &m, |bch, m| {
            bch.iter(|| solve(black_box(m), &opts).expect("solve"))
        });
    }
    g.finish();
    let mut g = c.benchmark_group("ladder_rectangular_exact");
    for n in [5usize, 10, 20, 50, 100] {
        let m = ladder(n, false);
        g.bench_with_input(BenchmarkId::from_parameter(n), &m, |bch, m| {
            bch.iter(|| solve(black_box(m), &opts).expect("solve"))
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
