//! The stock: the resistors on hand, read from a CSV file into validated parts that remember the lines they
//! came from.
//!
//! Columns are found by header name in any order and case, under the words people's spreadsheets use for
//! them ([`SCHEMA`]: `On hand` for qty, `Wattage` for power, `Value (Ω)` with its unit); value and qty are
//! required; tolerance, power, location and note are optional. Other columns are kept in the file and
//! ignored, and named in a warning: a rating in a column biasfit did not read would otherwise be replaced
//! by the default quietly. Rows with the same value,
//! tolerance and power merge into one [`Part`]. Every bad row is an error naming the file, the line, the
//! column and the text: nothing is dropped quietly. The CSV reading rules themselves (encoding, comments,
//! delimiter, quoting) live in [`table`], shared with the other CSV files biasfit reads.

pub mod summary;
pub mod table;

use crate::notation::{parse_ohms, parse_tolerance, parse_watts};
use crate::units::{Ohms, Tolerance, Watts};
use itertools::Itertools;
use std::collections::{HashMap, HashSet};
use std::ops::Range;
use std::path::Path;
use table::{Column, Schema, Table};

pub use summary::Summary;
pub use table::{CsvError, Layout};

/// One kind of resistor on hand: a value, tolerance and rating, with how many there are and where.
#[derive(Clone, Debug, PartialEq)]
pub struct Part {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance.
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
    /// Pieces on hand (the sum over merged rows).
    pub qty: u32,
    /// Every location the rows named, in file order, without repeats.
    pub locations: Vec<String>,
    /// Notes from the rows.
    pub notes: Vec<String>,
    /// The file lines (1-based) of the rows merged into this part.
    pub lines: Vec<usize>,
}

impl Part {
    /// The locations joined for display ("A3, B1"), or None when no row named one.
    pub fn location(&self) -> Option<String> {
        (!self.locations.is_empty()).then(|| self.locations.join(", "))
    }
}

/// One data row of the file, as read.
#[derive(Clone, Debug, PartialEq)]
pub struct Row {
    /// 1-based line in the file.
    pub line: usize,
    /// The part the row merged into.
    pub part: usize,
    /// The row's own quantity.
    pub qty: u32,
    /// The row's own location, if it names one.
    pub location: Option<String>,
    /// Where the qty text sits in the file's bytes, so that it can be rewritten in place.
    pub qty_span: Range<usize>,
}

/// A validated stock file.
#[derive(Clone, Debug, PartialEq)]
pub struct Stock {
    /// The file it came from, as given.
    pub file: String,
    /// Distinct parts, in order of first appearance.
    pub parts: Vec<Part>,
    /// The data rows, in file order.
    pub rows: Vec<Row>,
    /// The field delimiter found in the header line.
    pub delimiter: u8,
    /// How the file is laid out (column order, delimiter, line end), for rows appended to it.
    pub layout: Layout,
    /// What was assumed for rows that leave tolerance or power blank.
    pub defaults: Defaults,
    /// How many rows left tolerance blank, and how many power (each given the default).
    pub defaulted: (usize, usize),
    /// Header texts of the columns biasfit did not read, in file order.
    pub ignored: Vec<String>,
    /// The columns read: biasfit's name and the header text it was found under, in [`SCHEMA`] order.
    pub header: Vec<(String, String)>,
    /// Things the user should know but that did not stop the load (defaults applied, delimiter guessed).
    pub warnings: Vec<String>,
}

/// What to assume for a row that leaves tolerance or power blank.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Defaults {
    /// Tolerance for rows without one.
    pub tolerance: Tolerance,
    /// Power rating for rows without one.
    pub power: Watts,
}

impl Default for Defaults {
    /// 5 % and 0.25 W: the common carbon-film part.
    fn default() -> Self {
        Defaults {
            tolerance: Tolerance(0.05),
            power: Watts(0.25),
        }
    }
}

/// Why a stock file was refused (the shared CSV error: every variant names the file, and most the line).
pub type StockError = CsvError;

