//! Monte Carlo builds: each build draws every resistor of every network on its own, within its tolerance,
//! and a beta uniform over the transistor's range, then solves the stage at the bench (the ambient
//! temperature), where the ±10 % / ±5 % rule is applied to measured values.
//!
//! The draws come from [`super::rng::Rng`] in a fixed order (slots in report order, members left to right,
//! then beta), so a seed always gives the same builds.

use super::histogram::Histogram;
use super::rng::Rng;
use super::Quantity;
use crate::stage::{Region, SlotNetworks, SlotValues, Stage};
use crate::units::{Amps, Celsius, Ohms, Volts};
use serde::Serialize;
use std::cell::RefCell;

/// How a resistor's value is drawn within its tolerance.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Dist {
    /// Equally likely anywhere within ±tolerance.
    Uniform,
    /// Normal with the tolerance at three standard deviations, cut off at the tolerance.
    Normal,
}

impl Dist {
    /// "uniform" or "normal".
    pub fn name(self) -> &'static str {
        match self {
            Dist::Uniform => "uniform",
            Dist::Normal => "normal",
        }
    }

    /// A relative deviation within ±`tolerance`.
    pub(crate) fn draw(self, rng: &mut Rng, tolerance: f64) -> f64 {
        match self {
            Dist::Uniform => tolerance * rng.symmetric(),
            // Tolerance = 3σ is the usual reading of a tolerance as a process spread (common practice, no
            // source); the cut keeps every draw a part that meets its marking.
            Dist::Normal => tolerance * rng.normal_within(3.0) / 3.0,
        }
    }
}

/// Mean, standard deviation and range of a sample of a quantity.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Summary<T> {
    /// The mean.
    pub mean: T,
    /// The sample standard deviation (n − 1).
    pub sd: T,
    /// The smallest value.
    pub min: T,
    /// The largest value.
    pub max: T,
}

impl<T: Quantity> Summary<T> {
    /// The summary of a sample given in SI base units (NaN for an empty one).
    pub fn of(xs: &[f64]) -> Summary<T> {
        let n = xs.len() as f64;
        let mean = xs.iter().sum::<f64>() / n;
        // Two passes: the deviations are small against the mean, and one pass would lose them to rounding.
        let var = xs.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (n - 1.0).max(1.0);
        Summary {
            mean: T::from_si(mean),
            sd: T::from_si(var.sqrt()),
            min: T::from_si(xs.iter().copied().fold(f64::INFINITY, f64::min)),
            max: T::from_si(xs.iter().copied().fold(f64::NEG_INFINITY, f64::max)),
        }
    }

    /// The standard error of the mean over `n` draws.
    pub fn standard_error(&self, n: usize) -> T {
        T::from_si(self.sd.si() / (n as f64).sqrt())
    }
}

/// What the builds did.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MonteCarlo {
    /// Builds simulated.
    pub runs: usize,
    /// The seed they were drawn from.
    pub seed: u64,
    /// How resistor values were drawn.
    pub dist: Dist,
    /// The temperature the builds were solved at (the ambient: the bench).
    pub temperature: Celsius,
    /// The range beta was drawn from, (min, max), as given at the transistor's reference temperature.
    pub beta: (f64, f64),
    /// Fraction of builds in the active region with IC and VCE both within ±10 % of target.
    pub yield_10: f64,
    /// Likewise within ±5 %.
    pub yield_5: f64,
    /// Fraction of builds in the active region at all.
    pub active: f64,
    /// Collector current.
    pub ic: Summary<Amps>,
    /// Collector-emitter voltage.
    pub vce: Summary<Volts>,
    /// Emitter voltage.
    pub ve: Summary<Volts>,
    /// The builds' IC, amperes.
    pub ic_histogram: Histogram,
    /// The builds' VCE, volts.
    pub vce_histogram: Histogram,
    /// Up to [`CLOUD_POINTS`] of the builds' (VCE, IC), evenly taken, for drawing on the load line.
    #[serde(skip)]
    pub cloud: Vec<(Volts, Amps)>,
}

