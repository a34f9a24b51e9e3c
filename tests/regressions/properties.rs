//! Property tests over randomly generated small schemes (2 to 8 levels,
//! random energies, dipoles, detunings, decay and envelopes). Every scheme is
//! written as YAML text and read back through `scheme::parse`, so the
//! file-order properties test the real parser, validator, frame choice and
//! propagators. All numbers are invented; no scheme stands for a real species.
//!
//! Properties and their tolerances:
//! - without decay the norm stays 1 at every sample (unitarity of the
//!   Schrodinger equation; any textbook), within what the propagator
//!   promises: 1e-9 for the exact one, for the adaptive one its error
//!   control summed over the accepted steps (`norm_bound`, derivation
//!   there); an adaptive drift above 1e-9 must also fall at least tenfold
//!   when rtol and atol fall a hundredfold (`tolerance_proportionality`);
//! - with decay, sum P + lost = 1 within the same bound (the decay terms
//!   -i Gamma/2 remove exactly the population the loss integral counts);
//! - the order of levels, couplings, fields and of the two ids in `between`
//!   in the file does not change any population (1e-8);
//! - a common energy offset does not change any population (a global phase;
//!   1e-8 plus the rounding floor described below);
//! - a common time shift does not change any population when the drives form
//!   a forest and one level starts populated (1e-8). With a loop of drives the
//!   relative phase of the fields changes with a time shift, because phases
//!   are written in absolute time (`docs/scheme-format.md`): then the result
//!   is *meant* to change;
//! - exact and adaptive propagators agree on rectangular schemes (1e-7);
//! - the perturbative estimate agrees with the exact value within the bound
//!   of the neglected Dyson terms when every population stays below 1e-4
//!   (see `estimate_agrees_with_exact_when_weak`).
//!
//! The 1e-8 and 1e-7 tolerances: the adaptive propagator runs at the default
//! rtol 1e-10 / atol 1e-12 on amplitudes; two runs of one physical problem
//! written differently take different step sequences, and their global errors
//! (a few hundred to a few thousand steps) stay below 1e-8 in population
//! (common practice, no source: global error ~ steps x local tolerance).
//!
//! The norm bound: a fixed 1e-9 was too tight for the adaptive propagator.
//! Dop853 loses a little norm on every step where a populated level turns in
//! the frame, so the drift grows with the number of steps (the case found is
//! `norm_drift_of_a_long_free_rotation_is_integration_error`: 1.18e-9 after
//! 1313 steps). Measured over 2946 adaptive schemes of each generator (3000
//! drawn from seed 12345; `measure_norm_margin` with `--ignored`): largest
//! drift 2.2e-9 (1.2e-9 with decay), at most 1.1e-3 of `norm_bound` and at
//! most 0.011 rtol per step; 3 schemes (1 with decay) above 1e-9. Broken on
//! purpose (one half of every coupling in the adaptive right-hand side
//! scaled by 1 + x, reverted afterwards): x = 1e-7 fails the bound,
//! x = 1e-8 and 1e-9 fail the tolerance check, x = 1e-10 passes.
//!
//! Case counts are set per property (`config`: 128 for the norm, loss and
//! estimate properties, 64 for the others) so the whole file runs in about
//! 3 s (`cargo test --release --test regressions properties::` on the 2-core
//! development machine, 2.6-3.9 s measured).
//!
//! Deterministic in CI: the random cases are drawn from a fixed seed
//! (`FIXED_SEED`), so every run tests the same schemes; the seeds in
//! `properties.proptest-regressions` (failures found earlier, each a case a
//! property once failed on) are replayed first, every run. To explore with
//! fresh cases locally, give a seed (any u64) and optionally more cases:
//!
//! ```text
//! PROPTEST_RNG_SEED=$RANDOM$RANDOM PROPTEST_CASES=2000 cargo test --release --test regressions properties::
//! ```
//!
//! A failure found that way is shrunk and its seed appended to the
//! regressions file (commit it with the fix, or with the corrected property:
//! it is then replayed by CI for good); the same `PROPTEST_RNG_SEED`
//! reproduces the run. `PROPTEST_CASES` alone keeps the fixed seed.
//!
//! Each property was checked to fail when the thing it guards is broken
//! (temporarily, see `docs/reliability.md`), and two of them found real
//! defects, now covered by `tests/regressions/regressions.rs`.
//!
//! The energy offset moves optical energies by up to 500 THz; the parsed
//! detunings then differ by rounding (about one ulp of 1e15 rad/s). That
//! difference is checked to stay below 8 ulps of the largest angular
//! frequency, and the population tolerance there is 1e-8 + 2 delta T.

use levelplan::estimate;
use levelplan::model::Model;
use levelplan::scheme;
use levelplan::solve::{self, MethodUsed, Solution, SolveError, SolveOptions};
use proptest::prelude::*;
use proptest::test_runner::{Config, FileFailurePersistence, RngSeed};
use std::fmt::Write;

// ---------------------------------------------------------------------------
// Generated schemes

/// Base energies of the three manifolds (MHz, invented): a ground manifold, a
/// first and a second excited manifold. Levels sit within +-100 MHz of their
/// manifold's base; couplings join neighbouring manifolds only.
const BASE_MHZ: [f64; 3] = [0.0, 410_123_456.0, 733_987_654.0];

#[derive(Debug, Clone)]
struct LevelSpec {
    manifold: usize,
    offset_mhz: f64,
    lifetime_ns: Option<f64>,
}

#[derive(Debug, Clone)]
struct CouplingSpec {
    a: usize,
    b: usize,
    dipole: f64,
}

#[derive(Debug, Clone)]
enum EnvSpec {
    Rect { start: f64, duration: f64 },
    Gauss { center: f64, fwhm: f64 },
    Sech { center: f64, tau: f64 },
    Sin2 { start: f64, duration: f64 },
    Blackman { start: f64, duration: f64 },
    Samples { points: Vec<(f64, f64)> },
}

#[derive(Debug, Clone)]
struct FieldSpec {
    /// Index of the coupling the field is tuned to (and sets its Rabi
    /// frequency on).
    on: usize,
    detuning_mhz: f64,
    rabi_mhz: f64,
    /// Written as `frequency:` (absolute) instead of `tuned:`.
    absolute: bool,
    chirp_mhz_per_us: f64,
    envelope: EnvSpec,
}

