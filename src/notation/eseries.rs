//! The IEC 60063 preferred-number series E3 to E192: their values over any range of decades, and the nearest
//! preferred value below, above or closest (in log distance) to any resistance.
//!
//! The tables are stored as the standard lists them, not computed: several historical values (E24's 2.7 to
//! 4.7 and 8.2, E192's 920) do not follow from rounding 10^(i/n).

use crate::units::Ohms;
use std::fmt;
use std::str::FromStr;

/// One of the IEC 60063 series.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Series {
    /// 3 values a decade (±40 % class, historical).
    E3,
    /// 6 values a decade (±20 %).
    E6,
    /// 12 values a decade (±10 %).
    E12,
    /// 24 values a decade (±5 %).
    E24,
    /// 48 values a decade (±2 %).
    E48,
    /// 96 values a decade (±1 %).
    E96,
    /// 192 values a decade (±0.5 % and tighter).
    E192,
}

const E24: [u16; 24] = [
    10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
];

const E192: [u16; 192] = [
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120, 121, 123, 124,
    126, 127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152, 154, 156,
    158, 160, 162, 164, 165, 167, 169, 172, 174, 176, 178, 180, 182, 184, 187, 189, 191, 193, 196,
    198, 200, 203, 205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246,
    249, 252, 255, 258, 261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309,
    312, 316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379, 383, 388,
    392, 397, 402, 407, 412, 417, 422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481, 487,
    493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556, 562, 569, 576, 583, 590, 597, 604, 612,
    619, 626, 634, 642, 649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768,
    777, 787, 796, 806, 816, 825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965,
    976, 988,
];

impl Series {
    /// Every series, coarsest first.
    pub const ALL: [Series; 7] = [
        Series::E3,
        Series::E6,
        Series::E12,
        Series::E24,
        Series::E48,
        Series::E96,
        Series::E192,
    ];

    /// How many values the series has per decade.
    pub fn per_decade(self) -> usize {
        match self {
            Series::E3 => 3,
            Series::E6 => 6,
            Series::E12 => 12,
            Series::E24 => 24,
            Series::E48 => 48,
            Series::E96 => 96,
            Series::E192 => 192,
        }
    }

    /// The series' values in one decade, as integers: two digits (10..91) for E3–E24, three (100..988) above.
    ///
    /// E3, E6 and E12 are every 8th, 4th and 2nd E24 value; E48 and E96 every 4th and 2nd E192 value.
    pub fn significands(self) -> Vec<u16> {
        match self {
            Series::E3 | Series::E6 | Series::E12 | Series::E24 => E24
                .iter()
                .step_by(24 / self.per_decade())
                .copied()
                .collect(),
            Series::E48 | Series::E96 | Series::E192 => E192
                .iter()
                .step_by(192 / self.per_decade())
                .copied()
                .collect(),
        }
    }

    /// The series' values in the decade [1, 10).
    pub fn mantissas(self) -> Vec<f64> {
        let scale = if self.per_decade() <= 24 { 10.0 } else { 100.0 };
        self.significands()
            .into_iter()
            .map(|v| v as f64 / scale)
            .collect()
    }

    /// Every value of the series from `low` to `high` inclusive (in ohms), in ascending order.
    pub fn values_between(self, low: Ohms, high: Ohms) -> Vec<Ohms> {
        if !(low.0 > 0.0 && high.0 >= low.0 && high.0.is_finite()) {
            return Vec::new();
        }
        let first = low.0.log10().floor() as i32 - 1;
        let last = high.0.log10().ceil() as i32 + 1;
        let mut out = Vec::new();
        for decade in first..=last {
            for m in self.mantissas() {
                let v = decade_value(m, decade);
                // A relative slack so that the range ends themselves are included despite rounding.
                if v >= low.0 * (1.0 - 1e-12) && v <= high.0 * (1.0 + 1e-12) {
                    out.push(Ohms(v));
                }
            }
        }
        out
    }

