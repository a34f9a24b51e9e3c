//! Unit tests of the peak observer on cases with known maxima.

use super::*;
use crate::solve::observers::NoDense;

// The test equations here and in norm.rs's tests implement the same small
// trait, so their methods look alike line by line; each pins a different
// behaviour (interpolant, loss), which is why they stay apart.

/// One level whose population is the state itself (default interpolant:
/// Hermite on the population).
struct Direct;

impl Equation for Direct {
    fn dim(&self) -> usize {
        1
    }
    fn levels(&self) -> usize {
        1
    }
    fn initial_state(&self, y: &mut [f64]) {
        y[0] = 0.0;
    }
    fn enter_stretch(&mut self, _: f64, _: f64) {}
    fn rhs(&self, _: f64, _: &[f64], dy: &mut [f64]) {
        dy[0] = 0.0;
    }
    fn population(&self, y: &[f64], _: usize) -> f64 {
        y[0]
    }
    fn population_rate(&self, _: &[f64], dy: &[f64], _: usize) -> f64 {
        dy[0]
    }
    fn norm(&self, y: &[f64]) -> f64 {
        y[0]
    }
    fn lost(&self, _: &[f64]) -> f64 {
        0.0
    }
}

/// One level with a real amplitude y[0] (and y[1] = 0): population y[0]^2,
/// interpolated as the square of the Hermite interpolant of the amplitude.
struct Amplitude;

impl Equation for Amplitude {
    fn dim(&self) -> usize {
        2
    }
    fn levels(&self) -> usize {
        1
    }
    fn initial_state(&self, y: &mut [f64]) {
        y.fill(0.0);
    }
    fn enter_stretch(&mut self, _: f64, _: f64) {}
    fn rhs(&self, _: f64, _: &[f64], dy: &mut [f64]) {
        dy.fill(0.0);
    }
    fn population(&self, y: &[f64], _: usize) -> f64 {
        y[0] * y[0] + y[1] * y[1]
    }
    fn population_rate(&self, y: &[f64], dy: &[f64], _: usize) -> f64 {
        2.0 * (y[0] * dy[0] + y[1] * dy[1])
    }
    fn interpolated_population(
        &self,
        _: usize,
        y0: &[f64],
        d0: &[f64],
        y1: &[f64],
        d1: &[f64],
        h: f64,
        c: &[f64; 4],
    ) -> f64 {
        let re = c[0] * y0[0] + c[1] * h * d0[0] + c[2] * y1[0] + c[3] * h * d1[0];
        let im = c[0] * y0[1] + c[1] * h * d0[1] + c[2] * y1[1] + c[3] * h * d1[1];
        re * re + im * im
    }
    fn norm(&self, y: &[f64]) -> f64 {
        self.population(y, 0)
    }
    fn lost(&self, _: &[f64]) -> f64 {
        0.0
    }
}

/// Hand the peak observer one step from (y0, d0) to (y1, d1).
#[allow(clippy::too_many_arguments)]
fn observe<E: Equation>(
    pk: &mut Peaks,
    eq: &E,
    (y0, d0): (&[f64], &[f64]),
    (y1, d1): (&[f64], &[f64]),
    h: f64,
    interior: Interior,
    dense: &mut dyn Dense,
) {
    let s = Step {
        h,
        y0,
        d0,
        y1,
        d1,
        end: y1,
        interior,
    };
    pk.step(eq, &s, dense);
}

// A parabola p(t) = 0.8 - (t - t*)^2 is its own cubic Hermite interpolant,
// and the parabola through three of its samples is itself: the peak between
// the step ends is found to rounding wherever it lies in the step
// (elementary algebra).
#[test]
fn parabola_peak_inside_a_step_is_exact() {
    for ts in [0.03, 0.2, 0.37, 0.5, 0.61, 0.9, 0.98] {
        let p = |t: f64| [0.8 - (t - ts) * (t - ts)];
        let dp = |t: f64| [-2.0 * (t - ts)];
        let mut pk = Peaks::new(1);
        pk.start(&Direct, &p(0.0));
        let (a, b) = ((&p(0.0)[..], &dp(0.0)[..]), (&p(1.0)[..], &dp(1.0)[..]));
        observe(&mut pk, &Direct, a, b, 1.0, Interior::Trusted, &mut NoDense);
        assert!(
            (pk.peaks[0] - 0.8).abs() < 1e-15,
            "t* = {ts}: {}",
            pk.peaks[0]
        );
    }
    // A maximum outside the step: the larger end stands.
    let p = |t: f64| [0.8 - (t - 1.5) * (t - 1.5)];
    let dp = |t: f64| [-2.0 * (t - 1.5)];
    let mut pk = Peaks::new(1);
    pk.start(&Direct, &p(0.0));
    let (a, b) = ((&p(0.0)[..], &dp(0.0)[..]), (&p(1.0)[..], &dp(1.0)[..]));
    observe(&mut pk, &Direct, a, b, 1.0, Interior::Trusted, &mut NoDense);
    assert_eq!(pk.peaks[0], p(1.0)[0]);
}

