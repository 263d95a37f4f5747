//! Candidate networks for one slot: every single resistor, pair and (optionally) triple that the stock can
//! build, found exactly and without enumerating them all.
//!
//! The shapes are a single part; two in series or in parallel; and, with three parts, three in series, three
//! in parallel, `a+(b|c)` and `a|(b+c)`. A network that needs two pieces of one part needs a quantity of at
//! least two, and parts with none left are never used. Each shape is searched over the stock's values sorted
//! once: the first members are looped over only while they can still reach the window, and the last member's
//! range is found by binary search, so a window costs O(N log N) for pairs and O(N² log N) for triples plus
//! the size of its answer. Every candidate is then checked with the very arithmetic of [`Network::ohms`], so
//! the bounds (widened by a slack far above their rounding error) only ever prune, never decide.
//!
//! Networks whose resistances agree within [`SAME_VALUE`] (1 ppm of the smaller) are one value, and only one
//! of them is offered. Networks are taken in order of preference: fewer parts, then the tighter worst-case
//! band, then more pieces left of the scarcest part, then the earlier shape (single, series pair, parallel
//! pair, series triple, parallel triple, `a+(b|c)`, `a|(b+c)`), then the lower part ids in member order; each
//! is kept unless a network already kept lies within 1 ppm. No two kept networks are within 1 ppm, and every
//! dropped network has a preferred one kept within 1 ppm, so no value is left unrepresented.
//!
//! Members are written dominant part first: series largest first, parallel smallest first (by value, then
//! part id), and `a+(b|c)` and `a|(b+c)` with the lone part first.
//!
//! It relies on [`crate::stock::Stock`] for the parts and on [`Network`] for what a network is.

use super::{Member, Network, PartId};
use crate::stock::Stock;
use crate::units::Ohms;
use std::cell::Cell;
use std::time::Instant;

/// Two networks whose resistances differ by no more than this fraction count as the same value (1 ppm).
pub const SAME_VALUE: f64 = 1e-6;

/// The most parts a candidate network may use.
pub const MAX_PARTS: usize = 3;

/// One candidate network for a slot, built from stock parts.
#[derive(Clone, Debug, PartialEq)]
pub struct Candidate {
    /// The network, its members tied to their stock parts and locations.
    pub network: Network,
    /// Its nominal resistance, exactly [`Network::ohms`] of `network`.
    pub ohms: Ohms,
    /// The stock parts it uses and how many pieces of each, sorted by part id.
    pub uses: Vec<(PartId, u32)>,
    /// How many resistors it takes.
    pub parts: usize,
    /// Its worst-case band as relative deviations (low, high), exactly [`Network::band`].
    pub band: (f64, f64),
    /// Pieces left of its scarcest part once it is built.
    pub left: u32,
}

/// Whether two values, `low` ≤ `high`, are the same value: within [`SAME_VALUE`] of the smaller.
fn close(low: f64, high: f64) -> bool {
    high - low <= SAME_VALUE * low
}

impl Candidate {
    /// Its relative error from `target`: (R − target) / target.
    pub fn error(&self, target: Ohms) -> f64 {
        (self.ohms.0 - target.0) / target.0
    }
}

/// The shapes, in their tie-break order.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
enum Shape {
    Single,
    Series2,
    Parallel2,
    Series3,
    Parallel3,
    SeriesOfParallel,
    ParallelOfSeries,
}

impl Shape {
    fn parts(self) -> usize {
        match self {
            Shape::Single => 1,
            Shape::Series2 | Shape::Parallel2 => 2,
            _ => 3,
        }
    }

    /// The network's resistance from its members' values, in member order.
    ///
    /// This is [`Network::ohms_with`] spelled out for each shape, operation for operation, so that a
    /// candidate's value here is bit for bit the value of the network it becomes (a test holds it to that).
    fn eval(self, x: [f64; 3]) -> f64 {
        match self {
            Shape::Single => x[0],
            Shape::Series2 => x[0] + x[1],
            Shape::Parallel2 => 1.0 / (1.0 / x[0] + 1.0 / x[1]),
            Shape::Series3 => x[0] + x[1] + x[2],
            Shape::Parallel3 => 1.0 / (1.0 / x[0] + 1.0 / x[1] + 1.0 / x[2]),
            Shape::SeriesOfParallel => x[0] + 1.0 / (1.0 / x[1] + 1.0 / x[2]),
            Shape::ParallelOfSeries => 1.0 / (1.0 / x[0] + 1.0 / (x[1] + x[2])),
        }
    }
}

/// A stocked part with pieces on hand, as the search sees it.
#[derive(Clone, Debug)]
struct Entry {
    ohms: f64,
    tolerance: f64,
    qty: u32,
    id: PartId,
}

/// The window one search fills, with the figures every shape's bounds are computed from.
#[derive(Clone, Copy)]
struct Window {
    low: f64,
    high: f64,
    /// 1/low (infinite for a window from 0).
    inv_low: f64,
    inv_high: f64,
    /// The absolute slack the bounds are widened by before the exact check.
    slack: f64,
    /// How many networks are enough.
    limit: usize,
}

/// A network found in a window, before it becomes a [`Candidate`]: entries (not part ids) in member order.
#[derive(Clone, Copy, Debug)]
struct Raw {
    ohms: f64,
    shape: Shape,
    m: [u32; 3],
}

/// The preference order as plain integers, compared field by field: parts; the band's half-width in parts per
/// billion (so that rounding noise cannot decide a tie); pieces left, inverted; the shape; the part ids in
/// member order (unused slots 0: equal shapes have equal part counts, so this is exact).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
struct Preference {
    parts: u8,
    tol: i64,
    not_left: u32,
    shape: Shape,
    ids: [u32; 3],
}

/// A stock prepared for repeated candidate searches: its usable parts sorted by value, in O(N log N).
///
/// Build it once per stock and part limit when searching many windows (the optimiser does);
/// [`in_window`] and [`best`] build one per call.
#[derive(Clone, Debug)]
pub struct Index<'a> {
    stock: &'a Stock,
    max_parts: usize,
    entries: Vec<Entry>,
    values: Vec<f64>,
    /// When a window search gives up (see [`Index::until`]).
    deadline: Option<Instant>,
    /// Loop turns since the clock was last read: reading it every turn would cost more than the turn.
    ticks: Cell<u32>,
    /// Whether the deadline stopped the last window search.
    expired: Cell<bool>,
}

/// Why [`Index::in_window_until`] gave no list.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Cut {
    /// The window holds more networks than the limit.
    TooMany,
    /// The deadline passed before the window was searched.
    TimedOut,
}

/// The indices of sorted `values` within [lo, hi], for bounds that only fall from one call to the next.
struct Falling<'v> {
    values: &'v [f64],
    /// The first index with a value ≥ the last lower bound.
    lo: usize,
    /// The first index with a value > the last upper bound.
    hi: usize,
}

impl<'v> Falling<'v> {
    fn new(values: &'v [f64]) -> Self {
        Falling {
            values,
            lo: values.len(),
            hi: values.len(),
        }
    }

