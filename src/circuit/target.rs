//! What a solved circuit is judged by: its targets (node voltages, part currents, voltages between nodes,
//! each optionally weighted) give THE circuit error, the largest weighted relative deviation at typical
//! parameters, the same idea as a stage's error; its hard constraints give checks: every part within its
//! derated power, the device regions required at every corner of the parameter ranges, minimum currents,
//! and the stiffness rule generalised (a part's current at least k × a transistor's base current at min
//! beta). Checks reuse the stage model's [`Check`] so reports can show both alike.

use super::model::{Build, Circuit, Element, Kind, Pick, Quantity, Requirement};
use super::solver::{Options, Solution, SolveError, Solver};
use crate::stage::{Check, CheckUnit};
use crate::units::{Ohms, Watts};

/// One target's deviation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Deviation {
    /// The target's index in [`Circuit::targets`].
    pub target: usize,
    /// The value found.
    pub actual: f64,
    /// The value aimed at.
    pub wanted: f64,
    /// Signed relative deviation, actual / wanted − 1.
    pub relative: f64,
    /// Its magnitude times the target's weight.
    pub weighted: f64,
}

/// A part-per-billion of slack on every limit, so a design exactly on a limit does not fail on rounding
/// (the stage checks' rule).
const SLACK: f64 = 1e-9;

fn check(name: String, value: f64, limit: f64, unit: CheckUnit, at_least: bool) -> Check {
    let ok = if at_least {
        value >= limit * (1.0 - SLACK)
    } else {
        value <= limit * (1.0 + SLACK)
    };
    Check {
        name,
        value,
        limit,
        ok: ok && !value.is_nan(),
        unit,
        at_least,
    }
}

impl Circuit {
    /// A quantity's value in a solution (volts or amperes).
    pub fn measure(&self, q: Quantity, s: &Solution) -> f64 {
        match q {
            Quantity::Node(n) => s.nodes.get(n).map_or(f64::NAN, |v| v.0),
            Quantity::Between(a, b) => match (s.nodes.get(a), s.nodes.get(b)) {
                (Some(x), Some(y)) => x.0 - y.0,
                _ => f64::NAN,
            },
            Quantity::Current(p) => s.parts.get(p).map_or(f64::NAN, |p| p.current.0),
        }
    }

    /// Every target's deviation in a solution.
    pub fn deviations(&self, s: &Solution) -> Vec<Deviation> {
        self.targets
            .iter()
            .enumerate()
            .map(|(i, t)| {
                let actual = self.measure(t.quantity, s);
                let relative = actual / t.value - 1.0;
                Deviation {
                    target: i,
                    actual,
                    wanted: t.value,
                    relative,
                    weighted: relative.abs() * t.weight,
                }
            })
            .collect()
    }

    /// THE circuit error: the largest weighted relative deviation (infinite if any is not a number; 0
    /// with no targets). Measured on the typical build's solution.
    pub fn error(&self, s: &Solution) -> f64 {
        self.deviations(s).iter().fold(0.0_f64, |m, d| {
            if d.weighted.is_nan() {
                f64::INFINITY
            } else {
                m.max(d.weighted)
            }
        })
    }

    /// A requirement's figure and the least it may be, as its check measures them: the current (MinCurrent),
    /// the overdrive at min beta (0 for a switch that is off), or the stiffness ratio at min beta. A region
    /// requirement, a yes or no, gives (1, 1) when met at typical and (0, 1) when not.
    pub fn figure(
        &self,
        req: &Requirement,
        typical: &Build,
        s: &Solution,
        solver: &mut Solver,
        options: &Options,
    ) -> Result<(f64, f64), SolveError> {
        let ambient = self.limits.ambient;
        Ok(match req {
            Requirement::Region { part, allowed } => (
                f64::from(u8::from(
                    s.parts[*part].region.is_some_and(|r| allowed.contains(&r)),
                )),
                1.0,
            ),
            Requirement::MinCurrent { part, amps } => (s.parts[*part].current.0.abs(), amps.0),
            Requirement::Overdrive { part, times } => {
                let mut b = typical.clone();
                let mut beta_min = f64::NAN;
                if let (Kind::Bjt { transistor, .. }, Element::Bjt(el)) =
                    (&self.parts[*part].kind, &mut b.elements[*part])
                {
                    beta_min = transistor.beta_at(transistor.beta.min, ambient);
                    el.beta = beta_min;
                }
                let at_min = solver.solve(&b, options)?;
                let ib = at_min.parts[*part].base_current.0.abs();
                let ic = at_min.parts[*part].current.0.abs();
                // A switch that does not conduct has no overdrive: it is off, which fails.
                let on = at_min.parts[*part].region == Some(super::Region::Saturation);
                let ratio = if on && ic > 0.0 {
                    ib * beta_min / ic
                } else {
                    0.0
                };
                (ratio, *times)
            }
            Requirement::Stiff { part, over, times } => {
                let mut b = typical.clone();
                if let (Kind::Bjt { transistor, .. }, Element::Bjt(el)) =
                    (&self.parts[*over].kind, &mut b.elements[*over])
                {
                    el.beta = transistor.beta_at(transistor.beta.min, ambient);
                }
                let at_min = solver.solve(&b, options)?;
                let ib = at_min.parts[*over].base_current.0.abs();
                let i = at_min.parts[*part].current.0.abs();
                let ratio = if ib > 0.0 { i / ib } else { f64::INFINITY };
                (ratio, *times)
            }
        })
    }

