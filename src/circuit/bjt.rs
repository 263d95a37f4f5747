//! The bipolar transistor in a circuit: the stage model's transistor ([`crate::stage::Transistor`]) and its
//! VBE law ([`crate::stage::junction::Law`]), written as nodal stamps for each region, so a circuit and a
//! closed-form stage agree to rounding.
//!
//! Active: IC = β·IB, VBE from the law at IC. Saturated: VCE = vce_sat, VBE from the law at α·IE (the
//! forward transport current, equal to IC at the edge of saturation). Cut off: no current; with the diode
//! law, a junction whose active current would fall below [`CUTOFF_FRACTION`] of the law's reference current
//! counts as off, as in the stage model. A diode-connected transistor (collector on its base) is never
//! saturated: VCB = 0 keeps it at the edge, where the active equations hold. A PNP is the NPN with every
//! voltage and current reversed (`s` = −1 below). The currents are kept in the device's own frame: positive
//! IB and IC for normal use.

use super::mna::{Stamp, View};
use super::region::{Region, Verdict};
use crate::stage::junction::{Law, CUTOFF_FRACTION};
use crate::stage::{Polarity, Transistor};
use crate::units::Celsius;

/// A bipolar transistor's parameters at one build and temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bjt {
    /// NPN or PNP.
    pub polarity: Polarity,
    /// The current gain, already at the temperature.
    pub beta: f64,
    /// The VBE law, already at the temperature.
    pub law: Law,
    /// VCE in saturation, volts.
    pub vce_sat: f64,
}

/// The regions a bipolar transistor can be in, in the order the solver tries them.
pub(crate) const REGIONS: &[Region] = &[Region::Active, Region::Saturation, Region::Cutoff];

/// Rounding slack for the region tests, in volts: far below any meaningful difference, above the last bits.
const SLACK_V: f64 = 1e-12;

impl Bjt {
    /// The transistor at a beta (as given at its reference temperature) and temperature.
    pub fn at(t: &Transistor, polarity: Polarity, beta: f64, temp: Celsius) -> Bjt {
        Bjt {
            polarity,
            beta: t.beta_at(beta, temp),
            law: t.law(temp),
            vce_sat: t.vce_sat.0,
        }
    }

    fn s(&self) -> f64 {
        match self.polarity {
            Polarity::Npn => 1.0,
            Polarity::Pnp => -1.0,
        }
    }

    /// The current below which a diode-law junction counts as off (0 for a fixed VBE).
    fn cutoff_current(&self) -> f64 {
        match self.law {
            Law::Fixed { .. } => 0.0,
            Law::Diode { i0, .. } => i0 * CUTOFF_FRACTION,
        }
    }

    /// (VBE, VCE) in the device frame.
    pub(crate) fn voltages(&self, pins: &[usize], at: &View) -> (f64, f64) {
        let s = self.s();
        let (c, b, e) = (at.v(pins[0]), at.v(pins[1]), at.v(pins[2]));
        (s * (b - e), s * (c - e))
    }

    /// (IB, IC) in the device frame, in a region; `ex` is the first of the two extra unknowns.
    pub(crate) fn currents(
        &self,
        region: Region,
        pins: &[usize],
        ex: usize,
        at: &View,
    ) -> (f64, f64) {
        let (vbe, _) = self.voltages(pins, at);
        match (region, self.law) {
            (Region::Active, Law::Fixed { .. }) => {
                let ib = at.extra(ex);
                (ib, self.beta * ib)
            }
            (Region::Active, Law::Diode { v0, i0, nvt }) => {
                let (ic, _) = exp_safe(i0, (vbe - v0) / nvt);
                (ic / self.beta, ic)
            }
            (Region::Saturation, Law::Fixed { .. }) => (at.extra(ex), at.extra(ex + 1)),
            (Region::Saturation, Law::Diode { v0, i0, nvt }) => {
                let alpha = self.beta / (self.beta + 1.0);
                let (ie, _) = exp_safe(i0 / alpha, (vbe - v0) / nvt);
                let ic = at.extra(ex + 1);
                (ie - ic, ic)
            }
            _ => (0.0, 0.0),
        }
    }

