//! Checks of the hyperfine-Zeeman sublevels against closed forms and
//! published numbers; each check names its source.

use super::*;
use crate::units::H;

/// 1 G in tesla.
const GAUSS: f64 = 1e-4;

use crate::atom::rb87::{excited as rb87_p32, ground as rb87_s12, MHZ};

fn find(levels: &[Sublevel], two_f: i32, two_m_f: i32) -> &Sublevel {
    levels
        .iter()
        .find(|s| s.two_f == two_f && s.two_m_f == two_m_f)
        .expect("label present")
}

/// <a|b> over the uncoupled basis.
fn overlap(a: &Sublevel, b: &Sublevel) -> f64 {
    a.components
        .iter()
        .flat_map(|p| {
            b.components
                .iter()
                .filter(move |q| q.two_m_j == p.two_m_j && q.two_m_i == p.two_m_i)
                .map(move |q| p.amplitude * q.amplitude)
        })
        .sum()
}

#[test]
fn bohr_magneton_over_h_is_steck_value() {
    // Steck: mu_B / h = 1.39962449361 MHz/G (CODATA 2018; from memory).
    let per_gauss = MU_B / H * GAUSS / 1e6;
    assert!((per_gauss - 1.399_624_493_61).abs() < 1e-11, "{per_gauss}");
}

#[test]
fn clebsch_gordan_follows_condon_shortley() {
    // The phase convention the sublevel vectors rely on: j1 = 1, j2 = 1/2
    // (Condon-Shortley table, e.g. the PDG review's table; from memory).
    let third = (1.0_f64 / 3.0).sqrt();
    let two_thirds = (2.0_f64 / 3.0).sqrt();
    let cases = [
        ((2, 2, 1, -1, 3, 1), third),
        ((2, 0, 1, 1, 3, 1), two_thirds),
        ((2, 2, 1, -1, 1, 1), two_thirds),
        ((2, 0, 1, 1, 1, 1), -third),
        ((2, 2, 1, 1, 3, 3), 1.0),
        ((2, 2, 1, 1, 1, 1), 0.0),
    ];
    for ((a, b, c, d, e, f), want) in cases {
        let got = clebsch_gordan(a, b, c, d, e, f);
        assert!((got - want).abs() < 1e-14, "{a} {b} {c} {d} {e} {f}: {got}");
    }
}

#[test]
fn rb87_ground_state_at_zero_and_1000_gauss() {
    // Zero field: Steck, F = 2 at +2563.006 MHz, F = 1 at -4271.677 MHz
    // (from memory).
    let m = rb87_s12();
    let hf = hyperfine_levels(&m).unwrap();
    assert_eq!(hf.iter().map(|l| l.two_f).collect::<Vec<_>>(), [2, 4]);
    assert!((hf[0].energy / MHZ + 4271.677).abs() < 1e-3);
    assert!((hf[1].energy / MHZ - 2563.006).abs() < 1e-3);
    // 1000 G: the Breit-Rabi energies (G. Breit and I. I. Rabi, Phys. Rev. 38,
    // 2082 (1931)) with Steck's constants, to 1 kHz (values from memory). Labels: F = 1 inverts
    // (g_F = -1/2), m_F = +1 lowest; F = 2 rises with m_F.
    let levels = sublevels(&m, 1000.0 * GAUSS).unwrap();
    let expected = [
        (2, -2, -3828.2983),
        (2, 0, -4548.0722),
        (2, 2, -5149.2862),
        (4, -4, 1163.8394),
        (4, -2, 2122.4133),
        (4, 0, 2839.4015),
        (4, 2, 3437.8299),
        (4, 4, 3962.1726),
    ];
    assert_eq!(levels.len(), expected.len());
    for (s, &(two_f, two_m_f, mhz)) in levels.iter().zip(&expected) {
        assert_eq!((s.two_f, s.two_m_f), (two_f, two_m_f));
        assert!(
            (s.energy / MHZ - mhz).abs() < 1e-3,
            "F={two_f}/2 mF={two_m_f}/2: {} vs {mhz}",
            s.energy / MHZ
        );
    }
}

