//! The measurement that settles a tie: when the best explanations of a stage's readings are close (or read
//! alike at VB, VE and VC), the one further measurement that tells the most of them apart, with what each
//! explanation predicts there. The candidates, least work first: a node not yet read (power on, from
//! ground), the voltage across one slot or across one member of a series network (power on, probes on its
//! two ends), and one resistor lifted and measured out of circuit (power off). Out of circuit a resistor
//! shows only its own value, so it sees a wrong value or a swap, not a dry joint or a solder bridge (those
//! show power on, as a voltage). As for circuits ([`super::circuit`]), explanations within [`TIE`] of the
//! best are tied, and a measurement separates two of them when their predictions differ by [`SEPARATES`]
//! volts, or by [`SEPARATES_OHMS`] of the larger value out of circuit.
//!
//! Relies on [`super::faults`] for what each fault does to the build and [`crate::stage`] for the solve.

// Dense elimination and rotations read as the textbook writes them, indexed.
#![allow(clippy::needless_range_loop)]

use super::faults::{self, Fault, Place};
use super::{best_match, Explanation, Measured};
use crate::network::Network;
use crate::stage::{Slot, SlotNetworks, SlotValues, Stage, Topology};
use crate::units::{Ohms, Volts};

/// Explanations within this score of the best are a tie a further measurement should settle.
pub const TIE: f64 = 0.05;
/// Two voltage predictions this far apart (volts) are told apart by a meter: well above its last digit and
/// the models' error (common practice, no source).
pub const SEPARATES: f64 = 0.1;
/// Two resistances this far apart (a fraction of the larger) are told apart: twice a 5 % part's band.
pub const SEPARATES_OHMS: f64 = 0.1;
/// At most this many tied explanations are weighed.
const MOST: usize = 8;

/// One further measurement at the bench.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Measurement {
    /// A node voltage from ground, power on ("VB", "VE" or "VC").
    Node(&'static str),
    /// The voltage across a slot's network, power on.
    Across(Slot),
    /// The voltage across one member of a slot's series network, power on.
    AcrossMember(Place),
    /// One member lifted and measured out of circuit, power off.
    OutOfCircuit(Place),
    /// The resistance across a slot's two pads in circuit, power off and the supply unplugged.
    PowerOffAcross(Slot),
}

impl Measurement {
    /// The kind, as the `--json` key `kind` gives it.
    pub fn kind(&self) -> &'static str {
        match self {
            Measurement::Node(_) => "node",
            Measurement::Across(_) => "across",
            Measurement::AcrossMember(_) => "across-member",
            Measurement::OutOfCircuit(_) => "out-of-circuit",
            Measurement::PowerOffAcross(_) => "in-circuit-ohms",
        }
    }

    /// Whether the reading is in ohms (out of circuit) rather than volts.
    pub fn in_ohms(&self) -> bool {
        matches!(
            self,
            Measurement::OutOfCircuit(_) | Measurement::PowerOffAcross(_)
        )
    }

    /// What to measure, in a technician's words.
    pub fn describe(&self, nets: &SlotNetworks) -> String {
        let member = |p: &Place| {
            faults::member(nets, *p)
                .map(|m| format!("the {} in {}", crate::notation::code(m.ohms), p.slot))
                .unwrap_or_else(|| p.slot.to_string())
        };
        match self {
            Measurement::Node(n) => format!("{n} from ground, power on"),
            Measurement::Across(s) => format!("the voltage across {s}, power on"),
            Measurement::AcrossMember(p) => format!("the voltage across {}, power on", member(p)),
            Measurement::OutOfCircuit(p) => {
                let what = match nets.get(p.slot) {
                    Some(n) if n.part_count() > 1 => member(p),
                    _ => p.slot.to_string(),
                };
                format!("{what} lifted and measured out of circuit, power off")
            }
            Measurement::PowerOffAcross(s) => {
                format!("the resistance across {s}'s pads, power off and the supply unplugged")
            }
        }
    }
}

/// The measurement that separates tied explanations, and what each predicts there.
#[derive(Clone, Debug, PartialEq)]
pub struct NextMeasurement {
    /// What to measure.
    pub what: Measurement,
    /// Each tied explanation and its predicted reading: volts from real ground for a node, volts across
    /// (a magnitude) for a slot or member, ohms out of circuit (infinite for an open).
    pub predictions: Vec<(Fault, f64)>,
}

