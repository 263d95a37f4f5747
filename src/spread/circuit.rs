//! Spread of a circuit of the user's own: what resistor tolerances, each device's parameter ranges and
//! temperature do to its targets. The same three views as for a stage, on the nodal engine: a Monte Carlo
//! of seeded random builds at the ambient (the bench), judged by the bench rule (every target within
//! ±10 %, and ±5 %: common practice, no source; each deviation times the target's weight, as in the
//! circuit's error); a worst case at the corners the sensitivities' signs
//! point to, over the device ranges' ends and the temperature range; and the sensitivities themselves.
//!
//! A build draws every member of every slot's network and every fixed resistor within its tolerance,
//! each bipolar transistor's beta uniform over its range, and each FET's threshold and transconductance
//! parameter at one uniform point between the ends of their ranges, in part order, so a seed always gives
//! the same builds. The other models (diode, zener, reference, op-amp, source) have no ranges.

use super::monte_carlo::{Dist, Summary};
use super::rng::Rng;
use super::Options;
use crate::circuit::bjt::Bjt;
use crate::circuit::fet::SquareLaw;
use crate::circuit::{Build, Circuit, Element, Kind, Options as SolveOptions, Pick, Solver};
use crate::network::Network;
use crate::units::{Celsius, Tolerance};
use itertools::Itertools;
use serde::Serialize;

/// One target over the builds.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TargetSpread {
    /// What is measured: "node c1", "current Q1", "c1 - c2".
    pub what: String,
    /// The value aimed at, volts or amperes.
    pub target: f64,
    /// The value of the build as chosen, at typical parameters and ambient.
    pub nominal: f64,
    /// The Monte Carlo builds' values.
    pub monte_carlo: Summary<f64>,
    /// The fraction of builds within ±10 % of the target (the deviation times the target's weight).
    pub within_10: f64,
    /// The fraction within ±5 %.
    pub within_5: f64,
    /// The lowest and highest value at the worst-case corners.
    pub worst: (f64, f64),
    /// Whether it is a current (else a voltage), for rendering.
    #[serde(skip)]
    pub amps: bool,
}

/// One requirement over the builds.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RequirementSpread {
    /// The requirement in words ("Q1 saturation", "overdrive Q1 ≥ 2 ×").
    pub what: String,
    /// The fraction of builds meeting it.
    pub met: f64,
}

/// How much one part moves each target.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PartSensitivity {
    /// The part ("R1", "Q1").
    pub part: String,
    /// For a resistor, d ln(target) / d ln(R) per target; for a transistor or FET, the relative change of
    /// each target from the low end of its ranges to the high end.
    pub effect: Vec<f64>,
    /// "resistance" or "range".
    pub over: &'static str,
}

/// Everything the spread found for one circuit.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitSpread {
    /// The circuit's name (the report object beside it names it in the JSON).
    #[serde(skip)]
    pub name: String,
    /// Monte Carlo builds drawn.
    pub runs: usize,
    /// The seed they were drawn from.
    pub seed: u64,
    /// How resistor values were drawn.
    pub dist: Dist,
    /// The temperature range of the worst case, °C.
    pub temperatures: (f64, f64),
    /// Each target.
    pub targets: Vec<TargetSpread>,
    /// The fraction of builds with every target within ±10 % (builds with no operating point count as out).
    pub yield_10: f64,
    /// The same within ±5 %.
    pub yield_5: f64,
    /// Builds for which no operating point was found.
    pub unsolved: usize,
    /// Each requirement of the circuit: the fraction of builds meeting it, with that build's own parameters.
    pub requirements: Vec<RequirementSpread>,
    /// The fraction of builds meeting every requirement; None when the circuit states none.
    pub requirements_met: Option<f64>,
    /// Each resistor's and each ranged device's effect on the targets.
    pub sensitivities: Vec<PartSensitivity>,
}

/// Why a circuit's spread could not be run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum CircuitSpreadError {
    /// The networks do not fit the circuit's slots.
    #[error("circuit \"{circuit}\": {got} networks for {expected} slots")]
    Slots {
        /// The circuit.
        circuit: String,
        /// Its slot count.
        expected: usize,
        /// The networks given.
        got: usize,
    },
    /// The circuit as chosen has no operating point.
    #[error(transparent)]
    Nominal(#[from] crate::circuit::target::CheckError),
    /// The circuit has no targets to spread.
    #[error("circuit \"{0}\" has no [[circuit.target]]; the spread is reported against its targets, so give one")]
    NoTargets(String),
    /// Bad options.
    #[error("{0}")]
    Options(String),
}