/// Breit-Rabi formula for J = 1/2 (G. Breit and I. I. Rabi 1931, in
/// Steck's form), energies in rad/s. For m = -(I + 1/2) the square root
/// sqrt(1 - 2x + x^2) must be read as (1 - x), not |1 - x|: the stretched
/// state's energy is linear in B and passes through x = 1 without a kink.
fn breit_rabi(m: &Manifold, upper: bool, two_m: i32, field: f64) -> f64 {
    let i = f64::from(m.two_i) / 2.0;
    let mf = f64::from(two_m) / 2.0;
    let de = m.a * (i + 0.5);
    let larmor = MU_B * field / HBAR;
    let x = (m.g_j - m.g_i) * larmor / de;
    let base = -de / (2.0 * (2.0 * i + 1.0)) + m.g_i * larmor * mf;
    let root = if two_m == -m.two_i - 1 {
        1.0 - x
    } else {
        (1.0 + 4.0 * mf * x / (2.0 * i + 1.0) + x * x).sqrt()
    };
    base + if upper {
        de / 2.0 * root
    } else {
        -de / 2.0 * root
    }
}

#[test]
fn breit_rabi_at_every_field() {
    // x = 1 at about 2438 G for 87Rb; fields on both sides of it.
    let m = rb87_s12();
    let gauss = [
        0.0, 1.0, 100.0, 1000.0, 2000.0, 2437.0, 2440.0, 3000.0, 1e4, 1e5,
    ];
    for g in gauss {
        let field = g * GAUSS;
        let levels = sublevels(&m, field).unwrap();
        let scale = m.a + MU_B * field.abs() / HBAR * 2.0;
        for s in &levels {
            let want = breit_rabi(&m, s.two_f == m.two_i + 1, s.two_m_f, field);
            assert!(
                (s.energy - want).abs() < 1e-11 * scale,
                "{g} G F={} mF={}: {} vs {}",
                s.two_f,
                s.two_m_f,
                s.energy / MHZ,
                want / MHZ
            );
        }
    }
    // The |1 - x| reading would be wrong above 2438 G.
    let field = 3000.0 * GAUSS;
    let s = find(&sublevels(&m, field).unwrap(), 4, -4).energy;
    let i = 1.5;
    let de = m.a * (i + 0.5);
    let larmor = MU_B * field / HBAR;
    let x: f64 = (m.g_j - m.g_i) * larmor / de;
    let wrong = -de / 8.0 - m.g_i * larmor * 2.0 + de / 2.0 * (1.0 - x).abs();
    assert!((s - wrong).abs() > 100.0 * MHZ);
}

#[test]
fn rb87_excited_hyperfine_splittings() {
    // Arimondo et al. 1977 constants; Steck's splittings to 1 kHz (from
    // memory).
    let m = rb87_p32();
    let hf = hyperfine_levels(&m).unwrap();
    let e: Vec<f64> = hf.iter().map(|l| l.energy / MHZ).collect();
    assert_eq!(hf.iter().map(|l| l.two_f).collect::<Vec<_>>(), [0, 2, 4, 6]);
    assert!((e[3] - e[2] - 266.652).abs() < 1e-3, "{}", e[3] - e[2]);
    assert!((e[2] - e[1] - 156.941).abs() < 1e-3, "{}", e[2] - e[1]);
    assert!((e[1] - e[0] - 72.222).abs() < 1e-3, "{}", e[1] - e[0]);
}

