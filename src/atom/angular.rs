//! Exact angular-momentum coupling coefficients: Wigner 3j and 6j symbols,
//! Clebsch-Gordan coefficients, and the hyperfine line strengths and decay
//! branching built on them.
//!
//! Owns the selection rules, the phase conventions and the exact evaluation;
//! it must not know schemes, models, units or IO, and never panics: every
//! `i32` argument is accepted.
//!
//! Conventions:
//! - Angular momenta and projections are passed DOUBLED (`two_j = 2j`,
//!   `two_m = 2m`), so half-integers are exact integers.
//! - Condon-Shortley phases; `clebsch_gordan` is
//!   `<j1 m1; j2 m2 | j m> = (-1)^(j1 - j2 + m) sqrt(2j + 1) (j1 j2 j; m1 m2 -m)`
//!   (A. R. Edmonds, "Angular Momentum in Quantum Mechanics", section 3.7,
//!   from memory; the same convention as sympy.physics.wigner.clebsch_gordan,
//!   which the fixture tests check).
//! - The 3j and 6j symbols by Racah's single sums (G. Racah, Phys. Rev. 62,
//!   438 (1942); Edmonds sections 3.7 and 6.3, from memory), evaluated in
//!   exact integer arithmetic in `angular/racah.rs`.
//! - Zero for every selection-rule violation: a negative j (no such state),
//!   |m| > j, j + m not an integer, m1 + m2 + m3 != 0, a broken triangle
//!   (|a - b| <= c <= a + b with a + b + c an integer). Only when a nonzero
//!   value would need an argument 2j above [`MAX_TWO_J`] do the `_exact`
//!   functions return [`AngularError::TooLarge`] (and the `f64` ones NaN).
//!
//! Why exact arithmetic with `num-bigint` and `num-rational`: the alternating
//! Racah sums lose digits in floating point as j grows (with double-precision
//! factorials up to 6e-13 relative at j = 20 and 5e-10 at j = 40, measured
//! against sympy; docs/physics.md), while an exact sum of big integers is
//! right by construction. The result is a sign and the square root of a
//! rational, so [`SignedSqrt`] holds it exactly and rounds to `f64` once.
//! Both crates were already in the dependency tree (through nalgebra; no new
//! crate in Cargo.lock), and a prime-exponent representation would still
//! need big integers for the sum. The sum is done in integers over a single
//! common denominator (`angular/racah.rs`): one multiplication and one exact
//! division by a machine word per term.
//!
//! Speed: this module memoises nothing (`atom::dipole` keeps the few
//! coefficients of one line it needs many times). The 392 coefficients of
//! a 24-sublevel 87Rb D2 line (every sigma/pi Clebsch-Gordan coefficient of
//! F = 1, 2 -> F' = 0..3 and the 6j symbols) take about 0.13-0.24 ms in a
//! release build (`angular/tests/published.rs::d2_line_coefficients_are_fast`;
//! measured numbers in docs/physics.md, "Angular momentum").

mod racah;
mod signed_sqrt;
#[cfg(test)]
mod tests;

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::Zero;

use racah::{alternating_sum, Arg, Factorials};
pub use signed_sqrt::SignedSqrt;

/// The largest doubled angular momentum `2j` evaluated (j <= 500). A nonzero
/// symbol with a larger argument is refused (its exact evaluation would take
/// seconds and memory with no use in atomic physics); zeros from the
/// selection rules are returned at any size.
pub const MAX_TWO_J: i32 = 1000;

/// Why an exact coefficient was not computed.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum AngularError {
    /// An angular momentum beyond [`MAX_TWO_J`].
    #[error("angular momentum 2j = {two_j} is above the supported maximum 2j = {max}")]
    TooLarge { two_j: i64, max: i32 },
}

