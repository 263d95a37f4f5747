//! The bench for a circuit of the user's own: readings at any named node (a rail too, as a supply check),
//! from real ground. The circuit as designed is first fitted to the readings with each device's parameters
//! anywhere in their ranges (a transistor at the low end of its beta is a good part); each reading is then
//! judged against that fit: within ±5 % of the prediction plus 50 mV is good, ±10 % plus 50 mV acceptable,
//! beyond that a fault (the trade's "within 10 % of calculated"; the 50 mV allows a VBE model's error and a
//! meter's last digit on low readings, so a saturated switch's 80 mV is not judged on percent: common
//! practice, no source). A faulty build is then explained by simulating a fault of every part with the
//! nodal engine and scoring each against the readings ([`score_pairs`]).
//!
//! The catalogue: every resistor open (1 GΩ), shorted (1 mΩ) or of a wrong value (fitted to the readings,
//! from a thirtieth to thirty times its own); every transistor with low gain (beta fitted from 1 to its
//! minimum), reversed (collector and emitter swapped, with the small reverse gain such a part has) or
//! dead (its collector–emitter or drain–source path open); every diode, LED or zener reversed or open.

use super::{deviation, score_pairs, Verdict, ACCEPTABLE, GOOD, MIN_SCORE, TOP};

/// The absolute allowance added to each band, volts: a VBE model's error and a meter's last digit.
pub const ALLOWANCE: f64 = 0.05;

/// A reading's judgement against a prediction: within ±5 % + 50 mV good, ±10 % + 50 mV acceptable.
pub fn judge(measured: f64, predicted: f64) -> Verdict {
    let off = (measured - predicted).abs();
    // A part per billion of slack, so a reading on the band's edge is not failed by rounding.
    let within = |band: f64| off <= (band * predicted.abs() + ALLOWANCE) * (1.0 + 1e-9);
    if within(GOOD) {
        Verdict::Good
    } else if within(ACCEPTABLE) {
        Verdict::Acceptable
    } else {
        Verdict::Fault
    }
}

/// The parts whose parameters have ranges: bipolar transistors and FETs.
fn ranged_parts(c: &Circuit) -> Vec<usize> {
    c.parts
        .iter()
        .enumerate()
        .filter(|(_, p)| matches!(p.kind, Kind::Bjt { .. } | Kind::Jfet(_) | Kind::Mosfet(_)))
        .map(|(i, _)| i)
        .collect()
}

/// A value at position `t` of a range: min at 0, typical at ½, max at 1, linear in between.
fn along(min: f64, typ: f64, max: f64, t: f64) -> f64 {
    if t <= 0.5 {
        min + (typ - min) * 2.0 * t
    } else {
        typ + (max - typ) * (2.0 * t - 1.0)
    }
}

/// A copy of the circuit with device `i`'s typical parameters moved to position `t` of their ranges.
fn with_position(c: &mut Circuit, base: &Circuit, i: usize, t: f64) {
    match (&mut c.parts[i].kind, &base.parts[i].kind) {
        (Kind::Bjt { transistor: d, .. }, Kind::Bjt { transistor: b, .. }) => {
            d.beta.typ = along(b.beta.min, b.beta.typ, b.beta.max, t);
        }
        (Kind::Jfet(d), Kind::Jfet(b)) => {
            d.idss.typ = crate::units::Amps(along(b.idss.min.0, b.idss.typ.0, b.idss.max.0, t));
            d.pinch_off.typ = crate::units::Volts(along(
                b.pinch_off.min.0,
                b.pinch_off.typ.0,
                b.pinch_off.max.0,
                t,
            ));
        }
        (Kind::Mosfet(d), Kind::Mosfet(b)) => {
            d.threshold.typ = crate::units::Volts(along(
                b.threshold.min.0,
                b.threshold.typ.0,
                b.threshold.max.0,
                t,
            ));
            d.k.typ = along(b.k.min, b.k.typ, b.k.max, t);
        }
        _ => {}
    }
}

