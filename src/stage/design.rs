//! The design file: TOML with one `[[stage]]` table per transistor stage, read into validated [`Stage`]s.
//!
//! The file is parsed with its source positions kept, so every refusal names the file, the line, the field
//! and the text as written. Unknown keys are refused, naming the nearest valid key, because a misspelt
//! optional field would otherwise be ignored and its default used without a word. Values may be plain
//! numbers in SI units (`supply = 12`) or strings with units (`load = "4k7"`, `ic = "2mA"`).

use super::{Beta, Ground, Limits, Polarity, Rule, Stage, Topology, Transistor, Vbe};
use crate::notation::value::{MAX_OHMS, MIN_OHMS};
use crate::notation::{engineering, parse_amps, parse_ohms, parse_volts, parse_watts, trim_number};
use crate::units::{Amps, Celsius, Ohms, Volts, Watts};
use std::ops::Range;
use std::path::Path;
use toml_edit::{ImDocument, Item, Value};

/// A design file: its stages, in file order.
#[derive(Clone, Debug, PartialEq)]
pub struct Design {
    /// The file it came from, as given.
    pub file: String,
    /// The stages.
    pub stages: Vec<Stage>,
    /// How many `[[circuit]]` tables the file also holds (read by `circuit::file`, not here).
    pub circuit_tables: usize,
}

impl Design {
    /// The stage with this name, or with this 1-based number.
    pub fn stage(&self, which: &str) -> Option<&Stage> {
        self.stages.iter().find(|s| s.name == which).or_else(|| {
            which
                .trim()
                .parse::<usize>()
                .ok()
                .and_then(|n| n.checked_sub(1))
                .and_then(|i| self.stages.get(i))
        })
    }
}

/// Why a design file was refused.
#[derive(Debug, thiserror::Error)]
pub enum DesignError {
    /// The file could not be read, or is not one biasfit reads (a device, a FIFO, too large).
    #[error(transparent)]
    Input(#[from] crate::input::InputError),
    /// The file is not UTF-8 text.
    #[error("{file}:{line}: the file is not UTF-8 text; save it as UTF-8")]
    NotUtf8 {
        /// The file.
        file: String,
        /// 1-based line of the first byte that is not UTF-8.
        line: usize,
    },
    /// The text is not valid TOML.
    #[error("{file}:{line}: not valid TOML: {message}; expected key = value lines under [[stage]] and [stage.transistor], [stage.rule] or [stage.limits], with text in quotes")]
    Syntax {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// The parser's reason.
        message: String,
    },
    /// A key that biasfit does not know.
    #[error("{file}:{line}: unknown key '{}' in {table}{}; valid keys are {}", crate::notation::excerpt(.key), suggestion.as_ref().map(|s| format!(" (did you mean '{s}'?)")).unwrap_or_default(), valid.join(", "))]
    UnknownKey {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// The table it is in ("[[stage]]", "[stage.rule]").
        table: String,
        /// The key as written.
        key: String,
        /// The nearest valid key, when one is close.
        suggestion: Option<String>,
        /// Every valid key of the table.
        valid: &'static [&'static str],
    },
    /// A required key is missing.
    #[error("{file}:{line}: {table} has no '{key}'; expected {expected}")]
    Missing {
        /// The file.
        file: String,
        /// 1-based line of the table.
        line: usize,
        /// The table.
        table: String,
        /// The missing key.
        key: &'static str,
        /// What it should hold.
        expected: String,
    },
    /// A value was refused.
    #[error("{file}:{line}: {field} = {}: {expected}", crate::notation::excerpt(.text))]
    Field {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// The field's dotted path ("stage.transistor.beta").
        field: String,
        /// The value as written.
        text: String,
        /// What is wrong and what is expected.
        expected: String,
    },
    /// A table's values are each valid but impossible together (shares that do not add up, a rule no
    /// resistor values can meet).
    #[error("{file}:{line}: {table}: {message}")]
    Table {
        /// The file.
        file: String,
        /// 1-based line of the table.
        line: usize,
        /// The table ("[stage.rule]", `[[stage]] "line driver"`).
        table: String,
        /// What is impossible, and what to change.
        message: String,
    },
    /// The file holds no stages.
    #[error("{file}: no [[stage]] tables; expected at least one, starting with a line [[stage]]")]
    NoStages {
        /// The file.
        file: String,
    },
    /// The file holds circuits but no stages, and stages were asked for.
    #[error("{file}: no [[stage]] tables, only [[circuit]] tables; circuits are read by `biasfit check`, `spread` and `verify` (filling their slots from stock is to come)")]
    OnlyCircuits {
        /// The file.
        file: String,
    },
}

/// Reads a design file from disk.
pub fn load(path: &Path) -> Result<Design, DesignError> {
    let file = path.display().to_string();
    let bytes = crate::input::read(path, "design file")?;
    let text = std::str::from_utf8(&bytes).map_err(|e| DesignError::NotUtf8 {
        line: bytes[..e.valid_up_to()]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1,
        file: file.clone(),
    })?;
    parse(&file, text)
}