/// True when `a`, `b`, `c` (doubled) are non-negative, `a + b + c` is even
/// (the perimeter is an integer) and `|a - b| <= c <= a + b`: the three can
/// couple to zero, the triangle rule every 3j and 6j symbol needs.
#[must_use]
pub fn is_triangle(two_a: i32, two_b: i32, two_c: i32) -> bool {
    triangle(i64::from(two_a), i64::from(two_b), i64::from(two_c))
}

fn triangle(a: i64, b: i64, c: i64) -> bool {
    a >= 0 && b >= 0 && c >= 0 && (a + b + c) % 2 == 0 && (a - b).abs() <= c && c <= a + b
}

/// `Err` when a doubled angular momentum that a nonzero value needs is too large.
fn check_size(two_js: &[i64]) -> Result<(), AngularError> {
    match two_js.iter().copied().max() {
        Some(two_j) if two_j > i64::from(MAX_TWO_J) => Err(AngularError::TooLarge {
            two_j,
            max: MAX_TWO_J,
        }),
        _ => Ok(()),
    }
}

/// The Wigner 3j symbol `(j1 j2 j3; m1 m2 m3)`, exactly (arguments doubled).
/// Zero for any selection-rule violation (module docs).
///
/// # Errors
/// [`AngularError::TooLarge`] when a nonzero value needs a `2j` above [`MAX_TWO_J`].
pub fn wigner_3j_exact(
    two_j1: i32,
    two_j2: i32,
    two_j3: i32,
    two_m1: i32,
    two_m2: i32,
    two_m3: i32,
) -> Result<SignedSqrt, AngularError> {
    let j = [two_j1, two_j2, two_j3].map(i64::from);
    let m = [two_m1, two_m2, two_m3].map(i64::from);
    three_j(j, m)
}

/// The 3j symbol on `i64` doubled arguments (no overflow for any `i32` input).
fn three_j(two_j: [i64; 3], two_m: [i64; 3]) -> Result<SignedSqrt, AngularError> {
    let projection_ok = two_j
        .iter()
        .zip(&two_m)
        .all(|(&j, &m)| m.abs() <= j && (j + m) % 2 == 0);
    if !projection_ok || two_m.iter().sum::<i64>() != 0 || !triangle(two_j[0], two_j[1], two_j[2]) {
        return Ok(SignedSqrt::zero());
    }
    check_size(&two_j)?;
    // Undoubled integers: all of these are integers once the rules hold.
    let [j1, j2, j3] = two_j;
    let [m1, m2, m3] = two_m;
    let h = |x: i64| x / 2;
    let (a, b, c) = (h(j1 + j2 - j3), h(j1 - j2 + j3), h(-j1 + j2 + j3));
    let perimeter = h(j1 + j2 + j3);
    let table = Factorials::up_to((perimeter + 1).unsigned_abs());
    let prefactor = table.ratio(
        &[
            a,
            b,
            c,
            h(j1 + m1),
            h(j1 - m1),
            h(j2 + m2),
            h(j2 - m2),
            h(j3 + m3),
            h(j3 - m3),
        ],
        &[perimeter + 1],
    );
    // Racah's sum (Edmonds section 3.7, from memory): sum over k of (-1)^k / [k! (j3 - j2 + m1 + k)!
    // (j3 - j1 - m2 + k)! (j1 + j2 - j3 - k)! (j1 - m1 - k)! (j2 + m2 - k)!]
    let den = [
        Arg::up(0),
        Arg::up(h(j3 - j2 + m1)),
        Arg::up(h(j3 - j1 - m2)),
        Arg::down(a),
        Arg::down(h(j1 - m1)),
        Arg::down(h(j2 + m2)),
    ];
    let lo = [0, -h(j3 - j2 + m1), -h(j3 - j1 - m2)]
        .into_iter()
        .max()
        .unwrap_or(0);
    let hi = [a, h(j1 - m1), h(j2 + m2)].into_iter().min().unwrap_or(0);
    let sum = alternating_sum(lo, hi, &[], &den);
    let phase_odd = h(j1 - j2 - m3) % 2 != 0;
    Ok(from_sum(prefactor, &sum, phase_odd))
}

