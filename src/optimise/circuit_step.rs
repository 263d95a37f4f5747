//! A circuit's part of a design: its ideal, each slot's candidate networks around it (a kept slot's own
//! network, a slot's range clipping its window), the hand-rounded baseline, and the exact search's best
//! variants, ready for the integer program that shares the stock with the stages.

use super::circuit::{best_circuit_variants, CircuitModel};
use super::design::{nearest_single, slot_candidates, DesignError, Request};
use super::search::{Effort, Found, Stop};
use crate::circuit::ideal::Ideal;
use crate::circuit::Circuit;
use crate::network::candidates::{Candidate, Index};
use crate::network::{Network, PartId};
use crate::stock::Stock;
use crate::units::Ohms;
use std::collections::BTreeMap;
use std::time::Instant;

/// One circuit built one way.
#[derive(Clone, Debug)]
pub struct BuiltCircuit {
    /// Which circuit (index into the design file's circuits).
    pub circuit: usize,
    /// Each slot's network, in [`Circuit::slots`] order.
    pub networks: Vec<Network>,
    /// The circuit's exact error from the engine.
    pub error: f64,
    /// Boards built this way.
    pub copies: u32,
}

/// The hand-rounded baseline of one circuit: each slot at its nearest single stock value.
#[derive(Clone, Debug)]
pub struct CircuitBaseline {
    /// Which circuit.
    pub circuit: usize,
    /// The rounded networks (single parts), in slot order.
    pub networks: Vec<Network>,
    /// Its exact error (infinite when it has no operating point).
    pub error: f64,
    /// Whether the stock holds every part it needs for all boards.
    pub in_stock: bool,
    /// Whether it meets the hard constraints.
    pub feasible: bool,
    /// The checks it fails, in words.
    pub fails: Vec<String>,
}

/// The circuits' part of a finished design.
#[derive(Clone, Debug, Default)]
pub struct CircuitOutcome {
    /// The chosen builds (a circuit appears more than once when boards differ).
    pub built: Vec<BuiltCircuit>,
    /// Next-best designs per circuit, best first.
    pub alternatives: Vec<Vec<BuiltCircuit>>,
    /// The baseline per circuit.
    pub baseline: Vec<CircuitBaseline>,
    /// The ideal per circuit.
    pub ideals: Vec<Ideal>,
    /// The slots kept as given: (circuit index, slot name).
    pub kept: Vec<(usize, String)>,
}

/// One circuit searched.
pub struct Searched {
    /// Each slot's candidates, in slot order.
    pub candidates: Vec<Vec<Candidate>>,
    /// The best variants, best first.
    pub found: Vec<Found>,
    /// The search's effort.
    pub effort: Effort,
    /// The ideal.
    pub ideal: Ideal,
    /// The baseline.
    pub baseline: CircuitBaseline,
    /// Where the windows were narrowed.
    pub notes: Vec<String>,
}

/// The slot names of a circuit, in slot order.
pub fn slot_names(c: &Circuit) -> Vec<String> {
    c.slots().iter().map(|&i| c.parts[i].name.clone()).collect()
}

/// A kept network as a candidate: it is on the board already, so it takes nothing from stock.
fn kept(network: &Network) -> Candidate {
    Candidate {
        ohms: network.ohms(),
        uses: Vec::new(),
        parts: network.part_count(),
        band: network.band(),
        left: 0,
        network: network.clone(),
    }
}

/// Searches circuit `ci` of the design: its ideal, candidates, baseline and best variants.
#[allow(clippy::too_many_arguments)]
pub fn search_circuit(
    ci: usize,
    c: &Circuit,
    index: &Index,
    stock: &Stock,
    request: &Request,
    keep: &[(String, Network)],
    deadline: Option<Instant>,
) -> Result<Searched, DesignError> {
    let ideal = c.ideal()?;
    let names = slot_names(c);
    for (slot, _) in keep {
        if !names.contains(slot) {
            return Err(DesignError::NoSuchCircuitSlot {
                circuit: c.name.clone(),
                slot: slot.clone(),
                slots: names.join(", "),
            });
        }
    }
    let slots = c.slots();
    let mut candidates = Vec::new();
    let mut notes = Vec::new();
    for (k, name) in names.iter().enumerate() {
        if let Some((_, n)) = keep.iter().find(|(s, _)| s == name) {
            candidates.push(vec![kept(n)]);
            continue;
        }
        let x = ideal.values[k];
        let place = format!("circuit \"{}\"", c.name);
        let (mut list, note) = slot_candidates(index, x, request.window, &place, name)?;
        if let Some((lo, hi)) = c
            .rules
            .iter()
            .find(|r| r.part == slots[k])
            .and_then(|r| r.range)
        {
            list.retain(|n| n.ohms.0 >= lo.0 && n.ohms.0 <= hi.0);
        }
        notes.extend(note);
        if list.is_empty() {
            return Err(DesignError::CircuitInfeasible {
                circuit: c.name.clone(),
                reason: format!(
                    "the stock has nothing within a factor {} of the ideal {name} = {}",
                    request.window,
                    crate::notation::code(x)
                ),
            });
        }
        candidates.push(list);
    }
    let on_hand: Vec<u32> = stock.parts.iter().map(|p| p.qty).collect();
    let baseline = baseline_of(
        ci,
        c,
        stock,
        &ideal.values,
        &candidates,
        keep,
        request.copies,
    );
    let k = request.variants.max(request.alternatives + 1);
    let stop = Stop {
        deadline,
        evaluations: request.search_budget,
    };
    let mut model = CircuitModel::new(c);
    let (found, effort) = best_circuit_variants(&mut model, &candidates, k, &on_hand, stop);
    if found.is_empty() && !effort.cut_short {
        return Err(infeasible(c, &candidates, &names));
    }
    Ok(Searched {
        candidates,
        found,
        effort,
        ideal,
        baseline,
        notes,
    })
}

