//! Peak populations: the largest population of every level during the run.
//!
//! Owns: running maxima from the ends of every step and from the cubic
//! Hermite interpolant inside it, and the refinement of interior maxima from
//! dense states. Must not: step, or know how populations are read from a
//! state (the equation does).
//!
//! Inside each step the interpolant is sampled at theta = 1/4, 1/2, 3/4;
//! where the step holds a local maximum, it is located by a parabola through
//! the neighbouring samples (or through an end point and its derivative).
//! The interpolation error of an amplitude oscillating at frequency W is
//! about (W h)^4 / 384. With [`Interior::Trusted`] the interpolated maximum is
//! recorded directly (the exact stepper, whose sub-steps are short enough);
//! with [`Interior::Refine`] only end points are recorded and every interior
//! maximum that may reach the running peak is recomputed from the stepper's
//! dense states (the adaptive stepper, whose steps are long).

use super::{Dense, Interior, Observer, Step};
use crate::solve::equation::Equation;

/// Interior maxima whose interpolated value is within this fraction of the
/// running peak are recomputed (the interpolant may be off by about that much).
const REFINE_MARGIN: f64 = 1e-3;

/// Running peaks.
#[derive(Debug, Clone)]
pub struct Peaks {
    pub peaks: Vec<f64>,
    /// Levels whose interior maximum is to be refined in the current step.
    candidates: Vec<usize>,
    /// Populations at the dense points (reused).
    dense_p: Vec<f64>,
}

/// Cubic Hermite basis (h00, h10, h01, h11) at theta.
#[inline]
pub fn hermite(th: f64) -> [f64; 4] {
    let t2 = th * th;
    let t3 = t2 * th;
    [
        2.0 * t3 - 3.0 * t2 + 1.0,
        t3 - 2.0 * t2 + th,
        -2.0 * t3 + 3.0 * t2,
        t3 - t2,
    ]
}

impl Peaks {
    pub fn new(levels: usize) -> Peaks {
        Peaks {
            peaks: vec![0.0; levels],
            candidates: Vec::with_capacity(levels),
            dense_p: Vec::new(),
        }
    }

    /// Record level k's population q.
    #[inline]
    fn value(&mut self, k: usize, q: f64) {
        // A population never exceeds the norm, 1; rounding over very many
        // sub-steps may lift a state's by ~1e-7.
        let q = q.min(1.0);
        if q > self.peaks[k] {
            self.peaks[k] = q;
        }
    }

    /// Record the populations of a state.
    pub fn point<E: Equation + ?Sized>(&mut self, eq: &E, y: &[f64]) {
        for k in 0..self.peaks.len() {
            let q = eq.population(y, k);
            self.value(k, q);
        }
    }

    /// Examine the inside of a step: record (trusted) or queue (refine)
    /// every interior maximum.
    fn interior<E: Equation + ?Sized>(&mut self, eq: &E, s: &Step<'_>) {
        const TH: [f64; 3] = [0.25, 0.5, 0.75];
        let w = [hermite(TH[0]), hermite(TH[1]), hermite(TH[2])];
        let h = s.h;
        for k in 0..self.peaks.len() {
            let at = |c: &[f64; 4]| eq.interpolated_population(k, s.y0, s.d0, s.y1, s.d1, h, c);
            let p = [
                eq.population(s.y0, k),
                at(&w[0]),
                at(&w[1]),
                at(&w[2]),
                eq.population(s.y1, k),
            ];
            let mut j = 0;
            for m in 1..5 {
                if p[m] > p[j] {
                    j = m;
                }
            }
            // Where the step holds a local maximum: its position and estimate.
            let found: Option<f64> = match j {
                1..=3 => {
                    let den = p[j - 1] - 2.0 * p[j] + p[j + 1];
                    if den < 0.0 {
                        let u = (0.5 * (p[j - 1] - p[j + 1]) / den).clamp(-1.0, 1.0);
                        let th = 0.25 * (j as f64 + u);
                        Some(at(&hermite(th)).max(p[j]))
                    } else {
                        Some(p[j])
                    }
                }
                0 => {
                    // Slope at theta = 0 (per unit theta).
                    let sl = h * eq.population_rate(s.y0, s.d0, k);
                    parabola_from_slope(p[0], sl, p[1], 0.25).map(|(x, _)| at(&hermite(x)))
                }
                _ => {
                    let sl = h * eq.population_rate(s.y1, s.d1, k);
                    // Mirror: distance back from theta = 1.
                    parabola_from_slope(p[4], -sl, p[3], 0.25).map(|(x, _)| at(&hermite(1.0 - x)))
                }
            };
            if let Some(v) = found {
                match s.interior {
                    // A population never exceeds the norm (at most 1); the
                    // interpolant may, by its error (below PEAK_TOLERANCE).
                    Interior::Trusted => self.value(k, v.min(1.0)),
                    Interior::EndsOnly => {}
                    Interior::Refine => {
                        if v >= self.peaks[k] * (1.0 - REFINE_MARGIN) && v > 0.0 {
                            self.candidates.push(k);
                        }
                    }
                }
            }
        }
    }
}

