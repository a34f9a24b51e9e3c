//! The perturbative estimator: first-order (and, where first order cannot
//! reach a level, second-order) time-dependent perturbation theory from the
//! initial populations, per drive, so every estimate is a sum of named parts.
//!
//! Owns: [`Estimate`], [`estimate`], [`remedy`] and the envelope spectra
//! ([`envelope_spectrum`], [`envelope_spectrum_quadrature`]). Must not: call
//! the propagators (the two meet only in the report), print, or know about
//! output formats.
//!
//! INTERFACE FROZEN: fields may be added, none renamed or removed.
//!
//! # What is computed
//!
//! Bare Hamiltonian plus, for each drive (field L on coupling a -> b, a the
//! lower level), `(hbar Omega / 2) f(t) e^{-i phi(t)} |b><a| + h.c.` with
//! `phi(t) = omega_L t + (chirp/2)(t - t_c)^2 + phase` (absolute time); a
//! field with `rwa == false` adds the counter-rotating term, i.e. the full
//! `hbar Omega f cos(phi)` coupling. In the interaction picture of the bare
//! energies, from initial amplitudes `c_n(t0) = sqrt(p_n)` at the window
//! start t0 (interaction picture: `c^I_n = sqrt(p_n) e^{i omega_n t0}`), the
//! same initial state the propagators start from:
//!
//! * first order, level k not initially populated:
//!   `c_k = -i sum_n c^I_n sum_drives (Omega/2) integral_window f(t) e^{i theta(t)} dt`
//!   with `theta = omega_kn t -/+ phi(t)`: absorption (n lower) gives
//!   `e^{-i (Delta t + chirp term + phase)}`, emission (n upper) the
//!   conjugate phase, `Delta = omega_L - omega_ab`. Contributions add
//!   coherently (absolute-time phases included) for the level total; each
//!   [`Source`] reports its own `|.|^2`.
//! * second order, for levels no drive reaches from an initial level at first
//!   order: `c_k = (-i)^2 sum_m integral dt V_km(t) integral^t dt' V_mn(t') c_n(0)`,
//!   marched in one pass (see `nested`).
//!
//! * decay-fed: population pumped by spontaneous emission out of a level a
//!   drive excites, from the weak-drive scattering rate (see `rates`),
//!   added incoherently to the level's estimate and listed as
//!   [`DecaySource`]s.
//!
//! No decay weights are applied to the amplitudes (the contract's
//! `first_order_population`).
//! Every drive counts, including those the detuning cutoff leaves out of the
//! dynamics; those are also listed in [`Estimate::excluded`].
//!
//! # How the integrals are done
//!
//! Unchirped rectangular, Gaussian, sech, sin2 and Blackman envelopes whose
//! support lies inside the window use closed forms ([`envelope_spectrum`]).
//! Sampled envelopes, chirped fields and envelopes cut by the window use a
//! Filon-type quadrature (f and phase piecewise linear, integrated exactly per
//! panel, refined with Richardson extrapolation until it agrees to 1e-10
//! relative, or to an amplitude of 1e-13 (population 1e-26), whichever is
//! larger). Second order uses the same panels (see `nested`).
//!
//! Cost (measured on the development machine, optimised build): closed forms
//! well under a microsecond per level; a chirped Gaussian or Blackman pulse
//! 0.1-0.4 ms; 2000 samples about 2 ms; a second-order Lambda with
//! rectangles a few microseconds, with Gaussians 0.2-0.8 ms.

mod nested;
mod rate_remedy;
mod rates;
mod remedy;
mod spectrum;
mod view;

use num_complex::Complex64 as C;

use crate::model::{Model, Window};
pub use rate_remedy::{scatter_remedy, ScatterRemedy};
pub use rates::{
    scattering_rate, DecaySource, DEPLETION_LIMIT, MIN_WIDTH_TIMES_LENGTH, SATURATION_LIMIT,
};
pub use remedy::{intensity_fwhm, remedy, LengthRule};
pub use spectrum::{envelope_spectrum, envelope_spectrum_bound, envelope_spectrum_quadrature};
use view::FieldView;

/// Order of perturbation theory an estimate comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Order {
    /// The level is initially populated: no estimate.
    Initial,
    /// No drive reaches it at first or second order: estimate 0.
    Unreached,
    First,
    Second,
}

