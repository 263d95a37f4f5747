//! The slot fix: the few best networks the stock can build for one off-value slot, each with its error,
//! worst-case band and where its parts are, beside the nearest single E24 and E96 values (what a shopping
//! list would buy), and optionally whether every member stays within its derated power rating.
//!
//! The report struct is also the `fix --json` schema (SI base units; fractions for errors and bands), and
//! [`FixReport::render`] is its pure table renderer. It relies on [`super::candidates`] for the search.

use super::candidates::{Candidate, Index};
use crate::notation::{code, engineering, trim_number, Series};
use crate::stock::Stock;
use crate::units::{Amps, Ohms, Tolerance, Volts, Watts};
use serde::Serialize;
use std::fmt::Write;

/// Supplies at or above this are beyond safe extra-low voltage (50 V DC, the usual ELV limit), and the
/// report says so.
pub const CAUTION_VOLTS: f64 = 50.0;

/// What the slot carries, for the power check.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Load {
    /// This power dissipated in the whole network.
    Watts(Watts),
    /// This voltage across the whole network.
    Volts(Volts),
    /// This current through the whole network.
    Amps(Amps),
}

impl Load {
    /// Each member's dissipation in `network`, in member order.
    pub fn member_powers(&self, network: &super::Network) -> Vec<Watts> {
        let r = network.ohms();
        match *self {
            Load::Watts(p) => network.member_powers(Amps((p.0.abs() / r.0).sqrt())),
            Load::Volts(v) => network.member_powers_at_voltage(v.abs()),
            Load::Amps(i) => network.member_powers(i.abs()),
        }
    }

    /// The voltage across a network of resistance `r`.
    pub fn volts_across(&self, r: Ohms) -> Volts {
        match *self {
            Load::Watts(p) => Volts((p.0.abs() * r.0).sqrt()),
            Load::Volts(v) => v.abs(),
            Load::Amps(i) => i.abs() * r,
        }
    }
}

/// What to fix: the target value, the search limits and the optional load.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Request {
    /// The ideal resistance for the slot.
    pub target: Ohms,
    /// The most parts per network (1..=3).
    pub max_parts: usize,
    /// How many networks to list.
    pub top: usize,
    /// What the slot carries, if the power check is wanted.
    pub load: Option<Load>,
    /// The fraction of its rating a member may dissipate (0.5: designing to 50 % of a resistor's power
    /// rating is common practice, no source).
    pub derate: f64,
}

/// One member of a listed network.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FixPart {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance (fraction).
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
    /// Where to find it.
    pub location: Option<String>,
    /// Its share of the load's power, when a load is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dissipation: Option<Watts>,
    /// Derate × rating, when a load is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub limit: Option<Watts>,
}

/// One listed network.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FixNetwork {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// The network in the `a+b`, `a|b` notation.
    pub network: String,
    /// Relative error from the target: (R − target) / target.
    pub error: f64,
    /// Worst-case band from the members' tolerances, as relative deviations (low, high).
    pub band: (f64, f64),
    /// Its members, in the notation's order.
    pub parts: Vec<FixPart>,
    /// Whether every member stays within its limit, when a load is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub power_ok: Option<bool>,
    /// The hottest member's dissipation as a fraction of its rating, when a load is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hottest: Option<f64>,
    /// The voltage across the network, when a load is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub volts: Option<Volts>,
}

/// The nearest value of one preferred-number series.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Nearest {
    /// The series ("E24", "E96").
    pub series: String,
    /// The nearest value (in log distance).
    pub ohms: Ohms,
    /// Its relative error from the target.
    pub error: f64,
    /// Whether the stock has that value on hand.
    pub in_stock: bool,
}

/// The load the power check used.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LoadSummary {
    /// Which quantity was given: "watts", "volts" or "amps".
    pub kind: &'static str,
    /// Its value in SI base units.
    pub value: f64,
    /// The fraction of each rating a member may dissipate.
    pub derate: f64,
}

/// The slot fix for one value.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FixReport {
    /// The ideal resistance.
    pub target: Ohms,
    /// The stock file searched.
    pub stock: String,
    /// The most parts per network.
    pub max_parts: usize,
    /// The best networks, best first.
    pub networks: Vec<FixNetwork>,
    /// The nearest single E24 and E96 values.
    pub baseline: Vec<Nearest>,
    /// The load, when the power check was asked for.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub load: Option<LoadSummary>,
    /// Cautions and remarks for the reader.
    pub notes: Vec<String>,
}

impl FixReport {
    /// Searches `stock` for the request's best networks and checks them.
    pub fn build(stock: &Stock, request: &Request) -> FixReport {
        let index = Index::new(stock, request.max_parts);
        let found = index.best(request.target, request.top);
        FixReport::from_candidates(stock, request, &found)
    }

