//! Voltages, currents, powers and tolerances as people write them ("12V", "2mA", "1/4W", "250mW", "5%", "J"),
//! and engineering notation for printing any quantity ("2.45 mA", "350 mW").

use crate::units::{Amps, Celsius, Ohms, Tolerance, Volts, Watts};
use std::fmt;

/// Every quantity prints in engineering notation with its unit's symbol ("2.45 mA").
macro_rules! display_engineering {
    ($($name:ident),*) => {$(
        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(&engineering(self.0, $name::SYMBOL))
            }
        }
    )*};
}
display_engineering!(Ohms, Volts, Amps, Watts, Celsius);

/// A tolerance prints as a percentage to three significant digits ("0.5 %").
impl fmt::Display for Tolerance {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} %", trim_number(self.percent(), 3))
    }
}

/// A quantity that could not be read, with the text, what it should be and why.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("\"{}\" is not a {what}: {reason}; expected {example}", super::text::excerpt(.input))]
pub struct QuantityError {
    /// The text as given.
    pub input: String,
    /// The kind of quantity wanted ("power", "tolerance", …).
    pub what: &'static str,
    /// Why it was refused.
    pub reason: String,
    /// Examples of what is accepted.
    pub example: &'static str,
}

/// The power of ten an SI prefix stands for.
fn prefix_power(c: char) -> Option<i32> {
    Some(match c {
        'p' => -12,
        'n' => -9,
        'u' | 'µ' | 'μ' => -6,
        'm' => -3,
        'k' | 'K' => 3,
        'M' => 6,
        'G' => 9,
        _ => return None,
    })
}

/// Reads `number [prefix] [unit]`, such as "2.5 mA", "12V", "0.35W" or "-12". The unit letter is optional.
fn parse_si(
    input: &str,
    unit: char,
    what: &'static str,
    example: &'static str,
) -> Result<f64, QuantityError> {
    let refuse = |reason: &str| QuantityError {
        input: input.to_string(),
        what,
        reason: reason.to_string(),
        example,
    };
    let mut s = input.trim();
    if s.is_empty() {
        return Err(refuse("it is empty"));
    }
    if let Some(rest) = s
        .strip_suffix(unit)
        .or_else(|| s.strip_suffix(unit.to_ascii_lowercase()))
    {
        s = rest.trim_end();
    }
    let mut power = 0;
    if let Some(last) = s.chars().last() {
        if let Some(p) = prefix_power(last) {
            power = p;
            s = s[..s.len() - last.len_utf8()].trim_end();
        }
    }
    let valid = !s.is_empty()
        && s.chars()
            .all(|c| c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '+' | '-'))
        && s.chars().any(|c| c.is_ascii_digit());
    if !valid {
        // "0.25 V" for a power: a number followed by the wrong letter is told which letter, and what fits.
        let numeric_start =
            s.starts_with(|c: char| c.is_ascii_digit() || matches!(c, '.' | '-' | '+'));
        // The last such letter: in "2mV" for a current the m is a fine prefix and the V the wrong unit.
        let stray = s.chars().rev().find(|c| {
            !(c.is_ascii_digit() || c.is_whitespace() || matches!(c, '.' | 'e' | 'E' | '+' | '-'))
        });
        return Err(match stray {
            Some(c) if numeric_start => refuse(&format!(
                "'{c}' is not an SI prefix (p, n, u, m, k, M, G) or the unit {unit}"
            )),
            _ => refuse("it is not a number with an optional prefix and unit"),
        });
    }
    // One decimal string, rounded once by the standard library: a written exponent and the prefix's add up.
    let (mantissa, exponent) = match s.split_once(['e', 'E']) {
        Some((m, e)) => (
            m,
            e.parse::<i32>().map_err(|_| refuse("it is not a number"))?,
        ),
        None => (s, 0),
    };
    let value: f64 = format!("{mantissa}e{}", exponent.saturating_add(power))
        .parse()
        .map_err(|_| refuse("it is not a number"))?;
    if !value.is_finite() {
        return Err(refuse("it is too large to be a quantity"));
    }
    Ok(value)
}