/// Reads a design file's text; `file` names it in messages.
pub fn parse(file: &str, text: &str) -> Result<Design, DesignError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let cx = Cx::new(file, text);
    let doc = ImDocument::parse(text).map_err(|e| DesignError::Syntax {
        file: file.to_string(),
        line: e.span().map_or(1, |s| cx.line(s.start)),
        message: e.message().trim().replace('\n', " "),
    })?;
    let root = doc.as_table();
    for (key, _) in root.iter() {
        // `[[circuit]]` tables are read by `circuit::file`; the two readers share the file.
        if key != "stage" && key != "circuit" {
            let line = root
                .get_key_value(key)
                .and_then(|(k, _)| k.span())
                .map_or(1, |s| cx.line(s.start));
            return Err(cx.unknown(line, "the file's top level", key, &["stage", "circuit"]));
        }
    }
    let stages_item = match root.get("stage") {
        None if root.contains_key("circuit") => {
            return Err(DesignError::OnlyCircuits { file: file.into() })
        }
        None => return Err(DesignError::NoStages { file: file.into() }),
        Some(i) => i,
    };
    let Item::ArrayOfTables(list) = stages_item else {
        let line = stages_item.span().map_or(1, |s| cx.line(s.start));
        // The text as written when it is short (an inline array), else the table header it must have been.
        let written = stages_item
            .span()
            .and_then(|s| cx.text.get(s))
            .map(str::trim)
            .filter(|t| t.chars().count() <= 40 && !t.contains('\n'));
        return Err(DesignError::Field {
            file: file.into(),
            line,
            field: "stage".into(),
            text: written.unwrap_or("[stage]").to_string(),
            expected: "write each stage as [[stage]], with double brackets".into(),
        });
    };
    let mut stages = Vec::new();
    let mut names: std::collections::HashMap<String, usize> = std::collections::HashMap::new();
    for (n, t) in list.iter().enumerate() {
        let line = t.span().map_or(1, |s| cx.line(s.start));
        let tab = Tab::of_table(&cx, "[[stage]]", "stage", line, t, STAGE_KEYS)?;
        let stage = read_stage(&cx, tab, n + 1)?;
        // Each value can be valid and the whole still impossible (a gain the operating point cannot give,
        // a base above the supply): refused here, at the stage's line, rather than later with no place.
        if let Err(e) = stage.ideal() {
            return Err(DesignError::Table {
                file: file.into(),
                line,
                table: format!("[[stage]] \"{}\"", stage.name),
                message: format!(
                    "no resistor values can meet this stage's rule: {}",
                    e.reason
                ),
            });
        }
        // A map rather than a scan of the stages so far, which made thousands of stages quadratic.
        if let Some(&prev) = names.get(stage.name.as_str()) {
            return Err(DesignError::Field {
                file: file.into(),
                line,
                field: "stage.name".into(),
                text: format!("\"{}\"", stage.name),
                expected: format!("stage names must differ (line {prev} has the same); rename one"),
            });
        }
        names.insert(stage.name.clone(), stage.line);
        stages.push(stage);
    }
    if stages.is_empty() {
        return Err(DesignError::NoStages { file: file.into() });
    }
    let circuit_tables = match root.get("circuit") {
        Some(Item::ArrayOfTables(a)) => a.len(),
        Some(_) => 1,
        None => 0,
    };
    Ok(Design {
        file: file.to_string(),
        stages,
        circuit_tables,
    })
}

const STAGE_KEYS: &[&str] = &[
    "name",
    "topology",
    "polarity",
    "supply",
    "supply_neg",
    "ground",
    "load",
    "ic",
    "transistor",
    "rule",
    "limits",
];
const TRANSISTOR_KEYS: &[&str] = &[
    "beta",
    "vbe",
    "vce_sat",
    "max_power",
    "max_ic",
    "max_vce",
    "vbe_tempco",
    "beta_tempco",
    "measured_at",
    "tj_max",
];
const VBE_KEYS: &[&str] = &["volts", "at", "n"];
const RULE_KEYS: &[&str] = &[
    "vrc",
    "vce",
    "vre",
    "stiffness",
    "divider_max",
    "gain",
    "ic_spread",
];
const LIMITS_KEYS: &[&str] = &["derate", "ambient", "temperature"];

/// Defaults of the rule: the common 45 % / 45 % / 10 % split and a divider ten times stiffer than IB
/// (common practice, no source), at most twice its design current, and IC moving at most 25 % over the
/// beta range (biasfit's own choice, no source).
pub const DEFAULT_RULE: Rule = Rule {
    vrc: 0.45,
    vce: 0.45,
    vre: 0.10,
    stiffness: 10.0,
    divider_max: 2.0,
    gain: None,
    ic_spread: 0.25,
};

/// What every reading step needs: the file's name, its text, and where each of its lines starts.
struct Cx<'a> {
    file: &'a str,
    text: &'a str,
    /// Byte offset of each line's first byte (0 first), so that a key's line is a binary search rather
    /// than a count from the start of the file, which made a file of thousands of stages quadratic.
    line_starts: Vec<usize>,
}

impl<'a> Cx<'a> {
    fn new(file: &'a str, text: &'a str) -> Cx<'a> {
        let line_starts = std::iter::once(0)
            .chain(
                text.bytes()
                    .enumerate()
                    .filter(|&(_, b)| b == b'\n')
                    .map(|(i, _)| i + 1),
            )
            .collect();
        Cx {
            file,
            text,
            line_starts,
        }
    }

    /// The 1-based line holding a byte offset (the number of lines that start at or before it).
    fn line(&self, offset: usize) -> usize {
        self.line_starts
            .partition_point(|&s| s <= offset.min(self.text.len()))
    }

    fn unknown(
        &self,
        line: usize,
        table: &str,
        key: &str,
        valid: &'static [&'static str],
    ) -> DesignError {
        DesignError::UnknownKey {
            file: self.file.into(),
            line,
            table: table.into(),
            key: key.into(),
            suggestion: nearest(key, valid).map(str::to_string),
            valid,
        }
    }
}

