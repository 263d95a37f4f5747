//! Stage models: what a bias design is (the design file), where its transistor actually sits (the exact DC
//! operating point), what the rule asks for (the ideal design and the targets), how far a set of resistors
//! lands from it (THE error) and whether it is safe to build (the checks).
//!
//! Every topology reduces to the same picture: a linear resistor network around one transistor. Seen from the
//! transistor, that network is two affine equations, VBE = a0 − ab·IB − ac·IC and VCE = c0 − cb·IB − cc·IC
//! (Kirchhoff's laws with the base current's loading, no stiff-divider shortcut), so one solver in
//! [`junction`] serves all five: cutoff, active and saturated regions, with a fixed VBE in closed form or the
//! diode law by a bracketed Newton iteration. One file per topology supplies its network's coefficients, its
//! node voltages and its ideal resistances. A PNP stage is the NPN stage with every voltage and current
//! reversed; it is solved as its NPN mirror and reports the same magnitudes. Relies on [`crate::units`],
//! [`crate::network`] and [`crate::notation`].

mod base_resistor;
mod checks;
mod collector_feedback;
pub mod design;
mod divider;
mod divider_split;
mod dual_supply;
pub mod junction;

pub use checks::{on_target, Check, CheckUnit, SlotNetworks, TARGET_ERROR};
pub use design::{load, parse, Design, DesignError};
pub use divider_split::AcFigures;

use crate::notation::value::{MAX_OHMS, MIN_OHMS};
use crate::units::{thermal_voltage, Amps, Celsius, Ohms, Volts, Watts};
use junction::{Env, Junction, Law};
use std::fmt;
use std::str::FromStr;

/// A bias position: the trade's name for each resistor of a stage.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Slot {
    /// The upper divider resistor, supply to base.
    R1,
    /// The lower divider resistor, base to the emitter-side rail.
    R2,
    /// The collector resistor.
    RC,
    /// The emitter resistor.
    RE,
    /// The unbypassed part of a split emitter resistor (sets the gain).
    RE1,
    /// The bypassed part of a split emitter resistor.
    RE2,
    /// The base resistor (from the supply, the collector or ground, by topology).
    RB,
}

impl Slot {
    /// Every slot, in the order reports list them.
    pub const ALL: [Slot; 7] = [
        Slot::R1,
        Slot::R2,
        Slot::RC,
        Slot::RE,
        Slot::RE1,
        Slot::RE2,
        Slot::RB,
    ];

    /// The slot's position in [`Slot::ALL`].
    pub fn index(self) -> usize {
        self as usize
    }

    /// The trade name ("R1", "RE2").
    pub fn name(self) -> &'static str {
        match self {
            Slot::R1 => "R1",
            Slot::R2 => "R2",
            Slot::RC => "RC",
            Slot::RE => "RE",
            Slot::RE1 => "RE1",
            Slot::RE2 => "RE2",
            Slot::RB => "RB",
        }
    }
}

impl fmt::Display for Slot {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A slot name that is not one of R1, R2, RC, RE, RE1, RE2, RB.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("\"{0}\" is not a slot; expected one of R1, R2, RC, RE, RE1, RE2, RB")]
pub struct UnknownSlot(pub String);

impl FromStr for Slot {
    type Err = UnknownSlot;
    /// Reads a slot name in any case ("re1" is RE1).
    fn from_str(s: &str) -> Result<Slot, UnknownSlot> {
        let t = s.trim();
        Slot::ALL
            .into_iter()
            .find(|slot| slot.name().eq_ignore_ascii_case(t))
            .ok_or_else(|| UnknownSlot(s.to_string()))
    }
}

/// A resistance for some of the slots: fixed-size, copyable, allocation-free (the optimiser makes millions).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SlotValues([Option<Ohms>; 7]);

impl SlotValues {
    /// No slot set.
    pub fn new() -> SlotValues {
        SlotValues::default()
    }

    /// Values from (slot, resistance) pairs; a later pair for the same slot wins.
    pub fn from_pairs(pairs: impl IntoIterator<Item = (Slot, Ohms)>) -> SlotValues {
        let mut v = SlotValues::new();
        for (s, r) in pairs {
            v.set(s, r);
        }
        v
    }

    /// The slot's resistance, if set.
    pub fn get(&self, slot: Slot) -> Option<Ohms> {
        self.0[slot.index()]
    }

    /// Sets the slot's resistance.
    pub fn set(&mut self, slot: Slot, ohms: Ohms) {
        self.0[slot.index()] = Some(ohms);
    }

    /// The set slots and their values, in [`Slot::ALL`] order.
    pub fn iter(&self) -> impl Iterator<Item = (Slot, Ohms)> + '_ {
        Slot::ALL
            .into_iter()
            .filter_map(|s| self.get(s).map(|r| (s, r)))
    }
}

