//! The exact per-stage search: the K best distinct variants (complete slot assignments) of one stage, each
//! with its exact error from the DC solver.
//!
//! The search follows each topology's solve order ([`Order`]): the outer slots are enumerated, the scan slot
//! (R1 or RB) is searched outward from its best value, and the collector slot (RC) outward from its best value
//! for each of those. It is exact because of one property of the error: every deviation (IC, VE, VCE, RC/RL,
//! gain) is monotone in the scan slot and in the collector slot, so each |deviation| falls and then rises along
//! the sorted candidates, and so does their maximum. The set of candidates whose error is below a bound is
//! therefore one contiguous run around the minimum, and scanning outward from the minimum until the error
//! reaches the bound visits every candidate that can still make the K best, and no other.

use crate::network::candidates::Candidate;
use crate::network::PartId;
use crate::units::Ohms;
use std::collections::{BTreeMap, BinaryHeap};
use std::time::Instant;

/// The deviations the error is made of, in this order; NaN where a stage has no such target.
pub const IC: usize = 0;
/// Index of the emitter-voltage deviation.
pub const VE: usize = 1;
/// Index of the collector-emitter-voltage deviation.
pub const VCE: usize = 2;
/// Index of the RC/RL deviation.
pub const RC: usize = 3;
/// Index of the gain deviation.
pub const GAIN: usize = 4;

/// Signed relative deviations from the targets: [IC, VE, VCE, RC/RL, gain], NaN where not targeted.
pub type Deviations = [f64; 5];

/// What the search needs to know of a stage, in terms of slot positions (the order of the candidate lists).
pub trait Evaluate {
    /// The signed deviations at typical beta; `values` holds one resistance per slot position. The error is
    /// the largest magnitude among them.
    fn deviations(&self, values: &[Ohms]) -> Deviations;
    /// The hard constraints that need no ratings: stiffness, divider current, active at min and max beta.
    fn electrical_ok(&self, values: &[Ohms]) -> bool;
    /// The remaining hard constraints, on the chosen networks themselves (every member within its derated
    /// rating with its share of the power).
    fn accept(&self, picks: &[&Candidate]) -> bool;
}

/// The largest magnitude among the chosen deviations, ignoring those a stage does not target.
fn largest(d: &Deviations, which: &[usize]) -> f64 {
    which
        .iter()
        .map(|&j| d[j].abs())
        .filter(|x| !x.is_nan())
        .fold(0.0, f64::max)
}

/// The bias deviations: those the collector slot cannot change while the transistor is active.
const BIAS: [usize; 2] = [IC, VE];
/// All deviations.
const ALL: [usize; 5] = [IC, VE, VCE, RC, GAIN];
/// The deviations the collector slot changes.
const COLLECTOR: [usize; 3] = [VCE, RC, GAIN];

/// A topology's solve order, as slot positions.
#[derive(Clone, Debug, PartialEq)]
pub struct Order {
    /// Slots enumerated in full (R2 and RE for the divider).
    pub outer: Vec<usize>,
    /// The slot searched outward from its best value for each outer assignment (R1 or RB).
    pub scan: usize,
    /// The slot that changes only the collector-side deviations (RC), searched last; None when the collector
    /// resistor is part of the bias loop (collector feedback), where it is an outer slot instead.
    pub collector: Option<usize>,
    /// Outer slots whose sum is the emitter resistance, when the emitter voltage is IE·RE from ground (all
    /// but dual supply). They are enumerated last, and only within the window the bound allows.
    pub emitter: Vec<usize>,
    /// The emitter resistance that gives exactly VE* at IC* (the ideal design's), in ohms.
    pub emitter_ohms: f64,
    /// Each slot's ideal value: outer slots are enumerated from it outward, so that good variants come first
    /// and tighten the bound early.
    pub centre: Vec<Ohms>,
    /// The load RC is to match, when the error includes RC/RL: then only collector candidates within the
    /// bound of it need a look.
    pub collector_target: Option<Ohms>,
    /// For a split emitter with a gain target and a load: the unbypassed slot's position, and what its window
    /// follows from (see [`GainWindow`]).
    pub gain: Option<GainWindow>,
}

/// The window of the unbypassed emitter resistor RE1 that a gain target allows.
///
/// The gain is A/(re' + RE1), with A = RC ∥ RL and re' = n·VT/IE. Within an error bound b, RC lies within
/// RL·(1 ± b), IE within IE*·(1 ± b) (so re' within re*/(1 ± b)) and the gain within g*·(1 ± b); so
/// RE1 lies within [A(RL(1−b))/(g*(1+b)) − re*/(1−b), A(RL(1+b))/(g*(1−b)) − re*/(1+b)].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GainWindow {
    /// The position of RE1.
    pub slot: usize,
    /// The gain target g*.
    pub gain: f64,
    /// The load RL, ohms.
    pub load: f64,
    /// re' at the targets, ohms.
    pub re_prime: f64,
}

