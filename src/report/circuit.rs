//! The report of a built circuit: every node's voltage from ground, every part's current, power and region,
//! each target against its value, the circuit error and the checks. It serialises to the `"circuits"` array
//! of the `--json` contract, beside `"stages"`, in SI base units; [`super::table`] renders it for people.

use super::{CheckReport, PartReport};
use crate::circuit::target::CheckError;
use crate::circuit::{Circuit, Kind, Options, Quantity, Solver};
use crate::network::Network;
use crate::stage::CheckUnit;
use crate::units::{Ohms, Watts, SAFE_EXTRA_LOW_VOLTAGE};
use serde::ser::SerializeMap;
use serde::{Serialize, Serializer};

/// Values keyed by name, serialised as a JSON object in the order given (the file's order).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Named<T>(pub Vec<(String, T)>);

impl<T: Serialize> Serialize for Named<T> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

/// One part at the operating point.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitPartReport {
    /// Its kind as written in the file ("resistor", "npn", "led").
    pub kind: &'static str,
    /// The nodes its pins are on, in the order of its kind's pins (a resistor's `between`; collector,
    /// base, emitter; anode, cathode; ...).
    pub connects: Vec<String>,
    /// Amperes: collector or drain current for a transistor, else the current from its first pin to its
    /// second (a zener's reverse current; an op-amp's or reference's output current).
    pub current: f64,
    /// Watts dissipated.
    pub power: f64,
    /// The region of a piecewise device ("active", "saturated", "cut off", "breakdown" …).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub region: Option<&'static str>,
    /// A bipolar transistor's base current, amperes.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub base_current: Option<f64>,
    /// A transistor's VBE or VGS in its own frame, volts.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub control: Option<f64>,
    /// A transistor's VCE or VDS in its own frame; for a two-terminal part, first pin above second; volts.
    pub across: f64,
    /// The resistance, ohms (every resistor: a slot's network, or a fixed part's value).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ohms: Option<f64>,
    /// A slot's network in the `--use` notation.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub network: Option<String>,
    /// A slot's members.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub parts: Option<Vec<PartReport>>,
    /// A slot's value as people read it: to the digits its members change (as a stage slot's).
    #[serde(skip)]
    pub shown: Option<String>,
}

/// One target against what the built circuit gives.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitTargetReport {
    /// What is measured: "node c1", "current Q1", "c1 - c2".
    pub what: String,
    /// The value aimed at, volts or amperes.
    pub target: f64,
    /// The value found, volts or amperes.
    pub actual: f64,
    /// Signed relative deviation, actual / target − 1.
    pub deviation: f64,
    /// Whether the target is a current (else a voltage), for rendering.
    #[serde(skip)]
    pub amps: bool,
}

/// A built circuit, judged.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitReport {
    /// The circuit's name.
    pub name: String,
    /// Every node's voltage from ground, volts, rails included.
    pub nodes: Named<f64>,
    /// Every part at the operating point.
    pub parts: Named<CircuitPartReport>,
    /// Each target.
    pub targets: Vec<CircuitTargetReport>,
    /// THE error: the largest weighted relative deviation of the targets.
    pub error: f64,
    /// Every check.
    pub checks: Vec<CheckReport>,
    /// The parts whose region differs at a second operating point, when the circuit can latch.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub latch: Option<Vec<String>>,
    /// The largest voltage between any two rails (ground included), for the caution.
    #[serde(skip)]
    pub span: f64,
}