    /// Every check of a built circuit. `slot_ratings` gives each slot's power rating in
    /// [`Circuit::slots`] order (None: not known, so not checked).
    pub fn checks(
        &self,
        slots: &[Ohms],
        slot_ratings: &[Option<Watts>],
        options: &Options,
    ) -> Result<Vec<Check>, CheckError> {
        let mut solver = Solver::new(self);
        let typical = self.typical(slots)?;
        let s = solver.solve(&typical, options)?;
        let mut out = Vec::new();
        let ambient = self.limits.ambient;
        let slot_list = self.slots();
        for (i, p) in self.parts.iter().enumerate() {
            let power = s.parts[i].power.0;
            let limit = match &p.kind {
                Kind::Resistor { value, power, .. } => {
                    let rating = if value.is_some() {
                        *power
                    } else {
                        slot_list
                            .iter()
                            .position(|&k| k == i)
                            .and_then(|k| slot_ratings.get(k).copied().flatten())
                    };
                    rating.map(|w| w.0 * self.limits.derate)
                }
                Kind::Bjt { transistor, .. } => {
                    if let Some(max) = transistor.max_ic {
                        out.push(check(
                            format!("current {}", p.name),
                            s.parts[i].current.0,
                            max.0,
                            CheckUnit::Amps,
                            false,
                        ));
                    }
                    if let Some(max) = transistor.max_vce {
                        out.push(check(
                            format!("voltage {}", p.name),
                            s.parts[i].across.0.abs(),
                            max.0,
                            CheckUnit::Volts,
                            false,
                        ));
                    }
                    transistor.power_limit(ambient).map(|w| w.0)
                }
                _ => p.max_power.map(|w| w.0),
            };
            if let Some(limit) = limit {
                out.push(check(
                    format!("power {}", p.name),
                    power,
                    limit,
                    CheckUnit::Watts,
                    false,
                ));
            }
        }
        for req in &self.requirements {
            match req {
                Requirement::Region { part, allowed } => {
                    // Required at typical and at both ends of every range.
                    let mut ok = true;
                    let mut worst = s.parts[*part].region;
                    for pick in [Pick::Min, Pick::Max] {
                        let b = self.build(slots, pick, ambient)?;
                        let r = solver.solve(&b, options)?.parts[*part].region;
                        if !r.is_some_and(|r| allowed.contains(&r)) {
                            worst = r;
                        }
                    }
                    if !worst.is_some_and(|r| allowed.contains(&r)) {
                        ok = false;
                    }
                    let name = format!(
                        "region {} ({})",
                        self.parts[*part].name,
                        allowed
                            .iter()
                            .map(|r| r.name())
                            .collect::<Vec<_>>()
                            .join(" or ")
                    );
                    out.push(check(
                        name,
                        f64::from(u8::from(ok)),
                        1.0,
                        CheckUnit::Flag,
                        true,
                    ));
                }
                Requirement::MinCurrent { part, .. } => {
                    let (value, limit) = self.figure(req, &typical, &s, &mut solver, options)?;
                    out.push(check(
                        format!("current {}", self.parts[*part].name),
                        value,
                        limit,
                        CheckUnit::Amps,
                        true,
                    ))
                }
                Requirement::Overdrive { part, .. } => {
                    let (value, limit) = self.figure(req, &typical, &s, &mut solver, options)?;
                    out.push(check(
                        format!("overdrive {}", self.parts[*part].name),
                        value,
                        limit,
                        CheckUnit::Times,
                        true,
                    ));
                }
                Requirement::Stiff { part, over, .. } => {
                    let (value, limit) = self.figure(req, &typical, &s, &mut solver, options)?;
                    out.push(check(
                        format!(
                            "stiffness {} over {}",
                            self.parts[*part].name, self.parts[*over].name
                        ),
                        value,
                        limit,
                        CheckUnit::Ratio,
                        true,
                    ));
                }
            }
        }
        Ok(out)
    }
}

/// Why a circuit's checks could not be made.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum CheckError {
    /// The build did not fit the circuit.
    #[error(transparent)]
    Model(#[from] super::model::ModelError),
    /// A build had no operating point.
    #[error(transparent)]
    Solve(#[from] SolveError),
}
