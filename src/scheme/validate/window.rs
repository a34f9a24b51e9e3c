//! The time window and the solver settings.
//!
//! Owns: `window:` (start and end on the pulse axis, or by default the span
//! of every envelope's support) and `solver:` (tolerances, method, detuning
//! cutoff). Must not: know of levels or couplings.

use super::super::locate::KeyPath;
use super::super::raw::RawScheme;
use super::ctx::{Ctx, Sign};
use super::fields::FieldInfo;
use crate::model::{Method, SolverSettings, Window};
use crate::units::Kind;

/// The window as written, or the span of the envelopes; None when it is
/// wrong or cannot be known (a message is pushed where that is the
/// window's fault).
pub(super) fn window(
    raw: &RawScheme,
    ctx: &mut Ctx,
    has_fields: bool,
    fields: &[FieldInfo],
) -> Option<Window> {
    let wp = KeyPath::root().k("window");
    let Some(w) = &raw.window else {
        if !has_fields {
            ctx.missing(
                &wp,
                "a window {start: T, end: T} (a scheme without fields has no pulse to span)",
            );
            return None;
        }
        let mut span: Option<(f64, f64)> = None;
        for env in fields.iter().filter_map(|f| f.envelope.as_ref()) {
            let (a, b) = env.support();
            span = Some(match span {
                None => (a, b),
                Some((x, y)) => (x.min(a), y.max(b)),
            });
        }
        return span.map(|(a, b)| Window { start: a, end: b });
    };
    let s = ctx.axis_time(&wp.k("start"), &w.start, Sign::Any);
    let e = ctx.axis_time(&wp.k("end"), &w.end, Sign::Any);
    match (s, e) {
        (Some(s), Some(e)) if e > s => Some(Window { start: s, end: e }),
        (Some(_), Some(_)) => {
            let txt = w.end.as_ref().map(|x| x.text()).unwrap_or_default();
            ctx.push(
                &wp.k("end"),
                "an end time after the start",
                format!("'{txt}'"),
            );
            None
        }
        _ => None,
    }
}

/// The solver settings, defaults where not given.
pub(super) fn solver(raw: &RawScheme, ctx: &mut Ctx) -> SolverSettings {
    let sp = KeyPath::root().k("solver");
    let mut solver = SolverSettings::default();
    let Some(s) = &raw.solver else {
        return solver;
    };
    let pos = |v: f64| v > 0.0;
    for (key, value, what, slot) in [
        ("rtol", &s.rtol, "a relative tolerance", &mut solver.rtol),
        ("atol", &s.atol, "an absolute tolerance", &mut solver.atol),
    ] {
        if let Some(v) = ctx.bare(&sp.k(key), value, what, pos, "(positive)") {
            *slot = v;
        }
    }
    if let Some(m) = &s.method {
        match m.text().as_str() {
            "auto" => solver.method = Method::Auto,
            "adaptive" => solver.method = Method::Adaptive,
            "exact" => solver.method = Method::Exact,
            other => ctx.push(
                &sp.k("method"),
                "one of auto, adaptive, exact",
                format!("'{other}'"),
            ),
        }
    }
    if let Some(v) = ctx.quantity(
        &sp.k("detuning_cutoff"),
        &s.detuning_cutoff,
        Kind::Frequency,
        Sign::Positive,
    ) {
        solver.detuning_cutoff = v;
    }
    solver
}
