//! Published hyperfine strengths and branching ratios, closed forms of
//! special symbols, the exact-to-float conversion, and the speed target.

use std::time::Instant;

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{One, Pow, Zero};

use super::super::{clebsch_gordan, clebsch_gordan_exact, decay_branching_ff_exact};
use super::super::{relative_strength_ff, relative_strength_ff_exact, wigner_3j_exact};
use super::super::{wigner_6j, wigner_6j_exact, SignedSqrt};
use super::{q, rel};

/// `S_FF'` for (2J, 2J', 2I, 2F, 2F') and its expected value p/q.
fn strengths(two_j: i32, two_jp: i32, two_i: i32, two_f: i32, cases: &[(i32, i64, i64)]) {
    for &(two_fp, p, d) in cases {
        let s = relative_strength_ff_exact(two_j, two_jp, two_i, two_f, two_fp).unwrap();
        assert_eq!(s, q(p, d), "J'={two_jp}/2 F={two_f}/2 -> F'={two_fp}/2");
        let f = relative_strength_ff(two_j, two_jp, two_i, two_f, two_fp);
        assert!(rel(f, p as f64 / d as f64) < 1e-15);
    }
}

// Source: D. A. Steck, "Rubidium 87 D Line Data" and "Cesium D Line Data",
// tables of the hyperfine relative transition strength factors S_FF' (values
// as quoted in the task, not re-read from the tables).
#[test]
fn relative_strengths_match_steck_rb87_and_cs() {
    // 87Rb D2: J = 1/2 -> J' = 3/2, I = 3/2
    strengths(1, 3, 3, 4, &[(6, 7, 10), (4, 1, 4), (2, 1, 20), (0, 0, 1)]);
    strengths(1, 3, 3, 2, &[(4, 5, 12), (2, 5, 12), (0, 1, 6), (6, 0, 1)]);
    // 87Rb D1: J' = 1/2
    strengths(1, 1, 3, 4, &[(4, 1, 2), (2, 1, 2)]);
    // Cs D2: I = 7/2
    strengths(1, 3, 7, 8, &[(10, 11, 18), (8, 7, 24), (6, 7, 72)]);
}

// Source: decay F' -> F of 87Rb D2 from Steck's S_FF' (previous test) by
// detailed counting, b(F'->F) = S_FF' (2F+1)(2J'+1) / ((2F'+1)(2J+1)):
// F' = 1 -> F = 2: 1/20 * 5*4/(3*2) = 1/6; F = 1: 5/12 * 3*4/(3*2) = 5/6.
#[test]
fn decay_branching_of_rb87_d2_f1() {
    let b = |two_f| decay_branching_ff_exact(1, 3, 3, two_f, 2).unwrap();
    assert_eq!(b(4), q(1, 6));
    assert_eq!(b(2), q(5, 6));
    // F' = 3 decays only to F = 2 (closed cycling transition), F' = 0 only to F = 1.
    assert_eq!(decay_branching_ff_exact(1, 3, 3, 4, 6).unwrap(), q(1, 1));
    assert_eq!(decay_branching_ff_exact(1, 3, 3, 2, 0).unwrap(), q(1, 1));
    // The identity with S_FF' for every pair of 87Rb D2 and Cs D2.
    for (two_i, fs, fps) in [(3, 1..=2i64, 0..=3i64), (7, 3..=4, 2..=5)] {
        for f in fs.clone() {
            for fp in fps.clone() {
                let (two_f, two_fp) = (2 * f as i32, 2 * fp as i32);
                let s = relative_strength_ff_exact(1, 3, two_i, two_f, two_fp).unwrap();
                let b = decay_branching_ff_exact(1, 3, two_i, two_f, two_fp).unwrap();
                assert_eq!(
                    b * q(2 * fp + 1, 1) * q(2, 1),
                    s * q(2 * f + 1, 1) * q(4, 1)
                );
            }
        }
    }
}