/// Illustrative manifolds (invented numbers): inverted A, large B, J = 0,
/// I = 0, and no hyperfine interaction at all.
fn assorted() -> Vec<Manifold> {
    let base = Manifold {
        two_j: 5,
        two_i: 7,
        a: -100.0 * MHZ,
        b: 300.0 * MHZ,
        g_j: 1.2,
        g_i: 0.0004,
    };
    vec![
        rb87_s12(),
        rb87_p32(),
        base,
        Manifold {
            two_j: 4,
            two_i: 3,
            ..base
        },
        Manifold {
            two_j: 0,
            two_i: 5,
            ..base
        },
        Manifold {
            two_j: 3,
            two_i: 0,
            ..base
        },
        Manifold {
            two_j: 0,
            two_i: 0,
            ..base
        },
        Manifold {
            a: 0.0,
            b: 0.0,
            ..base
        },
        Manifold {
            a: 0.0,
            b: 0.0,
            g_i: 0.0,
            ..base
        },
    ]
}

#[test]
fn zero_field_diagonalisation_equals_closed_form() {
    // Arimondo et al. 1977 closed form against the exact diagonalisation.
    for m in assorted() {
        let hf = hyperfine_levels(&m).unwrap();
        let scale = m.a.abs() + m.b.abs() + 1.0;
        for s in sublevels(&m, 0.0).unwrap() {
            let want = hf.iter().find(|l| l.two_f == s.two_f).unwrap().energy;
            assert!((s.energy - want).abs() < 1e-12 * scale * 100.0, "{m:?}");
        }
    }
}

fn g_f(m: &Manifold, two_f: i32) -> f64 {
    // Steck (from memory): g_F = g_J [F(F+1) - I(I+1) + J(J+1)] / [2F(F+1)]
    //            + g_I [F(F+1) + I(I+1) - J(J+1)] / [2F(F+1)].
    let (f, i, j) = (xx1(two_f), xx1(m.two_i), xx1(m.two_j));
    m.g_j * (f - i + j) / (2.0 * f) + m.g_i * (f + i - j) / (2.0 * f)
}

#[test]
fn weak_field_is_linear_in_g_f() {
    // Steck (from memory): Delta E = g_F m_F mu_B B to first order in B (g_F = 0 for F = 0).
    // The odd part (E(B) - E(-B)) / 2 has no second-order term, so it
    // matches to 1e-6; the even part is second order, far below the linear.
    let field = 1e-6;
    let larmor = MU_B * field / HBAR;
    for m in [rb87_s12(), rb87_p32(), assorted()[2]] {
        let hf = hyperfine_levels(&m).unwrap();
        let up = sublevels(&m, field).unwrap();
        let down = sublevels(&m, -field).unwrap();
        for (s, t) in up.iter().zip(&down) {
            assert_eq!((s.two_f, s.two_m_f), (t.two_f, t.two_m_f));
            let e0 = hf.iter().find(|l| l.two_f == s.two_f).unwrap().energy;
            let g = if s.two_f == 0 { 0.0 } else { g_f(&m, s.two_f) };
            let want = g * f64::from(s.two_m_f) / 2.0 * larmor;
            let odd = (s.energy - t.energy) / 2.0;
            let even = (s.energy + t.energy) / 2.0 - e0;
            let at = format!("{m:?} F={} mF={}", s.two_f, s.two_m_f);
            assert!((odd - want).abs() < 1e-6 * larmor, "{at}: {odd} vs {want}");
            assert!(even.abs() < 1e-3 * larmor, "{at}: {even}");
        }
    }
}

/// Paschen-Back energy to first order in the hyperfine interaction: the
/// diagonal of H_hfs in the uncoupled basis, A m_J m_I plus the rank-2
/// quadrupole term B [3 m_I^2 - I(I+1)][3 m_J^2 - J(J+1)] / [4I(2I-1)J(2J-1)]
/// (from memory: first-order perturbation theory, only q = 0 components of
/// the tensors survive on the diagonal), plus the Zeeman term.
fn paschen_back(m: &Manifold, c: &Component, field: f64) -> f64 {
    let (mj, mi) = (f64::from(c.two_m_j) / 2.0, f64::from(c.two_m_i) / 2.0);
    let (i, j) = (f64::from(m.two_i) / 2.0, f64::from(m.two_j) / 2.0);
    let mut e = m.a * mj * mi + MU_B * field / HBAR * (m.g_j * mj + m.g_i * mi);
    if m.two_i >= 2 && m.two_j >= 2 {
        e += m.b * (3.0 * mi * mi - xx1(m.two_i)) * (3.0 * mj * mj - xx1(m.two_j))
            / (4.0 * i * (2.0 * i - 1.0) * j * (2.0 * j - 1.0));
    }
    e
}

