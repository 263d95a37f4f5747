//! The report model: what a command found about each stage, as plain data that serialises to the `--json`
//! contract (SI base units throughout) and that the pure renderers in [`table`] turn into text, [`svg`] into
//! drawings and [`html`] into a build sheet.
//!
//! The stage object, `{name, topology, region, target, op, error, slots, checks}`, is shared by every command
//! that evaluates built stages (check, ideal, and later design, fix, order and spread); it may gain keys but
//! never loses or renames one. Relies on [`crate::stage`] for the numbers and [`crate::network`] for parts.

pub mod circuit;
pub mod design;
pub mod fix;
pub mod histogram;
pub mod html;
pub mod result;
pub mod spread;
pub mod stock;
pub mod svg;
pub mod table;
pub mod verify;

use crate::network::Network;
use crate::notation::{code, Series};
use crate::stage::{
    AcFigures, Check, CheckUnit, OperatingPoint, Polarity, Slot, SlotNetworks, Stage,
};
use serde::ser::SerializeMap;
use serde::{Serialize, Serializer};

/// A whole report: one object per stage, and the cautions that apply.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Report {
    /// The stages, in file order.
    pub stages: Vec<StageReport>,
    /// The circuits of the user's own, in file order; left out of the JSON when there are none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub circuits: Vec<circuit::CircuitReport>,
    /// Safety cautions (high voltage, hot parts); empty when none apply.
    pub cautions: Vec<String>,
}

impl Report {
    /// A report of stages, with the cautions they call for.
    pub fn new(stages: Vec<StageReport>) -> Report {
        Report::of(stages, Vec::new())
    }

    /// A report of stages and circuits, with the cautions they call for.
    pub fn of(stages: Vec<StageReport>, circuits: Vec<circuit::CircuitReport>) -> Report {
        let cautions = stages
            .iter()
            .flat_map(|s| s.cautions())
            .chain(circuits.iter().flat_map(|c| c.cautions()))
            .collect();
        Report {
            stages,
            circuits,
            cautions,
        }
    }

    /// Whether every check of every stage and circuit passed.
    pub fn all_ok(&self) -> bool {
        self.stages.iter().all(|s| s.checks.iter().all(|c| c.ok))
            && self.circuits.iter().all(|c| c.all_ok())
    }
}

/// The caution for supplies at or above safe extra-low voltage; `subject` is `stage "name"` or the like.
pub(crate) fn high_voltage_caution(subject: &str, span: f64) -> String {
    format!(
        "{subject} spans {}: supplies of 50 V DC or more are above safe extra-low voltage, and \
         anything powered from the mains can kill. Such work is for people trained and, where the \
         law requires it, licensed for it; follow your local electrical codes, which take precedence \
         over anything biasfit prints.",
        crate::notation::engineering(span, "V")
    )
}

/// The caution for the parts over their derated power, from the failed power checks among `checks`; none
/// when every part is within its limit.
pub(crate) fn hot_caution(subject: &str, checks: &[CheckReport]) -> Option<String> {
    let hot: Vec<&str> = checks
        .iter()
        .filter(|c| c.unit == CheckUnit::Watts && !c.ok)
        .map(|c| c.name.as_str())
        .collect();
    (!hot.is_empty()).then(|| {
        format!(
            "{subject}: {} over the derated limit. A part run near its rating gets hot enough to burn \
             skin and scorch a board; biasfit knows nothing of your airflow or enclosure. Touch nothing \
             that has been powered until you have checked it is cool.",
            hot.join(", ")
        )
    })
}

/// What the rule asks for.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct TargetReport {
    /// IC*, amperes.
    pub ic: f64,
    /// VCE*, volts.
    pub vce: f64,
    /// VE*, volts.
    pub ve: f64,
    /// RL, ohms, when RC is to match a load.
    pub rc: Option<f64>,
    /// VB*, volts.
    pub vb: f64,
    /// IB* at typical beta, amperes.
    pub ib: f64,
    /// The divider's design current, amperes (divider topologies).
    pub divider_current: Option<f64>,
    /// The voltage gain magnitude (divider-split).
    pub gain: Option<f64>,
}

