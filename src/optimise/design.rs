//! A whole design from stock: candidate networks for every slot, each stage's best variants by the exact
//! search, then the integer program that shares the stock across stages and boards; plus the hand-rounded
//! baseline and, when nothing fits, the constraint that binds.

use super::circuit_step::{build_of, search_circuit, CircuitOutcome, Searched as CircuitSearched};
use super::search::{
    best_variants, best_variants_within, Deviations, Effort, Evaluate, Found, GainWindow, Order,
    Stop, GAIN, IC, RC, VCE, VE,
};
use super::share::{allocate, ShareError, Variant};
use crate::circuit::Circuit;
use crate::network::candidates::{Candidate, Cut, Index};
use crate::network::{Network, PartId};
use crate::stage::{
    Check, Design, Slot, SlotNetworks, SlotValues, Stage, StageError, Targets, Topology,
};
use crate::stock::Stock;
use crate::units::{Celsius, Ohms};
use std::time::{Duration, Instant};

/// What to design, and how hard to look.
#[derive(Clone, Debug)]
pub struct Request {
    /// At most this many resistors per slot (1, 2 or 3).
    pub max_parts: usize,
    /// Boards to build.
    pub copies: u32,
    /// Slots already fitted: (stage index, slot, network). They are kept as they are and take no stock.
    pub keep: Vec<(usize, Slot, Network)>,
    /// Circuit slots already fitted: (circuit index, slot name, network), kept likewise.
    pub keep_circuit: Vec<(usize, String, Network)>,
    /// Variants generated per stage for the integer program.
    pub variants: usize,
    /// Next-best designs to list per stage.
    pub alternatives: usize,
    /// Stop searching after this long and return the best verified design found.
    pub time_limit: Option<Duration>,
    /// Stop at this instant at the latest: a command computes it once, when it starts, so that reading its
    /// files counts against its time limit too. The earlier of this and `time_limit` from the call wins.
    pub deadline: Option<Instant>,
    /// Cut each stage's search after this many error evaluations, as the time limit would: the same cut on
    /// every machine, for tests and repeatable benchmarks.
    pub search_budget: Option<u64>,
    /// Each slot's candidates lie within this factor of its ideal value.
    pub window: f64,
    /// Choose by the worst-case error over tolerance, beta and temperature instead of the nominal error. The
    /// worst case is taken over each stage's `variants` best nominal designs.
    pub robust: bool,
    /// The temperature range of the worst case; by default each stage's `limits.temperature`, else the
    /// spread command's default range.
    pub robust_temp: Option<(Celsius, Celsius)>,
}

impl Request {
    /// The instant the work must stop by, for work that starts at `started`.
    pub fn deadline_from(&self, started: Instant) -> Option<Instant> {
        earliest(self.deadline, self.time_limit.map(|l| started + l))
    }
}

/// The earlier of two optional instants.
pub fn earliest(a: Option<Instant>, b: Option<Instant>) -> Option<Instant> {
    match (a, b) {
        (Some(a), Some(b)) => Some(a.min(b)),
        (a, None) => a,
        (None, b) => b,
    }
}

/// A share of the time left before `deadline` for one of `parts` pieces of work still to do, keeping a
/// tenth in hand for what follows them (sharing the stock): every stage gets its turn, however slow the
/// first.
pub fn share_of(deadline: Option<Instant>, parts: usize) -> Option<Instant> {
    deadline.map(|d| {
        let now = Instant::now();
        now + d
            .saturating_duration_since(now)
            .mul_f64(0.9 / parts.max(1) as f64)
    })
}

impl Default for Request {
    fn default() -> Self {
        Request {
            max_parts: 2,
            copies: 1,
            keep: Vec::new(),
            keep_circuit: Vec::new(),
            variants: 200,
            alternatives: 0,
            time_limit: None,
            deadline: None,
            search_budget: None,
            window: 3.0,
            robust: false,
            robust_temp: None,
        }
    }
}

/// One stage built one way.
#[derive(Clone, Debug)]
pub struct Built {
    /// Which stage.
    pub stage: usize,
    /// Each slot's network.
    pub networks: SlotNetworks,
    /// The exact error from the DC solver.
    pub error: f64,
    /// The worst-case error over tolerance, beta and temperature (with --robust).
    pub worst: Option<f64>,
    /// Boards built this way.
    pub copies: u32,
}

/// How the solve went.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct SolverInfo {
    /// Wall-clock seconds for the whole search.
    pub seconds: f64,
    /// Variants handed to the integer program, over all stages.
    pub variants: usize,
    /// "optimal", or "time limit" when the search was cut short.
    pub status: String,
    /// Error evaluations made by the exact search.
    pub evaluations: u64,
    /// "optimal" when proven, else "best found": the best verified design in hand when the time ran out.
    pub result: String,
    /// What was proven about the largest stage error: no design beats it. Equal to the design's own when
    /// optimal; below it (possibly 0) when the best found; None where nothing is proven (`--robust` cut
    /// short, or a purchase's price).
    pub bound: Option<f64>,
    /// The time limit the command ran under, seconds (None: unlimited).
    pub time_limit: Option<f64>,
}

