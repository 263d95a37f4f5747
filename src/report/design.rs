//! The design report: the stage objects of the chosen builds, plus the pick list, the hand-rounded baseline
//! and how the solver went; the struct is the `design --json` schema, and [`render`] its text form.
//!
//! The JSON extends the stage-model contract: `{"stages":[stage object + "copies"], "pick":[{"ohms","count",
//! "location","tolerance","power"}], "baseline":{"error", "stages":[…]}, "solver":{"seconds","variants",
//! "status","evaluations","result","bound","time_limit"}, "copies", "alternatives":[…], "cautions":[…]}`.

use super::circuit::{CircuitReport, Named};
use super::{table, Report, StageReport};
use crate::circuit::Circuit;
use crate::notation::{code, engineering, trim_number};
use crate::optimise::circuit_step::slot_names;
use crate::optimise::design::{Baseline, Built, Outcome, SolverInfo};
use crate::stage::Design;
use crate::stock::Stock;
use serde::Serialize;
use std::collections::BTreeMap;
use std::fmt::Write;

/// A chosen build of one circuit: the circuit object, as `check --json` writes it, plus the design keys.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BuiltCircuitReport {
    /// The circuit object.
    #[serde(flatten)]
    pub circuit: CircuitReport,
    /// Boards built this way.
    pub copies: u32,
    /// Each slot's ideal value, ohms.
    pub ideal: Named<f64>,
    /// The slot values rounded by hand, and how they do.
    pub baseline: CircuitBaselineReport,
    /// The next-best designs of this circuit, best first.
    pub alternatives: Vec<CircuitAlternative>,
    /// Slots kept as already fitted.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub kept: Vec<String>,
}

/// A circuit's hand-rounded baseline.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitBaselineReport {
    /// Its error.
    pub error: f64,
    /// Whether the stock holds its parts for every board.
    pub in_stock: bool,
    /// Whether it meets the hard constraints.
    pub feasible: bool,
    /// The checks it fails, in words.
    pub fails: Vec<String>,
    /// Each slot's network notation.
    pub slots: Named<String>,
}

/// A next-best design of a circuit.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CircuitAlternative {
    /// Its error.
    pub error: f64,
    /// Each slot's network notation.
    pub slots: Named<String>,
}

/// A chosen build of one stage, with how many boards use it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BuiltStage {
    /// The stage object, as `check --json` writes it.
    #[serde(flatten)]
    pub stage: StageReport,
    /// Boards built this way.
    pub copies: u32,
    /// The worst-case error over tolerance, beta and temperature, when the design was chosen by it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub worst_error: Option<f64>,
    /// The checks the ideal design itself fails, each with what would fix it (no part does); absent when
    /// the ideal passes.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub ideal_fails: Vec<String>,
}

/// One line of the pick list: what to pull from the drawer.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PickLine {
    /// Nominal resistance, ohms.
    pub ohms: f64,
    /// Pieces to pull, for all boards.
    pub count: u32,
    /// Where it is.
    pub location: Option<String>,
    /// Tolerance (fraction).
    pub tolerance: f64,
    /// Power rating, watts.
    pub power: f64,
}

/// The hand-rounded baseline of one stage.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BaselineStage {
    /// The stage's name.
    pub name: String,
    /// Its exact error.
    pub error: f64,
    /// Whether the stock holds its parts for every board.
    pub in_stock: bool,
    /// Whether it meets the hard constraints.
    pub feasible: bool,
    /// The hard constraints it fails, in words; empty when feasible.
    pub fails: Vec<String>,
    /// Each slot's rounded value (letter code).
    pub slots: BTreeMap<String, String>,
}

/// The baseline over the whole design.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BaselineReport {
    /// The largest baseline error over the stages.
    pub error: f64,
    /// Per stage.
    pub stages: Vec<BaselineStage>,
}

/// A next-best design of one stage.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Alternative {
    /// The stage's name.
    pub stage: String,
    /// Its exact error.
    pub error: f64,
    /// Each slot's network in the `--use` notation.
    pub slots: BTreeMap<String, String>,
}

