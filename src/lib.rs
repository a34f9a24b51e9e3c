//! levelplan: plan laser excitation schemes of atoms, ions and molecules.
//!
//! Data flows one way: scheme text ([`scheme`]) -> validated unit-free
//! [`model::Model`] -> Hamiltonian and rotating frame ([`hamiltonian`]) ->
//! exact propagation ([`solve`]) beside the perturbative estimate
//! ([`estimate`]) -> [`report`] (plain data) -> renderers ([`render`]).
//! No stage reaches back to an earlier one.
//!
//! The front door is [`pipeline`]: [`scheme::parse`] a text, then
//! [`pipeline::vet`], [`pipeline::evolve`], [`pipeline::inspect`], or a
//! [`pipeline::study::Study`] for scans and `tune`. The library has no
//! command-line parsing and does no terminal IO; the `levelplan` binary
//! (cargo feature `cli`, on by default) does.

pub mod atom;
pub mod error;
pub mod estimate;
pub mod hamiltonian;
pub mod model;
pub mod pipeline;
pub mod plot;
pub mod render;
pub mod report;
pub mod scan;
pub mod scheme;
pub mod solve;
pub mod tune;
pub mod units;
pub mod yaml;

pub use error::Error;
pub use model::Model;
pub use pipeline::{evolve, inspect, vet, Evolution, VetOptions};
pub use scheme::parse;
