//! Reading `[[circuit]]` tables from a design file into checked [`Circuit`]s.
//!
//! The keys the issue fixes are the contract: `name`; `[circuit.rails]` (node = volts; `gnd` is 0 V);
//! `[[circuit.part]]` with `name`, `kind`, its pins (`between` for two-terminal resistors and current sources,
//! `collector`/`base`/`emitter`, `anode`/`cathode`, `drain`/`gate`/`source`, `out`/`adjust`/`input`,
//! `plus`/`minus`/`out`/`supplies`), `value` for a fixed resistor, and the stage transistor's keys for npn and
//! pnp; `[[circuit.target]]` with `node`, `part` or `between` and `volts` or `amps`. Added here (and documented
//! in docs/formats.md): `weight` on a target; `[[circuit.require]]` with `part` and `region`, `min_amps`, or
//! `stiff` with `over`; `[circuit.limits]` as `[stage.limits]`; and each kind's own parameters. As in the
//! stage reader, positions are kept so every refusal names the file, the line, the field and the text; an
//! unknown key is refused naming the nearest valid one. Line numbers come from a table of line starts,
//! built once per file. Top-level `[[stage]]` tables are left to the stage reader.

// A refusal ends the read, once per file, so the size of the error value costs nothing worth boxing for.
#![allow(clippy::result_large_err)]

use super::fet::Channel;
use super::jfet::Jfet;
use super::model::{Circuit, Kind, ModelError, Quantity, Ranged, Requirement, SlotRule, Target};
use super::mosfet::Mosfet;
use super::region::Region;
use super::solver::{Options, Solver};
use crate::notation::{parse_amps, parse_ohms, parse_tolerance, parse_volts, parse_watts};
use crate::stage::{Beta, Limits, Polarity, Transistor, Vbe};
use crate::units::{Amps, Celsius, Ohms, Volts, Watts};
use std::ops::Range;
use toml_edit::{ImDocument, Item, Table, Value};

/// Why a circuit was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CircuitFileError {
    /// The text is not valid TOML.
    #[error("{file}:{line}: not valid TOML: {message}; expected key = value lines under [[circuit]], [circuit.rails], [[circuit.part]] and [[circuit.target]], with text in quotes")]
    Syntax {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// The parser's reason.
        message: String,
    },
    /// A rail given twice.
    #[error("{file}:{line}: rail '{rail}' is named twice in [circuit.rails]; give each rail once")]
    RailTwice {
        /// The file.
        file: String,
        /// 1-based line of the second.
        line: usize,
        /// The rail.
        rail: String,
    },
    /// A key that is not known.
    #[error("{file}:{line}: unknown key '{key}' in {table}{}; valid keys are {}", suggestion.as_ref().map(|s| format!(" (did you mean '{s}'?)")).unwrap_or_default(), valid.join(", "))]
    UnknownKey {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// The table.
        table: String,
        /// The key as written.
        key: String,
        /// The nearest valid key.
        suggestion: Option<String>,
        /// Every valid key.
        valid: Vec<&'static str>,
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
    #[error("{file}:{line}: {field} = {text}: {expected}")]
    Field {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// The field ("circuit.part.value").
        field: String,
        /// The value as written.
        text: String,
        /// What is wrong and what is expected.
        expected: String,
    },
    /// The circuit's structure is wrong (a floating node, a lonely pin, two parts of one name).
    #[error("{file}:{line}: circuit \"{circuit}\": {source}")]
    Model {
        /// The file.
        file: String,
        /// 1-based line of the part or circuit.
        line: usize,
        /// The circuit.
        circuit: String,
        /// What is wrong.
        source: ModelError,
    },
    /// A circuit with every value fixed that has no operating point.
    #[error("{file}:{line}: {message}; check the parts' values and pins")]
    NoOperatingPoint {
        /// The file.
        file: String,
        /// 1-based line of the circuit.
        line: usize,
        /// The solver's one line.
        message: String,
    },
    /// No `[[circuit]]` tables.
    #[error(
        "{file}: no [[circuit]] tables; expected at least one, starting with a line [[circuit]]"
    )]
    NoCircuits {
        /// The file.
        file: String,
    },
}

type Res<T> = Result<T, CircuitFileError>;

/// Line numbers from byte offsets, by binary search in the line starts.
struct Lines {
    starts: Vec<usize>,
}

impl Lines {
    fn of(text: &str) -> Lines {
        let mut starts = vec![0];
        starts.extend(
            text.bytes()
                .enumerate()
                .filter(|(_, b)| *b == b'\n')
                .map(|(i, _)| i + 1),
        );
        Lines { starts }
    }
    fn line(&self, offset: usize) -> usize {
        self.starts.partition_point(|&s| s <= offset)
    }
}

struct Cx<'a> {
    file: &'a str,
    text: &'a str,
    lines: Lines,
}

/// The valid name nearest to `key` by edit distance, if it is close enough to be a likely slip.
pub fn nearest<'k>(key: &str, valid: &[&'k str]) -> Option<&'k str> {
    let key = key.to_ascii_lowercase();
    valid
        .iter()
        .map(|v| (edit_distance(&key, &v.to_ascii_lowercase()), *v))
        .min()
        .filter(|(d, v)| *d <= 2.max(v.len() / 3) && *d < v.len().max(key.len()))
        .map(|(_, v)| v)
}

fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1];
        for (j, cb) in b.iter().enumerate() {
            cur.push(
                (prev[j] + usize::from(ca != *cb))
                    .min(prev[j + 1] + 1)
                    .min(cur[j] + 1),
            );
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
    fn refuse(&self, cx: &Cx, expected: impl Into<String>) -> CircuitFileError {
        CircuitFileError::Field {
            file: cx.file.into(),
            line: self.line,
            field: self.field.clone(),
            text: self.text.clone(),
            expected: expected.into(),
        }
    }
    fn number(&self) -> Option<f64> {
        number_of(self.item.as_value()?)
    }
    fn string(&self) -> Option<&str> {
        self.item.as_str()
    }
}

fn number_of(v: &Value) -> Option<f64> {
    match v {
        Value::Integer(i) => Some(*i.value() as f64),
        Value::Float(f) => Some(*f.value()),
        _ => None,
    }
}

/// A table being read: each key read is ticked off; one left over is unknown.
struct Tab<'a> {
    name: String,
    path: String,
    line: usize,
    entries: Vec<(&'a str, usize, &'a Item)>,
    used: Vec<bool>,
    valid: Vec<&'static str>,
}

impl<'a> Tab<'a> {
    fn of(
        cx: &Cx,
        name: &str,
        path: &str,
        line: usize,
        t: &'a Table,
        valid: &[&'static str],
    ) -> Res<Tab<'a>> {
        let entries: Vec<(&str, usize, &Item)> = t
            .iter()
            .filter_map(|(k, _)| t.get_key_value(k))
            .map(|(k, item)| {
                let at = k
                    .span()
                    .or_else(|| item.span())
                    .map_or(line, |s| cx.lines.line(s.start));
                (k.get(), at, item)
            })
            .collect();
        if let Some((key, at, _)) = entries.iter().find(|(k, _, _)| !valid.contains(k)) {
            return Err(unknown(cx, *at, name, key, valid));
        }
        Ok(Tab {
            name: name.into(),
            path: path.into(),
            line,
            used: vec![false; entries.len()],
            entries,
            valid: valid.to_vec(),
        })
    }

