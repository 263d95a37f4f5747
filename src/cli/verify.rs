//! `biasfit verify FILE --use ... --measured VB=2.05,VE=1.41,VC=6.3`: compare bench readings with the
//! design, judge the build, estimate beta and rank the build faults that would explain a bad reading.

use super::check::networks;
use super::ideal::{stages, PartArgs};
use super::{Failure, Out};
use biasfit::bench::{verify, Measured};
use biasfit::report::verify::{heading, render, VerifyReport};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `biasfit verify`.
#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// The design file (TOML)
    pub file: PathBuf,
    /// The networks as built, as SLOT=NETWORK pairs joined by commas: R1=15k,R2=3k3,RC=2k2,RE=(220+47)|1k
    #[arg(long = "use", value_name = "SLOTS", required = true)]
    pub slots: Vec<String>,
    /// The bench readings from ground, volts: VB=2.05,VE=1.41,VC=6.3 (any of the three; PNP: negative or magnitudes)
    #[arg(long, value_name = "READINGS", required = true)]
    pub measured: String,
    /// The stage that was built (its name, or its number from 1); needed when the file has several
    #[arg(long, value_name = "NAME")]
    pub stage: Option<String>,
    #[command(flatten)]
    pub parts: PartArgs,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

/// Runs `biasfit verify`: exit 0 for a good or acceptable build, 1 for a fault.
pub fn run(args: VerifyArgs, out: &mut Out) -> Result<(), Failure> {
    let readings = Measured::parse(&args.measured).map_err(|e| Failure::Input(e.to_string()))?;
    let (tol, watts) = args.parts.resolve()?;
    let (design, picked) = stages(&args.file, args.stage.as_deref())?;
    super::ideal::warn_ideal_failures(&design, &picked);
    if picked.len() > 1 {
        let names: Vec<String> = design
            .stages
            .iter()
            .map(|s| format!("\"{}\"", s.name))
            .collect();
        return Err(Failure::Input(format!(
            "{} has {} stages ({}); say which was built with --stage",
            design.file,
            names.len(),
            names.join(", ")
        )));
    }
    let s = &design.stages[picked[0]];
    let nets = networks(s, &args.slots, tol, watts)?;
    let v = verify(s, &nets, &readings);
    let report = VerifyReport::new(s, &nets, &v);
    if args.json {
        out.json(&report)?;
    } else {
        out.text(&render(&report, &heading(s, &nets)))?;
    }
    if report.is_fault() {
        Err(Failure::ChecksFailed)
    } else {
        Ok(())
    }
}
