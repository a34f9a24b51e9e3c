//! The 3j, 6j and Clebsch-Gordan values against sympy 1.14.0
//! (sympy.physics.wigner, exact arithmetic), written by
//! scripts/wigner_reference.py to tests/fixtures/wigner/wigner.json.

use std::str::FromStr;

use num_bigint::BigInt;
use num_rational::BigRational;
use serde_json::Value;

use super::super::{clebsch_gordan, clebsch_gordan_exact, wigner_3j, wigner_3j_exact};
use super::super::{wigner_6j, wigner_6j_exact, SignedSqrt};
use super::rel;

const FIXTURE: &str = include_str!("../../../../tests/fixtures/wigner/wigner.json");

type Exact = fn(i32, i32, i32, i32, i32, i32) -> Result<SignedSqrt, super::super::AngularError>;
type Float = fn(i32, i32, i32, i32, i32, i32) -> f64;

/// One fixture entry: the doubled arguments, the exact value and the float.
fn entry(e: &Value) -> ([i32; 6], SignedSqrt, f64) {
    let two: Vec<i32> = e["two"]
        .as_array()
        .expect("two")
        .iter()
        .map(|x| i32::try_from(x.as_i64().expect("integer")).expect("i32"))
        .collect();
    let (p, q) = e["square"]
        .as_str()
        .expect("square")
        .split_once('/')
        .expect("p/q");
    let square = BigRational::new(
        BigInt::from_str(p).expect("p"),
        BigInt::from_str(q).expect("q"),
    );
    let negative = e["negative"].as_bool().expect("negative");
    let value = e["value"].as_f64().expect("value");
    let exact = SignedSqrt::new(negative, square).expect("non-negative square");
    (two.try_into().expect("six arguments"), exact, value)
}

/// Compares every entry of `key`: exact squares and signs equal, floats to
/// 1e-14 relative. Returns (entries, zeros, largest 2j) so the caller can
/// check the fixture covers what it should.
fn compare(key: &str, exact: Exact, float: Float, j_slots: &[usize]) -> (usize, usize, i32) {
    let data: Value = serde_json::from_str(FIXTURE).expect("fixture is JSON");
    assert_eq!(data["versions"]["sympy"], "1.14.0", "pinned sympy version");
    let entries = data[key].as_array().expect(key);
    let (mut zeros, mut largest) = (0, 0);
    for e in entries {
        let (t, want, want_f) = entry(e);
        let got = exact(t[0], t[1], t[2], t[3], t[4], t[5]).expect("within MAX_TWO_J");
        assert_eq!(got, want, "{key} {t:?}: exact value");
        let got_f = float(t[0], t[1], t[2], t[3], t[4], t[5]);
        assert!(
            rel(got_f, want_f) <= 1e-14,
            "{key} {t:?}: {got_f:e} vs sympy {want_f:e}"
        );
        assert!(rel(got.to_f64(), want_f) <= 1e-14, "{key} {t:?}: to_f64");
        zeros += usize::from(want.is_zero());
        largest = j_slots.iter().map(|&i| t[i]).fold(largest, i32::max);
    }
    (entries.len(), zeros, largest)
}

// Source: sympy 1.14.0 (sympy.physics.wigner.wigner_3j), exact values.
#[test]
fn three_j_symbols_match_sympy() {
    let (n, zeros, largest) = compare("three_j", wigner_3j_exact, wigner_3j, &[0, 1, 2]);
    assert!(
        n >= 200 && zeros >= 10 && largest >= 70,
        "{n} {zeros} {largest}"
    );
}

// Source: sympy 1.14.0 (sympy.physics.wigner.wigner_6j), exact values.
#[test]
fn six_j_symbols_match_sympy() {
    let (n, zeros, largest) = compare("six_j", wigner_6j_exact, wigner_6j, &[0, 1, 2, 3, 4, 5]);
    assert!(
        n >= 150 && zeros >= 5 && largest >= 70,
        "{n} {zeros} {largest}"
    );
}

// Source: sympy 1.14.0 (sympy.physics.wigner.clebsch_gordan), exact values,
// Condon-Shortley phases.
#[test]
fn clebsch_gordan_coefficients_match_sympy() {
    let (n, zeros, largest) = compare(
        "clebsch_gordan",
        clebsch_gordan_exact,
        clebsch_gordan,
        &[0, 2, 4],
    );
    assert!(
        n >= 100 && zeros >= 3 && largest >= 70,
        "{n} {zeros} {largest}"
    );
}