impl CircuitReport {
    /// Solves the circuit built with these networks, one per slot in [`Circuit::slots`] order, and judges it.
    pub fn new(c: &Circuit, nets: &[Network]) -> Result<CircuitReport, CheckError> {
        let ohms: Vec<Ohms> = nets.iter().map(Network::ohms).collect();
        let ratings: Vec<Option<Watts>> = nets.iter().map(Network::equivalent_rating).collect();
        let options = Options { check_latch: true };
        let build = c.typical(&ohms)?;
        let s = Solver::new(c).solve(&build, &options)?;
        // The latch search has run once above; the checks' corner solves need not repeat it.
        let slots = c.slots();
        let mut checks = Vec::new();
        for k in c.checks(&ohms, &ratings, &Options { check_latch: false })? {
            // A network's power is checked member by member, as a stage's is: each part against its own
            // derated rating, named by its place in the network.
            let net = slots.iter().zip(nets).find(|(&i, n)| {
                n.part_count() > 1 && k.name == format!("power {}", c.parts[i].name)
            });
            match net {
                Some((&i, n)) => {
                    let powers = n.member_powers(s.parts[i].current);
                    for (m, (member, w)) in n.members().iter().zip(powers).enumerate() {
                        let limit = member.power.0 * c.limits.derate;
                        checks.push(CheckReport {
                            name: format!(
                                "power {} part {} ({})",
                                c.parts[i].name,
                                m + 1,
                                crate::notation::code(member.ohms)
                            ),
                            value: w.0,
                            limit,
                            ok: w.0 <= limit * (1.0 + 1e-9),
                            unit: CheckUnit::Watts,
                            at_least: false,
                        });
                    }
                }
                None => checks.push(CheckReport::from(k)),
            }
        }
        // Far off target is not a pass, whatever the other checks say: the stages' rule.
        if !c.targets.is_empty() {
            checks.push(CheckReport::from(crate::stage::on_target(c.error(&s))));
        }
        let nodes = Named(
            c.nodes
                .iter()
                .zip(&s.nodes)
                .map(|(n, v)| (n.clone(), v.0))
                .collect(),
        );
        let parts = Named(
            c.parts
                .iter()
                .enumerate()
                .map(|(i, p)| {
                    let st = &s.parts[i];
                    let transistor = p.kind.has_gain()
                        && !matches!(p.kind, Kind::OpAmp { .. } | Kind::Reference { .. });
                    let slot = slots.iter().position(|&k| k == i).map(|k| &nets[k]);
                    let fixed = match &p.kind {
                        Kind::Resistor { value, .. } => *value,
                        _ => None,
                    };
                    let report = CircuitPartReport {
                        kind: p.kind.name(),
                        connects: p.pins.iter().map(|&n| c.nodes[n].clone()).collect(),
                        current: st.current.0,
                        power: st.power.0,
                        region: st.region.map(|r| r.name()),
                        base_current: matches!(p.kind, Kind::Bjt { .. })
                            .then_some(st.base_current.0),
                        control: transistor.then_some(st.control.0),
                        across: st.across.0,
                        ohms: slot.map(|n| n.ohms().0).or(fixed.map(|o| o.0)),
                        network: slot.map(Network::notation),
                        shown: slot.map(Network::value_code),
                        parts: slot.map(|n| {
                            n.members()
                                .into_iter()
                                .map(|m| PartReport {
                                    ohms: m.ohms.0,
                                    tolerance: m.tolerance.0,
                                    power: m.power.0,
                                    location: m.location.clone(),
                                })
                                .collect()
                        }),
                    };
                    (p.name.clone(), report)
                })
                .collect(),
        );
        let targets = c
            .deviations(&s)
            .iter()
            .map(|d| {
                let t = &c.targets[d.target];
                let (what, amps) = match t.quantity {
                    Quantity::Node(n) => (format!("node {}", c.nodes[n]), false),
                    Quantity::Between(a, b) => (format!("{} - {}", c.nodes[a], c.nodes[b]), false),
                    Quantity::Current(p) => (format!("current {}", c.parts[p].name), true),
                };
                CircuitTargetReport {
                    what,
                    target: d.wanted,
                    actual: d.actual,
                    deviation: d.relative,
                    amps,
                }
            })
            .collect();
        let rails: Vec<f64> = c.rails.iter().flatten().map(|v| v.0).chain([0.0]).collect();
        let span = rails.iter().fold(0.0_f64, |m, a| {
            rails.iter().fold(m, |m, b| m.max((a - b).abs()))
        });
        Ok(CircuitReport {
            name: c.name.clone(),
            nodes,
            parts,
            targets,
            error: c.error(&s),
            checks,
            latch: s.latch.map(|l| l.parts),
            span,
        })
    }

    /// Whether every check passed and the circuit has one operating point.
    pub fn all_ok(&self) -> bool {
        self.latch.is_none() && self.checks.iter().all(|c| c.ok)
    }

    /// The safety cautions this circuit calls for: supplies at or above safe extra-low voltage, parts over
    /// their derated power.
    pub fn cautions(&self) -> Vec<String> {
        let subject = format!("circuit \"{}\"", self.name);
        let mut out = Vec::new();
        if self.span >= SAFE_EXTRA_LOW_VOLTAGE.0 {
            out.push(super::high_voltage_caution(&subject, self.span));
        }
        out.extend(super::hot_caution(&subject, &self.checks));
        out
    }
}
