//! The integer program that shares the stock between stages and boards: given each stage's best variants
//! (complete slot assignments with their exact errors), choose how many copies of each variant to build so
//! that every board is complete, the parts never run out, the largest error is as small as it can be, and then
//! the sum of errors (plus a small penalty per part) is smallest.
//!
//! This is the only place biasfit talks to good_lp. The model is small (one integer per variant) because the
//! physics has already been handled exactly by the per-stage search; the integer program only does the
//! bookkeeping of shared parts, which is where it shines.

use crate::network::PartId;
use good_lp::{
    constraint, microlp, variable, Expression, ProblemVariables, ResolutionError, Solution,
    SolutionStatus, SolverModel, Variable, WithTimeLimit,
};
use std::collections::BTreeMap;
use std::time::{Duration, Instant};

/// The time left before `deadline` for one solver call, never under 10 ms (the solver needs a positive
/// limit, and a call that cannot finish in time reports so).
fn left(deadline: Option<Instant>) -> Option<Duration> {
    deadline.map(|d| {
        d.saturating_duration_since(Instant::now())
            .max(Duration::from_millis(10))
    })
}

/// Whether `deadline` has passed.
fn passed(deadline: Option<Instant>) -> bool {
    deadline.is_some_and(|d| Instant::now() >= d)
}

/// One way to build one stage: its exact error and the stock parts it takes.
#[derive(Clone, Debug, PartialEq)]
pub struct Variant {
    /// Which stage (index into the design's stages).
    pub stage: usize,
    /// The exact stage error (the largest relative deviation at typical beta).
    pub error: f64,
    /// Resistors it uses, counted for the per-part penalty.
    pub parts: usize,
    /// The stock parts it takes, with counts, for one board.
    pub uses: Vec<(PartId, u32)>,
}

/// The chosen copies of each variant.
#[derive(Clone, Debug, PartialEq)]
pub struct Allocation {
    /// (variant index, copies), only variants with at least one copy, in variant order.
    pub chosen: Vec<(usize, u32)>,
    /// The largest error among the chosen variants.
    pub worst: f64,
    /// The sum of errors over every stage of every board.
    pub sum: f64,
    /// Whether the result is proven optimal (false when the time limit cut the search short).
    pub proven: bool,
    /// The largest error no allocation of these variants can beat: the worst error itself when proven, else
    /// the smallest worst error the search has not ruled out.
    pub floor: f64,
}

/// Why no allocation exists.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ShareError {
    /// A stage has no variant at all.
    #[error("stage {0} has no variant that meets the hard constraints")]
    NoVariant(usize),
    /// The stock cannot cover the boards with the variants offered.
    #[error("the stock cannot build {copies} board(s) from the variants found")]
    Scarce {
        /// Boards asked for.
        copies: u32,
    },
    /// The time limit passed before any allocation was found.
    #[error("the time limit passed before the stock could be shared out")]
    TimedOut,
    /// The solver failed in an unexpected way.
    #[error("the solver failed: {0}")]
    Solver(String),
}

/// The penalty added to a variant's error for each resistor it uses, so that between two equally good
/// variants the one with fewer parts wins; far below any error a user would notice.
pub const PART_PENALTY: f64 = 1e-7;

/// Errors closer than this are equal for the purposes of the worst-error bound.
const ERROR_EPSILON: f64 = 1e-12;

