//! The order list as a file: `biasfit order --csv` writes it and `biasfit stock add --order` reads it back when
//! the parts arrive.
//!
//! The header is `value,tolerance,power,qty,packs,cost`: the value in the IEC 60062 code (`4k7`), the
//! tolerance as a percentage (`1%`), the power in watts (`0.25W`), `qty` the pieces bought (whole packs, so
//! at least the pieces needed), `packs` how many packs that is, and `cost` what they cost in the catalogue's
//! currency. Reading uses the stock file's rules and finds columns by name; packs and cost are not read, and
//! an optional location column (added by hand) says which stock row the pieces go to.

use super::{power_text, tolerance_text, Money};
use crate::notation::{code, parse_ohms, parse_tolerance, parse_watts};
use crate::stock::table::{self, Column, CsvError, Schema, Table};
use crate::stock::Defaults;
use crate::units::{Ohms, Tolerance, Watts};
use serde::{Deserialize, Serialize};
use std::path::Path;

/// One line of an order: a part, how many pieces to buy, in how many packs, at what cost. As JSON it is
/// `{"ohms", "tolerance", "power", "qty", "packs", "cost"}` in SI units and fractions.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct OrderLine {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance.
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
    /// Pieces bought: whole packs, so at least the pieces the design needs; what `stock add` adds.
    pub qty: u32,
    /// Packs bought.
    pub packs: u32,
    /// What they cost.
    pub cost: Money,
}

/// The header line of an order file.
pub const HEADER: &str = "value,tolerance,power,qty,packs,cost";