/// The columns a stock file has, with the header names accepted for each.
pub const SCHEMA: Schema = Schema {
    kind: "stock file",
    columns: &[
        Column {
            name: "value",
            aliases: &["value", "ohms", "ohm", "resistance", "resistor"],
            required: true,
        },
        Column {
            name: "qty",
            aliases: &[
                "qty", "quantity", "pcs", "pieces", "count", "on hand", "in stock", "stock",
            ],
            required: true,
        },
        Column {
            name: "tolerance",
            aliases: &["tolerance", "tol"],
            required: false,
        },
        Column {
            name: "power",
            aliases: &[
                "power",
                "rating",
                "power rating",
                "watts",
                "watt",
                "wattage",
            ],
            required: false,
        },
        Column {
            name: "location",
            aliases: &["location", "bin", "drawer", "place"],
            required: false,
        },
        Column {
            name: "note",
            aliases: &["note", "notes", "comment", "comments"],
            required: false,
        },
    ],
    example_header: "value,qty,tolerance,power,location",
};

/// The location given to parts that are not in the drawer but in a purchase (`order`): shown as "(to buy)",
/// never as a drawer label.
pub const TO_BUY: &str = "to buy";

/// Reads a stock file from disk.
pub fn load(path: &Path, defaults: Defaults) -> Result<Stock, StockError> {
    let bytes = table::read_bytes(path, SCHEMA.kind)?;
    parse(&path.display().to_string(), &bytes, defaults)
}

/// Reads a stock file's contents; `file` names it in messages.
pub fn parse(file: &str, bytes: &[u8], defaults: Defaults) -> Result<Stock, StockError> {
    let table = Table::parse(file, bytes, &SCHEMA)?;
    let mut warnings = table.warnings.clone();
    let quoted = |names: &[String]| {
        names
            .iter()
            .map(|n| format!("'{}'", crate::notation::excerpt(n)))
            .join(", ")
    };
    if !table.ignored.is_empty() {
        warnings.push(format!(
            "{file}:{}: biasfit does not read the column(s) {}, so they are ignored; it reads {} (see the stock format for the header words each accepts)",
            table.header.line,
            quoted(&table.ignored),
            SCHEMA
                .columns
                .iter()
                .map(|c| c.name)
                .join(", ")
        ));
    }
    let mut parts: Vec<Part> = Vec::new();
    let mut rows = Vec::with_capacity(table.records.len());
    let mut by_key: HashMap<(u64, u64, u64), usize> = HashMap::new();
    let (mut no_tolerance, mut no_power) = (0usize, 0usize);
    let mut seen_locations: HashSet<(usize, &str)> = HashSet::new();
    for record in &table.records {
        let line = record.line;
        let get = |column: &str| table.get(record, column);
        let field =
            |column: &'static str, message: String| table.field_error(record, column, message);
        let Fields {
            ohms,
            qty,
            qty_text,
            tolerance,
            power,
        } = read_fields(&table, record)?;
        let tolerance = tolerance.unwrap_or_else(|| {
            no_tolerance += 1;
            defaults.tolerance
        });
        let power = power.unwrap_or_else(|| {
            no_power += 1;
            defaults.power
        });
        let key = (ohms.0.to_bits(), tolerance.0.to_bits(), power.0.to_bits());
        let id = *by_key.entry(key).or_insert_with(|| {
            parts.push(Part {
                ohms,
                tolerance,
                power,
                qty: 0,
                locations: Vec::new(),
                notes: Vec::new(),
                lines: Vec::new(),
            });
            parts.len() - 1
        });
        let part = &mut parts[id];
        part.qty = part.qty.checked_add(qty).ok_or_else(|| {
            field(
                "qty",
                format!(
                    "\"{}\" brings this part's total past {}; expected at most that many pieces of one part in all",
                    crate::notation::excerpt(qty_text),
                    u32::MAX
                ),
            )
        })?;
        part.lines.push(line);
        let location = get("location");
        // A set per part keeps this linear: a large stock can give one part thousands of bins.
        if !location.is_empty() && seen_locations.insert((id, location)) {
            part.locations.push(location.to_string());
        }
        let note = get("note");
        if !note.is_empty() {
            part.notes.push(note.to_string());
        }
        rows.push(Row {
            line,
            part: id,
            qty,
            location: (!location.is_empty()).then(|| location.to_string()),
            // The qty field is present: an absent one reads as "" and was refused above.
            qty_span: table.field(record, "qty").map_or(0..0, |f| f.span.clone()),
        });
    }
    // A column biasfit did not read may hold what the default stands in for: said beside the default, since
    // a rating assumed too high lets a part run hot.
    let unread = |what: &str| {
        if table.ignored.is_empty() {
            String::new()
        } else {
            format!(
                "; this may be wrong: if the unread column {} holds the {what}, name its header {what} so it is read",
                quoted(&table.ignored)
            )
        }
    };
    if no_tolerance > 0 {
        warnings.push(format!(
            "{file}: {no_tolerance} row(s) give no tolerance; assuming {}{}",
            defaults.tolerance,
            unread("tolerance")
        ));
    }
    if no_power > 0 {
        warnings.push(format!(
            "{file}: {no_power} row(s) give no power rating; assuming {}{}",
            defaults.power,
            unread("power")
        ));
    }
    let header = SCHEMA
        .columns
        .iter()
        .filter_map(|c| {
            let i = *table.layout.columns.get(c.name)?;
            Some((c.name.to_string(), table.header.fields[i].text.clone()))
        })
        .collect();
    Ok(Stock {
        file: file.to_string(),
        parts,
        rows,
        delimiter: table.layout.delimiter,
        layout: table.layout,
        defaults,
        defaulted: (no_tolerance, no_power),
        ignored: table.ignored,
        header,
        warnings,
    })
}