/// The circuit as designed fitted to the readings with every device anywhere in its ranges (two sweeps of
/// a golden section per device): the fitted circuit, its score and its predictions.
fn fit_in_range(c: &Circuit, ohms: &[Ohms], readings: &[Reading]) -> (Circuit, f64, Vec<f64>) {
    let ranged = ranged_parts(c);
    let mut fitted = c.clone();
    for _ in 0..2 {
        for &i in &ranged {
            let mut trial = fitted.clone();
            // Searched on [1, 2] as a log scale stands for t in [0, 1].
            let (x, _) = fit(1.0, 2.0, &mut |x| {
                with_position(&mut trial, c, i, x - 1.0);
                predict(&trial, ohms, readings).map_or(0.0, |p| score_of(readings, &p))
            });
            with_position(&mut fitted, c, i, x - 1.0);
        }
    }
    match predict(&fitted, ohms, readings) {
        Some(p) => (fitted, score_of(readings, &p), p),
        None => (c.clone(), 0.0, vec![f64::NAN; readings.len()]),
    }
}
use crate::circuit::{Circuit, Kind, NodeId, Options, Solver};
use crate::network::Network;
use crate::units::Ohms;

/// An open part, in ohms: far above any bias network, low enough to keep the matrix well conditioned.
const OPEN: f64 = 1e9;
/// A short, in ohms.
const SHORT: f64 = 1e-3;
/// The gain of a bipolar transistor fitted the wrong way round (collector and emitter swapped): a few, as
/// such parts typically show (from memory; data sheets rarely state it).
const REVERSE_BETA: f64 = 5.0;

/// A bench reading at a node, volts from ground.
#[derive(Clone, Debug, PartialEq)]
pub struct Reading {
    /// The node.
    pub node: NodeId,
    /// The voltage read.
    pub volts: f64,
}

/// Why readings could not be read.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ReadingError {
    /// Not NODE=VOLTS.
    #[error("\"{}\" is not a reading; expected NODE=VOLTS with a node of the circuit ({nodes}), as in {example}", crate::notation::excerpt(.text))]
    Shape {
        /// The text.
        text: String,
        /// The circuit's nodes.
        nodes: String,
        /// An example reading.
        example: String,
    },
    /// No such node.
    #[error("the circuit has no node '{}'{}; expected one of {nodes}", crate::notation::excerpt(.node), nearest.as_ref().map(|n| format!(" (did you mean '{n}'?)")).unwrap_or_default())]
    Node {
        /// The node as given.
        node: String,
        /// The nearest node's name.
        nearest: Option<String>,
        /// The circuit's nodes.
        nodes: String,
    },
    /// A bare number after a comma: a decimal comma, most likely.
    #[error("\"{}\" is not a reading; commas separate readings, so write decimals with a point (11.7, not 11,7)", crate::notation::excerpt(.0))]
    Comma(String),
    /// Ground is the meter's reference.
    #[error("'gnd' is the 0 V reference the meter reads from; read the other nodes")]
    Ground,
    /// Given twice.
    #[error("'{0}' is read twice; give each node once")]
    Twice(String),
    /// Not a voltage.
    #[error("{node}={text}: {reason}")]
    Value {
        /// The node.
        node: String,
        /// The text.
        text: String,
        /// Why.
        reason: String,
    },
    /// Nothing read.
    #[error("no readings; expected NODE=VOLTS pairs joined by commas")]
    Empty,
}

