//! The bench report of `biasfit verify`: the readings against the prediction, the verdict, the beta the
//! readings point to and the ranked build faults. [`VerifyReport`] is the `--json` schema,
//!
//! ```text
//! {"verdict":"good"|"acceptable"|"fault", "deviations":{"vb","ve","vc"}, "beta_estimate",
//!  "explanations":[{"fault","slot","score","predicted":{"vb","ve","vc"}}]}
//! ```
//!
//! extended with the stage, the readings, the prediction and its beta range, the beta's range, and per
//! explanation the member, the other slot of a swap, the fitted beta, words for a technician and the faults
//! that read the same. Those voltages are in volts, in the NPN frame (a PNP stage's magnitudes), like every
//! stage report; `nodes` (and each explanation's `nodes`) adds the same voltages as a meter reads them from
//! the circuit's real ground, signed, with `ground` saying where the stage sits. [`render`] is the text for
//! people, in real voltages.

use crate::bench::{Explanation, Fault, Nodes, Verdict, Verification, NODES};
use crate::notation::{engineering, trim_number};
use crate::stage::{SlotNetworks, Stage};
use serde::Serialize;
use std::fmt::Write;

/// Node voltages, volts.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct NodeReport {
    /// Base.
    pub vb: f64,
    /// Emitter.
    pub ve: f64,
    /// Collector.
    pub vc: f64,
}

impl From<&Nodes> for NodeReport {
    fn from(n: &Nodes) -> NodeReport {
        NodeReport {
            vb: n.vb.0,
            ve: n.ve.0,
            vc: n.vc.0,
        }
    }
}

impl NodeReport {
    /// The voltages as a meter reads them from the stage's real ground.
    pub fn real(n: &Nodes, stage: &Stage) -> NodeReport {
        NodeReport {
            vb: stage.real(n.vb).0,
            ve: stage.real(n.ve).0,
            vc: stage.real(n.vc).0,
        }
    }
}

/// The bench's voltages as a meter reads them from the circuit's real ground, signed.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct RealNodes {
    /// The collector-side rail, volts from ground.
    pub collector_rail: f64,
    /// The emitter-side rail, volts from ground.
    pub emitter_rail: f64,
    /// The readings.
    pub measured: MaybeNodes,
    /// Each reading's deviation, signed as the real voltage moves (its size is `deviations`', relative to
    /// the voltage from the emitter-side rail).
    pub deviations: MaybeNodes,
    /// The prediction at typical beta.
    pub predicted: NodeReport,
    /// The prediction at min beta.
    pub predicted_min_beta: NodeReport,
    /// The prediction at max beta.
    pub predicted_max_beta: NodeReport,
}

/// Per-node values that may be missing (a node not measured).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct MaybeNodes {
    /// Base.
    pub vb: Option<f64>,
    /// Emitter.
    pub ve: Option<f64>,
    /// Collector.
    pub vc: Option<f64>,
}

impl From<[Option<f64>; 3]> for MaybeNodes {
    fn from(a: [Option<f64>; 3]) -> MaybeNodes {
        MaybeNodes {
            vb: a[0],
            ve: a[1],
            vc: a[2],
        }
    }
}

/// The member a fault is in.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MemberReport {
    /// Its position in the slot's network, from 1.
    pub index: usize,
    /// Its nominal value, ohms.
    pub ohms: f64,
    /// Where it came from, if known.
    pub location: Option<String>,
    /// The value the fault fits instead, ohms (wrong-value faults).
    pub fitted_ohms: Option<f64>,
}

/// A fault that reads the same as the one it is listed under.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct AlikeReport {
    /// Its kind.
    pub fault: &'static str,
    /// Its slot, if any.
    pub slot: Option<&'static str>,
    /// In words.
    pub description: String,
}

