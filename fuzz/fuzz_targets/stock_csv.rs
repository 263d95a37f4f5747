//! Fuzzes the stock CSV loader with arbitrary bytes: a stock or an error, never a panic.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = biasfit::stock::parse("fuzz.csv", data, biasfit::stock::Defaults::default());
});
