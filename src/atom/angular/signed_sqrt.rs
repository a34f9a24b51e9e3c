//! The exact value of a 3j or 6j symbol or a Clebsch-Gordan coefficient: a
//! sign times the square root of a non-negative rational number, and its
//! correctly scaled conversion to `f64`.
//!
//! Owns the representation and the conversions only (no angular momentum).
//! The conversion never forms the numerator or the denominator as a float,
//! so it stays accurate when either is far beyond the range of `f64`.

use num_bigint::{BigInt, BigUint};
use num_rational::BigRational;
use num_traits::{Signed, ToPrimitive, Zero};

/// `(-1)^negative * sqrt(square)`, `square` a non-negative rational in lowest
/// terms. Zero is never negative, so two equal values compare equal.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SignedSqrt {
    negative: bool,
    square: BigRational,
}

impl SignedSqrt {
    /// The value zero.
    #[must_use]
    pub fn zero() -> Self {
        Self {
            negative: false,
            square: BigRational::zero(),
        }
    }

    /// `(-1)^negative * sqrt(square)`; `None` when `square` is negative. A
    /// zero square gives the (non-negative) zero whatever `negative` says.
    #[must_use]
    pub fn new(negative: bool, square: BigRational) -> Option<Self> {
        if square.is_negative() {
            return None;
        }
        let negative = negative && !square.is_zero();
        Some(Self { negative, square })
    }

    /// True for a value below zero.
    #[must_use]
    pub fn is_negative(&self) -> bool {
        self.negative
    }

    /// True for zero.
    #[must_use]
    pub fn is_zero(&self) -> bool {
        self.square.is_zero()
    }

    /// The square of the value (exact, non-negative, lowest terms).
    #[must_use]
    pub fn square(&self) -> &BigRational {
        &self.square
    }

    /// The value with the opposite sign (zero stays zero).
    #[must_use]
    pub fn negated(&self) -> Self {
        Self {
            negative: !self.negative && !self.square.is_zero(),
            square: self.square.clone(),
        }
    }

    /// The value times `sqrt(factor)` for a non-negative integer `factor`
    /// (such as 2j + 1), with the sign flipped when `flip` is true.
    pub(super) fn times_sqrt(&self, factor: u64, flip: bool) -> Self {
        let square = &self.square * BigRational::from_integer(BigInt::from(factor));
        Self::new(self.negative ^ flip, square).unwrap_or_else(Self::zero)
    }

    /// The nearest `f64` (within about one unit in the last place), also when
    /// the numerator or the denominator of the square overflows `f64`.
    #[must_use]
    pub fn to_f64(&self) -> f64 {
        let magnitude = sqrt_of_ratio(self.square.numer(), self.square.denom());
        if self.negative {
            -magnitude
        } else {
            magnitude
        }
    }
}

/// Bits kept in the integer quotient before rounding to `f64` (53 needed;
/// the rest make the truncation negligible).
const QUOTIENT_BITS: i64 = 120;

/// `n / d` as `q * 2^-s` with `q` an integer of about `QUOTIENT_BITS` bits,
/// `s` even: returns `(q, s)`. `n` and `d` positive.
fn scaled_quotient(n: &BigUint, d: &BigUint) -> (BigUint, i64) {
    let n_bits = i64::try_from(n.bits()).unwrap_or(i64::MAX / 4);
    let d_bits = i64::try_from(d.bits()).unwrap_or(i64::MAX / 4);
    let mut shift = QUOTIENT_BITS - (n_bits - d_bits);
    if shift % 2 != 0 {
        shift += 1;
    }
    let q = if shift >= 0 {
        (n << shift.unsigned_abs()) / d
    } else {
        n / (d << shift.unsigned_abs())
    };
    (q, shift)
}

/// `x * 2^e` without intermediate overflow or underflow of the power.
fn times_power_of_two(x: f64, e: i64) -> f64 {
    let mut x = x;
    let mut e = e;
    while e > 1000 {
        x *= 2f64.powi(1000);
        e -= 1000;
        if x.is_infinite() {
            return x;
        }
    }
    while e < -1000 {
        x *= 2f64.powi(-1000);
        e += 1000;
        if x == 0.0 {
            return x;
        }
    }
    // |e| <= 1000 here, so the cast is exact.
    x * 2f64.powi(e as i32)
}

/// `sqrt(n / d)` for a non-negative `n` and positive `d`.
fn sqrt_of_ratio(n: &BigInt, d: &BigInt) -> f64 {
    if n.is_zero() {
        return 0.0;
    }
    let (q, shift) = scaled_quotient(n.magnitude(), d.magnitude());
    let q = q.to_f64().unwrap_or(f64::INFINITY);
    times_power_of_two(q.sqrt(), -shift / 2)
}

/// `n / d` as the nearest `f64` (within about one unit in the last place),
/// also when `n` or `d` overflows `f64`. `d` positive.
pub(super) fn ratio_to_f64(r: &BigRational) -> f64 {
    if r.is_zero() {
        return 0.0;
    }
    let (q, shift) = scaled_quotient(r.numer().magnitude(), r.denom().magnitude());
    let value = times_power_of_two(q.to_f64().unwrap_or(f64::INFINITY), -shift);
    if r.is_negative() {
        -value
    } else {
        value
    }
}
