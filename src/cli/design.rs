//! `biasfit design FILE --stock STOCK`: fill every slot of every stage from stock so that the operating
//! points land closest to their targets, and print the build sheet, the baseline and the pick list.

use super::check::slot_name;
use super::drawings::DrawingArgs;
use super::flags::{seconds, whole};
use super::output::Progress;
use super::stock::{load as load_stock, DefaultArgs};
use super::{Failure, Out};
use biasfit::design_file::{DesignFile, Position};
use biasfit::network::parse_network;
use biasfit::notation::{parse_tolerance, parse_watts};
use biasfit::optimise::design::{design_board, DesignError, Request};
use biasfit::report::design::{render, DesignReport};
use biasfit::report::html::SheetStage;
use biasfit::stage::{Design, Slot};
use clap::Args;
use std::path::PathBuf;
use std::time::Duration;

/// The most alternatives `--alternatives` may ask for: more than anyone reads, and a bound on the search,
/// which keeps that many variants of every stage (a typo of 10⁹ would otherwise fill the memory).
const MAX_ALTERNATIVES: usize = 100;

/// Arguments of `biasfit design`.
#[derive(Debug, Args)]
pub struct DesignArgs {
    /// The design file (TOML)
    pub file: PathBuf,
    /// The stock CSV file
    #[arg(long, value_name = "STOCK")]
    pub stock: PathBuf,
    /// At most this many resistors per slot: 1 (singles), 2 (pairs) or 3 (triples)
    #[arg(long, value_name = "N", default_value_t = 2, allow_negative_numbers = true,
          value_parser = whole::<u8>(1, 3, "the most resistors per slot"))]
    pub parts: u8,
    /// Build this many boards from the stock (they may use different variants)
    #[arg(long, value_name = "N", default_value_t = 1, allow_negative_numbers = true,
          value_parser = whole::<u32>(1, 10_000, "a number of boards"))]
    pub copies: u32,
    /// Slots already fitted, kept as they are: R2=3k3,RC=2k2 (prefix a stage number for multi-stage files: 2:RC=2k2)
    #[arg(long, value_name = "SLOTS")]
    pub keep: Vec<String>,
    /// Tolerance assumed for kept parts
    #[arg(
        long,
        value_name = "TOL",
        default_value = "5%",
        allow_hyphen_values = true
    )]
    pub keep_tolerance: String,
    /// Power rating assumed for kept parts
    #[arg(
        long,
        value_name = "WATTS",
        default_value = "0.25W",
        allow_hyphen_values = true
    )]
    pub keep_watts: String,
    /// Also list the next K best designs of each stage
    #[arg(long, value_name = "K", default_value_t = 0, allow_negative_numbers = true,
          value_parser = whole::<usize>(0, MAX_ALTERNATIVES as u64, "a number of alternatives"))]
    pub alternatives: usize,
    /// Variants per stage handed to the integer program
    #[arg(long, value_name = "K", default_value_t = 200, allow_negative_numbers = true,
          value_parser = whole::<u32>(1, 100_000, "a number of variants per stage"))]
    pub variants: u32,
    /// Stop after this many seconds, reading and search together, and report the best verified design found
    #[arg(long, value_name = "S", allow_negative_numbers = true, value_parser = seconds,
          default_value = super::flags::DEFAULT_TIME_LIMIT)]
    pub time_limit: Duration,
    /// For tests: cut each stage's search after this many error evaluations, as the time limit would, at
    /// the same place on every machine
    #[arg(long, value_name = "N", hide = true,
          value_parser = whole::<u64>(0, u64::MAX, "a number of error evaluations"))]
    pub search_budget: Option<u64>,
    #[command(flatten)]
    pub defaults: DefaultArgs,
    #[command(flatten)]
    pub drawings: DrawingArgs,
    /// Choose the design with the best worst-case error over tolerance, beta and temperature
    #[arg(long)]
    pub robust: bool,
    /// Temperature range for --robust, in °C [default: the design's limits.temperature, else -20..70]
    #[arg(
        long,
        value_name = "LO..HI",
        allow_hyphen_values = true,
        requires = "robust"
    )]
    pub temp: Option<String>,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