/// `(-1)^phase_odd * sqrt(prefactor) * sum` as a [`SignedSqrt`].
fn from_sum(prefactor: BigRational, sum: &BigRational, phase_odd: bool) -> SignedSqrt {
    let negative = (sum < &BigRational::zero()) ^ phase_odd;
    let square = prefactor * sum * sum;
    SignedSqrt::new(negative, square).unwrap_or_else(SignedSqrt::zero)
}

/// The Wigner 3j symbol `(j1 j2 j3; m1 m2 m3)` (arguments doubled) as the
/// nearest `f64`. Zero for any selection-rule violation; NaN only beyond
/// [`MAX_TWO_J`] (use [`wigner_3j_exact`] for a typed error).
#[must_use]
pub fn wigner_3j(
    two_j1: i32,
    two_j2: i32,
    two_j3: i32,
    two_m1: i32,
    two_m2: i32,
    two_m3: i32,
) -> f64 {
    wigner_3j_exact(two_j1, two_j2, two_j3, two_m1, two_m2, two_m3).map_or(f64::NAN, |v| v.to_f64())
}

/// The Wigner 6j symbol `{j1 j2 j3; j4 j5 j6}`, exactly (arguments doubled).
/// Zero unless the four triads (j1 j2 j3), (j1 j5 j6), (j4 j2 j6), (j4 j5 j3)
/// are triangles (negative arguments included).
///
/// # Errors
/// [`AngularError::TooLarge`] when a nonzero value needs a `2j` above [`MAX_TWO_J`].
pub fn wigner_6j_exact(
    two_j1: i32,
    two_j2: i32,
    two_j3: i32,
    two_j4: i32,
    two_j5: i32,
    two_j6: i32,
) -> Result<SignedSqrt, AngularError> {
    let j = [two_j1, two_j2, two_j3, two_j4, two_j5, two_j6].map(i64::from);
    six_j(j)
}

/// `Delta(abc)` of Racah's formulas as factorial arguments: the numerator
/// `(a+b-c)! (a-b+c)! (-a+b+c)!` and the denominator `(a+b+c+1)!` (undoubled,
/// from doubled arguments of a triangle).
fn delta_args(a: i64, b: i64, c: i64) -> ([i64; 3], i64) {
    (
        [(a + b - c) / 2, (a - b + c) / 2, (-a + b + c) / 2],
        (a + b + c) / 2 + 1,
    )
}

/// The 6j symbol on `i64` doubled arguments.
fn six_j(two_j: [i64; 6]) -> Result<SignedSqrt, AngularError> {
    let [j1, j2, j3, j4, j5, j6] = two_j;
    let triads = [(j1, j2, j3), (j1, j5, j6), (j4, j2, j6), (j4, j5, j3)];
    if !triads.iter().all(|&(a, b, c)| triangle(a, b, c)) {
        return Ok(SignedSqrt::zero());
    }
    check_size(&two_j)?;
    // Racah's sum (Edmonds eq. 6.3.7, from memory): sum over t of (-1)^t (t+1)! / [(t-a1)!(t-a2)!(t-a3)!
    // (t-a4)! (b1-t)! (b2-t)! (b3-t)!], a the triad perimeters, b the sums of
    // the four arguments of each pair of columns.
    let a = triads.map(|(x, y, z)| (x + y + z) / 2);
    let b = [
        (j1 + j2 + j4 + j5) / 2,
        (j2 + j3 + j5 + j6) / 2,
        (j3 + j1 + j6 + j4) / 2,
    ];
    let lo = a.iter().copied().max().unwrap_or(0);
    let hi = b.iter().copied().min().unwrap_or(0);
    let table = Factorials::up_to(a.iter().copied().max().unwrap_or(0).unsigned_abs() + 1);
    let mut nums = Vec::with_capacity(12);
    let mut dens = Vec::with_capacity(4);
    for &(x, y, z) in &triads {
        let (n, d) = delta_args(x, y, z);
        nums.extend_from_slice(&n);
        dens.push(d);
    }
    let prefactor = table.ratio(&nums, &dens);
    let den = [
        Arg::up(-a[0]),
        Arg::up(-a[1]),
        Arg::up(-a[2]),
        Arg::up(-a[3]),
        Arg::down(b[0]),
        Arg::down(b[1]),
        Arg::down(b[2]),
    ];
    let sum = alternating_sum(lo, hi, &[Arg::up(1)], &den);
    Ok(from_sum(prefactor, &sum, false))
}

