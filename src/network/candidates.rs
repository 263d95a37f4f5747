//! Candidate networks for one slot: every single resistor, pair and (optionally) triple that the stock can
//! build, found exactly and without enumerating them all.
//!
//! The shapes are a single part; two in series or in parallel; and, with three parts, three in series, three
//! in parallel, `a+(b|c)` and `a|(b+c)`. A network that needs two pieces of one part needs a quantity of at
//! least two, and parts with none left are never used. Each shape is searched over the stock's values sorted
//! once: the last member (or the precomputed pair) is bounded by binary search, so a window costs O(N log N)
//! for pairs and O(N² log N) for triples plus the size of its answer, and the candidates are then checked
//! with the very arithmetic of [`Network::ohms`], so the bounds only ever prune, never decide.
//!
//! Networks whose resistances agree within [`SAME_VALUE`] (1 ppm) are one value: sorted by resistance, a run
//! of values each within 1 ppm of the one before keeps a single network, the one with fewer parts, then the
//! tighter worst-case band, then more pieces left of its scarcest part, then the earlier shape (single,
//! series pair, parallel pair, series triple, parallel triple, `a+(b|c)`, `a|(b+c)`), then the lower part
//! ids in member order. Members are written dominant part first: series largest first, parallel smallest
//! first, `a+(b|c)` and `a|(b+c)` with the lone part first.
//!
//! It relies on [`crate::stock::Stock`] for the parts and on [`Network`] for what a network is.

use super::{Member, Network, PartId};
use crate::stock::Stock;
use crate::units::Ohms;
use std::cmp::{Ordering, Reverse};

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

/// A precomputed pair for the mixed triples: its value and its two entries in member order.
#[derive(Clone, Copy, Debug)]
struct Pair {
    ohms: f64,
    m: [u32; 2],
}

/// A network found in a window, before it becomes a [`Candidate`]: entries (not part ids) in member order.
#[derive(Clone, Copy, Debug)]
struct Raw {
    ohms: f64,
    shape: Shape,
    m: [u32; 3],
}

/// A network that survived deduplication, with what ranking needs.
#[derive(Clone, Copy, Debug)]
struct Kept {
    raw: Raw,
    band: (f64, f64),
    /// The band's half-width in parts per billion, so that rounding noise cannot decide a tie.
    tol_key: i64,
    left: u32,
}

