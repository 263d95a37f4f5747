//! Physical quantities as types: resistance, voltage, current, power, temperature and tolerance.
//!
//! Every value that crosses a module boundary carries its unit in its type; bare `f64`s exist only inside a
//! formula. The arithmetic that the trade uses (Ohm's law, P = V·I) is implemented between the types, so that
//! `Volts / Ohms` gives `Amps` and a mix-up does not compile. All values are in SI base units. This module
//! depends on nothing else in the crate; how the quantities are printed (`Display`) lives in `notation`.

use serde::{Deserialize, Serialize};
use std::ops::{Add, Div, Mul, Neg, Sub};

macro_rules! quantity {
    ($(#[$doc:meta])* $name:ident, $symbol:expr) => {
        $(#[$doc])*
        #[derive(Clone, Copy, Debug, Default, PartialEq, PartialOrd, Serialize, Deserialize)]
        #[serde(transparent)]
        pub struct $name(pub f64);

        impl $name {
            /// The unit's symbol, for printing (the printing itself lives in `notation`).
            pub const SYMBOL: &'static str = $symbol;

            /// The value in SI base units.
            pub fn get(self) -> f64 {
                self.0
            }
            /// The absolute value.
            pub fn abs(self) -> Self {
                Self(self.0.abs())
            }
            /// The larger of two values.
            pub fn max(self, other: Self) -> Self {
                Self(self.0.max(other.0))
            }
            /// The smaller of two values.
            pub fn min(self, other: Self) -> Self {
                Self(self.0.min(other.0))
            }
        }

        impl Add for $name {
            type Output = Self;
            fn add(self, rhs: Self) -> Self {
                Self(self.0 + rhs.0)
            }
        }
        impl Sub for $name {
            type Output = Self;
            fn sub(self, rhs: Self) -> Self {
                Self(self.0 - rhs.0)
            }
        }
        impl Neg for $name {
            type Output = Self;
            fn neg(self) -> Self {
                Self(-self.0)
            }
        }
        impl Mul<f64> for $name {
            type Output = Self;
            fn mul(self, rhs: f64) -> Self {
                Self(self.0 * rhs)
            }
        }
        impl Mul<$name> for f64 {
            type Output = $name;
            fn mul(self, rhs: $name) -> $name {
                $name(self * rhs.0)
            }
        }
        impl Div<f64> for $name {
            type Output = Self;
            fn div(self, rhs: f64) -> Self {
                Self(self.0 / rhs)
            }
        }
        /// A ratio of two like quantities is a plain number.
        impl Div for $name {
            type Output = f64;
            fn div(self, rhs: Self) -> f64 {
                self.0 / rhs.0
            }
        }
    };
}

quantity!(
    /// A resistance in ohms.
    Ohms,
    "Ω"
);
quantity!(
    /// A potential difference in volts.
    Volts,
    "V"
);
quantity!(
    /// A current in amperes.
    Amps,
    "A"
);
quantity!(
    /// A power in watts.
    Watts,
    "W"
);
quantity!(
    /// A temperature in degrees Celsius (a difference of 1 °C equals 1 K).
    Celsius,
    "°C"
);

impl Div<Ohms> for Volts {
    type Output = Amps;
    fn div(self, rhs: Ohms) -> Amps {
        Amps(self.0 / rhs.0)
    }
}
impl Div<Amps> for Volts {
    type Output = Ohms;
    fn div(self, rhs: Amps) -> Ohms {
        Ohms(self.0 / rhs.0)
    }
}
impl Mul<Ohms> for Amps {
    type Output = Volts;
    fn mul(self, rhs: Ohms) -> Volts {
        Volts(self.0 * rhs.0)
    }
}
impl Mul<Amps> for Ohms {
    type Output = Volts;
    fn mul(self, rhs: Amps) -> Volts {
        Volts(self.0 * rhs.0)
    }
}
impl Mul<Amps> for Volts {
    type Output = Watts;
    fn mul(self, rhs: Amps) -> Watts {
        Watts(self.0 * rhs.0)
    }
}
impl Mul<Volts> for Amps {
    type Output = Watts;
    fn mul(self, rhs: Volts) -> Watts {
        Watts(self.0 * rhs.0)
    }
}

impl Ohms {
    /// Two resistances in series.
    pub fn series(self, other: Ohms) -> Ohms {
        Ohms(self.0 + other.0)
    }
    /// Two resistances in parallel.
    pub fn parallel(self, other: Ohms) -> Ohms {
        Ohms(self.0 * other.0 / (self.0 + other.0))
    }
    /// The power dissipated with `current` flowing through this resistance (P = I²R).
    pub fn power_at_current(self, current: Amps) -> Watts {
        Watts(current.0 * current.0 * self.0)
    }
    /// The power dissipated with `voltage` across this resistance (P = V²/R).
    pub fn power_at_voltage(self, voltage: Volts) -> Watts {
        Watts(voltage.0 * voltage.0 / self.0)
    }
}

/// A symmetric tolerance, stored as a fraction (0.05 means ±5 %).
#[derive(Clone, Copy, Debug, Default, PartialEq, PartialOrd, Serialize, Deserialize)]
#[serde(transparent)]
pub struct Tolerance(pub f64);

impl Tolerance {
    /// The tolerance as a fraction of the nominal value.
    pub fn fraction(self) -> f64 {
        self.0
    }
    /// The tolerance in percent.
    pub fn percent(self) -> f64 {
        self.0 * 100.0
    }
}

/// Supplies at or above this are beyond safe extra-low voltage (50 V DC, the limit the project's brief
/// sets), and every report that sees one prints a caution. The one place the threshold is written.
pub const SAFE_EXTRA_LOW_VOLTAGE: Volts = Volts(50.0);

/// The thermal voltage kT/q at a temperature.
///
/// k = 1.380 649 × 10⁻²³ J/K and q = 1.602 176 634 × 10⁻¹⁹ C are exact in the 2019 SI (CODATA 2018).
pub fn thermal_voltage(t: Celsius) -> Volts {
    const BOLTZMANN: f64 = 1.380_649e-23;
    const ELEMENTARY_CHARGE: f64 = 1.602_176_634e-19;
    const ZERO_CELSIUS_IN_KELVIN: f64 = 273.15;
    Volts(BOLTZMANN * (t.0 + ZERO_CELSIUS_IN_KELVIN) / ELEMENTARY_CHARGE)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ohms_law_identities() {
        let v = Volts(12.0);
        let r = Ohms(4700.0);
        let i = v / r;
        assert!(((i * r).0 - v.0).abs() < 1e-12);
        assert!(((v / i).0 - r.0).abs() < 1e-9);
        assert!(((v * i).0 - r.power_at_voltage(v).0).abs() < 1e-15);
        assert!((r.power_at_current(i).0 - r.power_at_voltage(v).0).abs() < 1e-15);
    }

    #[test]
    fn series_and_parallel_by_hand() {
        // 4k7 + 220 = 4920 Ω; 10k | 10k = 5k; 1k | 2k = 666.67 Ω (hand arithmetic).
        assert_eq!(Ohms(4700.0).series(Ohms(220.0)), Ohms(4920.0));
        assert_eq!(Ohms(10e3).parallel(Ohms(10e3)), Ohms(5e3));
        assert!((Ohms(1e3).parallel(Ohms(2e3)).0 - 2000.0 / 3.0).abs() < 1e-9);
    }

    #[test]
    fn thermal_voltage_matches_codata() {
        // kT/q at 300 K is 25.852 mV (computed from the exact CODATA 2018 constants: 1.380649e-23 * 300 /
        // 1.602176634e-19 = 0.0258520 V).
        let vt = thermal_voltage(Celsius(300.0 - 273.15));
        assert!((vt.0 - 0.025_852_0).abs() < 1e-7, "{}", vt.0);
    }
}
