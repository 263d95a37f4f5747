//! Keeping the stock file true to the drawer: take out the parts a design used (`stock withdraw`, once `stock take`) and put in the
//! parts that arrived (`stock add`).
//!
//! Both are pure edits of the file's bytes: only the qty fields of the rows concerned are rewritten (the
//! reader remembers where each sits, see [`crate::stock::table`]), and new parts are appended as rows in the
//! file's own column order, delimiter and line end, so comments, blank lines, quoting, unknown columns and
//! line ends all survive. A take that the stock can no longer cover is refused as a whole. Writing the
//! result safely is [`crate::save`]'s job.

use super::orderfile::Arrival;
use super::{power_text, same, tolerance_text, Spec};
use crate::notation::{code, parse_ohms};
use crate::stock::table::CsvError;
use crate::stock::{self, Defaults, Stock};
use crate::units::{Ohms, Tolerance, Watts};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::fmt;
use std::ops::Range;
use std::path::Path;

/// A stock file as read: its bytes, and the stock they hold (whose rows point into the bytes).
#[derive(Clone, Debug, PartialEq)]
pub struct StockFile {
    /// The file's contents, exactly as read.
    pub bytes: Vec<u8>,
    /// The validated stock.
    pub stock: Stock,
}

impl StockFile {
    /// Reads and validates a stock file.
    pub fn load(path: &Path, defaults: Defaults) -> Result<StockFile, CsvError> {
        let bytes = stock::table::read_bytes(path, stock::SCHEMA.kind)?;
        StockFile::parse(&path.display().to_string(), bytes, defaults)
    }

    /// Validates a stock file's contents; `file` names it in messages.
    pub fn parse(file: &str, bytes: Vec<u8>, defaults: Defaults) -> Result<StockFile, CsvError> {
        let stock = stock::parse(file, &bytes, defaults)?;
        Ok(StockFile { bytes, stock })
    }
}

/// The part of a design result that stock withdraw reads: what `biasfit design --json` writes, minus the
/// stages.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DesignResult {
    /// How many boards the counts are for.
    pub copies: u32,
    /// The parts to take from the stock.
    pub pick: Vec<Pick>,
}

/// One line of a design's pick list.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Pick {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance, as a fraction.
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
    /// Where the design found it; rows there are taken from first.
    #[serde(default)]
    pub location: Option<String>,
    /// Pieces, for all the result's copies together.
    pub count: u32,
}

impl Pick {
    /// The part picked.
    pub fn spec(&self) -> Spec {
        Spec {
            ohms: self.ohms,
            tolerance: self.tolerance,
            power: self.power,
        }
    }
}

/// A part the stock cannot supply.
#[derive(Clone, Debug, PartialEq)]
pub struct Shortage {
    /// The part.
    pub spec: Spec,
    /// Pieces wanted.
    pub wanted: u64,
    /// Pieces on hand.
    pub on_hand: u64,
}

/// Why a take or an add was refused; nothing was changed.
#[derive(Debug, thiserror::Error)]
pub enum TakeError {
    /// The design result could not be read, or is not a file biasfit reads.
    #[error(transparent)]
    Input(#[from] crate::input::InputError),
    /// The design result is not the JSON expected.
    #[error("{file}:{line}:{column}: {message}; expected the JSON that `biasfit design --json` writes, with \"copies\" and \"pick\"")]
    Json {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What the JSON reader found.
        message: String,
    },
    /// A pick entry holds an impossible value.
    #[error("{file}: pick {index}: {message}")]
    Pick {
        /// The file.
        file: String,
        /// 1-based position in the pick list.
        index: usize,
        /// What is wrong and what is expected.
        message: String,
    },
    /// The result was made for another number of boards.
    #[error("{file} was made for {made} copies, so its counts are for {made} boards; re-run design with --copies {asked} to take parts for {asked}")]
    Copies {
        /// The file.
        file: String,
        /// The result's copies.
        made: u32,
        /// The copies asked for.
        asked: u32,
    },
    /// The stock does not hold what the design needs.
    #[error("{file}: the stock holds too few for this build (all its boards together), so nothing was taken: {}", list(.shortages))]
    Short {
        /// The stock file.
        file: String,
        /// Every part short, in pick order.
        shortages: Vec<Shortage>,
    },
    /// A new part cannot be written into a file that lacks a column for what sets it apart.
    #[error("{order}:{line}: {spec} is not in {file}, which has no {column} column, and a row without one would read as {default}; add a {column} column to {file}")]
    NoColumn {
        /// The stock file.
        file: String,
        /// The order file.
        order: String,
        /// The order file's line.
        line: usize,
        /// The part.
        spec: Spec,
        /// The missing column.
        column: &'static str,
        /// What a blank field means in the stock.
        default: String,
    },
    /// A quantity would grow past what a row can hold.
    #[error(
        "{file}:{line}: adding {adding} to {spec} would pass {} pieces",
        u32::MAX
    )]
    Overflow {
        /// The stock file.
        file: String,
        /// The stock line.
        line: usize,
        /// The part.
        spec: Spec,
        /// Pieces being added.
        adding: u64,
    },
}

