//! `biasfit stock FILE`: validate a stock file and summarise it; `biasfit stock withdraw` and `biasfit stock
//! add`: keep it true to the drawer after a build or a delivery. `stock take` is the old name of `withdraw`,
//! kept working (hidden) with a note: in British usage a stocktake is a count of the stock, not a removal.

use super::flags::whole;
use super::output::warn_all;
use super::{input, Failure, Out};
use biasfit::notation::{parse_tolerance, parse_watts};
use biasfit::order::orderfile;
use biasfit::order::stocktake::{self, Edit, StockFile, TakeError};
use biasfit::save::{self, Saver};
use biasfit::stock::{self, Defaults, Summary};
use clap::{Args, Subcommand};
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Arguments of `biasfit stock`.
#[derive(Debug, Args)]
#[command(args_conflicts_with_subcommands = true, subcommand_negates_reqs = true)]
pub struct StockArgs {
    #[command(subcommand)]
    pub action: Option<StockAction>,
    /// The stock CSV file
    #[arg(required = true)]
    pub file: Option<PathBuf>,
    #[command(flatten)]
    pub defaults: DefaultArgs,
    /// Print the summary as JSON
    #[arg(long)]
    pub json: bool,
}

/// What to do to a stock file other than summarise it.
#[derive(Debug, Subcommand)]
pub enum StockAction {
    /// Withdraw the parts a design used: subtract them (keeps STOCK.bak.1, then rewrites only the qty fields)
    Withdraw(TakeArgs),
    /// The old name of `withdraw`
    #[command(hide = true)]
    Take(TakeArgs),
    /// Add the parts that arrived, from an order file (keeps STOCK.bak.1)
    Add(AddArgs),
}

/// Arguments of `biasfit stock withdraw`.
#[derive(Debug, Args)]
pub struct TakeArgs {
    /// The stock CSV file to withdraw the parts from
    pub stock: PathBuf,
    /// The design result (what `biasfit design --json` wrote)
    #[arg(long, value_name = "FILE")]
    pub result: PathBuf,
    /// Boards built: scales a one-board result; must match a result made for several
    #[arg(long, value_name = "N", allow_negative_numbers = true,
          value_parser = whole::<u32>(1, 1_000_000, "a number of boards"))]
    pub copies: Option<u32>,
    #[command(flatten)]
    pub edit: EditArgs,
}

/// Arguments of `biasfit stock add`.
#[derive(Debug, Args)]
pub struct AddArgs {
    /// The stock CSV file to add to
    pub stock: PathBuf,
    /// The order file (what `biasfit order --csv` wrote: value,tolerance,power,qty,…)
    #[arg(long, value_name = "FILE")]
    pub order: PathBuf,
    #[command(flatten)]
    pub edit: EditArgs,
}

/// Options shared by the commands that rewrite a stock file.
#[derive(Debug, Args)]
pub struct EditArgs {
    /// Show what would change, and write nothing
    #[arg(long)]
    pub dry_run: bool,
    /// Print what changed as JSON
    #[arg(long)]
    pub json: bool,
    #[command(flatten)]
    pub defaults: DefaultArgs,
}

/// What to assume for stock rows that leave tolerance or power blank.
#[derive(Debug, Args, Clone)]
pub struct DefaultArgs {
    /// Tolerance for stock rows without one
    #[arg(
        long,
        value_name = "TOL",
        default_value = "5%",
        allow_hyphen_values = true
    )]
    pub default_tolerance: String,
    /// Power rating for stock rows without one
    #[arg(
        long,
        value_name = "WATTS",
        default_value = "0.25W",
        allow_hyphen_values = true
    )]
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
pub fn load(file: &Path, defaults: &DefaultArgs) -> Result<stock::Stock, Failure> {
    let s = stock::load(file, defaults.resolve()?).map_err(input)?;
    warn_all(&s.warnings);
    warn_all(&defaults_hint(&s));
    Ok(s)
}

/// The flags that change what was assumed for blank fields (the library's warning says what, not how).
fn defaults_hint(s: &stock::Stock) -> Vec<String> {
    let flags: Vec<&str> = [
        (s.defaulted.0 > 0, "--default-tolerance"),
        (s.defaulted.1 > 0, "--default-power"),
    ]
    .iter()
    .filter(|(used, _)| *used)
    .map(|(_, f)| *f)
    .collect();
    if flags.is_empty() {
        return Vec::new();
    }
    vec![format!(
        "{}: give {} to assume something else for blank fields",
        s.file,
        flags.join(" or ")
    )]
}

/// Runs `biasfit stock`.
pub fn run(args: StockArgs, out: &mut Out) -> Result<(), Failure> {
    match args.action {
        Some(StockAction::Withdraw(a)) => return take(a, out),
        Some(StockAction::Take(a)) => {
            super::output::note(
                "note: `biasfit stock take` is now `biasfit stock withdraw` (it removes parts; it does not count them); the old name still works for now",
            );
            return take(a, out);
        }
        Some(StockAction::Add(a)) => return add(a, out),
        None => {}
    }
    let Some(file) = args.file else {
        return Err(Failure::Input(
            "no stock file given; expected `biasfit stock FILE`".into(),
        ));
    };
    let s = load(&file, &args.defaults)?;
    let summary = Summary::of(&s);
    if args.json {
        out.json(&summary)
    } else {
        out.text(&biasfit::report::stock::render(&summary))
    }
}