/// Reads a voltage ("12", "12V", "-12 V", "650mV").
pub fn parse_volts(input: &str) -> Result<Volts, QuantityError> {
    parse_si(input, 'V', "voltage", "a voltage such as 12V, 650mV or -12").map(Volts)
}

/// Reads a current ("2mA", "100 µA", "0.002").
pub fn parse_amps(input: &str) -> Result<Amps, QuantityError> {
    parse_si(
        input,
        'A',
        "current",
        "a current such as 2mA, 150uA or 0.002",
    )
    .map(Amps)
}

/// Reads a power rating: "0.25W", "1/4W", "250mW", "0.6 W". It must lie between 1 mW and 10 kW.
pub fn parse_watts(input: &str) -> Result<Watts, QuantityError> {
    let value = parse_power(input)?.0;
    if !(1e-3..=1e4).contains(&value) {
        return Err(QuantityError {
            input: input.to_string(),
            what: "power",
            reason: "it is outside 1 mW to 10 kW".to_string(),
            example: POWER_EXAMPLE,
        });
    }
    Ok(Watts(value))
}

const POWER_EXAMPLE: &str = "a power such as 0.25W, 1/4W, 250mW or 0.6 W";

/// Reads a power in the same forms as [`parse_watts`], with any value above zero: a dissipation, unlike a
/// rating, may be tiny.
pub fn parse_power(input: &str) -> Result<Watts, QuantityError> {
    let refuse = |reason: &str| QuantityError {
        input: input.to_string(),
        what: "power",
        reason: reason.to_string(),
        example: POWER_EXAMPLE,
    };
    let t = input.trim();
    let value = if let Some((num, den)) = t.split_once('/') {
        let den = den.trim().trim_end_matches(['W', 'w']).trim_end();
        let (n, d): (f64, f64) = match (num.trim().parse(), den.parse()) {
            (Ok(n), Ok(d)) => (n, d),
            _ => return Err(refuse("a fraction needs whole numbers, as in 1/4W")),
        };
        if d == 0.0 {
            return Err(refuse("the fraction divides by zero"));
        }
        n / d
    } else {
        parse_si(input, 'W', "power", POWER_EXAMPLE)?
    };
    if !value.is_finite() || value <= 0.0 {
        return Err(refuse("a power must be greater than zero"));
    }
    Ok(Watts(value))
}

/// The IEC 60062 tolerance letters (from memory of the standard's table for resistors).
pub const TOLERANCE_LETTERS: [(char, f64); 11] = [
    ('L', 0.0001),
    ('P', 0.0002),
    ('W', 0.0005),
    ('B', 0.001),
    ('C', 0.0025),
    ('D', 0.005),
    ('F', 0.01),
    ('G', 0.02),
    ('J', 0.05),
    ('K', 0.10),
    ('M', 0.20),
];

/// The finest tolerance read (0.001 %): ten times finer than the finest IEC 60062 letter (L, 0.01 %), so only a
/// slip (1e-308, a lost percent sign on a tiny number) is refused.
pub const MIN_TOLERANCE: f64 = 1e-5;

