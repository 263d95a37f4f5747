//! Voltage-divider bias: R1 from the supply to the base, R2 from the base to ground, RC and RE. The divider
//! is replaced by its Thevenin equivalent, VTh = VCC·R2/(R1 + R2) behind RTh = R1 ∥ R2, and the base current
//! flows through RTh: no stiff-divider approximation.

use super::junction::{Env, Junction};
use super::Slot;
use super::{Nodes, Resolved, SlotValues, Stage, Targets};

/// The network around the transistor, with `re` the total emitter resistance.
pub(super) fn env_with(s: &Stage, r: &Resolved, re: f64) -> Env {
    let (r1, r2, rc) = (r.get(Slot::R1), r.get(Slot::R2), r.get(Slot::RC));
    let vcc = s.vcc();
    let vth = vcc * r2 / (r1 + r2);
    let rth = r1 * r2 / (r1 + r2);
    Env {
        a0: vth,
        ab: rth + re,
        ac: re,
        c0: vcc,
        cb: re,
        cc: rc + re,
    }
}

pub(super) fn env(s: &Stage, r: &Resolved) -> Env {
    env_with(s, r, r.get(Slot::RE))
}

/// Node voltages and currents, with `re` the total emitter resistance.
pub(super) fn nodes_with(s: &Stage, r: &Resolved, j: &Junction, re: f64) -> Nodes {
    let (r1, r2, rc) = (r.get(Slot::R1), r.get(Slot::R2), r.get(Slot::RC));
    let vcc = s.vcc();
    let ie = j.ib + j.ic;
    let vth = vcc * r2 / (r1 + r2);
    let rth = r1 * r2 / (r1 + r2);
    let vb = vth - j.ib * rth;
    let ve = ie * re;
    let vc = vcc - j.ic * rc;
    let i1 = (vcc - vb) / r1;
    let i2 = vb / r2;
    let mut n = Nodes::new(vb, ve, vc, i1 + j.ic)
        .with(Slot::R1, i1)
        .with(Slot::R2, i2)
        .with(Slot::RC, j.ic);
    n.divider_current = Some(i2);
    n
}

pub(super) fn nodes(s: &Stage, r: &Resolved, j: &Junction) -> Nodes {
    nodes_with(s, r, j, r.get(Slot::RE)).with(Slot::RE, j.ib + j.ic)
}

/// R1, R2 and RC from the targets; the emitter resistance is returned as a total for the caller to place.
pub(super) fn ideal_with(s: &Stage, t: &Targets) -> Result<(SlotValues, f64), String> {
    let b = s.betas_at(s.limits.ambient);
    let ic = t.ic.0;
    let ie = ic * (b.typ + 1.0) / b.typ;
    let vcc = s.vcc();
    let vb = t.vb.0;
    if vb >= vcc {
        return Err(format!(
            "the base would have to sit at {}, at or above the {} supply: lower rule.vre",
            t.vb, s.supply
        ));
    }
    // R2 carries the design current; R1 carries that plus the base current.
    let i2 = t.divider_current.map_or(f64::NAN, |i| i.0);
    let mut v = SlotValues::new();
    v.set(Slot::R1, crate::units::Ohms((vcc - vb) / (i2 + t.ib.0)));
    v.set(Slot::R2, crate::units::Ohms(vb / i2));
    v.set(Slot::RC, crate::units::Ohms(t.vrc.0 / ic));
    Ok((v, t.ve.0 / ie))
}

pub(super) fn ideal(s: &Stage, t: &Targets) -> Result<SlotValues, String> {
    let (mut v, re) = ideal_with(s, t)?;
    v.set(Slot::RE, crate::units::Ohms(re));
    Ok(v)
}
