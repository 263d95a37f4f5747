//! How reading a design file grows with its number of stages: `stage::parse` (which also checks that every
//! stage has an ideal design) on files of 500 to 10 000 copies of the line-driver demo, each renamed, measured
//! in one run. Linear reading keeps the time per stage flat; the ratio column is the time per stage against
//! the 500-stage file's. The absolute figures depend on the machine.
//!
//! cargo run --release --example parse_bench

use biasfit::stage::parse;
use std::hint::black_box;
use std::time::Instant;

/// A design file of `n` stages, the demo's with a distinct name each (names must differ).
fn file_of(n: usize) -> String {
    let stage = include_str!("line-driver.toml");
    let mut text = String::with_capacity(n * (stage.len() + 8));
    for i in 0..n {
        text.push_str(&stage.replace("name = \"line driver\"", &format!("name = \"driver {i}\"")));
        text.push('\n');
    }
    text
}

/// Seconds per stage to read an `n`-stage file, the best of `repeats` reads (the least disturbed by
/// the machine's other work).
fn per_stage(n: usize, repeats: usize) -> f64 {
    let text = file_of(n);
    let mut best = f64::INFINITY;
    for _ in 0..repeats {
        let start = Instant::now();
        let design = parse("bench.toml", &text).expect("the bench file reads");
        assert_eq!(design.stages.len(), n);
        black_box(&design);
        best = best.min(start.elapsed().as_secs_f64());
    }
    best / n as f64
}

fn main() {
    println!(
        "{:>7}  {:>14}  {:>10}",
        "stages", "time a stage", "× at 500"
    );
    let mut baseline = None;
    for n in [500, 1_000, 2_000, 4_000, 10_000] {
        let t = per_stage(n, if n <= 2_000 { 5 } else { 3 });
        let base = *baseline.get_or_insert(t);
        println!("{n:>7}  {:>11.1} µs  {:>9.2}×", t * 1e6, t / base);
    }
}