impl FromIterator<(Slot, Ohms)> for SlotValues {
    fn from_iter<I: IntoIterator<Item = (Slot, Ohms)>>(iter: I) -> SlotValues {
        SlotValues::from_pairs(iter)
    }
}

/// How the stage is biased.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Topology {
    /// Voltage-divider bias: R1, R2, RC, RE.
    Divider,
    /// Voltage-divider bias with the emitter resistor split into RE1 (unbypassed) and RE2 (bypassed).
    DividerSplit,
    /// RB from collector to base, RC, and an optional RE.
    CollectorFeedback,
    /// Emitter bias from a negative rail: RB to ground, RC, RE.
    DualSupply,
    /// Fixed base bias: RB from the supply, RC, and an optional RE.
    BaseResistor,
}

impl Topology {
    /// Every topology.
    pub const ALL: [Topology; 5] = [
        Topology::Divider,
        Topology::DividerSplit,
        Topology::CollectorFeedback,
        Topology::DualSupply,
        Topology::BaseResistor,
    ];

    /// The name used in design files and reports.
    pub fn name(self) -> &'static str {
        match self {
            Topology::Divider => "divider",
            Topology::DividerSplit => "divider-split",
            Topology::CollectorFeedback => "collector-feedback",
            Topology::DualSupply => "dual-supply",
            Topology::BaseResistor => "base-resistor",
        }
    }

    /// Whether the base is fed from an R1/R2 divider.
    pub fn has_divider(self) -> bool {
        matches!(self, Topology::Divider | Topology::DividerSplit)
    }

    /// Whether the stiffness rule applies (a divider, or a base resistor against the reflected emitter).
    pub fn has_stiffness(self) -> bool {
        matches!(
            self,
            Topology::Divider | Topology::DividerSplit | Topology::DualSupply
        )
    }
}

impl fmt::Display for Topology {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The transistor's type; a PNP stage is the mirror image of the NPN one.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Polarity {
    /// NPN.
    Npn,
    /// PNP.
    Pnp,
}

impl Polarity {
    /// "npn" or "pnp".
    pub fn name(self) -> &'static str {
        match self {
            Polarity::Npn => "npn",
            Polarity::Pnp => "pnp",
        }
    }
}

impl fmt::Display for Polarity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// Which side of a stage is the circuit's ground (0 V): what a meter's black lead is on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Ground {
    /// The emitter-side rail is ground and the supply feeds the collector side (an NPN on a positive rail,
    /// a PNP on a negative one).
    Emitter,
    /// The collector-side rail is ground and the supply feeds the emitter side (a PNP hanging from a
    /// positive rail with its collector load toward ground, an NPN below ground on a negative rail).
    Collector,
    /// Ground lies between two rails (dual supply): the base returns to it.
    Between,
}

impl Ground {
    /// "emitter", "collector" or "between", as design files and the JSON name it.
    pub fn name(self) -> &'static str {
        match self {
            Ground::Emitter => "emitter",
            Ground::Collector => "collector",
            Ground::Between => "between",
        }
    }
}

/// The current gain's spread over parts.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Beta {
    /// The lowest beta a part may have.
    pub min: f64,
    /// The typical beta.
    pub typ: f64,
    /// The highest beta a part may have.
    pub max: f64,
}

/// How VBE is modelled.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Vbe {
    /// A constant VBE.
    Fixed(Volts),
    /// The diode law VBE = volts + n·VT·ln(IC / at).
    Diode {
        /// VBE at the reference current.
        volts: Volts,
        /// The reference current.
        at: Amps,
        /// The ideality factor.
        n: f64,
    },
}

/// The transistor, described by its parameters (never by a part number).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Transistor {
    /// Current gain hFE: min, typical, max, at the reference temperature.
    pub beta: Beta,
    /// The VBE model, at the reference temperature.
    pub vbe: Vbe,
    /// VCE in saturation.
    pub vce_sat: Volts,
    /// Maximum dissipation at 25 °C ambient, if known.
    pub max_power: Option<Watts>,
    /// Maximum collector current, if known.
    pub max_ic: Option<Amps>,
    /// Maximum collector-emitter voltage, if known.
    pub max_vce: Option<Volts>,
    /// How VBE moves with temperature, in volts per °C.
    pub vbe_tempco: f64,
    /// How beta moves with temperature, as a fraction of itself per °C.
    pub beta_tempco: f64,
    /// The temperature that beta and VBE are given at.
    pub reference: Celsius,
    /// The junction temperature at which the allowed dissipation reaches zero.
    pub tj_max: Celsius,
}