/// The parts' values of one build, as the solver takes them.
struct Builder<'a> {
    circuit: &'a Circuit,
    nets: &'a [Network],
    /// The tolerance of a fixed resistor that gives none.
    tolerance: Tolerance,
}

/// How one build departs from nominal: one relative deviation per resistor member (slots' members in
/// order, then fixed resistors), one position in [0, 1] per ranged device, and a temperature.
#[derive(Clone)]
struct Draw {
    resistors: Vec<f64>,
    devices: Vec<f64>,
    temperature: Celsius,
}

impl Builder<'_> {
    fn resistor_count(&self) -> usize {
        let members: usize = self.nets.iter().map(Network::part_count).sum();
        let fixed = self
            .circuit
            .parts
            .iter()
            .filter(|p| matches!(p.kind, Kind::Resistor { value: Some(_), .. }))
            .count();
        members + fixed
    }

    fn device_count(&self) -> usize {
        self.circuit
            .parts
            .iter()
            .filter(|p| matches!(p.kind, Kind::Bjt { .. } | Kind::Jfet(_) | Kind::Mosfet(_)))
            .count()
    }

    /// Each resistor member's tolerance, in draw order.
    fn tolerances(&self) -> Vec<f64> {
        let mut out: Vec<f64> = self
            .nets
            .iter()
            .flat_map(|n| n.members().into_iter().map(|m| m.tolerance.0))
            .collect();
        for p in &self.circuit.parts {
            if let Kind::Resistor {
                value: Some(_),
                tolerance,
                ..
            } = p.kind
            {
                out.push(tolerance.unwrap_or(self.tolerance).0);
            }
        }
        out
    }

    /// The build a draw describes, or None when the circuit cannot be built (a slot count off).
    fn build(&self, d: &Draw) -> Option<Build> {
        let nominal: Vec<crate::units::Ohms> = self.nets.iter().map(Network::ohms).collect();
        // Models without ranges (diodes, zeners, sources, references, op-amps) as the nominal build has them.
        let mut b = self
            .circuit
            .build(&nominal, Pick::Typ, d.temperature)
            .ok()?;
        let mut members = d.resistors.iter().copied();
        let slot_ohms: Vec<f64> = self
            .nets
            .iter()
            .map(|n| {
                let devs: Vec<f64> = members.by_ref().take(n.part_count()).collect();
                member_ohms(n, &devs)
            })
            .collect();
        let slots = self.circuit.slots();
        let mut devices = d.devices.iter().copied();
        for (i, p) in self.circuit.parts.iter().enumerate() {
            b.elements[i] = match &p.kind {
                Kind::Resistor { value: Some(v), .. } => {
                    Element::Resistor(v.0 * (1.0 + members.next().unwrap_or(0.0)))
                }
                Kind::Resistor { value: None, .. } => {
                    Element::Resistor(slots.iter().position(|&k| k == i).map(|k| slot_ohms[k])?)
                }
                Kind::Bjt {
                    polarity,
                    transistor,
                } => {
                    let t = devices.next().unwrap_or(0.5);
                    let r = &transistor.beta;
                    let beta = if t <= 0.5 {
                        r.min + (r.typ - r.min) * 2.0 * t
                    } else {
                        r.typ + (r.max - r.typ) * (2.0 * t - 1.0)
                    };
                    Element::Bjt(Bjt::at(transistor, *polarity, beta, d.temperature))
                }
                Kind::Jfet(j) => Element::Fet(between(
                    j.law(Pick::Min),
                    j.law(Pick::Typ),
                    j.law(Pick::Max),
                    devices.next().unwrap_or(0.5),
                )),
                Kind::Mosfet(m) => Element::Fet(between(
                    m.law(Pick::Min),
                    m.law(Pick::Typ),
                    m.law(Pick::Max),
                    devices.next().unwrap_or(0.5),
                )),
                _ => continue,
            };
        }
        Some(b)
    }
}

