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
    insta::assert_snapshot!("stock-hobby-drawer", stdout(&out));
    assert!(
        user_docs().contains(&stdout(&out)),
        "docs/commands.md shows this summary as the binary prints it"
    );
}

#[test]
fn quirky_but_valid_files_load() {
    let out = biasfit(&["stock", "tests/fixtures/stock/semicolon.csv", "--json"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["delimiter"], "semicolon", "the chosen delimiter is said");
    // Issue 17: said once, by the summary, not as a warning by every command that reads the file.
    let out = biasfit(&["stock", "tests/fixtures/stock/semicolon.csv"]);
    assert!(stdout(&out).contains("columns read (semicolon-separated): value, qty, location"));
    let out = biasfit(&[
        "fix",
        "4k7",
        "--stock",
        "tests/fixtures/stock/semicolon.csv",
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(!stderr(&out).contains("separated"), "{}", stderr(&out));
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

/// Issue 17: a drawer exported from a spreadsheet (semicolons, its own column order and header words, units
/// in brackets, rows of bare delimiters, a column biasfit does not read, a row with no rating).
#[test]
fn a_spreadsheet_export_reads_with_its_own_header_words() {
    let file = "tests/fixtures/stock/spreadsheet-export.csv";
    let out = biasfit(&["stock", file, "--json"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    // 9 data rows (the two `;;;;;` rows skipped like blank lines), 8 values with pieces, 7k5 with none.
    assert_eq!(v["parts"], 9);
    assert_eq!(v["distinct"], 8);
    assert_eq!(v["pieces"], 4 + 2 + 3 + 5 + 3 + 3 + 5 + 2);
    // "Wattage" is the power column: the 1/8 W parts are 125 mW parts, not the 250 mW default; only the
    // 2k2 row, with its rating blank, gets the default.
    let powers: Vec<(f64, u64)> = v["powers"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| (m["value"].as_f64().unwrap(), m["pieces"].as_u64().unwrap()))
        .collect();
    assert_eq!(powers, [(0.125, 22), (0.25, 5)]);
    // "Tol (%)": a bare 1 under it is 1 %, not refused and not 100 %.
    let tols: Vec<f64> = v["tolerances"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["value"].as_f64().unwrap())
        .collect();
    assert_eq!(tols, [0.01, 0.05]);
    assert_eq!(
        v["range"][0], 330.0,
        "a bare 330 under 'Value (Ω)' is 330 Ω"
    );
    let err = stderr(&out);
    assert!(
        err.contains(&format!(
            "warning: {file}:3: biasfit does not read the column(s) 'Colour'"
        )),
        "{err}"
    );
    assert!(
        err.contains("1 row(s) give no power rating; assuming 250 mW; this may be wrong: if the unread column 'Colour' holds the power"),
        "{err}"
    );
    assert!(err.contains("give --default-power"), "{err}");
    assert!(
        !err.contains("separated"),
        "the delimiter is no warning: {err}"
    );
    let text = stdout(&biasfit(&["stock", file]));
    assert!(
        text.contains("columns read (semicolon-separated): value ← \"Value (Ω)\", qty ← \"On hand\", tolerance ← \"Tol (%)\", power ← \"Wattage\", location ← \"Drawer\""),
        "{text}"
    );
}

/// Issue 17: the header words the stock format page lists are the ones the binary accepts.
#[test]
fn the_documented_header_words_are_read() {
    let docs = user_docs();
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("header-words");
    std::fs::create_dir_all(&dir).unwrap();
    for (column, words) in [
        ("qty", &["pcs", "count", "on hand", "quantity"][..]),
        ("power", &["watts", "wattage", "rating"][..]),
    ] {
        for word in words {
            assert!(docs.contains(&format!("`{word}`")), "the docs list {word}");
            let header = if column == "qty" {
                format!("value,{word},power")
            } else {
                format!("value,qty,{word}")
            };
            let path = dir.join(format!("{column}-{}.csv", word.replace(' ', "_")));
            std::fs::write(&path, format!("{header}\n1k,3,1/8W\n")).unwrap();
            let out = biasfit(&["stock", path.to_str().unwrap(), "--json"]);
            assert!(out.status.success(), "{header}: {}", stderr(&out));
            let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
            assert_eq!(v["pieces"], 3, "{header}");
            assert_eq!(v["powers"][0]["value"], 0.125, "{header}");
        }
    }
}