/// A stock prepared for repeated candidate searches: its usable parts sorted by value and, for three-part
/// networks, every parallel and series pair sorted by value.
///
/// Build it once per stock and part limit when searching many windows (the optimiser does);
/// [`in_window`] and [`best`] build one per call.
#[derive(Clone, Debug)]
pub struct Index<'a> {
    stock: &'a Stock,
    max_parts: usize,
    entries: Vec<Entry>,
    values: Vec<f64>,
    parallel_pairs: Vec<Pair>,
    series_pairs: Vec<Pair>,
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
        let mut index = Index {
            stock,
            max_parts,
            entries,
            values,
            parallel_pairs: Vec::new(),
            series_pairs: Vec::new(),
        };
        if max_parts == 3 {
            let n = index.entries.len();
            let mut par = Vec::with_capacity(n * (n + 1) / 2);
            let mut ser = Vec::with_capacity(n * (n + 1) / 2);
            for i in 0..n {
                for j in i..n {
                    if i == j && index.entries[i].qty < 2 {
                        continue;
                    }
                    let (a, b) = (index.values[i], index.values[j]);
                    par.push(Pair {
                        ohms: Shape::Parallel2.eval([a, b, 0.0]),
                        m: [i as u32, j as u32],
                    });
                    ser.push(Pair {
                        ohms: Shape::Series2.eval([b, a, 0.0]),
                        m: [j as u32, i as u32],
                    });
                }
            }
            par.sort_by(|a, b| a.ohms.total_cmp(&b.ohms));
            ser.sort_by(|a, b| a.ohms.total_cmp(&b.ohms));
            index.parallel_pairs = par;
            index.series_pairs = ser;
        }
        index
    }

    /// How many stock parts (with pieces on hand) the search draws on.
    pub fn usable(&self) -> usize {
        self.entries.len()
    }

    /// Every distinct network with a resistance in [low, high], deduplicated, sorted by ohms ascending.
    pub fn in_window(&self, low: Ohms, high: Ohms) -> Vec<Candidate> {
        let mut raws = Vec::new();
        self.collect(low.0, high.0, &mut raws);
        self.dedupe(raws)
            .into_iter()
            .map(|k| self.candidate(&k))
            .collect()
    }

    /// The `k` best networks for `target`, ranked by |relative error|; ties go to fewer parts, then the
    /// tighter band, then more pieces left, then the shape order and part ids.
    ///
    /// Networks are deduplicated over the whole stock, not just the ones shown: the search widens its window
    /// until it holds `k` values and no run of 1-ppm neighbours crosses the window's edge.
    pub fn best(&self, target: Ohms, k: usize) -> Vec<Candidate> {
        let t = target.0;
        if k == 0 || self.entries.is_empty() || !(t.is_finite() && t > 0.0) {
            return Vec::new();
        }
        // No network exceeds max_parts times the largest value (all in series).
        let ceiling = self.values[self.values.len() - 1] * self.max_parts as f64 * (1.0 + 1e-9);
        let mut d = t * 1e-6;
        loop {
            let (low, high) = (t - d, t + d);
            let everything = low <= 0.0 && high >= ceiling;
            let mut raws = Vec::new();
            self.collect(low, high, &mut raws);
            let lowest = raws.iter().map(|r| r.ohms).fold(f64::INFINITY, f64::min);
            let highest = raws.iter().map(|r| r.ohms).fold(0.0, f64::max);
            // A run of 1-ppm neighbours could continue past an edge only if a value sits within 1 ppm of it.
            let edges_clear = (low <= 0.0 || lowest > low * (1.0 + SAME_VALUE))
                && highest * (1.0 + SAME_VALUE) < high;
            let kept = if everything || edges_clear {
                self.dedupe(raws)
            } else {
                Vec::new()
            };
            if everything || (edges_clear && kept.len() >= k) {
                let mut ranked: Vec<(f64, Kept)> = kept
                    .into_iter()
                    .map(|c| (((c.raw.ohms - t) / t).abs(), c))
                    .collect();
                ranked.sort_by(|a, b| a.0.total_cmp(&b.0).then_with(|| self.prefer(&a.1, &b.1)));
                return ranked
                    .into_iter()
                    .take(k)
                    .map(|(_, c)| self.candidate(&c))
                    .collect();
            }
            d *= 4.0;
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

    fn pair_range(pairs: &[Pair], lo: f64, hi: f64) -> &[Pair] {
        let start = pairs.partition_point(|p| p.ohms < lo);
        let end = pairs.partition_point(|p| p.ohms <= hi).max(start);
        &pairs[start..end]
    }

    /// Every network (not yet deduplicated) with a value in [low, high].
    fn collect(&self, low: f64, high: f64, out: &mut Vec<Raw>) {
        let n = self.entries.len();
        if n == 0 || high.is_nan() || low.is_nan() || high < low || high <= 0.0 {
            return;
        }
        let low = low.max(0.0);
        let v = &self.values;
        let inv_low = if low > 0.0 { 1.0 / low } else { f64::INFINITY };
        let inv_high = 1.0 / high;
        let slack = SLACK * high;

        for i in self.value_range(0, low, high) {
            self.emit(Shape::Single, [i as u32, 0, 0], low, high, out);
        }
        if self.max_parts < 2 {
            return;
        }
        for (i, &a) in v.iter().enumerate() {
            if a + a > high {
                break;
            }
            for j in self.value_range(i, low - a - slack, high - a + slack) {
                self.emit(Shape::Series2, [j as u32, i as u32, 0], low, high, out);
            }
        }
        for (i, &a) in v.iter().enumerate() {
            if Shape::Parallel2.eval([a, a, 0.0]) > high {
                break;
            }
            let delta = SLACK * (inv_high + 1.0 / a + if low > 0.0 { inv_low } else { 0.0 });
            let g_lo = inv_high - 1.0 / a - delta;
            let g_hi = inv_low - 1.0 / a + delta;
            for j in self.conductance_range(i, g_lo, g_hi) {
                self.emit(Shape::Parallel2, [i as u32, j as u32, 0], low, high, out);
            }
        }
        if self.max_parts < 3 {
            return;
        }
        // Three in series, smallest first in the loops, written largest first.
        for (i, &a) in v.iter().enumerate() {
            if a + a + a > high {
                break;
            }
            for (j, &b) in v.iter().enumerate().skip(i) {
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
        // Three in parallel: i ≤ j ≤ k by value, so 1/R is at least 1/a and at most 3/a.
        for (i, &a) in v.iter().enumerate() {
            if Shape::Parallel3.eval([a, a, a]) > high {
                break;
            }
            for (j, &b) in v.iter().enumerate().skip(i) {
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
        // a+(b|c): the pair's value lies in [low − a, high − a].
        for (x, &a) in v.iter().enumerate() {
            if a > high {
                break;
            }
            for p in Self::pair_range(&self.parallel_pairs, low - a - slack, high - a + slack) {
                let m = [x as u32, p.m[0], p.m[1]];
                self.emit(Shape::SeriesOfParallel, m, low, high, out);
            }
        }
        // a|(b+c): the pair's conductance lies in [1/high − 1/a, 1/low − 1/a].
        for (x, &a) in v.iter().enumerate() {
            let delta = SLACK * (inv_high + 1.0 / a + if low > 0.0 { inv_low } else { 0.0 });
            let g_lo = inv_high - 1.0 / a - delta;
            let g_hi = inv_low - 1.0 / a + delta;
            if g_hi <= 0.0 {
                continue;
            }
            let lo = 1.0 / g_hi;
            let hi = if g_lo > 0.0 {
                1.0 / g_lo
            } else {
                f64::INFINITY
            };
            for p in Self::pair_range(&self.series_pairs, lo * (1.0 - SLACK), hi * (1.0 + SLACK)) {
                let m = [x as u32, p.m[0], p.m[1]];
                self.emit(Shape::ParallelOfSeries, m, low, high, out);
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

    fn keep(&self, raw: Raw) -> Kept {
        let band = self.band(&raw);
        let half = (-band.0).max(band.1);
        Kept {
            raw,
            band,
            tol_key: (half * 1e9).round() as i64,
            left: self.left(&raw),
        }
    }

    /// Which of two networks of (nearly) the same value to keep: `Less` means `a`.
    fn prefer(&self, a: &Kept, b: &Kept) -> Ordering {
        // Equal shapes have equal part counts, so comparing all three slots (unused ones are 0) is exact.
        let ids = |k: &Kept| -> [PartId; 3] {
            let mut out = [0; 3];
            for (o, &x) in out.iter_mut().zip(&k.raw.m[..k.raw.shape.parts()]) {
                *o = self.entries[x as usize].id;
            }
            out
        };
        (a.raw.shape.parts(), a.tol_key, Reverse(a.left), a.raw.shape)
            .cmp(&(b.raw.shape.parts(), b.tol_key, Reverse(b.left), b.raw.shape))
            .then_with(|| ids(a).cmp(&ids(b)))
    }

    /// Sorts by value and keeps one network per run of 1-ppm neighbours.
    fn dedupe(&self, mut raws: Vec<Raw>) -> Vec<Kept> {
        raws.sort_by(|a, b| a.ohms.total_cmp(&b.ohms));
        let mut out: Vec<Kept> = Vec::new();
        let mut prev = f64::NAN;
        for raw in raws {
            let k = self.keep(raw);
            let joins = raw.ohms - prev <= SAME_VALUE * prev;
            prev = raw.ohms;
            match out.last_mut() {
                Some(last) if joins => {
                    if self.prefer(&k, last) == Ordering::Less {
                        *last = k;
                    }
                }
                _ => out.push(k),
            }
        }
        out
    }

    fn candidate(&self, k: &Kept) -> Candidate {
        let n = k.raw.shape.parts();
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
        let m = k.raw.m;
        let network = match k.raw.shape {
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
            ohms: Ohms(k.raw.ohms),
            uses,
            parts: n,
            band: k.band,
            left: k.left,
        }
    }
}

/// Every distinct network of at most `max_parts` (1..=3) stock parts whose resistance lies in [low, high],
/// deduplicated (within 1 ppm keep fewer parts, then the tighter band, then more stock left), sorted by ohms
/// ascending.
pub fn in_window(stock: &Stock, max_parts: usize, low: Ohms, high: Ohms) -> Vec<Candidate> {
    Index::new(stock, max_parts).in_window(low, high)
}

/// The `k` best networks of at most `max_parts` stock parts for `target`, ranked by |relative error|; ties
/// go to fewer parts, then the tighter band, then more pieces left in stock.
pub fn best(stock: &Stock, target: Ohms, max_parts: usize, k: usize) -> Vec<Candidate> {
    Index::new(stock, max_parts).best(target, k)
}
