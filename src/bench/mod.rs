//! The bench: after a stage is built, compare what the meter reads at the base, emitter and collector with
//! what the design predicts, judge the build, infer the transistor's beta where the readings allow, and rank
//! the build faults that would explain a bad reading.
//!
//! - **Judgement.** Each reading's deviation from the prediction at typical beta is relative to the
//!   prediction, with a floor of [`FLOOR`] so that a node meant to sit at 0 V is not judged on millivolts.
//!   Within ±5 % is good, within ±10 % acceptable, beyond that a fault (common practice, no source: the
//!   "within 10 % of calculated" rule of the trade, with a tighter band for a build that needs no thought).
//! - **Beta.** The stage as designed is fitted to the readings over beta from 1 to 10 000. The fit's spread
//!   over the parts' tolerances and a meter's resolution gives a range; when the range is narrower than a
//!   factor of [`BETA_RANGE_MAX`] the estimate is reported (a stiff divider hides beta, which is its point).
//! - **Faults.** Every fault of [`faults::catalogue`] is simulated with the exact DC model, its beta fitted
//!   over the transistor's range, and scored by how well its node voltages match the readings: score =
//!   exp(−½·mean(eᵢ²)) with eᵢ the reading's difference from the prediction over σᵢ = 5 % of the larger of the
//!   two plus 50 mV (common practice, no source: the good band, plus a VBE model error and a meter's last
//!   digit on low readings). 1 is a perfect match; 0.6 is about 5 % off on every node. Faults whose
//!   predictions agree within 1 mV on every node cannot be told apart by a meter and are listed together.
//!
//! Relies on [`crate::stage`] (the solve) and [`faults`] (what each fault does).

pub mod circuit;
pub mod faults;
pub mod next;

pub use faults::{Fault, Nodes, Place};

use crate::notation::parse_volts;
use crate::stage::{Polarity, Slot, SlotNetworks, Stage, Topology};
use crate::units::Volts;

/// Deviations are relative to the prediction, but never to less than this (volts).
pub const FLOOR: f64 = 0.1;
/// Within this relative deviation on every node a build is good.
pub const GOOD: f64 = 0.05;
/// Within this relative deviation on every node a build is acceptable.
pub const ACCEPTABLE: f64 = 0.10;
/// A beta estimate is reported only when its range spans less than this factor.
pub const BETA_RANGE_MAX: f64 = 4.0;
/// How many explanations a verification lists at most.
pub const TOP: usize = 5;
/// Scores below this explain nothing worth listing.
pub const MIN_SCORE: f64 = 0.01;

/// A bench reading that could not be read.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum BenchError {
    /// A reading is not NAME=VOLTS.
    #[error("--measured: \"{}\" is not a reading; expected NODE=VOLTS with NODE one of VB, VE, VC, as in VB=2.05,VE=1.41,VC=6.3", crate::notation::excerpt(.text))]
    Shape {
        /// The text as given.
        text: String,
    },
    /// The node is not VB, VE or VC.
    #[error("--measured: \"{}\" is not a node; expected VB, VE or VC", crate::notation::excerpt(.node))]
    Node {
        /// The node as given.
        node: String,
    },
    /// The value is not a voltage.
    #[error("--measured: {node}={text}: {reason}")]
    Value {
        /// The node.
        node: String,
        /// The value as given.
        text: String,
        /// Why it was refused.
        reason: String,
    },
    /// A node was given twice.
    #[error("--measured: {node} is given twice; give each of VB, VE and VC at most once")]
    Twice {
        /// The node.
        node: String,
    },
    /// Nothing was given.
    #[error(
        "--measured: no readings; give at least one of VB, VE and VC, as in VB=2.05,VE=1.41,VC=6.3"
    )]
    Empty,
}

/// Voltages read at the bench, each from ground, as the meter showed them (a PNP stage's may be negative).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Measured {
    /// At the base.
    pub vb: Option<Volts>,
    /// At the emitter.
    pub ve: Option<Volts>,
    /// At the collector.
    pub vc: Option<Volts>,
}