/// Shares `stock` (pieces on hand by part id) among `copies` boards of `stages` stages.
pub fn allocate(
    variants: &[Variant],
    stages: usize,
    copies: u32,
    stock: &[u32],
    deadline: Option<Instant>,
) -> Result<Allocation, ShareError> {
    for s in 0..stages {
        if !variants.iter().any(|v| v.stage == s) {
            return Err(ShareError::NoVariant(s));
        }
    }
    if copies == 0 {
        return Ok(Allocation {
            chosen: Vec::new(),
            worst: 0.0,
            sum: 0.0,
            proven: true,
            floor: 0.0,
        });
    }
    // Fast path: each stage's own best variant, all copies alike, if the stock covers it, is optimal in both
    // the worst error and the sum, since no stage can do better than its own best.
    let best: Vec<usize> = (0..stages)
        .map(|s| {
            (0..variants.len())
                .filter(|&i| variants[i].stage == s)
                .min_by(|&a, &b| cost(&variants[a]).total_cmp(&cost(&variants[b])))
                .expect("checked above")
        })
        .collect();
    let picked: Vec<(usize, u32)> = best.iter().map(|&i| (i, copies)).collect();
    if fits(variants, &picked, stock) {
        return Ok(summarise(variants, picked, true));
    }

    // The worst cost is the cost of some variant: search the smallest feasible threshold among them.
    let mut thresholds: Vec<f64> = variants.iter().map(cost).collect();
    thresholds.sort_by(f64::total_cmp);
    thresholds.dedup_by(|a, b| (*a - *b).abs() <= ERROR_EPSILON);
    // No stage can do better than its best variant.
    let floor = best.iter().map(|&i| cost(&variants[i])).fold(0.0, f64::max);
    thresholds.retain(|&t| t >= floor - ERROR_EPSILON);

    // Is everything (the largest threshold) feasible at all?
    let top = *thresholds.last().expect("at least one variant");
    let mut best_found = match solve(variants, stages, copies, stock, top, deadline)? {
        Some(a) => a,
        None => return Err(ShareError::Scarce { copies }),
    };
    let (mut lo, mut hi) = (0usize, thresholds.len() - 1);
    // Invariant: thresholds[hi] is feasible; everything below lo is infeasible.
    while lo < hi {
        if passed(deadline) {
            best_found.proven = false;
            break;
        }
        let mid = (lo + hi) / 2;
        match solve(variants, stages, copies, stock, thresholds[mid], deadline) {
            Ok(Some(a)) => {
                hi = mid;
                let proven = best_found.proven && a.proven;
                best_found = Allocation { proven, ..a };
            }
            Ok(None) => lo = mid + 1,
            // Out of time inside the solver: what is in hand stands, unproven.
            Err(ShareError::TimedOut) => {
                best_found.proven = false;
                break;
            }
            Err(e) => return Err(e),
        }
    }
    // Every allocation's worst cost is at least thresholds[lo], so its worst error is at least the smallest
    // error among the variants of that cost or more.
    best_found.floor = if best_found.proven && lo == hi {
        best_found.worst
    } else {
        variants
            .iter()
            .filter(|v| cost(v) >= thresholds[lo] - ERROR_EPSILON)
            .map(|v| v.error)
            .fold(f64::INFINITY, f64::min)
            .min(best_found.worst)
    };
    // The allocation at the final threshold minimises the sum among those with that worst error.
    Ok(best_found)
}

/// A variant's error with the per-part penalty: what the program minimises, so that of two variants equally
/// good to within the penalty the one with fewer parts wins.
fn cost(v: &Variant) -> f64 {
    v.error + PART_PENALTY * v.parts as f64
}

fn fits(variants: &[Variant], chosen: &[(usize, u32)], stock: &[u32]) -> bool {
    let mut need: BTreeMap<PartId, u64> = BTreeMap::new();
    for &(i, n) in chosen {
        for &(p, c) in &variants[i].uses {
            *need.entry(p).or_default() += c as u64 * n as u64;
        }
    }
    need.iter()
        .all(|(&p, &n)| stock.get(p).is_some_and(|&q| n <= q as u64))
}

fn summarise(variants: &[Variant], mut chosen: Vec<(usize, u32)>, proven: bool) -> Allocation {
    chosen.sort_unstable();
    let worst = chosen
        .iter()
        .map(|&(i, _)| variants[i].error)
        .fold(0.0, f64::max);
    let sum = chosen
        .iter()
        .map(|&(i, n)| variants[i].error * n as f64)
        .sum();
    Allocation {
        chosen,
        worst,
        sum,
        proven,
        floor: worst,
    }
}