impl Transistor {
    /// Beta at a temperature: the linear coefficient, kept at or above 1.
    pub fn beta_at(&self, beta: f64, t: Celsius) -> f64 {
        (beta * (1.0 + self.beta_tempco * (t.0 - self.reference.0))).max(1.0)
    }

    /// The VBE law at a temperature.
    pub(crate) fn law(&self, t: Celsius) -> Law {
        let shift = self.vbe_tempco * (t.0 - self.reference.0);
        match self.vbe {
            Vbe::Fixed(v) => Law::Fixed { vbe: v.0 + shift },
            Vbe::Diode { volts, at, n } => Law::Diode {
                v0: volts.0 + shift,
                i0: at.0,
                nvt: n * thermal_voltage(t).0,
            },
        }
    }

    /// The largest dissipation allowed at an ambient temperature: the full rating up to 25 °C, then falling
    /// linearly to zero at `tj_max` (the shape of the usual derating curve, θ = (Tj − Ta) / P).
    pub fn power_limit(&self, ambient: Celsius) -> Option<Watts> {
        self.max_power.map(|p| {
            let span = self.tj_max.0 - 25.0;
            let f = if ambient.0 <= 25.0 {
                1.0
            } else {
                ((self.tj_max.0 - ambient.0) / span).clamp(0.0, 1.0)
            };
            p * f
        })
    }
}

/// The design rule: how the supply is shared out, and how stiff and thrifty the bias must be.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rule {
    /// Fraction of the supply across RC.
    pub vrc: f64,
    /// Fraction of the supply across the transistor.
    pub vce: f64,
    /// Fraction of the supply across the emitter resistance (0 omits an optional RE).
    pub vre: f64,
    /// Minimum ratio of the bias current to IB at min beta (for a divider, the current in R2).
    pub stiffness: f64,
    /// The divider current may be at most this many times its design value.
    pub divider_max: f64,
    /// Voltage gain magnitude into the load (divider-split only).
    pub gain: Option<f64>,
    /// The largest allowed move of IC between min and max beta, as a fraction of IC at typical beta.
    pub ic_spread: f64,
}

/// Where the stage works: how hard resistors may be run, and at what temperatures.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Limits {
    /// Each resistor is kept within this fraction of its power rating.
    pub derate: f64,
    /// The ambient temperature for the error, the ideal design and the dissipation checks.
    pub ambient: Celsius,
    /// The ambient range over which the stage must stay in its active region, if given.
    pub temperature: Option<(Celsius, Celsius)>,
}

/// One transistor stage of a design.
#[derive(Clone, Debug, PartialEq)]
pub struct Stage {
    /// Free-text name.
    pub name: String,
    /// How it is biased.
    pub topology: Topology,
    /// NPN or PNP.
    pub polarity: Polarity,
    /// The collector-side rail's magnitude.
    pub supply: Volts,
    /// The emitter-side rail's magnitude (dual-supply only).
    pub supply_neg: Option<Volts>,
    /// Where the stage sits: which side is the circuit's ground.
    pub ground: Ground,
    /// The load RL; the stage is matched when RC = RL.
    pub load: Option<Ohms>,
    /// The collector current asked for, when no load is given.
    pub ic: Option<Amps>,
    /// The transistor's parameters.
    pub transistor: Transistor,
    /// The design rule.
    pub rule: Rule,
    /// Ratings and temperatures.
    pub limits: Limits,
    /// The 1-based line of the stage's `[[stage]]` header in its file (0 when built in code).
    pub line: usize,
}

/// What the rule asks of a stage, at typical beta and ambient.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Targets {
    /// Collector current IC*.
    pub ic: Amps,
    /// Collector-emitter voltage VCE*.
    pub vce: Volts,
    /// Emitter voltage VE* (from the emitter-side common rail; negative on a dual supply).
    pub ve: Volts,
    /// Base voltage VB*.
    pub vb: Volts,
    /// Base current IB* = IC*/beta.
    pub ib: Amps,
    /// Voltage across the collector resistor.
    pub vrc: Volts,
    /// RC is to match RL, when a load is given.
    pub rc: Option<Ohms>,
    /// The divider's design current stiffness·IC*/beta_min (divider topologies).
    pub divider_current: Option<Amps>,
    /// Voltage gain magnitude into the load (divider-split).
    pub gain: Option<f64>,
}

/// The continuous design from the rule: each slot's ideal resistance, and what it aims at.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ideal {
    /// The ideal resistance of each slot the stage has.
    pub values: SlotValues,
    /// The targets the values were designed for.
    pub targets: Targets,
}

/// Where the transistor sits.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Region {
    /// Not conducting.
    Cutoff,
    /// Linear: IC = beta·IB.
    Active,
    /// Saturated: VCE = vce_sat, IC < beta·IB.
    Saturation,
}

