//! The catalogue: resistors that can be bought, each with a unit price and the pack sizes it comes in, read
//! from a CSV with the stock file's reading rules ([`crate::stock::table`]), or made up from a preferred
//! series at unit cost 1 in packs of 1.
//!
//! A row is one offer: a part (value, tolerance, power) in one pack size at one unit price. The same part may
//! appear on several rows with different pack sizes, and the rows group into [`Item`]s, one per part. Every
//! bad row is an error naming the file, the line, the column and the text.

use super::{same, Money, OrderLine, Spec};
use crate::notation::{code, parse_ohms, parse_tolerance, parse_watts, Series};
use crate::stock::table::{self, Column, CsvError, Schema, Table};
use crate::units::{Ohms, Tolerance, Watts};
use std::path::Path;

/// The columns a catalogue has, with the header names accepted for each.
pub const SCHEMA: Schema = Schema {
    kind: "catalogue",
    columns: &[
        Column {
            name: "value",
            aliases: &["value", "ohms", "resistance"],
            required: true,
        },
        Column {
            name: "tolerance",
            aliases: &["tolerance", "tol"],
            required: true,
        },
        Column {
            name: "power",
            aliases: &["power", "rating"],
            required: true,
        },
        Column {
            name: "price",
            aliases: &["price", "unit price", "unit_price"],
            required: true,
        },
        Column {
            name: "pack",
            aliases: &["pack", "pack size", "pack_size"],
            required: false,
        },
        Column {
            name: "location",
            aliases: &["location"],
            required: false,
        },
        Column {
            name: "note",
            aliases: &["note", "notes"],
            required: false,
        },
        Column {
            name: "supplier",
            aliases: &["supplier"],
            required: false,
        },
    ],
    example_header: "value,tolerance,power,price,pack",
};

/// One way to buy a part: a pack size at a unit price.
#[derive(Clone, Debug, PartialEq)]
pub struct Offer {
    /// Pieces per pack, at least 1.
    pub pack: u32,
    /// Price of one piece (a pack costs `pack` × this).
    pub unit_price: Money,
    /// Free text from the location column (a shelf, a catalogue page).
    pub location: Option<String>,
    /// Free text from the note column.
    pub note: Option<String>,
    /// Free text from the supplier column.
    pub supplier: Option<String>,
    /// The file line it came from (none for a series catalogue).
    pub line: Option<usize>,
}

impl Offer {
    /// The price of one whole pack.
    pub fn pack_price(&self) -> Money {
        self.unit_price * self.pack
    }
}

/// A part that can be bought, with every offer for it.
#[derive(Clone, Debug, PartialEq)]
pub struct Item {
    /// Nominal resistance.
    pub ohms: Ohms,
    /// Tolerance.
    pub tolerance: Tolerance,
    /// Power rating.
    pub power: Watts,
    /// Its offers, in file order; never empty.
    pub offers: Vec<Offer>,
}

/// The cheapest whole packs that give at least a number of pieces of one item.
#[derive(Clone, Debug, PartialEq)]
pub struct Purchase {
    /// (pack size, packs bought), largest pack first, only sizes bought.
    pub packs: Vec<(u32, u32)>,
    /// Pieces that arrive (at least the number asked for).
    pub pieces: u32,
    /// What it all costs.
    pub cost: Money,
}

impl Item {
    /// The part this item is.
    pub fn spec(&self) -> Spec {
        Spec {
            ohms: self.ohms,
            tolerance: self.tolerance,
            power: self.power,
        }
    }

    /// The smallest unit price among the offers: the least any piece can cost.
    pub fn lowest_unit_price(&self) -> Money {
        self.offers
            .iter()
            .map(|o| o.unit_price)
            .fold(Money(f64::INFINITY), |a, b| if b < a { b } else { a })
    }

