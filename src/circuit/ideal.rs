//! The ideal circuit: the continuous slot values that meet a circuit's targets, found by the engine.
//!
//! Levenberg–Marquardt works on the logarithms of the slot values (so a value can never turn negative and
//! a step means the same at 100 Ω as at 1 MΩ), with the Jacobian by finite differences on the exact DC
//! solution. The residuals are the targets' weighted relative deviations, plus, much weaker, each slot's
//! own rule (`hint`, or the middle of its `range`). Where the targets and the hints still leave a direction
//! free (a divider's scale: only the ratio is targeted), the circuit's requirements settle it: a minimum
//! current, a stiffness or an overdrive is met exactly at its limit, the least current (and so the least
//! dissipation) the requirement allows. A direction nothing settles is refused, naming its slots and the
//! keys that would settle it; so are targets no resistor values can meet.

// Dense elimination and rotations read as the textbook writes them, indexed.
#![allow(clippy::needless_range_loop)]

use super::model::{Circuit, Quantity, Requirement};
use super::solver::{Options, Solver};
use crate::units::Ohms;

/// Weight of a hint's pull beside a target's: small enough that a target the slot also moves is met to
/// about a millionth, large enough to settle the scale the targets leave free.
const RULE_WEIGHT: f64 = 1e-3;

/// An ideal whose error exceeds this is refused: every build near it would fail the "error from targets"
/// check ([`crate::stage::TARGET_ERROR`]).
const REFUSE_ABOVE: f64 = crate::stage::TARGET_ERROR;

/// The range a slot is searched over when it gives none: what a resistor drawer holds.
const LOWEST: f64 = 0.1;
/// The highest value a slot may take.
const HIGHEST: f64 = 1e9;

/// How a slot's ideal value was settled.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Settled {
    /// By the targets.
    Targets,
    /// By the slot's hint (or the middle of its range), the targets leaving it free.
    Hint,
    /// By a requirement met at its limit, the targets leaving it free.
    Requirement,
}

/// The ideal design of a circuit.
#[derive(Clone, Debug, PartialEq)]
pub struct Ideal {
    /// Each slot's value, in [`Circuit::slots`] order.
    pub values: Vec<Ohms>,
    /// How each slot was settled, in the same order.
    pub settled: Vec<Settled>,
    /// The circuit's error at these values (0 when every target is met).
    pub error: f64,
}

/// Why a circuit has no ideal design.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum IdealError {
    /// Every resistor has a value.
    #[error(
        "circuit \"{circuit}\" (line {line}) has no slots to fill: every resistor has a value"
    )]
    NoSlots {
        /// The circuit's name.
        circuit: String,
        /// Its table's line.
        line: usize,
    },
    /// No targets to aim at.
    #[error("circuit \"{circuit}\" (line {line}) has no [[circuit.target]]: there is nothing to design its slots {slots} for; add a target (a node's volts or a part's amps)")]
    NoTargets {
        /// The circuit's name.
        circuit: String,
        /// Its table's line.
        line: usize,
        /// Its slots, by name.
        slots: String,
    },
    /// The targets leave slots free (only a ratio, say) and nothing settles them.
    #[error("circuit \"{circuit}\" (line {line}): the targets leave {slots} free; settle it with a hint = \"22k\" or a range = [\"10k\", \"100k\"] on a slot, or with a [[circuit.require]] of min_amps, stiff or overdrive")]
    Free {
        /// The circuit's name.
        circuit: String,
        /// Its table's line.
        line: usize,
        /// The slots that move together, by name.
        slots: String,
    },
    /// The targets cannot be met.
    #[error("circuit \"{circuit}\": no resistor values meet the target at line {line} ({what} = {wanted}): the closest the slots reach is {reached}, {error} % off{also}")]
    Unreachable {
        /// The circuit's name.
        circuit: String,
        /// The worst target's line.
        line: usize,
        /// What it measures.
        what: String,
        /// What it asks for.
        wanted: String,
        /// What the best values reach.
        reached: String,
        /// The circuit error there, in per cent.
        error: String,
        /// Other targets in the way, if any.
        also: String,
    },
}