impl Region {
    /// "cutoff", "active" or "saturation".
    pub fn name(self) -> &'static str {
        match self {
            Region::Cutoff => "cutoff",
            Region::Active => "active",
            Region::Saturation => "saturation",
        }
    }
}

impl fmt::Display for Region {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The exact DC solution. Voltages are measured from ground with the NPN's signs; a PNP stage reports the
/// same magnitudes (its real voltages are these with the sign reversed).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OperatingPoint {
    /// Where the transistor sits.
    pub region: Region,
    /// The beta used (after the temperature shift).
    pub beta: f64,
    /// The temperature solved at.
    pub temperature: Celsius,
    /// Base current.
    pub ib: Amps,
    /// Collector current.
    pub ic: Amps,
    /// Emitter current.
    pub ie: Amps,
    /// Base voltage.
    pub vb: Volts,
    /// Emitter voltage.
    pub ve: Volts,
    /// Collector voltage.
    pub vc: Volts,
    /// Collector-emitter voltage.
    pub vce: Volts,
    /// Base-emitter voltage.
    pub vbe: Volts,
    /// The current in R2 (divider topologies).
    pub divider_current: Option<Amps>,
    /// The current drawn from the collector-side rail.
    pub supply_current: Amps,
    currents: [Option<Amps>; 7],
}

impl OperatingPoint {
    /// The current through a slot, if the stage has it.
    pub fn current(&self, slot: Slot) -> Option<Amps> {
        self.currents[slot.index()]
    }

    /// The transistor's dissipation VCE·IC + VBE·IB.
    pub fn transistor_power(&self) -> Watts {
        self.vce * self.ic + self.vbe * self.ib
    }
}

/// Signed relative deviations from the targets: (actual / target) − 1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Deviations {
    /// Of IC.
    pub ic: f64,
    /// Of VCE.
    pub vce: f64,
    /// Of VE (None when the stage has no emitter resistance to aim at).
    pub ve: Option<f64>,
    /// Of RC from RL (when a load is given).
    pub rc: Option<f64>,
    /// Of the voltage gain (divider-split with a gain target).
    pub gain: Option<f64>,
}

impl Deviations {
    /// The largest magnitude: the stage's error.
    pub fn max_abs(&self) -> f64 {
        [Some(self.ic), Some(self.vce), self.ve, self.rc, self.gain]
            .into_iter()
            .flatten()
            .fold(0.0_f64, |m, d| {
                if d.is_nan() {
                    f64::INFINITY
                } else {
                    m.max(d.abs())
                }
            })
    }
}

/// Why a stage has no ideal design.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("stage \"{stage}\": {reason}")]
pub struct StageError {
    /// The stage's name.
    pub stage: String,
    /// What is impossible, and what to change.
    pub reason: String,
}

/// Resistances in ohms indexed by slot: missing slots of the topology are open (1 EΩ), and an optional RE
/// the design does not use is a short (0 Ω).
#[derive(Clone, Copy, Debug)]
pub(crate) struct Resolved(pub [f64; 7]);

/// Stands for an open circuit: large enough to carry no current worth reporting, finite so the algebra holds.
const OPEN: f64 = 1e18;

impl Resolved {
    fn of(stage: &Stage, r: &SlotValues) -> Resolved {
        let mut v = [0.0; 7];
        for s in stage.slots_iter() {
            v[s.index()] = r.get(s).map_or(OPEN, |o| o.0);
        }
        Resolved(v)
    }
    pub(crate) fn get(&self, s: Slot) -> f64 {
        self.0[s.index()]
    }
}

/// Node voltages and slot currents of a solved stage, in the NPN frame.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Nodes {
    pub vb: f64,
    pub ve: f64,
    pub vc: f64,
    pub currents: [Option<f64>; 7],
    pub divider_current: Option<f64>,
    pub supply_current: f64,
}

impl Nodes {
    pub(crate) fn new(vb: f64, ve: f64, vc: f64, supply_current: f64) -> Nodes {
        Nodes {
            vb,
            ve,
            vc,
            currents: [None; 7],
            divider_current: None,
            supply_current,
        }
    }
    pub(crate) fn with(mut self, s: Slot, i: f64) -> Nodes {
        self.currents[s.index()] = Some(i);
        self
    }
}

impl Stage {
    /// The collector-side rail, in volts.
    pub(crate) fn vcc(&self) -> f64 {
        self.supply.0
    }

    /// The emitter-side rail's magnitude (0 unless dual-supply).
    pub(crate) fn vee(&self) -> f64 {
        self.supply_neg.map_or(0.0, |v| v.0)
    }

