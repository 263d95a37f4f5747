//! `biasfit check FILE --use R1=15k,R2=3k3,...`: the exact operating point and every check of a stage built
//! from the given networks.

use super::drawings::DrawingArgs;
use super::ideal::PartArgs;
use super::{Failure, Out};
use biasfit::circuit::Circuit;
use biasfit::design_file::{self, Position};
use biasfit::network::{parse_network, Network};
use biasfit::report::circuit::CircuitReport;
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
    /// The networks, as SLOT=NETWORK pairs joined by commas: R1=15k,R2=3k3,RC=2k2,RE=(220+47)|1k (a
    /// circuit's slots by their names)
    #[arg(long = "use", value_name = "SLOTS", required = true)]
    pub slots: Vec<String>,
    /// The stage or circuit to check (its name, or its number from 1, stages first); needed when the file
    /// has several
    #[arg(long, visible_alias = "circuit", value_name = "NAME")]
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

/// Reads `--use` values into networks for a circuit's slots, in [`Circuit::slots`] order: every slot it
/// has, nothing it lacks, none twice.
pub fn circuit_networks(
    c: &Circuit,
    given: &[String],
    tol: Tolerance,
    watts: Watts,
) -> Result<Vec<Network>, Failure> {
    let slots: Vec<&str> = c
        .slots()
        .iter()
        .map(|&i| c.parts[i].name.as_str())
        .collect();
    let expected = if slots.is_empty() {
        "none: every resistor has a value".to_string()
    } else {
        slots.join(", ")
    };
    let mut nets: Vec<Option<Network>> = vec![None; slots.len()];
    for item in given.iter().flat_map(|g| g.split(',')) {
        let item = item.trim();
        if item.is_empty() {
            continue;
        }
        let (name, value) = item.split_once('=').ok_or_else(|| {
            Failure::Input(format!(
                "--use: \"{item}\" is not SLOT=NETWORK; expected pairs such as RT=4k7+220"
            ))
        })?;
        let name = name.trim();
        if value.contains('=') {
            return Err(Failure::Input(format!(
                "--use: \"{item}\" holds more than one '='; separate SLOT=NETWORK pairs with commas, as in RT=4k7,R1=10k"
            )));
        }
        let k = slots.iter().position(|s| *s == name).ok_or_else(|| {
            let why = match c.parts.iter().find(|p| p.name == name).map(|p| &p.kind) {
                Some(biasfit::circuit::Kind::Resistor { .. }) => {
                    "has its value in the file, so it is not a slot".to_string()
                }
                Some(k) => format!(
                    "is a {}; only a resistor without a value is a slot",
                    k.name()
                ),
                None => format!(
                    "is not a part of the circuit{}",
                    biasfit::circuit::file::nearest(name, &slots)
                        .map(|n| format!(" (did you mean {n}?)"))
                        .unwrap_or_default()
                ),
            };
            Failure::Input(format!(
                "--use: {} {why}; circuit \"{}\" has the slots {expected}",
                biasfit::notation::excerpt(name),
                c.name
            ))
        })?;
        if nets[k].is_some() {
            return Err(Failure::Input(format!(
                "--use: {name} is given twice; give each slot once"
            )));
        }
        let net = parse_network(value, tol, watts)
            .map_err(|e| Failure::Input(format!("--use {name}: {e}")))?;
        nets[k] = Some(net);
    }
    let missing: Vec<&str> = slots
        .iter()
        .zip(&nets)
        .filter(|(_, n)| n.is_none())
        .map(|(s, _)| *s)
        .collect();
    if !missing.is_empty() {
        return Err(Failure::Input(format!(
            "--use: no value for {}; circuit \"{}\" needs {expected}",
            missing.join(", "),
            c.name
        )));
    }
    Ok(nets.into_iter().flatten().collect())
}

/// The circuit a command on a built position means: the one `--stage NAME` names, or a file's only
/// circuit when it holds no stage; None when a stage is meant (the stage path then reads the file).
/// `what` finishes the refusal when several circuits leave it open ("pick the one to spread with --stage").
pub fn chosen_circuit<'d>(
    file: &'d biasfit::design_file::DesignFile,
    which: Option<&str>,
    what: &str,
) -> Result<Option<&'d Circuit>, Failure> {
    match (which, file.stages.as_slice(), file.circuits.as_slice()) {
        (Some(w), _, _) => Ok(match file.position(w) {
            Some(Position::Circuit(c)) => Some(c),
            _ => None,
        }),
        (None, [], [c]) => Ok(Some(c)),
        (None, [], list) => Err(Failure::Input(format!(
            "{} has {} circuits ({}); {what}",
            file.file,
            list.len(),
            file.names().join(", ")
        ))),
        _ => Ok(None),
    }
}

