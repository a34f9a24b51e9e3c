//! What both propagators share: the stop times of a run (envelope edges and
//! sample times), envelope evaluation within one segment, and the tracking of
//! peak populations between steps.
//!
//! Owns: [`Plan`], [`Piece`], [`PeakTracker`]. Must not: integrate anything,
//! print, or know about output formats.

use crate::hamiltonian::FrameHamiltonian;
use crate::model::{Envelope, Model};

/// Stops closer than this fraction of the window are merged (a shorter
/// segment would underflow the step-size control).
const MERGE_FRACTION: f64 = 1e-12;

/// Stop times of a run.
#[derive(Debug, Clone)]
pub(crate) struct Plan {
    /// Sorted stop times from the window start to exactly the window end.
    pub stops: Vec<f64>,
    /// For each stop: the index of the sample recorded there, if any.
    pub sample_at: Vec<Option<usize>>,
    /// Number of samples asked for.
    pub samples: usize,
}

/// The sample times: evenly spaced, including the window start and exactly
/// the window end (one sample: the end only).
pub(crate) fn sample_times(start: f64, end: f64, samples: usize) -> Vec<f64> {
    match samples {
        0 => Vec::new(),
        1 => vec![end],
        n => (0..n)
            .map(|i| {
                if i + 1 == n {
                    end
                } else {
                    start + (end - start) * (i as f64) / ((n - 1) as f64)
                }
            })
            .collect(),
    }
}

/// Times at which an envelope's evaluation changes character: jumps and kinks,
/// and the edges of the support of Gaussian and sech pulses.
fn envelope_stops(e: &Envelope) -> Vec<f64> {
    match e {
        Envelope::Gaussian { .. } | Envelope::Sech { .. } => {
            let (a, b) = e.support();
            vec![a, b]
        }
        _ => e.breakpoints(),
    }
}

impl Plan {
    pub fn new(model: &Model, fh: &FrameHamiltonian, samples: usize) -> Plan {
        let (start, end) = (model.window.start, model.window.end);
        let span = end - start;
        let tol = MERGE_FRACTION * span;
        // (time, sample index) candidates.
        let mut cands: Vec<(f64, Option<usize>)> = Vec::new();
        for (i, t) in sample_times(start, end, samples).into_iter().enumerate() {
            cands.push((t, Some(i)));
        }
        let mut fields: Vec<usize> = fh.terms.iter().map(|t| t.field).collect();
        fields.sort_unstable();
        fields.dedup();
        for f in fields {
            for t in envelope_stops(&model.fields[f].envelope) {
                if t.is_finite() && t > start && t < end {
                    cands.push((t, None));
                }
            }
        }
        cands.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut stops = vec![start];
        let mut sample_at: Vec<Option<usize>> = vec![None];
        for (t, s) in cands {
            let last = stops.len() - 1;
            if (t - stops[last]).abs() <= tol {
                // Merge: a sample time wins over an envelope edge (it is exact).
                if s.is_some() {
                    if last > 0 {
                        stops[last] = t;
                    }
                    sample_at[last] = s;
                }
            } else {
                stops.push(t);
                sample_at.push(s);
            }
        }
        // The last stop is exactly the window end.
        let last = stops.len() - 1;
        if last > 0 && (end - stops[last]).abs() <= tol {
            stops[last] = end;
        } else if stops[last] != end {
            stops.push(end);
            sample_at.push(None);
        }
        Plan {
            stops,
            sample_at,
            samples,
        }
    }

    /// Number of segments.
    pub fn segments(&self) -> usize {
        self.stops.len().saturating_sub(1)
    }
}

/// An envelope as it is evaluated inside one segment between stops: constant
/// pieces and linear sample pieces are fixed from the segment midpoint, so an
/// evaluation exactly on a segment edge sees the inside of the segment.
#[derive(Debug, Clone, Copy)]
pub(crate) enum Piece<'a> {
    Zero,
    Const(f64),
    Linear { t0: f64, v0: f64, slope: f64 },
    Smooth(&'a Envelope),
}