/// Reads a tolerance: "5%", "1 %", "±1%", a fraction "0.05", or an IEC 60062 letter (F, G, J, K…).
///
/// A bare number is a fraction, so it must be below 1; "5" alone is refused rather than guessed.
pub fn parse_tolerance(input: &str) -> Result<Tolerance, QuantityError> {
    const EXAMPLE: &str =
        "a tolerance such as 5%, 1 %, 0.05 or an IEC 60062 letter (F = 1 %, J = 5 %)";
    let refuse = |reason: &str| QuantityError {
        input: input.to_string(),
        what: "tolerance",
        reason: reason.to_string(),
        example: EXAMPLE,
    };
    let t = input.trim();
    let t = t
        .strip_prefix('±')
        .or_else(|| t.strip_prefix("+/-"))
        .unwrap_or(t)
        .trim();
    if t.is_empty() {
        return Err(refuse("it is empty"));
    }
    if t.starts_with(['-', '−']) {
        return Err(refuse(
            "a tolerance is a ± band and takes no sign (5% means ±5 %)",
        ));
    }
    let mut chars = t.chars();
    if let (Some(c), None) = (chars.next(), chars.next()) {
        if c.is_ascii_alphabetic() {
            return TOLERANCE_LETTERS
                .iter()
                .find(|(l, _)| *l == c.to_ascii_uppercase())
                .map(|&(_, f)| Tolerance(f))
                .ok_or_else(|| refuse("it is not an IEC 60062 tolerance letter"));
        }
    }
    // Plain or scientific (0.05, 5e-2, 1e-3 %); no sign, no inf or nan.
    let number_ok = |s: &str| {
        s.starts_with(|c: char| c.is_ascii_digit() || c == '.')
            && s.chars().any(|c| c.is_ascii_digit())
            && s.chars()
                .all(|c| c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '+' | '-'))
    };
    let fraction: f64 = if let Some(p) = t.strip_suffix('%') {
        let p = p.trim_end();
        if !number_ok(p) {
            return Err(refuse("it is not a number"));
        }
        // One decimal string, rounded once: "1.1%" is read as 1.1e-2, not as 1.1 then divided by 100.
        let text = match p.split_once(['e', 'E']) {
            Some((m, e)) => {
                let e: i32 = e.parse().map_err(|_| refuse("it is not a number"))?;
                format!("{m}e{}", e.saturating_sub(2))
            }
            None => format!("{p}e-2"),
        };
        text.parse().map_err(|_| refuse("it is not a number"))?
    } else {
        if !number_ok(t) {
            return Err(refuse("it is not a number"));
        }
        let f: f64 = t.parse().map_err(|_| refuse("it is not a number"))?;
        if f >= 1.0 {
            return Err(refuse(
                "a bare number is a fraction; write a percentage with % (5%)",
            ));
        }
        f
    };
    if fraction > 0.0 && fraction < MIN_TOLERANCE {
        return Err(refuse(&format!(
            "it is {} %, far finer than any resistor is made (the finest IEC 60062 letter, L, is 0.01 %); \
             a tolerance must be from 0.001 % to 50 %",
            scientific(fraction * 100.0, 3)
        )));
    }
    if !(fraction > 0.0 && fraction <= 0.5) {
        return Err(refuse("a tolerance must be above 0 and at most 50 %"));
    }
    Ok(Tolerance(fraction))
}