/// One drive's contribution to a level's estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct Source {
    /// Index into `Model::drives`.
    pub drive: usize,
    /// Level the amplitude comes from (an initial level at first order, the
    /// intermediate level at second order).
    pub from: usize,
    /// Detuning of the drive, `Delta = omega_L - omega_ab` (rad/s) at the
    /// envelope centre ([`Model::detuning`]), whatever the direction of the
    /// transfer (absorption or emission).
    pub detuning: f64,
    /// Peak Rabi frequency (rad/s).
    pub rabi: f64,
    /// This contribution alone, |c^(n)|^2. At second order: the part of
    /// `c_k^(2)` whose last step is this drive from `from`, summed over every
    /// first step into `from`.
    pub population: f64,
}

/// The estimate of one level.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelEstimate {
    pub order: Order,
    /// |c_k^(1)(T)|^2 (all first-order parts summed coherently); None for
    /// initial levels, `Some(0.0)` where no drive reaches the level at first
    /// order.
    pub first_order: Option<f64>,
    /// |c_k^(2)(T)|^2 where first order is 0 and second order is not
    /// (`Some` exactly when `order == Order::Second`).
    pub second_order: Option<f64>,
    /// Contributions, largest first.
    pub sources: Vec<Source>,
    /// Population arriving by spontaneous emission from a level a drive
    /// excites (the rate estimate of `rates`), largest first. Their sum is
    /// included in the estimate at the level's order (see [`estimate`]).
    pub decay_sources: Vec<DecaySource>,
}

impl LevelEstimate {
    /// Whether every decay-fed part is within the rate estimate's limits.
    pub fn decay_reliable(&self) -> bool {
        self.decay_sources.iter().all(|d| d.reliable)
    }
}

impl LevelEstimate {
    /// The estimate at its own order: first-order population, or the
    /// second-order one for [`Order::Second`]; None for initial levels.
    pub fn population(&self) -> Option<f64> {
        match self.order {
            Order::Initial => None,
            Order::Second => self.second_order,
            Order::First | Order::Unreached => self.first_order,
        }
    }
}

/// A drive left out of the dynamics by the detuning cutoff.
#[derive(Debug, Clone, PartialEq)]
pub struct ExcludedDrive {
    /// Index into `Model::drives`.
    pub drive: usize,
    /// First-order population it would transfer (from the initial levels):
    /// for each end of the coupling that is initially populated, `|c^(1)|^2`
    /// of the other end from this drive alone, summed. 0 when neither end is
    /// initially populated.
    pub population: f64,
    /// Light (AC Stark) shift it causes on the lower level, rad/s, at the
    /// envelope peak: `Omega^2 / (4 Delta)` with `Delta = omega_L - omega_ab`
    /// (rotating term only); for a field with `rwa == false` the
    /// counter-rotating term `-Omega^2 / (4 (omega_L + omega_ab))` is added.
    /// Sign: the shift of the lower level's energy (over hbar); red detuning
    /// (Delta < 0) lowers it. The upper level shifts by the opposite amount.
    pub light_shift: f64,
    /// The same with the counter-rotating term always included:
    /// `(Omega^2 / 4) (1/Delta - 1/(omega_L + omega_ab))`, the full
    /// far-detuned two-level shift.
    pub light_shift_with_counter_rotating: f64,
}

/// A computed remedy for one leaking level. See [`remedy`] for the exact
/// definitions of every number.
#[derive(Debug, Clone, PartialEq)]
pub struct Remedy {
    /// Drive that dominates the leak (index into `Model::drives`).
    pub drive: usize,
    /// Estimate of the level with the dominant drive's field reshaped to a
    /// Gaussian of the same intensity FWHM and the same pulse area.
    pub gaussian_same_area: f64,
    /// Same with a Blackman envelope of the same intensity FWHM.
    pub blackman_same_area: f64,
    /// Pulse length (s) at the same area and shape at which the estimate falls
    /// below the tolerance, if one exists within a factor 1e4 of the present one.
    /// The length is the shape's own length parameter: duration (rectangular,
    /// sin2, Blackman), intensity FWHM (Gaussian), tau (sech), span of the
    /// sample times (samples).
    pub length_for_tolerance: Option<f64>,
    /// The intensity FWHM (s) of the present pulse, matched by the Gaussian and
    /// Blackman replacements.
    pub fwhm: f64,
    /// Estimate with a Blackman envelope of the same total duration and area,
    /// for envelopes of finite duration (rectangular, sin2, Blackman, samples).
    pub blackman_same_span: Option<f64>,
    /// Stretch factor of the pulse (`length_for_tolerance / present length`).
    pub stretch: Option<f64>,
    /// The present length (s), [`Envelope::length`](crate::model::Envelope::length), same definition as
    /// `length_for_tolerance`.
    pub present_length: f64,
    /// How the length search judged "below tolerance".
    pub length_rule: LengthRule,
}