#[derive(Debug, Clone)]
struct Spec {
    levels: Vec<LevelSpec>,
    couplings: Vec<CouplingSpec>,
    fields: Vec<FieldSpec>,
    /// (level, population); populations sum to 1.
    initial: Vec<(usize, f64)>,
}

impl Spec {
    fn energy_mhz(&self, k: usize) -> f64 {
        BASE_MHZ[self.levels[k].manifold] + self.levels[k].offset_mhz
    }

    /// Manifold pair (lower, upper) of a coupling.
    fn pair(&self, c: usize) -> (usize, usize) {
        let (ma, mb) = (
            self.levels[self.couplings[c].a].manifold,
            self.levels[self.couplings[c].b].manifold,
        );
        (ma.min(mb), ma.max(mb))
    }

    /// Fields that drive coupling `c`: those tuned to a coupling between the
    /// same two manifolds (the others are tens of THz away).
    fn fields_of(&self, c: usize) -> Vec<usize> {
        (0..self.fields.len())
            .filter(|&f| self.pair(self.fields[f].on) == self.pair(c))
            .collect()
    }
}

/// How to write a spec: orders, offsets, shifts, solver keys.
#[derive(Debug, Clone, Default)]
struct Writing {
    level_order: Option<Vec<usize>>,
    coupling_order: Option<Vec<usize>>,
    field_order: Option<Vec<usize>>,
    /// Swap the two ids in `between`, `tuned.to` and `rabi.on`.
    flip: bool,
    energy_offset_mhz: f64,
    time_shift_ns: f64,
    method: Option<&'static str>,
    /// `solver.rtol` and `solver.atol`.
    tolerances: Option<(f64, f64)>,
    /// Multiplies every Rabi frequency.
    rabi_scale: Option<f64>,
}

fn id(k: usize) -> String {
    format!("l{k}")
}

fn pair_ids(a: usize, b: usize, flip: bool) -> String {
    if flip {
        format!("[{}, {}]", id(b), id(a))
    } else {
        format!("[{}, {}]", id(a), id(b))
    }
}

fn envelope_yaml(e: &EnvSpec, shift: f64) -> String {
    let t = |x: f64| format!("\"{} ns\"", x + shift);
    match e {
        EnvSpec::Rect { start, duration } => format!(
            "{{shape: rectangular, start: {}, duration: \"{duration} ns\"}}",
            t(*start)
        ),
        EnvSpec::Gauss { center, fwhm } => format!(
            "{{shape: gaussian, center: {}, fwhm: \"{fwhm} ns\"}}",
            t(*center)
        ),
        EnvSpec::Sech { center, tau } => {
            format!("{{shape: sech, center: {}, tau: \"{tau} ns\"}}", t(*center))
        }
        EnvSpec::Sin2 { start, duration } => format!(
            "{{shape: sin2, start: {}, duration: \"{duration} ns\"}}",
            t(*start)
        ),
        EnvSpec::Blackman { start, duration } => format!(
            "{{shape: blackman, start: {}, duration: \"{duration} ns\"}}",
            t(*start)
        ),
        EnvSpec::Samples { points } => {
            let pts: Vec<String> = points
                .iter()
                .map(|(tt, v)| format!("[{}, {v}]", t(*tt)))
                .collect();
            format!("{{shape: samples, points: [{}]}}", pts.join(", "))
        }
    }
}

fn yaml(spec: &Spec, w: &Writing) -> String {
    let n = spec.levels.len();
    let level_order = w.level_order.clone().unwrap_or_else(|| (0..n).collect());
    let coupling_order = w
        .coupling_order
        .clone()
        .unwrap_or_else(|| (0..spec.couplings.len()).collect());
    let field_order = w
        .field_order
        .clone()
        .unwrap_or_else(|| (0..spec.fields.len()).collect());
    let mut s = String::from(
        "# generated by tests/regressions/properties.rs (invented numbers)\nlevels:\n",
    );
    for &k in &level_order {
        let l = &spec.levels[k];
        let e = spec.energy_mhz(k) + w.energy_offset_mhz;
        write!(s, "  {}: {{energy: \"{e} MHz\"", id(k)).unwrap();
        if let Some(tau) = l.lifetime_ns {
            write!(s, ", lifetime: \"{tau} ns\"").unwrap();
        }
        s.push_str("}\n");
    }
    s.push_str("initial: {");
    let mut init: Vec<(usize, f64)> = spec.initial.clone();
    init.sort_by_key(|(k, _)| level_order.iter().position(|x| x == k));
    let parts: Vec<String> = init
        .iter()
        .map(|(k, p)| format!("{}: {p}", id(*k)))
        .collect();
    s.push_str(&parts.join(", "));
    s.push_str("}\ncouplings:\n");
    for &c in &coupling_order {
        let cs = &spec.couplings[c];
        let fields: Vec<String> = spec
            .fields_of(c)
            .into_iter()
            .map(|f| format!("f{f}"))
            .collect();
        writeln!(
            s,
            "  - {{between: {}, dipole: {}, fields: [{}]}}",
            pair_ids(cs.a, cs.b, w.flip),
            cs.dipole,
            fields.join(", ")
        )
        .unwrap();
    }
    if spec.fields.is_empty() {
        s.push_str("fields: {}\nwindow: {start: \"0 ns\", end: \"100 ns\"}\n");
    } else {
        s.push_str("fields:\n");
    }
    for &f in &field_order {
        let fs = &spec.fields[f];
        let cs = &spec.couplings[fs.on];
        writeln!(s, "  f{f}:").unwrap();
        if fs.absolute {
            let nu = (spec.energy_mhz(cs.a) - spec.energy_mhz(cs.b)).abs() + fs.detuning_mhz;
            writeln!(s, "    frequency: \"{nu} MHz\"").unwrap();
        } else {
            writeln!(
                s,
                "    tuned: {{to: {}, detuning: \"{} MHz\"}}",
                pair_ids(cs.a, cs.b, w.flip),
                fs.detuning_mhz
            )
            .unwrap();
        }
        let rabi = fs.rabi_mhz * w.rabi_scale.unwrap_or(1.0);
        writeln!(
            s,
            "    rabi: {{on: {}, value: \"{rabi} MHz\"}}",
            pair_ids(cs.a, cs.b, w.flip)
        )
        .unwrap();
        if fs.chirp_mhz_per_us != 0.0 {
            writeln!(s, "    chirp: \"{} MHz/us\"", fs.chirp_mhz_per_us).unwrap();
        }
        writeln!(
            s,
            "    envelope: {}",
            envelope_yaml(&fs.envelope, w.time_shift_ns)
        )
        .unwrap();
    }
    let mut solver: Vec<String> = Vec::new();
    if let Some(m) = w.method {
        solver.push(format!("method: {m}"));
    }
    if let Some((rtol, atol)) = w.tolerances {
        solver.push(format!("rtol: {rtol:e}, atol: {atol:e}"));
    }
    if !solver.is_empty() {
        writeln!(s, "solver: {{{}}}", solver.join(", ")).unwrap();
    }
    s
}