/// One ranked explanation.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ExplanationReport {
    /// The fault's kind: decade-high, decade-low, e12-step-up, e12-step-down, swapped, open, short,
    /// reversed-transistor, missing-ground.
    pub fault: &'static str,
    /// The slot (the first of a swapped pair), or null for the transistor and the ground.
    pub slot: Option<&'static str>,
    /// How well the fault's prediction matches the readings, 0 to 1.
    pub score: f64,
    /// The node voltages it predicts.
    pub predicted: NodeReport,
    /// The other slot of a swap.
    pub with: Option<&'static str>,
    /// The member it is in, for faults of one resistor.
    pub member: Option<MemberReport>,
    /// The beta (reverse beta for a reversed transistor) at the best match.
    pub beta: f64,
    /// The fault in a technician's words.
    pub description: String,
    /// What to check to confirm it.
    pub advice: String,
    /// Faults a meter cannot tell from this one.
    pub alike: Vec<AlikeReport>,
    /// The node voltages it predicts, from real ground.
    pub nodes: NodeReport,
}

/// One tied explanation's prediction of the next measurement.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NextPredictionReport {
    /// The fault's kind.
    pub fault: &'static str,
    /// Its slot, if any.
    pub slot: Option<&'static str>,
    /// In words.
    pub description: String,
    /// What it predicts: volts (from real ground for a node, across for a slot or member), or ohms out of
    /// circuit (null for an open).
    pub value: Option<f64>,
}

/// The measurement that settles a tie between the best explanations.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NextMeasurementReport {
    /// node, across, across-member or out-of-circuit.
    pub kind: &'static str,
    /// The node (VB, VE or VC) for a node reading.
    pub node: Option<&'static str>,
    /// The slot measured across or lifted.
    pub slot: Option<&'static str>,
    /// The member, from 1, for a member of a network.
    pub member: Option<usize>,
    /// "V" or "Ω".
    pub unit: &'static str,
    /// What to measure, in words.
    pub description: String,
    /// Each tied explanation's prediction.
    pub predictions: Vec<NextPredictionReport>,
}

fn next_report(
    n: &crate::bench::next::NextMeasurement,
    nets: &SlotNetworks,
) -> NextMeasurementReport {
    use crate::bench::next::Measurement;
    let (node, slot, member) = match n.what {
        Measurement::Node(name) => (Some(name), None, None),
        Measurement::Across(s) | Measurement::PowerOffAcross(s) => (None, Some(s.name()), None),
        Measurement::AcrossMember(p) | Measurement::OutOfCircuit(p) => {
            let many = nets.get(p.slot).is_some_and(|n| n.part_count() > 1);
            (None, Some(p.slot.name()), many.then_some(p.member + 1))
        }
    };
    NextMeasurementReport {
        kind: n.what.kind(),
        node,
        slot,
        member,
        unit: if n.what.in_ohms() { "Ω" } else { "V" },
        description: n.what.describe(nets),
        predictions: n
            .predictions
            .iter()
            .map(|(f, v)| NextPredictionReport {
                fault: f.kind(),
                slot: f.slot().map(|s| s.name()),
                description: f.describe(nets),
                value: v.is_finite().then_some(*v),
            })
            .collect(),
    }
}

/// Everything `biasfit verify` found.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct VerifyReport {
    /// The stage's name.
    pub stage: String,
    /// good, acceptable or fault.
    pub verdict: &'static str,
    /// Each reading's relative deviation from the prediction at typical beta.
    pub deviations: MaybeNodes,
    /// The beta the readings point to, or null when they do not pin it down (or the design cannot explain
    /// them).
    pub beta_estimate: Option<f64>,
    /// The range of beta the readings allow, given tolerances and a meter's resolution.
    pub beta_range: Option<[f64; 2]>,
    /// Faults that explain the readings better than the design does, best first.
    pub explanations: Vec<ExplanationReport>,
    /// The readings, volts (NPN frame).
    pub measured: MaybeNodes,
    /// The prediction at typical beta, volts.
    pub predicted: NodeReport,
    /// The prediction at min beta.
    pub predicted_min_beta: NodeReport,
    /// The prediction at max beta.
    pub predicted_max_beta: NodeReport,
    /// How well the stage as designed, with beta in its range, matches the readings.
    pub as_built_score: f64,
    /// Whether this is a PNP stage (voltages are then its NPN mirror's).
    pub pnp: bool,
    /// Which side of the stage is the circuit's ground: emitter, collector or between (dual supply).
    pub ground: &'static str,
    /// Whether the readings were taken as the NPN mirror's magnitudes (they matched the design better so).
    pub magnitudes: bool,
    /// The voltages as a meter reads them from real ground.
    pub nodes: RealNodes,
    /// When the best explanations are tied, the one further measurement that separates them best.
    pub next_measurement: Option<NextMeasurementReport>,
}

