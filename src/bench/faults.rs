//! The build faults a bench check looks for, and what each would do to the node voltages.
//!
//! Each fault is a small edit of the built stage, solved with the same exact DC model as the design (so a
//! fault is judged by physics, not by a rule of thumb):
//!
//! - a resistor a decade off (a misread multiplier band): one member ×10 or ÷10;
//! - a resistor one E12 step off (the neighbouring drawer): one member replaced by the next E12 value above
//!   or below it;
//! - two slots swapped: their networks exchanged;
//! - an open resistor (a dry joint, a lifted lead): one member removed; in a parallel network the others
//!   carry on;
//! - a shorted resistor (a solder bridge): one member replaced by 0 Ω;
//! - a reversed transistor (emitter and collector swapped): modelled as a transistor whose beta is its low
//!   reverse beta, 1 to 20 (from memory: small-signal parts are typically somewhere in that range). The
//!   model ignores the breakdown of the reverse-biased emitter–base junction (from memory, about 5 to 9 V),
//!   so with a larger supply the real readings may differ. A sound part of far too little gain (damaged, or
//!   the wrong type) is the same model at DC, so the explanation names both;
//! - a missing ground: on a single-supply stage nothing returns to 0 V, no current flows and every node
//!   floats up to the supply; on a dual-supply stage the ground is the base resistor's return, so the base is
//!   left open (which reads the same as RB open).
//!
//! Relies on [`crate::stage`] for the solve and [`crate::network`] for the members.

use crate::network::{Member, Network};
use crate::notation::{code, Series};
use crate::stage::{Slot, SlotNetworks, SlotValues, Stage, Topology};
use crate::units::{Ohms, Volts};
use std::fmt;

/// The lowest and highest reverse beta a reversed transistor is fitted over.
pub const REVERSE_BETA: (f64, f64) = (1.0, 20.0);

/// One member of one slot: which resistor of a network a fault is in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Place {
    /// The slot.
    pub slot: Slot,
    /// The member's position in the slot's network, left to right, from 0.
    pub member: usize,
}

/// A build fault.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Fault {
    /// A member fitted ten times too high.
    DecadeHigh(Place),
    /// A member fitted ten times too low.
    DecadeLow(Place),
    /// A member fitted as the next E12 value above it.
    StepUp(Place),
    /// A member fitted as the next E12 value below it.
    StepDown(Place),
    /// Two slots' networks exchanged.
    Swapped(Slot, Slot),
    /// A member not connected.
    Open(Place),
    /// A member bridged.
    Short(Place),
    /// The transistor fitted with emitter and collector swapped.
    Reversed,
    /// The ground return not connected.
    MissingGround,
}