/// Everything `biasfit design` found.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DesignReport {
    /// The chosen builds, in stage order.
    pub stages: Vec<BuiltStage>,
    /// The chosen builds of the circuits, in circuit order; left out when the file has none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub circuits: Vec<BuiltCircuitReport>,
    /// Boards the design is for.
    pub copies: u32,
    /// What to pull from stock, for all boards.
    pub pick: Vec<PickLine>,
    /// Each slot rounded to its nearest single stock value, the way it is done by hand.
    pub baseline: BaselineReport,
    /// Next-best designs, per stage.
    pub alternatives: Vec<Alternative>,
    /// How the solve went.
    pub solver: SolverInfo,
    /// Safety cautions that apply.
    pub cautions: Vec<String>,
    /// How the search was limited (a window narrowed on a huge stock), if at all.
    pub notes: Vec<String>,
    /// The slots kept as given: already fitted, so on no pick list.
    pub kept: Vec<KeptSlot>,
}

/// A slot kept as given (`--keep`): already fitted on the board.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct KeptSlot {
    /// The stage's name.
    pub stage: String,
    /// The slot.
    pub slot: String,
    /// Its network in the `--use` notation.
    pub network: String,
}

fn slot_codes(design: &Design, b: &Built) -> BTreeMap<String, String> {
    design.stages[b.stage]
        .slots()
        .into_iter()
        .filter_map(|s| b.networks.get(s).map(|n| (s.to_string(), n.notation())))
        .collect()
}

impl DesignReport {
    /// Builds the report of a finished design.
    pub fn new(design: &Design, stock: &Stock, outcome: &Outcome, copies: u32) -> DesignReport {
        let stages: Vec<BuiltStage> = outcome
            .built
            .iter()
            .map(|b| BuiltStage {
                stage: StageReport::new(&design.stages[b.stage], &b.networks)
                    .with_kept(&outcome.kept_in(b.stage)),
                copies: b.copies,
                worst_error: b.worst,
                ideal_fails: design.stages[b.stage].ideal_failure_notes(),
            })
            .collect();
        let mut counts: BTreeMap<usize, u32> = BTreeMap::new();
        for b in &outcome.built {
            for (_, net) in b.networks.iter() {
                for m in net.members() {
                    if let Some(p) = m.part {
                        *counts.entry(p).or_default() += b.copies;
                    }
                }
            }
        }
        let mut pick: Vec<PickLine> = counts
            .into_iter()
            .map(|(p, count)| {
                let part = &stock.parts[p];
                PickLine {
                    ohms: part.ohms.0,
                    count,
                    location: part.location(),
                    tolerance: part.tolerance.0,
                    power: part.power.0,
                }
            })
            .collect();
        pick.sort_by(|a, b| a.location.cmp(&b.location).then(a.ohms.total_cmp(&b.ohms)));
        let baseline_stage = |b: &Baseline| BaselineStage {
            name: design.stages[b.stage].name.clone(),
            error: b.error,
            in_stock: b.in_stock,
            feasible: b.feasible,
            fails: b.fails.clone(),
            slots: design.stages[b.stage]
                .slots()
                .into_iter()
                .filter_map(|s| b.networks.get(s).map(|n| (s.to_string(), n.notation())))
                .collect(),
        };
        let base: Vec<BaselineStage> = outcome.baseline.iter().map(baseline_stage).collect();
        let cautions = Report::new(stages.iter().map(|s| s.stage.clone()).collect()).cautions;
        DesignReport {
            baseline: BaselineReport {
                error: base.iter().map(|b| b.error).fold(0.0, f64::max),
                stages: base,
            },
            alternatives: outcome
                .alternatives
                .iter()
                .flatten()
                .map(|b| Alternative {
                    stage: design.stages[b.stage].name.clone(),
                    error: b.error,
                    slots: slot_codes(design, b),
                })
                .collect(),
            stages,
            circuits: Vec::new(),
            copies,
            pick,
            solver: outcome.solver.clone(),
            cautions,
            notes: outcome.notes.clone(),
            kept: outcome
                .built
                .iter()
                .filter(|b| b.copies > 0)
                .flat_map(|b| {
                    outcome
                        .kept_in(b.stage)
                        .into_iter()
                        .filter_map(move |slot| {
                            b.networks.get(slot).map(|n| KeptSlot {
                                stage: design.stages[b.stage].name.clone(),
                                slot: slot.to_string(),
                                network: n.notation(),
                            })
                        })
                })
                .fold(Vec::new(), |mut v: Vec<KeptSlot>, k| {
                    if !v.contains(&k) {
                        v.push(k);
                    }
                    v
                }),
        }
    }