/// The valid key nearest to `key` by edit distance, if it is close enough to be a likely slip.
fn nearest<'k>(key: &str, valid: &[&'k str]) -> Option<&'k str> {
    let key = key.to_ascii_lowercase();
    valid
        .iter()
        .map(|v| (edit_distance(&key, v), *v))
        .min()
        .filter(|(d, v)| *d <= 2.max(v.len() / 3) && *d < v.len().max(key.len()))
        .map(|(_, v)| v)
}

/// Levenshtein distance between two strings, by characters.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1];
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != *cb);
            cur.push(sub.min(prev[j + 1] + 1).min(cur[j] + 1));
        }
        prev = cur;
    }
    prev[b.len()]
}

/// One value with where it sits.
struct Val<'a> {
    item: &'a Item,
    line: usize,
    field: String,
    text: String,
}

impl Val<'_> {
    fn refuse(&self, cx: &Cx, expected: impl Into<String>) -> DesignError {
        DesignError::Field {
            file: cx.file.into(),
            line: self.line,
            field: self.field.clone(),
            text: self.text.clone(),
            expected: expected.into(),
        }
    }

    fn number(&self) -> Option<f64> {
        match self.item.as_value()? {
            Value::Integer(i) => Some(*i.value() as f64),
            Value::Float(f) => Some(*f.value()),
            _ => None,
        }
    }

    fn string(&self) -> Option<&str> {
        self.item.as_str()
    }
}

/// A table being read: every key read is ticked off, and what is left at the end is unknown.
struct Tab<'a> {
    name: String,
    path: String,
    line: usize,
    entries: Vec<(&'a str, usize, &'a Item)>,
    used: Vec<bool>,
    valid: &'static [&'static str],
}

impl<'a> Tab<'a> {
    /// A table whose keys are all valid; an unknown key is refused before anything is read, so a misspelt
    /// required key is reported as the slip it is rather than as missing.
    fn new(
        cx: &Cx,
        name: &str,
        path: &str,
        line: usize,
        entries: Vec<(&'a str, usize, &'a Item)>,
        valid: &'static [&'static str],
    ) -> Result<Tab<'a>, DesignError> {
        if let Some((key, at, _)) = entries.iter().find(|(k, _, _)| !valid.contains(k)) {
            return Err(cx.unknown(*at, name, key, valid));
        }
        let used = vec![false; entries.len()];
        Ok(Tab {
            name: name.into(),
            path: path.into(),
            line,
            entries,
            used,
            valid,
        })
    }

    fn of_table(
        cx: &Cx,
        name: &str,
        path: &str,
        line: usize,
        t: &'a toml_edit::Table,
        valid: &'static [&'static str],
    ) -> Result<Tab<'a>, DesignError> {
        let entries = t
            .iter()
            .filter_map(|(k, _)| t.get_key_value(k))
            .map(|(k, item)| {
                let at = k
                    .span()
                    .or_else(|| item.span())
                    .map_or(line, |s| cx.line(s.start));
                (k.get(), at, item)
            })
            .collect::<Vec<_>>();
        Tab::new(cx, name, path, line, entries, valid)
    }

    fn of_inline(
        cx: &Cx,
        name: &str,
        path: &str,
        line: usize,
        t: &'a toml_edit::InlineTable,
        valid: &'static [&'static str],
    ) -> Result<Tab<'a>, DesignError> {
        let entries = t
            .iter()
            .filter_map(|(k, _)| t.get_key_value(k))
            .map(|(k, item)| {
                let at = k
                    .span()
                    .or_else(|| item.span())
                    .map_or(line, |s| cx.line(s.start));
                (k.get(), at, item)
            })
            .collect::<Vec<_>>();
        Tab::new(cx, name, path, line, entries, valid)
    }

    fn get(&mut self, cx: &Cx, key: &str) -> Option<Val<'a>> {
        let i = self.entries.iter().position(|(k, _, _)| *k == key)?;
        self.used[i] = true;
        let (_, line, item) = self.entries[i];
        let text = item
            .span()
            .and_then(|s: Range<usize>| cx.text.get(s))
            // A value written over several lines (an array) is quoted on one, so a refusal stays one line.
            .map(|s| s.lines().map(str::trim).collect::<Vec<_>>().join(" "))
            .unwrap_or_else(|| match item {
                Item::Table(_) => format!("[{}.{key}]", self.path),
                _ => "(value)".into(),
            });
        Some(Val {
            item,
            line,
            field: format!("{}.{key}", self.path),
            text,
        })
    }

    fn require(
        &mut self,
        cx: &Cx,
        key: &'static str,
        expected: &str,
    ) -> Result<Val<'a>, DesignError> {
        self.get(cx, key).ok_or_else(|| DesignError::Missing {
            file: cx.file.into(),
            line: self.line,
            table: self.name.clone(),
            key,
            expected: expected.into(),
        })
    }

    /// A sub-table, given as `[a.b]`, as dotted keys or inline.
    fn table(
        &mut self,
        cx: &Cx,
        key: &str,
        valid: &'static [&'static str],
    ) -> Result<Option<Tab<'a>>, DesignError> {
        let Some(v) = self.get(cx, key) else {
            return Ok(None);
        };
        let name = format!("[{}.{key}]", self.path);
        let path = format!("{}.{key}", self.path);
        match v.item {
            Item::Table(t) => Tab::of_table(cx, &name, &path, v.line, t, valid).map(Some),
            Item::Value(Value::InlineTable(t)) => {
                Tab::of_inline(cx, &name, &path, v.line, t, valid).map(Some)
            }
            _ => Err(v.refuse(cx, format!("expected a table, written [{path}]"))),
        }
    }

    fn finish(self, cx: &Cx) -> Result<(), DesignError> {
        for ((key, line, _), used) in self.entries.iter().zip(&self.used) {
            if !used {
                return Err(cx.unknown(*line, &self.name, key, self.valid));
            }
        }
        Ok(())
    }

    fn number(
        &mut self,
        cx: &Cx,
        key: &str,
        default: f64,
        ok: impl Fn(f64) -> Result<(), String>,
    ) -> Result<f64, DesignError> {
        match self.get(cx, key) {
            None => Ok(default),
            Some(v) => {
                let x = v
                    .number()
                    .ok_or_else(|| v.refuse(cx, "expected a number"))?;
                ok(x).map_err(|e| v.refuse(cx, e))?;
                Ok(x)
            }
        }
    }
}