impl SolverInfo {
    /// Whether the answer is proven optimal.
    pub fn optimal(&self) -> bool {
        self.result == "optimal"
    }
}

/// The hand-rounded baseline of one stage: each slot at its nearest single stock value.
#[derive(Clone, Debug)]
pub struct Baseline {
    /// Which stage.
    pub stage: usize,
    /// The rounded networks (single parts).
    pub networks: SlotNetworks,
    /// Its exact error.
    pub error: f64,
    /// Whether the stock holds every part it needs for all boards.
    pub in_stock: bool,
    /// Whether it meets the hard constraints.
    pub feasible: bool,
    /// The hard constraints it fails, in words ("stiffness 7.2 × IB (needs ≥ 10 × IB)"); empty when feasible.
    pub fails: Vec<String>,
}

/// A finished design.
#[derive(Clone, Debug)]
pub struct Outcome {
    /// The chosen builds, stage by stage (a stage appears more than once when boards differ).
    pub built: Vec<Built>,
    /// Next-best designs per stage, best first.
    pub alternatives: Vec<Vec<Built>>,
    /// The baseline per stage.
    pub baseline: Vec<Baseline>,
    /// How the solve went.
    pub solver: SolverInfo,
    /// Where the search was narrowed to keep a huge stock manageable.
    pub notes: Vec<String>,
    /// The slots kept as given (already fitted), by stage index.
    pub kept: Vec<(usize, Slot)>,
    /// The circuits' builds, baselines and alternatives.
    pub circuits: CircuitOutcome,
}

impl Outcome {
    /// The slots of one stage that were kept as given.
    pub fn kept_in(&self, stage: usize) -> Vec<Slot> {
        self.kept
            .iter()
            .filter(|(s, _)| *s == stage)
            .map(|&(_, slot)| slot)
            .collect()
    }
}