    /// The report for networks already found (best first).
    pub fn from_candidates(stock: &Stock, request: &Request, found: &[Candidate]) -> FixReport {
        let target = request.target;
        let networks: Vec<FixNetwork> = found
            .iter()
            .map(|c| {
                let members = c.network.members();
                let shares = request.load.map(|l| l.member_powers(&c.network));
                let parts = members
                    .iter()
                    .enumerate()
                    .map(|(i, m)| FixPart {
                        ohms: m.ohms,
                        tolerance: m.tolerance,
                        power: m.power,
                        location: m.location.clone(),
                        dissipation: shares.as_ref().map(|s| s[i]),
                        limit: shares.as_ref().map(|_| m.power * request.derate),
                    })
                    .collect::<Vec<_>>();
                let power_ok = shares.as_ref().map(|_| {
                    parts
                        .iter()
                        .all(|p| p.dissipation.zip(p.limit).is_some_and(|(d, l)| d.0 <= l.0))
                });
                let hottest = shares.as_ref().map(|s| {
                    s.iter()
                        .zip(&members)
                        .map(|(w, m)| w.0 / m.power.0)
                        .fold(0.0, f64::max)
                });
                FixNetwork {
                    ohms: c.ohms,
                    network: c.network.notation(),
                    error: c.error(target),
                    band: c.band,
                    parts,
                    power_ok,
                    hottest,
                    volts: request.load.map(|l| l.volts_across(c.ohms)),
                }
            })
            .collect();
        let on_hand = |v: Ohms| {
            stock
                .parts
                .iter()
                .any(|p| p.qty > 0 && ((p.ohms.0 - v.0) / v.0).abs() <= 1e-6)
        };
        let baseline = [Series::E24, Series::E96]
            .into_iter()
            .map(|s| {
                let v = s.nearest(target);
                Nearest {
                    series: s.to_string(),
                    ohms: v,
                    error: (v.0 - target.0) / target.0,
                    in_stock: on_hand(v),
                }
            })
            .collect();
        let mut notes = Vec::new();
        if networks.is_empty() {
            notes.push(format!("{} has no parts on hand", stock.file));
        }
        if request.load.is_some() {
            let oks: Vec<bool> = networks.iter().filter_map(|n| n.power_ok).collect();
            let limit = format!("{} % of its rating", trim_number(request.derate * 100.0, 3));
            if !oks.is_empty() && oks.iter().all(|ok| !ok) {
                notes.push(format!(
                    "none of these networks keeps every part within {limit}; use parts with higher ratings"
                ));
            } else if oks.first() == Some(&false) {
                if let Some(i) = oks.iter().position(|ok| *ok) {
                    notes.push(format!(
                        "#1 runs a part past {limit}; #{} is the closest that does not",
                        i + 1
                    ));
                }
            }
            if oks.iter().any(|ok| !ok) {
                notes.push(
                    "caution: a part past its derated limit can get hot enough to burn skin and scorch a \
                     board"
                        .into(),
                );
            }
            let top_volts = networks
                .iter()
                .filter_map(|n| n.volts)
                .fold(0.0, |a: f64, v| a.max(v.0));
            if top_volts >= CAUTION_VOLTS {
                notes.push(format!(
                    "caution: {} across the network is 50 V DC or more, beyond safe extra-low voltage; \
                     follow your local electrical codes and licensed practice",
                    engineering(top_volts, "V")
                ));
            }
        }
        FixReport {
            target,
            stock: stock.file.clone(),
            max_parts: request.max_parts,
            networks,
            baseline,
            load: request.load.map(|l| {
                let (kind, value) = match l {
                    Load::Watts(w) => ("watts", w.0),
                    Load::Volts(v) => ("volts", v.0),
                    Load::Amps(a) => ("amps", a.0),
                };
                LoadSummary {
                    kind,
                    value,
                    derate: request.derate,
                }
            }),
            notes,
        }
    }

    /// Whether a power check was asked for and no listed network passes it.
    pub fn power_failed(&self) -> bool {
        let oks: Vec<bool> = self.networks.iter().filter_map(|n| n.power_ok).collect();
        !oks.is_empty() && oks.iter().all(|ok| !ok)
    }