/// A quantity given as a bare number (SI units) or a string with a unit.
fn quantity<T>(
    cx: &Cx,
    v: &Val,
    parse: impl Fn(&str) -> Result<T, String>,
    from_number: impl Fn(f64) -> T,
) -> Result<T, DesignError> {
    if let Some(x) = v.number() {
        return Ok(from_number(x));
    }
    match v.string() {
        Some(s) => parse(s).map_err(|e| v.refuse(cx, e)),
        None => Err(v.refuse(cx, "expected a number or a quoted value with its unit")),
    }
}

fn volts(cx: &Cx, v: &Val) -> Result<Volts, DesignError> {
    quantity(cx, v, |s| parse_volts(s).map_err(|e| e.to_string()), Volts)
}

fn amps(cx: &Cx, v: &Val) -> Result<Amps, DesignError> {
    quantity(cx, v, |s| parse_amps(s).map_err(|e| e.to_string()), Amps)
}

fn watts(cx: &Cx, v: &Val) -> Result<Watts, DesignError> {
    quantity(cx, v, |s| parse_watts(s).map_err(|e| e.to_string()), Watts)
}

fn ohms(cx: &Cx, v: &Val) -> Result<Ohms, DesignError> {
    quantity(cx, v, |s| parse_ohms(s).map_err(|e| e.to_string()), Ohms)
}

/// The most each quantity may be: far past any bias network, so that only a slip (a lost decimal point, a
/// wrong prefix) is refused, before it turns into pages of 10³⁰⁰-scale figures.
const MOST_VOLTS: f64 = 1e3;
const MOST_AMPS: f64 = 100.0;
const MOST_WATTS: f64 = 1e4;
const MOST_BETA: f64 = 1e5;

/// The least a quantity with no natural floor may be: the smallest normal f64 (about 2.2e-308). Below it
/// numbers lose their precision, and a value that small is a slip, not a design.
const TINIEST: f64 = f64::MIN_POSITIVE;

/// A quantity that must lie in `least..=most` (in `unit`), refused with what is wrong and the range.
fn positive<T: Copy>(
    cx: &Cx,
    v: &Val,
    x: T,
    get: impl Fn(T) -> f64,
    what: &str,
    (least, most, unit): (f64, f64, &str),
) -> Result<T, DesignError> {
    let f = get(x);
    let range = if least == TINIEST {
        format!("above 0 and at most {}", engineering(most, unit))
    } else {
        format!(
            "from {} to {}",
            engineering(least, unit),
            engineering(most, unit)
        )
    };
    if f.is_finite() && f >= least && f <= most {
        Ok(x)
    } else if f.is_finite() && f > most {
        Err(v.refuse(
            cx,
            format!("{what} must be at most {}", engineering(most, unit)),
        ))
    } else if f.is_finite() && f > 0.0 {
        let why = if least == TINIEST {
            "a number too small to compute with (below about 2.2e-308)".to_string()
        } else {
            format!("below the {} biasfit accepts", engineering(least, unit))
        };
        Err(v.refuse(
            cx,
            format!(
                "{what} is {}, {why}; expected a value {range}",
                engineering(f, unit)
            ),
        ))
    } else {
        Err(v.refuse(cx, format!("{what} must be greater than zero")))
    }
}

