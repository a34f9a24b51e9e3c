//! placeholder: replaced by the exact module at merge
//!
//! Clebsch-Gordan coefficients in f64 (Racah's formula); owns nothing else.

/// <j1 m1; j2 m2 | j m> in the Condon-Shortley convention, every argument
/// doubled (two_j1 = 2 j1, ...). Zero when the selection rules fail.
pub fn clebsch_gordan(
    two_j1: i32,
    two_m1: i32,
    two_j2: i32,
    two_m2: i32,
    two_j: i32,
    two_m: i32,
) -> f64 {
    let ok = |tj: i32, tm: i32| tj >= 0 && tm.abs() <= tj && (tj + tm) % 2 == 0;
    if !ok(two_j1, two_m1) || !ok(two_j2, two_m2) || !ok(two_j, two_m) || two_m1 + two_m2 != two_m {
        return 0.0;
    }
    if (two_j1 + two_j2 + two_j) % 2 != 0
        || two_j > two_j1 + two_j2
        || two_j < (two_j1 - two_j2).abs()
    {
        return 0.0;
    }
    let f = |n2: i32| -> f64 { ln_fact(n2 / 2) };
    let (a, b, c) = (two_j1, two_j2, two_j);
    let ln_delta = f(a + b - c) + f(a - b + c) + f(-a + b + c) - f(a + b + c + 2);
    let ln_pref = 0.5
        * (ln_delta
            + f(a + two_m1)
            + f(a - two_m1)
            + f(b + two_m2)
            + f(b - two_m2)
            + f(c + two_m)
            + f(c - two_m)
            + (f64::from(c) + 1.0).ln());
    let k_min = 0.max((b - c - two_m1) / 2).max((a - c + two_m2) / 2);
    let k_max = ((a + b - c) / 2)
        .min((a - two_m1) / 2)
        .min((b + two_m2) / 2);
    let mut sum = 0.0;
    for k in k_min..=k_max {
        let ln_den = ln_fact(k)
            + ln_fact((a + b - c) / 2 - k)
            + ln_fact((a - two_m1) / 2 - k)
            + ln_fact((b + two_m2) / 2 - k)
            + ln_fact((c - b + two_m1) / 2 + k)
            + ln_fact((c - a - two_m2) / 2 + k);
        let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
        sum += sign * (ln_pref - ln_den).exp();
    }
    sum
}

fn ln_fact(n: i32) -> f64 {
    (2..=n).map(|k| f64::from(k).ln()).sum()
}