/// One stock row's value and quantity, and its tolerance and rating where it gives them (None: the
/// default applies), each refused at its field.
struct Fields<'r> {
    ohms: Ohms,
    qty: u32,
    /// The qty as written, for a message about the part's total.
    qty_text: &'r str,
    tolerance: Option<Tolerance>,
    power: Option<Watts>,
}

fn read_fields<'r>(table: &Table, record: &'r table::Record) -> Result<Fields<'r>, StockError> {
    let get = |column: &str| table.get(record, column);
    let field = |column: &'static str, message: String| table.field_error(record, column, message);
    // A row too short to reach a required column is a row whose delimiters went astray ("4k7;10" in a
    // comma file), better said as such than as a blank field.
    for column in ["value", "qty"] {
        if table.field(record, column).is_none() {
            let width = table.layout.width;
            let n = record.fields.len();
            return Err(table.row_error(
                record,
                format!(
                    "the row has {n} field(s) but the header has {width}, so it gives no {column}; expected fields separated by '{}' as in the header",
                    table.layout.delimiter as char
                ),
            ));
        }
    }
    let value = get("value");
    if value.is_empty() {
        return Err(field(
            "value",
            "the value is missing; expected a resistance such as 4k7".into(),
        ));
    }
    let ohms = parse_ohms(value).map_err(|e| field("value", e.to_string()))?;
    let qty_text = get("qty");
    if qty_text.is_empty() {
        return Err(field(
            "qty",
            "the qty is missing; expected a whole number of pieces, 0 or more".into(),
        ));
    }
    let qty: u32 = parse_count(qty_text).ok_or_else(|| {
        field(
            "qty",
            format!(
                "\"{}\" is not a quantity; expected a whole number of pieces, 0 or more",
                crate::notation::excerpt(qty_text)
            ),
        )
    })?;
    let tolerance = match get("tolerance") {
        "" => None,
        t => Some(parse_tolerance(t).map_err(|e| field("tolerance", e.to_string()))?),
    };
    let power = match get("power") {
        "" => None,
        p => Some(parse_watts(p).map_err(|e| field("power", e.to_string()))?),
    };
    Ok(Fields {
        ohms,
        qty,
        qty_text,
        tolerance,
        power,
    })
}

/// Reads a whole number of pieces, 0 or more: digits only (no sign, no point, no spaces inside).
pub fn parse_count(text: &str) -> Option<u32> {
    if text.is_empty() || !text.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    text.parse().ok()
}

impl Stock {
    /// Total pieces on hand.
    pub fn pieces(&self) -> u64 {
        self.parts.iter().map(|p| p.qty as u64).sum()
    }

