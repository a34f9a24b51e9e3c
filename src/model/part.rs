//! Which part of a model a builder problem is in.
//!
//! Owns: [`Part`] (indices into the builder's lists) and how it reads in a
//! message. Must not: check anything (the builder and `open.rs` do).

/// Which part of a model a problem is in (indices into the builder's lists).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Part {
    Level(usize),
    Coupling(usize),
    Field(usize),
    /// The envelope of a field.
    Envelope(usize),
    Drive(usize),
    Initial,
    Target(usize),
    Tolerance,
    Window,
    Solver,
    /// The readout time.
    Readout,
    /// The linewidth of a field.
    Linewidth(usize),
    /// A coherent decay channel.
    Jump(usize),
}

impl std::fmt::Display for Part {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Part::Level(i) => write!(f, "level {i}"),
            Part::Coupling(i) => write!(f, "coupling {i}"),
            Part::Field(i) => write!(f, "field {i}"),
            Part::Envelope(i) => write!(f, "the envelope of field {i}"),
            Part::Drive(i) => write!(f, "drive {i}"),
            Part::Initial => write!(f, "the initial populations"),
            Part::Target(i) => write!(f, "target {i}"),
            Part::Tolerance => write!(f, "the tolerance"),
            Part::Window => write!(f, "the window"),
            Part::Solver => write!(f, "the solver settings"),
            Part::Readout => write!(f, "the readout"),
            Part::Linewidth(i) => write!(f, "the linewidth of field {i}"),
            Part::Jump(i) => write!(f, "decay channel {i}"),
        }
    }
}
