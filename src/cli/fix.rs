//! `biasfit fix VALUE --stock FILE`: the best one-, two- or three-resistor networks the stock can build for
//! one off-value slot, with the nearest single E24 and E96 values beside them and an optional power check.

use super::flags::whole;
use super::stock::{load, DefaultArgs};
use super::{Failure, Out};
use biasfit::fix::{FixReport, Load, Request};
use biasfit::notation::{engineering, parse_amps, parse_ohms, parse_power, parse_volts};
use biasfit::units::{Amps, Volts};
use clap::Args;
use std::path::PathBuf;

/// The most networks `--top` may ask for: far more than anyone reads, and a bound on the search's memory.
const MAX_TOP: usize = 1000;

/// Arguments of `biasfit fix`.
#[derive(Debug, Args)]
pub struct FixArgs {
    /// The resistance the slot should have (14k6, 14.6k, 14600)
    pub value: String,
    /// The stock CSV file to build from
    #[arg(long, value_name = "FILE")]
    pub stock: PathBuf,
    /// The most resistors per network: 1, 2 (series and parallel pairs) or 3 (also triples)
    #[arg(long, value_name = "N", default_value_t = 2, allow_negative_numbers = true,
          value_parser = whole::<u8>(1, 3, "the most resistors per network"))]
    pub parts: u8,
    /// How many networks to list, best first
    #[arg(long, value_name = "K", default_value_t = 5, allow_negative_numbers = true,
          value_parser = whole::<usize>(1, MAX_TOP as u64, "a number of networks"))]
    pub top: usize,
    /// Check power: this much is dissipated in the whole network (0.3W, 250mW)
    #[arg(long, value_name = "P", conflicts_with_all = ["volts", "amps"], allow_negative_numbers = true)]
    pub watts: Option<String>,
    /// Check power: this voltage is across the whole network (12V)
    #[arg(
        long,
        value_name = "V",
        conflicts_with = "amps",
        allow_negative_numbers = true
    )]
    pub volts: Option<String>,
    /// Check power: this current flows through the whole network (2mA)
    #[arg(long, value_name = "I", allow_negative_numbers = true)]
    pub amps: Option<String>,
    /// The share of its rating each part may dissipate in the power check (0.5 or 50%)
    #[arg(
        long,
        value_name = "FRACTION",
        default_value = "50%",
        allow_hyphen_values = true
    )]
    pub derate: String,
    #[command(flatten)]
    pub defaults: DefaultArgs,
    /// Print the networks as JSON
    #[arg(long)]
    pub json: bool,
}

/// Reads `--derate`: a fraction above 0 and at most 1, written as 0.5 or 50%.
fn parse_derate(text: &str) -> Result<f64, Failure> {
    let t = text.trim();
    let value = match t.strip_suffix('%') {
        Some(p) => p.trim_end().parse::<f64>().map(|p| p / 100.0),
        None => t.parse::<f64>(),
    };
    match value {
        Ok(v) if v > 0.0 && v <= 1.0 => Ok(v),
        _ => Err(Failure::Input(format!(
            "--derate: \"{text}\" is not a share of a rating; expected a fraction above 0 and at most 1, such as 0.5 or 50%"
        ))),
    }
}

impl FixArgs {
    /// The validated request.
    fn request(&self) -> Result<Request, Failure> {
        let target = parse_ohms(&self.value).map_err(|e| Failure::Input(format!("VALUE: {e}")))?;
        // The upper bounds are far past any bias network and keep a typo from printing 1e300 W.
        let positive = |flag: &str, x: f64, what: &str, most: f64, unit: &str| {
            if x > 0.0 && x <= most {
                Ok(())
            } else {
                Err(Failure::Input(format!(
                    "{flag}: a {what} of {} cannot be checked; expected a value above zero and at most {}",
                    engineering(x, unit),
                    engineering(most, unit)
                )))
            }
        };
        let load = if let Some(w) = &self.watts {
            let p = parse_power(w).map_err(|e| Failure::Input(format!("--watts: {e}")))?;
            positive("--watts", p.0, "power", 1e4, "W")?;
            Some(Load::Watts(p))
        } else if let Some(v) = &self.volts {
            let Volts(x) = parse_volts(v).map_err(|e| Failure::Input(format!("--volts: {e}")))?;
            positive("--volts", x, "voltage", 1e4, "V")?;
            Some(Load::Volts(Volts(x)))
        } else if let Some(a) = &self.amps {
            let Amps(x) = parse_amps(a).map_err(|e| Failure::Input(format!("--amps: {e}")))?;
            positive("--amps", x, "current", 1e3, "A")?;
            Some(Load::Amps(Amps(x)))
        } else {
            None
        };
        Ok(Request {
            target,
            max_parts: self.parts as usize,
            top: self.top,
            load,
            derate: parse_derate(&self.derate)?,
        })
    }
}

/// Runs `biasfit fix`.
pub fn run(args: FixArgs, out: &mut Out) -> Result<(), Failure> {
    let request = args.request()?;
    let stock = load(&args.stock, &args.defaults)?;
    if !stock.parts.iter().any(|p| p.qty > 0) {
        return Err(Failure::Infeasible(format!(
            "{}: no part has any pieces on hand, so no network can be built",
            stock.file
        )));
    }
    let report = FixReport::build(&stock, &request);
    if args.json {
        out.json(&report)?;
    } else {
        out.text(&biasfit::report::fix::render(&report, out.colour()))?;
    }
    if report.power_failed() {
        return Err(Failure::ChecksFailed);
    }
    Ok(())
}
