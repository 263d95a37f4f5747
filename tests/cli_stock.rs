//! `biasfit stock` through the real binary: the demo files load, summaries are snapshotted, and every broken
//! file in tests/fixtures/stock is refused with one line naming file, line and column, and exit code 2.

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
fn broken_stock_files_are_refused_clearly() {
    let dir = root().join("tests/fixtures/stock");
    let mut names: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "csv"))
        .collect();
    names.sort();
    let mut seen = 0;
    for path in names {
        let rel = path
            .strip_prefix(root())
            .unwrap()
            .to_string_lossy()
            .into_owned();
        let out = biasfit(&["stock", &rel]);
        let err = stderr(&out);
        let expected_path = path.with_extension("err");
        if !expected_path.exists() {
            // Files without a .err snapshot are good inputs with a quirk (BOM, semicolons): they must load.
            assert!(out.status.success(), "{rel} should load: {err}");
            continue;
        }
        seen += 1;
        assert_eq!(out.status.code(), Some(2), "{rel}: {err}");
        assert!(err.starts_with("error: "), "{rel}: {err}");
        assert_eq!(err.lines().count(), 1, "{rel}: one line wanted: {err}");
        assert!(!err.contains("panicked"), "{rel}: {err}");
        snapshot(expected_path.strip_prefix(root()).unwrap(), &err);
    }
    assert!(seen >= 7, "only {seen} broken files checked");
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