/// The three nodes, in report order.
pub const NODES: [&str; 3] = ["VB", "VE", "VC"];

impl Measured {
    /// Reads `VB=2.05,VE=1.41,VC=6.3` (any case, any order, units optional: `6.3V`, `650mV`).
    pub fn parse(text: &str) -> Result<Measured, BenchError> {
        let mut m = Measured::default();
        for item in text.split(',').map(str::trim).filter(|s| !s.is_empty()) {
            let (node, value) = item.split_once('=').ok_or_else(|| BenchError::Shape {
                text: item.to_string(),
            })?;
            let node = node.trim();
            let slot = match node.to_ascii_uppercase().as_str() {
                "VB" => &mut m.vb,
                "VE" => &mut m.ve,
                "VC" => &mut m.vc,
                _ => {
                    return Err(BenchError::Node {
                        node: node.to_string(),
                    })
                }
            };
            if slot.is_some() {
                return Err(BenchError::Twice {
                    node: node.to_ascii_uppercase(),
                });
            }
            let v = parse_volts(value.trim()).map_err(|e| BenchError::Value {
                node: node.to_ascii_uppercase(),
                text: value.trim().to_string(),
                reason: e.to_string(),
            })?;
            // No node of a stage sits beyond the largest rail a design file takes (1 kV): a reading past it
            // is a slip of the keyboard, not a fault to diagnose.
            if v.0.abs() > 1e3 {
                return Err(BenchError::Value {
                    node: node.to_ascii_uppercase(),
                    text: value.trim().to_string(),
                    reason: "a reading beyond ±1 kV cannot come from a bias network; expected the meter's reading in volts from ground, such as 2.05".into(),
                });
            }
            *slot = Some(v);
        }
        if m.vb.is_none() && m.ve.is_none() && m.vc.is_none() {
            return Err(BenchError::Empty);
        }
        Ok(m)
    }

    /// The readings as an array in [`NODES`] order.
    pub fn as_array(&self) -> [Option<f64>; 3] {
        [self.vb, self.ve, self.vc].map(|v| v.map(|v| v.0))
    }

    /// The readings in the stage model's NPN frame, taking them as a meter reads them from the circuit's
    /// real ground ([`Stage::mirror`]).
    pub fn in_npn_frame(&self, stage: &Stage) -> Measured {
        let map = |v: Option<Volts>| v.map(|v| stage.mirror(v));
        Measured {
            vb: map(self.vb),
            ve: map(self.ve),
            vc: map(self.vc),
        }
    }

    /// The readings taken as magnitudes of the NPN mirror (from the emitter-side rail, signs dropped): how
    /// biasfit took a PNP stage's readings before it knew where the stage sits.
    pub fn as_magnitudes(&self) -> Measured {
        let map = |v: Option<Volts>| v.map(|v| v.abs());
        Measured {
            vb: map(self.vb),
            ve: map(self.ve),
            vc: map(self.vc),
        }
    }
}

/// How the build is judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    /// Every reading within ±5 %.
    Good,
    /// Every reading within ±10 %.
    Acceptable,
    /// A reading beyond ±10 %.
    Fault,
}

impl Verdict {
    /// "good", "acceptable" or "fault".
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Good => "good",
            Verdict::Acceptable => "acceptable",
            Verdict::Fault => "fault",
        }
    }
}

/// The beta the readings point to.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BetaEstimate {
    /// The best fit, when the range is narrow enough to be worth stating.
    pub value: Option<f64>,
    /// The best fit, whether or not it is pinned down.
    pub fit: f64,
    /// The range the readings allow, given the parts' tolerances and the meter's resolution.
    pub range: (f64, f64),
}