// Cubic Hermite interpolation: the peak of a population sin^2(W t / 2) is
// recovered between samples to the interpolation error bound of the
// amplitude, (W' h)^4 / 384 with W' = W / 2 the amplitude's frequency, i.e.
// about 2 (0.15)^4 / 384 = 2.6e-6 in the population here (elementary
// interpolation error bound; common practice, no source).
#[test]
fn hermite_on_amplitudes_finds_peak_between_samples() {
    let w = 1.0;
    let h = 0.3;
    let amp = |t: f64| [(0.5 * w * t).sin(), 0.0];
    let der = |t: f64| [0.5 * w * (0.5 * w * t).cos(), 0.0];
    let mut pk = Peaks::new(1);
    pk.start(&Amplitude, &amp(0.0));
    let mut t = 0.0;
    while t < 4.0 {
        let (a, b) = (
            (&amp(t)[..], &der(t)[..]),
            (&amp(t + h)[..], &der(t + h)[..]),
        );
        observe(
            &mut pk,
            &Amplitude,
            a,
            b,
            h,
            Interior::Trusted,
            &mut NoDense,
        );
        t += h;
    }
    assert!((pk.peaks[0] - 1.0).abs() < 3e-6, "{}", pk.peaks[0]);
    assert!(
        (pk.peaks[0] - 1.0).abs() > 1e-9,
        "interpolation cannot be exact here"
    );
}

/// Dense states of sin(t / 2) at 33 points of a step.
struct SineDense(Vec<nalgebra::DVector<f64>>);

impl Dense for SineDense {
    fn states(&mut self) -> Option<&[nalgebra::DVector<f64>]> {
        Some(&self.0)
    }
}

// Without trusting the interior, only the ends are recorded and the interior
// maximum is taken from the dense states: a parabola through the three
// highest of 33 points of sin^2(t / 2) around its maximum at pi is off by
// about d^4 / 48 with d = 0.8 / 32, i.e. 1e-8 (the quartic term of the
// Taylor series; elementary calculus).
// The two `observe` calls below differ only in the dense states they get:
// that difference is the test.
#[test]
fn refined_interior_uses_dense_states() {
    let amp = |t: f64| [(0.5 * t).sin(), 0.0];
    let der = |t: f64| [0.5 * (0.5 * t).cos(), 0.0];
    let (a, b) = (2.6, 3.4);
    let mut pk = Peaks::new(1);
    pk.start(&Amplitude, &amp(a));
    let (ya, da, yb, db) = (amp(a), der(a), amp(b), der(b));
    let ends = ((&ya[..], &da[..]), (&yb[..], &db[..]));
    observe(
        &mut pk,
        &Amplitude,
        ends.0,
        ends.1,
        b - a,
        Interior::Refine,
        &mut NoDense,
    );
    assert!(pk.peaks[0] < 0.99, "ends only: {}", pk.peaks[0]);
    let mut dense = SineDense(
        (0..=32)
            .map(|i| nalgebra::DVector::from_row_slice(&amp(a + (b - a) * i as f64 / 32.0)))
            .collect(),
    );
    observe(
        &mut pk,
        &Amplitude,
        ends.0,
        ends.1,
        b - a,
        Interior::Refine,
        &mut dense,
    );
    assert!((pk.peaks[0] - 1.0).abs() < 1e-7, "{}", pk.peaks[0]);
}

// A maximum between the first two samples was missed (the end sample was
// taken as the peak), losing about P'' d^2 / 8 of a peak population; found
// by `tests/regressions/properties.rs` (exact vs adaptive peaks differed by
// 1.2e-7).
// p(x) = 1 - (x - x0)^2 is a parabola, so the refined value must be 1 to
// rounding (elementary algebra).
#[test]
fn maximum_next_to_an_end_sample_is_refined() {
    for x0 in [0.3, 3.7, 1.4] {
        let p: Vec<f64> = (0..5).map(|x| 1.0 - (x as f64 - x0).powi(2)).collect();
        let m = sampled_max(&p);
        assert!((m - 1.0).abs() < 1e-12, "x0 = {x0}: {m}");
    }
    // A maximum beyond the end belongs to the neighbouring step: the end
    // sample stands.
    let p: Vec<f64> = (0..5).map(|x| 1.0 - (x as f64 + 0.5).powi(2)).collect();
    assert_eq!(sampled_max(&p), p[0]);
    assert_eq!(sampled_max(&[0.2, 0.1]), 0.2);
}
