//! Benchmark of `spread`: 100 000 Monte Carlo builds of one stage against the target of one second,
//! for a fixed-VBE stage and a diode-law stage, with the cost of the bare solves the builds are made of
//! (the same number of `Stage::solve` calls at the nominal values) and of the worst case and robust error.
//! Run with `cargo run --release --example spread_bench`.
//!
//! Every figure is measured in this run; the ratios compare two measurements of this run, or a measurement
//! with the target.

use biasfit::network::parse_network;
use biasfit::spread::{monte_carlo, worst_case, worst_error, Dist};
use biasfit::stage::{self, SlotNetworks, Stage};
use biasfit::{Celsius, Tolerance, Watts};
use std::hint::black_box;
use std::time::Instant;

const BUILDS: usize = 100_000;
const TARGET_SECONDS: f64 = 1.0;

fn stage_of(path: &str) -> Stage {
    stage::load(path.as_ref())
        .unwrap_or_else(|e| panic!("{path}: {e}"))
        .stages
        .remove(0)
}

fn nets(stage: &Stage, spec: &[(&str, &str)]) -> SlotNetworks {
    let n = SlotNetworks::from_pairs(spec.iter().map(|(slot, text)| {
        let net = parse_network(text, Tolerance(0.05), Watts(0.25)).expect("network");
        (slot.parse().expect("slot"), net)
    }));
    assert!(stage.slots().iter().all(|s| n.get(*s).is_some()));
    n
}

fn main() {
    let cases = [
        (
            "line driver (fixed VBE), 6 resistors",
            stage_of("examples/line-driver.toml"),
            vec![
                ("R1", "39k"),
                ("R2", "6k8+560"),
                ("RC", "2k7"),
                ("RE", "560+33"),
            ],
        ),
        (
            "probe preamp (diode law), 7 resistors",
            stage_of("examples/sensor-preamp.toml"),
            vec![
                ("R1", "15k+1k"),
                ("R2", "4k7+560"),
                ("RC", "6k2|56k"),
                ("RE", "2k2"),
            ],
        ),
    ];
    println!("spread benchmark: {BUILDS} Monte Carlo builds of one stage (each figure measured in this run)\n");
    println!(
        "{:<40} {:>9} {:>10} {:>12} {:>11} {:>12}",
        "stage", "seconds", "of target", "builds/s", "bare solve", "build/solve"
    );
    let mut slowest: f64 = 0.0;
    for (name, st, spec) in &cases {
        let n = nets(st, spec);
        // Warm the caches once, untimed.
        black_box(monte_carlo(st, &n, 1_000, 1, Dist::Uniform, 20));
        let t = Instant::now();
        let mc = black_box(monte_carlo(st, &n, BUILDS, 1, Dist::Uniform, 20));
        let secs = t.elapsed().as_secs_f64();
        slowest = slowest.max(secs);
        assert_eq!(mc.runs, BUILDS);
        let values = n.values();
        let b = st.transistor.beta.typ;
        let t = Instant::now();
        let mut acc = 0.0;
        for k in 0..BUILDS {
            // A beta that changes each time, so the solves cannot be hoisted out of the loop.
            acc += st
                .solve(&values, b + (k % 7) as f64, st.limits.ambient)
                .ic
                .0;
        }
        black_box(acc);
        let bare = t.elapsed().as_secs_f64();
        println!(
            "{name:<40} {secs:>9.4} {:>9.1}% {:>12.0} {:>10.4}s {:>11.2}×",
            100.0 * secs / TARGET_SECONDS,
            BUILDS as f64 / secs,
            bare,
            secs / bare
        );
    }

    println!(
        "\ntarget: {BUILDS} builds in under {TARGET_SECONDS} s: {} (slowest {slowest:.4} s, ratio {:.3}, {:.1}× under)",
        if slowest < TARGET_SECONDS { "met" } else { "NOT met" },
        slowest / TARGET_SECONDS,
        TARGET_SECONDS / slowest
    );

    println!("\nworst case and robust error (for design --robust), per call");
    println!("{:<40} {:>14} {:>14}", "stage", "worst_case", "worst_error");
    for (name, st, spec) in &cases {
        let n = nets(st, spec);
        let temps = (Celsius(-20.0), Celsius(70.0));
        let reps = 2_000;
        let t = Instant::now();
        for _ in 0..reps {
            black_box(worst_case(st, &n, temps));
        }
        let wc = t.elapsed().as_secs_f64() / reps as f64;
        let t = Instant::now();
        for _ in 0..reps {
            black_box(worst_error(st, &n, temps));
        }
        let we = t.elapsed().as_secs_f64() / reps as f64;
        println!("{name:<40} {:>12.1}µs {:>12.1}µs", wc * 1e6, we * 1e6);
    }
}