/// The allocation with the smallest sum that uses only variants with cost ≤ `threshold`, if any: the
/// purchase program with nothing to buy.
fn solve(
    variants: &[Variant],
    stages: usize,
    copies: u32,
    stock: &[u32],
    threshold: f64,
    deadline: Option<Instant>,
) -> Result<Option<Allocation>, ShareError> {
    Ok(solve_buying(
        variants,
        stages,
        copies,
        stock,
        &[],
        threshold,
        None,
        deadline,
    )?
    .map(|b| b.allocation))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The crate's SplitMix64, so that random cases repeat exactly.
    struct Rng(crate::spread::rng::SplitMix64);
    impl Rng {
        fn below(&mut self, n: u64) -> u64 {
            self.0.next_u64() % n
        }
    }

    /// Every way to give each of `copies` boards one variant per stage, by brute force.
    fn exhaustive(
        variants: &[Variant],
        stages: usize,
        copies: u32,
        stock: &[u32],
    ) -> Option<(f64, f64)> {
        let per_stage: Vec<Vec<usize>> = (0..stages)
            .map(|s| {
                (0..variants.len())
                    .filter(|&i| variants[i].stage == s)
                    .collect()
            })
            .collect();
        let slots = stages * copies as usize;
        let mut pick = vec![0usize; slots];
        let mut best: Option<(f64, f64)> = None;
        loop {
            let chosen: Vec<(usize, u32)> = pick
                .iter()
                .enumerate()
                .map(|(k, &j)| (per_stage[k % stages][j], 1))
                .collect();
            if fits(variants, &chosen, stock) {
                let worst = chosen
                    .iter()
                    .map(|&(i, _)| cost(&variants[i]))
                    .fold(0.0, f64::max);
                let sum: f64 = chosen.iter().map(|&(i, _)| cost(&variants[i])).sum();
                let better = match best {
                    None => true,
                    Some((w, s)) => {
                        worst < w - 1e-12 || ((worst - w).abs() <= 1e-12 && sum < s - 1e-12)
                    }
                };
                if better {
                    best = Some((worst, sum));
                }
            }
            // Odometer over every pick.
            let mut k = 0;
            loop {
                if k == slots {
                    return best;
                }
                pick[k] += 1;
                if pick[k] < per_stage[k % stages].len() {
                    break;
                }
                pick[k] = 0;
                k += 1;
            }
        }
    }

    #[test]
    fn equals_exhaustive_search_on_random_small_cases() {
        let mut rng = Rng(crate::spread::rng::SplitMix64::new(2026));
        let mut checked = 0;
        for case in 0..120 {
            let stages = 1 + rng.below(2) as usize;
            let copies = 1 + rng.below(3) as u32;
            let parts = 3 + rng.below(4) as usize;
            let stock: Vec<u32> = (0..parts).map(|_| rng.below(5) as u32).collect();
            let mut variants = Vec::new();
            for s in 0..stages {
                for _ in 0..(2 + rng.below(4)) {
                    let mut uses: Vec<(PartId, u32)> = Vec::new();
                    for p in 0..parts {
                        if rng.below(3) == 0 {
                            uses.push((p, 1 + rng.below(2) as u32));
                        }
                    }
                    let n = uses.iter().map(|u| u.1 as usize).sum();
                    variants.push(Variant {
                        stage: s,
                        error: rng.below(1000) as f64 / 10_000.0,
                        parts: n,
                        uses,
                    });
                }
            }
            let want = exhaustive(&variants, stages, copies, &stock);
            let got = allocate(&variants, stages, copies, &stock, None);
            match (want, got) {
                (None, Err(ShareError::Scarce { .. })) => {}
                (Some((w, s)), Ok(a)) => {
                    checked += 1;
                    let got_worst = a
                        .chosen
                        .iter()
                        .map(|&(i, _)| cost(&variants[i]))
                        .fold(0.0, f64::max);
                    assert!(
                        (got_worst - w).abs() < 1e-9,
                        "case {case}: worst {got_worst} vs {w}"
                    );
                    let got_sum: f64 = a
                        .chosen
                        .iter()
                        .map(|&(i, n)| cost(&variants[i]) * n as f64)
                        .sum();
                    assert!(
                        (got_sum - s).abs() < 1e-9,
                        "case {case}: sum {got_sum} vs {s}"
                    );
                    assert!(fits(&variants, &a.chosen, &stock));
                    assert!(a.proven);
                    // Proven, the floor is the answer itself.
                    assert_eq!(a.floor, a.worst, "case {case}");
                    // Cut at once (a deadline already past): still an allocation that fits, never better
                    // than the optimum, and a floor no higher than the optimum's worst error.
                    match allocate(&variants, stages, copies, &stock, Some(Instant::now())) {
                        Ok(cut) => {
                            assert!(fits(&variants, &cut.chosen, &stock), "case {case}");
                            assert!(cut.worst >= a.worst - 1e-6, "case {case}");
                            assert!(cut.floor <= a.worst + 1e-12, "case {case}: {cut:?}");
                            assert!(cut.floor <= cut.worst, "case {case}: {cut:?}");
                        }
                        Err(ShareError::TimedOut) => {}
                        Err(e) => panic!("case {case}: {e}"),
                    }
                }
                (w, g) => panic!("case {case}: exhaustive {w:?} but allocate {g:?}"),
            }
        }
        assert!(
            checked > 30,
            "too few feasible cases ({checked}) to mean anything"
        );
    }

    #[test]
    fn two_stages_split_a_scarce_part() {
        // One 4k7 on hand (part 0); both stages like it best, each has a worse alternative with part 1 or 2.
        let variants = vec![
            Variant {
                stage: 0,
                error: 0.001,
                parts: 1,
                uses: vec![(0, 1)],
            },
            Variant {
                stage: 0,
                error: 0.020,
                parts: 1,
                uses: vec![(1, 1)],
            },
            Variant {
                stage: 1,
                error: 0.002,
                parts: 1,
                uses: vec![(0, 1)],
            },
            Variant {
                stage: 1,
                error: 0.010,
                parts: 1,
                uses: vec![(2, 1)],
            },
        ];
        let a = allocate(&variants, 2, 1, &[1, 5, 5], None).unwrap();
        // Giving the 4k7 to stage 1 leaves stage 0 at 2 %; giving it to stage 0 leaves stage 1 at 1 %: the
        // smaller worst error wins.
        assert_eq!(a.chosen, vec![(0, 1), (3, 1)]);
        assert!((a.worst - 0.010).abs() < 1e-12);
    }

    #[test]
    fn copies_may_use_different_variants() {
        let variants = vec![
            Variant {
                stage: 0,
                error: 0.001,
                parts: 2,
                uses: vec![(0, 2)],
            },
            Variant {
                stage: 0,
                error: 0.004,
                parts: 2,
                uses: vec![(1, 2)],
            },
        ];
        let a = allocate(&variants, 1, 3, &[4, 10], None).unwrap();
        assert_eq!(a.chosen, vec![(0, 2), (1, 1)]);
        assert!(matches!(
            allocate(&variants, 1, 8, &[4, 10], None),
            Err(ShareError::Scarce { copies: 8 })
        ));
    }

    #[test]
    fn a_stage_without_variants_is_named() {
        let variants = vec![Variant {
            stage: 0,
            error: 0.0,
            parts: 1,
            uses: vec![],
        }];
        assert_eq!(
            allocate(&variants, 2, 1, &[], None),
            Err(ShareError::NoVariant(1))
        );
    }
}