// Source: sum rules of S_FF' (Steck, "Rubidium 87 D Line Data": the S_FF'
// of one F sum to 1) and of the branching ratios (probability), both from
// the 6j orthogonality, A. R. Edmonds, "Angular Momentum in Quantum
// Mechanics", eq. 6.2.9 (from memory). Exact, for J = 1/2, 3/2, 2 and
// J' = J - 1 .. J + 1, I = 0 .. 9/2.
#[test]
fn strengths_and_branching_sum_to_one() {
    for two_j in [1, 3, 4] {
        for two_jp in [two_j - 2, two_j, two_j + 2] {
            if two_jp < 0 || (two_j == 0 && two_jp == 0) {
                continue;
            }
            for two_i in 0..=9 {
                let levels = |two_x: i32| (two_x - two_i).abs()..=two_x + two_i;
                for two_f in levels(two_j).step_by(2) {
                    let total: BigRational = levels(two_jp)
                        .step_by(2)
                        .map(|two_fp| {
                            relative_strength_ff_exact(two_j, two_jp, two_i, two_f, two_fp).unwrap()
                        })
                        .sum();
                    assert_eq!(
                        total,
                        BigRational::one(),
                        "J={two_j} J'={two_jp} I={two_i} F={two_f}"
                    );
                }
                for two_fp in levels(two_jp).step_by(2) {
                    let total: BigRational = levels(two_j)
                        .step_by(2)
                        .map(|two_f| {
                            decay_branching_ff_exact(two_j, two_jp, two_i, two_f, two_fp).unwrap()
                        })
                        .sum();
                    assert_eq!(
                        total,
                        BigRational::one(),
                        "J={two_j} J'={two_jp} I={two_i} F'={two_fp}"
                    );
                }
            }
        }
    }
}

// Source: closed forms, Edmonds eq. 3.7.9 (j j 0; m -m 0) = (-1)^(j-m) /
// sqrt(2j+1) and eq. 6.3.2 {a b c; 0 c b} = (-1)^(a+b+c) / sqrt((2b+1)(2c+1))
// (equation numbers from memory), up to j = 500 (2j = MAX_TWO_J).
#[test]
fn closed_forms_of_special_symbols() {
    for two_j in (0..=40).chain([999, 1000]) {
        for two_m in (-two_j..=two_j).step_by(2).take(6) {
            let got = wigner_3j_exact(two_j, two_j, 0, two_m, -two_m, 0).unwrap();
            let odd = ((two_j - two_m) / 2) % 2 != 0;
            let want = SignedSqrt::new(odd, q(1, i64::from(two_j) + 1)).unwrap();
            assert_eq!(got, want, "2j={two_j} 2m={two_m}");
        }
    }
    for two_a in 0..=12 {
        for two_b in 0..=12 {
            for two_c in 0..=12 {
                if !super::super::is_triangle(two_a, two_b, two_c) {
                    assert!(wigner_6j_exact(two_a, two_b, two_c, 0, two_c, two_b)
                        .unwrap()
                        .is_zero());
                    continue;
                }
                let got = wigner_6j_exact(two_a, two_b, two_c, 0, two_c, two_b).unwrap();
                let odd = ((two_a + two_b + two_c) / 2) % 2 != 0;
                let d = i64::from(two_b + 1) * i64::from(two_c + 1);
                assert_eq!(got, SignedSqrt::new(odd, q(1, d)).unwrap());
            }
        }
    }
    let big = wigner_6j_exact(1000, 1000, 1000, 0, 1000, 1000).unwrap();
    assert_eq!(big, SignedSqrt::new(false, q(1, 1001 * 1001)).unwrap());
}