fn list(shortages: &[Shortage]) -> String {
    shortages
        .iter()
        .map(Shortage::to_string)
        .collect::<Vec<_>>()
        .join("; ")
}

/// Reads a design result from disk.
pub fn load_result(path: &Path) -> Result<DesignResult, TakeError> {
    let file = path.display().to_string();
    let bytes = crate::input::read(path, "design result")?;
    parse_result(&file, &bytes)
}

/// Reads a design result's contents and checks every pick entry.
pub fn parse_result(file: &str, bytes: &[u8]) -> Result<DesignResult, TakeError> {
    let result: DesignResult = serde_json::from_slice(bytes).map_err(|e| {
        let message = e.to_string();
        // serde_json ends its messages with the position, which the error already carries.
        let message = match message.rfind(" at line ") {
            Some(cut) => message[..cut].to_string(),
            None => message,
        };
        TakeError::Json {
            file: file.to_string(),
            line: e.line(),
            column: e.column(),
            message,
        }
    })?;
    if result.copies == 0 {
        return Err(TakeError::Json {
            file: file.to_string(),
            line: 1,
            column: 1,
            message: "\"copies\" is 0".into(),
        });
    }
    for (i, p) in result.pick.iter().enumerate() {
        let bad = |message: String| TakeError::Pick {
            file: file.to_string(),
            index: i + 1,
            message,
        };
        let (min, max) = (
            crate::notation::value::MIN_OHMS,
            crate::notation::value::MAX_OHMS,
        );
        if !(p.ohms.0 >= min && p.ohms.0 <= max) {
            return Err(bad(format!(
                "ohms {:?} is not a resistance biasfit handles; expected 1 mΩ to 1 TΩ",
                p.ohms.0
            )));
        }
        if !(p.tolerance.0 > 0.0 && p.tolerance.0 <= 0.5) {
            return Err(bad(format!(
                "tolerance {:?} is not a tolerance; expected a fraction above 0 and at most 0.5",
                p.tolerance.0
            )));
        }
        if !(p.power.0 >= 1e-3 && p.power.0 <= 1e4) {
            return Err(bad(format!(
                "power {:?} is not a power rating; expected watts from 0.001 to 10000",
                p.power.0
            )));
        }
    }
    Ok(result)
}

impl DesignResult {
    /// The pieces to take for `copies` boards: a result made for one board scales to any number; one made
    /// for several is taken as it is, and only for that number. `file` names the result in messages.
    pub fn wanted(&self, file: &str, copies: Option<u32>) -> Result<Vec<Pick>, TakeError> {
        let factor = match (self.copies, copies) {
            (1, Some(m)) => m,
            (_, None) => 1,
            (n, Some(m)) if n == m => 1,
            (n, Some(m)) => {
                return Err(TakeError::Copies {
                    file: file.to_string(),
                    made: n,
                    asked: m,
                })
            }
        };
        self.pick
            .iter()
            .enumerate()
            .map(|(i, p)| {
                let count = p.count.checked_mul(factor).ok_or_else(|| TakeError::Pick {
                    file: file.to_string(),
                    index: i + 1,
                    message: format!(
                        "{} × {factor} copies is more pieces than a stock holds",
                        p.count
                    ),
                })?;
                Ok(Pick { count, ..p.clone() })
            })
            .collect()
    }
}

/// One row whose quantity changes.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Change {
    /// The stock file's line.
    pub line: usize,
    /// The part's value.
    pub ohms: Ohms,
    /// The part's tolerance.
    pub tolerance: Tolerance,
    /// The part's power rating.
    pub power: Watts,
    /// The row's location.
    pub location: Option<String>,
    /// Pieces before.
    pub before: u32,
    /// Pieces after.
    pub after: u32,
}

/// A row appended for a part the stock did not list.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NewRow {
    /// The line it lands on.
    pub line: usize,
    /// The part's value.
    pub ohms: Ohms,
    /// The part's tolerance.
    pub tolerance: Tolerance,
    /// The part's power rating.
    pub power: Watts,
    /// Pieces.
    pub qty: u32,
}

/// A stock file's new contents and what changed.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Edit {
    /// The stock file.
    pub file: String,
    /// The new contents.
    #[serde(skip)]
    pub contents: Vec<u8>,
    /// Rows whose qty changed, in file order.
    pub changes: Vec<Change>,
    /// Rows appended.
    pub added: Vec<NewRow>,
}

