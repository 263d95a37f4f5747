//! `biasfit fix` through the real binary, on the fixtures in tests/fixtures/.

use std::process::{Command, Output};

fn biasfit(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_biasfit"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .env("NO_COLOR", "1")
        .output()
        .expect("the binary runs")
}

const DRAWER: &str = "tests/fixtures/fix-drawer.csv";

fn stdout(o: &Output) -> String {
    String::from_utf8(o.stdout.clone()).unwrap()
}

fn stderr(o: &Output) -> String {
    String::from_utf8(o.stderr.clone()).unwrap()
}

/// The networks of a text report, best first.
fn listed(text: &str) -> Vec<String> {
    text.lines()
        .filter(|l| {
            l.split_whitespace()
                .next()
                .is_some_and(|w| w.parse::<usize>().is_ok())
        })
        .map(|l| l.split_whitespace().nth(1).unwrap().to_string())
        .collect()
}

#[test]
fn finds_the_exact_pair() {
    // 10k + 4k7 = 14k7 exactly (hand arithmetic).
    let o = biasfit(&["fix", "14k7", "--stock", DRAWER]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = stdout(&o);
    assert_eq!(listed(&text)[0], "10k+4k7", "{text}");
    assert!(text.contains("10k in D9; 4k7 in C8"), "{text}");
    assert!(
        text.contains("nearest single value: E24 15k +2.04 %"),
        "{text}"
    );
}

#[test]
fn quantities_limit_the_networks() {
    // 2k2 | 2k2 = 1k1 needs both 2k2 pieces, and there are two.
    let o = biasfit(&["fix", "1k1", "--stock", DRAWER, "--top", "2"]);
    assert_eq!(listed(&stdout(&o)), ["2k2|2k2", "1k"]);
    // Only one 1k, so no 1k+1k for 2k, and the empty 15k bin is never offered for 15k.
    let o = biasfit(&[
        "fix", "2k", "--stock", DRAWER, "--top", "50", "--parts", "3",
    ]);
    let nets = listed(&stdout(&o));
    assert!(nets.len() > 10, "{nets:?}");
    assert!(nets
        .iter()
        .all(|n| n.matches("1k").count() <= 1 || n.contains("10k")));
    assert!(!nets.iter().any(|n| n == "1k+1k"));
    let o = biasfit(&[
        "fix", "15k", "--stock", DRAWER, "--parts", "1", "--top", "1",
    ]);
    assert_eq!(listed(&stdout(&o)), ["10k"]);
}

#[test]
fn json_is_best_first_in_si_units() {
    let o = biasfit(&[
        "fix", "2k", "--stock", DRAWER, "--parts", "3", "--top", "4", "--json",
    ]);
    assert_eq!(o.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["target"], 2000.0);
    let nets = v["networks"].as_array().unwrap();
    assert_eq!(nets.len(), 4);
    let errors: Vec<f64> = nets.iter().map(|n| n["error"].as_f64().unwrap()).collect();
    assert!(
        errors.windows(2).all(|w| w[0].abs() <= w[1].abs()),
        "{errors:?}"
    );
    // 2k2 | (10k + 10k) = 2200 · 20000 / 22200 = 1981.98 Ω, −0.901 %.
    assert_eq!(nets[0]["network"], "2k2|(10k+10k)");
    assert!((nets[0]["ohms"].as_f64().unwrap() - 2200.0 * 20e3 / 22_200.0).abs() < 1e-9);
    let parts = nets[0]["parts"].as_array().unwrap();
    assert_eq!(parts.len(), 3);
    assert_eq!(parts[0]["ohms"], 2200.0);
    assert_eq!(parts[0]["tolerance"], 0.05);
    assert_eq!(parts[0]["power"], 0.25);
    assert_eq!(parts[0]["location"], "C2");
    let band = nets[0]["band"].as_array().unwrap();
    assert!((band[0].as_f64().unwrap() + 0.05).abs() < 1e-12);
}

#[test]
fn power_check_sets_the_exit_code() {
    // 0.3 W in 10k + 4k7 puts 204 mW in the 1/4 W 10k, past 50 % of its rating; every listed network
    // has a 10k, so the check fails: exit 1.
    let o = biasfit(&[
        "fix", "14k7", "--stock", DRAWER, "--top", "3", "--watts", "0.3W",
    ]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stdout(&o).contains("81.6 % over"));
    // With a derate of 100 % it stays within (204 mW < 250 mW).
    let o = biasfit(&[
        "fix", "14k7", "--stock", DRAWER, "--top", "1", "--watts", "0.3W", "--derate", "100%",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stdout(&o));
    // 5 V across 10k + 4k7 is nothing to worry about.
    let o = biasfit(&[
        "fix", "14k7", "--stock", DRAWER, "--top", "1", "--volts", "5V",
    ]);
    assert_eq!(o.status.code(), Some(0));
    assert!(stdout(&o).contains("ok"));
}

#[test]
fn bad_input_is_one_line_and_exit_2() {
    for (args, want) in [
        (
            vec!["fix", "4k7k", "--stock", DRAWER],
            "VALUE: \"4k7k\" is not a resistance",
        ),
        (vec!["fix", "4k7", "--stock", DRAWER, "--top", "0"], "--top"),
        (
            vec!["fix", "4k7", "--stock", DRAWER, "--derate", "2"],
            "--derate",
        ),
        (
            vec!["fix", "4k7", "--stock", DRAWER, "--derate", "half"],
            "--derate",
        ),
        (
            vec!["fix", "4k7", "--stock", DRAWER, "--watts", "lots"],
            "--watts",
        ),
        (
            vec!["fix", "4k7", "--stock", DRAWER, "--volts", "-5"],
            "--volts",
        ),
        (
            vec!["fix", "4k7", "--stock", DRAWER, "--amps", "0"],
            "--amps",
        ),
        (
            vec!["fix", "4k7", "--stock", "tests/fixtures/no-such.csv"],
            "no-such.csv",
        ),
        (
            vec!["fix", "4k7", "--stock", "tests/fixtures/fix-bad-row.csv"],
            "fix-bad-row.csv:3: column qty",
        ),
    ] {
        let o = biasfit(&args);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        let err = stderr(&o);
        assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
        assert!(
            err.starts_with("error: ") && err.contains(want),
            "{args:?}: {err}"
        );
    }
    // Flags clap refuses (a fourth part, two loads at once) are bad input too.
    for args in [
        vec!["fix", "4k7", "--stock", DRAWER, "--parts", "4"],
        vec![
            "fix", "4k7", "--stock", DRAWER, "--watts", "1W", "--volts", "5V",
        ],
    ] {
        assert_eq!(biasfit(&args).status.code(), Some(2), "{args:?}");
    }
}

#[test]
fn a_stock_with_nothing_on_hand_is_infeasible() {
    let o = biasfit(&["fix", "4k7", "--stock", "tests/fixtures/fix-empty.csv"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(stderr(&o).contains("no part has any pieces on hand"));
}