// Source: Condon-Shortley table for two spins 1/2 (E. U. Condon and G. H.
// Shortley, "The Theory of Atomic Spectra" (1935), ch. 3, from memory):
// <1/2 1/2; 1/2 -1/2 | 1 0> = 1/sqrt 2, <1/2 -1/2; 1/2 1/2 | 0 0> = -1/sqrt 2,
// and j1 = 1, j2 = 1/2: <1 0; 1/2 1/2 | 3/2 1/2> = sqrt(2/3),
// <1 1; 1/2 -1/2 | 1/2 1/2> = sqrt(2/3), <1 0; 1/2 1/2 | 1/2 1/2> = -sqrt(1/3).
#[test]
fn condon_shortley_phases_of_small_couplings() {
    let cg = |a, b, c, d, e, f| clebsch_gordan_exact(a, b, c, d, e, f).unwrap();
    let s = |neg, p, d| SignedSqrt::new(neg, q(p, d)).unwrap();
    assert_eq!(cg(1, 1, 1, -1, 2, 0), s(false, 1, 2));
    assert_eq!(cg(1, 1, 1, -1, 0, 0), s(false, 1, 2));
    assert_eq!(cg(1, -1, 1, 1, 0, 0), s(true, 1, 2));
    assert_eq!(cg(2, 0, 1, 1, 3, 1), s(false, 2, 3));
    assert_eq!(cg(2, 2, 1, -1, 1, 1), s(false, 2, 3));
    assert_eq!(cg(2, 0, 1, 1, 1, 1), s(true, 1, 3));
    assert!((clebsch_gordan(1, -1, 1, 1, 0, 0) + 0.5f64.sqrt()).abs() < 1e-16);
}

// Common practice, no source: to_f64 stays accurate when the numerator and
// denominator of the square are far outside the range of f64.
#[test]
fn conversion_survives_huge_numerators_and_denominators() {
    let ten = BigInt::from(10);
    let big = |e: u32| Pow::pow(&ten, e);
    let s = |n: BigInt, d: BigInt| SignedSqrt::new(false, BigRational::new(n, d)).unwrap();
    assert_eq!(s(big(700), big(700) * 4 + 1).to_f64(), 0.5);
    assert_eq!(s(big(600) + 1, big(600)).negated().to_f64(), -1.0);
    let tiny = s(BigInt::one(), big(600) * 4).to_f64();
    assert!(rel(tiny, 5e-301) < 2e-16, "{tiny:e}");
    assert_eq!(s(BigInt::one(), big(700)).to_f64(), 0.0);
    assert_eq!(s(BigInt::from(9), BigInt::from(16)).to_f64(), 0.75);
    assert!(s(BigInt::zero(), BigInt::one()).is_zero());
    assert!(SignedSqrt::new(false, q(-1, 2)).is_none());
}

// Common practice, no source: the speed target of model building. Every
// sigma/pi Clebsch-Gordan coefficient <F mF; 1 q | F' mF'> of a 24-sublevel
// 87Rb D2 line (F = 1, 2; F' = 0..3) and every {J J' 1; F' F I} takes well
// under a millisecond; asserted with a generous margin (shared machines).
#[test]
fn d2_line_coefficients_are_fast() {
    let start = Instant::now();
    let mut calls = 0;
    let mut total = 0.0;
    for two_f in [2, 4] {
        for two_fp in [0, 2, 4, 6] {
            total += wigner_6j(1, 3, 2, two_fp, two_f, 3).abs();
            calls += 1;
            for two_mf in (-two_f..=two_f).step_by(2) {
                for two_q in [-2, 0, 2] {
                    for two_mfp in (-two_fp..=two_fp).step_by(2) {
                        total += clebsch_gordan(two_f, two_mf, 2, two_q, two_fp, two_mfp).abs();
                        calls += 1;
                    }
                }
            }
        }
    }
    let elapsed = start.elapsed();
    println!("{calls} calls ({total:.6} summed magnitudes) in {elapsed:?}");
    assert!(calls > 300);
    assert!(total > 1.0);
    assert!(
        elapsed.as_secs_f64() < 0.05,
        "{calls} calls took {elapsed:?}"
    );
}
