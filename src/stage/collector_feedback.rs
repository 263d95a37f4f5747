//! Collector-feedback bias: RB runs from the collector to the base, RC carries the emitter current (IC + IB),
//! and an emitter resistor is optional. A rise in IC lowers the collector voltage and so the base drive: the
//! feedback that steadies it against beta, though less than a stiff divider does.

use super::junction::{Env, Junction};
use super::Slot;
use super::{Nodes, Resolved, SlotValues, Stage, Targets};
use crate::units::Ohms;

pub(super) fn env(s: &Stage, r: &Resolved) -> Env {
    let (rb, rc, re) = (r.get(Slot::RB), r.get(Slot::RC), r.get(Slot::RE));
    let vcc = s.vcc();
    Env {
        a0: vcc,
        ab: rc + rb + re,
        ac: rc + re,
        c0: vcc,
        cb: rc + re,
        cc: rc + re,
    }
}

pub(super) fn nodes(s: &Stage, r: &Resolved, j: &Junction) -> Nodes {
    let (rb, rc, re) = (r.get(Slot::RB), r.get(Slot::RC), r.get(Slot::RE));
    let ie = j.ib + j.ic;
    let vc = s.vcc() - ie * rc;
    let vb = vc - j.ib * rb;
    let n = Nodes::new(vb, ie * re, vc, ie)
        .with(Slot::RB, j.ib)
        .with(Slot::RC, ie);
    if s.has_slot(Slot::RE) {
        n.with(Slot::RE, ie)
    } else {
        n
    }
}

pub(super) fn ideal(s: &Stage, t: &Targets) -> Result<SlotValues, String> {
    let b = s.betas_at(s.limits.ambient);
    let ie = t.ic.0 * (b.typ + 1.0) / b.typ;
    let vbe = t.vb.0 - t.ve.0;
    if t.vce.0 <= vbe {
        return Err(format!(
            "collector feedback needs VCE above VBE, but the rule gives VCE {} and VBE {}: raise rule.vce",
            t.vce,
            crate::units::Volts(vbe)
        ));
    }
    let mut v = SlotValues::new();
    v.set(Slot::RC, Ohms(t.vrc.0 / ie));
    v.set(Slot::RB, Ohms((t.vce.0 - vbe) / t.ib.0));
    if s.has_slot(Slot::RE) {
        v.set(Slot::RE, Ohms(t.ve.0 / ie));
    }
    Ok(v)
}