impl<E: Equation + ?Sized> Observer<E> for Peaks {
    fn start(&mut self, eq: &E, y: &[f64]) {
        self.peaks.fill(0.0);
        self.point(eq, y);
    }

    fn step(&mut self, eq: &E, step: &Step<'_>, dense: &mut dyn Dense) {
        self.interior(eq, step);
        self.point(eq, step.y1);
        if self.candidates.is_empty() {
            return;
        }
        // Interior maxima that may reach the running peak: the maximum over
        // the dense states (parabola through the three highest points).
        if let Some(states) = dense.states() {
            for &k in &self.candidates {
                self.dense_p.clear();
                self.dense_p
                    .extend(states.iter().map(|y| eq.population(y.as_slice(), k)));
                let m = sampled_max(&self.dense_p);
                if m > self.peaks[k] {
                    self.peaks[k] = m;
                }
            }
        }
        self.candidates.clear();
    }

    fn sample(&mut self, _eq: &E, _t: f64, _y: &[f64]) {}
}

/// Parabola through (0, p0) with slope s at 0 and through (x1, p1): if it has
/// a maximum inside (0, x1), return its position and value.
fn parabola_from_slope(p0: f64, s: f64, p1: f64, x1: f64) -> Option<(f64, f64)> {
    if s <= 0.0 {
        return None;
    }
    // p(x) = p0 + s x + c x^2
    let c = (p1 - p0 - s * x1) / (x1 * x1);
    if c >= 0.0 {
        return None;
    }
    let x = -s / (2.0 * c);
    (x > 0.0 && x < x1).then_some((x, p0 + 0.5 * s * x))
}

/// Largest value of evenly spaced samples, refined by a parabola through the
/// highest sample and its neighbours.
pub fn sampled_max(p: &[f64]) -> f64 {
    let mut j = 0;
    for (i, v) in p.iter().enumerate() {
        if *v > p[j] {
            j = i;
        }
    }
    let mut best = p[j];
    if p.len() < 3 {
        return best;
    }
    // Parabola through three neighbouring samples centred at c; where the
    // highest sample is an end point, the end's neighbours are used and the
    // vertex is accepted only between that end and the next sample.
    let c = j.clamp(1, p.len() - 2);
    let den = p[c - 1] - 2.0 * p[c] + p[c + 1];
    if den < 0.0 {
        let u = 0.5 * (p[c - 1] - p[c + 1]) / den;
        let (lo, hi) = match j {
            0 => (-1.0, 0.0),
            _ if j == p.len() - 1 => (0.0, 1.0),
            _ => (-1.0, 1.0),
        };
        if (lo..=hi).contains(&u) {
            best = best.max(p[c] - 0.25 * (p[c - 1] - p[c + 1]) * u);
        }
    }
    best
}

#[cfg(test)]
mod tests;
