//! `biasfit new [NAME [FILE]]`: list the starter design files, print one, or write one to a new file.

use super::{Failure, Out};
use biasfit::starter::{self, STARTERS};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `biasfit new`.
#[derive(Debug, Args)]
pub struct NewArgs {
    /// The starter to write (leave out to list them)
    pub name: Option<String>,
    /// Where to write it (leave out to print it); an existing file is never overwritten
    pub file: Option<PathBuf>,
}

/// Runs `biasfit new`.
pub fn run(args: NewArgs, out: &mut Out) -> Result<(), Failure> {
    let Some(name) = args.name else {
        return out.text(&list());
    };
    let s = starter::find(&name).map_err(super::input)?;
    let Some(file) = args.file else {
        return out.text(s.text);
    };
    if std::fs::symlink_metadata(&file).is_ok() {
        return Err(Failure::Input(format!(
            "{} already exists; give a new file name, or remove it first",
            file.display()
        )));
    }
    let written = biasfit::save::Saver::new()
        .write(&file, s.text.as_bytes())
        .map_err(|e| Failure::Io(e.to_string()))?;
    super::output::warn_all(&written.notes);
    let next = if s.circuit {
        let slots = biasfit::design_file::parse(s.name, s.text)
            .ok()
            .and_then(|d| d.circuits.into_iter().next())
            .map(|c| {
                c.slots()
                    .iter()
                    .map(|&i| format!("{}=...", c.parts[i].name))
                    .collect::<Vec<_>>()
                    .join(",")
            })
            .unwrap_or_else(|| "SLOT=...".into());
        format!(
            "check a build with `biasfit check {} --use {slots}`",
            file.display()
        )
    } else {
        format!(
            "fill it from your stock with `biasfit design {} --stock YOUR-STOCK.csv`",
            file.display()
        )
    };
    super::output::note(&format!(
        "wrote {}; change its values to your board's, then {next}",
        file.display()
    ));
    Ok(())
}

/// The starters as a table: name, kind, what it is.
fn list() -> String {
    let width = STARTERS.iter().map(|s| s.name.len()).max().unwrap_or(0);
    let mut text = String::from("starter design files (biasfit new NAME FILE writes one):\n\n");
    for s in STARTERS {
        let kind = if s.circuit { "circuit" } else { "stage" };
        text.push_str(&format!("  {:width$}  {kind:7}  {}\n", s.name, s.what));
    }
    text
}