impl<'a> Piece<'a> {
    /// The piece of `e` inside the segment whose midpoint is `mid`.
    pub fn of(e: &'a Envelope, mid: f64) -> Piece<'a> {
        match e {
            Envelope::Rectangular { .. } => {
                let v = e.value(mid);
                if v == 0.0 {
                    Piece::Zero
                } else {
                    Piece::Const(v)
                }
            }
            Envelope::Samples { times, values } => {
                let n = times.len().min(values.len());
                if n < 2 || mid < times[0] || mid > times[n - 1] {
                    return Piece::Zero;
                }
                let i = times[..n].partition_point(|&x| x <= mid).clamp(1, n - 1);
                let (t0, t1) = (times[i - 1], times[i]);
                let slope = if t1 > t0 {
                    (values[i] - values[i - 1]) / (t1 - t0)
                } else {
                    0.0
                };
                Piece::Linear {
                    t0,
                    v0: values[i - 1],
                    slope,
                }
            }
            Envelope::Sin2 { .. } | Envelope::Blackman { .. } => {
                let (a, b) = e.support();
                if mid < a || mid > b {
                    Piece::Zero
                } else {
                    Piece::Smooth(e)
                }
            }
            Envelope::Gaussian { .. } | Envelope::Sech { .. } => Piece::Smooth(e),
        }
    }

    /// f(t) for t inside (or on the edge of) the segment.
    #[inline]
    pub fn eval(&self, t: f64) -> f64 {
        match self {
            Piece::Zero => 0.0,
            Piece::Const(v) => *v,
            Piece::Linear { t0, v0, slope } => v0 + slope * (t - t0),
            Piece::Smooth(e) => e.value(t),
        }
    }
}

/// Fraction of an envelope's shortest feature allowed as the largest step.
pub(crate) const MAX_STEP_PER_FEATURE: f64 = 0.1;

/// Largest step (s) inside the segment [a, b]: a tenth of the shortest
/// feature of every envelope active there (Gaussian and sech pulses are
/// active inside their support), and never more than the segment.
pub(crate) fn max_step(model: &Model, fh: &FrameHamiltonian, a: f64, b: f64) -> f64 {
    let mut h = b - a;
    for t in &fh.terms {
        let e = &model.fields[t.field].envelope;
        let (s0, s1) = e.support();
        if s1 >= a && s0 <= b {
            h = h.min(MAX_STEP_PER_FEATURE * e.shortest_feature());
        }
    }
    h
}

/// Running maxima of |a_k|^2, updated from the end points of each step and
/// from cubic Hermite interpolation of the amplitudes inside it.
///
/// States are interleaved real vectors (re_0, im_0, re_1, im_1, ...); the
/// derivative is with respect to whatever variable the step length `h` is in.
/// Inside each step the interpolant is sampled at theta = 1/4, 1/2, 3/4; where
/// the step holds a local maximum, it is located by a parabola through the
/// neighbouring samples (or through an end point and its derivative). The
/// interpolation error of an amplitude oscillating at frequency W is about
/// (W h)^4 / 384.
///
/// With `trust_interior` the interpolated maximum is recorded directly (the
/// exact propagator, whose sub-steps are short enough). Otherwise only end
/// points are recorded and every interior maximum that may reach the running
/// peak is handed back in [`PeakTracker::candidates`] as (level, theta) for the
/// caller to recompute accurately (the adaptive propagator, whose steps are
/// long).
#[derive(Debug, Clone)]
pub(crate) struct PeakTracker {
    pub peaks: Vec<f64>,
    pub candidates: Vec<(usize, f64)>,
    trust_interior: bool,
}

/// Interior maxima whose interpolated value is within this fraction of the
/// running peak are recomputed (the interpolant may be off by about that much).
const REFINE_MARGIN: f64 = 1e-3;

#[inline]
fn hermite(th: f64) -> [f64; 4] {
    let t2 = th * th;
    let t3 = t2 * th;
    [
        2.0 * t3 - 3.0 * t2 + 1.0,
        t3 - 2.0 * t2 + th,
        -2.0 * t3 + 3.0 * t2,
        t3 - t2,
    ]
}

impl PeakTracker {
    pub fn new(n: usize, trust_interior: bool) -> PeakTracker {
        PeakTracker {
            peaks: vec![0.0; n],
            candidates: Vec::new(),
            trust_interior,
        }
    }

    /// Record the populations of a state.
    pub fn point(&mut self, y: &[f64]) {
        for (k, p) in self.peaks.iter_mut().enumerate() {
            let q = y[2 * k] * y[2 * k] + y[2 * k + 1] * y[2 * k + 1];
            if q > *p {
                *p = q;
            }
        }
    }

    /// Record level k's population q.
    pub fn value(&mut self, k: usize, q: f64) {
        if q > self.peaks[k] {
            self.peaks[k] = q;
        }
    }

