//! The exact search over a circuit's slots: the K best distinct variants (one candidate network per slot),
//! each with the circuit's error computed by the engine, meeting every hard constraint.
//!
//! The search is a best-first branch and bound over boxes of candidate indices (each slot's candidates are
//! sorted by value). A box's bound comes from its corners: each target's deviation moves one way as one
//! slot's value moves, so over a box it lies between its values at the corners, and the least |deviation|
//! the box can hold is 0 if those straddle the target and the nearer end otherwise; the box's bound is the
//! largest such figure over the targets. Boxes are split along the slot they span most (in ratio) until
//! they hold only corners, which are themselves the variants. A box whose bound exceeds the K-th best
//! error found cannot hold a better variant and is dropped; when the best box left is worse than the K-th
//! best, the K best are proven.
//!
//! The monotone step holds exactly for a linear network (each node voltage and branch current is a
//! linear-fractional function of any one resistance, by the rank-one update of the nodal matrix, so it has
//! no turning point between poles) and, for the devices, region by region; where the search sees a
//! target turn between a box's ends it stops using that target to prune, so a rare non-monotone target
//! costs time, not the answer. The exhaustive enumeration below is the reference the property test (and
//! the benchmark) holds the search against.

use super::search::{Effort, Entry, Found, Stop, GIVE_UP};
use crate::circuit::{Circuit, Options, Solver};
use crate::network::candidates::Candidate;
use crate::network::{Network, PartId};
use crate::units::{Ohms, Watts};
use itertools::Itertools;
use std::collections::{BTreeMap, BinaryHeap, HashMap};

/// Slack on a bound before it prunes: the engine's solutions agree to far better than this, and a
/// variant this close to the K-th best is not worth the risk of a rounding-level miss.
const SLACK: f64 = 1e-9;

/// One evaluated point.
#[derive(Clone, Debug)]
struct Point {
    /// Each target's signed weighted deviation (NaN when the circuit did not solve).
    devs: Vec<f64>,
    /// The circuit error there (infinite when it did not solve).
    error: f64,
}

/// The search's view of one circuit.
pub struct CircuitModel<'c> {
    circuit: &'c Circuit,
    solver: Solver<'c>,
    options: Options,
    /// Accept every build: to find the closest one when none meets the constraints.
    relaxed: bool,
}

