//! Benchmark for the slot fix: how fast the candidate search finds the best pair and the best triple on a big
//! stock, against a naive full enumeration measured in the same run.
//!
//! The stock is every E96 value from 1 Ω to 10 MΩ (IEC 60063; 96 a decade over 7 decades plus 10 MΩ, 673
//! values), ten pieces each. The targets are invented odd values spread over the range. The naive search
//! visits every network of each shape once, with no sorting or bounds, and keeps the closest; the fast one
//! is [`biasfit::network::candidates::best`], index built inside the timing. Both answers are compared.
//!
//! Run with `cargo run --release --example fix_bench`.

use biasfit::network::candidates::{best, Index};
use biasfit::notation::{code, Series};
use biasfit::report::fix::error_text;
use biasfit::stock::{Part, Stock};
use biasfit::units::{Ohms, Tolerance, Watts};
use std::hint::black_box;
use std::time::{Duration, Instant};

/// The best network the naive search finds: its |relative error|.
fn naive_best(values: &[f64], qty: u32, target: f64, max_parts: usize) -> f64 {
    let n = values.len();
    let mut best = f64::INFINITY;
    let mut consider = |r: f64| {
        let e = ((r - target) / target).abs();
        if e < best {
            best = e;
        }
    };
    // Every part is stocked `qty` deep; a network may use one part as often as that allows.
    let ok = |uses: usize| uses as u32 <= qty;
    for &a in values {
        consider(a);
    }
    if max_parts >= 2 {
        for i in 0..n {
            for j in i..n {
                if i == j && !ok(2) {
                    continue;
                }
                let (a, b) = (values[i], values[j]);
                consider(b + a);
                consider(1.0 / (1.0 / a + 1.0 / b));
            }
        }
    }
    if max_parts >= 3 {
        for i in 0..n {
            for j in i..n {
                for k in j..n {
                    let same = 1 + (i == j) as usize + (j == k) as usize;
                    if !ok(same) {
                        continue;
                    }
                    let (a, b, c) = (values[i], values[j], values[k]);
                    consider(c + b + a);
                    consider(1.0 / (1.0 / a + 1.0 / b + 1.0 / c));
                }
            }
        }
        for x in 0..n {
            for i in 0..n {
                for j in i..n {
                    let same = 1 + (x == i) as usize + (x == j) as usize + (i == j) as usize;
                    if !ok(same.min(3)) {
                        continue;
                    }
                    let (a, b, c) = (values[x], values[i], values[j]);
                    consider(a + 1.0 / (1.0 / b + 1.0 / c));
                    consider(1.0 / (1.0 / a + 1.0 / (c + b)));
                }
            }
        }
    }
    best
}

/// The median of several timed runs of `f`, and its last result.
fn timed<T>(runs: usize, mut f: impl FnMut() -> T) -> (Duration, T) {
    let mut times = Vec::with_capacity(runs);
    let mut last = None;
    for _ in 0..runs {
        let start = Instant::now();
        let out = black_box(f());
        times.push(start.elapsed());
        last = Some(out);
    }
    times.sort();
    (times[runs / 2], last.expect("at least one run"))
}

fn ms(d: Duration) -> String {
    format!("{:.3} ms", d.as_secs_f64() * 1e3)
}

