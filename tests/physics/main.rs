//! The physics checks, one test binary: constants and conversions, the
//! propagators against closed forms, the estimator, the vet roles, the demo
//! schemes, and the check that `docs/validation.md` names every physics test
//! of this folder. Run one module with
//! `cargo test --release --test physics propagation_rabi::`.

mod estimate_support;
mod fixture_support;
mod solve_support;

mod decay_channels;
mod demo_schemes;
mod estimate;
mod estimate_rates;
mod estimate_remedy;
mod estimate_scatter_remedy;
mod manifold_hand_typed;
mod manifold_reference;
mod manifold_scans;
mod open_reference;
mod propagation_budget;
mod propagation_dop853;
mod propagation_invariance;
mod propagation_pulses;
mod propagation_rabi;
mod units_constants;
mod validation_table;
mod vet_physics;