impl GainWindow {
    fn window(&self, bound: f64) -> (f64, f64) {
        if bound >= 0.5 {
            return (0.0, f64::INFINITY);
        }
        let ac = |rc: f64| rc * self.load / (rc + self.load);
        let lo = ac(self.load * (1.0 - bound)) / (self.gain * (1.0 + bound))
            - self.re_prime / (1.0 - bound);
        let hi = ac(self.load * (1.0 + bound)) / (self.gain * (1.0 - bound))
            - self.re_prime / (1.0 + bound);
        // A hair of slack so that rounding never drops a candidate on the edge.
        (lo * (1.0 - 1e-9) - 1e-9, hi * (1.0 + 1e-9) + 1e-9)
    }
}

impl Order {
    /// The emitter resistances that can still give an error below `bound`.
    ///
    /// VE = IE·RE and IE = IC·(β+1)/β, so with k = RE/RE* the deviations satisfy 1 + dVE = (1 + dIC)·k; the
    /// smallest max(|dIC|, |dVE|) over every choice of the other slots is |1 − k|/(1 + k). It is below the
    /// bound exactly when k lies within ((1 − b)/(1 + b), (1 + b)/(1 − b)).
    fn emitter_window(&self, bound: f64) -> (f64, f64) {
        if bound >= 1.0 {
            return (0.0, f64::INFINITY);
        }
        // A hair of slack so that rounding never drops a candidate on the edge.
        let lo = self.emitter_ohms * (1.0 - bound) / (1.0 + bound) * (1.0 - 1e-9);
        let hi = self.emitter_ohms * (1.0 + bound) / (1.0 - bound) * (1.0 + 1e-9);
        (lo, hi)
    }
}

/// One complete assignment of candidates to a stage's slots.
#[derive(Clone, Debug, PartialEq)]
pub struct Found {
    /// For each slot position, the index of its candidate.
    pub picks: Vec<usize>,
    /// The exact error.
    pub error: f64,
    /// Stock parts used by one board of this variant.
    pub uses: Vec<(PartId, u32)>,
    /// Resistors used.
    pub parts: usize,
}

/// A heap entry ordered by error so that the worst of the K best sits on top.
pub(crate) struct Entry(pub(crate) Found);
impl PartialEq for Entry {
    fn eq(&self, other: &Self) -> bool {
        self.0.error == other.0.error
    }
}
impl Eq for Entry {}
impl PartialOrd for Entry {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Entry {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.0
            .error
            .total_cmp(&other.0.error)
            .then_with(|| self.0.parts.cmp(&other.0.parts))
            .then_with(|| self.0.picks.cmp(&other.0.picks))
    }
}

/// The largest error the search ever looks at: far beyond any design a user would build.
pub(crate) const GIVE_UP: f64 = 4.0;

/// Counts of the work done, for the benchmark and the progress line.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Effort {
    /// Error evaluations.
    pub evaluations: u64,
    /// Variants that met every hard constraint and entered the K best at some point.
    pub accepted: u64,
    /// Whether the deadline stopped the search before it finished (the variants are then the best found).
    pub cut_short: bool,
    /// The error below which the search has proven it holds every variant: infinite when it finished, else
    /// the bound of the last pass it completed (0 when it completed none). So no variant of the stage has an
    /// error below the smaller of this and the best variant found.
    pub floor: f64,
}

impl Effort {
    /// The proven lower bound on the stage's error given the best variant found (None: none found).
    pub fn proven_floor(&self, best: Option<f64>) -> f64 {
        match best {
            Some(b) => b.min(self.floor),
            None => self.floor.min(GIVE_UP),
        }
    }
}

/// When a search stops short of finishing.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Stop {
    /// The instant to stop by.
    pub deadline: Option<Instant>,
    /// The most error evaluations to make: a limit that does not depend on the machine's speed, so that a
    /// test (or a benchmark to be repeated) cuts the search at the same place every run.
    pub evaluations: Option<u64>,
}

impl Stop {
    /// Whether either limit is set.
    pub fn any(&self) -> bool {
        self.deadline.is_some() || self.evaluations.is_some()
    }
}

