//! Worst case by corners: every slot's network at the low and at the high end of its band, beta at its
//! minimum and maximum, and the temperature at both ends of its range and at the ambient.
//!
//! The operating point depends on a network only through its resistance, and a series or parallel
//! network's resistance rises with every member's value, so the resistances its independently varying
//! members can reach are exactly its band, from all members low to all members high ([`Network::band`]: a
//! pair of 1 % parts stays a 1 % network, not a 2 % one). Each quantity here moves one way with each slot's
//! resistance while the others stay put (each is a ratio of sums of resistances), so its extremes over the
//! box of slot bands sit at corners of that box; the tests check this against enumerating every member's
//! two ends, and against Monte Carlo builds. Corners are realised physically, each member at its own end,
//! so the dissipation of every member is that of a part that could really be fitted.

use super::Quantity;
use crate::network::Network;
use crate::stage::{Region, Slot, SlotNetworks, SlotValues, Stage, Topology};
use crate::units::{Amps, Celsius, Ohms, Volts, Watts};

/// One corner: which end of its band each slot is at, the beta and the temperature.
#[derive(Clone, Debug, PartialEq)]
pub struct Corner {
    /// Each slot of the stage and whether it is at its high end.
    pub high: Vec<(Slot, bool)>,
    /// Beta, as given at the transistor's reference temperature.
    pub beta: f64,
    /// The temperature.
    pub temperature: Celsius,
}

/// A value at an extreme, where the transistor was there, and the corner that gave it.
#[derive(Clone, Debug, PartialEq)]
pub struct Extreme<T> {
    /// The value.
    pub value: T,
    /// The region at that corner.
    pub region: Region,
    /// The corner.
    pub corner: Corner,
}

/// The lowest and highest value of a quantity over the corners.
#[derive(Clone, Debug, PartialEq)]
pub struct Extremes<T> {
    /// The lowest.
    pub min: Extreme<T>,
    /// The highest.
    pub max: Extreme<T>,
}

impl<T: Quantity> Extremes<T> {
    /// (min, max).
    pub fn pair(&self) -> (T, T) {
        (self.min.value, self.max.value)
    }

    /// Whether `x` lies within [min, max], allowing `rel` relative rounding.
    pub fn brackets(&self, x: T, rel: f64) -> bool {
        let (lo, hi, x) = (self.min.value.si(), self.max.value.si(), x.si());
        let slack = rel * lo.abs().max(hi.abs());
        x >= lo - slack && x <= hi + slack
    }
}

/// The worst case of a built stage.
#[derive(Clone, Debug, PartialEq)]
pub struct Worst {
    /// How many corners were solved.
    pub corners: usize,
    /// The temperatures the corners were solved at, lowest first.
    pub temperatures: Vec<Celsius>,
    /// Collector current.
    pub ic: Extremes<Amps>,
    /// Collector-emitter voltage.
    pub vce: Extremes<Volts>,
    /// Emitter voltage.
    pub ve: Extremes<Volts>,
    /// The divider's stiffness, bias current over IB (topologies with a stiffness rule).
    pub stiffness: Option<Extremes<f64>>,
    /// The transistor's dissipation VCE·IC + VBE·IB.
    pub transistor_power: Extremes<Watts>,
    /// The hottest resistor's dissipation over its derated rating (1 means at the limit).
    pub resistor_load: Extremes<f64>,
    /// The stiffness the rule asks for, when it applies.
    pub stiffness_limit: Option<f64>,
    /// The transistor's allowed dissipation at the hottest temperature solved, if its rating is known.
    pub power_limit: Option<Watts>,
}

/// Each slot's resistance at the low and high end of its band, with every member at its own end.
#[derive(Clone, Debug)]
pub(crate) struct Bands {
    /// (slot, its network with every member low, its network with every member high).
    pub slots: Vec<(Slot, Network, Network)>,
}

/// The network with each member moved to the low or high end of its own tolerance.
fn at_end(net: &Network, high: bool) -> Network {
    let mut n = net.clone();
    for m in n.members_mut() {
        let f = if high {
            1.0 + m.tolerance.0
        } else {
            1.0 - m.tolerance.0
        };
        m.ohms = m.ohms * f;
    }
    n
}

impl Bands {
    /// The bands of the stage's slots that have a network (a slot without one stays open, as in the solver).
    pub(crate) fn of(stage: &Stage, nets: &SlotNetworks) -> Bands {
        Bands {
            slots: stage
                .slots()
                .into_iter()
                .filter_map(|s| nets.get(s).map(|n| (s, at_end(n, false), at_end(n, true))))
                .collect(),
        }
    }

    /// How many slot corners there are.
    pub(crate) fn count(&self) -> usize {
        1 << self.slots.len()
    }

