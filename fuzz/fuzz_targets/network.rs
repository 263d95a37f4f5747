//! Fuzzes the network notation: no panic, and a parsed network's notation parses to the same resistance.
#![no_main]
use biasfit::{Tolerance, Watts};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(s) = std::str::from_utf8(data) {
        if let Ok(n) = biasfit::network::parse_network(s, Tolerance(0.05), Watts(0.25)) {
            let again = biasfit::network::parse_network(&n.notation(), Tolerance(0.05), Watts(0.25))
                .expect("printed notation reads back");
            let (a, b) = (n.ohms().0, again.ohms().0);
            assert!(((a - b) / a).abs() < 1e-2);
        }
    }
});