fn alike(f: &Fault, nets: &SlotNetworks) -> AlikeReport {
    AlikeReport {
        fault: f.kind(),
        slot: f.slot().map(|s| s.name()),
        description: f.describe(nets),
    }
}

fn explanation(e: &Explanation, stage: &Stage, nets: &SlotNetworks) -> ExplanationReport {
    let member = e.fault.place().and_then(|p| {
        crate::bench::faults::member(nets, p).map(|m| MemberReport {
            index: p.member + 1,
            ohms: m.ohms.0,
            location: m.location.clone(),
            fitted_ohms: e.fault.fitted(nets).map(|o| o.0),
        })
    });
    ExplanationReport {
        fault: e.fault.kind(),
        slot: e.fault.slot().map(|s| s.name()),
        score: e.score,
        predicted: NodeReport::from(&e.predicted),
        with: match e.fault {
            Fault::Swapped(_, b) => Some(b.name()),
            _ => None,
        },
        member,
        beta: e.beta,
        description: e.fault.describe(nets),
        advice: e.fault.advice(nets),
        alike: e.alike.iter().map(|f| alike(f, nets)).collect(),
        nodes: NodeReport::real(&e.predicted, stage),
    }
}

impl VerifyReport {
    /// The report of a verification of this stage and build.
    pub fn new(stage: &Stage, nets: &SlotNetworks, v: &Verification) -> VerifyReport {
        VerifyReport {
            stage: stage.name.clone(),
            verdict: v.verdict.name(),
            deviations: MaybeNodes::from(v.deviations),
            beta_estimate: v.beta.and_then(|b| b.value),
            beta_range: v.beta.map(|b| [b.range.0, b.range.1]),
            explanations: v
                .explanations
                .iter()
                .map(|e| explanation(e, stage, nets))
                .collect(),
            measured: MaybeNodes::from(v.measured.as_array()),
            predicted: NodeReport::from(&v.predicted),
            predicted_min_beta: NodeReport::from(&v.predicted_min_beta),
            predicted_max_beta: NodeReport::from(&v.predicted_max_beta),
            as_built_score: v.as_built_score,
            pnp: stage.polarity == crate::stage::Polarity::Pnp,
            ground: stage.ground.name(),
            magnitudes: v.magnitudes,
            nodes: RealNodes {
                collector_rail: stage.collector_rail().0,
                emitter_rail: stage.emitter_rail().0,
                measured: MaybeNodes::from(
                    v.measured
                        .as_array()
                        .map(|m| m.map(|m| stage.real(crate::units::Volts(m)).0)),
                ),
                deviations: MaybeNodes::from(v.deviations.map(|d| {
                    d.map(|d| match stage.polarity {
                        crate::stage::Polarity::Npn => d,
                        crate::stage::Polarity::Pnp => -d,
                    })
                })),
                predicted: NodeReport::real(&v.predicted, stage),
                predicted_min_beta: NodeReport::real(&v.predicted_min_beta, stage),
                predicted_max_beta: NodeReport::real(&v.predicted_max_beta, stage),
            },
            next_measurement: v.next.as_ref().map(|n| next_report(n, nets)),
        }
    }

    /// Whether the build was judged faulty.
    pub fn is_fault(&self) -> bool {
        self.verdict == Verdict::Fault.name()
    }
}

fn volts(x: f64) -> String {
    engineering(x, "V")
}