    fn get(&mut self, cx: &Cx, key: &str) -> Option<Val<'a>> {
        let i = self.entries.iter().position(|(k, _, _)| *k == key)?;
        self.used[i] = true;
        let (_, line, item) = self.entries[i];
        let text = item
            .span()
            .and_then(|s: Range<usize>| cx.text.get(s))
            .map(|s| s.lines().map(str::trim).collect::<Vec<_>>().join(" "))
            .unwrap_or_else(|| format!("[{}.{key}]", self.path));
        Some(Val {
            item,
            line,
            field: format!("{}.{key}", self.path),
            text,
        })
    }

    fn require(&mut self, cx: &Cx, key: &'static str, expected: &str) -> Res<Val<'a>> {
        self.get(cx, key).ok_or_else(|| CircuitFileError::Missing {
            file: cx.file.into(),
            line: self.line,
            table: self.name.clone(),
            key,
            expected: expected.into(),
        })
    }

    /// Refuses a key this kind of part does not take (the union of keys passed the first check).
    fn finish(self, cx: &Cx, allowed: &[&'static str]) -> Res<()> {
        for ((key, line, _), used) in self.entries.iter().zip(&self.used) {
            if !used || !allowed.contains(key) {
                return Err(unknown(cx, *line, &self.name, key, allowed));
            }
        }
        let _ = &self.valid;
        Ok(())
    }
}

fn unknown(
    cx: &Cx,
    line: usize,
    table: &str,
    key: &str,
    valid: &[&'static str],
) -> CircuitFileError {
    CircuitFileError::UnknownKey {
        file: cx.file.into(),
        line,
        table: table.into(),
        key: key.into(),
        suggestion: nearest(key, valid).map(str::to_string),
        valid: valid.to_vec(),
    }
}

fn quantity<T>(
    cx: &Cx,
    v: &Val,
    parse: impl Fn(&str) -> Result<T, String>,
    from_number: impl Fn(f64) -> T,
) -> Res<T> {
    if let Some(x) = v.number() {
        return Ok(from_number(x));
    }
    match v.string() {
        Some(s) => parse(s).map_err(|e| v.refuse(cx, e)),
        None => Err(v.refuse(cx, "expected a number or a quoted value with its unit")),
    }
}

/// The most each quantity may be: only a slip (a lost decimal point) is refused.
const MOST_VOLTS: f64 = 1e3;
const MOST_AMPS: f64 = 100.0;

fn volts(cx: &Cx, v: &Val) -> Res<Volts> {
    let x = quantity(cx, v, |s| parse_volts(s).map_err(|e| e.to_string()), Volts)?;
    if !(x.0.is_finite() && x.0.abs() <= MOST_VOLTS) {
        return Err(v.refuse(cx, "expected volts, at most 1 kV either way"));
    }
    Ok(x)
}

fn positive(cx: &Cx, v: &Val, x: f64, what: &str, most: f64) -> Res<f64> {
    if x.is_finite() && x > 0.0 && x <= most {
        Ok(x)
    } else {
        Err(v.refuse(
            cx,
            format!("{what} must be greater than zero and at most {most:e}"),
        ))
    }
}

fn amps(cx: &Cx, v: &Val) -> Res<Amps> {
    let a = quantity(cx, v, |s| parse_amps(s).map_err(|e| e.to_string()), Amps)?;
    Ok(Amps(positive(cx, v, a.0, "a current", MOST_AMPS)?))
}

fn ohms(cx: &Cx, v: &Val) -> Res<Ohms> {
    let o = quantity(cx, v, |s| parse_ohms(s).map_err(|e| e.to_string()), Ohms)?;
    Ok(Ohms(positive(cx, v, o.0, "a resistance", 1e12)?))
}

fn watts(cx: &Cx, v: &Val) -> Res<Watts> {
    let w = quantity(cx, v, |s| parse_watts(s).map_err(|e| e.to_string()), Watts)?;
    Ok(Watts(positive(cx, v, w.0, "a power", 1e4)?))
}

/// One value or [min, typical, max], each read by `one`.
fn ranged<T: Copy + PartialOrd>(cx: &Cx, v: &Val, one: impl Fn(&Val) -> Res<T>) -> Res<Ranged<T>> {
    let Some(Value::Array(a)) = v.item.as_value() else {
        return one(v).map(Ranged::exactly);
    };
    let items: Vec<&Value> = a.iter().collect();
    if items.len() != 3 {
        return Err(v.refuse(cx, "expected one value or three, [min, typical, max]"));
    }
    let mut out = Vec::new();
    for it in items {
        let item = Item::Value(it.clone());
        let sub = Val {
            item: &item,
            line: v.line,
            field: v.field.clone(),
            text: v.text.clone(),
        };
        out.push(one(&sub)?);
    }
    if !(out[0] <= out[1] && out[1] <= out[2]) {
        return Err(v.refuse(cx, "expected [min, typical, max] in that order"));
    }
    Ok(Ranged {
        min: out[0],
        typ: out[1],
        max: out[2],
    })
}

/// A slot's `range = ["10k", "100k"]`: two resistances, the smaller first.
fn slot_range(cx: &Cx, v: &Val) -> Res<(Ohms, Ohms)> {
    let expected =
        "expected two quoted resistances, the smaller first, such as [\"10k\", \"100k\"]";
    let Some(Value::Array(a)) = v.item.as_value() else {
        return Err(v.refuse(cx, expected));
    };
    let items: Vec<&Value> = a.iter().collect();
    if items.len() != 2 {
        return Err(v.refuse(cx, expected));
    }
    let mut out = Vec::new();
    for it in items {
        let item = Item::Value(it.clone());
        let sub = Val {
            item: &item,
            line: v.line,
            field: v.field.clone(),
            text: v.text.clone(),
        };
        out.push(ohms(cx, &sub)?);
    }
    if out[0].0 >= out[1].0 {
        return Err(v.refuse(cx, expected));
    }
    Ok((out[0], out[1]))
}

fn name_of(cx: &Cx, v: &Val, what: &str) -> Res<String> {
    v.string()
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .ok_or_else(|| v.refuse(cx, format!("expected {what} as a quoted, non-empty name")))
}

const CIRCUIT_KEYS: &[&str] = &["name", "rails", "part", "target", "require", "limits"];
const LIMITS_KEYS: &[&str] = &["derate", "ambient", "temperature"];
const TARGET_KEYS: &[&str] = &["node", "part", "between", "volts", "amps", "weight"];
const REQUIRE_KEYS: &[&str] = &["part", "region", "min_amps", "stiff", "over", "overdrive"];
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
const KINDS: &[&str] = &[
    "resistor",
    "npn",
    "pnp",
    "diode",
    "led",
    "zener",
    "n-jfet",
    "p-jfet",
    "n-mosfet",
    "p-mosfet",
    "current-source",
    "reference",
    "opamp",
];

/// Every key any part may have; each kind's own list is checked after reading.
const PART_KEYS: &[&str] = &[
    "name",
    "kind",
    "between",
    "value",
    "power",
    "tolerance",
    "hint",
    "range",
    "collector",
    "base",
    "emitter",
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
    "anode",
    "cathode",
    "volts",
    "at",
    "n",
    "slope",
    "drain",
    "gate",
    "source",
    "idss",
    "pinch_off",
    "threshold",
    "k",
    "amps",
    "out",
    "adjust",
    "input",
    "pin_amps",
    "plus",
    "minus",
    "supplies",
    "gain",
    "headroom",
];

/// The keys a kind takes.
fn kind_keys(kind: &str) -> Vec<&'static str> {
    let mut k = vec!["name", "kind"];
    let own: &[&str] = match kind {
        "resistor" => &["between", "value", "power", "tolerance", "hint", "range"],
        "npn" | "pnp" => &["collector", "base", "emitter"],
        "diode" | "led" => &["anode", "cathode", "volts", "at", "n", "max_power"],
        "zener" => &["anode", "cathode", "volts", "at", "slope", "max_power"],
        "n-jfet" | "p-jfet" => &["drain", "gate", "source", "idss", "pinch_off", "max_power"],
        "n-mosfet" | "p-mosfet" => &["drain", "gate", "source", "threshold", "k", "max_power"],
        "current-source" => &["between", "amps"],
        "reference" => &["out", "adjust", "input", "volts", "pin_amps", "max_power"],
        _ => &[
            "plus",
            "minus",
            "out",
            "supplies",
            "gain",
            "headroom",
            "max_power",
        ],
    };
    k.extend_from_slice(own);
    if matches!(kind, "npn" | "pnp") {
        k.extend_from_slice(TRANSISTOR_KEYS);
    }
    k
}

/// Reads every `[[circuit]]` of a design file's text; `file` names it in messages.
pub fn parse(file: &str, text: &str) -> Res<Vec<Circuit>> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let cx = Cx {
        file,
        text,
        lines: Lines::of(text),
    };
    let doc = ImDocument::parse(text).map_err(|e| {
        let line = e.span().map_or(1, |s| cx.lines.line(s.start));
        let message = e.message().trim().replace('\n', " ");
        // A rail given twice is a duplicate key in [circuit.rails]: say it in the circuit's words.
        if let Some(rest) = message.strip_prefix("duplicate key `") {
            if let Some((key, table)) = rest.split_once('`') {
                if table.contains("rails") {
                    return CircuitFileError::RailTwice {
                        file: file.into(),
                        line,
                        rail: key.to_string(),
                    };
                }
            }
        }
        CircuitFileError::Syntax {
            file: file.into(),
            line,
            message,
        }
    })?;
    let root = doc.as_table();
    for (key, _) in root.iter() {
        if key != "circuit" && key != "stage" {
            let line = root
                .get_key_value(key)
                .and_then(|(k, _)| k.span())
                .map_or(1, |s| cx.lines.line(s.start));
            return Err(unknown(
                &cx,
                line,
                "the file's top level",
                key,
                &["stage", "circuit"],
            ));
        }
    }
    let Some(item) = root.get("circuit") else {
        return Err(CircuitFileError::NoCircuits { file: file.into() });
    };
    let Item::ArrayOfTables(list) = item else {
        return Err(CircuitFileError::Field {
            file: file.into(),
            line: item.span().map_or(1, |s| cx.lines.line(s.start)),
            field: "circuit".into(),
            text: "[circuit]".into(),
            expected: "write each circuit as [[circuit]], with double brackets".into(),
        });
    };
    let mut out: Vec<Circuit> = Vec::new();
    for (n, t) in list.iter().enumerate() {
        let line = t.span().map_or(1, |s| cx.lines.line(s.start));
        let c = read_circuit(&cx, t, line, n + 1)?;
        if out.iter().any(|o| o.name == c.name) {
            return Err(CircuitFileError::Field {
                file: file.into(),
                line,
                field: "circuit.name".into(),
                text: format!("\"{}\"", c.name),
                expected: "circuit names must differ; rename one".into(),
            });
        }
        out.push(c);
    }
    if out.is_empty() {
        return Err(CircuitFileError::NoCircuits { file: file.into() });
    }
    Ok(out)
}