/// Refuses a `--result` or `--order` that is the stock file being rewritten (by file identity): a stock
/// reads as an order file, so `stock add drawer.csv --order drawer.csv` would double every count.
fn not_the_stock(flag: &str, input: &Path, stock: &Path) -> Result<(), Failure> {
    match (save::FileId::of(input), save::FileId::of(stock)) {
        (Some(a), Some(b)) if a == b => Err(Failure::Input(format!(
            "{flag} {}: that is the stock file being changed ({}); nothing was written; give the file `biasfit {}` wrote",
            input.display(),
            stock.display(),
            if flag == "--order" { "order --csv" } else { "design --json" }
        ))),
        _ => Ok(()),
    }
}

/// Takes the stock file's lock for the whole read-modify-write (none for a dry run, which writes nothing), so
/// that a second take or add waits for this one instead of overwriting it.
fn lock(path: &Path, args: &EditArgs) -> Result<Option<save::EditLock>, Failure> {
    if args.dry_run {
        return Ok(None);
    }
    save::lock_for_edit(path, save::lock_wait_from_env())
        .map(Some)
        .map_err(|e| Failure::Io(e.to_string()))
}

/// Loads a stock file for editing, and says if an interrupted write left a temporary file beside it.
fn load_for_edit(path: &Path, defaults: &DefaultArgs) -> Result<StockFile, Failure> {
    let sf = StockFile::load(path, defaults.resolve()?).map_err(input)?;
    warn_all(&sf.stock.warnings);
    warn_all(&defaults_hint(&sf.stock));
    let stale: Vec<String> = save::leftovers(path)
        .iter()
        .map(|p| {
            format!(
                "{} looks left over from an interrupted write; it is not the stock file and can be deleted once no biasfit is running",
                p.display()
            )
        })
        .collect();
    warn_all(&stale);
    Ok(sf)
}

/// A refused take or add: a short stock cannot build the design; anything else is bad input.
fn refused(e: TakeError) -> Failure {
    match e {
        TakeError::Short { .. } => Failure::Infeasible(e.to_string()),
        _ => Failure::Input(e.to_string()),
    }
}

/// What `--json` prints for a take or an add.
#[derive(Serialize)]
struct EditReport<'a> {
    #[serde(flatten)]
    edit: &'a Edit,
    /// Whether the file was rewritten.
    written: bool,
    /// Where the previous contents were kept, when it was.
    backup: Option<String>,
}

/// Writes the edit (unless it changes nothing or this is a dry run) and reports it.
fn finish(
    path: &Path,
    sf: &StockFile,
    edit: Edit,
    args: &EditArgs,
    out: &mut Out,
) -> Result<(), Failure> {
    let mut backup = None;
    if !args.dry_run && !edit.is_empty() {
        let done = Saver::with_test_hooks_from_env()
            .replace(path, &sf.bytes, &edit.contents)
            .map_err(|e| Failure::Io(e.to_string()))?;
        warn_all(&done.notes);
        backup = Some(done.backup.display().to_string());
    }
    if args.json {
        return out.json(&EditReport {
            edit: &edit,
            written: backup.is_some(),
            backup,
        });
    }
    out.text(&edit.render())?;
    match (&backup, args.dry_run) {
        (Some(b), _) => out.text(&format!("\nprevious contents kept in {b}\n")),
        (None, true) if !edit.is_empty() => out.text("\ndry run: nothing was written\n"),
        _ => Ok(()),
    }
}

/// Runs `biasfit stock withdraw` (or its old name, `stock take`).
fn take(args: TakeArgs, out: &mut Out) -> Result<(), Failure> {
    not_the_stock("--result", &args.result, &args.stock)?;
    let _lock = lock(&args.stock, &args.edit)?;
    let sf = load_for_edit(&args.stock, &args.edit.defaults)?;
    let result = stocktake::load_result(&args.result).map_err(refused)?;
    let picks = result
        .wanted(&args.result.display().to_string(), args.copies)
        .map_err(refused)?;
    let edit = stocktake::take(&sf, &picks).map_err(refused)?;
    finish(&args.stock, &sf, edit, &args.edit, out)
}

/// Runs `biasfit stock add`.
fn add(args: AddArgs, out: &mut Out) -> Result<(), Failure> {
    let defaults = args.edit.defaults.resolve()?;
    not_the_stock("--order", &args.order, &args.stock)?;
    let _lock = lock(&args.stock, &args.edit)?;
    let sf = load_for_edit(&args.stock, &args.edit.defaults)?;
    let arrivals = orderfile::load(&args.order, defaults).map_err(input)?;
    warn_all(&arrivals.warnings);
    let order = args.order.display().to_string();
    let edit = stocktake::add(&sf, &order, &arrivals.rows).map_err(refused)?;
    finish(&args.stock, &sf, edit, &args.edit, out)
}
