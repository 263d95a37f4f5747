//! The spread report: each stage's object (as `check` reports it) with the spread's keys beside it, `worst`,
//! `monte_carlo`, `sensitivity` and `dominant`, plus pure renderers for people (aligned text with the
//! histograms) and for a build sheet (one SVG of every stage's histograms).

use super::histogram::{self, share, Axis};
use super::table::{cautions, heading, pnp_note, Grid};
use super::{Report, StageReport};
use crate::notation::{code, trim_number};
use crate::spread::{Corner, Extremes, Quantity, Sensitivity, StageSpread, Summary};
use crate::stage::{SlotNetworks, Stage};
use crate::units::{Amps, Ohms, Tolerance, Volts};
use serde::Serialize;
use std::fmt::Write;

/// One stage: its report object and its spread, serialised as one JSON object.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SpreadStage {
    /// The stage object shared with `check`.
    #[serde(flatten)]
    pub stage: StageReport,
    /// The spread's findings.
    #[serde(flatten)]
    pub spread: StageSpread,
}

/// One circuit: its report object, as `check` gives it, with the spread under the key `spread`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SpreadCircuit {
    /// The circuit object shared with `check`.
    #[serde(flatten)]
    pub circuit: super::circuit::CircuitReport,
    /// The spread's findings.
    pub spread: crate::spread::circuit::CircuitSpread,
}

/// The whole spread report: `{"stages": [...], "circuits": [...], "cautions": [...]}`, with `circuits` left
/// out when there are none.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SpreadReport {
    /// One entry per stage.
    pub stages: Vec<SpreadStage>,
    /// One entry per circuit.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub circuits: Vec<SpreadCircuit>,
    /// Safety cautions, as `check` gives them.
    pub cautions: Vec<String>,
}

impl SpreadReport {
    /// A report of stages, each with the networks it was built from and its spread.
    pub fn new(stages: Vec<(&Stage, &SlotNetworks, StageSpread)>) -> SpreadReport {
        let stages: Vec<SpreadStage> = stages
            .into_iter()
            .map(|(st, nets, spread)| SpreadStage {
                stage: StageReport::new(st, nets),
                spread,
            })
            .collect();
        let cautions = Report::new(stages.iter().map(|s| s.stage.clone()).collect()).cautions;
        SpreadReport {
            stages,
            circuits: Vec::new(),
            cautions,
        }
    }

    /// A report of one circuit's spread, with the cautions its report calls for.
    pub fn of_circuit(
        circuit: super::circuit::CircuitReport,
        spread: crate::spread::circuit::CircuitSpread,
    ) -> SpreadReport {
        let cautions = circuit.cautions();
        SpreadReport {
            stages: Vec::new(),
            circuits: vec![SpreadCircuit { circuit, spread }],
            cautions,
        }
    }
}

/// A slope with its sign and 3 decimals ("+0.912"), or "-" when there is none (cut off).
fn slope(x: f64) -> String {
    if x.is_finite() {
        // A slope that rounds to zero prints without a sign that rounding noise chose.
        let x = if x.abs() < 5e-4 { 0.0 } else { x };
        format!("{x:+.3}")
    } else {
        "-".into()
    }
}

/// A list in words: "a", "a and b", "a, b and c".
fn words(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [init @ .., last] => format!("{} and {last}", init.join(", ")),
    }
}

/// Where a corner is: each slot's end, beta and temperature.
fn corner_text(c: &Corner) -> String {
    let slots: Vec<String> = c
        .high
        .iter()
        .map(|(s, high)| format!("{s} {}", if *high { "high" } else { "low" }))
        .collect();
    format!(
        "{}, beta {}, {}",
        slots.join(", "),
        trim_number(c.beta, 3),
        c.temperature
    )
}

fn extremes_row<T: Quantity>(
    g: &mut Grid,
    name: &str,
    limit: String,
    e: &Extremes<T>,
    show: &dyn Fn(T) -> String,
) {
    g.row([
        name.to_string(),
        limit,
        show(e.min.value),
        e.min.region.name().to_string(),
        show(e.max.value),
        e.max.region.name().to_string(),
    ]);
}

