//! Voltage-divider bias with a split emitter resistor: RE1 stays in the signal path and sets the gain, RE2
//! is bypassed by a capacitor. For DC the two are one resistor, so the divider's solution applies with
//! RE = RE1 + RE2; the AC figures come from the small-signal model: re' = n·VT/IE, gain (RC ∥ RL)/(re' + RE1),
//! input R1 ∥ R2 ∥ (β + 1)(re' + RE1), output RC (the transistor's own output resistance neglected), and the
//! largest undistorted swing from the AC load line.

use super::junction::{Env, Junction};
use super::Slot;
use super::{divider, Nodes, OperatingPoint, Region, Resolved, SlotValues, Stage, Targets, Vbe};
use crate::units::{thermal_voltage, Celsius, Ohms, Volts};

/// Small-signal figures of a split-emitter stage at its operating point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AcFigures {
    /// The emitter's dynamic resistance n·VT/IE.
    pub re_prime: Ohms,
    /// Voltage gain magnitude into the load.
    pub gain: f64,
    /// Input impedance at the base, divider included.
    pub input: Ohms,
    /// Output impedance at the collector.
    pub output: Ohms,
    /// The largest undistorted output swing, peak.
    pub swing: Volts,
}

pub(super) fn env(s: &Stage, r: &Resolved) -> Env {
    divider::env_with(s, r, r.get(Slot::RE1) + r.get(Slot::RE2))
}

pub(super) fn nodes(s: &Stage, r: &Resolved, j: &Junction) -> Nodes {
    let ie = j.ib + j.ic;
    divider::nodes_with(s, r, j, r.get(Slot::RE1) + r.get(Slot::RE2))
        .with(Slot::RE1, ie)
        .with(Slot::RE2, ie)
}

/// n·VT at a temperature: n from the diode law, or 1 for a fixed VBE.
fn nvt(s: &Stage, t: Celsius) -> f64 {
    let n = match s.transistor.vbe {
        Vbe::Fixed(_) => 1.0,
        Vbe::Diode { n, .. } => n,
    };
    n * thermal_voltage(t).0
}

/// The AC load: RC alone, or RC ∥ RL when a load is given.
fn ac_load(s: &Stage, rc: f64) -> f64 {
    s.load.map_or(rc, |rl| rc * rl.0 / (rc + rl.0))
}

/// Voltage gain magnitude into the load at an operating point: 0 outside the active region, where a
/// saturated or cut-off transistor amplifies nothing (the small-signal model holds only in the active
/// region), so a stage off its Q point cannot score its gain target.
pub(super) fn gain(s: &Stage, r: &Resolved, op: &OperatingPoint) -> f64 {
    let ie = op.ie.0;
    if ie <= 0.0 || op.region != Region::Active {
        return 0.0;
    }
    let re_prime = nvt(s, op.temperature) / ie;
    ac_load(s, r.get(Slot::RC)) / (re_prime + r.get(Slot::RE1))
}

pub(super) fn ac(s: &Stage, r: &Resolved, op: &OperatingPoint) -> AcFigures {
    let ie = op.ie.0;
    let re1 = r.get(Slot::RE1);
    let rac = ac_load(s, r.get(Slot::RC));
    let re_prime = if ie > 0.0 {
        nvt(s, op.temperature) / ie
    } else {
        f64::INFINITY
    };
    let rth = {
        let (r1, r2) = (r.get(Slot::R1), r.get(Slot::R2));
        r1 * r2 / (r1 + r2)
    };
    let base = (op.beta + 1.0) * (re_prime + re1);
    let input = if base.is_finite() {
        rth * base / (rth + base)
    } else {
        rth
    };
    // Along the AC load line the collector current can fall by all of ICQ before cutoff, and VCE can fall
    // by VCEQ − vce_sat before saturation, spread over RC∥RL + RE1 of which RC∥RL is the output.
    let swing = if op.region == Region::Active {
        let to_cutoff = op.ic.0 * rac;
        let to_saturation = (op.vce.0 - s.transistor.vce_sat.0) * rac / (rac + re1);
        to_cutoff.min(to_saturation).max(0.0)
    } else {
        0.0
    };
    AcFigures {
        re_prime: Ohms(re_prime),
        gain: gain(s, r, op),
        input: Ohms(input),
        output: Ohms(r.get(Slot::RC)),
        swing: Volts(swing),
    }
}

pub(super) fn ideal(s: &Stage, t: &Targets) -> Result<SlotValues, String> {
    let (mut v, re) = divider::ideal_with(s, t)?;
    let g = t
        .gain
        .ok_or("divider-split needs a gain target: set rule.gain")?;
    let b = s.betas_at(s.limits.ambient);
    let ie = t.ic.0 * (b.typ + 1.0) / b.typ;
    let re_prime = nvt(s, s.limits.ambient) / ie;
    let rac = ac_load(s, t.vrc.0 / t.ic.0);
    let re1 = rac / g - re_prime;
    if re1 <= 0.0 {
        return Err(format!(
            "a gain of {g} is more than this operating point can give ((RC∥RL)/re' = {:.1}): lower rule.gain or raise the collector current",
            rac / re_prime
        ));
    }
    let re2 = re - re1;
    if re2 <= 0.0 {
        return Err(format!(
            "a gain of {g} needs RE1 = {} but the whole emitter resistance is only {}: raise rule.gain or rule.vre",
            crate::notation::code(Ohms(re1)),
            crate::notation::code(Ohms(re))
        ));
    }
    v.set(Slot::RE1, Ohms(re1));
    v.set(Slot::RE2, Ohms(re2));
    Ok(v)
}