    /// The sign a voltage of the NPN mirror takes in the real circuit: +1 for NPN, −1 for PNP.
    fn sign(&self) -> f64 {
        match self.polarity {
            Polarity::Npn => 1.0,
            Polarity::Pnp => -1.0,
        }
    }

    /// What a meter reads from the circuit's real ground at a node whose voltage in the NPN mirror (from
    /// the emitter-side rail, or from ground on a dual supply) is `v`. The mirror is the solver's trick; this
    /// is the circuit as built.
    pub fn real(&self, v: Volts) -> Volts {
        let offset = match self.ground {
            Ground::Emitter | Ground::Between => 0.0,
            Ground::Collector => -self.sign() * self.vcc(),
        };
        Volts(offset + self.sign() * v.0)
    }

    /// The inverse of [`Stage::real`]: a reading from real ground in the NPN mirror's frame.
    pub fn mirror(&self, real: Volts) -> Volts {
        let offset = match self.ground {
            Ground::Emitter | Ground::Between => 0.0,
            Ground::Collector => -self.sign() * self.vcc(),
        };
        Volts((real.0 - offset) * self.sign())
    }

    /// The real, signed voltage of the collector-side rail from ground.
    pub fn collector_rail(&self) -> Volts {
        self.real(Volts(self.vcc()))
    }

    /// The real, signed voltage of the emitter-side rail from ground.
    pub fn emitter_rail(&self) -> Volts {
        self.real(Volts(-self.vee()))
    }

    /// The largest potential difference in the stage: the supply, or both rails for a dual supply.
    pub fn supply_span(&self) -> Volts {
        Volts(self.vcc() + self.vee())
    }

    /// Whether the stage uses an emitter resistor where the topology makes it optional.
    fn uses_re(&self) -> bool {
        self.rule.vre > 0.0
    }

    fn slots_iter(&self) -> impl Iterator<Item = Slot> {
        let (list, n): ([Slot; 5], usize) = match self.topology {
            Topology::Divider => ([Slot::R1, Slot::R2, Slot::RC, Slot::RE, Slot::RE], 4),
            Topology::DividerSplit => ([Slot::R1, Slot::R2, Slot::RC, Slot::RE1, Slot::RE2], 5),
            Topology::DualSupply => ([Slot::RC, Slot::RE, Slot::RB, Slot::RB, Slot::RB], 3),
            Topology::CollectorFeedback | Topology::BaseResistor => {
                if self.uses_re() {
                    ([Slot::RC, Slot::RE, Slot::RB, Slot::RB, Slot::RB], 3)
                } else {
                    ([Slot::RC, Slot::RB, Slot::RB, Slot::RB, Slot::RB], 2)
                }
            }
        };
        list.into_iter().take(n)
    }

    /// The slots this stage has, in report order (an optional RE only if the design uses one).
    pub fn slots(&self) -> Vec<Slot> {
        self.slots_iter().collect()
    }

    /// Whether the stage has this slot.
    pub fn has_slot(&self, slot: Slot) -> bool {
        self.slots_iter().any(|s| s == slot)
    }

    fn fail(&self, reason: impl Into<String>) -> StageError {
        StageError {
            stage: self.name.clone(),
            reason: reason.into(),
        }
    }

    /// Beta (min, typ, max) at a temperature.
    pub fn betas_at(&self, t: Celsius) -> Beta {
        let b = self.transistor.beta;
        Beta {
            min: self.transistor.beta_at(b.min, t),
            typ: self.transistor.beta_at(b.typ, t),
            max: self.transistor.beta_at(b.max, t),
        }
    }

