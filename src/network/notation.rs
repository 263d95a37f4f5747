//! The network notation used on the command line and in reports: `a+b` is series, `a|b` is parallel, and
//! parentheses group, as in `(220+47)|1k`. `|` binds tighter than `+`, the way × binds tighter than + and the
//! way 1/R adds up for parallel parts, so `1k+2k|2k` is 1k in series with (2k | 2k) = 2 kΩ. `||`, as the
//! trade writes "in parallel with" on paper (`2k2||180`), reads as `|`; biasfit always prints `|`.

use super::{Member, Network};
use crate::notation::value::{code, parse_ohms};
use crate::units::{Tolerance, Watts};
use itertools::Itertools;

/// A network notation that could not be read.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("\"{}\" is not a resistor network: {reason} (at character {position}); {expected}", crate::notation::text::excerpt(.input))]
pub struct NetworkError {
    /// The text as given.
    pub input: String,
    /// 1-based character position of the problem.
    pub position: usize,
    /// What went wrong.
    pub reason: String,
    /// What would have been accepted.
    pub expected: &'static str,
}

/// What a network is, for a refusal of its notation.
const NOTATION: &str =
    "expected values joined by + (series) and | (parallel), e.g. 10k+4k7 or (220+47)|1k";

/// The most resistors one network may have. biasfit's own designs use at most
/// [`crate::network::candidates::MAX_PARTS`] (3) a slot, and a network built by hand on a bench (a string of
/// equal parts to spread the dissipation, a trimmed ladder) rarely passes a dozen; 64 leaves a wide margin
/// above both while keeping every command on a network (the fault catalogue of `verify` has six faults a
/// member) well under a second. A longer "network" is a slip (a pasted list) or a probe, and is refused.
pub const MAX_MEMBERS: usize = 64;

struct Parser<'a> {
    input: &'a str,
    chars: Vec<char>,
    at: usize,
    tolerance: Tolerance,
    power: Watts,
    depth: usize,
    members: usize,
}

/// How deeply parentheses may nest: far beyond any real network, and a guard against stack exhaustion.
const MAX_DEPTH: usize = 32;

impl Parser<'_> {
    fn fail<T>(&self, reason: impl Into<String>) -> Result<T, NetworkError> {
        Err(NetworkError {
            input: self.input.to_string(),
            position: self.at + 1,
            reason: reason.into(),
            expected: NOTATION,
        })
    }

    fn skip_space(&mut self) {
        while self.at < self.chars.len() && self.chars[self.at].is_whitespace() {
            self.at += 1;
        }
    }

    fn peek(&mut self) -> Option<char> {
        self.skip_space();
        self.chars.get(self.at).copied()
    }

    fn expr(&mut self) -> Result<Network, NetworkError> {
        let mut parts = vec![self.term()?];
        while self.peek() == Some('+') {
            self.at += 1;
            parts.push(self.term()?);
        }
        Ok(join(parts, true))
    }

    fn term(&mut self) -> Result<Network, NetworkError> {
        let mut parts = vec![self.factor()?];
        while self.peek() == Some('|') {
            self.at += 1;
            if self.chars.get(self.at) == Some(&'|') {
                self.at += 1;
            }
            parts.push(self.factor()?);
        }
        Ok(join(parts, false))
    }

    fn factor(&mut self) -> Result<Network, NetworkError> {
        match self.peek() {
            Some('(') => {
                self.depth += 1;
                if self.depth > MAX_DEPTH {
                    return self.fail("parentheses nest too deeply");
                }
                self.at += 1;
                let inner = self.expr()?;
                if self.peek() != Some(')') {
                    return self.fail("a '(' is not closed");
                }
                self.at += 1;
                self.depth -= 1;
                Ok(inner)
            }
            None => self.fail("a value is missing at the end"),
            Some(c) if matches!(c, '+' | '|' | ')') => {
                self.fail(format!("a value is missing before '{c}'"))
            }
            Some(_) => {
                let start = self.at;
                while self.at < self.chars.len()
                    && !matches!(self.chars[self.at], '+' | '|' | '(' | ')')
                {
                    self.at += 1;
                }
                let text: String = self.chars[start..self.at].iter().collect();
                // A '+' right after an exponent's 'e' belongs to the number (4.7e+3).
                let text = if text.trim_end().ends_with(['e', 'E'])
                    && self.chars.get(self.at) == Some(&'+')
                    && text
                        .trim()
                        .chars()
                        .next()
                        .is_some_and(|c| c.is_ascii_digit())
                {
                    self.at += 1;
                    let more_start = self.at;
                    while self.at < self.chars.len() && self.chars[self.at].is_ascii_digit() {
                        self.at += 1;
                    }
                    let digits: String = self.chars[more_start..self.at].iter().collect();
                    format!("{text}+{digits}")
                } else {
                    text
                };
                self.members += 1;
                if self.members > MAX_MEMBERS {
                    self.at = start;
                    return Err(NetworkError {
                        input: self.input.to_string(),
                        position: start + 1,
                        reason: format!("it has more than {MAX_MEMBERS} resistors"),
                        expected: "expected at most 64 resistors in one network (far more than any bench network needs); check that the list is one slot's network",
                    });
                }
                match parse_ohms(&text) {
                    Ok(ohms) => Ok(Network::Single(Member::loose(
                        ohms,
                        self.tolerance,
                        self.power,
                    ))),
                    Err(e) => {
                        self.at = start;
                        self.fail(format!(
                            "\"{}\" is not a resistance: {}",
                            crate::notation::text::excerpt(text.trim()),
                            e.reason
                        ))
                    }
                }
            }
        }
    }
}

