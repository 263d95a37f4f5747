//! The op-amp with finite open-loop gain and an output limited to its supply rails: Vout = A·(V+ − V−)
//! while that lies between V(negative supply) + headroom and V(positive supply) − headroom, and pinned at the
//! nearer limit otherwise. No input current flows. The output current is drawn from the supplies, which
//! are rails (the model refuses supplies that are not), so the output is a voltage source to a fixed node.
//! The three pieces are regions, so a clipped output is found exactly.

use super::mna::{Stamp, View};
use super::region::{Region, Verdict};

/// An op-amp at one build.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OpAmp {
    /// The open-loop gain, V/V.
    pub gain: f64,
    /// How close the output gets to each supply, volts.
    pub headroom: f64,
}

/// The regions an op-amp can be in, in the order the solver tries them.
pub(crate) const REGIONS: &[Region] = &[Region::Linear, Region::High, Region::Low];

impl OpAmp {
    /// (unclamped output A·(V+ − V−), upper limit, lower limit); pins are +, −, out, +supply, −supply.
    fn levels(&self, pins: &[usize], at: &View) -> (f64, f64, f64) {
        (
            self.gain * (at.v(pins[0]) - at.v(pins[1])),
            at.v(pins[3]) - self.headroom,
            at.v(pins[4]) + self.headroom,
        )
    }

    /// Writes the region's equations; `ex` is the output current (into the output node).
    pub(crate) fn stamp(&self, region: Region, pins: &[usize], ex: usize, st: &mut Stamp) {
        let (p, m, out) = (pins[0], pins[1], pins[2]);
        let j = st.extra(ex);
        st.leave(out, -j);
        st.d_extra(out, ex, -1.0);
        let (u, hi, lo) = self.levels(pins, &st.at);
        let vout = st.v(out);
        st.eq_d(ex, out, 1.0);
        match region {
            Region::High => {
                st.eq(ex, vout - hi);
                st.eq_d(ex, pins[3], -1.0);
            }
            Region::Low => {
                st.eq(ex, vout - lo);
                st.eq_d(ex, pins[4], -1.0);
            }
            _ => {
                st.eq(ex, vout - u);
                st.eq_d(ex, p, -self.gain);
                st.eq_d(ex, m, self.gain);
            }
        }
    }

    /// Whether the solution lies in its region.
    pub(crate) fn verdict(&self, region: Region, pins: &[usize], at: &View) -> Verdict {
        let (u, hi, lo) = self.levels(pins, at);
        let slack = 1e-12 * (1.0 + hi.abs() + lo.abs());
        let wanted = if u > hi + slack {
            Region::High
        } else if u < lo - slack {
            Region::Low
        } else if u < hi - slack && u > lo + slack {
            Region::Linear
        } else {
            return Verdict::Inside;
        };
        if wanted == region {
            Verdict::Inside
        } else {
            Verdict::Move(wanted)
        }
    }

    /// The output current and the dissipation it causes (from the supply it is drawn from).
    pub(crate) fn current_power(&self, pins: &[usize], ex: usize, at: &View) -> (f64, f64) {
        let j = at.extra(ex);
        let out = at.v(pins[2]);
        let p = if j >= 0.0 {
            (at.v(pins[3]) - out) * j
        } else {
            (out - at.v(pins[4])) * -j
        };
        (j, p)
    }
}