    /// What the rule asks for, at typical beta and ambient.
    pub fn targets(&self) -> Targets {
        let t = self.limits.ambient;
        let law = self.transistor.law(t);
        let b = self.betas_at(t);
        let rule = &self.rule;
        let vcc = self.vcc();
        // Collector current from the load (the current in RC is the share of the supply over RL), or as
        // given. In collector feedback RC carries the emitter current, so IC is alpha times that.
        let rc_current = |vrc: f64| -> f64 {
            match (self.ic, self.load) {
                (Some(ic), _) => {
                    if self.topology == Topology::CollectorFeedback {
                        ic.0 * (b.typ + 1.0) / b.typ
                    } else {
                        ic.0
                    }
                }
                (None, Some(rl)) => vrc / rl.0,
                (None, None) => f64::NAN,
            }
        };
        let ic_of = |i_rc: f64| {
            if self.topology == Topology::CollectorFeedback {
                i_rc * b.typ / (b.typ + 1.0)
            } else {
                i_rc
            }
        };
        let (ic, vrc, vce, ve) = if self.topology == Topology::DualSupply {
            // The base sits near ground, so the emitter sits one VBE (plus the drop IB·RB) below it and the
            // negative rail sets the drop across RE; the rule's vrc : vce ratio splits what is left of the
            // positive rail, VCC − VE. With RB = (beta_min + 1)·RE / stiffness, IB·RB = k·(VE + VEE).
            let k = (b.min + 1.0) / (rule.stiffness * (b.typ + 1.0));
            let vee = self.vee();
            let share = |ve: f64| (vcc - ve) / (rule.vrc + rule.vce);
            let ve_of = |ic: f64| -(law.vbe_at(ic) + k * vee) / (1.0 + k);
            // VE depends on VBE(IC) and, with a load, IC on VE: a contraction (dIC/dIC ≈ n·VT/VRC ≪ 1).
            let mut ic = self.ic.map_or(
                rule.vrc * share(-law.vbe_at(1e-3)) / self.load.map_or(1.0, |r| r.0),
                |i| i.0,
            );
            for _ in 0..60 {
                let next = rc_current(rule.vrc * share(ve_of(ic)));
                let settled = (next - ic).abs() <= 1e-15 * ic.abs();
                ic = next;
                if settled {
                    break;
                }
            }
            let ve = ve_of(ic);
            (ic, rule.vrc * share(ve), rule.vce * share(ve), ve)
        } else {
            let vrc = rule.vrc * vcc;
            (ic_of(rc_current(vrc)), vrc, rule.vce * vcc, rule.vre * vcc)
        };
        let ib = ic / b.typ;
        let vb = ve + law.vbe_at(ic);
        Targets {
            ic: Amps(ic),
            vce: Volts(vce),
            ve: Volts(ve),
            vb: Volts(vb),
            ib: Amps(ib),
            vrc: Volts(vrc),
            rc: if self.ic.is_none() { self.load } else { None },
            divider_current: self
                .topology
                .has_divider()
                .then(|| Amps(rule.stiffness * ic / b.min)),
            gain: if self.topology == Topology::DividerSplit {
                rule.gain
            } else {
                None
            },
        }
    }

    /// The continuous design from the rule: each slot's ideal resistance.
    pub fn ideal(&self) -> Result<Ideal, StageError> {
        let t = self.targets();
        if !(t.ic.0 > 0.0 && t.ic.0.is_finite()) {
            return Err(self.fail("the collector current target is not positive; give load or ic"));
        }
        if t.vce.0 <= self.transistor.vce_sat.0 {
            return Err(self.fail(format!(
                "the rule puts VCE at {}, not above vce_sat {}: raise rule.vce",
                t.vce, self.transistor.vce_sat
            )));
        }
        let values = match self.topology {
            Topology::Divider => divider::ideal(self, &t),
            Topology::DividerSplit => divider_split::ideal(self, &t),
            Topology::CollectorFeedback => collector_feedback::ideal(self, &t),
            Topology::DualSupply => dual_supply::ideal(self, &t),
            Topology::BaseResistor => base_resistor::ideal(self, &t),
        }
        .map_err(|reason| self.fail(reason))?;
        for (slot, r) in values.iter() {
            if !(r.0 > 0.0 && r.0.is_finite()) {
                return Err(self.fail(format!(
                    "the rule gives {slot} = {:.4} Ω, which no resistor can be; check supply, load and rule",
                    r.0
                )));
            }
            if !(MIN_OHMS..=MAX_OHMS).contains(&r.0) {
                return Err(self.fail(format!(
                    "the rule gives {slot} = {}, outside the 1 mΩ to 1 TΩ any resistor can be; check supply, load, ic and rule",
                    crate::notation::engineering(r.0, "Ω")
                )));
            }
        }
        Ok(Ideal { values, targets: t })
    }

    fn env(&self, r: &Resolved) -> Env {
        match self.topology {
            Topology::Divider => divider::env(self, r),
            Topology::DividerSplit => divider_split::env(self, r),
            Topology::CollectorFeedback => collector_feedback::env(self, r),
            Topology::DualSupply => dual_supply::env(self, r),
            Topology::BaseResistor => base_resistor::env(self, r),
        }
    }

    fn nodes(&self, r: &Resolved, j: &Junction) -> Nodes {
        match self.topology {
            Topology::Divider => divider::nodes(self, r, j),
            Topology::DividerSplit => divider_split::nodes(self, r, j),
            Topology::CollectorFeedback => collector_feedback::nodes(self, r, j),
            Topology::DualSupply => dual_supply::nodes(self, r, j),
            Topology::BaseResistor => base_resistor::nodes(self, r, j),
        }
    }

    /// The transistor's currents at a beta (given at the reference temperature) and temperature.
    fn junction(&self, env: &Env, beta: f64, t: Celsius) -> Junction {
        let law = self.transistor.law(t);
        junction::solve(
            env,
            &law,
            self.transistor.beta_at(beta, t),
            self.transistor.vce_sat.0,
        )
    }

