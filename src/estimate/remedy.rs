//! Computed remedies for a leak: what the estimate of the leaking level would
//! be with the dominant field reshaped (same pulse area, smoother envelope) or
//! lengthened (same area and shape), found by evaluating the estimator, not by
//! rules of thumb.
//!
//! Owns: [`remedy`], [`intensity_fwhm`], [`LengthRule`]. Must not: call the
//! propagators, edit the model (it works through field views), print.

use std::borrow::Cow;

use super::spectrum::envelope_spectrum_bound;
use super::view::FieldView;
use super::{contribution, level_estimate, terms, Ctx, EstimateError, Order, Remedy};
use crate::model::envelope::blackman_fwhm_fraction;
use crate::model::{gaussian_sigma_from_intensity_fwhm, Envelope, Model};

/// How [`remedy`] decides that a pulse length brings the level below tolerance.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LengthRule {
    /// Unchirped rectangular, sin2 and Blackman pulses at first order: the
    /// envelope of the oscillating line (sines replaced by 1, capped by the
    /// pulse area), summed over the level's contributions by the triangle
    /// inequality. An upper bound, so the length found does not hinge on
    /// landing in a zero of the line. For a rectangular pulse of area A this
    /// is `(A/2)^2 min(1, 4/(Delta T)^2)`, i.e. `Omega^2/Delta^2`.
    LineEnvelope,
    /// The estimate itself (Gaussian and sech pulses, whose lines fall
    /// monotonically; sampled or chirped pulses; every second-order estimate).
    /// The length reported is the shortest on a logarithmic grid beyond which
    /// every grid point is below tolerance, refined by bisection.
    Exact,
}

/// Full width at half maximum of the intensity `|f|^2` (s); see
/// [`Envelope::intensity_fwhm`], which each shape owns. None for an
/// all-zero or malformed sampled envelope.
pub fn intensity_fwhm(env: &Envelope) -> Option<f64> {
    env.intensity_fwhm()
}

/// Population of `level` at its own order with field `field` seen as `view`.
fn population_with<'a>(
    ctx: &mut Ctx<'a>,
    field: usize,
    view: FieldView<'a>,
    level: usize,
) -> Result<f64, EstimateError> {
    let saved = std::mem::replace(&mut ctx.views[field], view);
    let out = level_estimate(ctx, level).map(|(le, _)| le.population().unwrap_or(0.0));
    ctx.views[field] = saved;
    out
}

/// A view of `base` with another envelope (centred at the same time) and the
/// Rabi frequency rescaled to keep the pulse area.
fn reshaped<'a>(base: &FieldView<'a>, env: Envelope) -> Option<FieldView<'a>> {
    let area0 = base.area();
    let mut v = base.clone();
    v.env = Cow::Owned(env);
    v.stretch = 1.0;
    let area1 = v.area();
    let factor = area0 / area1;
    if !factor.is_finite() || factor == 0.0 {
        return None;
    }
    v.rabi_factor = factor;
    Some(v)
}

/// `base` stretched in time by `s` about its centre at the same area; the
/// chirp is divided by `s` so that the frequency sweep across the pulse stays
/// the same.
fn stretched<'a>(base: &FieldView<'a>, s: f64) -> FieldView<'a> {
    let mut v = base.clone();
    v.stretch = s;
    v.rabi_factor = 1.0 / s;
    v.chirp = base.chirp / s;
    v
}