/// An operating point, SI base units.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct OpReport {
    /// The beta it was solved at.
    pub beta: f64,
    /// cutoff, active or saturation.
    pub region: &'static str,
    /// Base current.
    pub ib: f64,
    /// Collector current.
    pub ic: f64,
    /// Emitter current.
    pub ie: f64,
    /// Base voltage.
    pub vb: f64,
    /// Emitter voltage.
    pub ve: f64,
    /// Collector voltage.
    pub vc: f64,
    /// Collector-emitter voltage.
    pub vce: f64,
    /// The current in R2 (divider topologies).
    pub divider_current: Option<f64>,
    /// The current drawn from the collector-side rail.
    pub supply_current: f64,
}

impl From<&OperatingPoint> for OpReport {
    fn from(op: &OperatingPoint) -> OpReport {
        OpReport {
            beta: op.beta,
            region: op.region.name(),
            ib: op.ib.0,
            ic: op.ic.0,
            ie: op.ie.0,
            vb: op.vb.0,
            ve: op.ve.0,
            vc: op.vc.0,
            vce: op.vce.0,
            divider_current: op.divider_current.map(|i| i.0),
            supply_current: op.supply_current.0,
        }
    }
}

/// Base, emitter and collector voltages as a meter reads them from the circuit's real ground, volts.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct RealVolts {
    /// Base.
    pub vb: f64,
    /// Emitter.
    pub ve: f64,
    /// Collector.
    pub vc: f64,
}

impl RealVolts {
    /// The operating point's node voltages from the stage's real ground.
    pub fn of(stage: &Stage, op: &OperatingPoint) -> RealVolts {
        RealVolts {
            vb: stage.real(op.vb).0,
            ve: stage.real(op.ve).0,
            vc: stage.real(op.vc).0,
        }
    }
}

/// Where a stage sits, and its node voltages from real ground with their signs (the other voltages of a
/// stage report are its NPN mirror's, magnitudes for a PNP stage).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct StageNodes {
    /// Which side of the stage is ground: emitter, collector or between (dual supply).
    pub ground: &'static str,
    /// The collector-side rail, volts from ground.
    pub collector_rail: f64,
    /// The emitter-side rail, volts from ground.
    pub emitter_rail: f64,
    /// VB* and VE* of the targets, from ground.
    pub target_vb: f64,
    /// See `target_vb`.
    pub target_ve: f64,
    /// At typical beta and ambient.
    pub typical: RealVolts,
    /// At min beta.
    pub min_beta: RealVolts,
    /// At max beta.
    pub max_beta: RealVolts,
}

/// One physical resistor of a slot.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PartReport {
    /// Nominal resistance, ohms.
    pub ohms: f64,
    /// Tolerance as a fraction.
    pub tolerance: f64,
    /// Power rating, watts.
    pub power: f64,
    /// Where it is kept, if known.
    pub location: Option<String>,
}

/// The nearest preferred values to an ideal resistance.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Nearest {
    /// Nearest E12 value, ohms.
    pub e12: f64,
    /// Nearest E24 value, ohms.
    pub e24: f64,
    /// Nearest E96 value, ohms.
    pub e96: f64,
}

/// A slot's network.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SlotReport {
    /// The network's resistance, ohms.
    pub ohms: f64,
    /// The network in the `--use` notation.
    pub network: String,
    /// Its members.
    pub parts: Vec<PartReport>,
    /// The nearest preferred values (for an ideal design).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub nearest: Option<Nearest>,
    /// Whether the slot was kept as given (already fitted on the board), not chosen from stock.
    pub kept: bool,
    /// The value as people read it: to the digits its members change (165k03 for 165k+27R4).
    #[serde(skip)]
    pub shown: String,
}

/// The slots of a stage, serialised as an object keyed by slot name, in R1, R2, RC, RE, RE1, RE2, RB order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Slots(pub Vec<(Slot, SlotReport)>);

impl Serialize for Slots {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (slot, r) in &self.0 {
            m.serialize_entry(slot.name(), r)?;
        }
        m.end()
    }
}