    /// The largest series value at or below `x`.
    pub fn below(self, x: Ohms) -> Ohms {
        self.neighbours(x).0
    }

    /// The smallest series value at or above `x`.
    pub fn above(self, x: Ohms) -> Ohms {
        self.neighbours(x).1
    }

    /// The series value nearest to `x` in log distance (the ratio, not the difference, decides).
    pub fn nearest(self, x: Ohms) -> Ohms {
        let (lo, hi) = self.neighbours(x);
        if (x.0 / lo.0).ln() <= (hi.0 / x.0).ln() {
            lo
        } else {
            hi
        }
    }

    fn neighbours(self, x: Ohms) -> (Ohms, Ohms) {
        let decade = x.0.log10().floor() as i32;
        let candidates: Vec<f64> = (decade - 1..=decade + 1)
            .flat_map(|d| {
                self.mantissas()
                    .into_iter()
                    .map(move |m| decade_value(m, d))
            })
            .collect();
        let tol = x.0 * 1e-12;
        let lo = candidates
            .iter()
            .copied()
            .filter(|v| *v <= x.0 + tol)
            .fold(f64::NAN, f64::max);
        let hi = candidates
            .iter()
            .copied()
            .filter(|v| *v >= x.0 - tol)
            .fold(f64::NAN, f64::min);
        (Ohms(lo), Ohms(hi))
    }

    /// Whether `x` is a value of this series (within 1 ppm).
    pub fn contains(self, x: Ohms) -> bool {
        let n = self.nearest(x);
        ((n.0 - x.0) / x.0).abs() < 1e-6
    }
}

/// A mantissa in [1, 10) times 10^decade, rounded once so that 4.7 × 10³ is exactly 4700.
fn decade_value(mantissa: f64, decade: i32) -> f64 {
    format!("{mantissa}e{decade}")
        .parse()
        .unwrap_or(mantissa * 10f64.powi(decade))
}

impl fmt::Display for Series {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "E{}", self.per_decade())
    }
}