/// Why no design could be made.
#[derive(Debug, thiserror::Error)]
pub enum DesignError {
    /// A stage has no ideal design (its rule is impossible).
    #[error(transparent)]
    Stage(#[from] StageError),
    /// A kept slot is not one of the stage's slots.
    #[error("--keep {slot}: stage \"{stage}\" has no slot {slot}; its slots are {slots}")]
    NoSuchSlot {
        /// The stage.
        stage: String,
        /// The slot asked for.
        slot: Slot,
        /// The slots it has.
        slots: String,
    },
    /// No stocked network set meets the hard constraints.
    #[error("stage \"{stage}\": {reason}")]
    Infeasible {
        /// The stage.
        stage: String,
        /// What binds, and the closest design.
        reason: String,
    },
    /// The time limit passed before any design was found: the text names where (a stage, or the sharing of
    /// the stock).
    #[error("{0}: the time limit passed before any design was found; raise --time-limit (seconds; the default is 60), or narrow the search with fewer --parts or --variants")]
    TimedOut(String),
    /// The stock cannot cover every board.
    #[error("{0}; try fewer --copies, --parts 3, or `biasfit order` for a shopping list")]
    Scarce(String),
    /// A circuit has no ideal design.
    #[error(transparent)]
    CircuitIdeal(Box<crate::circuit::ideal::IdealError>),
    /// A kept slot is not one of the circuit's slots.
    #[error("circuit \"{circuit}\" has no slot {slot}; its slots are {slots}")]
    NoSuchCircuitSlot {
        /// The circuit.
        circuit: String,
        /// The slot asked for.
        slot: String,
        /// The slots it has.
        slots: String,
    },
    /// No stocked network set meets a circuit's hard constraints.
    #[error("circuit \"{circuit}\": {reason}")]
    CircuitInfeasible {
        /// The circuit.
        circuit: String,
        /// What binds, and the closest design.
        reason: String,
    },
    /// The stock holds no piece at all (no rows, or every quantity 0), so no slot can be filled.
    #[error("{0}: no part has any pieces on hand, so no network can be built; expected at least one row with a quantity above 0 (or `biasfit order` for a shopping list)")]
    EmptyStock(String),
}

impl From<crate::circuit::ideal::IdealError> for DesignError {
    fn from(e: crate::circuit::ideal::IdealError) -> DesignError {
        DesignError::CircuitIdeal(Box::new(e))
    }
}

/// The most networks one slot's window may hold (before deduplication) before the window is narrowed.
pub const CANDIDATE_LIMIT: usize = 300_000;

/// Each topology's solve order: which slots to enumerate, which to scan, which is the collector slot.
///
/// The scan slot is the one the bias deviations (IC, VE) depend on monotonically for fixed outer slots; the
/// collector slot is the one that moves only VCE, RC/RL and gain while the transistor is active. In collector
/// feedback RC sits in the bias loop, so it is enumerated instead and RB carries every deviation.
pub fn solve_order(
    topology: Topology,
    slots: &[Slot],
    ideal: &SlotValues,
    targets: &Targets,
) -> Order {
    let load = targets.rc;
    let pos = |s: Slot| slots.iter().position(|&x| x == s);
    let (scan, collector) = match topology {
        Topology::Divider | Topology::DividerSplit => (Slot::R1, Some(Slot::RC)),
        Topology::DualSupply | Topology::BaseResistor => (Slot::RB, Some(Slot::RC)),
        Topology::CollectorFeedback => (Slot::RB, None),
    };
    let scan = pos(scan).expect("every topology has its scan slot");
    let collector = collector.and_then(pos);
    let outer: Vec<usize> = (0..slots.len())
        .filter(|&i| i != scan && Some(i) != collector)
        .collect();
    // The emitter window needs VE = IE·RE measured from ground, which a dual supply's VE is not.
    let emitter: Vec<usize> = match topology {
        Topology::DualSupply => Vec::new(),
        _ => [Slot::RE, Slot::RE1, Slot::RE2]
            .into_iter()
            .filter_map(pos)
            .collect(),
    };
    let emitter_ohms = emitter
        .iter()
        .map(|&p| ideal.get(slots[p]).map_or(0.0, |r| r.0))
        .sum();
    let centre = slots
        .iter()
        .map(|&s| ideal.get(s).unwrap_or(Ohms(1.0)))
        .collect();
    Order {
        outer,
        scan,
        collector,
        emitter,
        emitter_ohms,
        centre,
        collector_target: collector.and(load),
        gain: match (
            topology,
            targets.gain,
            load,
            pos(Slot::RE1),
            ideal.get(Slot::RE1),
        ) {
            (Topology::DividerSplit, Some(g), Some(rl), Some(slot), Some(re1)) if g > 0.0 => {
                // The ideal design meets the gain exactly with RC = RL, which gives re' at the targets.
                let ac = rl.0 / 2.0;
                Some(GainWindow {
                    slot,
                    gain: g,
                    load: rl.0,
                    re_prime: ac / g - re1.0,
                })
            }
            _ => None,
        },
    }
}

/// The search's view of one stage.
struct Model<'a> {
    stage: &'a Stage,
    slots: Vec<Slot>,
}

impl Model<'_> {
    fn values(&self, v: &[Ohms]) -> SlotValues {
        let mut sv = SlotValues::new();
        for (&s, &r) in self.slots.iter().zip(v) {
            sv.set(s, r);
        }
        sv
    }

    fn networks(&self, picks: &[&Candidate]) -> SlotNetworks {
        SlotNetworks::from_pairs(
            self.slots
                .iter()
                .copied()
                .zip(picks.iter().map(|c| c.network.clone())),
        )
    }
}

/// Only the resistor-rating checks decide acceptance here; the others are the electrical ones, already
/// applied, or the transistor's own limits, which the resistor choice barely moves and which the report shows.
fn ratings_ok(checks: &[Check]) -> bool {
    checks.iter().filter(|c| is_resistor_power(c)).all(|c| c.ok)
}

/// Whether a check is a resistor's dissipation against its derated rating (the stage names them "power R1",
/// "power R1 part 2 (4k7)"; the transistor's is "transistor power").
fn is_resistor_power(c: &Check) -> bool {
    c.name.starts_with("power ")
}

/// Whether a check is one of the hard constraints (stiffness, divider current, the active region that the
/// headroom checks test, a resistor's rating), rather than a figure reported beside them.
fn is_hard(c: &Check) -> bool {
    is_resistor_power(c)
        || c.name == "stiffness"
        || c.name == "divider current"
        || c.name.starts_with("headroom")
}

/// A failed check in words: "stiffness 7.2 × IB (needs ≥ 10 × IB)".
fn describe(c: &Check) -> String {
    c.describe()
}

impl Evaluate for Model<'_> {
    fn deviations(&self, v: &[Ohms]) -> Deviations {
        let d = self.stage.deviations(&self.values(v));
        let mut out = [f64::NAN; 5];
        out[IC] = d.ic;
        out[VCE] = d.vce;
        out[VE] = d.ve.unwrap_or(f64::NAN);
        out[RC] = d.rc.unwrap_or(f64::NAN);
        out[GAIN] = d.gain.unwrap_or(f64::NAN);
        out
    }
    fn electrical_ok(&self, v: &[Ohms]) -> bool {
        self.stage.electrical_ok(&self.values(v))
    }
    fn accept(&self, picks: &[&Candidate]) -> bool {
        ratings_ok(&self.stage.checks(&self.networks(picks)))
    }
}