fn percent(x: f64) -> String {
    if !x.is_finite() {
        return "∞".into();
    }
    let p = x * 100.0;
    if p.abs() < 0.05 {
        "0 %".into()
    } else {
        format!("{:+.1} %", p)
    }
}

fn judge(d: f64) -> &'static str {
    let d = d.abs();
    if d <= crate::bench::GOOD {
        "good"
    } else if d <= crate::bench::ACCEPTABLE {
        "acceptable"
    } else {
        "FAULT"
    }
}

/// Pads cells into aligned columns, the first `left` left-aligned.
fn columns(rows: &[Vec<String>], left: usize, indent: &str) -> String {
    let n = rows.iter().map(Vec::len).max().unwrap_or(0);
    let widths: Vec<usize> = (0..n)
        .map(|c| {
            rows.iter()
                .filter_map(|r| r.get(c))
                .map(|s| s.chars().count())
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut out = String::new();
    for r in rows {
        let mut line = String::from(indent);
        for (c, cell) in r.iter().enumerate() {
            if c > 0 {
                line.push_str("  ");
            }
            let pad = " ".repeat(widths[c] - cell.chars().count());
            if c < left {
                line.push_str(cell);
                line.push_str(&pad);
            } else {
                line.push_str(&pad);
                line.push_str(cell);
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// The verification as text for people.
pub fn render(r: &VerifyReport, heading: &str) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "verify {heading}");
    if r.pnp || r.ground != "emitter" {
        let _ = writeln!(
            out,
            "  (voltages from ground: collector rail {}, emitter rail {})",
            volts(r.nodes.collector_rail),
            volts(r.nodes.emitter_rail)
        );
    }
    if r.magnitudes {
        out.push_str(
            "  (readings taken as magnitudes from the emitter-side rail, which fit the design better; shown here from ground)\n",
        );
    }
    out.push('\n');
    let n = &r.nodes;
    let pred = [n.predicted.vb, n.predicted.ve, n.predicted.vc];
    let lo = [
        n.predicted_min_beta.vb,
        n.predicted_min_beta.ve,
        n.predicted_min_beta.vc,
    ];
    let hi = [
        n.predicted_max_beta.vb,
        n.predicted_max_beta.ve,
        n.predicted_max_beta.vc,
    ];
    let meas = [n.measured.vb, n.measured.ve, n.measured.vc];
    let dev = [n.deviations.vb, n.deviations.ve, n.deviations.vc];
    let mut rows = vec![vec![
        "node".to_string(),
        "expected".into(),
        "min–max beta".into(),
        "measured".into(),
        "deviation".into(),
        String::new(),
    ]];
    for k in 0..3 {
        let (a, b) = (lo[k].min(hi[k]), lo[k].max(hi[k]));
        rows.push(vec![
            NODES[k].to_string(),
            volts(pred[k]),
            format!("{} – {}", volts(a), volts(b)),
            meas[k].map(volts).unwrap_or_else(|| "-".into()),
            dev[k].map(percent).unwrap_or_default(),
            dev[k].map(|d| judge(d).to_string()).unwrap_or_default(),
        ]);
    }
    // Left-align the last (judgement) column by padding it ourselves.
    let table = columns(&rows, 1, "  ");
    out.push_str(&table);
    out.push('\n');

    let worst = (0..3)
        .filter_map(|k| dev[k].map(|d| (k, d)))
        .max_by(|a, b| a.1.abs().total_cmp(&b.1.abs()));
    match (r.verdict, worst) {
        ("good", _) => out.push_str("  verdict: good (every reading within ±5 % of the design)\n"),
        ("acceptable", _) => {
            out.push_str("  verdict: acceptable (every reading within ±10 % of the design)\n")
        }
        (_, Some((k, d))) => {
            let _ = writeln!(
                out,
                "  verdict: fault ({} is {} {}, beyond ±10 %)",
                NODES[k],
                percent(d.abs()).trim_start_matches('+'),
                if d < 0.0 { "low" } else { "high" }
            );
        }
        _ => out.push_str("  verdict: fault\n"),
    }
    match (r.beta_estimate, r.beta_range) {
        (Some(b), Some([lo, hi])) => {
            let _ = writeln!(
                out,
                "  beta: about {} (the readings allow {} to {})",
                trim_number(b, 2),
                trim_number(lo, 2),
                trim_number(hi, 2)
            );
        }
        (None, Some([lo, hi])) => {
            let _ = writeln!(
                out,
                "  beta: not pinned down by these readings (anything from {} to {} fits): the bias is \
                 stiff against beta, which is its purpose",
                trim_number(lo, 2),
                trim_number(hi, 2)
            );
        }
        _ => out
            .push_str("  beta: not estimated: the design as drawn cannot explain these readings\n"),
    }
    let _ = writeln!(
        out,
        "  as designed, with beta in its range, the readings match {}",
        match_percent(r.as_built_score)
    );

    if r.explanations.is_empty() {
        if r.verdict == "fault" {
            out.push_str(
                "\n  no single fault in the catalogue explains these readings: check the supply voltage, \
                 the meter's ground lead and the transistor's type\n",
            );
        }
        return out;
    }
    out.push_str("\n  likely faults, best first:\n");
    for (i, e) in r.explanations.iter().enumerate() {
        let _ = writeln!(
            out,
            "  {}. {:>5}  {}",
            i + 1,
            match_percent(e.score),
            e.description
        );
        let _ = writeln!(
            out,
            "             would read VB {}, VE {}, VC {}{}",
            volts(e.nodes.vb),
            volts(e.nodes.ve),
            volts(e.nodes.vc),
            if e.fault == "reversed-transistor" {
                format!(
                    " (beta {}: reversed, or that little gain)",
                    trim_number(e.beta, 2)
                )
            } else {
                String::new()
            }
        );
        let _ = writeln!(out, "             check: {}", e.advice);
        if !e.alike.is_empty() {
            let names: Vec<&str> = e.alike.iter().map(|a| a.description.as_str()).collect();
            let _ = writeln!(out, "             reads the same as: {}", names.join("; "));
        }
    }
    if let Some(n) = &r.next_measurement {
        let _ = writeln!(out, "\n  to tell them apart, measure {}:", n.description);
        let rows: Vec<(String, String)> = n
            .predictions
            .iter()
            .map(|p| {
                let shown = match (p.value, n.unit) {
                    (None, _) => "open".to_string(),
                    (Some(v), "Ω") => crate::bench::next::ohms_text(v),
                    (Some(v), _) => volts(v),
                };
                (shown, p.description.clone())
            })
            .collect();
        let w = rows.iter().map(|r| r.0.chars().count()).max().unwrap_or(0);
        for (shown, words) in rows {
            let pad = " ".repeat(w - shown.chars().count());
            let _ = writeln!(out, "    {pad}{shown}  if {words}");
        }
    }
    out
}

/// A score as a match percentage ("97 %").
fn match_percent(s: f64) -> String {
    format!(
        "{} %",
        trim_number((s * 100.0).clamp(0.0, 100.0).round(), 3)
    )
}

/// The heading of a verification: the stage, its topology and its parts.
pub fn heading(stage: &Stage, nets: &SlotNetworks) -> String {
    let parts: Vec<String> = stage
        .slots()
        .into_iter()
        .filter_map(|s| nets.get(s).map(|n| format!("{s}={}", n.notation())))
        .collect();
    format!(
        "stage \"{}\": {}, {}, {} supply; built {}",
        stage.name,
        stage.topology,
        stage.polarity,
        volts(stage.supply.0),
        parts.join(" ")
    )
}

/// One reading of a circuit, as reported.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitReadingReport {
    /// The node.
    pub node: String,
    /// Volts read, from ground.
    pub measured: f64,
    /// Volts the design predicts at typical parameters, from ground.
    pub predicted: f64,
    /// The lowest and highest a good build shows: every device at the low ends of its ranges, at the high.
    pub range: [f64; 2],
    /// The design fitted to the readings within its devices' ranges: what the reading is judged against.
    pub fitted: f64,
    /// Relative deviation from the fit (with the 0.1 V floor).
    pub deviation: f64,
    /// "good", "acceptable" or "fault": within ±5 % + 50 mV, ±10 % + 50 mV, or beyond.
    pub judged: &'static str,
    /// Whether the node is a rail of the file (a supply check).
    pub rail: bool,
}

/// One explanation of a circuit's readings, as reported.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitExplanationReport {
    /// The part.
    pub part: String,
    /// "open", "short", "value", "low gain" or "reversed".
    pub fault: &'static str,
    /// The fault in words.
    pub description: String,
    /// The fitted value: ohms for a wrong value, beta for low gain.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fitted: Option<f64>,
    /// How well it matches, 0 to 1.
    pub score: f64,
    /// What it predicts at each read node, volts from ground.
    pub predicted: super::circuit::Named<f64>,
}

/// A circuit's verification: `{"name", "verdict", "readings", "as_built_score", "explanations"}`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitVerifyReport {
    /// The circuit's name.
    pub name: String,
    /// "good", "acceptable" or "fault".
    pub verdict: &'static str,
    /// Each reading.
    pub readings: Vec<CircuitReadingReport>,
    /// How well the circuit as designed matches the readings, 0 to 1.
    pub as_built_score: f64,
    /// Faults that match better than the design, best first.
    pub explanations: Vec<CircuitExplanationReport>,
    /// When the best explanations tie: the node to read next, and what each would read there.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub next_reading: Option<NextReadingReport>,
}

/// The reading that settles a tie.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NextReadingReport {
    /// The node to read.
    pub node: String,
    /// Each tied explanation (its description) and its prediction there, volts from ground.
    pub predictions: super::circuit::Named<f64>,
}