// Same shape as FrameHamiltonian and its error: each stage's plain data, other fields.
/// The estimate of every level.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// One entry per level, model order.
    pub levels: Vec<LevelEstimate>,
    /// Drives beyond the detuning cutoff.
    pub excluded: Vec<ExcludedDrive>,
}

/// Why an estimate failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EstimateError {
    #[error("non-finite value in the perturbative estimate ({0})")]
    NonFinite(String),
    #[error("invalid argument to the estimator: {0}")]
    InvalidArgument(String),
}

/// Amplitude below which the estimator does not refine quadratures further
/// (population ~1e-26): far below any leakage tolerance, and near the
/// rounding floor of the phase sums anyway.
pub(crate) const AMPLITUDE_FLOOR: f64 = 1e-13;

/// What the estimator works from: the model, a view of every field, the
/// integration window (None = all time, used by the remedy search), and the
/// absolute amplitude accuracy asked of the quadratures.
pub(crate) struct Ctx<'a> {
    pub model: &'a Model,
    pub views: Vec<FieldView<'a>>,
    pub window: Option<Window>,
    pub amp_floor: f64,
}

impl<'a> Ctx<'a> {
    pub(crate) fn new(model: &'a Model, window: Option<Window>) -> Self {
        Ctx {
            model,
            views: model.fields.iter().map(FieldView::of).collect(),
            window,
            amp_floor: AMPLITUDE_FLOOR,
        }
    }

    /// Initial population of a level.
    #[inline]
    pub(crate) fn p(&self, level: usize) -> f64 {
        self.model.initial[level]
    }

    /// Initial interaction-picture amplitude of a level. The scheme's
    /// amplitudes sqrt(p) are real at the window start t0 (as the propagators
    /// take them), so c^I_n = sqrt(p_n) e^{i omega_n t0}; written relative to
    /// the first initial level, since a common phase changes no population.
    pub(crate) fn amp0(&self, level: usize) -> C {
        let m = self.model;
        let reference = m
            .initial
            .iter()
            .position(|&p| p > 0.0)
            .map_or(0.0, |r| m.levels[r].omega);
        let phase = (m.levels[level].omega - reference) * m.window.start;
        C::from_polar(self.p(level).sqrt(), phase)
    }

    /// The drive's Rabi frequency as seen through its field view.
    #[inline]
    pub(crate) fn rabi(&self, drive: usize) -> f64 {
        let d = &self.model.drives[drive];
        d.rabi * self.views[d.field].rabi_factor
    }

    /// Add the amplitude `amp` that drive `drive` brings from level `from`
    /// to the `total` and its population to the `sources`; a non-finite
    /// population is refused, `what` naming it.
    pub(crate) fn add_source(
        &self,
        sources: &mut Vec<Source>,
        total: &mut C,
        drive: usize,
        from: usize,
        amp: C,
        what: impl FnOnce() -> String,
    ) -> Result<(), EstimateError> {
        let population = finite(amp.norm_sqr(), what)?;
        *total += amp;
        sources.push(Source {
            drive,
            from,
            detuning: self.model.detuning(&self.model.drives[drive]),
            rabi: self.rabi(drive),
            population,
        });
        Ok(())
    }

    /// Drives with a non-zero Rabi frequency between `level` and an initially
    /// populated level: `(drive, initial level)`.
    pub(crate) fn first_order_drives(
        &self,
        level: usize,
    ) -> impl Iterator<Item = (usize, usize)> + '_ {
        self.model
            .drives
            .iter()
            .enumerate()
            .filter_map(move |(i, d)| {
                if d.rabi == 0.0 {
                    return None;
                }
                let c = &self.model.couplings[d.coupling];
                let other = if c.lower == level {
                    c.upper
                } else if c.upper == level {
                    c.lower
                } else {
                    return None;
                };
                (self.p(other) > 0.0).then_some((i, other))
            })
    }
}