/// A relaxed view that accepts everything: it finds the closest design when nothing meets the constraints.
struct Relaxed<'a>(&'a Model<'a>);

impl Evaluate for Relaxed<'_> {
    fn deviations(&self, v: &[Ohms]) -> Deviations {
        self.0.deviations(v)
    }
    fn electrical_ok(&self, _: &[Ohms]) -> bool {
        true
    }
    fn accept(&self, _: &[&Candidate]) -> bool {
        true
    }
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

/// One stage's slots, their candidate lists, and the variants the search found.
type Searched = (Vec<Slot>, Vec<Vec<Candidate>>, Vec<Found>);

/// Designs every stage of `design` from `stock`.
///
/// When the stock is too scarce for the variants generated, it generates more (four times as many, up to
/// [`MAX_VARIANTS`] a stage) before it reports the stock short: more variants can only widen the choice.
pub fn design(
    design: &Design,
    stock: &Stock,
    request: &Request,
    progress: &mut dyn FnMut(&str),
) -> Result<Outcome, DesignError> {
    design_board(design, &[], stock, request, progress)
}

/// [`design`] of a board: the design file's stages and its circuits, filled from one stock by one integer
/// program (a circuit is one more position beside the stages, with its own exact search).
pub fn design_board(
    design: &Design,
    circuits: &[Circuit],
    stock: &Stock,
    request: &Request,
    progress: &mut dyn FnMut(&str),
) -> Result<Outcome, DesignError> {
    if stock.parts.iter().all(|p| p.qty == 0) {
        return Err(DesignError::EmptyStock(stock.file.clone()));
    }
    let started = Instant::now();
    let mut attempt = request.clone();
    attempt.deadline = request.deadline_from(started);
    // Under a limit, a design of single parts first, from a tenth of the time: it costs little (a window
    // of singles is a binary search) and is a verified design to fall back on should the full search run
    // out of time before it holds one.
    let fallback = (request.max_parts > 1
        && (attempt.deadline.is_some() || request.search_budget.is_some()))
    .then(|| {
        let mut quick = attempt.clone();
        quick.max_parts = 1;
        quick.alternatives = 0;
        quick.deadline = attempt.deadline.map(|d| {
            let now = Instant::now();
            now + d.saturating_duration_since(now) / 10
        });
        progress("a first design of single parts");
        design_once(design, circuits, stock, &quick, &mut |_| {}).ok()
    })
    .flatten();
    let full = design_full(design, circuits, stock, &mut attempt, progress);
    let fall_back = |mut f: Outcome, bound: Option<f64>| {
        f.solver.status = "time limit".into();
        f.solver.result = "best found".into();
        f.solver.bound = bound;
        f.solver.seconds = started.elapsed().as_secs_f64();
        f.notes.push(
            "the full search ran out of time: this design uses single parts, found first".into(),
        );
        f
    };
    let worst = |o: &Outcome| {
        o.built
            .iter()
            .map(|b| b.error)
            .chain(o.circuits.built.iter().map(|b| b.error))
            .fold(0.0, f64::max)
    };
    match (full, fallback) {
        (Ok(o), Some(f)) if !o.solver.optimal() && worst(&f) < worst(&o) => {
            // The full search's bound holds for every design, the single-part one included.
            let bound = o.solver.bound.map(|b| b.min(worst(&f)));
            Ok(fall_back(f, bound))
        }
        (Err(DesignError::TimedOut(_)), Some(f)) => Ok(fall_back(f, None)),
        (other, _) => other,
    }
}

/// [`design`] without the fallback: the full search, retried with more variants while the stock is scarce.
fn design_full(
    design: &Design,
    circuits: &[Circuit],
    stock: &Stock,
    attempt: &mut Request,
    progress: &mut dyn FnMut(&str),
) -> Result<Outcome, DesignError> {
    loop {
        match design_once(design, circuits, stock, attempt, progress) {
            Err(DesignError::Scarce(_)) if attempt.variants < MAX_VARIANTS => {
                if attempt.deadline.is_some_and(|d| Instant::now() >= d) {
                    // More variants might have covered the boards, but there is no time to look.
                    return Err(DesignError::TimedOut(format!(
                        "{} board(s) from {}",
                        attempt.copies, stock.file
                    )));
                }
                attempt.variants = (attempt.variants * 4).min(MAX_VARIANTS);
                progress(&format!(
                    "the stock is scarce: trying {} variants a stage",
                    attempt.variants
                ));
            }
            other => return other,
        }
    }
}