/// A network's resistance with each member moved by its relative deviation, members in `members()` order.
fn member_ohms(n: &Network, devs: &[f64]) -> f64 {
    let members = n.members();
    n.ohms_with(&|m| {
        let k = members
            .iter()
            .position(|x| std::ptr::eq(*x, m))
            .unwrap_or(0);
        crate::units::Ohms(m.ohms.0 * (1.0 + devs.get(k).copied().unwrap_or(0.0)))
    })
    .0
}

/// The square law at position `t` of the range: min at 0, typical at ½, max at 1, linear in between.
fn between(min: SquareLaw, typ: SquareLaw, max: SquareLaw, t: f64) -> SquareLaw {
    let (a, b, u) = if t <= 0.5 {
        (min, typ, 2.0 * t)
    } else {
        (typ, max, 2.0 * t - 1.0)
    };
    SquareLaw {
        channel: typ.channel,
        vt: a.vt + (b.vt - a.vt) * u,
        k: a.k + (b.k - a.k) * u,
    }
}

/// Small relative step for the resistor sensitivities: far above rounding, far below any tolerance.
const NUDGE: f64 = 1e-4;

/// The spread of a circuit built from `nets` (one per slot, in [`Circuit::slots`] order); `tolerance` is
/// assumed for fixed resistors that give none.
pub fn spread_circuit(
    c: &Circuit,
    nets: &[Network],
    tolerance: Tolerance,
    options: &Options,
) -> Result<CircuitSpread, CircuitSpreadError> {
    if nets.len() != c.slots().len() {
        return Err(CircuitSpreadError::Slots {
            circuit: c.name.clone(),
            expected: c.slots().len(),
            got: nets.len(),
        });
    }
    if c.targets.is_empty() {
        return Err(CircuitSpreadError::NoTargets(c.name.clone()));
    }
    if options.runs == 0 {
        return Err(CircuitSpreadError::Options(
            "the number of Monte Carlo builds must be at least 1".into(),
        ));
    }
    let (lo, hi) = options.temperatures;
    if lo.0.is_nan() || hi.0.is_nan() || lo.0 > hi.0 {
        return Err(CircuitSpreadError::Options(format!(
            "the temperature range {lo} .. {hi} is not a range; expected the lower end first"
        )));
    }
    let b = Builder {
        circuit: c,
        nets,
        tolerance,
    };
    let tolerances = b.tolerances();
    let (nr, nd) = (b.resistor_count(), b.device_count());
    let ambient = c.limits.ambient;
    let mut solver = Solver::new(c);
    let quiet = SolveOptions { check_latch: false };
    // Each build's targets, and whether it meets each requirement with its own parameters.
    let mut judge = |d: &Draw| -> Option<(Vec<f64>, Vec<bool>)> {
        let build = b.build(d)?;
        let s = solver.solve(&build, &quiet).ok()?;
        let values = c
            .targets
            .iter()
            .map(|t| c.measure(t.quantity, &s))
            .collect();
        let held = c
            .requirements
            .iter()
            .map(|r| requirement_holds(r, &build, &s))
            .collect();
        Some((values, held))
    };
    let centre = Draw {
        resistors: vec![0.0; nr],
        devices: vec![0.5; nd],
        temperature: ambient,
    };
    let nominal = match judge(&centre).map(|(v, _)| v) {
        Some(v) => v,
        None => {
            // Say why, in the engine's words.
            let ohms: Vec<_> = nets.iter().map(Network::ohms).collect();
            let typical = c
                .typical(&ohms)
                .map_err(crate::circuit::target::CheckError::from)?;
            Solver::new(c)
                .solve(&typical, &quiet)
                .map_err(crate::circuit::target::CheckError::from)?;
            return Err(CircuitSpreadError::Options(format!(
                "circuit \"{}\": the build as chosen could not be solved",
                c.name
            )));
        }
    };

    // Monte Carlo at the bench.
    let mut met = vec![0usize; c.requirements.len()];
    let mut all_met = 0usize;
    let n_targets = c.targets.len();
    let mut rng = Rng::seeded(options.seed);
    let mut samples: Vec<Vec<f64>> = vec![Vec::with_capacity(options.runs); n_targets];
    let (mut in10, mut in5) = (vec![0usize; n_targets], vec![0usize; n_targets]);
    let (mut all10, mut all5, mut unsolved) = (0usize, 0usize, 0usize);
    let mut d = Draw {
        resistors: vec![0.0; nr],
        devices: vec![0.5; nd],
        temperature: ambient,
    };
    for _ in 0..options.runs {
        for (x, tol) in d.resistors.iter_mut().zip(&tolerances) {
            *x = options.dist.draw(&mut rng, *tol);
        }
        for x in d.devices.iter_mut() {
            *x = rng.uniform();
        }
        let Some((values, held)) = judge(&d) else {
            unsolved += 1;
            continue;
        };
        for (m, h) in met.iter_mut().zip(&held) {
            *m += usize::from(*h);
        }
        all_met += usize::from(held.iter().all(|h| *h));
        let (mut ok10, mut ok5) = (true, true);
        for (k, v) in values.iter().enumerate() {
            samples[k].push(*v);
            // Weighted as in the circuit's error, so a target weighted down is held loosely here too.
            let dev = (v / c.targets[k].value - 1.0).abs() * c.targets[k].weight;
            if dev <= 0.10 {
                in10[k] += 1;
            } else {
                ok10 = false;
            }
            if dev <= 0.05 {
                in5[k] += 1;
            } else {
                ok5 = false;
            }
        }
        all10 += usize::from(ok10);
        all5 += usize::from(ok5);
    }

    // Sensitivities: each slot and fixed resistor nudged as a whole, each ranged device end to end.
    let mut owners: Vec<(String, std::ops::Range<usize>)> = Vec::new();
    let mut at = 0;
    for (k, n) in nets.iter().enumerate() {
        owners.push((c.parts[c.slots()[k]].name.clone(), at..at + n.part_count()));
        at += n.part_count();
    }
    for p in &c.parts {
        if matches!(p.kind, Kind::Resistor { value: Some(_), .. }) {
            owners.push((p.name.clone(), at..at + 1));
            at += 1;
        }
    }
    let ranged: Vec<String> = c
        .parts
        .iter()
        .filter(|p| matches!(p.kind, Kind::Bjt { .. } | Kind::Jfet(_) | Kind::Mosfet(_)))
        .map(|p| p.name.clone())
        .collect();
    let sens = sensitivities(&mut judge, &centre, &owners, &ranged, &nominal);

    // Worst case: for each target and direction, the corner the signs point to, at both temperatures.
    let mut worst = Vec::with_capacity(n_targets);
    for t in 0..n_targets {
        let mut low_high = (nominal[t], nominal[t]);
        for dir in [-1.0, 1.0] {
            let mut corner = centre.clone();
            for (s, (_, range)) in sens.iter().zip(&owners) {
                let sign = (s.effect[t] * dir).signum();
                for k in range.clone() {
                    corner.resistors[k] = if s.effect[t].is_finite() {
                        sign * tolerances[k]
                    } else {
                        0.0
                    };
                }
            }
            for (k, s) in sens[owners.len()..].iter().enumerate() {
                corner.devices[k] = if s.effect[t] * dir > 0.0 { 1.0 } else { 0.0 };
            }
            for temp in [lo, ambient, hi] {
                corner.temperature = temp;
                if let Some(v) = judge(&corner).map(|(v, _)| v) {
                    low_high = (low_high.0.min(v[t]), low_high.1.max(v[t]));
                }
            }
        }
        worst.push(low_high);
    }

    let runs = options.runs as f64;
    let requirements = c
        .requirements
        .iter()
        .zip(&met)
        .map(|(r, m)| RequirementSpread {
            what: describe_requirement(c, r),
            met: *m as f64 / runs,
        })
        .collect();
    let targets = c
        .targets
        .iter()
        .enumerate()
        .map(|(k, t)| {
            let (what, amps) = match t.quantity {
                crate::circuit::Quantity::Node(n) => (format!("node {}", c.nodes[n]), false),
                crate::circuit::Quantity::Between(a, b) => {
                    (format!("{} - {}", c.nodes[a], c.nodes[b]), false)
                }
                crate::circuit::Quantity::Current(p) => {
                    (format!("current {}", c.parts[p].name), true)
                }
            };
            TargetSpread {
                what,
                target: t.value,
                nominal: nominal[k],
                monte_carlo: Summary::of(&samples[k]),
                within_10: in10[k] as f64 / runs,
                within_5: in5[k] as f64 / runs,
                worst: worst[k],
                amps,
            }
        })
        .collect();
    Ok(CircuitSpread {
        name: c.name.clone(),
        runs: options.runs,
        seed: options.seed,
        dist: options.dist,
        temperatures: (lo.0, hi.0),
        targets,
        yield_10: all10 as f64 / runs,
        yield_5: all5 as f64 / runs,
        unsolved,
        requirements,
        requirements_met: if c.requirements.is_empty() {
            None
        } else {
            Some(all_met as f64 / runs)
        },
        sensitivities: sens,
    })
}