/// Runs `biasfit check`.
pub fn run(args: CheckArgs, out: &mut Out) -> Result<(), Failure> {
    let outputs = args.drawings.outputs(&[("design file", &args.file)]);
    args.drawings.check(&outputs)?;
    let (tol, watts) = args.parts.resolve()?;
    let design = design_file::load(&args.file).map_err(super::input)?;
    let picked = match args.stage.as_deref() {
        Some(w) => design.position(w).ok_or_else(|| {
            Failure::Input(format!(
                "--stage {}: {} has no such stage or circuit; it holds {} (or give a number from 1 to {})",
                biasfit::notation::excerpt(w),
                design.file,
                design.names().join(", "),
                design.stages.len() + design.circuits.len()
            ))
        })?,
        None => match (design.stages.as_slice(), design.circuits.as_slice()) {
            ([s], []) => Position::Stage(s),
            ([], [c]) => Position::Circuit(c),
            _ => {
                let what = if design.circuits.is_empty() {
                    "stages"
                } else if design.stages.is_empty() {
                    "circuits"
                } else {
                    "stages and circuits"
                };
                return Err(Failure::Input(format!(
                    "{} has {} {what} ({}); pick the one to check with --stage",
                    design.file,
                    design.stages.len() + design.circuits.len(),
                    design.names().join(", ")
                )));
            }
        },
    };
    let s = match picked {
        Position::Stage(s) => {
            let one = biasfit::stage::Design {
                file: design.file.clone(),
                stages: vec![s.clone()],
                circuit_tables: 0,
            };
            super::ideal::warn_ideal_failures(&one, &[0]);
            s
        }
        Position::Circuit(c) => return check_circuit(&args, c, tol, watts, &outputs, out),
    };
    let nets = networks(s, &args.slots, tol, watts)?;
    let report = Report::new(vec![StageReport::new(s, &nets)]);
    if args.drawings.wanted() {
        let mut stage_sheet = SheetStage::new(s, &nets, 1);
        stage_sheet.notes = s.ideal_failure_notes();
        let sheet = [stage_sheet];
        let title = format!("{} ({})", s.name, design.file);
        args.drawings.write(
            &outputs,
            out,
            &title,
            &sheet,
            &pick_list(&sheet),
            &report.cautions,
        )?;
    }
    emit(&report, args.json, out)
}

/// Prints a check report (text or JSON); a failed check is exit 1.
fn emit(report: &Report, json: bool, out: &mut Out) -> Result<(), Failure> {
    if json {
        out.json(report)?;
    } else {
        out.text(&table::render_check(report, out.colour()))?;
    }
    if report.all_ok() {
        Ok(())
    } else {
        Err(Failure::ChecksFailed)
    }
}

/// A built circuit that cannot be solved: bad input, said with what to look at.
pub fn unbuildable(file: &std::path::Path, e: &dyn std::fmt::Display) -> Failure {
    Failure::Input(format!(
        "--use: {e}; check the values given and the circuit's pins in {}",
        file.display()
    ))
}

/// `check` on a circuit of the user's own: solve it built from the given networks, then judge it.
fn check_circuit(
    args: &CheckArgs,
    c: &Circuit,
    tol: Tolerance,
    watts: Watts,
    outputs: &super::output::Outputs,
    out: &mut Out,
) -> Result<(), Failure> {
    let c = &c.with_assumed_parts(tol, watts);
    let nets = circuit_networks(c, &args.slots, tol, watts)?;
    if args.drawings.svg.is_some() {
        return Err(Failure::Input(format!(
            "circuit \"{}\": --svg draws stages only so far; --html FILE writes the circuit's build sheet",
            c.name
        )));
    }
    let circuit = CircuitReport::new(c, &nets).map_err(|e| unbuildable(&args.file, &e))?;
    let report = Report::of(Vec::new(), vec![circuit.clone()]);
    if let Some(path) = &args.drawings.html {
        let title = format!("{} ({})", c.name, args.file.display());
        let page = biasfit::report::html::circuit_sheet(&title, &circuit, &report.cautions);
        outputs.write(
            "--html",
            path,
            super::output::Kind::Html,
            page.as_bytes(),
            out,
        )?;
    }
    emit(&report, args.json, out)
}
