//! Networks of resistors: a single part, or series and parallel combinations nested to any depth, with their
//! resistance, worst-case tolerance band and each member's share of the power.
//!
//! A network's members are concrete resistors ([`Member`]), each with its tolerance, rating and (when it
//! comes from stock) its location and stock index, so that checks and pick lists need nothing else.
//! [`candidates`] finds the networks a stock can build for a value; [`fix`] turns the best of them into the
//! `fix` report.

pub mod candidates;
pub mod notation;

pub use notation::{parse_network, NetworkError};

use crate::units::{Amps, Ohms, Tolerance, Volts, Watts};
use serde::Serialize;

/// A stocked part's position in a [`crate::stock::Stock`]'s list of parts.
pub type PartId = usize;

/// One physical resistor in a network.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Member {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance of the nominal value.
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
    /// Where to find it (bin or drawer label), if known.
    pub location: Option<String>,
    /// Which stock part it is, if it comes from stock.
    #[serde(skip)]
    pub part: Option<PartId>,
}

impl Member {
    /// A resistor that is not tied to any stock part.
    pub fn loose(ohms: Ohms, tolerance: Tolerance, power: Watts) -> Member {
        Member {
            ohms,
            tolerance,
            power,
            location: None,
            part: None,
        }
    }
}

/// A resistor network: one part, or members in series or in parallel.
#[derive(Clone, Debug, PartialEq)]
pub enum Network {
    /// One resistor.
    Single(Member),
    /// Members carrying the same current.
    Series(Vec<Network>),
    /// Members sharing the same voltage.
    Parallel(Vec<Network>),
}

impl Network {
    /// The nominal resistance.
    pub fn ohms(&self) -> Ohms {
        self.ohms_with(&|m| m.ohms)
    }

    /// The resistance with each member's value given by `value`.
    ///
    /// Used for corners and Monte Carlo draws: the network's shape stays, its members move.
    pub fn ohms_with(&self, value: &dyn Fn(&Member) -> Ohms) -> Ohms {
        match self {
            Network::Single(m) => value(m),
            Network::Series(parts) => Ohms(parts.iter().map(|p| p.ohms_with(value).0).sum()),
            Network::Parallel(parts) => Ohms(
                1.0 / parts
                    .iter()
                    .map(|p| 1.0 / p.ohms_with(value).0)
                    .sum::<f64>(),
            ),
        }
    }

    /// The resistance as a code to the digits its members change, up to 6 significant: `165k+27R4` is
    /// 165k03, not 165k, which would hide what the 27R4 adds. An exact value keeps its short code (5k).
    pub fn value_code(&self) -> String {
        use crate::notation::value::{code, code_with, round_sig};
        let v = self.ohms().0;
        let members = self.members();
        let exact = (3..=6).find(|&s| ((round_sig(v, s) - v) / v).abs() < 1e-12);
        if members.len() < 2 || exact.is_some() || !v.is_finite() || v <= 0.0 {
            return code(Ohms(v));
        }
        // What each member moves the value by, to first order: its value times the network's
        // sensitivity to it (1 for a series member, (R/r)² for a parallel one).
        const H: f64 = 1e-6;
        let smallest = members
            .iter()
            .map(|&target| {
                let moved = self.ohms_with(&|m| {
                    if std::ptr::eq(m, target) {
                        m.ohms * (1.0 + H)
                    } else {
                        m.ohms
                    }
                });
                (moved.0 - v).abs() / H
            })
            .fold(f64::INFINITY, f64::min);
        let magnitude = v.log10().floor() as i32;
        (4..=6)
            .find(|&sig| 10f64.powi(magnitude - sig as i32 + 1) <= smallest)
            .map_or_else(|| code_with(Ohms(v), 6), |sig| code_with(Ohms(v), sig))
    }

    /// The members, left to right.
    pub fn members(&self) -> Vec<&Member> {
        let mut out = Vec::new();
        self.collect_members(&mut out);
        out
    }