impl Fault {
    /// The fault's kind, as the `--json` key `fault` gives it.
    pub fn kind(&self) -> &'static str {
        match self {
            Fault::DecadeHigh(_) => "decade-high",
            Fault::DecadeLow(_) => "decade-low",
            Fault::StepUp(_) => "e12-step-up",
            Fault::StepDown(_) => "e12-step-down",
            Fault::Swapped(..) => "swapped",
            Fault::Open(_) => "open",
            Fault::Short(_) => "short",
            Fault::Reversed => "reversed-transistor",
            Fault::MissingGround => "missing-ground",
        }
    }

    /// The slot the fault is in (the first of two swapped slots), if any.
    pub fn slot(&self) -> Option<Slot> {
        self.place().map(|p| p.slot).or(match self {
            Fault::Swapped(a, _) => Some(*a),
            _ => None,
        })
    }

    /// The member the fault is in, for faults of one resistor.
    pub fn place(&self) -> Option<Place> {
        match self {
            Fault::DecadeHigh(p)
            | Fault::DecadeLow(p)
            | Fault::StepUp(p)
            | Fault::StepDown(p)
            | Fault::Open(p)
            | Fault::Short(p) => Some(*p),
            _ => None,
        }
    }

    /// Whether the fault is in the transistor or the wiring rather than in a resistor.
    pub fn is_wiring(&self) -> bool {
        matches!(self, Fault::Reversed | Fault::MissingGround)
    }

    /// The value the faulty member has instead of its own, for a wrong-value fault.
    pub fn fitted(&self, nets: &SlotNetworks) -> Option<Ohms> {
        let p = self.place()?;
        let m = member(nets, p)?;
        wrong_value(self, m.ohms)
    }

    /// What the fault is, in a technician's words, with the part named by value and drawer.
    pub fn describe(&self, nets: &SlotNetworks) -> String {
        let part = |p: Place| -> String {
            match (nets.get(p.slot), member(nets, p)) {
                (Some(net), Some(m)) if net.part_count() > 1 => {
                    format!("the {} in {}{}", code(m.ohms), p.slot, at(m))
                }
                (_, Some(m)) => format!("{} ({}{})", p.slot, code(m.ohms), at(m)),
                _ => p.slot.to_string(),
            }
        };
        let fitted = |_: Place| self.fitted(nets).map(code).unwrap_or_default();
        match *self {
            Fault::DecadeHigh(p) | Fault::DecadeLow(p) => {
                format!(
                    "{} fitted as {}: a misread multiplier band",
                    part(p),
                    fitted(p)
                )
            }
            Fault::StepUp(p) => format!("{} fitted as {}: one E12 step high", part(p), fitted(p)),
            Fault::StepDown(p) => format!("{} fitted as {}: one E12 step low", part(p), fitted(p)),
            Fault::Swapped(a, b) => format!("{a} and {b} swapped"),
            Fault::Open(p) => format!("{} open", part(p)),
            Fault::Short(p) => format!("{} shorted", part(p)),
            // At DC a reversed part is a transistor of beta 1 to 20, so a sound part of far too little gain
            // (a damaged one, or the wrong type) reads the same: the words name both.
            Fault::Reversed => {
                "transistor in backwards (emitter and collector swapped), or a part of far too \
                                little gain: at DC the two read alike"
                    .to_string()
            }
            Fault::MissingGround => "the ground connection is missing".to_string(),
        }
    }

    /// What to check at the bench to confirm or rule it out.
    pub fn advice(&self, nets: &SlotNetworks) -> String {
        match *self {
            Fault::DecadeHigh(p) | Fault::DecadeLow(p) | Fault::StepUp(p) | Fault::StepDown(p) => {
                let want = member(nets, p).map(|m| code(m.ohms)).unwrap_or_default();
                format!("power off, lift one end of it and measure: it should read {want}")
            }
            Fault::Swapped(a, b) => {
                let name = |s: Slot| nets.get(s).map(|n| n.notation()).unwrap_or_default();
                format!(
                    "compare the parts with the build sheet: {a} should be {}, {b} should be {}",
                    name(a),
                    name(b)
                )
            }
            Fault::Open(_) => {
                "power off and measure across it; reflow both joints and look for a cracked body".to_string()
            }
            Fault::Short(_) => {
                "look for a solder bridge, a stray lead or a wire across it; it should not read near 0 Ω"
                    .to_string()
            }
            Fault::Reversed => {
                "check the transistor's pinout against its data sheet (pin orders differ between cases); \
                 if it is the right way round, lift it and measure its gain out of circuit: far below the \
                 range is a low-gain or damaged part"
                    .to_string()
            }
            Fault::MissingGround => {
                "check the wire from the supply's 0 V to the board's ground, and the ground side of every part"
                    .to_string()
            }
        }
    }
}

fn at(m: &Member) -> String {
    match &m.location {
        Some(l) if !l.trim().is_empty() => format!(", from {}", l.trim()),
        _ => String::new(),
    }
}

/// The member a place points at.
pub fn member(nets: &SlotNetworks, p: Place) -> Option<&Member> {
    nets.get(p.slot)?.members().into_iter().nth(p.member)
}

/// The value a wrong-value fault fits instead of `ohms`.
fn wrong_value(f: &Fault, ohms: Ohms) -> Option<Ohms> {
    match f {
        Fault::DecadeHigh(_) => Some(ohms * 10.0),
        Fault::DecadeLow(_) => Some(ohms / 10.0),
        // The next E12 value strictly above or below: a value on the series moves a whole step.
        Fault::StepUp(_) => Some(Series::E12.above(ohms * (1.0 + 1e-6))),
        Fault::StepDown(_) => Some(Series::E12.below(ohms * (1.0 - 1e-6))),
        _ => None,
    }
}

