//! The command line: arguments as typed ([`args`]), their help ([`help`]),
//! one function per command, the terminal and files ([`io`]).
//!
//! Owns: everything that knows about processes, terminals and files. Must
//! not: compute physics or format numbers; every command is a few calls
//! into the library.

pub mod args;
mod bounds;
mod commands;
mod guard;
mod help;
mod io;
mod lock;
mod output;
mod partial;
mod scan;

use args::{Cli, Command};
use levelplan::error::Error;

/// Run a parsed command line; the result is the exit status.
pub fn run(cli: Cli) -> Result<i32, Error> {
    match cli.command {
        Command::Inspect(a) => commands::inspect(a),
        Command::Vet(a) => commands::vet(a),
        Command::Evolve(a) => commands::evolve(a),
        Command::Scan(a) => scan::scan(a),
        Command::Tune(a) => commands::tune(a),
        Command::Merge(a) => commands::merge(a),
    }
}