/// One explanation of the readings: a fault, how well it matches, and what it predicts.
#[derive(Clone, Debug, PartialEq)]
pub struct Explanation {
    /// The fault.
    pub fault: Fault,
    /// How well its prediction matches the readings, 0 to 1.
    pub score: f64,
    /// The beta (or reverse beta) at the best match.
    pub beta: f64,
    /// The node voltages it predicts at that beta (NPN frame).
    pub predicted: Nodes,
    /// Other faults that predict the same voltages within 1 mV: a meter cannot tell them apart.
    pub alike: Vec<Fault>,
}

/// The outcome of comparing a build with its design.
#[derive(Clone, Debug, PartialEq)]
pub struct Verification {
    /// The readings, in the NPN frame.
    pub measured: Measured,
    /// Whether the readings were taken as the NPN mirror's magnitudes rather than as voltages from real
    /// ground (a PNP stage's readings given the old way, which matched the design better so).
    pub magnitudes: bool,
    /// The prediction at typical beta and ambient (NPN frame).
    pub predicted: Nodes,
    /// The predictions at min and max beta, for the range a good build may show.
    pub predicted_min_beta: Nodes,
    /// See `predicted_min_beta`.
    pub predicted_max_beta: Nodes,
    /// Each reading's relative deviation from the prediction (VB, VE, VC; None where not measured).
    pub deviations: [Option<f64>; 3],
    /// The judgement.
    pub verdict: Verdict,
    /// The beta the readings point to, when the stage as designed can explain them.
    pub beta: Option<BetaEstimate>,
    /// How well the stage as designed (beta within its range) matches the readings.
    pub as_built_score: f64,
    /// Faults that explain the readings better than the design does, best first.
    pub explanations: Vec<Explanation>,
    /// When the best explanations are tied, the one further measurement that separates them best.
    pub next: Option<next::NextMeasurement>,
}

fn node_array(n: &Nodes) -> [f64; 3] {
    [n.vb.0, n.ve.0, n.vc.0]
}

/// A reading's relative deviation from a prediction, with the [`FLOOR`].
pub fn deviation(measured: f64, predicted: f64) -> f64 {
    (measured - predicted) / predicted.abs().max(FLOOR)
}

/// How well predicted node voltages match the readings (see the module notes), 0 to 1.
pub fn score(measured: &Measured, predicted: &Nodes) -> f64 {
    let pairs: Vec<(f64, f64)> = measured
        .as_array()
        .iter()
        .zip(node_array(predicted))
        .filter_map(|(m, p)| m.map(|m| (m, p)))
        .collect();
    score_pairs(&pairs)
}

/// How well predictions match readings, as (measured, predicted) pairs (see the module notes), 0 to 1.
pub fn score_pairs(pairs: &[(f64, f64)]) -> f64 {
    if pairs.is_empty() {
        return 0.0;
    }
    let sum: f64 = pairs
        .iter()
        .map(|(m, p)| {
            let sigma = 0.05 * m.abs().max(p.abs()) + 0.05;
            let e = (m - p) / sigma;
            if e.is_finite() {
                e * e
            } else {
                1e6
            }
        })
        .sum();
    (-0.5 * sum / pairs.len() as f64).exp()
}

/// The weighted misfit used to estimate beta: the readings' differences over a meter's resolution, 0.5 %
/// of the reading plus 10 mV (common practice, no source: a 3½-digit meter on its 20 V range).
fn misfit(measured: &Measured, predicted: &Nodes) -> f64 {
    let p = node_array(predicted);
    measured
        .as_array()
        .iter()
        .zip(p)
        .filter_map(|(m, p)| m.map(|m| ((m - p) / (0.005 * m.abs() + 0.01)).powi(2)))
        .map(|e| if e.is_finite() { e } else { 1e12 })
        .sum()
}

