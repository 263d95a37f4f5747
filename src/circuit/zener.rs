//! The zener diode, piecewise linear: in breakdown it holds Vz0 + Iz·rz (Vz0 = the breakdown voltage at the
//! given current less that current times the slope resistance), forward it conducts above a 0.7 V knee
//! through the same slope resistance (biasfit's own choice: a zener's forward side rarely matters in a bias
//! network), and between the two it carries nothing. Each piece is a region, so the solver treats the knees
//! exactly.

use super::mna::{Stamp, View};
use super::region::{Region, Verdict};

/// A zener's law at one build.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Zener {
    /// The breakdown voltage at `at`, volts.
    pub volts: f64,
    /// The reverse current the breakdown voltage is given at, amperes.
    pub at: f64,
    /// The slope resistance in breakdown, ohms.
    pub slope: f64,
}

/// The forward knee, volts (biasfit's own choice, see the module doc).
pub(crate) const FORWARD_KNEE: f64 = 0.7;

/// The regions a zener can be in, in the order the solver tries them.
pub(crate) const REGIONS: &[Region] = &[Region::Breakdown, Region::Blocking, Region::Forward];

impl Zener {
    fn knee(&self) -> f64 {
        self.volts - self.at * self.slope
    }

    /// The reverse current (cathode to anode) in a region, at reverse voltage `vr` = V(cathode) − V(anode).
    fn reverse_current(&self, region: Region, vr: f64) -> f64 {
        match region {
            Region::Breakdown => (vr - self.knee()) / self.slope,
            Region::Forward => -(-vr - FORWARD_KNEE) / self.slope,
            _ => 0.0,
        }
    }

    /// Writes the zener between anode `a` and cathode `k`.
    pub(crate) fn stamp(&self, region: Region, a: usize, k: usize, st: &mut Stamp) {
        let vr = st.v(k) - st.v(a);
        let i = self.reverse_current(region, vr);
        let g = if region == Region::Blocking {
            0.0
        } else {
            1.0 / self.slope
        };
        st.branch(k, a, i, g);
    }

    /// The reverse current, cathode to anode (positive in breakdown).
    pub(crate) fn current(&self, region: Region, a: usize, k: usize, at: &View) -> f64 {
        self.reverse_current(region, at.v(k) - at.v(a))
    }

    /// Whether the solution lies in its region.
    pub(crate) fn verdict(&self, region: Region, a: usize, k: usize, at: &View) -> Verdict {
        let vr = at.v(k) - at.v(a);
        let slack = 1e-12 * (1.0 + self.volts.abs());
        let fits = |r: Region| match r {
            Region::Breakdown => vr >= self.knee() - slack,
            Region::Forward => -vr >= FORWARD_KNEE - slack,
            _ => vr <= self.knee() + slack && -vr <= FORWARD_KNEE + slack,
        };
        if fits(region) {
            return Verdict::Inside;
        }
        REGIONS
            .iter()
            .copied()
            .find(|&r| fits(r))
            .map_or(Verdict::Move(Region::Blocking), Verdict::Move)
    }
}
