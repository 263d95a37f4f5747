//! The voltage reference with a pin current: the adjustable regulator's feedback pair. The part holds its
//! output `Vref` above its adjust pin, delivering whatever current that takes from its input node into the
//! output node, while the adjust pin sources the small pin current `Ipin` into the feedback network. With a
//! divider Rtop (out to adj) and Rbottom (adj to ground) this gives the familiar
//! Vout = Vref·(1 + Rtop/Rbottom) + Ipin·Rtop.

use super::mna::{Stamp, View};

/// A reference at one build.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Reference {
    /// Output above adjust, volts.
    pub volts: f64,
    /// The current out of the adjust pin, amperes.
    pub pin: f64,
}

impl Reference {
    /// Writes the reference; pins are out, adjust, input; `ex` is its extra unknown (the output current).
    pub(crate) fn stamp(&self, pins: &[usize], ex: usize, st: &mut Stamp) {
        let (out, adj, input) = (pins[0], pins[1], pins[2]);
        let j = st.extra(ex);
        st.leave(out, -j);
        st.d_extra(out, ex, -1.0);
        st.leave(input, j);
        st.d_extra(input, ex, 1.0);
        st.leave(adj, -self.pin * st.lambda);
        let v = st.v(out) - st.v(adj) - self.volts * st.lambda;
        st.eq(ex, v);
        st.eq_d(ex, out, 1.0);
        st.eq_d(ex, adj, -1.0);
    }

    /// The current delivered into the output node.
    pub(crate) fn current(&self, ex: usize, at: &View) -> f64 {
        at.extra(ex)
    }

    /// (V(input) − V(out))·Iout: the pass element's dissipation.
    pub(crate) fn power(&self, pins: &[usize], ex: usize, at: &View) -> f64 {
        (at.v(pins[2]) - at.v(pins[0])) * at.extra(ex)
    }
}