fn parse(text: &str) -> Model {
    match scheme::parse(text, "generated.yaml") {
        Ok(m) => m,
        Err(e) => panic!("generated scheme refused:\n{e}\n---\n{text}"),
    }
}

/// What may be generated.
#[derive(Debug, Clone, Copy)]
struct Gen {
    decay: bool,
    /// Only rectangular envelopes, no chirp.
    rect_only: bool,
    /// Couplings form a tree and each manifold pair has one field, so the
    /// drives form a forest; one initial level.
    forest: bool,
    /// Range of |detuning| (MHz).
    detuning_mhz: (f64, f64),
}

const STRONG: Gen = Gen {
    decay: false,
    rect_only: false,
    forest: false,
    detuning_mhz: (0.0, 40.0),
};

fn envelope_strategy(rect_only: bool) -> BoxedStrategy<EnvSpec> {
    let rect = (0.0..50.0f64, 20.0..200.0f64)
        .prop_map(|(start, duration)| EnvSpec::Rect { start, duration });
    if rect_only {
        return rect.boxed();
    }
    prop_oneof![
        rect,
        (50.0..150.0f64, 5.0..40.0f64).prop_map(|(center, fwhm)| EnvSpec::Gauss { center, fwhm }),
        (50.0..150.0f64, 3.0..20.0f64).prop_map(|(center, tau)| EnvSpec::Sech { center, tau }),
        (0.0..50.0f64, 30.0..200.0f64)
            .prop_map(|(start, duration)| EnvSpec::Sin2 { start, duration }),
        (0.0..50.0f64, 30.0..200.0f64)
            .prop_map(|(start, duration)| EnvSpec::Blackman { start, duration }),
        (
            0.0..50.0f64,
            prop::collection::vec((5.0..40.0f64, 0.0..1.0f64), 2..6)
        )
            .prop_map(|(t0, steps)| {
                let mut t = t0;
                let points = steps
                    .into_iter()
                    .map(|(dt, v)| {
                        t += dt;
                        (t, v)
                    })
                    .collect();
                EnvSpec::Samples { points }
            }),
    ]
    .boxed()
}

/// Raw random numbers for one field; mapped onto the scheme in `assemble`.
type RawField = (usize, f64, bool, f64, bool, f64, bool, EnvSpec);

#[allow(clippy::type_complexity)]
fn spec_strategy(g: Gen) -> impl Strategy<Value = Spec> {
    (2usize..=8).prop_flat_map(move |n| {
        let field = (
            any::<usize>(),
            g.detuning_mhz.0..=g.detuning_mhz.1,
            any::<bool>(),
            2.0..25.0f64,
            any::<bool>(),
            -20.0..20.0f64,
            any::<bool>(),
            envelope_strategy(g.rect_only),
        );
        (
            prop::collection::vec((any::<usize>(), any::<bool>()), n - 1),
            prop::collection::vec(-100.0..100.0f64, n),
            prop::collection::vec(prop::option::of(20.0..500.0f64), n),
            prop::collection::vec((any::<usize>(), any::<usize>()), 0..3),
            prop::collection::vec(
                (0.2..1.5f64, any::<bool>()),
                n + 2, // one per possible coupling
            ),
            prop::collection::vec(field, 4),
            (1usize..=2, 1usize..=2),
            (any::<bool>(), 0.05..0.95f64, any::<usize>()),
        )
            .prop_map(move |parts| assemble(g, parts))
    })
}

#[allow(clippy::type_complexity)]
fn assemble(
    g: Gen,
    (tree, offsets, lifetimes, extra, dipoles, raw_fields, fields_per_pair, init): (
        Vec<(usize, bool)>,
        Vec<f64>,
        Vec<Option<f64>>,
        Vec<(usize, usize)>,
        Vec<(f64, bool)>,
        Vec<RawField>,
        (usize, usize),
        (bool, f64, usize),
    ),
) -> Spec {
    let n = offsets.len();
    // Level 0 in the ground manifold; each further level hangs off an
    // earlier one, one manifold up or down.
    let mut manifold = vec![0usize; n];
    let mut couplings = Vec::new();
    for k in 1..n {
        let (p, up) = tree[k - 1];
        let parent = p % k;
        let m = manifold[parent];
        manifold[k] = match (m, up) {
            (0, _) => 1,
            (2, _) => 1,
            (_, true) => 2,
            (_, false) => 0,
        };
        couplings.push((parent, k));
    }
    if !g.forest {
        for (a, b) in extra {
            let (a, b) = (a % n, b % n);
            let adjacent = manifold[a].abs_diff(manifold[b]) == 1;
            let known = couplings
                .iter()
                .any(|&(x, y)| (x, y) == (a, b) || (x, y) == (b, a));
            if adjacent && !known {
                couplings.push((a, b));
            }
        }
    }
    let couplings: Vec<CouplingSpec> = couplings
        .into_iter()
        .zip(&dipoles)
        .map(|((a, b), &(d, neg))| CouplingSpec {
            a,
            b,
            dipole: if neg { -d } else { d },
        })
        .collect();
    let levels: Vec<LevelSpec> = (0..n)
        .map(|k| LevelSpec {
            manifold: manifold[k],
            // Level 0 sits exactly at the ground base.
            // Dyadic MHz values: the energies are written exactly.
            offset_mhz: if k == 0 {
                0.0
            } else {
                (offsets[k] * 1024.0).round() / 1024.0
            },
            lifetime_ns: if g.decay && manifold[k] > 0 {
                lifetimes[k]
            } else {
                None
            },
        })
        .collect();
    let mut spec = Spec {
        levels,
        couplings,
        fields: Vec::new(),
        initial: vec![(0, 1.0)],
    };
    // Fields: for each manifold pair present, one or two fields tuned to one
    // of its couplings.
    let mut raw = raw_fields.into_iter();
    for (pair, count) in [((0, 1), fields_per_pair.0), ((1, 2), fields_per_pair.1)] {
        let on: Vec<usize> = (0..spec.couplings.len())
            .filter(|&c| spec.pair(c) == pair)
            .collect();
        if on.is_empty() {
            continue;
        }
        let count = if g.forest { 1 } else { count };
        for _ in 0..count {
            let Some((pick, det, neg, rabi, absolute, chirp, chirped, envelope)) = raw.next()
            else {
                break;
            };
            spec.fields.push(FieldSpec {
                on: on[pick % on.len()],
                detuning_mhz: if neg { -det } else { det },
                rabi_mhz: rabi,
                absolute,
                chirp_mhz_per_us: if chirped && !g.rect_only { chirp } else { 0.0 },
                envelope,
            });
        }
    }
    // Initial state: level 0, or (not for forests) level 0 shared with a
    // second ground-manifold level.
    let (share, p, pick) = init;
    let ground: Vec<usize> = (1..n).filter(|&k| manifold[k] == 0).collect();
    if share && !g.forest && !ground.is_empty() {
        let other = ground[pick % ground.len()];
        spec.initial = vec![(0, p), (other, 1.0 - p)];
    }
    spec
}

