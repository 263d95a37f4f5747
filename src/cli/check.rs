//! `biasfit check FILE --use R1=15k,R2=3k3,...`: the exact operating point and every check of a stage built
//! from the given networks.

use super::drawings::DrawingArgs;
use super::ideal::{stages, PartArgs};
use super::{Failure, Out};
use biasfit::network::parse_network;
use biasfit::report::html::{pick_list, SheetStage};
use biasfit::report::{table, Report, StageReport};
use biasfit::stage::{Slot, SlotNetworks, Stage};
use biasfit::units::{Tolerance, Watts};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `biasfit check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The design file (TOML)
    pub file: PathBuf,
    /// The networks, as SLOT=NETWORK pairs joined by commas: R1=15k,R2=3k3,RC=2k2,RE=(220+47)|1k
    #[arg(long = "use", value_name = "SLOTS", required = true)]
    pub slots: Vec<String>,
    /// The stage to check (its name, or its number from 1); needed when the file has several
    #[arg(long, value_name = "NAME")]
    pub stage: Option<String>,
    #[command(flatten)]
    pub parts: PartArgs,
    #[command(flatten)]
    pub drawings: DrawingArgs,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

/// The slot of one `SLOT=NETWORK` item of `flag`, refusing a slot name that is not one and a network that
/// holds another '=' (pairs run together with a space or a semicolon instead of a comma).
pub fn slot_name(flag: &str, item: &str, name: &str, value: &str) -> Result<Slot, Failure> {
    if name.trim().is_empty() {
        return Err(Failure::Input(format!(
            "{flag}: \"{item}\" has no slot name before '='; expected pairs such as R1=15k,RE=(220+47)|1k"
        )));
    }
    let slot: Slot = name
        .trim()
        .parse()
        .map_err(|e| Failure::Input(format!("{flag}: {e}")))?;
    if value.contains('=') {
        return Err(Failure::Input(format!(
            "{flag}: \"{item}\" holds more than one '='; separate SLOT=NETWORK pairs with commas, as in R1=15k,R2=3k3"
        )));
    }
    Ok(slot)
}

/// Reads `--use` values into networks for a stage: every slot it has, nothing it lacks, none twice.
pub fn networks(
    s: &Stage,
    given: &[String],
    tol: Tolerance,
    watts: Watts,
) -> Result<SlotNetworks, Failure> {
    let expected = s
        .slots()
        .iter()
        .map(|x| x.name())
        .collect::<Vec<_>>()
        .join(", ");
    let mut nets = SlotNetworks::new();
    let mut seen = Vec::new();
    for item in given.iter().flat_map(|g| g.split(',')) {
        let item = item.trim();
        if item.is_empty() {
            continue;
        }
        let (name, value) = item.split_once('=').ok_or_else(|| {
            Failure::Input(format!(
                "--use: \"{item}\" is not SLOT=NETWORK; expected pairs such as R1=15k,RE=(220+47)|1k"
            ))
        })?;
        let slot = slot_name("--use", item, name, value)?;
        if !s.has_slot(slot) {
            return Err(Failure::Input(format!(
                "--use: stage \"{}\" ({}) has no {slot}; its slots are {expected}",
                s.name, s.topology
            )));
        }
        if seen.contains(&slot) {
            return Err(Failure::Input(format!(
                "--use: {slot} is given twice; give each slot once"
            )));
        }
        seen.push(slot);
        let net = parse_network(value, tol, watts)
            .map_err(|e| Failure::Input(format!("--use {slot}: {e}")))?;
        nets.set(slot, net);
    }
    let missing: Vec<&str> = s
        .slots()
        .into_iter()
        .filter(|x| !seen.contains(x))
        .map(|x| x.name())
        .collect();
    if !missing.is_empty() {
        return Err(Failure::Input(format!(
            "--use: no value for {}; stage \"{}\" needs {expected}",
            missing.join(", "),
            s.name
        )));
    }
    Ok(nets)
}

/// Runs `biasfit check`.
pub fn run(args: CheckArgs, out: &mut Out) -> Result<(), Failure> {
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
            "{} has {} stages ({}); pick the one to check with --stage",
            design.file,
            names.len(),
            names.join(", ")
        )));
    }
    let s = &design.stages[picked[0]];
    let nets = networks(s, &args.slots, tol, watts)?;
    let report = Report::new(vec![StageReport::new(s, &nets)]);
    if args.drawings.wanted() {
        let mut stage_sheet = SheetStage::new(s, &nets, 1);
        stage_sheet.notes = s.ideal_failure_notes();
        let sheet = [stage_sheet];
        let title = format!("{} ({})", s.name, design.file);
        for f in args
            .drawings
            .write(&title, &sheet, &pick_list(&sheet), &report.cautions)?
        {
            super::output::note(&format!("wrote {}", f.display()));
        }
    }
    if args.json {
        out.json(&report)?;
    } else {
        out.text(&table::render_check(&report, out.colour()))?;
    }
    if report.all_ok() {
        Ok(())
    } else {
        Err(Failure::ChecksFailed)
    }
}
