//! `biasfit order FILE --stock STOCK`: the cheapest purchase that makes a design buildable (within an error
//! bound), or the best design a budget buys; prints the order list, the pick list and the resulting design.

use super::drawings::DrawingArgs;
use super::flags::{amount, seconds, whole};
use super::ideal::stages;
use super::output::{to_stdout, warn_all, Kind, Progress};
use super::stock::{load as load_stock, DefaultArgs};
use super::{Failure, Out};
use biasfit::notation::{parse_tolerance, parse_watts, Series};
use biasfit::optimise::design::{Outcome, SolverInfo};
use biasfit::optimise::share::Goal;
use biasfit::order::catalogue::Catalogue;
use biasfit::order::orderfile::{render_csv, OrderLine};
use biasfit::order::purchase::{order, OrderError, OrderRequest};
use biasfit::order::Money;
use biasfit::report::design::{render, DesignReport};
use biasfit::units::Ohms;
use clap::Args;
use serde::Serialize;
use std::fmt::Write;
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// Arguments of `biasfit order`.
#[derive(Debug, Args)]
pub struct OrderArgs {
    /// The design file (TOML)
    pub file: PathBuf,
    /// The stock CSV file
    #[arg(long, value_name = "STOCK")]
    pub stock: PathBuf,
    /// A catalogue CSV of purchasable parts (value, tolerance, power, price, pack)
    #[arg(long, value_name = "CATALOG", conflicts_with = "series")]
    pub catalog: Option<PathBuf>,
    /// Without a catalogue: buy from this preferred series at unit cost 1, pack 1
    #[arg(long, value_name = "SERIES", default_value = "E24")]
    pub series: Option<String>,
    /// Tolerance of series parts
    #[arg(long, value_name = "TOL", default_value = "1%")]
    pub tolerance: String,
    /// Power rating of series parts
    #[arg(long, value_name = "WATTS", default_value = "0.25W")]
    pub power: String,
    /// Build this many boards
    #[arg(long, value_name = "N", default_value_t = 1, allow_negative_numbers = true,
          value_parser = whole::<u32>(1, 10_000, "a number of boards"))]
    pub copies: u32,
    /// The cheapest purchase keeping every board's error within this bound [default: 0.5%]
    #[arg(
        long,
        value_name = "ERR",
        conflicts_with = "budget",
        allow_hyphen_values = true
    )]
    pub error: Option<String>,
    /// Instead: the smallest error that this much money buys
    #[arg(long, value_name = "MONEY", allow_negative_numbers = true, value_parser = amount)]
    pub budget: Option<f64>,
    /// At most this many resistors per slot
    #[arg(long, value_name = "N", default_value_t = 2, allow_negative_numbers = true,
          value_parser = whole::<u8>(1, 3, "the most resistors per slot"))]
    pub parts: u8,
    /// Variants per stage from each search
    #[arg(long, value_name = "K", default_value_t = 200, allow_negative_numbers = true,
          value_parser = whole::<u32>(1, 100_000, "a number of variants per stage"))]
    pub variants: u32,
    /// Stop after this many seconds, reading and search together, with the best purchase found
    #[arg(long, value_name = "S", allow_negative_numbers = true, value_parser = seconds,
          default_value = super::flags::DEFAULT_TIME_LIMIT)]
    pub time_limit: Duration,
    /// Write the order list to this CSV file (what `stock add --order` reads; - for standard output)
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
    #[command(flatten)]
    pub defaults: DefaultArgs,
    #[command(flatten)]
    pub drawings: DrawingArgs,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

/// `order --json`: the order list, plus the design report's pick list and stages.
#[derive(Debug, Serialize)]
struct OrderReport<'a> {
    order: &'a [OrderLine],
    cost: f64,
    goal: GoalReport,
    #[serde(flatten)]
    design: &'a DesignReport,
}

#[derive(Debug, Serialize)]
struct GoalReport {
    kind: &'static str,
    value: f64,
}

/// Reads the error bound: "0.5%" or a fraction such as 0.005.
fn parse_bound(text: &str) -> Result<f64, Failure> {
    let refuse = || {
        Failure::Input(format!(
            "--error {text}: expected a bound such as 0.5% or 0.005"
        ))
    };
    let t = text.trim();
    let v = match t.strip_suffix('%') {
        Some(p) => p
            .trim()
            .parse::<f64>()
            .map(|x| x / 100.0)
            .map_err(|_| refuse())?,
        None => t.parse::<f64>().map_err(|_| refuse())?,
    };
    if v.is_finite() && v > 0.0 && v < 1.0 {
        Ok(v)
    } else {
        Err(refuse())
    }
}

