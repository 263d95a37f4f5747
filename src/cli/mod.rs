//! The command line: clap arguments, then args → library → renderers → stdout or files, then the exit code.
//!
//! Exit codes: 0 done; 1 done, but a check failed or a build fault was found; 2 bad input (flags, files,
//! values); 3 no stocked design meets the hard constraints; 4 an output could not be written.

mod check;
mod design;
mod drawings;
mod fix;
mod flags;
mod ideal;
mod new;
mod order;
mod output;
mod spread;
mod stock;
mod verify;

use clap::{Parser, Subcommand};
use std::process::ExitCode;

pub use output::Out;

/// How to give `design` and `order` more time, for the reports of a search the time limit stopped.
const MORE_TIME: &str = "allow more --time-limit";

/// Bias a bipolar transistor stage from the resistors you actually have.
#[derive(Debug, Parser)]
#[command(name = "biasfit", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Fill every slot of every stage from stock so the operating points land closest to their targets
    Design(design::DesignArgs),
    /// The cheapest purchase that makes a design buildable from stock (or the best design a budget buys)
    Order(order::OrderArgs),
    /// The best one-, two- or three-resistor networks from stock for one value
    Fix(fix::FixArgs),
    /// Evaluate a stage or circuit built from given networks: the exact operating point and every check
    Check(check::CheckArgs),
    /// Print the continuous design from a design file's rule, with the nearest E12, E24 and E96 values
    Ideal(ideal::IdealArgs),
    /// What tolerance, device ranges and temperature do to a built stage or circuit: worst case, Monte
    /// Carlo, sensitivities
    Spread(spread::SpreadArgs),
    /// Compare bench readings (VB, VE, VC; a circuit's by node name) with the design and rank the build
    /// faults that explain them
    Verify(verify::VerifyArgs),
    /// List the starter design files, or write one to begin a design from
    New(new::NewArgs),
    /// Validate and summarise a stock file (or withdraw and add parts: `stock withdraw`, `stock add`)
    Stock(stock::StockArgs),
}

/// Why a command did not finish normally; each kind has its own exit code.
#[derive(Debug)]
pub enum Failure {
    /// The input (a flag, a file, a value) was refused.
    Input(String),
    /// No design meets the hard constraints.
    Infeasible(String),
    /// An output could not be written.
    Io(String),
    /// The time limit passed before any design was found (a design found in time is reported as the best
    /// found, exit 0).
    TimedOut(String),
    /// The command ran, but a check failed; the report already says which.
    ChecksFailed,
}

impl Failure {
    fn code(&self) -> u8 {
        match self {
            Failure::ChecksFailed => 1,
            Failure::Input(_) => 2,
            Failure::Infeasible(_) => 3,
            Failure::Io(_) => 4,
            Failure::TimedOut(_) => 5,
        }
    }
}

/// Turns any displayable library error into bad-input failure.
pub fn input<E: std::fmt::Display>(e: E) -> Failure {
    Failure::Input(e.to_string())
}

/// Parses the command line, runs the command, and maps the outcome to an exit code.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            use clap::error::ErrorKind;
            // Help and version go to stdout as clap prints them; so does the help shown for a bare
            // `biasfit`. Every other refusal is bad input: one line, exit 2.
            if !e.use_stderr() || e.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand {
                let _ = e.print();
                return ExitCode::from(if e.use_stderr() { 2 } else { 0 });
            }
            let args: Vec<String> = std::env::args().skip(1).collect();
            let command = flags::command_path(&<Cli as clap::CommandFactory>::command(), &args);
            eprintln!(
                "{}",
                output::one_line(&flags::one_line(&e.render().to_string(), &command))
            );
            return ExitCode::from(2);
        }
    };
    let mut out = Out::stdout();
    let result = match cli.command {
        Command::Stock(args) => stock::run(args, &mut out),
        Command::Fix(args) => fix::run(args, &mut out),
        Command::Ideal(args) => ideal::run(args, &mut out),
        Command::Check(args) => check::run(args, &mut out),
        Command::Spread(args) => spread::run(args, &mut out),
        Command::Design(args) => design::run(args, &mut out),
        Command::Order(args) => order::run(args, &mut out),
        Command::Verify(args) => verify::run(args, &mut out),
        Command::New(args) => new::run(args, &mut out),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure::Io(msg)) if out.pipe_closed() => {
            let _ = msg;
            ExitCode::SUCCESS
        }
        Err(f) => {
            match &f {
                Failure::Input(m)
                | Failure::Infeasible(m)
                | Failure::Io(m)
                | Failure::TimedOut(m) => {
                    // One line, whatever a library or system message holds, and no control character
                    // from a file reaches the terminal.
                    eprintln!("error: {}", output::one_line(m))
                }
                Failure::ChecksFailed => {}
            }
            ExitCode::from(f.code())
        }
    }
}
