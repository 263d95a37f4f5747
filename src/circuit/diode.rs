//! Diode and LED: the Shockley law I = If·(e^((V − Vf)/(n·VT)) − e^(−Vf/(n·VT))), written from the
//! forward voltage Vf at a current If and the emission coefficient n, so a part is described as a data
//! sheet gives it. The second term makes the current zero at zero volts. An LED is the same law with its
//! own forward voltage and, typically, a larger n.

use super::bjt::{exp_safe, junction_limit};
use super::mna::{Stamp, View};

/// A diode's law at one build and temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Diode {
    /// The forward voltage at `at`, volts.
    pub volts: f64,
    /// The current the forward voltage is given at, amperes.
    pub at: f64,
    /// n·kT/q, volts.
    pub nvt: f64,
}

impl Diode {
    /// The current from anode to cathode and its slope at a forward voltage.
    pub(crate) fn law(&self, v: f64) -> (f64, f64) {
        let (e, de) = exp_safe(self.at, (v - self.volts) / self.nvt);
        let off = self.at * (-self.volts / self.nvt).exp();
        (e - off, de / self.nvt)
    }

    /// Writes the diode between anode `a` and cathode `k`.
    pub(crate) fn stamp(&self, a: usize, k: usize, st: &mut Stamp) {
        let (i, g) = self.law(st.v(a) - st.v(k));
        st.branch(a, k, i, g);
    }

    /// The current from anode to cathode.
    pub(crate) fn current(&self, a: usize, k: usize, at: &View) -> f64 {
        self.law(at.v(a) - at.v(k)).0
    }

    /// The junction limit on a Newton step (see [`super::bjt`]).
    pub(crate) fn step_limit(&self, a: usize, k: usize, old: &View, new: &View) -> f64 {
        let vcrit = self.volts + self.nvt * (self.nvt / (std::f64::consts::SQRT_2 * self.at)).ln();
        junction_limit(old.v(a) - old.v(k), new.v(a) - new.v(k), self.nvt, vcrit)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sixty_millivolts_a_decade() {
        // The Shockley law with n = 1 at 300 K moves VT·ln 10 = 59.5 mV per decade of current (Sedra & Smith,
        // Microelectronic Circuits, ch. 4: "60 mV per decade"; from memory). VT = 25.852 mV (CODATA 2018).
        let d = Diode {
            volts: 0.7,
            at: 1e-3,
            nvt: 0.025_852,
        };
        let v10 = 0.7 + 0.025_852 * 10f64.ln();
        let (i, _) = d.law(v10);
        assert!((i / 1e-2 - 1.0).abs() < 1e-9, "{i}");
        assert!((0.025_852 * 10f64.ln() - 0.0595).abs() < 1e-3);
        assert_eq!(d.law(0.0).0, 0.0);
    }
}