    /// The report as aligned text for people; `colour` marks parts over their limit in red.
    pub fn render(&self, colour: bool) -> String {
        let mut out = String::new();
        let _ = writeln!(
            out,
            "fix {} from {}, up to {} part{}",
            code(self.target),
            self.stock,
            self.max_parts,
            if self.max_parts == 1 { "" } else { "s" }
        );
        if let Some(load) = &self.load {
            let given = match load.kind {
                "watts" => format!("{} in the network", engineering(load.value, "W")),
                "volts" => format!("{} across the network", engineering(load.value, "V")),
                _ => format!("{} through the network", engineering(load.value, "A")),
            };
            let _ = writeln!(
                out,
                "power: {given}; each part held to {} % of its rating",
                trim_number(load.derate * 100.0, 3)
            );
        }
        out.push('\n');
        let mut header = vec!["#", "network", "resistance", "error", "band"];
        if self.load.is_some() {
            header.push("hottest");
        }
        header.push("where");
        let rows: Vec<Vec<String>> = self
            .networks
            .iter()
            .enumerate()
            .map(|(i, n)| {
                let mut row = vec![
                    (i + 1).to_string(),
                    n.network.clone(),
                    code(n.ohms),
                    error_text(n.error),
                    band_text(n.band),
                ];
                if let (Some(hot), Some(ok)) = (n.hottest, n.power_ok) {
                    row.push(format!(
                        "{} % {}",
                        trim_number(hot * 100.0, 3),
                        if ok { "ok" } else { "over" }
                    ));
                }
                row.push(where_text(&n.parts));
                row
            })
            .collect();
        let header: Vec<String> = header.into_iter().map(String::from).collect();
        let width = |c: usize| {
            std::iter::once(&header)
                .chain(&rows)
                .map(|r| r[c].chars().count())
                .max()
                .unwrap_or(0)
        };
        let widths: Vec<usize> = (0..header.len()).map(width).collect();
        let hot_column = self.load.as_ref().map(|_| header.len() - 2);
        for row in std::iter::once(&header).chain(&rows) {
            let mut line = String::from(" ");
            for (c, cell) in row.iter().enumerate() {
                let last = c + 1 == row.len();
                let pad = widths[c].saturating_sub(cell.chars().count());
                let text = if c == 0 {
                    format!("{}{cell}", " ".repeat(pad))
                } else if last {
                    cell.clone()
                } else {
                    format!("{cell}{}", " ".repeat(pad))
                };
                let text = if colour && Some(c) == hot_column && cell.ends_with("over") {
                    format!("\x1b[31m{text}\x1b[0m")
                } else {
                    text
                };
                line.push(' ');
                line.push_str(&text);
                if !last {
                    line.push(' ');
                }
            }
            let _ = writeln!(out, "{}", line.trim_end());
        }
        let baseline = self
            .baseline
            .iter()
            .map(|b| {
                format!(
                    "{} {} {} ({})",
                    b.series,
                    code(b.ohms),
                    error_text(b.error),
                    if b.in_stock { "on hand" } else { "not on hand" }
                )
            })
            .collect::<Vec<_>>()
            .join(", ");
        out.push('\n');
        if let Some(load) = &self.load {
            let _ = writeln!(
                out,
                "  hottest: the hottest part's dissipation as a share of its rating (limit {} %)",
                trim_number(load.derate * 100.0, 3)
            );
        }
        let _ = writeln!(out, "  nearest single value: {baseline}");
        for note in &self.notes {
            let _ = writeln!(out, "  {note}");
        }
        out
    }
}

/// An error in % (3 significant digits), in ppm below 0.1 %, or "exact" below a part per billion.
pub fn error_text(e: f64) -> String {
    let sign = if e < 0.0 { "-" } else { "+" };
    if e.abs() < 1e-9 {
        "exact".into()
    } else if e.abs() < 1e-3 {
        format!("{sign}{} ppm", trim_number(e.abs() * 1e6, 3))
    } else {
        format!("{sign}{} %", trim_number(e.abs() * 100.0, 3))
    }
}

/// A band as "±1 %" when symmetric, else "-3.04/+2.96 %".
pub fn band_text((low, high): (f64, f64)) -> String {
    if (low + high).abs() < 1e-9 {
        format!("±{} %", trim_number(high * 100.0, 3))
    } else {
        let signed = |x: f64| {
            format!(
                "{}{}",
                if x < 0.0 { "-" } else { "+" },
                trim_number(x.abs() * 100.0, 3)
            )
        };
        format!("{}/{} %", signed(low), signed(high))
    }
}

/// Where the members are: "2× 4k7 in C8; 1k in C7", one entry per stock part in member order (a part's
/// own locations are joined by commas, so parts are joined by semicolons).
fn where_text(parts: &[FixPart]) -> String {
    let mut groups: Vec<(&FixPart, usize)> = Vec::new();
    for p in parts {
        match groups.iter_mut().find(|(q, _)| {
            (q.ohms, q.tolerance, q.power, &q.location)
                == (p.ohms, p.tolerance, p.power, &p.location)
        }) {
            Some((_, n)) => *n += 1,
            None => groups.push((p, 1)),
        }
    }
    groups
        .iter()
        .map(|(p, n)| {
            let count = if *n > 1 {
                format!("{n}× ")
            } else {
                String::new()
            };
            match &p.location {
                Some(l) => format!("{count}{} in {l}", code(p.ohms)),
                None => format!("{count}{} (no location)", code(p.ohms)),
            }
        })
        .collect::<Vec<_>>()
        .join("; ")
}
