//! What every stepper shares: the stop times of a run (envelope edges and
//! sample times), envelope evaluation within one stretch between stops, and
//! the largest adaptive step an envelope allows.
//!
//! Owns: [`Plan`], [`Piece`], [`max_step`]. Must not: integrate anything,
//! record populations (observers do), print, or know about output formats.

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
    /// Where a readout time inside the window is recorded: the position of
    /// its state among the recorded samples, and whether that sample was
    /// asked for too (otherwise it is the readout's alone).
    pub readout: Option<(usize, bool)>,
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
    /// The stops of a run with `samples` samples and, where `readout` is a
    /// time before the window end, a recorded state there.
    pub fn new(model: &Model, fh: &FrameHamiltonian, samples: usize, readout: Option<f64>) -> Plan {
        let (start, end) = (model.window.start, model.window.end);
        let span = end - start;
        let tol = MERGE_FRACTION * span;
        // (time, sample index) candidates.
        let mut cands: Vec<(f64, Option<usize>)> = Vec::new();
        for (i, t) in sample_times(start, end, samples).into_iter().enumerate() {
            cands.push((t, Some(i)));
        }
        let readout = readout.filter(|t| *t < end);
        if let Some(t) = readout {
            // Index `samples`: the readout's own record (one past the samples).
            cands.push((t, Some(samples)));
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
                // Merge: a sample time wins over an envelope edge (it is
                // exact), and an asked-for sample over the readout's record.
                if s.is_some() && sample_at[last].is_none_or(|k| k == samples) {
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
        let readout = readout.map(|t| {
            let stop = stops
                .iter()
                .position(|&x| (x - t).abs() <= tol)
                .unwrap_or(0);
            let position = sample_at[..stop].iter().filter(|s| s.is_some()).count();
            (position, sample_at[stop] != Some(samples))
        });
        Plan {
            stops,
            sample_at,
            samples,
            readout,
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn samples_end_exactly() {
        let s = sample_times(0.1, 0.7, 7);
        assert_eq!(s.len(), 7);
        assert_eq!(s[0], 0.1);
        assert_eq!(s[6], 0.7);
    }
}
