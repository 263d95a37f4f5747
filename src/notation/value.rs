//! Resistance values as people write them: the IEC 60062 letter-and-digit code (4k7, 470R, R47, 2M2), plain
//! and scientific numbers (4700, 4.7e3), SI prefixes (4.7k, 1.5 kΩ) and spelled-out units (330 ohm, 10 kohm).
//!
//! Parsing builds a decimal string and lets the standard library round it once, so "4k7", "4.7k", "4700" and
//! "4.7e3" give the very same `f64` and stock rows written differently still merge.

use crate::units::Ohms;
use std::fmt;

/// The smallest resistance biasfit accepts (1 mΩ).
pub const MIN_OHMS: f64 = 1e-3;
/// The largest resistance biasfit accepts (1 TΩ).
pub const MAX_OHMS: f64 = 1e12;

/// A resistance that could not be read, with the text and the reason.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("\"{}\" is not a resistance: {reason}; expected a value such as 4k7, 470R, R47, 2M2, 4.7k or 4700", super::text::excerpt(.input))]
pub struct ValueError {
    /// The text as given.
    pub input: String,
    /// Why it was refused.
    pub reason: String,
}

fn refuse(input: &str, reason: impl Into<String>) -> ValueError {
    ValueError {
        input: input.to_string(),
        reason: reason.into(),
    }
}

/// The power of ten that a multiplier letter stands for.
fn multiplier(c: char, had_unit: bool) -> Option<Result<i32, &'static str>> {
    Some(Ok(match c {
        'R' | 'r' => 0,
        'k' | 'K' => 3,
        'M' => 6,
        'G' | 'g' => 9,
        'T' | 't' => 12,
        'm' if had_unit => -3,
        'm' => {
            return Some(Err(
                "'m' is ambiguous: write M for megohms (1M) or mΩ for milliohms (1 mΩ)",
            ))
        }
        _ => return None,
    }))
}

/// Strips a trailing unit word (Ω or the ohm sign Ω, ohm, ohms, in any case) and says whether one was there.
fn strip_unit(s: &str) -> (&str, bool) {
    // U+2126 OHM SIGN looks like the Greek capital omega that most keyboards give, and Unicode treats the
    // two as the same letter; some symbol pickers and word processors give the sign.
    if let Some(rest) = s.strip_suffix('\u{2126}') {
        return (rest.trim_end(), true);
    }
    let lower = s.to_lowercase();
    for unit in ["ohms", "ohm", "Ω", "ω"] {
        if lower.ends_with(unit) && lower.len() >= unit.len() {
            // The unit words are ASCII or a single code point in both cases, so byte lengths agree.
            let cut = s.len() - unit.len();
            if s.is_char_boundary(cut) {
                return (s[..cut].trim_end(), true);
            }
        }
    }
    (s, false)
}

fn is_plain_number(s: &str) -> bool {
    let mut digits = 0;
    let mut dots = 0;
    let mut exp = false;
    let mut prev = ' ';
    for (i, c) in s.chars().enumerate() {
        match c {
            '0'..='9' => digits += 1,
            '.' if !exp => dots += 1,
            'e' | 'E' if !exp && digits > 0 => exp = true,
            '+' | '-' if i > 0 && (prev == 'e' || prev == 'E') => {}
            _ => return false,
        }
        prev = c;
    }
    digits > 0 && dots <= 1 && !s.ends_with(['e', 'E', '+', '-'])
}