/// The residuals of one point and whether the circuit solved there.
struct Point {
    y: Vec<f64>,
    r: Vec<f64>,
    cost: f64,
}

/// The problem: which rows are in play.
struct Problem<'c> {
    c: &'c Circuit,
    /// Per slot, the log of its hint (or range middle), if any.
    hints: Vec<Option<f64>>,
    /// Per slot, its log bounds.
    bounds: Vec<(f64, f64)>,
    /// Whether the requirement rows pull.
    requirements: bool,
}

impl Problem<'_> {
    fn residuals(&self, solver: &mut Solver, y: &[f64]) -> Option<Vec<f64>> {
        let ohms: Vec<Ohms> = y.iter().map(|v| Ohms(v.exp())).collect();
        let b = self.c.typical(&ohms).ok()?;
        let options = Options { check_latch: false };
        let s = solver.solve(&b, &options).ok()?;
        let mut r: Vec<f64> = self
            .c
            .deviations(&s)
            .iter()
            .map(|d| d.relative * self.c.targets[d.target].weight)
            .collect();
        for (yi, h) in y.iter().zip(&self.hints) {
            if let Some(h) = h {
                r.push(RULE_WEIGHT * (yi - h));
            }
        }
        if self.requirements {
            for req in &self.c.requirements {
                if matches!(req, Requirement::Region { .. }) {
                    continue;
                }
                let (value, limit) = self.c.figure(req, &b, &s, solver, &options).ok()?;
                r.push(RULE_WEIGHT * (value / limit - 1.0));
            }
        }
        if r.iter().any(|x| !x.is_finite()) {
            return None;
        }
        Some(r)
    }

    fn point(&self, solver: &mut Solver, y: Vec<f64>) -> Option<Point> {
        let r = self.residuals(solver, &y)?;
        let cost = r.iter().map(|x| x * x).sum();
        Some(Point { y, r, cost })
    }

    fn clamp(&self, y: &mut [f64]) {
        for (v, (lo, hi)) in y.iter_mut().zip(&self.bounds) {
            *v = v.clamp(*lo, *hi);
        }
    }

    /// The Jacobian (rows × slots) at `p`, by forward differences.
    fn jacobian(&self, solver: &mut Solver, p: &Point) -> Option<Vec<Vec<f64>>> {
        let h = 1e-6;
        let mut cols = Vec::with_capacity(p.y.len());
        for j in 0..p.y.len() {
            let mut y = p.y.clone();
            // Step inward at an upper bound so the point stays inside.
            let step = if y[j] + h > self.bounds[j].1 { -h } else { h };
            y[j] += step;
            let r = self.residuals(solver, &y)?;
            if r.len() != p.r.len() {
                return None;
            }
            cols.push(
                r.iter()
                    .zip(&p.r)
                    .map(|(a, b)| (a - b) / step)
                    .collect::<Vec<_>>(),
            );
        }
        Some(cols)
    }

    /// Levenberg–Marquardt from `y0`; the best point reached.
    fn descend(&self, solver: &mut Solver, y0: Vec<f64>) -> Option<Point> {
        let mut y0 = y0;
        self.clamp(&mut y0);
        let mut p = self.point(solver, y0)?;
        let mut lambda = 1e-3;
        let n = p.y.len();
        for _ in 0..200 {
            if p.cost < 1e-26 {
                break;
            }
            let Some(cols) = self.jacobian(solver, &p) else {
                break;
            };
            // Normal equations: (JᵀJ + λ·diag) δ = −Jᵀr.
            let mut a = vec![vec![0.0; n]; n];
            let mut g = vec![0.0; n];
            for i in 0..n {
                for k in 0..n {
                    a[i][k] = cols[i].iter().zip(&cols[k]).map(|(x, y)| x * y).sum();
                }
                g[i] = -cols[i].iter().zip(&p.r).map(|(x, y)| x * y).sum::<f64>();
            }
            let mut improved = false;
            for _ in 0..12 {
                let mut m = a.clone();
                for (i, row) in m.iter_mut().enumerate() {
                    row[i] += lambda * (a[i][i] + 1e-9);
                }
                let Some(delta) = solve_linear(m, g.clone()) else {
                    lambda *= 10.0;
                    continue;
                };
                let mut y: Vec<f64> =
                    p.y.iter()
                        .zip(&delta)
                        .map(|(a, d)| a + d.clamp(-2.0, 2.0))
                        .collect();
                self.clamp(&mut y);
                match self.point(solver, y) {
                    Some(q) if q.cost < p.cost => {
                        let small = q.y.iter().zip(&p.y).all(|(a, b)| (a - b).abs() < 1e-12);
                        p = q;
                        lambda = (lambda / 3.0).max(1e-12);
                        improved = !small;
                        break;
                    }
                    _ => lambda *= 4.0,
                }
            }
            if !improved {
                break;
            }
        }
        Some(p)
    }
}

