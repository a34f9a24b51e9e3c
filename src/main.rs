//! The `levelplan` binary: parse the command line, run it, print an error
//! once, and turn the outcome into the exit status.

use clap::Parser;
use levelplan::cli::{run, Cli};
use levelplan::error::EXIT_BAD_INPUT;

fn main() {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let _ = e.print();
            std::process::exit(if e.use_stderr() { EXIT_BAD_INPUT } else { 0 });
        }
    };
    match run(cli) {
        Ok(code) => std::process::exit(code),
        Err(e) => {
            eprintln!("levelplan: error: {e}");
            std::process::exit(e.exit_code());
        }
    }
}