/// Reads a resistance in any of the forms the trade uses.
pub fn parse_ohms(input: &str) -> Result<Ohms, ValueError> {
    let s = input.trim();
    if s.is_empty() {
        return Err(refuse(input, "it is empty"));
    }
    if s.starts_with('-') {
        return Err(refuse(input, "a resistance must be positive"));
    }
    let s = s.strip_prefix('+').unwrap_or(s);
    let (mut body, had_unit) = strip_unit(s);
    let mut exponent = 0i32;
    let lower = body.to_lowercase();
    if lower.ends_with("meg") {
        body = body[..body.len() - 3].trim_end();
        exponent = 6;
        if !is_plain_number(body) {
            return Err(refuse(
                input,
                "'meg' must follow a plain number, as in 2.2meg",
            ));
        }
    }
    let text = if exponent == 6 {
        format!("{body}e6")
    } else {
        let letters: Vec<(usize, char)> = body
            .char_indices()
            .filter(|(_, c)| !c.is_ascii_digit() && !matches!(c, '.' | 'e' | 'E' | '+' | '-' | ' '))
            .collect();
        // A character that is neither part of a number nor a multiplier (a stray ';', the N of NaN) is named
        // as such, rather than counted as a second multiplier.
        if let Some((_, c)) = letters
            .iter()
            .find(|(_, c)| multiplier(*c, had_unit).is_none())
        {
            return Err(refuse(
                input,
                if *c == ',' {
                    "a decimal comma is not read: write a point (4.7k) or the letter code (4k7)"
                        .to_string()
                } else {
                    format!("'{c}' is not a digit or a multiplier letter (R, k, M, G, T)")
                },
            ));
        }
        match letters.as_slice() {
            [] => {
                if !is_plain_number(body) {
                    return Err(refuse(input, "it is not a number"));
                }
                body.to_string()
            }
            [(at, c)] => {
                let power = match multiplier(*c, had_unit) {
                    Some(Ok(p)) => p,
                    Some(Err(why)) => return Err(refuse(input, why)),
                    None => {
                        return Err(refuse(
                            input,
                            format!("'{c}' is not a multiplier letter (R, k, M, G, T)"),
                        ))
                    }
                };
                let left = body[..*at].trim_end();
                let right = &body[*at + c.len_utf8()..];
                if right.is_empty() {
                    if !is_plain_number(left) {
                        return Err(refuse(input, "the multiplier must follow a number"));
                    }
                    if left.contains(['e', 'E']) {
                        return Err(refuse(
                            input,
                            "write an exponent or a multiplier letter, not both (4.7e3 or 4k7)",
                        ));
                    }
                    format!("{left}e{power}")
                } else {
                    // Letter-as-decimal-point form: digits, letter, digits (4k7, R47, 0R47).
                    let all_digits = |t: &str| t.chars().all(|c| c.is_ascii_digit());
                    if !all_digits(left) || !all_digits(right) {
                        return Err(refuse(
                            input,
                            "in the letter code the letter stands for the decimal point, with only digits around it",
                        ));
                    }
                    let left = if left.is_empty() { "0" } else { left };
                    format!("{left}.{right}e{power}")
                }
            }
            _ => return Err(refuse(input, "it has more than one multiplier letter")),
        }
    };
    let value: f64 = text
        .parse()
        .map_err(|_| refuse(input, "it is not a number"))?;
    if !value.is_finite() {
        return Err(refuse(input, "it is not finite"));
    }
    if value <= 0.0 {
        return Err(refuse(input, "a resistance must be greater than zero"));
    }
    if !(MIN_OHMS..=MAX_OHMS).contains(&value) {
        return Err(refuse(input, "it is outside 1 mΩ to 1 TΩ"));
    }
    Ok(Ohms(value))
}

/// Rounds `x` to `sig` significant digits.
pub fn round_sig(x: f64, sig: u32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    // Round through a decimal string: scaling by powers of ten would add an error of its own.
    format!("{:.*e}", (sig.max(1) - 1) as usize, x)
        .parse()
        .unwrap_or(x)
}

