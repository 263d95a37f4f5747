//! Sensitivities: how strongly IC and VCE follow each slot's resistance and beta, as logarithmic
//! derivatives d ln X / d ln R (a 1 % rise in R moves X by that many percent), at the nominal build, typical
//! beta and the ambient. Each is multiplied by how far its source can move (half the width of the slot's
//! band, or of beta's range, in ln terms) to say which one dominates the spread.
//!
//! The solver is exact but has no derivative of its own, so the derivative is taken numerically, with the
//! five-point central stencil in ln R (error of order h⁴: below 1e-10 at h = 10⁻³ for these smooth
//! functions). It is one-sided nowhere, so a kink (the edge of saturation) shows as an average of the two
//! slopes rather than as either.

use crate::stage::{Slot, SlotNetworks, SlotValues, Stage};
use crate::units::Celsius;

/// The logarithmic derivatives of IC and VCE with respect to one source, and what they do to the spread.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sensitivity {
    /// d ln(IC) / d ln(source).
    pub ic: f64,
    /// d ln(VCE) / d ln(source).
    pub vce: f64,
    /// Half the width of the source's range, in ln terms (about its relative tolerance).
    pub reach: f64,
    /// |d ln IC| × reach: the relative move of IC this source alone can cause, to first order.
    pub ic_spread: f64,
    /// |d ln VCE| × reach.
    pub vce_spread: f64,
}

impl Sensitivity {
    fn new(ic: f64, vce: f64, reach: f64) -> Sensitivity {
        Sensitivity {
            ic,
            vce,
            reach,
            ic_spread: ic.abs() * reach,
            vce_spread: vce.abs() * reach,
        }
    }
}

/// A cause of spread: a slot's tolerance, or beta's range.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Source {
    /// A slot's resistance.
    Slot(Slot),
    /// The transistor's beta.
    Beta,
}

impl Source {
    /// "R1" … or "beta".
    pub fn name(self) -> &'static str {
        match self {
            Source::Slot(s) => s.name(),
            Source::Beta => "beta",
        }
    }
}

/// The stage's sensitivities.
#[derive(Clone, Debug, PartialEq)]
pub struct Sensitivities {
    /// Each slot of the stage, in report order.
    pub slots: Vec<(Slot, Sensitivity)>,
    /// Beta.
    pub beta: Sensitivity,
    /// The source that moves IC the most.
    pub dominant_ic: Source,
    /// The source that moves VCE the most.
    pub dominant_vce: Source,
}

/// The step in ln R (and ln beta).
const STEP: f64 = 1e-3;

/// d f / dx at 0 by the five-point central stencil.
fn derivative(f: impl Fn(f64) -> f64) -> f64 {
    (-f(2.0 * STEP) + 8.0 * f(STEP) - 8.0 * f(-STEP) + f(-2.0 * STEP)) / (12.0 * STEP)
}

/// The sensitivities of the stage built from `nets`, at typical beta and the ambient.
pub fn sensitivities(stage: &Stage, nets: &SlotNetworks) -> Sensitivities {
    let nominal = nets.values();
    let b = stage.transistor.beta;
    let t: Celsius = stage.limits.ambient;
    let ln_at = |values: &SlotValues, beta: f64| {
        let op = stage.solve(values, beta, t);
        (op.ic.0.ln(), op.vce.0.ln())
    };
    let pair = |f: &dyn Fn(f64) -> (f64, f64)| (derivative(|x| f(x).0), derivative(|x| f(x).1));
    let mut slots = Vec::new();
    for s in stage.slots() {
        let Some(net) = nets.get(s) else { continue };
        let r = nominal.get(s).expect("a slot with a network has a value");
        let (ic, vce) = pair(&|x: f64| {
            let mut v = nominal;
            v.set(s, r * x.exp());
            ln_at(&v, b.typ)
        });
        let (lo, hi) = net.band();
        let reach = 0.5 * ((1.0 + hi).ln() - (1.0 + lo).ln());
        slots.push((s, Sensitivity::new(ic, vce, reach)));
    }
    let (ic, vce) = pair(&|x: f64| ln_at(&nominal, b.typ * x.exp()));
    let beta = Sensitivity::new(ic, vce, 0.5 * (b.max / b.min).ln());
    let dominant = |key: fn(&Sensitivity) -> f64| {
        let mut best = (Source::Beta, key(&beta));
        for (s, x) in &slots {
            // NaN never wins: it means the point has no slope there (cut off).
            if key(x) > best.1 || best.1.is_nan() {
                best = (Source::Slot(*s), key(x));
            }
        }
        best.0
    };
    Sensitivities {
        dominant_ic: dominant(|x| x.ic_spread),
        dominant_vce: dominant(|x| x.vce_spread),
        slots,
        beta,
    }
}