/// The `k` best variants whose error is below [`GIVE_UP`], best first, meeting every hard constraint and
/// never asking one board for more of a part than `stock` holds.
pub fn best_variants(
    model: &dyn Evaluate,
    order: &Order,
    candidates: &[Vec<Candidate>],
    k: usize,
    stock: &[u32],
    deadline: Option<Instant>,
) -> (Vec<Found>, Effort) {
    let stop = Stop {
        deadline,
        evaluations: None,
    };
    best_variants_within(model, order, candidates, k, stock, stop)
}

/// [`best_variants`], stopping at the deadline or after a number of evaluations, whichever comes first;
/// cut short, it returns the best verified variants in hand.
pub fn best_variants_within(
    model: &dyn Evaluate,
    order: &Order,
    candidates: &[Vec<Candidate>],
    k: usize,
    stock: &[u32],
    stop: Stop,
) -> (Vec<Found>, Effort) {
    let mut effort = Effort {
        floor: f64::INFINITY,
        ..Effort::default()
    };
    if k == 0 || candidates.iter().any(|c| c.is_empty()) {
        return (Vec::new(), effort);
    }
    // Outer slots other than the emitter ones, each visited from its ideal value outward; the emitter slots
    // come last, where the bound narrows them to a window. The visiting order is the same in every pass.
    let plain: Vec<usize> = order
        .outer
        .iter()
        .copied()
        .filter(|s| !order.emitter.contains(s))
        .collect();
    let orders = visiting_order(model, order, candidates, &plain, stop, &mut effort);
    // Grow the bound until K variants lie below it: each pass finds every variant below its bound, so the
    // first pass that finds K of them has found the K best.
    // Start tight: on a dense stock a loose first bound would admit astronomically many near-misses before
    // the K best are in hand; on a sparse one the tight passes cost next to nothing.
    let mut cap = 1e-4;
    // What the last completed pass found: every variant below its bound, all verified.
    let mut before: Vec<Found> = Vec::new();
    let mut proven_below = 0.0;
    loop {
        if effort.cut_short {
            break;
        }
        let heap = pass(
            model,
            order,
            candidates,
            k,
            stock,
            cap,
            &plain,
            &orders,
            stop,
            &mut effort,
        );
        let mut found: Vec<Found> = heap.into_sorted_vec().into_iter().map(|e| e.0).collect();
        if effort.cut_short {
            // The pass cut short holds some of the variants it would have found; the pass before holds all
            // below its bound. Together they are the best verified variants in hand.
            for f in before.drain(..) {
                if !found.iter().any(|g| g.picks == f.picks) {
                    found.push(f);
                }
            }
            found.sort_by(|a, b| {
                a.error
                    .total_cmp(&b.error)
                    .then(a.parts.cmp(&b.parts))
                    .then_with(|| a.picks.cmp(&b.picks))
            });
            found.truncate(k);
            effort.floor = proven_below;
            return (found, effort);
        }
        if found.len() >= k || cap >= GIVE_UP {
            found.truncate(k);
            effort.floor = f64::INFINITY;
            return (found, effort);
        }
        before = found;
        proven_below = cap;
        cap = (cap * 3.0).min(GIVE_UP);
    }
    // The deadline passed while the visiting order was worked out: nothing verified yet.
    effort.floor = 0.0;
    (Vec::new(), effort)
}

#[allow(clippy::too_many_arguments)]
fn pass(
    model: &dyn Evaluate,
    order: &Order,
    candidates: &[Vec<Candidate>],
    k: usize,
    stock: &[u32],
    cap: f64,
    plain: &[usize],
    orders: &[Vec<usize>],
    stop: Stop,
    effort: &mut Effort,
) -> BinaryHeap<Entry> {
    let n = candidates.len();
    let mut state = Pass {
        model,
        order,
        candidates,
        k,
        stock,
        cap,
        heap: BinaryHeap::new(),
        values: candidates.iter().map(|c| c[0].ohms).collect(),
        picks: vec![0usize; n],
        stop,
        ticks: 0,
        effort,
    };
    state.outer(plain, orders, 0);
    state.heap
}

