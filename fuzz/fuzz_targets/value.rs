//! Fuzzes the resistance, tolerance and power parsers: any text must give a value or an error, never a panic,
//! and a value must print to a code that reads back within its printed precision.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(s) = std::str::from_utf8(data) {
        if let Ok(r) = biasfit::notation::parse_ohms(s) {
            let back = biasfit::notation::parse_ohms(&biasfit::notation::code(r)).expect("a printed code reads back");
            assert!(((back.0 - r.0) / r.0).abs() < 1e-3);
        }
        let _ = biasfit::notation::parse_tolerance(s);
        let _ = biasfit::notation::parse_watts(s);
        let _ = biasfit::notation::parse_volts(s);
        let _ = biasfit::notation::parse_amps(s);
    }
});