/// Runs `biasfit order`.
pub fn run(args: OrderArgs, out: &mut Out) -> Result<(), Failure> {
    let mut inputs = vec![
        ("design file", args.file.as_path()),
        ("stock file", args.stock.as_path()),
    ];
    if let Some(c) = &args.catalog {
        inputs.push(("catalogue", c.as_path()));
    }
    let outputs = args.drawings.outputs(&inputs);
    args.drawings.check(&outputs)?;
    if let Some(path) = &args.csv {
        outputs.check("--csv", path, Kind::OrderCsv)?;
        if to_stdout(path) && args.drawings.html.as_deref().is_some_and(to_stdout) {
            return Err(Failure::Input(
                "--csv - and --html -: both send a file to standard output; expected at most one there, so give the other a file name".into(),
            ));
        }
    }
    // One deadline for the whole command, reading the files included.
    let started = Instant::now();
    let (file, stock_file, defaults) =
        (args.file.clone(), args.stock.clone(), args.defaults.clone());
    let (design, stock) = super::output::read_within(
        started + args.time_limit,
        &format!("{} and {}", args.file.display(), args.stock.display()),
        move || Ok((stages(&file, None)?.0, load_stock(&stock_file, &defaults)?)),
    )?;
    super::ideal::warn_ideal_failures(&design, &(0..design.stages.len()).collect::<Vec<_>>());
    let catalogue = match &args.catalog {
        Some(path) => Catalogue::load(path).map_err(|e| Failure::Input(e.to_string()))?,
        None => {
            let name = args.series.as_deref().unwrap_or("E24");
            let series: Series = name
                .parse()
                .map_err(|e| Failure::Input(format!("--series: {e}")))?;
            let tol = parse_tolerance(&args.tolerance)
                .map_err(|e| Failure::Input(format!("--tolerance: {e}")))?;
            let power =
                parse_watts(&args.power).map_err(|e| Failure::Input(format!("--power: {e}")))?;
            Catalogue::from_series(series, tol, power, Ohms(1.0), Ohms(10e6))
        }
    };
    warn_all(&catalogue.warnings);
    let goal = match (args.budget, &args.error) {
        (Some(b), _) if b.is_finite() && b >= 0.0 => Goal::Budget(b),
        (Some(b), _) => {
            return Err(Failure::Input(format!(
                "--budget {b}: expected an amount of 0 or more"
            )))
        }
        (None, Some(e)) => Goal::MaxError(parse_bound(e)?),
        (None, None) => Goal::MaxError(0.005),
    };
    let time_limit = Some(args.time_limit);
    let request = OrderRequest {
        deadline: Some(started + args.time_limit),
        max_parts: args.parts as usize,
        copies: args.copies,
        goal,
        variants: args.variants as usize,
        window: 3.0,
        time_limit,
    };
    let progress = Progress::start("searching", Some((started, args.time_limit)));
    let result = order(&design, &stock, &catalogue, &request, &mut |p| {
        progress.phase(p)
    });
    drop(progress);
    let outcome = match result {
        Ok(o) => o,
        Err(e @ OrderError::Infeasible(_)) => return Err(Failure::Infeasible(e.to_string())),
        Err(e @ OrderError::TimedOut(_)) => return Err(Failure::TimedOut(e.to_string())),
        Err(e) => return Err(Failure::Input(e.to_string())),
    };
    // The design report works on the combined parts, so the pick list names stock and bought parts alike;
    // the bought ones are then taken off it, since they are not in the drawer yet.
    let as_outcome = Outcome {
        built: outcome.built.clone(),
        circuits: Default::default(),
        alternatives: Vec::new(),
        baseline: Vec::new(),
        solver: SolverInfo {
            seconds: started.elapsed().as_secs_f64(),
            variants: outcome.variants,
            status: if outcome.proven {
                "optimal"
            } else {
                "time limit"
            }
            .to_string(),
            evaluations: 0,
            result: if outcome.proven {
                "optimal"
            } else {
                "best found"
            }
            .to_string(),
            bound: outcome.bound,
            time_limit: time_limit.map(|l| l.as_secs_f64()),
        },
        notes: Vec::new(),
        // order takes no kept slots.
        kept: Vec::new(),
    };
    let mut report = DesignReport::new(&design, &outcome.parts, &as_outcome, args.copies);
    report
        .pick
        .retain(|p| p.location.as_deref() != Some(biasfit::stock::TO_BUY));
    if let Some(path) = &args.csv {
        let csv = render_csv(&outcome.lines);
        outputs.write("--csv", path, Kind::OrderCsv, csv.as_bytes(), out)?;
    }
    if args.drawings.wanted() {
        let sheet = super::design::sheet(&design, &outcome.built, &[]);
        let title = format!("{} from {} and a purchase", design.file, stock.file);
        args.drawings.write(
            &outputs,
            out,
            &title,
            &sheet,
            &report.pick,
            &report.cautions,
        )?;
    }
    let goal_report = match goal {
        Goal::MaxError(b) => GoalReport {
            kind: "error",
            value: b,
        },
        Goal::Budget(b) => GoalReport {
            kind: "budget",
            value: b,
        },
    };
    if args.json {
        out.json(&OrderReport {
            order: &outcome.lines,
            cost: outcome.cost.0,
            goal: goal_report,
            design: &report,
        })?;
    } else {
        out.text(&render_order(&outcome.lines, outcome.cost, goal))?;
        out.text(&render(&report, out.colour(), super::MORE_TIME))?;
    }
    Ok(())
}

/// The order list for people.
fn render_order(lines: &[OrderLine], cost: Money, goal: Goal) -> String {
    let mut s = String::new();
    let _ = match goal {
        Goal::MaxError(b) => writeln!(
            s,
            "order: the cheapest purchase keeping every board within {} %",
            biasfit::notation::trim_number(b * 100.0, 3)
        ),
        Goal::Budget(b) => writeln!(s, "order: the best design a budget of {} buys", Money(b)),
    };
    if lines.is_empty() {
        let _ = writeln!(s, "  nothing to buy: the stock already meets it\n");
        return s;
    }
    let _ = writeln!(
        s,
        "  {:>7}  {:>5}  {:>7}  {:>5}  {:>5}  {:>8}",
        "value", "tol", "power", "qty", "packs", "cost"
    );
    for l in lines {
        let _ = writeln!(
            s,
            "  {:>7}  {:>5}  {:>7}  {:>5}  {:>5}  {:>8}",
            biasfit::notation::code(l.ohms),
            format!(
                "{} %",
                biasfit::notation::trim_number(l.tolerance.0 * 100.0, 3)
            ),
            biasfit::notation::engineering(l.power.0, "W"),
            l.qty,
            l.packs,
            l.cost.to_string()
        );
    }
    let _ = writeln!(s, "  total {cost}\n");
    s
}