/// The order in which each plain outer slot's candidates are visited: those that look feasible first, each
/// group from the best-looking outward.
///
/// Only the order changes, never the set visited, so the result stays exact; but visiting good, feasible
/// variants first tightens the bound early, and that is what keeps the search small. (The ideal R2 sits at the
/// stiffness limit, so half of the values near it are infeasible: visiting them first would keep the bound
/// loose for a long time.) Each candidate is probed with the other slots at the candidates nearest their ideal,
/// the scan slot at its best and the collector slot at its ideal.
fn visiting_order(
    model: &dyn Evaluate,
    order: &Order,
    candidates: &[Vec<Candidate>],
    plain: &[usize],
    stop: Stop,
    effort: &mut Effort,
) -> Vec<Vec<usize>> {
    let nearest = |slot: usize| {
        let centre = order.centre.get(slot).map_or(1.0, |c| c.0);
        let list = &candidates[slot];
        (0..list.len())
            .min_by(|&a, &b| {
                (list[a].ohms.0 / centre)
                    .ln()
                    .abs()
                    .total_cmp(&(list[b].ohms.0 / centre).ln().abs())
            })
            .unwrap_or(0)
    };
    let base: Vec<Ohms> = (0..candidates.len())
        .map(|s| candidates[s][nearest(s)].ohms)
        .collect();
    let scan_set: &[usize] = if order.collector.is_some() {
        &BIAS
    } else {
        &ALL
    };
    let mut turns = 0u32;
    plain
        .iter()
        .map(|&slot| {
            let list = &candidates[slot];
            let mut keyed: Vec<(bool, f64, usize)> = (0..list.len())
                .map_while(|i| {
                    // Each probe is a few dozen solves: the clock is read every 64th.
                    turns = turns.wrapping_add(1);
                    if effort.cut_short
                        || stop.evaluations.is_some_and(|n| effort.evaluations >= n)
                        || (turns % 64 == 1 && stop.deadline.is_some_and(|d| Instant::now() >= d))
                    {
                        effort.cut_short = true;
                        return None;
                    }
                    let mut values = base.clone();
                    values[slot] = list[i].ohms;
                    if let Some(c) = order.collector {
                        values[c] = Ohms(crate::notation::value::MIN_OHMS);
                    }
                    let scan = &candidates[order.scan];
                    let best = valley(scan.len(), scan_set, |j| {
                        values[order.scan] = scan[j].ohms;
                        effort.evaluations += 1;
                        model.deviations(&values)
                    });
                    values[order.scan] = scan[best].ohms;
                    let b = largest(&model.deviations(&values), scan_set);
                    if let Some(c) = order.collector {
                        values[c] = base[c];
                    }
                    effort.evaluations += 1;
                    Some((!model.electrical_ok(&values), b, i))
                })
                .collect();
            keyed.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.total_cmp(&b.1)));
            keyed.into_iter().map(|(_, _, i)| i).collect()
        })
        .collect()
}

/// The search's working state during one pass.
struct Pass<'a> {
    model: &'a dyn Evaluate,
    order: &'a Order,
    candidates: &'a [Vec<Candidate>],
    k: usize,
    stock: &'a [u32],
    cap: f64,
    heap: BinaryHeap<Entry>,
    values: Vec<Ohms>,
    picks: Vec<usize>,
    stop: Stop,
    /// Calls of [`Pass::expired`] since the clock was last read.
    ticks: u32,
    effort: &'a mut Effort,
}