    /// Writes the region's equations.
    pub(crate) fn stamp(&self, region: Region, pins: &[usize], ex: usize, st: &mut Stamp) {
        let s = self.s();
        let (c, b, e) = (pins[0], pins[1], pins[2]);
        let (vbe, _) = self.voltages(pins, &st.at);
        match (region, self.law) {
            (Region::Active, Law::Fixed { vbe: v }) => {
                let ib = st.extra(ex);
                let beta = self.beta;
                st.leave(b, s * ib);
                st.d_extra(b, ex, s);
                st.leave(c, s * beta * ib);
                st.d_extra(c, ex, s * beta);
                st.leave(e, -s * (beta + 1.0) * ib);
                st.d_extra(e, ex, -s * (beta + 1.0));
                st.eq(ex, vbe - v);
                st.eq_d(ex, b, s);
                st.eq_d(ex, e, -s);
                st.unused(ex + 1);
            }
            (Region::Active, Law::Diode { v0, i0, nvt }) => {
                let (ic, dic) = exp_safe(i0, (vbe - v0) / nvt);
                let g = dic / nvt;
                let gb = g / self.beta;
                st.leave(b, s * ic / self.beta);
                st.d(b, b, gb);
                st.d(b, e, -gb);
                st.leave(c, s * ic);
                st.d(c, b, g);
                st.d(c, e, -g);
                st.leave(e, -s * (ic + ic / self.beta));
                st.d(e, b, -(g + gb));
                st.d(e, e, g + gb);
                st.unused(ex);
                st.unused(ex + 1);
            }
            (Region::Saturation, law) => {
                let ic = st.extra(ex + 1);
                let vce_sat = self.vce_sat;
                match law {
                    Law::Fixed { vbe: v } => {
                        let ib = st.extra(ex);
                        st.leave(b, s * ib);
                        st.d_extra(b, ex, s);
                        st.leave(e, -s * ib);
                        st.d_extra(e, ex, -s);
                        st.eq(ex, vbe - v);
                        st.eq_d(ex, b, s);
                        st.eq_d(ex, e, -s);
                    }
                    Law::Diode { v0, i0, nvt } => {
                        let alpha = self.beta / (self.beta + 1.0);
                        let (ie, die) = exp_safe(i0 / alpha, (vbe - v0) / nvt);
                        let g = die / nvt;
                        // The base takes IE − IC; the collector's share is the extra unknown.
                        st.leave(b, s * ie);
                        st.d(b, b, g);
                        st.d(b, e, -g);
                        st.leave(e, -s * ie);
                        st.d(e, b, -g);
                        st.d(e, e, g);
                        st.leave(b, -s * ic);
                        st.d_extra(b, ex + 1, -s);
                        st.leave(e, s * ic);
                        st.d_extra(e, ex + 1, s);
                        st.unused(ex);
                    }
                }
                st.leave(c, s * ic);
                st.d_extra(c, ex + 1, s);
                st.leave(e, -s * ic);
                st.d_extra(e, ex + 1, -s);
                let (_, vce) = self.voltages(pins, &st.at);
                st.eq(ex + 1, vce - vce_sat);
                st.eq_d(ex + 1, c, s);
                st.eq_d(ex + 1, e, -s);
            }
            _ => {
                st.unused(ex);
                st.unused(ex + 1);
            }
        }
    }

