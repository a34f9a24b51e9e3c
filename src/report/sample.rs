//! Small fixed reports for the renderers' unit tests (test builds only).
//!
//! Owns: [`vet_report`] and [`inspect_report`], hand-made reports with one of
//! everything a renderer spells: a title with LaTeX specials, an initial
//! level, a target, a flagged second-order spectator with its source and a
//! remedy, a left-out drive, a known and an unknown field intensity, a field
//! id with a comma and a quote (an id the scheme would refuse, to test CSV
//! quoting). Must not: claim physics; the
//! numbers are invented and only need to be distinct and finite.

use super::*;
use crate::estimate::Order;
use crate::solve::MethodUsed;

const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

fn source(field: &str, from: &str, detuning_mhz: f64, order: Order, population: f64) -> SourceRow {
    SourceRow {
        field: field.into(),
        from: from.into(),
        detuning: TWO_PI * detuning_mhz * 1e6,
        rabi: TWO_PI * 5e6,
        population,
        order,
        included: true,
        channel: Channel::Drive,
        via: None,
        saturation: None,
    }
}

/// A vet report with three levels (g initial, e target, s a leaking
/// spectator reached at second order).
pub(crate) fn vet_report() -> VetReport {
    let g = LevelRow {
        id: "g".into(),
        quantum: None,
        role: Role::Initial,
        final_population: 0.5,
        peak_population: 1.0,
        first_order: None,
        second_order: None,
        flagged: false,
        below_goal: false,
        sources: vec![],
        label: Some("ground".into()),
        order: Order::Initial,
        ratio: None,
        tolerance: 1e-3,
        unreliable: false,
        remedy: None,
        settled_population: None,
        window_end_population: None,
        scattered_photons: None,
        readout_sensitive: false,
    };
    let e = LevelRow {
        id: "e".into(),
        role: Role::Target,
        final_population: 0.45,
        peak_population: 0.6,
        first_order: Some(0.5),
        second_order: None,
        sources: vec![source("probe, \"A\"", "g", -20.0, Order::First, 0.5)],
        label: None,
        order: Order::First,
        ratio: Some(0.9),
        ..g.clone()
    };
    let s = LevelRow {
        id: "s".into(),
        role: Role::Spectator,
        final_population: 2e-3,
        peak_population: 3e-3,
        first_order: Some(0.0),
        second_order: Some(1.5e-3),
        flagged: true,
        sources: vec![source("probe, \"A\"", "e", 150.0, Order::Second, 1.5e-3)],
        label: None,
        order: Order::Second,
        ratio: Some(2e-3 / 1.5e-3),
        remedy: Some(RemedyRow {
            field: "probe, \"A\"".into(),
            present_shape: "rectangular".into(),
            present_length: 1e-7,
            gaussian_same_area: 1e-9,
            blackman_same_area: 2e-10,
            length_for_tolerance: Some(2.5e-7),
            fwhm: 1e-7,
            exact_gaussian: Some(1.1e-9),
            exact_blackman: None,
            exact_at_length: Some(4e-4),
            not_checked: Vec::new(),
        }),
        ..g.clone()
    };
    VetReport {
        tolerance: 1e-3,
        norm_error: 1e-15,
        lost_population: 0.05,
        levels: vec![g, e, s],
        flagged: 1,
        goal: None,
        targets_short: 0,
        max_spectator: 2e-3,
        excluded: vec![ExcludedRow {
            field: "kick".into(),
            lower: "g".into(),
            upper: "s".into(),
            detuning: TWO_PI * 2e12,
            rabi: TWO_PI * 1e6,
            population: 1e-14,
            light_shift: TWO_PI * 0.125,
        }],
        window: (0.0, 2e-7),
        solver: SolverFacts {
            method: MethodUsed::Exact,
            rtol: 1e-10,
            atol: 1e-12,
            detuning_cutoff: TWO_PI * 1e12,
            steps: 40,
            evaluations: 0,
        },
        provenance: Provenance::new("demo.yaml", "ab12cd34ef56ab12cd34ef56"),
        title: Some("Test & scheme_1 at 50% #2".into()),
        safety: vec![
            SafetyNote {
                field: "probe, \"A\"".into(),
                peak_intensity: Some(1e4),
            },
            SafetyNote {
                field: "kick".into(),
                peak_intensity: None,
            },
        ],
        readout: crate::model::Readout::WindowEnd,
        dynamics: crate::model::Dynamics::Amplitudes,
        initial_kind: crate::model::InitialKind::Coherent,
        initial_levels: 1,
        scattered_photons: None,
        open_system: false,
        emitted: Some(0.0),
    }
}

/// [`vet_report`] with the Blackman check of the leak's remedy not run,
/// and why (a reason with LaTeX specials).
pub(crate) fn vet_report_with_unchecked_remedy() -> VetReport {
    let mut r = vet_report();
    let remedy = r.levels[2].remedy.as_mut().expect("s has a remedy");
    remedy.not_checked.push(UncheckedRemedy::new(
        RemedyCheck::Blackman,
        "the run needs more than 10 steps; raise SolveOptions::step_budget",
    ));
    r
}

