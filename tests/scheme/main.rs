//! The scheme reader, one test binary: every bad input of the format with
//! its located error, the YAML reader's budgets and deliberate readings.
//! Run one module with `cargo test --release --test scheme scheme_errors::`.

mod manifold_errors;
mod manifold_origin;
mod scheme_errors;
mod scheme_level_names;
mod scheme_robustness;