impl Edit {
    /// Whether the file stays as it was.
    pub fn is_empty(&self) -> bool {
        self.changes.is_empty() && self.added.is_empty()
    }

    /// The net change in pieces: negative for a take, positive for an add.
    pub fn net_pieces(&self) -> i64 {
        self.changes
            .iter()
            .map(|c| c.after as i64 - c.before as i64)
            .sum::<i64>()
            + self.added.iter().map(|r| r.qty as i64).sum::<i64>()
    }

    /// The changes as an aligned table for people.
    pub fn render(&self) -> String {
        use std::fmt::Write;
        let mut out = String::new();
        if self.is_empty() {
            let _ = writeln!(out, "{}: nothing to change", self.file);
            return out;
        }
        let net = self.net_pieces();
        let what = if net < 0 {
            format!("took {} piece(s)", -net)
        } else {
            format!("added {net} piece(s)")
        };
        let _ = writeln!(
            out,
            "{}: {what}; {} row(s) changed, {} row(s) new",
            self.file,
            self.changes.len(),
            self.added.len()
        );
        let mut rows: Vec<[String; 7]> = vec![[
            "line".into(),
            "value".into(),
            "tolerance".into(),
            "power".into(),
            "location".into(),
            "before".into(),
            "after".into(),
        ]];
        let mut all: Vec<(usize, [String; 7])> = self
            .changes
            .iter()
            .map(|c| {
                (
                    c.line,
                    [
                        c.line.to_string(),
                        code(c.ohms),
                        c.tolerance.to_string(),
                        c.power.to_string(),
                        c.location.clone().unwrap_or_default(),
                        c.before.to_string(),
                        c.after.to_string(),
                    ],
                )
            })
            .collect();
        all.extend(self.added.iter().map(|r| {
            (
                r.line,
                [
                    r.line.to_string(),
                    code(r.ohms),
                    r.tolerance.to_string(),
                    r.power.to_string(),
                    "(new row)".into(),
                    "-".into(),
                    r.qty.to_string(),
                ],
            )
        }));
        all.sort_by_key(|(line, _)| *line);
        rows.extend(all.into_iter().map(|(_, r)| r));
        let widths: Vec<usize> = (0..7)
            .map(|c| rows.iter().map(|r| r[c].chars().count()).max().unwrap_or(0))
            .collect();
        out.push('\n');
        for r in &rows {
            let mut line = String::new();
            for (c, cell) in r.iter().enumerate() {
                let pad = widths[c] - cell.chars().count();
                // Numbers right-aligned, words left-aligned.
                if matches!(c, 0 | 5 | 6) {
                    let _ = write!(line, "  {}{cell}", " ".repeat(pad));
                } else {
                    let _ = write!(line, "  {cell}{}", " ".repeat(pad));
                }
            }
            let _ = writeln!(out, "{}", line.trim_end());
        }
        out
    }
}

/// The file's bytes with each span replaced by its text (spans do not overlap), then `tail` appended.
fn splice(bytes: &[u8], mut edits: Vec<(Range<usize>, String)>, tail: &str) -> Vec<u8> {
    edits.sort_by_key(|(r, _)| r.start);
    let mut out = Vec::with_capacity(bytes.len() + tail.len() + 16);
    let mut at = 0;
    for (range, text) in edits {
        out.extend_from_slice(&bytes[at..range.start]);
        out.extend_from_slice(text.as_bytes());
        at = range.end;
    }
    out.extend_from_slice(&bytes[at..]);
    out.extend_from_slice(tail.as_bytes());
    out
}

/// Whether a row's location is one the design named (the pick may list several, joined with commas).
fn named(row: Option<&str>, pick: Option<&str>) -> bool {
    match (row, pick) {
        (Some(r), Some(p)) => p == r || p.split(',').any(|l| l.trim() == r),
        _ => false,
    }
}

/// The rows' changes as edits of the file, and as a report.
fn rewrite(sf: &StockFile, qty: &[u32]) -> (Vec<(Range<usize>, String)>, Vec<Change>) {
    let s = &sf.stock;
    let mut edits = Vec::new();
    let mut changes = Vec::new();
    for (row, &now) in s.rows.iter().zip(qty) {
        if now != row.qty {
            edits.push((row.qty_span.clone(), now.to_string()));
            let part = &s.parts[row.part];
            changes.push(Change {
                line: row.line,
                ohms: part.ohms,
                tolerance: part.tolerance,
                power: part.power,
                location: row.location.clone(),
                before: row.qty,
                after: now,
            });
        }
    }
    (edits, changes)
}

