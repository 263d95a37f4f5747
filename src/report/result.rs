//! Reading a design result back: the `--json` that `biasfit design` (or `check`) writes holds each stage's
//! object with its `slots`, `{"R1": {"ohms", "network", "parts": [{"ohms", "tolerance", "power",
//! "location"}]}, ...}`. The `network` string gives each slot's shape; the `parts`, in the same left-to-right
//! order as the string's values, give each member's exact value, tolerance, rating and location. Stages are
//! matched to the design file's by name.

use crate::network::parse_network;
use crate::network::Network;
use crate::stage::{Slot, SlotNetworks, Stage};
use crate::units::{Ohms, Tolerance, Watts};
use serde_json::Value;

/// A design result that could not be read, with the file, where in it, and what was expected.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{file}: {place}: {message}")]
pub struct ResultError {
    /// The file.
    pub file: String,
    /// Where in the file: "line 3, column 9", or a path such as `stages[0] "line driver" slots.R1.parts[1]`.
    pub place: String,
    /// What is wrong, and what was expected.
    pub message: String,
    /// When the file is not a design result for this design file at all: what it is not, so that the
    /// caller can say which command writes one (the library names no command).
    pub not_a_result: Option<NotAResult>,
}

/// How a file failed to be a design result for the design file at hand.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NotAResult {
    /// It is not JSON.
    NotJson,
    /// It is JSON without a `"stages"` list.
    NoStages,
    /// It has no stage of the design file's name.
    OtherDesign,
}

/// How far a part's `ohms` may sit from the value its network string shows: the string rounds to at most 6
/// significant digits, so anything beyond a part in a thousand is a different resistor.
const OHMS_AGREEMENT: f64 = 1e-3;

struct Reader<'a> {
    file: &'a str,
}

impl Reader<'_> {
    fn fail<T>(
        &self,
        place: impl Into<String>,
        message: impl Into<String>,
    ) -> Result<T, ResultError> {
        Err(ResultError {
            file: self.file.to_string(),
            place: place.into(),
            message: message.into(),
            not_a_result: None,
        })
    }

    fn not_a_result<T>(
        &self,
        place: impl Into<String>,
        message: impl Into<String>,
        why: NotAResult,
    ) -> Result<T, ResultError> {
        self.fail(place, message).map_err(|e| ResultError {
            not_a_result: Some(why),
            ..e
        })
    }

    fn number(
        &self,
        v: &Value,
        place: &str,
        what: &str,
        ok: impl Fn(f64) -> bool,
    ) -> Result<f64, ResultError> {
        match v.as_f64() {
            Some(x) if ok(x) => Ok(x),
            Some(x) => self.fail(place, format!("{x} is not {what}")),
            None => self.fail(place, format!("expected {what}, found {}", kind(v))),
        }
    }

    fn slot(&self, v: &Value, place: &str) -> Result<Network, ResultError> {
        let text = match v.get("network").and_then(Value::as_str) {
            Some(t) => t,
            None => {
                return self.fail(
                    place,
                    "expected \"network\", the slot's network as text such as \"10k+4k7\"",
                )
            }
        };
        let mut net = parse_network(text, Tolerance(0.05), Watts(0.25))
            .or_else(|e| self.fail(format!("{place}.network"), e.to_string()))?;
        let parts = match v.get("parts").and_then(Value::as_array) {
            Some(p) => p,
            None => {
                return self.fail(
                    place,
                    "expected \"parts\", a list of the network's resistors",
                )
            }
        };
        let members = net.members_mut();
        if parts.len() != members.len() {
            return self.fail(
                format!("{place}.parts"),
                format!(
                    "the network \"{}\" has {} resistor(s) but parts lists {}; expected one entry per value, left to right",
                    crate::notation::excerpt(text),
                    members.len(),
                    parts.len()
                ),
            );
        }
        for (k, (m, p)) in members.into_iter().zip(parts).enumerate() {
            let at = format!("{place}.parts[{k}]");
            let ohms = self.number(
                p.get("ohms").unwrap_or(&Value::Null),
                &format!("{at}.ohms"),
                "a resistance in ohms above 0",
                |x| x > 0.0 && x.is_finite(),
            )?;
            if (ohms / m.ohms.0 - 1.0).abs() > OHMS_AGREEMENT {
                return self.fail(
                    format!("{at}.ohms"),
                    format!(
                        "{ohms} Ω is not the {} in the network \"{}\"; expected the parts in the network's order",
                        crate::notation::code(m.ohms),
                        crate::notation::excerpt(text)
                    ),
                );
            }
            let tolerance = self.number(
                p.get("tolerance").unwrap_or(&Value::Null),
                &format!("{at}.tolerance"),
                "a tolerance as a fraction above 0 and at most 0.5 (0.05 is 5 %)",
                |x| x > 0.0 && x <= 0.5,
            )?;
            let power = self.number(
                p.get("power").unwrap_or(&Value::Null),
                &format!("{at}.power"),
                "a power rating in watts above 0",
                |x| x > 0.0 && x.is_finite(),
            )?;
            let location = match p.get("location") {
                None | Some(Value::Null) => None,
                Some(Value::String(s)) => Some(s.clone()),
                Some(other) => {
                    return self.fail(
                        format!("{at}.location"),
                        format!("expected text or null, found {}", kind(other)),
                    )
                }
            };
            m.ohms = Ohms(ohms);
            m.tolerance = Tolerance(tolerance);
            m.power = Watts(power);
            m.location = location;
        }
        Ok(net)
    }
}