/// Largest |E - E_PB| over the sublevels, each matched to its dominant
/// uncoupled component.
fn paschen_back_error(m: &Manifold, field: f64) -> f64 {
    sublevels(m, field)
        .unwrap()
        .iter()
        .map(|s| {
            let c = s
                .components
                .iter()
                .max_by(|p, q| p.amplitude.abs().total_cmp(&q.amplitude.abs()))
                .unwrap();
            (s.energy - paschen_back(m, c, field)).abs()
        })
        .fold(0.0, f64::max)
}

#[test]
fn strong_field_is_paschen_back() {
    // The residual is second order, A^2 / (mu_B B): ten times the field,
    // a tenth of the residual (common practice, no source).
    for m in [rb87_s12(), rb87_p32()] {
        let low = paschen_back_error(&m, 100.0);
        let high = paschen_back_error(&m, 1000.0);
        assert!(low < 1e-2 * m.a, "{m:?}: {}", low / MHZ);
        assert!(high < 0.12 * low, "{m:?}: {} vs {}", high / MHZ, low / MHZ);
    }
}

#[test]
fn centre_of_gravity_stays_at_zero() {
    // H_hfs and H_Z are traceless: the energies sum to zero at any field
    // (common practice, no source).
    for m in assorted() {
        for field in [0.0, 1e-4, 0.1, 3.0, 1e3] {
            let levels = sublevels(&m, field).unwrap();
            let sum: f64 = levels.iter().map(|s| s.energy).sum();
            let scale: f64 = levels.iter().map(|s| s.energy.abs()).sum::<f64>() + 1.0;
            assert!(sum.abs() < 1e-12 * scale, "{m:?} at {field} T: {sum}");
        }
    }
}

#[test]
fn vectors_are_orthonormal_and_ordered() {
    // Common practice, no source.
    for m in assorted() {
        for field in [0.0, 1e-3, 0.24, 50.0] {
            let levels = sublevels(&m, field).unwrap();
            let n = usize::try_from((m.two_j + 1) * (m.two_i + 1)).unwrap();
            assert_eq!(levels.len(), n);
            for (p, a) in levels.iter().enumerate() {
                for (q, b) in levels.iter().enumerate() {
                    let want = if p == q { 1.0 } else { 0.0 };
                    assert!((overlap(a, b) - want).abs() < 1e-12, "{m:?} {field}");
                }
                if p > 0 {
                    let prev = &levels[p - 1];
                    assert!((prev.two_f, prev.two_m_f) < (a.two_f, a.two_m_f));
                }
                assert!(a
                    .components
                    .iter()
                    .all(|c| c.two_m_j + c.two_m_i == a.two_m_f));
            }
        }
    }
}

#[test]
fn zero_field_vectors_are_the_coupled_states() {
    // |F m_F> = sum <J m_J; I m_I | F m_F> |m_J m_I>, Condon-Shortley, with
    // the module's sign convention (positive overlap), even with A = B = 0.
    for m in assorted() {
        for s in sublevels(&m, 0.0).unwrap() {
            let states = block_states(m.two_j, m.two_i, s.two_m_f);
            for (two_m_j, two_m_i) in states {
                let cg = clebsch_gordan(m.two_j, two_m_j, m.two_i, two_m_i, s.two_f, s.two_m_f);
                let got = s
                    .components
                    .iter()
                    .find(|c| c.two_m_j == two_m_j)
                    .map_or(0.0, |c| c.amplitude);
                assert!((got - cg).abs() < 1e-10, "{m:?} {s:?}");
            }
        }
    }
}