impl Pass<'_> {
    /// The error a variant must beat to enter the K best.
    fn bound(&self) -> f64 {
        if self.heap.len() >= self.k {
            self.heap
                .peek()
                .map_or(self.cap, |e| e.0.error.min(self.cap))
        } else {
            self.cap
        }
    }

    fn set(&mut self, slot: usize, i: usize) {
        self.picks[slot] = i;
        self.values[slot] = self.candidates[slot][i].ohms;
    }

    /// Whether the deadline has passed; once it has, every loop unwinds.
    fn expired(&mut self) -> bool {
        if !self.effort.cut_short {
            if let Some(n) = self.stop.evaluations {
                self.effort.cut_short = self.effort.evaluations >= n;
            }
            if let Some(d) = self.stop.deadline {
                // A call is one outer assignment or one scan step, microseconds of work: read the clock
                // every 16th, so the check is cheap and still at most a few milliseconds late.
                self.ticks = self.ticks.wrapping_add(1);
                if self.ticks % 16 == 1 && Instant::now() >= d {
                    self.effort.cut_short = true;
                }
            }
        }
        self.effort.cut_short
    }

    fn outer(&mut self, plain: &[usize], orders: &[Vec<usize>], depth: usize) {
        if depth < plain.len() {
            for &i in &orders[depth] {
                if self.expired() {
                    return;
                }
                self.set(plain[depth], i);
                self.outer(plain, orders, depth + 1);
            }
            return;
        }
        self.emitter(0, 0.0);
    }

    /// Enumerates the emitter slots within the window the current bound allows, then runs the scans.
    fn emitter(&mut self, depth: usize, sum: f64) {
        let slots = &self.order.emitter;
        if depth == slots.len() {
            self.leaf();
            return;
        }
        let slot = slots[depth];
        let list = &self.candidates[slot];
        let last = depth + 1 == slots.len();
        let (lo, hi) = self.order.emitter_window(self.bound());
        // The last emitter slot's window follows from the others' sum; earlier ones only need to leave room.
        let (from, to) = if last {
            (lo - sum, hi - sum)
        } else {
            (0.0, hi - sum)
        };
        let (from, to) = match self.order.gain {
            Some(g) if g.slot == slot => {
                let (glo, ghi) = g.window(self.bound());
                (from.max(glo), to.min(ghi))
            }
            _ => (from, to),
        };
        let start = list.partition_point(|c| c.ohms.0 < from);
        let mut i = start;
        while i < list.len() && list[i].ohms.0 <= to {
            self.set(slot, i);
            self.emitter(depth + 1, sum + list[i].ohms.0);
            // The bound only falls, so the window only narrows: stop once past its new top.
            let (_, hi) = self.order.emitter_window(self.bound());
            if list[i].ohms.0 > hi - sum {
                break;
            }
            i += 1;
        }
    }

    /// With every outer slot set: the scan slot outward from its best value, and for each, the collector slot.
    fn leaf(&mut self) {
        if self.expired() {
            return;
        }
        let order = self.order;
        let scan_set: &[usize] = if order.collector.is_some() {
            &BIAS
        } else {
            &ALL
        };
        let neutral = Ohms(crate::notation::value::MIN_OHMS);
        if let Some(c) = order.collector {
            self.values[c] = neutral;
        }
        let scan_len = self.candidates[order.scan].len();
        let best_scan = {
            let (cands, model) = (self.candidates, self.model);
            let values = &mut self.values;
            let effort = &mut *self.effort;
            valley(scan_len, scan_set, |i| {
                values[order.scan] = cands[order.scan][i].ohms;
                effort.evaluations += 1;
                model.deviations(values)
            })
        };
        scan_both_sides(best_scan, scan_len, &mut |i| {
            // A loose bound can make one scan long: it stops at the deadline too.
            if self.expired() {
                return false;
            }
            self.set(order.scan, i);
            self.effort.evaluations += 1;
            let d = self.model.deviations(&self.values);
            let b = largest(&d, scan_set);
            if b >= self.bound() {
                return false;
            }
            match order.collector {
                None => self.consider(b),
                Some(c) => {
                    // |RC/RL − 1| alone must stay below the bound.
                    let list = &self.candidates[c];
                    let bound = self.bound();
                    let (from, to) = match order.collector_target {
                        Some(rl) if bound < 1.0 => {
                            let lo = list.partition_point(|x| {
                                x.ohms.0 < rl.0 * (1.0 - bound) * (1.0 - 1e-12)
                            });
                            let hi = list.partition_point(|x| {
                                x.ohms.0 <= rl.0 * (1.0 + bound) * (1.0 + 1e-12)
                            });
                            (lo, hi)
                        }
                        _ => (0, list.len()),
                    };
                    if from < to {
                        let best_c = {
                            let (cands, model) = (self.candidates, self.model);
                            let values = &mut self.values;
                            let effort = &mut *self.effort;
                            from + valley(to - from, &COLLECTOR, |j| {
                                values[c] = cands[c][from + j].ohms;
                                effort.evaluations += 1;
                                model.deviations(values)
                            })
                        };
                        scan_range(best_c, from, to, &mut |j| {
                            if self.expired() {
                                return false;
                            }
                            self.set(c, j);
                            self.effort.evaluations += 1;
                            let e = largest(&self.model.deviations(&self.values), &ALL);
                            if e >= self.bound() {
                                return false;
                            }
                            self.consider(e);
                            true
                        });
                    }
                    self.values[c] = neutral;
                }
            }
            true
        });
    }

    fn consider(&mut self, error: f64) {
        consider(
            self.model,
            self.candidates,
            &self.picks,
            &self.values,
            error,
            self.k,
            self.stock,
            &mut self.heap,
            self.effort,
        );
    }
}