/// Kept slots: of stages (stage index, slot, network) and of circuits (circuit index, slot name, network).
type Keeps = (
    Vec<(usize, Slot, biasfit::Network)>,
    Vec<(usize, String, biasfit::Network)>,
);

/// Reads `--keep` pairs: `SLOT=NETWORK`, with an optional `STAGE:` prefix (a name, or a number from 1
/// counting the stages, then the circuits).
fn keeps(file: &DesignFile, args: &DesignArgs) -> Result<Keeps, Failure> {
    let tol = parse_tolerance(&args.keep_tolerance)
        .map_err(|e| Failure::Input(format!("--keep-tolerance: {e}")))?;
    let watts =
        parse_watts(&args.keep_watts).map_err(|e| Failure::Input(format!("--keep-watts: {e}")))?;
    let (mut stages, mut circuits) = (Vec::new(), Vec::new());
    let positions = file.stages.len() + file.circuits.len();
    for item in args.keep.iter().flat_map(|k| k.split(',')) {
        let item = item.trim();
        if item.is_empty() {
            continue;
        }
        let (target, value) = item.split_once('=').ok_or_else(|| {
            Failure::Input(format!(
                "--keep: \"{item}\" is not SLOT=NETWORK; expected pairs such as R2=3k3,RC=2k2"
            ))
        })?;
        let (position, slot) = match target.split_once(':') {
            Some((st, sl)) => {
                let p = file.position(st.trim()).ok_or_else(|| {
                    let (what, numbers) = match (file.circuits.is_empty(), positions) {
                        (true, 1) => ("stage", "1".to_string()),
                        (true, n) => ("stage", format!("1 to {n}")),
                        (false, n) => ("stage or circuit", format!("1 to {n}")),
                    };
                    Failure::Input(format!(
                        "--keep {item}: {} has no {what} \"{st}\"; give its number ({numbers}) or its name ({})",
                        file.file,
                        file.names().join(", ")
                    ))
                })?;
                (p, sl.trim())
            }
            None if positions == 1 => (
                file.stages
                    .first()
                    .map(Position::Stage)
                    .or(file.circuits.first().map(Position::Circuit))
                    .expect("one position"),
                target.trim(),
            ),
            None => {
                let what = if file.circuits.is_empty() {
                    "stages"
                } else {
                    "stages and circuits"
                };
                return Err(Failure::Input(format!(
                    "--keep {item}: the file has {positions} {what}; say which, as in 1:{item}"
                )));
            }
        };
        match position {
            Position::Stage(st) => {
                let stage = file
                    .stages
                    .iter()
                    .position(|x| std::ptr::eq(x, st))
                    .expect("a stage of the file");
                let slot = slot_name("--keep", item, slot, value)?;
                if stages.iter().any(|&(s, sl, _)| s == stage && sl == slot) {
                    return Err(Failure::Input(format!(
                        "--keep: {slot} of stage \"{}\" is given twice; keep each slot once",
                        st.name
                    )));
                }
                let net = parse_network(value, tol, watts)
                    .map_err(|e| Failure::Input(format!("--keep {slot}: {e}")))?;
                stages.push((stage, slot, net));
            }
            Position::Circuit(c) => {
                let ci = file
                    .circuits
                    .iter()
                    .position(|x| std::ptr::eq(x, c))
                    .expect("a circuit of the file");
                let names = biasfit::optimise::circuit_step::slot_names(c);
                let Some(name) = names.iter().find(|n| n.eq_ignore_ascii_case(slot)) else {
                    return Err(Failure::Input(format!(
                        "--keep {item}: circuit \"{}\" has no slot {slot}; its slots are {}",
                        c.name,
                        names.join(", ")
                    )));
                };
                if circuits.iter().any(|(k, s, _)| *k == ci && s == name) {
                    return Err(Failure::Input(format!(
                        "--keep: {name} of circuit \"{}\" is given twice; keep each slot once",
                        c.name
                    )));
                }
                let net = parse_network(value, tol, watts)
                    .map_err(|e| Failure::Input(format!("--keep {name}: {e}")))?;
                circuits.push((ci, name.clone(), net));
            }
        }
    }
    Ok((stages, circuits))
}

