//! Spread: what tolerance, beta and temperature do to a built stage, before anyone solders it.
//!
//! Three views of the same question. The worst case ([`corners`]) solves every corner of the resistor
//! bands, beta's range and the temperature range, and gives the extremes of IC, VCE, VE, the stiffness and
//! the dissipation, with the region at each. The Monte Carlo ([`mod@monte_carlo`]) builds the stage many times
//! from seeded random parts and counts how many builds meet the bench rule (IC and VCE within ±10 %, and
//! ±5 %, of target). The sensitivities ([`sensitivity`]) say which slot, or beta, is to blame. Everything is
//! computed with the stage's own exact solver ([`crate::stage::Stage::solve`]) on the chosen networks, whose
//! members vary independently ([`crate::network::Network::ohms_with`]). [`worst_error`] is the robust
//! counterpart of the stage's error, for the optimiser. The report model and renderers are in
//! [`crate::report::spread`].

pub mod circuit;
pub mod corners;
pub mod histogram;
pub mod monte_carlo;
pub mod rng;
pub mod sensitivity;

pub use corners::{worst_case, worst_error, Corner, Extreme, Extremes, Worst};
pub use histogram::Histogram;
pub use monte_carlo::{monte_carlo, Dist, MonteCarlo, Summary};
pub use sensitivity::{sensitivities, Sensitivities, Sensitivity, Source};

use crate::stage::{OperatingPoint, Slot, SlotNetworks, Stage, Targets};
use crate::units::{Amps, Celsius, Volts, Watts};
use itertools::Itertools;
use serde::ser::{SerializeMap, SerializeSeq};
use serde::{Serialize, Serializer};

/// A quantity the spread reports on: a unit type, or a plain ratio as `f64`, with its value in SI base units.
pub trait Quantity: Copy + std::fmt::Debug + PartialEq + Serialize {
    /// The value in SI base units.
    fn si(self) -> f64;
    /// The quantity from a value in SI base units.
    fn from_si(x: f64) -> Self;
}

impl Quantity for f64 {
    fn si(self) -> f64 {
        self
    }
    fn from_si(x: f64) -> f64 {
        x
    }
}

macro_rules! unit_quantity {
    ($($t:ident),*) => {$(
        impl Quantity for $t {
            fn si(self) -> f64 {
                self.0
            }
            fn from_si(x: f64) -> $t {
                $t(x)
            }
        }
    )*};
}
unit_quantity!(Amps, Volts, Watts);

/// How to run the spread.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Options {
    /// Monte Carlo builds per stage.
    pub runs: usize,
    /// The seed every stage's builds are drawn from.
    pub seed: u64,
    /// The temperature range of the worst case (the ambient is always included).
    pub temperatures: (Celsius, Celsius),
    /// How resistor values are drawn.
    pub dist: Dist,
    /// Histogram bins.
    pub bins: usize,
}

impl Default for Options {
    /// 20 000 builds (a yield near 95 % is then known to ±0.15 %, one standard error), seed 1, −20 °C to
    /// 70 °C, uniform draws, 20 bins.
    fn default() -> Options {
        Options {
            runs: 20_000,
            seed: 1,
            temperatures: (Celsius(-20.0), Celsius(70.0)),
            dist: Dist::Uniform,
            bins: 20,
        }
    }
}

/// Why a spread could not be run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SpreadError {
    /// A slot of the stage has no network.
    #[error("stage \"{stage}\": slot {slot} has no resistor; expected a network for every slot of the topology ({expected})")]
    MissingSlot {
        /// The stage.
        stage: String,
        /// The empty slot.
        slot: Slot,
        /// The stage's slots.
        expected: String,
    },
    /// No builds were asked for.
    #[error("the number of Monte Carlo builds must be at least 1")]
    NoRuns,
    /// The temperature range is backwards or not a number.
    #[error("the temperature range {lo} .. {hi} is not a range; expected the lower end first")]
    BadRange {
        /// Its lower end.
        lo: Celsius,
        /// Its upper end.
        hi: Celsius,
    },
}

/// Everything the spread found for one stage.
#[derive(Clone, Debug, PartialEq)]
pub struct StageSpread {
    /// The stage's name.
    pub name: String,
    /// What the rule asks for.
    pub target: Targets,
    /// The nominal build at typical beta and ambient.
    pub nominal: OperatingPoint,
    /// The corners.
    pub worst: Worst,
    /// The builds.
    pub monte_carlo: MonteCarlo,
    /// The slopes.
    pub sensitivity: Sensitivities,
}

