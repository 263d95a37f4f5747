//! `design --time-limit`: on a stock too large to search in the time given, the command returns the best
//! verified design found so far, marks it "time limit" in JSON and says in the text that it may not be optimal.

mod common;
use common::*;

/// Every E192 value over ten decades, 0.5 %, five of each: far more than 1.5 s of searching with pairs.
fn big_stock(path: &std::path::Path) {
    let mut text = String::from("value,qty,tolerance,power\n");
    for decade in -1..9 {
        for v in biasfit::notation::Series::E192.significands() {
            let ohms = v as f64 * 10f64.powi(decade) / 100.0;
            text.push_str(&format!(
                "{},5,0.5%,0.25W\n",
                biasfit::notation::code(biasfit::Ohms(ohms))
            ));
        }
    }
    std::fs::write(path, text).unwrap();
}

#[test]
fn a_time_limit_returns_the_best_verified_design_and_says_so() {
    let path = std::env::temp_dir().join(format!("biasfit-big-{}.csv", std::process::id()));
    big_stock(&path);
    let p = path.to_str().unwrap();
    let started = std::time::Instant::now();
    let out = biasfit(&[
        "design",
        "examples/line-driver.toml",
        "--stock",
        p,
        "--time-limit",
        "1.5",
        "--json",
    ]);
    let took = started.elapsed().as_secs_f64();
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["solver"]["status"], "time limit");
    // What it returns is a real, checked design: every check passes and the error is the solver's.
    assert!(v["stages"][0]["checks"]
        .as_array()
        .unwrap()
        .iter()
        .all(|c| c["ok"] == true));
    assert!(v["stages"][0]["error"].as_f64().unwrap() < 0.05);
    // Stopped near the limit, not after the full search (about 7 s here); generous for a loaded machine.
    assert!(took < 5.0, "took {took} s");
    let text = biasfit(&[
        "design",
        "examples/line-driver.toml",
        "--stock",
        p,
        "--time-limit",
        "1.5",
    ]);
    assert!(
        stdout(&text).contains("may not be optimal"),
        "{}",
        stdout(&text)
    );
    let _ = std::fs::remove_file(&path);
}
