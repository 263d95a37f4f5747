//! The checks of a built stage: stiffness, the divider's current, beta spread, headroom at the beta and
//! temperature extremes, every resistor member's share of the power against its derated rating, and the
//! transistor's dissipation, current and voltage against its limits.
//!
//! Each check reports its value, its limit and whether it passed, so a report can show how close it came.

use super::{Region, Resolved, Slot, SlotValues, Stage};
use crate::network::Network;
use crate::notation::code;
use crate::units::Celsius;

/// The unit a check's value and limit are in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CheckUnit {
    /// A plain ratio ("× IB").
    Ratio,
    /// A fraction, shown as a percentage.
    Fraction,
    /// Amperes.
    Amps,
    /// Volts.
    Volts,
    /// Watts.
    Watts,
    /// Met (1) or not (0): a required region, say.
    Flag,
    /// A plain multiple ("2.5 ×"): a switch's overdrive.
    Times,
}

/// The largest error (relative deviation from the targets) a built stage may have and still pass: the
/// bench's "measured within 10 % of calculated" (common practice, no source; the same band as
/// `bench::ACCEPTABLE`). A stage further off than this is not reported as passing, whatever its other checks.
pub const TARGET_ERROR: f64 = 0.10;

/// The check that a built stage lands within [`TARGET_ERROR`] of its targets, from its error.
pub fn on_target(error: f64) -> Check {
    // An ideal design is on target up to rounding (2e-16 relative): shown as 0, not 2.22e-14 %.
    let error = if error.abs() < 1e-9 { 0.0 } else { error };
    Check {
        name: "error from targets".to_string(),
        value: error,
        limit: TARGET_ERROR,
        ok: error <= TARGET_ERROR,
        unit: CheckUnit::Fraction,
        at_least: false,
    }
}

impl CheckUnit {
    /// A value in this unit for people: "9.2 × IB", "125 mW", "met"; ∞ when unbounded. A femtoampere or
    /// femtowatt is rounding residue, shown as 0.
    pub fn show(self, x: f64) -> String {
        use crate::notation::{engineering, trim_number};
        if !x.is_finite() {
            return "∞".into();
        }
        let x = if matches!(self, CheckUnit::Amps | CheckUnit::Watts) && x.abs() < 1e-15 {
            0.0
        } else {
            x
        };
        match self {
            CheckUnit::Ratio => format!("{} × IB", trim_number(x, 3)),
            CheckUnit::Fraction => format!("{} %", trim_number(x * 100.0, 3)),
            CheckUnit::Amps => engineering(x, "A"),
            CheckUnit::Volts => engineering(x, "V"),
            CheckUnit::Watts => engineering(x, "W"),
            CheckUnit::Times => format!("{} ×", trim_number(x, 3)),
            CheckUnit::Flag if x >= 1.0 => "met".into(),
            CheckUnit::Flag => "not met".into(),
        }
    }
}

/// One check: a value against a limit.
#[derive(Clone, Debug, PartialEq)]
pub struct Check {
    /// What is checked ("stiffness", "power R1").
    pub name: String,
    /// The value found (SI base units, or a ratio).
    pub value: f64,
    /// The limit it is held to.
    pub limit: f64,
    /// Whether it passed.
    pub ok: bool,
    /// The unit of value and limit.
    pub unit: CheckUnit,
    /// Whether the value must be at least the limit (else at most).
    pub at_least: bool,
}

impl Check {
    /// The check as a phrase: "beta spread 78 % (needs ≤ 25 %)".
    pub fn describe(&self) -> String {
        let show = |x: f64| self.unit.show(x);
        if self.unit == CheckUnit::Flag {
            return format!("{} {}", self.name, show(self.value));
        }
        let op = if self.at_least { "≥" } else { "≤" };
        format!(
            "{} {} (needs {op} {})",
            self.name,
            show(self.value),
            show(self.limit)
        )
    }
}

/// A network in each slot: what a stage is built from.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SlotNetworks([Option<Network>; 7]);

impl SlotNetworks {
    /// No slot filled.
    pub fn new() -> SlotNetworks {
        SlotNetworks::default()
    }

    /// Networks from (slot, network) pairs; a later pair for the same slot wins.
    pub fn from_pairs(pairs: impl IntoIterator<Item = (Slot, Network)>) -> SlotNetworks {
        let mut n = SlotNetworks::new();
        for (s, net) in pairs {
            n.set(s, net);
        }
        n
    }

    /// Puts a network in a slot.
    pub fn set(&mut self, slot: Slot, net: Network) {
        self.0[slot.index()] = Some(net);
    }

    /// The network in a slot.
    pub fn get(&self, slot: Slot) -> Option<&Network> {
        self.0[slot.index()].as_ref()
    }

    /// The filled slots, in [`Slot::ALL`] order.
    pub fn iter(&self) -> impl Iterator<Item = (Slot, &Network)> + '_ {
        Slot::ALL
            .into_iter()
            .filter_map(|s| self.get(s).map(|n| (s, n)))
    }

    /// Each slot's nominal resistance.
    pub fn values(&self) -> SlotValues {
        self.iter().map(|(s, n)| (s, n.ohms())).collect()
    }
}

