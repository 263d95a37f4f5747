//! The resistor: Ohm's law between its two nodes. A resistor is either a slot (its value chosen from
//! stock, possibly a series/parallel network) or a fixed part with a value of its own.

use super::mna::{Stamp, View};

/// Writes a resistor of `ohms` between `a` and `b`.
pub(crate) fn stamp(ohms: f64, a: usize, b: usize, st: &mut Stamp) {
    let g = 1.0 / ohms;
    let i = (st.v(a) - st.v(b)) * g;
    st.branch(a, b, i, g);
}

/// The current from `a` to `b`.
pub(crate) fn current(ohms: f64, a: usize, b: usize, at: &View) -> f64 {
    (at.v(a) - at.v(b)) / ohms
}