/// Minimises `f` over ln β in [ln lo, ln hi]: a log grid, then a golden-section search around the best
/// grid point (the misfit is smooth but may have more than one dip, so the grid comes first).
fn minimise(lo: f64, hi: f64, f: &dyn Fn(f64) -> f64) -> (f64, f64) {
    let (a, b) = (lo.ln(), hi.ln());
    if b <= a {
        return (lo, f(lo));
    }
    const GRID: usize = 48;
    let step = (b - a) / GRID as f64;
    let mut best = (a, f(lo));
    for k in 1..=GRID {
        let x = a + step * k as f64;
        let v = f(x.exp());
        if v < best.1 {
            best = (x, v);
        }
    }
    let (mut l, mut r) = ((best.0 - step).max(a), (best.0 + step).min(b));
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let (mut x1, mut x2) = (r - g * (r - l), l + g * (r - l));
    let (mut f1, mut f2) = (f(x1.exp()), f(x2.exp()));
    for _ in 0..40 {
        if f1 <= f2 {
            r = x2;
            x2 = x1;
            f2 = f1;
            x1 = r - g * (r - l);
            f1 = f(x1.exp());
        } else {
            l = x1;
            x1 = x2;
            f1 = f2;
            x2 = l + g * (r - l);
            f2 = f(x2.exp());
        }
    }
    let (x, v) = if f1 <= f2 { (x1, f1) } else { (x2, f2) };
    if v < best.1 {
        (x.exp(), v)
    } else {
        (best.0.exp(), best.1)
    }
}

/// The best match of a hypothesis (None: as designed) over its beta range: (score, beta, prediction). The
/// fault's slot values are worked out once; only the solve runs for each beta tried.
pub(crate) fn best_match(
    stage: &Stage,
    prepared: &faults::Prepared,
    fault: Option<&Fault>,
    measured: &Measured,
) -> (f64, f64, Nodes) {
    let (lo, hi) = faults::beta_range(stage, fault);
    let values = prepared.values(fault);
    let (beta, _) = minimise(lo, hi, &|b| {
        -score(measured, &faults::nodes(stage, values.as_ref(), b))
    });
    let nodes = faults::nodes(stage, values.as_ref(), beta);
    (score(measured, &nodes), beta, nodes)
}

/// The widest beta [`estimate_beta`] searches.
const BETA_SEARCH: (f64, f64) = (1.0, 10_000.0);

/// Fits beta to the readings with the stage as designed, and bounds it by refitting with each slot at its
/// tolerance limits and each reading moved by the meter's resolution (the shifts in ln β add, worst case).
fn estimate_beta(stage: &Stage, nets: &SlotNetworks, measured: &Measured) -> BetaEstimate {
    let fit_with = |nets: &SlotNetworks, m: &Measured| {
        let values = nets.values();
        minimise(BETA_SEARCH.0, BETA_SEARCH.1, &|b| {
            misfit(m, &faults::nodes(stage, Some(&values), b))
        })
        .0
    };
    let fit = fit_with(nets, measured);
    // Each slot at its band's ends, and each reading one resolution step either way: the largest shift of
    // ln β each way, added over the causes (worst case, as the tolerance bands are).
    let mut shifts_up = 0.0;
    let mut shifts_down = 0.0;
    for slot in stage.slots() {
        let Some(net) = nets.get(slot) else { continue };
        let (mut u, mut d) = (0.0_f64, 0.0_f64);
        for sign in [-1.0, 1.0] {
            let mut moved = nets.clone();
            moved.set(slot, at_limit(net, sign));
            let db = (fit_with(&moved, measured) / fit).ln();
            u = u.max(db);
            d = d.min(db);
        }
        shifts_up += u;
        shifts_down += d;
    }
    let readings = measured.as_array();
    for (k, reading) in readings.iter().enumerate() {
        let Some(v) = *reading else { continue };
        let res = 0.005 * v.abs() + 0.01;
        let (mut u, mut d) = (0.0_f64, 0.0_f64);
        for sign in [-1.0, 1.0] {
            let mut m = *measured;
            let moved = Some(Volts(v + sign * res));
            match k {
                0 => m.vb = moved,
                1 => m.ve = moved,
                _ => m.vc = moved,
            }
            let db = (fit_with(nets, &m) / fit).ln();
            u = u.max(db);
            d = d.min(db);
        }
        shifts_up += u;
        shifts_down += d;
    }
    let range = (
        (fit * shifts_down.exp()).max(BETA_SEARCH.0),
        (fit * shifts_up.exp()).min(BETA_SEARCH.1),
    );
    let at_edge = range.1 >= BETA_SEARCH.1 * 0.999 || fit >= BETA_SEARCH.1 * 0.999;
    let narrow = range.1 / range.0 <= BETA_RANGE_MAX && !at_edge;
    BetaEstimate {
        value: narrow.then_some(fit),
        fit,
        range,
    }
}