/// What one fault makes of the build at its fitted beta: slot values, node voltages in the NPN frame and
/// the slot currents.
struct Hypothesis {
    fault: Fault,
    values: Option<SlotValues>,
    op: Option<crate::stage::OperatingPoint>,
}

/// The mirror-frame voltages at each end of a slot (the rails, the nodes, the split emitter's midpoint).
fn ends(stage: &Stage, h: &Hypothesis, slot: Slot) -> Option<(f64, f64)> {
    let vcc = stage.supply.0;
    let Some(op) = h.op else {
        // A missing ground: everything floats at the supply, nothing carries a current.
        return Some((vcc, vcc));
    };
    let values = h.values.as_ref()?;
    let r = |s: Slot| values.get(s).map_or(f64::INFINITY, |o| o.0);
    let (b, e, c) = (op.vb.0, op.ve.0, op.vc.0);
    let mid = || {
        let (re1, re2) = (r(Slot::RE1), r(Slot::RE2));
        if re2.is_infinite() {
            e
        } else if re1.is_infinite() {
            0.0
        } else {
            op.current(Slot::RE2).map_or(f64::NAN, |i| i.0) * re2
        }
    };
    let vee = -stage.supply_neg.map_or(0.0, |v| v.0);
    Some(match (stage.topology, slot) {
        (_, Slot::RC) => (vcc, c),
        (Topology::DualSupply, Slot::RE) => (e, vee),
        (_, Slot::RE) => (e, 0.0),
        (_, Slot::R1) => (vcc, b),
        (_, Slot::R2) => (b, 0.0),
        (_, Slot::RE1) => (e, mid()),
        (_, Slot::RE2) => (mid(), 0.0),
        (Topology::CollectorFeedback, Slot::RB) => (c, b),
        (Topology::DualSupply, Slot::RB) => (b, 0.0),
        (_, Slot::RB) => (vcc, b),
    })
}

/// The stage's nodes for an ohmmeter: the collector-side rail, ground, base, emitter, collector, the split
/// emitter's midpoint and the negative rail.
const NODE_COUNT: usize = 7;

/// The two nodes a slot joins.
fn pads(topology: Topology, slot: Slot) -> (usize, usize) {
    let (vcc, gnd, b, e, c, m, vee) = (0, 1, 2, 3, 4, 5, 6);
    match (topology, slot) {
        (_, Slot::RC) => (vcc, c),
        (Topology::DualSupply, Slot::RE) => (e, vee),
        (_, Slot::RE) => (e, gnd),
        (_, Slot::R1) => (vcc, b),
        (_, Slot::R2) => (b, gnd),
        (_, Slot::RE1) => (e, m),
        (_, Slot::RE2) => (m, gnd),
        (Topology::CollectorFeedback, Slot::RB) => (c, b),
        (Topology::DualSupply, Slot::RB) => (b, gnd),
        (_, Slot::RB) => (vcc, b),
    }
}

