//! Dipole elements and decay channels of the 87Rb D2 line against published
//! values: D. A. Steck, "Rubidium 87 D Line Data" (revision 2.x): hyperfine
//! constants, relative strengths S_FF', the cycling transition, the
//! reduced dipole 4.227 e a0, the decay rate 2 pi x 6.0666 MHz and the
//! saturation intensity 1.669 mW/cm^2 of the cycling transition. The
//! numbers of Steck's tables are quoted here, not re-derived.

use super::*;
use crate::atom::rb87::{excited, ground};
use crate::atom::structure::{sublevels, Manifold, Sublevel};
use crate::model::rabi_from_intensity;
use crate::units::EA0;

/// 87Rb D2 transition frequency (Steck): 384.2304844685 THz.
const OMEGA_D2: f64 = 2.0 * PI * 384.230_484_468_5e12;

fn levels(m: &Manifold, tesla: f64) -> Vec<Sublevel> {
    sublevels(m, tesla).expect("sublevels")
}

fn d2(tesla: f64) -> (Vec<Sublevel>, Vec<Sublevel>, Vec<Transition>) {
    let (g, e) = (levels(&ground(), tesla), levels(&excited(), tesla));
    let t = transitions(1, &g, 3, &e);
    (g, e, t)
}

fn find(levels: &[Sublevel], two_f: i32, two_m: i32) -> usize {
    levels
        .iter()
        .position(|s| s.two_f == two_f && s.two_m_f == two_m)
        .expect("sublevel")
}

/// Steck: the sigma+ cycling transition |F=2, m=2> -> |F'=3, m'=3> has
/// |<F m|e r_q|F' m'>|^2 = (1/2) |<J||er||J'>|^2.
#[test]
fn cycling_transition_has_half_the_reduced_strength() {
    let (g, e, t) = d2(0.0);
    let (gi, ei) = (find(&g, 4, 4), find(&e, 6, 6));
    let c = t
        .iter()
        .find(|t| t.lower == gi && t.upper == ei)
        .expect("cycling");
    assert_eq!(c.q, 1, "sigma+ raises m in absorption");
    assert!((c.absorption * c.absorption - 0.5).abs() < 1e-12);
    assert!((c.absorption + c.emission).abs() < 1e-15, "(-1)^q sign");
}

/// Steck, Table of relative hyperfine transition strength factors: summed
/// over the upper sublevels and polarisations, every ground sublevel of F
/// has S_FF' = 7/10, 1/4, 1/20 (F = 2 -> F' = 3, 2, 1) and 5/12, 5/12, 1/6
/// (F = 1 -> F' = 2, 1, 0).
#[test]
fn sums_over_upper_sublevels_are_the_relative_strengths() {
    let (g, e, t) = d2(0.0);
    let table = [
        (4, [(6, 0.7), (4, 0.25), (2, 0.05)]),
        (2, [(4, 5.0 / 12.0), (2, 5.0 / 12.0), (0, 1.0 / 6.0)]),
    ];
    for (two_f, row) in table {
        for (gi, _) in g.iter().enumerate().filter(|(_, s)| s.two_f == two_f) {
            for (two_fp, want) in row {
                let sum: f64 = t
                    .iter()
                    .filter(|t| t.lower == gi && e[t.upper].two_f == two_fp)
                    .map(|t| t.absorption * t.absorption)
                    .sum();
                assert!(
                    (sum - want).abs() < 1e-12,
                    "F={} m={} -> F'={}: {sum} vs {want}",
                    two_f / 2,
                    g[gi].two_m_f,
                    two_fp / 2
                );
            }
        }
    }
}

/// Completeness holds in any field (the sublevels are rotations of the
/// |m_J m_I> basis): every ground sublevel's strengths sum to 1, every
/// upper sublevel's to (2J+1)/(2J'+1) = 1/2, at 0 G and 1000 G
/// (Paschen-Back onset). Common practice, no source (CG orthonormality).
#[test]
fn strengths_sum_to_one_in_any_field() {
    for tesla in [0.0, 0.1] {
        let (g, e, t) = d2(tesla);
        for gi in 0..g.len() {
            let s: f64 = t
                .iter()
                .filter(|t| t.lower == gi)
                .map(|t| t.emission.powi(2))
                .sum();
            assert!((s - 1.0).abs() < 1e-12, "{tesla} T ground {gi}: {s}");
        }
        for ei in 0..e.len() {
            let s: f64 = t
                .iter()
                .filter(|t| t.upper == ei)
                .map(|t| t.emission.powi(2))
                .sum();
            assert!((s - 0.5).abs() < 1e-12, "{tesla} T upper {ei}: {s}");
        }
    }
}

/// The decay-rate convention against Steck's numbers: 4.227 e a0 gives
/// Gamma = 2 pi x 6.0666 MHz (38.117e6 /s) within the 4 digits of the
/// dipole; `reduced_from_rate` inverts it.
#[test]
fn decay_rate_of_the_reduced_dipole_is_the_published_one() {
    let rate = decay_rate(OMEGA_D2, 1, 3, 4.227 * EA0);
    assert!((rate / 38.117e6 - 1.0).abs() < 1e-3, "{rate}");
    let back = reduced_from_rate(OMEGA_D2, 1, 3, rate);
    assert!((back / (4.227 * EA0) - 1.0).abs() < 1e-12);
}

/// Steck: on the cycling transition, I = I_sat = 1.669 mW/cm^2 gives
/// Omega = Gamma / sqrt 2 (Gamma = 2 pi x 6.0666 MHz).
#[test]
fn saturation_intensity_of_the_cycling_transition() {
    let (g, e, t) = d2(0.0);
    let (gi, ei) = (find(&g, 4, 4), find(&e, 6, 6));
    let c = t
        .iter()
        .find(|t| t.lower == gi && t.upper == ei)
        .expect("c");
    let d = c.absorption * 4.227 * EA0;
    let gamma = 2.0 * PI * 6.0666e6;
    let omega = rabi_from_intensity(d, 16.69);
    assert!(
        (omega.abs() / (gamma / 2f64.sqrt()) - 1.0).abs() < 1e-3,
        "{}",
        omega.abs() / gamma
    );
}

/// Steck, branching ratios: F' = 1 decays to F = 2 with 1/6 and to F = 1
/// with 5/6; every upper sublevel's channels carry the whole branch rate.
#[test]
fn channels_carry_the_rate_with_the_published_branching() {
    let (g, e, t) = d2(0.0);
    let rate = 38.117e6;
    let ch = channels(1, 3, &t, rate);
    for (ei, s) in e.iter().enumerate() {
        let to = |two_f: i32| -> f64 {
            ch.iter()
                .flatten()
                .filter(|c| c.upper == ei && g[c.lower].two_f == two_f)
                .map(|c| c.amplitude * c.amplitude)
                .sum::<f64>()
                / rate
        };
        assert!((to(4) + to(2) - 1.0).abs() < 1e-12, "upper {ei}");
        if s.two_f == 2 {
            assert!((to(4) - 1.0 / 6.0).abs() < 1e-12);
            assert!((to(2) - 5.0 / 6.0).abs() < 1e-12);
        }
    }
    // Each channel has one photon polarisation: m_e - m_g is the same
    // for all of its terms.
    for (slot, terms) in ch.iter().enumerate() {
        for c in terms {
            assert_eq!(
                e[c.upper].two_m_f - g[c.lower].two_m_f,
                2 * (1 - slot as i32)
            );
        }
    }
}