    /// Whether every check of every chosen build passed.
    pub fn all_ok(&self) -> bool {
        self.stages
            .iter()
            .all(|s| s.stage.checks.iter().all(|c| c.ok))
            && self.circuits.iter().all(|c| c.circuit.all_ok())
    }

    /// Adds the circuits of the design (`circuits`, as the outcome's indices count them): each chosen
    /// build's circuit object with its design keys, their parts on the pick list, their cautions, and
    /// their baselines in the board's baseline error. A build the engine cannot solve is left out.
    pub fn with_circuits(mut self, circuits: &[Circuit], stock: &Stock, outcome: &Outcome) -> Self {
        let co = &outcome.circuits;
        let slot_map = |c: &Circuit, nets: &[crate::network::Network]| {
            Named(
                slot_names(c)
                    .into_iter()
                    .zip(nets)
                    .map(|(s, n)| (s, n.notation()))
                    .collect(),
            )
        };
        for b in &co.built {
            let c = &circuits[b.circuit];
            let Ok(report) = CircuitReport::new(c, &b.networks) else {
                continue;
            };
            let base = &co.baseline[b.circuit];
            self.circuits.push(BuiltCircuitReport {
                circuit: report,
                copies: b.copies,
                ideal: Named(
                    slot_names(c)
                        .into_iter()
                        .zip(&co.ideals[b.circuit].values)
                        .map(|(s, v)| (s, v.0))
                        .collect(),
                ),
                baseline: CircuitBaselineReport {
                    error: base.error,
                    in_stock: base.in_stock,
                    feasible: base.feasible,
                    fails: base.fails.clone(),
                    slots: slot_map(c, &base.networks),
                },
                alternatives: co.alternatives[b.circuit]
                    .iter()
                    .map(|a| CircuitAlternative {
                        error: a.error,
                        slots: slot_map(c, &a.networks),
                    })
                    .collect(),
                kept: co
                    .kept
                    .iter()
                    .filter(|(ci, _)| *ci == b.circuit)
                    .map(|(_, s)| s.clone())
                    .collect(),
            });
        }
        let mut counts: BTreeMap<usize, u32> = BTreeMap::new();
        for b in &co.built {
            for net in &b.networks {
                for m in net.members() {
                    if let Some(p) = m.part {
                        *counts.entry(p).or_default() += b.copies;
                    }
                }
            }
        }
        for (p, count) in counts {
            let part = &stock.parts[p];
            match self.pick.iter_mut().find(|l| {
                l.ohms == part.ohms.0
                    && l.location == part.location()
                    && l.power == part.power.0
                    && l.tolerance == part.tolerance.0
            }) {
                Some(l) => l.count += count,
                None => self.pick.push(PickLine {
                    ohms: part.ohms.0,
                    count,
                    location: part.location(),
                    tolerance: part.tolerance.0,
                    power: part.power.0,
                }),
            }
        }
        self.pick
            .sort_by(|a, b| a.location.cmp(&b.location).then(a.ohms.total_cmp(&b.ohms)));
        for c in &self.circuits {
            for k in c.circuit.cautions() {
                if !self.cautions.contains(&k) {
                    self.cautions.push(k);
                }
            }
        }
        self.baseline.error = co
            .baseline
            .iter()
            .map(|b| b.error)
            .fold(self.baseline.error, f64::max);
        self
    }
}