    fn collect_members<'a>(&'a self, out: &mut Vec<&'a Member>) {
        match self {
            Network::Single(m) => out.push(m),
            Network::Series(parts) | Network::Parallel(parts) => {
                parts.iter().for_each(|p| p.collect_members(out))
            }
        }
    }

    /// Mutable access to the members, left to right.
    pub fn members_mut(&mut self) -> Vec<&mut Member> {
        match self {
            Network::Single(m) => vec![m],
            Network::Series(parts) | Network::Parallel(parts) => {
                parts.iter_mut().flat_map(|p| p.members_mut()).collect()
            }
        }
    }

    /// How many resistors the network uses.
    pub fn part_count(&self) -> usize {
        self.members().len()
    }

    /// The worst-case band as relative deviations (low, high) from the nominal, e.g. (−0.05, +0.05).
    ///
    /// Series and parallel resistance rise with every member's value, so the extremes are all members at
    /// their low limit and all at their high limit.
    pub fn band(&self) -> (f64, f64) {
        let nominal = self.ohms().0;
        let low = self.ohms_with(&|m| m.ohms * (1.0 - m.tolerance.0)).0;
        let high = self.ohms_with(&|m| m.ohms * (1.0 + m.tolerance.0)).0;
        (low / nominal - 1.0, high / nominal - 1.0)
    }

    /// The one power rating that, held against the whole network's dissipation, checks every member against
    /// its own: the members share the power in fixed proportions, so the most loaded one (for its rating)
    /// reaches its limit first. None for a network that takes no power.
    pub fn equivalent_rating(&self) -> Option<Watts> {
        let shares = self.member_powers(Amps(1.0));
        let total: f64 = shares.iter().map(|w| w.0).sum();
        if total.is_nan() || total <= 0.0 {
            return None;
        }
        self.members()
            .iter()
            .zip(&shares)
            .filter(|(_, p)| p.0 > 0.0)
            .map(|(m, p)| m.power.0 * total / p.0)
            .min_by(f64::total_cmp)
            .map(Watts)
    }

    /// Each member's dissipation with `current` through the whole network, in member order.
    pub fn member_powers(&self, current: Amps) -> Vec<Watts> {
        let mut out = Vec::new();
        self.collect_powers(current, &mut out);
        out
    }

    fn collect_powers(&self, current: Amps, out: &mut Vec<Watts>) {
        match self {
            Network::Single(m) => out.push(m.ohms.power_at_current(current)),
            Network::Series(parts) => parts.iter().for_each(|p| p.collect_powers(current, out)),
            Network::Parallel(parts) => {
                let v: Volts = current * self.ohms();
                for p in parts {
                    p.collect_powers(v / p.ohms(), out);
                }
            }
        }
    }

    /// Each member's dissipation with `voltage` across the whole network.
    pub fn member_powers_at_voltage(&self, voltage: Volts) -> Vec<Watts> {
        self.member_powers(voltage / self.ohms())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn r(ohms: f64, tol: f64) -> Network {
        Network::Single(Member::loose(Ohms(ohms), Tolerance(tol), Watts(0.25)))
    }

    #[test]
    fn arithmetic_by_hand() {
        // 10k + 4k7 = 14k7; 10k | 10k = 5k; (220 + 47) | 1k = 267·1000/1267 = 210.73 Ω.
        assert_eq!(
            Network::Series(vec![r(10e3, 0.05), r(4700.0, 0.05)]).ohms(),
            Ohms(14_700.0)
        );
        assert_eq!(
            Network::Parallel(vec![r(10e3, 0.05), r(10e3, 0.05)]).ohms(),
            Ohms(5e3)
        );
        let mixed = Network::Parallel(vec![
            Network::Series(vec![r(220.0, 0.05), r(47.0, 0.05)]),
            r(1e3, 0.05),
        ]);
        assert!((mixed.ohms().0 - 267_000.0 / 1267.0).abs() < 1e-9);
        assert_eq!(mixed.notation(), "(220R+47R)|1k");
        assert_eq!(mixed.part_count(), 3);
    }

    #[test]
    fn tolerance_band_by_hand() {
        // Equal tolerances: the band is the members' band, for any shape (the network is homogeneous of
        // degree one in its members).
        let (lo, hi) = Network::Series(vec![r(10e3, 0.01), r(4700.0, 0.01)]).band();
        assert!((lo + 0.01).abs() < 1e-12 && (hi - 0.01).abs() < 1e-12);
        // Mixed: 10k 1 % + 1k 5 %: low = 9900 + 950 = 10850, high = 10100 + 1050 = 11150, nominal 11000:
        // -1.3636 % / +1.3636 %.
        let (lo, hi) = Network::Series(vec![r(10e3, 0.01), r(1e3, 0.05)]).band();
        assert!((lo - (10_850.0 / 11_000.0 - 1.0)).abs() < 1e-12);
        assert!((hi - (11_150.0 / 11_000.0 - 1.0)).abs() < 1e-12);
    }

    #[test]
    fn power_shares_by_hand() {
        // 1 mA through 10k + 4k7: 10 mW and 4.7 mW. 10 V across 10k | 4k7: 10 mW and 21.28 mW.
        let s = Network::Series(vec![r(10e3, 0.05), r(4700.0, 0.05)]);
        let p = s.member_powers(Amps(1e-3));
        assert!((p[0].0 - 0.010).abs() < 1e-15 && (p[1].0 - 0.0047).abs() < 1e-15);
        let par = Network::Parallel(vec![r(10e3, 0.05), r(4700.0, 0.05)]);
        let p = par.member_powers_at_voltage(Volts(10.0));
        assert!((p[0].0 - 0.01).abs() < 1e-12 && (p[1].0 - 100.0 / 4700.0).abs() < 1e-12);
        // The shares add up to the whole.
        let total: f64 = p.iter().map(|w| w.0).sum();
        assert!((total - 100.0 / par.ohms().0).abs() < 1e-12);
    }
}
