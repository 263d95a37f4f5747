//! A stock's summary: what is in the drawer, by decade, which common values are missing, and the mix of
//! tolerances and ratings. The struct is also the `stock --json` schema; `report::stock` renders it for people.

use super::Stock;
use crate::notation::Series;
use crate::units::Ohms;
use serde::Serialize;
use std::collections::BTreeMap;

/// How many values and pieces one decade holds.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Decade {
    /// The decade's lower end in ohms (1, 10, 100, …).
    pub from: f64,
    /// Distinct values in the decade.
    pub values: usize,
    /// Pieces in the decade.
    pub pieces: u64,
}

/// The pieces at one tolerance or one rating.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Mix {
    /// The tolerance (fraction) or rating (watts).
    pub value: f64,
    /// Pieces with it.
    pub pieces: u64,
}

/// What a stock file holds.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Summary {
    /// The file.
    pub file: String,
    /// Distinct resistance values with at least one piece.
    pub distinct: usize,
    /// Total pieces.
    pub pieces: u64,
    /// Distinct (value, tolerance, power) parts, including those with none left.
    pub parts: usize,
    /// Parts listed with quantity 0.
    pub empty: usize,
    /// Smallest and largest value on hand, in ohms.
    pub range: Option<(f64, f64)>,
    /// Values and pieces per decade, ascending.
    pub decades: Vec<Decade>,
    /// E12 values (in ohms) missing from the decades the stock spans.
    pub missing_e12: Vec<f64>,
    /// E24 values missing from the same span.
    pub missing_e24: Vec<f64>,
    /// Values on hand that are not in E24 (odd or precision values).
    pub off_series: usize,
    /// Pieces per tolerance, tightest first.
    pub tolerances: Vec<Mix>,
    /// Pieces per power rating, smallest first.
    pub powers: Vec<Mix>,
    /// The field delimiter read from the header: "comma", "semicolon" or "tab".
    pub delimiter: &'static str,
    /// The columns read, as the header names them, by biasfit's name (value, qty, …), in biasfit's order.
    pub columns: Vec<(String, String)>,
    /// Load warnings (defaults applied, columns not read).
    pub warnings: Vec<String>,
}

impl Summary {
    /// Summarises a stock.
    pub fn of(stock: &Stock) -> Summary {
        let on_hand: Vec<_> = stock.parts.iter().filter(|p| p.qty > 0).collect();
        let mut values: Vec<f64> = on_hand.iter().map(|p| p.ohms.0).collect();
        values.sort_by(f64::total_cmp);
        values.dedup();
        let decade_of = |x: f64| (x.log10() + 1e-12).floor() as i32;
        let mut decades: BTreeMap<i32, (usize, u64)> = BTreeMap::new();
        for v in &values {
            decades.entry(decade_of(*v)).or_default().0 += 1;
        }
        for p in &on_hand {
            decades.entry(decade_of(p.ohms.0)).or_default().1 += p.qty as u64;
        }
        let range = values.first().zip(values.last()).map(|(a, b)| (*a, *b));
        let missing = |series: Series| -> Vec<f64> {
            let Some((lo, hi)) = range else {
                return Vec::new();
            };
            let from = 10f64.powi(decade_of(lo));
            let to = 10f64.powi(decade_of(hi) + 1) * 0.999;
            series
                .values_between(Ohms(from), Ohms(to))
                .into_iter()
                .map(|v| v.0)
                .filter(|v| !values.iter().any(|x| ((x - v) / v).abs() < 1e-9))
                .collect()
        };
        let mut tolerances: BTreeMap<u64, u64> = BTreeMap::new();
        let mut powers: BTreeMap<u64, u64> = BTreeMap::new();
        for p in &on_hand {
            // Positive floats order like their bit patterns.
            *tolerances.entry(p.tolerance.0.to_bits()).or_default() += p.qty as u64;
            *powers.entry(p.power.0.to_bits()).or_default() += p.qty as u64;
        }
        let mix = |m: BTreeMap<u64, u64>| {
            m.into_iter()
                .map(|(bits, pieces)| Mix {
                    value: f64::from_bits(bits),
                    pieces,
                })
                .collect()
        };
        Summary {
            file: stock.file.clone(),
            distinct: values.len(),
            pieces: stock.pieces(),
            parts: stock.parts.len(),
            empty: stock.parts.iter().filter(|p| p.qty == 0).count(),
            range,
            decades: decades
                .into_iter()
                .map(|(d, (values, pieces))| Decade {
                    from: 10f64.powi(d),
                    values,
                    pieces,
                })
                .collect(),
            missing_e12: missing(Series::E12),
            missing_e24: missing(Series::E24),
            off_series: values
                .iter()
                .filter(|v| !Series::E24.contains(Ohms(**v)))
                .count(),
            tolerances: mix(tolerances),
            powers: mix(powers),
            delimiter: match stock.delimiter {
                b';' => "semicolon",
                b'\t' => "tab",
                _ => "comma",
            },
            columns: stock.header.clone(),
            warnings: stock.warnings.clone(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stock::{parse, Defaults};

    #[test]
    fn summarises_by_hand() {
        let text = "value,qty,tolerance,power\n10,2,5%,0.25W\n47,1,1%,0.25W\n4k7,5,5%,0.5W\n4700,1,5%,0.5W\n1k,0,5%,0.25W\n";
        let s = Summary::of(&parse("t.csv", text.as_bytes(), Defaults::default()).unwrap());
        assert_eq!(s.distinct, 3);
        assert_eq!(s.pieces, 9);
        assert_eq!(s.empty, 1);
        assert_eq!(s.decades.len(), 2);
        assert_eq!(
            (s.decades[0].from, s.decades[0].values, s.decades[0].pieces),
            (10.0, 2, 3)
        );
        assert_eq!(
            (s.decades[1].from, s.decades[1].values, s.decades[1].pieces),
            (1000.0, 1, 6)
        );
        // Span 10 Ω to 9.99 kΩ: 3 decades of E12 is 36 values, 3 of them on hand.
        assert_eq!(s.missing_e12.len(), 36 - 3);
        assert!(s.missing_e12.contains(&1000.0));
        assert_eq!(s.missing_e24.len(), 72 - 3);
        assert_eq!(
            s.tolerances,
            vec![
                Mix {
                    value: 0.01,
                    pieces: 1
                },
                Mix {
                    value: 0.05,
                    pieces: 8
                }
            ]
        );
        assert_eq!(
            s.powers[1],
            Mix {
                value: 0.5,
                pieces: 6
            }
        );
        assert!(crate::report::stock::render(&s).contains("3 distinct values, 9 pieces"));
    }
}
