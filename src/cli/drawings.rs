//! `--svg DIR` and `--html FILE`: the drawings and the build sheet written to files, each atomically
//! through [`biasfit::save`] (a temporary file in the same folder, then a rename), so a reader never sees
//! half a file. Shared by every command that has built stages to show (check now; design and spread can
//! flatten the same arguments).

use super::output::{to_stdout, Kind, Outputs};
use super::{Failure, Out};
use biasfit::report::design::PickLine;
use biasfit::report::html::{build_sheet, SheetStage};
use biasfit::report::svg::{load_line_svg, schematic_svg};
use clap::Args;
use std::path::{Path, PathBuf};

/// Where to write drawings and the build sheet.
#[derive(Debug, Args, Clone, Default)]
pub struct DrawingArgs {
    /// Write each stage's load line and schematic as SVG files into this folder (made if missing)
    #[arg(long, value_name = "DIR")]
    pub svg: Option<PathBuf>,
    /// Write a self-contained HTML build sheet (drawings inline, prints on A4) to this file (- for standard output)
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,
    /// Replace an existing output file that biasfit did not write (an input is never replaced)
    #[arg(long)]
    pub force: bool,
}

/// A file-name stem from a stage name: lower-case letters and digits, other runs of characters as one '-'.
pub fn slug(name: &str) -> String {
    let mut out = String::new();
    for c in name.chars().flat_map(char::to_lowercase) {
        if c.is_ascii_alphanumeric() {
            out.push(c);
        } else if !out.ends_with('-') {
            out.push('-');
        }
    }
    out.trim_matches('-')
        .chars()
        .take(60)
        .collect::<String>()
        .trim_end_matches('-')
        .to_string()
}

/// Distinct file-name stems for the stages, in order: a slug, "stage-N" when the name has no letters or
/// digits, and "-2", "-3" … after a stem already taken.
pub fn stems(names: &[&str]) -> Vec<String> {
    let mut taken: Vec<String> = Vec::new();
    for (i, n) in names.iter().enumerate() {
        let base = match slug(n) {
            s if s.is_empty() => format!("stage-{}", i + 1),
            s => s,
        };
        let mut stem = base.clone();
        let mut k = 2;
        while taken.contains(&stem) {
            stem = format!("{base}-{k}");
            k += 1;
        }
        taken.push(stem);
    }
    taken
}

impl DrawingArgs {
    /// Whether any output was asked for.
    pub fn wanted(&self) -> bool {
        self.svg.is_some() || self.html.is_some()
    }

    /// The guard for this command's outputs: none may land on one of `inputs`.
    pub fn outputs(&self, inputs: &[(&'static str, &Path)]) -> Outputs {
        Outputs::new(inputs, self.force)
    }

    /// Refuses, before any work, an output that would land on an input or on a file biasfit did not write.
    pub fn check(&self, outputs: &Outputs) -> Result<(), Failure> {
        if let Some(dir) = &self.svg {
            if to_stdout(dir) {
                return Err(Failure::Input(
                    "--svg -: expected a folder to write the SVG files into; standard output cannot hold several files (use --html - for one file)".into(),
                ));
            }
            // The folder itself only must not be an input; each file in it is checked as it is written.
            outputs.not_an_input("--svg", dir)?;
        }
        if let Some(file) = &self.html {
            outputs.check("--html", file, Kind::Html)?;
        }
        Ok(())
    }

    /// Writes what was asked for (each file says on stderr that it was written).
    pub fn write(
        &self,
        outputs: &Outputs,
        out: &mut Out,
        title: &str,
        stages: &[SheetStage],
        pick: &[PickLine],
        cautions: &[String],
    ) -> Result<(), Failure> {
        self.check(outputs)?;
        if let Some(dir) = &self.svg {
            std::fs::create_dir_all(dir).map_err(|e| {
                Failure::Io(format!(
                    "--svg {}: cannot make the folder: {e}",
                    dir.display()
                ))
            })?;
            let names: Vec<&str> = stages.iter().map(|s| s.report.name.as_str()).collect();
            for (s, stem) in stages.iter().zip(stems(&names)) {
                for (kind, svg) in [
                    ("load-line", load_line_svg(&s.load_line)),
                    ("schematic", schematic_svg(&s.schematic)),
                ] {
                    let path = dir.join(format!("{stem}-{kind}.svg"));
                    outputs.write("--svg", &path, Kind::Svg, svg.as_bytes(), out)?;
                }
            }
        }
        if let Some(file) = &self.html {
            let sheet = build_sheet(title, stages, pick, cautions);
            outputs.write("--html", file, Kind::Html, sheet.as_bytes(), out)?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slugs_are_safe_file_names() {
        assert_eq!(slug("Line driver"), "line-driver");
        assert_eq!(
            slug("  Stage 2: mic/pre-amp (v1.3) "),
            "stage-2-mic-pre-amp-v1-3"
        );
        assert_eq!(slug("../../etc"), "etc");
        assert_eq!(slug("Ünïcode σ"), "n-code");
        assert_eq!(
            stems(&["A b", "a-b", "***", "a b"]),
            ["a-b", "a-b-2", "stage-3", "a-b-3"]
        );
    }
}
