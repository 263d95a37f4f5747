//! The slot fix: the few best networks the stock can build for one off-value slot, each with its error,
//! worst-case band and where its parts are, beside the nearest single E24 and E96 values (what a shopping
//! list would buy), and optionally whether every member stays within its derated power rating.
//!
//! The report struct is also the `fix --json` schema (SI base units; fractions for errors and bands); its
//! text renderer is [`crate::report::fix::render`]. It relies on [`crate::network::candidates`] for the
//! search.

use crate::network::candidates::{Candidate, Index};
use crate::notation::{engineering, trim_number, Series};
use crate::stock::Stock;
use crate::units::{Amps, Ohms, Tolerance, Volts, Watts};
use serde::Serialize;

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
    pub fn member_powers(&self, network: &crate::network::Network) -> Vec<Watts> {
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
            if top_volts >= crate::units::SAFE_EXTRA_LOW_VOLTAGE.0 {
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
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stock::Part;

    fn part(ohms: f64, tol: f64, power: f64, qty: u32, location: &str) -> Part {
        Part {
            ohms: Ohms(ohms),
            tolerance: Tolerance(tol),
            power: Watts(power),
            qty,
            locations: vec![location.to_string()],
            notes: Vec::new(),
            lines: Vec::new(),
        }
    }

    fn drawer() -> Stock {
        Stock::from_parts(
            "drawer.csv",
            vec![
                part(10e3, 0.05, 0.25, 4, "D9"),
                part(4700.0, 0.01, 0.25, 2, "C8"),
                part(2200.0, 0.05, 0.25, 2, "C2"),
                part(1000.0, 0.05, 0.5, 1, "C7"),
                part(15e3, 0.05, 0.25, 0, "D4"),
            ],
        )
    }

    fn request(target: f64, load: Option<Load>) -> Request {
        Request {
            target: Ohms(target),
            max_parts: 2,
            top: 3,
            load,
            derate: 0.5,
        }
    }

    #[test]
    fn renders_the_table() {
        // 10k + 4k7 = 14k7 exactly. 10k + 2k2 = 12k2 is 12.2/14.7 − 1 = −17.0 %, 10k + 1k = 11k is −25.2 %.
        // Band of 10k 5 % + 4k7 1 %: (500 + 47) / 14700 = ±3.72 %. Nearest E24 to 14k7 is 15k (+2.04 %); 14k7
        // is itself E96 (IEC 60063). The empty 15k bin is never offered.
        let report = FixReport::build(&drawer(), &request(14_700.0, None));
        let want = "\
fix 14k7 from drawer.csv, up to 2 parts

  #  network  resistance  error    band     where
  1  10k+4k7  14k7        exact    ±3.72 %  10k in D9; 4k7 in C8
  2  10k+2k2  12k2        -17 %    ±5 %     10k in D9; 2k2 in C2
  3  10k+1k   11k         -25.2 %  ±5 %     10k in D9; 1k in C7

  nearest single value: E24 15k +2.04 % (not on hand), E96 14k7 exact (not on hand)
";
        assert_eq!(crate::report::fix::render(&report, false), want);
    }

    #[test]
    fn power_shares_by_hand() {
        // 0.3 W in 10k + 4k7: the current is √(0.3 / 14700) and each part takes its share of the resistance,
        // 0.3 × 10/14.7 = 204.1 mW (81.6 % of 0.25 W) and 0.3 × 4.7/14.7 = 95.9 mW; the 10k is over its
        // 125 mW limit at 50 %. The voltage is √(0.3 × 14700) = 66.4 V, above the 50 V caution.
        let report = FixReport::build(&drawer(), &request(14_700.0, Some(Load::Watts(Watts(0.3)))));
        let n = &report.networks[0];
        let d = n.parts[0].dissipation.unwrap().0;
        assert!((d - 0.3 * 10.0 / 14.7).abs() < 1e-12);
        assert!((n.parts[1].dissipation.unwrap().0 - 0.3 * 4.7 / 14.7).abs() < 1e-12);
        assert_eq!(n.parts[0].limit, Some(Watts(0.125)));
        assert_eq!(n.power_ok, Some(false));
        assert!((n.hottest.unwrap() - 0.3 * 10.0 / 14.7 / 0.25).abs() < 1e-12);
        assert!((n.volts.unwrap().0 - (0.3f64 * 14_700.0).sqrt()).abs() < 1e-9);
        assert!(report.power_failed());
        assert!(report.notes.iter().any(|m| m.contains("50 V DC or more")));
        let text = crate::report::fix::render(&report, false);
        assert!(text.contains("81.6 % over"), "{text}");
        assert!(
            text.contains("each part held to 50 % of its rating"),
            "{text}"
        );
        // 1 mA through 2k2 | 2k2 (1k1): 1.1 V across, 0.55 mW in each half; well within, no caution.
        let report = FixReport::build(&drawer(), &request(1100.0, Some(Load::Amps(Amps(1e-3)))));
        let n = &report.networks[0];
        assert_eq!(n.network, "2k2|2k2");
        for p in &n.parts {
            assert!((p.dissipation.unwrap().0 - 0.55e-3).abs() < 1e-15);
        }
        assert_eq!(n.power_ok, Some(true));
        assert!(!report.power_failed());
        assert!(report.notes.is_empty(), "{:?}", report.notes);
        // 12 V across 10k + 4k7: I = 12 / 14700, the 10k takes 12² × 10000 / 14700² = 6.66 mW.
        let report = FixReport::build(
            &drawer(),
            &request(14_700.0, Some(Load::Volts(Volts(12.0)))),
        );
        let d = report.networks[0].parts[0].dissipation.unwrap().0;
        assert!((d - 144.0 * 10e3 / 14_700f64.powi(2)).abs() < 1e-15);
    }

    #[test]
    fn best_that_passes_is_pointed_out() {
        // 20 V across a 1/8 W 4k7: 400 / 4700 = 85.1 mW, over its 62.5 mW limit. 10k | 10k (5k, +6.38 %) of
        // 0.5 W parts: 400 / 10000 = 40 mW each, within 250 mW.
        let stock = Stock::from_parts(
            "hot.csv",
            vec![
                part(4700.0, 0.05, 0.125, 2, "C1"),
                part(10e3, 0.05, 0.5, 2, "D1"),
            ],
        );
        let report = FixReport::build(&stock, &request(4700.0, Some(Load::Volts(Volts(20.0)))));
        assert_eq!(report.networks[0].network, "4k7");
        assert!(
            (report.networks[0].parts[0].dissipation.unwrap().0 - 400.0 / 4700.0).abs() < 1e-15
        );
        assert_eq!(report.networks[0].power_ok, Some(false));
        assert_eq!(report.networks[1].network, "10k|10k");
        assert_eq!(report.networks[1].power_ok, Some(true));
        assert!(!report.power_failed());
        assert!(report.notes.iter().any(
            |n| n == "#1 runs a part past 50 % of its rating; #2 is the closest that does not"
        ));
    }

    #[test]
    fn baseline_is_the_nearest_preferred_value() {
        // IEC 60063: between 14k and 15k, E24 has 15k only; E96 has 14k0, 14k3, 14k7. For 14k6 the nearest
        // are 15k (+2.74 %) and 14k7 (+0.685 %).
        let report = FixReport::build(&drawer(), &request(14_600.0, None));
        assert_eq!(report.baseline[0].series, "E24");
        assert_eq!(report.baseline[0].ohms, Ohms(15e3));
        assert!((report.baseline[0].error - (15.0 / 14.6 - 1.0)).abs() < 1e-12);
        assert!(!report.baseline[0].in_stock, "the 15k bin is empty");
        assert_eq!(report.baseline[1].ohms, Ohms(14_700.0));
        // 10k is on hand.
        let report = FixReport::build(&drawer(), &request(10_100.0, None));
        assert!(report.baseline[0].in_stock);
    }

    #[test]
    fn json_has_the_contract_keys() {
        let report = FixReport::build(&drawer(), &request(14_700.0, None));
        let v = serde_json::to_value(&report).unwrap();
        assert_eq!(v["target"], 14_700.0);
        let n = &v["networks"][0];
        for key in ["ohms", "network", "error", "band", "parts"] {
            assert!(!n[key].is_null(), "{key}");
        }
        assert_eq!(n["network"], "10k+4k7");
        assert_eq!(n["band"].as_array().unwrap().len(), 2);
        for key in ["ohms", "tolerance", "power", "location"] {
            assert!(n["parts"][0].get(key).is_some(), "{key}");
        }
        assert_eq!(n["parts"][1]["location"], "C8");
        assert!(n.get("power_ok").is_none(), "no load, no power check");
    }
}