/// The most variants a stage gets when the stock is scarce.
pub const MAX_VARIANTS: usize = 3200;

/// One slot's candidate networks within `window` of its ideal `x`. A huge stock with triples can hold
/// billions of networks near a value: the window is narrowed until it holds a number the search can take,
/// and the note says so. `owner` names the stage or circuit in messages, `slot` the slot.
pub fn slot_candidates(
    index: &Index,
    x: Ohms,
    window: f64,
    owner: &str,
    slot: &str,
) -> Result<(Vec<Candidate>, Option<String>), DesignError> {
    let mut w = window;
    loop {
        match index.in_window_until(x / w, x * w, CANDIDATE_LIMIT) {
            Ok(list) => {
                let note = (w < window).then(|| {
                    format!(
                        "{owner} {slot}: the stock offers so many networks that the search looked only within {} of the ideal {}",
                        if w < 1.5 {
                            format!("±{} %", crate::notation::trim_number((w - 1.0) * 100.0, 2))
                        } else {
                            format!("×{}", crate::notation::trim_number(w, 3))
                        },
                        crate::notation::code(x)
                    )
                });
                return Ok((list, note));
            }
            Err(Cut::TooMany) => w = w.sqrt(),
            Err(Cut::TimedOut) => {
                return Err(DesignError::TimedOut(format!(
                    "{owner} (finding {slot}'s networks)"
                )))
            }
        }
    }
}