/// Reads "c1=4.4,tail=-0.65" against a circuit's node names.
pub fn parse_readings(c: &Circuit, text: &str) -> Result<Vec<Reading>, ReadingError> {
    let free: Vec<&str> = c.nodes.iter().skip(1).map(String::as_str).collect();
    let nodes = free.join(", ");
    let example = free
        .first()
        .map_or("out=4.5".to_string(), |n| format!("{n}=4.5"));
    let mut out: Vec<Reading> = Vec::new();
    for item in text.split(',').map(str::trim).filter(|s| !s.is_empty()) {
        if !item.contains('=') && item.chars().all(|c| c.is_ascii_digit()) && !out.is_empty() {
            return Err(ReadingError::Comma(item.into()));
        }
        let (name, value) = item.split_once('=').ok_or_else(|| ReadingError::Shape {
            text: item.into(),
            nodes: nodes.clone(),
            example: example.clone(),
        })?;
        let name = name.trim();
        let node = c.find_node(name).ok_or_else(|| ReadingError::Node {
            node: name.into(),
            nearest: crate::circuit::file::nearest(name, &free).map(str::to_string),
            nodes: nodes.clone(),
        })?;
        if node == crate::circuit::GROUND {
            return Err(ReadingError::Ground);
        }
        if out.iter().any(|r| r.node == node) {
            return Err(ReadingError::Twice(name.into()));
        }
        let volts =
            crate::notation::parse_volts(value.trim()).map_err(|e| ReadingError::Value {
                node: name.into(),
                text: value.trim().into(),
                reason: e.to_string(),
            })?;
        out.push(Reading {
            node,
            volts: volts.0,
        });
    }
    if out.is_empty() {
        return Err(ReadingError::Empty);
    }
    Ok(out)
}

/// A fault of one part.
#[derive(Clone, Debug, PartialEq)]
pub enum CircuitFault {
    /// The part's path is open.
    Open(String),
    /// The part is shorted.
    Short(String),
    /// A resistor of another value, fitted to the readings (fitted, then the part's own).
    Value(String, Ohms, Ohms),
    /// A transistor of lower gain than its range, fitted.
    LowGain(String, f64),
    /// Fitted the wrong way round.
    Reversed(String),
}

impl CircuitFault {
    /// The fault in words, for people.
    pub fn describe(&self) -> String {
        match self {
            CircuitFault::Open(p) => {
                format!("{p} open (a dry joint, a broken part or an empty hole)")
            }
            CircuitFault::Short(p) => format!("{p} shorted (a solder bridge or a failed part)"),
            CircuitFault::Value(p, r, own) => {
                let near = crate::notation::eseries::Series::E12.nearest(*r);
                let ratio = r.0 / own.0;
                let decades = ratio.log10().round();
                let hint =
                    if decades != 0.0 && (ratio / 10f64.powf(decades) - 1.0).abs() < ACCEPTABLE {
                        format!(
                            "a decade off: {} fitted for {}?",
                            crate::notation::code(Ohms(own.0 * 10f64.powf(decades))),
                            crate::notation::code(*own)
                        )
                    } else {
                        format!(
                            "nearest E12 {}: a wrong value taken from the drawer?",
                            crate::notation::code(near)
                        )
                    };
                format!(
                    "{p} fitted as about {} ({hint})",
                    crate::notation::value::code_with(*r, 3)
                )
            }
            CircuitFault::LowGain(p, b) => format!(
                "{p} with a gain of about {}, below its range (a damaged or different part)",
                crate::notation::trim_number(*b, 2)
            ),
            CircuitFault::Reversed(p) => format!("{p} fitted the wrong way round"),
        }
    }

    /// The part it is on.
    pub fn part(&self) -> &str {
        match self {
            CircuitFault::Open(p)
            | CircuitFault::Short(p)
            | CircuitFault::Value(p, ..)
            | CircuitFault::LowGain(p, _)
            | CircuitFault::Reversed(p) => p,
        }
    }

    /// The kind of fault: "open", "short", "value", "low gain", "reversed".
    pub fn kind(&self) -> &'static str {
        match self {
            CircuitFault::Open(_) => "open",
            CircuitFault::Short(_) => "short",
            CircuitFault::Value(..) => "value",
            CircuitFault::LowGain(..) => "low gain",
            CircuitFault::Reversed(_) => "reversed",
        }
    }
}

/// One explanation: a fault, its score and what it predicts at the read nodes.
#[derive(Clone, Debug, PartialEq)]
pub struct CircuitExplanation {
    /// The fault.
    pub fault: CircuitFault,
    /// How well it matches the readings, 0 to 1.
    pub score: f64,
    /// Its prediction at each read node, in reading order.
    pub predicted: Vec<f64>,
}

