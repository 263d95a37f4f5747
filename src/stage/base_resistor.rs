//! Fixed base bias: RB from the supply to the base, RC, and an optional RE. IB is set almost entirely by RB,
//! so IC follows beta; the checks show how far (the beta-spread check), which is why this topology is here
//! for completeness rather than recommended.

use super::junction::{Env, Junction};
use super::Slot;
use super::{Nodes, Resolved, SlotValues, Stage, Targets};
use crate::units::Ohms;

pub(super) fn env(s: &Stage, r: &Resolved) -> Env {
    let (rb, rc, re) = (r.get(Slot::RB), r.get(Slot::RC), r.get(Slot::RE));
    let vcc = s.vcc();
    Env {
        a0: vcc,
        ab: rb + re,
        ac: re,
        c0: vcc,
        cb: re,
        cc: rc + re,
    }
}

pub(super) fn nodes(s: &Stage, r: &Resolved, j: &Junction) -> Nodes {
    let (rb, rc, re) = (r.get(Slot::RB), r.get(Slot::RC), r.get(Slot::RE));
    let ie = j.ib + j.ic;
    let vcc = s.vcc();
    let n = Nodes::new(vcc - j.ib * rb, ie * re, vcc - j.ic * rc, j.ib + j.ic)
        .with(Slot::RB, j.ib)
        .with(Slot::RC, j.ic);
    if s.has_slot(Slot::RE) {
        n.with(Slot::RE, ie)
    } else {
        n
    }
}

pub(super) fn ideal(s: &Stage, t: &Targets) -> Result<SlotValues, String> {
    let b = s.betas_at(s.limits.ambient);
    let ie = t.ic.0 * (b.typ + 1.0) / b.typ;
    let vcc = s.vcc();
    if t.vb.0 >= vcc {
        return Err(format!(
            "the base would have to sit at {}, at or above the {} supply: lower rule.vre",
            t.vb, s.supply
        ));
    }
    let mut v = SlotValues::new();
    v.set(Slot::RC, Ohms(t.vrc.0 / t.ic.0));
    v.set(Slot::RB, Ohms((vcc - t.vb.0) / t.ib.0));
    if s.has_slot(Slot::RE) {
        v.set(Slot::RE, Ohms(t.ve.0 / ie));
    }
    Ok(v)
}