/// One exponential term of a drive's interaction-picture matrix element,
/// `f(t) exp(i [theta_c + nu u + kappa u^2])`, `u = t - t_c`.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Term {
    /// Linear coefficient (rad/s).
    pub nu: f64,
    /// Quadratic coefficient (rad/s^2): +/- chirp/2.
    pub kappa: f64,
    /// Constant phase `nu t_c +/- phase`.
    pub theta_c: f64,
}

/// The terms of drive `drive` for a transfer `from -> to`: the rotating term,
/// and the counter-rotating one when the field has `rwa == false`.
pub(crate) fn terms(ctx: &Ctx<'_>, drive: usize, to: usize) -> ([Term; 2], usize) {
    let m = ctx.model;
    let d = &m.drives[drive];
    let c = &m.couplings[d.coupling];
    let v = &ctx.views[d.field];
    let omega_ab = m.transition_omega(d.coupling);
    let delta = v.omega - omega_ab;
    // s_k = +1 when the amplitude goes up (absorption).
    let s_k = if to == c.upper { 1.0 } else { -1.0 };
    // theta(t) = s_phi phi(t) + s_k omega_ab t; rotating term s_phi = -s_k.
    let rot = {
        let nu = -s_k * delta;
        let s_phi = -s_k;
        Term {
            nu,
            kappa: s_phi * v.chirp / 2.0,
            theta_c: nu * v.tc + s_phi * v.phase,
        }
    };
    let counter = {
        let nu = s_k * (v.omega + omega_ab);
        let s_phi = s_k;
        Term {
            nu,
            kappa: s_phi * v.chirp / 2.0,
            theta_c: nu * v.tc + s_phi * v.phase,
        }
    };
    ([rot, counter], if v.rwa { 1 } else { 2 })
}

/// `integral f(t) exp(i [nu u + kappa u^2]) dt` over the window (or all time);
/// `scale` is the size of the coefficient the integral will be multiplied by,
/// so that the quadrature stops at the context's amplitude floor.
pub(crate) fn term_integral(
    ctx: &Ctx<'_>,
    view: &FieldView<'_>,
    t: &Term,
    scale: f64,
) -> Result<C, EstimateError> {
    let (sa, sb) = view.support();
    let (lo, hi, inside) = match ctx.window {
        None => (sa, sb, true),
        Some(w) => {
            let slack = 1e-9 * (sb - sa).abs();
            (
                sa.max(w.start),
                sb.min(w.end),
                sa >= w.start - slack && sb <= w.end + slack,
            )
        }
    };
    if inside {
        if let Some(f) = view.spectrum(t.nu) {
            return Ok(C::new(f, 0.0));
        }
    }
    let floor = if scale > 0.0 {
        ctx.amp_floor / scale
    } else {
        0.0
    };
    spectrum::filon(view, lo, hi, t.nu, t.kappa, floor)
}

/// First-order amplitude `c_to^(1)(T)` from `from` through one drive.
pub(crate) fn contribution(
    ctx: &Ctx<'_>,
    drive: usize,
    from: usize,
    to: usize,
) -> Result<C, EstimateError> {
    let view = &ctx.views[ctx.model.drives[drive].field];
    let coeff = C::new(0.0, -0.5 * ctx.rabi(drive)) * ctx.amp0(from);
    let (ts, n) = terms(ctx, drive, to);
    let mut amp = C::new(0.0, 0.0);
    for t in &ts[..n] {
        amp += coeff * C::from_polar(1.0, t.theta_c) * term_integral(ctx, view, t, coeff.norm())?;
    }
    Ok(amp)
}

fn finite(x: f64, what: impl FnOnce() -> String) -> Result<f64, EstimateError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(EstimateError::NonFinite(what()))
    }
}

fn sort_sources(sources: &mut [Source]) {
    sources.sort_by(|a, b| b.population.total_cmp(&a.population));
}

/// The estimate of one level from its drives (the decay sources are added
/// afterwards).
fn driven(
    order: Order,
    first_order: Option<f64>,
    second_order: Option<f64>,
    sources: Vec<Source>,
) -> LevelEstimate {
    LevelEstimate {
        order,
        first_order,
        second_order,
        sources,
        decay_sources: vec![],
    }
}