/// The outcome of comparing a built circuit with its design.
#[derive(Clone, Debug, PartialEq)]
pub struct CircuitVerification {
    /// The readings.
    pub readings: Vec<Reading>,
    /// The prediction at each read node, at typical parameters and ambient.
    pub predicted: Vec<f64>,
    /// The predictions with every device at the low ends of its ranges and at the high ends, low first.
    pub range: Vec<(f64, f64)>,
    /// The circuit as designed, fitted to the readings within its devices' ranges: what each reading is
    /// judged against.
    pub fitted: Vec<f64>,
    /// Each reading's relative deviation from the fit (with the floor of [`super::FLOOR`]).
    pub deviations: Vec<f64>,
    /// Each reading's judgement ([`judge`]).
    pub judged: Vec<Verdict>,
    /// The judgement of the whole: its worst reading's.
    pub verdict: Verdict,
    /// How well the circuit as designed, its devices within their ranges, matches the readings.
    pub as_built_score: f64,
    /// Faults that explain the readings better than the design does, best first.
    pub explanations: Vec<CircuitExplanation>,
    /// When the best explanations tie, the node to read next and what each would read there.
    pub next: Option<NextReading>,
}

/// The reading that settles a tie between explanations.
#[derive(Clone, Debug, PartialEq)]
pub struct NextReading {
    /// The node to read.
    pub node: NodeId,
    /// Each tied explanation's prediction there, volts from ground.
    pub predictions: Vec<(CircuitFault, f64)>,
}

/// Why a verification could not be made.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum CircuitVerifyError {
    /// The circuit as designed has no operating point.
    #[error(transparent)]
    Nominal(#[from] crate::circuit::target::CheckError),
}

/// The circuit's predictions at the read nodes with parts replaced as `change` says, or None when it has
/// no operating point.
fn predict(c: &Circuit, ohms: &[Ohms], readings: &[Reading]) -> Option<Vec<f64>> {
    let b = c.typical(ohms).ok()?;
    let s = Solver::new(c)
        .solve(&b, &Options { check_latch: false })
        .ok()?;
    Some(readings.iter().map(|r| s.nodes[r.node].0).collect())
}

fn score_of(readings: &[Reading], predicted: &[f64]) -> f64 {
    let pairs: Vec<(f64, f64)> = readings
        .iter()
        .zip(predicted)
        .map(|(r, p)| (r.volts, *p))
        .collect();
    score_pairs(&pairs)
}

/// The value in [lo, hi] (searched on a log scale) that maximises `f`, by golden section.
fn fit(lo: f64, hi: f64, f: &mut dyn FnMut(f64) -> f64) -> (f64, f64) {
    let (mut a, mut b) = (lo.ln(), hi.ln());
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let mut x1 = b - g * (b - a);
    let mut x2 = a + g * (b - a);
    let (mut f1, mut f2) = (f(x1.exp()), f(x2.exp()));
    for _ in 0..60 {
        if f1 >= f2 {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - g * (b - a);
            f1 = f(x1.exp());
        } else {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + g * (b - a);
            f2 = f(x2.exp());
        }
    }
    if f1 >= f2 {
        (x1.exp(), f1)
    } else {
        (x2.exp(), f2)
    }
}

/// A copy of the circuit with one part replaced by a fixed resistor.
fn with_resistor(c: &Circuit, part: usize, ohms: f64, pins: [NodeId; 2]) -> Circuit {
    let mut f = c.clone();
    f.parts[part].kind = Kind::Resistor {
        value: Some(Ohms(ohms)),
        power: None,
        tolerance: None,
    };
    f.parts[part].pins = pins.to_vec();
    f
}