// ---------------------------------------------------------------------------
// Helpers

fn run(m: &Model, samples: usize) -> Result<Solution, SolveError> {
    solve::solve(
        m,
        &SolveOptions {
            samples,
            ..SolveOptions::default()
        },
    )
}

/// Populations keyed by level id (sorted), then lost.
fn by_id(m: &Model, s: &Solution) -> Vec<(String, f64, f64)> {
    let mut v: Vec<(String, f64, f64)> = m
        .levels()
        .iter()
        .enumerate()
        .map(|(k, l)| (l.id.clone(), s.final_populations[k], s.peak_populations[k]))
        .collect();
    v.sort_by(|a, b| a.0.cmp(&b.0));
    v
}

fn assert_same(
    a: (&Model, &Solution),
    b: (&Model, &Solution),
    tol: f64,
    what: &str,
) -> Result<(), TestCaseError> {
    let (pa, pb) = (by_id(a.0, a.1), by_id(b.0, b.1));
    prop_assert_eq!(pa.len(), pb.len());
    for (x, y) in pa.iter().zip(&pb) {
        prop_assert_eq!(&x.0, &y.0);
        prop_assert!(
            (x.1 - y.1).abs() <= tol,
            "{}: final population of {}: {} vs {} (diff {:e})",
            what,
            x.0,
            x.1,
            y.1,
            (x.1 - y.1).abs()
        );
        prop_assert!(
            (x.2 - y.2).abs() <= tol,
            "{}: peak population of {}: {} vs {} (diff {:e})",
            what,
            x.0,
            x.2,
            y.2,
            (x.2 - y.2).abs()
        );
    }
    prop_assert!(
        (a.1.lost - b.1.lost).abs() <= tol,
        "{}: lost {} vs {}",
        what,
        a.1.lost,
        b.1.lost
    );
    Ok(())
}

/// A random permutation of 0..n from a list of random keys.
fn permutation(keys: &[u64], n: usize) -> Vec<usize> {
    let mut v: Vec<usize> = (0..n).collect();
    v.sort_by_key(|&i| keys.get(i).copied().unwrap_or(i as u64));
    v
}

/// Tolerance of the file-order, offset and time-shift invariances.
const INVARIANCE_TOL: f64 = 1e-8;

/// The largest angular frequency of a model: level energies and carriers.
fn largest_frequency(m: &Model) -> f64 {
    m.levels()
        .iter()
        .map(|l| l.omega.abs())
        .chain(m.fields().iter().map(|f| f.omega.abs()))
        .fold(0.0, f64::max)
}

/// The largest difference (rad/s) between two models of the same scheme in
/// any drive detuning or transition frequency: pure rounding, about one ulp
/// of the largest angular frequency (0.5-1 rad/s near 1e15 rad/s).
/// Optical energies written with a common offset are rounded differently, so
/// the two Hamiltonians differ by this much; by the perturbation bound
/// ||psi_a - psi_b|| <= integral ||H_a - H_b|| dt (Duhamel's formula; the
/// decay terms only contract) populations may then differ by about
/// 2 delta T. Measured over 300 generated schemes: at most 0.24 delta T.
fn rounding_floor(a: &Model, b: &Model) -> f64 {
    let drives = a
        .drives()
        .iter()
        .zip(b.drives())
        .map(|(x, y)| (a.detuning(x) - b.detuning(y)).abs());
    let transitions =
        (0..a.couplings().len()).map(|k| (a.transition_omega(k) - b.transition_omega(k)).abs());
    drives.chain(transitions).fold(0.0, f64::max)
}

/// Norm tolerance of the exact propagator: it makes no truncation error, so
/// its norm error is rounding in the matrix exponentials and their products
/// (measured below 1e-12 in `docs/physics.md`); 1e-9 leaves a wide margin.
const EXACT_NORM_TOL: f64 = 1e-9;

