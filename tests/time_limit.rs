//! `design --time-limit`: on a stock too large to search in the time given, the command returns the best
//! verified design found so far, marks it "time limit" in JSON and says in the text that it may not be optimal.

mod common;
use common::*;

/// Every E192 value over ten decades, 0.5 %, five of each: about 10 s of searching with triples for the split emitter.
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
    // The split-emitter demo with triples on this stock takes about 10 s in full. A limit too short to find
    // any design is its own message; the loop allows a slower machine a second, longer try.
    let base = [
        "design",
        "examples/split-emitter.toml",
        "--parts",
        "3",
        "--stock",
        p,
    ];
    let mut done = None;
    for limit in ["4", "8"] {
        let started = std::time::Instant::now();
        let out = biasfit(&[&base[..], &["--time-limit", limit, "--json"]].concat());
        let took = started.elapsed().as_secs_f64();
        if out.status.code() == Some(3) && stderr(&out).contains("before any design was found") {
            continue;
        }
        assert!(out.status.success(), "{}", stderr(&out));
        let lim: f64 = limit.parse().unwrap();
        // Stopped at the limit, not after the full search.
        assert!(took < lim + 3.0, "took {took} s with a {lim} s limit");
        done = Some((
            limit,
            serde_json::from_slice::<serde_json::Value>(&out.stdout).unwrap(),
        ));
        break;
    }
    let (limit, v) = done.expect("a design within 8 s");
    assert_eq!(v["solver"]["status"], "time limit");
    // What it returns is a real, checked design: every check passes and the error is the solver's own.
    assert!(v["stages"][0]["checks"]
        .as_array()
        .unwrap()
        .iter()
        .all(|c| c["ok"] == true));
    assert!(v["stages"][0]["error"].as_f64().unwrap() < 0.05);
    let text = biasfit(&[&base[..], &["--time-limit", limit]].concat());
    assert!(
        stdout(&text).contains("may not be optimal"),
        "{}",
        stdout(&text)
    );
    let _ = std::fs::remove_file(&path);
}
