//! One-parameter refinement for `tune`: from a coarse grid, the maximum of an
//! objective (golden-section search) or the smallest value that meets a
//! condition (bisection on the feasibility boundary).
//!
//! Owns: the search in a normalised coordinate t in [0, 1] (the app maps t to
//! the physical value, linearly or geometrically) and the bracket that states
//! the uncertainty. Must not: know about schemes, solvers or output; the
//! objective is a closure, so the search is tested on analytic functions.

/// Default refinement tolerance: stop when the bracket is narrower than this
/// fraction of the range (in t). 1e-4 keeps the objective differences inside
/// a bracket well above the 1e-10 relative accuracy of the propagation near
/// a quadratic maximum (a width d changes the objective by ~ d^2).
pub const DEFAULT_XTOL: f64 = 1e-4;

/// Golden ratio conjugate (sqrt(5) - 1) / 2.
const INV_PHI: f64 = 0.618_033_988_749_894_9;

/// The outcome of a refinement.
#[derive(Debug, Clone, PartialEq)]
pub struct Refined<T> {
    /// Best point found (t), with its objective and the data the closure returned.
    pub t: f64,
    pub value: f64,
    pub data: T,
    /// Final bracket [lo, hi] (t) that holds the optimum or the boundary.
    pub lo: f64,
    pub hi: f64,
    /// Evaluations made by the refinement (the coarse grid not counted).
    pub evaluations: usize,
    /// The best coarse point was at an end of the range: the optimum may lie
    /// at or beyond it.
    pub at_edge: bool,
}

/// The coarse grid: `n` equally spaced t from 0 to 1 (n >= 2).
pub fn coarse(n: usize) -> Vec<f64> {
    let n = n.max(2);
    (0..n)
        .map(|i| {
            if i + 1 == n {
                1.0
            } else {
                i as f64 / (n - 1) as f64
            }
        })
        .collect()
}

/// Maximise from a coarse grid: `ts` sorted, `fs[i] = f(ts[i])` with its
/// data. The first best coarse point (smallest t on a tie) is bracketed by its
/// neighbours, and golden-section search narrows that bracket to width
/// <= `xtol`. Assumes the objective is unimodal between the neighbours.
pub fn maximize<T: Clone, E>(
    ts: &[f64],
    fs: &[(f64, T)],
    xtol: f64,
    mut f: impl FnMut(f64) -> Result<(f64, T), E>,
) -> Option<Result<Refined<T>, E>> {
    if ts.len() != fs.len() || ts.is_empty() {
        return None;
    }
    let mut best = 0;
    for (i, (v, _)) in fs.iter().enumerate() {
        if *v > fs[best].0 {
            best = i;
        }
    }
    let last = ts.len() - 1;
    let (mut a, mut b) = (ts[best.saturating_sub(1)], ts[(best + 1).min(last)]);
    let mut out = Refined {
        t: ts[best],
        value: fs[best].0,
        data: fs[best].1.clone(),
        lo: a,
        hi: b,
        evaluations: 0,
        at_edge: best == 0 || best == last,
    };
    let xtol = xtol.max(f64::EPSILON);
    let mut eval = |t: f64, out: &mut Refined<T>| -> Result<f64, E> {
        let (v, d) = f(t)?;
        out.evaluations += 1;
        if v > out.value {
            out.t = t;
            out.value = v;
            out.data = d;
        }
        Ok(v)
    };
    let mut c = b - INV_PHI * (b - a);
    let mut d = a + INV_PHI * (b - a);
    let run = (|| -> Result<(), E> {
        if b - a <= xtol {
            return Ok(());
        }
        let mut fc = eval(c, &mut out)?;
        let mut fd = eval(d, &mut out)?;
        while b - a > xtol {
            if fc >= fd {
                b = d;
                d = c;
                fd = fc;
                c = b - INV_PHI * (b - a);
                fc = eval(c, &mut out)?;
            } else {
                a = c;
                c = d;
                fc = fd;
                d = a + INV_PHI * (b - a);
                fd = eval(d, &mut out)?;
            }
        }
        Ok(())
    })();
    Some(run.map(|()| {
        out.lo = a;
        out.hi = b;
        // The best point lies in the final bracket for a unimodal objective;
        // if an earlier, higher value fell outside (noise), widen the
        // bracket to hold it, so the stated uncertainty stays honest.
        out.lo = out.lo.min(out.t);
        out.hi = out.hi.max(out.t);
        out
    }))
}

