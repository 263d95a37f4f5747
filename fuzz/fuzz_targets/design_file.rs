//! Fuzzes the design-file loader (`design_file::parse`: stages and circuits) with arbitrary text: a design
//! or an error, never a panic. Every stage it accepts must also survive the work the commands do next: its
//! ideal design (which the loader has already proved exists), the exact solve at both ends of beta, the
//! error and every check; every circuit, built with 4k7 in each slot, a solve (or a refusal), its error and
//! its checks.
#![no_main]
use biasfit::network::{Member, Network};
use biasfit::stage::SlotNetworks;
use biasfit::{Tolerance, Watts};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(design) = biasfit::design_file::parse("fuzz.toml", text) else {
        return;
    };
    for c in &design.circuits {
        let slots = vec![biasfit::Ohms(4700.0); c.slots().len()];
        if let Ok(b) = c.typical(&slots) {
            if let Ok(s) = biasfit::circuit::solve(c, &b) {
                let _ = c.error(&s);
            }
        }
        let ratings = vec![None; slots.len()];
        let _ = c.checks(&slots, &ratings, &biasfit::circuit::Options { check_latch: false });
    }
    for s in &design.stages {
        let ideal = s.ideal().expect("the loader refuses a stage without an ideal design");
        let v = ideal.values;
        for beta in [s.transistor.beta.min, s.transistor.beta.max] {
            let _ = s.solve(&v, beta, s.limits.ambient);
        }
        let e = s.error(&v);
        assert!(!e.is_nan(), "the ideal design's error is a number");
        let nets = v.iter().fold(SlotNetworks::new(), |mut n, (slot, r)| {
            n.set(slot, Network::Single(Member::loose(r, Tolerance(0.05), Watts(0.25))));
            n
        });
        let _ = s.checks(&nets);
    }
});