/// One attempt of [`design`] with the request's number of variants.
fn design_once(
    design: &Design,
    circuits: &[Circuit],
    stock: &Stock,
    request: &Request,
    progress: &mut dyn FnMut(&str),
) -> Result<Outcome, DesignError> {
    let started = Instant::now();
    let deadline = request.deadline_from(started);
    let on_hand: Vec<u32> = stock.parts.iter().map(|p| p.qty).collect();
    // What is proven about each stage's best error, for the bound a cut-short answer states.
    let mut floors: Vec<f64> = Vec::new();
    let mut variants: Vec<Variant> = Vec::new();
    let mut found_per_stage: Vec<Searched> = Vec::new();
    let mut baseline = Vec::new();
    let mut evaluations = 0u64;
    let mut cut_short = false;
    let mut narrowed: Vec<String> = Vec::new();
    let mut worst_per_stage: Vec<Vec<Option<f64>>> = Vec::new();
    for (si, stage) in design.stages.iter().enumerate() {
        progress(&format!(
            "stage {} of {}: {}",
            si + 1,
            design.stages.len(),
            stage.name
        ));
        let ideal = stage.ideal()?;
        let slots = stage.slots();
        for (ks, slot, _) in &request.keep {
            if *ks == si && !slots.contains(slot) {
                return Err(DesignError::NoSuchSlot {
                    stage: stage.name.clone(),
                    slot: *slot,
                    slots: slots
                        .iter()
                        .map(|s| s.to_string())
                        .collect::<Vec<_>>()
                        .join(", "),
                });
            }
        }
        // This stage's share of the time left: candidates and search together.
        let stage_deadline = share_of(deadline, design.stages.len() + circuits.len() - si);
        let index = Index::new(stock, request.max_parts).until(stage_deadline);
        let mut candidates: Vec<Vec<Candidate>> = Vec::new();
        for &s in &slots {
            if let Some((_, _, n)) = request
                .keep
                .iter()
                .find(|(ks, ksl, _)| *ks == si && *ksl == s)
            {
                candidates.push(vec![kept(n)]);
                continue;
            }
            let x = ideal
                .values
                .get(s)
                .expect("the ideal design sets every slot");
            let (list, note) = slot_candidates(
                &index,
                x,
                request.window,
                &format!("stage \"{}\"", stage.name),
                &s.to_string(),
            )?;
            candidates.push(list);
            narrowed.extend(note);
        }
        let model = Model {
            stage,
            slots: slots.clone(),
        };
        baseline.push(baseline_of(
            si,
            &model,
            stock,
            &ideal.values,
            request.copies,
        ));
        if let Some(empty) = slots.iter().zip(&candidates).find(|(_, c)| c.is_empty()) {
            return Err(DesignError::Infeasible {
                stage: stage.name.clone(),
                reason: format!(
                    "the stock has nothing within a factor {} of the ideal {} = {}; see `biasfit order` for a shopping list",
                    request.window,
                    empty.0,
                    crate::notation::code(ideal.values.get(*empty.0).unwrap_or(Ohms(1.0)))
                ),
            });
        }
        let order = solve_order(stage.topology, &slots, &ideal.values, &stage.targets());
        let k = request.variants.max(request.alternatives + 1);
        let stop = Stop {
            deadline: stage_deadline,
            evaluations: request.search_budget,
        };
        let (found, effort): (Vec<Found>, Effort) =
            best_variants_within(&model, &order, &candidates, k, &on_hand, stop);
        evaluations += effort.evaluations;
        cut_short |= effort.cut_short;
        if found.is_empty() && effort.cut_short {
            return Err(DesignError::TimedOut(format!("stage \"{}\"", stage.name)));
        }
        floors.push(effort.proven_floor(found.first().map(|f| f.error)));
        if found.is_empty() {
            return Err(infeasible(stage, &model, &order, &candidates, &on_hand));
        }
        let mut found = found;
        let mut worst_of: Vec<Option<f64>> = vec![None; found.len()];
        if request.robust {
            let temps = request
                .robust_temp
                .or(stage.limits.temperature)
                .unwrap_or(crate::spread::Options::default().temperatures);
            progress(&format!(
                "stage {}: worst case of {} designs",
                si + 1,
                found.len()
            ));
            let worst: Vec<f64> = found
                .iter()
                .map(|f| {
                    let nets = SlotNetworks::from_pairs(
                        slots
                            .iter()
                            .enumerate()
                            .map(|(p, &s)| (s, candidates[p][f.picks[p]].network.clone())),
                    );
                    crate::spread::worst_error(stage, &nets, temps)
                })
                .collect();
            let mut order: Vec<usize> = (0..found.len()).collect();
            order.sort_by(|&a, &b| {
                worst[a]
                    .total_cmp(&worst[b])
                    .then(found[a].error.total_cmp(&found[b].error))
            });
            found = order.iter().map(|&i| found[i].clone()).collect();
            worst_of = order.iter().map(|&i| Some(worst[i])).collect();
        }
        for (f, w) in found.iter().zip(&worst_of) {
            variants.push(Variant {
                stage: si,
                // With --robust the program minimises the worst case; the nominal error is still reported.
                error: w.unwrap_or(f.error),
                parts: f.parts,
                uses: f.uses.clone(),
            });
        }
        worst_per_stage.push(worst_of);
        found_per_stage.push((slots, candidates, found));
    }
    let mut circuit_searches: Vec<CircuitSearched> = Vec::new();
    for (ci, c) in circuits.iter().enumerate() {
        progress(&format!(
            "circuit {} of {}: {}",
            ci + 1,
            circuits.len(),
            c.name
        ));
        let until = share_of(deadline, circuits.len() - ci);
        let index = Index::new(stock, request.max_parts).until(until);
        let keep: Vec<(String, Network)> = request
            .keep_circuit
            .iter()
            .filter(|(k, _, _)| *k == ci)
            .map(|(_, s, n)| (s.clone(), n.clone()))
            .collect();
        let searched = search_circuit(ci, c, &index, stock, request, &keep, until)?;
        evaluations += searched.effort.evaluations;
        cut_short |= searched.effort.cut_short;
        if searched.found.is_empty() {
            return Err(DesignError::TimedOut(format!("circuit \"{}\"", c.name)));
        }
        floors.push(
            searched
                .effort
                .proven_floor(searched.found.first().map(|f| f.error)),
        );
        narrowed.extend(searched.notes.iter().cloned());
        for f in &searched.found {
            variants.push(Variant {
                stage: design.stages.len() + ci,
                error: f.error,
                parts: f.parts,
                uses: f.uses.clone(),
            });
        }
        circuit_searches.push(searched);
    }
    if request.robust && !circuits.is_empty() {
        narrowed.push(
            "circuits are chosen by their nominal error; the worst-case ranking covers the stages"
                .into(),
        );
    }
    let positions = design.stages.len() + circuits.len();
    progress("sharing the stock");
    let allocation = match allocate(&variants, positions, request.copies, &on_hand, deadline) {
        Ok(a) => a,
        Err(ShareError::TimedOut) => {
            return Err(DesignError::TimedOut(format!(
                "sharing the stock among {} board(s)",
                request.copies
            )))
        }
        Err(ShareError::Scarce { copies }) => {
            return Err(DesignError::Scarce(format!(
                "the stock cannot build {copies} board(s): the {} best variants of each stage together need more parts than are on hand",
                request.variants
            )))
        }
        Err(e) => return Err(DesignError::Scarce(e.to_string())),
    };
    // Map the flat variant list back to (stage, found index).
    let mut offsets = Vec::new();
    let mut at = 0;
    for (_, _, found) in &found_per_stage {
        offsets.push(at);
        at += found.len();
    }
    let to_built = |si: usize, fi: usize, copies: u32| -> Built {
        let f = &found_per_stage[si].2[fi];
        let (slots, candidates, _) = &found_per_stage[si];
        let networks = SlotNetworks::from_pairs(
            slots
                .iter()
                .enumerate()
                .map(|(p, &s)| (s, candidates[p][f.picks[p]].network.clone())),
        );
        // The reported error is always the DC solver's, recomputed on the final networks.
        let error = design.stages[si].error(&networks.values());
        Built {
            stage: si,
            networks,
            error,
            worst: worst_per_stage[si][fi],
            copies,
        }
    };
    for cs in &circuit_searches {
        offsets.push(at);
        at += cs.found.len();
    }
    let stages = design.stages.len();
    let mut built = Vec::new();
    let mut circuits_built = Vec::new();
    for &(vi, copies) in &allocation.chosen {
        let si = variants[vi].stage;
        let fi = vi - offsets[si];
        if si < stages {
            built.push(to_built(si, fi, copies));
        } else {
            let ci = si - stages;
            circuits_built.push(build_of(
                ci,
                &circuits[ci],
                &circuit_searches[ci],
                fi,
                copies,
            ));
        }
    }
    circuits_built.sort_by_key(|b| b.circuit);
    let circuit_alternatives = (0..circuits.len())
        .map(|ci| {
            let chosen: Vec<usize> = allocation
                .chosen
                .iter()
                .filter(|(vi, _)| variants[*vi].stage == stages + ci)
                .map(|(vi, _)| vi - offsets[stages + ci])
                .collect();
            (0..circuit_searches[ci].found.len())
                .filter(|fi| !chosen.contains(fi))
                .take(request.alternatives)
                .map(|fi| build_of(ci, &circuits[ci], &circuit_searches[ci], fi, 0))
                .collect()
        })
        .collect();
    let circuits = CircuitOutcome {
        built: circuits_built,
        alternatives: circuit_alternatives,
        baseline: circuit_searches
            .iter()
            .map(|c| c.baseline.clone())
            .collect(),
        ideals: circuit_searches.iter().map(|c| c.ideal.clone()).collect(),
        kept: request
            .keep_circuit
            .iter()
            .map(|(c, s, _)| (*c, s.clone()))
            .collect(),
    };
    built.sort_by_key(|b| b.stage);
    let alternatives = (0..design.stages.len())
        .map(|si| {
            let chosen: Vec<usize> = allocation
                .chosen
                .iter()
                .filter(|(vi, _)| variants[*vi].stage == si)
                .map(|(vi, _)| vi - offsets[si])
                .collect();
            found_per_stage[si]
                .2
                .iter()
                .enumerate()
                .filter(|(fi, _)| !chosen.contains(fi))
                .take(request.alternatives)
                .map(|(fi, _)| to_built(si, fi, 0))
                .collect()
        })
        .collect();
    let proven = allocation.proven && !cut_short;
    // No design beats its worst stage's proven floor; when every stage's search finished, the variants are
    // the exact K best and the program's own floor holds as well.
    let worst = built
        .iter()
        .map(|b| b.error)
        .chain(circuits.built.iter().map(|b| b.error))
        .fold(0.0, f64::max);
    let bound = if proven {
        Some(worst)
    } else if request.robust {
        None
    } else {
        let stages = floors.iter().copied().fold(0.0, f64::max);
        let program = if cut_short { 0.0 } else { allocation.floor };
        Some(stages.max(program).min(worst))
    };
    Ok(Outcome {
        built,
        alternatives,
        baseline,
        solver: SolverInfo {
            seconds: started.elapsed().as_secs_f64(),
            variants: variants.len(),
            status: if proven { "optimal" } else { "time limit" }.to_string(),
            evaluations,
            result: if proven { "optimal" } else { "best found" }.to_string(),
            bound,
            time_limit: request.time_limit.map(|l| l.as_secs_f64()),
        },
        notes: narrowed,
        kept: request
            .keep
            .iter()
            .map(|(s, slot, _)| (*s, *slot))
            .collect(),
        circuits,
    })
}