/// The build-sheet view of the chosen builds.
pub fn sheet(
    design: &Design,
    built: &[biasfit::optimise::design::Built],
    kept: &[(usize, biasfit::stage::Slot)],
) -> Vec<SheetStage> {
    built
        .iter()
        .map(|b| {
            let kept: Vec<_> = kept
                .iter()
                .filter(|(s, _)| *s == b.stage)
                .map(|&(_, slot)| slot)
                .collect();
            let mut s =
                SheetStage::new(&design.stages[b.stage], &b.networks, b.copies).with_kept(&kept);
            // What no part can fix is said on the sheet too, under the stage's heading.
            s.notes = design.stages[b.stage].ideal_failure_notes();
            s
        })
        .collect()
}

/// Runs `biasfit design`.
pub fn run(args: DesignArgs, out: &mut Out) -> Result<(), Failure> {
    let outputs = args
        .drawings
        .outputs(&[("design file", &args.file), ("stock file", &args.stock)]);
    args.drawings.check(&outputs)?;
    // One deadline for the whole command, reading the files included.
    let started = std::time::Instant::now();
    let (file, stock_file, defaults) =
        (args.file.clone(), args.stock.clone(), args.defaults.clone());
    let (board, stock) = super::output::read_within(
        started + args.time_limit,
        &format!("{} and {}", args.file.display(), args.stock.display()),
        move || {
            Ok((
                biasfit::design_file::load(&file).map_err(super::input)?,
                load_stock(&stock_file, &defaults)?,
            ))
        },
    )?;
    let (keep, keep_circuit) = keeps(&board, &args)?;
    let (tol, watts) = (
        parse_tolerance(&args.keep_tolerance)
            .map_err(|e| Failure::Input(format!("--keep-tolerance: {e}")))?,
        parse_watts(&args.keep_watts).map_err(|e| Failure::Input(format!("--keep-watts: {e}")))?,
    );
    // A circuit's fixed resistor that gives no rating is checked at the assumed one, as check does.
    let circuits: Vec<biasfit::circuit::Circuit> = board
        .circuits
        .iter()
        .map(|c| c.with_assumed_parts(tol, watts))
        .collect();
    let design_file = Design {
        file: board.file.clone(),
        stages: board.stages.clone(),
        circuit_tables: 0,
    };
    let request = Request {
        max_parts: args.parts as usize,
        copies: args.copies,
        keep,
        keep_circuit,
        variants: args.variants as usize,
        alternatives: args.alternatives,
        time_limit: Some(args.time_limit),
        deadline: Some(started + args.time_limit),
        search_budget: args.search_budget,
        robust: args.robust,
        robust_temp: args
            .temp
            .as_deref()
            .map(super::spread::parse_range)
            .transpose()?,
        ..Request::default()
    };
    let progress = Progress::start("searching", Some((started, args.time_limit)));
    let outcome = design_board(&design_file, &circuits, &stock, &request, &mut |p| {
        progress.phase(p)
    });
    drop(progress);
    let outcome = match outcome {
        Ok(o) => o,
        Err(e @ DesignError::TimedOut(_)) => return Err(Failure::TimedOut(e.to_string())),
        Err(
            e @ (DesignError::Infeasible { .. }
            | DesignError::CircuitInfeasible { .. }
            | DesignError::Scarce(_)
            | DesignError::EmptyStock(_)),
        ) => return Err(Failure::Infeasible(e.to_string())),
        Err(e) => return Err(Failure::Input(e.to_string())),
    };
    let report = DesignReport::new(&design_file, &stock, &outcome, args.copies)
        .with_circuits(&circuits, &stock, &outcome);
    if args.drawings.wanted() {
        let sheet = sheet(&design_file, &outcome.built, &outcome.kept);
        let title = format!("{} from {}", design_file.file, stock.file);
        args.drawings.write(
            &outputs,
            out,
            &title,
            &sheet,
            &report.pick,
            &report.cautions,
        )?;
    }
    if args.json {
        out.json(&report)?;
    } else {
        out.text(&render(&report, out.colour(), super::MORE_TIME))?;
    }
    if report.all_ok() {
        Ok(())
    } else {
        Err(Failure::ChecksFailed)
    }
}
