//! Observers: what a run records while a stepper advances an equation.
//!
//! Owns: the [`Observer`] trait, the [`Step`] a stepper hands over after
//! every accepted step (or exact sub-step), and [`ObserverSet`], the
//! observers one run asks for (samples, peaks only when the output shows
//! them, norm and positivity always). Must not: advance anything, or know which equation
//! or stepper runs (they read states only through [`Equation`]).

pub mod norm;
pub mod peaks;
pub mod positivity;
pub mod samples;

use super::equation::Equation;
use nalgebra::DVector;

/// How far the inside of a step may be trusted to the Hermite interpolant.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Interior {
    /// Sub-steps short enough that interpolated values are recorded directly
    /// (the exact stepper).
    Trusted,
    /// Long steps: interior maxima close to the running peak are recomputed
    /// from [`Dense`] states (the adaptive stepper).
    Refine,
    /// Sub-steps longer than the peak sampling step (a step budget
    /// stretched them): only the states at their ends are recorded, never
    /// an interpolated value (which could exceed 1).
    EndsOnly,
}

/// One accepted step. The interpolation frame (y0, d0, y1, d1) may differ
/// from the state by phases that leave populations unchanged (see
/// `equation.rs`); `end` is the state itself at the step end.
#[derive(Debug, Clone, Copy)]
pub struct Step<'a> {
    /// Step length in the variable the derivatives are taken in.
    pub h: f64,
    pub y0: &'a [f64],
    pub d0: &'a [f64],
    pub y1: &'a [f64],
    pub d1: &'a [f64],
    /// The state at the step end.
    pub end: &'a [f64],
    pub interior: Interior,
}

/// States at evenly spaced points of the last step, computed on demand by the
/// stepper (the first and last point are the step's ends).
pub trait Dense {
    /// The states, or None where they cannot be computed.
    fn states(&mut self) -> Option<&[DVector<f64>]>;
}

/// No dense states (a stepper whose steps are trusted).
pub struct NoDense;

impl Dense for NoDense {
    fn states(&mut self) -> Option<&[DVector<f64>]> {
        None
    }
}

/// Something recorded during a run.
pub trait Observer<E: Equation + ?Sized> {
    /// The state at the window start.
    fn start(&mut self, eq: &E, y: &[f64]);
    /// An accepted step (its end state is finite).
    fn step(&mut self, eq: &E, step: &Step<'_>, dense: &mut dyn Dense);
    /// A sample time (absolute, s) and the state there.
    fn sample(&mut self, eq: &E, t: f64, y: &[f64]);
}

/// The observers of one run.
pub struct ObserverSet {
    pub samples: samples::Samples,
    /// None: peaks are not tracked (scans, tune).
    pub peaks: Option<peaks::Peaks>,
    pub norm: norm::NormDrift,
    pub positivity: positivity::Positivity,
}

impl ObserverSet {
    /// Observers for `levels` levels, `samples` samples, peaks or not.
    pub fn new(levels: usize, samples: usize, peaks: bool) -> ObserverSet {
        ObserverSet {
            samples: samples::Samples::new(levels, samples),
            peaks: peaks.then(|| peaks::Peaks::new(levels)),
            norm: norm::NormDrift::default(),
            positivity: positivity::Positivity::default(),
        }
    }
}

impl<E: Equation + ?Sized> Observer<E> for ObserverSet {
    fn start(&mut self, eq: &E, y: &[f64]) {
        self.samples.start(eq, y);
        if let Some(p) = self.peaks.as_mut() {
            p.start(eq, y);
        }
        self.norm.start(eq, y);
        self.positivity.start(eq, y);
    }

    #[inline]
    fn step(&mut self, eq: &E, step: &Step<'_>, dense: &mut dyn Dense) {
        if let Some(p) = self.peaks.as_mut() {
            p.step(eq, step, dense);
        }
        self.norm.step(eq, step, dense);
        self.positivity.step(eq, step, dense);
    }

    fn sample(&mut self, eq: &E, t: f64, y: &[f64]) {
        self.samples.sample(eq, t, y);
    }
}
