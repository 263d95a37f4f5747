//! Emitter bias from a dual supply: the base returns to ground through RB, RE runs from the emitter to the
//! negative rail, RC from the collector to the positive rail. With the base near ground the negative rail,
//! less VBE, sets the emitter current; RB is sized against the emitter resistance reflected to the base,
//! (β + 1)·RE, by the rule's stiffness.

use super::junction::{Env, Junction};
use super::Slot;
use super::{Nodes, Resolved, SlotValues, Stage, Targets};
use crate::units::Ohms;

pub(super) fn env(s: &Stage, r: &Resolved) -> Env {
    let (rb, rc, re) = (r.get(Slot::RB), r.get(Slot::RC), r.get(Slot::RE));
    Env {
        a0: s.vee(),
        ab: rb + re,
        ac: re,
        c0: s.vcc() + s.vee(),
        cb: re,
        cc: rc + re,
    }
}

pub(super) fn nodes(s: &Stage, r: &Resolved, j: &Junction) -> Nodes {
    let (rb, rc, re) = (r.get(Slot::RB), r.get(Slot::RC), r.get(Slot::RE));
    let ie = j.ib + j.ic;
    Nodes::new(-j.ib * rb, -s.vee() + ie * re, s.vcc() - j.ic * rc, j.ic)
        .with(Slot::RB, j.ib)
        .with(Slot::RC, j.ic)
        .with(Slot::RE, ie)
}

pub(super) fn ideal(s: &Stage, t: &Targets) -> Result<SlotValues, String> {
    let b = s.betas_at(s.limits.ambient);
    let ie = t.ic.0 * (b.typ + 1.0) / b.typ;
    let vre = t.ve.0 + s.vee();
    if vre <= 0.0 {
        return Err(format!(
            "the negative rail ({}) is smaller than VBE: the emitter cannot be biased from it",
            s.supply_neg.unwrap_or_default()
        ));
    }
    let re = vre / ie;
    let mut v = SlotValues::new();
    v.set(Slot::RC, Ohms(t.vrc.0 / t.ic.0));
    v.set(Slot::RE, Ohms(re));
    v.set(Slot::RB, Ohms((b.min + 1.0) * re / s.rule.stiffness));
    Ok(v)
}