/// How far |sum P + lost - 1| may drift in a run, by what each propagator
/// promises (the sample populations, final populations and reported norm
/// error are all held to it).
///
/// Exact: [`EXACT_NORM_TOL`]. Adaptive: what the error control of Dop853
/// promises, summed over the accepted steps. Derivation:
/// 1. Error control (ode_solvers 0.6.2 `Dop853`, the scheme of Hairer's
///    DOP853): a step is accepted when the RMS over the d = 2N + 2 state
///    components (N complex amplitudes, the lost population, the time) of
///    est_i / sc_i is at most 1, with sc_i = atol + rtol max(|y_i|, |y_i'|).
///    Every component is at most 1 here, so the estimated local error e_n of
///    an accepted step has Euclidean length
///    |e_n| <= sqrt(d) max_i sc_i <= eps = sqrt(d) (rtol + atol).
///    The standard assumption of error control is that the true local error
///    is not larger than its estimate (for Dop853 the estimate belongs to the
///    embedded lower-order formulas and overestimates).
/// 2. N(y) = sum_k |a_k|^2 + lost is conserved by the exact flow (unitarity
///    without decay; with decay, d/dt sum |a|^2 = -d lost/dt). With y_n the
///    step's result and Y_n the exact solution of the step from y_{n-1},
///    N(Y_n) = N(y_{n-1}), so N(y_M) - N(y_0) = sum_n [N(y_n) - N(Y_n)]
///    telescopes exactly: the drift of the invariant is the sum of what each
///    local error does to it, however the errors are transported.
/// 3. y_n = Y_n + e_n with |amplitudes of Y_n| <= 1 (+ the drift so far):
///    |N(y_n) - N(Y_n)| <= 2 |e_amp| + |e_lost| + |e_amp|^2 <= 3 eps for
///    eps <= 0.1 (2 without decay, where e_lost = 0).
///
/// Hence |sum P + lost - 1| <= 3 eps x accepted steps. Sources: the error
/// norm and the acceptance test, E. Hairer, S. P. Norsett, G. Wanner,
/// Solving Ordinary Differential Equations I, 2nd ed., sec. II.4 and II.10
/// (from memory; the formula is also in ode_solvers' `dop853.rs`); the
/// telescoping sum over local errors, common practice, no source. The bound
/// grows linearly with the steps because the error is systematic: found by
/// this property (the last seed in `properties.proptest-regressions`, see
/// `norm_drift_of_a_long_free_rotation_is_integration_error`), where
/// Dop853 loses 9e-13 of norm per step on every one of 1313 steps.
/// Measured over generated schemes, the drift stays about 3 orders of
/// magnitude inside the bound (see the module docs), so a small defect of
/// the equations (a non-Hermitian term) is caught by
/// [`tolerance_proportionality`] rather than by this bound.
fn norm_bound(m: &Model, s: &Solution) -> f64 {
    match s.method {
        MethodUsed::Exact => EXACT_NORM_TOL,
        MethodUsed::Adaptive => {
            let d = (2 * m.levels().len() + 2) as f64;
            let eps = d.sqrt() * (s.rtol + s.atol);
            3.0 * eps * s.steps as f64
        }
    }
}

/// A norm drift of the adaptive propagator that is integration error falls
/// when the tolerances fall (tolerance proportionality: the global error of
/// an error-controlled integration scales about as the tolerance; Hairer,
/// Norsett, Wanner I, sec. II.4, from memory); a defect of the equations
/// does not. Where the drift exceeds [`EXACT_NORM_TOL`], the scheme is run
/// again at rtol and atol / 100 and the drift must fall at least tenfold
/// (measured on the regression seed: 1.18e-9 -> 6.4e-12, 180-fold).
fn tolerance_proportionality(
    spec: &Spec,
    w: &Writing,
    m: &Model,
    s: &Solution,
) -> Result<(), TestCaseError> {
    if s.method != MethodUsed::Adaptive || s.norm_error <= EXACT_NORM_TOL {
        return Ok(());
    }
    let text = yaml(
        spec,
        &Writing {
            tolerances: Some((m.solver().rtol / 100.0, m.solver().atol / 100.0)),
            ..w.clone()
        },
    );
    let tight = run(&parse(&text), 0).unwrap();
    prop_assert!(
        tight.norm_error <= 0.1 * s.norm_error,
        "norm error {:e} at rtol {:e} does not fall with the tolerance: {:e} at rtol {:e}\n{}",
        s.norm_error,
        s.rtol,
        tight.norm_error,
        tight.rtol,
        text
    );
    Ok(())
}

/// The random cases of every property here are drawn from this fixed seed,
/// so CI runs the same cases every time (after replaying
/// `properties.proptest-regressions`). `PROPTEST_RNG_SEED` and
/// `PROPTEST_CASES` override the seed and the case count (see the module
/// docs for exploring with fresh seeds).
const FIXED_SEED: u64 = 0x6c65_7665_6c70_6c61;

/// Proptest configuration: `cases` cases from [`FIXED_SEED`], unless the
/// environment asks otherwise. Failures persist beside this file
/// (`properties.proptest-regressions`): proptest's default would look for
/// `tests/proptest-regressions/properties.txt`, since this module sits
/// beside the `main.rs` of its test binary.
fn config(cases: u32) -> Config {
    let mut c = Config::with_cases(cases);
    c.failure_persistence = Some(Box::new(FileFailurePersistence::WithSource(
        "proptest-regressions",
    )));
    if std::env::var_os("PROPTEST_CASES").is_some() {
        c.cases = Config::default().cases;
    }
    if std::env::var_os("PROPTEST_RNG_SEED").is_none() {
        c.rng_seed = RngSeed::Fixed(FIXED_SEED);
    }
    c
}

// ---------------------------------------------------------------------------
// Properties

proptest! {
    #![proptest_config(config(128))]

    /// Without decay the evolution is unitary: sum P = 1 at every sample
    /// and nothing is lost. Source: unitarity of the Schrodinger equation
    /// with a Hermitian Hamiltonian (any quantum mechanics text). Numerically
    /// sum P drifts by at most what the propagator promises (`norm_bound`:
    /// 1e-9 exact; adaptive, the error control summed over the steps), and
    /// an adaptive drift beyond 1e-9 must fall with the tolerances
    /// (`tolerance_proportionality`).
    #[test]
    fn norm_is_one_without_decay(spec in spec_strategy(STRONG)) {
        let w = Writing::default();
        let text = yaml(&spec, &w);
        let m = parse(&text);
        let s = run(&m, 11).unwrap();
        let bound = norm_bound(&m, &s);
        let sum: f64 = s.final_populations.iter().sum();
        prop_assert!((sum - 1.0).abs() <= bound,
            "final sum {} (bound {:e}, {:?}, {} steps)\n{}", sum, bound, s.method, s.steps, text);
        prop_assert_eq!(s.lost, 0.0);
        for (t, p) in &s.samples {
            let sum: f64 = p.iter().sum();
            prop_assert!((sum - 1.0).abs() <= bound,
                "sum {} at t = {:e} (bound {:e})\n{}", sum, t, bound, text);
        }
        prop_assert!(s.norm_error <= bound, "reported norm error {:e} > {:e}", s.norm_error, bound);
        for (k, (&pk, &fin)) in s.peak_populations.iter().zip(&s.final_populations).enumerate() {
            prop_assert!(pk <= 1.0 + bound && pk >= fin,
                "level {}: peak {} final {}", k, pk, fin);
        }
        tolerance_proportionality(&spec, &w, &m, &s)?;
    }

    /// With decay, what leaves the levels is exactly what the loss integral
    /// counts: sum P + lost = 1 within what the propagator promises
    /// (`norm_bound`; an adaptive drift beyond 1e-9 must fall with the
    /// tolerances). Source: d/dt sum |c_k|^2 = -sum Gamma_k |c_k|^2 for
    /// H = H_herm - i Gamma/2 (Weisskopf-Wigner decay terms; any quantum
    /// optics text).
    #[test]
    fn population_plus_loss_is_one_with_decay(
        spec in spec_strategy(Gen { decay: true, ..STRONG })
    ) {
        let w = Writing::default();
        let text = yaml(&spec, &w);
        let m = parse(&text);
        let s = run(&m, 0).unwrap();
        let bound = norm_bound(&m, &s);
        let sum: f64 = s.final_populations.iter().sum();
        prop_assert!((sum + s.lost - 1.0).abs() <= bound,
            "sum {} + lost {} = {} (bound {:e})\n{}", sum, s.lost, sum + s.lost, bound, text);
        prop_assert!((0.0..=1.0).contains(&s.lost));
        if m.levels().iter().all(|l| l.gamma == 0.0) {
            prop_assert_eq!(s.lost, 0.0);
        }
        // The samples (the evolve CSV's lost and scattered_photons) carry
        // the same loss: non-decreasing, ending in the window-end loss, and
        // on the amplitude equation every loss is one emission.
        let sampled = run(&m, 7).unwrap();
        prop_assert_eq!(sampled.sample_lost.len(), 7);
        prop_assert_eq!(&sampled.sample_lost, &sampled.sample_emitted);
        for w in sampled.sample_lost.windows(2) {
            prop_assert!(w[1] >= w[0] - 1e-12, "{:?}\n{}", sampled.sample_lost, text);
        }
        let last = sampled.sample_lost[6];
        prop_assert!((last - sampled.window_end_lost).abs() <= 1e-15, "{} {}", last, sampled.window_end_lost);
        prop_assert!((last - s.lost).abs() <= bound, "{} {}\n{}", last, s.lost, text);
        tolerance_proportionality(&spec, &w, &m, &s)?;
    }
}

