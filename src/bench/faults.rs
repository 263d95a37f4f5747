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
//!   so with a larger supply the real readings may differ;
//! - a missing ground: on a single-supply stage nothing returns to 0 V, no current flows and every node
//!   floats up to the supply; on a dual-supply stage the ground is the base resistor's return, so the base is
//!   left open (which reads the same as RB open).
//!
//! Relies on [`crate::stage`] for the solve and [`crate::network`] for the members.

use crate::network::Member;
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
            Fault::Reversed => "transistor in backwards: emitter and collector swapped".to_string(),
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
                "check the transistor's pinout against its data sheet (pin orders differ between cases)"
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

/// The slot values with the fault applied, or None when the fault is not one of resistances.
fn faulty_values(stage: &Stage, nets: &SlotNetworks, f: &Fault) -> Option<SlotValues> {
    let mut values = SlotValues::new();
    let put = |values: &mut SlotValues, slot: Slot, ohms: Ohms| {
        // An infinite resistance is an open slot, which the solver models as unset.
        if ohms.0.is_finite() {
            values.set(slot, ohms);
        }
    };
    for slot in stage.slots() {
        let Some(net) = nets.get(slot) else { continue };
        let ohms = match f.place() {
            Some(p) if p.slot == slot => {
                let target = net.members().into_iter().nth(p.member)?;
                let replace = |m: &Member| -> Ohms {
                    if std::ptr::eq(m, target) {
                        match f {
                            Fault::Open(_) => Ohms(f64::INFINITY),
                            Fault::Short(_) => Ohms(0.0),
                            _ => wrong_value(f, m.ohms).unwrap_or(m.ohms),
                        }
                    } else {
                        m.ohms
                    }
                };
                net.ohms_with(&replace)
            }
            _ => net.ohms(),
        };
        put(&mut values, slot, ohms);
    }
    match *f {
        Fault::Swapped(a, b) => {
            let (ra, rb) = (nets.get(a)?.ohms(), nets.get(b)?.ohms());
            values.set(a, rb);
            values.set(b, ra);
        }
        Fault::MissingGround if stage.topology == Topology::DualSupply => {
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

/// The node voltages the stage would show with this fault, at `beta` (at the reference temperature; for
/// [`Fault::Reversed`], the reverse beta) and the ambient temperature.
pub fn simulate(stage: &Stage, nets: &SlotNetworks, fault: Option<&Fault>, beta: f64) -> Nodes {
    let values = match fault {
        None => Some(nets.values()),
        Some(f) => faulty_values(stage, nets, f),
    };
    let Some(values) = values else {
        // A single-supply stage with no ground return: nothing flows, so nothing drops.
        let v = stage.supply;
        return Nodes {
            vb: v,
            ve: v,
            vc: v,
        };
    };
    let op = stage.solve(&values, beta, stage.limits.ambient);
    Nodes {
        vb: op.vb,
        ve: op.ve,
        vc: op.vc,
    }
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