/// The network with every member at its tolerance limit: low for `sign` −1, high for +1.
fn at_limit(net: &crate::network::Network, sign: f64) -> crate::network::Network {
    let mut n = net.clone();
    for m in n.members_mut() {
        m.ohms = m.ohms * (1.0 + sign * m.tolerance.0);
    }
    n
}

/// Every fault of the catalogue, matched against readings in the NPN frame, best first, with faults that
/// predict the same voltages (within 1 mV on every node) folded into the first of them.
///
/// Linear in the members: the build is prepared once ([`faults::Prepared`]), each fault's values then cost
/// the network's depth, and the folding looks only at the neighbouring 1 mV cells of a grid instead of at
/// every explanation kept so far.
pub fn rank(stage: &Stage, nets: &SlotNetworks, measured: &Measured) -> Vec<Explanation> {
    rank_prepared(stage, nets, &faults::Prepared::new(stage, nets), measured)
}

fn rank_prepared(
    stage: &Stage,
    nets: &SlotNetworks,
    prepared: &faults::Prepared,
    measured: &Measured,
) -> Vec<Explanation> {
    let mut found: Vec<Explanation> = faults::catalogue(stage, nets)
        .into_iter()
        .filter(|f| !is_null(nets, f))
        .map(|f| {
            let (score, beta, predicted) = best_match(stage, prepared, Some(&f), measured);
            Explanation {
                fault: f,
                score,
                beta,
                predicted,
                alike: Vec::new(),
            }
        })
        .collect();
    // Best first; ties keep the catalogue's order (a stable sort).
    found.sort_by(|a, b| b.score.total_cmp(&a.score));
    fold_alike(found)
}

/// Folds each explanation into the first kept one whose prediction lies within [`ALIKE`] on every node, as
/// a scan of every kept one would, but looking only at the kept ones in the 27 grid cells (of side
/// [`ALIKE`]) around it: two predictions within [`ALIKE`] on every node lie in neighbouring cells.
fn fold_alike(found: Vec<Explanation>) -> Vec<Explanation> {
    use std::collections::HashMap;
    let cell = |n: &Nodes| node_array(n).map(|v| (v / ALIKE).floor() as i64);
    let mut merged: Vec<Explanation> = Vec::new();
    let mut grid: HashMap<[i64; 3], Vec<usize>> = HashMap::new();
    for e in found {
        let p = node_array(&e.predicted);
        let same = if p.iter().all(|v| v.is_finite()) {
            let c = cell(&e.predicted);
            let mut first: Option<usize> = None;
            for d0 in -1..=1 {
                for d1 in -1..=1 {
                    for d2 in -1..=1 {
                        let key = [c[0] + d0, c[1] + d1, c[2] + d2];
                        for &k in grid.get(&key).into_iter().flatten() {
                            let close = node_array(&merged[k].predicted)
                                .iter()
                                .zip(p)
                                .all(|(a, b)| (a - b).abs() <= ALIKE);
                            if close && first.is_none_or(|f| k < f) {
                                first = Some(k);
                            }
                        }
                    }
                }
            }
            first
        } else {
            // A prediction that is not a number matches nothing, as in the plain comparison.
            None
        };
        match same {
            Some(k) => merged[k].alike.push(e.fault),
            None => {
                if p.iter().all(|v| v.is_finite()) {
                    grid.entry(cell(&e.predicted))
                        .or_default()
                        .push(merged.len());
                }
                merged.push(e);
            }
        }
    }
    merged
}

