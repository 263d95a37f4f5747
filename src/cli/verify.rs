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
    /// The bench readings from ground, volts: VB=2.05,VE=1.41,VC=6.3 (any of the three; PNP: negative or
    /// magnitudes); for a circuit, by its node names: c1=4.4,tail=-0.65
    #[arg(long, value_name = "READINGS", required = true)]
    pub measured: String,
    /// The stage or circuit that was built (its name, or its number from 1); needed when the file has
    /// several
    #[arg(long, visible_alias = "circuit", value_name = "NAME")]
    pub stage: Option<String>,
    #[command(flatten)]
    pub parts: PartArgs,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

/// Runs `biasfit verify`: exit 0 for a good or acceptable build, 1 for a fault.
pub fn run(args: VerifyArgs, out: &mut Out) -> Result<(), Failure> {
    let file = biasfit::design_file::load(&args.file).map_err(super::input)?;
    let circuit = super::check::chosen_circuit(
        &file,
        args.stage.as_deref(),
        "say which was built with --stage",
    )?;
    if let Some(c) = circuit {
        return verify_circuit(&args, c, out);
    }
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

/// `verify` on a circuit of the user's own: readings by node name, from ground.
fn verify_circuit(
    args: &VerifyArgs,
    c: &biasfit::circuit::Circuit,
    out: &mut Out,
) -> Result<(), Failure> {
    use biasfit::bench::circuit::{parse_readings, verify_circuit};
    use biasfit::report::verify::{render_circuit, CircuitVerifyFile, CircuitVerifyReport};
    let readings = parse_readings(c, &args.measured)
        .map_err(|e| Failure::Input(format!("--measured: {e}")))?;
    let (tol, watts) = args.parts.resolve()?;
    let c = &c.with_assumed_parts(tol, watts);
    let nets = super::check::circuit_networks(c, &args.slots, tol, watts)?;
    let progress = super::output::Progress::start("simulating faults", None);
    let v = verify_circuit(c, &nets, &readings)
        .map_err(|e| super::check::unbuildable(&args.file, &e))?;
    drop(progress);
    let report = CircuitVerifyReport::new(c, &v);
    let built = c
        .slots()
        .iter()
        .zip(&nets)
        .map(|(&i, n)| format!("{}={}", c.parts[i].name, n.notation()))
        .collect::<Vec<_>>()
        .join(", ");
    if args.json {
        out.json(&CircuitVerifyFile {
            circuits: vec![report.clone()],
        })?;
    } else {
        out.text(&render_circuit(&report, &built))?;
    }
    if report.is_fault() {
        Err(Failure::ChecksFailed)
    } else {
        Ok(())
    }
}