fn read_stage(cx: &Cx, mut t: Tab, number: usize) -> Result<Stage, DesignError> {
    let line = t.line;
    let name = match t.get(cx, "name") {
        None => format!("stage {number}"),
        Some(v) => v
            .string()
            .map(|s| s.trim().to_string())
            .filter(|s| !s.is_empty())
            .ok_or_else(|| {
                v.refuse(
                    cx,
                    "expected the stage's name as a quoted, non-empty string",
                )
            })?,
    };
    let topo_v = t.require(
        cx,
        "topology",
        "one of divider, divider-split, collector-feedback, dual-supply, base-resistor",
    )?;
    let names: Vec<&str> = Topology::ALL.iter().map(|t| t.name()).collect();
    let topology = topo_v
        .string()
        .and_then(|s| Topology::ALL.into_iter().find(|t| t.name() == s.trim()))
        .ok_or_else(|| {
            let hint = topo_v
                .string()
                .and_then(|s| nearest(s, &names))
                .map(|n| format!(" (did you mean {n}?)"))
                .unwrap_or_default();
            topo_v.refuse(cx, format!("expected one of {}{hint}", names.join(", ")))
        })?;
    let polarity = match t.get(cx, "polarity") {
        None => Polarity::Npn,
        Some(v) => match v.string().map(|s| s.trim().to_ascii_lowercase()).as_deref() {
            Some("npn") => Polarity::Npn,
            Some("pnp") => Polarity::Pnp,
            _ => return Err(v.refuse(cx, "expected \"npn\" or \"pnp\"")),
        },
    };
    let supply_v = t.require(cx, "supply", "the supply voltage, such as 12 or \"9V\"")?;
    let supply = volts(cx, &supply_v)?;
    if !supply.0.is_finite() {
        return Err(supply_v.refuse(cx, "expected the supply in volts, such as 12"));
    }
    if supply.0 == 0.0 {
        return Err(supply_v.refuse(cx, "the supply cannot be zero"));
    }
    if supply.0.abs() > MOST_VOLTS {
        return Err(supply_v.refuse(
            cx,
            format!(
                "expected a supply of at most {} (a bias network's rail, in volts)",
                engineering(MOST_VOLTS, "V")
            ),
        ));
    }
    // Where the stage sits. The supply's sign says it for every stage but an NPN below ground, which must
    // say so (a negative supply on an NPN is far more often a slip than that); a `ground` that the sign
    // contradicts is refused rather than guessed at.
    let ground_v = t.get(cx, "ground");
    let ground_given = match &ground_v {
        None => None,
        Some(v) => match v.string().map(|s| s.trim().to_ascii_lowercase()).as_deref() {
            Some("emitter") => Some(Ground::Emitter),
            Some("collector") => Some(Ground::Collector),
            _ => {
                return Err(v.refuse(
                    cx,
                    "expected \"emitter\" (the emitter-side rail is 0 V) or \"collector\" (the collector side is 0 V)",
                ))
            }
        },
    };
    let ground = if topology == Topology::DualSupply {
        if let Some(v) = &ground_v {
            return Err(v.refuse(
                cx,
                "expected no ground here: a dual-supply stage has ground between its rails",
            ));
        }
        Ground::Between
    } else {
        let by_sign = match (polarity, supply.0 > 0.0) {
            (Polarity::Npn, true) | (Polarity::Pnp, false) => Ground::Emitter,
            (Polarity::Npn, false) | (Polarity::Pnp, true) => Ground::Collector,
        };
        match (ground_given, &ground_v) {
            (Some(g), Some(v)) if g != by_sign => {
                let want = if supply.0 > 0.0 {
                    "negative"
                } else {
                    "positive"
                };
                return Err(v.refuse(
                    cx,
                    format!(
                        "{} {polarity} stage with its {} side at 0 V hangs from a {want} rail: expected supply = {}, or no ground",
                        if polarity == Polarity::Npn { "an" } else { "a" },
                        g.name(),
                        -supply.0
                    ),
                ));
            }
            _ => {}
        }
        if polarity == Polarity::Npn && supply.0 < 0.0 && ground_given.is_none() {
            return Err(supply_v.refuse(
                cx,
                "an npn stage's collector rail is positive; for a negative rail use polarity = \"pnp\", or ground = \"collector\" for an npn below ground",
            ));
        }
        by_sign
    };
    let supply_neg = match t.get(cx, "supply_neg") {
        None if topology == Topology::DualSupply => {
            return Err(DesignError::Missing {
                file: cx.file.into(),
                line,
                table: "[[stage]]".into(),
                key: "supply_neg",
                expected: "the negative rail for a dual-supply stage, such as -12".into(),
            })
        }
        None => None,
        Some(v) if topology != Topology::DualSupply => {
            return Err(v.refuse(
                cx,
                "supply_neg applies only to topology = \"dual-supply\"; remove it, or use that topology",
            ))
        }
        Some(v) => {
            let x = volts(cx, &v)?;
            if !(x.0.is_finite() && x.0 != 0.0 && x.0.signum() != supply.0.signum()) {
                return Err(v.refuse(cx, "the emitter-side rail must have the opposite sign to supply, such as supply = 12, supply_neg = -12"));
            }
            if x.0.abs() > MOST_VOLTS {
                return Err(v.refuse(
                    cx,
                    format!(
                        "expected a rail of at most {}",
                        engineering(MOST_VOLTS, "V")
                    ),
                ));
            }
            Some(x.abs())
        }
    };
    let load = match t.get(cx, "load") {
        None => None,
        Some(v) => Some(positive(
            cx,
            &v,
            ohms(cx, &v)?,
            |o| o.0,
            "the load",
            (MIN_OHMS, MAX_OHMS, "Ω"),
        )?),
    };
    let ic = match t.get(cx, "ic") {
        None => None,
        Some(v) => Some(positive(
            cx,
            &v,
            amps(cx, &v)?,
            |a| a.0,
            "the collector current",
            (TINIEST, MOST_AMPS, "A"),
        )?),
    };
    match (load, ic) {
        (None, None) => {
            return Err(DesignError::Missing {
                file: cx.file.into(),
                line,
                table: "[[stage]]".into(),
                key: "load",
                expected: "the load RL (load = \"4k7\") or the collector current (ic = \"2mA\")"
                    .into(),
            })
        }
        (Some(_), Some(_)) => {
            let v = t.get(cx, "ic").expect("ic was read");
            return Err(v.refuse(
                cx,
                "give load or ic, not both: with a load, IC = vrc·supply/RL",
            ));
        }
        _ => {}
    }
    let mut tr =
        t.table(cx, "transistor", TRANSISTOR_KEYS)?
            .ok_or_else(|| DesignError::Missing {
                file: cx.file.into(),
                line,
                table: "[[stage]]".into(),
                key: "transistor",
                expected: "a [stage.transistor] table with at least beta".into(),
            })?;
    let transistor = read_transistor(cx, &mut tr)?;
    tr.finish(cx)?;
    let vbe_level = match transistor.vbe {
        Vbe::Fixed(v) | Vbe::Diode { volts: v, .. } => v,
    };
    // Only a dual supply's negative rail can forward-bias the junction on its own; every other topology
    // drives the base from the collector-side rail, which must then exceed VBE.
    if topology != Topology::DualSupply && supply.0.abs() <= vbe_level.0 {
        return Err(supply_v.refuse(
            cx,
            format!(
                "the supply must be above the transistor's VBE ({}) for the base to be driven from it",
                engineering(vbe_level.0, "V")
            ),
        ));
    }
    let rule = match t.table(cx, "rule", RULE_KEYS)? {
        Some(mut r) => {
            let rule = read_rule(cx, &mut r, topology)?;
            r.finish(cx)?;
            rule
        }
        None => {
            if topology == Topology::DividerSplit {
                return Err(DesignError::Missing {
                    file: cx.file.into(),
                    line,
                    table: "[[stage]]".into(),
                    key: "rule",
                    expected:
                        "a [stage.rule] table with the gain target (gain = 8) for divider-split"
                            .into(),
                });
            }
            DEFAULT_RULE
        }
    };
    let limits = match t.table(cx, "limits", LIMITS_KEYS)? {
        Some(mut l) => {
            let limits = read_limits(cx, &mut l)?;
            l.finish(cx)?;
            limits
        }
        None => DEFAULT_LIMITS,
    };
    t.finish(cx)?;
    Ok(Stage {
        name,
        topology,
        polarity,
        supply: supply.abs(),
        supply_neg,
        ground,
        load,
        ic,
        transistor,
        rule,
        limits,
        line,
    })
}

