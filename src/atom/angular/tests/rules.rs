//! Orthogonality relations, symmetries and selection rules, over every
//! small argument (2j <= 6 or so), and the behaviour on any `i32` input.

use super::super::{clebsch_gordan, clebsch_gordan_exact, wigner_3j, wigner_3j_exact};
use super::super::{wigner_6j, wigner_6j_exact, AngularError, SignedSqrt, MAX_TWO_J};

/// The doubled projections -2j, -2j + 2, ..., 2j.
fn ms(two_j: i32) -> impl Iterator<Item = i32> + Clone {
    (-two_j..=two_j).step_by(2)
}

/// The doubled j3 of the triangle with j1, j2.
fn coupled(two_j1: i32, two_j2: i32) -> impl Iterator<Item = i32> + Clone {
    ((two_j1 - two_j2).abs()..=two_j1 + two_j2).step_by(2)
}

fn delta(a: i32, b: i32) -> f64 {
    if a == b {
        1.0
    } else {
        0.0
    }
}

// Source: A. R. Edmonds, "Angular Momentum in Quantum Mechanics", eqs. 3.7.7
// and 3.7.8 (orthogonality of the 3j symbols; equation numbers from memory).
#[test]
fn three_j_orthogonality() {
    let mut checked = 0;
    for two_j1 in 0..=6 {
        for two_j2 in 0..=6 {
            // eq. 3.7.7: sum_{m1 m2} (2j3+1) (j1 j2 j3; m1 m2 m3)(j1 j2 j3'; m1 m2 m3')
            //   = delta(j3, j3') delta(m3, m3')
            for two_j3 in coupled(two_j1, two_j2) {
                for two_k3 in coupled(two_j1, two_j2) {
                    for two_m3 in ms(two_j3) {
                        for two_n3 in ms(two_k3) {
                            let mut s = 0.0;
                            for two_m1 in ms(two_j1) {
                                for two_m2 in ms(two_j2) {
                                    s += f64::from(two_j3 + 1)
                                        * wigner_3j(two_j1, two_j2, two_j3, two_m1, two_m2, two_m3)
                                        * wigner_3j(two_j1, two_j2, two_k3, two_m1, two_m2, two_n3);
                                }
                            }
                            let want = delta(two_j3, two_k3) * delta(two_m3, two_n3);
                            assert!(
                                (s - want).abs() < 1e-13,
                                "{two_j1} {two_j2} {two_j3} {two_k3}"
                            );
                            checked += 1;
                        }
                    }
                }
            }
            // eq. 3.7.8: sum_{j3 m3} (2j3+1) (j1 j2 j3; m1 m2 m3)(j1 j2 j3; m1' m2' m3)
            //   = delta(m1, m1') delta(m2, m2')
            for (two_m1, two_n1) in ms(two_j1).flat_map(|a| ms(two_j1).map(move |b| (a, b))) {
                for (two_m2, two_n2) in ms(two_j2).flat_map(|a| ms(two_j2).map(move |b| (a, b))) {
                    let mut s = 0.0;
                    for two_j3 in coupled(two_j1, two_j2) {
                        for two_m3 in ms(two_j3) {
                            s += f64::from(two_j3 + 1)
                                * wigner_3j(two_j1, two_j2, two_j3, two_m1, two_m2, two_m3)
                                * wigner_3j(two_j1, two_j2, two_j3, two_n1, two_n2, two_m3);
                        }
                    }
                    let want = delta(two_m1, two_n1) * delta(two_m2, two_n2);
                    assert!(
                        (s - want).abs() < 1e-13,
                        "{two_j1} {two_j2} {two_m1} {two_n1}"
                    );
                    checked += 1;
                }
            }
        }
    }
    assert!(checked > 5000, "{checked}");
}