/// A check, as reported.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CheckReport {
    /// What is checked.
    pub name: String,
    /// The value found (SI base units, or a ratio); null when unbounded.
    pub value: f64,
    /// The limit.
    pub limit: f64,
    /// Whether it passed.
    pub ok: bool,
    /// The unit, for rendering.
    #[serde(skip)]
    pub unit: CheckUnit,
    /// Whether the value must be at least the limit.
    #[serde(skip)]
    pub at_least: bool,
}

impl From<Check> for CheckReport {
    fn from(c: Check) -> CheckReport {
        CheckReport {
            name: c.name,
            value: c.value,
            limit: c.limit,
            ok: c.ok,
            unit: c.unit,
            at_least: c.at_least,
        }
    }
}

/// Signed relative deviations from the targets.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct DeviationReport {
    /// Of IC.
    pub ic: f64,
    /// Of VCE.
    pub vce: f64,
    /// Of VE.
    pub ve: Option<f64>,
    /// Of RC from RL.
    pub rc: Option<f64>,
    /// Of the gain.
    pub gain: Option<f64>,
}

/// The small-signal figures of a split-emitter stage.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct AcReport {
    /// re' = n·VT/IE, ohms.
    pub re_prime: f64,
    /// Voltage gain magnitude into the load.
    pub gain: f64,
    /// Input impedance, ohms.
    pub input: f64,
    /// Output impedance, ohms.
    pub output: f64,
    /// Largest undistorted output swing, volts peak.
    pub swing: f64,
}

impl From<AcFigures> for AcReport {
    fn from(a: AcFigures) -> AcReport {
        AcReport {
            re_prime: a.re_prime.0,
            gain: a.gain,
            input: a.input.0,
            output: a.output.0,
            swing: a.swing.0,
        }
    }
}

/// Everything found about one built stage.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StageReport {
    /// The stage's name.
    pub name: String,
    /// Its topology.
    pub topology: &'static str,
    /// npn or pnp (a pnp stage reports its npn mirror's values).
    pub polarity: &'static str,
    /// The collector-side rail's magnitude, volts.
    pub supply: f64,
    /// The emitter-side rail's magnitude, volts (dual-supply).
    pub supply_neg: Option<f64>,
    /// The region at typical beta and ambient.
    pub region: &'static str,
    /// The targets.
    pub target: TargetReport,
    /// The operating point at typical beta and ambient.
    pub op: OpReport,
    /// THE error: the largest relative deviation.
    pub error: f64,
    /// The deviations making up the error.
    pub deviations: DeviationReport,
    /// The operating points at min and max beta (ambient).
    pub corners: Corners,
    /// The slots' networks.
    pub slots: Slots,
    /// Every check.
    pub checks: Vec<CheckReport>,
    /// Small-signal figures (divider-split).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ac: Option<AcReport>,
    /// Whether the supplies reach 50 V DC.
    #[serde(skip)]
    pub high_voltage: bool,
    /// Where the stage sits and its node voltages from real ground, signed.
    pub nodes: StageNodes,
}

/// The operating points at the beta extremes.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Corners {
    /// At min beta.
    pub min_beta: OpReport,
    /// At max beta.
    pub max_beta: OpReport,
}

fn slot_report(net: &Network) -> SlotReport {
    SlotReport {
        ohms: net.ohms().0,
        network: net.notation(),
        parts: net
            .members()
            .into_iter()
            .map(|m| PartReport {
                ohms: m.ohms.0,
                tolerance: m.tolerance.0,
                power: m.power.0,
                location: m.location.clone(),
            })
            .collect(),
        nearest: None,
        kept: false,
        shown: net.value_code(),
    }
}

