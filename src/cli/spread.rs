//! `biasfit spread FILE (--use ... | --result design.json)`: the worst case, Monte Carlo and sensitivities of
//! stages built from given networks.

use super::check::networks;
use super::drawings::DrawingArgs;
use super::flags::whole;
use super::ideal::{stages, PartArgs};
use super::output::Kind;
use super::{input, Failure, Out};
use biasfit::report::html::{pick_list, SheetStage};
use biasfit::report::result::{read_result, NotAResult, ResultError};
use biasfit::report::spread::{render_spread, render_spread_svg, SpreadReport};
use biasfit::spread::{analyse, Dist, Options};
use biasfit::stage::{SlotNetworks, Stage};
use biasfit::units::Celsius;
use clap::{Args, ValueEnum};
use std::path::PathBuf;

/// How resistor values are drawn, on the command line.
#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum DistArg {
    /// Anywhere within the tolerance, equally likely
    Uniform,
    /// Normal, the tolerance at three standard deviations, cut off at the tolerance
    Normal,
}

/// Arguments of `biasfit spread`.
#[derive(Debug, Args)]
#[command(group(clap::ArgGroup::new("built").required(true).args(["slots", "result"])))]
pub struct SpreadArgs {
    /// The design file (TOML)
    pub file: PathBuf,
    /// The networks, as SLOT=NETWORK pairs joined by commas: R1=15k,R2=3k3,RC=2k2,RE=(220+47)|1k
    #[arg(long = "use", value_name = "SLOTS", conflicts_with = "result")]
    pub slots: Vec<String>,
    /// A design result to read the networks from (what biasfit design --json writes)
    #[arg(long, value_name = "FILE")]
    pub result: Option<PathBuf>,
    /// The stage or circuit (its name, or its number from 1, stages first); needed with --use when the
    /// file has several
    #[arg(long, visible_alias = "circuit", value_name = "NAME")]
    pub stage: Option<String>,
    #[command(flatten)]
    pub parts: PartArgs,
    /// Monte Carlo builds per stage or circuit
    #[arg(long, value_name = "N", default_value_t = 20_000, allow_negative_numbers = true,
          value_parser = whole::<usize>(1, MAX_RUNS as u64, "a number of builds"))]
    pub runs: usize,
    /// Seed of the Monte Carlo draws (the same seed gives the same builds)
    #[arg(long, value_name = "S", default_value_t = 1, allow_negative_numbers = true,
          value_parser = whole::<u64>(0, u64::MAX, "a seed"))]
    pub seed: u64,
    /// Temperature range of the worst case, in °C [default: the design's limits.temperature, else -20..70]
    #[arg(long, value_name = "LO..HI", allow_hyphen_values = true)]
    pub temp: Option<String>,
    /// How resistor values are drawn within their tolerance
    #[arg(long, value_enum, default_value_t = DistArg::Uniform)]
    pub dist: DistArg,
    /// Drawings into DIR: each stage's load line with the Monte Carlo cloud, its schematic, and the IC and
    /// VCE histograms (histograms.svg); --html FILE writes the build sheet
    #[command(flatten)]
    pub drawings: DrawingArgs,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

/// The largest number of builds accepted: a yield is then known to ±0.04 % (one standard error at worst), far
/// past any need, and the builds' samples still fit in about 50 MB; a typo cannot hold the machine.
const MAX_RUNS: usize = 2_000_000;

/// Reads "LO..HI" in °C ("-20..70", "0..50", "-10 .. 85 °C").
pub fn parse_range(text: &str) -> Result<(Celsius, Celsius), Failure> {
    let refuse = |why: &str| {
        Failure::Input(format!(
            "--temp {text}: {why}; expected a range in °C as LO..HI, such as -20..70"
        ))
    };
    let (lo, hi) = text
        .split_once("..")
        .ok_or_else(|| refuse("there is no '..'"))?;
    let num = |s: &str| -> Result<f64, Failure> {
        let s = s.trim().trim_end_matches("°C").trim_end_matches('C').trim();
        let x: f64 = s
            .replace('−', "-")
            .parse()
            .map_err(|_| refuse(&format!("\"{}\" is not a number", s)))?;
        // The same bounds as a design file's temperatures.
        if (-100.0..=300.0).contains(&x) {
            Ok(x)
        } else {
            Err(refuse(&format!("{x} °C is outside -100 to 300 °C")))
        }
    };
    let (lo, hi) = (num(lo)?, num(hi)?);
    if lo > hi {
        return Err(refuse("the lower end comes first"));
    }
    Ok((Celsius(lo), Celsius(hi)))
}

