//! A closed-form stage written as a circuit: the same transistor, rails and resistors, with every slot a
//! circuit slot of the same name. This is how the engine is tested against the five closed-form topologies
//! (and how their speeds are compared); a PNP stage becomes a PNP on negative rails, where the closed form
//! solves its NPN mirror.

use super::model::{Circuit, Kind};
use crate::stage::{Polarity, Slot, SlotValues, Stage, Topology};
use crate::units::{Ohms, Volts};

/// The stage as a circuit, with its slots' values in [`Circuit::slots`] order; None when a slot the stage
/// has is not given a value.
pub fn of_stage(stage: &Stage, values: &SlotValues) -> Option<(Circuit, Vec<Ohms>)> {
    let s = match stage.polarity {
        Polarity::Npn => 1.0,
        Polarity::Pnp => -1.0,
    };
    let mut c = Circuit::new(&stage.name);
    c.limits = stage.limits;
    c.rail("vcc", Volts(s * stage.supply.0)).ok()?;
    if let Some(neg) = stage.supply_neg {
        c.rail("vee", Volts(-s * neg.0)).ok()?;
    }
    let has = |slot| stage.has_slot(slot);
    let emitter_return = if stage.topology == Topology::DualSupply {
        "vee"
    } else {
        "gnd"
    };
    let mut order = Vec::new();
    let mut add = |c: &mut Circuit, slot: Slot, a: &str, b: &str| -> Option<()> {
        c.add(
            slot.name(),
            Kind::Resistor {
                value: None,
                power: None,
                tolerance: None,
            },
            &[a, b],
        )
        .ok()?;
        order.push(values.get(slot)?);
        Some(())
    };
    let emitter = match stage.topology {
        Topology::Divider => {
            add(&mut c, Slot::R1, "vcc", "b")?;
            add(&mut c, Slot::R2, "b", "gnd")?;
            add(&mut c, Slot::RC, "vcc", "c")?;
            add(&mut c, Slot::RE, "e", "gnd")?;
            "e"
        }
        Topology::DividerSplit => {
            add(&mut c, Slot::R1, "vcc", "b")?;
            add(&mut c, Slot::R2, "b", "gnd")?;
            add(&mut c, Slot::RC, "vcc", "c")?;
            add(&mut c, Slot::RE1, "e", "m")?;
            add(&mut c, Slot::RE2, "m", "gnd")?;
            "e"
        }
        Topology::CollectorFeedback | Topology::BaseResistor => {
            let from = if stage.topology == Topology::CollectorFeedback {
                "c"
            } else {
                "vcc"
            };
            add(&mut c, Slot::RC, "vcc", "c")?;
            add(&mut c, Slot::RB, from, "b")?;
            if has(Slot::RE) {
                add(&mut c, Slot::RE, "e", "gnd")?;
                "e"
            } else {
                "gnd"
            }
        }
        Topology::DualSupply => {
            add(&mut c, Slot::RC, "vcc", "c")?;
            add(&mut c, Slot::RE, "e", emitter_return)?;
            add(&mut c, Slot::RB, "b", "gnd")?;
            "e"
        }
    };
    c.add(
        "Q1",
        Kind::Bjt {
            polarity: stage.polarity,
            transistor: stage.transistor,
        },
        &["c", "b", emitter],
    )
    .ok()?;
    Some((c, order))
}