    /// The slot values at a corner: bit k of `mask` set puts slot k at its high end.
    pub(crate) fn values(&self, mask: usize) -> SlotValues {
        self.slots
            .iter()
            .enumerate()
            .map(|(k, (s, lo, hi))| {
                (
                    *s,
                    if mask >> k & 1 == 1 {
                        hi.ohms()
                    } else {
                        lo.ohms()
                    },
                )
            })
            .collect()
    }

    fn network(&self, k: usize, mask: usize) -> &Network {
        let (_, lo, hi) = &self.slots[k];
        if mask >> k & 1 == 1 {
            hi
        } else {
            lo
        }
    }

    fn corner(&self, mask: usize, beta: f64, temperature: Celsius) -> Corner {
        Corner {
            high: self
                .slots
                .iter()
                .enumerate()
                .map(|(k, (s, _, _))| (*s, mask >> k & 1 == 1))
                .collect(),
            beta,
            temperature,
        }
    }
}

/// The temperatures to solve at: both ends of the range and the ambient, lowest first, each once.
pub(crate) fn temperatures(stage: &Stage, range: (Celsius, Celsius)) -> Vec<Celsius> {
    let mut t = vec![range.0, range.1, stage.limits.ambient];
    t.sort_by(|a, b| a.0.total_cmp(&b.0));
    t.dedup();
    t
}

/// The stiffness figure at one solved corner, as the stage's checks define it: the current in R2 over IB
/// for a divider, the reflected emitter resistance (β + 1)·RE over RB for a dual supply.
pub(crate) fn stiffness(
    stage: &Stage,
    values: &SlotValues,
    op: &crate::stage::OperatingPoint,
) -> Option<f64> {
    match stage.topology {
        Topology::Divider | Topology::DividerSplit => {
            let i2 = op.divider_current.map_or(0.0, |i| i.0);
            Some(if op.ib.0 > 0.0 {
                i2 / op.ib.0
            } else {
                f64::INFINITY
            })
        }
        Topology::DualSupply => {
            let (re, rb) = (values.get(Slot::RE)?, values.get(Slot::RB)?);
            Some((op.beta + 1.0) * re.0 / rb.0)
        }
        _ => None,
    }
}

/// The running extremes of one quantity, in SI base units, with the region and corner of each.
struct Tracker {
    best: Option<(Extreme<f64>, Extreme<f64>)>,
}

impl Tracker {
    fn new() -> Tracker {
        Tracker { best: None }
    }

    fn see(&mut self, value: f64, region: Region, corner: impl Fn() -> Corner) {
        if value.is_nan() {
            return;
        }
        let here = || Extreme {
            value,
            region,
            corner: corner(),
        };
        match &mut self.best {
            None => self.best = Some((here(), here())),
            Some((lo, hi)) => {
                if value < lo.value {
                    *lo = here();
                }
                if value > hi.value {
                    *hi = here();
                }
            }
        }
    }

    /// The extremes in the quantity's own type (NaN, at no corner, when every value was NaN).
    fn done<T: Quantity>(self) -> Extremes<T> {
        let unit = |e: Extreme<f64>| Extreme {
            value: T::from_si(e.value),
            region: e.region,
            corner: e.corner,
        };
        let (lo, hi) = self.best.unwrap_or_else(|| {
            let none = Extreme {
                value: f64::NAN,
                region: Region::Cutoff,
                corner: Corner {
                    high: Vec::new(),
                    beta: f64::NAN,
                    temperature: Celsius(f64::NAN),
                },
            };
            (none.clone(), none)
        });
        Extremes {
            min: unit(lo),
            max: unit(hi),
        }
    }
}

/// The worst case of the stage built from `nets`, over the temperature range `temps` (and the ambient).
pub fn worst_case(stage: &Stage, nets: &SlotNetworks, temps: (Celsius, Celsius)) -> Worst {
    let bands = Bands::of(stage, nets);
    let temperatures = temperatures(stage, temps);
    let b = stage.transistor.beta;
    let betas: Vec<f64> = if b.min == b.max {
        vec![b.min]
    } else {
        vec![b.min, b.max]
    };
    let (mut ic, mut vce, mut ve) = (Tracker::new(), Tracker::new(), Tracker::new());
    let (mut stiff, mut tp, mut load) = (Tracker::new(), Tracker::new(), Tracker::new());
    let mut corners = 0;
    for mask in 0..bands.count() {
        let values = bands.values(mask);
        for &t in &temperatures {
            for &beta in &betas {
                corners += 1;
                let op = stage.solve(&values, beta, t);
                let corner = || bands.corner(mask, beta, t);
                ic.see(op.ic.0, op.region, corner);
                vce.see(op.vce.0, op.region, corner);
                ve.see(op.ve.0, op.region, corner);
                if let Some(s) = stiffness(stage, &values, &op) {
                    stiff.see(s, op.region, corner);
                }
                tp.see(op.transistor_power().0, op.region, corner);
                let mut hottest: f64 = 0.0;
                for k in 0..bands.slots.len() {
                    let slot = bands.slots[k].0;
                    let net = bands.network(k, mask);
                    let i = op.current(slot).unwrap_or(Amps(0.0)).abs();
                    for (m, p) in net.members().iter().zip(net.member_powers(i)) {
                        hottest = hottest.max(p.0 / (stage.limits.derate * m.power.0));
                    }
                }
                load.see(hottest, op.region, corner);
            }
        }
    }
    Worst {
        corners,
        ic: ic.done(),
        vce: vce.done(),
        ve: ve.done(),
        stiffness: stage.topology.has_stiffness().then(|| stiff.done()),
        transistor_power: tp.done(),
        resistor_load: load.done(),
        stiffness_limit: stage
            .topology
            .has_stiffness()
            .then_some(stage.rule.stiffness),
        power_limit: temperatures
            .last()
            .and_then(|t| stage.transistor.power_limit(*t)),
        temperatures,
    }
}