/// A pack that can be bought: `pack` pieces of stock part `part` for `price`.
#[derive(Clone, Debug, PartialEq)]
pub struct PackOffer {
    /// The part it delivers (an id among the variants' parts).
    pub part: PartId,
    /// Pieces per pack.
    pub pack: u32,
    /// Price of one pack.
    pub price: f64,
}

/// What a purchase must achieve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Goal {
    /// The cheapest purchase keeping every board's error within this bound; the error breaks ties.
    MaxError(f64),
    /// The smallest worst error (then sum) whose purchase costs at most this much.
    Budget(f64),
}

/// Copies of each variant, plus the packs to buy.
#[derive(Clone, Debug, PartialEq)]
pub struct Bought {
    /// The allocation of variants to boards.
    pub allocation: Allocation,
    /// (offer index, packs) for every offer bought at least once.
    pub packs: Vec<(usize, u32)>,
    /// The total price.
    pub cost: f64,
}

/// Weight of the error against money with a bound on the error: small enough never to outweigh a price
/// difference, large enough to break ties between equally cheap purchases.
const ERROR_WEIGHT: f64 = 1e-6;

/// Shares the stock and buys packs: the same integer program as [`allocate`], with purchasable parts that
/// are unlimited but cost money and come in whole packs.
pub fn allocate_buying(
    variants: &[Variant],
    stages: usize,
    copies: u32,
    stock: &[u32],
    offers: &[PackOffer],
    goal: Goal,
    deadline: Option<Instant>,
) -> Result<Bought, ShareError> {
    for s in 0..stages {
        if !variants.iter().any(|v| v.stage == s) {
            return Err(ShareError::NoVariant(s));
        }
    }
    match goal {
        Goal::MaxError(bound) => solve_buying(
            variants, stages, copies, stock, offers, bound, None, deadline,
        )?
        .ok_or(ShareError::Scarce { copies }),
        Goal::Budget(budget) => {
            let mut thresholds: Vec<f64> = variants.iter().map(cost).collect();
            thresholds.sort_by(f64::total_cmp);
            thresholds.dedup_by(|a, b| (*a - *b).abs() <= ERROR_EPSILON);
            let top = *thresholds.last().expect("at least one variant");
            let mut best = solve_buying(
                variants,
                stages,
                copies,
                stock,
                offers,
                top,
                Some(budget),
                deadline,
            )?
            .ok_or(ShareError::Scarce { copies })?;
            let (mut lo, mut hi) = (0usize, thresholds.len() - 1);
            while lo < hi {
                if passed(deadline) {
                    best.allocation.proven = false;
                    break;
                }
                let mid = (lo + hi) / 2;
                match solve_buying(
                    variants,
                    stages,
                    copies,
                    stock,
                    offers,
                    thresholds[mid],
                    Some(budget),
                    deadline,
                ) {
                    Ok(Some(b)) => {
                        hi = mid;
                        let proven = best.allocation.proven && b.allocation.proven;
                        best = b;
                        best.allocation.proven = proven;
                    }
                    Ok(None) => lo = mid + 1,
                    Err(ShareError::TimedOut) => {
                        best.allocation.proven = false;
                        break;
                    }
                    Err(e) => return Err(e),
                }
            }
            // As in [`allocate`]: no purchase within the budget has a worst error below this.
            best.allocation.floor = if best.allocation.proven && lo == hi {
                best.allocation.worst
            } else {
                variants
                    .iter()
                    .filter(|v| cost(v) >= thresholds[lo] - ERROR_EPSILON)
                    .map(|v| v.error)
                    .fold(f64::INFINITY, f64::min)
                    .min(best.allocation.worst)
            };
            Ok(best)
        }
    }
}