/// The estimate of one level and its total amplitude at its order.
pub(crate) fn level_estimate(ctx: &Ctx<'_>, k: usize) -> Result<(LevelEstimate, C), EstimateError> {
    let m = ctx.model;
    let zero = C::new(0.0, 0.0);
    if ctx.p(k) > 0.0 {
        return Ok((driven(Order::Initial, None, None, vec![]), zero));
    }
    let mut sources = Vec::new();
    let mut total = zero;
    for (i, n) in ctx.first_order_drives(k) {
        let amp = contribution(ctx, i, n, k)?;
        ctx.add_source(&mut sources, &mut total, i, n, amp, || {
            format!(
                "first order of level '{}' from '{}'",
                m.levels[k].id, m.levels[n].id
            )
        })?;
    }
    if !sources.is_empty() {
        sort_sources(&mut sources);
        let p = finite(total.norm_sqr(), || {
            format!("first order of level '{}'", m.levels[k].id)
        })?;
        return Ok((driven(Order::First, Some(p), None, sources), total));
    }
    match nested::second_order(ctx, k)? {
        Some((mut sources, total)) => {
            sort_sources(&mut sources);
            let p = finite(total.norm_sqr(), || {
                format!("second order of level '{}'", m.levels[k].id)
            })?;
            let le = driven(Order::Second, Some(0.0), Some(p), sources);
            Ok((le, total))
        }
        None => Ok((driven(Order::Unreached, Some(0.0), None, vec![]), zero)),
    }
}

/// First- and second-order estimate of every level, the decay-fed
/// populations (the rate estimate of `rates`), and the drives the detuning
/// cutoff leaves out with their first-order population and light shift.
/// Fails (never returns NaN) when a number is not finite.
///
/// A level fed by decay gets the sum of its decay sources added to its
/// estimate at its own order, incoherently: to `first_order` (a level no
/// drive reaches becomes [`Order::First`]), or to `second_order` for a
/// level reached by drives only at second order. Remedies
/// ([`remedy`]) reshape the drives' coherent part only.
pub fn estimate(model: &Model) -> Result<Estimate, EstimateError> {
    let ctx = Ctx::new(model, Some(model.window));
    let mut levels = (0..model.levels.len())
        .map(|k| level_estimate(&ctx, k).map(|(le, _)| le))
        .collect::<Result<Vec<_>, _>>()?;
    for (k, source) in rates::decay_sources(&ctx)? {
        add_decay_source(&mut levels[k], source);
    }
    for le in &mut levels {
        le.decay_sources
            .sort_by(|a, b| b.population.total_cmp(&a.population));
    }
    let mut excluded = Vec::new();
    for (i, d) in model.drives.iter().enumerate() {
        if model.drive_included(d) {
            continue;
        }
        excluded.push(excluded_drive(&ctx, i)?);
    }
    Ok(Estimate { levels, excluded })
}

/// Adds a decay-fed part to a level's estimate at its order.
fn add_decay_source(le: &mut LevelEstimate, source: DecaySource) {
    let p = source.population;
    match le.order {
        Order::Initial => return,
        Order::Unreached => {
            le.order = Order::First;
            le.first_order = Some(p);
        }
        Order::First => le.first_order = Some(le.first_order.unwrap_or(0.0) + p),
        Order::Second => le.second_order = Some(le.second_order.unwrap_or(0.0) + p),
    }
    le.decay_sources.push(source);
}

fn excluded_drive(ctx: &Ctx<'_>, i: usize) -> Result<ExcludedDrive, EstimateError> {
    let m = ctx.model;
    let d = &m.drives[i];
    let c = &m.couplings[d.coupling];
    let mut population = 0.0;
    if d.rabi != 0.0 {
        for (from, to) in [(c.lower, c.upper), (c.upper, c.lower)] {
            if ctx.p(from) > 0.0 {
                population += contribution(ctx, i, from, to)?.norm_sqr();
            }
        }
    }
    let field = &m.fields[d.field];
    let delta = m.detuning(d);
    let sum = field.omega + m.transition_omega(d.coupling);
    let w2 = d.rabi * d.rabi / 4.0;
    let rotating = w2 / delta;
    // omega_L + omega_ab vanishes only for a static field on a degenerate pair.
    let counter = if sum != 0.0 { -w2 / sum } else { 0.0 };
    let light_shift = if field.rwa {
        rotating
    } else {
        rotating + counter
    };
    let what = || format!("excluded drive of field '{}'", field.id);
    Ok(ExcludedDrive {
        drive: i,
        population: finite(population, what)?,
        light_shift: finite(light_shift, what)?,
        light_shift_with_counter_rotating: finite(rotating + counter, what)?,
    })
}