fn join(mut parts: Vec<Network>, series: bool) -> Network {
    if parts.len() == 1 {
        return parts.pop().expect("one part");
    }
    // Flatten a+(b+c) into a+b+c: the same circuit, one level shallower.
    let mut flat = Vec::new();
    for p in parts {
        match (p, series) {
            (Network::Series(inner), true) => flat.extend(inner),
            (Network::Parallel(inner), false) => flat.extend(inner),
            (other, _) => flat.push(other),
        }
    }
    if series {
        Network::Series(flat)
    } else {
        Network::Parallel(flat)
    }
}

/// Reads a network such as `10k+4k7`, `4k7|4k7` or `(220+47)|1k`; every member gets the given tolerance
/// and power rating.
pub fn parse_network(
    input: &str,
    tolerance: Tolerance,
    power: Watts,
) -> Result<Network, NetworkError> {
    let mut p = Parser {
        input,
        chars: input.chars().collect(),
        at: 0,
        tolerance,
        power,
        depth: 0,
        members: 0,
    };
    if p.peek().is_none() {
        return p.fail("it is empty");
    }
    let net = p.expr()?;
    if let Some(c) = p.peek() {
        return p.fail(format!("unexpected '{c}'"));
    }
    Ok(net)
}

/// Writing a network in the same notation, so that what biasfit prints can be pasted back into `--use`.
impl Network {
    /// The network in the `--use` notation: `a+b` is series, `a|b` parallel, parentheses where needed.
    pub fn notation(&self) -> String {
        self.notation_in(None)
    }

    fn notation_in(&self, parent: Option<bool>) -> String {
        match self {
            Network::Single(m) => code(m.ohms),
            Network::Series(parts) | Network::Parallel(parts) => {
                let series = matches!(self, Network::Series(_));
                let joined = parts
                    .iter()
                    .map(|p| p.notation_in(Some(series)))
                    .join(if series { "+" } else { "|" });
                // '|' binds tighter than '+', so only a series inside a parallel needs brackets; we also
                // bracket a parallel inside a series, since people read a+(b|c) faster than a+b|c.
                if parent.is_some() && parts.len() > 1 {
                    format!("({joined})")
                } else {
                    joined
                }
            }
        }
    }