/// The largest relative deviation of IC, VCE and VE from their targets over every corner (tolerance, beta
/// min and max, both ends of `temps` and the ambient), together with the deviations that do not move with
/// the operating point, RC from RL and (split emitter) the gain, taken at nominal as the stage's error
/// takes them. It is the stage's error made robust, for choosing between candidate designs: about
/// 2ˢ × 2 × 3 solves for s slots and no allocation beyond the bands, so a few hundred variants cost
/// milliseconds. A NaN anywhere counts as infinitely wrong.
pub fn worst_error(stage: &Stage, nets: &SlotNetworks, temps: (Celsius, Celsius)) -> f64 {
    // Only the slot resistances matter here, so the bands are taken as numbers, not as networks.
    let slots: Vec<(Slot, Ohms, Ohms)> = stage
        .slots()
        .into_iter()
        .filter_map(|s| {
            nets.get(s).map(|n| {
                let lo = n.ohms_with(&|m| m.ohms * (1.0 - m.tolerance.0));
                let hi = n.ohms_with(&|m| m.ohms * (1.0 + m.tolerance.0));
                (s, lo, hi)
            })
        })
        .collect();
    let target = stage.targets();
    let nominal = stage.deviations(&nets.values());
    let mut worst = [nominal.rc, nominal.gain]
        .into_iter()
        .flatten()
        .fold(0.0_f64, |m, d| {
            if d.is_nan() {
                f64::INFINITY
            } else {
                m.max(d.abs())
            }
        });
    let temperatures = temperatures(stage, temps);
    let b = stage.transistor.beta;
    let rel = |a: f64, t: f64| (a / t - 1.0).abs();
    for mask in 0..(1usize << slots.len()) {
        let mut values = SlotValues::new();
        for (k, (s, lo, hi)) in slots.iter().enumerate() {
            values.set(*s, if mask >> k & 1 == 1 { *hi } else { *lo });
        }
        for &t in &temperatures {
            for beta in [b.min, b.max] {
                let op = stage.solve(&values, beta, t);
                let mut e = rel(op.ic.0, target.ic.0).max(rel(op.vce.0, target.vce.0));
                if target.ve.0 != 0.0 {
                    e = e.max(rel(op.ve.0, target.ve.0));
                }
                if e.is_nan() {
                    return f64::INFINITY;
                }
                worst = worst.max(e);
            }
        }
    }
    worst
}

/// Every member's end as a corner, 2ᵐ for m members: the literal enumeration the slot-band corners stand
/// for, kept for the tests that prove the two agree.
#[cfg(test)]
pub(crate) fn member_corner_extremes(
    stage: &Stage,
    nets: &SlotNetworks,
    temps: (Celsius, Celsius),
) -> [(f64, f64); 3] {
    let slots = stage.slots();
    let sizes: Vec<usize> = slots
        .iter()
        .map(|s| nets.get(*s).map_or(0, |n| n.part_count()))
        .collect();
    let total: usize = sizes.iter().sum();
    let b = stage.transistor.beta;
    let mut out = [(f64::INFINITY, f64::NEG_INFINITY); 3];
    for mask in 0..(1usize << total) {
        let mut bit = 0;
        let mut values = SlotValues::new();
        for s in &slots {
            if let Some(n) = nets.get(*s) {
                let mut net = n.clone();
                for m in net.members_mut() {
                    let high = mask >> bit & 1 == 1;
                    bit += 1;
                    m.ohms = m.ohms
                        * if high {
                            1.0 + m.tolerance.0
                        } else {
                            1.0 - m.tolerance.0
                        };
                }
                values.set(*s, net.ohms());
            }
        }
        for t in temperatures(stage, temps) {
            for beta in [b.min, b.max] {
                let op = stage.solve(&values, beta, t);
                for (k, x) in [op.ic.0, op.vce.0, op.ve.0].into_iter().enumerate() {
                    out[k].0 = out[k].0.min(x);
                    out[k].1 = out[k].1.max(x);
                }
            }
        }
    }
    out
}
