//! The design file as a whole: its `[[stage]]` tables (read by [`crate::stage::design`]) and its
//! `[[circuit]]` tables (read by [`crate::circuit::file`]), from one read of the file.
//!
//! The two readers stay separate because a stage is a closed-form topology and a circuit a netlist of
//! named parts; each refuses what it does not know inside its own tables, and both accept the other's key
//! at the top level. This module is where a command that takes either asks for both.

use crate::circuit::file::CircuitFileError;
use crate::circuit::Circuit;
use crate::stage::{DesignError, Stage};
use std::path::Path;

/// Everything a design file describes, in file order within each kind.
#[derive(Clone, Debug, PartialEq)]
pub struct DesignFile {
    /// The file it came from, as given.
    pub file: String,
    /// The `[[stage]]` tables.
    pub stages: Vec<Stage>,
    /// The `[[circuit]]` tables.
    pub circuits: Vec<Circuit>,
}

/// One stage or circuit of a design file, as picked by name.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Position<'d> {
    /// A closed-form stage.
    Stage(&'d Stage),
    /// A circuit of the user's own.
    Circuit(&'d Circuit),
}

impl DesignFile {
    /// The stage or circuit with this name; a number from 1 counts the stages, then the circuits, in file
    /// order within each kind.
    pub fn position(&self, which: &str) -> Option<Position<'_>> {
        if let Some(s) = self.stages.iter().find(|s| s.name == which) {
            return Some(Position::Stage(s));
        }
        if let Some(c) = self.circuits.iter().find(|c| c.name == which) {
            return Some(Position::Circuit(c));
        }
        let i = which.trim().parse::<usize>().ok()?.checked_sub(1)?;
        match self.stages.get(i) {
            Some(s) => Some(Position::Stage(s)),
            None => self
                .circuits
                .get(i - self.stages.len())
                .map(Position::Circuit),
        }
    }

    /// Every position's name, stages first, each quoted.
    pub fn names(&self) -> Vec<String> {
        self.stages
            .iter()
            .map(|s| format!("\"{}\"", s.name))
            .chain(
                self.circuits
                    .iter()
                    .map(|c| format!("circuit \"{}\"", c.name)),
            )
            .collect()
    }
}

/// Why a design file was refused.
#[derive(Debug, thiserror::Error)]
pub enum DesignFileError {
    /// A `[[stage]]` table, or the file itself, was refused (boxed: the readers' errors carry whole
    /// texts, and a `Result` should stay small).
    #[error(transparent)]
    Stage(Box<DesignError>),
    /// A `[[circuit]]` table was refused.
    #[error(transparent)]
    Circuit(Box<CircuitFileError>),
    /// The file holds neither.
    #[error("{file}: no [[stage]] or [[circuit]] tables; expected at least one, starting with a line [[stage]] or [[circuit]]")]
    Empty {
        /// The file.
        file: String,
    },
}

impl From<DesignError> for DesignFileError {
    fn from(e: DesignError) -> DesignFileError {
        DesignFileError::Stage(Box::new(e))
    }
}

impl From<CircuitFileError> for DesignFileError {
    fn from(e: CircuitFileError) -> DesignFileError {
        DesignFileError::Circuit(Box::new(e))
    }
}

/// Reads a design file from disk.
pub fn load(path: &Path) -> Result<DesignFile, DesignFileError> {
    let file = path.display().to_string();
    let bytes = crate::input::read(path, "design file").map_err(DesignError::from)?;
    let text = std::str::from_utf8(&bytes).map_err(|e| DesignError::NotUtf8 {
        line: bytes[..e.valid_up_to()]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1,
        file: file.clone(),
    })?;
    parse(&file, text)
}

/// Reads a design file's text; `file` names it in messages.
pub fn parse(file: &str, text: &str) -> Result<DesignFile, DesignFileError> {
    let read_stages = || match crate::stage::design::parse(file, text) {
        Ok(d) => Ok(d.stages),
        Err(DesignError::OnlyCircuits { .. } | DesignError::NoStages { .. }) => Ok(Vec::new()),
        Err(e) => Err(DesignFileError::from(e)),
    };
    let read_circuits = || match crate::circuit::file::parse(file, text) {
        Ok(c) => Ok(c),
        Err(CircuitFileError::NoCircuits { .. }) => Ok(Vec::new()),
        Err(e) => Err(DesignFileError::from(e)),
    };
    // A file that is not valid TOML is refused by whichever reader goes first; the circuit reader's words
    // fit a file that holds circuits (a rail named twice, say), the stage reader's every other file.
    let (stages, circuits) = if text.contains("[[circuit") {
        let circuits = read_circuits()?;
        (read_stages()?, circuits)
    } else {
        (read_stages()?, read_circuits()?)
    };
    if stages.is_empty() && circuits.is_empty() {
        return Err(DesignFileError::Empty { file: file.into() });
    }
    Ok(DesignFile {
        file: file.into(),
        stages,
        circuits,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const STAGE: &str =
        "[[stage]]\nname = \"pre\"\ntopology = \"divider\"\nsupply = 15.0\nload = \"3k9\"\n\
        [stage.transistor]\nbeta = [90, 160, 280]\nvbe = 0.65\n";
    const CIRCUIT: &str = "[[circuit]]\nname = \"leds\"\n[circuit.rails]\nvcc = 12\n\
        [[circuit.part]]\nname = \"R1\"\nkind = \"resistor\"\nbetween = [\"vcc\", \"a\"]\n\
        [[circuit.part]]\nname = \"D1\"\nkind = \"led\"\nanode = \"a\"\ncathode = \"gnd\"\nvolts = 2.0\nat = \"10mA\"\n\
        [[circuit.target]]\npart = \"R1\"\namps = \"8mA\"\n";

    #[test]
    fn a_file_with_both_kinds_gives_both_and_numbers_count_stages_first() {
        let text = format!("{STAGE}{CIRCUIT}");
        let d = match parse("both.toml", &text) {
            Ok(d) => d,
            Err(e) => panic!("{e}"),
        };
        assert_eq!((d.stages.len(), d.circuits.len()), (1, 1));
        assert!(matches!(d.position("1"), Some(Position::Stage(s)) if s.name == "pre"));
        assert!(matches!(d.position("2"), Some(Position::Circuit(c)) if c.name == "leds"));
        assert!(matches!(d.position("leds"), Some(Position::Circuit(_))));
        assert!(d.position("3").is_none());
        assert!(d.position("0").is_none());
    }

    #[test]
    fn a_circuit_alone_is_a_design_file_and_an_empty_file_is_not() {
        let d = parse("c.toml", CIRCUIT).map_err(|e| e.to_string());
        assert_eq!(d.map(|d| (d.stages.len(), d.circuits.len())), Ok((0, 1)));
        let e = parse("e.toml", "# nothing\n")
            .map(|_| ())
            .map_err(|e| e.to_string());
        assert_eq!(
            e,
            Err("e.toml: no [[stage]] or [[circuit]] tables; expected at least one, starting with a line [[stage]] or [[circuit]]".into())
        );
    }
}