/// The resistance an ohmmeter reads across a slot's pads with the power off and the supply unplugged: the
/// resistors alone (the transistor's junctions taken as not conducting at an ohmmeter's low test voltage,
/// from memory; a meter's diode range drives them), by a nodal solve of the resistor network. A missing
/// ground leaves the rail unreturned; infinite for nodes that nothing joins.
fn ohms_across(stage: &Stage, values: &SlotValues, slot: Slot, ground_missing: bool) -> f64 {
    let mut g = [[0.0_f64; NODE_COUNT]; NODE_COUNT];
    for s in stage.slots() {
        let r = values.get(s).map_or(f64::INFINITY, |o| o.0);
        if r.is_infinite() {
            continue;
        }
        let (mut a, mut b) = pads(stage.topology, s);
        if ground_missing {
            // The ground return is off the board: the parts that went to it now end on a floating node.
            let floating = NODE_COUNT - 1;
            if stage.topology != Topology::DualSupply {
                if a == 1 {
                    a = floating;
                }
                if b == 1 {
                    b = floating;
                }
            }
        }
        let y = 1.0 / r.max(1e-6);
        g[a][a] += y;
        g[b][b] += y;
        g[a][b] -= y;
        g[b][a] -= y;
    }
    let (i, j) = pads(stage.topology, slot);
    // 1 A into i, out at j (held at 0 V); a tiny leak to j from every node keeps floating ones solvable.
    let mut a = g;
    let mut rhs = [0.0; NODE_COUNT];
    rhs[i] = 1.0;
    for (k, row) in a.iter_mut().enumerate() {
        row[k] += 1e-12;
    }
    for k in 0..NODE_COUNT {
        a[j][k] = 0.0;
    }
    a[j][j] = 1.0;
    rhs[j] = 0.0;
    // Gaussian elimination with partial pivoting on a 7 × 7 system.
    for col in 0..NODE_COUNT {
        let piv = (col..NODE_COUNT)
            .max_by(|&x, &y| a[x][col].abs().total_cmp(&a[y][col].abs()))
            .unwrap_or(col);
        a.swap(col, piv);
        rhs.swap(col, piv);
        let d = a[col][col];
        if d == 0.0 {
            return f64::INFINITY;
        }
        for row in 0..NODE_COUNT {
            if row != col {
                let f = a[row][col] / d;
                if f != 0.0 {
                    for k in col..NODE_COUNT {
                        a[row][k] -= f * a[col][k];
                    }
                    rhs[row] -= f * rhs[col];
                }
            }
        }
    }
    let v = rhs[i] / a[i][i];
    if v > 1e10 {
        f64::INFINITY
    } else {
        v
    }
}

/// Each member's value under the fault, for a slot's network (the members in order).
fn member_values(nets: &SlotNetworks, f: &Fault, slot: Slot) -> Option<Vec<f64>> {
    let source = match f {
        Fault::Swapped(a, b) if *a == slot => *b,
        Fault::Swapped(a, b) if *b == slot => *a,
        _ => slot,
    };
    let mut v: Vec<f64> = nets
        .get(source)?
        .members()
        .into_iter()
        .map(|m| m.ohms.0)
        .collect();
    if let Some(p) = f.place().filter(|p| p.slot == slot) {
        let x = v.get_mut(p.member)?;
        *x = match f {
            Fault::Open(_) => f64::INFINITY,
            Fault::Short(_) => 0.0,
            _ => f.fitted(nets)?.0,
        };
    }
    Some(v)
}

/// What the hypothesis predicts for a measurement, or None where it cannot be said.
fn predict(stage: &Stage, nets: &SlotNetworks, h: &Hypothesis, m: &Measurement) -> Option<f64> {
    match m {
        Measurement::Node(n) => {
            let v = match h.op {
                None => stage.supply.0,
                Some(op) => match *n {
                    "VB" => op.vb.0,
                    "VE" => op.ve.0,
                    _ => op.vc.0,
                },
            };
            Some(stage.real(Volts(v)).0)
        }
        Measurement::Across(s) => {
            let (a, b) = ends(stage, h, *s)?;
            let d = (a - b).abs();
            d.is_finite().then_some(d)
        }
        Measurement::AcrossMember(p) => {
            let (a, b) = ends(stage, h, p.slot)?;
            let across = (a - b).abs();
            let v = member_values(nets, &h.fault, p.slot)?;
            let own = *v.get(p.member)?;
            let share = if v.iter().any(|x| x.is_infinite()) {
                // An open member takes the whole drop; the others carry no current.
                if own.is_infinite() {
                    1.0
                } else {
                    0.0
                }
            } else {
                let total: f64 = v.iter().sum();
                if total > 0.0 {
                    own / total
                } else {
                    0.0
                }
            };
            let d = across * share;
            d.is_finite().then_some(d)
        }
        Measurement::PowerOffAcross(slot) => {
            let ground_missing = h.fault == Fault::MissingGround;
            let values = match (&h.values, ground_missing) {
                (Some(v), _) => *v,
                (None, _) => faults::Prepared::new(stage, nets).values(None)?,
            };
            Some(ohms_across(stage, &values, *slot, ground_missing))
        }
        Measurement::OutOfCircuit(p) => {
            // Lifted, a part shows its own value: a wrong value or a swap, not a joint or a bridge.
            let f = match h.fault {
                Fault::Open(_) | Fault::Short(_) => Fault::MissingGround,
                f => f,
            };
            member_values(nets, &f, p.slot)?.get(p.member).copied()
        }
    }
}