    /// Whether the solution lies in its region, and if not, where it points.
    pub(crate) fn verdict(&self, region: Region, pins: &[usize], ex: usize, at: &View) -> Verdict {
        let (vbe, vce) = self.voltages(pins, at);
        let (ib, ic) = self.currents(region, pins, ex, at);
        let tiny = 1e-15 * (ib.abs() + ic.abs());
        // Collector tied to base (diode-connected): VCB = 0 at every point, the edge of saturation, where
        // IC = β·IB still holds, so the active region covers every point the device can have. Held
        // saturated it is not even determined: IB and IC leave the same node, KCL sees only their sum IE,
        // and the collector's share is an unknown no equation fixes (its value is whatever the solve started
        // from, so IB = IE − IC means nothing).
        let diode_connected = pins[0] == pins[1];
        match region {
            Region::Active => {
                let off = match self.law {
                    Law::Fixed { .. } => ib < -tiny,
                    Law::Diode { .. } => ic < self.cutoff_current(),
                };
                if off {
                    Verdict::Move(Region::Cutoff)
                } else if !diode_connected
                    && vce < self.vce_sat - SLACK_V * (1.0 + self.vce_sat.abs())
                {
                    Verdict::Move(Region::Saturation)
                } else {
                    Verdict::Inside
                }
            }
            Region::Saturation if diode_connected => Verdict::Move(Region::Active),
            Region::Saturation => {
                if (ib <= 0.0 && ic <= 0.0) || ic < -tiny {
                    Verdict::Move(Region::Cutoff)
                } else if ic > self.beta * ib + tiny {
                    Verdict::Move(Region::Active)
                } else {
                    Verdict::Inside
                }
            }
            _ => match self.law {
                Law::Fixed { vbe: v } => {
                    if vbe > v + SLACK_V * (1.0 + v.abs()) {
                        Verdict::Move(Region::Active)
                    } else {
                        Verdict::Inside
                    }
                }
                Law::Diode { .. } => {
                    if vbe > self.law.vbe_at(self.cutoff_current()) {
                        Verdict::Gap
                    } else {
                        Verdict::Inside
                    }
                }
            },
        }
    }

    /// Whether a diode-law transistor, solved active, carries less than the cut-off current.
    pub(crate) fn below_cutoff(&self, pins: &[usize], ex: usize, at: &View) -> bool {
        let (_, ic) = self.currents(Region::Active, pins, ex, at);
        ic < self.cutoff_current()
    }

    /// The largest fraction of a Newton step that keeps the junction voltage from leaping up the
    /// exponential (the classic junction limit: a rise beyond two n·VT above the critical voltage is cut to a
    /// logarithmic one).
    pub(crate) fn step_limit(&self, region: Region, pins: &[usize], old: &View, new: &View) -> f64 {
        let Law::Diode { v0, i0, nvt } = self.law else {
            return 1.0;
        };
        if region == Region::Cutoff {
            return 1.0;
        }
        let (a, _) = self.voltages(pins, old);
        let (b, _) = self.voltages(pins, new);
        let vcrit = v0 + nvt * (nvt / (std::f64::consts::SQRT_2 * i0)).ln();
        junction_limit(a, b, nvt, vcrit)
    }

    /// The transistor's dissipation VCE·IC + VBE·IB.
    pub(crate) fn power(&self, region: Region, pins: &[usize], ex: usize, at: &View) -> f64 {
        let (vbe, vce) = self.voltages(pins, at);
        let (ib, ic) = self.currents(region, pins, ex, at);
        vce * ic + vbe * ib
    }
}

/// `scale·eᵘ` and its derivative in u, continued as a straight line past u = 80 so that no guess overflows.
pub(crate) fn exp_safe(scale: f64, u: f64) -> (f64, f64) {
    const TOP: f64 = 80.0;
    if u > TOP {
        let e = scale * TOP.exp();
        (e * (1.0 + (u - TOP)), e)
    } else {
        let e = scale * u.exp();
        (e, e)
    }
}

/// The fraction of the step from junction voltage `old` to `new` that the junction limit allows.
pub(crate) fn junction_limit(old: f64, new: f64, vt: f64, vcrit: f64) -> f64 {
    if !(new > vcrit && (new - old).abs() > 2.0 * vt) {
        return 1.0;
    }
    let limited = if old > 0.0 {
        let arg = 1.0 + (new - old) / vt;
        if arg > 0.0 {
            old + vt * arg.ln()
        } else {
            vcrit
        }
    } else {
        vt * (new / vt).ln()
    };
    let f = (limited - old) / (new - old);
    if f.is_finite() {
        f.clamp(1e-6, 1.0)
    } else {
        1.0
    }
}