/// The networks of one variant, in slot order.
pub fn networks_of(candidates: &[Vec<Candidate>], picks: &[usize]) -> Vec<Network> {
    picks
        .iter()
        .enumerate()
        .map(|(s, &i)| candidates[s][i].network.clone())
        .collect()
}

/// A variant as a build, its error recomputed by the engine on the final networks.
pub fn build_of(ci: usize, c: &Circuit, s: &Searched, fi: usize, copies: u32) -> BuiltCircuit {
    let networks = networks_of(&s.candidates, &s.found[fi].picks);
    BuiltCircuit {
        circuit: ci,
        error: error_of(c, &networks),
        networks,
        copies,
    }
}

/// The circuit's error with these networks (infinite without an operating point).
pub fn error_of(c: &Circuit, networks: &[Network]) -> f64 {
    let ohms: Vec<Ohms> = networks.iter().map(Network::ohms).collect();
    c.typical(&ohms)
        .ok()
        .and_then(|b| crate::circuit::solve(c, &b).ok())
        .map_or(f64::INFINITY, |s| c.error(&s))
}

/// The failed checks of a build, in words.
fn failing(c: &Circuit, networks: &[Network]) -> Vec<String> {
    let ohms: Vec<Ohms> = networks.iter().map(Network::ohms).collect();
    let ratings: Vec<_> = networks.iter().map(Network::equivalent_rating).collect();
    match c.checks(
        &ohms,
        &ratings,
        &crate::circuit::Options { check_latch: false },
    ) {
        Ok(checks) => checks
            .into_iter()
            .filter(|k| !k.ok)
            .map(|k| k.describe())
            .collect(),
        Err(e) => vec![e.to_string()],
    }
}

/// Rounds each slot to the single stock value nearest its ideal (in ratio), the way it is done by hand.
fn baseline_of(
    ci: usize,
    c: &Circuit,
    stock: &Stock,
    ideal: &[Ohms],
    candidates: &[Vec<Candidate>],
    keep: &[(String, Network)],
    copies: u32,
) -> CircuitBaseline {
    let names = slot_names(c);
    let mut need: BTreeMap<PartId, u32> = BTreeMap::new();
    let networks: Vec<Network> = ideal
        .iter()
        .zip(&names)
        .enumerate()
        .map(|(k, (x, name))| {
            if keep.iter().any(|(s, _)| s == name) {
                return candidates[k][0].network.clone();
            }
            let (id, network) = nearest_single(stock, *x);
            *need.entry(id).or_default() += copies;
            network
        })
        .collect();
    let fails = failing(c, &networks);
    CircuitBaseline {
        circuit: ci,
        error: error_of(c, &networks),
        in_stock: need.iter().all(|(&p, &n)| stock.parts[p].qty >= n),
        feasible: fails.is_empty(),
        fails,
        networks,
    }
}

/// Names what binds when no variant meets the constraints: the closest build ignoring them, and the
/// checks it fails.
fn infeasible(c: &Circuit, candidates: &[Vec<Candidate>], names: &[String]) -> DesignError {
    let mut model = CircuitModel::relaxed(c);
    let unlimited = vec![
        u32::MAX;
        candidates
            .iter()
            .flatten()
            .flat_map(|k| k.uses.iter().map(|u| u.0 + 1))
            .max()
            .unwrap_or(0)
    ];
    let (closest, _) =
        best_circuit_variants(&mut model, candidates, 1, &unlimited, Stop::default());
    let reason = match closest.first() {
        None => "no stocked network comes within reach of the targets".to_string(),
        Some(f) => {
            let nets = networks_of(candidates, &f.picks);
            let fails = failing(c, &nets);
            format!(
                "no stocked network set meets the hard constraints; binding: {}. Closest: {} (error {:.2} %). Widen the stock (a shopping list from the order command)",
                if fails.is_empty() {
                    "the same part wanted in two slots".to_string()
                } else {
                    fails.join("; ")
                },
                names
                    .iter()
                    .zip(&nets)
                    .map(|(s, n)| format!("{s}={}", n.notation()))
                    .collect::<Vec<_>>()
                    .join(","),
                f.error * 100.0
            )
        }
    };
    DesignError::CircuitInfeasible {
        circuit: c.name.clone(),
        reason,
    }
}