    /// A bound that rises by a rounding error instead of falling is harmless: the slack already puts the
    /// true bound inside the previous one, and the exact check decides.
    fn between(&mut self, lo: f64, hi: f64) -> std::ops::Range<usize> {
        while self.hi > 0 && self.values[self.hi - 1] > hi {
            self.hi -= 1;
        }
        while self.lo > 0 && self.values[self.lo - 1] >= lo {
            self.lo -= 1;
        }
        self.lo..self.hi.max(self.lo)
    }
}

/// Slack added to every pruning bound, far above the rounding error of the bound's few operations; the
/// survivors are then checked exactly.
const SLACK: f64 = 1e-12;

impl<'a> Index<'a> {
    /// Prepares `stock` for networks of at most `max_parts` parts (clamped to 1..=3).
    pub fn new(stock: &'a Stock, max_parts: usize) -> Index<'a> {
        let max_parts = max_parts.clamp(1, MAX_PARTS);
        let mut entries: Vec<Entry> = stock
            .parts
            .iter()
            .enumerate()
            .filter(|(_, p)| p.qty > 0 && p.ohms.0.is_finite() && p.ohms.0 > 0.0)
            .map(|(id, p)| Entry {
                ohms: p.ohms.0,
                tolerance: p.tolerance.0,
                qty: p.qty,
                id,
            })
            .collect();
        entries.sort_by(|a, b| a.ohms.total_cmp(&b.ohms).then(a.id.cmp(&b.id)));
        let values = entries.iter().map(|e| e.ohms).collect();
        Index {
            stock,
            max_parts,
            entries,
            values,
            deadline: None,
            ticks: Cell::new(0),
            expired: Cell::new(false),
        }
    }

    /// The same index, with window searches ([`Index::in_window_until`]) that give up at `deadline`: a huge
    /// stock with triples can take minutes to search, and the command's time limit covers it.
    pub fn until(mut self, deadline: Option<Instant>) -> Index<'a> {
        self.deadline = deadline;
        self
    }

    /// Whether the deadline has passed, reading the clock every 256th call (a call is one turn of a search
    /// loop, well under a microsecond, so the check comes a fraction of a millisecond late at most).
    fn past_deadline(&self) -> bool {
        if self.expired.get() {
            return true;
        }
        let Some(d) = self.deadline else {
            return false;
        };
        let t = self.ticks.get().wrapping_add(1);
        self.ticks.set(t);
        if t.is_multiple_of(256) && Instant::now() >= d {
            self.expired.set(true);
        }
        self.expired.get()
    }

    /// Whether a window search should stop: more networks than `limit`, or past the deadline.
    fn stop(&self, found: usize, limit: usize) -> bool {
        found > limit || self.past_deadline()
    }

    /// How many stock parts (with pieces on hand) the search draws on.
    pub fn usable(&self) -> usize {
        self.entries.len()
    }

    /// Every distinct network with a resistance in [low, high], deduplicated, sorted by ohms ascending.
    pub fn in_window(&self, low: Ohms, high: Ohms) -> Vec<Candidate> {
        self.kept_in(low.0, high.0)
            .into_iter()
            .map(|k| self.candidate(&k))
            .collect()
    }

    /// [`Index::in_window`], unless the window holds more than `limit` networks before deduplication: then
    /// None, found without building them all, so that a huge stock cannot exhaust memory.
    pub fn in_window_limited(&self, low: Ohms, high: Ohms, limit: usize) -> Option<Vec<Candidate>> {
        self.in_window_until(low, high, limit).ok()
    }

    /// [`Index::in_window_limited`], telling a window too full from a deadline passed (set with
    /// [`Index::until`]).
    pub fn in_window_until(
        &self,
        low: Ohms,
        high: Ohms,
        limit: usize,
    ) -> Result<Vec<Candidate>, Cut> {
        let timed_out = || self.deadline.is_some_and(|d| Instant::now() >= d) || self.expired.get();
        if timed_out() {
            self.expired.set(true);
            return Err(Cut::TimedOut);
        }
        let mut raws = Vec::new();
        self.collect(low.0, high.0, limit, &mut raws);
        if raws.len() > limit {
            return Err(Cut::TooMany);
        }
        if timed_out() {
            self.expired.set(true);
            return Err(Cut::TimedOut);
        }
        let kept = self.kept_from(raws);
        if timed_out() {
            self.expired.set(true);
            return Err(Cut::TimedOut);
        }
        Ok(kept.into_iter().map(|k| self.candidate(&k)).collect())
    }

    /// The `k` best networks for `target`, ranked by |relative error|; ties go to fewer parts, then the
    /// tighter band, then more pieces left, then the shape order and part ids.
    ///
    /// The networks ranked are those of the window target × (1 ± ρ), deduplicated as in
    /// [`Index::in_window`], for the first ρ of 1 ppm, 4 ppm, 16 ppm, … whose window keeps `k` of them (or
    /// holds every network). Nothing outside a window can rank above what is inside it, and a network
    /// dropped as a duplicate always has a preferred one kept within 1 ppm, so the first answer is the
    /// closest network there is, or one within 1 ppm of it with fewer parts (or a tighter band, or more
    /// stock left).
    pub fn best(&self, target: Ohms, k: usize) -> Vec<Candidate> {
        let t = target.0;
        if k == 0 || self.entries.is_empty() || !(t.is_finite() && t > 0.0) {
            return Vec::new();
        }
        // No network exceeds max_parts times the largest value (all in series).
        let ceiling = self.values[self.values.len() - 1] * self.max_parts as f64 * (1.0 + 1e-9);
        let mut rho = 1e-6;
        loop {
            let (low, high) = (t * (1.0 - rho), t * (1.0 + rho));
            let everything = low <= 0.0 && high >= ceiling;
            let kept = self.kept_in(low, high);
            if everything || kept.len() >= k {
                let mut ranked: Vec<(f64, Preference, Raw)> = kept
                    .into_iter()
                    .map(|r| (((r.ohms - t) / t).abs(), self.preference(&r), r))
                    .collect();
                ranked.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
                return ranked
                    .iter()
                    .take(k)
                    .map(|(_, _, r)| self.candidate(r))
                    .collect();
            }
            rho *= 4.0;
        }
    }

    fn member_qty_ok(&self, m: &[u32]) -> bool {
        m.iter().all(|&x| {
            let used = m.iter().filter(|&&y| y == x).count() as u32;
            used <= self.entries[x as usize].qty
        })
    }

    /// Pushes the network if the stock allows it and its exact value lies in [low, high].
    fn emit(&self, shape: Shape, m: [u32; 3], low: f64, high: f64, out: &mut Vec<Raw>) {
        let n = shape.parts();
        if !self.member_qty_ok(&m[..n]) {
            return;
        }
        let mut x = [0.0; 3];
        for (xi, &mi) in x.iter_mut().zip(&m[..n]) {
            *xi = self.values[mi as usize];
        }
        let ohms = shape.eval(x);
        if ohms >= low && ohms <= high {
            out.push(Raw { ohms, shape, m });
        }
    }

