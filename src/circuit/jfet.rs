//! The junction FET, depletion mode: Shockley's equation ID = IDSS·(1 − VGS/VP)² in saturation, from the
//! saturated drain current IDSS and the pinch-off voltage VP, each a min/typical/max range as data sheets
//! give them. It becomes the square law of [`super::fet`] with VT = VP and k = 2·IDSS/VP².

use super::fet::{Channel, SquareLaw};
use super::model::{Pick, Ranged};
use crate::units::{Amps, Volts};

/// A JFET as described in a circuit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Jfet {
    /// N or P channel.
    pub channel: Channel,
    /// The drain current with the gate tied to the source.
    pub idss: Ranged<Amps>,
    /// The pinch-off voltage as a magnitude (negative VGS for N, positive for P).
    pub pinch_off: Ranged<Volts>,
}

impl Jfet {
    /// The square law at a corner of the ranges.
    pub fn law(&self, pick: Pick) -> SquareLaw {
        let vp = self.pinch_off.pick(pick).0.abs();
        let idss = self.idss.pick(pick).0;
        SquareLaw {
            channel: self.channel,
            vt: -vp,
            k: 2.0 * idss / (vp * vp),
        }
    }
}