/// An array of tables under a key, or an error naming the double brackets.
fn tables<'a>(cx: &Cx, tab: &mut Tab<'a>, key: &str) -> Res<Vec<(&'a Table, usize)>> {
    let Some(v) = tab.get(cx, key) else {
        return Ok(Vec::new());
    };
    match v.item {
        Item::ArrayOfTables(a) => Ok(a
            .iter()
            .map(|t| (t, t.span().map_or(v.line, |s| cx.lines.line(s.start))))
            .collect()),
        _ => Err(v.refuse(
            cx,
            format!("write each as [[circuit.{key}]], with double brackets"),
        )),
    }
}

fn read_circuit(cx: &Cx, t: &Table, line: usize, number: usize) -> Res<Circuit> {
    let mut tab = Tab::of(cx, "[[circuit]]", "circuit", line, t, CIRCUIT_KEYS)?;
    let name = match tab.get(cx, "name") {
        Some(v) => name_of(cx, &v, "the circuit's name")?,
        None => format!("circuit {number}"),
    };
    let mut c = Circuit::new(&name);
    c.line = line;
    let model = |line: usize, c: &Circuit, source: ModelError| CircuitFileError::Model {
        file: cx.file.into(),
        line,
        circuit: c.name.clone(),
        source,
    };
    if let Some(v) = tab.get(cx, "rails") {
        let Item::Table(rt) = v.item else {
            return Err(v.refuse(cx, "expected a table [circuit.rails] of node = volts"));
        };
        for (k, item) in rt.iter() {
            let at = rt
                .get_key_value(k)
                .and_then(|(key, _)| key.span())
                .map_or(v.line, |s| cx.lines.line(s.start));
            let val = Val {
                item,
                line: at,
                field: format!("circuit.rails.{k}"),
                text: item
                    .span()
                    .and_then(|s| cx.text.get(s))
                    .unwrap_or("(value)")
                    .trim()
                    .to_string(),
            };
            let volts = volts(cx, &val)?;
            c.rail(k, volts).map_err(|e| model(at, &c, e))?;
        }
    }
    if let Some(v) = tab.get(cx, "limits") {
        let Item::Table(lt) = v.item else {
            return Err(v.refuse(cx, "expected a table [circuit.limits]"));
        };
        let mut l = Tab::of(
            cx,
            "[circuit.limits]",
            "circuit.limits",
            v.line,
            lt,
            LIMITS_KEYS,
        )?;
        c.limits = read_limits(cx, &mut l)?;
        l.finish(cx, LIMITS_KEYS)?;
    }
    for (pt, pline) in tables(cx, &mut tab, "part")? {
        read_part(cx, &mut c, pt, pline)?;
    }
    c.check().map_err(|e| {
        // Name the line of the part the refusal is about, when there is one.
        let part_line = match &e {
            ModelError::LonelyNode { part, .. } | ModelError::Floating { part, .. } => {
                c.find_part(part).map(|i| c.parts[i].line)
            }
            ModelError::SupplyNotRail { part, .. } => c.find_part(part).map(|i| c.parts[i].line),
            _ => None,
        };
        model(part_line.unwrap_or(line), &c, e)
    })?;
    for (tt, tline) in tables(cx, &mut tab, "target")? {
        let t = read_target(cx, &c, tt, tline)?;
        c.targets.push(t);
    }
    for (rt, rline) in tables(cx, &mut tab, "require")? {
        let r = read_requirement(cx, &c, rt, rline)?;
        c.requirements.push(r);
    }
    tab.finish(cx, CIRCUIT_KEYS)?;
    // With every value fixed the circuit can be solved now: refuse one with no operating point here.
    if c.slots().is_empty() {
        let solved = c
            .typical(&[])
            .map_err(|e| model(line, &c, e))
            .and_then(|b| {
                Solver::new(&c).solve(&b, &Options::default()).map_err(|e| {
                    CircuitFileError::NoOperatingPoint {
                        file: cx.file.into(),
                        line,
                        message: e.to_string(),
                    }
                })
            });
        solved?;
    }
    Ok(c)
}