proptest! {
    #![proptest_config(config(64))]

    /// The order of levels, couplings and fields in the file, and the order
    /// of the two ids of `between`/`to`/`on`, describe the same physics:
    /// populations agree to 1e-8 (the frame the solver picks may differ).
    #[test]
    fn file_order_does_not_matter(
        spec in spec_strategy(Gen { decay: true, ..STRONG }),
        keys in prop::collection::vec(any::<u64>(), 24),
        flip in any::<bool>(),
    ) {
        let a_text = yaml(&spec, &Writing::default());
        let w = Writing {
            level_order: Some(permutation(&keys[0..8], spec.levels.len())),
            coupling_order: Some(permutation(&keys[8..18], spec.couplings.len())),
            field_order: Some(permutation(&keys[18..24], spec.fields.len())),
            flip,
            ..Writing::default()
        };
        let b_text = yaml(&spec, &w);
        let (ma, mb) = (parse(&a_text), parse(&b_text));
        let (sa, sb) = (run(&ma, 0).unwrap(), run(&mb, 0).unwrap());
        assert_same((&ma, &sa), (&mb, &sb), INVARIANCE_TOL,
            &format!("reordered\n{a_text}\n---\n{b_text}"))?;
    }

    /// A common energy offset is a global phase: populations agree to 1e-8.
    /// Source: any quantum mechanics text (H -> H + E0 multiplies the state
    /// by exp(-i E0 t / hbar)).
    #[test]
    fn common_energy_offset_does_not_matter(
        spec in spec_strategy(Gen { decay: true, ..STRONG }),
        offset in -500_000_000i64..500_000_000i64,
    ) {
        let a_text = yaml(&spec, &Writing::default());
        let b_text = yaml(&spec, &Writing { energy_offset_mhz: offset as f64, ..Writing::default() });
        let (ma, mb) = (parse(&a_text), parse(&b_text));
        let (sa, sb) = (run(&ma, 0).unwrap(), run(&mb, 0).unwrap());
        // The two models may differ by rounding only: a few ulps of the
        // largest angular frequency (otherwise the offset changed physics).
        let delta = rounding_floor(&ma, &mb);
        let ulps = 8.0 * f64::EPSILON * largest_frequency(&ma).max(largest_frequency(&mb));
        prop_assert!(delta <= ulps, "detunings differ by {:e} rad/s > {:e}", delta, ulps);
        let tol = INVARIANCE_TOL + 2.0 * delta * ma.window().duration();
        assert_same((&ma, &sa), (&mb, &sb), tol,
            &format!("offset {offset} MHz, tolerance {tol:e}\n{a_text}"))?;
    }

    /// A common time shift of every pulse (and so of the default window)
    /// changes each field's phase by omega_L T; where the drives form a
    /// forest and one level starts populated, a diagonal phase change of the
    /// basis absorbs it, so populations agree to 1e-8 (gauge freedom of the
    /// bare basis; common practice, no source).
    #[test]
    fn common_time_shift_does_not_matter(
        spec in spec_strategy(Gen { decay: true, forest: true, ..STRONG }),
        shift in -5_000.0..5_000.0f64,
    ) {
        let a_text = yaml(&spec, &Writing::default());
        let b_text = yaml(&spec, &Writing { time_shift_ns: shift, ..Writing::default() });
        let (ma, mb) = (parse(&a_text), parse(&b_text));
        let (sa, sb) = (run(&ma, 0).unwrap(), run(&mb, 0).unwrap());
        assert_same((&ma, &sa), (&mb, &sb), INVARIANCE_TOL,
            &format!("shift {shift} ns\n{a_text}"))?;
    }

    /// Rectangular pulses on a forest of drives make the frame Hamiltonian
    /// piecewise constant: the exact propagator (matrix exponentials) and the
    /// adaptive one (Dop853 at rtol 1e-10) agree to 1e-7.
    #[test]
    fn exact_and_adaptive_agree_on_rectangular_pulses(
        spec in spec_strategy(Gen { decay: true, rect_only: true, forest: true, ..STRONG }),
    ) {
        let e_text = yaml(&spec, &Writing { method: Some("exact"), ..Writing::default() });
        let a_text = yaml(&spec, &Writing { method: Some("adaptive"), ..Writing::default() });
        let (me, ma) = (parse(&e_text), parse(&a_text));
        let se = run(&me, 0).unwrap_or_else(|e| panic!("exact refused: {e}\n{e_text}"));
        let sa = run(&ma, 0).unwrap();
        prop_assert_eq!(se.method, MethodUsed::Exact);
        prop_assert_eq!(sa.method, MethodUsed::Adaptive);
        assert_same((&me, &se), (&ma, &sa), 1e-7, &format!("exact vs adaptive\n{e_text}"))?;
    }
}