/// Takes the picked parts out of the stock: each from its part's rows, those at the pick's location first,
/// then the rest in file order. Refuses as a whole, naming every part short, when the stock cannot cover it.
pub fn take(sf: &StockFile, picks: &[Pick]) -> Result<Edit, TakeError> {
    let s = &sf.stock;
    let part_of = |p: &Pick| s.parts.iter().position(|q| Spec::of(q).matches(&p.spec()));
    // part → (its spec, pieces wanted, the first pick that wants it)
    let mut wanted: BTreeMap<usize, (Spec, u64, usize)> = BTreeMap::new();
    let mut missing = Vec::new();
    for (i, p) in picks.iter().enumerate().filter(|(_, p)| p.count > 0) {
        match part_of(p) {
            Some(id) => {
                let e = wanted.entry(id).or_insert((p.spec(), 0, i));
                e.1 += p.count as u64;
            }
            None => missing.push((
                i,
                Shortage {
                    spec: p.spec(),
                    wanted: p.count as u64,
                    on_hand: 0,
                },
            )),
        }
    }
    let mut short: Vec<(usize, Shortage)> = wanted
        .iter()
        .filter_map(|(&id, &(spec, want, first))| {
            let on_hand = s.parts[id].qty as u64;
            (want > on_hand).then_some((
                first,
                Shortage {
                    spec,
                    wanted: want,
                    on_hand,
                },
            ))
        })
        .collect();
    // The same absent part picked twice is one shortage.
    for (i, m) in missing {
        match short.iter_mut().find(|(_, x)| x.spec.matches(&m.spec)) {
            Some((_, x)) => x.wanted += m.wanted,
            None => short.push((i, m)),
        }
    }
    if !short.is_empty() {
        short.sort_by_key(|(i, _)| *i);
        return Err(TakeError::Short {
            file: s.file.clone(),
            shortages: short.into_iter().map(|(_, x)| x).collect(),
        });
    }
    let mut qty: Vec<u32> = s.rows.iter().map(|r| r.qty).collect();
    for p in picks.iter().filter(|p| p.count > 0) {
        let Some(id) = part_of(p) else { continue };
        let mut order: Vec<usize> = (0..s.rows.len())
            .filter(|&r| s.rows[r].part == id)
            .collect();
        // A stable sort keeps file order within each group.
        order.sort_by_key(|&r| !named(s.rows[r].location.as_deref(), p.location.as_deref()));
        let mut need = p.count;
        for r in order {
            let t = need.min(qty[r]);
            qty[r] -= t;
            need -= t;
            if need == 0 {
                break;
            }
        }
    }
    let (edits, changes) = rewrite(sf, &qty);
    Ok(Edit {
        file: s.file.clone(),
        contents: splice(&sf.bytes, edits, ""),
        changes,
        added: Vec::new(),
    })
}

/// A resistance as a stock row writes it: the IEC 60062 code when it reads back as the same value, else the
/// plain number, which always does.
fn value_text(ohms: Ohms) -> String {
    let c = code(ohms);
    match parse_ohms(&c) {
        Ok(back) if same(back.0, ohms.0) => c,
        _ => format!("{}", ohms.0),
    }
}

