//! The format's limits and the last line of defence against overflow.
//!
//! Owns: the time-axis limit ([`MAX_TIME_S`]), the count limits (levels,
//! fields, couplings, drives, sample points) as one check, and turning the
//! model builder's refusals (numbers that are not finite, given or derived)
//! into diagnostics at the keys they arose from. Must not: compute physics
//! or re-check what the model builder checks.

use super::super::locate::KeyPath;
use super::super::raw::Scalar;
use super::super::MAX_TIME_S;
use super::ctx::{Ctx, Sign};
use crate::model::{ModelError, Part};
use crate::units::Kind;

impl Ctx<'_> {
    /// A required time on the pulse axis: at most [`MAX_TIME_S`] in
    /// magnitude.
    pub(super) fn axis_time(
        &mut self,
        path: &KeyPath,
        s: &Option<Scalar>,
        sign: Sign,
    ) -> Option<f64> {
        let v = self.req_quantity(path, s, Kind::Time, sign)?;
        if v.abs() > MAX_TIME_S {
            let text = s.as_ref().map(|x| x.text()).unwrap_or_default();
            self.push(
                path,
                format!(
                    "a time of at most {MAX_TIME_S:.0e} s in magnitude ({:.1} hours)",
                    MAX_TIME_S / 3600.0
                ),
                format!("'{}'", text.trim()),
            );
            return None;
        }
        Some(v)
    }

    /// At most `max` items of a list: false (and a diagnostic "at most
    /// {max} {expected}" / "{n} {found}") beyond it.
    pub(super) fn within(
        &mut self,
        path: &KeyPath,
        n: usize,
        max: usize,
        expected: &str,
        found: &str,
    ) -> bool {
        if n > max {
            self.push(
                path,
                format!("at most {max} {expected}"),
                format!("{n} {found}"),
            );
            return false;
        }
        true
    }
}

/// Names of a model's parts, kept to place the builder's refusals.
pub(super) struct Names {
    pub levels: Vec<String>,
    pub fields: Vec<String>,
    /// Field index of every drive.
    pub drive_fields: Vec<usize>,
}

/// Extreme but finite inputs (a wavelength of 1e-300 m, a lifetime of
/// 1e-320 s) can overflow in derived numbers. No later stage may see a
/// non-finite number: the model builder refuses them, and here each refusal
/// becomes a diagnostic naming where it arose. A broken invariant the
/// validation above did not catch would be a defect; it is still reported,
/// never passed on.
pub(super) fn report_refusals(ctx: &mut Ctx, names: &Names, problems: &[ModelError]) {
    let root = KeyPath::root();
    let bad = "an out-of-range value (a derived number overflows)";
    let want = "values whose derived numbers stay finite";
    let field = |i: usize| root.k("fields").k(names.fields.get(i).map_or("", |s| s));
    let path_of = |at: Part| match at {
        Part::Level(i) => root.k("levels").k(names.levels.get(i).map_or("", |s| s)),
        Part::Coupling(i) => root.k("couplings").i(i),
        Part::Envelope(i) => field(i).k("envelope"),
        Part::Field(i) => field(i),
        Part::Drive(k) => field(names.drive_fields.get(k).copied().unwrap_or(usize::MAX)),
        Part::Initial | Part::Target(_) => root.k("initial"),
        Part::Tolerance => root.k("tolerance"),
        Part::Window => root.k("window"),
        Part::Solver => root.k("solver"),
        Part::Readout => root.k("readout"),
        Part::Linewidth(i) => field(i).k("linewidth"),
        Part::Jump(_) => root.k("couplings"),
    };
    for p in problems {
        match p {
            ModelError::NonFinite { at } => ctx.push(&path_of(*at), want, bad),
            ModelError::Invalid { at, reason } => ctx.push(
                &path_of(*at),
                "a model that keeps its invariants",
                reason.clone(),
            ),
        }
    }
}