impl<'c> CircuitModel<'c> {
    /// The model of `circuit` (its fixed parts given the ratings they are checked by).
    pub fn new(circuit: &'c Circuit) -> CircuitModel<'c> {
        CircuitModel {
            circuit,
            solver: Solver::new(circuit),
            options: Options { check_latch: false },
            relaxed: false,
        }
    }

    /// The model that accepts every build, for naming what binds when none meets the constraints.
    pub fn relaxed(circuit: &'c Circuit) -> CircuitModel<'c> {
        CircuitModel {
            relaxed: true,
            ..CircuitModel::new(circuit)
        }
    }

    fn point(&mut self, values: &[Ohms]) -> Point {
        let c = self.circuit;
        let solved = c
            .typical(values)
            .ok()
            .and_then(|b| self.solver.solve(&b, &self.options).ok());
        match solved {
            Some(s) => {
                let devs: Vec<f64> = c
                    .deviations(&s)
                    .iter()
                    .map(|d| d.relative * c.targets[d.target].weight)
                    .collect();
                Point {
                    error: c.error(&s),
                    devs,
                }
            }
            None => Point {
                devs: vec![f64::NAN; c.targets.len()],
                error: f64::INFINITY,
            },
        }
    }

    /// Whether the networks meet every hard constraint: each member within its derated rating, the
    /// device limits, the regions at every corner, the minimum currents, stiffness and overdrive.
    pub fn accept(&self, nets: &[&Network]) -> bool {
        if self.relaxed {
            return true;
        }
        let ohms: Vec<Ohms> = nets.iter().map(|n| n.ohms()).collect();
        let ratings: Vec<Option<Watts>> = nets.iter().map(|n| n.equivalent_rating()).collect();
        self.circuit
            .checks(&ohms, &ratings, &self.options)
            .is_ok_and(|checks| checks.iter().all(|k| k.ok))
    }
}

/// The stock parts a combination takes, merged, if one board's stock holds them.
fn uses_within(picks: &[&Candidate], stock: &[u32]) -> Option<Vec<(PartId, u32)>> {
    let mut m: BTreeMap<PartId, u32> = BTreeMap::new();
    for c in picks {
        for &(p, n) in &c.uses {
            *m.entry(p).or_default() += n;
        }
    }
    m.iter()
        .all(|(&p, n)| stock.get(p).is_some_and(|s| n <= s))
        .then(|| m.into_iter().collect())
}

/// The K best kept so far, the worst on top.
struct Best {
    heap: BinaryHeap<Entry>,
    k: usize,
}

impl Best {
    /// The error a new variant must beat (or tie, to win on parts) to enter.
    fn threshold(&self) -> f64 {
        if self.heap.len() < self.k {
            GIVE_UP
        } else {
            self.heap.peek().map_or(GIVE_UP, |e| e.0.error)
        }
    }

    fn offer(&mut self, f: Found) {
        if self.heap.len() < self.k {
            self.heap.push(Entry(f));
        } else if self.heap.peek().is_some_and(|w| Entry(f.clone()) < *w) {
            self.heap.pop();
            self.heap.push(Entry(f));
        }
    }

    fn sorted(self) -> Vec<Found> {
        self.heap
            .into_sorted_vec()
            .into_iter()
            .map(|e| e.0)
            .collect()
    }
}

/// A box of candidate indices, inclusive at both ends, with its bound.
struct Node {
    lo: Vec<usize>,
    hi: Vec<usize>,
    bound: f64,
}

impl PartialEq for Node {
    fn eq(&self, o: &Self) -> bool {
        self.bound == o.bound
    }
}
impl Eq for Node {}
impl PartialOrd for Node {
    fn partial_cmp(&self, o: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Node {
    // The smallest bound on top of the max-heap.
    fn cmp(&self, o: &Self) -> std::cmp::Ordering {
        o.bound.total_cmp(&self.bound)
    }
}

/// The search in progress.
struct Search<'m, 'c> {
    model: &'m mut CircuitModel<'c>,
    candidates: &'m [Vec<Candidate>],
    stock: &'m [u32],
    seen: HashMap<Vec<usize>, Point>,
    best: Best,
    /// Targets seen turning inside a box: no longer used to prune.
    turning: Vec<bool>,
    effort: Effort,
    stop: Stop,
}

impl Search<'_, '_> {
    fn stopped(&mut self) -> bool {
        let over_budget = self
            .stop
            .evaluations
            .is_some_and(|n| self.effort.evaluations >= n);
        let late = self.effort.evaluations.is_multiple_of(64)
            && self
                .stop
                .deadline
                .is_some_and(|d| std::time::Instant::now() >= d);
        if over_budget || late {
            self.effort.cut_short = true;
        }
        self.effort.cut_short
    }

    /// The point at these picks, evaluated once, and offered to the K best when it may enter.
    fn at(&mut self, picks: &[usize]) -> &Point {
        if !self.seen.contains_key(picks) {
            let values: Vec<Ohms> = picks
                .iter()
                .enumerate()
                .map(|(s, &i)| self.candidates[s][i].ohms)
                .collect();
            let p = self.model.point(&values);
            self.effort.evaluations += 1;
            if p.error < GIVE_UP && p.error <= self.best.threshold() + SLACK {
                let chosen: Vec<&Candidate> = picks
                    .iter()
                    .enumerate()
                    .map(|(s, &i)| &self.candidates[s][i])
                    .collect();
                if let Some(uses) = uses_within(&chosen, self.stock) {
                    let nets: Vec<&Network> = chosen.iter().map(|c| &c.network).collect();
                    if self.model.accept(&nets) {
                        self.effort.accepted += 1;
                        self.best.offer(Found {
                            picks: picks.to_vec(),
                            error: p.error,
                            uses,
                            parts: chosen.iter().map(|c| c.parts).sum(),
                        });
                    }
                }
            }
            self.seen.insert(picks.to_vec(), p);
        }
        &self.seen[picks]
    }

    /// The box's bound, from its corners (each evaluated and offered).
    fn bound(&mut self, lo: &[usize], hi: &[usize]) -> f64 {
        let n = lo.len();
        let spans: Vec<usize> = (0..n).filter(|&s| hi[s] > lo[s]).collect();
        let t = self.model.circuit.targets.len();
        let mut low = vec![f64::INFINITY; t];
        let mut high = vec![f64::NEG_INFINITY; t];
        let mut failed = false;
        for corner in 0..(1usize << spans.len()) {
            let mut picks = lo.to_vec();
            for (b, &s) in spans.iter().enumerate() {
                if corner >> b & 1 == 1 {
                    picks[s] = hi[s];
                }
            }
            let p = self.at(&picks);
            if p.devs.iter().any(|d| d.is_nan()) {
                failed = true;
                continue;
            }
            for (j, &d) in p.devs.iter().enumerate() {
                low[j] = low[j].min(d);
                high[j] = high[j].max(d);
            }
        }
        if failed {
            return 0.0;
        }
        (0..t)
            .filter(|&j| !self.turning[j])
            .map(|j| {
                if low[j] <= 0.0 && high[j] >= 0.0 {
                    0.0
                } else {
                    low[j].abs().min(high[j].abs())
                }
            })
            .fold(0.0, f64::max)
    }

    /// Marks a target turning if, along slot `s` of the box, its deviation at the split points lies
    /// outside the range of its ends.
    fn watch_turns(&mut self, lo: &[usize], hi: &[usize], s: usize, mid: usize) {
        let mut devs = |i: usize| {
            let mut p = lo.to_vec();
            p[s] = i;
            self.at(&p).devs.clone()
        };
        let (a, b) = (devs(lo[s]), devs(hi[s]));
        let inner = [devs(mid), devs(mid + 1)];
        for j in 0..a.len() {
            let (l, h) = (a[j].min(b[j]), a[j].max(b[j]));
            let tol = 1e-9 * (1.0 + h.abs());
            if inner.iter().any(|m| m[j] < l - tol || m[j] > h + tol) {
                self.turning[j] = true;
            }
        }
    }

    fn run(&mut self) {
        let n = self.candidates.len();
        let lo = vec![0; n];
        let hi: Vec<usize> = self.candidates.iter().map(|c| c.len() - 1).collect();
        let bound = self.bound(&lo, &hi);
        let mut queue = BinaryHeap::new();
        queue.push(Node { lo, hi, bound });
        while let Some(node) = queue.pop() {
            if node.bound > self.best.threshold() + SLACK {
                break;
            }
            if self.stopped() {
                self.effort.floor = node.bound;
                return;
            }
            // The slot the box spans most, in ratio; a box of corners only is done.
            let split = (0..n)
                .filter(|&s| node.hi[s] > node.lo[s] + 1)
                .max_by(|&a, &b| {
                    let r = |s: usize| {
                        self.candidates[s][node.hi[s]].ohms.0
                            / self.candidates[s][node.lo[s]].ohms.0
                    };
                    r(a).total_cmp(&r(b)).then(b.cmp(&a))
                });
            let Some(s) = split else {
                continue;
            };
            let mid = (node.lo[s] + node.hi[s]) / 2;
            self.watch_turns(&node.lo, &node.hi, s, mid);
            let mut left_hi = node.hi.clone();
            left_hi[s] = mid;
            let mut right_lo = node.lo.clone();
            right_lo[s] = mid + 1;
            for (lo, hi) in [(node.lo.clone(), left_hi), (right_lo, node.hi.clone())] {
                let bound = self.bound(&lo, &hi);
                if bound <= self.best.threshold() + SLACK {
                    queue.push(Node { lo, hi, bound });
                }
            }
        }
        self.effort.floor = f64::INFINITY;
    }
}

/// The `k` best variants of `circuit` from the candidate lists (one per slot in [`Circuit::slots`] order,
/// each sorted by value), best first (by error, then fewer parts, then picks), with the effort spent; cut
/// short by `stop`, the best verified variants in hand and the proven floor.
pub fn best_circuit_variants(
    model: &mut CircuitModel,
    candidates: &[Vec<Candidate>],
    k: usize,
    stock: &[u32],
    stop: Stop,
) -> (Vec<Found>, Effort) {
    let mut effort = Effort {
        floor: f64::INFINITY,
        ..Effort::default()
    };
    if k == 0 || candidates.is_empty() || candidates.iter().any(|c| c.is_empty()) {
        return (Vec::new(), effort);
    }
    let targets = model.circuit.targets.len();
    let mut search = Search {
        model,
        candidates,
        stock,
        seen: HashMap::new(),
        best: Best {
            heap: BinaryHeap::new(),
            k,
        },
        turning: vec![false; targets],
        effort,
        stop,
    };
    search.run();
    effort = search.effort;
    (search.best.sorted(), effort)
}

/// Every combination of the candidates, evaluated: the `k` best under the same constraints and in the
/// same order as [`best_circuit_variants`]. The reference the search is proven against.
pub fn exhaustive_circuit_variants(
    model: &mut CircuitModel,
    candidates: &[Vec<Candidate>],
    k: usize,
    stock: &[u32],
) -> Vec<Found> {
    // Every combination within one board's stock, by error; then the constraints in that order until K
    // pass (the same K as checking them all first, at a fraction of the solves).
    let mut all: Vec<Found> = Vec::new();
    for picks in candidates
        .iter()
        .map(|c| 0..c.len())
        .multi_cartesian_product()
    {
        let chosen: Vec<&Candidate> = picks
            .iter()
            .enumerate()
            .map(|(s, &i)| &candidates[s][i])
            .collect();
        let values: Vec<Ohms> = chosen.iter().map(|c| c.ohms).collect();
        let p = model.point(&values);
        if p.error >= GIVE_UP {
            continue;
        }
        let Some(uses) = uses_within(&chosen, stock) else {
            continue;
        };
        all.push(Found {
            parts: chosen.iter().map(|c| c.parts).sum(),
            picks,
            error: p.error,
            uses,
        });
    }
    all.sort_by_key(|a| Entry(a.clone()));
    let mut out = Vec::new();
    for f in all {
        if out.len() == k {
            break;
        }
        let nets: Vec<&Network> = f
            .picks
            .iter()
            .enumerate()
            .map(|(s, &i)| &candidates[s][i].network)
            .collect();
        if model.accept(&nets) {
            out.push(f);
        }
    }
    out
}