#[test]
fn labels_follow_the_zero_field_states() {
    // Adiabatic continuity (common practice, no source): at a weak field each
    // vector is close to its zero-field coupled state, with the same sign.
    for m in [rb87_s12(), rb87_p32(), assorted()[2]] {
        let zero = sublevels(&m, 0.0).unwrap();
        let weak = sublevels(&m, 1e-6).unwrap();
        for (a, b) in zero.iter().zip(&weak) {
            assert_eq!((a.two_f, a.two_m_f), (b.two_f, b.two_m_f));
            assert!(overlap(a, b) > 0.999, "{m:?} {a:?} {b:?}");
        }
    }
}

#[test]
fn sign_falls_back_to_the_largest_amplitude() {
    // Module convention (common practice, no source): with A = B = 0 in a
    // field the vectors are uncoupled states. J = I = 1, m_F = 0: Zeeman
    // order (-1, 1), (0, 0), (1, -1) takes F = 0, 1, 2; |0 0> has zero overlap
    // with |F=1 m_F=0> (<1 0; 1 0 | 1 0> = 0), so its one amplitude is +1.
    let m = Manifold {
        two_j: 2,
        two_i: 2,
        a: 0.0,
        b: 0.0,
        g_j: 1.5,
        g_i: 0.001,
    };
    assert_eq!(clebsch_gordan(2, 0, 2, 0, 2, 0), 0.0);
    let levels = sublevels(&m, 0.1).unwrap();
    let mid = find(&levels, 2, 0);
    assert_eq!(mid.components.len(), 1);
    assert_eq!(
        (mid.components[0].two_m_j, mid.components[0].two_m_i),
        (0, 0)
    );
    assert!((mid.components[0].amplitude - 1.0).abs() < 1e-15);
    let low = find(&levels, 0, 0);
    assert_eq!(low.components[0].two_m_j, -2);
    // The overlap rule still holds where it can: <1 -1; 1 1 | 0 0> > 0.
    assert!(low.components[0].amplitude * clebsch_gordan(2, -2, 2, 2, 0, 0) > 0.0);
}

#[test]
fn equal_g_factors_keep_the_coupled_states_under_a_huge_offset() {
    // With g_J = g_I the Zeeman term is g m_F mu_B B, constant in a block, so
    // the vectors are the coupled states at any field and E = E_F + g m_F
    // mu_B B (common practice, no source). At 1000 T the offset is 1e10 times
    // the inverted A (illustrative numbers): the hyperfine splitting is
    // inside the degeneracy tolerance, and the I.J tie-break must still give
    // each F its own state.
    let m = Manifold {
        two_j: 3,
        two_i: 3,
        a: -1e-3 * MHZ,
        b: 0.4e-3 * MHZ,
        g_j: 1.0,
        g_i: 1.0,
    };
    let field = 1000.0;
    let larmor = MU_B * field / HBAR;
    let hf = hyperfine_levels(&m).unwrap();
    for s in sublevels(&m, field).unwrap() {
        let e_f = hf.iter().find(|l| l.two_f == s.two_f).unwrap().energy;
        let offset = larmor * f64::from(s.two_m_f) / 2.0;
        assert!((s.energy - e_f - offset).abs() < 1e-14 * larmor, "{s:?}");
        for c in &s.components {
            let cg = clebsch_gordan(m.two_j, c.two_m_j, m.two_i, c.two_m_i, s.two_f, s.two_m_f);
            assert!((c.amplitude - cg).abs() < 1e-10, "{s:?}");
        }
    }
}