/// Predictions closer than this on every node (volts) cannot be told apart by a meter.
const ALIKE: f64 = 1e-3;

/// Compares bench readings with the design of a built stage.
pub fn verify(stage: &Stage, nets: &SlotNetworks, readings: &Measured) -> Verification {
    let b = stage.transistor.beta;
    let predicted = faults::simulate(stage, nets, None, b.typ);
    let prepared = faults::Prepared::new(stage, nets);
    let real = readings.in_npn_frame(stage);
    // The stage as designed, and every fault, against a reading of the build.
    let explain = |m: &Measured| {
        let as_built = best_match(stage, &prepared, None, m).0;
        let ranked = rank_prepared(stage, nets, &prepared, m);
        let best = ranked.first().map_or(as_built, |e| e.score.max(as_built));
        (as_built, ranked, best)
    };
    let (measured, magnitudes, (as_built_score, ranked, _)) = {
        let on_real = explain(&real);
        let old = readings.as_magnitudes();
        if stage.polarity == Polarity::Pnp && stage.topology != Topology::DualSupply && old != real
        {
            // A PNP stage's readings once had to be given as its mirror's magnitudes. Both ways are still
            // understood: the one that the design or a fault explains better is taken (on a negative rail a
            // magnitude has the wrong sign for a real reading; on a positive rail VE from ground is the
            // supply less VE from the rail, far apart unless the stage sits near mid-supply).
            let on_old = explain(&old);
            if on_old.2 > on_real.2 {
                (old, true, on_old)
            } else {
                (real, false, on_real)
            }
        } else {
            (real, false, on_real)
        }
    };
    let p = node_array(&predicted);
    let m = measured.as_array();
    let deviations = [0, 1, 2].map(|k| m[k].map(|m| deviation(m, p[k])));
    let worst = deviations.iter().flatten().fold(0.0_f64, |w, d| {
        if d.is_nan() {
            f64::INFINITY
        } else {
            w.max(d.abs())
        }
    });
    let verdict = if worst <= GOOD {
        Verdict::Good
    } else if worst <= ACCEPTABLE {
        Verdict::Acceptable
    } else {
        Verdict::Fault
    };

    // Beta is worth estimating when the design, with some beta, explains the readings.
    let wide = {
        let values = nets.values();
        let (beta, _) = minimise(BETA_SEARCH.0, BETA_SEARCH.1, &|x| {
            -score(&measured, &faults::nodes(stage, Some(&values), x))
        });
        score(&measured, &faults::nodes(stage, Some(&values), beta))
    };
    let beta = (wide >= 0.5).then(|| estimate_beta(stage, nets, &measured));

    let mut merged = ranked;
    let floor = as_built_score.max(MIN_SCORE);
    merged.retain(|e| e.score > floor);
    merged.truncate(TOP);
    let next = next::separate(stage, nets, &measured, &next::tied(&merged));

    Verification {
        measured,
        magnitudes,
        predicted,
        predicted_min_beta: faults::simulate(stage, nets, None, b.min),
        predicted_max_beta: faults::simulate(stage, nets, None, b.max),
        deviations,
        verdict,
        beta,
        as_built_score,
        explanations: merged,
        next,
    }
}

/// A fault that changes nothing (two slots with equal values swapped) is no explanation.
fn is_null(nets: &SlotNetworks, f: &Fault) -> bool {
    match f {
        Fault::Swapped(a, b) => {
            let v = |s: Slot| nets.get(s).map(|n| n.ohms().0);
            match (v(*a), v(*b)) {
                (Some(x), Some(y)) => ((x - y) / x).abs() < 1e-9,
                _ => true,
            }
        }
        _ => false,
    }
}

#[cfg(test)]
mod tests;