/// The relative slack every limit is compared with.
pub(super) const SLACK: f64 = 1e-9;

fn check(
    name: impl Into<String>,
    value: f64,
    limit: f64,
    unit: CheckUnit,
    at_least: bool,
) -> Check {
    // A part-per-billion of slack, so that a design sitting exactly on its limit (as an ideal one can)
    // does not fail on rounding.
    let ok = if at_least {
        value >= limit * (1.0 - SLACK)
    } else {
        value <= limit * (1.0 + SLACK)
    };
    Check {
        name: name.into(),
        value,
        limit,
        ok: ok && !value.is_nan(),
        unit,
        at_least,
    }
}

pub(super) fn all(s: &Stage, nets: &SlotNetworks) -> Vec<Check> {
    let res = Resolved::of(s, &nets.values());
    let ambient = s.limits.ambient;
    let b = s.transistor.beta;
    let mut out = Vec::new();

    if let Some(v) = s.stiffness_of(&res) {
        out.push(check(
            "stiffness",
            v,
            s.rule.stiffness,
            CheckUnit::Ratio,
            true,
        ));
    }
    if let (Some(i), Some(design)) = (s.divider_current_max(&res), s.targets().divider_current) {
        out.push(check(
            "divider current",
            i,
            s.rule.divider_max * design.0,
            CheckUnit::Amps,
            false,
        ));
    }

    // How far IC moves over the beta range: the measure of beta stability.
    let ic = |beta: f64| s.solve_resolved(&res, beta, ambient).ic.0;
    let typ = ic(b.typ);
    let spread = if typ > 0.0 {
        (ic(b.max) - ic(b.min)).abs() / typ
    } else {
        f64::INFINITY
    };
    out.push(check(
        "beta spread",
        spread,
        s.rule.ic_spread,
        CheckUnit::Fraction,
        false,
    ));

    // Headroom: the Q point's distance along the DC load line to saturation (VCE − vce_sat) and to cutoff
    // (the open-circuit VCE less VCE), whichever is nearer. It must be positive, in the active region.
    let env = s.env(&res);
    let mut temps: Vec<Option<Celsius>> = vec![None];
    if let Some((lo, hi)) = s.limits.temperature {
        temps.push(Some(lo));
        temps.push(Some(hi));
    }
    for t in temps {
        for (beta, label) in [(b.min, "min beta"), (b.max, "max beta")] {
            let op = s.solve_resolved(&res, beta, t.unwrap_or(ambient));
            let room = (op.vce.0 - s.transistor.vce_sat.0).min(env.c0 - op.vce.0);
            let room = if op.region == Region::Active {
                room
            } else {
                room.min(0.0)
            };
            // A saturated Q point sits at VCE = vce_sat up to rounding: its headroom is 0, not -1.75e-15
            // (and never -0). A nanovolt is far below anything a meter or the model resolves.
            let room = if room.abs() < 1e-9 { 0.0 } else { room };
            let name = match t {
                None => format!("headroom at {label}"),
                Some(t) => format!("headroom at {label}, {t}"),
            };
            let mut c = check(name, room, 0.0, CheckUnit::Volts, true);
            c.ok = op.region == Region::Active && room > 0.0;
            out.push(c);
        }
    }

    // Dissipation at the worst beta: each member's share of its slot's current.
    let corners: Vec<_> = [b.min, b.typ, b.max]
        .into_iter()
        .map(|beta| s.solve_resolved(&res, beta, ambient))
        .collect();
    for (slot, net) in nets.iter() {
        if !s.has_slot(slot) {
            continue;
        }
        let current = corners
            .iter()
            .filter_map(|op| op.current(slot))
            .map(|i| i.abs())
            .fold(crate::units::Amps(0.0), crate::units::Amps::max);
        let members = net.members();
        let powers = net.member_powers(current);
        for (k, (m, p)) in members.iter().zip(powers).enumerate() {
            let name = if members.len() == 1 {
                format!("power {slot}")
            } else {
                format!("power {slot} part {} ({})", k + 1, code(m.ohms))
            };
            out.push(check(
                name,
                p.0,
                s.limits.derate * m.power.0,
                CheckUnit::Watts,
                false,
            ));
        }
    }

    let t = &s.transistor;
    if let Some(limit) = t.power_limit(ambient) {
        let p = corners
            .iter()
            .map(|op| op.transistor_power().0)
            .fold(0.0, f64::max);
        out.push(check(
            "transistor power",
            p,
            limit.0,
            CheckUnit::Watts,
            false,
        ));
    }
    if let Some(limit) = t.max_ic {
        let i = corners.iter().map(|op| op.ic.0).fold(0.0, f64::max);
        out.push(check(
            "transistor current",
            i,
            limit.0,
            CheckUnit::Amps,
            false,
        ));
    }
    if let Some(limit) = t.max_vce {
        // With the transistor off (at power-up, or with no signal drive on the base) it sees the whole
        // collector loop's open-circuit voltage.
        out.push(check(
            "transistor VCE (off)",
            env.c0,
            limit.0,
            CheckUnit::Volts,
            false,
        ));
    }
    out
}