#[test]
fn every_small_manifold_is_complete_and_consistent() {
    // Internal consistency over J <= 3, I <= 7/2 (common practice, no
    // source): one sublevel per (F, m_F), unit norm, energies summing to
    // zero, and zero-field energies equal to the closed form.
    let constants = [(1.0, 0.3), (-0.7, 0.0), (0.0, 0.0), (0.2, -1.1)];
    for two_j in 0..=6 {
        for two_i in 0..=7 {
            for (k, &(a, b)) in constants.iter().enumerate() {
                let m = Manifold {
                    two_j,
                    two_i,
                    a: a * 100.0 * MHZ,
                    b: b * 100.0 * MHZ,
                    g_j: 1.1,
                    g_i: -0.002,
                };
                let hf = hyperfine_levels(&m).unwrap();
                for field in [0.0, 1e-3 * f64::from(u8::try_from(k).unwrap()), 7.0] {
                    let levels = sublevels(&m, field).unwrap();
                    let mut labels = Vec::new();
                    for l in &hf {
                        for two_m_f in (-l.two_f..=l.two_f).step_by(2) {
                            labels.push((l.two_f, two_m_f));
                        }
                    }
                    let got: Vec<_> = levels.iter().map(|s| (s.two_f, s.two_m_f)).collect();
                    assert_eq!(got, labels, "{m:?} {field}");
                    let sum: f64 = levels.iter().map(|s| s.energy).sum();
                    let scale: f64 = levels.iter().map(|s| s.energy.abs()).sum::<f64>() + 1.0;
                    assert!(sum.abs() < 1e-12 * scale, "{m:?} {field}");
                    for s in &levels {
                        assert!((overlap(s, s) - 1.0).abs() < 1e-12, "{m:?} {field}");
                        if field == 0.0 {
                            let e = hf.iter().find(|l| l.two_f == s.two_f).unwrap().energy;
                            assert!((s.energy - e).abs() < 1e-12 * (scale + 200.0 * MHZ));
                        }
                    }
                }
            }
        }
    }
}

#[test]
fn bad_inputs_are_errors_not_panics() {
    let m = rb87_s12();
    let neg = Manifold { two_j: -1, ..m };
    assert!(matches!(
        sublevels(&neg, 0.0),
        Err(StructureError::NegativeMomentum { .. })
    ));
    let nan = Manifold { a: f64::NAN, ..m };
    assert!(matches!(
        hyperfine_levels(&nan),
        Err(StructureError::NonFinite { what: "A", .. })
    ));
    assert!(matches!(
        sublevels(&m, f64::INFINITY),
        Err(StructureError::NonFinite { .. })
    ));
    let big = Manifold {
        two_j: i32::MAX,
        two_i: i32::MAX,
        ..m
    };
    assert!(matches!(
        sublevels(&big, 0.0),
        Err(StructureError::TooManyStates { .. })
    ));
    let huge = Manifold {
        a: f64::MAX,
        b: f64::MAX,
        ..rb87_p32()
    };
    assert!(matches!(
        sublevels(&huge, f64::MAX),
        Err(StructureError::Overflow)
    ));
    assert!(matches!(
        hyperfine_levels(&huge),
        Err(StructureError::Overflow)
    ));
    // Large but finite: either numbers or a typed error, never NaN.
    for (a, field) in [(1e300, 1e-300), (1e-300, 1e300), (1e150, 1e150)] {
        let m = Manifold {
            a,
            b: a,
            ..rb87_p32()
        };
        if let Ok(levels) = sublevels(&m, field) {
            assert!(levels.iter().all(|s| s.energy.is_finite()));
        }
    }
}

#[test]
fn d2_build_time() {
    // Timing note only (no assertion on time): both 87Rb D2 manifolds.
    let reps = 2000;
    let start = std::time::Instant::now();
    let mut count = 0;
    for k in 0..reps {
        let field = 1e-4 * f64::from(k);
        count += sublevels(&rb87_s12(), field).unwrap().len();
        count += sublevels(&rb87_p32(), field).unwrap().len();
    }
    let per = start.elapsed().as_secs_f64() / f64::from(reps);
    assert_eq!(count, 24 * usize::try_from(reps).unwrap());
    println!("24-sublevel D2 build: {:.2} us per field", per * 1e6);
}
