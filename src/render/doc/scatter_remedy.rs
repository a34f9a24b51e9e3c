//! The remedy sentence of a leak fed by spontaneous emission: turn the
//! field down, shorten it, or move its carrier away from the line, each with
//! its exact check.
//!
//! Owns: the wording of that sentence. Must not: compute (every number comes
//! from the report's [`ScatterRemedyRow`]) or pick a format.

use super::{numfmt, TWO_PI};
use crate::report::{LevelRow, ScatterCheck, ScatterRemedyRow};

/// "g2: fed by decay of e after field probe excites it from g1 ...".
pub(super) fn scatter_remedy_text(l: &LevelRow, m: &ScatterRemedyRow) -> String {
    let exact = |x: Option<f64>, check: ScatterCheck| match x {
        Some(v) => format!(" (exact {})", numfmt::population(v).plain()),
        None => m
            .not_checked
            .iter()
            .find(|u| u.check == check)
            .map_or_else(String::new, |u| format!(" (not checked: {})", u.reason)),
    };
    let tol = numfmt::population(l.tolerance).plain();
    let db = 10.0 * m.factor_for_tolerance.log10();
    let factor = numfmt::ratio(m.factor_for_tolerance).plain();
    let detuning = match m.detuning_for_tolerance {
        Some(d) => format!(
            "; moving its carrier to a detuning of {} gives {tol}{}",
            numfmt::frequency(d / TWO_PI, true).plain(),
            exact(m.exact_at_detuning, ScatterCheck::Detuning)
        ),
        None => String::new(),
    };
    format!(
        "{}: fed by decay of {} after field {} drives it from {} (detuning {}): the rate estimate reaches {tol} with that field at {factor} of its intensity ({db:.1} dB){} or its pulse {factor} as long at the same Rabi frequency{}{detuning}. A repumper on {} is the other cure (not checked).",
        l.id,
        m.via,
        m.field,
        m.from,
        numfmt::frequency(m.detuning / TWO_PI, true).plain(),
        exact(m.exact_at_intensity, ScatterCheck::Intensity),
        exact(m.exact_at_length, ScatterCheck::Length),
        l.id,
    )
}