/// The case the norm property found (last seed of
/// `properties.proptest-regressions`): l0 and l2 share the initial
/// population and are joined through l1 by one field, so in every frame of
/// the tree l0 turns at their energy difference (99.9 MHz) relative to l2;
/// the sech pulse's tails (to f = 1e-8) make the window 760 ns long. The
/// adaptive propagator takes 1313 steps over 76 turns of l0; on a freely
/// turning amplitude a Dop853 step multiplies by a polynomial in -i delta h
/// whose modulus is just below 1, so sum P falls by the same amount every
/// step, linearly in time, to 1 - 1.18e-9 at the default tolerances. That
/// is integration error within what the tolerances promise (`norm_bound`),
/// not a defect: it is in l0 alone, it is uniform over the window (driven or
/// not), and it falls with the tolerance (1.05e-10 at rtol 1e-11, 6.4e-12 at
/// rtol 1e-12 and atol 1e-14). The same scheme integrated independently
/// (SciPy `solve_ivp` DOP853, done for this test) in the solver's frame
/// loses 1.08e-9 over 1409 steps at rtol 1e-10; in the interaction picture
/// of the bare energies, where nothing turns freely, its norm stays 1 to
/// 1e-15 at rtol 1e-13, atol 1e-15: the check values below come from that
/// run.
#[test]
fn norm_drift_of_a_long_free_rotation_is_integration_error() {
    const SCHEME: &str = r#"
levels:
  l0: {energy: "0 MHz"}
  l1: {energy: "410123456 MHz"}
  l2: {energy: "-99.9140625 MHz"}
  l3: {energy: "410123456 MHz"}
  l4: {energy: "410123456 MHz"}
  l5: {energy: "410123456 MHz"}
  l6: {energy: "733987654 MHz"}
initial: {l0: 0.44509077065358815, l2: 0.5549092293464118}
couplings:
  - {between: [l0, l1], dipole: 0.2, fields: [f0]}
  - {between: [l1, l2], dipole: 0.2, fields: [f0]}
  - {between: [l0, l3], dipole: 0.2, fields: [f0]}
  - {between: [l2, l4], dipole: 0.2, fields: [f0]}
  - {between: [l0, l5], dipole: 0.2, fields: [f0]}
  - {between: [l3, l6], dipole: 0.2, fields: [f1]}
fields:
  f0:
    tuned: {to: [l0, l1], detuning: "37.3343880135253 MHz"}
    rabi: {on: [l0, l1], value: "2 MHz"}
    envelope: {shape: rectangular, start: "0 ns", duration: "20 ns"}
  f1:
    frequency: "323864179.6216569 MHz"
    rabi: {on: [l3, l6], value: "8.977407544271383 MHz"}
    envelope: {shape: sech, center: "73.03410999066371 ns", tau: "19.89385210594255 ns"}
"#;
    // Independent integration (see above), populations of l0..l6.
    const INDEPENDENT: [f64; 7] = [
        0.443_443_442_057_656_07,
        0.001_213_439_168_819_932_8,
        0.553_791_588_285_508_5,
        0.000_625_879_990_890_119_8,
        0.000_287_448_232_649_823_44,
        0.000_631_704_847_137_660_4,
        6.497_417_338_015_393e-6,
    ];
    let m = parse(SCHEME);
    let s = run(&m, 11).unwrap();
    assert_eq!(s.method, MethodUsed::Adaptive);
    let drift = 1.0 - s.final_populations.iter().sum::<f64>();
    // The drift exists (the old fixed 1e-9 was too tight) and stays within
    // the promise.
    assert!(
        drift > 1e-10 && drift <= norm_bound(&m, &s),
        "drift {drift:e}"
    );
    assert!((s.norm_error - drift).abs() <= 1e-15);
    // All of it is in l0, the level that turns; the others agree with the
    // independent integration far below the drift.
    let l0 = INDEPENDENT[0] - s.final_populations[0];
    assert!(
        (l0 - drift).abs() <= 0.05 * drift,
        "l0 {l0:e} vs drift {drift:e}"
    );
    for (k, (p, q)) in s
        .final_populations
        .iter()
        .zip(INDEPENDENT)
        .enumerate()
        .skip(1)
    {
        let d = (p - q).abs();
        assert!(d <= 1e-11, "l{k}: {d:e}");
    }
    // Linear in time: the same loss per unit time, driven or not (11 evenly
    // spaced samples; the pulses act near the middle of the window).
    for (i, (_, p)) in s.samples.iter().enumerate() {
        let lost_so_far = 1.0 - p.iter().sum::<f64>();
        let expected = drift * i as f64 / 10.0;
        assert!(
            (lost_so_far - expected).abs() <= 0.05 * drift,
            "sample {i}: {lost_so_far:e} vs {expected:e}"
        );
    }
    // Tighter tolerances: the drift falls with them and every population
    // converges to the independent integration.
    let tight = parse(&format!("{SCHEME}solver: {{rtol: 1e-12, atol: 1e-14}}\n"));
    let st = run(&tight, 0).unwrap();
    assert!(
        st.norm_error <= 0.01 * drift,
        "tight drift {:e}",
        st.norm_error
    );
    for (k, (p, q)) in st.final_populations.iter().zip(INDEPENDENT).enumerate() {
        let d = (p - q).abs();
        assert!(d <= 3e-11, "l{k} at rtol 1e-12: {d:e}");
    }
}

/// Measurement behind the numbers in the module docs, run by hand
/// (`cargo test --release --test regressions measure_norm_margin -- --ignored
/// --nocapture`): the norm drift of the adaptive propagator against
/// `norm_bound` over 3000 generated schemes with and without decay.
#[test]
#[ignore = "measurement, run by hand"]
fn measure_norm_margin() {
    use proptest::strategy::ValueTree;
    use proptest::test_runner::TestRunner;
    for decay in [false, true] {
        let mut runner = TestRunner::new(Config {
            rng_seed: RngSeed::Fixed(12345),
            ..Config::default()
        });
        let strat = spec_strategy(Gen { decay, ..STRONG });
        let (mut of_bound, mut largest, mut per_step) = (0.0f64, 0.0f64, 0.0f64);
        let (mut adaptive, mut above) = (0, 0);
        for _ in 0..3000 {
            let spec = strat.new_tree(&mut runner).unwrap().current();
            let m = parse(&yaml(&spec, &Writing::default()));
            let s = run(&m, 0).unwrap();
            if s.method != MethodUsed::Adaptive {
                continue;
            }
            adaptive += 1;
            let sum: f64 = s.final_populations.iter().sum::<f64>() + s.lost;
            let drift = (sum - 1.0).abs().max(s.norm_error);
            of_bound = of_bound.max(drift / norm_bound(&m, &s));
            largest = largest.max(drift);
            per_step = per_step.max(drift / (s.steps as f64 * s.rtol));
            if drift > EXACT_NORM_TOL {
                above += 1;
            }
        }
        println!(
            "decay {decay}: {adaptive} adaptive; largest drift {largest:e}; \
             drift / bound <= {of_bound:e}; drift / (steps rtol) <= {per_step:e}; \
             above 1e-9: {above}"
        );
    }
}