/// The letter code of a resistance rounded to `sig` significant digits, trailing zeros dropped (4k7, 470R,
/// R47, 2M2, 10k).
pub fn code_with(ohms: Ohms, sig: u32) -> String {
    let x = round_sig(ohms.0, sig.max(1));
    let (letter, power) = if x >= 1e12 {
        ('T', 12)
    } else if x >= 1e9 {
        ('G', 9)
    } else if x >= 1e6 {
        ('M', 6)
    } else if x >= 1e3 {
        ('k', 3)
    } else {
        ('R', 0)
    };
    // Digits of the rounded value, as an exact decimal string.
    let scaled = format!("{:.*e}", (sig.max(1) - 1) as usize, x);
    let (mantissa, exp) = scaled.split_once('e').unwrap_or((&scaled, "0"));
    let exp: i32 = exp.parse().unwrap_or(0);
    let digits: String = mantissa.chars().filter(|c| c.is_ascii_digit()).collect();
    // Position of the decimal point within `digits`, relative to the chosen multiplier.
    let point = exp - power + 1;
    let (int_part, frac_part) = if point <= 0 {
        (
            String::new(),
            format!("{}{}", "0".repeat((-point) as usize), digits),
        )
    } else if point as usize >= digits.len() {
        (
            format!("{}{}", digits, "0".repeat(point as usize - digits.len())),
            String::new(),
        )
    } else {
        (
            digits[..point as usize].to_string(),
            digits[point as usize..].to_string(),
        )
    };
    let frac = frac_part.trim_end_matches('0');
    let int_part = int_part.trim_start_matches('0');
    match (int_part.is_empty(), frac.is_empty()) {
        (true, true) => format!("0{letter}"),
        (false, true) => format!("{int_part}{letter}"),
        (true, false) => format!("{letter}{frac}"),
        (false, false) => format!("{int_part}{letter}{frac}"),
    }
}

/// The canonical short code of a resistance: 3 significant digits, or up to 6 where the value needs them to
/// be exact (E192 values, series sums); a value no 6-digit code states exactly gets 4 digits.
pub fn code(ohms: Ohms) -> String {
    for sig in 3..=6 {
        let r = round_sig(ohms.0, sig);
        if ((r - ohms.0) / ohms.0).abs() < 1e-12 {
            return code_with(ohms, sig);
        }
    }
    code_with(ohms, 4)
}

/// Displays a resistance as its canonical code.
pub struct Code(pub Ohms);

impl fmt::Display for Code {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.pad(&code(self.0))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn ok(s: &str) -> f64 {
        parse_ohms(s).unwrap_or_else(|e| panic!("{s}: {e}")).0
    }

    #[test]
    fn every_written_form_parses() {
        let cases = [
            ("4k7", 4700.0),
            ("4K7", 4700.0),
            ("4.7k", 4700.0),
            ("4700", 4700.0),
            ("4.7e3", 4700.0),
            ("470R", 470.0),
            ("R47", 0.47),
            ("0R47", 0.47),
            ("2M2", 2.2e6),
            ("1M", 1e6),
            ("1G", 1e9),
            ("1.5 kΩ", 1500.0),
            ("330 ohm", 330.0),
            ("10 kohm", 10e3),
            ("10kΩ", 10e3),
            ("4R7", 4.7),
            ("2.2meg", 2.2e6),
            ("100 Ohms", 100.0),
            ("  56k ", 56e3),
            ("1 mΩ", 1e-3),
            ("1T", 1e12),
        ];
        for (s, want) in cases {
            let got = ok(s);
            assert!(((got - want) / want).abs() < 1e-15, "{s}: {got} != {want}");
        }
    }

    #[test]
    fn the_ohm_sign_reads_like_the_greek_capital_omega() {
        // U+2126 OHM SIGN and U+03A9 GREEK CAPITAL LETTER OMEGA look alike; Unicode maps the sign to the
        // letter (canonical equivalence), so both must read the same.
        for (sign, letter) in [
            ("4k7\u{2126}", "4k7\u{3a9}"),
            ("1.5 k\u{2126}", "1.5 k\u{3a9}"),
            ("330 \u{2126}", "330 \u{3a9}"),
            ("1 m\u{2126}", "1 m\u{3a9}"),
        ] {
            assert_eq!(
                parse_ohms(sign).unwrap(),
                parse_ohms(letter).unwrap(),
                "{sign}"
            );
        }
        assert_eq!(parse_ohms("4k7\u{2126}").unwrap(), Ohms(4700.0));
    }

    #[test]
    fn equal_values_give_identical_floats() {
        // Stock rows merge on equality, so every spelling must round to the same f64.
        for s in ["4k7", "4.7k", "4700", "4.7e3", "4K7", "4.7 kΩ", "4700R"] {
            assert_eq!(ok(s), 4700.0, "{s}");
        }
        assert_eq!(ok("R47"), 0.47);
        assert_eq!(ok("0R47"), ok("0.47"));
    }

