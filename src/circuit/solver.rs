//! The DC operating point of a circuit: modified nodal analysis solved by Newton's method, with the
//! piecewise device models handled exactly by searching over region assignments.
//!
//! **Regions.** Every piecewise device (bipolar transistor: active, saturation, cutoff; FET: saturation,
//! triode, cutoff; zener: breakdown, blocking, forward; op-amp: linear, high, low) is given a region, and the
//! system is solved with each device on that region's smooth equations. The assignment is kept only if
//! every device's solution lies inside the region it was given (its *verdict*); otherwise each device that
//! lies outside says which region its solution points to, and the search moves there. An assignment seen
//! before is not revisited; when the moves would cycle, one device moves at a time, and when that cycles
//! too, every assignment is tried in turn (bounded by [`EXHAUSTIVE_LIMIT`]). Nothing is smoothed: the answer
//! satisfies the exact piecewise model, and the region boundaries are the stage model's, so a stage written
//! as a circuit gives the closed form's operating point.
//!
//! **Newton.** Each assignment is solved by Newton's method on the nodal equations with the junction limit
//! on every exponential junction and a threshold guard on every conducting FET (see [`super::bjt`] and
//! [`super::fet`]). When plain Newton does not settle within [`NEWTON_LIMIT`] steps, gmin stepping (a
//! conductance from every node to ground, shrunk by tens to nothing) and then source stepping (every rail and
//! source raised from zero) are tried before the assignment is given up. Newton stops when the residual
//! is at rounding level, or when its steps reach the last bits of the unknowns with the residual within
//! [`NEAR_RESIDUAL`]; a stop on tiny steps with a larger residual (a singular system, one equation unmet) is
//! a failure, never a solution.
//!
//! **Latches.** With two or more amplifying devices a circuit can have more than one operating point
//! (Nielsen and Willson, 1980: a transistor network has a unique DC solution unless it holds a feedback
//! structure, which takes at least two transistors; from memory). When asked, and when the assignments
//! number at most [`LATCH_LIMIT`], every other assignment is solved too and any second consistent operating
//! point is reported, with that point in full ([`Latch::second`]) so that it can be checked.
//!
//! Everything is bounded (Newton steps, homotopy steps, assignments), so the solver always returns; a
//! failure names the part that would not settle.

use super::mna::{lu_solve, LuScratch, Stamp, View, FIXED};
use super::model::{Build, Circuit, Element, Kind};
use super::region::{Region, Verdict};
use super::{resistor, source};
use crate::units::{Amps, Volts, Watts};

/// The most Newton steps for one assignment at one homotopy point.
pub const NEWTON_LIMIT: usize = 100;
/// The most region assignments the move-driven search visits before trying them all.
pub const SEARCH_LIMIT: usize = 64;
/// The most assignments tried one by one when the search cycles.
pub const EXHAUSTIVE_LIMIT: usize = 6561;
/// The most assignments solved when looking for a second operating point.
pub const LATCH_LIMIT: usize = 729;
/// The largest relative residual a Newton iteration that has stopped moving may end on and still count as
/// a solution (see `nearly_settled`).
pub const NEAR_RESIDUAL: f64 = 1e-9;

/// How the solver runs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Options {
    /// Whether to look for a second operating point (a latch) when the circuit could have one.
    pub check_latch: bool,
}

impl Default for Options {
    fn default() -> Options {
        Options { check_latch: true }
    }
}

/// One part at the operating point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PartState {
    /// The part's current: collector or drain current for a transistor (positive in normal use, for either
    /// polarity), the output current for an op-amp or reference, a zener's reverse current, and for any
    /// other two-terminal part the current from its first pin to its second.
    pub current: Amps,
    /// The power it dissipates.
    pub power: Watts,
    /// Its region, for a piecewise device.
    pub region: Option<Region>,
    /// The base current of a bipolar transistor (0 for other parts).
    pub base_current: Amps,
    /// VBE or VGS of a transistor (device frame); for a two-terminal part, first pin above second.
    pub control: Volts,
    /// VCE or VDS of a transistor (device frame); for a two-terminal part, first pin above second.
    pub across: Volts,
}

