//! The cheapest purchase that makes a design buildable: the design's integer program, given purchasable
//! catalogue parts next to the free, limited stock ones.
//!
//! The catalogue's parts join the stock as unlimited parts with a price, bought in whole packs. Each stage's
//! variants come from three exact searches: stock parts only, stock and catalogue together, and the plain
//! baseline of each slot rounded to its nearest catalogue value. The shared integer program
//! ([`crate::optimise::share::allocate_buying`]) then picks variants and packs. Every error reported is the
//! DC solver's, recomputed on the chosen networks.

use super::catalogue::Catalogue;
use super::orderfile::OrderLine;
use super::Money;
use crate::network::candidates::{Candidate, Cut, Index};
use crate::network::{Member, Network, PartId};
use crate::optimise::design::{
    earliest, meets_hard_constraints, share_of, stage_variants, Built, CANDIDATE_LIMIT,
};
use crate::optimise::share::{allocate_buying, Goal, PackOffer, ShareError, Variant};
use crate::stage::{Design, SlotNetworks};
use crate::stock::{Part, Stock};
use std::collections::{BTreeMap, BTreeSet};
use std::time::{Duration, Instant};

/// What to buy for, and how hard to look.
#[derive(Clone, Debug)]
pub struct OrderRequest {
    /// At most this many resistors per slot.
    pub max_parts: usize,
    /// Boards to build.
    pub copies: u32,
    /// The bound on the error, or the budget.
    pub goal: Goal,
    /// Variants per stage from each search.
    pub variants: usize,
    /// Each slot's candidates lie within this factor of its ideal value.
    pub window: f64,
    /// Give up improving after this long.
    pub time_limit: Option<Duration>,
    /// Stop at this instant at the latest (a command computes it when it starts, so that reading its files
    /// counts too); the earlier of this and `time_limit` from the call wins.
    pub deadline: Option<Instant>,
}

/// A finished order.
#[derive(Clone, Debug)]
pub struct OrderOutcome {
    /// The builds, stage by stage.
    pub built: Vec<Built>,
    /// What to buy, one line per catalogue part.
    pub lines: Vec<OrderLine>,
    /// The total price.
    pub cost: Money,
    /// The combined stock the builds' part ids refer to: the stock's parts first, then the catalogue's.
    pub parts: Stock,
    /// How many of `parts` are stock parts (the rest are bought).
    pub stocked: usize,
    /// Whether the answer is proven optimal: every search finished and the integer program proved it.
    pub proven: bool,
    /// With a budget, what is proven: no purchase within it has a largest stage error below this (the
    /// design's own when proven optimal). None with an error bound, where the price is what is minimised.
    pub bound: Option<f64>,
    /// Variants handed to the program.
    pub variants: usize,
}