/// The Wigner 6j symbol `{j1 j2 j3; j4 j5 j6}` (arguments doubled) as the
/// nearest `f64`. Zero unless all four triads are triangles; NaN only beyond
/// [`MAX_TWO_J`] (use [`wigner_6j_exact`] for a typed error).
#[must_use]
pub fn wigner_6j(
    two_j1: i32,
    two_j2: i32,
    two_j3: i32,
    two_j4: i32,
    two_j5: i32,
    two_j6: i32,
) -> f64 {
    wigner_6j_exact(two_j1, two_j2, two_j3, two_j4, two_j5, two_j6).map_or(f64::NAN, |v| v.to_f64())
}

/// The Clebsch-Gordan coefficient `<j1 m1; j2 m2 | j m>` (arguments doubled,
/// Condon-Shortley phases), exactly:
/// `(-1)^(j1 - j2 + m) sqrt(2j + 1) (j1 j2 j; m1 m2 -m)` (Edmonds section
/// 3.7, from memory; sympy's definition).
///
/// # Errors
/// [`AngularError::TooLarge`] when a nonzero value needs a `2j` above [`MAX_TWO_J`].
pub fn clebsch_gordan_exact(
    two_j1: i32,
    two_m1: i32,
    two_j2: i32,
    two_m2: i32,
    two_j: i32,
    two_m: i32,
) -> Result<SignedSqrt, AngularError> {
    let js = [two_j1, two_j2, two_j].map(i64::from);
    let ms = [i64::from(two_m1), i64::from(two_m2), -i64::from(two_m)];
    let w = three_j(js, ms)?;
    if w.is_zero() {
        return Ok(w);
    }
    // Nonzero: j1 - j2 + m = (j1 + m1) - (j2 - m2) is an integer.
    let phase_odd = ((js[0] - js[1] + i64::from(two_m)) / 2) % 2 != 0;
    Ok(w.times_sqrt(js[2].unsigned_abs() + 1, phase_odd))
}

/// The Clebsch-Gordan coefficient `<j1 m1; j2 m2 | j m>` (arguments doubled,
/// Condon-Shortley phases, as sympy.physics.wigner.clebsch_gordan) as the
/// nearest `f64`. Zero for any selection-rule violation; NaN only beyond
/// [`MAX_TWO_J`] (use [`clebsch_gordan_exact`] for a typed error).
#[must_use]
pub fn clebsch_gordan(
    two_j1: i32,
    two_m1: i32,
    two_j2: i32,
    two_m2: i32,
    two_j: i32,
    two_m: i32,
) -> f64 {
    clebsch_gordan_exact(two_j1, two_m1, two_j2, two_m2, two_j, two_m)
        .map_or(f64::NAN, |v| v.to_f64())
}

/// `(2a + 1)(2b + 1) {J J' 1; F' F I}^2` exactly, from doubled `2a`, `2b`.
fn strength_exact(
    two_j: i32,
    two_jp: i32,
    two_i: i32,
    two_f: i32,
    two_fp: i32,
    two_a: i32,
    two_b: i32,
) -> Result<BigRational, AngularError> {
    let w = wigner_6j_exact(two_j, two_jp, 2, two_fp, two_f, two_i)?;
    if w.is_zero() {
        return Ok(BigRational::zero());
    }
    // Nonzero: every argument lies in 0..=MAX_TWO_J, so 2a + 1 cannot overflow.
    let weight = BigInt::from(i64::from(two_a) + 1) * BigInt::from(i64::from(two_b) + 1);
    Ok(w.square() * BigRational::from_integer(weight))
}