    /// A stock built in code (benchmarks, tests): each part once, on no line of any file.
    pub fn from_parts(name: &str, parts: Vec<Part>) -> Stock {
        Stock {
            file: name.to_string(),
            rows: Vec::new(),
            parts,
            delimiter: b',',
            layout: Layout::default(),
            defaults: Defaults::default(),
            defaulted: (0, 0),
            ignored: Vec::new(),
            header: Vec::new(),
            warnings: Vec::new(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn load_str(s: &str) -> Result<Stock, StockError> {
        parse("test.csv", s.as_bytes(), Defaults::default())
    }

    #[test]
    fn reads_columns_in_any_order_and_case() {
        let s = load_str("Location,QTY,Value,Power,Tolerance,colour\nA1,10,4k7,0.25W,5%,yellow\nA2,3,10k,1/8W,F,brown\n")
            .unwrap();
        assert_eq!(s.parts.len(), 2);
        assert_eq!(s.parts[0].ohms, Ohms(4700.0));
        assert_eq!(s.parts[1].tolerance, Tolerance(0.01));
        assert_eq!(s.parts[1].power, Watts(0.125));
        assert_eq!(s.parts[1].location().as_deref(), Some("A2"));
        assert_eq!(s.pieces(), 13);
        // The colour column is named as unread; nothing was defaulted, so nothing more is said.
        assert_eq!(s.ignored, ["colour"]);
        assert_eq!(s.warnings.len(), 1, "{:?}", s.warnings);
        assert!(s.warnings[0].contains("'colour'"), "{:?}", s.warnings);
    }

    #[test]
    fn reads_the_header_words_spreadsheets_use() {
        let s = load_str(
            "Value (Ω);On hand;Tol (%);Power [mW];Drawer\n4.7;10;5;125;A1\n;;;;\n2k2;3;1%;0.6W;A2\n",
        );
        // "4.7" under "Value (Ω)" is 4.7 Ω; under a kΩ header it would be 4k7.
        let s = s.unwrap();
        assert_eq!(s.parts.len(), 2, "the bare-delimiter row is skipped");
        assert_eq!(s.parts[0].ohms, Ohms(4.7));
        assert_eq!(s.parts[0].qty, 10);
        assert_eq!(s.parts[0].tolerance, Tolerance(0.05));
        assert!((s.parts[0].power.0 - 0.125).abs() < 1e-15);
        assert!(
            (s.parts[1].power.0 - 0.6).abs() < 1e-15,
            "a field's own unit wins"
        );
        assert_eq!(s.parts[0].location().as_deref(), Some("A1"));
        assert!(s.warnings.is_empty(), "{:?}", s.warnings);
        let s = load_str("Resistance [kΩ],pcs,Wattage\n4.7,1,1/8\n").unwrap();
        assert_eq!(s.parts[0].ohms, Ohms(4700.0));
        assert_eq!(s.parts[0].power, Watts(0.125));
        let err = load_str("value,qty,Power (kW)\n1k,1,1\n")
            .unwrap_err()
            .to_string();
        assert!(
            err.contains("cannot apply to the power column; expected W or mW"),
            "{err}"
        );
    }

    #[test]
    fn an_unread_column_is_named_beside_a_defaulted_rating() {
        let s = load_str("value,qty,Leistung\n1k,1,1/8W\n").unwrap();
        assert_eq!(s.defaulted, (1, 1));
        let power = s
            .warnings
            .iter()
            .find(|w| w.contains("no power rating"))
            .unwrap();
        assert!(power.contains("may be wrong"), "{power}");
        assert!(power.contains("'Leistung'"), "{power}");
        assert!(
            !power.contains("--"),
            "no flag in a library message: {power}"
        );
    }

    #[test]
    fn bom_crlf_blank_lines_and_comments() {
        let text = "\u{feff}# my drawer\r\nvalue,qty\r\n\r\n# 1k row\r\n1k,5\r\n\r\n2k2,4\r\n";
        let s = load_str(text).unwrap();
        assert_eq!(s.parts.len(), 2);
        assert_eq!(s.rows[0].line, 5);
        assert_eq!(s.rows[1].line, 7);
        // Defaults applied, each said once.
        assert_eq!(s.warnings.len(), 2);
        assert!(s.warnings[0].contains("2 row(s) give no tolerance; assuming 5 %"));
    }

    #[test]
    fn detects_semicolons_and_tabs() {
        let s = load_str("value;qty;location;tolerance;power\n4k7;2;B3;5%;1/4W\n").unwrap();
        assert_eq!(s.delimiter, b';');
        assert_eq!(s.parts[0].qty, 2);
        assert!(s.warnings.is_empty(), "{:?}", s.warnings);
        let s = load_str("value\tqty\n4k7\t2\n").unwrap();
        assert_eq!(s.delimiter, b'\t');
    }

    #[test]
    fn merges_equal_parts() {
        let s = load_str("value,qty,tolerance,power,location\n4k7,3,5%,0.25W,A1\n4700,2,0.05,250mW,B2\n4.7k,1,J,1/4W,A1\n4k7,1,1%,0.25W,C\n")
            .unwrap();
        assert_eq!(s.parts.len(), 2);
        assert_eq!(s.parts[0].qty, 6);
        assert_eq!(s.parts[0].locations, vec!["A1", "B2"]);
        assert_eq!(s.parts[0].lines, vec![2, 3, 4]);
        assert_eq!(s.rows.len(), 4);
    }

    #[test]
    fn every_bad_row_names_file_line_and_column() {
        let cases = [
            (
                "value,qty\n4k7,-3\n",
                "test.csv:2: column qty: \"-3\" is not a quantity",
            ),
            ("value,qty\n4k7,2.5\n", "test.csv:2: column qty: \"2.5\""),
            ("value,qty\n4k7k,2\n", "test.csv:2: column value: \"4k7k\""),
            ("value,qty\n1e30,2\n", "test.csv:2: column value: \"1e30\""),
            (
                "value,qty,tolerance\n1k,2,150%\n",
                "test.csv:2: column tolerance: \"150%\"",
            ),
            (
                "value,qty,power\n1k,2,lots\n",
                "test.csv:2: column power: \"lots\"",
            ),
            (
                "value,qty\n1k,2\n,3\n",
                "test.csv:3: column value: the value is missing",
            ),
            (
                "value,qty\n1k\n",
                "test.csv:2: the row has 1 field(s) but the header has 2, so it gives no qty",
            ),
            (
                "value,qty\n1k,\n",
                "test.csv:2: column qty: the qty is missing",
            ),
            (
                "value,qty\n1k,2,3\n",
                "test.csv:2: the row has 3 fields but the header has 2",
            ),
            ("ohmage,count\n1k,2\n", "test.csv:1: no 'value' column"),
            ("value,amount\n1k,2\n", "test.csv:1: no 'qty' column"),
            ("value,qty,Value\n1k,2,1k\n", "names column 'Value' twice"),
            ("", "has no header row"),
            ("# only a comment\n", "has no header row"),
        ];
        for (text, want) in cases {
            let err = load_str(text).expect_err(text).to_string();
            assert!(err.contains(want), "{text:?}: {err}");
        }
    }

    #[test]
    fn non_utf8_is_refused_with_its_line() {
        let err = parse(
            "x.csv",
            b"value,qty\n4k7,1\n\xff\xfe,2\n",
            Defaults::default(),
        )
        .unwrap_err();
        assert_eq!(
            err.to_string(),
            "x.csv:3: the file is not UTF-8 text (byte 1); save it as UTF-8 CSV"
        );
    }

    #[test]
    fn rows_remember_their_location_and_where_their_qty_is() {
        let text = "value;bin;qty\r\n4k7;A1; 12\r\n4k7;;\"3\"\r\n";
        let s = load_str(text).unwrap();
        assert_eq!(s.rows[0].location.as_deref(), Some("A1"));
        assert_eq!(s.rows[1].location, None);
        assert_eq!(&text[s.rows[0].qty_span.clone()], "12");
        assert_eq!(&text[s.rows[1].qty_span.clone()], "3");
        assert_eq!(s.layout.columns["qty"], 2);
        assert_eq!(s.layout.line_end, table::LineEnd::CrLf);
    }

    #[test]
    fn zero_quantity_rows_are_kept() {
        let s = load_str("value,qty\n1k,0\n").unwrap();
        assert_eq!(s.parts[0].qty, 0);
    }
}