    /// The entries whose value lies in [lo, hi], from `from` on.
    fn value_range(&self, from: usize, lo: f64, hi: f64) -> std::ops::Range<usize> {
        let start = from + self.values[from..].partition_point(|&v| v < lo);
        let end = from + self.values[from..].partition_point(|&v| v <= hi);
        start..end.max(start)
    }

    /// The entries whose conductance 1/R lies in [g_lo, g_hi], from `from` on.
    fn conductance_range(&self, from: usize, g_lo: f64, g_hi: f64) -> std::ops::Range<usize> {
        if g_hi <= 0.0 || g_hi < g_lo {
            return from..from;
        }
        let lo = 1.0 / g_hi;
        let hi = if g_lo > 0.0 {
            1.0 / g_lo
        } else {
            f64::INFINITY
        };
        // The reciprocals add a rounding of their own; widen once more, the exact check follows.
        self.value_range(from, lo * (1.0 - SLACK), hi * (1.0 + SLACK))
    }

    /// Every network (not yet deduplicated) with a value in [low, high], one shape after another; each
    /// shape stops where the limit or the deadline does (both only ever become true, so the shapes after
    /// a stop stop at once).
    fn collect(&self, low: f64, high: f64, limit: usize, out: &mut Vec<Raw>) {
        let n = self.entries.len();
        if n == 0 || high.is_nan() || low.is_nan() || high < low || high <= 0.0 {
            return;
        }
        let low = low.max(0.0);
        let inv_low = if low > 0.0 { 1.0 / low } else { f64::INFINITY };
        let inv_high = 1.0 / high;
        let slack = SLACK * high;
        let w = Window {
            low,
            high,
            inv_low,
            inv_high,
            slack,
            limit,
        };

        for i in self.value_range(0, low, high) {
            self.emit(Shape::Single, [i as u32, 0, 0], low, high, out);
        }
        if self.max_parts < 2 {
            return;
        }
        self.series_pairs(&w, out);
        self.parallel_pairs(&w, out);
        if self.max_parts < 3 {
            return;
        }
        self.series_triples(&w, out);
        self.parallel_triples(&w, out);
        self.series_of_parallel(&w, out);
        self.parallel_of_series(&w, out);
    }

    /// The Series2 networks in the window: pairs a + b.
    fn series_pairs(&self, w: &Window, out: &mut Vec<Raw>) {
        let Window {
            low,
            high,
            slack,
            limit,
            ..
        } = *w;
        let v = &self.values;
        // Pairs, a ≤ b: as a grows, b's bounds only fall, so two pointers walk down instead of a binary search
        // per a (the pair search is the one that must take microseconds).
        let mut range = Falling::new(v);
        for (i, &a) in v.iter().enumerate() {
            if self.stop(out.len(), limit) {
                return;
            }
            if a + a > high {
                break;
            }
            let js = range.between(low - a - slack, high - a + slack);
            for j in js.start.max(i)..js.end {
                self.emit(Shape::Series2, [j as u32, i as u32, 0], low, high, out);
            }
        }
    }

    /// The Parallel2 networks in the window: pairs a | b, a ≤ b, found by conductance.
    fn parallel_pairs(&self, w: &Window, out: &mut Vec<Raw>) {
        let Window {
            low,
            high,
            inv_low,
            inv_high,
            limit,
            ..
        } = *w;
        let v = &self.values;
        let mut range = Falling::new(v);
        for (i, &a) in v.iter().enumerate() {
            if self.stop(out.len(), limit) {
                return;
            }
            if Shape::Parallel2.eval([a, a, 0.0]) > high {
                break;
            }
            let delta = SLACK * (inv_high + 1.0 / a + if low > 0.0 { inv_low } else { 0.0 });
            let g_lo = inv_high - 1.0 / a - delta;
            let g_hi = inv_low - 1.0 / a + delta;
            if g_hi <= 0.0 {
                continue;
            }
            let lo = 1.0 / g_hi * (1.0 - SLACK);
            let hi = if g_lo > 0.0 {
                1.0 / g_lo * (1.0 + SLACK)
            } else {
                f64::INFINITY
            };
            let js = range.between(lo, hi);
            for j in js.start.max(i)..js.end {
                self.emit(Shape::Parallel2, [i as u32, j as u32, 0], low, high, out);
            }
        }
    }

    /// The Series3 networks in the window: a + b + c.
    fn series_triples(&self, w: &Window, out: &mut Vec<Raw>) {
        let Window {
            low,
            high,
            slack,
            limit,
            ..
        } = *w;
        let v = &self.values;
        // Three in series, smallest first in the loops, written largest first.
        for (i, &a) in v.iter().enumerate() {
            if self.stop(out.len(), limit) {
                return;
            }
            if a + a + a > high {
                break;
            }
            for (j, &b) in v.iter().enumerate().skip(i) {
                if self.stop(out.len(), limit) {
                    return;
                }
                if b + b + a > high {
                    break;
                }
                for k in self.value_range(j, low - a - b - slack, high - a - b + slack) {
                    self.emit(
                        Shape::Series3,
                        [k as u32, j as u32, i as u32],
                        low,
                        high,
                        out,
                    );
                }
            }
        }
    }

    /// The Parallel3 networks in the window: a | b | c.
    fn parallel_triples(&self, w: &Window, out: &mut Vec<Raw>) {
        let Window {
            low,
            high,
            inv_low,
            inv_high,
            limit,
            ..
        } = *w;
        let v = &self.values;
        // Three in parallel: i ≤ j ≤ k by value, so 1/R is at least 1/a and at most 3/a.
        for (i, &a) in v.iter().enumerate() {
            if self.stop(out.len(), limit) {
                return;
            }
            if Shape::Parallel3.eval([a, a, a]) > high {
                break;
            }
            // a | b must reach low: 1/b ≤ 1/low − 1/a (widened by an absolute slack, as the difference
            // cancels when a is close to low).
            let first = if low > 0.0 {
                let g = inv_low - 1.0 / a + SLACK * (inv_low + 1.0 / a);
                if g <= 0.0 {
                    continue;
                }
                v.partition_point(|&b| b < 1.0 / g).max(i)
            } else {
                i
            };
            for (j, &b) in v.iter().enumerate().skip(first) {
                if self.stop(out.len(), limit) {
                    return;
                }
                if Shape::Parallel3.eval([a, b, b]) > high {
                    break;
                }
                if Shape::Parallel2.eval([a, b, 0.0]) < low * (1.0 - SLACK) {
                    continue;
                }
                let delta =
                    SLACK * (inv_high + 1.0 / a + 1.0 / b + if low > 0.0 { inv_low } else { 0.0 });
                let g_lo = inv_high - 1.0 / a - 1.0 / b - delta;
                let g_hi = inv_low - 1.0 / a - 1.0 / b + delta;
                for k in self.conductance_range(j, g_lo, g_hi) {
                    self.emit(
                        Shape::Parallel3,
                        [i as u32, j as u32, k as u32],
                        low,
                        high,
                        out,
                    );
                }
            }
        }
    }

