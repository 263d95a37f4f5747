//! The `biasfit` command: parses the command line and hands over to [`cli::run`].

mod cli;

use std::process::ExitCode;

fn main() -> ExitCode {
    cli::main()
}
