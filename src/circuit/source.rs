//! The constant current source: a fixed current from its first node to its second, whatever the voltage
//! across it (no compliance limit is modelled; the report gives the voltage so it can be judged).

use super::mna::Stamp;

/// Writes `amps` flowing from `a` through the source to `b`.
pub(crate) fn stamp(amps: f64, a: usize, b: usize, st: &mut Stamp) {
    let i = amps * st.lambda;
    st.leave(a, i);
    st.leave(b, -i);
}