/// The order list as CSV text, one line per order line, in the order given. Written with the `csv` crate,
/// which quotes a field only when it must, so the file reads back in any spreadsheet as it does here.
pub fn render_csv(lines: &[OrderLine]) -> String {
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::with_capacity(40 * (lines.len() + 1)));
    let rows = std::iter::once(HEADER.split(',').map(str::to_string).collect::<Vec<_>>()).chain(
        lines.iter().map(|l| {
            vec![
                code(l.ohms),
                tolerance_text(l.tolerance),
                power_text(l.power),
                l.qty.to_string(),
                l.packs.to_string(),
                l.cost.to_string(),
            ]
        }),
    );
    for row in rows {
        // Writing to a Vec cannot fail.
        let _ = w.write_record(&row);
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// The columns `stock add` reads from an order file.
pub const SCHEMA: Schema = Schema {
    kind: "order file",
    columns: &[
        Column {
            name: "value",
            aliases: &["value", "ohms", "resistance"],
            required: true,
        },
        Column {
            name: "qty",
            aliases: &["qty", "quantity"],
            required: true,
        },
        Column {
            name: "tolerance",
            aliases: &["tolerance", "tol"],
            required: false,
        },
        Column {
            name: "power",
            aliases: &["power", "rating"],
            required: false,
        },
        Column {
            name: "location",
            aliases: &["location", "bin"],
            required: false,
        },
    ],
    example_header: HEADER,
};

/// Parts that arrived: one row of an order file.
#[derive(Clone, Debug, PartialEq)]
pub struct Arrival {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance.
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
    /// Pieces that arrived.
    pub qty: u32,
    /// Where they go, if the file has a location column (not one `biasfit order` writes).
    pub location: Option<String>,
    /// The order file's line.
    pub line: usize,
}

/// What an order file held.
#[derive(Clone, Debug, PartialEq)]
pub struct Arrivals {
    /// The rows, in file order.
    pub rows: Vec<Arrival>,
    /// Things the user should know that did not stop the read (defaults used, delimiter).
    pub warnings: Vec<String>,
}

/// Reads an order file from disk.
pub fn load(path: &Path, defaults: Defaults) -> Result<Arrivals, CsvError> {
    let bytes = table::read_bytes(path, SCHEMA.kind)?;
    parse(&path.display().to_string(), &bytes, defaults)
}

/// Reads an order file's contents; a blank tolerance or power takes `defaults`, as in a stock file.
pub fn parse(file: &str, bytes: &[u8], defaults: Defaults) -> Result<Arrivals, CsvError> {
    let t = Table::parse(file, bytes, &SCHEMA)?;
    let mut rows = Vec::with_capacity(t.records.len());
    let mut defaulted = 0usize;
    for record in &t.records {
        let get = |c: &str| t.get(record, c);
        let field = |c: &'static str, m: String| t.field_error(record, c, m);
        let value = get("value");
        if value.is_empty() {
            return Err(field(
                "value",
                "the value is missing; expected a resistance such as 4k7".into(),
            ));
        }
        let ohms = parse_ohms(value).map_err(|e| field("value", e.to_string()))?;
        let qty_text = get("qty");
        let qty = crate::stock::parse_count(qty_text).ok_or_else(|| {
            field(
                "qty",
                format!(
                    "\"{}\" is not a quantity; expected a whole number of pieces, 0 or more",
                    crate::notation::excerpt(qty_text)
                ),
            )
        })?;
        let tolerance = match get("tolerance") {
            "" => {
                defaulted += 1;
                defaults.tolerance
            }
            s => parse_tolerance(s).map_err(|e| field("tolerance", e.to_string()))?,
        };
        let power = match get("power") {
            "" => {
                defaulted += 1;
                defaults.power
            }
            s => parse_watts(s).map_err(|e| field("power", e.to_string()))?,
        };
        rows.push(Arrival {
            ohms,
            tolerance,
            power,
            qty,
            location: Some(get("location").to_string()).filter(|l| !l.is_empty()),
            line: record.line,
        });
    }
    let mut warnings = t.warnings;
    if defaulted > 0 {
        warnings.push(format!(
            "{file}: {defaulted} blank tolerance or power field(s); assuming {} and {} (set --default-tolerance, --default-power)",
            defaults.tolerance, defaults.power
        ));
    }
    Ok(Arrivals { rows, warnings })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn line(ohms: f64, tol: f64, power: f64, qty: u32, packs: u32, cost: f64) -> OrderLine {
        OrderLine {
            ohms: Ohms(ohms),
            tolerance: Tolerance(tol),
            power: Watts(power),
            qty,
            packs,
            cost: Money(cost),
        }
    }

    #[test]
    fn writes_the_documented_header_and_codes() {
        // IEC 60062 letter code for the values: 4k7, 100R, 1M5, 49k9.
        let text = render_csv(&[
            line(4700.0, 0.05, 0.25, 10, 1, 0.5),
            line(100.0, 0.01, 0.125, 3, 3, 0.45),
            line(1.5e6, 0.05, 0.5, 100, 1, 1.0),
            line(49.9e3, 0.01, 0.25, 20, 2, 1.6),
        ]);
        assert_eq!(
            text,
            "value,tolerance,power,qty,packs,cost\n\
             4k7,5%,0.25W,10,1,0.5\n\
             100R,1%,0.125W,3,3,0.45\n\
             1M5,5%,0.5W,100,1,1\n\
             49k9,1%,0.25W,20,2,1.6\n"
        );
    }

    #[test]
    fn what_is_written_reads_back() {
        let lines = vec![
            line(4700.0, 0.05, 0.25, 10, 1, 0.5),
            line(0.47, 0.01, 1.0, 1, 1, 0.2),
            line(2.2e6, 0.001, 0.6, 0, 0, 0.0),
        ];
        let back = parse("o.csv", render_csv(&lines).as_bytes(), Defaults::default()).unwrap();
        assert!(back.warnings.is_empty());
        for (l, a) in lines.iter().zip(&back.rows) {
            assert_eq!(
                (l.ohms, l.tolerance, l.power, l.qty),
                (a.ohms, a.tolerance, a.power, a.qty)
            );
        }
        assert_eq!(back.rows[1].line, 3);
    }

    #[test]
    fn columns_by_name_packs_and_cost_not_read() {
        let a = parse(
            "o.csv",
            b"Cost;QTY;Value;packs\nlots;5;10k;?\n",
            Defaults::default(),
        )
        .unwrap();
        assert_eq!(a.rows[0].qty, 5);
        assert_eq!(a.rows[0].tolerance, Tolerance(0.05));
        assert!(a.warnings.iter().any(|w| w.contains("assuming 5 %")));
    }

    #[test]
    fn bad_rows_name_file_line_and_column() {
        for (text, want) in [
            (
                "value,qty\n4k7,-1\n",
                "o.csv:2: column qty: \"-1\" is not a quantity",
            ),
            ("value,qty\n4k7,1.5\n", "o.csv:2: column qty: \"1.5\""),
            ("value,qty\nabc,1\n", "o.csv:2: column value: \"abc\""),
            (
                "value,qty,tolerance\n1k,1,7\n",
                "o.csv:2: column tolerance: \"7\"",
            ),
            ("value,count\n1k,1\n", "o.csv:1: no 'qty' column"),
        ] {
            let err = parse("o.csv", text.as_bytes(), Defaults::default())
                .unwrap_err()
                .to_string();
            assert!(err.contains(want), "{text:?}: {err}");
        }
    }

    #[test]
    fn json_keys_are_the_contract() {
        let v = serde_json::to_value(line(4700.0, 0.05, 0.25, 10, 1, 0.5)).unwrap();
        let keys: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
        let mut keys = keys;
        keys.sort();
        assert_eq!(keys, ["cost", "ohms", "packs", "power", "qty", "tolerance"]);
        assert_eq!(v["ohms"], 4700.0);
        assert_eq!(v["tolerance"], 0.05);
    }
}
