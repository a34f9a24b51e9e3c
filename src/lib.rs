//! levelplan: plan laser excitation schemes of atoms, ions and molecules.
//!
//! Data flows one way: scheme file ([`scheme`]) -> validated unit-free
//! [`model::Model`] -> Hamiltonian and rotating frame ([`hamiltonian`]) ->
//! exact propagation ([`solve`]) beside the perturbative estimate
//! ([`estimate`]) -> [`report`] (plain data) -> renderers ([`render`]).
//! No stage reaches back to an earlier one.

pub mod app;
pub mod cli;
pub mod error;
pub mod estimate;
pub mod hamiltonian;
pub mod model;
pub mod output;
pub mod plot;
pub mod render;
pub mod report;
pub mod scan;
pub mod scheme;
pub mod solve;
pub mod tune;
pub mod units;
pub mod yaml;