    /// The SeriesOfParallel networks in the window: a + (b | c).
    fn series_of_parallel(&self, w: &Window, out: &mut Vec<Raw>) {
        let Window {
            low,
            high,
            slack,
            limit,
            ..
        } = *w;
        let v = &self.values;
        // a+(b|c), b ≤ c: the pair's value p lies in [low − a, high − a], and in [b/2, b] since c ≥ b.
        for (x, &a) in v.iter().enumerate() {
            if self.stop(out.len(), limit) {
                return;
            }
            if a > high {
                break;
            }
            let p_lo = low - a - slack;
            let p_hi = high - a + slack;
            let first = v.partition_point(|&b| b < p_lo * (1.0 - SLACK));
            for (i, &b) in v.iter().enumerate().skip(first) {
                if self.stop(out.len(), limit) {
                    return;
                }
                if a + Shape::Parallel2.eval([b, b, 0.0]) > high {
                    break;
                }
                let delta =
                    SLACK * (1.0 / p_hi + 1.0 / b + if p_lo > 0.0 { 1.0 / p_lo } else { 0.0 });
                let g_lo = 1.0 / p_hi - 1.0 / b - delta;
                let g_hi = if p_lo > 0.0 {
                    1.0 / p_lo - 1.0 / b + delta
                } else {
                    f64::INFINITY
                };
                for j in self.conductance_range(i, g_lo, g_hi) {
                    self.emit(
                        Shape::SeriesOfParallel,
                        [x as u32, i as u32, j as u32],
                        low,
                        high,
                        out,
                    );
                }
            }
        }
    }

    /// The ParallelOfSeries networks in the window: a | (b + c).
    fn parallel_of_series(&self, w: &Window, out: &mut Vec<Raw>) {
        let Window {
            low,
            high,
            inv_low,
            inv_high,
            limit,
            ..
        } = *w;
        let v = &self.values;
        // a|(b+c), b ≥ c: the pair's value s has 1/s in [1/high − 1/a, 1/low − 1/a], and s lies in [b, 2b].
        for (x, &a) in v.iter().enumerate() {
            if self.stop(out.len(), limit) {
                return;
            }
            if a < low * (1.0 - SLACK) {
                continue;
            }
            let delta = SLACK * (inv_high + 1.0 / a + if low > 0.0 { inv_low } else { 0.0 });
            let g_lo = inv_high - 1.0 / a - delta;
            let g_hi = inv_low - 1.0 / a + delta;
            if g_hi <= 0.0 {
                continue;
            }
            let s_lo = 1.0 / g_hi * (1.0 - SLACK);
            let s_hi = if g_lo > 0.0 {
                1.0 / g_lo * (1.0 + SLACK)
            } else {
                f64::INFINITY
            };
            let first = v.partition_point(|&b| b < s_lo / 2.0 * (1.0 - SLACK));
            for (j, &b) in v.iter().enumerate().skip(first) {
                if self.stop(out.len(), limit) {
                    return;
                }
                if b > s_hi {
                    break;
                }
                let pad = SLACK * (s_lo + b);
                for i in self.value_range(0, s_lo - b - pad, s_hi - b + pad) {
                    if i > j {
                        break;
                    }
                    self.emit(
                        Shape::ParallelOfSeries,
                        [x as u32, j as u32, i as u32],
                        low,
                        high,
                        out,
                    );
                }
            }
        }
    }

    /// The worst-case band, computed as [`Network::band`] computes it.
    fn band(&self, raw: &Raw) -> (f64, f64) {
        let n = raw.shape.parts();
        let at = |f: &dyn Fn(&Entry) -> f64| {
            let mut x = [0.0; 3];
            for (xi, &mi) in x.iter_mut().zip(&raw.m[..n]) {
                *xi = f(&self.entries[mi as usize]);
            }
            raw.shape.eval(x)
        };
        let low = at(&|e| e.ohms * (1.0 - e.tolerance));
        let high = at(&|e| e.ohms * (1.0 + e.tolerance));
        (low / raw.ohms - 1.0, high / raw.ohms - 1.0)
    }

    fn left(&self, raw: &Raw) -> u32 {
        let m = &raw.m[..raw.shape.parts()];
        m.iter()
            .map(|&x| {
                let used = m.iter().filter(|&&y| y == x).count() as u32;
                self.entries[x as usize].qty - used
            })
            .min()
            .unwrap_or(0)
    }

    /// Where a network stands in the order of preference.
    fn preference(&self, raw: &Raw) -> Preference {
        let (low, high) = self.band(raw);
        let n = raw.shape.parts();
        let mut ids = [0; 3];
        for (o, &x) in ids.iter_mut().zip(&raw.m[..n]) {
            *o = self.entries[x as usize].id as u32;
        }
        Preference {
            parts: n as u8,
            tol: ((-low).max(high) * 1e9).round() as i64,
            not_left: u32::MAX - self.left(raw),
            shape: raw.shape,
            ids,
        }
    }

    /// The networks with a value in [low, high], deduplicated, sorted by value.
    ///
    /// Deduplication is greedy in order of preference: a network is kept unless an already kept one lies
    /// within 1 ppm. So no two kept networks are within 1 ppm of each other, and every dropped one has a
    /// preferred network kept within 1 ppm of it. Networks only interact within a run of 1-ppm neighbours,
    /// so each run is settled on its own.
    fn kept_in(&self, low: f64, high: f64) -> Vec<Raw> {
        let mut raws = Vec::new();
        self.collect(low, high, usize::MAX, &mut raws);
        self.kept_from(raws)
    }

    /// Deduplicates raw networks (see [`Index::in_window`]), sorted by value.
    fn kept_from(&self, mut all: Vec<Raw>) -> Vec<Raw> {
        // Positive floats order like their bit patterns, and integer keys sort faster.
        all.sort_unstable_by_key(|r| r.ohms.to_bits());
        let mut out = Vec::with_capacity(all.len());
        let mut start = 0;
        while start < all.len() {
            // A window of a dense stock can hold a run of 300 000 networks, a fraction of a second's work:
            // past the deadline the caller throws the list away, so stop building it.
            if self.past_deadline() {
                return out;
            }
            let mut end = start + 1;
            while end < all.len() && close(all[end - 1].ohms, all[end].ohms) {
                end += 1;
            }
            let run = &all[start..end];
            start = end;
            if run.len() == 1 {
                out.push(run[0]);
                continue;
            }
            // Each member's neighbours within 1 ppm are a stretch of the run around it.
            let mut reach = Vec::with_capacity(run.len());
            let (mut lo, mut hi) = (0, 0);
            for (i, r) in run.iter().enumerate() {
                while !close(run[lo].ohms, r.ohms) {
                    lo += 1;
                }
                hi = hi.max(i);
                while hi + 1 < run.len() && close(r.ohms, run[hi + 1].ohms) {
                    hi += 1;
                }
                reach.push((lo, hi));
            }
            let mut order: Vec<(Preference, u32)> = run
                .iter()
                .enumerate()
                .map(|(i, r)| (self.preference(r), i as u32))
                .collect();
            order.sort_unstable();
            // The kept ones so far, by position: whether one lies within a member's reach is a range query,
            // O(log n) where scanning the reach cost its length (hundreds on a dense stock).
            let mut kept_at: std::collections::BTreeSet<usize> = std::collections::BTreeSet::new();
            for (_, i) in order {
                if self.past_deadline() {
                    return out;
                }
                let (lo, hi) = reach[i as usize];
                if kept_at.range(lo..=hi).next().is_none() {
                    kept_at.insert(i as usize);
                }
            }
            let mut kept = vec![false; run.len()];
            for i in kept_at {
                kept[i] = true;
            }
            out.extend(run.iter().zip(kept).filter(|(_, k)| *k).map(|(r, _)| *r));
        }
        out
    }

