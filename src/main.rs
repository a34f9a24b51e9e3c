//! The `levelplan` binary: parse the command line, run it, print an error
//! once, and turn the outcome into the exit status.
//!
//! A closed stdout or stderr (`levelplan evolve ... | head`) ends the run
//! quietly: the reader has what it wanted.

mod cli;

use levelplan::error::{EXIT_BAD_INPUT, EXIT_OK};
use std::io::Write;
use std::process::ExitCode;

fn status(code: i32) -> ExitCode {
    ExitCode::from(u8::try_from(code).unwrap_or(1))
}

fn main() -> ExitCode {
    let cli = match cli::args::parse() {
        Ok(c) => c,
        Err(e) => {
            // Help and version go to stdout, usage errors to stderr; either
            // may be closed.
            let _ = e.print();
            return status(if e.use_stderr() {
                EXIT_BAD_INPUT
            } else {
                EXIT_OK
            });
        }
    };
    match cli::run(cli) {
        Ok(code) => status(code),
        Err(e) if e.is_broken_pipe() => status(EXIT_OK),
        Err(e) => {
            // stderr may be closed too (`2>&1 | head`): never panic over it.
            let _ = writeln!(std::io::stderr(), "levelplan: error: {}", e.shown());
            status(e.exit_code())
        }
    }
}