/// The stocked single part nearest `x` in ratio (pieces on hand only), as a network: how a slot is
/// rounded by hand. The stock must hold a piece of something.
pub fn nearest_single(stock: &Stock, x: Ohms) -> (PartId, Network) {
    let (id, part) = stock
        .parts
        .iter()
        .enumerate()
        .filter(|(_, p)| p.qty > 0)
        .min_by(|(_, a), (_, b)| {
            (a.ohms.0 / x.0)
                .ln()
                .abs()
                .total_cmp(&(b.ohms.0 / x.0).ln().abs())
        })
        .expect("a stock with parts");
    let member = crate::network::Member {
        ohms: part.ohms,
        tolerance: part.tolerance,
        power: part.power,
        location: part.location(),
        part: Some(id),
    };
    (id, Network::Single(member))
}

/// Rounds each slot to the single stock value nearest its ideal (in ratio), the way it is done by hand.
fn baseline_of(
    si: usize,
    model: &Model,
    stock: &Stock,
    ideal: &SlotValues,
    copies: u32,
) -> Baseline {
    let mut need: std::collections::BTreeMap<PartId, u32> = std::collections::BTreeMap::new();
    let pairs: Vec<(Slot, Network)> = model
        .slots
        .iter()
        .map(|&s| {
            let x = ideal.get(s).expect("ideal sets every slot");
            let (id, member) = nearest_single(stock, x);
            *need.entry(id).or_default() += copies;
            (s, member)
        })
        .collect();
    let networks = SlotNetworks::from_pairs(pairs);
    let values = networks.values();
    let in_stock = need.iter().all(|(&p, &n)| stock.parts[p].qty >= n);
    let checks = model.stage.checks(&networks);
    let feasible = model.stage.electrical_ok(&values) && ratings_ok(&checks);
    let mut fails: Vec<String> = if feasible {
        Vec::new()
    } else {
        checks
            .iter()
            .filter(|c| !c.ok && is_hard(c))
            .map(describe)
            .collect()
    };
    if !feasible && fails.is_empty() {
        // The region tests hold at the ends of the temperature range too, which no single check names.
        fails.push("the active region at an end of the beta or temperature range".to_string());
    }
    Baseline {
        stage: si,
        error: model.stage.error(&values),
        networks,
        in_stock,
        feasible,
        fails,
    }
}