/// One circuit's part of the design text: its check sheet, boards, the baseline beside the choice, the
/// ideal, and its next-best designs.
fn render_circuit(out: &mut String, c: &BuiltCircuitReport, copies: u32, colour: bool) {
    let single = Report {
        stages: Vec::new(),
        circuits: vec![c.circuit.clone()],
        cautions: Vec::new(),
    };
    out.push_str(&table::render_check(&single, colour));
    if copies > 1 {
        let _ = writeln!(out, "  built this way on {} of {copies} boards", c.copies);
    }
    let slots = |m: &Named<String>| {
        m.0.iter()
            .map(|(k, v)| format!("{k}={v}"))
            .collect::<Vec<_>>()
            .join(",")
    };
    let ideal: Vec<String> = c
        .ideal
        .0
        .iter()
        .map(|(k, v)| format!("{k}={}", code(crate::units::Ohms(*v))))
        .collect();
    let _ = writeln!(out, "\n  ideal:              {}", ideal.join(","));
    let b = &c.baseline;
    let _ = writeln!(
        out,
        "  rounded by hand ({}): error {}{}{}",
        slots(&b.slots),
        if b.error.is_finite() {
            percent(b.error)
        } else {
            "no operating point".into()
        },
        if b.in_stock {
            ""
        } else {
            ", parts not all in stock"
        },
        if b.feasible {
            String::new()
        } else {
            format!(", fails {}", b.fails.join("; "))
        },
    );
    let _ = writeln!(
        out,
        "  biasfit's choice:   error {}",
        percent(c.circuit.error)
    );
    if !c.kept.is_empty() {
        let _ = writeln!(
            out,
            "  already fitted (kept, not pulled): {}",
            c.kept.join(", ")
        );
    }
    if c.circuit.error > 0.05 {
        let _ = writeln!(
            out,
            "  note: the closest the stock allows is {} from target; the order command finds what to buy to come closer",
            percent(c.circuit.error)
        );
    }
    if !c.alternatives.is_empty() {
        let _ = writeln!(out, "  next-best designs");
        for a in &c.alternatives {
            let _ = writeln!(out, "    {:>8}  {}", percent(a.error), slots(&a.slots));
        }
    }
}

fn percent(x: f64) -> String {
    format!("{} %", trim_number(x * 100.0, 3))
}