    /// The two loop equations around the transistor with these resistances (a slot of the topology left
    /// unset counts as open): what the load line is drawn from.
    pub fn loops(&self, r: &SlotValues) -> junction::Env {
        self.env(&Resolved::of(self, r))
    }

    /// The exact operating point with these resistances, at `beta` (as given at the transistor's reference
    /// temperature; the solve shifts it to `t`). A slot of the topology left unset counts as open.
    pub fn solve(&self, r: &SlotValues, beta: f64, t: Celsius) -> OperatingPoint {
        let res = Resolved::of(self, r);
        self.solve_resolved(&res, beta, t)
    }

    fn solve_resolved(&self, res: &Resolved, beta: f64, t: Celsius) -> OperatingPoint {
        let env = self.env(res);
        let j = self.junction(&env, beta, t);
        let n = self.nodes(res, &j);
        let mut currents = [None; 7];
        for (c, i) in currents.iter_mut().zip(n.currents) {
            *c = i.map(Amps);
        }
        OperatingPoint {
            region: j.region,
            beta: self.transistor.beta_at(beta, t),
            temperature: t,
            ib: Amps(j.ib),
            ic: Amps(j.ic),
            ie: Amps(j.ib + j.ic),
            vb: Volts(n.vb),
            ve: Volts(n.ve),
            vc: Volts(n.vc),
            vce: Volts(n.vc - n.ve),
            vbe: Volts(n.vb - n.ve),
            divider_current: n.divider_current.map(Amps),
            supply_current: Amps(n.supply_current),
            currents,
        }
    }

    /// The operating point at typical beta and ambient: the one the error is measured at.
    pub fn typical(&self, r: &SlotValues) -> OperatingPoint {
        self.solve(r, self.transistor.beta.typ, self.limits.ambient)
    }

    /// Signed relative deviations from the targets at typical beta and ambient.
    pub fn deviations(&self, r: &SlotValues) -> Deviations {
        let res = Resolved::of(self, r);
        let t = self.targets();
        let op = self.solve_resolved(&res, self.transistor.beta.typ, self.limits.ambient);
        let rel = |a: f64, b: f64| a / b - 1.0;
        Deviations {
            ic: rel(op.ic.0, t.ic.0),
            vce: rel(op.vce.0, t.vce.0),
            ve: (t.ve.0 != 0.0).then(|| rel(op.ve.0, t.ve.0)),
            rc: t.rc.map(|rl| rel(res.get(Slot::RC), rl.0)),
            gain: t.gain.map(|g| rel(divider_split::gain(self, &res, &op), g)),
        }
    }

    /// THE error: the largest relative deviation from the targets. The optimiser minimises exactly this.
    pub fn error(&self, r: &SlotValues) -> f64 {
        self.deviations(r).max_abs()
    }

    /// The stiffness figure: the bias current over IB at min beta and ambient (divider: the current in R2;
    /// dual supply: (beta + 1)·RE / RB, the reflected emitter resistance over the base resistance).
    fn stiffness_of(&self, res: &Resolved) -> Option<f64> {
        let t = self.limits.ambient;
        match self.topology {
            Topology::Divider | Topology::DividerSplit => {
                let op = self.solve_resolved(res, self.transistor.beta.min, t);
                let i2 = op.divider_current.map_or(0.0, |i| i.0);
                Some(if op.ib.0 > 0.0 {
                    i2 / op.ib.0
                } else {
                    f64::INFINITY
                })
            }
            Topology::DualSupply => {
                let b = self.betas_at(t).min;
                Some((b + 1.0) * res.get(Slot::RE) / res.get(Slot::RB))
            }
            _ => None,
        }
    }

    /// The largest divider current over the beta range at ambient (it grows with beta: less loading).
    fn divider_current_max(&self, res: &Resolved) -> Option<f64> {
        if !self.topology.has_divider() {
            return None;
        }
        let t = self.limits.ambient;
        let b = self.transistor.beta;
        [b.min, b.typ, b.max]
            .into_iter()
            .map(|beta| {
                self.solve_resolved(res, beta, t)
                    .divider_current
                    .map_or(0.0, |i| i.0)
            })
            .reduce(f64::max)
    }