fn kind(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "true/false",
        Value::Number(_) => "a number",
        Value::String(_) => "text",
        Value::Array(_) => "a list",
        Value::Object(_) => "an object",
    }
}

/// The networks of each of `stages`, read from the result in `text` (the file named `file`), in the order
/// of `stages`. Every stage must be in the result under its name, with a network for each of its slots and
/// none for a slot it does not have.
pub fn read_result(
    file: &str,
    text: &str,
    stages: &[&Stage],
) -> Result<Vec<SlotNetworks>, ResultError> {
    let r = Reader { file };
    let doc: Value = serde_json::from_str(text).or_else(|e| {
        r.not_a_result(
            format!("line {}, column {}", e.line(), e.column()),
            format!("not valid JSON ({e})"),
            NotAResult::NotJson,
        )
    })?;
    let list = match doc.get("stages").and_then(Value::as_array) {
        Some(l) => l,
        None => {
            return r.not_a_result(
                "top level",
                "expected an object with \"stages\", a list",
                NotAResult::NoStages,
            )
        }
    };
    let names: Vec<Option<&str>> = list
        .iter()
        .map(|s| s.get("name").and_then(Value::as_str))
        .collect();
    let mut out = Vec::new();
    for st in stages {
        let Some(i) = names.iter().position(|n| *n == Some(st.name.as_str())) else {
            let found: Vec<String> = names.iter().flatten().map(|n| format!("\"{n}\"")).collect();
            return r.not_a_result(
                "stages",
                format!(
                    "no stage named \"{}\" (from the design file); the result has {}",
                    st.name,
                    if found.is_empty() {
                        "none with a name".to_string()
                    } else {
                        found.join(", ")
                    }
                ),
                NotAResult::OtherDesign,
            );
        };
        let place = format!("stages[{i}] \"{}\"", st.name);
        let slots = match list[i].get("slots").and_then(Value::as_object) {
            Some(s) => s,
            None => {
                return r.fail(
                    &place,
                    "expected \"slots\", an object of the stage's networks by slot name",
                )
            }
        };
        let expected = st
            .slots()
            .iter()
            .map(|s| s.name())
            .collect::<Vec<_>>()
            .join(", ");
        let mut nets = SlotNetworks::new();
        for (name, v) in slots {
            let at = format!("{place} slots.{name}");
            let slot: Slot = match name.parse() {
                Ok(s) => s,
                Err(e) => return r.fail(&at, format!("{e}")),
            };
            if !st.has_slot(slot) {
                return r.fail(
                    &at,
                    format!(
                        "a {} stage has no {slot}; its slots are {expected}",
                        st.topology
                    ),
                );
            }
            nets.set(slot, r.slot(v, &at)?);
        }
        let missing: Vec<&str> = st
            .slots()
            .into_iter()
            .filter(|s| nets.get(*s).is_none())
            .map(|s| s.name())
            .collect();
        if !missing.is_empty() {
            return r.fail(
                format!("{place} slots"),
                format!(
                    "no network for {}; the stage needs {expected}",
                    missing.join(", ")
                ),
            );
        }
        out.push(nets);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::{Report, StageReport};

    const DESIGN: &str =
        "[[stage]]\nname = \"front\"\ntopology = \"divider\"\npolarity = \"npn\"\nsupply = 13.5\n\
        load = \"3k6\"\n[stage.transistor]\nbeta = [90, 160, 320]\nvbe = 0.62\nvce_sat = 0.15\n";

    fn stage() -> Stage {
        crate::stage::parse("d.toml", DESIGN)
            .unwrap()
            .stages
            .remove(0)
    }

    fn nets() -> SlotNetworks {
        let mut n = SlotNetworks::new();
        let p = |s: &str, t: f64| parse_network(s, Tolerance(t), Watts(0.25)).unwrap();
        n.set(Slot::R1, p("33k+1k2", 0.01));
        n.set(Slot::R2, p("(4k7+220)|68k", 0.05));
        n.set(Slot::RC, p("3k6", 0.05));
        n.set(Slot::RE, p("680", 0.02));
        n
    }

    #[test]
    fn reads_back_what_the_report_writes() {
        let st = stage();
        let mut n = nets();
        if let Some(Network::Single(m)) = n.get(Slot::RC).cloned().as_mut() {
            m.location = Some("drawer 3".into());
            n.set(Slot::RC, Network::Single(m.clone()));
        }
        let json = serde_json::to_string(&Report::new(vec![StageReport::new(&st, &n)])).unwrap();
        let back = read_result("r.json", &json, &[&st]).unwrap();
        assert_eq!(back, vec![n]);
    }

    #[test]
    fn refuses_mismatches_with_a_place() {
        let st = stage();
        let good = serde_json::to_value(Report::new(vec![StageReport::new(&st, &nets())])).unwrap();
        let edit = |f: &dyn Fn(&mut Value)| {
            let mut v = good.clone();
            f(&mut v);
            read_result("r.json", &v.to_string(), &[&st])
                .unwrap_err()
                .to_string()
        };
        let e = edit(&|v| v["stages"][0]["name"] = "other".into());
        assert!(
            e.contains("no stage named \"front\"") && e.contains("\"other\""),
            "{e}"
        );
        let e = edit(&|v| {
            v["stages"][0]["slots"]["R1"]["parts"]
                .as_array_mut()
                .unwrap()
                .pop();
        });
        assert!(
            e.contains("slots.R1.parts") && e.contains("has 2 resistor(s) but parts lists 1"),
            "{e}"
        );
        let e = edit(&|v| v["stages"][0]["slots"]["R2"]["parts"][0]["ohms"] = 220.0.into());
        assert!(
            e.contains("slots.R2.parts[0].ohms") && e.contains("not the 4k7"),
            "{e}"
        );
        let e = edit(&|v| v["stages"][0]["slots"]["RE"]["parts"][0]["tolerance"] = 5.into());
        assert!(e.contains("tolerance") && e.contains("at most 0.5"), "{e}");
        let e = edit(&|v| {
            v["stages"][0]["slots"]
                .as_object_mut()
                .unwrap()
                .remove("RE");
        });
        assert!(e.contains("no network for RE"), "{e}");
        let e = edit(&|v| v["stages"][0]["slots"]["RB"] = v["stages"][0]["slots"]["RC"].clone());
        assert!(e.contains("has no RB"), "{e}");
        let e = edit(&|v| v["stages"][0]["slots"]["R1"]["network"] = "33k+".into());
        assert!(e.contains("slots.R1.network"), "{e}");
        let e = read_result("r.json", "{\"stages\": [", &[&st])
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("r.json: line 1, column") && e.contains("not valid JSON"),
            "{e}"
        );
        let e = read_result("r.json", "[]", &[&st]).unwrap_err().to_string();
        assert!(e.contains("expected an object with \"stages\""), "{e}");
    }
}