/// Checks a complete assignment against the hard constraints and the stock, and keeps it if it makes the K
/// best.
#[allow(clippy::too_many_arguments)]
fn consider(
    model: &dyn Evaluate,
    candidates: &[Vec<Candidate>],
    picks: &[usize],
    values: &[Ohms],
    error: f64,
    k: usize,
    stock: &[u32],
    heap: &mut BinaryHeap<Entry>,
    effort: &mut Effort,
) {
    if !model.electrical_ok(values) {
        return;
    }
    let chosen: Vec<&Candidate> = picks
        .iter()
        .enumerate()
        .map(|(s, &i)| &candidates[s][i])
        .collect();
    let mut uses: BTreeMap<PartId, u32> = BTreeMap::new();
    for c in &chosen {
        for &(p, n) in &c.uses {
            *uses.entry(p).or_default() += n;
        }
    }
    // The same part in two slots counts twice.
    if uses
        .iter()
        .any(|(&p, &n)| stock.get(p).is_none_or(|&q| n > q))
    {
        return;
    }
    if !model.accept(&chosen) {
        return;
    }
    effort.accepted += 1;
    heap.push(Entry(Found {
        picks: picks.to_vec(),
        error,
        uses: uses.into_iter().collect(),
        parts: chosen.iter().map(|c| c.parts).sum(),
    }));
    if heap.len() > k {
        heap.pop();
    }
}

