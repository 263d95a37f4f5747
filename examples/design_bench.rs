//! Benchmark of `design`: the whole optimisation (candidates, exact per-stage search, integer program) on
//! complete kits, against the targets, and the speed-up over exhaustive enumeration of the same
//! candidates where that finishes. Run with `cargo run --release --example design_bench`.
//!
//! Every figure is measured in this run; the ratios compare two measurements of this run.

use biasfit::network::candidates::in_window;
use biasfit::notation::Series;
use biasfit::optimise::design::{design, Request};
use biasfit::stage::{self, Design, SlotValues};
use biasfit::stock::{Part, Stock};
use biasfit::{Ohms, Tolerance, Watts};
use std::time::Instant;

fn kit(series: Series, low: f64, high: f64, qty: u32) -> Stock {
    let parts = series
        .values_between(Ohms(low), Ohms(high))
        .into_iter()
        .enumerate()
        .map(|(i, v)| Part {
            ohms: v,
            tolerance: Tolerance(0.05),
            power: Watts(0.25),
            qty,
            locations: vec![format!("bin {}", i + 1)],
            notes: Vec::new(),
            lines: Vec::new(),
        })
        .collect();
    Stock::from_parts(&format!("{series} kit"), parts)
}

fn load(path: &str) -> Design {
    stage::load(path.as_ref()).unwrap_or_else(|e| panic!("{path}: {e}"))
}

/// Time of one full design, in seconds, and its error.
fn run(d: &Design, stock: &Stock, parts: usize) -> (f64, f64) {
    let request = Request {
        max_parts: parts,
        ..Request::default()
    };
    let t = Instant::now();
    let out = design(d, stock, &request, &mut |_| {}).expect("a design");
    let secs = t.elapsed().as_secs_f64();
    (secs, out.built.iter().map(|b| b.error).fold(0.0, f64::max))
}

/// Exhaustive enumeration of the same candidates (first stage only), in seconds, and its best error.
fn exhaustive(d: &Design, stock: &Stock, parts: usize, window: f64) -> (f64, f64, u64) {
    let st = &d.stages[0];
    let ideal = st.ideal().expect("ideal");
    let slots = st.slots();
    let lists: Vec<_> = slots
        .iter()
        .map(|&s| {
            let x = ideal.values.get(s).unwrap();
            in_window(stock, parts, x / window, x * window)
        })
        .collect();
    let t = Instant::now();
    let mut best = f64::INFINITY;
    let mut count = 0u64;
    let mut idx = vec![0usize; slots.len()];
    'outer: loop {
        let mut sv = SlotValues::new();
        for (p, &s) in slots.iter().enumerate() {
            sv.set(s, lists[p][idx[p]].ohms);
        }
        count += 1;
        let e = st.error(&sv);
        if e < best && st.electrical_ok(&sv) {
            best = e;
        }
        let mut k = 0;
        loop {
            if k == idx.len() {
                break 'outer;
            }
            idx[k] += 1;
            if idx[k] < lists[k].len() {
                break;
            }
            idx[k] = 0;
            k += 1;
        }
    }
    (t.elapsed().as_secs_f64(), best, count)
}

fn main() {
    let one = load("examples/line-driver.toml");
    let two = load("examples/two-stage.toml");
    let e24 = kit(Series::E24, 10.0, 1e6, 10);
    let e12 = kit(Series::E12, 10.0, 1e6, 10);
    let e6 = kit(Series::E6, 10.0, 1e6, 10);
    let e3 = kit(Series::E3, 10.0, 1e6, 10);
    let e6_narrow = kit(Series::E6, 100.0, 100e3, 10);

    println!("design benchmark (each figure measured in this run)\n");
    println!(
        "{:<34} {:>10} {:>10} {:>8}",
        "case", "seconds", "target s", "ratio"
    );
    for (name, d, stock, parts, target) in [
        ("E24 kit, pairs, one divider stage", &one, &e24, 2, 1.0),
        ("E24 kit, pairs, two-stage board", &two, &e24, 2, 3.0),
        ("E12 kit, triples, one stage", &one, &e12, 3, 10.0),
    ] {
        let (secs, _) = run(d, stock, parts);
        println!(
            "{name:<34} {secs:>10.3} {target:>10.1} {:>7.1}×",
            target / secs
        );
    }

    println!("\ngrowth with stock size and --parts, and speed-up over exhaustive enumeration of the same candidates");
    println!(
        "{:<12} {:>6} {:>12} {:>12} {:>14} {:>12} {:>11}",
        "stock", "parts", "design s", "error", "combinations", "exhaust s", "speed-up"
    );
    // Seconds per combination of the exhaustive enumeration, from the largest one that ran in full; the
    // larger ones are estimated from it (marked ~).
    let mut per_combination: Option<f64> = None;
    let mut rows = Vec::new();
    for (name, stock) in [
        ("E3 kit", &e3),
        ("E6 1k–100k", &e6_narrow),
        ("E6 kit", &e6),
        ("E12 kit", &e12),
        ("E24 kit", &e24),
    ] {
        for parts in 1..=3 {
            let (secs, err) = run(&one, stock, parts);
            let combos: u64 = {
                let st = &one.stages[0];
                let ideal = st.ideal().unwrap();
                st.slots()
                    .iter()
                    .map(|&s| {
                        let x = ideal.values.get(s).unwrap();
                        in_window(stock, parts, x / 3.0, x * 3.0).len() as u64
                    })
                    .product()
            };
            // Exhaustive search only where it finishes in reasonable time.
            let measured = if combos <= 30_000_000 {
                let (ex, best, n) = exhaustive(&one, stock, parts, 3.0);
                assert!(
                    (best - err).abs() < 1e-9 || err <= best,
                    "search {err} vs exhaustive {best}"
                );
                if n >= 1_000_000 {
                    per_combination = Some(ex / n as f64);
                }
                Some(ex)
            } else {
                None
            };
            rows.push((name, parts, secs, err, combos, measured));
        }
    }
    for (name, parts, secs, err, combos, measured) in rows {
        let (ex, ratio) = match (measured, per_combination) {
            (Some(ex), _) => (format!("{ex:.3}"), format!("{:.0}×", ex / secs)),
            (None, Some(per)) => {
                let ex = combos as f64 * per;
                (format!("~{ex:.1e}"), format!("~{:.0e}×", ex / secs))
            }
            (None, None) => ("-".to_string(), "-".to_string()),
        };
        println!(
            "{name:<12} {parts:>6} {secs:>12.4} {:>11.3}% {combos:>14} {ex:>12} {ratio:>11}",
            err * 100.0
        );
    }
}