/// More than one operating point.
#[derive(Clone, Debug, PartialEq)]
pub struct Latch {
    /// The parts whose region differs between the operating points found.
    pub parts: Vec<String>,
    /// How many distinct operating points were found.
    pub points: usize,
    /// The first other operating point found, in full: its nodes, parts, regions and residuals.
    pub second: Box<Solution>,
}

/// The DC operating point.
#[derive(Clone, Debug, PartialEq)]
pub struct Solution {
    /// Every node's voltage from ground, in [`Circuit::nodes`] order.
    pub nodes: Vec<Volts>,
    /// Every part's state, in [`Circuit::parts`] order.
    pub parts: Vec<PartState>,
    /// The Kirchhoff current-law residual at every node, relative to the sum of the magnitudes of the
    /// currents meeting there (0 at rails and ground, which are sources). A resistor's or diode's current
    /// residual no larger than its rounding floor (the sum of g·ε·(|Va| + |Vb| + the largest rail) over the
    /// resistors and junctions there) counts as zero: node voltages held in doubles cannot set a nanoampere through 20 Ω
    /// from 1.4 V any closer than that.
    pub residuals: Vec<f64>,
    /// A second operating point, when one was looked for and found.
    pub latch: Option<Latch>,
    /// Whether the search for a second operating point ran.
    pub latch_checked: bool,
    /// Newton steps taken in all.
    pub newton_steps: usize,
    /// Region assignments solved in all.
    pub assignments: usize,
}

impl Solution {
    /// The largest relative KCL residual over all nodes.
    pub fn worst_residual(&self) -> f64 {
        self.residuals.iter().copied().fold(0.0, f64::max)
    }
}

/// Why no operating point was found.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SolveError {
    /// No assignment of regions gave a consistent solution, or Newton's method did not settle.
    #[error("circuit \"{circuit}\": no operating point found: {part} would not settle ({reason})")]
    NoOperatingPoint {
        /// The circuit.
        circuit: String,
        /// The part that would not settle.
        part: String,
        /// What happened.
        reason: String,
    },
    /// The build does not fit the circuit.
    #[error("circuit \"{circuit}\": the build has {got} elements for {expected} parts")]
    Mismatch {
        /// The circuit.
        circuit: String,
        /// Parts.
        expected: usize,
        /// Elements.
        got: usize,
    },
}

/// Why one assignment failed.
enum Fail {
    /// Newton's method did not settle; the part most to blame.
    Stalled(usize),
}

/// A reusable solver for one circuit: its numbering and buffers, kept between builds so that a Monte Carlo
/// run does not allocate per solve.
pub struct Solver<'c> {
    circuit: &'c Circuit,
    var: Vec<usize>,
    fixed: Vec<f64>,
    scaled: Vec<f64>,
    first_extra: Vec<usize>,
    /// The number of free nodes: the residual's first rows are their currents, the rest constraints.
    free: usize,
    n: usize,
    x: Vec<f64>,
    trial: Vec<f64>,
    start: Vec<f64>,
    dx: Vec<f64>,
    f: Vec<f64>,
    scale: Vec<f64>,
    floor: Vec<f64>,
    volts_scale: f64,
    jac: Vec<f64>,
    lu: LuScratch,
    piecewise: Vec<usize>,
    /// The parts whose Newton steps may need limiting (junctions and channels).
    limited: Vec<usize>,
    regions: Vec<Option<Region>>,
    steps: usize,
    assignments: usize,
    /// Assignments under which a diode-law transistor, solved active, fell below its cut-off current.
    gaps: Vec<(usize, Vec<Option<Region>>)>,
}

