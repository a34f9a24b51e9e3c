//! What a run reports at its readout: the populations at the readout time,
//! the settled populations after the window, and the photons scattered in
//! it.
//!
//! Owns: choosing the readout populations (window end, a recorded state at
//! a time inside the window, or the settled populations), relaxing the
//! window-end populations through the decay branching (drives off, exact;
//! `model::open::settle`), and the final, thorough positivity check. Must
//! not: step, or know a state layout (it reads states through
//! [`Equation`]).

use super::equation::Equation;
use super::observers::samples::Samples;
use super::plan::Plan;
use crate::model::{open, Model, Readout as When};

/// The readout time inside the window, if the model asks for one.
pub(super) fn time(model: &Model) -> Option<f64> {
    match model.readout() {
        When::At(t) => Some(t),
        When::WindowEnd | When::Settled => None,
    }
}

/// The positivity defect of the final state, thoroughly (a density
/// matrix's smallest eigenvalue).
pub(super) fn final_defect<E: Equation>(eq: &E, y: &[f64]) -> f64 {
    eq.positivity_defect(y, true)
}

/// The populations and loss at the readout, and what goes with them.
pub(super) struct Readout {
    pub populations: Vec<f64>,
    pub lost: f64,
    pub settled: Option<Vec<f64>>,
    pub settled_lost: Option<f64>,
    pub scattered: Option<Vec<f64>>,
}

impl Readout {
    /// The readout of a run that ended in state `y`; a record made only for
    /// the readout is taken out of `samples`.
    pub fn take<E: Equation>(
        model: &Model,
        eq: &E,
        y: &[f64],
        plan: &Plan,
        samples: &mut Samples,
    ) -> Readout {
        let mut end = vec![0.0; eq.levels()];
        eq.populations(y, &mut end);
        let end_lost = eq.lost(y);
        let decays = model.levels().iter().any(|l| l.gamma > 0.0);
        let mut coherent = vec![0.0; eq.levels()];
        let (settled, settled_lost) = if let Some(lost) = eq.settled(y, &mut coherent) {
            (Some(coherent), Some(lost))
        } else if decays {
            let mut p = end.clone();
            let more = open::settle(model, &mut p);
            (Some(p), Some(end_lost + more))
        } else {
            (None, None)
        };
        let mut photons = vec![0.0; eq.levels()];
        let scattered = eq.scattered_photons(y, &mut photons).then_some(photons);
        let (populations, lost) = match (model.readout(), plan.readout) {
            (When::Settled, _) => match (&settled, settled_lost) {
                (Some(p), Some(l)) => (p.clone(), l),
                _ => (end, end_lost),
            },
            (When::At(_), Some((position, asked_for))) if position < samples.taken.len() => {
                // The plan's flag says whether a sample was asked for at
                // the readout time; where not, the record is the
                // readout's alone and leaves the samples.
                let p = if asked_for {
                    samples.taken[position].1.clone()
                } else {
                    samples.remove(position).1
                };
                let lost = (1.0 - p.iter().sum::<f64>()).max(0.0);
                (p, lost)
            }
            _ => (end, end_lost),
        };
        Readout {
            populations,
            lost,
            settled,
            settled_lost,
            scattered,
        }
    }
}