/// Defaults of the limits: resistors designed to 50 % of their rating (common practice, no source), at
/// 25 °C, with no temperature range.
pub const DEFAULT_LIMITS: Limits = Limits {
    derate: 0.5,
    ambient: Celsius(25.0),
    temperature: None,
};

fn read_transistor(cx: &Cx, t: &mut Tab) -> Result<Transistor, DesignError> {
    let bv = t.require(
        cx,
        "beta",
        "the current gain: one number, or [min, typical, max]",
    )?;
    let beta = {
        let nums: Option<Vec<f64>> = match bv.item.as_value() {
            Some(Value::Array(a)) => a
                .iter()
                .map(|x| match x {
                    Value::Integer(i) => Some(*i.value() as f64),
                    Value::Float(f) => Some(*f.value()),
                    _ => None,
                })
                .collect(),
            _ => bv.number().map(|x| vec![x]),
        };
        let b =
            match nums.as_deref() {
                Some(&[x]) => Beta {
                    min: x,
                    typ: x,
                    max: x,
                },
                Some(&[min, typ, max]) => Beta { min, typ, max },
                _ => return Err(bv.refuse(
                    cx,
                    "expected one number or three, [min, typical, max], such as [100, 180, 300]",
                )),
            };
        let n = |x: f64| trim_number(x, 6);
        let wrong = if ![b.min, b.typ, b.max].iter().all(|x| x.is_finite()) {
            Some("every beta must be a finite number".to_string())
        } else if b.min < 1.0 {
            Some(format!("min {} is below 1", n(b.min)))
        } else if b.min > b.typ {
            Some(format!("min {} is above typical {}", n(b.min), n(b.typ)))
        } else if b.typ > b.max {
            Some(format!("typical {} is above max {}", n(b.typ), n(b.max)))
        } else if b.max > MOST_BETA {
            Some(format!("max {} is above 100000", n(b.max)))
        } else {
            None
        };
        if let Some(wrong) = wrong {
            return Err(bv.refuse(
                cx,
                format!(
                    "{wrong}; expected 1 ≤ min ≤ typical ≤ max ≤ 100000, such as [100, 180, 300]"
                ),
            ));
        }
        b
    };
    let vbe = match t.get(cx, "vbe") {
        None => Vbe::Fixed(Volts(0.65)),
        Some(v) => {
            let table = match v.item {
                Item::Table(tt) => Some(Tab::of_table(
                    cx,
                    "[stage.transistor.vbe]",
                    "stage.transistor.vbe",
                    v.line,
                    tt,
                    VBE_KEYS,
                )?),
                Item::Value(Value::InlineTable(tt)) => Some(Tab::of_inline(
                    cx,
                    "stage.transistor.vbe",
                    "stage.transistor.vbe",
                    v.line,
                    tt,
                    VBE_KEYS,
                )?),
                _ => None,
            };
            match table {
                None => Vbe::Fixed(vbe_volts(cx, &v)?),
                Some(mut d) => {
                    let volts_v =
                        d.require(cx, "volts", "VBE at the reference current, such as 0.65")?;
                    let volts = vbe_volts(cx, &volts_v)?;
                    let at_v = d.require(cx, "at", "the reference current, such as \"1mA\"")?;
                    let at = positive(
                        cx,
                        &at_v,
                        amps(cx, &at_v)?,
                        |a| a.0,
                        "the reference current",
                        (TINIEST, MOST_AMPS, "A"),
                    )?;
                    let n = d.number(cx, "n", 1.0, |n| {
                        if (0.5..=3.0).contains(&n) {
                            Ok(())
                        } else {
                            Err("expected an ideality factor between 0.5 and 3 (about 1 for a silicon transistor)".into())
                        }
                    })?;
                    d.finish(cx)?;
                    Vbe::Diode { volts, at, n }
                }
            }
        }
    };
    let vbe_level = match vbe {
        Vbe::Fixed(v) | Vbe::Diode { volts: v, .. } => v.0,
    };
    let vce_sat = match t.get(cx, "vce_sat") {
        None => Volts(0.2_f64.min(vbe_level / 2.0)),
        Some(v) => {
            let x = volts(cx, &v)?;
            if !(x.0 >= 0.0 && x.0 < vbe_level) {
                return Err(v.refuse(
                    cx,
                    "expected a saturation voltage from 0 up to (not including) VBE",
                ));
            }
            x
        }
    };
    let max_power = match t.get(cx, "max_power") {
        None => None,
        Some(v) => Some(positive(
            cx,
            &v,
            watts(cx, &v)?,
            |w| w.0,
            "the power limit",
            (TINIEST, MOST_WATTS, "W"),
        )?),
    };
    let max_ic = match t.get(cx, "max_ic") {
        None => None,
        Some(v) => Some(positive(
            cx,
            &v,
            amps(cx, &v)?,
            |a| a.0,
            "the current limit",
            (TINIEST, MOST_AMPS * 10.0, "A"),
        )?),
    };
    let max_vce = match t.get(cx, "max_vce") {
        None => None,
        Some(v) => Some(positive(
            cx,
            &v,
            volts(cx, &v)?.abs(),
            |x| x.0,
            "the voltage limit",
            (TINIEST, MOST_VOLTS * 10.0, "V"),
        )?),
    };
    // About −2 mV/°C at constant current: the textbook figure for silicon (from memory; common practice).
    let vbe_tempco = t.number(cx, "vbe_tempco", -0.002, |x| {
        if x.abs() <= 0.01 {
            Ok(())
        } else {
            Err("expected volts per °C, such as -0.002 (-2 mV/°C)".into())
        }
    })?;
    let beta_tempco = t.number(cx, "beta_tempco", 0.0, |x| {
        if x.abs() <= 0.05 {
            Ok(())
        } else {
            Err("expected a fraction per °C, such as 0.005 (+0.5 %/°C)".into())
        }
    })?;
    let reference = Celsius(t.number(cx, "measured_at", 25.0, celsius_ok)?);
    let tj_max = Celsius(t.number(cx, "tj_max", 150.0, |x| {
        if x > 25.0 && x <= 400.0 {
            Ok(())
        } else {
            Err("expected the maximum junction temperature in °C, above 25, such as 150".into())
        }
    })?);
    Ok(Transistor {
        beta,
        vbe,
        vce_sat,
        max_power,
        max_ic,
        max_vce,
        vbe_tempco,
        beta_tempco,
        reference,
        tj_max,
    })
}