/// The relative strength `S_FF' = (2F' + 1)(2J + 1) {J J' 1; F' F I}^2` of the
/// hyperfine line F -> F' of a fine-structure line J -> J' (electric dipole,
/// nuclear spin I; all arguments doubled), exactly. For fixed F the S_FF'
/// sum to 1 over F' (D. A. Steck, "Rubidium 87 D Line Data", the relative
/// hyperfine transition strength factors; the sum from the 6j orthogonality,
/// Edmonds eq. 6.2.9). The squared hyperfine dipole is
/// `|<F||d||F'>|^2 = S_FF' |<J||d||J'>|^2` in the normalisation where the
/// reduced element squared sums the line strength over the upper sublevels.
///
/// # Errors
/// [`AngularError::TooLarge`] when an argument needed is above [`MAX_TWO_J`].
pub fn relative_strength_ff_exact(
    two_j: i32,
    two_jp: i32,
    two_i: i32,
    two_f: i32,
    two_fp: i32,
) -> Result<BigRational, AngularError> {
    strength_exact(two_j, two_jp, two_i, two_f, two_fp, two_fp, two_j)
}

/// [`relative_strength_ff_exact`] as the nearest `f64` (zero when the 6j
/// symbol vanishes; NaN only beyond [`MAX_TWO_J`]).
#[must_use]
pub fn relative_strength_ff(two_j: i32, two_jp: i32, two_i: i32, two_f: i32, two_fp: i32) -> f64 {
    relative_strength_ff_exact(two_j, two_jp, two_i, two_f, two_fp)
        .map_or(f64::NAN, |r| signed_sqrt::ratio_to_f64(&r))
}

// Same signature and f64 twin as `relative_strength_ff`: both are one call of
// `strength_exact` with the columns in another order; a shared wrapper would
// hide which 6j prefactor each one is.
/// The fraction of spontaneous decays from the upper hyperfine level F' (of
/// the fine-structure level J') that end in the lower level F (of J):
/// `(2F + 1)(2J' + 1) {J J' 1; F' F I}^2`, exactly (arguments doubled, in the
/// same order as [`relative_strength_ff_exact`]). For fixed F' they sum to 1
/// over F (Edmonds eq. 6.2.9 again, with the roles of the columns swapped).
/// It equals `S_FF' (2F + 1)(2J' + 1) / ((2F' + 1)(2J + 1))`: the decay
/// rate F' -> F is proportional to the line strength summed over the lower
/// sublevels, divided by the 2F' + 1 upper sublevels (common practice; e.g.
/// for 87Rb D2, F' = 1 decays to F = 2 with 1/6 and to F = 1 with 5/6).
///
/// # Errors
/// [`AngularError::TooLarge`] when an argument needed is above [`MAX_TWO_J`].
pub fn decay_branching_ff_exact(
    two_j: i32,
    two_jp: i32,
    two_i: i32,
    two_f: i32,
    two_fp: i32,
) -> Result<BigRational, AngularError> {
    strength_exact(two_j, two_jp, two_i, two_f, two_fp, two_f, two_jp)
}

/// [`decay_branching_ff_exact`] as the nearest `f64` (zero when the 6j symbol
/// vanishes; NaN only beyond [`MAX_TWO_J`]).
#[must_use]
pub fn decay_branching_ff(two_j: i32, two_jp: i32, two_i: i32, two_f: i32, two_fp: i32) -> f64 {
    decay_branching_ff_exact(two_j, two_jp, two_i, two_f, two_fp)
        .map_or(f64::NAN, |r| signed_sqrt::ratio_to_f64(&r))
}