/// Computed remedy for a leak into `level` at `tolerance`.
///
/// The dominant drive is the level's largest [`Source`](super::Source) in the
/// estimate (window included). All figures below are estimates of the whole
/// level (every contribution, coherently, at the level's own order) with only
/// the dominant drive's *field* changed — every drive of that field is
/// rescaled to keep its pulse area `Omega integral f dt`; the other fields are
/// untouched. They are taken over all time (the window is assumed to be
/// widened to hold the changed pulse). Replacements are centred at the present
/// envelope centre and keep the chirp.
///
/// * `gaussian_same_area`: Gaussian with the same intensity FWHM
///   ([`intensity_fwhm`]) as the present pulse.
/// * `blackman_same_area`: Blackman with the same intensity FWHM (total
///   duration FWHM / 0.2876).
/// * `blackman_same_span`: Blackman with the same total duration, for
///   envelopes of finite duration.
/// * `length_for_tolerance`: the present shape stretched in time by a factor
///   s in [1, 1e4] about its centre, at the same area (Omega / s; chirp / s so
///   the sweep is kept), the smallest s at which the level falls below
///   `tolerance` under [`LengthRule`]; `Some(present length)` if it already
///   is, None if even 1e4 does not suffice. Reported as the shape's one
///   length, [`Envelope::length`] (duration; intensity FWHM of Gaussian and
///   sech; sample span), the same number inspect shows.
///
/// Returns None for initial or unreached levels, levels without sources, and
/// pulses of zero area.
pub fn remedy(
    model: &Model,
    level: usize,
    tolerance: f64,
) -> Result<Option<Remedy>, EstimateError> {
    if level >= model.levels.len() {
        return Err(EstimateError::InvalidArgument(format!(
            "no level with index {level}"
        )));
    }
    if !(tolerance.is_finite() && tolerance > 0.0) {
        return Err(EstimateError::InvalidArgument(format!(
            "tolerance must be positive and finite, got {tolerance}"
        )));
    }
    let windowed = Ctx::new(model, Some(model.window));
    let (le, _) = level_estimate(&windowed, level)?;
    if !matches!(le.order, Order::First | Order::Second) {
        return Ok(None);
    }
    let Some(dominant) = le.sources.first() else {
        return Ok(None);
    };
    let drive = dominant.drive;
    let field = model.drives[drive].field;
    let env = &model.fields[field].envelope;
    let (Some(fwhm), present_length) = (env.intensity_fwhm(), env.length()) else {
        return Ok(None);
    };
    let area = env.area();
    if !(area.is_finite() && area != 0.0 && fwhm > 0.0 && present_length > 0.0) {
        return Ok(None);
    }

    let mut ctx = Ctx::new(model, None);
    // Amplitudes far below the tolerance need no refinement.
    ctx.amp_floor = ctx.amp_floor.max(1e-3 * tolerance.sqrt());
    let base = ctx.views[field].clone();
    let tc = base.tc;

    let gauss = Envelope::Gaussian {
        center: tc,
        sigma: gaussian_sigma_from_intensity_fwhm(fwhm),
    };
    let Some(v) = reshaped(&base, gauss) else {
        return Ok(None);
    };
    let gaussian_same_area = population_with(&mut ctx, field, v, level)?;

    let d_b = fwhm / blackman_fwhm_fraction();
    let black = Envelope::Blackman {
        start: tc - d_b / 2.0,
        duration: d_b,
    };
    let Some(v) = reshaped(&base, black) else {
        return Ok(None);
    };
    let blackman_same_area = population_with(&mut ctx, field, v, level)?;

    let blackman_same_span = match env.span() {
        Some(d) if d > 0.0 => {
            let e = Envelope::Blackman {
                start: tc - d / 2.0,
                duration: d,
            };
            match reshaped(&base, e) {
                Some(v) => Some(population_with(&mut ctx, field, v, level)?),
                None => None,
            }
        }
        _ => None,
    };

    let line_rule = le.order == Order::First && base.chirp == 0.0 && env.has_oscillating_line();
    let length_rule = if line_rule {
        LengthRule::LineEnvelope
    } else {
        LengthRule::Exact
    };

    let stretch = match length_rule {
        LengthRule::LineEnvelope => {
            // Fixed parts: contributions of other fields; bounded parts: the
            // dominant field's, as (sqrt(p) |Omega| / 2, nu) pairs.
            let mut fixed = 0.0;
            let mut bounded: Vec<(f64, f64)> = Vec::new();
            for src in &le.sources {
                let d = &model.drives[src.drive];
                if d.field == field {
                    let (ts, nt) = terms(&ctx, src.drive, level);
                    let w = 0.5 * model.initial[src.from].sqrt() * d.rabi.abs();
                    for t in &ts[..nt] {
                        bounded.push((w, t.nu));
                    }
                } else {
                    fixed += contribution(&ctx, src.drive, src.from, level)?.norm();
                }
            }
            let metric = |s: f64| -> Result<f64, EstimateError> {
                let mut amp = fixed;
                for &(w, nu) in &bounded {
                    // |F_s(nu)| <= s B(s nu), times Omega / s.
                    amp += w * envelope_spectrum_bound(env, nu * s).unwrap_or(f64::INFINITY);
                }
                Ok(amp * amp)
            };
            search(metric, tolerance, 20, 50)?
        }
        LengthRule::Exact => {
            let (per_decade, bisect) = if le.order == Order::Second {
                (4, 14)
            } else {
                (10, 30)
            };
            let metric = |s: f64| population_with(&mut ctx, field, stretched(&base, s), level);
            search(metric, tolerance, per_decade, bisect)?
        }
    };
    Ok(Some(Remedy {
        drive,
        gaussian_same_area,
        blackman_same_area,
        length_for_tolerance: stretch.map(|s| s * present_length),
        fwhm,
        blackman_same_span,
        stretch,
        present_length,
        length_rule,
    }))
}

/// Smallest stretch s in [1, 1e4] beyond which `metric` stays at or below
/// `tol` on a logarithmic grid (`per_decade` points per decade), refined by
/// `bisect` bisections in log s; None if the last grid point is above `tol`.
fn search(
    mut metric: impl FnMut(f64) -> Result<f64, EstimateError>,
    tol: f64,
    per_decade: usize,
    bisect: usize,
) -> Result<Option<f64>, EstimateError> {
    let n = 4 * per_decade;
    let at = |i: usize| 10f64.powf(4.0 * i as f64 / n as f64);
    let mut last_above: Option<usize> = None;
    for i in 0..=n {
        let v = metric(at(i))?;
        if !v.is_finite() {
            return Err(EstimateError::NonFinite("remedy length search".into()));
        }
        if v > tol {
            last_above = Some(i);
        }
    }
    let Some(i) = last_above else {
        return Ok(Some(1.0));
    };
    if i == n {
        return Ok(None);
    }
    let (mut lo, mut hi) = (at(i).ln(), at(i + 1).ln());
    for _ in 0..bisect {
        let mid = 0.5 * (lo + hi);
        let v = metric(mid.exp())?;
        if !v.is_finite() {
            return Err(EstimateError::NonFinite("remedy length search".into()));
        }
        if v > tol {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Ok(Some(hi.exp()))
}