impl<'c> Solver<'c> {
    /// A solver for a circuit that has passed [`Circuit::check`].
    pub fn new(circuit: &'c Circuit) -> Solver<'c> {
        let mut var = vec![FIXED; circuit.nodes.len()];
        let mut fixed = vec![0.0; circuit.nodes.len()];
        let mut free = 0;
        for (i, r) in circuit.rails.iter().enumerate() {
            match r {
                Some(v) => fixed[i] = v.0,
                None => {
                    var[i] = free;
                    free += 1;
                }
            }
        }
        let mut first_extra = Vec::with_capacity(circuit.parts.len());
        let mut n = free;
        for p in &circuit.parts {
            first_extra.push(n);
            n += match p.kind {
                Kind::Bjt { .. } => 2,
                Kind::Reference { .. } | Kind::OpAmp { .. } => 1,
                _ => 0,
            };
        }
        let piecewise: Vec<usize> = (0..circuit.parts.len())
            .filter(|&i| !circuit.parts[i].kind.regions().is_empty())
            .collect();
        let limited: Vec<usize> = (0..circuit.parts.len())
            .filter(|&i| {
                matches!(
                    circuit.parts[i].kind,
                    Kind::Bjt { .. } | Kind::Diode { .. } | Kind::Jfet(_) | Kind::Mosfet(_)
                )
            })
            .collect();
        let regions = circuit
            .parts
            .iter()
            .map(|p| p.kind.regions().first().copied())
            .collect();
        let fixed_scale = fixed.iter().fold(1.0_f64, |m, v| m.max(v.abs()));
        Solver {
            circuit,
            var,
            scaled: fixed.clone(),
            fixed,
            first_extra,
            free,
            n,
            x: vec![0.0; n],
            trial: vec![0.0; n],
            start: vec![0.0; n],
            dx: vec![0.0; n],
            f: vec![0.0; n],
            scale: vec![0.0; n],
            floor: vec![0.0; n],
            volts_scale: fixed_scale,
            jac: vec![0.0; n * n],
            lu: LuScratch::default(),
            piecewise,
            limited,
            regions,
            steps: 0,
            assignments: 0,
            gaps: Vec::new(),
        }
    }

    fn fail(&self, part: usize, reason: impl Into<String>) -> SolveError {
        SolveError::NoOperatingPoint {
            circuit: self.circuit.name.clone(),
            part: self
                .circuit
                .parts
                .get(part)
                .map_or_else(|| "a part".to_string(), |p| p.name.clone()),
            reason: reason.into(),
        }
    }

    /// Fills the residual and Jacobian at `self.x`.
    fn assemble(&mut self, build: &Build, regions: &[Option<Region>], gmin: f64, lambda: f64) {
        for (s, f) in self.scaled.iter_mut().zip(&self.fixed) {
            *s = f * lambda;
        }
        self.f.iter_mut().for_each(|v| *v = 0.0);
        self.scale.iter_mut().for_each(|v| *v = 0.0);
        self.floor.iter_mut().for_each(|v| *v = 0.0);
        self.jac.iter_mut().for_each(|v| *v = 0.0);
        let mut st = Stamp {
            at: View {
                x: &self.x,
                var: &self.var,
                fixed: &self.scaled,
            },
            lambda,
            f: &mut self.f,
            scale: &mut self.scale,
            floor: &mut self.floor,
            jac: &mut self.jac,
            n: self.n,
            volts_scale: self.volts_scale,
        };
        for (i, (part, el)) in self.circuit.parts.iter().zip(&build.elements).enumerate() {
            let pins = &part.pins;
            let ex = self.first_extra[i];
            let region = regions[i].unwrap_or(Region::Active);
            match el {
                Element::Resistor(r) => resistor::stamp(*r, pins[0], pins[1], &mut st),
                Element::Bjt(b) => b.stamp(region, pins, ex, &mut st),
                Element::Diode(d) => d.stamp(pins[0], pins[1], &mut st),
                Element::Zener(z) => z.stamp(region, pins[0], pins[1], &mut st),
                Element::Fet(f) => f.stamp(region, pins, &mut st),
                Element::Current(a) => source::stamp(*a, pins[0], pins[1], &mut st),
                Element::Reference(r) => r.stamp(pins, ex, &mut st),
                Element::OpAmp(o) => o.stamp(region, pins, ex, &mut st),
            }
        }
        if gmin > 0.0 {
            for node in 0..self.var.len() {
                let v = st.v(node);
                st.leave(node, gmin * v);
                st.d(node, node, gmin);
            }
        }
    }

    /// Whether the assembled residual is at rounding level.
    fn settled(&self) -> bool {
        self.f
            .iter()
            .zip(&self.scale)
            .zip(&self.floor)
            .all(|((f, s), fl)| f.is_finite() && f.abs() <= 1e-13 * s + fl + 1e-300)
    }

    /// Whether the assembled residual is small enough to be a solution held back only by rounding the
    /// floor does not model: every node's current residual within [`NEAR_RESIDUAL`] of the currents meeting
    /// there (the bound [`Solution::residuals`] is held to), every constraint within that fraction of the
    /// largest rail.
    fn nearly_settled(&self) -> bool {
        self.f
            .iter()
            .zip(&self.scale)
            .zip(&self.floor)
            .enumerate()
            .all(|(k, ((f, s), fl))| {
                let against = if k < self.free { *s } else { self.volts_scale };
                f.is_finite() && f.abs() <= NEAR_RESIDUAL * against + fl + 1e-300
            })
    }

    /// Newton's method from `self.x` on one assignment at one homotopy point.
    fn newton(
        &mut self,
        build: &Build,
        regions: &[Option<Region>],
        gmin: f64,
        lambda: f64,
    ) -> Result<(), Fail> {
        let mut blame = None;
        let mut tiny_steps = 0;
        for _ in 0..NEWTON_LIMIT {
            self.assemble(build, regions, gmin, lambda);
            let settled = self.settled();
            if settled || tiny_steps >= 2 {
                // Steps at the last bits end the iteration, but only a residual near rounding makes the point
                // a solution: where the Jacobian is singular (an unknown no equation fixes, such as the
                // collector's share of a diode-connected transistor held saturated) the LU gives zero steps
                // along it and one equation is simply left unmet.
                return if settled || self.nearly_settled() {
                    Ok(())
                } else {
                    Err(Fail::Stalled(blame.unwrap_or_else(|| self.worst_part())))
                };
            }
            self.steps += 1;
            for (d, f) in self.dx.iter_mut().zip(&self.f) {
                *d = -f;
            }
            lu_solve(&mut self.jac, &mut self.dx, self.n, &mut self.lu);
            if !self.dx.iter().all(|d| d.is_finite()) {
                return Err(Fail::Stalled(blame.unwrap_or_else(|| self.worst_part())));
            }
            for ((t, x), d) in self.trial.iter_mut().zip(&self.x).zip(&self.dx) {
                *t = x + d;
            }
            let mut alpha = 1.0_f64;
            {
                let old = View {
                    x: &self.x,
                    var: &self.var,
                    fixed: &self.scaled,
                };
                let new = View {
                    x: &self.trial,
                    var: &self.var,
                    fixed: &self.scaled,
                };
                for &i in &self.limited {
                    let part = &self.circuit.parts[i];
                    let region = regions[i].unwrap_or(Region::Active);
                    let a = match &build.elements[i] {
                        Element::Bjt(b) => b.step_limit(region, &part.pins, &old, &new),
                        Element::Diode(d) => d.step_limit(part.pins[0], part.pins[1], &old, &new),
                        Element::Fet(f) => f.step_limit(region, &part.pins, &old, &new),
                        _ => 1.0,
                    };
                    if a < alpha {
                        alpha = a;
                        blame = Some(i);
                    }
                }
            }
            let mut biggest = 0.0_f64;
            for (x, d) in self.x.iter_mut().zip(&self.dx) {
                let step = alpha * d;
                biggest = biggest.max(step.abs() / (1.0 + x.abs()));
                *x += step;
            }
            // A full step at the last bits of the unknowns: the residual cannot shrink further.
            if alpha == 1.0 && biggest <= 4.0 * f64::EPSILON {
                tiny_steps += 1;
            } else {
                tiny_steps = 0;
            }
        }
        Err(Fail::Stalled(blame.unwrap_or_else(|| self.worst_part())))
    }

    /// The part touching the node with the largest relative residual.
    fn worst_part(&self) -> usize {
        let mut worst = (0.0, usize::MAX);
        for (node, &k) in self.var.iter().enumerate() {
            if k == FIXED {
                continue;
            }
            let r = self.f[k].abs() / (self.scale[k] + 1e-300);
            if r > worst.0 || r.is_nan() {
                worst = (r, node);
            }
        }
        let node = worst.1;
        let on_node = |p: &&super::model::Part| p.pins.contains(&node);
        self.circuit
            .parts
            .iter()
            .enumerate()
            .filter(|(_, p)| on_node(p))
            .find(|(_, p)| !p.kind.regions().is_empty() || matches!(p.kind, Kind::Diode { .. }))
            .or_else(|| {
                self.circuit
                    .parts
                    .iter()
                    .enumerate()
                    .find(|(_, p)| on_node(p))
            })
            .map_or(0, |(i, _)| i)
    }

    /// Solves one assignment from `self.start`, with gmin and then source stepping if plain Newton stalls.
    fn settle(&mut self, build: &Build, regions: &[Option<Region>]) -> Result<(), Fail> {
        self.assignments += 1;
        self.x.copy_from_slice(&self.start);
        let first = match self.newton(build, regions, 0.0, 1.0) {
            Ok(()) => return Ok(()),
            Err(e) => e,
        };
        // gmin stepping: a conductance to ground on every node makes the system well posed; shrink it.
        self.x.copy_from_slice(&self.start);
        let mut gmin = 1e-2;
        let mut ok = true;
        while gmin >= 1e-13 {
            if self.newton(build, regions, gmin, 1.0).is_err() {
                ok = false;
                break;
            }
            gmin /= 10.0;
        }
        if ok && self.newton(build, regions, 0.0, 1.0).is_ok() {
            return Ok(());
        }
        // Source stepping: from everything off, raise the rails and sources to their values.
        self.x.iter_mut().for_each(|v| *v = 0.0);
        if self.newton(build, regions, 0.0, 0.0).is_err() {
            return Err(first);
        }
        let mut lambda = 0.0_f64;
        let mut step = 0.1_f64;
        let mut kept = self.x.clone();
        for _ in 0..200 {
            let next = (lambda + step).min(1.0);
            match self.newton(build, regions, 0.0, next) {
                Ok(()) => {
                    lambda = next;
                    kept.copy_from_slice(&self.x);
                    if lambda >= 1.0 {
                        return Ok(());
                    }
                    step *= 1.5;
                }
                Err(_) => {
                    self.x.copy_from_slice(&kept);
                    step /= 4.0;
                    if step < 1e-5 {
                        break;
                    }
                }
            }
        }
        Err(first)
    }

    /// Each piecewise device's verdict on the solution in `self.x`.
    fn verdicts(&self, build: &Build, regions: &[Option<Region>]) -> Vec<(usize, Verdict)> {
        let at = View {
            x: &self.x,
            var: &self.var,
            fixed: &self.fixed,
        };
        self.piecewise
            .iter()
            .map(|&i| {
                let part = &self.circuit.parts[i];
                let region = regions[i].unwrap_or(Region::Active);
                let ex = self.first_extra[i];
                let v = match &build.elements[i] {
                    Element::Bjt(b) => b.verdict(region, &part.pins, ex, &at),
                    Element::Zener(z) => z.verdict(region, part.pins[0], part.pins[1], &at),
                    Element::Fet(f) => f.verdict(region, &part.pins, &at),
                    Element::OpAmp(o) => o.verdict(region, &part.pins, &at),
                    _ => Verdict::Inside,
                };
                (i, v)
            })
            .collect()
    }

    /// Settles an assignment and judges it: Ok(None) when consistent, Ok(Some(moves)) when not, Err when
    /// Newton's method would not settle. Resolves the diode-law cut-off gap by solving the device active.
    fn judge(
        &mut self,
        build: &Build,
        regions: &[Option<Region>],
    ) -> Result<Option<Vec<(usize, Region)>>, Fail> {
        self.settle(build, regions)?;
        let verdicts = self.verdicts(build, regions);
        let mut moves = Vec::new();
        for (i, v) in verdicts {
            match v {
                Verdict::Inside => {}
                Verdict::Move(r) => moves.push((i, r)),
                Verdict::Gap => {
                    if !self.below_cutoff_when_active(build, regions, i) {
                        moves.push((i, Region::Active));
                    }
                }
            }
        }
        Ok((!moves.is_empty()).then_some(moves))
    }

    /// Whether device `i`, made active with every other region unchanged, carries less than its cut-off
    /// current. Leaves `self.x` as it was.
    fn below_cutoff_when_active(
        &mut self,
        build: &Build,
        regions: &[Option<Region>],
        i: usize,
    ) -> bool {
        let mut trial = regions.to_vec();
        trial[i] = Some(Region::Active);
        if self.gaps.iter().any(|(d, r)| *d == i && *r == trial) {
            return true;
        }
        let kept = self.x.clone();
        let keep_start = self.start.clone();
        self.start.copy_from_slice(&kept);
        let below = match self.settle(build, &trial) {
            Ok(()) => match &build.elements[i] {
                Element::Bjt(b) => {
                    let at = View {
                        x: &self.x,
                        var: &self.var,
                        fixed: &self.fixed,
                    };
                    b.below_cutoff(&self.circuit.parts[i].pins, self.first_extra[i], &at)
                }
                _ => false,
            },
            Err(_) => false,
        };
        if below {
            self.gaps.push((i, trial));
        }
        self.x.copy_from_slice(&kept);
        self.start.copy_from_slice(&keep_start);
        below
    }

    /// The operating point of one build.
    pub fn solve(&mut self, build: &Build, options: &Options) -> Result<Solution, SolveError> {
        if build.elements.len() != self.circuit.parts.len() {
            return Err(SolveError::Mismatch {
                circuit: self.circuit.name.clone(),
                expected: self.circuit.parts.len(),
                got: build.elements.len(),
            });
        }
        self.steps = 0;
        self.assignments = 0;
        self.gaps.clear();
        // Start from the last solution: a Monte Carlo run's builds sit close to each other.
        self.start.copy_from_slice(&self.x);
        if !self.start.iter().all(|v| v.is_finite()) {
            self.start.iter_mut().for_each(|v| *v = 0.0);
        }
        let initial = self.regions.clone();
        let found = self.search(build, initial)?;
        let kept = self.x.clone();
        self.regions.clone_from(&found);
        let gain_parts = self
            .circuit
            .parts
            .iter()
            .filter(|p| p.kind.has_gain())
            .count();
        let combos = self.combinations();
        let latch_checked =
            options.check_latch && (gain_parts < 2 || combos.is_some_and(|c| c <= LATCH_LIMIT));
        let latch = if options.check_latch && gain_parts >= 2 && latch_checked {
            self.second_point(build, &found, &kept)
        } else {
            None
        };
        self.x.copy_from_slice(&kept);
        Ok(self.report(build, &found, latch, latch_checked))
    }

    /// The number of region assignments, if it fits in a usize.
    fn combinations(&self) -> Option<usize> {
        self.piecewise.iter().try_fold(1usize, |acc, &i| {
            acc.checked_mul(self.circuit.parts[i].kind.regions().len())
        })
    }

    /// The move-driven search, then every assignment in turn.
    fn search(
        &mut self,
        build: &Build,
        mut regions: Vec<Option<Region>>,
    ) -> Result<Vec<Option<Region>>, SolveError> {
        let mut seen: Vec<Vec<Option<Region>>> = Vec::new();
        let mut last_blame = self.piecewise.first().copied().unwrap_or(0);
        let mut last_reason = "its region kept changing".to_string();
        for _ in 0..SEARCH_LIMIT {
            seen.push(regions.clone());
            let start_kept = self.start.clone();
            match self.judge(build, &regions) {
                Ok(None) => return Ok(regions),
                Ok(Some(moves)) => {
                    // Later assignments start from this solution: it is usually closer than the old start.
                    if self.x.iter().all(|v| v.is_finite()) {
                        self.start.copy_from_slice(&self.x);
                    }
                    last_blame = moves[0].0;
                    let mut next = regions.clone();
                    for &(i, r) in &moves {
                        next[i] = Some(r);
                    }
                    if seen.contains(&next) {
                        next = regions.clone();
                        let fresh = moves.iter().find(|&&(i, r)| {
                            let mut t = regions.clone();
                            t[i] = Some(r);
                            !seen.contains(&t)
                        });
                        match fresh {
                            Some(&(i, r)) => next[i] = Some(r),
                            None => break,
                        }
                    }
                    regions = next;
                }
                Err(Fail::Stalled(p)) => {
                    self.start = start_kept;
                    last_blame = p;
                    last_reason = format!(
                        "Newton's method did not converge in {NEWTON_LIMIT} steps, with gmin and source stepping"
                    );
                    // A device that would not settle in its region is tried in its next one.
                    let mut next = regions.clone();
                    let list = self.circuit.parts[p].kind.regions();
                    if let Some(cur) = regions.get(p).copied().flatten() {
                        let k = list.iter().position(|&r| r == cur).unwrap_or(0);
                        next[p] = Some(list[(k + 1) % list.len()]);
                    }
                    if seen.contains(&next) || list.is_empty() {
                        break;
                    }
                    regions = next;
                }
            }
        }
        // Every assignment in turn.
        let Some(total) = self.combinations().filter(|&c| c <= EXHAUSTIVE_LIMIT) else {
            return Err(self.fail(
                last_blame,
                format!("{last_reason}; too many region combinations to try them all"),
            ));
        };
        for k in 0..total {
            let cand = self.nth_assignment(k);
            if seen.contains(&cand) {
                continue;
            }
            if let Ok(None) = self.judge(build, &cand) {
                return Ok(cand);
            }
        }
        Err(self.fail(last_blame, last_reason))
    }

    /// The k-th assignment in mixed radix over the piecewise parts.
    fn nth_assignment(&self, mut k: usize) -> Vec<Option<Region>> {
        let mut out: Vec<Option<Region>> = vec![None; self.circuit.parts.len()];
        for &i in &self.piecewise {
            let list = self.circuit.parts[i].kind.regions();
            out[i] = Some(list[k % list.len()]);
            k /= list.len();
        }
        out
    }

    /// Another consistent operating point, when one exists.
    fn second_point(
        &mut self,
        build: &Build,
        found: &[Option<Region>],
        at: &[f64],
    ) -> Option<Latch> {
        let total = self.combinations()?;
        let mut differing: Vec<usize> = Vec::new();
        let mut points: Vec<Vec<f64>> = vec![at.to_vec()];
        let mut second = None;
        for k in 0..total {
            let cand = self.nth_assignment(k);
            if cand == found {
                continue;
            }
            self.start.copy_from_slice(at);
            if let Ok(None) = self.judge(build, &cand) {
                let size = 1.0 + at.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
                let new = points.iter().all(|p| {
                    p.iter()
                        .zip(&self.x)
                        .take(self.free)
                        .any(|(a, b)| (a - b).abs() > 1e-6 * size)
                });
                if new {
                    if second.is_none() {
                        second = Some(self.report(build, &cand, None, false));
                    }
                    points.push(self.x.clone());
                    for &i in &self.piecewise {
                        if cand[i] != found[i] && !differing.contains(&i) {
                            differing.push(i);
                        }
                    }
                }
            }
        }
        second.map(|second| Latch {
            parts: differing
                .iter()
                .map(|&i| self.circuit.parts[i].name.clone())
                .collect(),
            points: points.len(),
            second: Box::new(second),
        })
    }

    /// The report of the solution in `self.x`.
    fn report(
        &mut self,
        build: &Build,
        regions: &[Option<Region>],
        latch: Option<Latch>,
        latch_checked: bool,
    ) -> Solution {
        self.assemble(build, regions, 0.0, 1.0);
        let at = View {
            x: &self.x,
            var: &self.var,
            fixed: &self.fixed,
        };
        let nodes: Vec<Volts> = (0..self.var.len()).map(|n| Volts(at.v(n))).collect();
        let residuals = self
            .var
            .iter()
            .map(|&k| {
                if k == FIXED || self.scale[k] == 0.0 || self.f[k].abs() <= self.floor[k] {
                    0.0
                } else {
                    self.f[k].abs() / self.scale[k]
                }
            })
            .collect();
        let mut parts = Vec::with_capacity(self.circuit.parts.len());
        for (i, (part, el)) in self.circuit.parts.iter().zip(&build.elements).enumerate() {
            let pins = &part.pins;
            let ex = self.first_extra[i];
            let region = regions[i];
            let r = region.unwrap_or(Region::Active);
            let two = |at: &View| at.v(pins[0]) - at.v(pins[1]);
            let state = match el {
                Element::Resistor(ohms) => {
                    let i = resistor::current(*ohms, pins[0], pins[1], &at);
                    two_terminal(i, i * i * ohms, two(&at))
                }
                Element::Diode(d) => {
                    let i = d.current(pins[0], pins[1], &at);
                    two_terminal(i, i * two(&at), two(&at))
                }
                Element::Zener(z) => {
                    let i = z.current(r, pins[0], pins[1], &at);
                    let mut s = two_terminal(i, -i * two(&at), two(&at));
                    s.region = region;
                    s
                }
                Element::Current(a) => two_terminal(*a, a * two(&at), two(&at)),
                Element::Reference(rf) => {
                    two_terminal(rf.current(ex, &at), rf.power(pins, ex, &at), two(&at))
                }
                Element::OpAmp(o) => {
                    let (i, p) = o.current_power(pins, ex, &at);
                    let mut s = two_terminal(i, p, at.v(pins[0]) - at.v(pins[1]));
                    s.across = Volts(at.v(pins[2]));
                    s.region = region;
                    s
                }
                Element::Bjt(b) => {
                    let (ib, ic) = b.currents(r, pins, ex, &at);
                    let (vbe, vce) = b.voltages(pins, &at);
                    PartState {
                        current: Amps(ic),
                        power: Watts(b.power(r, pins, ex, &at)),
                        region,
                        base_current: Amps(ib),
                        control: Volts(vbe),
                        across: Volts(vce),
                    }
                }
                Element::Fet(f) => {
                    let (vgs, vds) = f.voltages(pins, &at);
                    PartState {
                        current: Amps(f.current(r, pins, &at)),
                        power: Watts(f.power(r, pins, &at)),
                        region,
                        base_current: Amps(0.0),
                        control: Volts(vgs),
                        across: Volts(vds),
                    }
                }
            };
            parts.push(state);
        }
        Solution {
            nodes,
            parts,
            residuals,
            latch,
            latch_checked,
            newton_steps: self.steps,
            assignments: self.assignments,
        }
    }
}

fn two_terminal(i: f64, p: f64, v: f64) -> PartState {
    PartState {
        current: Amps(i),
        power: Watts(p),
        region: None,
        base_current: Amps(0.0),
        control: Volts(v),
        across: Volts(v),
    }
}

/// The operating point of one build of a circuit, with default options.
pub fn solve(circuit: &Circuit, build: &Build) -> Result<Solution, SolveError> {
    Solver::new(circuit).solve(build, &Options::default())
}
