//! How fast the circuit engine solves, measured in one run against the targets and beside the
//! closed form: a one-transistor circuit with a fixed VBE (target 200 000 solves/s) and with the diode law
//! (50 000/s), the differential pair (50 000/s), 100 000 Monte Carlo builds of the pair (under 5 s), and
//! the engine's time per solve beside the closed form's for the five topologies. Each solver is reused
//! across builds, as a Monte Carlo run or the optimiser would; the builds vary over 64 resistor sets so no
//! solve repeats the one before.
//!
//! cargo run --release --example circuit_bench

use biasfit::circuit::of_stage::of_stage;
use biasfit::circuit::{Build, Circuit, Element, Options, Solver};
use biasfit::stage::design::{DEFAULT_LIMITS, DEFAULT_RULE};
use biasfit::stage::{Beta, Ground, Polarity, SlotValues, Stage, Topology, Transistor, Vbe};
use biasfit::units::{Amps, Celsius, Ohms, Volts};
use std::hint::black_box;
use std::time::Instant;

fn transistor(vbe: Vbe) -> Transistor {
    Transistor {
        beta: Beta {
            min: 90.0,
            typ: 170.0,
            max: 310.0,
        },
        vbe,
        vce_sat: Volts(0.15),
        max_power: None,
        max_ic: None,
        max_vce: None,
        vbe_tempco: -0.002,
        beta_tempco: 0.0,
        reference: Celsius(25.0),
        tj_max: Celsius(150.0),
    }
}

const DIODE: Vbe = Vbe::Diode {
    volts: Volts(0.64),
    at: Amps(1e-3),
    n: 1.1,
};

fn stage(topology: Topology, vbe: Vbe) -> Stage {
    let mut rule = DEFAULT_RULE;
    if topology == Topology::DividerSplit {
        rule.gain = Some(6.0);
    }
    Stage {
        name: topology.name().into(),
        topology,
        polarity: Polarity::Npn,
        supply: Volts(15.0),
        supply_neg: (topology == Topology::DualSupply).then_some(Volts(9.0)),
        ground: if topology == Topology::DualSupply {
            Ground::Between
        } else {
            Ground::Emitter
        },
        load: Some(Ohms(3900.0)),
        ic: None,
        transistor: transistor(vbe),
        rule,
        limits: DEFAULT_LIMITS,
        line: 0,
    }
}

/// 64 resistor sets within ±10 % of the stage's ideal design.
fn variants(s: &Stage) -> Vec<SlotValues> {
    let ideal = s.ideal().expect("an ideal design").values;
    (0..64)
        .map(|k| {
            let mut v = ideal;
            for (j, slot) in s.slots().into_iter().enumerate() {
                let f = 0.9 + 0.2 * (((k * 7 + j * 13) % 64) as f64 / 63.0);
                v.set(slot, v.get(slot).unwrap() * f);
            }
            v
        })
        .collect()
}

fn builds(c: &Circuit, s: &Stage, sets: &[SlotValues]) -> Vec<Build> {
    sets.iter()
        .map(|v| {
            let (_, slots) = of_stage(s, v).unwrap();
            c.typical(&slots).unwrap()
        })
        .collect()
}

/// Seconds per solve over `n` solves cycling through the builds.
fn per_solve(c: &Circuit, builds: &[Build], n: usize, options: &Options) -> f64 {
    let mut solver = Solver::new(c);
    let start = Instant::now();
    let mut sink = 0.0;
    for k in 0..n {
        let s = solver
            .solve(&builds[k % builds.len()], options)
            .expect("solves");
        sink += s.nodes[1].0;
    }
    black_box(sink);
    start.elapsed().as_secs_f64() / n as f64
}

fn closed_per_solve(s: &Stage, sets: &[SlotValues], n: usize) -> f64 {
    let start = Instant::now();
    let mut sink = 0.0;
    for k in 0..n {
        sink += s.typical(&sets[k % sets.len()]).ic.0;
    }
    black_box(sink);
    start.elapsed().as_secs_f64() / n as f64
}

fn pair() -> Circuit {
    let text = include_str!("starters/tail-pair.toml");
    biasfit::circuit::file::parse("tail-pair.toml", text)
        .unwrap()
        .remove(0)
}

