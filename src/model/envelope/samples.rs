//! The sampled envelope: linear interpolation between (times[i], values[i]),
//! 0 outside; times strictly increasing, at least two points.
//!
//! Owns: every formula of this one shape (value, centre, area, support,
//! lengths, stretch, parameter check). It has no closed-form spectrum: the
//! estimator integrates it by quadrature. Must not: know of other shapes, of
//! units or of the scheme format.

use super::{Envelope, Shape};

/// A sampled envelope, borrowed from [`Envelope::Samples`].
#[derive(Clone, Copy)]
pub(crate) struct Samples<'a> {
    pub times: &'a [f64],
    pub values: &'a [f64],
}

/// Linear interpolation of sampled values, 0 outside [first, last].
#[inline]
fn interp(times: &[f64], values: &[f64], t: f64) -> f64 {
    let n = times.len().min(values.len());
    if n < 2 || t < times[0] || t > times[n - 1] {
        return 0.0;
    }
    // Index of the first sample time > t (binary search), at least 1.
    let i = times[..n].partition_point(|&x| x <= t).clamp(1, n - 1);
    let (t0, t1) = (times[i - 1], times[i]);
    let (v0, v1) = (values[i - 1], values[i]);
    let w = if t1 > t0 { (t - t0) / (t1 - t0) } else { 0.0 };
    v0 + w * (v1 - v0)
}

impl Shape for Samples<'_> {
    const NAME: &'static str = "samples";

    #[inline]
    fn value(&self, t: f64) -> f64 {
        interp(self.times, self.values, t)
    }

    /// Midpoint of the first and last sample time.
    fn center(&self) -> f64 {
        match (self.times.first(), self.times.last()) {
            (Some(a), Some(b)) => 0.5 * (a + b),
            _ => 0.0,
        }
    }

    /// The trapezoid sum, exact for the interpolant.
    fn area(&self) -> f64 {
        self.times
            .windows(2)
            .zip(self.values.windows(2))
            .map(|(t, v)| 0.5 * (t[1] - t[0]) * (v[0] + v[1]))
            .sum()
    }

    fn support(&self) -> (f64, f64) {
        match (self.times.first(), self.times.last()) {
            (Some(a), Some(b)) => (*a, *b),
            _ => (0.0, 0.0),
        }
    }

    /// The shortest sample interval.
    fn shortest_feature(&self) -> f64 {
        self.times
            .windows(2)
            .map(|w| w[1] - w[0])
            .fold(f64::INFINITY, f64::min)
    }

    fn breakpoints(&self) -> Vec<f64> {
        self.times.to_vec()
    }

    /// Between the outermost crossings of `max|f| / sqrt 2` (linear
    /// interpolation); None for an all-zero or malformed envelope.
    fn intensity_fwhm(&self) -> Option<f64> {
        let (times, values) = (self.times, self.values);
        if times.len() < 2 || times.len() != values.len() {
            return None;
        }
        let peak = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        if peak.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
            return None;
        }
        let thr = peak * std::f64::consts::FRAC_1_SQRT_2;
        let cross = |i0: usize, i1: usize| {
            let (v0, v1) = (values[i0].abs(), values[i1].abs());
            let w = if v1 != v0 {
                (thr - v0) / (v1 - v0)
            } else {
                0.0
            };
            times[i0] + w.clamp(0.0, 1.0) * (times[i1] - times[i0])
        };
        let first = values.iter().position(|v| v.abs() >= thr)?;
        let last = values.iter().rposition(|v| v.abs() >= thr)?;
        let left = if first == 0 {
            times[0]
        } else {
            cross(first - 1, first)
        };
        let right = if last + 1 == values.len() {
            times[last]
        } else {
            cross(last + 1, last)
        };
        Some(right - left)
    }

    /// The sample span.
    fn length(&self) -> f64 {
        match (self.times.first(), self.times.last()) {
            (Some(a), Some(b)) => b - a,
            _ => 0.0,
        }
    }

    fn span(&self) -> Option<f64> {
        Some(self.length())
    }

    fn spectrum(&self, _nu: f64) -> Option<f64> {
        None
    }

    fn stretched(&self, s: f64) -> Envelope {
        let c = self.center();
        Envelope::Samples {
            times: self.times.iter().map(|&t| c + s * (t - c)).collect(),
            values: self.values.to_vec(),
        }
    }

    fn check(&self) -> Result<(), String> {
        let (times, values) = (self.times, self.values);
        if times.len() < 2 || times.len() != values.len() {
            return Err("samples need at least two (time, value) pairs".into());
        }
        if times.iter().chain(values).any(|x| !x.is_finite()) {
            return Err("samples must be finite".into());
        }
        if times.windows(2).any(|w| w[1] <= w[0]) {
            return Err("sample times must increase strictly".into());
        }
        Ok(())
    }
}