/// Formats a number with up to `sig` significant digits, dropping trailing zeros ("2.45", "12", "0.35").
pub fn trim_number(x: f64, sig: u32) -> String {
    if x == 0.0 {
        // -0 is 0 to a reader.
        return "0".to_string();
    }
    if !x.is_finite() {
        return format!("{x}");
    }
    let magnitude = x.abs().log10().floor() as i32;
    if !(-12..15).contains(&magnitude) {
        return scientific(x, sig);
    }
    let decimals = (sig as i32 - 1 - magnitude).max(0) as usize;
    let s = format!("{:.*}", decimals, super::value::round_sig(x, sig));
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Scientific notation with up to `sig` significant digits ("1.5e300"), for magnitudes no prefix covers:
/// written out in full they would run to hundreds of digits.
fn scientific(x: f64, sig: u32) -> String {
    let s = format!("{:.*e}", (sig.max(1) - 1) as usize, x);
    match s.split_once('e') {
        Some((m, e)) if m.contains('.') => {
            format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
        }
        _ => s,
    }
}

/// Volts in engineering notation ("1.85 V"), as every table and sheet shows a voltage.
pub fn volts(x: f64) -> String {
    engineering(x, "V")
}

/// Amps in engineering notation ("2.01 mA").
pub fn amps(x: f64) -> String {
    engineering(x, "A")
}

/// A relative deviation as a signed percentage with two decimals ("+0.09 %", "-3.14 %"); below 0.0005 %
/// (rounding, not a deviation) "0 %", and "∞" where there is no finite figure.
pub fn signed_percent(x: f64) -> String {
    if !x.is_finite() {
        return "∞".into();
    }
    let p = x * 100.0;
    if p.abs() < 0.0005 {
        "0 %".into()
    } else {
        format!("{:+.2} %", p)
    }
}

/// Formats a quantity in engineering notation with 3 significant digits: "2.45 mA", "12 V", "350 mW";
/// beyond the prefixes p to T, in scientific notation ("1e-300 A").
pub fn engineering(x: f64, unit: &str) -> String {
    if x == 0.0 {
        return format!("0 {unit}");
    }
    if !x.is_finite() {
        return format!("{x} {unit}");
    }
    const PREFIXES: [(i32, &str); 9] = [
        (-12, "p"),
        (-9, "n"),
        (-6, "µ"),
        (-3, "m"),
        (0, ""),
        (3, "k"),
        (6, "M"),
        (9, "G"),
        (12, "T"),
    ];
    let rounded = super::value::round_sig(x, 3);
    let magnitude = rounded.abs().log10().floor() as i32;
    if !(-12..15).contains(&magnitude) {
        return format!("{} {unit}", scientific(rounded, 3));
    }
    let power = (magnitude.div_euclid(3) * 3).clamp(-12, 12);
    let prefix = PREFIXES
        .iter()
        .find(|(p, _)| *p == power)
        .map_or("", |(_, s)| s);
    format!(
        "{} {prefix}{unit}",
        trim_number(rounded / 10f64.powi(power), 3)
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tolerances_in_scientific_form_and_the_smallest_one() {
        assert_eq!(parse_tolerance("5e-2").unwrap(), Tolerance(0.05));
        assert_eq!(parse_tolerance("1e0%").unwrap(), Tolerance(0.01));
        assert_eq!(parse_tolerance("1.1%").unwrap(), Tolerance(0.011));
        // L, the finest IEC 60062 letter, is 0.01 %; the floor sits ten times below it.
        assert_eq!(parse_tolerance("L").unwrap(), Tolerance(0.0001));
        assert_eq!(parse_tolerance("0.001%").unwrap(), Tolerance(1e-5));
        for tiny in ["1e-308", "1e-308%", "0.0009%", "1e-6"] {
            let e = parse_tolerance(tiny).unwrap_err().to_string();
            assert!(
                e.contains("far finer than any resistor is made"),
                "{tiny}: {e}"
            );
            assert!(e.contains("from 0.001 % to 50 %"), "{tiny}: {e}");
        }
        for bad in ["1e", "e5", "inf", "nan", "5%%"] {
            assert!(parse_tolerance(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn powers_in_every_written_form() {
        for (s, want) in [
            ("0.25W", 0.25),
            ("1/4W", 0.25),
            ("1/8 W", 0.125),
            ("250mW", 0.25),
            ("0.6 W", 0.6),
            ("2W", 2.0),
            ("0.5", 0.5),
            ("1/2w", 0.5),
        ] {
            assert!((parse_watts(s).unwrap().0 - want).abs() < 1e-15, "{s}");
        }
        for s in ["", "0W", "-1W", "1/0W", "a/4W", "quarter", "1e9W", "NaN"] {
            assert!(parse_watts(s).is_err(), "{s}");
        }
        // A dissipation may be far below any rating.
        assert!((parse_power("200uW").unwrap().0 - 200e-6).abs() < 1e-18);
        assert!(parse_watts("200uW").is_err());
        for s in ["", "0W", "-1W", "1/0W", "NaN"] {
            assert!(parse_power(s).is_err(), "{s}");
        }
    }

    #[test]
    fn tolerances_in_every_written_form() {
        for (s, want) in [
            ("5%", 0.05),
            ("1 %", 0.01),
            ("0.05", 0.05),
            ("±1%", 0.01),
            ("0.1%", 0.001),
            ("F", 0.01),
            ("J", 0.05),
            ("k", 0.10),
            ("G", 0.02),
        ] {
            assert_eq!(parse_tolerance(s).unwrap().0, want, "{s}");
        }
        for s in ["", "5", "150%", "0%", "-5%", "Z", "five", "1.5"] {
            assert!(parse_tolerance(s).is_err(), "{s}");
        }
    }

    #[test]
    fn iec_60062_tolerance_letters() {
        // IEC 60062 tolerance code letters for resistors, from memory of the standard's table:
        // B ±0.1 %, C ±0.25 %, D ±0.5 %, F ±1 %, G ±2 %, J ±5 %, K ±10 %, M ±20 %.
        for (l, pct) in [
            ('B', 0.1),
            ('C', 0.25),
            ('D', 0.5),
            ('F', 1.0),
            ('G', 2.0),
            ('J', 5.0),
            ('K', 10.0),
            ('M', 20.0),
        ] {
            let t = parse_tolerance(&l.to_string()).unwrap();
            assert!((t.percent() - pct).abs() < 1e-12, "{l}");
        }
    }

    #[test]
    fn exponents_and_prefixes_add_up() {
        assert_eq!(parse_volts("1e3").unwrap().0, 1000.0);
        assert_eq!(parse_amps("2e-3").unwrap().0, 0.002);
        assert_eq!(parse_amps("2e3mA").unwrap().0, 2.0);
        assert_eq!(parse_volts("1.5E+1 V").unwrap().0, 15.0);
        assert_eq!(parse_volts("1e300").unwrap().0, 1e300);
        let e = parse_volts("1e400").unwrap_err();
        assert!(e.reason.contains("too large"), "{e}");
        for bad in ["1e", "1e+", "e3", "1e3.5", "1e99999999999"] {
            assert!(parse_volts(bad).is_err(), "{bad}");
        }
        let e = parse_watts("0.25 V").unwrap_err();
        assert!(e.reason.contains("'V' is not an SI prefix"), "{e}");
        let e = parse_amps("2mV").unwrap_err();
        assert!(e.reason.contains("'V' is not an SI prefix"), "{e}");
        let e = parse_volts("twelve").unwrap_err();
        assert!(e.reason.contains("not a number"), "{e}");
        let e = parse_tolerance("-5%").unwrap_err();
        assert!(e.reason.contains("no sign"), "{e}");
    }

    #[test]
    fn voltages_and_currents() {
        assert_eq!(parse_volts("12").unwrap().0, 12.0);
        assert_eq!(parse_volts("-12 V").unwrap().0, -12.0);
        assert!((parse_volts("650mV").unwrap().0 - 0.65).abs() < 1e-15);
        assert!((parse_amps("2mA").unwrap().0 - 0.002).abs() < 1e-18);
        assert!((parse_amps("150uA").unwrap().0 - 150e-6).abs() < 1e-18);
        assert!((parse_amps("150 µA").unwrap().0 - 150e-6).abs() < 1e-18);
        assert!(parse_amps("2 mV").is_err());
        assert!(parse_volts("twelve").is_err());
        assert!(parse_volts("").is_err());
    }

    #[test]
    fn engineering_notation() {
        assert_eq!(engineering(0.002_45, "A"), "2.45 mA");
        assert_eq!(engineering(12.0, "V"), "12 V");
        assert_eq!(engineering(0.35, "W"), "350 mW");
        assert_eq!(engineering(1.0e-5, "A"), "10 µA");
        assert_eq!(engineering(-12.0, "V"), "-12 V");
        assert_eq!(engineering(0.000_999_9, "A"), "1 mA");
        assert_eq!(engineering(4700.0, "Ω"), "4.7 kΩ");
        assert_eq!(trim_number(5.0, 3), "5");
        // Past the prefixes, scientific notation rather than hundreds of digits.
        assert_eq!(engineering(1e-300, "A"), "1e-300 A");
        assert_eq!(engineering(8.65e299, "Ω"), "8.65e299 Ω");
        assert_eq!(engineering(999e12, "Ω"), "999 TΩ");
        assert_eq!(trim_number(1e300, 6), "1e300");
        assert_eq!(trim_number(-1.5e-20, 6), "-1.5e-20");
        assert_eq!(trim_number(0.25, 3), "0.25");
    }

    #[test]
    fn signed_percent_shows_deviations_to_two_decimals() {
        assert_eq!(signed_percent(0.0009), "+0.09 %");
        assert_eq!(signed_percent(-0.0314), "-3.14 %");
        // Rounding noise is no deviation, and no finite figure is shown as one.
        assert_eq!(signed_percent(-1e-7), "0 %");
        assert_eq!(signed_percent(f64::INFINITY), "∞");
        assert_eq!(volts(1.85), "1.85 V");
        assert_eq!(amps(0.00201), "2.01 mA");
    }
}