/// A small deterministic generator (xorshift64*) for the Monte Carlo draws.
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn main() {
    println!("circuit engine benchmark (each figure measured in this run)\n");
    println!(
        "{:<44} {:>12} {:>10} {:>8}",
        "case", "solves/s", "target/s", "ratio"
    );
    let row = |name: &str, per: f64, target: f64| {
        println!(
            "{name:<44} {:>12.0} {target:>10.0} {:>7.1}×",
            1.0 / per,
            (1.0 / per) / target
        );
    };
    let fixed = stage(Topology::Divider, Vbe::Fixed(Volts(0.64)));
    let (c, _) = of_stage(&fixed, &fixed.ideal().unwrap().values).unwrap();
    let b = builds(&c, &fixed, &variants(&fixed));
    row(
        "one transistor (divider), fixed VBE",
        per_solve(&c, &b, 400_000, &Options::default()),
        200_000.0,
    );
    let diode = stage(Topology::Divider, DIODE);
    let (c, _) = of_stage(&diode, &diode.ideal().unwrap().values).unwrap();
    let b = builds(&c, &diode, &variants(&diode));
    row(
        "one transistor (divider), diode law",
        per_solve(&c, &b, 200_000, &Options::default()),
        50_000.0,
    );

    let p = pair();
    let rt = [12e3, 13e3, 14e3, 15e3, 16e3, 17e3, 18e3, 20e3];
    let pb: Vec<Build> = rt.iter().map(|&r| p.typical(&[Ohms(r)]).unwrap()).collect();
    row(
        "differential pair, diode law, latch search",
        per_solve(&p, &pb, 100_000, &Options::default()),
        50_000.0,
    );
    row(
        "differential pair, diode law, no latch search",
        per_solve(&p, &pb, 100_000, &Options { check_latch: false }),
        50_000.0,
    );

    // Monte Carlo: every fixed resistor ±1 % and the tail ±5 %, uniform; each beta uniform over its range.
    let base = p.typical(&[Ohms(15e3)]).unwrap();
    let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
    for (label, options) in [
        ("latch search", Options::default()),
        ("no latch search", Options { check_latch: false }),
    ] {
        let mut solver = Solver::new(&p);
        let start = Instant::now();
        let mut sum = 0.0;
        for _ in 0..100_000 {
            let mut b = base.clone();
            for (i, e) in b.elements.iter_mut().enumerate() {
                match e {
                    Element::Resistor(r) => {
                        let tol = if p.parts[i].name == "RT" { 0.05 } else { 0.01 };
                        *r *= 1.0 + tol * (2.0 * rng.next() - 1.0);
                    }
                    Element::Bjt(q) => q.beta = 90.0 + (310.0 - 90.0) * rng.next(),
                    _ => {}
                }
            }
            sum += solver.solve(&b, &options).expect("solves").nodes[1].0;
        }
        black_box(sum);
        let secs = start.elapsed().as_secs_f64();
        println!(
            "{:<44} {secs:>10.2} s {:>8.1} s {:>7.1}×",
            format!("100 000 Monte Carlo builds, pair, {label}"),
            5.0,
            5.0 / secs
        );
    }

    println!("\nthe five topologies: engine beside closed form, per solve (fixed VBE / diode law)");
    println!(
        "{:<20} {:>12} {:>12} {:>8} {:>12} {:>12} {:>8}",
        "topology", "engine", "closed", "ratio", "engine", "closed", "ratio"
    );
    for t in Topology::ALL {
        let mut cells = Vec::new();
        for vbe in [Vbe::Fixed(Volts(0.64)), DIODE] {
            let s = stage(t, vbe);
            let sets = variants(&s);
            let (c, _) = of_stage(&s, &sets[0]).unwrap();
            let b = builds(&c, &s, &sets);
            let e = per_solve(&c, &b, 100_000, &Options::default());
            let cf = closed_per_solve(&s, &sets, 400_000);
            cells.push(format!(
                "{:>10.0} ns {:>10.0} ns {:>7.1}×",
                e * 1e9,
                cf * 1e9,
                e / cf
            ));
        }
        println!("{:<20} {} {}", t.name(), cells[0], cells[1]);
    }
}