fn summary_row<T: Quantity + std::fmt::Display>(
    g: &mut Grid,
    name: &str,
    x: &Summary<T>,
    target: f64,
) {
    g.row([
        name.to_string(),
        x.mean.to_string(),
        x.sd.to_string(),
        share(x.sd.si() / target),
        x.min.to_string(),
        x.max.to_string(),
    ]);
}

fn built_from(s: &StageReport) -> String {
    let slots: Vec<String> = s
        .slots
        .0
        .iter()
        .map(|(slot, sr)| {
            let mut tols: Vec<String> = sr
                .parts
                .iter()
                .map(|p| Tolerance(p.tolerance).to_string())
                .collect();
            tols.dedup();
            format!("{slot} {} ({})", sr.network, tols.join(", "))
        })
        .collect();
    format!("  built from {}\n", slots.join("; "))
}

fn worst_lines(s: &SpreadStage) -> String {
    let (w, t) = (&s.spread.worst, &s.stage.target);
    let (b_min, b_max) = s.spread.monte_carlo.beta;
    let temps: Vec<String> = w.temperatures.iter().map(|t| t.to_string()).collect();
    let mut out = format!(
        "\n  worst case over {} corners: every resistor at either end of its tolerance, beta {} and {}, at {}\n",
        w.corners,
        trim_number(b_min, 3),
        trim_number(b_max, 3),
        words(&temps)
    );
    let mut g = Grid::new(1);
    g.row(["", "target", "lowest", "", "highest", ""]);
    extremes_row(&mut g, "IC", Amps(t.ic).to_string(), &w.ic, &|x| {
        x.to_string()
    });
    extremes_row(&mut g, "VCE", Volts(t.vce).to_string(), &w.vce, &|x| {
        x.to_string()
    });
    extremes_row(&mut g, "VE", Volts(t.ve).to_string(), &w.ve, &|x| {
        x.to_string()
    });
    if let Some(e) = &w.stiffness {
        let limit = w
            .stiffness_limit
            .map_or(String::new(), |l| format!("≥ {}", trim_number(l, 3)));
        extremes_row(&mut g, "stiffness (× IB)", limit, e, &|x| {
            if x.is_finite() {
                trim_number(x, 3)
            } else {
                "∞".into()
            }
        });
    }
    let hottest = w
        .temperatures
        .last()
        .map(|t| format!(" at {t}"))
        .unwrap_or_default();
    let limit = w
        .power_limit
        .map_or(String::new(), |p| format!("≤ {p}{hottest}"));
    extremes_row(
        &mut g,
        "transistor power",
        limit,
        &w.transistor_power,
        &|x| x.to_string(),
    );
    extremes_row(
        &mut g,
        "hottest resistor",
        "≤ 100 % of derated".into(),
        &w.resistor_load,
        &share,
    );
    out.push_str(&g.render("    "));
    for (name, lo, hi) in [
        ("IC", &w.ic.min.corner, &w.ic.max.corner),
        ("VCE", &w.vce.min.corner, &w.vce.max.corner),
    ] {
        let _ = writeln!(out, "  {name} is lowest with {}", corner_text(lo));
        let _ = writeln!(out, "  {name} is highest with {}", corner_text(hi));
    }
    out
}