/// The best purchase using only variants with cost ≤ `threshold`: cheapest (error breaking ties) without a
/// budget; smallest error sum (price breaking ties) within one.
#[allow(clippy::too_many_arguments)]
fn solve_buying(
    variants: &[Variant],
    stages: usize,
    copies: u32,
    stock: &[u32],
    offers: &[PackOffer],
    threshold: f64,
    budget: Option<f64>,
    deadline: Option<Instant>,
) -> Result<Option<Bought>, ShareError> {
    let allowed: Vec<usize> = (0..variants.len())
        .filter(|&i| cost(&variants[i]) <= threshold + ERROR_EPSILON)
        .collect();
    for s in 0..stages {
        if !allowed.iter().any(|&i| variants[i].stage == s) {
            return Ok(None);
        }
    }
    let mut problem = ProblemVariables::new();
    let x: Vec<Variable> = allowed
        .iter()
        .map(|_| problem.add(variable().integer().min(0).max(copies as f64)))
        .collect();
    // The most pieces of a part any allocation could want bounds its packs.
    let mut most: BTreeMap<PartId, f64> = BTreeMap::new();
    for &i in &allowed {
        for &(p, c) in &variants[i].uses {
            let e = most.entry(p).or_default();
            *e = e.max(c as f64 * copies as f64 * stages as f64);
        }
    }
    let y: Vec<Variable> = offers
        .iter()
        .map(|o| {
            let cap = (most.get(&o.part).copied().unwrap_or(0.0) / o.pack as f64).ceil();
            problem.add(variable().integer().min(0).max(cap))
        })
        .collect();
    let money: Expression = offers.iter().zip(&y).map(|(o, &yi)| o.price * yi).sum();
    let errors: Expression = allowed
        .iter()
        .zip(&x)
        .map(|(&i, &xi)| cost(&variants[i]) * xi)
        .sum();
    let objective = match budget {
        // Nothing to buy: the errors alone, unscaled, so the solver's tolerances see them at full size.
        None if offers.is_empty() => errors,
        None => money.clone() + ERROR_WEIGHT * errors,
        // Money breaks ties: far below any difference in error.
        Some(_) => errors + 1e-9 * money.clone(),
    };
    let mut model = problem.minimise(objective).using(microlp);
    if let Some(limit) = left(deadline) {
        model = model.with_time_limit(limit.as_secs_f64());
    }
    for s in 0..stages {
        let boards: Expression = allowed
            .iter()
            .zip(&x)
            .filter(|(&i, _)| variants[i].stage == s)
            .map(|(_, &xi)| xi)
            .sum();
        model = model.with(constraint!(boards == copies as f64));
    }
    let mut per_part: BTreeMap<PartId, Expression> = BTreeMap::new();
    for (&i, &xi) in allowed.iter().zip(&x) {
        for &(p, c) in &variants[i].uses {
            *per_part.entry(p).or_default() += c as f64 * xi;
        }
    }
    for (o, &yi) in offers.iter().zip(&y) {
        *per_part.entry(o.part).or_default() -= o.pack as f64 * yi;
    }
    for (p, used) in per_part {
        let on_hand = stock.get(p).copied().unwrap_or(0) as f64;
        model = model.with(constraint!(used <= on_hand));
    }
    if let Some(b) = budget {
        model = model.with(constraint!(money <= b));
    }
    let solution = match model.solve() {
        Ok(s) => s,
        Err(ResolutionError::Infeasible) => return Ok(None),
        Err(ResolutionError::Other(msg)) if msg.contains("Time limit") => {
            return Err(ShareError::TimedOut)
        }
        Err(e) => return Err(ShareError::Solver(e.to_string())),
    };
    let proven = matches!(solution.status(), SolutionStatus::Optimal);
    let chosen: Vec<(usize, u32)> = allowed
        .iter()
        .zip(&x)
        .filter_map(|(&i, &xi)| {
            let n = solution.value(xi).round();
            (n >= 1.0).then_some((i, n as u32))
        })
        .collect();
    let packs: Vec<(usize, u32)> = y
        .iter()
        .enumerate()
        .filter_map(|(o, &yi)| {
            let n = solution.value(yi).round();
            (n >= 1.0).then_some((o, n as u32))
        })
        .collect();
    // Verify exactly: every board complete, and stock plus purchase covers every part.
    let mut have: Vec<u64> = stock.iter().map(|&q| q as u64).collect();
    for &(o, n) in &packs {
        let p = offers[o].part;
        if p >= have.len() {
            have.resize(p + 1, 0);
        }
        have[p] += offers[o].pack as u64 * n as u64;
    }
    let have32: Vec<u32> = have
        .iter()
        .map(|&h| h.min(u32::MAX as u64) as u32)
        .collect();
    let complete = (0..stages).all(|s| {
        chosen
            .iter()
            .filter(|&&(i, _)| variants[i].stage == s)
            .map(|&(_, n)| n)
            .sum::<u32>()
            == copies
    });
    if !complete || !fits(variants, &chosen, &have32) {
        return Err(ShareError::Solver(
            "the solver returned a purchase that does not check out".into(),
        ));
    }
    let total: f64 = packs.iter().map(|&(o, n)| offers[o].price * n as f64).sum();
    if budget.is_some_and(|b| total > b + 1e-9) {
        return Err(ShareError::Solver(
            "the solver returned a purchase over the budget".into(),
        ));
    }
    Ok(Some(Bought {
        allocation: summarise(variants, chosen, proven),
        packs,
        cost: total,
    }))
}