/// Each slot and fixed resistor (`owners`: its members' places in a draw) nudged as a whole by ±NUDGE, per
/// unit of resistance, then each ranged device from the low to the high end of its range: the change in
/// every target relative to its `nominal` value, NaN where either end does not solve. `judge` solves a
/// draw; it is called in the order the figures are listed (a solver may start from its last solution).
fn sensitivities(
    judge: &mut impl FnMut(&Draw) -> Option<(Vec<f64>, Vec<bool>)>,
    centre: &Draw,
    owners: &[(String, std::ops::Range<usize>)],
    ranged: &[String],
    nominal: &[f64],
) -> Vec<PartSensitivity> {
    let n = nominal.len();
    let mut effect = |up: &Draw, down: &Draw, span: f64| -> Vec<f64> {
        match (judge(up).map(|(v, _)| v), judge(down).map(|(v, _)| v)) {
            (Some(u), Some(w)) => (0..n)
                .map(|t| (u[t] - w[t]) / (span * nominal[t]))
                .collect(),
            _ => vec![f64::NAN; n],
        }
    };
    let mut sens = Vec::with_capacity(owners.len() + ranged.len());
    for (name, range) in owners {
        let (mut up, mut down) = (centre.clone(), centre.clone());
        for k in range.clone() {
            up.resistors[k] = NUDGE;
            down.resistors[k] = -NUDGE;
        }
        sens.push(PartSensitivity {
            part: name.clone(),
            effect: effect(&up, &down, 2.0 * NUDGE),
            over: "resistance",
        });
    }
    for (k, name) in ranged.iter().enumerate() {
        let (mut low, mut high) = (centre.clone(), centre.clone());
        low.devices[k] = 0.0;
        high.devices[k] = 1.0;
        sens.push(PartSensitivity {
            part: name.clone(),
            effect: effect(&high, &low, 1.0),
            over: "range",
        });
    }
    sens
}