// Source: Edmonds eq. 6.2.9 (orthogonality of the 6j symbols, from memory):
// sum_{j3} (2j3+1)(2j6+1) {j1 j2 j3; j4 j5 j6}{j1 j2 j3; j4 j5 j6'}
//   = delta(j6, j6') when (j1 j5 j6) and (j4 j2 j6) are triangles.
#[test]
fn six_j_orthogonality() {
    let mut checked = 0;
    for [j1, j2, j4, j5] in small_quads(6) {
        let j6s: Vec<i32> = coupled(j1, j5)
            .filter(|&j6| super::super::is_triangle(j4, j2, j6))
            .collect();
        for &j6 in &j6s {
            for &k6 in &j6s {
                let s: f64 = coupled(j1, j2)
                    .map(|j3| {
                        f64::from((j3 + 1) * (j6 + 1))
                            * wigner_6j(j1, j2, j3, j4, j5, j6)
                            * wigner_6j(j1, j2, j3, j4, j5, k6)
                    })
                    .sum();
                assert!(
                    (s - delta(j6, k6)).abs() < 1e-13,
                    "{j1} {j2} {j4} {j5} {j6} {k6}: {s}"
                );
                checked += 1;
            }
        }
    }
    assert!(checked > 1000, "{checked}");
}

/// Every (a, b, c, d) with 0 <= 2x <= max.
fn small_quads(max: i32) -> impl Iterator<Item = [i32; 4]> {
    (0..=max).flat_map(move |a| {
        (0..=max)
            .flat_map(move |b| (0..=max).flat_map(move |c| (0..=max).map(move |d| [a, b, c, d])))
    })
}

/// `v` times (-1)^(exponent), exactly; the exponent is an integer.
fn signed(v: &SignedSqrt, odd: bool) -> SignedSqrt {
    if odd {
        v.negated()
    } else {
        v.clone()
    }
}

// Source: Edmonds eqs. 3.7.5 and 3.7.6 (from memory): the 3j symbol is
// invariant under even permutations of its columns and takes the factor
// (-1)^(j1+j2+j3) under odd ones and under m -> -m. Clebsch-Gordan:
// <j1 m1; j2 m2 | j m> = (-1)^(j1+j2-j) <j2 m2; j1 m1 | j m> (Edmonds eq.
// 3.5.14, from memory). Exact, every argument with 2j <= 5.
#[test]
fn three_j_and_clebsch_gordan_symmetries() {
    let mut nonzero = 0;
    for [a, b, c, _] in small_quads(5).filter(|q| q[3] == 0) {
        let odd = ((a + b + c) / 2) % 2 != 0;
        for ma in ms(a) {
            for mb in ms(b) {
                let mc = -ma - mb;
                let w = wigner_3j_exact(a, b, c, ma, mb, mc).unwrap();
                nonzero += usize::from(!w.is_zero());
                let w3 = |j: [i32; 3], m: [i32; 3]| {
                    wigner_3j_exact(j[0], j[1], j[2], m[0], m[1], m[2]).unwrap()
                };
                assert_eq!(w3([b, c, a], [mb, mc, ma]), w);
                assert_eq!(w3([c, a, b], [mc, ma, mb]), w);
                assert_eq!(w3([b, a, c], [mb, ma, mc]), signed(&w, odd));
                assert_eq!(w3([a, c, b], [ma, mc, mb]), signed(&w, odd));
                assert_eq!(w3([c, b, a], [mc, mb, ma]), signed(&w, odd));
                assert_eq!(w3([a, b, c], [-ma, -mb, -mc]), signed(&w, odd));
                let cg = clebsch_gordan_exact(a, ma, b, mb, c, -mc).unwrap();
                let swapped = clebsch_gordan_exact(b, mb, a, ma, c, -mc).unwrap();
                assert_eq!(swapped, signed(&cg, ((a + b - c) / 2) % 2 != 0));
            }
        }
    }
    assert!(nonzero > 300, "{nonzero}");
}

// Source: Edmonds section 6.2 (from memory): the 6j symbol is invariant under
// any permutation of its columns and under exchanging the upper and lower
// arguments in any two columns. Exact, every argument with 2j <= 4.
#[test]
fn six_j_symmetries() {
    let mut nonzero = 0;
    for [j1, j2, j3, j4] in small_quads(4) {
        for [j5, j6, _, _] in small_quads(4).filter(|q| q[2] == 0 && q[3] == 0) {
            let w = wigner_6j_exact(j1, j2, j3, j4, j5, j6).unwrap();
            nonzero += usize::from(!w.is_zero());
            let w6 = |t: [i32; 6]| wigner_6j_exact(t[0], t[1], t[2], t[3], t[4], t[5]).unwrap();
            assert_eq!(w6([j2, j3, j1, j5, j6, j4]), w);
            assert_eq!(w6([j2, j1, j3, j5, j4, j6]), w);
            assert_eq!(w6([j1, j3, j2, j4, j6, j5]), w);
            assert_eq!(w6([j4, j5, j3, j1, j2, j6]), w);
            assert_eq!(w6([j1, j5, j6, j4, j2, j3]), w);
            assert_eq!(w6([j4, j2, j6, j1, j5, j3]), w);
        }
    }
    assert!(nonzero > 500, "{nonzero}");
}