    /// The cheapest whole packs giving at least `pieces` pieces; between equal costs, fewer pieces, then
    /// fewer packs. Exact (a covering knapsack over the pack sizes); None only for an item with no offers.
    pub fn cheapest(&self, pieces: u32) -> Option<Purchase> {
        if self.offers.is_empty() {
            return None;
        }
        if pieces == 0 {
            return Some(Purchase {
                packs: Vec::new(),
                pieces: 0,
                cost: Money(0.0),
            });
        }
        // best[q]: the cheapest (cost, pieces, packs) covering q pieces, and the offer bought last to get it.
        let n = pieces as usize;
        let mut best: Vec<(f64, u64, u32, usize)> = vec![(0.0, 0, 0, usize::MAX); n + 1];
        for q in 1..=n {
            let mut here = (f64::INFINITY, u64::MAX, u32::MAX, usize::MAX);
            for (k, o) in self.offers.iter().enumerate() {
                let rest = q.saturating_sub(o.pack as usize);
                let (c, p, m, _) = best[rest];
                let cand = (c + o.pack_price().0, p + o.pack as u64, m + 1, k);
                let better = cand.0 < here.0 - 1e-12
                    || ((cand.0 - here.0).abs() <= 1e-12 && (cand.1, cand.2) < (here.1, here.2));
                if better {
                    here = cand;
                }
            }
            best[q] = here;
        }
        let mut counts = vec![0u32; self.offers.len()];
        let mut q = n;
        while q > 0 {
            let k = best[q].3;
            counts[k] += 1;
            q = q.saturating_sub(self.offers[k].pack as usize);
        }
        let mut packs: Vec<(u32, u32)> = Vec::new();
        for (k, c) in counts.into_iter().enumerate() {
            if c > 0 {
                packs.push((self.offers[k].pack, c));
            }
        }
        packs.sort_by_key(|p| std::cmp::Reverse(p.0));
        let (cost, got, _, _) = best[n];
        Some(Purchase {
            packs,
            pieces: u32::try_from(got).unwrap_or(u32::MAX),
            cost: Money(cost),
        })
    }
}

impl Purchase {
    /// The order list's line for this purchase of `item`.
    pub fn order_line(&self, item: &Item) -> OrderLine {
        OrderLine {
            ohms: item.ohms,
            tolerance: item.tolerance,
            power: item.power,
            qty: self.pieces,
            packs: self.packs.iter().map(|&(_, n)| n).sum(),
            cost: self.cost,
        }
    }
}

/// Everything that can be bought.
#[derive(Clone, Debug, PartialEq)]
pub struct Catalogue {
    /// Where it came from: the file, or the series ("E24 1 % 250 mW").
    pub source: String,
    /// One item per part, in order of first appearance.
    pub items: Vec<Item>,
    /// Things the user should know that did not stop the load.
    pub warnings: Vec<String>,
}

/// Reads a plain non-negative decimal number ("0.12", "3", ".5"), refusing signs, exponents and symbols.
fn parse_price(text: &str) -> Option<f64> {
    let digits = text.bytes().filter(u8::is_ascii_digit).count();
    let points = text.bytes().filter(|&b| b == b'.').count();
    if digits == 0 || points > 1 || digits + points != text.len() {
        return None;
    }
    text.parse().ok().filter(|v: &f64| v.is_finite())
}

impl Catalogue {
    /// Reads a catalogue file from disk.
    pub fn load(path: &Path) -> Result<Catalogue, CsvError> {
        let bytes = table::read_bytes(path, SCHEMA.kind)?;
        Catalogue::parse(&path.display().to_string(), &bytes)
    }