fn celsius_ok(x: f64) -> Result<(), String> {
    if (-100.0..=300.0).contains(&x) {
        Ok(())
    } else {
        Err("expected a temperature in °C from -100 to 300".into())
    }
}

fn number(
    cx: &Cx,
    t: &mut Tab,
    key: &str,
    default: f64,
    ok: impl Fn(f64) -> Result<(), String>,
) -> Res<f64> {
    match t.get(cx, key) {
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

fn read_limits(cx: &Cx, t: &mut Tab) -> Res<Limits> {
    let d = crate::stage::design::DEFAULT_LIMITS;
    let derate = number(cx, t, "derate", d.derate, |x| {
        if x > 0.0 && x <= 1.0 {
            Ok(())
        } else {
            Err("expected the fraction of each part's rating to design to, above 0 and at most 1, such as 0.5".into())
        }
    })?;
    let ambient = Celsius(number(cx, t, "ambient", d.ambient.0, celsius_ok)?);
    let temperature = match t.get(cx, "temperature") {
        None => None,
        Some(v) => {
            let pair: Option<Vec<f64>> = match v.item.as_value() {
                Some(Value::Array(a)) => a.iter().map(number_of).collect(),
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

fn node_name(cx: &Cx, v: &Val) -> Res<String> {
    name_of(cx, v, "a node")
}

fn read_part(cx: &Cx, c: &mut Circuit, t: &Table, line: usize) -> Res<()> {
    let mut tab = Tab::of(cx, "[[circuit.part]]", "circuit.part", line, t, PART_KEYS)?;
    let name = name_of(
        cx,
        &tab.require(
            cx,
            "name",
            "the part's reference designator, such as \"R1\"",
        )?,
        "the part's name",
    )?;
    let kind_v = tab.require(cx, "kind", &format!("one of {}", KINDS.join(", ")))?;
    let kind_s = kind_v.string().map(str::trim).unwrap_or("");
    let Some(&kind_name) = KINDS.iter().find(|k| **k == kind_s) else {
        let hint = nearest(kind_s, KINDS)
            .map(|n| format!(" (did you mean {n}?)"))
            .unwrap_or_default();
        return Err(kind_v.refuse(cx, format!("expected one of {}{hint}", KINDS.join(", "))));
    };
    let pin = |tab: &mut Tab, key: &'static str| -> Res<String> {
        let v = tab.require(
            cx,
            key,
            &format!("the node the {key} is on, such as \"out\""),
        )?;
        node_name(cx, &v)
    };
    let pair = |tab: &mut Tab| -> Res<[String; 2]> {
        let v = tab.require(cx, "between", "the two nodes, such as [\"vcc\", \"out\"]")?;
        let names: Option<Vec<String>> = match v.item.as_value() {
            Some(Value::Array(a)) => a
                .iter()
                .map(|x| x.as_str().map(|s| s.trim().to_string()))
                .collect(),
            _ => None,
        };
        match names.as_deref() {
            Some([a, b]) if !a.is_empty() && !b.is_empty() => Ok([a.clone(), b.clone()]),
            _ => Err(v.refuse(
                cx,
                "expected two quoted node names, such as [\"vcc\", \"out\"]",
            )),
        }
    };
    let mut max_power = None;
    let (kind, pins): (Kind, Vec<String>) = match kind_name {
        "resistor" => {
            let p = pair(&mut tab)?;
            let value = tab.get(cx, "value").map(|v| ohms(cx, &v)).transpose()?;
            let power = tab.get(cx, "power").map(|v| watts(cx, &v)).transpose()?;
            let tolerance = match tab.get(cx, "tolerance") {
                None => None,
                Some(v) => Some(match v.string() {
                    Some(s) => parse_tolerance(s).map_err(|e| v.refuse(cx, e.to_string()))?,
                    None => return Err(v.refuse(cx, "expected a quoted tolerance, such as \"1%\"")),
                }),
            };
            let hint = tab.get(cx, "hint").map(|v| ohms(cx, &v)).transpose()?;
            let range = match tab.get(cx, "range") {
                None => None,
                Some(v) => Some(slot_range(cx, &v)?),
            };
            if value.is_some() {
                for key in ["hint", "range"] {
                    if let Some(v) = tab.get(cx, key) {
                        return Err(v.refuse(
                            cx,
                            "a hint or range is for a slot, a resistor without a value; remove it or the value",
                        ));
                    }
                }
            }
            if let (Some(h), Some((lo, hi))) = (hint, range) {
                if h.0 < lo.0 || h.0 > hi.0 {
                    let v = tab.get(cx, "hint").expect("read above");
                    return Err(v.refuse(
                        cx,
                        format!(
                            "expected a hint within the slot's range, {} to {}",
                            crate::notation::code(lo),
                            crate::notation::code(hi)
                        ),
                    ));
                }
            }
            if hint.is_some() || range.is_some() {
                c.rules.push(SlotRule {
                    part: c.parts.len(),
                    hint,
                    range,
                });
            }
            if value.is_none() {
                for (key, what) in [
                    ("power", power.is_some()),
                    ("tolerance", tolerance.is_some()),
                ] {
                    if what {
                        let v = tab.get(cx, key).expect("read above");
                        return Err(v.refuse(
                            cx,
                            "a slot's rating comes from the stock; give value too, or remove it",
                        ));
                    }
                }
            }
            (
                Kind::Resistor {
                    value,
                    power,
                    tolerance,
                },
                p.to_vec(),
            )
        }
        "npn" | "pnp" => {
            let pins = vec![
                pin(&mut tab, "collector")?,
                pin(&mut tab, "base")?,
                pin(&mut tab, "emitter")?,
            ];
            let transistor = read_transistor(cx, &mut tab)?;
            let polarity = if kind_name == "npn" {
                Polarity::Npn
            } else {
                Polarity::Pnp
            };
            (
                Kind::Bjt {
                    polarity,
                    transistor,
                },
                pins,
            )
        }
        "diode" | "led" => {
            let pins = vec![pin(&mut tab, "anode")?, pin(&mut tab, "cathode")?];
            let v = tab.require(cx, "volts", "the forward voltage at 'at', such as 0.65")?;
            let volts_f = volts(cx, &v)?;
            if volts_f.0 <= 0.0 {
                return Err(v.refuse(cx, "the forward voltage must be greater than zero"));
            }
            let at = amps(
                cx,
                &tab.require(
                    cx,
                    "at",
                    "the current the forward voltage is given at, such as \"10mA\"",
                )?,
            )?;
            // An LED's emission coefficient is nearer 2 than a silicon diode's 1 (common practice, no source).
            let default_n = if kind_name == "led" { 2.0 } else { 1.0 };
            let n = number(cx, &mut tab, "n", default_n, |n| {
                if (0.5..=10.0).contains(&n) {
                    Ok(())
                } else {
                    Err("expected an emission coefficient from 0.5 to 10".into())
                }
            })?;
            max_power = tab
                .get(cx, "max_power")
                .map(|v| watts(cx, &v))
                .transpose()?;
            (
                Kind::Diode {
                    led: kind_name == "led",
                    volts: volts_f,
                    at,
                    n,
                },
                pins,
            )
        }
        "zener" => {
            let pins = vec![pin(&mut tab, "anode")?, pin(&mut tab, "cathode")?];
            let v = tab.require(cx, "volts", "the breakdown voltage at 'at', such as 5.1")?;
            let vz = volts(cx, &v)?;
            if vz.0 <= 0.0 {
                return Err(v.refuse(cx, "the breakdown voltage must be greater than zero"));
            }
            let at = amps(
                cx,
                &tab.require(
                    cx,
                    "at",
                    "the reverse current the breakdown voltage is given at, such as \"5mA\"",
                )?,
            )?;
            let slope = ohms(
                cx,
                &tab.require(cx, "slope", "the slope resistance in breakdown, such as 10")?,
            )?;
            if slope.0 * at.0 >= vz.0 {
                let v = tab.get(cx, "slope").expect("read above");
                return Err(v.refuse(cx, "the slope resistance times the test current must be below the breakdown voltage"));
            }
            max_power = tab
                .get(cx, "max_power")
                .map(|v| watts(cx, &v))
                .transpose()?;
            (
                Kind::Zener {
                    volts: vz,
                    at,
                    slope,
                },
                pins,
            )
        }
        "n-jfet" | "p-jfet" => {
            let pins = vec![
                pin(&mut tab, "drain")?,
                pin(&mut tab, "gate")?,
                pin(&mut tab, "source")?,
            ];
            let idss = ranged(
                cx,
                &tab.require(
                    cx,
                    "idss",
                    "the drain current at VGS = 0, such as [\"4mA\", \"8mA\", \"14mA\"]",
                )?,
                |v| amps(cx, v),
            )?;
            let pv = tab.require(
                cx,
                "pinch_off",
                "the pinch-off voltage, such as [-1, -2, -4]",
            )?;
            let pinch = ranged(cx, &pv, |v| {
                let x = volts(cx, v)?;
                if x.0 == 0.0 {
                    Err(v.refuse(cx, "the pinch-off voltage cannot be zero"))
                } else {
                    Ok(Volts(x.0.abs()))
                }
            })?;
            max_power = tab
                .get(cx, "max_power")
                .map(|v| watts(cx, &v))
                .transpose()?;
            let channel = if kind_name == "n-jfet" {
                Channel::N
            } else {
                Channel::P
            };
            (
                Kind::Jfet(Jfet {
                    channel,
                    idss,
                    pinch_off: pinch,
                }),
                pins,
            )
        }
        "n-mosfet" | "p-mosfet" => {
            let pins = vec![
                pin(&mut tab, "drain")?,
                pin(&mut tab, "gate")?,
                pin(&mut tab, "source")?,
            ];
            let tv = tab.require(
                cx,
                "threshold",
                "the threshold voltage, such as [1.0, 1.8, 2.5]",
            )?;
            let threshold = ranged(cx, &tv, |v| {
                let x = volts(cx, v)?;
                if x.0 == 0.0 {
                    Err(v.refuse(cx, "the threshold cannot be zero"))
                } else {
                    Ok(Volts(x.0.abs()))
                }
            })?;
            let kv = tab.require(
                cx,
                "k",
                "the transconductance parameter in A/V² (ID = ½·k·(VGS − VT)²), such as 0.1",
            )?;
            let k = ranged(cx, &kv, |v| {
                let x = v
                    .number()
                    .ok_or_else(|| v.refuse(cx, "expected a number in A/V²"))?;
                positive(cx, v, x, "k", 1e3)
            })?;
            max_power = tab
                .get(cx, "max_power")
                .map(|v| watts(cx, &v))
                .transpose()?;
            let channel = if kind_name == "n-mosfet" {
                Channel::N
            } else {
                Channel::P
            };
            (
                Kind::Mosfet(Mosfet {
                    channel,
                    threshold,
                    k,
                }),
                pins,
            )
        }
        "current-source" => {
            let p = pair(&mut tab)?;
            let a = amps(
                cx,
                &tab.require(
                    cx,
                    "amps",
                    "the current from the first node to the second, such as \"1mA\"",
                )?,
            )?;
            (Kind::CurrentSource { amps: a }, p.to_vec())
        }
        "reference" => {
            let out = pin(&mut tab, "out")?;
            let adj = pin(&mut tab, "adjust")?;
            let input = match tab.get(cx, "input") {
                Some(v) => node_name(cx, &v)?,
                None => super::model::GROUND_NAME.to_string(),
            };
            let v = tab.require(cx, "volts", "the output above the adjust pin, such as 1.25")?;
            let vr = volts(cx, &v)?;
            if vr.0 <= 0.0 {
                return Err(v.refuse(cx, "the reference voltage must be greater than zero"));
            }
            let pin_amps = match tab.get(cx, "pin_amps") {
                None => Amps(0.0),
                Some(v) => amps(cx, &v)?,
            };
            max_power = tab
                .get(cx, "max_power")
                .map(|v| watts(cx, &v))
                .transpose()?;
            (
                Kind::Reference {
                    volts: vr,
                    pin: pin_amps,
                },
                vec![out, adj, input],
            )
        }
        _ => {
            let plus = pin(&mut tab, "plus")?;
            let minus = pin(&mut tab, "minus")?;
            let out = pin(&mut tab, "out")?;
            let sv = tab.require(
                cx,
                "supplies",
                "the two supply rails, positive first, such as [\"vcc\", \"gnd\"]",
            )?;
            let names: Option<Vec<String>> = match sv.item.as_value() {
                Some(Value::Array(a)) => a
                    .iter()
                    .map(|x| x.as_str().map(|s| s.trim().to_string()))
                    .collect(),
                _ => None,
            };
            let Some([hi, lo]) = names.as_deref() else {
                return Err(sv.refuse(
                    cx,
                    "expected the two supply rails, positive first, such as [\"vcc\", \"gnd\"]",
                ));
            };
            // 100 000 (100 dB) when not given: a typical general-purpose figure (from memory).
            let gain = number(cx, &mut tab, "gain", 1e5, |g| {
                if (1.0..=1e9).contains(&g) {
                    Ok(())
                } else {
                    Err("expected an open-loop gain from 1 to 1e9, such as 100000".into())
                }
            })?;
            let headroom = match tab.get(cx, "headroom") {
                None => Volts(0.0),
                Some(v) => {
                    let h = volts(cx, &v)?;
                    if h.0 < 0.0 {
                        return Err(v.refuse(cx, "the headroom cannot be negative"));
                    }
                    h
                }
            };
            max_power = tab
                .get(cx, "max_power")
                .map(|v| watts(cx, &v))
                .transpose()?;
            (
                Kind::OpAmp { gain, headroom },
                vec![plus, minus, out, hi.clone(), lo.clone()],
            )
        }
    };
    let keys = kind_keys(kind_name);
    tab.finish(cx, &keys)?;
    let refs: Vec<&str> = pins.iter().map(String::as_str).collect();
    let i = c
        .add(&name, kind, &refs)
        .map_err(|e| CircuitFileError::Model {
            file: cx.file.into(),
            line,
            circuit: c.name.clone(),
            source: e,
        })?;
    c.parts[i].line = line;
    c.parts[i].max_power = max_power;
    Ok(())
}

fn read_transistor(cx: &Cx, t: &mut Tab) -> Res<Transistor> {
    let bv = t.require(
        cx,
        "beta",
        "the current gain: one number, or [min, typical, max]",
    )?;
    let b = ranged(cx, &bv, |v| {
        let x = v
            .number()
            .ok_or_else(|| v.refuse(cx, "expected beta as a number"))?;
        if (1.0..=1e5).contains(&x) {
            Ok(x)
        } else {
            Err(v.refuse(cx, "expected 1 ≤ beta ≤ 100000"))
        }
    })?;
    let beta = Beta {
        min: b.min,
        typ: b.typ,
        max: b.max,
    };
    let vbe = match t.get(cx, "vbe") {
        None => Vbe::Fixed(Volts(0.65)),
        Some(v) => {
            let table: Option<Vec<(String, Item)>> = match v.item {
                Item::Value(Value::InlineTable(it)) => Some(
                    it.iter()
                        .map(|(k, val)| (k.to_string(), Item::Value(val.clone())))
                        .collect(),
                ),
                Item::Table(tt) => {
                    Some(tt.iter().map(|(k, i)| (k.to_string(), i.clone())).collect())
                }
                _ => None,
            };
            match table {
                None => {
                    let x = volts(cx, &v)?;
                    if !(x.0 > 0.0 && x.0 < 2.0) {
                        return Err(v.refuse(cx, "expected VBE between 0 and 2 V, such as 0.65"));
                    }
                    Vbe::Fixed(x)
                }
                Some(entries) => {
                    let mut volts_v = None;
                    let mut at_v = None;
                    let mut n = 1.0;
                    for (k, item) in &entries {
                        let sub = Val {
                            item,
                            line: v.line,
                            field: format!("{}.{k}", v.field),
                            text: v.text.clone(),
                        };
                        match k.as_str() {
                            "volts" => volts_v = Some(volts(cx, &sub)?),
                            "at" => at_v = Some(amps(cx, &sub)?),
                            "n" => {
                                n = sub
                                    .number()
                                    .filter(|n| (0.5..=3.0).contains(n))
                                    .ok_or_else(|| {
                                        sub.refuse(
                                            cx,
                                            "expected an ideality factor between 0.5 and 3",
                                        )
                                    })?;
                            }
                            other => {
                                return Err(unknown(
                                    cx,
                                    v.line,
                                    "vbe",
                                    other,
                                    &["volts", "at", "n"],
                                ))
                            }
                        }
                    }
                    match (volts_v, at_v) {
                        (Some(volts), Some(at)) if volts.0 > 0.0 && volts.0 < 2.0 => Vbe::Diode { volts, at, n },
                        _ => return Err(v.refuse(cx, "expected { volts = 0.65, at = \"1mA\", n = 1 } with volts between 0 and 2")),
                    }
                }
            }
        }
    };
    let level = match vbe {
        Vbe::Fixed(v) | Vbe::Diode { volts: v, .. } => v.0,
    };
    let vce_sat = match t.get(cx, "vce_sat") {
        None => Volts(0.2_f64.min(level / 2.0)),
        Some(v) => {
            let x = volts(cx, &v)?;
            if !(x.0 >= 0.0 && x.0 < level) {
                return Err(v.refuse(
                    cx,
                    "expected a saturation voltage from 0 up to (not including) VBE",
                ));
            }
            x
        }
    };
    let max_power = t.get(cx, "max_power").map(|v| watts(cx, &v)).transpose()?;
    let max_ic = t.get(cx, "max_ic").map(|v| amps(cx, &v)).transpose()?;
    let max_vce = match t.get(cx, "max_vce") {
        None => None,
        Some(v) => {
            let x = volts(cx, &v)?.abs();
            Some(Volts(positive(cx, &v, x.0, "the voltage limit", 1e4)?))
        }
    };
    // About −2 mV/°C: the textbook figure for silicon (from memory; the stage reader's default).
    let vbe_tempco = number(cx, t, "vbe_tempco", -0.002, |x| {
        if x.abs() <= 0.01 {
            Ok(())
        } else {
            Err("expected volts per °C, such as -0.002".into())
        }
    })?;
    let beta_tempco = number(cx, t, "beta_tempco", 0.0, |x| {
        if x.abs() <= 0.05 {
            Ok(())
        } else {
            Err("expected a fraction per °C, such as 0.005".into())
        }
    })?;
    let reference = Celsius(number(cx, t, "measured_at", 25.0, celsius_ok)?);
    let tj_max = Celsius(number(cx, t, "tj_max", 150.0, |x| {
        if x > 25.0 && x <= 400.0 {
            Ok(())
        } else {
            Err("expected the maximum junction temperature in °C, above 25".into())
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

/// A node a target or requirement names, which must exist.
fn existing_node(cx: &Cx, c: &Circuit, v: &Val, s: &str) -> Res<usize> {
    c.find_node(s).ok_or_else(|| {
        let names: Vec<&str> = c.nodes.iter().map(String::as_str).collect();
        let hint = nearest(s, &names)
            .map(|n| format!(" (did you mean '{n}'?)"))
            .unwrap_or_default();
        v.refuse(
            cx,
            format!(
                "the circuit has no node '{s}'{hint}; expected one of its nodes: {}",
                names.join(", ")
            ),
        )
    })
}

fn existing_part(cx: &Cx, c: &Circuit, v: &Val) -> Res<usize> {
    let s = name_of(cx, v, "a part")?;
    c.find_part(&s).ok_or_else(|| {
        let names: Vec<&str> = c.parts.iter().map(|p| p.name.as_str()).collect();
        let hint = nearest(&s, &names)
            .map(|n| format!(" (did you mean '{n}'?)"))
            .unwrap_or_default();
        v.refuse(
            cx,
            format!(
                "the circuit has no part '{s}'{hint}; its parts are {}",
                names.join(", ")
            ),
        )
    })
}

fn read_target(cx: &Cx, c: &Circuit, t: &Table, line: usize) -> Res<Target> {
    let mut tab = Tab::of(
        cx,
        "[[circuit.target]]",
        "circuit.target",
        line,
        t,
        TARGET_KEYS,
    )?;
    let node = tab.get(cx, "node");
    let part = tab.get(cx, "part");
    let between = tab.get(cx, "between");
    let given = [node.is_some(), part.is_some(), between.is_some()]
        .iter()
        .filter(|x| **x)
        .count();
    if given != 1 {
        return Err(CircuitFileError::Missing {
            file: cx.file.into(),
            line,
            table: "[[circuit.target]]".into(),
            key: "node",
            expected: "exactly one of node = \"out\" (with volts), part = \"Q1\" (with amps) or between = [\"a\", \"b\"] (with volts)".into(),
        });
    }
    let (quantity, unit) = if let Some(v) = node {
        let s = node_name(cx, &v)?;
        (Quantity::Node(existing_node(cx, c, &v, &s)?), "volts")
    } else if let Some(v) = part {
        (Quantity::Current(existing_part(cx, c, &v)?), "amps")
    } else {
        let v = between.expect("one was given");
        let names: Option<Vec<String>> = match v.item.as_value() {
            Some(Value::Array(a)) => a
                .iter()
                .map(|x| x.as_str().map(|s| s.trim().to_string()))
                .collect(),
            _ => None,
        };
        let Some([a, b]) = names.as_deref() else {
            return Err(v.refuse(
                cx,
                "expected two quoted node names, such as [\"c1\", \"c2\"]",
            ));
        };
        (
            Quantity::Between(existing_node(cx, c, &v, a)?, existing_node(cx, c, &v, b)?),
            "volts",
        )
    };
    let value = if unit == "volts" {
        let v = tab.require(cx, "volts", "the voltage aimed at, such as 6.0")?;
        if tab.get(cx, "amps").is_some() {
            return Err(v.refuse(cx, "a voltage target takes volts, not amps"));
        }
        let x = volts(cx, &v)?.0;
        if x == 0.0 {
            return Err(v.refuse(cx, "a target of 0 has no relative deviation; aim at a voltage from another node with between"));
        }
        x
    } else {
        let v = tab.require(cx, "amps", "the current aimed at, such as \"2mA\"")?;
        if tab.get(cx, "volts").is_some() {
            return Err(v.refuse(cx, "a part target takes amps, not volts"));
        }
        amps(cx, &v)?.0
    };
    let weight = number(cx, &mut tab, "weight", 1.0, |w| {
        if w > 0.0 && w <= 1e3 {
            Ok(())
        } else {
            Err("expected a weight above 0, such as 1 or 2".into())
        }
    })?;
    tab.finish(cx, TARGET_KEYS)?;
    Ok(Target {
        quantity,
        value,
        weight,
        line,
    })
}

fn read_requirement(cx: &Cx, c: &Circuit, t: &Table, line: usize) -> Res<Requirement> {
    let mut tab = Tab::of(
        cx,
        "[[circuit.require]]",
        "circuit.require",
        line,
        t,
        REQUIRE_KEYS,
    )?;
    let pv = tab.require(cx, "part", "the part the requirement is on, such as \"Q1\"")?;
    let part = existing_part(cx, c, &pv)?;
    let region = tab.get(cx, "region");
    let min = tab.get(cx, "min_amps");
    let stiff = tab.get(cx, "stiff");
    let overdrive = tab.get(cx, "overdrive");
    let r = match (region, min, stiff, overdrive) {
        (None, None, None, Some(v)) => {
            let times = v.number().filter(|x| *x >= 1.0 && *x <= 1e3).ok_or_else(|| v.refuse(cx, "expected how many times the least base current that saturates it at min beta, at least 1, such as 2"))?;
            if !matches!(c.parts[part].kind, Kind::Bjt { .. }) {
                return Err(pv.refuse(cx, "overdrive is a bipolar transistor's; name an npn or pnp"));
            }
            Requirement::Overdrive { part, times }
        }
        (Some(v), None, None, None) => {
            let names: Option<Vec<String>> = match v.item.as_value() {
                Some(Value::Array(a)) => a.iter().map(|x| x.as_str().map(|s| s.trim().to_string())).collect(),
                Some(Value::String(s)) => Some(vec![s.value().trim().to_string()]),
                _ => None,
            };
            let list = c.parts[part].kind.regions();
            let names_ok: Vec<&str> = list.iter().map(|r| r.name()).collect();
            if list.is_empty() {
                return Err(v.refuse(cx, format!("{} has no regions; only transistors, zeners and op-amps do", c.parts[part].name)));
            }
            let mut allowed: Vec<Region> = Vec::new();
            for n in names.unwrap_or_default() {
                match list.iter().find(|r| r.name() == n) {
                    Some(r) => allowed.push(*r),
                    None => return Err(v.refuse(cx, format!("expected one or more of {}", names_ok.join(", ")))),
                }
            }
            if allowed.is_empty() {
                return Err(v.refuse(cx, format!("expected one or more of {}", names_ok.join(", "))));
            }
            Requirement::Region { part, allowed }
        }
        (None, Some(v), None, None) => Requirement::MinCurrent { part, amps: amps(cx, &v)? },
        (None, None, Some(v), None) => {
            let times = v.number().filter(|x| *x > 0.0 && *x <= 1e6).ok_or_else(|| v.refuse(cx, "expected a ratio above 0, such as 10"))?;
            let ov = tab.require(cx, "over", "the transistor whose base current it is held against, such as \"Q1\"")?;
            let over = existing_part(cx, c, &ov)?;
            if !matches!(c.parts[over].kind, Kind::Bjt { .. }) {
                return Err(ov.refuse(cx, "stiffness is held against a bipolar transistor's base current; name an npn or pnp"));
            }
            Requirement::Stiff { part, over, times }
        }
        _ => {
            return Err(CircuitFileError::Missing {
                file: cx.file.into(),
                line,
                table: "[[circuit.require]]".into(),
                key: "region",
                expected: "exactly one of region = \"active\", min_amps = \"100uA\", stiff = 10 (with over = \"Q1\") or overdrive = 2".into(),
            })
        }
    };
    let mut allowed: Vec<&'static str> = vec!["part"];
    allowed.extend(match r {
        Requirement::Region { .. } => vec!["region"],
        Requirement::MinCurrent { .. } => vec!["min_amps"],
        Requirement::Stiff { .. } => vec!["stiff", "over"],
        Requirement::Overdrive { .. } => vec!["overdrive"],
    });
    tab.finish(cx, &allowed)?;
    Ok(r)
}

#[cfg(test)]
mod tests {
    use super::*;

    const HEAD: &str = "[[circuit]]\nname = \"t\"\n[circuit.rails]\nvcc = 12\n";

    fn refusal(body: &str) -> String {
        let text = format!("{HEAD}{body}");
        let e = parse("t.toml", &text).expect_err("refused").to_string();
        assert!(!e.contains('\n'), "one line: {e}");
        e
    }

    fn resistor(name: &str, a: &str, b: &str) -> String {
        format!("[[circuit.part]]\nname = \"{name}\"\nkind = \"resistor\"\nvalue = \"10k\"\nbetween = [\"{a}\", \"{b}\"]\n")
    }

    #[test]
    fn lines_come_from_the_line_start_table() {
        let l = Lines::of("a\nbb\n\nccc");
        assert_eq!(
            [l.line(0), l.line(1), l.line(2), l.line(5), l.line(6)],
            [1, 1, 2, 3, 4]
        );
    }

    #[test]
    fn a_good_divider_reads() {
        let text = format!(
            "{HEAD}{}{}[[circuit.target]]\nnode = \"mid\"\nvolts = 6\n",
            resistor("R1", "vcc", "mid"),
            resistor("R2", "mid", "gnd")
        );
        let c = parse("t.toml", &text).unwrap().remove(0);
        assert_eq!(c.parts.len(), 2);
        assert_eq!(c.targets.len(), 1);
        assert_eq!(c.parts[1].line, 10);
    }

    #[test]
    fn unknown_node_names_the_nearest() {
        // "mld" joins one pin only: a slip for "mid".
        let e = refusal(&format!(
            "{}{}{}",
            resistor("R1", "vcc", "mid"),
            resistor("R2", "mid", "gnd"),
            resistor("R3", "mld", "gnd")
        ));
        assert!(
            e.starts_with("t.toml:15:") && e.contains("'mld'") && e.contains("did you mean 'mid'"),
            "{e}"
        );
    }

    #[test]
    fn missing_pin() {
        let e = refusal("[[circuit.part]]\nname = \"Q1\"\nkind = \"npn\"\ncollector = \"vcc\"\nbase = \"vcc\"\nbeta = 100\n");
        assert!(
            e.starts_with("t.toml:5:") && e.contains("no 'emitter'"),
            "{e}"
        );
    }

    #[test]
    fn floating_node() {
        let e = refusal(&format!(
            "{}{}{}",
            resistor("R1", "vcc", "gnd"),
            resistor("R2", "x", "y"),
            resistor("R3", "y", "x")
        ));
        assert!(e.starts_with("t.toml:10:") && e.contains("floats"), "{e}");
    }

    #[test]
    fn rail_named_twice() {
        let e = refusal(&format!("vcc = 5\n{}", resistor("R1", "vcc", "gnd")));
        assert!(
            e.starts_with("t.toml:5:") && e.contains("rail 'vcc' is named twice"),
            "{e}"
        );
        let e = refusal(&format!("gnd = 5\n{}", resistor("R1", "vcc", "gnd")));
        assert!(e.contains("'gnd' is the 0 V node"), "{e}");
    }

    #[test]
    fn target_on_a_missing_node() {
        let e = refusal(&format!(
            "{}{}[[circuit.target]]\nnode = \"out\"\nvolts = 6\n",
            resistor("R1", "vcc", "mid"),
            resistor("R2", "mid", "gnd")
        ));
        assert!(
            e.starts_with("t.toml:16:") && e.contains("no node 'out'") && e.contains("mid"),
            "{e}"
        );
    }

    #[test]
    fn unknown_key_and_kind_get_hints() {
        let e = refusal("[[circuit.part]]\nname = \"R1\"\nkind = \"resistor\"\nvalu = \"1k\"\nbetween = [\"vcc\", \"gnd\"]\n");
        assert!(
            e.starts_with("t.toml:8:") && e.contains("did you mean 'value'"),
            "{e}"
        );
        let e = refusal(
            "[[circuit.part]]\nname = \"R1\"\nkind = \"resistr\"\nbetween = [\"vcc\", \"gnd\"]\n",
        );
        assert!(e.contains("did you mean resistor"), "{e}");
        // A key of another kind is refused with this kind's keys.
        let e = refusal("[[circuit.part]]\nname = \"R1\"\nkind = \"resistor\"\nbeta = 100\nbetween = [\"vcc\", \"gnd\"]\n");
        assert!(e.contains("unknown key 'beta'"), "{e}");
    }

    #[test]
    fn no_operating_point() {
        // Collector feedback fed from 0.272 V, below VBE and a hair above a 0.262 V vce_sat: no region of
        // the transistor model holds (see tests/circuit_equivalence.rs), so the fixed circuit is refused.
        let body = "[[circuit.part]]\nname = \"RC\"\nkind = \"resistor\"\nvalue = 10\nbetween = [\"vlow\", \"c\"]\n\
            [[circuit.part]]\nname = \"RB\"\nkind = \"resistor\"\nvalue = 1000\nbetween = [\"c\", \"b\"]\n\
            [[circuit.part]]\nname = \"RE\"\nkind = \"resistor\"\nvalue = 6036.185\nbetween = [\"e\", \"gnd\"]\n\
            [[circuit.part]]\nname = \"Q1\"\nkind = \"npn\"\ncollector = \"c\"\nbase = \"b\"\nemitter = \"e\"\nbeta = 30\n\
            vbe = { volts = 0.55, at = 0.00794395162316753, n = 1.53370788856087 }\nvce_sat = 0.2620738919011104\n";
        let mut found = None;
        for t in -20..=80 {
            let text = format!("[[circuit]]\nname = \"t\"\n[circuit.rails]\nvlow = 0.2720738919011104\n[circuit.limits]\nambient = {t}\n{body}");
            if let Err(e) = parse("t.toml", &text) {
                found = Some(e.to_string());
                break;
            }
        }
        let e = found.expect("some ambient has no operating point");
        assert!(
            e.starts_with("t.toml:1:")
                && e.contains("no operating point")
                && e.contains("Q1")
                && !e.contains('\n'),
            "{e}"
        );
    }
}