    #[test]
    fn refuses_bad_values_with_the_input_quoted() {
        for s in [
            "0", "0R", "-4k7", "NaN", "nan", "inf", "-inf", "infinity", "", "   ", "4k7k", "1..2k",
            "1e30", "0.0001", "2T", "k", "4x7", "1.2.3", "4.7k7", "1m", "e3", "4e", "--1", "1e-",
        ] {
            let err = parse_ohms(s).expect_err(s);
            assert!(err.to_string().contains(&format!("\"{s}\"")), "{err}");
            assert!(
                err.to_string().contains("expected a value such as"),
                "{err}"
            );
        }
    }

    #[test]
    fn the_reason_names_the_offending_character() {
        for (s, reason) in [
            ("4k7;10", "';' is not a digit or a multiplier letter"),
            ("4,7k", "decimal comma"),
            ("NaN", "'N' is not a digit or a multiplier letter"),
            ("inf", "'i' is not a digit or a multiplier letter"),
            ("4k7k", "more than one multiplier letter"),
            ("1e3k", "an exponent or a multiplier letter, not both"),
        ] {
            let err = parse_ohms(s).unwrap_err();
            assert!(err.reason.contains(reason), "{s}: {err}");
        }
    }

    #[test]
    fn ambiguous_milli_is_explained() {
        let err = parse_ohms("1m").unwrap_err();
        assert!(err.reason.contains("ambiguous"));
    }

    #[test]
    fn prints_the_letter_code() {
        // IEC 60062, clause on the letter-and-digit code: the letter replaces the decimal point
        // (4K7 = 4.7 kΩ, R47 = 0.47 Ω, 2M2 = 2.2 MΩ).
        let cases = [
            (4700.0, "4k7"),
            (470.0, "470R"),
            (0.47, "R47"),
            (2.2e6, "2M2"),
            (10e3, "10k"),
            (1e3, "1k"),
            (100.0, "100R"),
            (4.7, "4R7"),
            (1e9, "1G"),
            (1e12, "1T"),
            (0.047, "R047"),
            (1e-3, "R001"),
            (14.6e3, "14k6"),
            (1.0, "1R"),
        ];
        for (v, want) in cases {
            assert_eq!(code(Ohms(v)), want, "{v}");
        }
    }

    #[test]
    fn extra_digits_only_when_needed() {
        // 4k7 + 220 = 4920 is exact in 3 digits; 4k7 + 22 = 4722 needs 4; 100k + 4 needs 6; 100k + 4.7
        // would need 7, so it falls back to 4.
        assert_eq!(code(Ohms(4920.0)), "4k92");
        assert_eq!(code(Ohms(4722.0)), "4k722");
        assert_eq!(code(Ohms(100_004.0)), "100k004");
        assert_eq!(code(Ohms(100_004.7)), "100k");
        assert_eq!(code(Ohms(1e3 / 3.0)), "333R3");
        assert_eq!(code_with(Ohms(4700.0), 3), "4k7");
    }

    proptest! {
        #[test]
        fn parse_print_round_trip(mantissa in 1.0f64..10.0, decade in -3i32..12, sig in 1u32..7) {
            let x = mantissa * 10f64.powi(decade);
            prop_assume!((MIN_OHMS..=MAX_OHMS).contains(&x));
            let printed = code_with(Ohms(x), sig);
            let back = parse_ohms(&printed).unwrap().0;
            let rel = ((back - x) / x).abs();
            // Rounding to `sig` digits moves a value by at most half a unit in the last place.
            prop_assert!(rel <= 0.5 * 10f64.powi(1 - sig as i32) * 1.000_001, "{} -> {} -> {}", x, printed, back);
            prop_assert_eq!(back, round_sig(x, sig));
        }

        #[test]
        fn canonical_code_round_trips(mantissa in 1.0f64..10.0, decade in -3i32..12) {
            let x = mantissa * 10f64.powi(decade);
            prop_assume!((MIN_OHMS..=MAX_OHMS).contains(&x));
            let back = parse_ohms(&code(Ohms(x))).unwrap().0;
            prop_assert!(((back - x) / x).abs() <= 5e-4 * 1.000_001);
        }

        #[test]
        fn parser_never_panics(s in "\\PC{0,12}") {
            let _ = parse_ohms(&s);
        }
    }
}
