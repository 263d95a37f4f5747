//! `biasfit ideal FILE`: the continuous design from the rule, each slot's nearest E12, E24 and E96 values,
//! and the checks of the ideal values.

use super::{Failure, Out};
use biasfit::network::{Member, Network};
use biasfit::notation::{parse_tolerance, parse_watts};
use biasfit::report::{table, Report, StageReport};
use biasfit::stage::{self, Design, SlotNetworks, Stage};
use biasfit::units::{Tolerance, Watts};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `biasfit ideal`.
#[derive(Debug, Args)]
pub struct IdealArgs {
    /// The design file (TOML)
    pub file: PathBuf,
    /// Only this stage (its name, or its number from 1)
    #[arg(long, value_name = "NAME")]
    pub stage: Option<String>,
    #[command(flatten)]
    pub parts: PartArgs,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

/// The tolerance and rating assumed for resistors given by value alone.
#[derive(Debug, Args, Clone)]
pub struct PartArgs {
    /// Tolerance of each resistor
    #[arg(
        long,
        value_name = "TOL",
        default_value = "5%",
        allow_hyphen_values = true
    )]
    pub tolerance: String,
    /// Power rating of each resistor
    #[arg(
        long,
        value_name = "WATTS",
        default_value = "0.25W",
        allow_hyphen_values = true
    )]
    pub watts: String,
}

impl PartArgs {
    /// The validated tolerance and rating.
    pub fn resolve(&self) -> Result<(Tolerance, Watts), Failure> {
        Ok((
            parse_tolerance(&self.tolerance)
                .map_err(|e| Failure::Input(format!("--tolerance: {e}")))?,
            parse_watts(&self.watts).map_err(|e| Failure::Input(format!("--watts: {e}")))?,
        ))
    }
}

/// Loads a design file and picks the stages to work on: all, or the one `--stage` names.
pub fn stages(
    file: &std::path::Path,
    which: Option<&str>,
) -> Result<(Design, Vec<usize>), Failure> {
    let design = stage::load(file).map_err(|e| Failure::Input(e.to_string()))?;
    if design.circuit_tables > 0 {
        super::output::warn_all(&[format!(
            "{} also holds {} [[circuit]] table{}; this command works on its [[stage]] tables and leaves {} out (so far `biasfit check` reads circuits)",
            design.file,
            design.circuit_tables,
            if design.circuit_tables == 1 { "" } else { "s" },
            if design.circuit_tables == 1 { "it" } else { "them" },
        )]);
    }
    let picked = match which {
        None => (0..design.stages.len()).collect(),
        Some(w) => {
            let s = design.stage(w).ok_or_else(|| {
                let names: Vec<String> = design
                    .stages
                    .iter()
                    .map(|s| format!("\"{}\"", s.name))
                    .collect();
                Failure::Input(format!(
                    "--stage {w}: {} has no such stage; its stages are {} (or give a number from 1 to {})",
                    design.file,
                    names.join(", "),
                    design.stages.len()
                ))
            })?;
            let i = design
                .stages
                .iter()
                .position(|x| std::ptr::eq(x, s))
                .unwrap_or(0);
            vec![i]
        }
    };
    Ok((design, picked))
}

/// The ideal values as one loose resistor per slot.
/// The checks the picked stages' ideal designs fail, as sentences (what would fix each).
pub fn design_notes(design: &Design, picked: &[usize]) -> Vec<String> {
    picked
        .iter()
        .flat_map(|&i| design.stages[i].ideal_failure_notes())
        .collect()
}

/// Warns, when a file is read for a command other than `ideal` and `design` (which say it in their
/// report), of the checks its ideal design fails: no stocked or bought part passes them.
pub fn warn_ideal_failures(design: &Design, picked: &[usize]) {
    super::output::warn_all(&design_notes(design, picked));
}

fn ideal_networks(s: &Stage, tol: Tolerance, watts: Watts) -> Result<SlotNetworks, Failure> {
    let ideal = s.ideal().map_err(|e| Failure::Input(e.to_string()))?;
    Ok(ideal
        .values
        .iter()
        .map(|(slot, r)| (slot, Network::Single(Member::loose(r, tol, watts))))
        .fold(SlotNetworks::new(), |mut n, (slot, net)| {
            n.set(slot, net);
            n
        }))
}

/// Runs `biasfit ideal`.
pub fn run(args: IdealArgs, out: &mut Out) -> Result<(), Failure> {
    let (tol, watts) = args.parts.resolve()?;
    let (design, picked) = stages(&args.file, args.stage.as_deref())?;
    let mut reports = Vec::new();
    let picked_stages = picked.clone();
    for i in picked {
        let s = &design.stages[i];
        let nets = ideal_networks(s, tol, watts)?;
        reports.push(StageReport::new(s, &nets).with_nearest());
    }
    let report = Report::new(reports);
    if args.json {
        out.json(&report)?;
    } else {
        out.text(&table::render_ideal(&report, out.colour()))?;
        // What no choice of parts can fix is said under the checks it concerns (issue 17).
        let notes: Vec<String> = design_notes(&design, &picked_stages);
        if !notes.is_empty() {
            out.text(&format!(
                "\n{}",
                notes
                    .iter()
                    .map(|n| format!("note: {n}\n"))
                    .collect::<String>()
            ))?;
        }
    }
    if report.all_ok() {
        Ok(())
    } else {
        Err(Failure::ChecksFailed)
    }
}