/// Whether two predictions of a measurement are told apart.
fn apart(m: &Measurement, a: f64, b: f64) -> bool {
    if m.in_ohms() {
        if a.is_infinite() || b.is_infinite() {
            return a != b;
        }
        (a - b).abs() >= SEPARATES_OHMS * a.max(b)
    } else {
        (a - b).abs() >= SEPARATES
    }
}

/// Every measurement a stage offers, least work first.
fn candidates(stage: &Stage, nets: &SlotNetworks, measured: &Measured) -> Vec<Measurement> {
    let mut out = Vec::new();
    for (name, read) in super::NODES.iter().zip(measured.as_array()) {
        if read.is_none() {
            out.push(Measurement::Node(name));
        }
    }
    for slot in stage.slots() {
        out.push(Measurement::Across(slot));
    }
    for slot in stage.slots() {
        if let Some(Network::Series(members)) = nets.get(slot) {
            if members.iter().all(|m| matches!(m, Network::Single(_))) {
                for member in 0..members.len() {
                    out.push(Measurement::AcrossMember(Place { slot, member }));
                }
            }
        }
    }
    for slot in stage.slots() {
        out.push(Measurement::PowerOffAcross(slot));
    }
    for slot in stage.slots() {
        let n = nets.get(slot).map_or(0, |n| n.members().len());
        for member in 0..n {
            out.push(Measurement::OutOfCircuit(Place { slot, member }));
        }
    }
    out
}

/// The measurement that tells the most of these faults apart, or None when none does. Each fault's beta is
/// fitted to the readings (in the NPN frame) as the ranking fits it.
pub fn separate(
    stage: &Stage,
    nets: &SlotNetworks,
    measured: &Measured,
    tied: &[Fault],
) -> Option<NextMeasurement> {
    if tied.len() < 2 {
        return None;
    }
    let prepared = faults::Prepared::new(stage, nets);
    let hyps: Vec<Hypothesis> = tied
        .iter()
        .map(|f| {
            let (_, beta, _) = best_match(stage, &prepared, Some(f), measured);
            let values = prepared.values(Some(f));
            let op = values
                .as_ref()
                .map(|v| stage.solve(v, beta, stage.limits.ambient));
            Hypothesis {
                fault: *f,
                values,
                op,
            }
        })
        .collect();
    let mut best: Option<(usize, f64, Measurement, Vec<f64>)> = None;
    for m in candidates(stage, nets, measured) {
        let Some(p) = hyps
            .iter()
            .map(|h| predict(stage, nets, h, &m))
            .collect::<Option<Vec<f64>>>()
        else {
            continue;
        };
        let mut pairs = 0;
        for a in 0..p.len() {
            for b in a + 1..p.len() {
                pairs += usize::from(apart(&m, p[a], p[b]));
            }
        }
        let finite: Vec<f64> = p.iter().copied().filter(|x| x.is_finite()).collect();
        let spread = finite.iter().fold(f64::NEG_INFINITY, |x, y| x.max(*y))
            - finite.iter().fold(f64::INFINITY, |x, y| x.min(*y));
        let spread = if m.in_ohms() { 0.0 } else { spread };
        // More pairs told apart wins; then, among voltages, the wider spread; then the least work (first).
        let better = match &best {
            None => pairs > 0,
            Some((bp, bs, _, _)) => pairs > *bp || (pairs == *bp && spread > *bs + 1e-9),
        };
        if better {
            best = Some((pairs, spread, m, p));
        }
    }
    best.map(|(_, _, what, p)| NextMeasurement {
        what,
        predictions: tied.iter().copied().zip(p).collect(),
    })
}

/// The faults tied at the top of a ranking: the best, those that read alike with it, and every
/// explanation within [`TIE`] of its score (with theirs), at most [`MOST`].
pub fn tied(explanations: &[Explanation]) -> Vec<Fault> {
    let Some(first) = explanations.first() else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for e in explanations.iter().filter(|e| e.score >= first.score - TIE) {
        out.push(e.fault);
        out.extend(e.alike.iter().copied());
    }
    out.truncate(MOST);
    out
}

/// Ohms for a prediction shown to people ("open" for an open).
pub fn ohms_text(x: f64) -> String {
    if x.is_infinite() {
        "open".into()
    } else {
        crate::notation::code(Ohms(x))
    }
}