/// Solves a small dense system by Gaussian elimination with partial pivoting; None when singular.
fn solve_linear(mut a: Vec<Vec<f64>>, mut b: Vec<f64>) -> Option<Vec<f64>> {
    let n = b.len();
    for col in 0..n {
        let pivot = (col..n).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[pivot][col].abs() < 1e-300 {
            return None;
        }
        a.swap(col, pivot);
        b.swap(col, pivot);
        for row in col + 1..n {
            let f = a[row][col] / a[col][col];
            for k in col..n {
                a[row][k] -= f * a[col][k];
            }
            b[row] -= f * b[col];
        }
    }
    let mut x = vec![0.0; n];
    for row in (0..n).rev() {
        let s: f64 = (row + 1..n).map(|k| a[row][k] * x[k]).sum();
        x[row] = (b[row] - s) / a[row][row];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

/// The directions no row settles: the eigenvectors of JᵀJ (columns scaled to the largest) whose
/// eigenvalues vanish beside the largest, by Jacobi rotations (the matrix is a few slots across).
fn free_directions(cols: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let n = cols.len();
    let mut a = vec![vec![0.0; n]; n];
    for i in 0..n {
        for k in 0..n {
            a[i][k] = cols[i].iter().zip(&cols[k]).map(|(x, y)| x * y).sum();
        }
    }
    let mut v: Vec<Vec<f64>> = (0..n)
        .map(|i| (0..n).map(|k| f64::from(u8::from(i == k))).collect())
        .collect();
    for _ in 0..100 {
        let mut off = 0.0;
        for p in 0..n {
            for q in p + 1..n {
                off += a[p][q] * a[p][q];
                if a[p][q].abs() < 1e-300 {
                    continue;
                }
                let theta = (a[q][q] - a[p][p]) / (2.0 * a[p][q]);
                let t = theta.signum() / (theta.abs() + (theta * theta + 1.0).sqrt());
                let t = if theta == 0.0 { 1.0 } else { t };
                let c = 1.0 / (t * t + 1.0).sqrt();
                let s = t * c;
                for k in 0..n {
                    let (akp, akq) = (a[k][p], a[k][q]);
                    a[k][p] = c * akp - s * akq;
                    a[k][q] = s * akp + c * akq;
                }
                for k in 0..n {
                    let (apk, aqk) = (a[p][k], a[q][k]);
                    a[p][k] = c * apk - s * aqk;
                    a[q][k] = s * apk + c * aqk;
                }
                for row in v.iter_mut() {
                    let (vp, vq) = (row[p], row[q]);
                    row[p] = c * vp - s * vq;
                    row[q] = s * vp + c * vq;
                }
            }
        }
        if off < 1e-40 {
            break;
        }
    }
    let largest = (0..n).map(|i| a[i][i]).fold(0.0_f64, f64::max);
    (0..n)
        .filter(|&i| a[i][i] <= largest * 1e-12 || largest == 0.0)
        .map(|i| (0..n).map(|k| v[k][i]).collect())
        .collect()
}

impl Circuit {
    /// The ideal design: the slot values that meet the targets, settled where the targets leave slots free.
    #[allow(clippy::result_large_err)] // called once per circuit; the error carries the words it prints
    pub fn ideal(&self) -> Result<Ideal, IdealError> {
        let slots = self.slots();
        let names = |which: &[usize]| -> String {
            let n: Vec<&str> = which
                .iter()
                .map(|&i| self.parts[slots[i]].name.as_str())
                .collect();
            match n.as_slice() {
                [] => String::new(),
                [one] => (*one).to_string(),
                [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
            }
        };
        if slots.is_empty() {
            return Err(IdealError::NoSlots {
                circuit: self.name.clone(),
                line: self.line,
            });
        }
        if self.targets.is_empty() {
            return Err(IdealError::NoTargets {
                circuit: self.name.clone(),
                line: self.line,
                slots: names(&(0..slots.len()).collect::<Vec<_>>()),
            });
        }
        let rule = |i: usize| self.rules.iter().find(|r| r.part == slots[i]);
        let hints: Vec<Option<f64>> = (0..slots.len())
            .map(|i| {
                rule(i).and_then(|r| {
                    r.hint
                        .map(|h| h.0.ln())
                        .or(r.range.map(|(lo, hi)| 0.5 * (lo.0.ln() + hi.0.ln())))
                })
            })
            .collect();
        let bounds: Vec<(f64, f64)> = (0..slots.len())
            .map(|i| {
                rule(i)
                    .and_then(|r| r.range)
                    .map_or((LOWEST.ln(), HIGHEST.ln()), |(lo, hi)| {
                        (lo.0.ln(), hi.0.ln())
                    })
            })
            .collect();
        let mut solver = Solver::new(self);
        let mut problem = Problem {
            c: self,
            hints,
            bounds,
            requirements: false,
        };
        // Several starts: the region a transistor lands in can trap a descent far from the answer.
        // Equal values for every slot would always start a divider at half the rail: the later starts
        // spread the slots apart, both ways.
        let mut starts: Vec<Vec<f64>> = Vec::new();
        for spread in [1.0_f64, 4.0, 0.25, 16.0, 1.0 / 16.0] {
            for base in [1e4_f64, 1e3, 1e5, 330.0, 1e6] {
                starts.push(
                    problem
                        .hints
                        .iter()
                        .enumerate()
                        .map(|(i, h)| h.unwrap_or((base * spread.powi(i as i32)).ln()))
                        .collect(),
                );
            }
            if slots.len() == 1 {
                break;
            }
        }
        let best_of = |problem: &Problem, solver: &mut Solver, starts: &[Vec<f64>]| {
            let mut best: Option<Point> = None;
            for s in starts {
                if let Some(p) = problem.descend(solver, s.clone()) {
                    if best.as_ref().is_none_or(|b| p.cost < b.cost) {
                        best = Some(p);
                    }
                    if best.as_ref().is_some_and(|b| b.cost < 1e-20) {
                        break;
                    }
                }
            }
            best
        };
        let mut best = best_of(&problem, &mut solver, &starts);
        let mut settled = vec![Settled::Targets; slots.len()];
        // What the targets alone leave free, and what the hints then settle.
        let free_of = |problem: &Problem, solver: &mut Solver, p: &Point, rows: usize| {
            problem.jacobian(solver, p).map(|cols| {
                let cut: Vec<Vec<f64>> = cols
                    .iter()
                    .map(|c| c[..rows.min(c.len())].to_vec())
                    .collect();
                free_directions(&cut)
            })
        };
        let targets = self.targets.len();
        let with_hints = targets + problem.hints.iter().flatten().count();
        let met = best.as_ref().is_some_and(|p| {
            let ohms: Vec<Ohms> = p.y.iter().map(|v| Ohms(v.exp())).collect();
            self.typical(&ohms)
                .ok()
                .and_then(|b| solver.solve(&b, &Options { check_latch: false }).ok())
                .is_some_and(|s| self.error(&s) <= REFUSE_ABOVE)
        });
        if let Some(p) = best.as_ref().filter(|_| met) {
            let by_targets = free_of(&problem, &mut solver, p, targets).unwrap_or_default();
            for d in &by_targets {
                let moving: Vec<usize> = (0..d.len()).filter(|&i| d[i].abs() > 1e-3).collect();
                if moving.iter().any(|&i| problem.hints[i].is_some()) {
                    for i in moving {
                        settled[i] = Settled::Hint;
                    }
                }
            }
            let left = free_of(&problem, &mut solver, p, with_hints).unwrap_or_default();
            if !left.is_empty()
                && self
                    .requirements
                    .iter()
                    .any(|r| !matches!(r, Requirement::Region { .. }))
            {
                problem.requirements = true;
                let from = vec![p.y.clone()];
                let again = best_of(&problem, &mut solver, &from);
                if let Some(q) = again {
                    let still = free_of(&problem, &mut solver, &q, usize::MAX).unwrap_or_default();
                    for d in &left {
                        for (i, x) in d.iter().enumerate() {
                            if x.abs() > 1e-3 && settled[i] == Settled::Targets {
                                settled[i] = Settled::Requirement;
                            }
                        }
                    }
                    best = Some(q);
                    if let Some(d) = still.first() {
                        let moving: Vec<usize> =
                            (0..d.len()).filter(|&i| d[i].abs() > 1e-3).collect();
                        return Err(IdealError::Free {
                            circuit: self.name.clone(),
                            line: self.line,
                            slots: names(&moving),
                        });
                    }
                }
            } else if let Some(d) = left.first() {
                let moving: Vec<usize> = (0..d.len()).filter(|&i| d[i].abs() > 1e-3).collect();
                return Err(IdealError::Free {
                    circuit: self.name.clone(),
                    line: self.line,
                    slots: names(&moving),
                });
            }
        }
        let values: Vec<Ohms> = best
            .as_ref()
            .map(|p| p.y.iter().map(|v| Ohms(v.exp())).collect())
            .unwrap_or_default();
        let solution = (!values.is_empty())
            .then(|| {
                self.typical(&values)
                    .ok()
                    .and_then(|b| solver.solve(&b, &Options { check_latch: false }).ok())
            })
            .flatten();
        let Some(s) = solution else {
            let t = &self.targets[0];
            return Err(IdealError::Unreachable {
                circuit: self.name.clone(),
                line: t.line,
                what: self.target_name(t.quantity),
                wanted: self.target_value(t.quantity, t.value),
                reached: "no operating point".into(),
                error: "100".into(),
                also: String::new(),
            });
        };
        let error = self.error(&s);
        if error > REFUSE_ABOVE {
            let devs = self.deviations(&s);
            let worst = devs
                .iter()
                .max_by(|a, b| a.weighted.total_cmp(&b.weighted))
                .expect("a target at least");
            let t = &self.targets[worst.target];
            let others: Vec<String> = devs
                .iter()
                .filter(|d| d.target != worst.target && d.weighted > 1e-3)
                .map(|d| format!("line {}", self.targets[d.target].line))
                .collect();
            return Err(IdealError::Unreachable {
                circuit: self.name.clone(),
                line: t.line,
                what: self.target_name(t.quantity),
                wanted: self.target_value(t.quantity, t.value),
                reached: self.target_value(t.quantity, worst.actual),
                error: crate::notation::trim_number(error * 100.0, 3),
                also: if others.is_empty() {
                    String::new()
                } else {
                    format!(" (it pulls against the target at {})", others.join(", "))
                },
            });
        }
        Ok(Ideal {
            values,
            settled,
            error: if error < 1e-9 { 0.0 } else { error },
        })
    }

    /// A target's quantity for people: "node out", "current R1", "c1 - c2".
    pub fn target_name(&self, q: Quantity) -> String {
        match q {
            Quantity::Node(n) => format!("node {}", self.nodes[n]),
            Quantity::Between(a, b) => format!("{} - {}", self.nodes[a], self.nodes[b]),
            Quantity::Current(p) => format!("current {}", self.parts[p].name),
        }
    }

    /// A target's value for people, in volts or amperes by its quantity.
    pub fn target_value(&self, q: Quantity, x: f64) -> String {
        match q {
            Quantity::Current(_) => crate::notation::engineering(x, "A"),
            _ => crate::notation::engineering(x, "V"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circuit::file::parse;

    fn one(text: &str) -> Circuit {
        parse("t.toml", text).expect("reads").remove(0)
    }

    const DIVIDER: &str = r#"
[[circuit]]
name = "d"
[circuit.rails]
vcc = 12
[[circuit.part]]
name = "R1"
kind = "resistor"
between = ["vcc", "out"]
[[circuit.part]]
name = "R2"
kind = "resistor"
between = ["out", "gnd"]
"#;

    #[test]
    fn a_divider_ratio_with_a_hint_meets_the_target_and_the_hint() {
        let c = one(&format!(
            "{DIVIDER}hint = \"10k\"\n[[circuit.target]]\nnode = \"out\"\nvolts = 3\n"
        ));
        let i = c.ideal().expect("an ideal");
        // 12 V × R2/(R1+R2) = 3 V with R2 = 10k: R1 = 30k (Ohm's law, by hand).
        assert!((i.values[1].0 - 10e3).abs() < 1.0, "{:?}", i.values);
        assert!((i.values[0].0 - 30e3).abs() < 3.0, "{:?}", i.values);
        assert_eq!(i.settled, vec![Settled::Hint, Settled::Hint]);
        assert!(i.error < 1e-6);
    }

    #[test]
    fn a_free_scale_with_nothing_to_settle_it_is_refused_naming_both_slots() {
        let c = one(&format!(
            "{DIVIDER}[[circuit.target]]\nnode = \"out\"\nvolts = 3\n"
        ));
        let e = c.ideal().unwrap_err();
        assert!(matches!(e, IdealError::Free { .. }), "{e}");
        assert!(e.to_string().contains("R1 and R2"), "{e}");
    }

    #[test]
    fn a_minimum_current_settles_the_scale_at_its_limit() {
        let c = one(&format!(
            "{DIVIDER}[[circuit.target]]\nnode = \"out\"\nvolts = 3\n[[circuit.require]]\npart = \"R1\"\nmin_amps = \"1mA\"\n"
        ));
        let i = c.ideal().expect("an ideal");
        // 1 mA from 12 V: R1 + R2 = 12k, R2 = 3k.
        assert!((i.values[0].0 - 9e3).abs() < 1.0, "{:?}", i.values);
        assert!((i.values[1].0 - 3e3).abs() < 1.0, "{:?}", i.values);
        assert_eq!(i.settled, vec![Settled::Requirement; 2]);
    }

    #[test]
    fn a_target_beyond_the_rail_is_refused_at_its_line() {
        let c = one(&format!(
            "{DIVIDER}hint = \"10k\"\n[[circuit.target]]\nnode = \"out\"\nvolts = 15\n"
        ));
        let e = c.ideal().unwrap_err();
        assert!(matches!(e, IdealError::Unreachable { line: 15, .. }), "{e}");
    }

    #[test]
    fn contradicting_targets_are_refused() {
        let c = one(&format!(
            "{DIVIDER}hint = \"10k\"\n[[circuit.target]]\nnode = \"out\"\nvolts = 3\n[[circuit.target]]\nnode = \"out\"\nvolts = 6\n"
        ));
        let e = c.ideal().unwrap_err();
        assert!(e.to_string().contains("pulls against"), "{e}");
    }
}

#[cfg(test)]
mod starters {
    #[test]
    fn every_circuit_starter_has_an_ideal_on_its_targets() {
        for s in crate::starter::STARTERS.iter().filter(|s| s.circuit) {
            let circuits = crate::circuit::file::parse(s.name, s.text).expect("a starter reads");
            for c in circuits {
                let i = c.ideal().unwrap_or_else(|e| panic!("{}: {e}", s.name));
                eprintln!(
                    "{}: {:?} {:?} error {}",
                    s.name, i.values, i.settled, i.error
                );
                // The tail pair asks its matched collectors for 10 mV apart at weight 0.001: 0.1 % it cannot meet.
                assert!(i.error <= 1.001e-3, "{}: error {}", s.name, i.error);
            }
        }
    }
}