// Source: the selection rules of the 3j and 6j symbols (Edmonds sections 3.7
// and 6.2, from memory): zero unless m1 + m2 + m3 = 0, |m| <= j, j + m an
// integer, and every triad a triangle with an integer perimeter; negative j
// (no such state) is documented to give zero.
#[test]
fn selection_rules_give_exact_zeros() {
    let zero3 = |t: [i32; 6]| {
        wigner_3j_exact(t[0], t[1], t[2], t[3], t[4], t[5])
            .unwrap()
            .is_zero()
    };
    assert!(zero3([2, 2, 2, 2, 0, 0])); // m sum
    assert!(zero3([2, 2, 6, 0, 0, 0])); // triangle
    assert!(zero3([1, 1, 1, 1, -1, 0])); // half-integer perimeter
    assert!(zero3([2, 2, 2, 1, -1, 0])); // j + m not an integer
    assert!(zero3([2, 2, 4, 4, -4, 0])); // |m| > j
    assert!(zero3([-2, 2, 0, 0, 0, 0])); // negative j
    assert!(zero3([2, 2, 2, 0, 0, 0])); // the sum itself vanishes (odd perimeter, m = 0)
    assert!(!zero3([2, 2, 2, 2, -2, 0]));
    let zero6 = |t: [i32; 6]| {
        wigner_6j_exact(t[0], t[1], t[2], t[3], t[4], t[5])
            .unwrap()
            .is_zero()
    };
    assert!(zero6([2, 2, 6, 2, 2, 2]));
    assert!(zero6([1, 1, 1, 1, 1, 1])); // half-integer perimeters
    assert!(zero6([2, 2, 2, 2, 2, -2]));
    assert!(!zero6([2, 2, 2, 2, 2, 2]));
    assert_eq!(clebsch_gordan(1, 1, 1, 1, 2, 0), 0.0);
    assert_eq!(clebsch_gordan(2, 0, 2, 0, 2, 0), 0.0);
}

// Common practice, no source: no i32 argument panics or overflows. Zeros by
// the rules come back at any size; a nonzero symbol beyond MAX_TWO_J is a
// typed error (NaN from the f64 form).
#[test]
fn any_i32_input_is_answered_without_panic() {
    let extremes = [
        i32::MIN,
        i32::MIN + 1,
        -1,
        0,
        1,
        2,
        MAX_TWO_J,
        MAX_TWO_J + 1,
        i32::MAX - 1,
        i32::MAX,
    ];
    for &a in &extremes {
        for &b in &extremes {
            for &c in &extremes {
                let _ = wigner_3j_exact(a, b, c, a, b, c);
                let _ = wigner_3j_exact(a, a, c, b, -b, 0);
                let _ = wigner_6j_exact(a, b, c, c, b, a);
                let _ = clebsch_gordan_exact(a, b, c, a, b, c);
                let _ = super::super::relative_strength_ff_exact(a, b, c, a, b);
                assert!(!super::super::is_triangle(a, b, c) || (a >= 0 && b >= 0 && c >= 0));
            }
        }
    }
    assert!(wigner_3j_exact(i32::MAX, i32::MAX, 0, 1, -1, 0).is_err_and(|e| matches!(
        e,
        AngularError::TooLarge { two_j, max } if two_j == i64::from(i32::MAX) && max == MAX_TWO_J
    )));
    assert!(wigner_3j(MAX_TWO_J + 2, MAX_TWO_J + 2, 0, 0, 0, 0).is_nan());
    assert!(wigner_6j(MAX_TWO_J + 2, 2, MAX_TWO_J + 2, 2, MAX_TWO_J + 2, 4).is_nan());
    assert_eq!(
        wigner_3j(i32::MAX, i32::MAX, i32::MAX, i32::MAX, i32::MAX, 0),
        0.0
    );
    assert_eq!(clebsch_gordan(1, 1, 1, 1, 2, i32::MIN), 0.0);
}