/// Compares readings with the circuit built from `nets` and ranks the faults that explain them.
pub fn verify_circuit(
    c: &Circuit,
    nets: &[Network],
    readings: &[Reading],
) -> Result<CircuitVerification, CircuitVerifyError> {
    let ohms: Vec<Ohms> = nets.iter().map(Network::ohms).collect();
    let typical = c
        .typical(&ohms)
        .map_err(crate::circuit::target::CheckError::from)?;
    let s = Solver::new(c)
        .solve(&typical, &Options { check_latch: false })
        .map_err(crate::circuit::target::CheckError::from)?;
    let predicted: Vec<f64> = readings.iter().map(|r| s.nodes[r.node].0).collect();
    // The range a good build may show: every device at the low ends of its ranges, and at the high ends.
    let ranged = ranged_parts(c);
    let corner = |t: f64| {
        let mut k = c.clone();
        for &i in &ranged {
            with_position(&mut k, c, i, t);
        }
        predict(&k, &ohms, readings).unwrap_or_else(|| predicted.clone())
    };
    let (low, high) = (corner(0.0), corner(1.0));
    let range: Vec<(f64, f64)> = low
        .iter()
        .zip(&high)
        .map(|(a, b)| (a.min(*b), a.max(*b)))
        .collect();
    let (_, as_built_score, fitted) = fit_in_range(c, &ohms, readings);
    // Judged against the in-range fit where it solves, else against the typical prediction.
    let against: Vec<f64> = fitted
        .iter()
        .zip(&predicted)
        .map(|(f, p)| if f.is_finite() { *f } else { *p })
        .collect();
    let deviations: Vec<f64> = readings
        .iter()
        .zip(&against)
        .map(|(r, p)| deviation(r.volts, *p))
        .collect();
    let judged: Vec<Verdict> = readings
        .iter()
        .zip(&against)
        .map(|(r, p)| judge(r.volts, *p))
        .collect();
    let verdict = if judged.contains(&Verdict::Fault) {
        Verdict::Fault
    } else if judged.contains(&Verdict::Acceptable) {
        Verdict::Acceptable
    } else {
        Verdict::Good
    };

    let slots = c.slots();
    let mut found: Vec<CircuitExplanation> = Vec::new();
    if verdict == Verdict::Good {
        // A good build needs no explanation.
        return Ok(CircuitVerification {
            readings: readings.to_vec(),
            predicted,
            range,
            fitted: against,
            deviations,
            judged,
            verdict,
            as_built_score,
            explanations: found,
            next: None,
        });
    }
    let mut push = |fault: CircuitFault, predicted: Option<Vec<f64>>| {
        if let Some(p) = predicted {
            let score = score_of(readings, &p);
            found.push(CircuitExplanation {
                fault,
                score,
                predicted: p,
            });
        }
    };
    for (i, p) in c.parts.iter().enumerate() {
        let pins2 = [p.pins[0], *p.pins.get(1).unwrap_or(&p.pins[0])];
        match &p.kind {
            Kind::Resistor { value, .. } => {
                let own = match value {
                    Some(v) => v.0,
                    None => slots
                        .iter()
                        .position(|&k| k == i)
                        .map_or(f64::NAN, |k| ohms[k].0),
                };
                for (fault, r) in [
                    (CircuitFault::Open(p.name.clone()), OPEN),
                    (CircuitFault::Short(p.name.clone()), SHORT),
                ] {
                    push(
                        fault,
                        predict(
                            &with_resistor(c, i, r, pins2),
                            &ohms_without(&slots, &ohms, i),
                            readings,
                        ),
                    );
                }
                let others = ohms_without(&slots, &ohms, i);
                let (r, _) = fit(own / 30.0, own * 30.0, &mut |r| {
                    predict(&with_resistor(c, i, r, pins2), &others, readings)
                        .map_or(0.0, |p| score_of(readings, &p))
                });
                // A fitted value within 10 % of the part's own is a tolerance, not a fault (the bench's
                // band, common practice, no source).
                if (r / own - 1.0).abs() > ACCEPTABLE {
                    push(
                        CircuitFault::Value(p.name.clone(), Ohms(r), Ohms(own)),
                        predict(&with_resistor(c, i, r, pins2), &others, readings),
                    );
                }
            }
            Kind::Bjt { transistor, .. } => {
                let mut low = c.clone();
                let (mut best, mut best_score) = (f64::NAN, -1.0);
                // Below the range: inside it, the part is good and the in-range fit covers it.
                if transistor.beta.min * 0.9 > 1.0 {
                    let (b, sc) = fit(1.0, transistor.beta.min * 0.9, &mut |b| {
                        if let Kind::Bjt { transistor: t, .. } = &mut low.parts[i].kind {
                            t.beta.min = b;
                            t.beta.typ = b;
                            t.beta.max = b;
                        }
                        predict(&low, &ohms, readings).map_or(0.0, |p| score_of(readings, &p))
                    });
                    (best, best_score) = (b, sc);
                }
                if best_score >= 0.0 {
                    if let Kind::Bjt { transistor: t, .. } = &mut low.parts[i].kind {
                        t.beta.min = best;
                        t.beta.typ = best;
                        t.beta.max = best;
                    }
                    push(
                        CircuitFault::LowGain(p.name.clone(), best),
                        predict(&low, &ohms, readings),
                    );
                }
                let mut rev = c.clone();
                rev.parts[i].pins.swap(0, 2);
                if let Kind::Bjt { transistor: t, .. } = &mut rev.parts[i].kind {
                    t.beta.min = REVERSE_BETA;
                    t.beta.typ = REVERSE_BETA;
                    t.beta.max = REVERSE_BETA;
                }
                push(
                    CircuitFault::Reversed(p.name.clone()),
                    predict(&rev, &ohms, readings),
                );
                push(
                    CircuitFault::Open(p.name.clone()),
                    predict(
                        &with_resistor(c, i, OPEN, [p.pins[0], p.pins[2]]),
                        &ohms,
                        readings,
                    ),
                );
            }
            Kind::Jfet(_) | Kind::Mosfet(_) => push(
                CircuitFault::Open(p.name.clone()),
                predict(
                    &with_resistor(c, i, OPEN, [p.pins[0], p.pins[2]]),
                    &ohms,
                    readings,
                ),
            ),
            Kind::Diode { .. } | Kind::Zener { .. } => {
                let mut rev = c.clone();
                rev.parts[i].pins.swap(0, 1);
                push(
                    CircuitFault::Reversed(p.name.clone()),
                    predict(&rev, &ohms, readings),
                );
                push(
                    CircuitFault::Open(p.name.clone()),
                    predict(&with_resistor(c, i, OPEN, pins2), &ohms, readings),
                );
            }
            _ => {}
        }
    }
    // An explanation must beat the design by more than the rounding of a score to be worth a line.
    found.retain(|e| e.score >= MIN_SCORE && e.score > as_built_score + 0.05);
    found.sort_by(|a, b| b.score.total_cmp(&a.score));
    found.truncate(TOP);
    let next = next_reading(c, &ohms, readings, &found);
    Ok(CircuitVerification {
        readings: readings.to_vec(),
        predicted,
        range,
        fitted: against,
        deviations,
        judged,
        verdict,
        as_built_score,
        explanations: found,
        next,
    })
}