    fn candidate(&self, raw: &Raw) -> Candidate {
        let n = raw.shape.parts();
        let member = |x: u32| {
            let e = &self.entries[x as usize];
            let part = &self.stock.parts[e.id];
            Network::Single(Member {
                ohms: part.ohms,
                tolerance: part.tolerance,
                power: part.power,
                location: part.location(),
                part: Some(e.id),
            })
        };
        let m = raw.m;
        let network = match raw.shape {
            Shape::Single => member(m[0]),
            Shape::Series2 => Network::Series(vec![member(m[0]), member(m[1])]),
            Shape::Parallel2 => Network::Parallel(vec![member(m[0]), member(m[1])]),
            Shape::Series3 => Network::Series(vec![member(m[0]), member(m[1]), member(m[2])]),
            Shape::Parallel3 => Network::Parallel(vec![member(m[0]), member(m[1]), member(m[2])]),
            Shape::SeriesOfParallel => Network::Series(vec![
                member(m[0]),
                Network::Parallel(vec![member(m[1]), member(m[2])]),
            ]),
            Shape::ParallelOfSeries => Network::Parallel(vec![
                member(m[0]),
                Network::Series(vec![member(m[1]), member(m[2])]),
            ]),
        };
        let mut uses: Vec<(PartId, u32)> = Vec::with_capacity(n);
        let mut ids: Vec<PartId> = m[..n]
            .iter()
            .map(|&x| self.entries[x as usize].id)
            .collect();
        ids.sort_unstable();
        for id in ids {
            match uses.last_mut() {
                Some((last, count)) if *last == id => *count += 1,
                _ => uses.push((id, 1)),
            }
        }
        Candidate {
            network,
            ohms: Ohms(raw.ohms),
            uses,
            parts: n,
            band: self.band(raw),
            left: self.left(raw),
        }
    }
}

/// Every distinct network of at most `max_parts` (1..=3) stock parts whose resistance lies in [low, high],
/// deduplicated (of two within 1 ppm keep fewer parts, then the tighter band, then more stock left), sorted
/// by ohms ascending.
pub fn in_window(stock: &Stock, max_parts: usize, low: Ohms, high: Ohms) -> Vec<Candidate> {
    Index::new(stock, max_parts).in_window(low, high)
}