/// The JSON of `verify` on a circuit: `{"circuits": [...]}`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitVerifyFile {
    /// One entry: the circuit verified.
    pub circuits: Vec<CircuitVerifyReport>,
}

impl CircuitVerifyReport {
    /// The report of a verification.
    pub fn new(
        c: &crate::circuit::Circuit,
        v: &crate::bench::circuit::CircuitVerification,
    ) -> CircuitVerifyReport {
        use crate::bench::circuit::CircuitFault;
        let names: Vec<String> = v.readings.iter().map(|r| c.nodes[r.node].clone()).collect();
        CircuitVerifyReport {
            name: c.name.clone(),
            verdict: v.verdict.name(),
            readings: v
                .readings
                .iter()
                .enumerate()
                .map(|(k, r)| CircuitReadingReport {
                    node: c.nodes[r.node].clone(),
                    measured: r.volts,
                    predicted: v.predicted[k],
                    range: [v.range[k].0, v.range[k].1],
                    fitted: v.fitted[k],
                    deviation: v.deviations[k],
                    judged: v.judged[k].name(),
                    rail: c.rails[r.node].is_some(),
                })
                .collect(),
            as_built_score: v.as_built_score,
            explanations: v
                .explanations
                .iter()
                .map(|e| CircuitExplanationReport {
                    part: e.fault.part().to_string(),
                    fault: e.fault.kind(),
                    description: e.fault.describe(),
                    fitted: match e.fault {
                        CircuitFault::Value(_, r, _) => Some(r.0),
                        CircuitFault::LowGain(_, b) => Some(b),
                        _ => None,
                    },
                    score: e.score,
                    predicted: super::circuit::Named(
                        names
                            .iter()
                            .cloned()
                            .zip(e.predicted.iter().copied())
                            .collect(),
                    ),
                })
                .collect(),
            next_reading: v.next.as_ref().map(|n| NextReadingReport {
                node: c.nodes[n.node].clone(),
                predictions: super::circuit::Named(
                    n.predictions
                        .iter()
                        .map(|(f, v)| (f.describe(), *v))
                        .collect(),
                ),
            }),
        }
    }