    /// How to connect it, in words, for a build sheet.
    pub fn wiring(&self) -> String {
        match self {
            Network::Single(m) => format!("one {}", code(m.ohms)),
            Network::Series(parts) if parts.iter().all(|p| matches!(p, Network::Single(_))) => {
                format!("{} in series", parts.len())
            }
            Network::Parallel(parts) if parts.iter().all(|p| matches!(p, Network::Single(_))) => {
                format!("{} in parallel", parts.len())
            }
            _ => format!("as drawn: {}", self.notation()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Ohms;
    use proptest::prelude::*;

    fn parse(s: &str) -> Network {
        parse_network(s, Tolerance(0.05), Watts(0.25)).unwrap_or_else(|e| panic!("{e}"))
    }

    #[test]
    fn reads_series_parallel_and_groups() {
        assert_eq!(parse("4k7").ohms(), Ohms(4700.0));
        assert_eq!(parse("10k+4k7").ohms(), Ohms(14_700.0));
        assert_eq!(parse("10k|10k").ohms(), Ohms(5000.0));
        assert!((parse("(220+47)|1k").ohms().0 - 267_000.0 / 1267.0).abs() < 1e-9);
        assert_eq!(parse("1k+2k|2k").ohms(), Ohms(2000.0));
        assert_eq!(parse(" 1k + 1k + 1k ").part_count(), 3);
        assert_eq!(parse("1k+(1k+1k)"), parse("1k+1k+1k"));
        assert_eq!(parse("4.7e+3+1k").ohms(), Ohms(5700.0));
        assert_eq!(parse("1.5 kΩ|1.5 kΩ").ohms(), Ohms(750.0));
        // `||` is `|`, with or without spaces round it, and prints as `|`.
        assert_eq!(parse("2k2||180"), parse("2k2|180"));
        assert_eq!(parse("1k + 2k || 2k"), parse("1k+2k|2k"));
        assert_eq!(parse("2k2||180").notation(), "2k2|180R");
    }

    #[test]
    fn notation_round_trips() {
        for s in [
            "4k7",
            "10k+4k7",
            "4k7|4k7",
            "(220R+47R)|1k",
            "1k+(2k|2k)",
            "1k+2k+3k",
            "(1k|1k)+(2k|2k)",
        ] {
            let n = parse(s);
            assert_eq!(parse(&n.notation()), n, "{s}");
        }
    }

    #[test]
    fn refuses_broken_notation() {
        for s in [
            "", "+", "1k+", "|1k", "(1k+2k", "1k+2k)", "1k++2k", "1k|x", "()", "1k 2k", "1k(2k)",
            "4k7k|1k", "1k|||1k", "1k| |1k", "||1k", "1k||",
        ] {
            let err = parse_network(s, Tolerance(0.05), Watts(0.25)).expect_err(s);
            assert!(
                err.to_string().contains("expected values joined by +"),
                "{err}"
            );
        }
        let deep = format!("{}1k{}", "(".repeat(100), ")".repeat(100));
        assert!(parse_network(&deep, Tolerance(0.05), Watts(0.25)).is_err());
    }

    #[test]
    fn caps_the_members_of_one_network() {
        let chain = |n: usize| vec!["1k"; n].join("+");
        // The cap itself is accepted, in any shape.
        assert_eq!(parse(&chain(MAX_MEMBERS)).part_count(), MAX_MEMBERS);
        let mixed = format!("({})|({})", chain(32), chain(32));
        assert_eq!(parse(&mixed).part_count(), 64);
        // One more is refused, pointing at the first member past the cap (character 3·64 + 1 of "1k+1k+…").
        let err = parse_network(&chain(MAX_MEMBERS + 1), Tolerance(0.05), Watts(0.25))
            .expect_err("65 members");
        assert_eq!(err.position, 3 * MAX_MEMBERS + 1);
        let msg = err.to_string();
        assert!(
            msg.contains(&format!("more than {MAX_MEMBERS} resistors"))
                && msg.contains(&format!("at most {MAX_MEMBERS} resistors")),
            "{msg}"
        );
        // A huge paste is refused the same way, and its echo stays short.
        let huge = chain(100_000);
        let err = parse_network(&huge, Tolerance(0.05), Watts(0.25)).expect_err("huge");
        assert!(err.to_string().len() < 400, "{}", err.to_string().len());
    }

    proptest! {
        #[test]
        fn never_panics(s in "[0-9kKRM.()+| e]{0,24}") {
            let _ = parse_network(&s, Tolerance(0.05), Watts(0.25));
        }
    }
}