impl FromStr for Series {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        Series::ALL
            .into_iter()
            .find(|series| series.to_string().eq_ignore_ascii_case(s.trim()))
            .ok_or_else(|| format!("\"{s}\" is not a preferred-number series; expected E3, E6, E12, E24, E48, E96 or E192"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The lists below are IEC 60063:2015 Table 1 (E3–E24) and Table 2 (E48–E192), written out from memory of
    // the standard's tables and cross-checked against the formula round(10^(i/n)) with its documented exceptions.
    const TABLE_E3: [u16; 3] = [10, 22, 47];
    const TABLE_E6: [u16; 6] = [10, 15, 22, 33, 47, 68];
    const TABLE_E12: [u16; 12] = [10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82];
    const TABLE_E48: [u16; 48] = [
        100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169, 178, 187, 196, 205, 215, 226,
        237, 249, 261, 274, 287, 301, 316, 332, 348, 365, 383, 402, 422, 442, 464, 487, 511, 536,
        562, 590, 619, 649, 681, 715, 750, 787, 825, 866, 909, 953,
    ];
    const TABLE_E96: [u16; 96] = [
        100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130, 133, 137, 140, 143, 147, 150,
        154, 158, 162, 165, 169, 174, 178, 182, 187, 191, 196, 200, 205, 210, 215, 221, 226, 232,
        237, 243, 249, 255, 261, 267, 274, 280, 287, 294, 301, 309, 316, 324, 332, 340, 348, 357,
        365, 374, 383, 392, 402, 412, 422, 432, 442, 453, 464, 475, 487, 499, 511, 523, 536, 549,
        562, 576, 590, 604, 619, 634, 649, 665, 681, 698, 715, 732, 750, 768, 787, 806, 825, 845,
        866, 887, 909, 931, 953, 976,
    ];

    #[test]
    fn series_match_the_iec_60063_tables() {
        assert_eq!(Series::E3.significands(), TABLE_E3);
        assert_eq!(Series::E6.significands(), TABLE_E6);
        assert_eq!(Series::E12.significands(), TABLE_E12);
        assert_eq!(Series::E24.significands(), E24);
        assert_eq!(Series::E48.significands(), TABLE_E48);
        assert_eq!(Series::E96.significands(), TABLE_E96);
        assert_eq!(Series::E192.significands().len(), 192);
        for s in Series::ALL {
            assert_eq!(s.significands().len(), s.per_decade());
            assert!(
                s.significands().windows(2).all(|w| w[0] < w[1]),
                "{s} ascending"
            );
        }
    }

    #[test]
    fn historical_values_are_the_only_departures_from_the_formula() {
        // IEC 60063 derives E48–E192 from 10^(i/n) rounded to 3 digits, with one exception: E192's 9.20
        // (the formula gives 9.19). E24 keeps the historical 2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2, where the
        // 2-digit rounding gives 2.6 2.9 3.2 3.5 3.8 4.2 4.6 8.3.
        let departures = |s: Series, digits: i32| -> Vec<(u16, u16)> {
            let n = s.per_decade() as f64;
            s.significands()
                .iter()
                .enumerate()
                .filter_map(|(i, &v)| {
                    let formula =
                        (10f64.powf(i as f64 / n) * 10f64.powi(digits - 1)).round() as u16;
                    (formula != v).then_some((v, formula))
                })
                .collect()
        };
        assert_eq!(
            departures(Series::E24, 2),
            vec![
                (27, 26),
                (30, 29),
                (33, 32),
                (36, 35),
                (39, 38),
                (43, 42),
                (47, 46),
                (82, 83)
            ]
        );
        assert_eq!(departures(Series::E192, 3), vec![(920, 919)]);
        assert!(departures(Series::E96, 3).is_empty());
        assert!(departures(Series::E48, 3).is_empty());
    }

    #[test]
    fn values_over_decades() {
        let e12 = Series::E12.values_between(Ohms(10.0), Ohms(1e6));
        assert_eq!(e12.len(), 12 * 5 + 1);
        assert_eq!(e12.first(), Some(&Ohms(10.0)));
        assert_eq!(e12.last(), Some(&Ohms(1e6)));
        assert!(e12.contains(&Ohms(4700.0)));
        assert!(e12.contains(&Ohms(82e3)));
        let e96 = Series::E96.values_between(Ohms(1.0), Ohms(10e6));
        assert_eq!(e96.len(), 96 * 7 + 1);
        assert!(Series::E3.values_between(Ohms(5.0), Ohms(1.0)).is_empty());
    }

    #[test]
    fn nearest_below_above() {
        let x = Ohms(14_600.0);
        assert_eq!(Series::E12.below(x), Ohms(12e3));
        assert_eq!(Series::E12.above(x), Ohms(15e3));
        assert_eq!(Series::E12.nearest(x), Ohms(15e3));
        assert_eq!(Series::E24.nearest(x), Ohms(15e3));
        assert_eq!(Series::E96.nearest(x), Ohms(14_700.0));
        // Log distance, not linear: between 1k and 1k2 the midpoint in ratio is sqrt(1.2) k = 1095.4 Ω.
        assert_eq!(Series::E12.nearest(Ohms(1095.0)), Ohms(1000.0));
        assert_eq!(Series::E12.nearest(Ohms(1096.0)), Ohms(1200.0));
        // Exact values are their own neighbours, across decade edges too.
        assert_eq!(Series::E24.below(Ohms(1000.0)), Ohms(1000.0));
        assert_eq!(Series::E24.above(Ohms(9.5e3)), Ohms(10e3));
        assert_eq!(Series::E24.below(Ohms(9.95)), Ohms(9.1));
        assert!(Series::E192.contains(Ohms(9200.0)));
        assert!(!Series::E96.contains(Ohms(9200.0)));
    }

    #[test]
    fn parse_series_names() {
        assert_eq!("e24".parse::<Series>(), Ok(Series::E24));
        assert_eq!("E192".parse::<Series>(), Ok(Series::E192));
        assert!("E25".parse::<Series>().is_err());
    }
}