    /// The hard constraints that do not involve ratings: stiffness at min beta, the divider current within
    /// divider_max × its design value, and the active region at min and max beta (at each temperature
    /// extreme too, when the design gives a range).
    pub fn electrical_ok(&self, r: &SlotValues) -> bool {
        let res = Resolved::of(self, r);
        let b = self.transistor.beta;
        let ambient = self.limits.ambient;
        let lo = self.solve_resolved(&res, b.min, ambient);
        if lo.region != Region::Active {
            return false;
        }
        let hi = self.solve_resolved(&res, b.max, ambient);
        if hi.region != Region::Active {
            return false;
        }
        let stiffness = match self.topology {
            Topology::Divider | Topology::DividerSplit => {
                lo.divider_current.map_or(0.0, |i| i.0) / lo.ib.0
            }
            Topology::DualSupply => {
                (self.betas_at(ambient).min + 1.0) * res.get(Slot::RE) / res.get(Slot::RB)
            }
            _ => f64::INFINITY,
        };
        if stiffness.is_nan() || stiffness < self.rule.stiffness * (1.0 - checks::SLACK) {
            return false;
        }
        if let Some(design) = self.targets().divider_current {
            // The divider current grows with beta (less base loading), so max beta is its worst case.
            let i = lo
                .divider_current
                .map_or(0.0, |i| i.0)
                .max(hi.divider_current.map_or(0.0, |i| i.0));
            if i.is_nan() || i > self.rule.divider_max * design.0 * (1.0 + checks::SLACK) {
                return false;
            }
        }
        if let Some((t_lo, t_hi)) = self.limits.temperature {
            for t in [t_lo, t_hi] {
                for beta in [b.min, b.max] {
                    if self.solve_resolved(&res, beta, t).region != Region::Active {
                        return false;
                    }
                }
            }
        }
        true
    }

    /// The AC figures of a split-emitter stage at typical beta and ambient (None for other topologies).
    pub fn ac(&self, r: &SlotValues) -> Option<AcFigures> {
        (self.topology == Topology::DividerSplit).then(|| {
            let res = Resolved::of(self, r);
            let op = self.solve_resolved(&res, self.transistor.beta.typ, self.limits.ambient);
            divider_split::ac(self, &res, &op)
        })
    }

    /// Every check of a built stage: the electrical ones, each resistor member's dissipation and the
    /// transistor's limits.
    pub fn checks(&self, nets: &SlotNetworks) -> Vec<Check> {
        checks::all(self, nets)
    }

    /// The checks the ideal design itself fails, each with what would fix it. No choice of resistors can pass
    /// these (a resistor's own rating aside, which is left out: that depends on the part, not the design),
    /// so a command says so rather than send the user to buy parts. Empty when the ideal passes, or when
    /// the rule gives no ideal at all (that is refused where the ideal is needed).
    pub fn ideal_failures(&self) -> Vec<(Check, &'static str)> {
        let Ok(ideal) = self.ideal() else {
            return Vec::new();
        };
        let nets = SlotNetworks::from_pairs(ideal.values.iter().map(|(slot, r)| {
            (
                slot,
                crate::network::Network::Single(crate::network::Member::loose(
                    r,
                    crate::units::Tolerance(0.05),
                    Watts(1e6),
                )),
            )
        }));
        self.checks(&nets)
            .into_iter()
            .filter(|c| !c.ok && !c.name.starts_with("power "))
            .map(|c| {
                let fix = remedy(self.topology, &c.name);
                (c, fix)
            })
            .collect()
    }

    /// [`Stage::ideal_failures`] as sentences for people, one per failed check.
    pub fn ideal_failure_notes(&self) -> Vec<String> {
        self.ideal_failures()
            .into_iter()
            .map(|(c, fix)| {
                format!(
                    "stage \"{}\": the ideal design itself fails {}, so no choice of resistors passes it; {}",
                    self.name,
                    c.describe(),
                    fix
                )
            })
            .collect()
    }

    /// Whether the stage's supplies reach 50 V DC, the top of safe extra-low voltage.
    pub fn high_voltage(&self) -> bool {
        self.supply_span() >= crate::units::SAFE_EXTRA_LOW_VOLTAGE
    }
}

/// What would pass a check the ideal design fails: a change of rule, topology or transistor, never a part.
fn remedy(topology: Topology, check: &str) -> &'static str {
    match check {
        "beta spread" if topology == Topology::Divider || topology == Topology::DividerSplit => {
            "a larger emitter resistor (a higher vre in the rule), a stiffer divider, or a wider ic_spread would"
        }
        "beta spread" => {
            "a larger emitter resistor (a higher vre in the rule), a divider topology, or a wider ic_spread would"
        }
        "stiffness" => "a lower stiffness or a higher divider_max in the rule, or a transistor with a higher min beta, would",
        "divider current" => "a higher divider_max or a lower stiffness in the rule would",
        c if c.starts_with("headroom") => {
            "a higher supply, or a rule that leaves the transistor more VCE (vce, vrc, vre), would"
        }
        c if c.starts_with("transistor") => "a transistor rated for it, or a lower collector current, would",
        _ => "a different rule, topology or transistor would",
    }
}

#[cfg(test)]
mod tests;