fn monte_carlo_lines(s: &SpreadStage) -> String {
    let (mc, t) = (&s.spread.monte_carlo, &s.stage.target);
    let mut out = format!(
        "\n  Monte Carlo: {} builds (seed {}), each resistor {} within its tolerance, beta uniform from {} to {}, at {}\n",
        mc.runs,
        mc.seed,
        mc.dist.name(),
        trim_number(mc.beta.0, 3),
        trim_number(mc.beta.1, 3),
        mc.temperature
    );
    let _ = writeln!(
        out,
        "    active, with IC and VCE both within ±10 % of target: {}; within ±5 %: {}",
        share(mc.yield_10),
        share(mc.yield_5)
    );
    if mc.active < 1.0 {
        let _ = writeln!(
            out,
            "    builds out of the active region: {}",
            share(1.0 - mc.active)
        );
    }
    let mut g = Grid::new(1);
    g.row(["", "mean", "sd", "sd of target", "lowest", "highest"]);
    summary_row(&mut g, "IC", &mc.ic, t.ic);
    summary_row(&mut g, "VCE", &mc.vce, t.vce);
    out.push_str(&g.render("    "));
    for (h, axis) in [
        (
            &mc.ic_histogram,
            Axis {
                name: "IC",
                unit: "A",
                target: t.ic,
            },
        ),
        (
            &mc.vce_histogram,
            Axis {
                name: "VCE",
                unit: "V",
                target: t.vce,
            },
        ),
    ] {
        out.push('\n');
        for line in histogram::render_text(h, &axis).lines() {
            let _ = writeln!(out, "    {line}");
        }
    }
    out
}

fn sensitivity_lines(s: &SpreadStage) -> String {
    let sens = &s.spread.sensitivity;
    let mut out = format!(
        "\n  sensitivity at the nominal build, typical beta and {}: % change of IC and VCE per 1 % change of each\n  source; reach is how far the source can move (half its band, in ln terms), and moves is slope × reach\n",
        s.spread.monte_carlo.temperature
    );
    let mut g = Grid::new(1);
    g.row([
        "source",
        "value",
        "reach",
        "IC",
        "VCE",
        "IC moves",
        "VCE moves",
    ]);
    let row = |g: &mut Grid, name: String, value: String, x: &Sensitivity| {
        g.row([
            name,
            value,
            format!("±{}", share(x.reach)),
            slope(x.ic),
            slope(x.vce),
            format!("±{}", share(x.ic_spread)),
            format!("±{}", share(x.vce_spread)),
        ]);
    };
    for (slot, x) in &sens.slots {
        let value = s
            .stage
            .slots
            .0
            .iter()
            .find(|(k, _)| k == slot)
            .map_or(String::new(), |(_, r)| code(Ohms(r.ohms)));
        row(&mut g, slot.to_string(), value, x);
    }
    row(
        &mut g,
        "beta".into(),
        trim_number(s.stage.op.beta, 3),
        &sens.beta,
    );
    out.push_str(&g.render("    "));
    let _ = writeln!(
        out,
        "  IC's spread comes mostly from {}, VCE's from {}",
        sens.dominant_ic.name(),
        sens.dominant_vce.name()
    );
    out
}

/// The spread report for people: per stage, the parts, the worst case, the Monte Carlo with its
/// histograms, and the sensitivities; then the cautions.
pub fn render_spread(r: &SpreadReport) -> String {
    let mut out = String::new();
    for (i, s) in r.stages.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        out.push_str(&heading(&s.stage));
        out.push_str(pnp_note(&s.stage));
        out.push_str(&built_from(&s.stage));
        out.push_str(&worst_lines(s));
        out.push_str(&monte_carlo_lines(s));
        out.push_str(&sensitivity_lines(s));
    }
    for (i, c) in r.circuits.iter().enumerate() {
        if i > 0 || !r.stages.is_empty() {
            out.push('\n');
        }
        out.push_str(&circuit_spread(c));
    }
    out.push_str(&cautions(&Report {
        stages: Vec::new(),
        circuits: Vec::new(),
        cautions: r.cautions.clone(),
    }));
    out
}

/// The combined yield of a Monte Carlo run in one sentence, for the head of a drawing or a sheet.
pub fn yield_line(mc: &crate::spread::MonteCarlo) -> String {
    format!(
        "IC and VCE both within ±10 % of target in {} of {} builds (both within ±5 %: {})",
        share(mc.yield_10),
        histogram::grouped(mc.runs as u64),
        share(mc.yield_5)
    )
}

