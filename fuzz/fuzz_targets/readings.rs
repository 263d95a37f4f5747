//! Fuzzes the text of `--measured` (bench readings) and of `--use`/`--keep` (SLOT=NETWORK pairs, split at
//! commas and the first '=' as the command line does) with arbitrary text: values or errors, never a panic.
#![no_main]
use biasfit::stage::Slot;
use biasfit::{Tolerance, Watts};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if let Ok(m) = biasfit::bench::Measured::parse(text) {
        assert!(m.as_array().iter().flatten().all(|v| v.is_finite()));
    }
    for item in text.split(',') {
        let (name, value) = item.split_once('=').unwrap_or((item, ""));
        let _ = name.trim().parse::<Slot>();
        if let Ok(n) = biasfit::network::parse_network(value, Tolerance(0.01), Watts(0.25)) {
            assert!(n.ohms().0 > 0.0 && n.ohms().0.is_finite());
        }
    }
});