    /// Whether a reading is beyond ±10 %.
    pub fn is_fault(&self) -> bool {
        self.verdict == "fault"
    }
}

/// A circuit's verification for people: each reading against the design, the verdict and the faults that
/// explain the readings better.
pub fn render_circuit(r: &CircuitVerifyReport, built: &str) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "verify circuit \"{}\", built with {built}", r.name);
    out.push_str("  (volts from ground, as a meter reads them)\n\n");
    let mut rows = vec![vec![
        "node".to_string(),
        "expected".into(),
        "device ranges".into(),
        "measured".into(),
        "off the fit".into(),
        String::new(),
    ]];
    let fine = |x: f64| format!("{} V", trim_number(x, 4));
    for x in &r.readings {
        rows.push(vec![
            if x.rail {
                format!("{} (supply)", x.node)
            } else {
                x.node.clone()
            },
            fine(x.predicted),
            format!("{} – {}", fine(x.range[0]), fine(x.range[1])),
            fine(x.measured),
            percent(x.deviation),
            match x.judged {
                "fault" => "FAULT".to_string(),
                j => j.to_string(),
            },
        ]);
    }
    out.push_str(&columns(&rows, 1, "  "));
    out.push('\n');
    let worst = r
        .readings
        .iter()
        .filter(|x| x.judged != "good")
        .max_by(|a, b| a.deviation.abs().total_cmp(&b.deviation.abs()));
    match (r.verdict, worst) {
        ("good", _) => out.push_str(
            "  verdict: good (every reading within ±5 % + 50 mV of the design, its devices within their ranges)\n",
        ),
        ("acceptable", _) => out.push_str(
            "  verdict: acceptable (every reading within ±10 % + 50 mV of the design, its devices within their ranges)\n",
        ),
        (_, Some(w)) => {
            let _ = writeln!(
                out,
                "  verdict: fault ({} is {} {}, beyond ±10 % + 50 mV)",
                w.node,
                percent(w.deviation.abs()).trim_start_matches('+'),
                if w.deviation < 0.0 { "low" } else { "high" }
            );
        }
        _ => out.push_str("  verdict: fault\n"),
    }
    for x in r.readings.iter().filter(|x| x.rail && x.judged != "good") {
        let _ = writeln!(
            out,
            "  {} is a supply: it reads {} where the file says {}; set it right (or put what it really gives \
             in the file) before judging the parts",
            x.node,
            fine(x.measured),
            fine(x.predicted)
        );
    }
    let _ = writeln!(
        out,
        "  as designed, its devices within their ranges, the readings match {}",
        match_percent(r.as_built_score)
    );
    if r.explanations.is_empty() {
        if r.verdict == "fault" {
            out.push_str(
                "\n  no single fault in the catalogue explains these readings: check the supplies, the meter's \
                 ground lead and each part's type\n",
            );
        }
        return out;
    }
    out.push_str("\n  likely faults, best first:\n");
    for (i, e) in r.explanations.iter().enumerate() {
        let _ = writeln!(
            out,
            "  {}. {:>5}  {}",
            i + 1,
            match_percent(e.score),
            e.description
        );
        let reads: Vec<String> = e
            .predicted
            .0
            .iter()
            .map(|(n, v)| format!("{n} {}", volts(*v)))
            .collect();
        let _ = writeln!(out, "             would read {}", reads.join(", "));
    }
    if let Some(n) = &r.next_reading {
        let _ = writeln!(
            out,
            "\n  these tie on the readings so far; read {} next (from ground):",
            n.node
        );
        for (what, v) in &n.predictions.0 {
            let _ = writeln!(out, "    {:>9}  if {what}", volts(*v));
        }
    } else if r.explanations.len() > 1 && r.explanations[1].score >= r.explanations[0].score - 0.05
    {
        out.push_str(
            "\n  these tie on the readings so far, and no other node voltage tells them apart: lift one end \
             of each resistor named and measure it out of circuit, and try each transistor named on a tester\n",
        );
    }
    out
}
