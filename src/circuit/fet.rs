//! The square-law field-effect transistor that both the JFET and the enhancement MOSFET reduce to, in the
//! device's own frame (every voltage and current reversed for a P channel):
//!
//! ```text
//! cutoff      VOV = VGS − VT ≤ 0                 ID = 0
//! saturation  VOV > 0, VDS ≥ VOV                 ID = ½·k·VOV²
//! triode      VOV > 0, VDS < VOV                 ID = k·(VOV·VDS − ½·VDS²)
//! ```
//!
//! (Sedra & Smith, Microelectronic Circuits, the MOSFET's square law; a JFET is the same with VT = VP and
//! k = 2·IDSS/VP², Shockley's equation ID = IDSS·(1 − VGS/VP)².) No gate current flows. While the solver
//! iterates inside the saturation region, a guess with VOV < 0 is read on the odd extension ½·k·VOV·|VOV|,
//! so the region's equations have one root and Newton's method cannot settle on the square law's mirror
//! root; a root with VOV ≤ 0 is then outside the region and the device moves to cutoff. Drain and source
//! are not swapped when VDS reverses: a reversed FET is outside this model.

use super::mna::{Stamp, View};
use super::region::{Region, Verdict};

/// N or P channel.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Channel {
    /// N channel: conducts with the gate above its threshold.
    N,
    /// P channel: the mirror image.
    P,
}

/// A square-law FET at one build.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SquareLaw {
    /// N or P.
    pub channel: Channel,
    /// The threshold in the device frame, volts (negative for a JFET: its pinch-off).
    pub vt: f64,
    /// The transconductance parameter k, A/V² (ID = ½·k·VOV² in saturation).
    pub k: f64,
}

/// The regions a FET can be in, in the order the solver tries them.
pub(crate) const REGIONS: &[Region] = &[Region::FetSaturation, Region::Triode, Region::Cutoff];

impl SquareLaw {
    fn s(&self) -> f64 {
        match self.channel {
            Channel::N => 1.0,
            Channel::P => -1.0,
        }
    }

    /// (VGS, VDS) in the device frame; pins are drain, gate, source.
    pub(crate) fn voltages(&self, pins: &[usize], at: &View) -> (f64, f64) {
        let s = self.s();
        let (d, g, so) = (at.v(pins[0]), at.v(pins[1]), at.v(pins[2]));
        (s * (g - so), s * (d - so))
    }

    /// ID (device frame), ∂ID/∂VGS and ∂ID/∂VDS in a region.
    pub(crate) fn law(&self, region: Region, vgs: f64, vds: f64) -> (f64, f64, f64) {
        let vov = vgs - self.vt;
        match region {
            Region::FetSaturation => (0.5 * self.k * vov * vov.abs(), self.k * vov.abs(), 0.0),
            Region::Triode => (
                self.k * (vov * vds - 0.5 * vds * vds),
                self.k * vds,
                self.k * (vov - vds),
            ),
            _ => (0.0, 0.0, 0.0),
        }
    }

    /// Writes the region's equations.
    pub(crate) fn stamp(&self, region: Region, pins: &[usize], st: &mut Stamp) {
        if !matches!(region, Region::FetSaturation | Region::Triode) {
            return;
        }
        let s = self.s();
        let (d, g, so) = (pins[0], pins[1], pins[2]);
        let (vgs, vds) = self.voltages(pins, &st.at);
        let (id, gm, gds) = self.law(region, vgs, vds);
        st.leave(d, s * id);
        st.leave(so, -s * id);
        st.d(d, g, gm);
        st.d(d, d, gds);
        st.d(d, so, -(gm + gds));
        st.d(so, g, -gm);
        st.d(so, d, -gds);
        st.d(so, so, gm + gds);
    }

    /// The drain current in the device frame.
    pub(crate) fn current(&self, region: Region, pins: &[usize], at: &View) -> f64 {
        let (vgs, vds) = self.voltages(pins, at);
        self.law(region, vgs, vds).0
    }

    /// Whether the solution lies in its region.
    pub(crate) fn verdict(&self, region: Region, pins: &[usize], at: &View) -> Verdict {
        let (vgs, vds) = self.voltages(pins, at);
        let vov = vgs - self.vt;
        let slack = 1e-12 * (1.0 + self.vt.abs());
        let fits = |r: Region| match r {
            Region::Cutoff => vov <= slack,
            Region::FetSaturation => vov >= -slack && vds >= vov - slack,
            _ => vov >= -slack && vds <= vov + slack,
        };
        if fits(region) {
            Verdict::Inside
        } else if vov <= 0.0 {
            Verdict::Move(Region::Cutoff)
        } else if vds >= vov {
            Verdict::Move(Region::FetSaturation)
        } else {
            Verdict::Move(Region::Triode)
        }
    }

    /// Keeps a conducting guess on the right side of the threshold: a step that would take VOV from
    /// positive to zero or below stops halfway there.
    pub(crate) fn step_limit(&self, region: Region, pins: &[usize], old: &View, new: &View) -> f64 {
        if region == Region::Cutoff {
            return 1.0;
        }
        let a = self.voltages(pins, old).0 - self.vt;
        let b = self.voltages(pins, new).0 - self.vt;
        if a > 0.0 && b <= 0.0 {
            (0.5 * a / (a - b)).clamp(1e-6, 1.0)
        } else {
            1.0
        }
    }

    /// VDS·ID, the dissipation.
    pub(crate) fn power(&self, region: Region, pins: &[usize], at: &View) -> f64 {
        let (vgs, vds) = self.voltages(pins, at);
        vds * self.law(region, vgs, vds).0
    }
}