/// A requirement in words: "Q1 saturation", "overdrive Q1 ≥ 2".
fn describe_requirement(c: &Circuit, r: &crate::circuit::Requirement) -> String {
    use crate::circuit::Requirement;
    match r {
        Requirement::Region { part, allowed } => format!(
            "{} {}",
            c.parts[*part].name,
            allowed.iter().map(|x| x.name()).join(" or ")
        ),
        Requirement::MinCurrent { part, amps } => format!(
            "current {} ≥ {}",
            c.parts[*part].name,
            crate::notation::engineering(amps.0, "A")
        ),
        Requirement::Stiff { part, over, times } => format!(
            "stiffness {} over {} ≥ {} × IB",
            c.parts[*part].name,
            c.parts[*over].name,
            crate::notation::trim_number(*times, 3)
        ),
        Requirement::Overdrive { part, times } => format!(
            "overdrive {} ≥ {} ×",
            c.parts[*part].name,
            crate::notation::trim_number(*times, 3)
        ),
    }
}

/// Whether a requirement holds in one build, judged with that build's own parameters (its own beta, not
/// the range's minimum: the question is how many real boards meet it).
fn requirement_holds(
    r: &crate::circuit::Requirement,
    build: &Build,
    s: &crate::circuit::Solution,
) -> bool {
    use crate::circuit::{Region, Requirement};
    match r {
        Requirement::Region { part, allowed } => {
            s.parts[*part].region.is_some_and(|x| allowed.contains(&x))
        }
        Requirement::MinCurrent { part, amps } => s.parts[*part].current.0.abs() >= amps.0,
        Requirement::Stiff { part, over, times } => {
            s.parts[*part].current.0.abs() >= times * s.parts[*over].base_current.0.abs()
        }
        Requirement::Overdrive { part, times } => {
            let p = &s.parts[*part];
            let beta = match build.elements[*part] {
                Element::Bjt(q) => q.beta,
                _ => return false,
            };
            p.region == Some(Region::Saturation)
                && p.current.0 > 0.0
                && p.base_current.0.abs() * beta / p.current.0 >= *times
        }
    }
}