// Same signature shape as `maximize`: the other search over the coarse grid (yes/no objective).
/// The smallest t whose condition holds: `ok[i]` is the condition at `ts[i]`
/// (with its data). The first coarse point that holds and its predecessor
/// bracket the boundary, and bisection narrows it to width <= `xtol`. The
/// result is the feasible end of the bracket (`value` is 1). None when no
/// coarse point holds. A feasible window narrower than a coarse step can be
/// missed.
pub fn smallest_feasible<T: Clone, E>(
    ts: &[f64],
    ok: &[(bool, T)],
    xtol: f64,
    mut f: impl FnMut(f64) -> Result<(bool, T), E>,
) -> Option<Result<Refined<T>, E>> {
    if ts.len() != ok.len() {
        return None;
    }
    let first = ok.iter().position(|(o, _)| *o)?;
    let mut out = Refined {
        t: ts[first],
        value: 1.0,
        data: ok[first].1.clone(),
        lo: ts[first],
        hi: ts[first],
        evaluations: 0,
        at_edge: first == 0,
    };
    if first == 0 {
        return Some(Ok(out));
    }
    let (mut a, mut b) = (ts[first - 1], ts[first]);
    let xtol = xtol.max(f64::EPSILON);
    while b - a > xtol {
        let m = 0.5 * (a + b);
        match f(m) {
            Err(e) => return Some(Err(e)),
            Ok((good, d)) => {
                out.evaluations += 1;
                if good {
                    b = m;
                    out.data = d;
                } else {
                    a = m;
                }
            }
        }
    }
    out.t = b;
    out.lo = a;
    out.hi = b;
    Some(Ok(out))
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// sin^2(x/2) on x in [x0, x1]: the resonant two-level excitation
    /// probability against pulse area (Rabi formula, I. I. Rabi, Phys. Rev. 51,
    /// 652 (1937)), maximal at x = pi.
    #[test]
    fn golden_section_finds_the_pi_pulse_of_sin_squared() {
        let (x0, x1) = (0.5, 5.0);
        let x = |t: f64| x0 + (x1 - x0) * t;
        let f = |t: f64| -> Result<(f64, f64), ()> { Ok(((x(t) / 2.0).sin().powi(2), x(t))) };
        let ts = coarse(41);
        let fs: Vec<(f64, f64)> = ts.iter().map(|&t| f(t).unwrap()).collect();
        let r = maximize(&ts, &fs, DEFAULT_XTOL, f).unwrap().unwrap();
        let (lo, hi) = (x(r.lo), x(r.hi));
        assert!(lo <= PI && PI <= hi, "pi outside [{lo}, {hi}]");
        assert!((hi - lo) <= DEFAULT_XTOL * (x1 - x0) * 1.0001);
        assert!((r.data - PI).abs() <= hi - lo);
        assert!(r.value > 1.0 - 1e-8);
        assert!(!r.at_edge);
        // From a bracket of 2/40 to 1e-4: about log(500)/log(phi) = 13 steps.
        assert!((12..=16).contains(&r.evaluations), "{}", r.evaluations);
    }

    #[test]
    fn maximum_at_the_range_end_is_marked() {
        let f = |t: f64| -> Result<(f64, ()), ()> { Ok((t, ())) };
        let ts = coarse(11);
        let fs: Vec<(f64, ())> = ts.iter().map(|&t| f(t).unwrap()).collect();
        let r = maximize(&ts, &fs, 1e-6, f).unwrap().unwrap();
        assert!(r.at_edge);
        assert!(r.t > 1.0 - 2e-6 && r.hi == 1.0);
    }

    #[test]
    fn errors_of_the_objective_come_back() {
        let ts = coarse(5);
        let fs: Vec<(f64, ())> = ts.iter().map(|&t| (-(t - 0.3).powi(2), ())).collect();
        let r = maximize(&ts, &fs, 1e-6, |_| Err::<(f64, ()), _>("boom")).unwrap();
        assert_eq!(r.unwrap_err(), "boom");
    }

    #[test]
    fn bisection_finds_the_feasibility_boundary() {
        // Condition x >= sqrt(2) on x in [0, 4]: boundary at sqrt(2).
        let x = |t: f64| 4.0 * t;
        let good = |t: f64| -> Result<(bool, f64), ()> { Ok((x(t) >= 2f64.sqrt(), x(t))) };
        let ts = coarse(41);
        let ok: Vec<(bool, f64)> = ts.iter().map(|&t| good(t).unwrap()).collect();
        let r = smallest_feasible(&ts, &ok, 1e-6, good).unwrap().unwrap();
        assert!(x(r.lo) < 2f64.sqrt() && 2f64.sqrt() <= x(r.hi));
        assert!(r.hi - r.lo <= 1e-6);
        assert_eq!(r.data, x(r.t));
        assert_eq!(r.t, r.hi);
        // (1/40) / 2^k <= 1e-6: 15 halvings of the coarse bracket.
        assert!((14..=16).contains(&r.evaluations), "{}", r.evaluations);
        // Nothing feasible: None. Feasible at the start: the start, marked.
        let none: Vec<(bool, f64)> = ts.iter().map(|_| (false, 0.0)).collect();
        assert!(smallest_feasible(&ts, &none, 1e-6, good).is_none());
        let all: Vec<(bool, f64)> = ts.iter().map(|_| (true, 0.0)).collect();
        let r = smallest_feasible(&ts, &all, 1e-6, good).unwrap().unwrap();
        assert!(r.at_edge && r.t == 0.0 && r.evaluations == 0);
    }

    #[test]
    fn coarse_grid_ends_exactly() {
        let c = coarse(41);
        assert_eq!((c[0], c[20], c[40]), (0.0, 0.5, 1.0));
        assert_eq!(coarse(1), vec![0.0, 1.0]);
    }
}