fn celsius_ok(x: f64) -> Result<(), String> {
    if (-100.0..=300.0).contains(&x) {
        Ok(())
    } else {
        Err("expected a temperature in °C between -100 and 300".into())
    }
}

fn vbe_volts(cx: &Cx, v: &Val) -> Result<Volts, DesignError> {
    let x = volts(cx, v)?.abs();
    if x.0 > 0.0 && x.0 <= 1.5 {
        Ok(x)
    } else {
        Err(v.refuse(
            cx,
            "expected a base-emitter voltage above 0 and at most 1.5 V, such as 0.65",
        ))
    }
}

fn fraction(x: f64) -> Result<(), String> {
    if (0.0..1.0).contains(&x) {
        Ok(())
    } else {
        Err("expected a fraction of the supply, from 0 up to 1, such as 0.45".into())
    }
}

fn read_rule(cx: &Cx, t: &mut Tab, topology: Topology) -> Result<Rule, DesignError> {
    let d = DEFAULT_RULE;
    let line = t.line;
    let vrc = t.number(cx, "vrc", d.vrc, fraction)?;
    let vce = t.number(cx, "vce", d.vce, fraction)?;
    let vre_given = t.get(cx, "vre");
    let vre = t.number(cx, "vre", d.vre, fraction)?;
    let stiffness = t.number(cx, "stiffness", d.stiffness, |x| {
        if x >= 1.0 && x.is_finite() {
            Ok(())
        } else {
            Err(
                "expected how many times IB the bias current must be, at least 1, such as 10"
                    .into(),
            )
        }
    })?;
    let divider_max = t.number(cx, "divider_max", d.divider_max, |x| {
        if x >= 1.0 && x.is_finite() {
            Ok(())
        } else {
            Err("expected a multiple of the design current, at least 1, such as 2".into())
        }
    })?;
    let gain = match t.get(cx, "gain") {
        None => None,
        Some(v) => {
            if topology != Topology::DividerSplit {
                return Err(v.refuse(
                    cx,
                    "rule.gain applies only to topology = \"divider-split\"; remove it, or use that topology",
                ));
            }
            let g = v
                .number()
                .ok_or_else(|| v.refuse(cx, "expected the voltage gain's magnitude, such as 8"))?;
            if !(g > 0.0 && g.is_finite()) {
                return Err(v.refuse(
                    cx,
                    "expected the voltage gain's magnitude, above 0, such as 8",
                ));
            }
            Some(g)
        }
    };
    let ic_spread = t.number(cx, "ic_spread", d.ic_spread, |x| {
        if x > 0.0 && x.is_finite() {
            Ok(())
        } else {
            Err("expected a fraction of IC, above 0, such as 0.25".into())
        }
    })?;
    let n = |x: f64| trim_number(x, 6);
    let refuse = |message: String| DesignError::Table {
        file: cx.file.into(),
        line,
        table: "[stage.rule]".into(),
        message,
    };
    if vrc <= 0.0 || vce <= 0.0 {
        return Err(refuse(format!(
            "vrc and vce must both be above 0 (here vrc = {}, vce = {}), such as vrc = 0.45, vce = 0.45",
            n(vrc),
            n(vce)
        )));
    }
    if topology == Topology::DualSupply {
        if let Some(v) = vre_given {
            return Err(v.refuse(cx, "a dual-supply stage takes no vre: the negative rail sets the drop across RE, and vrc : vce splits the rest"));
        }
    } else {
        let sum = vrc + vce + vre;
        if (sum - 1.0).abs() > 1e-6 {
            return Err(refuse(format!(
                "vrc + vce + vre add up to {} ({} + {} + {}); the three shares of the supply must add up to 1, such as 0.45 + 0.45 + 0.1",
                n(sum),
                n(vrc),
                n(vce),
                n(vre)
            )));
        }
        if vre <= 0.0 && topology.has_divider() {
            let e = "a divider stage needs an emitter resistor: give vre above 0, such as 0.1";
            return Err(match vre_given {
                Some(v) => v.refuse(cx, e),
                None => refuse(e.into()),
            });
        }
    }
    if topology == Topology::DividerSplit && gain.is_none() {
        return Err(DesignError::Missing {
            file: cx.file.into(),
            line,
            table: "[stage.rule]".into(),
            key: "gain",
            expected: "the voltage gain's magnitude into the load, such as gain = 8".into(),
        });
    }
    Ok(Rule {
        vrc,
        vce,
        vre: if topology == Topology::DualSupply {
            0.0
        } else {
            vre
        },
        stiffness,
        divider_max,
        gain,
        ic_spread,
    })
}

