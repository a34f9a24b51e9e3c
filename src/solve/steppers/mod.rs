//! Steppers: advance any [`crate::solve::equation::Equation`] over the plan's
//! stops and hand every accepted step to the observers.
//!
//! Owns: `adaptive` (Dormand-Prince 8(5,3), any equation) and `exact` (one
//! matrix exponential per piecewise-constant stretch, equations with a
//! generator). Must not: know what a state means, record results, or decide
//! which stepper runs.

pub mod adaptive;
pub(crate) mod exact;

/// Statistics of one stepper run (the state itself is returned in place).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Run {
    /// Accepted steps (adaptive) or sub-steps (exact).
    pub steps: u64,
    /// Right-hand side evaluations (adaptive) or matrix exponentials (exact).
    pub evaluations: u64,
    /// Peaks recorded at sub-step ends only (the exact stepper's sub-steps
    /// were stretched past the peak sampling step by the step budget):
    /// they are lower bounds.
    pub peaks_at_ends_only: bool,
}