#[cfg(test)]
mod buying_tests {
    use super::*;

    #[test]
    fn buys_the_cheapest_packs_that_meet_the_bound() {
        // Part 0 is on hand (1 piece); parts 1 and 2 must be bought. Variant A (error 1 %) needs part 1,
        // variant B (0.2 %) part 2, variant C (3 %) the stocked part.
        let variants = vec![
            Variant {
                stage: 0,
                error: 0.01,
                parts: 1,
                uses: vec![(1, 1)],
            },
            Variant {
                stage: 0,
                error: 0.002,
                parts: 1,
                uses: vec![(2, 1)],
            },
            Variant {
                stage: 0,
                error: 0.03,
                parts: 1,
                uses: vec![(0, 1)],
            },
        ];
        let offers = vec![
            PackOffer {
                part: 1,
                pack: 1,
                price: 0.10,
            },
            PackOffer {
                part: 2,
                pack: 10,
                price: 0.50,
            },
            PackOffer {
                part: 2,
                pack: 1,
                price: 0.08,
            },
        ];
        let stock = [1, 0, 0];
        // Within 5 %, the stocked part costs nothing.
        let b =
            allocate_buying(&variants, 1, 1, &stock, &offers, Goal::MaxError(0.05), None).unwrap();
        assert_eq!(b.cost, 0.0);
        assert_eq!(b.allocation.chosen, vec![(2, 1)]);
        // Within 1.5 %: part 2 single pack (0.08) is cheaper than part 1 (0.10), and more accurate.
        let b = allocate_buying(
            &variants,
            1,
            1,
            &stock,
            &offers,
            Goal::MaxError(0.015),
            None,
        )
        .unwrap();
        assert!((b.cost - 0.08).abs() < 1e-12);
        // Twelve boards within 0.5 %: 12 of part 2 as one 10-pack and two singles (0.66), not 12 singles (0.96).
        let b = allocate_buying(
            &variants,
            1,
            12,
            &stock,
            &offers,
            Goal::MaxError(0.005),
            None,
        )
        .unwrap();
        assert!((b.cost - 0.66).abs() < 1e-9, "{}", b.cost);
        // A budget of 0.09 buys the best error it can: variant B.
        let b =
            allocate_buying(&variants, 1, 1, &stock, &offers, Goal::Budget(0.09), None).unwrap();
        assert_eq!(b.allocation.chosen, vec![(1, 1)]);
        // No budget at all: the stocked part.
        let b = allocate_buying(&variants, 1, 1, &stock, &offers, Goal::Budget(0.0), None).unwrap();
        assert_eq!(b.allocation.chosen, vec![(2, 1)]);
        // A bound nothing meets.
        assert!(allocate_buying(
            &variants,
            1,
            1,
            &stock,
            &offers,
            Goal::MaxError(0.001),
            None
        )
        .is_err());
    }
}
