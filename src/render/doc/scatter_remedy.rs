//! The remedy sentence of a leak fed by spontaneous emission: turn the
//! field down, shorten it, or move its carrier away from the line, each with
//! its exact check.
//!
//! Owns: the wording of that sentence. Must not: compute (every number comes
//! from the report's [`ScatterRemedyRow`]) or pick a format. A number that
//! is not finite (the pipeline refuses such reports; this is the renderer's
//! own guard) is spelt "-", never NaN.

use super::numfmt::{self, Num};
use super::TWO_PI;
use crate::report::{LevelRow, ScatterCheck, ScatterRemedyRow};

/// `fmt(x)` as plain text, or "-" for a number that is not finite.
fn plain(x: f64, fmt: fn(f64) -> Num) -> String {
    if x.is_finite() {
        fmt(x).plain()
    } else {
        "-".into()
    }
}

fn signed_frequency(hz: f64) -> Num {
    numfmt::frequency(hz, true)
}

/// "g2: fed by decay of e after field probe excites it from g1 ...".
pub(super) fn scatter_remedy_text(l: &LevelRow, m: &ScatterRemedyRow) -> String {
    let exact = |x: Option<f64>, check: ScatterCheck| match x {
        Some(v) => format!(" (exact {})", plain(v, numfmt::population)),
        None => m
            .not_checked
            .iter()
            .find(|u| u.check == check)
            .map_or_else(String::new, |u| format!(" (not checked: {})", u.reason)),
    };
    let tol = plain(l.tolerance, numfmt::population);
    let x = m.factor_for_tolerance;
    let factor = plain(x, numfmt::ratio);
    let db = if x.is_finite() && x > 0.0 {
        format!(" ({:.1} dB)", 10.0 * x.log10())
    } else {
        String::new()
    };
    let detuning = match m.detuning_for_tolerance {
        Some(d) => format!(
            "; moving its carrier to a detuning of {} gives {tol}{}",
            plain(d / TWO_PI, signed_frequency),
            exact(m.exact_at_detuning, ScatterCheck::Detuning)
        ),
        None => format!("; no carrier shift within 1e5 line widths reaches {tol}"),
    };
    format!(
        "{}: fed by decay of {} after field {} excites it from {} (detuning {}): the rate estimate reaches {tol} with that field at {factor}{db} of its intensity{} or its pulse {factor} as long at the same Rabi frequency{}{detuning}. A repumper on {} is the other cure (not checked).",
        l.id,
        m.via,
        m.field,
        m.from,
        plain(m.detuning / TWO_PI, signed_frequency),
        exact(m.exact_at_intensity, ScatterCheck::Intensity),
        exact(m.exact_at_length, ScatterCheck::Length),
        l.id,
    )
}

#[cfg(test)]
mod tests {
    use super::scatter_remedy_text;
    use crate::report::{sample, LevelRow, ScatterCheck, ScatterRemedyRow};

    /// The sample's decay-fed spectator `d` and its remedy row.
    fn d() -> (LevelRow, ScatterRemedyRow) {
        let l = sample::vet_report().levels[3].clone();
        let m = l.scatter_remedy.clone().expect("d has a scatter remedy");
        (l, m)
    }

    #[test]
    fn the_sentence_states_every_change_with_its_exact_check() {
        let (l, m) = d();
        assert_eq!(
            scatter_remedy_text(&l, &m),
            "d: fed by decay of e after field probe, \"A\" excites it from g (detuning -20.00 MHz): \
             the rate estimate reaches 0.0010 with that field at 0.625 (-2.0 dB) of its intensity \
             (exact 9.50e-4) or its pulse 0.625 as long at the same Rabi frequency (exact 0.0013); \
             moving its carrier to a detuning of -26.50 MHz gives 0.0010. \
             A repumper on d is the other cure (not checked)."
        );
    }

    #[test]
    fn each_exact_check_shows_its_number_its_reason_or_nothing() {
        let (l, mut m) = d();
        m.exact_at_intensity = None;
        m.exact_at_detuning = Some(8e-4);
        m.record(
            ScatterCheck::Length,
            Err("the run needs more than 10 steps".into()),
        );
        let t = scatter_remedy_text(&l, &m);
        assert!(
            t.contains("(-2.0 dB) of its intensity or its pulse"),
            "no check, no brackets: {t}"
        );
        assert!(
            t.contains("Rabi frequency (not checked: the run needs more than 10 steps);"),
            "{t}"
        );
        assert!(
            t.contains("-26.50 MHz gives 0.0010 (exact 8.00e-4)."),
            "{t}"
        );
        assert!(
            !t.contains("exact 0.0013"),
            "a failed check drops its number"
        );
    }

    #[test]
    fn no_carrier_shift_is_said_and_no_nan_is_ever_printed() {
        let (l, mut m) = d();
        m.detuning_for_tolerance = None;
        let t = scatter_remedy_text(&l, &m);
        assert!(
            t.contains("; no carrier shift within 1e5 line widths reaches 0.0010."),
            "{t}"
        );
        m.factor_for_tolerance = f64::NAN;
        m.detuning = f64::INFINITY;
        m.exact_at_intensity = Some(f64::NAN);
        m.detuning_for_tolerance = Some(f64::NAN);
        let t = scatter_remedy_text(&l, &m);
        for bad in ["NaN", "nan", "inf", "dB"] {
            assert!(!t.contains(bad), "{bad} in {t}");
        }
        assert!(t.contains("at - of its intensity (exact -) or"), "{t}");
        assert!(t.contains("(detuning -)"), "{t}");
    }
}