/// Adds what arrived: each part's row at the arrival's location, or else its first row in file order, gets its
/// qty raised; parts the stock does not list are appended as new rows, one per part, at the arrival's location
/// or "new" where the file has a location column. `order` names the order file in messages.
pub fn add(sf: &StockFile, order: &str, arrivals: &[Arrival]) -> Result<Edit, TakeError> {
    let s = &sf.stock;
    let layout = &s.layout;
    let mut qty: Vec<u64> = s.rows.iter().map(|r| r.qty as u64).collect();
    // A new part for each (spec, location), with the pieces and the first order line asking for it.
    struct Appended {
        spec: Spec,
        qty: u64,
        location: Option<String>,
        line: usize,
    }
    let mut new: Vec<Appended> = Vec::new();
    for a in arrivals.iter().filter(|a| a.qty > 0) {
        let spec = Spec {
            ohms: a.ohms,
            tolerance: a.tolerance,
            power: a.power,
        };
        match s.parts.iter().position(|q| Spec::of(q).matches(&spec)) {
            Some(id) => {
                let mut rows = (0..s.rows.len()).filter(|&r| s.rows[r].part == id);
                let first = rows.clone().next();
                let r = rows
                    .find(|&r| named(s.rows[r].location.as_deref(), a.location.as_deref()))
                    .or(first)
                    .expect("every part comes from at least one row");
                qty[r] += a.qty as u64;
                if qty[r] > u32::MAX as u64 {
                    return Err(TakeError::Overflow {
                        file: s.file.clone(),
                        line: s.rows[r].line,
                        spec,
                        adding: a.qty as u64,
                    });
                }
            }
            None => {
                for (column, differs, default) in [
                    (
                        "tolerance",
                        !same(spec.tolerance.0, s.defaults.tolerance.0),
                        s.defaults.tolerance.to_string(),
                    ),
                    (
                        "power",
                        !same(spec.power.0, s.defaults.power.0),
                        s.defaults.power.to_string(),
                    ),
                ] {
                    if differs && !layout.columns.contains_key(column) {
                        return Err(TakeError::NoColumn {
                            file: s.file.clone(),
                            order: order.to_string(),
                            line: a.line,
                            spec,
                            column,
                            default,
                        });
                    }
                }
                match new
                    .iter_mut()
                    .find(|n| n.spec.matches(&spec) && n.location == a.location)
                {
                    Some(n) => n.qty += a.qty as u64,
                    None => new.push(Appended {
                        spec,
                        qty: a.qty as u64,
                        location: a.location.clone(),
                        line: a.line,
                    }),
                }
            }
        }
    }
    let qty: Vec<u32> = qty.into_iter().map(|q| q as u32).collect();
    let (edits, changes) = rewrite(sf, &qty);
    let mut tail = String::new();
    if !new.is_empty() && !layout.ends_with_newline {
        tail.push_str(layout.line_end.as_str());
    }
    let first_line = crate::stock::table::line_ends(&sf.bytes) + 1 + tail.len().min(1);
    let mut added = Vec::new();
    for (line, a) in (first_line..).zip(new) {
        let spec = a.spec;
        let n = u32::try_from(a.qty).map_err(|_| TakeError::Overflow {
            file: order.to_string(),
            line: a.line,
            spec,
            adding: a.qty,
        })?;
        let (value, count, tol, power) = (
            value_text(spec.ohms),
            n.to_string(),
            tolerance_text(spec.tolerance),
            power_text(spec.power),
        );
        tail.push_str(&layout.row(&[
            ("value", &value),
            ("qty", &count),
            ("tolerance", &tol),
            ("power", &power),
            ("location", a.location.as_deref().unwrap_or("new")),
        ]));
        added.push(NewRow {
            line,
            ohms: spec.ohms,
            tolerance: spec.tolerance,
            power: spec.power,
            qty: n,
        });
    }
    Ok(Edit {
        file: s.file.clone(),
        contents: splice(&sf.bytes, edits, &tail),
        changes,
        added,
    })
}