/// Runs `biasfit spread`.
pub fn run(args: SpreadArgs, out: &mut Out) -> Result<(), Failure> {
    let mut inputs = vec![("design file", args.file.as_path())];
    if let Some(r) = &args.result {
        inputs.push(("design result", r.as_path()));
    }
    let outputs = args.drawings.outputs(&inputs);
    args.drawings.check(&outputs)?;
    let range = args.temp.as_deref().map(parse_range).transpose()?;
    let file = biasfit::design_file::load(&args.file).map_err(input)?;
    let circuit = super::check::chosen_circuit(
        &file,
        args.stage.as_deref(),
        "pick the one to spread with --stage",
    )?;
    if let Some(c) = circuit {
        return spread_circuit(&args, c, range, out);
    }
    let (design, picked) = stages(&args.file, args.stage.as_deref())?;
    super::ideal::warn_ideal_failures(&design, &picked);
    let chosen: Vec<&Stage> = picked.iter().map(|&i| &design.stages[i]).collect();
    let nets: Vec<SlotNetworks> = match &args.result {
        Some(path) => {
            let bytes = biasfit::input::read(path, "design result").map_err(input)?;
            let text = String::from_utf8(bytes).map_err(|_| {
                Failure::Input(format!(
                    "{}: cannot read the design result: it is not UTF-8 text; expected what biasfit design --json wrote",
                    path.display()
                ))
            })?;
            read_result(&path.display().to_string(), &text, &chosen)
                .map_err(|e| Failure::Input(result_error(&e)))?
        }
        None => {
            if chosen.len() > 1 {
                let names: Vec<String> = chosen.iter().map(|s| format!("\"{}\"", s.name)).collect();
                return Err(Failure::Input(format!(
                    "{} has {} stages ({}); pick the one the --use values are for with --stage, or give --result",
                    design.file,
                    names.len(),
                    names.join(", ")
                )));
            }
            let (tol, watts) = args.parts.resolve()?;
            vec![networks(chosen[0], &args.slots, tol, watts)?]
        }
    };
    let dist = match args.dist {
        DistArg::Uniform => Dist::Uniform,
        DistArg::Normal => Dist::Normal,
    };
    let mut results = Vec::new();
    for (st, n) in chosen.iter().zip(&nets) {
        let opts = Options {
            runs: args.runs,
            seed: args.seed,
            temperatures: range
                .or(st.limits.temperature)
                .unwrap_or(Options::default().temperatures),
            dist,
            ..Options::default()
        };
        let sp = analyse(st, n, &opts).map_err(|e| Failure::Input(e.to_string()))?;
        results.push((*st, n, sp));
    }
    let sheet: Vec<SheetStage> = results
        .iter()
        .map(|(st, n, sp)| {
            let mut s = SheetStage::new(st, n, 1);
            s.load_line = s
                .load_line
                .with_cloud(&sp.monte_carlo.cloud, sp.monte_carlo.runs);
            s.notes
                .push(biasfit::report::spread::yield_line(&sp.monte_carlo));
            s
        })
        .collect();
    let report = SpreadReport::new(results);
    if args.drawings.wanted() {
        let title = format!("{}: spread", design.file);
        args.drawings.write(
            &outputs,
            out,
            &title,
            &sheet,
            &pick_list(&sheet),
            &report.cautions,
        )?;
        if let Some(dir) = &args.drawings.svg {
            let path = dir.join("histograms.svg");
            let svg = render_spread_svg(&report);
            outputs.write("--svg", &path, Kind::Svg, svg.as_bytes(), out)?;
        }
    }
    if args.json {
        out.json(&report)
    } else {
        out.text(&render_spread(&report))
    }
}

/// `spread` on a circuit of the user's own, built from `--use`.
fn spread_circuit(
    args: &SpreadArgs,
    c: &biasfit::circuit::Circuit,
    range: Option<(Celsius, Celsius)>,
    out: &mut Out,
) -> Result<(), Failure> {
    if args.result.is_some() {
        return Err(Failure::Input(format!(
            "circuit \"{}\": --result reads stage designs only so far; give the circuit's networks with --use",
            c.name
        )));
    }
    if args.drawings.wanted() {
        return Err(Failure::Input(format!(
            "circuit \"{}\": the drawings and the build sheet are made for [[stage]] tables only so far; leave out --svg and --html",
            c.name
        )));
    }
    let (tol, watts) = args.parts.resolve()?;
    let c = &c.with_assumed_parts(tol, watts);
    let nets = super::check::circuit_networks(c, &args.slots, tol, watts)?;
    let opts = Options {
        runs: args.runs,
        seed: args.seed,
        temperatures: range
            .or(c.limits.temperature)
            .unwrap_or(Options::default().temperatures),
        dist: match args.dist {
            DistArg::Uniform => Dist::Uniform,
            DistArg::Normal => Dist::Normal,
        },
        ..Options::default()
    };
    let progress = super::output::Progress::start("spreading", None);
    let report = biasfit::report::circuit::CircuitReport::new(c, &nets)
        .map_err(|e| super::check::unbuildable(&args.file, &e))?;
    let spread = biasfit::spread::circuit::spread_circuit(c, &nets, tol, &opts).map_err(input)?;
    drop(progress);
    let report = biasfit::report::spread::SpreadReport::of_circuit(report, spread);
    if args.json {
        out.json(&report)
    } else {
        out.text(&render_spread(&report))
    }
}

/// A design result refused, with the command that writes one when the file is not one at all.
fn result_error(e: &ResultError) -> String {
    let how = match e.not_a_result {
        Some(NotAResult::NotJson) => "; expected the output of biasfit design --json",
        Some(NotAResult::NoStages) => ", as biasfit design --json writes",
        Some(NotAResult::OtherDesign) => {
            "; expected what biasfit design --json wrote for this design file"
        }
        None => "",
    };
    format!("{e}{how}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_temperature_ranges() {
        for (s, lo, hi) in [
            ("-20..70", -20.0, 70.0),
            ("0..50", 0.0, 50.0),
            (" -10 .. 85 °C", -10.0, 85.0),
            ("25..25", 25.0, 25.0),
            ("−40..125", -40.0, 125.0),
        ] {
            let (a, b) = parse_range(s).unwrap_or_else(|_| panic!("{s}"));
            assert_eq!((a.0, b.0), (lo, hi), "{s}");
        }
        for s in [
            "", "20", "70..-20", "a..b", "-300..0", "0..1e9", "NaN..1", "0..301",
        ] {
            assert!(parse_range(s).is_err(), "{s}");
        }
    }
}