/// An inspect report with two levels, one drive and one field.
pub(crate) fn inspect_report() -> InspectReport {
    InspectReport {
        levels: vec![
            InspectLevel {
                id: "g".into(),
                quantum: None,
                centre_offset_hz: None,
                energy_hz: 0.0,
                energy_cm: 0.0,
                label: Some("ground".into()),
                lifetime: None,
                role: Role::Initial,
                initial_population: 1.0,
                tolerance: 1e-3,
            },
            InspectLevel {
                id: "e".into(),
                quantum: None,
                centre_offset_hz: None,
                energy_hz: 384e12,
                energy_cm: 12808.8,
                label: None,
                lifetime: Some(26e-9),
                role: Role::Target,
                initial_population: 0.0,
                tolerance: 1e-3,
            },
        ],
        drives: vec![InspectDrive {
            field: "probe".into(),
            lower: "g".into(),
            upper: "e".into(),
            transition_hz: 384e12,
            detuning_hz: -20e6,
            rabi_hz: 5e6,
            included: true,
            wavelength: Some(780.7e-9),
            area: std::f64::consts::PI,
            relative_dipole: false,
        }],
        fields: vec![InspectField {
            id: "probe".into(),
            frequency_hz: 384e12 - 20e6,
            wavelength: 780.7e-9,
            shape: "gaussian".into(),
            length: 1e-7,
            peak_intensity: Some(1e4),
            chirp_hz_per_s: 0.0,
            rwa: true,
        }],
        window: (0.0, 2e-7),
        tolerance: 1e-3,
        detuning_cutoff: TWO_PI * 1e12,
        provenance: Provenance::new("demo.yaml", "ab12cd34ef56ab12cd34ef56"),
        title: None,
        safety: vec![SafetyNote {
            field: "probe".into(),
            peak_intensity: Some(1e4),
        }],
        initial_kind: crate::model::InitialKind::Coherent,
        initial_levels: 1,
        manifolds: Vec::new(),
    }
}

/// A generated level's row cloned from `like`: id, quantum numbers of
/// manifold P (J = 3/2), final population (peak twice it), flag.
fn sublevel_row(like: &LevelRow, id: &str, f: f64, m_f: f64, fin: f64, flagged: bool) -> LevelRow {
    LevelRow {
        id: id.into(),
        quantum: Some(QuantumNumbers::new("P", 1.5, f, Some(m_f))),
        final_population: fin,
        peak_population: 2.0 * fin,
        ratio: Some(fin / 1.5e-3),
        flagged,
        remedy: None,
        ..like.clone()
    }
}

/// A vet report with generated sublevels: the v1 initial level g, the
/// three sublevels of P F=1 (m_F = 0 leaks, 2.0e-3 of a total 2.6e-3) and
/// the lone sublevel P_F0_m0, each a second-order spectator like `s` of
/// [`vet_report`].
pub(crate) fn vet_report_with_sublevels() -> VetReport {
    let mut r = vet_report();
    let (g, s) = (r.levels[0].clone(), r.levels[2].clone());
    r.levels = vec![
        g,
        sublevel_row(&s, "P_F1_m-1", 1.0, -1.0, 1e-4, false),
        sublevel_row(&s, "P_F1_m0", 1.0, 0.0, 2e-3, true),
        sublevel_row(&s, "P_F1_m+1", 1.0, 1.0, 5e-4, false),
        sublevel_row(&s, "P_F0_m0", 0.0, 0.0, 3e-4, false),
    ];
    r.flagged = 1;
    r
}

/// An inspect report with generated sublevels: the v1 level aux, the
/// three sublevels of S F=1 (initial mixture 0.2, 0.5, 0.3) 1 MHz apart
/// around +2563.006 MHz from the centre of S (J = 1/2), and the lone
/// sublevel S_F0_m0 at -4271.677 MHz.
pub(crate) fn inspect_report_with_sublevels() -> InspectReport {
    let mut r = inspect_report();
    let aux = InspectLevel {
        id: "aux".into(),
        role: Role::Spectator,
        initial_population: 0.0,
        ..r.levels[1].clone()
    };
    let sub = |id: &str, f: f64, m_f: f64, offset_hz: f64, p: f64| InspectLevel {
        id: id.into(),
        quantum: Some(QuantumNumbers::new("S", 0.5, f, Some(m_f))),
        centre_offset_hz: Some(offset_hz),
        energy_hz: 1e9 + offset_hz,
        energy_cm: (1e9 + offset_hz) / crate::units::C / 100.0,
        label: Some("ground".into()),
        lifetime: None,
        role: if p > 0.0 {
            Role::Initial
        } else {
            Role::Spectator
        },
        initial_population: p,
        tolerance: 1e-3,
    };
    r.levels = vec![
        aux,
        sub("S_F1_m-1", 1.0, -1.0, 2562.006e6, 0.2),
        sub("S_F1_m0", 1.0, 0.0, 2563.006e6, 0.5),
        sub("S_F1_m+1", 1.0, 1.0, 2564.006e6, 0.3),
        sub("S_F0_m0", 0.0, 0.0, -4271.677e6, 0.0),
    ];
    r.manifolds = vec![ManifoldCentre {
        id: "S".into(),
        j: 0.5,
        energy_hz: 1e9,
        energy_cm: 1e9 / crate::units::C / 100.0,
        levels: 4,
    }];
    r.initial_kind = crate::model::InitialKind::Mixture;
    r.initial_levels = 3;
    r
}