/// The `k` best networks of at most `max_parts` stock parts for `target`, ranked by |relative error|; ties
/// go to fewer parts, then the tighter band, then more pieces left in stock.
pub fn best(stock: &Stock, target: Ohms, max_parts: usize, k: usize) -> Vec<Candidate> {
    Index::new(stock, max_parts).best(target, k)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stock::Part;
    use crate::units::{Tolerance, Watts};
    use std::cmp::{Ordering, Reverse};

    /// The crate's SplitMix64 (Steele, Lea and Flood, OOPSLA 2014), so the random stocks are the same on
    /// every run; these draws are what the tests need from it.
    use crate::spread::rng::SplitMix64;
    trait Draws {
        /// Uniform in [0, 1).
        fn unit(&mut self) -> f64;
        fn below(&mut self, n: usize) -> usize;
    }
    impl Draws for SplitMix64 {
        fn unit(&mut self) -> f64 {
            (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
        }
        fn below(&mut self, n: usize) -> usize {
            (self.next_u64() % n as u64) as usize
        }
    }

    fn part(ohms: f64, tol: f64, qty: u32, location: &str) -> Part {
        Part {
            ohms: Ohms(ohms),
            tolerance: Tolerance(tol),
            power: Watts(0.25),
            qty,
            locations: vec![location.to_string()],
            notes: Vec::new(),
            lines: Vec::new(),
        }
    }

    /// A random stock: E12 values over five decades (so that sums and parallels coincide, as 1k + 1k = 2k
    /// or 2k2 | 2k2 = 1k1 do) mixed with arbitrary values, quantities 0 to 3, and some values stocked twice
    /// at different tolerances.
    fn random_stock(rng: &mut SplitMix64, n: usize) -> Stock {
        const E12: [f64; 12] = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
        let tols = [0.01, 0.02, 0.05];
        let mut parts: Vec<Part> = Vec::new();
        for i in 0..n {
            let ohms = if rng.unit() < 0.7 {
                E12[rng.below(12)] * [10.0, 100.0, 1000.0, 10_000.0, 100_000.0][rng.below(5)]
            } else {
                10.0 * 10f64.powf(5.0 * rng.unit())
            };
            let ohms = if i > 0 && rng.unit() < 0.15 {
                parts[rng.below(parts.len())].ohms.0
            } else {
                ohms
            };
            let qty = rng.below(4) as u32;
            parts.push(part(ohms, tols[rng.below(3)], qty, &format!("bin {i}")));
        }
        Stock::from_parts("random", parts)
    }

    /// A network found by brute force, with everything the ranking rules look at.
    #[derive(Clone)]
    struct Naive {
        network: Network,
        ohms: f64,
        parts: usize,
        tol_key: i64,
        left: u32,
        shape: u8,
        ids: Vec<PartId>,
    }

    /// Every network of up to `max_parts` parts, by brute force: each shape over every choice of parts, the
    /// members written in the documented order, and the quantities checked afterwards.
    fn naive_all(stock: &Stock, max_parts: usize) -> Vec<Naive> {
        let mut usable: Vec<PartId> = (0..stock.parts.len())
            .filter(|&i| stock.parts[i].qty > 0)
            .collect();
        usable.sort_by(|&a, &b| {
            (stock.parts[a].ohms.0, a)
                .partial_cmp(&(stock.parts[b].ohms.0, b))
                .unwrap()
        });
        let leaf = |id: PartId| {
            let p = &stock.parts[id];
            Network::Single(Member {
                ohms: p.ohms,
                tolerance: p.tolerance,
                power: p.power,
                location: p.location(),
                part: Some(id),
            })
        };
        let mut out = Vec::new();
        let mut push = |shape: u8, network: Network| {
            let ids: Vec<PartId> = network.members().iter().map(|m| m.part.unwrap()).collect();
            let used = |id: PartId| ids.iter().filter(|&&x| x == id).count() as u32;
            if ids.iter().any(|&id| used(id) > stock.parts[id].qty) {
                return;
            }
            let (lo, hi) = network.band();
            out.push(Naive {
                ohms: network.ohms().0,
                parts: ids.len(),
                tol_key: ((-lo).max(hi) * 1e9).round() as i64,
                left: ids
                    .iter()
                    .map(|&id| stock.parts[id].qty - used(id))
                    .min()
                    .unwrap(),
                shape,
                ids,
                network,
            });
        };
        let u = &usable;
        let n = u.len();
        for &a in u {
            push(0, leaf(a));
        }
        if max_parts >= 2 {
            for a in 0..n {
                for b in a..n {
                    push(1, Network::Series(vec![leaf(u[b]), leaf(u[a])]));
                    push(2, Network::Parallel(vec![leaf(u[a]), leaf(u[b])]));
                }
            }
        }
        if max_parts >= 3 {
            for a in 0..n {
                for b in a..n {
                    for c in b..n {
                        push(3, Network::Series(vec![leaf(u[c]), leaf(u[b]), leaf(u[a])]));
                        push(
                            4,
                            Network::Parallel(vec![leaf(u[a]), leaf(u[b]), leaf(u[c])]),
                        );
                    }
                }
            }
            for x in 0..n {
                for b in 0..n {
                    for c in b..n {
                        push(
                            5,
                            Network::Series(vec![
                                leaf(u[x]),
                                Network::Parallel(vec![leaf(u[b]), leaf(u[c])]),
                            ]),
                        );
                        push(
                            6,
                            Network::Parallel(vec![
                                leaf(u[x]),
                                Network::Series(vec![leaf(u[c]), leaf(u[b])]),
                            ]),
                        );
                    }
                }
            }
        }
        out
    }

    fn naive_prefer(a: &Naive, b: &Naive) -> Ordering {
        (a.parts, a.tol_key, Reverse(a.left), a.shape, &a.ids).cmp(&(
            b.parts,
            b.tol_key,
            Reverse(b.left),
            b.shape,
            &b.ids,
        ))
    }

    /// The deduplication rule as the module documents it: in order of preference, keep each network unless
    /// a kept one lies within 1 ppm of the smaller of the two. Returned by value.
    fn naive_dedupe(mut set: Vec<Naive>) -> Vec<Naive> {
        set.sort_by(naive_prefer);
        let mut kept: Vec<Naive> = Vec::new();
        for c in set {
            let near = |k: &Naive| {
                let (lo, hi) = (c.ohms.min(k.ohms), c.ohms.max(k.ohms));
                hi - lo <= 1e-6 * lo
            };
            if !kept.iter().any(near) {
                kept.push(c);
            }
        }
        kept.sort_by(|a, b| a.ohms.partial_cmp(&b.ohms).unwrap());
        kept
    }

    fn naive_window(all: &[Naive], low: f64, high: f64) -> Vec<Naive> {
        let inside = all
            .iter()
            .filter(|c| c.ohms >= low && c.ohms <= high)
            .map(Naive::clone)
            .collect();
        naive_dedupe(inside)
    }

    /// The documented search for the best: windows of ±1 ppm, ±4 ppm, … until one keeps k networks.
    fn naive_best(stock: &Stock, target: f64, max_parts: usize, k: usize) -> Vec<Naive> {
        let all = naive_all(stock, max_parts);
        let err = |c: &Naive| ((c.ohms - target) / target).abs();
        let mut rho = 1e-6;
        loop {
            let mut found = naive_window(&all, target * (1.0 - rho), target * (1.0 + rho));
            if found.len() >= k || all.iter().all(|c| err(c) <= rho) {
                found.sort_by(|a, b| {
                    err(a)
                        .partial_cmp(&err(b))
                        .unwrap()
                        .then_with(|| naive_prefer(a, b))
                });
                found.truncate(k);
                return found;
            }
            rho *= 4.0;
        }
    }

    fn assert_same(fast: &[Candidate], naive: &[Naive], what: &str) {
        let show = |v: &[Candidate]| v.iter().map(|c| c.network.notation()).collect::<Vec<_>>();
        let show_naive = |v: &[Naive]| v.iter().map(|c| c.network.notation()).collect::<Vec<_>>();
        assert_eq!(
            fast.len(),
            naive.len(),
            "{what}: {:?} vs {:?}",
            show(fast),
            show_naive(naive)
        );
        for (f, n) in fast.iter().zip(naive) {
            assert_eq!(f.network, n.network, "{what}");
            assert_eq!(f.ohms.0.to_bits(), n.ohms.to_bits(), "{what}");
            assert_eq!(f.parts, n.parts, "{what}");
            assert_eq!(f.left, n.left, "{what}");
        }
    }

    #[test]
    fn windows_equal_exhaustive_enumeration_on_random_stocks() {
        let mut rng = SplitMix64::new(0x5EED_0001);
        for round in 0..40 {
            let n = 6 + rng.below(9);
            let stock = random_stock(&mut rng, n);
            let max_parts = 1 + round % 3;
            let index = Index::new(&stock, max_parts);
            let all = naive_all(&stock, max_parts);
            let pairs: Vec<f64> = all
                .iter()
                .filter(|c| c.shape == 2)
                .map(|c| c.ohms)
                .collect();
            for w in 0..16 {
                let (low, high) = if w >= 12 && !pairs.is_empty() {
                    // Just below a parallel pair's value, where a third part far larger than the two only
                    // nudges the value down: the pruning bounds are tightest here.
                    let a = pairs[rng.below(pairs.len())];
                    (a * (1.0 - 10f64.powf(-6.0 + 4.3 * rng.unit())), a)
                } else if w < 8 {
                    // A random window, from a hair wide to a factor of 3.
                    let centre = 3.0 * 10f64.powf(6.5 * rng.unit());
                    let ratio = 1.0 + 2.0 * rng.unit().powi(3);
                    (centre / ratio.sqrt(), centre * ratio.sqrt())
                } else if w < 11 && !all.is_empty() {
                    // Edges exactly on network values: both ends are inclusive.
                    let a = all[rng.below(all.len())].ohms;
                    let b = all[rng.below(all.len())].ohms;
                    (a.min(b), a.max(b))
                } else {
                    (0.0, 1e12)
                };
                let fast = index.in_window(Ohms(low), Ohms(high));
                let naive = naive_window(&all, low, high);
                assert_same(
                    &fast,
                    &naive,
                    &format!("round {round} window {low}..{high}"),
                );
                assert!(fast.windows(2).all(|p| p[0].ohms.0 < p[1].ohms.0));
            }
        }
    }

    #[test]
    fn best_equals_exhaustive_ranking_on_random_stocks() {
        let mut rng = SplitMix64::new(0x5EED_0002);
        for round in 0..40 {
            let n = 5 + rng.below(10);
            let stock = random_stock(&mut rng, n);
            let max_parts = 1 + round % 3;
            let index = Index::new(&stock, max_parts);
            for _ in 0..6 {
                let target = 2.0 * 10f64.powf(6.5 * rng.unit());
                let k = 1 + rng.below(8);
                let fast = index.best(Ohms(target), k);
                let naive = naive_best(&stock, target, max_parts, k);
                assert_same(
                    &fast,
                    &naive,
                    &format!("round {round} target {target} k {k}"),
                );
                assert_eq!(best(&stock, Ohms(target), max_parts, k), fast);
            }
        }
    }

    #[test]
    fn candidates_are_exactly_their_networks() {
        // The search computes values and bands itself; they must be the network's own, bit for bit.
        let mut rng = SplitMix64::new(0x5EED_0003);
        let stock = random_stock(&mut rng, 14);
        for c in in_window(&stock, 3, Ohms(0.0), Ohms(1e12)) {
            assert_eq!(c.network.ohms().0.to_bits(), c.ohms.0.to_bits());
            assert_eq!(c.network.band(), c.band);
            assert_eq!(c.network.part_count(), c.parts);
            let mut ids: Vec<PartId> = c
                .network
                .members()
                .iter()
                .map(|m| m.part.unwrap())
                .collect();
            ids.sort_unstable();
            let counted: u32 = c.uses.iter().map(|u| u.1).sum();
            assert_eq!(counted as usize, c.parts);
            assert!(c.uses.windows(2).all(|w| w[0].0 < w[1].0));
            for (id, n) in &c.uses {
                assert_eq!(ids.iter().filter(|x| *x == id).count() as u32, *n);
                assert!(*n <= stock.parts[*id].qty);
            }
            for m in c.network.members() {
                let p = &stock.parts[m.part.unwrap()];
                assert_eq!(m.location, p.location());
                assert_eq!(
                    (m.ohms, m.tolerance, m.power),
                    (p.ohms, p.tolerance, p.power)
                );
            }
        }
    }

    #[test]
    fn counts_every_network_once() {
        // With n values in generic position (no two networks coincide) and three of each, the search finds
        // n singles, 2·C(n+1, 2) pairs and 2·C(n+2, 3) + 2·n·C(n+1, 2) triples (combinations with
        // repetition: C(n+1, 2) unordered pairs, C(n+2, 3) unordered triples).
        // These nine values have no two networks within 5 ppm of each other (checked when the test was
        // written), so deduplication at 1 ppm removes nothing.
        let n = 9usize;
        let parts = (0..n)
            .map(|i| {
                let ohms = 100.0 * 1.7f64.powi(i as i32) * (1.0 + ((i + 2) as f64).sqrt() / 100.0);
                part(ohms, 0.05, 3, "x")
            })
            .collect();
        let stock = Stock::from_parts("generic", parts);
        let c2 = n * (n + 1) / 2;
        let c3 = n * (n + 1) * (n + 2) / 6;
        let count = |p| in_window(&stock, p, Ohms(0.0), Ohms(1e9)).len();
        assert_eq!(count(1), n);
        assert_eq!(count(2), n + 2 * c2);
        assert_eq!(count(3), n + 2 * c2 + 2 * c3 + 2 * n * c2);
    }

    #[test]
    fn series_parallel_and_mixed_by_hand() {
        let stock = Stock::from_parts(
            "hand",
            vec![
                part(10e3, 0.05, 5, "D9"),
                part(4700.0, 0.01, 5, "C8"),
                part(2200.0, 0.05, 5, "C2"),
                part(1000.0, 0.05, 5, "C7"),
            ],
        );
        let at = |parts, ohms: f64| {
            in_window(
                &stock,
                parts,
                Ohms(ohms * (1.0 - 1e-9)),
                Ohms(ohms * (1.0 + 1e-9)),
            )
            .into_iter()
            .map(|c| c.network.notation())
            .collect::<Vec<_>>()
        };
        // 10k + 4k7 = 14k7; 4k7 | 4k7 = 2350 Ω; 10k | 2k2 = 22e6 / 12.2e3 = 1803.28 Ω.
        assert_eq!(at(2, 14_700.0), ["10k+4k7"]);
        assert_eq!(at(2, 2350.0), ["4k7|4k7"]);
        assert_eq!(at(2, 22e6 / 12_200.0), ["2k2|10k"]);
        // 1k + (2k2 | 2k2) = 2100 Ω; 1k | (10k + 4k7) = 14.7e6 / 15.7e3 = 936.31 Ω; 1k+1k+1k = 3k;
        // 1k | 1k | 1k = 333.33 Ω.
        assert_eq!(at(3, 2100.0), ["1k+(2k2|2k2)"]);
        assert_eq!(at(3, 14.7e6 / 15_700.0), ["1k|(10k+4k7)"]);
        assert_eq!(at(3, 3000.0), ["1k+1k+1k"]);
        assert_eq!(at(3, 1000.0 / 3.0), ["1k|1k|1k"]);
        // 2k2 + 1k + 1k = 4k2, and 2k2 | 2k2 = 1k1 from a pair: the window is exact.
        assert_eq!(at(3, 4200.0), ["2k2+1k+1k"]);
    }

    #[test]
    fn band_of_a_network_by_hand() {
        let stock = Stock::from_parts(
            "band",
            vec![
                part(10e3, 0.01, 1, "a"),
                part(4700.0, 0.05, 1, "b"),
                part(1000.0, 0.01, 1, "c"),
                part(1000.0, 0.05, 1, "d"),
            ],
        );
        let only = |parts, ohms: f64| {
            let found = in_window(
                &stock,
                parts,
                Ohms(ohms * (1.0 - 1e-9)),
                Ohms(ohms * (1.0 + 1e-9)),
            );
            assert_eq!(found.len(), 1, "{ohms}");
            found.into_iter().next().unwrap()
        };
        // 10k 1 % + 4k7 5 %: low 9900 + 4465 = 14365, high 10100 + 4935 = 15035, nominal 14700:
        // -2.279 % / +2.279 %.
        let c = only(2, 14_700.0);
        assert!((c.band.0 - (14_365.0 / 14_700.0 - 1.0)).abs() < 1e-12);
        assert!((c.band.1 - (15_035.0 / 14_700.0 - 1.0)).abs() < 1e-12);
        // 1k 1 % | 1k 5 %: low 990 | 950 = 940500 / 1940 = 484.794, high 1010 | 1050 = 1060500 / 2060 =
        // 514.806, nominal 500: -3.041 % / +2.961 %.
        let c = only(2, 500.0);
        assert!((c.band.0 - (940_500.0 / 1940.0 / 500.0 - 1.0)).abs() < 1e-12);
        assert!((c.band.1 - (1_060_500.0 / 2060.0 / 500.0 - 1.0)).abs() < 1e-12);
    }

    #[test]
    fn quantities_are_honoured() {
        let stock = |qty| Stock::from_parts("qty", vec![part(1000.0, 0.05, qty, "C7")]);
        let values = |s: &Stock| {
            in_window(s, 3, Ohms(0.0), Ohms(1e9))
                .into_iter()
                .map(|c| c.ohms.0)
                .collect::<Vec<_>>()
        };
        // One piece: just the 1k. Two: also 1k + 1k and 1k | 1k. Three: also the triples, 3k, 333.3 Ω,
        // 1k + (1k | 1k) = 1k5 and 1k | (1k + 1k) = 666.7 Ω.
        assert_eq!(values(&stock(0)), Vec::<f64>::new());
        assert_eq!(values(&stock(1)), [1000.0]);
        assert_eq!(values(&stock(2)), [500.0, 1000.0, 2000.0]);
        let three = values(&stock(3));
        assert_eq!(three.len(), 7);
        for want in [
            1000.0 / 3.0,
            500.0,
            2000.0 / 3.0,
            1000.0,
            1500.0,
            2000.0,
            3000.0,
        ] {
            assert!(three.iter().any(|v| (v - want).abs() < 1e-9), "{want}");
        }
        // best() never draws on an empty bin: 2k2 | 2k2 = 1k1 exactly, but 2k2 has none left.
        let s = Stock::from_parts(
            "empty bin",
            vec![part(2200.0, 0.05, 0, "C2"), part(1000.0, 0.05, 1, "C7")],
        );
        let b = best(&s, Ohms(1100.0), 3, 5);
        assert_eq!(b.len(), 1);
        assert_eq!(b[0].network.notation(), "1k");
        // Two pieces of one part, not two parts: a pair needs qty ≥ 2 of the same part.
        let s = Stock::from_parts(
            "one each",
            vec![part(2200.0, 0.05, 1, "C2"), part(2200.0, 0.01, 1, "C3")],
        );
        let b = best(&s, Ohms(1100.0), 2, 1);
        assert_eq!(b[0].uses, vec![(0, 1), (1, 1)]);
        assert_eq!(b[0].left, 0);
    }

    #[test]
    fn duplicates_keep_fewer_parts_then_tighter_band_then_more_stock() {
        // 1k + 1k = 2k exactly: the single 2k wins on parts.
        let s = Stock::from_parts(
            "dups",
            vec![part(1000.0, 0.01, 4, "C7"), part(2000.0, 0.05, 1, "C9")],
        );
        let w = in_window(&s, 2, Ohms(1999.0), Ohms(2001.0));
        assert_eq!(w.len(), 1);
        assert_eq!(w[0].network.notation(), "2k");
        // The same value at 5 % and 1 %: the 1 % part, though the 5 % bin is fuller.
        let s = Stock::from_parts(
            "dups",
            vec![part(4700.0, 0.05, 9, "A"), part(4700.0, 0.01, 2, "C8")],
        );
        let w = in_window(&s, 1, Ohms(4000.0), Ohms(5000.0));
        assert_eq!(w.len(), 1);
        assert_eq!(w[0].uses, vec![(1, 1)]);
        // Equal tolerance: the fuller bin.
        let s = Stock::from_parts(
            "dups",
            vec![part(4700.0, 0.05, 2, "A"), part(4700.0, 0.05, 9, "B")],
        );
        let w = in_window(&s, 1, Ohms(4000.0), Ohms(5000.0));
        assert_eq!(w[0].uses, vec![(1, 1)]);
        assert_eq!(w[0].left, 8);
        // Within 1 ppm counts as the same value: 1 MΩ and 1 MΩ + 0.5 Ω are one; + 2 Ω are two.
        let s = Stock::from_parts(
            "ppm",
            vec![
                part(1e6, 0.05, 1, "A"),
                part(1e6 + 0.5, 0.01, 1, "B"),
                part(1e6 + 2.0, 0.01, 1, "C"),
            ],
        );
        let w = in_window(&s, 1, Ohms(0.9e6), Ohms(1.1e6));
        assert_eq!(w.len(), 2);
        assert_eq!(w[0].uses, vec![(1, 1)]);
    }

    #[test]
    fn deduplication_leaves_no_value_unrepresented() {
        // 500k + 300k + 200k = 1M exactly; 600k + 400k0009 sits 0.9 ppm above it, and a single 1M0000018
        // 0.9 ppm above that. The single is kept first (fewest parts) and drops the pair beside it; the
        // triple is 1.8 ppm from the single, so nothing kept stands for it and it stays: best finds it.
        let s = Stock::from_parts(
            "neighbours",
            vec![
                part(1_000_001.8, 0.05, 1, "A"),
                part(600e3, 0.05, 1, "B"),
                part(400_000.9, 0.05, 1, "C"),
                part(500e3, 0.05, 1, "D"),
                part(300e3, 0.05, 1, "E"),
                part(200e3, 0.05, 1, "F"),
            ],
        );
        let b = best(&s, Ohms(1e6), 3, 2);
        assert_eq!(b[0].network.notation(), "500k+300k+200k");
        assert_eq!(b[1].uses, vec![(0, 1)]);
        assert_same(&b, &naive_best(&s, 1e6, 3, 2), "neighbours");
        // A window holding the pair alone offers it: duplicates are settled among the networks asked for.
        let w = in_window(&s, 3, Ohms(1_000_000.5), Ohms(1_000_001.0));
        assert_eq!(w.len(), 1);
        assert_eq!(w[0].uses, vec![(1, 1), (2, 1)]);
    }

    #[test]
    fn limited_window_refuses_past_its_limit() {
        // Four 1k pieces, up to three parts, window 0 to 10 kΩ: 1k, 1k+1k, 1k|1k, 1k+1k+1k, 1k|1k|1k,
        // 1k+(1k|1k), 1k|(1k+1k): seven networks, none a duplicate.
        let s = Stock::from_parts("limit", vec![part(1000.0, 0.05, 4, "C7")]);
        let index = Index::new(&s, 3);
        let (low, high) = (Ohms(0.0), Ohms(10e3));
        assert_eq!(
            index.in_window_limited(low, high, 7),
            Some(index.in_window(low, high))
        );
        assert_eq!(index.in_window(low, high).len(), 7);
        assert_eq!(index.in_window_limited(low, high, 3), None);
    }

    #[test]
    fn best_ranks_by_error_then_parts() {
        // Target 1k1 from 1k, 1k2 and 2k2 × 2: 2k2 | 2k2 is exact; 1k and 1k2 are -9.09 % and +9.09 %,
        // a tie on |error| that fewer parts cannot break, so the tighter band (the 1 % 1k2) goes first.
        let s = Stock::from_parts(
            "rank",
            vec![
                part(1000.0, 0.05, 5, "C7"),
                part(1200.0, 0.01, 5, "C8"),
                part(2200.0, 0.05, 2, "C2"),
            ],
        );
        let b = best(&s, Ohms(1100.0), 1, 2);
        assert_eq!(
            b.iter().map(|c| c.network.notation()).collect::<Vec<_>>(),
            ["1k2", "1k"]
        );
        let b = best(&s, Ohms(1100.0), 2, 1);
        assert_eq!(b[0].network.notation(), "2k2|2k2");
        assert_eq!(b[0].error(Ohms(1100.0)), 0.0);
        assert!(best(&s, Ohms(1100.0), 2, 0).is_empty());
        assert!(best(&Stock::from_parts("none", vec![]), Ohms(1100.0), 2, 3).is_empty());
        // Asking for more than there is returns everything, best first.
        assert_eq!(best(&s, Ohms(1100.0), 1, 10).len(), 3);
    }
}