fn main() {
    const QTY: u32 = 10;
    let values: Vec<Ohms> = Series::E96.values_between(Ohms(1.0), Ohms(10e6));
    let parts = values
        .iter()
        .enumerate()
        .map(|(i, &ohms)| Part {
            ohms,
            tolerance: Tolerance(0.01),
            power: Watts(0.25),
            qty: QTY,
            locations: vec![format!("drawer {}", i / 96 + 1)],
            notes: Vec::new(),
            lines: Vec::new(),
        })
        .collect();
    let stock = Stock::from_parts("every E96 value, 1R to 10M", parts);
    let raw: Vec<f64> = values.iter().map(|v| v.0).collect();
    println!(
        "fix_bench: every E96 value from 1R to 10M ({} values), {QTY} pieces each",
        raw.len()
    );

    // Invented odd targets across the range.
    let targets = [
        14_612.3,
        486.37,
        3_141.59,
        271_828.0,
        7.777,
        1_234_567.0,
        61.803,
        57_721.5,
    ];
    println!(
        "\n  {:<9} {:<22} {:>10} {:>10}   {:<26} {:>10} {:>11}",
        "target", "best pair", "fast", "naive", "best triple", "fast", "naive"
    );
    let mut totals = [Duration::ZERO; 4];
    let mut worst = [Duration::ZERO; 2];
    for &t in &targets {
        let (pair_fast, pair) = timed(21, || best(&stock, Ohms(t), 2, 1));
        let (pair_naive, pair_naive_err) = timed(3, || naive_best(&raw, QTY, t, 2));
        let (triple_fast, triple) = timed(5, || best(&stock, Ohms(t), 3, 1));
        let (triple_naive, triple_naive_err) = timed(1, || naive_best(&raw, QTY, t, 3));
        // The fast answer may differ from the naive minimum only by deduplication (a network with fewer parts
        // kept within 1 ppm of a closer one).
        for (found, naive, what) in [
            (&pair, pair_naive_err, "pair"),
            (&triple, triple_naive_err, "triple"),
        ] {
            let e = found[0].error(Ohms(t)).abs();
            assert!(
                e >= naive - 1e-15 && e <= naive + 2e-6,
                "{what} for {t}: fast {e} vs naive {naive}"
            );
        }
        let err = error_text;
        println!(
            "  {:<9} {:<22} {:>10} {:>10}   {:<26} {:>10} {:>11}",
            code(Ohms(t)),
            format!(
                "{} {}",
                pair[0].network.notation(),
                err(pair[0].error(Ohms(t)))
            ),
            ms(pair_fast),
            ms(pair_naive),
            format!(
                "{} {}",
                triple[0].network.notation(),
                err(triple[0].error(Ohms(t)))
            ),
            ms(triple_fast),
            ms(triple_naive),
        );
        totals[0] += pair_fast;
        totals[1] += pair_naive;
        totals[2] += triple_fast;
        totals[3] += triple_naive;
        worst[0] = worst[0].max(pair_fast);
        worst[1] = worst[1].max(triple_fast);
    }
    let n = targets.len() as u32;
    println!(
        "\n  best pair:   mean {}, worst {} (target: under 5 ms)",
        ms(totals[0] / n),
        ms(worst[0])
    );
    println!(
        "  best triple: mean {}, worst {} (target: under 300 ms)",
        ms(totals[2] / n),
        ms(worst[1])
    );
    println!(
        "  speed-up over naive full enumeration, same run: pairs {:.0}×, triples {:.0}× (target: at least 50×)",
        totals[1].as_secs_f64() / totals[0].as_secs_f64(),
        totals[3].as_secs_f64() / totals[2].as_secs_f64()
    );

    // What the optimiser does: windows a factor of 3 wide on a stock of a few hundred parts.
    println!();
    let few: Vec<Part> = stock
        .parts
        .iter()
        .filter(|p| p.ohms.0 >= 10.0 && p.ohms.0 <= 10e3)
        .cloned()
        .collect();
    let few = Stock::from_parts("E96 10R to 10k", few);
    for parts in [2, 3] {
        let (build, index) = timed(5, || Index::new(&few, parts));
        let (window, found) = timed(3, || {
            index.in_window(Ohms(1e3 / 3f64.sqrt()), Ohms(1e3 * 3f64.sqrt()))
        });
        println!(
            "  in_window, {} parts in stock, up to {parts} a network, 577R to 1k73 (a factor of 3): {} networks in {} (index built in {})",
            few.parts.len(),
            found.len(),
            ms(window),
            ms(build)
        );
    }
}
