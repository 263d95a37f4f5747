//! Fuzzes the CSV loaders with arbitrary bytes: the stock, the stock as opened for editing, the catalogue
//! and the order file all read the same bytes; each gives its rows or an error, never a panic.
#![no_main]
use biasfit::stock::Defaults;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = biasfit::stock::parse("fuzz.csv", data, Defaults::default());
    let _ = biasfit::order::stocktake::StockFile::parse("fuzz.csv", data.to_vec(), Defaults::default());
    let _ = biasfit::order::catalogue::Catalogue::parse("fuzz.csv", data);
    let _ = biasfit::order::orderfile::parse("fuzz.csv", data, Defaults::default());
});
