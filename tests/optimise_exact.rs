//! The optimiser's claim, proven on small cases: on random small stocks, with singles and with pairs, the
//! design's exact error equals the optimum of an exhaustive enumeration, written here, over the same
//! candidates and the same constraints; the chosen parts never exceed the stock for any number of copies;
//! --keep never changes a kept slot; and stages that share a scarce value get a valid split.

use biasfit::network::candidates::{in_window, Candidate};
use biasfit::network::PartId;
use biasfit::optimise::design::{design, Request};
use biasfit::stage::{self, Design, Slot, SlotNetworks, Stage};
use biasfit::stock::{Part, Stock};
use biasfit::{Ohms, Tolerance, Watts};
use std::collections::BTreeMap;

/// The library's SplitMix64: small, fast, and the same sequence on every machine.
struct Rng(biasfit::spread::rng::SplitMix64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0.next_u64()
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn load(name: &str) -> Design {
    let path = format!(
        "{}/tests/fixtures/designs/{name}",
        env!("CARGO_MANIFEST_DIR")
    );
    stage::load(path.as_ref()).unwrap_or_else(|e| panic!("{e}"))
}

/// A random stock: for each slot of each stage, a few values log-uniform within a factor 2.5 of its ideal,
/// 1 to 3 pieces each, mixed 1 % / 5 % and 0.125 / 0.25 / 0.5 W ratings.
fn random_stock(d: &Design, rng: &mut Rng, per_slot: usize) -> Stock {
    let mut parts = Vec::new();
    for st in &d.stages {
        let ideal = st.ideal().expect("ideal");
        for s in st.slots() {
            let x = ideal.values.get(s).unwrap().0;
            for _ in 0..per_slot {
                let v = x * 2.5f64.powf(2.0 * rng.unit() - 1.0);
                // Three significant digits, as real parts are marked.
                let v: f64 = format!("{v:.2e}").parse().unwrap();
                parts.push(Part {
                    ohms: Ohms(v),
                    tolerance: Tolerance(if rng.next().is_multiple_of(3) {
                        0.01
                    } else {
                        0.05
                    }),
                    power: Watts([0.125, 0.25, 0.5][(rng.next() % 3) as usize]),
                    qty: 1 + (rng.next() % 3) as u32,
                    locations: vec![format!("bin {}", parts.len() + 1)],
                    notes: Vec::new(),
                    lines: Vec::new(),
                });
            }
        }
    }
    Stock::from_parts("random", parts)
}

/// The exhaustive optimum over every combination of the same candidates, under the same constraints.
fn exhaustive(st: &Stage, stock: &Stock, parts: usize, window: f64) -> Option<f64> {
    let ideal = st.ideal().unwrap();
    let slots = st.slots();
    let lists: Vec<Vec<Candidate>> = slots
        .iter()
        .map(|&s| {
            let x = ideal.values.get(s).unwrap();
            in_window(stock, parts, x / window, x * window)
        })
        .collect();
    if lists.iter().any(|l| l.is_empty()) {
        return None;
    }
    let mut best: Option<f64> = None;
    let mut idx = vec![0usize; slots.len()];
    loop {
        let mut values = biasfit::stage::SlotValues::new();
        for (p, &s) in slots.iter().enumerate() {
            values.set(s, lists[p][idx[p]].ohms);
        }
        let e = st.error(&values);
        let mut need: BTreeMap<PartId, u32> = BTreeMap::new();
        for (p, &i) in idx
            .iter()
            .enumerate()
            .filter(|_| e < 4.0 && best.is_none_or(|b| e < b))
        {
            for &(part, n) in &lists[p][i].uses {
                *need.entry(part).or_default() += n;
            }
        }
        let stock_ok = need.iter().all(|(&p, &n)| stock.parts[p].qty >= n);
        if stock_ok && e < 4.0 && best.is_none_or(|b| e < b) && st.electrical_ok(&values) {
            let nets = SlotNetworks::from_pairs(
                slots
                    .iter()
                    .enumerate()
                    .map(|(p, &s)| (s, lists[p][idx[p]].network.clone())),
            );
            if st
                .checks(&nets)
                .iter()
                .filter(|c| c.name.starts_with("power "))
                .all(|c| c.ok)
            {
                best = Some(e);
            }
        }
        let mut k = 0;
        loop {
            if k == idx.len() {
                return best;
            }
            idx[k] += 1;
            if idx[k] < lists[k].len() {
                break;
            }
            idx[k] = 0;
            k += 1;
        }
    }
}

fn used(stock: &Stock, nets: &[(SlotNetworks, u32)]) -> BTreeMap<PartId, u32> {
    let mut need: BTreeMap<PartId, u32> = BTreeMap::new();
    for (n, copies) in nets {
        for (_, net) in n.iter() {
            for m in net.members() {
                if let Some(p) = m.part {
                    *need.entry(p).or_default() += copies;
                }
            }
        }
    }
    let _ = stock;
    need
}

/// Candidates within this factor of each ideal value, for the optimiser and the enumeration alike.
const WINDOW: f64 = 2.0;

#[test]
fn design_equals_exhaustive_optimum_on_random_small_stocks() {
    let mut compared = 0;
    for (file, per_slot_singles, per_slot_pairs) in [
        ("divider-9v.toml", 5, 2),
        ("pnp-dual.toml", 6, 3),
        ("feedback.toml", 6, 3),
        ("split.toml", 3, 2),
    ] {
        let d = load(file);
        for seed in 0..10u64 {
            let mut rng = Rng(biasfit::spread::rng::SplitMix64::new(
                seed * 7919 + file.len() as u64,
            ));
            for parts in [1usize, 2] {
                let per = if parts == 1 {
                    per_slot_singles
                } else {
                    per_slot_pairs
                };
                let stock = random_stock(&d, &mut rng, per);
                let want = exhaustive(&d.stages[0], &stock, parts, WINDOW);
                let request = Request {
                    max_parts: parts,
                    window: WINDOW,
                    ..Request::default()
                };
                let got = design(&d, &stock, &request, &mut |_| {});
                match (want, got) {
                    (None, Err(_)) => {}
                    (Some(w), Ok(out)) => {
                        compared += 1;
                        let e = out.built[0].error;
                        assert!(
                            (e - w).abs() < 1e-9,
                            "{file} seed {seed} parts {parts}: design {e} vs exhaustive {w}"
                        );
                    }
                    (w, g) => panic!(
                        "{file} seed {seed} parts {parts}: exhaustive {w:?}, design {:?}",
                        g.map(|o| o.built[0].error)
                    ),
                }
            }
        }
    }
    assert!(compared >= 40, "only {compared} feasible cases compared");
}

#[test]
fn chosen_parts_never_exceed_the_stock_for_any_copies() {
    let d = load("divider-9v.toml");
    let mut rng = Rng(biasfit::spread::rng::SplitMix64::new(99));
    let stock = random_stock(&d, &mut rng, 8);
    let mut built_some = 0;
    for copies in 1..=6 {
        let request = Request {
            max_parts: 2,
            copies,
            ..Request::default()
        };
        if let Ok(out) = design(&d, &stock, &request, &mut |_| {}) {
            built_some += 1;
            let boards: u32 = out.built.iter().map(|b| b.copies).sum();
            assert_eq!(boards, copies);
            let nets: Vec<_> = out
                .built
                .iter()
                .map(|b| (b.networks.clone(), b.copies))
                .collect();
            for (p, n) in used(&stock, &nets) {
                assert!(
                    n <= stock.parts[p].qty,
                    "copies {copies}: part {p} used {n} of {}",
                    stock.parts[p].qty
                );
            }
        }
    }
    assert!(built_some >= 2);
}

#[test]
fn keep_never_changes_a_kept_slot() {
    let d = load("divider-9v.toml");
    let mut rng = Rng(biasfit::spread::rng::SplitMix64::new(5));
    let stock = random_stock(&d, &mut rng, 6);
    let ideal = d.stages[0].ideal().unwrap();
    let kept_rc = biasfit::network::parse_network("3k3+470", Tolerance(0.05), Watts(0.25)).unwrap();
    let kept_r2 = biasfit::network::parse_network(
        &biasfit::notation::code(
            biasfit::notation::Series::E12.nearest(ideal.values.get(Slot::R2).unwrap()),
        ),
        Tolerance(0.05),
        Watts(0.25),
    )
    .unwrap();
    let request = Request {
        max_parts: 2,
        keep: vec![
            (0, Slot::RC, kept_rc.clone()),
            (0, Slot::R2, kept_r2.clone()),
        ],
        ..Request::default()
    };
    let out = design(&d, &stock, &request, &mut |_| {}).expect("a design around the kept parts");
    assert_eq!(out.built[0].networks.get(Slot::RC), Some(&kept_rc));
    assert_eq!(out.built[0].networks.get(Slot::R2), Some(&kept_r2));
}

#[test]
fn two_stages_sharing_a_scarce_value_get_a_valid_split() {
    // Two identical stages, and a stock where every value exists once: both cannot take the same parts.
    let one = load("divider-9v.toml");
    let mut d = one.clone();
    let mut second = one.stages[0].clone();
    second.name = "twin".into();
    d.stages.push(second);
    let mut rng = Rng(biasfit::spread::rng::SplitMix64::new(17));
    let mut stock = random_stock(&one, &mut rng, 6);
    for p in &mut stock.parts {
        p.qty = 1;
    }
    let out = design(
        &d,
        &stock,
        &Request {
            max_parts: 1,
            ..Request::default()
        },
        &mut |_| {},
    )
    .expect("two stages from a drawer of singles");
    let nets: Vec<_> = out
        .built
        .iter()
        .map(|b| (b.networks.clone(), b.copies))
        .collect();
    for (p, n) in used(&stock, &nets) {
        assert!(n <= 1, "part {p} used {n} times with one on hand");
    }
    // The single stage alone does at least as well as either twin.
    let alone = design(
        &one,
        &stock,
        &Request {
            max_parts: 1,
            ..Request::default()
        },
        &mut |_| {},
    )
    .unwrap();
    assert!(out
        .built
        .iter()
        .all(|b| b.error >= alone.built[0].error - 1e-12));
}

#[test]
fn robust_choice_has_the_smallest_worst_case_among_the_variants() {
    let d = load("divider-9v.toml");
    let mut rng = Rng(biasfit::spread::rng::SplitMix64::new(23));
    let stock = random_stock(&d, &mut rng, 8);
    let temps = (biasfit::Celsius(-20.0), biasfit::Celsius(70.0));
    let nominal = design(
        &d,
        &stock,
        &Request {
            max_parts: 2,
            ..Request::default()
        },
        &mut |_| {},
    )
    .unwrap();
    let robust = design(
        &d,
        &stock,
        &Request {
            max_parts: 2,
            robust: true,
            robust_temp: Some(temps),
            ..Request::default()
        },
        &mut |_| {},
    )
    .unwrap();
    let worst = |nets: &SlotNetworks| biasfit::spread::worst_error(&d.stages[0], nets, temps);
    let w_robust = robust.built[0]
        .worst
        .expect("robust reports its worst case");
    assert!((w_robust - worst(&robust.built[0].networks)).abs() < 1e-12);
    // The nominal choice is one of the variants the robust search weighed, so it cannot be better.
    assert!(w_robust <= worst(&nominal.built[0].networks) + 1e-12);
    assert!(robust.built[0].error >= nominal.built[0].error - 1e-12);
}
