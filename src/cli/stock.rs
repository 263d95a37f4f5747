//! `biasfit stock FILE`: validate a stock file and summarise it.

use super::output::warn_all;
use super::{input, Failure, Out};
use biasfit::notation::{parse_tolerance, parse_watts};
use biasfit::stock::{self, Defaults, Summary};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `biasfit stock`.
#[derive(Debug, Args)]
pub struct StockArgs {
    /// The stock CSV file
    pub file: PathBuf,
    #[command(flatten)]
    pub defaults: DefaultArgs,
    /// Print the summary as JSON
    #[arg(long)]
    pub json: bool,
}

/// What to assume for stock rows that leave tolerance or power blank.
#[derive(Debug, Args, Clone)]
pub struct DefaultArgs {
    /// Tolerance for stock rows without one
    #[arg(long, value_name = "TOL", default_value = "5%")]
    pub default_tolerance: String,
    /// Power rating for stock rows without one
    #[arg(long, value_name = "WATTS", default_value = "0.25W")]
    pub default_power: String,
}

impl DefaultArgs {
    /// The validated defaults.
    pub fn resolve(&self) -> Result<Defaults, Failure> {
        Ok(Defaults {
            tolerance: parse_tolerance(&self.default_tolerance)
                .map_err(|e| Failure::Input(format!("--default-tolerance: {e}")))?,
            power: parse_watts(&self.default_power)
                .map_err(|e| Failure::Input(format!("--default-power: {e}")))?,
        })
    }
}

/// Loads a stock file and prints its warnings.
pub fn load(file: &std::path::Path, defaults: &DefaultArgs) -> Result<stock::Stock, Failure> {
    let s = stock::load(file, defaults.resolve()?).map_err(input)?;
    warn_all(&s.warnings);
    Ok(s)
}

/// Runs `biasfit stock`.
pub fn run(args: StockArgs, out: &mut Out) -> Result<(), Failure> {
    let s = load(&args.file, &args.defaults)?;
    let summary = Summary::of(&s);
    if args.json {
        out.json(&summary)
    } else {
        out.text(&summary.render())
    }
}