/// Explanations within this score of the best are a tie a further reading should settle.
const TIE: f64 = 0.05;
/// A further reading separates explanations when their predictions there differ by this much (volts):
/// well above a meter's last digit and the models' error.
const SEPARATES: f64 = 0.1;

/// The node not yet read whose voltage best tells the tied explanations apart, with each one's prediction
/// there; None when nothing ties or no node separates them.
fn next_reading(
    c: &Circuit,
    ohms: &[Ohms],
    readings: &[Reading],
    found: &[CircuitExplanation],
) -> Option<NextReading> {
    let best = found.first()?.score;
    let tied: Vec<&CircuitExplanation> = found.iter().filter(|e| e.score >= best - TIE).collect();
    if tied.len() < 2 {
        return None;
    }
    let unread: Vec<Reading> = (0..c.nodes.len())
        .filter(|&n| c.rails[n].is_none() && readings.iter().all(|r| r.node != n))
        .map(|node| Reading { node, volts: 0.0 })
        .collect();
    if unread.is_empty() {
        return None;
    }
    let per_fault: Vec<Vec<f64>> = tied
        .iter()
        .map(|e| faulty(c, ohms, &e.fault).and_then(|(f, o)| predict(&f, &o, &unread)))
        .collect::<Option<_>>()?;
    // The node that tells the most pairs of explanations apart, the widest spread breaking a tie.
    let (k, pairs, _) = (0..unread.len())
        .map(|k| {
            let v: Vec<f64> = per_fault.iter().map(|p| p[k]).collect();
            let mut pairs = 0usize;
            for a in 0..v.len() {
                for b in a + 1..v.len() {
                    pairs += usize::from((v[a] - v[b]).abs() >= SEPARATES);
                }
            }
            let spread = v.iter().fold(f64::NEG_INFINITY, |m, x| m.max(*x))
                - v.iter().fold(f64::INFINITY, |m, x| m.min(*x));
            (k, pairs, spread)
        })
        .max_by(|a, b| a.1.cmp(&b.1).then(a.2.total_cmp(&b.2)))?;
    let gap = if pairs > 0 { SEPARATES } else { 0.0 };
    (gap >= SEPARATES).then(|| NextReading {
        node: unread[k].node,
        predictions: tied
            .iter()
            .zip(&per_fault)
            .map(|(e, p)| (e.fault.clone(), p[k]))
            .collect(),
    })
}

