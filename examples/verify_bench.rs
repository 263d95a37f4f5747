//! How `verify` grows with the width of a built network: the whole bench check (beta fit, every fault of the
//! catalogue fitted over beta, folding alike faults) on the line-driver demo with RE built as a string of `n`
//! equal resistors, `n` from 8 to 4 000, measured in one run. The command line takes at most 64 members a
//! network ([`biasfit::network::notation::MAX_MEMBERS`]); the wider networks are built here directly, past the
//! cap, to show the fault simulation itself is linear: the time per member stays flat. The ratio column is
//! the time per member against the 8-member network's; the absolute figures depend on the machine.
//!
//! cargo run --release --example verify_bench

use biasfit::bench::faults::{simulate, Fault, Place};
use biasfit::bench::{verify, Measured};
use biasfit::network::{Member, Network};
use biasfit::stage::{self, Slot, SlotNetworks};
use biasfit::units::{Ohms, Tolerance, Watts};
use std::hint::black_box;
use std::time::Instant;

fn single(ohms: f64) -> Network {
    Network::Single(Member::loose(Ohms(ohms), Tolerance(0.01), Watts(0.25)))
}

fn main() {
    let st = stage::load("examples/line-driver.toml".as_ref())
        .expect("the demo reads")
        .stages
        .remove(0);
    println!(
        "{:>7}  {:>7}  {:>12}  {:>14}  {:>10}",
        "members", "faults", "verify", "per member", "vs 8"
    );
    let mut first = None;
    for n in [8usize, 16, 32, 64, 500, 1000, 2000, 4000] {
        // RE = 600 Ω as n equal parts in series; the rest as the demo's build sheet has them.
        let re = Network::Series((0..n).map(|_| single(600.0 / n as f64)).collect());
        let nets = SlotNetworks::from_pairs([
            (Slot::R1, single(39e3)),
            (Slot::R2, single(7.5e3)),
            (Slot::RC, single(2.7e3)),
            (Slot::RE, re),
        ]);
        // Readings from one member shorted, as a meter would show them: the check has a fault to find.
        let fault = Fault::Short(Place {
            slot: Slot::RE,
            member: n / 2,
        });
        let seen = simulate(&st, &nets, Some(&fault), st.transistor.beta.typ);
        let readings = Measured {
            vb: Some(seen.vb),
            ve: Some(seen.ve),
            vc: Some(seen.vc),
        };
        let faults = biasfit::bench::faults::catalogue(&st, &nets).len();
        let repeats = if n <= 64 { 5 } else { 1 };
        let mut best = f64::INFINITY;
        for _ in 0..repeats {
            let start = Instant::now();
            black_box(verify(&st, &nets, &readings));
            best = best.min(start.elapsed().as_secs_f64());
        }
        let per = best / n as f64;
        let base = *first.get_or_insert(per);
        println!(
            "{n:>7}  {faults:>7}  {:>10.1} ms  {:>11.1} µs  {:>9.2}×",
            best * 1e3,
            per * 1e6,
            per / base
        );
    }
}