/// The design report as text for people: a build sheet per stage, the baseline beside it, the pick list.
/// `more_time` says how to give the search more time ("allow more --time-limit" from the CLI, which owns
/// the flags), for a search the time limit stopped.
pub fn render(r: &DesignReport, colour: bool, more_time: &str) -> String {
    let mut out = String::new();
    for (i, s) in r.stages.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        let single = Report {
            stages: vec![s.stage.clone()],
            circuits: Vec::new(),
            cautions: Vec::new(),
        };
        let sheet = table::render_check(&single, colour);
        out.push_str(&sheet);
        if r.copies > 1 {
            let _ = writeln!(
                out,
                "  built this way on {} of {} boards",
                s.copies, r.copies
            );
        }
        if let Some(b) = r.baseline.stages.iter().find(|b| b.name == s.stage.name) {
            let parts: Vec<String> = b.slots.iter().map(|(k, v)| format!("{k}={v}")).collect();
            let _ = writeln!(
                out,
                "\n  rounded by hand ({}): error {}{}{}",
                parts.join(","),
                percent(b.error),
                if b.in_stock {
                    ""
                } else {
                    ", parts not all in stock"
                },
                if b.feasible {
                    String::new()
                } else {
                    format!(", fails {}", b.fails.join("; "))
                },
            );
            let _ = writeln!(
                out,
                "  biasfit's choice:   error {}",
                percent(s.stage.error)
            );
        }
        if let Some(w) = s.worst_error {
            let _ = writeln!(
                out,
                "  chosen for the best worst case over tolerance, beta and temperature: {}",
                percent(w)
            );
        }
        // Common bench practice (no source): measured within 10 % of calculated is acceptable, 5 % the aim.
        // Buying parts brings the error down; it cannot pass a check the ideal design fails (said below).
        if s.stage.error > 0.05 {
            let _ = writeln!(
                out,
                "  note: the closest the stock allows is {} from target; `biasfit order` finds what to buy to come closer",
                percent(s.stage.error)
            );
        }
        for n in &s.ideal_fails {
            let _ = writeln!(out, "  note: {n}");
        }
    }
    for (i, c) in r.circuits.iter().enumerate() {
        if i > 0 || !r.stages.is_empty() {
            out.push('\n');
        }
        render_circuit(&mut out, c, r.copies, colour);
    }
    if !r.alternatives.is_empty() {
        let _ = writeln!(out, "\nnext-best designs");
        let width = r
            .alternatives
            .iter()
            .map(|a| a.stage.len())
            .max()
            .unwrap_or(5)
            .max(5);
        let _ = writeln!(out, "  {:<width$}  {:>8}  slots", "stage", "error");
        for a in &r.alternatives {
            let slots: Vec<String> = a.slots.iter().map(|(k, v)| format!("{k}={v}")).collect();
            let _ = writeln!(
                out,
                "  {:<width$}  {:>8}  {}",
                a.stage,
                percent(a.error),
                slots.join(",")
            );
        }
    }
    let _ = writeln!(
        out,
        "\npick list ({} board{})",
        r.copies,
        if r.copies == 1 { "" } else { "s" }
    );
    let locw = r
        .pick
        .iter()
        .map(|p| p.location.as_deref().unwrap_or("-").chars().count())
        .max()
        .unwrap_or(8)
        .max(8);
    let _ = writeln!(
        out,
        "  {:<locw$}  {:>7}  {:>5}  {:>7}  {:>5}",
        "location", "value", "tol", "power", "count"
    );
    for p in &r.pick {
        let _ = writeln!(
            out,
            "  {:<locw$}  {:>7}  {:>5}  {:>7}  {:>5}",
            p.location.as_deref().unwrap_or("-"),
            code(crate::units::Ohms(p.ohms)),
            percent(p.tolerance),
            engineering(p.power, "W"),
            p.count
        );
    }
    if !r.kept.is_empty() {
        let several = r.stages.len() > 1;
        let kept: Vec<String> = r
            .kept
            .iter()
            .map(|k| {
                if several {
                    format!("{} {} = {}", k.stage, k.slot, k.network)
                } else {
                    format!("{} = {}", k.slot, k.network)
                }
            })
            .collect();
        let _ = writeln!(
            out,
            "  already fitted (kept, not pulled): {}",
            kept.join(", ")
        );
    }
    let limit = r
        .solver
        .time_limit
        .map(|l| format!("{} s", trim_number(l, 3)))
        .unwrap_or_else(|| "the time limit".into());
    let _ = if r.solver.optimal() {
        writeln!(
            out,
            "\nsolver: {} variants in {:.2} s, {}",
            r.solver.variants, r.solver.seconds, r.solver.status
        )
    } else {
        writeln!(
            out,
            "\nsolver: {} variants in {:.2} s, best found (time limit {limit})",
            r.solver.variants, r.solver.seconds
        )
    };
    for n in &r.notes {
        let _ = writeln!(out, "  note: {n}");
    }
    if !r.solver.optimal() {
        let _ = writeln!(
            out,
            "  the time limit ({limit}) ran out before the search finished: this is the best verified design found"
        );
        let _ = match r.solver.bound {
            Some(b) if b > 0.0 => writeln!(
                out,
                "  proven: no design has a largest stage error below {} %; {more_time} to close the gap",
                trim_number(b * 100.0, 3)
            ),
            _ => writeln!(
                out,
                "  nothing better is ruled out yet; {more_time} to search further"
            ),
        };
    }
    for c in &r.cautions {
        let _ = writeln!(out, "\ncaution: {c}");
    }
    out
}
