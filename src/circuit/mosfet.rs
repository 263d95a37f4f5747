//! The enhancement MOSFET: the square law of [`super::fet`] from its threshold voltage and its
//! transconductance parameter k (ID = ½·k·(VGS − VT)² in saturation; k = μ·Cox·W/L in the textbook's
//! terms), each a min/typical/max range.

use super::fet::{Channel, SquareLaw};
use super::model::{Pick, Ranged};
use crate::units::Volts;

/// An enhancement MOSFET as described in a circuit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Mosfet {
    /// N or P channel.
    pub channel: Channel,
    /// The threshold voltage as a magnitude.
    pub threshold: Ranged<Volts>,
    /// The transconductance parameter, A/V².
    pub k: Ranged<f64>,
}

impl Mosfet {
    /// The square law at a corner of the ranges.
    pub fn law(&self, pick: Pick) -> SquareLaw {
        SquareLaw {
            channel: self.channel,
            vt: self.threshold.pick(pick).0.abs(),
            k: self.k.pick(pick),
        }
    }
}
