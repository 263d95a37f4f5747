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
fn the_ohm_sign_and_the_greek_omega_are_the_same_unit() {
    // Issue 18: U+2126 was refused while the identical-looking U+03A9 was accepted. The two 4k7 rows
    // (one of each) merge into one value of 5 pieces.
    let out = biasfit(&["stock", "tests/fixtures/stock/ohm-sign.csv", "--json"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["distinct"], 2, "{v}");
    assert_eq!(v["pieces"], 9, "{v}");
    let out = biasfit(&[
        "fix",
        "4.7k\u{2126}",
        "--stock",
        "tests/fixtures/stock/ohm-sign.csv",
        "--json",
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["target"], 4700.0, "{v}");
    assert_eq!(v["networks"][0]["network"], "4k7", "{v}");
}

#[test]
fn cr_lf_and_crlf_line_ends_read_alike() {
    // Issue 18: a CR-only file (old spreadsheet exports) once read as one line, "0 distinct values".
    let cr = std::fs::read_to_string(root().join("tests/fixtures/stock/cr-only.csv")).unwrap();
    assert!(!cr.contains('\n'), "the fixture has CR-only line ends");
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("line-ends");
    std::fs::create_dir_all(&dir).unwrap();
    let mut seen = Vec::new();
    for (name, end) in [("cr", "\r"), ("lf", "\n"), ("crlf", "\r\n")] {
        let path = dir.join(format!("{name}.csv"));
        std::fs::write(&path, cr.replace('\r', end)).unwrap();
        let out = biasfit(&["stock", path.to_str().unwrap(), "--json"]);
        assert!(out.status.success(), "{name}: {}", stderr(&out));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        assert_eq!(v["distinct"], 3, "{name}");
        assert_eq!(v["pieces"], 23, "{name}");
        seen.push((v["range"].clone(), v["decades"].clone()));
    }
    assert!(seen.windows(2).all(|w| w[0] == w[1]), "{seen:?}");
}

#[test]
fn a_missing_file_is_an_input_error() {
    let out = biasfit(&["stock", "no/such/file.csv"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).starts_with("error: no/such/file.csv: cannot read the stock file"));
}

#[test]
fn control_characters_from_a_file_are_shown_not_obeyed() {
    // Issue 18: an OSC sequence in a bin location once set the terminal's title.
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("escapes");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("esc.csv");
    std::fs::write(
        &path,
        "value,qty,tolerance,power,location\n4k7,3,5%,0.25W,\u{1b}]0;owned\u{7}\n",
    )
    .unwrap();
    for json in [false, true] {
        let mut args = vec!["fix", "4k7", "--stock", path.to_str().unwrap()];
        if json {
            args.push("--json");
        }
        let out = biasfit(&args);
        assert!(out.status.success(), "{}", stderr(&out));
        let text = stdout(&out);
        assert!(
            !text.contains('\u{1b}') && !text.contains('\u{7}'),
            "{text}"
        );
        let shown = if json {
            "\\u001b]0;owned\\u0007"
        } else {
            "\\u{1b}]0;owned\\u{7}"
        };
        assert!(text.contains(shown), "{text}");
    }
}