/// The circuit and slot values with a fault in place, for predicting other nodes.
fn faulty(c: &Circuit, ohms: &[Ohms], fault: &CircuitFault) -> Option<(Circuit, Vec<Ohms>)> {
    let i = c.find_part(fault.part())?;
    let p = &c.parts[i];
    let slots = c.slots();
    let two = [p.pins[0], *p.pins.get(1).unwrap_or(&p.pins[0])];
    let ce = [p.pins[0], *p.pins.get(2).unwrap_or(&p.pins[0])];
    let is_resistor = matches!(p.kind, Kind::Resistor { .. });
    Some(match fault {
        CircuitFault::Open(_) if is_resistor => (
            with_resistor(c, i, OPEN, two),
            ohms_without(&slots, ohms, i),
        ),
        CircuitFault::Open(_) => {
            let pins = if p.pins.len() > 2 { ce } else { two };
            (with_resistor(c, i, OPEN, pins), ohms.to_vec())
        }
        CircuitFault::Short(_) => (
            with_resistor(c, i, SHORT, two),
            ohms_without(&slots, ohms, i),
        ),
        CircuitFault::Value(_, r, _) => {
            (with_resistor(c, i, r.0, two), ohms_without(&slots, ohms, i))
        }
        CircuitFault::LowGain(_, b) => {
            let mut f = c.clone();
            if let Kind::Bjt { transistor: t, .. } = &mut f.parts[i].kind {
                (t.beta.min, t.beta.typ, t.beta.max) = (*b, *b, *b);
            }
            (f, ohms.to_vec())
        }
        CircuitFault::Reversed(_) => {
            let mut f = c.clone();
            if let Kind::Bjt { transistor: t, .. } = &mut f.parts[i].kind {
                (t.beta.min, t.beta.typ, t.beta.max) = (REVERSE_BETA, REVERSE_BETA, REVERSE_BETA);
                f.parts[i].pins.swap(0, 2);
            } else {
                f.parts[i].pins.swap(0, 1);
            }
            (f, ohms.to_vec())
        }
    })
}

/// The slot values with slot `part` left out when it becomes a fixed resistor.
fn ohms_without(slots: &[usize], ohms: &[Ohms], part: usize) -> Vec<Ohms> {
    slots
        .iter()
        .zip(ohms)
        .filter(|(&k, _)| k != part)
        .map(|(_, o)| *o)
        .collect()
}