/// The index of a minimum of max |d_j| over 0..n, where each deviation d_j is monotone along the sorted
/// candidates (in either direction).
///
/// Orienting every d_j to rise, G = max_j(s_j·d_j) rises and H = max_j(−s_j·d_j) falls, and the error is
/// max(G, H); its minimum is where G first reaches H, or just before. A binary search on "G ≥ H" stays exact
/// where the error is flat (cutoff, saturation), which a search on the error's own slope would not.
fn valley(n: usize, which: &[usize], mut dev: impl FnMut(usize) -> Deviations) -> usize {
    if n <= 1 {
        return 0;
    }
    let (first, last) = (dev(0), dev(n - 1));
    let sign: Vec<(usize, f64)> = which
        .iter()
        .filter(|&&j| !first[j].is_nan() && !last[j].is_nan())
        .map(|&j| (j, (last[j] - first[j]).signum()))
        .filter(|&(j, s)| s != 0.0 && last[j] != first[j])
        .collect();
    if sign.is_empty() {
        return 0;
    }
    let crossed = |d: &Deviations| {
        let g = sign
            .iter()
            .map(|&(j, s)| s * d[j])
            .fold(f64::NEG_INFINITY, f64::max);
        let h = sign
            .iter()
            .map(|&(j, s)| -s * d[j])
            .fold(f64::NEG_INFINITY, f64::max);
        g >= h
    };
    // First index where G ≥ H (n if none).
    let (mut lo, mut hi) = (0usize, n);
    while lo < hi {
        let mid = (lo + hi) / 2;
        if crossed(&dev(mid)) {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    if lo == n {
        return n - 1;
    }
    if lo == 0 {
        return 0;
    }
    let here = largest(&dev(lo), which);
    let before = largest(&dev(lo - 1), which);
    if before < here {
        lo - 1
    } else {
        lo
    }
}

/// Visits `start`, then the indices to its right while `visit` returns true, then those to its left while
/// `visit` returns true.
fn scan_both_sides(start: usize, n: usize, visit: &mut dyn FnMut(usize) -> bool) {
    scan_range(start, 0, n, visit)
}

/// [`scan_both_sides`] within `from..to`.
fn scan_range(start: usize, from: usize, to: usize, visit: &mut dyn FnMut(usize) -> bool) {
    if !visit(start) {
        return;
    }
    for i in start + 1..to {
        if !visit(i) {
            break;
        }
    }
    for i in (from..start).rev() {
        if !visit(i) {
            break;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::{Member, Network};
    use crate::units::{Tolerance, Watts};

    /// A divider stage with fixed VBE and beta in closed form: R1, R2, RE, RC at positions 0..4.
    struct Divider;
    const VCC: f64 = 9.0;
    const VBE: f64 = 0.62;
    const BETA: f64 = 150.0;
    const IC_T: f64 = 1.5e-3;
    const VCE_T: f64 = 4.0;
    const VE_T: f64 = 0.9;
    const RL: f64 = 3300.0;

    fn solve(v: &[Ohms]) -> (f64, f64, f64, f64) {
        let (r1, r2, re, rc) = (v[0].0, v[1].0, v[2].0, v[3].0);
        let vth = VCC * r2 / (r1 + r2);
        let rth = r1 * r2 / (r1 + r2);
        let ib = ((vth - VBE) / (rth + (BETA + 1.0) * re)).max(0.0);
        let ic = BETA * ib;
        let ve = (ic + ib) * re;
        let vce = VCC - ic * rc - ve;
        (ib, ic, ve, vce)
    }

    impl Evaluate for Divider {
        fn deviations(&self, v: &[Ohms]) -> Deviations {
            let (_, ic, ve, vce) = solve(v);
            [
                ic / IC_T - 1.0,
                ve / VE_T - 1.0,
                vce / VCE_T - 1.0,
                v[3].0 / RL - 1.0,
                f64::NAN,
            ]
        }
        fn electrical_ok(&self, v: &[Ohms]) -> bool {
            let (ib, _, ve, vce) = solve(v);
            let i_r2 = (ve + VBE) / v[1].0;
            vce > 0.3 && ib > 0.0 && i_r2 >= 10.0 * ib
        }
        fn accept(&self, _: &[&Candidate]) -> bool {
            true
        }
    }

    struct Rng(u64);
    impl Rng {
        fn next(&mut self) -> u64 {
            self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = self.0;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            z ^ (z >> 31)
        }
        fn unit(&mut self) -> f64 {
            (self.next() >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    fn single(ohms: f64, part: PartId) -> Candidate {
        let mut m = Member::loose(Ohms(ohms), Tolerance(0.05), Watts(0.25));
        m.part = Some(part);
        Candidate {
            network: Network::Single(m),
            ohms: Ohms(ohms),
            uses: vec![(part, 1)],
            parts: 1,
            band: (-0.05, 0.05),
            left: 0,
        }
    }

    #[test]
    fn k_best_equals_exhaustive_on_a_closed_form_divider() {
        let mut rng = Rng(11);
        let mut compared = 0;
        for case in 0..25 {
            // A random stock of singles, log-uniform around each slot's ideal, some values shared by slots.
            let ideal = [30e3, 7.5e3, 600.0, 2000.0];
            let mut stock = Vec::new();
            let mut lists: Vec<Vec<Candidate>> = vec![Vec::new(); 4];
            let mut values = Vec::new();
            for _ in 0..40 {
                values.push(10f64.powf(2.0 + 3.0 * rng.unit()));
            }
            for (p, &v) in values.iter().enumerate() {
                stock.push(1 + (rng.next() % 2) as u32);
                for (s, &id) in ideal.iter().enumerate() {
                    if v > id / 3.0 && v < id * 3.0 {
                        lists[s].push(single(v, p));
                    }
                }
            }
            if lists.iter().any(|l| l.is_empty()) {
                continue;
            }
            for l in &mut lists {
                l.sort_by(|a, b| a.ohms.0.total_cmp(&b.ohms.0));
            }
            let order = Order {
                outer: vec![1, 2],
                scan: 0,
                collector: Some(3),
                emitter: vec![2],
                emitter_ohms: VE_T / (IC_T * (BETA + 1.0) / BETA),
                centre: ideal.iter().map(|&x| Ohms(x)).collect(),
                collector_target: Some(Ohms(RL)),
                gain: None,
            };
            let k = 1 + (case % 7);
            let (found, _) = best_variants(&Divider, &order, &lists, k, &stock, None);
            // Exhaustive: every combination, the same constraints.
            let mut all = Vec::new();
            for a in 0..lists[0].len() {
                for b in 0..lists[1].len() {
                    for c in 0..lists[2].len() {
                        for d in 0..lists[3].len() {
                            let v = [
                                lists[0][a].ohms,
                                lists[1][b].ohms,
                                lists[2][c].ohms,
                                lists[3][d].ohms,
                            ];
                            if !Divider.electrical_ok(&v) {
                                continue;
                            }
                            let mut count = std::collections::BTreeMap::new();
                            for (s, i) in [(0, a), (1, b), (2, c), (3, d)] {
                                *count.entry(lists[s][i].uses[0].0).or_insert(0u32) += 1;
                            }
                            if count.iter().any(|(&p, &n)| n > stock[p]) {
                                continue;
                            }
                            let e = largest(&Divider.deviations(&v), &ALL);
                            if e < GIVE_UP {
                                all.push(e);
                            }
                        }
                    }
                }
            }
            all.sort_by(f64::total_cmp);
            all.truncate(k);
            let got: Vec<f64> = found.iter().map(|f| f.error).collect();
            assert_eq!(got.len(), all.len(), "case {case}");
            for (g, w) in got.iter().zip(&all) {
                assert!((g - w).abs() < 1e-9, "case {case}: {got:?} vs {all:?}");
            }
            compared += usize::from(!all.is_empty());
        }
        assert!(
            compared >= 15,
            "only {compared} cases had feasible variants"
        );
    }

    /// Every feasible variant's error over four slots of singles, by brute force, sorted.
    fn exhaustive(lists: &[Vec<Candidate>], stock: &[u32]) -> Vec<f64> {
        let mut all = Vec::new();
        for a in 0..lists[0].len() {
            for b in 0..lists[1].len() {
                for c in 0..lists[2].len() {
                    for d in 0..lists[3].len() {
                        let picks = [(0, a), (1, b), (2, c), (3, d)];
                        let v = picks.map(|(s, i)| lists[s][i].ohms);
                        if !Divider.electrical_ok(&v) {
                            continue;
                        }
                        let mut count = std::collections::BTreeMap::new();
                        for (s, i) in picks {
                            *count.entry(lists[s][i].uses[0].0).or_insert(0u32) += 1;
                        }
                        if count.iter().any(|(&p, &n)| n > stock[p]) {
                            continue;
                        }
                        let e = largest(&Divider.deviations(&v), &ALL);
                        if e < GIVE_UP {
                            all.push(e);
                        }
                    }
                }
            }
        }
        all.sort_by(f64::total_cmp);
        all
    }

    #[test]
    fn a_search_cut_short_keeps_real_variants_and_a_true_floor() {
        // The same kind of random dividers as the exhaustive comparison, each cut after a growing number of
        // evaluations: whatever is returned must be real variants (errors the brute force also finds), the
        // floor must never exceed the true best, and an uncut search must equal the full one.
        let mut rng = Rng(29);
        let ideal = [30e3, 7.5e3, 600.0, 2000.0];
        let order = Order {
            outer: vec![1, 2],
            scan: 0,
            collector: Some(3),
            emitter: vec![2],
            emitter_ohms: VE_T / (IC_T * (BETA + 1.0) / BETA),
            centre: ideal.iter().map(|&x| Ohms(x)).collect(),
            collector_target: Some(Ohms(RL)),
            gain: None,
        };
        let (mut cut, mut kept_some) = (0, 0);
        for _ in 0..12 {
            let mut stock = Vec::new();
            let mut lists: Vec<Vec<Candidate>> = vec![Vec::new(); 4];
            for p in 0..40 {
                let v = 10f64.powf(2.0 + 3.0 * rng.unit());
                stock.push(1 + (rng.next() % 2) as u32);
                for (s, &id) in ideal.iter().enumerate() {
                    if v > id / 3.0 && v < id * 3.0 {
                        lists[s].push(single(v, p));
                    }
                }
            }
            if lists.iter().any(|l| l.is_empty()) {
                continue;
            }
            for l in &mut lists {
                l.sort_by(|a, b| a.ohms.0.total_cmp(&b.ohms.0));
            }
            let all = exhaustive(&lists, &stock);
            let k = 5;
            let (full, _) = best_variants(&Divider, &order, &lists, k, &stock, None);
            for budget in [0u64, 30, 100, 300, 1000, 3000, 100_000] {
                let stop = Stop {
                    deadline: None,
                    evaluations: Some(budget),
                };
                let (found, effort) =
                    best_variants_within(&Divider, &order, &lists, k, &stock, stop);
                for f in &found {
                    assert!(
                        all.iter().any(|e| (e - f.error).abs() < 1e-12),
                        "budget {budget}: {} is no variant",
                        f.error
                    );
                }
                assert!(found.windows(2).all(|w| w[0].error <= w[1].error));
                let floor = effort.proven_floor(found.first().map(|f| f.error));
                if let Some(best) = all.first() {
                    assert!(
                        floor <= best + 1e-12,
                        "budget {budget}: floor {floor} > {best}"
                    );
                }
                if effort.cut_short {
                    cut += 1;
                    kept_some += usize::from(!found.is_empty());
                } else {
                    assert_eq!(found, full, "budget {budget}");
                }
            }
        }
        // The budgets did cut, and some cut searches still held variants to return.
        assert!(cut >= 10 && kept_some >= 3, "cut {cut}, kept {kept_some}");
    }

    #[test]
    fn valley_is_exact_with_flat_ends() {
        // A deviation that is flat at both ends (cutoff and saturation) and crosses zero at index 6.
        let d = |i: usize| -> Deviations {
            let x = (i as f64 - 6.0).clamp(-3.0, 3.0) / 3.0;
            [x, x * 0.5, f64::NAN, f64::NAN, f64::NAN]
        };
        assert_eq!(valley(20, &BIAS, d), 6);
        // Opposite directions: minimum of max(|i-4|, |10-2i|/2) over integers is at i = 4 or 5.
        let e = |i: usize| -> Deviations {
            [
                f64::NAN,
                f64::NAN,
                i as f64 - 4.0,
                (10.0 - 2.0 * i as f64) / 2.0,
                f64::NAN,
            ]
        };
        let v = valley(12, &COLLECTOR, e);
        assert!(v == 4 || v == 5, "{v}");
    }
}
