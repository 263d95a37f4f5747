//! `order`'s claims: its exact error meets the bound; it never costs more than buying every ideal value
//! rounded to the series, wherever that meets the bound; a stock that already meets the design orders nothing;
//! and the order CSV feeds `stock add`.

mod common;
use biasfit::notation::Series;
use biasfit::optimise::share::Goal;
use biasfit::order::catalogue::Catalogue;
use biasfit::order::purchase::{order, OrderRequest};
use biasfit::stage::{self, SlotNetworks};
use biasfit::stock::{Part, Stock};
use biasfit::{Member, Network, Ohms, Tolerance, Watts};
use common::*;

fn load(name: &str) -> stage::Design {
    stage::load(root().join(name).as_path()).unwrap()
}

fn request(goal: Goal, copies: u32) -> OrderRequest {
    OrderRequest {
        max_parts: 2,
        copies,
        goal,
        variants: 80,
        window: 3.0,
        time_limit: None,
        deadline: None,
    }
}

/// A small drawer that cannot meet a tight bound by itself.
fn thin_stock() -> Stock {
    let parts = [1000.0, 4700.0, 10e3, 47e3]
        .iter()
        .map(|&v| Part {
            ohms: Ohms(v),
            tolerance: Tolerance(0.05),
            power: Watts(0.25),
            qty: 2,
            locations: vec!["tray".into()],
            notes: vec![],
            lines: vec![],
        })
        .collect();
    Stock::from_parts("thin", parts)
}

#[test]
fn order_meets_the_bound_and_never_costs_more_than_rounding_to_the_series() {
    let catalogue = Catalogue::from_series(
        Series::E24,
        Tolerance(0.01),
        Watts(0.25),
        Ohms(1.0),
        Ohms(10e6),
    );
    let stock = thin_stock();
    let mut compared = 0;
    for file in [
        "examples/line-driver.toml",
        "examples/sensor-preamp.toml",
        "examples/pnp-stage.toml",
    ] {
        let d = load(file);
        let st = &d.stages[0];
        let ideal = st.ideal().unwrap();
        // The plain baseline: each ideal value rounded to its nearest E24 value, all bought (unit cost 1).
        let rounded = SlotNetworks::from_pairs(st.slots().into_iter().map(|s| {
            let v = Series::E24.nearest(ideal.values.get(s).unwrap());
            (
                s,
                Network::Single(Member::loose(v, Tolerance(0.01), Watts(0.25))),
            )
        }));
        let rounded_error = st.error(&rounded.values());
        for copies in [1u32, 3] {
            for bound in [0.002, 0.01, 0.05] {
                let got = order(
                    &d,
                    &stock,
                    &catalogue,
                    &request(Goal::MaxError(bound), copies),
                    &mut |_| {},
                );
                let rounded_ok = rounded_error <= bound
                    && biasfit::optimise::design::meets_hard_constraints(st, &rounded);
                match got {
                    Ok(o) => {
                        for b in &o.built {
                            assert!(
                                b.error <= bound * (1.0 + 1e-9),
                                "{file}: error {} over {bound}",
                                b.error
                            );
                        }
                        if rounded_ok {
                            compared += 1;
                            let baseline_cost = (st.slots().len() as u32 * copies) as f64;
                            assert!(
                                o.cost.0 <= baseline_cost + 1e-9,
                                "{file}: {} > {baseline_cost}",
                                o.cost.0
                            );
                        }
                    }
                    Err(e) => assert!(
                        !rounded_ok,
                        "{file} bound {bound}: rounding meets it, but order failed: {e}"
                    ),
                }
            }
        }
    }
    assert!(
        compared >= 4,
        "only {compared} cases where rounding met the bound"
    );
}

#[test]
fn a_stock_that_meets_the_design_orders_nothing() {
    let d = load("examples/line-driver.toml");
    let stock = biasfit::stock::load(
        root().join("stock/e12-kit.csv").as_path(),
        Default::default(),
    )
    .unwrap();
    let catalogue = Catalogue::from_series(
        Series::E96,
        Tolerance(0.01),
        Watts(0.25),
        Ohms(1.0),
        Ohms(10e6),
    );
    let o = order(
        &d,
        &stock,
        &catalogue,
        &request(Goal::MaxError(0.01), 1),
        &mut |_| {},
    )
    .unwrap();
    assert!(o.lines.is_empty(), "{:?}", o.lines);
    assert_eq!(o.cost.0, 0.0);
}

#[test]
fn a_budget_buys_the_best_error_it_can() {
    let d = load("examples/line-driver.toml");
    let catalogue = Catalogue::from_series(
        Series::E96,
        Tolerance(0.01),
        Watts(0.25),
        Ohms(1.0),
        Ohms(10e6),
    );
    let stock = thin_stock();
    let mut last = f64::INFINITY;
    for budget in [0.0, 2.0, 4.0, 8.0] {
        match order(
            &d,
            &stock,
            &catalogue,
            &request(Goal::Budget(budget), 1),
            &mut |_| {},
        ) {
            Ok(o) => {
                assert!(o.cost.0 <= budget + 1e-9);
                let e = o.built[0].error;
                // More money never makes the best design worse.
                assert!(e <= last + 1e-12, "budget {budget}: {e} after {last}");
                last = e;
            }
            Err(_) => assert!(
                last.is_infinite(),
                "a larger budget failed after a smaller one worked"
            ),
        }
    }
    assert!(last.is_finite());
}

#[test]
fn order_csv_round_trips_through_stock_add() {
    let dir = std::env::temp_dir().join(format!("biasfit-order-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let stock_path = dir.join("stock.csv");
    std::fs::write(
        &stock_path,
        "value,qty,tolerance,power,location\n1k,2,5%,0.25W,tray\n4k7,2,5%,0.25W,tray\n",
    )
    .unwrap();
    let csv = dir.join("order.csv");
    let out = biasfit(&[
        "order",
        "examples/line-driver.toml",
        "--stock",
        stock_path.to_str().unwrap(),
        "--error",
        "1%",
        "--csv",
        csv.to_str().unwrap(),
        "--json",
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["order"].as_array().is_some_and(|a| !a.is_empty()));
    assert!(v["stages"][0]["error"].as_f64().unwrap() <= 0.01);
    let add = biasfit(&[
        "stock",
        "add",
        stock_path.to_str().unwrap(),
        "--order",
        csv.to_str().unwrap(),
    ]);
    assert!(add.status.success(), "{}", stderr(&add));
    // With the order added, the stock alone now meets the design: nothing more to buy.
    let again = biasfit(&[
        "order",
        "examples/line-driver.toml",
        "--stock",
        stock_path.to_str().unwrap(),
        "--error",
        "1%",
        "--json",
    ]);
    assert!(again.status.success(), "{}", stderr(&again));
    let v: serde_json::Value = serde_json::from_slice(&again.stdout).unwrap();
    assert_eq!(v["order"].as_array().map(|a| a.len()), Some(0));
    let _ = std::fs::remove_dir_all(&dir);
}