/// Names the binding constraint: the closest design ignoring the hard constraints, and the checks it fails.
fn infeasible(
    stage: &Stage,
    model: &Model,
    order: &Order,
    candidates: &[Vec<Candidate>],
    on_hand: &[u32],
) -> DesignError {
    let relaxed = Relaxed(model);
    let unlimited = vec![u32::MAX; on_hand.len()];
    let (closest, _) = best_variants(&relaxed, order, candidates, 1, &unlimited, None);
    let reason = match closest.first() {
        None => "no stocked network comes within reach of the targets".to_string(),
        Some(f) => {
            let picks: Vec<&Candidate> = f
                .picks
                .iter()
                .enumerate()
                .map(|(p, &i)| &candidates[p][i])
                .collect();
            let nets = model.networks(&picks);
            let failing: Vec<String> = stage
                .checks(&nets)
                .into_iter()
                .filter(|c| !c.ok)
                .map(|c| describe(&c))
                .collect();
            let short = f.uses.iter().any(|&(p, n)| on_hand[p] < n);
            let mut why = if failing.is_empty() && short {
                "no stocked network set meets the hard constraints with the parts on hand (the closest needs the same part in two slots)".to_string()
            } else {
                format!(
                    "no stocked network set meets the hard constraints; binding: {}",
                    failing.join("; ")
                )
            };
            // A constraint the ideal design fails too is not the stock's fault: buying parts cannot help.
            let unfixable: Vec<(Check, &str)> = stage
                .ideal_failures()
                .into_iter()
                .filter(|(c, _)| {
                    failing
                        .iter()
                        .any(|f| f.starts_with(&format!("{} ", c.name)))
                })
                .collect();
            let next = match unfixable.first() {
                Some((_, fix)) => format!(
                    "The ideal design fails {} too, so no part bought passes it; {fix}",
                    unfixable
                        .iter()
                        .map(|(c, _)| c.name.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                None => "Widen the stock with `biasfit order`".to_string(),
            };
            why.push_str(&format!(
                ". Closest: {} (error {:.2} %). {next}",
                model
                    .slots
                    .iter()
                    .zip(&picks)
                    .map(|(s, c)| format!("{s}={}", c.network.notation()))
                    .collect::<Vec<_>>()
                    .join(","),
                f.error * 100.0
            ));
            why
        }
    };
    DesignError::Infeasible {
        stage: stage.name.clone(),
        reason,
    }
}

/// The `k` best variants of one stage over given candidate lists (one per slot of `stage.slots()`), by the
/// stage's solve order; `on_hand` bounds what one board may take of each part.
pub fn stage_variants(
    stage: &Stage,
    candidates: &[Vec<Candidate>],
    k: usize,
    on_hand: &[u32],
    deadline: Option<Instant>,
) -> (Vec<Found>, Effort) {
    let slots = stage.slots();
    let model = Model {
        stage,
        slots: slots.clone(),
    };
    let ideal = match stage.ideal() {
        Ok(i) => i,
        Err(_) => return (Vec::new(), Effort::default()),
    };
    let order = solve_order(stage.topology, &slots, &ideal.values, &stage.targets());
    best_variants(&model, &order, candidates, k, on_hand, deadline)
}

/// Whether a built stage meets every hard constraint: the electrical ones and each member's rating.
pub fn meets_hard_constraints(stage: &Stage, nets: &SlotNetworks) -> bool {
    stage.electrical_ok(&nets.values()) && ratings_ok(&stage.checks(nets))
}