/// Every fault of the catalogue that applies to this built stage, in the order ties are listed: wiring
/// first (one check clears it), then single parts slot by slot, then swaps.
pub fn catalogue(stage: &Stage, nets: &SlotNetworks) -> Vec<Fault> {
    let mut out = vec![Fault::MissingGround, Fault::Reversed];
    let slots: Vec<Slot> = stage
        .slots()
        .into_iter()
        .filter(|s| nets.get(*s).is_some())
        .collect();
    for &slot in &slots {
        let n = nets.get(slot).map_or(0, |n| n.part_count());
        for member in 0..n {
            let p = Place { slot, member };
            out.extend([
                Fault::Open(p),
                Fault::Short(p),
                Fault::DecadeHigh(p),
                Fault::DecadeLow(p),
                Fault::StepUp(p),
                Fault::StepDown(p),
            ]);
        }
    }
    for (i, &a) in slots.iter().enumerate() {
        for &b in &slots[i + 1..] {
            out.push(Fault::Swapped(a, b));
        }
    }
    out
}

/// Node voltages, in the stage model's NPN frame (a PNP stage's magnitudes).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Nodes {
    /// Base voltage.
    pub vb: Volts,
    /// Emitter voltage.
    pub ve: Volts,
    /// Collector voltage.
    pub vc: Volts,
}

/// One level of a member's way up to its slot's whole network: how the member's branch combines there with
/// its siblings, whose sum is kept (ohms in series, siemens in parallel).
#[derive(Clone, Copy, Debug)]
struct Step {
    series: bool,
    others: f64,
}

/// Collects, for every member of `net` left to right, its value and its steps up to `net`, and returns the
/// value of `net`. Each level sums its children once, with prefix and suffix sums, so that every member's
/// siblings cost O(1): the whole pass is linear in the members (times the nesting depth).
fn paths(net: &Network, out: &mut Vec<Path>) -> f64 {
    match net {
        Network::Single(m) => {
            out.push((m.ohms, Vec::new()));
            m.ohms.0
        }
        Network::Series(parts) | Network::Parallel(parts) => {
            let series = matches!(net, Network::Series(_));
            let mut spans = Vec::with_capacity(parts.len());
            let mut terms = Vec::with_capacity(parts.len());
            for p in parts {
                let from = out.len();
                let v = paths(p, out);
                spans.push(from..out.len());
                terms.push(if series { v } else { 1.0 / v });
            }
            let mut suffix = vec![0.0; terms.len() + 1];
            for i in (0..terms.len()).rev() {
                suffix[i] = suffix[i + 1] + terms[i];
            }
            let mut prefix = 0.0;
            for (i, span) in spans.into_iter().enumerate() {
                let others = prefix + suffix[i + 1];
                for leaf in &mut out[span] {
                    leaf.1.push(Step { series, others });
                }
                prefix += terms[i];
            }
            let total = suffix[0];
            if series {
                total
            } else {
                1.0 / total
            }
        }
    }
}

/// A member's own value and its steps up to its slot's network.
type Path = (Ohms, Vec<Step>);

/// A built stage prepared for fault simulation, once: each slot's nominal value and, for every member, its
/// value and its way up to the slot. A fault's slot values then cost the network's depth, not its width, so
/// simulating the whole catalogue (six faults a member) is linear in the members.
#[derive(Clone, Debug)]
pub struct Prepared {
    slots: Vec<(Slot, Ohms, Vec<Path>)>,
    dual: bool,
}

impl Prepared {
    /// Prepares the stage's built networks.
    pub fn new(stage: &Stage, nets: &SlotNetworks) -> Prepared {
        let slots = stage
            .slots()
            .into_iter()
            .filter_map(|slot| {
                let net = nets.get(slot)?;
                let mut members = Vec::new();
                paths(net, &mut members);
                // The nominal value by the network's own arithmetic, as every other command computes it.
                Some((slot, net.ohms(), members))
            })
            .collect();
        Prepared {
            slots,
            dual: stage.topology == Topology::DualSupply,
        }
    }

