//! Issues 9, 15 and 18, "limits": `design` and `order` end. A search cut short returns the best verified
//! design it holds, says "best found" with the bound it proved (never "optimal"), and a run that holds no
//! design when the limit passes exits 5, not 3 (infeasible).
//!
//! The cuts here do not depend on the machine's speed. The hidden `--search-budget N` flag (a test hook)
//! cuts each stage's search after N error evaluations, as the time limit would, at the same place on every
//! run; `--time-limit 1e-9` has passed before the files are read. The stock (E24 from 10R to 1M, 1 %) gives
//! the line driver an optimum in about 150 000 evaluations (the last case checks that the unlimited search
//! needs more than the budgets used, so that the cuts really cut). Each design returned is checked
//! independently: `biasfit check` with its networks gives the same error, and the proven optimum is no worse.

mod common;
use common::*;
use serde_json::Value;

/// The stock, written once for all the tests of this file (they run at once).
fn e24_stock() -> std::path::PathBuf {
    static PATH: std::sync::OnceLock<std::path::PathBuf> = std::sync::OnceLock::new();
    PATH.get_or_init(|| {
        let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("limits");
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("e24-10r-1m.csv");
        let mut text = String::from("value,qty,tolerance,power\n");
        for v in
            biasfit::notation::Series::E24.values_between(biasfit::Ohms(10.0), biasfit::Ohms(1e6))
        {
            text.push_str(&format!("{},5,1%,0.25W\n", biasfit::notation::code(v)));
        }
        std::fs::write(&path, text).unwrap();
        path
    })
    .clone()
}

fn json(o: &std::process::Output) -> Value {
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("not JSON ({e}): {}", stderr(o)))
}

/// `design` on the line driver from the E24 stock with pairs, plus `extra`.
fn design(extra: &[&str]) -> std::process::Output {
    let stock = e24_stock();
    let mut args = vec![
        "design",
        "examples/line-driver.toml",
        "--stock",
        stock.to_str().unwrap(),
        "--parts",
        "2",
    ];
    args.extend_from_slice(extra);
    biasfit(&args)
}

/// The error `check` finds for the networks a design chose: the same, or the design is not a real one.
fn checked_error(stage: &Value) -> f64 {
    let used: Vec<String> = stage["slots"]
        .as_object()
        .unwrap()
        .iter()
        .map(|(slot, s)| format!("{slot}={}", s["network"].as_str().unwrap()))
        .collect();
    let c = json(&biasfit(&[
        "check",
        "examples/line-driver.toml",
        "--use",
        &used.join(","),
        "--tolerance",
        "1%",
        "--json",
    ]));
    c["stages"][0]["error"].as_f64().unwrap()
}

/// The proven optimum of the same problem, unlimited.
fn optimum() -> f64 {
    let f = json(&design(&["--json"]));
    assert_eq!(f["solver"]["status"], "optimal");
    assert_eq!(f["solver"]["result"], "optimal");
    f["stages"][0]["error"].as_f64().unwrap()
}

#[test]
fn a_search_cut_short_returns_a_verified_design_with_its_proven_bound() {
    let out = design(&["--search-budget", "100000", "--json"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v = json(&out);
    let solver = &v["solver"];
    // The contract's old key keeps its value; the new ones say what is known.
    assert_eq!(solver["status"], "time limit", "{solver}");
    assert_eq!(solver["result"], "best found", "{solver}");
    assert_eq!(solver["time_limit"], 60.0, "the default limit: {solver}");
    let stage = &v["stages"][0];
    let error = stage["error"].as_f64().unwrap();
    let checked = checked_error(stage);
    assert!(
        (checked - error).abs() <= 1e-9 * error.max(1e-12),
        "design says {error}, check says {checked}"
    );
    // The bound is proven: no design beats it, so the optimum is at or above it, and the design at or
    // above the optimum.
    let bound = solver["bound"].as_f64().expect("a bound when not robust");
    // At this budget the first passes have finished, which proves something.
    assert!(bound > 0.0, "{solver}");
    let best = optimum();
    assert!(
        bound <= best + 1e-12,
        "bound {bound} above the optimum {best}"
    );
    assert!(best <= error + 1e-12, "optimum {best} worse than {error}");

    // The text says "best found" and what was proven, and never "optimal".
    let t = stdout(&design(&["--search-budget", "100000"]));
    assert!(
        t.contains("best found") && t.contains("proven: no design"),
        "{t}"
    );
    assert!(!t.contains("optimal"), "{t}");
}

#[test]
fn a_search_cut_before_it_holds_a_design_falls_back_on_single_parts() {
    // At 1 000 evaluations the pair search has not finished ordering its candidates; the design of single
    // parts, made first, is what there is.
    let v = json(&design(&["--search-budget", "1000", "--json"]));
    assert_eq!(v["solver"]["result"], "best found");
    let stage = &v["stages"][0];
    for (slot, s) in stage["slots"].as_object().unwrap() {
        let net = s["network"].as_str().unwrap();
        assert!(!net.contains('+') && !net.contains('|'), "{slot}={net}");
    }
    let error = stage["error"].as_f64().unwrap();
    assert!((checked_error(stage) - error).abs() <= 1e-9 * error);
    assert!(optimum() <= error);
    let t = stdout(&design(&["--search-budget", "1000"]));
    assert!(
        t.contains("single parts") && t.contains("best found"),
        "{t}"
    );
    assert!(!t.contains("optimal"), "{t}");
}

#[test]
fn no_design_in_time_exits_5_not_3() {
    // Every search cut at once: no design at all.
    let out = design(&["--search-budget", "0"]);
    assert_eq!(out.status.code(), Some(5), "{}", stderr(&out));
    assert!(out.stdout.is_empty());
    let err = stderr(&out);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with("error: ") && err.contains("time limit passed"),
        "{err}"
    );
    // A limit that has passed before the files are read: design and order alike.
    let out = design(&["--time-limit", "1e-9"]);
    assert_eq!(out.status.code(), Some(5), "{}", stderr(&out));
    let stock = e24_stock();
    let out = biasfit(&[
        "order",
        "examples/line-driver.toml",
        "--stock",
        stock.to_str().unwrap(),
        "--time-limit",
        "1e-9",
    ]);
    assert_eq!(out.status.code(), Some(5), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("time limit passed while reading"),
        "{}",
        stderr(&out)
    );
    // And a truly infeasible stage still exits 3 (a stock with nothing near the ideal values).
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("limits");
    let far = dir.join("far.csv");
    std::fs::write(&far, "value,qty\n1R,5\n").unwrap();
    let out = biasfit(&[
        "design",
        "examples/line-driver.toml",
        "--stock",
        far.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(3), "{}", stderr(&out));
}

#[test]
fn the_budgets_used_really_cut_the_search() {
    // The unlimited search needs more evaluations than the budgets above, so they cut it; if a faster
    // search ever finished within them, the tests above would be testing nothing and this one says so.
    let v = json(&design(&["--json"]));
    let needed = v["solver"]["evaluations"].as_u64().unwrap();
    assert!(
        needed > 100_000,
        "the optimum takes only {needed} evaluations"
    );
    // Unlimited runs are marked optimal and state their own error as the bound.
    let error = v["stages"][0]["error"].as_f64().unwrap();
    assert_eq!(v["solver"]["bound"].as_f64(), Some(error));
    let t = stdout(&design(&[]));
    assert!(!t.contains("best found"), "{t}");
}