    /// Reads a catalogue's contents; `file` names it in messages.
    pub fn parse(file: &str, bytes: &[u8]) -> Result<Catalogue, CsvError> {
        let t = Table::parse(file, bytes, &SCHEMA)?;
        let mut items: Vec<Item> = Vec::new();
        for record in &t.records {
            let get = |c: &str| t.get(record, c);
            let field = |c: &'static str, m: String| t.field_error(record, c, m);
            let required = |c: &'static str, example: &str| {
                let text = get(c);
                if text.is_empty() {
                    Err(field(c, format!("the {c} is missing; expected {example}")))
                } else {
                    Ok(text)
                }
            };
            let ohms = parse_ohms(required("value", "a resistance such as 4k7")?)
                .map_err(|e| field("value", e.to_string()))?;
            let tolerance = parse_tolerance(required("tolerance", "a tolerance such as 1%")?)
                .map_err(|e| field("tolerance", e.to_string()))?;
            let power = parse_watts(required("power", "a power such as 0.25W")?)
                .map_err(|e| field("power", e.to_string()))?;
            let price_text = required("price", "a unit price such as 0.12")?;
            let unit_price = parse_price(price_text).ok_or_else(|| {
                field(
                    "price",
                    format!(
                        "\"{}\" is not a price; expected a plain number of your currency per \
                         piece, such as 0.12 (a point for the decimal mark, no currency sign)",
                        crate::notation::excerpt(price_text)
                    ),
                )
            })?;
            let pack_text = get("pack");
            let pack = if pack_text.is_empty() {
                1
            } else {
                crate::stock::parse_count(pack_text)
                    .filter(|&p| p >= 1)
                    .ok_or_else(|| {
                        field(
                            "pack",
                            format!(
                                "\"{}\" is not a pack size; expected a whole number of pieces per \
                                 pack, 1 or more",
                                crate::notation::excerpt(pack_text)
                            ),
                        )
                    })?
            };
            let text = |c: &str| Some(get(c).to_string()).filter(|s| !s.is_empty());
            let offer = Offer {
                pack,
                unit_price: Money(unit_price),
                location: text("location"),
                note: text("note"),
                supplier: text("supplier"),
                line: Some(record.line),
            };
            let spec = Spec {
                ohms,
                tolerance,
                power,
            };
            match items.iter_mut().find(|i| i.spec().matches(&spec)) {
                Some(item) => {
                    if let Some(earlier) = item.offers.iter().find(|o| o.pack == pack) {
                        return Err(t.row_error(
                            record,
                            format!(
                                "{} in packs of {pack} is already offered on line {}; keep one row per \
                                 part and pack size",
                                spec,
                                earlier.line.unwrap_or(0)
                            ),
                        ));
                    }
                    item.offers.push(offer);
                }
                None => items.push(Item {
                    ohms,
                    tolerance,
                    power,
                    offers: vec![offer],
                }),
            }
        }
        let mut warnings = t.warnings;
        if items.is_empty() {
            warnings.push(format!("{file}: the catalogue offers nothing"));
        }
        Ok(Catalogue {
            source: file.to_string(),
            items,
            warnings,
        })
    }

    /// Every value of `series` from `low` to `high`, at `tolerance` and `power`, at unit cost 1 in packs of 1:
    /// what to buy from when there is no price list.
    pub fn from_series(
        series: Series,
        tolerance: Tolerance,
        power: Watts,
        low: Ohms,
        high: Ohms,
    ) -> Catalogue {
        let items = series
            .values_between(low, high)
            .into_iter()
            .map(|ohms| Item {
                ohms,
                tolerance,
                power,
                offers: vec![Offer {
                    pack: 1,
                    unit_price: Money(1.0),
                    location: None,
                    note: None,
                    supplier: None,
                    line: None,
                }],
            })
            .collect();
        Catalogue {
            source: format!(
                "{series} {tolerance} {power}, {} to {}",
                code(low),
                code(high)
            ),
            items,
            warnings: Vec::new(),
        }
    }

    /// The item for a part, if the catalogue offers it.
    pub fn find(&self, spec: &Spec) -> Option<&Item> {
        self.items.iter().find(|i| i.spec().matches(spec))
    }

    /// Items of a given value (any tolerance and power), in catalogue order.
    pub fn of_value(&self, ohms: Ohms) -> impl Iterator<Item = &Item> {
        self.items.iter().filter(move |i| same(i.ohms.0, ohms.0))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn cat(s: &str) -> Result<Catalogue, CsvError> {
        Catalogue::parse("c.csv", s.as_bytes())
    }

    fn item(offers: &[(u32, f64)]) -> Item {
        Item {
            ohms: Ohms(1e3),
            tolerance: Tolerance(0.01),
            power: Watts(0.25),
            offers: offers
                .iter()
                .map(|&(pack, price)| Offer {
                    pack,
                    unit_price: Money(price),
                    location: None,
                    note: None,
                    supplier: None,
                    line: None,
                })
                .collect(),
        }
    }

    #[test]
    fn reads_offers_and_groups_them_by_part() {
        let c = cat("# prices\nPrice;Value;TOL;power;pack;Supplier\n0.10;4k7;5%;0.25W;1;bench shop\n0.04;4.7k;J;1/4W;10;\n0.10;4k7;1%;0.25W;;\n")
            .unwrap();
        assert_eq!(c.items.len(), 2);
        let a = &c.items[0];
        assert_eq!(a.ohms, Ohms(4700.0));
        assert_eq!(a.offers.len(), 2);
        assert_eq!(a.offers[0].supplier.as_deref(), Some("bench shop"));
        assert_eq!(a.offers[1].pack, 10);
        assert!((a.offers[1].pack_price().0 - 0.4).abs() < 1e-12);
        assert_eq!(c.items[1].offers[0].pack, 1, "a blank pack is 1");
        // The delimiter is read, not warned about: the stock summary is where it is named.
        assert!(c.warnings.is_empty(), "{:?}", c.warnings);
    }

    #[test]
    fn every_bad_row_names_file_line_column_and_text() {
        let h = "value,tolerance,power,price,pack\n";
        let cases = [
            (
                "1k,1%,0.25W,€0.10,1",
                "c.csv:2: column price: \"€0.10\" is not a price",
            ),
            ("1k,1%,0.25W,-1,1", "c.csv:2: column price: \"-1\""),
            ("1k,1%,0.25W,0,12", ""),
            ("1k,1%,0.25W,1e-3,1", "column price: \"1e-3\""),
            (
                "1k,1%,0.25W,,1",
                "c.csv:2: column price: the price is missing",
            ),
            (
                "1k,1%,0.25W,0.1,0",
                "c.csv:2: column pack: \"0\" is not a pack size",
            ),
            ("1k,1%,0.25W,0.1,2.5", "column pack: \"2.5\""),
            ("1k,1%,0.25W,0.1,-10", "column pack: \"-10\""),
            ("1q,1%,0.25W,0.1,1", "c.csv:2: column value: \"1q\""),
            (",1%,0.25W,0.1,1", "column value: the value is missing"),
            (
                "1k,,0.25W,0.1,1",
                "column tolerance: the tolerance is missing",
            ),
            ("1k,60%,0.25W,0.1,1", "column tolerance: \"60%\""),
            ("1k,1%,big,0.1,1", "column power: \"big\""),
            (
                "1k,1%,0.25W,0.1,1\n1000,F,250mW,0.2,1",
                "c.csv:3: 1k 1 % 250 mW in packs of 1 is already offered on line 2",
            ),
            (
                "1k,1%,0.25W,0.1,1,extra",
                "c.csv:2: the row has 6 fields but the header has 5",
            ),
        ];
        for (row, want) in cases {
            let text = format!("{h}{row}\n");
            match cat(&text) {
                Ok(_) => assert!(want.is_empty(), "{row:?} was accepted"),
                Err(e) => {
                    assert!(!want.is_empty(), "{row:?}: {e}");
                    assert!(e.to_string().contains(want), "{row:?}: {e}");
                }
            }
        }
        let err = cat("value,tolerance,power\n").unwrap_err().to_string();
        assert!(err.contains("no 'price' column"), "{err}");
        assert!(
            err.contains("expected columns value, tolerance, power and price, optionally pack, location, note, supplier"),
            "{err}"
        );
    }

    #[test]
    fn a_series_catalogue_costs_one_a_piece() {
        // IEC 60063 E24 has 24 values a decade, so 10 Ω to 1 MΩ (5 decades, both ends) holds 5 × 24 + 1.
        let c = Catalogue::from_series(
            Series::E24,
            Tolerance(0.05),
            Watts(0.25),
            Ohms(10.0),
            Ohms(1e6),
        );
        assert_eq!(c.items.len(), 121);
        assert_eq!(c.items[0].ohms, Ohms(10.0));
        assert_eq!(c.items[120].ohms, Ohms(1e6));
        let p = c.items[5].cheapest(3).unwrap();
        assert_eq!((p.pieces, p.cost), (3, Money(3.0)));
        assert_eq!(c.source, "E24 5 % 250 mW, 10R to 1M");
        assert!(c.find(&c.items[7].spec()).is_some());
    }

    #[test]
    fn cheapest_packs_by_hand() {
        // Singles at 0.10, tens at 0.05 a piece (0.50 a pack), hundreds at 0.01 (1.00 a pack).
        let i = item(&[(1, 0.10), (10, 0.05), (100, 0.01)]);
        // 3 pieces: 3 singles (0.30) beat a ten-pack (0.50).
        let p = i.cheapest(3).unwrap();
        assert_eq!((p.packs.clone(), p.pieces), (vec![(1, 3)], 3));
        assert!((p.cost.0 - 0.30).abs() < 1e-12);
        // 7 pieces: a ten-pack (0.50) beats 7 singles (0.70).
        let p = i.cheapest(7).unwrap();
        assert_eq!((p.packs.clone(), p.pieces), (vec![(10, 1)], 10));
        // 25 pieces: one hundred-pack (1.00) beats 2 tens + 5 singles (1.50).
        let p = i.cheapest(25).unwrap();
        assert_eq!((p.packs.clone(), p.pieces), (vec![(100, 1)], 100));
        assert_eq!(i.cheapest(0).unwrap().pieces, 0);
        assert_eq!(i.lowest_unit_price(), Money(0.01));
        let line = p.order_line(&i);
        assert_eq!((line.qty, line.packs), (100, 1));
    }

    #[test]
    fn the_demo_catalogue_holds_e24_and_e96_in_three_pack_sizes() {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("stock/demo-catalogue.csv");
        let c = Catalogue::load(&path).unwrap();
        assert!(c.warnings.is_empty(), "{:?}", c.warnings);
        let at = |tol: f64| {
            c.items
                .iter()
                .filter(move |i| i.tolerance == Tolerance(tol))
        };
        // IEC 60063: 24 and 96 values a decade; 10 Ω to 1 MΩ is 5 decades plus the end value.
        assert_eq!(at(0.05).count(), 5 * 24 + 1);
        assert_eq!(at(0.01).count(), 5 * 96 + 1);
        assert!(at(0.05).all(|i| Series::E24.contains(i.ohms)));
        assert!(at(0.01).all(|i| Series::E96.contains(i.ohms)));
        for i in &c.items {
            let mut packs: Vec<u32> = i.offers.iter().map(|o| o.pack).collect();
            packs.sort();
            assert_eq!(packs, [1, 10, 100], "{}", i.spec());
            // A bigger pack costs less a piece (the demo's premise).
            let price = |p: u32| i.offers.iter().find(|o| o.pack == p).unwrap().unit_price;
            assert!(
                price(1) > price(10) && price(10) > price(100),
                "{}",
                i.spec()
            );
        }
    }

    /// The cheapest cost over every mix of pack counts that covers `pieces`, for checking the knapsack.
    fn brute_force(i: &Item, pieces: u32) -> f64 {
        let mut best = f64::INFINITY;
        let sizes = i.offers.len();
        let mut counts = vec![0u32; sizes];
        loop {
            let got: u32 = counts.iter().zip(&i.offers).map(|(c, o)| c * o.pack).sum();
            if got >= pieces {
                let cost: f64 = counts
                    .iter()
                    .zip(&i.offers)
                    .map(|(&c, o)| o.pack_price().0 * c as f64)
                    .sum();
                best = best.min(cost);
            }
            let mut k = 0;
            loop {
                if k == sizes {
                    return best;
                }
                counts[k] += 1;
                // More packs of one size than cover the need alone never helps.
                if counts[k] * i.offers[k].pack < pieces + i.offers[k].pack {
                    break;
                }
                counts[k] = 0;
                k += 1;
            }
        }
    }

    proptest! {
        #[test]
        fn cheapest_equals_exhaustive_search(
            offers in proptest::collection::vec((1u32..13, 1u32..40), 1..4),
            pieces in 0u32..30,
        ) {
            let mut seen = std::collections::HashSet::new();
            let offers: Vec<(u32, f64)> = offers
                .into_iter()
                .filter(|(p, _)| seen.insert(*p))
                .map(|(p, cents)| (p, cents as f64 / 100.0))
                .collect();
            let i = item(&offers);
            let p = i.cheapest(pieces).unwrap();
            prop_assert!(p.pieces >= pieces);
            let pieces_from_packs: u32 = p.packs.iter().map(|&(s, n)| s * n).sum();
            prop_assert_eq!(pieces_from_packs, p.pieces);
            let cost_from_packs: f64 = p.packs.iter().map(|&(s, n)| {
                let o = i.offers.iter().find(|o| o.pack == s).unwrap();
                o.pack_price().0 * n as f64
            }).sum();
            prop_assert!((cost_from_packs - p.cost.0).abs() < 1e-9);
            let best = brute_force(&i, pieces);
            prop_assert!((p.cost.0 - best).abs() < 1e-9, "{} vs exhaustive {}", p.cost.0, best);
        }
    }
}