fn read_limits(cx: &Cx, t: &mut Tab) -> Result<Limits, DesignError> {
    let d = DEFAULT_LIMITS;
    let derate = t.number(cx, "derate", d.derate, |x| {
        if x > 0.0 && x <= 1.0 {
            Ok(())
        } else {
            Err("expected the fraction of each resistor's rating to design to, above 0 and at most 1, such as 0.5".into())
        }
    })?;
    let ambient = Celsius(t.number(cx, "ambient", d.ambient.0, celsius_ok)?);
    let temperature = match t.get(cx, "temperature") {
        None => None,
        Some(v) => {
            let pair: Option<Vec<f64>> = match v.item.as_value() {
                Some(Value::Array(a)) => a
                    .iter()
                    .map(|x| match x {
                        Value::Integer(i) => Some(*i.value() as f64),
                        Value::Float(f) => Some(*f.value()),
                        _ => None,
                    })
                    .collect(),
                _ => None,
            };
            match pair.as_deref() {
                Some(&[lo, hi]) if lo <= hi && celsius_ok(lo).is_ok() && celsius_ok(hi).is_ok() => {
                    Some((Celsius(lo), Celsius(hi)))
                }
                _ => {
                    return Err(v.refuse(
                        cx,
                        "expected the ambient range in °C as [low, high], such as [0, 50]",
                    ))
                }
            }
        }
    };
    Ok(Limits {
        derate,
        ambient,
        temperature,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_numbers_match_a_count_of_the_newlines_before() {
        let text = "a\nbb\n\nccc\r\nd";
        let cx = Cx::new("t.toml", text);
        for offset in 0..=text.len() + 3 {
            let counted = text.as_bytes()[..offset.min(text.len())]
                .iter()
                .filter(|&&b| b == b'\n')
                .count()
                + 1;
            assert_eq!(cx.line(offset), counted, "offset {offset}");
        }
        assert_eq!(Cx::new("e.toml", "").line(0), 1);
    }

    #[test]
    fn a_repeated_stage_name_names_the_first_line() {
        let stage = include_str!("../../examples/line-driver.toml");
        let text = format!("{stage}\n{stage}");
        let second = text.match_indices("[[stage]]").nth(1).unwrap().0;
        let err = parse("t.toml", &text).unwrap_err().to_string();
        let first = stage[..stage.find("[[stage]]").unwrap()]
            .matches('\n')
            .count()
            + 1;
        let at = text[..second].matches('\n').count() + 1;
        assert!(err.starts_with(&format!("t.toml:{at}:")), "{err}");
        assert!(err.contains(&format!("line {first} has the same")), "{err}");
    }
}
