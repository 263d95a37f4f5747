//! Buying and keeping parts: the purchasable-parts [`catalogue`], the order list that `biasfit order` writes
//! and `biasfit stock add` reads ([`orderfile`]), and the edits that keep a stock file true to the drawer
//! after a build or a delivery ([`stocktake`]).
//!
//! It relies on [`crate::stock`] for the CSV reading rules and the stock itself, and on [`crate::save`] for
//! writing the stock back without risk; the purchase model itself (which parts to buy) belongs to the
//! optimiser, which takes a [`Catalogue`] and gives back [`OrderLine`]s.

pub mod catalogue;
pub mod orderfile;
pub mod stocktake;

use crate::notation::code;
use crate::units::{Ohms, Tolerance, Watts};
use serde::{Deserialize, Serialize};
use std::fmt;
use std::ops::{Add, Mul};

pub use catalogue::{Catalogue, Item, Offer, Purchase};
pub use orderfile::{Arrival, OrderLine};
pub use stocktake::{DesignResult, Edit, Pick, StockFile, TakeError};

/// An amount of money in the user's own currency (biasfit never converts or names one).
#[derive(Clone, Copy, Debug, Default, PartialEq, PartialOrd, Serialize, Deserialize)]
#[serde(transparent)]
pub struct Money(pub f64);

impl Add for Money {
    type Output = Money;
    fn add(self, rhs: Money) -> Money {
        Money(self.0 + rhs.0)
    }
}

impl Mul<u32> for Money {
    type Output = Money;
    fn mul(self, rhs: u32) -> Money {
        Money(self.0 * rhs as f64)
    }
}

impl std::iter::Sum for Money {
    fn sum<I: Iterator<Item = Money>>(iter: I) -> Money {
        Money(iter.map(|m| m.0).sum())
    }
}

impl fmt::Display for Money {
    /// A plain number rounded to a millionth, without trailing zeros ("1.2", "0.012", "12"), so that it reads
    /// back as written and sums of cents do not show float noise.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let rounded = (self.0 * 1e6).round() / 1e6;
        let s = format!("{rounded:.6}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        write!(f, "{}", if s == "-0" { "0" } else { s })
    }
}

/// What makes two resistors interchangeable: value, tolerance and power rating.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Spec {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance.
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
}

/// Two values that differ by less than this fraction are the same: files and JSON carry values as decimal
/// text, which can come back one unit in the last place away.
pub const SAME_RELATIVE: f64 = 1e-9;

/// Whether two positive numbers agree within [`SAME_RELATIVE`].
pub fn same(a: f64, b: f64) -> bool {
    (a - b).abs() <= SAME_RELATIVE * a.abs().max(b.abs())
}

impl Spec {
    /// The spec of a stock part.
    pub fn of(part: &crate::stock::Part) -> Spec {
        Spec {
            ohms: part.ohms,
            tolerance: part.tolerance,
            power: part.power,
        }
    }

    /// Whether two specs name the same kind of resistor.
    pub fn matches(&self, other: &Spec) -> bool {
        same(self.ohms.0, other.ohms.0)
            && same(self.tolerance.0, other.tolerance.0)
            && same(self.power.0, other.power.0)
    }
}

impl fmt::Display for Spec {
    /// "4k7 5 % 250 mW".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {} {}", code(self.ohms), self.tolerance, self.power)
    }
}

/// A tolerance as the order file writes it: "1%", "0.5%".
pub fn tolerance_text(t: Tolerance) -> String {
    format!("{}%", crate::notation::trim_number(t.percent(), 6))
}

/// A power rating as the order file writes it: "0.25W", "0.125W".
pub fn power_text(p: Watts) -> String {
    format!("{}W", crate::notation::trim_number(p.0, 6))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::notation::{parse_tolerance, parse_watts};

    #[test]
    fn money_prints_plainly() {
        assert_eq!(Money(1.2).to_string(), "1.2");
        assert_eq!(Money(0.1 + 0.2).to_string(), "0.3");
        assert_eq!(Money(12.0).to_string(), "12");
        assert_eq!(Money(0.012).to_string(), "0.012");
        assert_eq!(Money(0.0).to_string(), "0");
        assert_eq!((Money(0.05) * 3).to_string(), "0.15");
    }

    #[test]
    fn tolerance_and_power_text_read_back() {
        for t in [0.001, 0.0025, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2] {
            let s = tolerance_text(Tolerance(t));
            assert_eq!(parse_tolerance(&s).unwrap(), Tolerance(t), "{s}");
        }
        assert_eq!(tolerance_text(Tolerance(0.01)), "1%");
        for p in [0.0625, 0.125, 0.25, 0.4, 0.5, 0.6, 1.0, 2.0] {
            let s = power_text(Watts(p));
            assert_eq!(parse_watts(&s).unwrap(), Watts(p), "{s}");
        }
        assert_eq!(power_text(Watts(0.25)), "0.25W");
    }

    #[test]
    fn specs_match_within_decimal_noise() {
        let a = Spec {
            ohms: Ohms(4700.0),
            tolerance: Tolerance(0.05),
            power: Watts(0.25),
        };
        let mut b = a;
        b.ohms = Ohms(4_700.000_000_1);
        assert!(a.matches(&b));
        b.ohms = Ohms(4700.1);
        assert!(!a.matches(&b));
        let mut c = a;
        c.tolerance = Tolerance(0.01);
        assert!(!a.matches(&c));
        assert_eq!(a.to_string(), "4k7 5 % 250 mW");
    }
}
