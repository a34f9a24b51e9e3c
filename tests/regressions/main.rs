//! Properties over generated schemes and one test per defect they, the
//! fuzzer or the limit measurements found, one test binary. The proptest
//! regressions file `properties.proptest-regressions` sits beside
//! `properties.rs` (its `config` says so). Run one module with
//! `cargo test --release --test regressions properties::`.

mod properties;
mod regressions;
