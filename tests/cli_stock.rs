//! `biasfit stock` through the real binary: the demo files load, summaries are snapshotted, and the quirky
//! but valid files in tests/fixtures/stock load. The broken ones are in tests/fixtures/bad (tests/bad_input.rs).

mod common;
use common::*;

#[test]
fn demo_stocks_load_and_summarise() {
    for (file, distinct, pieces) in [
        ("stock/e12-kit.csv", 61, 610),
        ("stock/e96-box.csv", 288, 1440),
    ] {
        let out = biasfit(&["stock", file, "--json"]);
        assert!(out.status.success(), "{file}: {}", stderr(&out));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        assert_eq!(v["distinct"], distinct, "{file}");
        assert_eq!(v["pieces"], pieces, "{file}");
    }
    let out = biasfit(&["stock", "stock/e12-kit.csv", "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    // A complete E12 kit from 10 R to 1M misses no E12 value in its span except above 1M.
    let missing: Vec<f64> = v["missing_e12"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    assert!(missing.iter().all(|&m| m > 1e6), "{missing:?}");
}

#[test]
fn hobby_drawer_summary_snapshot() {
    let out = biasfit(&["stock", "stock/hobby-drawer.csv"]);
    assert!(out.status.success());
    snapshot(
        "tests/snapshots/stock-hobby-drawer.txt".as_ref(),
        &stdout(&out),
    );
}

#[test]
fn quirky_but_valid_files_load() {
    let out = biasfit(&["stock", "tests/fixtures/stock/semicolon.csv", "--json"]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("semicolon"),
        "the chosen delimiter is said"
    );
    let out = biasfit(&["stock", "tests/fixtures/stock/bom-crlf.csv", "--json"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["pieces"], 2);
}

#[test]
fn a_missing_file_is_an_input_error() {
    let out = biasfit(&["stock", "no/such/file.csv"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).starts_with("error: no/such/file.csv: cannot read the stock file"));
}