impl StageReport {
    /// Evaluates a stage built from these networks. Slots the stage lacks are ignored; the caller makes sure
    /// none of its own is missing (a missing one counts as open).
    pub fn new(stage: &Stage, nets: &SlotNetworks) -> StageReport {
        let values = nets.values();
        let t = stage.targets();
        let d = stage.deviations(&values);
        let op = stage.typical(&values);
        let b = stage.transistor.beta;
        let ambient = stage.limits.ambient;
        let (op_lo, op_hi) = (
            stage.solve(&values, b.min, ambient),
            stage.solve(&values, b.max, ambient),
        );
        let nodes = StageNodes {
            ground: stage.ground.name(),
            collector_rail: stage.collector_rail().0,
            emitter_rail: stage.emitter_rail().0,
            target_vb: stage.real(t.vb).0,
            target_ve: stage.real(t.ve).0,
            typical: RealVolts::of(stage, &op),
            min_beta: RealVolts::of(stage, &op_lo),
            max_beta: RealVolts::of(stage, &op_hi),
        };
        let slots = Slots(
            stage
                .slots()
                .into_iter()
                .filter_map(|s| nets.get(s).map(|n| (s, slot_report(n))))
                .collect(),
        );
        StageReport {
            name: stage.name.clone(),
            topology: stage.topology.name(),
            polarity: stage.polarity.name(),
            supply: stage.supply.0,
            supply_neg: stage.supply_neg.map(|v| v.0),
            region: op.region.name(),
            target: TargetReport {
                ic: t.ic.0,
                vce: t.vce.0,
                ve: t.ve.0,
                rc: t.rc.map(|r| r.0),
                vb: t.vb.0,
                ib: t.ib.0,
                divider_current: t.divider_current.map(|i| i.0),
                gain: t.gain,
            },
            op: OpReport::from(&op),
            error: d.max_abs(),
            deviations: DeviationReport {
                ic: d.ic,
                vce: d.vce,
                ve: d.ve,
                rc: d.rc,
                gain: d.gain,
            },
            corners: Corners {
                min_beta: OpReport::from(&op_lo),
                max_beta: OpReport::from(&op_hi),
            },
            slots,
            // A stage far from its target is not passing, whatever else holds (issue 17: a green "all
            // checks pass" stood beside an error of 30 %). Appended, so the checks the JSON already listed
            // keep their places.
            checks: stage
                .checks(nets)
                .into_iter()
                .chain(std::iter::once(crate::stage::on_target(d.max_abs())))
                .map(CheckReport::from)
                .collect(),
            ac: stage.ac(&values).map(AcReport::from),
            high_voltage: stage.high_voltage(),
            nodes,
        }
    }

    /// Adds the nearest E12, E24 and E96 values to every slot (for an ideal design).
    pub fn with_nearest(mut self) -> StageReport {
        for (_, s) in &mut self.slots.0 {
            let r = crate::units::Ohms(s.ohms);
            s.nearest = Some(Nearest {
                e12: Series::E12.nearest(r).0,
                e24: Series::E24.nearest(r).0,
                e96: Series::E96.nearest(r).0,
            });
        }
        self
    }

    /// Marks slots as kept: already fitted on the board, so not chosen from stock nor pulled from a drawer.
    pub fn with_kept(mut self, kept: &[Slot]) -> StageReport {
        for (slot, s) in &mut self.slots.0 {
            s.kept = kept.contains(slot);
        }
        self
    }

    /// Whether this is a pnp stage.
    pub fn is_pnp(&self) -> bool {
        self.polarity == Polarity::Pnp.name()
    }

    /// The cautions this stage calls for: 50 V DC and up, and anything over its dissipation limit.
    pub fn cautions(&self) -> Vec<String> {
        let mut out = Vec::new();
        if self.high_voltage {
            out.push(high_voltage_caution(
                &format!("stage \"{}\"", self.name),
                self.supply + self.supply_neg.unwrap_or(0.0),
            ));
        }
        out.extend(hot_caution(
            &format!("stage \"{}\"", self.name),
            &self.checks,
        ));
        out
    }

    /// The slot's network notation, or its code when it is a lone value.
    pub fn slot_code(&self, slot: Slot) -> Option<String> {
        self.slots
            .0
            .iter()
            .find(|(s, _)| *s == slot)
            .map(|(_, r)| code(crate::units::Ohms(r.ohms)))
    }
}
