//! Racah's single-sum formulas for the 3j and 6j symbols, in exact integer
//! arithmetic.
//!
//! Owns the factorials and the alternating sums; the selection rules and
//! the sign conventions are the caller's ([`super`]). Every argument here is
//! a non-negative integer (undoubled) that the caller has checked.
//!
//! The sums `sum_k (-1)^k prod_num (p(k))! / prod_den (x(k))!` have
//! factorial arguments linear in `k` with slope +1 or -1. With `L` the
//! product of the largest factorial of each denominator argument over the
//! range, every `T_k = L * term_k` is an integer, and consecutive terms
//! differ by a ratio of a few small integers: `T_{k+1} = T_k * A_k / B_k`
//! exactly. So the sum costs one multiplication and one exact division by a
//! machine word per term, plus one reduction of `sum / L` at the end.

use num_bigint::{BigInt, BigUint};
use num_rational::BigRational;
use num_traits::{One, Zero};

/// The factorials 0!, 1!, ..., n! of one evaluation.
pub(super) struct Factorials(Vec<BigUint>);

impl Factorials {
    /// The factorials up to `n!`.
    pub(super) fn up_to(n: u64) -> Self {
        let mut table = Vec::with_capacity(usize::try_from(n).unwrap_or(0) + 1);
        let mut f = BigUint::one();
        table.push(f.clone());
        for k in 1..=n {
            f *= k;
            table.push(f.clone());
        }
        Self(table)
    }

    /// `n!`; `n` must be within the table (the callers size it).
    pub(super) fn get(&self, n: i64) -> &BigUint {
        &self.0[usize::try_from(n).expect("factorial argument is non-negative")]
    }

    /// `prod nums! / prod dens!` as an exact rational.
    pub(super) fn ratio(&self, nums: &[i64], dens: &[i64]) -> BigRational {
        let mut n = BigUint::one();
        for &a in nums {
            n *= self.get(a);
        }
        let mut d = BigUint::one();
        for &a in dens {
            d *= self.get(a);
        }
        BigRational::new(BigInt::from(n), BigInt::from(d))
    }
}

/// One factorial argument of a sum's term: `base + slope * k`, slope +1 or -1.
#[derive(Clone, Copy, Debug)]
pub(super) struct Arg {
    pub base: i64,
    pub slope: i64,
}

impl Arg {
    pub(super) fn up(base: i64) -> Self {
        Self { base, slope: 1 }
    }

    pub(super) fn down(base: i64) -> Self {
        Self { base, slope: -1 }
    }

    fn at(self, k: i64) -> i64 {
        self.base + self.slope * k
    }
}

/// `(a + 1) (a + 2) ... b` (one for `b <= a`).
fn rising(a: i64, b: i64) -> BigUint {
    let mut p = BigUint::one();
    for x in (a + 1)..=b {
        p *= x.unsigned_abs();
    }
    p
}

/// `sum_{k=lo}^{hi} (-1)^k prod_num p(k)! / prod_den x(k)!` exactly. Every
/// argument must be non-negative over `lo..=hi` (the caller's range is where
/// all of them are); an empty range gives zero.
pub(super) fn alternating_sum(lo: i64, hi: i64, num: &[Arg], den: &[Arg]) -> BigRational {
    if lo > hi {
        return BigRational::zero();
    }
    // The largest value of each denominator argument over the range.
    let top = |a: &Arg| if a.slope > 0 { a.at(hi) } else { a.at(lo) };
    let largest = den.iter().map(top).chain(num.iter().map(top)).max();
    let table = Factorials::up_to(largest.unwrap_or(0).unsigned_abs());
    let mut l = BigUint::one();
    for a in den {
        l *= table.get(top(a));
    }
    // T_lo = L * term_lo
    let mut t = BigUint::one();
    for a in den {
        t *= rising(a.at(lo), top(a));
    }
    for a in num {
        t *= table.get(a.at(lo));
    }
    let mut sum = BigInt::zero();
    let mut k = lo;
    loop {
        if k % 2 == 0 {
            sum += BigInt::from(t.clone());
        } else {
            sum -= BigInt::from(t.clone());
        }
        if k == hi {
            break;
        }
        // T_{k+1} = T_k * up / down, exact: T_{k+1} is an integer.
        let mut up: u128 = 1;
        let mut down: u128 = 1;
        for a in den {
            let x = u128::from(a.at(k).unsigned_abs());
            if a.slope > 0 {
                down *= x + 1;
            } else {
                up *= x;
            }
        }
        for a in num {
            let p = u128::from(a.at(k).unsigned_abs());
            if a.slope > 0 {
                up *= p + 1;
            } else {
                down *= p;
            }
        }
        t = t * up / down;
        k += 1;
    }
    BigRational::new(sum, BigInt::from(l))
}
