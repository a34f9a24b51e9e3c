//! Remedies for a leak that arrives by spontaneous emission (optical
//! pumping by a drive that excites a decaying level): how far the field
//! feeding it must be turned down, shortened or detuned for the rate
//! estimate of the level to fall to its tolerance. Reshaping the envelope
//! (the remedy of a coherent leak) does not help here: the scattered
//! population follows the intensity integral and the line's Lorentzian, not
//! the pulse's spectral wings.
//!
//! Owns: [`ScatterRemedy`] and [`scatter_remedy`]. Must not: call the
//! propagators, edit the model, print.
//!
//! # What is computed
//!
//! The rate estimate of `rates` is, per decay source s of the level, `p_s =
//! p_from R_s integral f^2 b_s` with `R_s = Omega_s^2 G_s / (G_s^2 + 4
//! Delta_s^2)`. Let `P_F` be the part fed through drives of the dominant
//! field F (the field of the largest source) and `P_0` the rest of the
//! estimate (other fields, the coherent first- or second-order part). At
//! weak drive `P_F` is linear in the intensity and in `integral f^2`, so
//! with `x = (tol - P_0) / P_F` the estimate meets the tolerance at
//! intensity times `x` or at the pulse length times `x` (same peak Rabi
//! frequency and shape). Moving the carrier by `delta` changes every
//! `Delta_s` of F by `delta`; the shift is the smallest `|delta|` (away from
//! the dominant line, on a logarithmic grid from G/100 to 1e5 G refined by
//! bisection) at which `P_0 + sum_s p_s (G_s^2 + 4 Delta_s^2) / (G_s^2 + 4
//! (Delta_s + delta)^2) <= tol`. None when `P_0` alone exceeds the
//! tolerance (turning F down cannot help), no decay source is there, or a
//! number of the remedy would not be finite.

use super::LevelEstimate;
use crate::model::Model;

/// A computed remedy of a decay-fed leak (see the module documentation).
#[derive(Debug, Clone, PartialEq)]
pub struct ScatterRemedy {
    /// Index into `Model::fields` of the field that feeds most of the leak.
    pub field: usize,
    /// The largest decay source: the decaying level it goes through and the
    /// initially populated level the field takes population from.
    pub via: usize,
    pub from: usize,
    /// Detuning of the largest source's drive now (rad/s).
    pub detuning: f64,
    /// Part of the estimate fed through the field's drives.
    pub fed_by_field: f64,
    /// Factor on the field's intensity (and, the same number, on its pulse
    /// length at the same peak Rabi frequency) that brings the estimate to
    /// the tolerance; in (0, 1).
    pub factor: f64,
    /// Carrier shift (rad/s) that brings the estimate to the tolerance, if
    /// one exists within 1e5 line widths.
    pub carrier_shift: Option<f64>,
}

/// The remedy of level `level`'s decay-fed leak above `tolerance`, from its
/// estimate `le` (the full estimate, decay sources included).
pub fn scatter_remedy(model: &Model, le: &LevelEstimate, tolerance: f64) -> Option<ScatterRemedy> {
    let top = le.decay_sources.first()?;
    let field = model.drives[top.drive].field;
    let ours: Vec<_> = le
        .decay_sources
        .iter()
        .filter(|s| model.drives[s.drive].field == field)
        .collect();
    let fed: f64 = ours.iter().map(|s| s.population).sum();
    let rest = (le.population()? - fed).max(0.0);
    if !(fed > 0.0 && tolerance > rest && fed + rest > tolerance) {
        return None;
    }
    let factor = (tolerance - rest) / fed;
    // Every number the row carries is finite (a remedy is advice: one that
    // cannot be stated in numbers is left out, never reported as NaN).
    if !(factor.is_finite() && factor > 0.0 && top.detuning.is_finite()) {
        return None;
    }
    let after = |delta: f64| -> f64 {
        rest + ours
            .iter()
            .map(|s| {
                let g2 = s.width * s.width;
                let now = g2 + 4.0 * s.detuning * s.detuning;
                let moved = s.detuning + delta;
                s.population * now / (g2 + 4.0 * moved * moved)
            })
            .sum::<f64>()
    };
    let sign = if top.detuning < 0.0 { -1.0 } else { 1.0 };
    let carrier_shift =
        smallest_shift(|d| after(sign * d) <= tolerance, top.width).map(|d| sign * d);
    Some(ScatterRemedy {
        field,
        via: top.via,
        from: top.from,
        detuning: top.detuning,
        fed_by_field: fed,
        factor,
        carrier_shift,
    })
}