/// Runs the worst case, the Monte Carlo and the sensitivities of the stage built from `nets`.
pub fn analyse(
    stage: &Stage,
    nets: &SlotNetworks,
    opts: &Options,
) -> Result<StageSpread, SpreadError> {
    if opts.runs == 0 {
        return Err(SpreadError::NoRuns);
    }
    let (lo, hi) = opts.temperatures;
    if lo.0.partial_cmp(&hi.0).is_none_or(|o| o.is_gt()) {
        return Err(SpreadError::BadRange { lo, hi });
    }
    for s in stage.slots() {
        if nets.get(s).is_none() {
            return Err(SpreadError::MissingSlot {
                stage: stage.name.clone(),
                slot: s,
                expected: stage.slots().iter().map(|s| s.name()).join(", "),
            });
        }
    }
    Ok(StageSpread {
        name: stage.name.clone(),
        target: stage.targets(),
        nominal: stage.typical(&nets.values()),
        worst: worst_case(stage, nets, opts.temperatures),
        monte_carlo: monte_carlo(stage, nets, opts.runs, opts.seed, opts.dist, opts.bins),
        sensitivity: sensitivities(stage, nets),
    })
}

impl<T: Quantity> Serialize for Extremes<T> {
    /// As `[min, max]` in SI base units.
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut seq = s.serialize_seq(Some(2))?;
        seq.serialize_element(&self.min.value.si())?;
        seq.serialize_element(&self.max.value.si())?;
        seq.end()
    }
}

/// The regions at (min, max) of a quantity.
fn regions_of<T>(e: &Extremes<T>) -> serde_json::Value {
    serde_json::json!([e.min.region.name(), e.max.region.name()])
}

impl Serialize for Worst {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(None)?;
        m.serialize_entry("ic", &self.ic)?;
        m.serialize_entry("vce", &self.vce)?;
        m.serialize_entry("ve", &self.ve)?;
        m.serialize_entry("stiffness", &self.stiffness)?;
        m.serialize_entry("transistor_power", &self.transistor_power)?;
        m.serialize_entry("resistor_load", &self.resistor_load)?;
        m.serialize_entry(
            "regions",
            &serde_json::json!({
                "ic": regions_of(&self.ic),
                "vce": regions_of(&self.vce),
                "ve": regions_of(&self.ve),
            }),
        )?;
        m.serialize_entry("stiffness_limit", &self.stiffness_limit)?;
        m.serialize_entry("power_limit", &self.power_limit)?;
        m.serialize_entry("corners", &self.corners)?;
        m.serialize_entry("temperatures", &self.temperatures)?;
        m.end()
    }
}

impl Serialize for Sensitivity {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(5))?;
        m.serialize_entry("ic", &self.ic)?;
        m.serialize_entry("vce", &self.vce)?;
        m.serialize_entry("reach", &self.reach)?;
        m.serialize_entry("ic_spread", &self.ic_spread)?;
        m.serialize_entry("vce_spread", &self.vce_spread)?;
        m.end()
    }
}

impl Serialize for Sensitivities {
    /// As `{"R1": {...}, ..., "beta": {...}}`, slots in report order.
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.slots.len() + 1))?;
        for (slot, x) in &self.slots {
            m.serialize_entry(slot.name(), x)?;
        }
        m.serialize_entry("beta", &self.beta)?;
        m.end()
    }
}

impl Serialize for StageSpread {
    /// The spread's own keys, `worst`, `monte_carlo`, `sensitivity` and `dominant`, for the report to put
    /// beside the stage object's (which already holds the name, the targets and the nominal point).
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(None)?;
        m.serialize_entry("worst", &self.worst)?;
        m.serialize_entry("monte_carlo", &self.monte_carlo)?;
        m.serialize_entry("sensitivity", &self.sensitivity)?;
        m.serialize_entry(
            "dominant",
            &serde_json::json!({
                "ic": self.sensitivity.dominant_ic.name(),
                "vce": self.sensitivity.dominant_vce.name(),
            }),
        )?;
        m.end()
    }
}

#[cfg(test)]
mod tests;
