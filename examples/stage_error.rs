//! How fast the optimiser's inner loop runs: `Stage::error` and `Stage::electrical_ok` on the line-driver
//! demo, with a fixed VBE (closed form) and with the diode law (bracketed Newton), measured in one run.
//! The ratios are what matter; the absolute figures depend on the machine.
//!
//! cargo run --release --example stage_error

use biasfit::stage::{parse, Slot, SlotValues, Stage};
use std::hint::black_box;
use std::time::Instant;

fn per_call(f: &mut dyn FnMut() -> f64, calls: usize) -> f64 {
    let start = Instant::now();
    let mut sink = 0.0;
    for _ in 0..calls {
        sink += f();
    }
    black_box(sink);
    start.elapsed().as_secs_f64() / calls as f64
}

fn values(s: &Stage) -> Vec<SlotValues> {
    let ideal = s.ideal().expect("the demo has an ideal design").values;
    (0..64)
        .map(|k| {
            let mut v = ideal;
            for (j, slot) in s.slots().into_iter().enumerate() {
                let r = v.get(slot).unwrap();
                let f = 0.9 + 0.2 * (((k * 7 + j * 13) % 64) as f64 / 63.0);
                v.set(slot, if slot == Slot::RC { r } else { r * f });
            }
            v
        })
        .collect()
}

fn main() {
    let text = include_str!("line-driver.toml");
    let fixed = parse("line-driver.toml", text).unwrap().stages.remove(0);
    let diode_text = text.replace(
        "vbe = 0.66",
        "vbe = { volts = 0.66, at = \"2mA\", n = 1.0 }",
    );
    let diode = parse("line-driver.toml", &diode_text)
        .unwrap()
        .stages
        .remove(0);
    let calls = 2_000_000;
    let row = |label: &str, s: &Stage| {
        let vs = values(s);
        let mut i = 0;
        let e = per_call(
            &mut || {
                i = (i + 1) % vs.len();
                s.error(black_box(&vs[i]))
            },
            calls,
        );
        let mut i = 0;
        let ok = per_call(
            &mut || {
                i = (i + 1) % vs.len();
                f64::from(u8::from(s.electrical_ok(black_box(&vs[i]))))
            },
            calls,
        );
        println!(
            "{label:<12} error {:>7.1} ns/call ({:>5.1} M/s)   electrical_ok {:>7.1} ns/call ({:>5.1} M/s)",
            e * 1e9,
            1e-6 / e,
            ok * 1e9,
            1e-6 / ok
        );
        (e, ok)
    };
    let (fe, fok) = row("fixed VBE", &fixed);
    let (de, dok) = row("diode law", &diode);
    println!(
        "diode law / fixed VBE: error × {:.1}, electrical_ok × {:.1}",
        de / fe,
        dok / fok
    );
    println!("electrical_ok / error (fixed VBE): × {:.1}", fok / fe);
}