/// The most builds drawn as the Monte Carlo cloud: enough to show its shape, few enough for a small file.
pub const CLOUD_POINTS: usize = 2000;

/// Runs `runs` builds of the stage from `seed`, binning IC and VCE into `bins` bins.
pub fn monte_carlo(
    stage: &Stage,
    nets: &SlotNetworks,
    runs: usize,
    seed: u64,
    dist: Dist,
    bins: usize,
) -> MonteCarlo {
    let slots: Vec<_> = stage
        .slots()
        .into_iter()
        .filter_map(|s| nets.get(s).map(|n| (s, n)))
        .collect();
    let b = stage.transistor.beta;
    let t = stage.limits.ambient;
    let target = stage.targets();
    let rng = RefCell::new(Rng::seeded(seed));
    // The network visits each member exactly once, left to right, so each member gets its own draw.
    let draw = |m: &crate::network::Member| -> Ohms {
        m.ohms * (1.0 + dist.draw(&mut rng.borrow_mut(), m.tolerance.0))
    };
    let (mut ic, mut vce, mut ve) = (
        Vec::with_capacity(runs),
        Vec::with_capacity(runs),
        Vec::with_capacity(runs),
    );
    let (mut pass10, mut pass5, mut active) = (0usize, 0usize, 0usize);
    for _ in 0..runs {
        let mut values = SlotValues::new();
        for (s, net) in &slots {
            values.set(*s, net.ohms_with(&draw));
        }
        let beta = b.min + (b.max - b.min) * rng.borrow_mut().uniform();
        let op = stage.solve(&values, beta, t);
        let di = (op.ic.0 / target.ic.0 - 1.0).abs();
        let dv = (op.vce.0 / target.vce.0 - 1.0).abs();
        if op.region == Region::Active {
            active += 1;
            let worse = di.max(dv);
            if worse <= 0.10 {
                pass10 += 1;
                if worse <= 0.05 {
                    pass5 += 1;
                }
            }
        }
        ic.push(op.ic.0);
        vce.push(op.vce.0);
        ve.push(op.ve.0);
    }
    let frac = |k: usize| k as f64 / runs.max(1) as f64;
    MonteCarlo {
        runs,
        seed,
        dist,
        temperature: t,
        beta: (b.min, b.max),
        yield_10: frac(pass10),
        yield_5: frac(pass5),
        active: frac(active),
        ic: Summary::of(&ic),
        vce: Summary::of(&vce),
        ve: Summary::of(&ve),
        ic_histogram: Histogram::of(&ic, bins),
        vce_histogram: Histogram::of(&vce, bins),
        cloud: {
            let step = runs.div_ceil(CLOUD_POINTS).max(1);
            (0..runs)
                .step_by(step)
                .map(|k| (Volts(vce[k]), Amps(ic[k])))
                .collect()
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn summary_by_hand() {
        // 2, 4, 4, 4, 5, 5, 7, 9: mean 5, sum of squared deviations 32, sample variance 32/7.
        let s: Summary<f64> = Summary::of(&[2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0]);
        assert_eq!(s.mean, 5.0);
        assert!((s.sd - (32.0f64 / 7.0).sqrt()).abs() < 1e-12);
        assert_eq!((s.min, s.max), (2.0, 9.0));
        assert!((s.standard_error(8) - s.sd / 8f64.sqrt()).abs() < 1e-15);
    }

    #[test]
    fn draws_stay_within_tolerance() {
        let mut r = Rng::seeded(5);
        for dist in [Dist::Uniform, Dist::Normal] {
            for _ in 0..50_000 {
                let d = dist.draw(&mut r, 0.05);
                assert!(d.abs() <= 0.05, "{dist:?} {d}");
            }
        }
    }
}