    /// Examine the inside of a step from (y0, d0) to (y1, d1) of length h.
    pub fn step(&mut self, y0: &[f64], d0: &[f64], y1: &[f64], d1: &[f64], h: f64) {
        const TH: [f64; 3] = [0.25, 0.5, 0.75];
        let w = [hermite(TH[0]), hermite(TH[1]), hermite(TH[2])];
        for k in 0..self.peaks.len() {
            let (r, i) = (2 * k, 2 * k + 1);
            let at = |c: &[f64; 4]| {
                let re = c[0] * y0[r] + c[1] * h * d0[r] + c[2] * y1[r] + c[3] * h * d1[r];
                let im = c[0] * y0[i] + c[1] * h * d0[i] + c[2] * y1[i] + c[3] * h * d1[i];
                re * re + im * im
            };
            let p = [
                y0[r] * y0[r] + y0[i] * y0[i],
                at(&w[0]),
                at(&w[1]),
                at(&w[2]),
                y1[r] * y1[r] + y1[i] * y1[i],
            ];
            let mut j = 0;
            for m in 1..5 {
                if p[m] > p[j] {
                    j = m;
                }
            }
            // Where the step holds a local maximum: its position and estimate.
            let found: Option<(f64, f64)> = match j {
                1..=3 => {
                    let den = p[j - 1] - 2.0 * p[j] + p[j + 1];
                    if den < 0.0 {
                        let u = (0.5 * (p[j - 1] - p[j + 1]) / den).clamp(-1.0, 1.0);
                        let th = 0.25 * (j as f64 + u);
                        Some((th, at(&hermite(th)).max(p[j])))
                    } else {
                        Some((0.25 * j as f64, p[j]))
                    }
                }
                0 => {
                    // Slope at theta = 0 (per unit theta).
                    let s = 2.0 * h * (y0[r] * d0[r] + y0[i] * d0[i]);
                    parabola_from_slope(p[0], s, p[1], 0.25).map(|(x, _)| (x, at(&hermite(x))))
                }
                _ => {
                    let s = 2.0 * h * (y1[r] * d1[r] + y1[i] * d1[i]);
                    // Mirror: distance back from theta = 1.
                    parabola_from_slope(p[4], -s, p[3], 0.25)
                        .map(|(x, _)| (1.0 - x, at(&hermite(1.0 - x))))
                }
            };
            if let Some((th, v)) = found {
                if self.trust_interior {
                    self.value(k, v);
                } else if v >= self.peaks[k] * (1.0 - REFINE_MARGIN) && v > 0.0 {
                    self.candidates.push((k, th.clamp(0.0, 1.0)));
                }
            }
        }
    }
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

#[cfg(test)]
mod tests {
    use super::*;

    // Cubic Hermite interpolation: the peak of a population sin^2(W t / 2) is
    // recovered between samples to the interpolation error bound of the
    // amplitude, (W' h)^4 / 384 with W' = W / 2 the amplitude's frequency, i.e.
    // about 2 (0.15)^4 / 384 = 2.6e-6 in the population here (elementary
    // interpolation error bound; common practice, no source).
    #[test]
    fn tracker_finds_peak_between_samples() {
        // P(t) = sin^2(W t / 2) from amplitude a = sin(W t/2) (real), peak 1 at W t = pi.
        let w = 1.0;
        let h = 0.3;
        let mut tr = PeakTracker::new(1, true);
        let mut t = 0.0;
        let amp = |t: f64| [(0.5 * w * t).sin(), 0.0];
        let der = |t: f64| [0.5 * w * (0.5 * w * t).cos(), 0.0];
        while t < 4.0 {
            tr.step(&amp(t), &der(t), &amp(t + h), &der(t + h), h);
            t += h;
        }
        assert!((tr.peaks[0] - 1.0).abs() < 3e-6, "{}", tr.peaks[0]);
        assert!(
            (tr.peaks[0] - 1.0).abs() > 1e-9,
            "interpolation cannot be exact here"
        );
        // Without trusting the interior, the step is handed back for refinement.
        let mut tr = PeakTracker::new(1, false);
        tr.point(&amp(2.9));
        tr.step(&amp(2.9), &der(2.9), &amp(3.2), &der(3.2), 0.3);
        assert_eq!(tr.candidates.len(), 1);
        let th = tr.candidates[0].1;
        assert!((2.9 + 0.3 * th - std::f64::consts::PI).abs() < 1e-3, "{th}");
        assert!(tr.peaks[0] < 0.999);
    }

    #[test]
    fn samples_end_exactly() {
        let s = sample_times(0.1, 0.7, 7);
        assert_eq!(s.len(), 7);
        assert_eq!(s[0], 0.1);
        assert_eq!(s[6], 0.7);
    }
}
