//! Envelopes as written in a scheme.
//!
//! Owns: the `envelope:` map of a field: the shape name, the keys each
//! shape takes, their times and widths, the Gaussian's `fwhm` or `sigma`,
//! and sampled points. Must not: compute envelope mathematics (each shape
//! owns that in `model::envelope`; the `fwhm` conversion is the Gaussian's).

use super::super::locate::KeyPath;
use super::super::raw::{RawEnvelope, Scalar};
use super::super::MAX_SAMPLE_POINTS;
use super::ctx::{Ctx, Sign};
use crate::model::{gaussian_sigma_from_intensity_fwhm, Envelope};

const SHAPES: &str = "rectangular, gaussian, sech, sin2, blackman, samples";

/// One envelope.
pub(super) fn envelope(ctx: &mut Ctx, e: &RawEnvelope, path: &KeyPath) -> Option<Envelope> {
    let Some(shape) = &e.shape else {
        ctx.missing(&path.k("shape"), format!("a shape: one of {SHAPES}"));
        return None;
    };
    let shape = shape.text();
    let ok = keys_of_shape(ctx, e, &shape, path)?;
    let time = |ctx: &mut Ctx, k: &str, s: &Option<Scalar>| ctx.axis_time(&path.k(k), s, Sign::Any);
    let dur =
        |ctx: &mut Ctx, k: &str, s: &Option<Scalar>| ctx.axis_time(&path.k(k), s, Sign::Positive);
    let env = match shape.as_str() {
        "rectangular" | "sin2" | "blackman" => {
            let start = time(ctx, "start", &e.start);
            let duration = dur(ctx, "duration", &e.duration);
            let (start, duration) = (start?, duration?);
            match shape.as_str() {
                "rectangular" => Envelope::Rectangular { start, duration },
                "sin2" => Envelope::Sin2 { start, duration },
                _ => Envelope::Blackman { start, duration },
            }
        }
        "gaussian" => {
            let center = time(ctx, "center", &e.center);
            let sigma = match (&e.fwhm, &e.sigma) {
                (Some(_), Some(_)) => {
                    ctx.push(&path.k("sigma"), "one of fwhm, sigma, not both", "both");
                    None
                }
                (None, None) => {
                    ctx.missing(&path.k("fwhm"), "a positive time (fwhm or sigma)");
                    None
                }
                (Some(_), None) => {
                    dur(ctx, "fwhm", &e.fwhm).map(gaussian_sigma_from_intensity_fwhm)
                }
                (None, Some(_)) => dur(ctx, "sigma", &e.sigma),
            };
            Envelope::Gaussian {
                center: center?,
                sigma: sigma?,
            }
        }
        "sech" => {
            let center = time(ctx, "center", &e.center);
            let tau = dur(ctx, "tau", &e.tau);
            Envelope::Sech {
                center: center?,
                tau: tau?,
            }
        }
        _ => samples(ctx, e, &path.k("points"))?,
    };
    ok.then_some(env)
}

/// The shape is known, and only its keys are given: None for an unknown
/// shape, `Some(false)` when a key of another shape is present (each one
/// reported).
fn keys_of_shape(ctx: &mut Ctx, e: &RawEnvelope, shape: &str, path: &KeyPath) -> Option<bool> {
    let (allowed, takes): (&[&str], &str) = match shape {
        "rectangular" | "sin2" | "blackman" => (&["start", "duration"], "start and duration"),
        "gaussian" => (
            &["center", "fwhm", "sigma"],
            "center and one of fwhm, sigma",
        ),
        "sech" => (&["center", "tau"], "center and tau"),
        "samples" => (&["points"], "points"),
        other => {
            ctx.push(
                &path.k("shape"),
                format!("a shape: one of {SHAPES}"),
                format!("'{other}'"),
            );
            return None;
        }
    };
    let present = [
        ("start", e.start.is_some()),
        ("duration", e.duration.is_some()),
        ("center", e.center.is_some()),
        ("fwhm", e.fwhm.is_some()),
        ("sigma", e.sigma.is_some()),
        ("tau", e.tau.is_some()),
        ("points", e.points.is_some()),
    ];
    let mut ok = true;
    for (k, p) in present {
        if p && !allowed.contains(&k) {
            ctx.push(
                &path.k(k),
                format!("only the keys of shape '{shape}': {takes}"),
                format!("'{k}', which {shape} does not take"),
            );
            ok = false;
        }
    }
    Some(ok)
}

/// A sampled envelope: at least two `[time, value]` points, times strictly
/// increasing, values >= 0.
fn samples(ctx: &mut Ctx, e: &RawEnvelope, pp: &KeyPath) -> Option<Envelope> {
    let Some(points) = &e.points else {
        ctx.missing(pp, "a list of at least two [time, value] points");
        return None;
    };
    if points.len() < 2 {
        ctx.push(
            pp,
            "a list of at least two [time, value] points",
            format!("{} point(s)", points.len()),
        );
        return None;
    }
    if !ctx.within(pp, points.len(), MAX_SAMPLE_POINTS, "points", "points") {
        return None;
    }
    let mut times = Vec::with_capacity(points.len());
    let mut values = Vec::with_capacity(points.len());
    let mut good = true;
    for (k, pt) in points.iter().enumerate() {
        let ptp = pp.i(k);
        if pt.len() != 2 {
            ctx.push(
                &ptp,
                "a point [time, value]",
                format!("a list of {} items", pt.len()),
            );
            good = false;
            continue;
        }
        let t = ctx.axis_time(&ptp.i(0), &pt[0], Sign::Any);
        let v = match &pt[1] {
            None => {
                ctx.missing(&ptp.i(1), "an envelope value (a bare number >= 0)");
                None
            }
            s => ctx.bare(&ptp.i(1), s, "an envelope value", |v| v >= 0.0, "(>= 0)"),
        };
        let (Some(t), Some(v)) = (t, v) else {
            good = false;
            continue;
        };
        if let Some(&prev) = times.last() {
            if t <= prev {
                let txt = pt[0].as_ref().map(|x| x.text()).unwrap_or_default();
                ctx.push(
                    &ptp.i(0),
                    "sample times in strictly increasing order",
                    format!("'{txt}', not after the previous time"),
                );
                good = false;
            }
        }
        times.push(t);
        values.push(v);
    }
    good.then_some(Envelope::Samples { times, values })
}