/// Bound on the Dyson remainder beyond order `order`: with
/// A = integral of ||V(t)|| dt, the n-th Dyson term is at most A^n / n!, so
/// the amplitude neglected by an estimate of order `order` is at most
/// e^A - sum_{n <= order} A^n / n!. Source: the Dyson series and the bound
/// ||T exp(-i int V)|| terms by (int ||V||)^n / n! (e.g. Sakurai, Modern
/// Quantum Mechanics, sec. 5.7, time-dependent perturbation theory; the
/// norm bound is the standard estimate of the series, from memory).
fn dyson_remainder(a: f64, order: i32) -> f64 {
    let mut term = 1.0;
    let mut partial = 1.0;
    for n in 1..=order {
        term *= a / n as f64;
        partial += term;
    }
    a.exp() - partial
}

/// A = sum over drives of |Omega| / 2 x integral of f: a bound on
/// integral ||V(t)|| dt for RWA drives (each adds a Hermitian pair of norm
/// |Omega| f / 2).
fn drive_area_bound(m: &Model) -> f64 {
    m.drives()
        .iter()
        .map(|d| 0.5 * d.rabi.abs() * m.fields()[d.field].envelope.area())
        .sum()
}

proptest! {
    #![proptest_config(config(128))]

    /// Weak drives: every population stays below 1e-4, and the estimate of
    /// each level (first order, or second where first order vanishes)
    /// agrees with the exact propagation within
    ///   |P_exact - P_est| <= 2 sqrt(P_est) R + R^2 + 1e-6 P_est + 1e-15,
    /// R the Dyson remainder bound beyond the estimate's order (see
    /// `dyson_remainder`); the last two terms are the numerical tolerances of
    /// the propagator (rtol 1e-10) and the estimator's quadrature (1e-10
    /// relative, amplitude 1e-13). With A <= 1e-2, R <= 5e-5 (first order):
    /// a resonant level at P ~ 1e-4 must agree to about 1e-2 relative.
    /// No decay: the estimate applies no decay weights.
    #[test]
    fn estimate_agrees_with_exact_when_weak(
        spec in spec_strategy(Gen { detuning_mhz: (0.0, 300.0), ..STRONG }),
        target_area in 1e-4..1e-2f64,
    ) {
        // Scale every Rabi frequency so that A = target_area.
        let probe = parse(&yaml(&spec, &Writing::default()));
        let a1 = drive_area_bound(&probe);
        prop_assume!(a1 > 0.0);
        let text = yaml(&spec, &Writing {
            rabi_scale: Some(target_area / a1),
            ..Writing::default()
        });
        let m = parse(&text);
        let a = drive_area_bound(&m);
        prop_assert!((a / target_area - 1.0).abs() < 1e-9);
        let s = run(&m, 0).unwrap();
        let est = estimate::estimate(&m).unwrap();
        for (k, l) in m.levels().iter().enumerate() {
            if m.initial()[k] > 0.0 {
                continue;
            }
            // Precondition of the property, true by construction (A <= 1e-2).
            prop_assert!(s.peak_populations[k] < 1e-4,
                "peak {} of {}", s.peak_populations[k], l.id);
            let le = &est.levels[k];
            let order = match le.order {
                estimate::Order::Second => 2,
                _ => 1,
            };
            let p_est = le.population().unwrap();
            let p = s.final_populations[k];
            let r = dyson_remainder(a, order);
            let bound = 2.0 * p_est.sqrt() * r + r * r + 1e-6 * p_est + 1e-15;
            prop_assert!((p - p_est).abs() <= bound,
                "{}: exact {:e}, estimate {:e} (order {}), diff {:e} > bound {:e}; A = {:e}\n{}",
                l.id, p, p_est, order, (p - p_est).abs(), bound, a, text);
        }
    }
}

/// The generator is not degenerate: strong schemes move population, some
/// have loops and several fields, the estimate property meets resonant and
/// far-detuned levels. Checked over a fixed sample of generated schemes.
#[test]
fn generated_schemes_cover_the_ground() {
    use proptest::strategy::ValueTree;
    use proptest::test_runner::TestRunner;
    let mut runner = TestRunner::deterministic();
    let strat = spec_strategy(Gen {
        decay: true,
        ..STRONG
    });
    let (mut moved, mut loops, mut two_fields, mut adaptive, mut exact) = (0, 0, 0, 0, 0);
    let mut sizes = std::collections::BTreeSet::new();
    for _ in 0..40 {
        let spec = strat.new_tree(&mut runner).unwrap().current();
        sizes.insert(spec.levels.len());
        let m = parse(&yaml(&spec, &Writing::default()));
        let s = run(&m, 0).unwrap();
        if s.final_populations[0] < 0.9 {
            moved += 1;
        }
        if spec.couplings.len() >= spec.levels.len() {
            loops += 1;
        }
        if spec.fields.len() > 2
            || (spec.fields.len() == 2
                && spec.pair(spec.fields[0].on) == spec.pair(spec.fields[1].on))
        {
            two_fields += 1;
        }
        match s.method {
            MethodUsed::Adaptive => adaptive += 1,
            MethodUsed::Exact => exact += 1,
        }
    }
    assert!(moved >= 10, "only {moved} of 40 schemes move population");
    assert!(loops >= 3, "only {loops} of 40 schemes have a loop");
    assert!(
        two_fields >= 5,
        "only {two_fields} of 40 schemes have two fields on one manifold pair"
    );
    assert!(
        adaptive >= 10 && exact >= 1,
        "adaptive {adaptive}, exact {exact}"
    );
    assert!(sizes.len() >= 5, "level counts {sizes:?}");
}