/// Why no order could be made.
#[derive(Debug, thiserror::Error)]
pub enum OrderError {
    /// A stage has no ideal design.
    #[error(transparent)]
    Stage(#[from] crate::stage::StageError),
    /// No purchase meets the goal.
    #[error("{0}")]
    Infeasible(String),
    /// The time limit passed before any purchase was found; the text says where.
    #[error("{0}: the time limit passed before any purchase was found; raise --time-limit (seconds; the default is 60), or narrow the search with fewer --parts or --variants")]
    TimedOut(String),
}

/// Pieces treated as "unlimited" for a catalogue part: far more than any order needs, small enough to add up.
const UNLIMITED: u32 = 1_000_000;

/// Finds the purchase for `design` from `stock` and `catalogue`.
pub fn order(
    design: &Design,
    stock: &Stock,
    catalogue: &Catalogue,
    request: &OrderRequest,
    progress: &mut dyn FnMut(&str),
) -> Result<OrderOutcome, OrderError> {
    let started = Instant::now();
    let deadline = earliest(request.deadline, request.time_limit.map(|l| started + l));
    let mut cut_short = false;
    let stocked = stock.parts.len();
    let mut combined_parts: Vec<Part> = stock.parts.clone();
    let mut offers = Vec::new();
    for item in &catalogue.items {
        let id = combined_parts.len();
        combined_parts.push(Part {
            ohms: item.ohms,
            tolerance: item.tolerance,
            power: item.power,
            qty: UNLIMITED,
            locations: vec![crate::stock::TO_BUY.to_string()],
            notes: Vec::new(),
            lines: Vec::new(),
        });
        for o in &item.offers {
            offers.push(PackOffer {
                part: id,
                pack: o.pack,
                price: o.pack_price().0,
            });
        }
    }
    let combined = Stock::from_parts("stock and catalogue", combined_parts);
    let on_hand: Vec<u32> = combined.parts.iter().map(|p| p.qty).collect();
    let stock_index = Index::new(stock, request.max_parts).until(deadline);
    let combined_index = Index::new(&combined, request.max_parts).until(deadline);
    let mut variants: Vec<Variant> = Vec::new();
    let mut networks_of: Vec<SlotNetworks> = Vec::new();
    for (si, stage) in design.stages.iter().enumerate() {
        progress(&format!(
            "stage {} of {}: {}",
            si + 1,
            design.stages.len(),
            stage.name
        ));
        let ideal = stage.ideal()?;
        let slots = stage.slots();
        let window_list = |index: &Index, x: crate::units::Ohms| {
            let mut w = request.window;
            loop {
                match index.in_window_until(x / w, x * w, CANDIDATE_LIMIT) {
                    Ok(l) => return Ok(l),
                    Err(Cut::TooMany) => w = w.sqrt(),
                    Err(Cut::TimedOut) => {
                        return Err(OrderError::TimedOut(format!(
                            "stage \"{}\" (finding its networks)",
                            stage.name
                        )))
                    }
                }
            }
        };
        // Per slot: stock-only networks, and networks mixing stock and catalogue (the combined search may
        // fold a free stock part into an equal catalogue one, so both lists are kept).
        let mut stock_lists: Vec<Vec<Candidate>> = Vec::new();
        let mut mixed_lists: Vec<Vec<Candidate>> = Vec::new();
        for &s in &slots {
            let x = ideal.values.get(s).expect("ideal sets every slot");
            let own = window_list(&stock_index, x)?;
            let mut mixed = window_list(&combined_index, x)?;
            let seen: BTreeSet<Vec<(PartId, u32)>> = mixed.iter().map(|c| c.uses.clone()).collect();
            mixed.extend(own.iter().filter(|c| !seen.contains(&c.uses)).cloned());
            mixed.sort_by(|a, b| a.ohms.0.total_cmp(&b.ohms.0));
            stock_lists.push(own);
            mixed_lists.push(mixed);
        }
        let mut seen: BTreeSet<Vec<Vec<(PartId, u32)>>> = BTreeSet::new();
        let mut add = |nets: SlotNetworks,
                       variants: &mut Vec<Variant>,
                       networks_of: &mut Vec<SlotNetworks>| {
            let key: Vec<Vec<(PartId, u32)>> = slots
                .iter()
                .map(|&s| {
                    let mut u: BTreeMap<PartId, u32> = BTreeMap::new();
                    for m in nets.get(s).map(|n| n.members()).unwrap_or_default() {
                        *u.entry(m.part.unwrap_or(usize::MAX)).or_default() += 1;
                    }
                    u.into_iter().collect()
                })
                .collect();
            if !seen.insert(key) {
                return;
            }
            let mut uses: BTreeMap<PartId, u32> = BTreeMap::new();
            let mut parts = 0;
            for (_, n) in nets.iter() {
                for m in n.members() {
                    parts += 1;
                    if let Some(p) = m.part {
                        *uses.entry(p).or_default() += 1;
                    }
                }
            }
            variants.push(Variant {
                stage: si,
                error: stage.error(&nets.values()),
                parts,
                uses: uses.into_iter().collect(),
            });
            networks_of.push(nets);
        };
        let before = variants.len();
        for (turn, lists) in [&stock_lists, &mixed_lists].into_iter().enumerate() {
            if lists.iter().any(|l| l.is_empty()) {
                continue;
            }
            // Two searches a stage: each gets its share of the time left.
            let searches_left = 2 * (design.stages.len() - si) - turn;
            let (found, effort) = stage_variants(
                stage,
                lists,
                request.variants,
                &on_hand,
                share_of(deadline, searches_left),
            );
            cut_short |= effort.cut_short;
            for f in found {
                let nets = SlotNetworks::from_pairs(
                    slots
                        .iter()
                        .enumerate()
                        .map(|(p, &s)| (s, lists[p][f.picks[p]].network.clone())),
                );
                add(nets, &mut variants, &mut networks_of);
            }
        }
        // The plain baseline: every slot its nearest catalogue value, bought. Whatever it costs, the order
        // can cost no more where it meets the bound.
        if !catalogue.items.is_empty() {
            let nets = SlotNetworks::from_pairs(slots.iter().map(|&s| {
                let x = ideal.values.get(s).expect("ideal sets every slot");
                let (i, item) = catalogue
                    .items
                    .iter()
                    .enumerate()
                    .min_by(|(_, a), (_, b)| {
                        (a.ohms.0 / x.0)
                            .ln()
                            .abs()
                            .total_cmp(&(b.ohms.0 / x.0).ln().abs())
                    })
                    .expect("a catalogue with items");
                let member = Member {
                    ohms: item.ohms,
                    tolerance: item.tolerance,
                    power: item.power,
                    location: Some(crate::stock::TO_BUY.to_string()),
                    part: Some(stocked + i),
                };
                (s, Network::Single(member))
            }));
            if meets_hard_constraints(stage, &nets) {
                add(nets, &mut variants, &mut networks_of);
            }
        }
        if variants.len() == before && cut_short {
            return Err(OrderError::TimedOut(format!("stage \"{}\"", stage.name)));
        }
    }
    progress("choosing the purchase");
    // In the program, catalogue parts start from none on hand: every piece of them is bought.
    let free: Vec<u32> = combined
        .parts
        .iter()
        .enumerate()
        .map(|(i, p)| if i < stocked { p.qty } else { 0 })
        .collect();
    let bought = allocate_buying(&variants, design.stages.len(), request.copies, &free, &offers, request.goal, deadline)
        .map_err(|e| match e {
            ShareError::NoVariant(s) => OrderError::Infeasible(format!(
                "stage \"{}\": no network set from stock and catalogue meets the hard constraints",
                design.stages[s].name
            )),
            ShareError::Scarce { .. } => OrderError::Infeasible(match request.goal {
                Goal::MaxError(b) => format!(
                    "no purchase keeps every board within {} %; raise --error, allow --parts 3, or widen the catalogue",
                    crate::notation::trim_number(b * 100.0, 3)
                ),
                Goal::Budget(b) => format!("no design can be completed within a budget of {b:.2}"),
            }),
            ShareError::TimedOut => OrderError::TimedOut("choosing the purchase".into()),
            other => OrderError::Infeasible(other.to_string()),
        })?;
    let mut built: Vec<Built> = bought
        .allocation
        .chosen
        .iter()
        .map(|&(vi, copies)| {
            let v = &variants[vi];
            let networks = networks_of[vi].clone();
            Built {
                stage: v.stage,
                error: design.stages[v.stage].error(&networks.values()),
                worst: None,
                networks,
                copies,
            }
        })
        .collect();
    built.sort_by_key(|b| b.stage);
    if let Goal::MaxError(bound) = request.goal {
        // Verified on the final networks with the DC solver, not taken from the program.
        if built.iter().any(|b| b.error > bound * (1.0 + 1e-9)) {
            return Err(OrderError::Infeasible(
                "the chosen design does not meet the bound when re-checked".into(),
            ));
        }
    }
    let mut per_item: BTreeMap<usize, (u32, u32, f64)> = BTreeMap::new();
    for &(o, n) in &bought.packs {
        let e = per_item.entry(offers[o].part).or_default();
        e.0 += offers[o].pack * n;
        e.1 += n;
        e.2 += offers[o].price * n as f64;
    }
    let lines = per_item
        .into_iter()
        .map(|(p, (qty, packs, cost))| {
            let part = &combined.parts[p];
            OrderLine {
                ohms: part.ohms,
                tolerance: part.tolerance,
                power: part.power,
                qty,
                packs,
                cost: Money(cost),
            }
        })
        .collect();
    Ok(OrderOutcome {
        built,
        lines,
        cost: Money(bought.cost),
        parts: combined,
        stocked,
        proven: bought.allocation.proven && !cut_short,
        bound: match request.goal {
            // The budget's program minimises the worst error; its floor holds over the variants found, and
            // those are the exact K best only when every search finished.
            Goal::Budget(_) if !cut_short => Some(bought.allocation.floor),
            Goal::Budget(_) => Some(0.0),
            // The error-bound program minimises the price, which has no bound to state.
            Goal::MaxError(_) => None,
        },
        variants: variants.len(),
    })
}