/// One SVG of every stage's IC and VCE histograms, side by side, a row per stage.
pub fn render_spread_svg(r: &SpreadReport) -> String {
    let charts: Vec<_> = r
        .stages
        .iter()
        .flat_map(|s| {
            let (mc, t) = (&s.spread.monte_carlo, &s.stage.target);
            [
                (
                    &mc.ic_histogram,
                    Axis {
                        name: "IC",
                        unit: "A",
                        target: t.ic,
                    },
                    format!(
                        "{}: IC of {} builds",
                        s.stage.name,
                        histogram::grouped(mc.runs as u64)
                    ),
                ),
                (
                    &mc.vce_histogram,
                    Axis {
                        name: "VCE",
                        unit: "V",
                        target: t.vce,
                    },
                    format!(
                        "{}: VCE of {} builds",
                        s.stage.name,
                        histogram::grouped(mc.runs as u64)
                    ),
                ),
            ]
        })
        .collect();
    // The combined yield concerns both charts of a row, so it heads the row.
    let headings: Vec<String> = r
        .stages
        .iter()
        .map(|s| format!("{}: {}", s.stage.name, yield_line(&s.spread.monte_carlo)))
        .collect();
    histogram::render_svg_headed(&charts, 2, &headings)
}

/// One circuit's spread: each target's Monte Carlo and worst case, the yield, and what moves each target.
fn circuit_spread(c: &SpreadCircuit) -> String {
    use crate::notation::{amps, volts};
    let sp = &c.spread;
    let mut out = format!(
        "circuit \"{}\": {} builds ({} resistors, device parameters uniform over their ranges), seed {}; worst case over {} to {}\n",
        c.circuit.name,
        sp.runs,
        sp.dist.name(),
        sp.seed,
        crate::units::Celsius(sp.temperatures.0),
        crate::units::Celsius(sp.temperatures.1),
    );
    let mut g = Grid::new(1);
    g.row([
        "target",
        "aim",
        "as built",
        "mean",
        "sd",
        "builds min",
        "builds max",
        "worst low",
        "worst high",
        "±10 %",
        "±5 %",
    ]);
    for t in &sp.targets {
        let show = |x: f64| if t.amps { amps(x) } else { volts(x) };
        g.row([
            t.what.clone(),
            show(t.target),
            show(t.nominal),
            show(t.monte_carlo.mean),
            show(t.monte_carlo.sd),
            show(t.monte_carlo.min),
            show(t.monte_carlo.max),
            show(t.worst.0),
            show(t.worst.1),
            share(t.within_10),
            share(t.within_5),
        ]);
    }
    out.push('\n');
    out.push_str(&g.render("  "));
    let _ = writeln!(
        out,
        "\n  every target within ±10 %: {} of builds; within ±5 %: {} (deviations times their weights; the bench rule, common practice, no source)",
        share(sp.yield_10),
        share(sp.yield_5)
    );
    if let Some(all) = sp.requirements_met {
        let each: Vec<String> = sp
            .requirements
            .iter()
            .map(|r| format!("{} {}", r.what, share(r.met)))
            .collect();
        let _ = writeln!(
            out,
            "  every requirement met (each build with its own parts): {} of builds ({})",
            share(all),
            each.join("; ")
        );
    }
    if sp.unsolved > 0 {
        let _ = writeln!(
            out,
            "  {} builds had no operating point and count as out",
            sp.unsolved
        );
    }
    let mut g = Grid::new(2);
    let mut head = vec!["part".to_string(), "varied".to_string()];
    head.extend(sp.targets.iter().map(|t| t.what.clone()));
    g.row(head);
    for s in &sp.sensitivities {
        let mut row = vec![
            s.part.clone(),
            if s.over == "range" {
                "low to high end".to_string()
            } else {
                "per 1 % of R".to_string()
            },
        ];
        row.extend(s.effect.iter().map(|e| {
            if !e.is_finite() {
                "-".to_string()
            } else if s.over == "range" {
                format!("{:+.2} %", e * 100.0)
            } else {
                format!("{:+.3} %", e)
            }
        }));
        g.row(row);
    }
    out.push_str("\n  what moves each target (relative change):\n");
    out.push_str(&g.render("  "));
    out
}