    fn nominal(&self, slot: Slot) -> Option<Ohms> {
        self.slots.iter().find(|s| s.0 == slot).map(|s| s.1)
    }

    /// The slot's value with one member at `ohms` instead of its own (infinite: open; 0: shorted).
    fn edited(&self, place: Place, ohms: f64) -> Option<Ohms> {
        let (_, _, members) = self.slots.iter().find(|s| s.0 == place.slot)?;
        let (_, steps) = members.get(place.member)?;
        let mut v = ohms;
        for st in steps {
            v = if st.series {
                st.others + v
            } else {
                1.0 / (st.others + 1.0 / v)
            };
        }
        Some(Ohms(v))
    }

    /// The slot values with the fault applied (None: as built), or None when the fault is not one of
    /// resistances (a single-supply stage without its ground).
    pub fn values(&self, fault: Option<&Fault>) -> Option<SlotValues> {
        let mut values = SlotValues::new();
        for &(slot, ohms, _) in &self.slots {
            values.set(slot, ohms);
        }
        let Some(f) = fault else {
            return Some(values);
        };
        if let Some(p) = f.place() {
            let (_, _, members) = self.slots.iter().find(|s| s.0 == p.slot)?;
            let own = members.get(p.member)?.0;
            let fitted = match f {
                Fault::Open(_) => f64::INFINITY,
                Fault::Short(_) => 0.0,
                _ => wrong_value(f, own).unwrap_or(own).0,
            };
            let ohms = self.edited(p, fitted)?;
            // An infinite resistance is an open slot, which the solver models as unset.
            let mut v = SlotValues::new();
            for (s, r) in values.iter() {
                if s != p.slot {
                    v.set(s, r);
                } else if ohms.0.is_finite() {
                    v.set(s, ohms);
                }
            }
            return Some(v);
        }
        match *f {
            Fault::Swapped(a, b) => {
                let (ra, rb) = (self.nominal(a)?, self.nominal(b)?);
                values.set(a, rb);
                values.set(b, ra);
            }
            Fault::MissingGround if self.dual => {
                // Only the base resistor returns to ground: without it the base is open.
                let mut v = SlotValues::new();
                for (s, r) in values.iter().filter(|(s, _)| *s != Slot::RB) {
                    v.set(s, r);
                }
                return Some(v);
            }
            Fault::MissingGround => return None,
            _ => {}
        }
        Some(values)
    }
}

/// The node voltages of the stage with these slot values (None: no ground return, so nothing flows and every
/// node sits at the supply), at `beta` and the ambient temperature.
pub fn nodes(stage: &Stage, values: Option<&SlotValues>, beta: f64) -> Nodes {
    let Some(values) = values else {
        let v = stage.supply;
        return Nodes {
            vb: v,
            ve: v,
            vc: v,
        };
    };
    let op = stage.solve(values, beta, stage.limits.ambient);
    Nodes {
        vb: op.vb,
        ve: op.ve,
        vc: op.vc,
    }
}

/// The node voltages the stage would show with this fault, at `beta` (at the reference temperature; for
/// [`Fault::Reversed`], the reverse beta) and the ambient temperature. To simulate many faults of one build,
/// prepare it once with [`Prepared`] and use [`nodes`].
pub fn simulate(stage: &Stage, nets: &SlotNetworks, fault: Option<&Fault>, beta: f64) -> Nodes {
    let values = Prepared::new(stage, nets).values(fault);
    nodes(stage, values.as_ref(), beta)
}

/// The beta range a hypothesis is fitted over: the transistor's own range, or the reverse beta.
pub fn beta_range(stage: &Stage, fault: Option<&Fault>) -> (f64, f64) {
    match fault {
        Some(Fault::Reversed) => REVERSE_BETA,
        _ => (stage.transistor.beta.min, stage.transistor.beta.max),
    }
}

impl fmt::Display for Fault {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Fault::Swapped(a, b) => write!(f, "{} {a} {b}", self.kind()),
            _ => match self.place() {
                Some(p) => write!(f, "{} {} part {}", self.kind(), p.slot, p.member + 1),
                None => f.write_str(self.kind()),
            },
        }
    }
}