/// The smallest `d` > 0 (to 1e-6 relative) with `ok(d)`, searched on a
/// logarithmic grid of 20 points per decade from `width / 100` to `1e5 width`
/// and refined by bisection between the last grid point that fails and the
/// first that passes.
fn smallest_shift(ok: impl Fn(f64) -> bool, width: f64) -> Option<f64> {
    if !(width.is_finite() && width > 0.0) {
        return None;
    }
    let step = 10f64.powf(1.0 / 20.0);
    let mut lo = 0.0;
    let mut d = width / 100.0;
    while d <= 1e5 * width {
        if ok(d) {
            let mut hi = d;
            while hi - lo > 1e-6 * hi {
                let mid = 0.5 * (lo + hi);
                if ok(mid) {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            return Some(hi);
        }
        lo = d;
        d *= step;
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::estimate::{DecaySource, Order};

    // A Lorentzian line G^2 / (G^2 + 4 d^2) falls to 1/x at
    // d = (G/2) sqrt(x - 1) (algebra of the rate formula in `rates`).
    #[test]
    fn the_shift_search_finds_the_lorentzian_half_width_point() {
        let g = 2.0e7;
        for x in [2.0, 10.0, 1e4] {
            let want = 0.5 * g * (x - 1.0_f64).sqrt();
            let got =
                smallest_shift(|d| g * g / (g * g + 4.0 * d * d) <= 1.0 / x, g).expect("found");
            assert!((got / want - 1.0).abs() < 2e-6, "{x}: {got} vs {want}");
        }
        assert_eq!(smallest_shift(|_| false, g), None);
        assert_eq!(smallest_shift(|_| true, 0.0), None);
    }

    /// A one-drive model (g -> e, e decaying to g and s) and a hand-made
    /// estimate of s: `rest` coherent, one decay source of population `fed`
    /// and line width `width`.
    fn case(rest: f64, fed: f64, width: f64) -> (Model, LevelEstimate) {
        let text = r#"
levels:
  g: { energy: "0 MHz" }
  s: { energy: "9200 MHz" }
  e: { energy: "450000000 MHz", lifetime: "30 ns", decays_to: { g: 0.7, s: 0.2 } }
initial: g
couplings:
  - { between: [g, e], dipole: 1.0 }
fields:
  pump:
    tuned: { to: [g, e], detuning: "-60 MHz" }
    rabi: { on: [g, e], value: "1 MHz" }
    envelope: { shape: rectangular, start: "0 us", duration: "5 us" }
"#;
        let model = crate::scheme::parse(text, "t.yaml").expect("valid");
        let source = DecaySource {
            drive: 0,
            from: 0,
            via: 2,
            detuning: -2.0 * std::f64::consts::PI * 60e6,
            rabi: 2.0 * std::f64::consts::PI * 1e6,
            width,
            rate: 1.0,
            saturation: 1e-3,
            scattered: 1.0,
            population: fed,
            reliable: true,
        };
        let le = LevelEstimate {
            order: Order::First,
            first_order: Some(rest + fed),
            second_order: None,
            sources: Vec::new(),
            decay_sources: vec![source],
        };
        (model, le)
    }

    // Arithmetic of the module documentation and its refusals.
    #[test]
    fn the_remedy_is_none_where_the_field_cannot_cure_or_a_number_is_bad() {
        let g = 1.0 / 30e-9;
        let (m, le) = case(1e-4, 9e-4, g);
        let r = scatter_remedy(&m, &le, 3e-4).expect("a remedy");
        assert!((r.factor - 2e-4 / 9e-4).abs() < 1e-15);
        assert!(
            r.carrier_shift.is_some_and(|d| d < 0.0),
            "away from the line"
        );
        // Other paths alone above the tolerance: turning the field down cannot help.
        assert_eq!(scatter_remedy(&m, &case(5e-4, 9e-4, g).1, 3e-4), None);
        // Within tolerance already, no decay source, or numbers not finite.
        assert_eq!(scatter_remedy(&m, &le, 2e-3), None);
        let mut none = le.clone();
        none.decay_sources.clear();
        assert_eq!(scatter_remedy(&m, &none, 3e-4), None);
        assert_eq!(scatter_remedy(&m, &case(1e-4, f64::NAN, g).1, 3e-4), None);
        assert_eq!(
            scatter_remedy(&m, &case(1e-4, f64::INFINITY, g).1, 3e-4),
            None
        );
        assert_eq!(scatter_remedy(&m, &le, f64::NAN), None);
        // A line of no width: the factor stands, no shift is searched.
        let r = scatter_remedy(&m, &case(1e-4, 9e-4, 0.0).1, 3e-4).expect("a remedy");
        assert_eq!(r.carrier_shift, None);
        let r = scatter_remedy(&m, &case(1e-4, 9e-4, f64::NAN).1, 3e-4).expect("a remedy");
        assert_eq!(r.carrier_shift, None);
    }
}
