//! Tests of the angular-momentum algebra, one file per kind of check:
//! `fixtures.rs` against sympy's exact values, `published.rs` against
//! published hyperfine strengths and closed forms (and the speed target),
//! `rules.rs` the orthogonality relations, symmetries and selection rules.

mod fixtures;
mod published;
mod rules;

use num_bigint::BigInt;
use num_rational::BigRational;

/// The rational `p/q`.
fn q(p: i64, q: i64) -> BigRational {
    BigRational::new(BigInt::from(p), BigInt::from(q))
}

/// Relative difference `|a - b| / max(|a|, |b|)`, zero when both are zero.
fn rel(a: f64, b: f64) -> f64 {
    let scale = a.abs().max(b.abs());
    if scale == 0.0 {
        0.0
    } else {
        (a - b).abs() / scale
    }
}