impl fmt::Display for Shortage {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}: {} wanted, {} on hand, {} short",
            self.spec,
            self.wanted,
            self.on_hand,
            self.wanted.saturating_sub(self.on_hand)
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::order::orderfile::{self, OrderLine};
    use crate::order::Money;
    use proptest::prelude::*;

    fn sf(text: &str) -> StockFile {
        StockFile::parse("s.csv", text.as_bytes().to_vec(), Defaults::default()).unwrap()
    }

    fn pick(ohms: f64, tol: f64, power: f64, location: Option<&str>, count: u32) -> Pick {
        Pick {
            ohms: Ohms(ohms),
            tolerance: Tolerance(tol),
            power: Watts(power),
            location: location.map(str::to_string),
            count,
        }
    }

    fn text(e: &Edit) -> String {
        String::from_utf8(e.contents.clone()).unwrap()
    }

    const DRAWER: &str = "\u{feff}# bench drawer, invented\r\nValue;Qty;Tol;Power;Bin;colour\r\n\r\n3k3; 12 ;5%;0.25W;A1;orange\r\n# sorted by hand\r\n\"3k3\";\"4\";J;1/4W;\"B;2\";\r\n560R;7;1%;0.5W;C3;green\r\n68k;0;5%;0.25W;D4;\r\n";

    #[test]
    fn take_rewrites_only_the_qty_fields() {
        let s = sf(DRAWER);
        let e = take(
            &s,
            &[
                pick(3300.0, 0.05, 0.25, None, 14),
                pick(560.0, 0.01, 0.5, None, 2),
            ],
        )
        .unwrap();
        let want = DRAWER
            .replace("3k3; 12 ;", "3k3; 0 ;")
            .replace("\"3k3\";\"4\";", "\"3k3\";\"2\";")
            .replace("560R;7;", "560R;5;");
        assert_eq!(text(&e), want);
        assert_eq!(e.changes.len(), 3);
        assert_eq!(
            (e.changes[0].line, e.changes[0].before, e.changes[0].after),
            (4, 12, 0)
        );
        assert_eq!(e.net_pieces(), -16);
    }

    #[test]
    fn an_empty_pick_list_changes_nothing() {
        let s = sf(DRAWER);
        let e = take(&s, &[pick(3300.0, 0.05, 0.25, None, 0)]).unwrap();
        assert!(e.is_empty());
        assert_eq!(e.contents, s.bytes);
        assert_eq!(e.render(), "s.csv: nothing to change\n");
    }

    #[test]
    fn the_report_is_an_aligned_table() {
        let s = sf(DRAWER);
        let e = take(&s, &[pick(3300.0, 0.05, 0.25, Some("B;2"), 6)]).unwrap();
        assert_eq!(
            e.render(),
            "s.csv: took 6 piece(s); 2 row(s) changed, 0 row(s) new\n\n\
             \x20 line  value  tolerance  power   location  before  after\n\
             \x20    4  3k3    5 %        250 mW  A1            12     10\n\
             \x20    6  3k3    5 %        250 mW  B;2            4      0\n"
        );
    }

    #[test]
    fn take_prefers_the_design_s_location() {
        let s = sf(DRAWER);
        let e = take(&s, &[pick(3300.0, 0.05, 0.25, Some("B;2"), 6)]).unwrap();
        // B;2 (line 6) gives its 4 first, then A1 in file order gives 2.
        assert_eq!(
            e.changes
                .iter()
                .map(|c| (c.line, c.after))
                .collect::<Vec<_>>(),
            vec![(4, 10), (6, 0)]
        );
        // A joined location list, as a merged part prints it, counts too.
        let e = take(&s, &[pick(3300.0, 0.05, 0.25, Some("B;2, Z9"), 1)]).unwrap();
        assert_eq!(e.changes[0].line, 6);
    }

    #[test]
    fn take_refuses_naming_every_short_part() {
        let s = sf(DRAWER);
        let err = take(
            &s,
            &[
                pick(3300.0, 0.05, 0.25, None, 10),
                pick(68e3, 0.05, 0.25, None, 1),
                pick(3300.0, 0.05, 0.25, None, 7),
                pick(1e3, 0.05, 0.25, None, 2),
                pick(560.0, 0.01, 0.5, None, 7),
            ],
        )
        .unwrap_err();
        assert_eq!(
            err.to_string(),
            "s.csv: the stock holds too few for this build (all its boards together), so nothing was taken: \
             3k3 5 % 250 mW: 17 wanted, 16 on hand, 1 short; 68k 5 % 250 mW: 1 wanted, 0 on hand, 1 short; \
             1k 5 % 250 mW: 2 wanted, 0 on hand, 2 short"
        );
    }

    #[test]
    fn tolerance_and_power_must_match_too() {
        let s = sf(DRAWER);
        // 560R is stocked at 1 % 0.5 W only.
        assert!(take(&s, &[pick(560.0, 0.05, 0.5, None, 1)]).is_err());
        assert!(take(&s, &[pick(560.0, 0.01, 0.25, None, 1)]).is_err());
        // Decimal noise from JSON is not a different part.
        assert!(take(&s, &[pick(560.000_000_000_1, 0.01, 0.5, None, 1)]).is_ok());
    }

    #[test]
    fn add_raises_rows_and_appends_new_parts_in_the_file_s_layout() {
        let s = sf(DRAWER);
        let arrivals = [
            Arrival {
                ohms: Ohms(68e3),
                tolerance: Tolerance(0.05),
                power: Watts(0.25),
                qty: 100,
                location: None,
                line: 2,
            },
            Arrival {
                ohms: Ohms(4.7e3),
                tolerance: Tolerance(0.01),
                power: Watts(0.25),
                qty: 10,
                location: None,
                line: 3,
            },
            Arrival {
                ohms: Ohms(4.7e3),
                tolerance: Tolerance(0.01),
                power: Watts(0.25),
                qty: 5,
                location: None,
                line: 4,
            },
        ];
        let e = add(&s, "o.csv", &arrivals).unwrap();
        let want = DRAWER.replace("68k;0;", "68k;100;") + "4k7;15;1%;0.25W;new;\r\n";
        assert_eq!(text(&e), want);
        assert_eq!(e.added[0].line, 9);
        assert_eq!(e.net_pieces(), 115);
        // The appended row reads back as the part it stands for.
        let back = sf(&text(&e));
        let p = back.stock.parts.last().unwrap();
        assert_eq!(
            (p.ohms, p.tolerance, p.qty),
            (Ohms(4700.0), Tolerance(0.01), 15)
        );
    }

    #[test]
    fn add_to_a_file_without_a_final_newline_or_a_tolerance_column() {
        let s = sf("value,qty\n1k,2");
        let a = |tol: f64| Arrival {
            ohms: Ohms(2200.0),
            tolerance: Tolerance(tol),
            power: Watts(0.25),
            qty: 3,
            location: None,
            line: 2,
        };
        let e = add(&s, "o.csv", &[a(0.05)]).unwrap();
        assert_eq!(text(&e), "value,qty\n1k,2\n2k2,3\n");
        assert_eq!(e.added[0].line, 3);
        let err = add(&s, "o.csv", &[a(0.01)]).unwrap_err().to_string();
        assert_eq!(
            err,
            "o.csv:2: 2k2 1 % 250 mW is not in s.csv, which has no tolerance column, and a row without one \
             would read as 5 %; add a tolerance column to s.csv"
        );
    }

    #[test]
    fn add_refuses_to_overflow_a_row() {
        let s = sf("value,qty\n1k,4294967290\n");
        let err = add(
            &s,
            "o.csv",
            &[Arrival {
                ohms: Ohms(1e3),
                tolerance: Tolerance(0.05),
                power: Watts(0.25),
                qty: 10,
                location: None,
                line: 2,
            }],
        )
        .unwrap_err();
        assert!(
            err.to_string().starts_with("s.csv:2: adding 10 to 1k"),
            "{err}"
        );
    }

    #[test]
    fn design_results_are_checked() {
        let ok = br#"{"copies": 1, "pick": [{"ohms": 3300.0, "tolerance": 0.05, "power": 0.25, "location": "A1", "count": 2}], "stages": []}"#;
        let r = parse_result("d.json", ok).unwrap();
        assert_eq!(r.pick[0].location.as_deref(), Some("A1"));
        assert_eq!(r.wanted("d.json", Some(3)).unwrap()[0].count, 6);
        assert_eq!(r.wanted("d.json", None).unwrap()[0].count, 2);
        let four = br#"{"copies": 4, "pick": [{"ohms": 3300.0, "tolerance": 0.05, "power": 0.25, "location": null, "count": 8}]}"#;
        let r = parse_result("d.json", four).unwrap();
        assert_eq!(r.wanted("d.json", Some(4)).unwrap()[0].count, 8);
        assert_eq!(r.wanted("d.json", None).unwrap()[0].count, 8);
        assert_eq!(
            r.wanted("d.json", Some(2)).unwrap_err().to_string(),
            "d.json was made for 4 copies, so its counts are for 4 boards; re-run design with --copies 2 to take parts for 2"
        );
        for (json, want) in [
            (&b"{\"copies\": 1}"[..], "d.json:1:13: missing field `pick`"),
            (b"{\"copies\": 1, \"pick\": [{\"ohms\": 1, \"tolerance\": 0.05, \"power\": 0.25, \"count\": 1.5}]}", "invalid type: floating point `1.5`"),
            (b"{\"copies\": 1, \"pick\": [{\"ohms\": 1e30, \"tolerance\": 0.05, \"power\": 0.25, \"count\": 1}]}", "d.json: pick 1: ohms 1e30 is not a resistance"),
            (b"{\"copies\": 1, \"pick\": [{\"ohms\": 10, \"tolerance\": 5, \"power\": 0.25, \"count\": 1}]}", "pick 1: tolerance 5.0 is not a tolerance"),
            (b"{\"copies\": 1, \"pick\": [{\"ohms\": 10, \"tolerance\": 0.05, \"power\": -1, \"count\": 1}]}", "pick 1: power -1.0 is not a power rating"),
            (b"{\"copies\": 0, \"pick\": []}", "\"copies\" is 0"),
            (b"not json", "d.json:1:2: expected ident"),
            (b"", "EOF while parsing"),
        ] {
            let err = parse_result("d.json", json).unwrap_err().to_string();
            assert!(err.contains(want), "{}: {err}", String::from_utf8_lossy(json));
        }
    }

    /// An order file that buys back exactly what an edit took.
    fn order_for(e: &Edit) -> String {
        let lines: Vec<OrderLine> = e
            .changes
            .iter()
            .map(|c| OrderLine {
                ohms: c.ohms,
                tolerance: c.tolerance,
                power: c.power,
                qty: c.before - c.after,
                packs: 1,
                cost: Money(0.0),
            })
            .collect();
        orderfile::render_csv(&lines)
    }

    #[test]
    fn take_then_add_back_gives_the_file_back() {
        let s = sf(DRAWER);
        let e = take(
            &s,
            &[
                pick(3300.0, 0.05, 0.25, None, 5),
                pick(560.0, 0.01, 0.5, None, 7),
            ],
        )
        .unwrap();
        let taken = StockFile::parse("s.csv", e.contents.clone(), Defaults::default()).unwrap();
        let order = order_for(&e);
        let arrivals = orderfile::parse("o.csv", order.as_bytes(), Defaults::default()).unwrap();
        let back = add(&taken, "o.csv", &arrivals.rows).unwrap();
        assert_eq!(text(&back), DRAWER);
    }

    #[test]
    fn an_order_with_locations_puts_pieces_back_where_they_came_from() {
        let s = sf(DRAWER);
        let e = take(&s, &[pick(3300.0, 0.05, 0.25, Some("B;2"), 3)]).unwrap();
        assert_eq!((e.changes[0].line, e.changes[0].after), (6, 1));
        let taken = StockFile::parse("s.csv", e.contents, Defaults::default()).unwrap();
        let order = |location: &str| {
            let text = format!("value,tolerance,power,qty,location\n3k3,5%,0.25W,3,{location}\n5k6,5%,0.25W,2,{location}\n");
            orderfile::parse("o.csv", text.as_bytes(), Defaults::default())
                .unwrap()
                .rows
        };
        let back = add(&taken, "o.csv", &order("\"B;2\"")).unwrap();
        assert_eq!(
            text(&back),
            DRAWER.to_string() + "5k6;2;5%;0.25W;\"B;2\";\r\n"
        );
        // Without a location the pieces go to the part's first row.
        let back = add(&taken, "o.csv", &order("")).unwrap();
        assert_eq!(back.changes[0].line, 4);
        assert!(text(&back).ends_with("5k6;2;5%;0.25W;new;\r\n"));
    }

    proptest! {
        #[test]
        fn take_is_exact_and_add_undoes_it(
            rows in proptest::collection::vec((0usize..40, 0u32..30, prop::bool::ANY, prop::bool::ANY), 1..12),
            end in 0usize..3,
            semicolon in prop::bool::ANY,
            picks in proptest::collection::vec((0usize..12, 0u32..40), 0..6),
        ) {
            // Distinct E24 values, one row each, with spaces, quotes and comments sprinkled in.
            let values = crate::notation::Series::E24.values_between(Ohms(10.0), Ohms(1e6));
            let mut seen = std::collections::HashSet::new();
            let rows: Vec<_> = rows.into_iter().filter(|r| seen.insert(r.0)).collect();
            let (d, nl) = (if semicolon { ";" } else { "," }, ["\n", "\r\n", "\r"][end]);
            let mut text = format!("# invented{nl}value{d}qty{d}note{nl}");
            for (v, q, quoted, comment) in &rows {
                let qty = if *quoted { format!("\"{q}\"") } else { format!(" {q}") };
                text.push_str(&format!("{}{d}{qty}{d}n{v}{nl}", code(values[*v])));
                if *comment {
                    text.push_str(&format!("{nl}# between{nl}"));
                }
            }
            let s = sf(&text);
            let picks: Vec<Pick> = picks
                .into_iter()
                .filter(|(i, _)| *i < rows.len())
                .map(|(i, c)| pick(values[rows[i].0].0, 0.05, 0.25, None, c))
                .collect();
            let mut wanted = std::collections::HashMap::new();
            for p in &picks {
                *wanted.entry(p.ohms.0.to_bits()).or_insert(0u64) += p.count as u64;
            }
            let feasible = s.stock.parts.iter().all(|p| {
                wanted.get(&p.ohms.0.to_bits()).is_none_or(|&w| w <= p.qty as u64)
            });
            match take(&s, &picks) {
                Err(e) => {
                    prop_assert!(!feasible, "refused a feasible take: {}", e);
                }
                Ok(e) => {
                    prop_assert!(feasible);
                    let after = StockFile::parse("s.csv", e.contents.clone(), Defaults::default()).unwrap();
                    // Exact: every part lost just what was wanted, and no row went below zero (u32).
                    for (p, q) in s.stock.parts.iter().zip(&after.stock.parts) {
                        let w = wanted.get(&p.ohms.0.to_bits()).copied().unwrap_or(0);
                        prop_assert_eq!(q.qty as u64, p.qty as u64 - w);
                    }
                    // Only qty fields changed: the lines without a change are byte-identical.
                    let changed: std::collections::HashSet<usize> = e.changes.iter().map(|c| c.line).collect();
                    let old_lines: Vec<&str> = text.split(nl).collect();
                    let new_text = String::from_utf8(e.contents.clone()).unwrap();
                    let new_lines: Vec<&str> = new_text.split(nl).collect();
                    prop_assert_eq!(old_lines.len(), new_lines.len());
                    for (i, (a, b)) in old_lines.iter().zip(&new_lines).enumerate() {
                        if !changed.contains(&(i + 1)) {
                            prop_assert_eq!(a, b);
                        }
                    }
                    let order = order_for(&e);
                    let arrivals = orderfile::parse("o.csv", order.as_bytes(), Defaults::default()).unwrap();
                    let back = add(&after, "o.csv", &arrivals.rows).unwrap();
                    prop_assert_eq!(String::from_utf8(back.contents).unwrap(), text);
                }
            }
        }
    }
}
